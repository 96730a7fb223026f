"""From measured face normals or interfacial angles to Miller indices, orientation and cell.

The inverse path of habit:

* :func:`index_faces` — a known cell: one orientation for all faces together, found by a
  deterministic consensus search over matched face pairs, refined by least squares;
  every face gets an (hkl) or is flagged as fitting nothing.
* :func:`refine_cell` — least squares of the orientation and the free cell-shape
  parameters of the crystal system (axial ratios, free angles) from indexed faces, with
  standard uncertainties from the Jacobian (defined in :mod:`habit.cellfit`).
* :func:`find_axial_ratios` — the classical problem: only the crystal system is known;
  search the cell shape, index, then refine (defined in :mod:`habit.cellfit`).
* :class:`Orientation` — crystal axes, [uvw] and (hkl) in the laboratory frame.

Method (indexing with a known cell)
-----------------------------------
1. Candidate faces: every primitive (hkl) with ``max |index| <= max_index``; their unit
   normals in the crystal's Cartesian frame (c ∥ z, a in the x–z plane).
2. Measured pairs whose interfacial angle lies between 12° and 168° are taken in a fixed
   order (best conditioned first). For each, every candidate pair with the same angle
   (within twice the tolerance) gives an orientation by two-vector alignment. Only one
   face of each symmetry orbit of the lattice is tried as the first member of a pair,
   since the others give equivalent orientations.
3. Each orientation is scored on *all* faces: each face within the tolerance of some
   candidate normal counts 1/(1 + s/4)·(1 − ½(r/tol)²), s = Σ|h|, r its residual; ties
   go to the simpler indices, then to the smaller sum of squared residuals. The best
   consensus wins (a deterministic variant of random sample consensus [1]_).
4. The winning orientation is refined by weighted least squares (the Kabsch / Wahba
   solution [2]_, [3]_), faces are re-assigned and the two steps repeated until the
   assignment is stable.

Assignment rule: a face takes the candidate with the smallest angular residual, except
that among candidates whose residuals lie within a quarter of the tolerance of the
smallest one the simplest index (smallest Σ|h|, or |h|+|k|+|i|+|l| on hexagonal axes)
wins. A face with no candidate within the tolerance is *flagged* and keeps no index.

Setting rule: angles fix the indices only up to the proper rotations of the lattice's
metric symmetry (its holohedry) — for example r{10-11} and z{01-11} of quartz have the
same angles. Among those equivalent settings habit reports the one that (1) has the most
faces with no negative index, (2) then the largest sum of indices, (3) then the largest
list of indices in face order, compared lexicographically. The integer matrix used is
returned as :attr:`IndexingResult.setting`.

References
----------
.. [1] Fischler, M. A. & Bolles, R. C. (1981). Random sample consensus. *Commun. ACM*
   24, 381–395.
.. [2] Kabsch, W. (1976). A solution for the best rotation to relate two sets of
   vectors. *Acta Cryst.* A32, 922–923.
.. [3] Wahba, G. (1965). A least squares estimate of satellite attitude. *SIAM Review*
   7, 409.
.. [4] Busing, W. R. & Levy, H. A. (1967). Angle calculations for 3- and 4-circle X-ray
   and neutron diffractometers. *Acta Cryst.* 22, 457–464 (orientation matrix).
"""

from __future__ import annotations

import dataclasses
import itertools
import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np

from habit._arrays import readonly as _readonly
from habit._typing import ArrayLike, BoolArray, FloatArray, IntArray
from habit.errors import CellError, IndexingError, InputError, UnknownSymbolError
from habit.geometry import cell_to_lattice, reciprocal_lattice
from habit.measurements import Measurements

if TYPE_CHECKING:
    from habit.cellfit import (
        AxialRatioResult,
        CellRefinement,
        find_axial_ratios,
        refine_cell,
        shape_parameter_names,
    )

__all__ = [
    "SYSTEMS",
    "CellModel",
    "Orientation",
    "IndexingResult",
    "CellRefinement",
    "AxialRatioResult",
    "candidate_indices",
    "lattice_rotations",
    "align_two_vectors",
    "best_rotation",
    "embed_angle_table",
    "index_faces",
    "refine_cell",
    "find_axial_ratios",
    "shape_parameter_names",
]

# defined in habit.cellfit (which builds on this module); reachable here too
_FROM_CELLFIT = ("CellRefinement", "AxialRatioResult", "refine_cell", "find_axial_ratios",
                 "shape_parameter_names")


def __getattr__(name: str) -> Any:
    if name in _FROM_CELLFIT:
        import habit.cellfit

        return getattr(habit.cellfit, name)
    raise AttributeError(f"module 'habit.indexing' has no attribute {name!r}")

SYSTEMS: tuple[str, ...] = (
    "triclinic", "monoclinic", "orthorhombic", "tetragonal", "trigonal", "hexagonal", "cubic",
)
_MIN_PAIR_ANGLE = math.radians(12.0)
_HEX_FAMILY = ("hexagonal", "trigonal")


# ----------------------------------------------------------------------------- cells


