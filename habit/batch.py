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

import math
import os
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from habit import _execute, _intervals
from habit.errors import InputError, OpenShapeError
from habit.tolerances import DEFAULT, Tolerances

__all__ = [
    "PlaneSet",
    "ShapeBatch",
    "ShapeMap",
    "SampleSummary",
    "BatchReport",
    "prepare_planes",
    "solve_shapes",
    "crystal_planes",
    "shape_map",
    "sample_shapes",
    "run_batch",
    "SAMPLE_CHUNK",
]

Progress = Callable[[int], None]

#: Linear forms per shape above which "auto" prefers one hull per shape.
_AUTO_MAX_FORMS = 20_000


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
    form_labels : tuple of str
        Label of each form, e.g. ``'{110}'`` (empty when not from a crystal).
    form_names : tuple of str
        Name of each form in its crystal class, e.g. ``'rhombic dodecahedron'``.
    hkl : (N, 3) int array or None
        Miller indices of the planes when built from a crystal.
    """

    normals: NDArray[np.float64]
    forms: NDArray[np.int64]
    form_sizes: NDArray[np.int64]
    symmetric: bool
    plan: _intervals.IntervalPlan
    form_labels: tuple[str, ...] = ()
    form_names: tuple[str, ...] = ()
    hkl: NDArray[np.int64] | None = None

    def label(self, form: int) -> str:
        """Return the label of a form ('{110}' for a crystal, else 'form 1', ...)."""
        return self.form_labels[form] if self.form_labels else f"form {form + 1}"

    def form_index(self, form: int | str) -> int:
        """Index of a form given by number or label ('110', '{110}', '1 1 0')."""
        if isinstance(form, (int, np.integer)):
            if not 0 <= int(form) < self.n_forms:
                raise InputError(f"form number {form} is out of range 0..{self.n_forms - 1}.")
            return int(form)
        key = _norm_label(str(form))
        for i in range(self.n_forms):
            if _norm_label(self.label(i)) == key:
                return i
        given = ", ".join(self.label(i) for i in range(self.n_forms))
        raise InputError(f"no form {form!r} in this plane set; the forms are {given}.")

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
        counts = self.present.astype(np.int64) @ np.eye(nf, dtype=np.int64)[self.forms]  # (S, F)
        return counts > 0


def _norm_label(text: str) -> str:
    return "".join(ch for ch in text if ch not in "{}() ,")


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
    out: NDArray[np.float64] = n
    return out


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
    form_labels: tuple[str, ...] = (),
    form_names: tuple[str, ...] = (),
    hkl: ArrayLike | None = None,
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
        Form of each plane, used for ``form_fractions`` (for example the {hkl} of each
        plane under per-plane noise); with operations, constant on each orbit. Default:
        the orbits of the operations, or every plane its own form.
    form_labels, form_names : tuple of str
        Label (``'{110}'``) and name of each form, in the order of the form numbers.
    hkl : (N, 3) array_like of int, optional
        Miller indices of the planes, kept for reports.

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
        plan = _intervals.build_plan(n, ops, max_forms=_AUTO_MAX_FORMS)
    except ValueError as exc:
        text = str(exc)
        if "bounded" in text:
            raise OpenShapeError(text[0].upper() + text[1:] + ".") from None
        raise InputError(text[0].upper() + text[1:] + ".") from None
    if forms is None:
        labels = plan.family
    else:
        raw = np.asarray(forms)
        if raw.shape != (len(n),):
            raise InputError(f"forms must have one label per plane ({len(n)}), got {raw.shape}.")
        _, labels = np.unique(raw, return_inverse=True)
        labels = labels.astype(np.int64)
        if ops is not None and np.any(labels != labels[plan.reps[plan.family]]):
            raise InputError(
                "forms must give the same label to every plane of an orbit of the operations."
            )
    sizes = np.bincount(labels).astype(np.int64)
    labels = np.array(labels, dtype=np.int64)
    labels.setflags(write=False)
    sizes.setflags(write=False)
    return PlaneSet(
        n,
        labels,
        sizes,
        ops is not None,
        plan,
        tuple(str(x) for x in form_labels),
        tuple(str(x) for x in form_names),
        None if hkl is None else np.asarray(hkl, dtype=np.int64),
    )


def _check_energies(planes: PlaneSet, energies: ArrayLike) -> NDArray[np.float64]:
    g = np.asarray(energies, dtype=float)
    if g.ndim == 1:
        g = g[None]
    if g.ndim != 2 or g.shape[1] != planes.n_planes:
        raise InputError(
            f"energies must be an (S, {planes.n_planes}) array (one per plane), got {g.shape}."
        )
    plan = planes.plan
    for start in range(0, len(g), 4096):  # blocks that stay in cache
        block = g[start : start + 4096]
        low, high = block.min(axis=1), block.max(axis=1)  # NaN fails both tests below
        bad = ~((low > 0) & np.isfinite(high))
        if np.any(bad):
            raise InputError(
                f"energy set {start + int(np.argmax(bad))} has a value that is not a positive "
                "finite number; every energy must be > 0."
            )
        if planes.symmetric:
            spread = np.zeros(len(block))
            for members in plan.form_members:
                sub = block[:, members]
                np.maximum(spread, sub.max(axis=1) - sub.min(axis=1), out=spread)
            uneven = spread > 1e-9 * high
            if np.any(uneven):
                raise InputError(
                    f"energy set {start + int(np.argmax(uneven))} differs between faces of one "
                    "form; with operations given, every face of a form needs the same energy."
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
    cos = plan.normals @ plan.normals.T  # (N, N), for the hull route
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
            g_s = g[s, plan.reps[plan.family]]  # one value per orbit on every face
            a_s, v_s, e_s = _intervals.hull_shape(plan.normals, g_s, ell is not None, cos)
            areas[s] = a_s
            volume[s] = v_s
            if ell is not None and e_s is not None:
                ell[s] = e_s
        if progress is not None:
            progress(stop)


def _seconds_per_shape(planes: PlaneSet, method: str) -> float:
    """Rough single-core cost of one shape (measured on a small shared machine)."""
    if method == "hull":
        return 150e-6
    rows = planes.plan.matrix.shape[0]
    return float(2e-6 + planes.plan.cost * (1e-8 + 4e-10 * rows))


def _solve_task(
    task: tuple[_intervals.IntervalPlan, NDArray[np.float64], str, int, bool, bool],
) -> tuple[Any, Any, Any, Any]:
    """Solve a block in a worker; symmetric blocks travel as one value per form."""
    plan, g_in, method, chunk, edges, compact = task
    g = g_in[:, plan.family] if compact else g_in  # (S, N)
    nshape, nplanes = g.shape
    areas = np.empty((nshape, nplanes))
    volume = np.empty(nshape)
    fallback = np.zeros(nshape, dtype=bool)
    ell = np.zeros((nshape, nplanes, nplanes)) if edges else None
    with _intervals.single_thread_blas():
        _solve_into(plan, g, method, chunk, areas, volume, fallback, ell, None)
    return (areas[:, plan.reps] if compact else areas), volume, fallback, ell


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
    scheduler: str | None = None,
    workers: int | None = None,
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
    scheduler : str, optional
        Where to run: None/'auto' (in-process when the work is estimated under about 2 s,
        else local processes), 'inline', 'processes', 'dask' (a local dask cluster) or
        the address of a running dask scheduler. The numbers do not depend on it.
    workers : int, optional
        Local worker processes (default: the number of CPUs).

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
        method = "intervals" if plan.usable and plan.cost <= _AUTO_MAX_FORMS else "hull"
    if method == "intervals" and not plan.usable:
        raise InputError(
            f"this plane set has too many plane pairs ({plan.n_lines} lines) for the line "
            "method without symmetry; use method='hull' or give the operations."
        )
    if chunk is None:
        # keep the per-chunk bound array near 512 KB: larger blocks fall out of cache
        chunk = int(np.clip(65536 // max(plan.cost, 1), 8, 256))
    areas = np.empty((nshape, nplanes))
    volume = np.empty(nshape)
    fallback = np.zeros(nshape, dtype=bool)
    ell = np.zeros((nshape, nplanes, nplanes)) if edges else None
    mode = _execute.choose_mode(scheduler, nshape * _seconds_per_shape(planes, method), workers)
    if mode == "inline":
        with _intervals.single_thread_blas():
            _solve_into(plan, g, method, chunk, areas, volume, fallback, ell, progress)
    else:
        n_tasks = max(1, min(nshape // max(chunk, 1), 8 * (workers or os.cpu_count() or 1)))
        parts = np.array_split(np.arange(nshape), n_tasks)
        compact = planes.symmetric
        sent = g[:, plan.reps] if compact else g  # (S, F) or (S, N)
        tasks = [(plan, sent[idx], method, chunk, edges, compact) for idx in parts]
        done = 0
        for i, (a_i, v_i, f_i, e_i) in _execute.run_tasks(
            _solve_task, tasks, mode=mode, workers=workers, scheduler=scheduler
        ):
            idx = parts[i]
            areas[idx] = a_i[:, plan.family] if compact else a_i
            volume[idx], fallback[idx] = v_i, f_i
            if ell is not None:
                ell[idx] = e_i
            done += len(idx)
            if progress is not None:
                progress(done)
    np.maximum(areas, 0.0, out=areas)
    total = areas.sum(axis=1)  # (S,)
    present = areas > tol.area * total[:, None]
    onehot = np.eye(planes.n_forms)[planes.forms]  # (N, F)
    fractions = (areas @ onehot) / total[:, None]  # (S, F)
    out = [areas, volume, present, fractions, fallback]
    if ell is not None:
        out.append(ell)
    for arr in out:
        arr.setflags(write=False)
    return ShapeBatch(areas, volume, present, fractions, planes.forms, ell, fallback, method)


# ---------------------------------------------------------------------------- crystals


def crystal_planes(crystal: Any, forms: Any) -> PlaneSet:
    """Build the plane set of some forms of a crystal, with the crystal's symmetry.

    Parameters
    ----------
    crystal : habit.crystal.Crystal
    forms : iterable of (h, k, l) or str
        One face of each form ('110', '{10-11}', (1, 1, 1) ...). Form numbers in the
        result follow this order.

    Returns
    -------
    PlaneSet
        With ``form_labels`` like ``'{110}'``, ``form_names`` and ``hkl``; the point
        group's operations (in Cartesian form) reduce the work per shape.
    """
    from habit.wulff import plane_set

    hkls = [
        crystal.parse_face(f) if isinstance(f, str) else tuple(int(x) for x in f) for f in forms
    ]
    if not hkls:
        raise InputError("give at least one form.")
    normals, hkl_all, form_ids = plane_set(crystal, hkls)
    # Cartesian operations R = L^T W L^-T (L: rows a, b, c), as in the crystal's frame
    lat = np.asarray(crystal.lattice, dtype=float)
    ops = np.asarray(crystal.point_group.operations, dtype=float)
    cart = np.einsum("ab,gbc,cd->gad", lat.T, ops, np.linalg.inv(lat.T))  # (G, 3, 3)
    used = np.unique(form_ids)
    labels = tuple(crystal.format_face(hkls[i], "{}") for i in used)
    try:
        names = tuple(str(crystal.form_name(hkls[i])) for i in used)
    except Exception:  # names are decoration; a class without a naming table gets none
        names = ()
    remap = {int(f): k for k, f in enumerate(used)}
    ids = np.array([remap[int(f)] for f in form_ids])
    return prepare_planes(
        normals, operations=cart, forms=ids, form_labels=labels, form_names=names, hkl=hkl_all
    )


def _region_name(planes: PlaneSet, mask: int) -> str:
    forms = [f for f in range(planes.n_forms) if mask >> f & 1]
    if not forms:
        return "none"
    text = " + ".join(planes.label(f) for f in forms)
    if planes.form_names:
        text += " (" + " + ".join(planes.form_names[f] for f in forms) + ")"
    return text


def _present_mask(batch: ShapeBatch) -> NDArray[np.int64]:
    bits = (1 << np.arange(batch.form_fractions.shape[1])).astype(np.int64)
    out: NDArray[np.int64] = (batch.form_present.astype(np.int64) * bits).sum(axis=1)  # (S,)
    return out


# ---------------------------------------------------------------------------- shape maps


@dataclass(frozen=True, slots=True)
class ShapeMap:
    """Shapes over a grid of two inputs, refined where the set of present forms changes.

    Attributes
    ----------
    x, y : (nx,), (ny,) float arrays
        The finest grid: values of the two inputs (J/m², or the unit of the inputs).
    x_form, y_form : int
        The forms whose values vary along x and y.
    regions : (ny, nx) int array
        Present-form set at each grid point as a bit mask (bit f: form f present). Points
        that were not computed take the value shared by the corners of their cell.
    computed : (ny, nx) bool array
        Points where a shape was actually computed.
    points : (M, 2) float array
        (x, y) of the computed points.
    point_regions : (M,) int array
    point_fractions : (M, F) float array
        Area fraction of each form at the computed points.
    point_volume : (M,) float array
    base : (F,) float array
        Values of all forms; those of ``x_form`` and ``y_form`` are replaced by the grid.
    planes : PlaneSet
    n_fallback : int
        Shapes recomputed with a hull.
    """

    x: NDArray[np.float64]
    y: NDArray[np.float64]
    x_form: int
    y_form: int
    regions: NDArray[np.int64]
    computed: NDArray[np.bool_]
    points: NDArray[np.float64]
    point_regions: NDArray[np.int64]
    point_fractions: NDArray[np.float64]
    point_volume: NDArray[np.float64]
    base: NDArray[np.float64]
    planes: PlaneSet
    n_fallback: int

    @property
    def n_shapes(self) -> int:
        """How many shapes were computed."""
        return int(self.points.shape[0])

    def region_names(self) -> dict[int, str]:
        """Bit mask -> name of the present-form set, for the masks on the map."""
        return {int(m): _region_name(self.planes, int(m)) for m in np.unique(self.regions)}

    def boundaries(self) -> NDArray[np.float64]:
        """Midpoints (K, 2) between neighbouring grid points in different regions."""
        out = []
        r = self.regions
        jj, ii = np.nonzero(r[:, 1:] != r[:, :-1])
        out.append(np.column_stack([(self.x[ii] + self.x[ii + 1]) / 2, self.y[jj]]))
        jj, ii = np.nonzero(r[1:, :] != r[:-1, :])
        out.append(np.column_stack([self.x[ii], (self.y[jj] + self.y[jj + 1]) / 2]))
        return np.vstack(out)


def _axis(planes: PlaneSet, spec: Any, name: str) -> tuple[int, float, float]:
    try:
        form, lo, hi = spec
        lo, hi = float(lo), float(hi)
    except (TypeError, ValueError):
        raise InputError(
            f"{name} must be (form, low, high), e.g. ('110', 0.6, 1.5); got {spec!r}."
        ) from None
    if not (0 < lo < hi and np.isfinite(hi)):
        raise InputError(f"{name} needs 0 < low < high (positive values); got {lo} and {hi}.")
    return planes.form_index(form), lo, hi


def shape_map(
    planes: PlaneSet,
    base: ArrayLike,
    x: Any,
    y: Any,
    *,
    size: int | tuple[int, int] = 17,
    levels: int = 3,
    tol: Tolerances = DEFAULT,
    progress: Progress | None = None,
    scheduler: str | None = None,
    workers: int | None = None,
) -> ShapeMap:
    """Map the shape over two inputs, refining the grid only near region boundaries.

    A coarse grid of ``size`` points per axis is computed first. A cell whose four corners
    do not all have the same set of present forms is cut into four, and the new corner
    points are computed; this repeats ``levels`` times. The finest grid thus has
    ``(size - 1) * 2**levels + 1`` points per axis, but shapes are computed only along
    the boundaries. A region smaller than a coarse cell that touches none of its corners
    can be missed: use a finer coarse grid when that matters.

    Parameters
    ----------
    planes : PlaneSet
        From :func:`crystal_planes` or :func:`prepare_planes`.
    base : (F,) array_like
        Value (energy, distance) of every form; the two mapped forms' values are ignored.
    x, y : (form, low, high)
        The form varied along each axis (number or label such as '110') and its range.
        For a ratio map keep a third form's base value at 1.
    size : int or (nx, ny)
        Points per axis of the coarse grid (>= 2).
    levels : int
        Refinement levels (0: the plain grid).
    tol : Tolerances
    progress : callable, optional
        Called with the number of shapes computed so far.
    scheduler, workers
        As for :func:`solve_shapes`.

    Returns
    -------
    ShapeMap

    Examples
    --------
    >>> import numpy as np
    >>> cube = np.vstack([np.eye(3), -np.eye(3)])
    >>> octa = np.array([[a, b, c] for a in (1, -1) for b in (1, -1) for c in (1, -1)])
    >>> planes = prepare_planes(np.vstack([cube, octa / 3 ** 0.5]), forms=[0] * 6 + [1] * 8)
    >>> m = shape_map(planes, [1.0, 1.0], x=(1, 0.3, 2.0), y=(0, 0.9, 1.1), size=5, levels=2)
    >>> sorted(m.region_names().values())
    ['form 1', 'form 1 + form 2', 'form 2']
    """
    g0 = np.asarray(base, dtype=float).reshape(-1)
    if g0.shape != (planes.n_forms,):
        raise InputError(f"base needs one value per form ({planes.n_forms}), got {g0.shape}.")
    xf, xlo, xhi = _axis(planes, x, "x")
    yf, ylo, yhi = _axis(planes, y, "y")
    if xf == yf:
        raise InputError("x and y must vary two different forms.")
    nx0, ny0 = (size, size) if np.isscalar(size) else size  # type: ignore[misc]
    nx0, ny0 = int(nx0), int(ny0)  # type: ignore[arg-type]
    if nx0 < 2 or ny0 < 2 or levels < 0:
        raise InputError("size needs at least 2 points per axis and levels must be >= 0.")
    step = 2**levels
    nx, ny = (nx0 - 1) * step + 1, (ny0 - 1) * step + 1
    xs, ys = np.linspace(xlo, xhi, nx), np.linspace(ylo, yhi, ny)
    regions = np.full((ny, nx), -1, dtype=np.int64)
    computed = np.zeros((ny, nx), dtype=bool)
    pts: list[NDArray[np.float64]] = []
    regs: list[NDArray[np.int64]] = []
    fracs: list[NDArray[np.float64]] = []
    vols: list[NDArray[np.float64]] = []
    n_fallback = 0
    done = 0

    def compute(ii: NDArray[np.int64], jj: NDArray[np.int64]) -> None:
        nonlocal n_fallback, done
        keep = ~computed[jj, ii]
        ii, jj = ii[keep], jj[keep]
        if len(ii) == 0:
            return
        values = np.tile(g0, (len(ii), 1))  # (M, F)
        values[:, xf] = xs[ii]
        values[:, yf] = ys[jj]
        batch = solve_shapes(
            planes, planes.expand(values), tol=tol, scheduler=scheduler, workers=workers
        )
        mask = _present_mask(batch)
        regions[jj, ii] = mask
        computed[jj, ii] = True
        pts.append(values[:, [xf, yf]])
        regs.append(mask)
        fracs.append(batch.form_fractions)
        vols.append(batch.volume)
        n_fallback += batch.n_fallback
        done += len(ii)
        if progress is not None:
            progress(done)

    ci, cj = np.meshgrid(np.arange(0, nx, step), np.arange(0, ny, step))
    compute(ci.ravel(), cj.ravel())
    cells = np.column_stack([ci[:-1, :-1].ravel(), cj[:-1, :-1].ravel()])  # (C, 2) corners
    s = step
    while len(cells):
        i0, j0 = cells[:, 0], cells[:, 1]
        corners = np.stack(
            [regions[j0, i0], regions[j0, i0 + s], regions[j0 + s, i0], regions[j0 + s, i0 + s]]
        )  # (4, C)
        mixed = np.any(corners != corners[0], axis=0)
        for a, b, r in zip(i0[~mixed], j0[~mixed], corners[0, ~mixed], strict=True):
            block = regions[b : b + s + 1, a : a + s + 1]
            block[~computed[b : b + s + 1, a : a + s + 1]] = r
        if s == 1:
            break
        h = s // 2
        split = cells[mixed]
        a, b = split[:, 0], split[:, 1]
        new_i = np.concatenate([a + h, a, a + h, a + s, a + h])
        new_j = np.concatenate([b, b + h, b + h, b + h, b + s])
        order = np.unique(new_j * nx + new_i)
        compute(order % nx, order // nx)
        cells = np.concatenate([split, split + [h, 0], split + [0, h], split + [h, h]])
        s = h
    points = np.vstack(pts)
    out = ShapeMap(
        x=xs,
        y=ys,
        x_form=xf,
        y_form=yf,
        regions=regions,
        computed=computed,
        points=points,
        point_regions=np.concatenate(regs),
        point_fractions=np.vstack(fracs),
        point_volume=np.concatenate(vols),
        base=g0,
        planes=planes,
        n_fallback=n_fallback,
    )
    for arr in (xs, ys, regions, computed, points, g0):
        arr.setflags(write=False)
    return out


# ---------------------------------------------------------------------------- Monte Carlo

#: Draws per task; fixed so that the numbers do not depend on the number of workers.
SAMPLE_CHUNK = 20_000


@dataclass(frozen=True, slots=True)
class SampleSummary:
    """Monte Carlo over uncertain form values: what the shape does, with intervals.

    Attributes
    ----------
    planes : PlaneSet
    values : (n, F) float array
        The drawn values (draws with a value <= 0 are dropped, see ``n_dropped``).
    form_fractions : (n, F) float array
        Area fraction of each form in each drawn shape.
    volume : (n,) float array
        Volume of each shape (the values read as lengths, cubed).
    present : (n, F) bool array
    level : float
        Confidence level of the intervals, e.g. 0.95.
    p_present : (F,) float array
        Share of the shapes in which each form is present.
    p_present_interval : (F, 2) float array
        Wilson score interval of that probability.
    fraction_mean, fraction_sd : (F,) float arrays
    fraction_interval : (F, 2) float array
        Central interval of the area fraction (percentiles of the draws).
    volume_mean, volume_sd : float
    volume_interval : (2,) float array
    n_dropped : int
        Draws with a non-positive value (not used).
    n_fallback : int
        Shapes recomputed with a hull.
    """

    planes: PlaneSet
    values: NDArray[np.float64]
    form_fractions: NDArray[np.float64]
    volume: NDArray[np.float64]
    present: NDArray[np.bool_]
    level: float
    p_present: NDArray[np.float64]
    p_present_interval: NDArray[np.float64]
    fraction_mean: NDArray[np.float64]
    fraction_sd: NDArray[np.float64]
    fraction_interval: NDArray[np.float64]
    volume_mean: float
    volume_sd: float
    volume_interval: NDArray[np.float64]
    n_dropped: int
    n_fallback: int

    @property
    def n(self) -> int:
        """Number of shapes used."""
        return int(self.volume.shape[0])

    def region_counts(self) -> dict[str, int]:
        """How many shapes show each present-form set, by name."""
        bits = (1 << np.arange(self.present.shape[1])).astype(np.int64)
        masks = (self.present.astype(np.int64) * bits).sum(axis=1)
        found, counts = np.unique(masks, return_counts=True)
        return {
            _region_name(self.planes, int(m)): int(c) for m, c in zip(found, counts, strict=True)
        }


def _seed_sequence(rng: Any) -> np.random.SeedSequence:
    if isinstance(rng, np.random.SeedSequence):
        return rng
    if isinstance(rng, np.random.Generator):
        return np.random.SeedSequence(int(rng.integers(0, 2**63)))
    if rng is None or isinstance(rng, (int, np.integer)):
        return np.random.SeedSequence(None if rng is None else int(rng))
    raise InputError(f"rng must be an int seed, a numpy Generator or None; got {rng!r}.")


def _wilson(k: NDArray[np.float64], n: int, level: float) -> NDArray[np.float64]:
    """Wilson score interval (Wilson 1927) of k successes in n trials, (F, 2)."""
    from scipy.special import ndtri

    if n == 0:
        return np.full((len(k), 2), np.nan)
    z = float(ndtri(0.5 + level / 2))
    p = k / n
    centre = (p + z * z / (2 * n)) / (1 + z * z / n)
    half = z * np.sqrt(p * (1 - p) / n + z * z / (4 * n * n)) / (1 + z * z / n)
    return np.column_stack([np.clip(centre - half, 0, 1), np.clip(centre + half, 0, 1)])


def _sample_task(task: tuple[Any, ...]) -> tuple[Any, ...]:
    """Draw one chunk of values from its own seed and solve the shapes (runs anywhere)."""
    planes, plain, mean, sd, chol, dist, n, seed, per_face, tol = task
    rng = np.random.default_rng(seed)
    nf = len(mean)
    if per_face:
        z = rng.standard_normal((n, planes.n_planes))  # (n, N): every face on its own
        scale = sd[planes.forms]
        centre = mean[planes.forms]
    else:
        z = rng.standard_normal((n, nf)) @ chol.T  # (n, F), correlated
        scale, centre = sd, mean
    if dist == "uniform":
        from scipy.special import ndtr

        values = centre + scale * np.sqrt(3.0) * (2.0 * ndtr(z) - 1.0)  # same sd as normal
    else:
        values = centre + scale * z
    ok = np.all(values > 0, axis=1)
    values = values[ok]
    target = plain if per_face else planes
    energies = values if per_face else planes.expand(values)
    if len(values):
        batch = solve_shapes(target, energies, tol=tol, scheduler="inline")
        fr, vol, pres, nfb = (
            batch.form_fractions,
            batch.volume,
            batch.form_present,
            batch.n_fallback,
        )
    else:
        fr, vol, pres, nfb = np.zeros((0, nf)), np.zeros(0), np.zeros((0, nf), bool), 0
    if per_face:  # report the mean value of each form's faces
        values = np.stack([values[:, planes.forms == f].mean(axis=1) for f in range(nf)], axis=1)
    return values, fr, vol, pres, int((~ok).sum()), nfb


def sample_shapes(
    planes: PlaneSet,
    mean: ArrayLike,
    sd: ArrayLike,
    *,
    n: int = 10_000,
    distribution: str = "normal",
    correlation: ArrayLike | None = None,
    per_face: bool = False,
    rng: Any = None,
    level: float = 0.95,
    tol: Tolerances = DEFAULT,
    progress: Progress | None = None,
    scheduler: str | None = None,
    workers: int | None = None,
) -> SampleSummary:
    """Monte Carlo over uncertain form values (energies, distances or rates).

    Each form's value is drawn around ``mean`` with standard deviation ``sd``: normal,
    or uniform on ``mean +- sqrt(3) sd``. A correlation matrix couples the forms (for the
    uniform case through normal scores, a Gaussian copula). With ``per_face`` every face
    gets its own draw (symmetry broken; slower, since no symmetry can be used).

    Draws are made in chunks of :data:`SAMPLE_CHUNK`, each from its own child of one
    ``numpy.random.SeedSequence``, so the same ``rng`` gives the same numbers in-process,
    in local processes or on a dask cluster.

    Parameters
    ----------
    planes : PlaneSet
    mean, sd : (F,) array_like
        Mean and standard deviation of each form's value (sd >= 0).
    n : int
        Number of draws.
    distribution : {'normal', 'uniform'}
    correlation : (F, F) array_like, optional
        Correlation matrix (symmetric, unit diagonal, positive semi-definite).
    per_face : bool
        Draw every face separately instead of every form.
    rng : int, numpy.random.Generator or None
        Seed.
    level : float
        Confidence level of the intervals (0 < level < 1).
    tol : Tolerances
    progress : callable, optional
        Called with the number of draws done so far.
    scheduler, workers
        As for :func:`solve_shapes`.

    Returns
    -------
    SampleSummary

    References
    ----------
    E. B. Wilson, "Probable inference, the law of succession, and statistical inference",
    J. Am. Stat. Assoc. 22, 209-212 (1927) (interval of a probability).

    Examples
    --------
    >>> import numpy as np
    >>> cube = np.vstack([np.eye(3), -np.eye(3)])
    >>> octa = np.array([[a, b, c] for a in (1, -1) for b in (1, -1) for c in (1, -1)])
    >>> planes = prepare_planes(np.vstack([cube, octa / 3 ** 0.5]), forms=[0] * 6 + [1] * 8)
    >>> out = sample_shapes(planes, [1.0, 1.0], [0.0, 0.0], n=100, rng=1)
    >>> out.fraction_sd.round(12).tolist(), out.p_present.tolist()
    ([0.0, 0.0], [1.0, 1.0])
    """
    mu = np.asarray(mean, dtype=float).reshape(-1)
    sig = np.asarray(sd, dtype=float).reshape(-1)
    nf = planes.n_forms
    if mu.shape != (nf,) or sig.shape != (nf,):
        raise InputError(f"mean and sd need one value per form ({nf}).")
    if not (np.all(np.isfinite(mu)) and np.all(mu > 0)):
        raise InputError("every mean value must be a positive finite number.")
    if not (np.all(np.isfinite(sig)) and np.all(sig >= 0)):
        raise InputError("every standard deviation must be a finite number >= 0.")
    if distribution not in ("normal", "uniform"):
        raise InputError(f"distribution must be 'normal' or 'uniform', got {distribution!r}.")
    if not (0 < level < 1):
        raise InputError(f"level must lie between 0 and 1 (e.g. 0.95), got {level}.")
    if int(n) < 1:
        raise InputError(f"n must be a positive number of draws, got {n}.")
    n = int(n)
    if correlation is None:
        chol = np.eye(nf)
    else:
        if per_face:
            raise InputError("a correlation matrix couples forms; it cannot be used per face.")
        corr = np.asarray(correlation, dtype=float)
        if (
            corr.shape != (nf, nf)
            or not np.allclose(corr, corr.T)
            or not np.allclose(np.diag(corr), 1.0)
        ):
            raise InputError(
                f"correlation must be a symmetric ({nf}, {nf}) matrix with ones on the diagonal."
            )
        w, v = np.linalg.eigh(corr)
        if w.min() < -1e-10:
            raise InputError("correlation must be positive semi-definite (a valid correlation).")
        chol = v * np.sqrt(np.clip(w, 0, None))  # chol @ chol.T == corr
    plain = None
    if per_face:
        plain = prepare_planes(
            planes.normals,
            forms=planes.forms,
            form_labels=planes.form_labels,
            form_names=planes.form_names,
            hkl=planes.hkl,
        )
    sizes = [SAMPLE_CHUNK] * (n // SAMPLE_CHUNK) + ([n % SAMPLE_CHUNK] if n % SAMPLE_CHUNK else [])
    seeds = _seed_sequence(rng).spawn(len(sizes))
    tasks = [
        (planes, plain, mu, sig, chol, distribution, k, seeds[i], per_face, tol)
        for i, k in enumerate(sizes)
    ]
    per_shape = _seconds_per_shape(plain if plain is not None else planes, "auto")
    mode = _execute.choose_mode(scheduler, n * per_shape, workers)
    parts: list[Any] = [None] * len(tasks)
    done = 0
    for i, result in _execute.run_tasks(
        _sample_task, tasks, mode=mode, workers=workers, scheduler=scheduler
    ):
        parts[i] = result
        done += sizes[i]
        if progress is not None:
            progress(done)
    values = np.vstack([p[0] for p in parts])
    fractions = np.vstack([p[1] for p in parts])
    volume = np.concatenate([p[2] for p in parts])
    present = np.vstack([p[3] for p in parts])
    n_dropped = sum(p[4] for p in parts)
    n_fallback = sum(p[5] for p in parts)
    m = len(volume)
    if m == 0:
        raise InputError("every draw had a value <= 0; reduce the standard deviations.")
    lo, hi = 50 * (1 - level), 50 * (1 + level)
    out = SampleSummary(
        planes=planes,
        values=values,
        form_fractions=fractions,
        volume=volume,
        present=present,
        level=float(level),
        p_present=present.mean(axis=0),
        p_present_interval=_wilson(present.sum(axis=0).astype(float), m, level),
        fraction_mean=fractions.mean(axis=0),
        fraction_sd=fractions.std(axis=0, ddof=1) if m > 1 else np.zeros(nf),
        fraction_interval=np.percentile(fractions, [lo, hi], axis=0).T,
        volume_mean=float(volume.mean()),
        volume_sd=float(volume.std(ddof=1)) if m > 1 else 0.0,
        volume_interval=np.percentile(volume, [lo, hi]),
        n_dropped=int(n_dropped),
        n_fallback=int(n_fallback),
    )
    return out


# ---------------------------------------------------------------------------- many inputs


@dataclass(frozen=True, slots=True)
class BatchReport:
    """What a :func:`run_batch` call did.

    Attributes
    ----------
    outputs : tuple of str
        The results files (CSV or JSON lines).
    columns : tuple of str
        Columns of the table (keys of each JSON line).
    n_rows : int
        Rows in the input.
    n_skipped : int
        Rows already finished in the outputs before this run (not recomputed).
    n_computed : int
        Rows computed in this run.
    n_errors : int
        Rows of this run whose status is 'error' (the message is in the row).
    """

    outputs: tuple[str, ...]
    columns: tuple[str, ...]
    n_rows: int
    n_skipped: int
    n_computed: int
    n_errors: int


def _row_results(planes: PlaneSet, batch: ShapeBatch) -> list[dict[str, Any]]:
    labels = [planes.label(f) for f in range(planes.n_forms)]
    present = batch.form_present.tolist()
    fractions = batch.form_fractions.tolist()
    volume = batch.volume.tolist()
    return [
        {
            "status": "ok",
            "error": "",
            "volume_A3": v,
            "present_forms": [lab for lab, p in zip(labels, pr, strict=True) if p],
            "area_fractions": dict(zip(labels, fr, strict=True)),
        }
        for v, pr, fr in zip(volume, present, fractions, strict=True)
    ]


def _energy_rows_task(task: tuple[Any, ...]) -> list[dict[str, Any]]:
    """Solve a block of energy-table rows; a bad row gets its error, the rest go on."""
    planes, columns, rows, tol = task
    nf = planes.n_forms
    out: list[dict[str, Any]] = []
    good: list[int] = []
    values: list[list[float]] = []
    for k, (row_id, fields) in enumerate(rows):
        out.append({"id": row_id})
        try:
            if len(fields) != len(columns):
                raise InputError(
                    f"the row has {len(fields)} fields but the header has {len(columns)}."
                )
            vals = []
            for label, text in zip(columns, fields, strict=True):
                try:
                    v = float(text)
                except ValueError:
                    raise InputError(f"{label} = {text!r} is not a number.") from None
                if not (math.isfinite(v) and v > 0):
                    raise InputError(f"{label} = {text!r} must be a positive number.")
                vals.append(v)
            good.append(k)
            values.append(vals)
        except InputError as exc:
            out[k].update({"status": "error", "error": str(exc)})
    if good:
        batch = solve_shapes(
            planes, planes.expand(np.array(values).reshape(-1, nf)), tol=tol, scheduler="inline"
        )
        for k, result in zip(good, _row_results(planes, batch), strict=True):
            out[k].update(result)
    return out


def _crystal_files_task(task: tuple[Any, ...]) -> list[dict[str, Any]]:
    """Load crystal files and solve each one's shape; errors stay in their rows."""
    from habit.crystal import load_crystal
    from habit.errors import HabitError

    paths, tol = task
    out = []
    for path in paths:
        row: dict[str, Any] = {"id": Path(path).name, "name": ""}
        try:
            crystal = load_crystal(path)
            row["name"] = crystal.name
            if crystal.forms is None:
                raise InputError("the file gives no [forms] table (faces and their values).")
            planes = crystal_planes(crystal, crystal.forms.hkl)
            batch = solve_shapes(
                planes,
                planes.expand(np.array(crystal.forms.values)[None]),
                tol=tol,
                scheduler="inline",
            )
            row.update(_row_results(planes, batch)[0])
            row["kind"] = crystal.forms.kind
        except HabitError as exc:
            row.update({"status": "error", "error": str(exc)})
        except Exception as exc:  # one bad file must not stop the batch
            row.update({"status": "error", "error": f"{type(exc).__name__}: {exc}"})
        out.append(row)
    return out


