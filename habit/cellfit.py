"""Cell shape from face angles: least-squares refinement and the classical search.

* :func:`refine_cell` — least squares of the orientation and the free cell-shape
  parameters of the crystal system (axial ratios, free angles) from indexed faces, with
  standard uncertainties from the Jacobian.
* :func:`find_axial_ratios` — only the crystal system is known: search the cell shape
  (a grid of c/a for uniaxial crystals; zone axes and a unit face for orthorhombic,
  monoclinic and triclinic crystals), index, then refine.

The names are also reachable as ``habit.indexing.refine_cell`` etc.; the method is
described in ``docs/indexing.md``.

References
----------
.. [1] Press, W. H. et al. (2007). *Numerical Recipes*, 3rd ed., §15.5.
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from habit._arrays import readonly as _readonly
from habit._typing import ArrayLike, BoolArray, FloatArray, IntArray
from habit.errors import IndexingError, InputError, UnknownSymbolError
from habit.geometry import cell_to_lattice, lattice_to_cell, reciprocal_lattice
from habit.indexing import (
    _HEX_FAMILY,
    SYSTEMS,
    CellModel,
    IndexingResult,
    Orientation,
    _angle,
    _as_model,
    _index,
    _normal_sets,
    _normals,
    _simplicity,
    _unit,
    _uses_hex_axes,
    best_rotation,
    candidate_indices,
    index_faces,
)
from habit.measurements import Measurements

__all__ = [
    "CellRefinement",
    "AxialRatioResult",
    "shape_parameter_names",
    "refine_cell",
    "find_axial_ratios",
]


def _unique_angle(cell: Sequence[float]) -> int:
    """Index (3, 4, 5) of the monoclinic cell's free angle (default beta)."""
    devs = [abs(cell[k] - 90.0) for k in (3, 4, 5)]
    k = int(np.argmax(devs))
    return 4 if devs[k] < 1e-9 else 3 + k


def shape_parameter_names(crystal: Any) -> tuple[str, ...]:
    """Names of the free cell-shape parameters that angles can determine.

    Parameters
    ----------
    crystal : Crystal or CellModel

    Returns
    -------
    tuple of str
        ``()`` for cubic; ``("c/a",)`` for tetragonal and hexagonal axes;
        ``("alpha_deg",)`` for rhombohedral axes; ``("a/b", "c/b")`` orthorhombic;
        ``("a/b", "c/b", "<free angle>_deg")`` monoclinic; five names for triclinic.

    Examples
    --------
    >>> shape_parameter_names(CellModel((4.59, 4.59, 2.96, 90, 90, 90), "tetragonal"))
    ('c/a',)
    """
    m = _as_model(crystal)
    s = m.system
    if s == "cubic":
        return ()
    if s in ("tetragonal", "hexagonal") or (s == "trigonal" and _uses_hex_axes(m)):
        return ("c/a",)
    if s == "trigonal":
        return ("alpha_deg",)
    if s == "orthorhombic":
        return ("a/b", "c/b")
    if s == "monoclinic":
        return ("a/b", "c/b", ("alpha_deg", "beta_deg", "gamma_deg")[_unique_angle(m.cell) - 3])
    return ("a/b", "c/b", "alpha_deg", "beta_deg", "gamma_deg")


def _shape_params(model: CellModel) -> FloatArray:
    a, b, c, al, be, ga = model.cell
    values = {"c/a": c / a, "a/b": a / b, "c/b": c / b,
              "alpha_deg": al, "beta_deg": be, "gamma_deg": ga}
    return np.array([values[n] for n in shape_parameter_names(model)], dtype=float)


def _cell_from_params(model: CellModel, x: ArrayLike) -> tuple[float, ...]:
    """Relative cell (a = 1 for cubic/uniaxial/rhombohedral, b = 1 otherwise)."""
    names = shape_parameter_names(model)
    vals = dict(zip(names, np.asarray(x, dtype=float).tolist(), strict=True))
    _, _, _, al, be, ga = model.cell
    s = model.system
    if s == "cubic":
        return (1.0, 1.0, 1.0, 90.0, 90.0, 90.0)
    if "c/a" in vals:
        return (1.0, 1.0, vals["c/a"], 90.0, 90.0, 120.0 if s in _HEX_FAMILY else 90.0)
    if s == "trigonal":
        return (1.0, 1.0, 1.0, vals["alpha_deg"], vals["alpha_deg"], vals["alpha_deg"])
    return (vals["a/b"], 1.0, vals["c/b"], vals.get("alpha_deg", al),
            vals.get("beta_deg", be), vals.get("gamma_deg", ga))