@dataclass(frozen=True, slots=True)
class CellModel:
    """A cell and its crystal system: the least a crystal must offer to the indexing code.

    :class:`habit.crystal.Crystal` works wherever a ``CellModel`` is accepted.

    Attributes
    ----------
    cell : tuple of 6 float
        a, b, c (Å or relative units) and alpha, beta, gamma (degrees).
    system : str
        One of :data:`SYSTEMS`.
    name : str
        Free text.
    """

    cell: tuple[float, float, float, float, float, float]
    system: str
    name: str = ""

    def __post_init__(self) -> None:
        if self.system not in SYSTEMS:
            raise UnknownSymbolError(
                f"unknown crystal system {self.system!r}; choose one of: {', '.join(SYSTEMS)}."
            )
        if len(self.cell) != 6:
            raise CellError("a cell needs six numbers: a, b, c (Å) and alpha, beta, gamma (°).")
        cell_to_lattice(*self.cell)

    @property
    def lattice(self) -> FloatArray:
        """(3, 3) rows a, b, c in the crystal's Cartesian frame."""
        return cell_to_lattice(*self.cell)

    @property
    def reciprocal(self) -> FloatArray:
        """(3, 3) rows a*, b*, c*."""
        return reciprocal_lattice(self.lattice)


def _as_model(crystal: Any) -> CellModel:
    if isinstance(crystal, CellModel):
        return crystal
    cell = getattr(crystal, "cell", None)
    system = getattr(crystal, "system", None)
    if cell is None or system is None:
        raise InputError("crystal must be a habit Crystal or CellModel (with cell and system).")
    return CellModel(tuple(float(x) for x in cell), str(system),  # type: ignore[arg-type]
                     str(getattr(crystal, "name", "")))


def _is_rhombohedral_cell(cell: Sequence[float]) -> bool:
    a, b, c, al, be, ga = cell
    return (math.isclose(a, b, rel_tol=1e-6) and math.isclose(a, c, rel_tol=1e-6)
            and abs(al - be) < 1e-6 and abs(al - ga) < 1e-6 and abs(al - 90.0) > 1e-6)


def _uses_hex_axes(model: CellModel) -> bool:
    return model.system in _HEX_FAMILY and not _is_rhombohedral_cell(model.cell)


def _unit(v: FloatArray) -> FloatArray:
    return np.asarray(v / np.linalg.norm(v, axis=-1, keepdims=True), dtype=np.float64)


def _angle(u: ArrayLike, v: ArrayLike) -> FloatArray:
    """Angle between vectors along the last axis, accurate near 0 and π (atan2 form)."""
    a, b = np.asarray(u, float), np.asarray(v, float)
    sine = np.linalg.norm(np.cross(a, b), axis=-1)
    return np.asarray(np.arctan2(sine, np.sum(a * b, axis=-1)), dtype=np.float64)


def _normals(reciprocal: FloatArray, hkl: ArrayLike) -> FloatArray:
    return _unit(np.asarray(hkl, dtype=float) @ reciprocal)


def _simplicity(hkl: IntArray, hex_axes: bool) -> IntArray:
    """Σ|h| (or |h|+|k|+|i|+|l| on hexagonal axes), invariant under the holohedry."""
    h = np.asarray(hkl)
    s = np.abs(h).sum(axis=-1)
    if hex_axes:
        s = s + np.abs(h[..., 0] + h[..., 1])
    return np.asarray(s, dtype=np.int64)


# ------------------------------------------------------------------ candidates, symmetry


def candidate_indices(max_index: int, *, hex_axes: bool = False) -> IntArray:
    """All primitive (hkl) with ``max(|h|, |k|, |l|) <= max_index``, simplest first.

    Parameters
    ----------
    max_index : int
        Largest absolute index, >= 1.
    hex_axes : bool
        Measure simplicity as |h|+|k|+|i|+|l| (hexagonal axes) instead of Σ|h|.

    Returns
    -------
    (M, 3) int array
        Sorted by simplicity, then lexicographically (descending).

    Examples
    --------
    >>> candidate_indices(1).shape    # 26 directions of the 3x3x3 block, all primitive
    (26, 3)
    >>> candidate_indices(1)[0].tolist()
    [1, 0, 0]
    """
    if int(max_index) < 1:
        raise InputError(f"max_index must be at least 1; got {max_index}.")
    n = int(max_index)
    r = np.arange(-n, n + 1)
    hkl = np.stack(np.meshgrid(r, r, r, indexing="ij"), axis=-1).reshape(-1, 3)
    g = np.gcd.reduce(np.abs(hkl), axis=1)
    hkl = hkl[g == 1]
    simp = _simplicity(hkl, hex_axes)
    order = np.lexsort((-hkl[:, 2], -hkl[:, 1], -hkl[:, 0], simp))
    return np.asarray(hkl[order], dtype=np.int64)


_ALL_W = np.array(list(itertools.product((-1, 0, 1), repeat=9)), dtype=np.int64).reshape(-1, 3, 3)
_ALL_W = _ALL_W[np.round(np.linalg.det(_ALL_W)).astype(int) == 1]