def _read_energy_table(path: Path, planes: PlaneSet) -> tuple[list[str], list[Any]]:
    import csv

    if not path.is_file():
        raise InputError(f"no such energy table: {path}.")
    with open(path, newline="", encoding="utf-8") as handle:
        reader = csv.reader(handle)
        try:
            header = [h.strip() for h in next(reader)]
        except StopIteration:
            raise InputError(f"{path} is empty; it needs a header of form labels.") from None
        body = [r for r in reader if any(cell.strip() for cell in r)]
    has_id = bool(header) and header[0].lower() == "id"
    labels = header[1:] if has_id else header
    order = [planes.form_index(lab) for lab in labels]
    if sorted(order) != list(range(planes.n_forms)):
        raise InputError(
            f"the header of {path} must name every form once: "
            + ", ".join(planes.label(f) for f in range(planes.n_forms))
            + "."
        )
    rows = []
    seen: set[str] = set()
    for k, r in enumerate(body, start=1):
        row_id = r[0].strip() if has_id and r else str(k)
        if row_id in seen:
            raise InputError(f"row id {row_id!r} appears twice in {path}; ids must be unique.")
        seen.add(row_id)
        fields = [c.strip() for c in (r[1:] if has_id else r)]
        if len(fields) == len(order):
            fields = [fields[order.index(f)] for f in range(planes.n_forms)]
        rows.append((row_id, fields))
    columns = [planes.label(f) for f in range(planes.n_forms)]
    return columns, rows