def _rotvec_matrix(v: FloatArray) -> FloatArray:
    theta = float(np.linalg.norm(v))
    if theta < 1e-15:
        return np.eye(3)
    k = v / theta
    kx = np.array([[0, -k[2], k[1]], [k[2], 0, -k[0]], [-k[1], k[0], 0]])
    return np.asarray(np.eye(3) + math.sin(theta) * kx + (1 - math.cos(theta)) * kx @ kx,
                      dtype=np.float64)


@dataclass(frozen=True, slots=True, eq=False)  # holds arrays: compared by identity
class CellRefinement:
    """Least-squares cell shape (and orientation) from indexed faces.

    Attributes
    ----------
    crystal : CellModel
        The refined relative cell (a = 1 for cubic and uniaxial crystals, b = 1 otherwise).
    names : tuple of str
        Names of the refined shape parameters (see :func:`shape_parameter_names`).
    values : (p,) float array
        Refined values; ratios are dimensionless, ``*_deg`` in degrees.
    uncertainties : (p,) float array
        Standard uncertainties sqrt(diag(s² (JᵀJ)⁻¹)), same units; NaN with no
        degrees of freedom.
    covariance : (q, q) float array
        Of all refined parameters (shape first, then three orientation angles in
        radians when the orientation was refined); angle parameters in radians.
    residuals : (n,) float array
        Per face (normals): angle measured − calculated normal (radians, ≥ 0);
        per pair (angle table): measured − calculated angle (radians, signed).
    rms : float
        Radians.
    dof : int
        Observations minus parameters.
    orientation : Orientation or None
    hkl : (N, 3) int array
    labels : tuple of str
    indexed : (N,) bool array
    """

    crystal: CellModel
    names: tuple[str, ...]
    values: FloatArray
    uncertainties: FloatArray
    covariance: FloatArray
    residuals: FloatArray
    rms: float
    dof: int
    orientation: Orientation | None
    hkl: IntArray
    labels: tuple[str, ...]
    indexed: BoolArray

    def as_dict(self) -> dict[str, tuple[float, float]]:
        """Parameter name -> (value, standard uncertainty)."""
        return {n: (float(v), float(s)) for n, v, s in
                zip(self.names, self.values, self.uncertainties, strict=True)}


@dataclass(frozen=True, slots=True, eq=False)  # holds arrays: compared by identity
class AxialRatioResult:
    """Cell shape found from angles when only the crystal system was known.

    Attributes
    ----------
    refinement : CellRefinement
    indexing : IndexingResult
        Indexing under the refined cell.
    trials : int
        Cell shapes tried in the search.
    """

    refinement: CellRefinement
    indexing: IndexingResult
    trials: int


# ------------------------------------------------------------------------- refinement


def _result_from_indices(model: CellModel, measurements: Measurements, hkl: ArrayLike
                         ) -> IndexingResult:
    h = np.asarray(hkl)
    if h.shape != (measurements.n_faces, 3) or not np.issubdtype(h.dtype, np.integer):
        raise InputError(f"give one integer (hkl) per face: shape ({measurements.n_faces}, 3); "
                         f"got shape {h.shape}.")
    ok = np.any(h != 0, axis=1)
    recip = model.reciprocal
    orientation = None
    res = np.zeros(len(h))
    if measurements.normals is not None:
        nm = np.asarray(measurements.normals, float)
        if np.count_nonzero(ok) < 2:
            raise InputError("at least two faces need indices to fix the orientation.")
        cn = _normals(recip, np.where(ok[:, None], h, 1))
        u = best_rotation(cn[ok], nm[ok], np.asarray(measurements.weights)[ok])
        orientation = Orientation(_readonly(u), _readonly(model.lattice), model.system)
        res = _angle(cn @ u.T, nm)
    return IndexingResult(
        labels=measurements.labels, hkl=_readonly(h, np.int64), indexed=_readonly(ok, bool),
        residuals=_readonly(res), nearest_hkl=_readonly(h, np.int64),
        rms=float(np.sqrt(np.mean(res[ok] ** 2))), orientation=orientation, crystal=model,
        setting=_readonly(np.eye(3), np.int64), equivalent_settings=1, hypotheses=0,
        max_index=int(np.abs(h).max()), tolerance=math.nan,
        pairs=_readonly(measurements.pairs, np.int64),
    )