def lattice_rotations(cell: Sequence[float], *, tol: float = 1e-3) -> IntArray:
    """Proper rotations of the lattice's metric symmetry (holohedry) as integer matrices.

    Parameters
    ----------
    cell : sequence of 6 float
        a, b, c and alpha, beta, gamma (degrees) of a conventional cell.
    tol : float
        Relative tolerance on the metric tensor.

    Returns
    -------
    (K, 3, 3) int array
        Matrices W acting on fractional coordinates of directions (x' = W x) with
        ``Wᵀ G W = G``, det W = +1; faces transform as the row vector ``h' = h W⁻¹``.
        The identity comes first.

    Examples
    --------
    >>> len(lattice_rotations((1, 1, 1, 90, 90, 90)))      # cubic holohedry: 432
    24
    >>> len(lattice_rotations((1, 1, 1.6, 90, 90, 120)))   # hexagonal: 622
    12
    """
    lat = cell_to_lattice(*cell)
    g = lat @ lat.T
    scale = float(np.max(np.abs(g)))
    # (K, 3, 3): W^T G W for every candidate
    wf = _ALL_W.astype(float)
    gw = np.swapaxes(wf, 1, 2) @ g @ wf
    ok = np.all(np.abs(gw - g) <= tol * scale, axis=(1, 2))
    rots = _ALL_W[ok]
    ident = np.all(rots == np.eye(3, dtype=np.int64), axis=(1, 2))
    return np.concatenate([rots[ident], rots[~ident]]).astype(np.int64)


def _cartesian_rotation(lattice: FloatArray, w: IntArray) -> FloatArray:
    a = lattice.T  # columns a, b, c
    return a @ w @ np.linalg.inv(a)


def _orbit_representatives(hkl: IntArray, rotations: IntArray) -> IntArray:
    """Positions in ``hkl`` of the first member of each orbit under ``rotations``."""
    index = {tuple(h): i for i, h in enumerate(hkl.tolist())}
    inv = np.rint(np.linalg.inv(rotations)).astype(np.int64)
    # (K, M, 3): every candidate under every rotation, h' = h W^-1
    images = np.einsum("mi,kij->kmj", hkl, inv)
    first = np.arange(len(hkl))
    for k in range(len(rotations)):
        pos = np.array([index.get(tuple(h), -1) for h in images[k].tolist()])
        ok = pos >= 0
        first[ok] = np.minimum(first[ok], pos[ok])
    return np.unique(first)


# --------------------------------------------------------------------------- rotations


def align_two_vectors(
    crystal1: ArrayLike, crystal2: ArrayLike, lab1: ArrayLike, lab2: ArrayLike
) -> FloatArray:
    """Rotations taking two crystal-frame vectors onto two lab-frame vectors.

    The angular misfit is shared equally between the two pairs (the bisector and the
    half-difference of each pair are aligned).

    Parameters
    ----------
    crystal1, crystal2, lab1, lab2 : (..., 3) float array
        Unit vectors; the angle crystal1∧crystal2 should match lab1∧lab2.

    Returns
    -------
    (..., 3, 3) float array
        Proper rotations U with ``U @ crystal ≈ lab``.

    Examples
    --------
    >>> u = align_two_vectors([1, 0, 0], [0, 1, 0], [0, 1, 0], [-1, 0, 0])
    >>> np.round(u @ [0, 0, 1], 12).tolist()
    [0.0, 0.0, 1.0]
    """
    def triad(v1: FloatArray, v2: FloatArray) -> FloatArray:
        v1, v2 = _unit(np.asarray(v1, float)), _unit(np.asarray(v2, float))
        e1 = _unit(v1 + v2)
        e2 = _unit(v1 - v2)
        e3 = np.cross(e1, e2)
        return np.stack([e1, e2, e3], axis=-1)  # (..., 3, 3) columns

    tc = triad(np.asarray(crystal1, float), np.asarray(crystal2, float))
    tl = triad(np.asarray(lab1, float), np.asarray(lab2, float))
    return tl @ np.swapaxes(tc, -1, -2)


def best_rotation(crystal: ArrayLike, lab: ArrayLike, weights: ArrayLike | None = None
                  ) -> FloatArray:
    """Proper rotation U minimising Σ wᵢ |labᵢ − U crystalᵢ|² (Kabsch / Wahba).

    Parameters
    ----------
    crystal, lab : (N, 3) float array
        Matched unit vectors, N >= 2 and not all parallel.
    weights : (N,) float array, optional

    Returns
    -------
    (3, 3) float array

    References
    ----------
    .. [1] Kabsch, W. (1976). *Acta Cryst.* A32, 922–923.

    Examples
    --------
    >>> best_rotation([[1, 0, 0], [0, 1, 0]], [[1, 0, 0], [0, 1, 0]]).round(12).tolist()
    [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]]
    """
    c = np.asarray(crystal, float)
    m = np.asarray(lab, float)
    w = np.ones(len(c)) if weights is None else np.asarray(weights, float)
    h = (c * w[:, None]).T @ m  # (3, 3)
    u, _, vt = np.linalg.svd(h)
    d = np.sign(np.linalg.det(vt.T @ u.T)) or 1.0
    return np.asarray(vt.T @ np.diag([1.0, 1.0, d]) @ u.T, dtype=np.float64)


# ---------------------------------------------------------------------------- results


