"""Private: solve many Wulff shapes of one plane set (the core of :mod:`habit.batch`).

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

import os
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from habit import _execute, _intervals
from habit.errors import InputError, OpenShapeError
from habit.tolerances import DEFAULT, Tolerances

__all__ = [
    "PlaneSet",
    "ShapeBatch",
    "prepare_planes",
    "solve_shapes",
    "crystal_planes",
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

    face_areas: NDArray[np.float64]
    volume: NDArray[np.float64]
    face_present: NDArray[np.bool_]
    form_fractions: NDArray[np.float64]
    forms: NDArray[np.int64]
    edge_lengths: NDArray[np.float64] | None
    fallback: NDArray[np.bool_]
    method: str
    columns: NDArray[np.int64] | None = None
    _cache: dict[str, Any] = field(default_factory=dict, repr=False, compare=False)

    # For a symmetric plane set the solver keeps one column per family of equivalent
    # faces (``face_areas``, ``face_present`` are (S, K)) and ``columns`` maps every plane
    # to its family; the full (S, N) arrays are made on first use and kept.
    def _expanded(self, name: str, values: NDArray[Any]) -> NDArray[Any]:
        if self.columns is None:
            return values
        if name not in self._cache:
            full = values[:, self.columns]
            full.setflags(write=False)
            self._cache[name] = full
        out: NDArray[Any] = self._cache[name]
        return out

    @property
    def areas(self) -> NDArray[np.float64]:
        """(S, N) float: area of every face (energy unit squared); 0 for absent faces."""
        return self._expanded("areas", self.face_areas)

    @property
    def present(self) -> NDArray[np.bool_]:
        """(S, N) bool: the face has area above ``tol.area`` times the total area."""
        return self._expanded("present", self.face_present)

    @property
    def n_fallback(self) -> int:
        """How many shapes were recomputed with a convex hull."""
        return int(self.fallback.sum())

    @property
    def form_present(self) -> NDArray[np.bool_]:
        """(S, F) bool: the form has at least one present face."""
        return self._form_any()

    def _form_any(self) -> NDArray[np.bool_]:
        nf = self.form_fractions.shape[1]
        cols = self.forms if self.columns is None else None
        present = self.face_present
        if cols is None:  # one column per family: the family's form
            assert self.columns is not None
            first = np.unique(self.columns, return_index=True)[1]  # a plane of each family
            cols = self.forms[first]
        counts = present.astype(np.int64) @ np.eye(nf, dtype=np.int64)[cols]  # (S, F)
        out: NDArray[np.bool_] = counts > 0
        return out


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
    volume = np.empty(nshape)
    fallback = np.zeros(nshape, dtype=bool)
    ell = np.zeros((nshape, nplanes, nplanes)) if edges else None
    compact = planes.symmetric
    mode = _execute.choose_mode(scheduler, nshape * _seconds_per_shape(planes, method), workers)
    if mode == "inline":
        areas = np.empty((nshape, nplanes))
        with _intervals.single_thread_blas():
            _solve_into(plan, g, method, chunk, areas, volume, fallback, ell, progress)
        rep = areas[:, plan.reps] if compact else None  # (S, F): one face per family
    else:
        n_tasks = max(1, min(nshape // max(chunk, 1), 8 * (workers or os.cpu_count() or 1)))
        bounds = np.linspace(0, nshape, n_tasks + 1).astype(int)
        parts = [slice(int(a), int(b)) for a, b in zip(bounds[:-1], bounds[1:], strict=True)]
        sent = g[:, plan.reps] if compact else g  # (S, F) or (S, N)
        # symmetric sets come back as one area per family and are expanded once, below
        store = np.empty((nshape, len(plan.reps) if compact else nplanes))
        tasks = [(plan, sent[part], method, chunk, edges, compact) for part in parts]
        done = 0
        for i, (a_i, v_i, f_i, e_i) in _execute.run_tasks(
            _solve_task, tasks, mode=mode, workers=workers, scheduler=scheduler
        ):
            part = parts[i]  # contiguous rows: slice assignment, not a fancy-index scatter
            store[part] = a_i
            volume[part], fallback[part] = v_i, f_i
            if ell is not None:
                ell[part] = e_i
            done += part.stop - part.start
            if progress is not None:
                progress(done)
        rep = store if compact else None
        areas = store  # replaced by the expansion below when compact
    columns = None
    if rep is not None:
        # every face of a family has its representative's area: keep (S, K), one column
        # per family; the (S, N) arrays are expanded only when asked for
        np.maximum(rep, 0.0, out=rep)
        family_area = rep * plan.family_size  # (S, K)
        total = family_area.sum(axis=1)  # (S,)
        areas = np.ascontiguousarray(rep)
        present = rep > tol.area * total[:, None]  # (S, K)
        columns = np.asarray(plan.family, dtype=np.int64)
        fractions = np.zeros((nshape, planes.n_forms))  # (S, forms)
        for k, r in enumerate(plan.reps):
            fractions[:, planes.forms[r]] += family_area[:, k]
    else:
        np.maximum(areas, 0.0, out=areas)
        total = areas.sum(axis=1)  # (S,)
        present = areas > tol.area * total[:, None]
        fractions = np.empty((nshape, planes.n_forms))  # (S, forms)
        for f in range(planes.n_forms):  # add the columns of each form's faces
            fractions[:, f] = areas[:, planes.forms == f].sum(axis=1)
    fractions /= total[:, None]
    out = [areas, volume, present, fractions, fallback]
    if ell is not None:
        out.append(ell)
    for arr in out:
        arr.setflags(write=False)
    return ShapeBatch(
        areas, volume, present, fractions, planes.forms, ell, fallback, method, columns
    )


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