def refine_cell(
    crystal: Any,
    measurements: Measurements,
    indexing: IndexingResult | ArrayLike,
    *,
    refine_shape: bool = True,
) -> CellRefinement:
    """Least squares of orientation and free cell-shape parameters from indexed faces.

    Observations: for normals, the two components of each calculated normal in the
    tangent plane of the measured one (small-angle residuals, radians); for an angle
    table, measured − calculated interfacial angle. Each is weighted by √w. Standard
    uncertainties are ``sqrt(diag(s² (JᵀJ)⁻¹))`` with ``s² = Σ r² / (n − p)`` [1]_.

    Parameters
    ----------
    crystal : Crystal or CellModel
        Starting cell and the crystal system (fixes which parameters are free).
    measurements : Measurements
    indexing : IndexingResult or (N, 3) int array
        Indices (flagged faces are left out), or the indices of every face given
        directly (rows of zeros mark faces to leave out); the starting orientation is
        then the least-squares one.
    refine_shape : bool
        False refines only the orientation.

    Returns
    -------
    CellRefinement

    Raises
    ------
    InputError
        If there are fewer observations than parameters.

    Examples
    --------
    Rutile, ee′ = (101)∧(011) = 45°2′ gives c = 0.6442 (Dana, from memory):

    >>> from habit.measurements import measurements_from_arrays
    >>> m = measurements_from_arrays(pairs=[("e", "e'")], angles_deg=[45 + 2 / 60])
    >>> start = CellModel((1, 1, 0.6, 90, 90, 90), "tetragonal")
    >>> ref = refine_cell(start, m, [[1, 0, 1], [0, 1, 1]])
    >>> round(float(ref.values[0]), 4)
    0.6442

    References
    ----------
    .. [1] Press, W. H. et al. (2007). *Numerical Recipes*, 3rd ed., §15.5 (nonlinear
       least squares; covariance of the estimates).
    """
    from scipy.optimize import least_squares

    model = _as_model(crystal)
    if not isinstance(indexing, IndexingResult):
        indexing = _result_from_indices(model, measurements, indexing)
    names = shape_parameter_names(model) if refine_shape else ()
    x_shape = _shape_params(model) if refine_shape else np.zeros(0)
    is_angle = np.array([n.endswith("_deg") for n in names], dtype=bool)
    x_shape = np.where(is_angle, np.radians(x_shape), x_shape)
    ok = np.asarray(indexing.indexed, bool)
    hkl = np.asarray(indexing.hkl)
    angles_mode = measurements.kind == "interfacial-angles"

    def model_for(xs: FloatArray) -> CellModel:
        vals = np.where(is_angle, np.degrees(xs), xs)
        cell = _cell_from_params(model, vals) if refine_shape else model.cell
        return CellModel(tuple(cell), model.system, model.name)  # type: ignore[arg-type]

    def recip_for(xs: FloatArray) -> FloatArray:
        vals = np.where(is_angle, np.degrees(xs), xs)
        cell = _cell_from_params(model, vals) if refine_shape else model.cell
        return reciprocal_lattice(cell_to_lattice(*cell))

    p = len(names)
    if angles_mode:
        pr = measurements.pairs
        keep = ok[pr[:, 0]] & ok[pr[:, 1]]
        pr = pr[keep]
        meas = measurements.angles[keep]
        sw = np.sqrt(measurements.pair_weights[keep] / np.mean(measurements.pair_weights))
        n_obs = len(pr)
        if n_obs < max(p, 1):
            raise InputError(
                f"{n_obs} measured angles between indexed faces cannot fix {p} cell "
                f"parameters ({', '.join(names) or 'none'}); measure more angles."
            )

        def resid(x: FloatArray) -> FloatArray:
            cn = _normals(recip_for(x), hkl)
            calc = _angle(cn[pr[:, 0]], cn[pr[:, 1]])
            return np.asarray((meas - calc) * sw, dtype=np.float64)

        x0 = x_shape
        u0: FloatArray | None = None
    else:
        assert measurements.normals is not None and indexing.orientation is not None
        nm = np.asarray(measurements.normals, float)[ok]
        hk = hkl[ok]
        sw = np.sqrt(measurements.weights[ok] / np.mean(measurements.weights[ok]))
        # tangent basis at each measured normal
        helper = np.where(np.abs(nm[:, [0]]) < 0.9, [[1.0, 0.0, 0.0]], [[0.0, 1.0, 0.0]])
        t1 = _unit(np.cross(nm, helper))
        t2 = np.cross(nm, t1)
        u0 = np.asarray(indexing.orientation.matrix, float)
        n_obs = 2 * len(nm)
        if n_obs < p + 3:
            raise InputError(
                f"{len(nm)} indexed faces give {n_obs} observations, fewer than the "
                f"{p + 3} unknowns (orientation and {', '.join(names) or 'no'} cell "
                "parameters); measure more faces."
            )

        def resid(x: FloatArray) -> FloatArray:
            u = _rotvec_matrix(x[p:]) @ u0
            cl = _normals(recip_for(x[:p]), hk) @ u.T
            return np.concatenate([np.sum(cl * t1, axis=1) * sw, np.sum(cl * t2, axis=1) * sw])

        x0 = np.concatenate([x_shape, np.zeros(3)])

    if len(x0) == 0:
        r = resid(x0)
        x, jac = x0, np.zeros((len(r), 0))
    else:
        sol = least_squares(resid, x0, method="lm" if len(resid(x0)) >= len(x0) else "trf",
                            xtol=1e-14, ftol=1e-14, gtol=1e-14)
        x, jac = sol.x, sol.jac
        r = resid(x)
    q = len(x)
    if q:
        sv, vt = np.linalg.svd(jac, full_matrices=False)[1:]
        if sv[-1] <= 1e-9 * max(float(sv[0]), 1e-300):
            all_names = list(names) + ["rotation about x", "rotation about y",
                                       "rotation about z"][: q - p]
            free = [all_names[k] for k in np.nonzero(np.abs(vt[-1]) > 0.3)[0]]
            raise InputError(
                f"the indexed faces do not fix {' and '.join(free)}; measure faces outside "
                "the zone(s) they share (e.g. faces with a non-zero l for c/a)."
            )
    dof = int(len(r) - q)
    ssr = float(r @ r)
    if dof > 0 and q > 0:
        jtj = jac.T @ jac
        try:
            cov = np.linalg.inv(jtj) * (ssr / dof)
        except np.linalg.LinAlgError:
            cov = np.full((q, q), np.nan)
    else:
        cov = np.full((q, q), np.nan)
    su = np.sqrt(np.clip(np.diag(cov)[:p], 0, None)) if p else np.zeros(0)
    vals = np.where(is_angle, np.degrees(x[:p]), x[:p])
    su = np.where(is_angle, np.degrees(su), su)
    refined = model_for(x[:p])
    if angles_mode:
        residuals = r / np.where(sw > 0, sw, 1)
        orientation = None
        labels_res = residuals
    else:
        assert u0 is not None
        u = _rotvec_matrix(x[p:]) @ u0
        cl = _normals(recip_for(x[:p]), hk) @ u.T
        labels_res = _angle(cl, nm)
        residuals = labels_res
        orientation = Orientation(_readonly(u), _readonly(refined.lattice), model.system)
    rms = float(np.sqrt(np.mean(residuals ** 2))) if len(residuals) else math.nan
    return CellRefinement(
        crystal=refined,
        names=names,
        values=_readonly(vals),
        uncertainties=_readonly(su),
        covariance=_readonly(cov),
        residuals=_readonly(residuals),
        rms=rms,
        dof=dof,
        orientation=orientation,
        hkl=_readonly(hkl, np.int64),
        labels=indexing.labels,
        indexed=_readonly(ok, bool),
    )