@dataclass(frozen=True, slots=True, eq=False)  # holds arrays: compared by identity
class Orientation:
    """The orientation of a crystal in the laboratory (goniometer) frame.

    Attributes
    ----------
    matrix : (3, 3) float array
        Proper rotation U: ``lab = U @ v`` for a vector v in the crystal's Cartesian
        frame (c ∥ z, a in the x–z plane); the "U matrix" of Busing & Levy (1967).
    lattice : (3, 3) float array
        Rows a, b, c in the crystal frame (relative units suffice).
    system : str
    """

    matrix: FloatArray
    lattice: FloatArray
    system: str

    def axes_lab(self) -> FloatArray:
        """(3, 3) unit vectors of the a, b, c axes in the lab frame (rows)."""
        return _unit(self.lattice @ self.matrix.T)

    def directions_lab(self, uvw: ArrayLike) -> FloatArray:
        """(..., 3) unit lab vectors of crystal directions [uvw]."""
        return _unit(np.asarray(uvw, float) @ self.lattice @ self.matrix.T)

    def normals_lab(self, hkl: ArrayLike) -> FloatArray:
        """(..., 3) unit lab normals of faces (hkl)."""
        recip = reciprocal_lattice(self.lattice)
        return _unit(np.asarray(hkl, float) @ recip @ self.matrix.T)

    def angle_to_direction(self, lab_vector: ArrayLike, uvw: ArrayLike) -> FloatArray:
        """Angle (radians) between lab direction(s) and crystal direction(s) [uvw]."""
        v = _unit(np.asarray(lab_vector, float))
        return _angle(v, self.directions_lab(uvw))

    def angle_to_normal(self, lab_vector: ArrayLike, hkl: ArrayLike) -> FloatArray:
        """Angle (radians) between lab direction(s) and face normal(s) (hkl)."""
        v = _unit(np.asarray(lab_vector, float))
        return _angle(v, self.normals_lab(hkl))

    def to_crystal(self, lab_vector: ArrayLike) -> FloatArray:
        """Express lab vector(s) as direction components [uvw] (real numbers)."""
        v = np.asarray(lab_vector, float) @ self.matrix  # crystal Cartesian
        return v @ np.linalg.inv(self.lattice)

    @property
    def is_uniaxial(self) -> bool:
        """True for tetragonal, trigonal and hexagonal crystals (one optic axis, ∥ c)."""
        return self.system in ("tetragonal", "trigonal", "hexagonal")

    def optic_axis_lab(self) -> FloatArray:
        """Return the unit lab vector of the optic axis (= c) of a uniaxial crystal.

        Raises
        ------
        InputError
            For cubic (isotropic) or biaxial (orthorhombic and lower) crystals, whose
            optic axes are not fixed by the lattice alone.
        """
        if not self.is_uniaxial:
            raise InputError(
                f"a {self.system} crystal is not uniaxial; its optic axes depend on the "
                "refractive indices, not on the lattice alone."
            )
        return np.asarray(self.axes_lab()[2], dtype=np.float64)


@dataclass(frozen=True, slots=True, eq=False)  # holds arrays: compared by identity
class IndexingResult:
    """Indices of measured faces under one orientation, with the evidence.

    Attributes
    ----------
    labels : tuple of str
    hkl : (N, 3) int array
        Indices of each face; ``(0, 0, 0)`` for flagged faces.
    indexed : (N,) bool array
        False for faces that fit no candidate within the tolerance (flagged).
    residuals : (N,) float array
        Angle (radians) between measured and calculated normal of each indexed face;
        for flagged faces, the angle to the nearest candidate.
    nearest_hkl : (N, 3) int array
        Nearest candidate of every face (evidence for flagged ones).
    rms : float
        Root mean square of the residuals of indexed faces, radians.
    orientation : Orientation or None
        None when the data were an interfacial-angle table.
    crystal : CellModel
        Cell and system used.
    setting : (3, 3) int array
        The lattice rotation W applied to choose the reported setting (h' = h W⁻¹);
        for an angle table it may include the inversion (−W).
    equivalent_settings : int
        How many settings fit equally well (order of the lattice's rotation group).
    hypotheses : int
        Number of orientations scored in the search.
    max_index : int
    tolerance : float
        Radians.
    pairs, pair_residuals : (P, 2) int array, (P,) float array
        For interfacial-angle tables: the measured pairs and measured − calculated
        angle (radians), NaN where a face is flagged.
    calculated_phi_rho : (N, 2) float array or None
        (φ, ρ) radians of the calculated normals in the measurement's convention.
    alternatives : tuple of (int, float)
        Other, inequivalent indexings the search found, as (faces indexed, RMS radians),
        best first — evidence of how clear-cut the answer is.
    """

    labels: tuple[str, ...]
    hkl: IntArray
    indexed: BoolArray
    residuals: FloatArray
    nearest_hkl: IntArray
    rms: float
    orientation: Orientation | None
    crystal: CellModel
    setting: IntArray
    equivalent_settings: int
    hypotheses: int
    max_index: int
    tolerance: float
    pairs: IntArray = field(default_factory=lambda: _readonly(np.zeros((0, 2)), np.int64))
    pair_residuals: FloatArray = field(default_factory=lambda: _readonly(np.zeros(0)))
    calculated_phi_rho: FloatArray | None = None
    alternatives: tuple[tuple[int, float], ...] = ()

    @property
    def flagged(self) -> tuple[str, ...]:
        """Labels of faces that fit nothing within the tolerance."""
        return tuple(lab for lab, ok in zip(self.labels, self.indexed, strict=True) if not ok)

    @property
    def n_indexed(self) -> int:
        """Number of indexed faces."""
        return int(np.count_nonzero(self.indexed))


