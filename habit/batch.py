"""Many Wulff shapes at once: batches of energy sets, shape maps, Monte Carlo, many crystals.

The core is :func:`solve_shapes`: one plane set (unit normals), many energy vectors, and for
each one the area of every face, the volume, which faces are present and the area fraction
of every form. It clips the lines where pairs of planes meet rather than building a hull per
shape (see ``habit._intervals`` for the method) and falls back to a convex hull, shape by
shape, where that cannot decide; the result says how many shapes fell back.

Lengths are in the unit of the energies: a face with energy ``gamma`` J/m² lies at central
distance ``gamma`` (Wulff's construction fixes the shape, not its size), so areas are in
that unit squared and volumes in that unit cubed. Fractions are unitless.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from habit import _intervals
from habit.errors import InputError, OpenShapeError
from habit.tolerances import DEFAULT, Tolerances

__all__ = [
    "PlaneSet",
    "ShapeBatch",
    "prepare_planes",
    "solve_shapes",
]

Progress = Callable[[int], None]

#: Linear forms per shape above which "auto" prefers one hull per shape.
_AUTO_MAX_FORMS = 4000


@dataclass(frozen=True, slots=True)
class PlaneSet:
    """A plane set prepared for batch solving (reuse it across calls).

    Attributes
    ----------
    normals : (N, 3) float array
        Unit normals, Cartesian.
    forms : (N,) int array
        Form number of each plane, ``0..F-1`` (the orbits of the operations unless given).
    form_sizes : (F,) int array
        Number of faces in each form.
    symmetric : bool
        True when operations were given: energies must then be equal within each orbit.
    """

    normals: NDArray[np.float64]
    forms: NDArray[np.int64]
    form_sizes: NDArray[np.int64]
    symmetric: bool
    plan: _intervals.IntervalPlan

    @property
    def n_planes(self) -> int:
        """Number of planes N."""
        return int(self.normals.shape[0])

    @property
    def n_forms(self) -> int:
        """Number of forms F."""
        return int(self.form_sizes.shape[0])

    def expand(self, form_energies: ArrayLike) -> NDArray[np.float64]:
        """Per-form energies (..., F) -> per-plane energies (..., N)."""
        g = np.asarray(form_energies, dtype=float)
        if g.shape[-1] != self.n_forms:
            raise InputError(
                f"form energies need {self.n_forms} values in their last axis, got {g.shape}."
            )
        return g[..., self.forms]


@dataclass(frozen=True, slots=True)
class ShapeBatch:
    """Results for a stack of S energy vectors over one plane set of N planes.

    Attributes
    ----------
    areas : (S, N) float array
        Area of every face (energy unit squared); 0 for absent faces.
    volume : (S,) float array
        Volume (energy unit cubed).
    present : (S, N) bool array
        Face has area above ``tol.area`` times the total area.
    form_fractions : (S, F) float array
        Share of the total area taken by each form (sums to 1 per shape).
    forms : (N,) int array
        Form number of each plane.
    edge_lengths : (S, N, N) float array or None
        Length of the segment where planes i and j meet on the shape (symmetric; 0 where
        they do not meet in a segment). When several planes pass through one edge, every
        pair among them reports that edge. Only when asked for.
    fallback : (S,) bool array
        Shapes recomputed with a convex hull because the fast path could not decide.
    method : str
        ``"intervals"`` or ``"hull"``: how the shapes were computed.
    """

    areas: NDArray[np.float64]
    volume: NDArray[np.float64]
    present: NDArray[np.bool_]
    form_fractions: NDArray[np.float64]
    forms: NDArray[np.int64]
    edge_lengths: NDArray[np.float64] | None
    fallback: NDArray[np.bool_]
    method: str

    @property
    def n_fallback(self) -> int:
        """How many shapes were recomputed with a convex hull."""
        return int(self.fallback.sum())

    @property
    def form_present(self) -> NDArray[np.bool_]:
        """(S, F) bool: the form has at least one present face."""
        nf = int(self.forms.max()) + 1
        out = np.zeros((self.present.shape[0], nf), dtype=bool)
        for f in range(nf):
            out[:, f] = self.present[:, self.forms == f].any(axis=1)
        return out


def _check_normals(normals: ArrayLike) -> NDArray[np.float64]:
    n = np.asarray(normals, dtype=float)
    if n.ndim != 2 or n.shape[1] != 3 or n.shape[0] < 4:
        raise InputError(
            f"normals must be an (N, 3) array with N >= 4 planes, got shape {n.shape}."
        )
    if not np.all(np.isfinite(n)):
        raise InputError("normals contain NaN or infinite values; give finite vectors.")
    length = np.linalg.norm(n, axis=1)
    if np.any(length < 1e-12):
        raise InputError("a normal has zero length; every plane needs a direction.")
    n = n / length[:, None]
    _check_bounded(n)
    cos = n @ n.T
    np.fill_diagonal(cos, 0.0)
    if np.any(cos > 1.0 - 1e-12):
        i, j = np.argwhere(cos > 1.0 - 1e-12)[0]
        raise InputError(
            f"planes {int(i)} and {int(j)} have the same normal; give each direction once."
        )
    return n


def _check_bounded(n: NDArray[np.float64]) -> None:
    """Raise unless the normals surround the origin (then every positive energy set closes)."""
    from scipy.spatial import ConvexHull, QhullError

    message = (
        "the planes do not enclose a bounded solid: their normals must point in all "
        "directions (the origin strictly inside their convex hull)."
    )
    try:
        hull = ConvexHull(n)
    except QhullError:
        raise OpenShapeError("T" + message[1:]) from None
    if np.any(hull.equations[:, 3] > -1e-9):
        raise OpenShapeError("T" + message[1:])


def prepare_planes(
    normals: ArrayLike,
    *,
    operations: ArrayLike | None = None,
    forms: ArrayLike | None = None,
) -> PlaneSet:
    """Prepare a plane set for :func:`solve_shapes` (precomputes every line bound).

    Parameters
    ----------
    normals : (N, 3) array_like
        Plane normals, Cartesian (normalised here). N >= 4 and no two equal.
    operations : (G, 3, 3) array_like, optional
        Cartesian orthogonal operations (a point group, or generators of one) that map the
        plane set onto itself. With them, energies must be equal within each orbit, and the
        work per shape drops to one face per form and one partner per orbit of its
        stabiliser.
    forms : (N,) array_like of int, optional
        Form labels used for ``form_fractions`` when no operations are given (for example
        the {hkl} of each plane under per-plane noise). Default: the orbits of the
        operations, or every plane its own form.

    Returns
    -------
    PlaneSet

    Raises
    ------
    InputError
        Bad normals, or operations that do not map the plane set onto itself.
    OpenShapeError
        The planes cannot enclose a bounded solid whatever the energies.

    Examples
    --------
    >>> import numpy as np
    >>> cube = np.vstack([np.eye(3), -np.eye(3)])
    >>> prepare_planes(cube).n_forms
    6
    """
    n = _check_normals(normals)
    ops = None
    if operations is not None:
        ops = np.asarray(operations, dtype=float)
        if ops.ndim == 2:
            ops = ops[None]
        if ops.ndim != 3 or ops.shape[1:] != (3, 3):
            raise InputError(f"operations must be a (G, 3, 3) array, got shape {ops.shape}.")
        eye = np.einsum("gab,gcb->gac", ops, ops)
        if not np.allclose(eye, np.eye(3), atol=1e-8):
            raise InputError("operations must be orthogonal matrices (Cartesian rotations).")
    try:
        plan = _intervals.build_plan(n, ops)
    except ValueError as exc:
        text = str(exc)
        if "bounded" in text:
            raise OpenShapeError(text[0].upper() + text[1:] + ".") from None
        raise InputError(text[0].upper() + text[1:] + ".") from None
    if forms is None or ops is not None:
        labels = plan.family
    else:
        raw = np.asarray(forms)
        if raw.shape != (len(n),):
            raise InputError(f"forms must have one label per plane ({len(n)}), got {raw.shape}.")
        _, labels = np.unique(raw, return_inverse=True)
        labels = labels.astype(np.int64)
    sizes = np.bincount(labels).astype(np.int64)
    labels = np.array(labels, dtype=np.int64)
    labels.setflags(write=False)
    sizes.setflags(write=False)
    return PlaneSet(n, labels, sizes, ops is not None, plan)


def _check_energies(planes: PlaneSet, energies: ArrayLike) -> NDArray[np.float64]:
    g = np.asarray(energies, dtype=float)
    if g.ndim == 1:
        g = g[None]
    if g.ndim != 2 or g.shape[1] != planes.n_planes:
        raise InputError(
            f"energies must be an (S, {planes.n_planes}) array (one per plane), got {g.shape}."
        )
    bad = ~np.all(np.isfinite(g) & (g > 0), axis=1)
    if np.any(bad):
        raise InputError(
            f"energy set {int(np.argmax(bad))} has a value that is not a positive finite "
            "number; every energy must be > 0."
        )
    if planes.symmetric:
        rep = g[:, planes.plan.reps[planes.plan.family]]
        spread = np.abs(g - rep).max(axis=1) > 1e-9 * g.max(axis=1)
        if np.any(spread):
            raise InputError(
                f"energy set {int(np.argmax(spread))} differs between faces of one form; "
                "with operations given, every face of a form needs the same energy."
            )
    return g


def _solve_into(
    plan: _intervals.IntervalPlan,
    g: NDArray[np.float64],
    method: str,
    chunk: int,
    areas: NDArray[np.float64],
    volume: NDArray[np.float64],
    fallback: NDArray[np.bool_],
    ell: NDArray[np.float64] | None,
    progress: Progress | None,
) -> None:
    """Fill the output arrays chunk by chunk (intervals, hull fallback per failed shape)."""
    nshape = len(g)
    pair = plan.pair_line
    has_line = pair >= 0
    gf_all = g[:, plan.reps]  # (S, F_plan)
    for start in range(0, nshape, chunk):
        stop = min(start + chunk, nshape)
        if method == "intervals":
            a_f, vol, ok, lines = _intervals.solve_chunk(plan, gf_all[start:stop], ell is not None)
            areas[start:stop] = a_f[:, plan.family]
            volume[start:stop] = vol
            if ell is not None and lines is not None:
                ell[start:stop] = np.where(has_line, lines[:, np.maximum(pair, 0)], 0.0)
            redo = np.nonzero(~ok)[0] + start
            fallback[redo] = True
        else:
            redo = np.arange(start, stop)
        for s in redo:
            a_s, v_s, e_s = _intervals.hull_shape(plan.normals, g[s], ell is not None)
            areas[s] = a_s
            volume[s] = v_s
            if ell is not None and e_s is not None:
                ell[s] = e_s
        if progress is not None:
            progress(stop)


def solve_shapes(
    planes: PlaneSet | ArrayLike,
    energies: ArrayLike,
    *,
    operations: ArrayLike | None = None,
    edges: bool = False,
    method: str = "auto",
    chunk: int | None = None,
    tol: Tolerances = DEFAULT,
    progress: Progress | None = None,
) -> ShapeBatch:
    """Solve many Wulff shapes of one plane set.

    Parameters
    ----------
    planes : PlaneSet or (N, 3) array_like
        A prepared plane set, or normals (then ``operations`` may be given).
    energies : (S, N) or (N,) array_like
        Energies (J/m²) or central distances, one row per shape, all positive.
    operations : (G, 3, 3) array_like, optional
        Only when ``planes`` are normals; see :func:`prepare_planes`.
    edges : bool
        Also return the (S, N, N) edge lengths.
    method : {"auto", "intervals", "hull"}
        ``"intervals"``: clip plane-pair lines (vectorised over shapes); ``"hull"``: one
        convex hull per shape; ``"auto"``: intervals unless the plane set is large and has
        no symmetry to exploit.
    chunk : int, optional
        Shapes per vectorised block (default: sized to the plane set).
    tol : Tolerances
        ``tol.area`` decides which faces count as present.
    progress : callable, optional
        Called with the number of shapes done so far.

    Returns
    -------
    ShapeBatch

    References
    ----------
    G. Wulff, Z. Kristallogr. 34, 449-530 (1901).

    Examples
    --------
    >>> import numpy as np
    >>> cube = np.vstack([np.eye(3), -np.eye(3)])
    >>> out = solve_shapes(cube, [[1.0] * 6, [2.0] * 6])
    >>> out.volume.round(6).tolist()
    [8.0, 64.0]
    >>> solve_shapes(cube, [[1, 1, 1, 1, 1, -1]])
    Traceback (most recent call last):
    ...
    habit.errors.InputError: energy set 0 has a value that is not a positive finite ...
    """
    if not isinstance(planes, PlaneSet):
        planes = prepare_planes(planes, operations=operations)
    elif operations is not None:
        raise InputError("give operations to prepare_planes, not with a prepared PlaneSet.")
    if method not in ("auto", "intervals", "hull"):
        raise InputError(f"method must be 'auto', 'intervals' or 'hull', got {method!r}.")
    if chunk is not None and chunk < 1:
        raise InputError(f"chunk must be a positive number of shapes, got {chunk}.")
    g = _check_energies(planes, energies)
    plan = planes.plan
    nshape, nplanes = g.shape
    if method == "auto":
        method = "intervals" if plan.cost <= _AUTO_MAX_FORMS else "hull"
    if chunk is None:
        # keep the per-chunk bound array near 512 KB: larger blocks fall out of cache
        chunk = int(np.clip(65536 // max(plan.cost, 1), 8, 256))
    areas = np.empty((nshape, nplanes))
    volume = np.empty(nshape)
    fallback = np.zeros(nshape, dtype=bool)
    ell = np.zeros((nshape, nplanes, nplanes)) if edges else None
    with _intervals.single_thread_blas():
        _solve_into(plan, g, method, chunk, areas, volume, fallback, ell, progress)
    total = areas.sum(axis=1)  # (S,)
    present = areas > tol.area * total[:, None]
    np.maximum(areas, 0.0, out=areas)
    nf = planes.n_forms
    fractions = np.zeros((nshape, nf))
    for f in range(nf):
        fractions[:, f] = areas[:, planes.forms == f].sum(axis=1)
    fractions /= total[:, None]
    out = [areas, volume, present, fractions, fallback]
    if ell is not None:
        out.append(ell)
    for arr in out:
        arr.setflags(write=False)
    return ShapeBatch(areas, volume, present, fractions, planes.forms, ell, fallback, method)