# --------------------------------------------------------------- unknown cell shape


def _trial_models(system: str, step: float) -> list[CellModel]:
    """Grid of trial cells for the one-parameter systems (and the cubic cell)."""
    ratios = np.exp(np.arange(math.log(0.25), math.log(4.0) + 1e-12, step))
    if system == "cubic":
        return [CellModel((1, 1, 1, 90, 90, 90), "cubic")]
    if system in ("tetragonal", "hexagonal", "trigonal"):
        gamma = 90.0 if system == "tetragonal" else 120.0
        return [CellModel((1.0, 1.0, float(r), 90.0, 90.0, gamma), system) for r in ratios]
    return []


def _zones(normals: FloatArray, tol: float, max_zones: int = 12
           ) -> list[tuple[FloatArray, int]]:
    """Zone axes of two or more faces, most faces first (axis, face count)."""
    n = normals
    i, j = np.triu_indices(len(n), 1)
    cross = np.cross(n[i], n[j])
    length = np.linalg.norm(cross, axis=1)
    keep = length > math.sin(math.radians(8.0))
    z = cross[keep] / length[keep, None]
    if len(z) == 0:
        return []
    member = np.abs(z @ n.T) < math.sin(2.0 * tol)  # (Z, N)
    counts = member.sum(axis=1)
    order = np.lexsort((np.arange(len(z)), -counts))
    zones: list[tuple[FloatArray, int]] = []
    for k in order:
        if counts[k] < 2 or len(zones) == max_zones:
            break
        _, _, vt = np.linalg.svd(n[member[k]])
        axis = vt[-1]
        if any(abs(float(axis @ q)) > math.cos(3.0 * tol) for q, _ in zones):
            continue
        zones.append((axis, int(counts[k])))
    return zones