def run_batch(
    source: str | os.PathLike[str],
    output: str | os.PathLike[str] | list[str | os.PathLike[str]],
    *,
    crystal: Any = None,
    chunk: int = 500,
    tol: Tolerances = DEFAULT,
    progress: Progress | None = None,
    scheduler: str | None = None,
    workers: int | None = None,
) -> BatchReport:
    """Shapes for many inputs, written to a results table row by row; restartable.

    Two kinds of input:

    * a folder of crystal files (``*.toml`` with a ``[forms]`` table; a file without one
      gets an error row): one row per file;
    * a CSV table of energy sets for one ``crystal``: a header naming the forms
      (``100,110,111`` or ``{100},...``; an optional first column ``id``), then one row
      per energy set (J/m², or distances).

    Each row holds ``status`` ('ok' or 'error'), the error message when there is one, the
    volume, the present forms and every form's area fraction. Rows are appended to
    ``<output>.part`` as they finish and the file is moved to ``output`` when all are
    done. Running again with the same output skips the rows already finished (also after
    an interruption) and computes only the rest.

    Parameters
    ----------
    source : path
        Folder of crystal files, or a CSV file of energy sets.
    output : path or list of paths
        ``.csv`` and/or ``.jsonl`` (JSON lines) results files.
    crystal : habit.crystal.Crystal, optional
        Needed for a CSV of energy sets.
    chunk : int
        Rows per task.
    tol : Tolerances
    progress : callable, optional
        Called with the number of rows finished (including skipped ones).
    scheduler, workers
        As for :func:`solve_shapes`.

    Returns
    -------
    BatchReport

    Raises
    ------
    InputError
        Missing source, a header that does not name the crystal's forms, duplicate row ids,
        an output holding a table with other columns.
    """
    from habit import _tables

    src = Path(source)
    outputs = [output] if isinstance(output, (str, os.PathLike)) else list(output)
    for o in outputs:
        _tables.table_format(o)
    if chunk < 1:
        raise InputError(f"chunk must be a positive number of rows, got {chunk}.")
    if src.is_dir():
        files = sorted(str(p) for p in src.glob("*.toml") if p.is_file())
        ids = [Path(p).name for p in files]
        columns = ["id", "name", "status", "error", "kind", "volume_A3", "present_forms"]
        columns += ["area_fractions"]
        items: list[Any] = files
        per_row = 0.05
    else:
        if crystal is None:
            raise InputError(
                f"{src} is not a folder of crystal files; a CSV of energy sets needs a crystal."
            )
        if isinstance(crystal, PlaneSet):
            planes = crystal
        else:
            if not src.is_file():
                raise InputError(f"no such energy table: {src}.")
            with open(src, encoding="utf-8") as handle:
                first = handle.readline()
            labels = [h.strip() for h in first.strip().split(",") if h.strip()]
            if labels and labels[0].lower() == "id":
                labels = labels[1:]
            if not labels:
                raise InputError(f"{src} needs a header naming the forms, e.g. id,100,110,111.")
            planes = crystal_planes(crystal, labels)
        form_columns, rows = _read_energy_table(src, planes)
        ids = [r[0] for r in rows]
        columns = ["id", "status", "error", "volume_A3", "present_forms"]
        columns += [f"area_fraction_{lab}" for lab in form_columns]
        items = rows
        per_row = _seconds_per_shape(planes, "auto") + 2e-5
    table = _tables.ResultTable(outputs, columns)
    todo = [k for k, i in enumerate(ids) if i not in table.finished]
    n_skipped = len(ids) - len(todo)
    blocks = [todo[a : a + chunk] for a in range(0, len(todo), chunk)]
    tasks: list[Any]
    if src.is_dir():
        tasks = [([items[k] for k in b], tol) for b in blocks]
        func = _crystal_files_task
    else:
        tasks = [(planes, form_columns, [items[k] for k in b], tol) for b in blocks]
        func = _energy_rows_task
    mode = _execute.choose_mode(scheduler, len(todo) * per_row, workers)
    done, errors, finished = n_skipped, 0, False
    try:
        if progress is not None:
            progress(done)
        for _, rows_out in _execute.run_tasks(
            func, tasks, mode=mode, workers=workers, scheduler=scheduler
        ):
            for row in rows_out:
                if "area_fractions" not in columns and "area_fractions" in row:
                    for lab, v in row.pop("area_fractions").items():
                        row[f"area_fraction_{lab}"] = v
                errors += row.get("status") == "error"
            table.write(rows_out)
            done += len(rows_out)
            if progress is not None:
                progress(done)
        finished = True
    finally:
        table.close(finished)
    return BatchReport(
        outputs=tuple(str(o) for o in outputs),
        columns=tuple(columns),
        n_rows=len(ids),
        n_skipped=n_skipped,
        n_computed=len(todo),
        n_errors=errors,
    )