# ---------------------------------------------------------------------- angle tables


def _placement(a: FloatArray, b: FloatArray, ca: float, cb: float) -> list[FloatArray]:
    """Find the unit vectors x with x·a = ca and x·b = cb (0, 1 or 2 solutions)."""
    ab = float(a @ b)
    det = 1.0 - ab * ab
    if det < 1e-8:
        return []
    alpha = (ca - cb * ab) / det
    beta = (cb - ca * ab) / det
    base = alpha * a + beta * b
    rest = 1.0 - float(base @ base)
    perp = np.cross(a, b)
    perp /= np.linalg.norm(perp)
    if rest < -0.05:
        return []
    t = math.sqrt(max(rest, 0.0))
    return [_unit(base + t * perp), _unit(base - t * perp)]


def embed_angle_table(measurements: Measurements, *, max_branches: int = 64
                      ) -> list[FloatArray]:
    """Find unit normals (in an arbitrary frame) that reproduce an interfacial-angle table.

    Faces are placed one by one from their angles to two faces already placed; a third
    angle, when measured, chooses between the two mirror solutions, otherwise both are
    kept as separate branches. Each branch is then polished by least squares on all
    measured angles.

    Parameters
    ----------
    measurements : Measurements
        Of kind ``"interfacial-angles"``.
    max_branches : int
        Upper bound on the number of mirror branches kept.

    Returns
    -------
    list of (N, 3) float arrays
        Candidate normal sets, best fitting first.

    Raises
    ------
    InputError
        If some face is linked to fewer than two others by measured angles (its position
        is not fixed), or there are fewer than three faces.

    Examples
    --------
    >>> from habit.measurements import measurements_from_arrays
    >>> t = measurements_from_arrays(pairs=[("a", "b"), ("a", "c"), ("b", "c")],
    ...                              angles_deg=[90, 90, 90])
    >>> v = embed_angle_table(t)[0]
    >>> np.round(v @ v.T, 9).tolist()
    [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]]
    >>> embed_angle_table(measurements_from_arrays(pairs=[("a", "b")], angles_deg=[90]))
    Traceback (most recent call last):
    ...
    habit.errors.InputError: an angle table needs at least three faces; got 2.
    """
    from scipy.optimize import least_squares

    if measurements.kind != "interfacial-angles":
        raise InputError("embed_angle_table needs an interfacial-angle table.")
    n = measurements.n_faces
    if n < 3:
        raise InputError(f"an angle table needs at least three faces; got {n}.")
    cosines: dict[tuple[int, int], float] = {}
    for (i, j), ang in zip(measurements.pairs.tolist(), measurements.angles, strict=True):
        cosines[(i, j)] = cosines[(j, i)] = math.cos(float(ang))
    # first two faces: the measured pair closest to 90 degrees
    first = min(cosines, key=lambda p: abs(cosines[p]))
    i0, j0 = first
    c0 = cosines[first]
    v0 = np.array([0.0, 0.0, 1.0])
    v1 = np.array([math.sqrt(max(1 - c0 * c0, 0.0)), 0.0, c0])
    branches: list[dict[int, FloatArray]] = [{i0: v0, j0: v1}]
    placed = [i0, j0]
    remaining = [k for k in range(n) if k not in placed]
    while remaining:
        # next: the face with most angles to placed faces
        counts = [(sum((k, p) in cosines for p in placed), -k) for k in remaining]
        best = max(range(len(remaining)), key=lambda t: counts[t])
        k = remaining[best]
        refs = [p for p in placed if (k, p) in cosines]
        if len(refs) < 2:
            lab = measurements.labels[k]
            raise InputError(
                f"face {lab} has a measured angle to fewer than two other faces; its "
                "position is not fixed — measure at least two angles per face."
            )
        new_branches: list[dict[int, FloatArray]] = []
        for br in branches:
            # choose a non-parallel reference pair
            sols: list[FloatArray] = []
            for p, q in itertools.combinations(refs, 2):
                sols = _placement(br[p], br[q], cosines[(k, p)], cosines[(k, q)])
                if sols:
                    break
            if not sols:
                continue
            others = [r for r in refs]
            errs = []
            for s in sols:
                e = sum((float(s @ br[r]) - cosines[(k, r)]) ** 2 for r in others)
                errs.append(e)
            if len(refs) >= 3 and abs(errs[0] - errs[1]) > 1e-6:
                keep = [sols[int(np.argmin(errs))]]
            else:
                keep = sols
            for s in keep:
                nb = dict(br)
                nb[k] = s
                new_branches.append(nb)
        if not new_branches:
            raise InputError("the interfacial angles are inconsistent: a face cannot be placed "
                             "at the measured angles to the faces around it.")
        branches = new_branches[:max_branches]
        placed.append(k)
        remaining.remove(k)

    pairs = measurements.pairs
    meas = measurements.angles
    w = np.sqrt(measurements.pair_weights / np.mean(measurements.pair_weights))

    def resid(x: FloatArray) -> FloatArray:
        v = _sph(x.reshape(-1, 2))
        c = np.clip(np.sum(v[pairs[:, 0]] * v[pairs[:, 1]], axis=1), -1, 1)
        return np.asarray((np.arccos(c) - meas) * w, dtype=np.float64)

    out = []
    for br in branches:
        v = np.array([br[k] for k in range(n)])
        x0 = np.column_stack([np.arccos(np.clip(v[:, 2], -1, 1)), np.arctan2(v[:, 1], v[:, 0])])
        sol = least_squares(resid, x0.ravel(), method="trf")
        out.append((float(np.sum(sol.fun ** 2)), _sph(sol.x.reshape(-1, 2))))
    out.sort(key=lambda t: t[0])
    return [v for _, v in out]