def _zone_triples(zones: list[tuple[FloatArray, int]], system: str, tol: float
                  ) -> list[FloatArray]:
    """List unit axis triples (rows: a, b, c directions) fitting the crystal system."""
    perp = math.sin(3.0 * tol)
    out = []
    for ia, ib, ic in itertools.combinations(range(len(zones)), 3):
        z = [zones[ia][0], zones[ib][0], zones[ic][0]]
        if abs(np.linalg.det(np.array(z))) < 0.05:
            continue
        dots = {(p, q): abs(float(z[p] @ z[q])) for p, q in ((0, 1), (0, 2), (1, 2))}
        if system == "orthorhombic":
            if max(dots.values()) > perp:
                continue
            # the strongest zone as c, the other two as a and b
            a, b, c = z[1], z[2], z[0]
        elif system == "monoclinic":
            unique = [u for u in range(3)
                      if all(dots[(min(u, v), max(u, v))] < perp for v in range(3) if v != u)]
            if not unique:
                continue
            u = unique[0]
            others = [v for v in range(3) if v != u]
            b = z[u]
            c, a = z[others[0]], z[others[1]]
            if float(a @ c) > 0:  # beta obtuse (common practice)
                a = -a
        else:
            a, b, c = z[1], z[2], z[0]
        axes = np.array([a, b, c])
        if np.linalg.det(axes) < 0:
            axes[1] = -axes[1]
        out.append(axes)
    return out