def _sph(x: FloatArray) -> FloatArray:
    th, ph = x[:, 0], x[:, 1]
    return np.column_stack([np.sin(th) * np.cos(ph), np.sin(th) * np.sin(ph), np.cos(th)])


# ----------------------------------------------------------------------------- search


@dataclass
class _Hypothesis:
    u: FloatArray
    inliers: int
    simplicity: int
    sse: float
    support: float = 0.0


def _support(simplicity: ArrayLike, residuals: ArrayLike, inside: ArrayLike, tol: float
             ) -> Any:
    """Consensus score: each indexed face counts 1/(1 + s/4)·(1 − ½(r/tol)²).

    s is the face's simplicity (Σ|h|). Simple indices and small residuals count more, so
    an orientation that explains one more face only by a complex index and a residual
    near the tolerance (what chance coincidences look like) does not beat one that
    explains the other faces simply (the law of rational indices).
    """
    s = np.asarray(simplicity, float)
    r = np.asarray(residuals, float) / tol
    return np.where(inside, (1.0 - 0.5 * r * r) / (1.0 + 0.25 * s), 0.0).sum(axis=-1)


def _assign(normals_c: FloatArray, cand_n: FloatArray, cand_simp: IntArray, tol: float
            ) -> tuple[IntArray, FloatArray, BoolArray]:
    """Per face: chosen candidate, its residual, inside-tolerance flag (see module doc)."""
    cos = np.clip(normals_c @ cand_n.T, -1.0, 1.0)  # (N, M)
    ang = np.arccos(cos)
    best = np.argmin(ang, axis=1)
    best_ang = ang[np.arange(len(ang)), best]
    alike = ang <= (best_ang[:, None] + 0.25 * tol)
    alike &= ang <= tol
    choice = best.copy()
    for i in np.nonzero(alike.sum(axis=1) > 1)[0]:
        cols = np.nonzero(alike[i])[0]
        key = np.lexsort((ang[i, cols], cand_simp[cols]))
        choice[i] = cols[key[0]]
    res = ang[np.arange(len(ang)), choice]
    return choice, res, res <= tol


def _search(
    normals: FloatArray,
    weights: FloatArray,
    model: CellModel,
    cand: IntArray,
    rotations: IntArray,
    tol: float,
    max_pairs: int,
    progress: Callable[[int], None] | None,
    keep: int = 3,
) -> tuple[list[_Hypothesis], int]:
    recip = model.reciprocal
    cand_n = _normals(recip, cand)
    simp = _simplicity(cand, _uses_hex_axes(model))
    reps = _orbit_representatives(cand, rotations)
    cos_rep = np.clip(cand_n[reps] @ cand_n.T, -1, 1)
    ang_rep = np.arccos(cos_rep)  # (R, M)
    n = len(normals)
    ang_meas = np.arccos(np.clip(normals @ normals.T, -1, 1))
    pairs = [(i, j) for i in range(n) for j in range(i + 1, n)
             if _MIN_PAIR_ANGLE < ang_meas[i, j] < math.pi - _MIN_PAIR_ANGLE]
    pairs.sort(key=lambda p: (abs(ang_meas[p] - math.pi / 2), p))
    pairs = pairs[:max_pairs]
    best: list[_Hypothesis] = []
    total = 0
    for done, (i, j) in enumerate(pairs):
        ri, qi = np.nonzero(np.abs(ang_rep - ang_meas[i, j]) <= 2.0 * tol)
        if len(ri) == 0:
            continue
        p_idx = reps[ri]
        # simplest candidate pairs first; cap the number tried per measured pair
        order = np.argsort(simp[p_idx] + simp[qi], kind="stable")[:4000]
        p_idx, qi = p_idx[order], qi[order]
        us = align_two_vectors(cand_n[p_idx], cand_n[qi], normals[i][None], normals[j][None])
        total += len(us)
        for start in range(0, len(us), 256):
            chunk = us[start:start + 256]
            # (H, N, 3): measured normals in the crystal frame of each hypothesis
            mc = normals @ chunk
            cos = mc @ cand_n.T  # (H, N, M)
            k = np.argmax(cos, axis=2)  # (H, N)
            res = np.arccos(np.clip(np.take_along_axis(cos, k[..., None], 2)[..., 0], -1, 1))
            ok = res <= tol
            inl = ok.sum(axis=1)
            sim = np.where(ok, simp[k], 0).sum(axis=1)
            sse = np.where(ok, weights[None, :] * res ** 2, 0.0).sum(axis=1)
            sup = np.round(_support(simp[k], res, ok, tol), 9)
            for h in np.lexsort((sse, sim, -sup))[:keep]:
                best.append(_Hypothesis(chunk[h], int(inl[h]), int(sim[h]), float(sse[h]),
                                        float(sup[h])))
            best.sort(key=lambda t: (-t.support, t.simplicity, t.sse))
            best = _distinct(best, keep)
        if progress is not None:
            progress(done + 1)
        if best and best[0].inliers == n:
            break
    return best, total


def _distinct(hyps: list[_Hypothesis], keep: int) -> list[_Hypothesis]:
    out: list[_Hypothesis] = []
    for h in hyps:
        if all(np.max(np.abs(h.u - o.u)) > 1e-3 for o in out):
            out.append(h)
        if len(out) == keep:
            break
    return out


def _refine_orientation(u: FloatArray, normals: FloatArray, weights: FloatArray,
                        cand: IntArray, cand_n: FloatArray, simp: IntArray, tol: float
                        ) -> tuple[FloatArray, IntArray, FloatArray, BoolArray]:
    choice = np.full(len(normals), -1)
    for _ in range(6):
        new, res, ok = _assign(normals @ u, cand_n, simp, tol)
        if np.count_nonzero(ok) >= 2:
            u = best_rotation(cand_n[new[ok]], normals[ok], weights[ok])
        if np.array_equal(new, choice):
            break
        choice = new
    choice, res, ok = _assign(normals @ u, cand_n, simp, tol)
    return u, choice, res, ok


def _choose_setting(hkl: IntArray, ok: BoolArray, rotations: IntArray) -> int:
    inv = np.rint(np.linalg.inv(rotations)).astype(np.int64)
    best_k, best_key = 0, None
    for k in range(len(rotations)):
        h = hkl[ok] @ inv[k]
        key = (int(np.all(h >= 0, axis=1).sum()), int(h.sum()), tuple(h.ravel().tolist()))
        if best_key is None or key > best_key:
            best_k, best_key = k, key
    return best_k


def _result_from(
    u: FloatArray, normals: FloatArray, weights: FloatArray, model: CellModel,
    cand: IntArray, rotations: IntArray, tol: float, measurements: Measurements,
    hypotheses: int, max_index: int, orientation_known: bool,
) -> IndexingResult:
    recip = model.reciprocal
    cand_n = _normals(recip, cand)
    simp = _simplicity(cand, _uses_hex_axes(model))
    u, choice, res, ok = _refine_orientation(u, normals, weights, cand, cand_n, simp, tol)
    hkl = cand[choice]
    # an angle table fixes no handedness: the inverted index set is equally valid
    settings = rotations if orientation_known else np.concatenate([rotations, -rotations])
    k = _choose_setting(hkl, ok, settings)
    w = settings[k]
    hkl_new = hkl @ np.rint(np.linalg.inv(w)).astype(np.int64)
    u_new = u @ _cartesian_rotation(model.lattice, w).T
    res = _angle(normals, cand_n[choice] @ u.T)  # precise residuals for the report
    shown = np.where(ok[:, None], hkl_new, 0)
    rms = float(np.sqrt(np.sum(weights[ok] * res[ok] ** 2) / np.sum(weights[ok]))) \
        if np.any(ok) else math.nan
    pair_res = np.zeros(0)
    phirho = None
    if measurements.kind == "interfacial-angles":
        cn = _normals(recip, hkl_new)
        pr = measurements.pairs
        calc = _angle(cn[pr[:, 0]], cn[pr[:, 1]])
        pair_res = np.where(ok[pr[:, 0]] & ok[pr[:, 1]], measurements.angles - calc, np.nan)
    orientation = Orientation(_readonly(u_new), _readonly(model.lattice), model.system) \
        if orientation_known else None
    if orientation_known and measurements.kind == "two-circle":
        from habit.stereo import vectors_to_phi_rho

        calc_lab = _normals(recip, hkl_new) @ u_new.T
        phi, rho = vectors_to_phi_rho(calc_lab, phi_zero=measurements.phi_zero,
                                      clockwise=measurements.clockwise)
        phirho = _readonly(np.where(ok[:, None], np.column_stack([phi, rho]), np.nan))
    return IndexingResult(
        labels=measurements.labels,
        hkl=_readonly(shown, np.int64),
        indexed=_readonly(ok, bool),
        residuals=_readonly(res),
        nearest_hkl=_readonly(hkl_new, np.int64),
        rms=rms,
        orientation=orientation,
        crystal=model,
        setting=_readonly(w, np.int64),
        equivalent_settings=len(rotations),
        hypotheses=hypotheses,
        max_index=max_index,
        tolerance=tol,
        pairs=_readonly(measurements.pairs, np.int64),
        pair_residuals=_readonly(pair_res),
        calculated_phi_rho=phirho,
    )