def _zone_cells(normals: FloatArray, system: str, tol: float, max_index: int,
                progress: Callable[[int], None] | None = None) -> list[CellModel]:
    """Classical cell finding: three zone axes as cell edges, a unit face as (111).

    The edge lengths follow from the unit face: a face (111) cuts the axes at lengths
    proportional to 1/(n·â), 1/(n·b̂), 1/(n·ĉ). Every candidate cell indexes all faces
    directly (the axes are already in the lab frame); the cells indexing most faces
    with the simplest indices come first.
    """
    zones = _zones(normals, tol)
    if system in ("orthorhombic", "monoclinic"):
        # an axis perpendicular to two others is the normal of the plane they span:
        # add those normals (b of a monoclinic cell is one even when no zone shows it)
        extra: list[tuple[FloatArray, int]] = []
        for (p, _), (q, _) in itertools.combinations(zones[:8], 2):
            v = np.cross(p, q)
            if np.linalg.norm(v) > 0.3:
                v = v / np.linalg.norm(v)
                if all(abs(float(v @ z)) < math.cos(3.0 * tol) for z, _ in zones + extra):
                    extra.append((v, 0))
        zones = zones + extra
    triples = _zone_triples(zones, system, tol)
    if not triples:
        return []
    cand = candidate_indices(max_index)
    simp = _simplicity(cand, False)
    scored: list[tuple[tuple[int, int, float, float], FloatArray]] = []
    for k, axes in enumerate(triples):
        dots = normals @ axes.T  # (N, 3)
        units = np.nonzero(np.all(np.abs(dots) > math.sin(math.radians(5.0)), axis=1))[0]
        if len(units) == 0:
            continue
        lengths = 1.0 / np.abs(dots[units])  # (U, 3)
        lat = lengths[:, :, None] * axes[None, :, :]  # (U, 3, 3) rows a, b, c
        recip = np.swapaxes(np.linalg.inv(lat), 1, 2)  # (U, 3, 3) rows a*, b*, c*
        cn = cand.astype(float) @ recip  # (U, M, 3)
        cn /= np.linalg.norm(cn, axis=2, keepdims=True)
        cos = np.abs(np.einsum("nk,umk->unm", normals, cn))  # (U, N, M), either sign
        best = np.argmax(cos, axis=2)
        res = np.arccos(np.clip(np.take_along_axis(cos, best[..., None], 2)[..., 0], -1, 1))
        ok = res <= tol
        inl = ok.sum(axis=1)
        sim = np.where(ok, simp[best], 0).sum(axis=1)
        sse = np.where(ok, res ** 2, 0.0).sum(axis=1)
        for u in range(len(units)):
            skew = round(_skewness(lattice_to_cell(lat[u])), 2)
            scored.append(((-int(inl[u]), int(sim[u]), skew, float(sse[u])), lat[u]))
        if progress is not None:
            progress(k + 1)
    scored.sort(key=lambda t: t[0])
    models: list[CellModel] = []
    for _, lat in scored[:40]:
        a, b, c, al, be, ga = lattice_to_cell(lat)
        if system == "orthorhombic":
            cell = (a / b, 1.0, c / b, 90.0, 90.0, 90.0)
        elif system == "monoclinic":
            cell = (a / b, 1.0, c / b, 90.0, be, 90.0)
        else:
            cell = (a / b, 1.0, c / b, al, be, ga)
        if all(np.max(np.abs(np.subtract(cell, m.cell))) > 1e-3 for m in models):
            models.append(CellModel(cell, system))
        if len(models) == 6:
            break
    return models


def _skewness(cell: Sequence[float]) -> float:
    """Σ|cos| of the cell angles: 0 for orthogonal axes (classical axes are chosen near it)."""
    return float(sum(abs(math.cos(math.radians(x))) for x in cell[3:]))