def index_faces(
    crystal: Any,
    measurements: Measurements,
    *,
    max_index: int = 3,
    tolerance: float = math.radians(1.0),
    max_pairs: int = 40,
    min_fraction: float = 0.5,
    progress: Callable[[int], None] | None = None,
) -> IndexingResult:
    """Index measured faces with a known cell under one orientation for all faces.

    Parameters
    ----------
    crystal : Crystal or CellModel
        Cell and crystal system (only the cell *shape* matters).
    measurements : Measurements
        Two-circle readings, lab normals or an interfacial-angle table.
    max_index : int
        Largest absolute Miller index considered.
    tolerance : float
        Largest angle (radians) between a measured and a calculated normal for a face to
        count as indexed.
    max_pairs : int
        Number of measured face pairs used to generate orientations.
    min_fraction : float
        Fewest faces (as a fraction, and never fewer than 3) that must index for the
        result to count as consistent.
    progress : callable, optional
        Called with the number of measured pairs processed.

    Returns
    -------
    IndexingResult

    Raises
    ------
    InputError
        With fewer than three faces.
    IndexingError
        When no orientation indexes enough faces within the tolerance; ``candidates``
        holds the best partial results (IndexingResult objects).

    Examples
    --------
    >>> from habit.measurements import measurements_from_arrays
    >>> m = measurements_from_arrays(normals=[[1, 0, 0], [0, 1, 0], [0, 0, 1],
    ...                                       [0.57735027, 0.57735027, 0.57735027]])
    >>> r = index_faces(CellModel((1, 1, 1, 90, 90, 90), "cubic"), m)
    >>> r.hkl.tolist()
    [[1, 0, 0], [0, 1, 0], [0, 0, 1], [1, 1, 1]]
    """
    model = _as_model(crystal)
    if not 0.0 < tolerance < math.radians(20.0):
        raise InputError(f"tolerance must lie between 0 and 20 degrees; got "
                         f"{math.degrees(tolerance):g} degrees.")
    if int(max_index) < 1 or int(max_index) > 8:
        raise InputError(f"max_index must be between 1 and 8; got {max_index}.")
    return _index(model, measurements, _normal_sets(measurements), max_index=max_index,
                  tolerance=tolerance, max_pairs=max_pairs, min_fraction=min_fraction,
                  progress=progress)


def _normal_sets(measurements: Measurements) -> list[tuple[FloatArray, FloatArray, bool]]:
    """List the normal sets to index: the measured ones, or an angle table's embeddings."""
    n = measurements.n_faces
    if n < 3:
        raise InputError(
            f"indexing needs at least three faces (an orientation has three unknowns and "
            f"two faces fit almost any cell); got {n}."
        )
    if measurements.kind == "interfacial-angles":
        return [(v, np.ones(n), False) for v in embed_angle_table(measurements)]
    assert measurements.normals is not None
    w = np.asarray(measurements.weights, float)
    return [(np.asarray(measurements.normals, float), w / np.mean(w), True)]


def _index(
    model: CellModel,
    measurements: Measurements,
    sets: list[tuple[FloatArray, FloatArray, bool]],
    *,
    max_index: int,
    tolerance: float,
    max_pairs: int,
    min_fraction: float,
    progress: Callable[[int], None] | None,
) -> IndexingResult:
    n = measurements.n_faces
    hex_axes = _uses_hex_axes(model)
    cand = candidate_indices(max_index, hex_axes=hex_axes)
    rotations = lattice_rotations(model.cell)
    need = max(3, math.ceil(min_fraction * n))
    tried = 0
    results: list[IndexingResult] = []
    for normals, weights, known in sets:
        hyps, t = _search(normals, weights, model, cand, rotations, tolerance, max_pairs,
                          progress)
        tried += t
        for h in hyps:
            results.append(_result_from(h.u, normals, weights, model, cand, rotations,
                                        tolerance, measurements, tried, max_index, known))
        if results and max(r.n_indexed for r in results) == n:
            break
    def key(r: IndexingResult) -> tuple[float, int, float]:
        simp = _simplicity(r.nearest_hkl, hex_axes)
        support = float(np.round(_support(simp, r.residuals, r.indexed, tolerance), 9))
        return (-support, int(simp[r.indexed].sum()), r.rms)

    results.sort(key=key)
    if not results or results[0].n_indexed < need:
        raise IndexingError(_no_fit_message(results, n, tolerance, max_index), results[:3])
    best = results[0]
    others: list[tuple[int, float]] = []
    seen = [best.hkl]
    for r in results[1:]:
        if not any(np.array_equal(r.hkl, h) for h in seen):
            seen.append(r.hkl)
            others.append((r.n_indexed, r.rms))
    return dataclasses.replace(best, alternatives=tuple(others))


def _no_fit_message(results: list[IndexingResult], n: int, tol: float, max_index: int) -> str:
    best = results[0].n_indexed if results else 0
    return (
        f"no orientation indexes more than {best} of {n} faces within "
        f"{math.degrees(tol):.3g} degrees with indices up to {max_index}; check the cell, "
        "or raise --tolerance or --max-index."
    )