def find_axial_ratios(
    system: str,
    measurements: Measurements,
    *,
    max_index: int = 2,
    tolerance: float = math.radians(1.0),
    step: float = 0.01,
    progress: Callable[[int], None] | None = None,
) -> AxialRatioResult:
    """Find axial ratios and indices when only the crystal system is known.

    * Tetragonal, hexagonal, trigonal (hexagonal axes): c/a is searched on a grid from
      1/4 to 4 (logarithmic ``step``, coarse then fine); each trial cell is indexed with
      a tolerance widened by the grid's angular step.
    * Orthorhombic, monoclinic, triclinic: the classical construction — zone axes
      (most populated first) are taken as cell edges (mutually perpendicular for
      orthorhombic; one perpendicular to the other two, β obtuse, for monoclinic) and a
      face cutting all three as the unit face (111) fixes the axial ratios.

    The candidate indexing the most faces with the simplest indices is refined by
    :func:`refine_cell`, the faces are indexed again under the refined cell and the cell
    refined once more. Cells that differ only in the choice of unit face index the same
    faces with other numbers; the simplest indexing is kept, which is the conventional
    choice only when the conventional unit form has simple indices.

    Parameters
    ----------
    system : str
        One of :data:`SYSTEMS`.
    measurements : Measurements
    max_index : int
        Largest index during the search.
    tolerance : float
        Radians, for the final indexing.
    step : float
        Logarithmic grid step of c/a for the one-parameter systems.
    progress : callable, optional
        Called with the number of trial cells (or zone triples) done.

    Returns
    -------
    AxialRatioResult

    Raises
    ------
    UnknownSymbolError
        For an unknown system.
    IndexingError
        When no cell of the system indexes the faces.

    Examples
    --------
    Faces of an orthorhombic crystal with a : b : c = 0.5 : 1 : 0.8 (invented):

    >>> from habit.indexing import CellModel
    >>> from habit.measurements import measurements_from_arrays
    >>> cell = CellModel((0.5, 1.0, 0.8, 90, 90, 90), "orthorhombic")
    >>> hkl = np.array([[1, 0, 0], [0, 1, 0], [0, 0, 1], [1, 1, 0], [1, -1, 0], [0, 1, 1],
    ...                 [0, -1, 1], [1, 0, 1], [-1, 0, 1], [1, 1, 1], [-1, 1, 1]])
    >>> n = hkl @ cell.reciprocal
    >>> m = measurements_from_arrays(normals=n / np.linalg.norm(n, axis=1, keepdims=True))
    >>> res = find_axial_ratios("orthorhombic", m)
    >>> edges = sorted(res.refinement.crystal.cell[:3])  # labels a, b, c may differ
    >>> [round(float(e / edges[0]), 4) for e in edges]   # 0.5 : 0.8 : 1 = 1 : 1.6 : 2
    [1.0, 1.6, 2.0]
    """
    if system not in SYSTEMS:
        raise UnknownSymbolError(f"unknown crystal system {system!r}; choose one of: "
                                 f"{', '.join(SYSTEMS)}.")
    sets = _normal_sets(measurements)
    done = 0

    def run(trials: list[CellModel], widen: float
            ) -> list[tuple[tuple[int, int, float, float], IndexingResult]]:
        nonlocal done
        out = []
        for trial in trials:
            try:
                r = _index(trial, measurements, sets, max_index=max_index,
                           tolerance=tolerance + widen, max_pairs=8, min_fraction=0.5,
                           progress=None)
                key = (-r.n_indexed, int(_simplicity(r.hkl, _uses_hex_axes(trial)).sum()),
                       round(_skewness(trial.cell), 2), r.rms)
                out.append((key, r))
            except IndexingError:
                pass
            done += 1
            if progress is not None:
                progress(done)
        out.sort(key=lambda t: t[0])
        return out

    if system in ("orthorhombic", "monoclinic", "triclinic"):
        trials: list[CellModel] = []
        for normals, _, _ in sets:
            trials = _zone_cells(normals, system, tolerance, max_index)
            if trials:
                break
        if not trials:
            raise IndexingError(
                f"the faces show too few zones to build a {system} cell; measure "
                "more faces or give an approximate cell."
            )
        found = run(trials, 0.0)
    else:
        coarse = _trial_models(system, 3.0 * step)
        # angular change of a normal per unit change of ln(ratio) is at most 1/2
        found = run(coarse, 0.5 * 3.0 * step)
        fine: list[CellModel] = []
        for _, r in found[:3]:
            x = _shape_params(r.crystal)
            for d in np.arange(-3.0, 3.01, 1.0) * step:
                if len(x) == 1:
                    cell = _cell_from_params(r.crystal, x * math.exp(d))
                    fine.append(CellModel(cell, system))  # type: ignore[arg-type]
        if fine:
            found = run(fine, 0.5 * step) + found[:1]
            found.sort(key=lambda t: t[0])
        trials = coarse + fine
    if not found:
        raise IndexingError(
            f"no {system} cell shape indexes the faces; check the system or raise the "
            "tolerance."
        )
    first = found[0][1]
    ref = refine_cell(first.crystal, measurements, first)
    final = index_faces(ref.crystal, measurements, max_index=max(max_index, 3),
                        tolerance=tolerance)
    ref = refine_cell(ref.crystal, measurements, final)
    return AxialRatioResult(refinement=ref, indexing=final, trials=len(trials))
