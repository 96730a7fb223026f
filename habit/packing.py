"""Densest lattice and double-lattice packings of a convex polyhedron (translates only).

A *lattice packing* of a convex solid ``K`` is the family of translates ``K + x``, ``x`` in a
lattice ``L``, with pairwise disjoint interiors; its density is ``vol(K) / det L``. A
*double-lattice packing* adds the point reflection of ``K`` through its centroid, translated
by ``t + x`` (Kallus, Elser & Gravel 2010); its density is ``2 vol(K) / det L``.

Method in brief (details in ``docs/packing.md``): Minkowski (1904) reduced the problem to
the critical lattice of the difference body ``D = K - K``; we search it by sequential linear
programming over lattice bases from many random starts, polish each end point by Newton's
method on its Lagrange system, and certify the best: an exhaustive admissibility check, the
first- and second-order optimality conditions for every choice of facet at contacts on
edges of ``D``, agreement of independent starts, Minkowski's configuration of the contact
vectors and the tightness of its family (Betke & Henk 2000), and an independent
separating-plane test of every neighbour pair. Optionally (``check_configurations=True``)
every Minkowski configuration is enumerated as a cross-check
(:mod:`habit.lattice_configurations`).

Bases are returned with the lattice vectors as **rows** (Å), as in
:attr:`habit.crystal.Crystal.lattice`.

References
----------
.. [1] H. Minkowski, "Dichteste gitterförmige Lagerung kongruenter Körper", Nachr. Ges.
   Wiss. Göttingen (1904) 311-355.
.. [2] U. Betke and M. Henk, "Densest lattice packings of 3-polytopes", Comput. Geom. 16
   (2000) 157-186.
.. [3] Y. Kallus, V. Elser and S. Gravel, "Dense periodic packings of tetrahedra with small
   repeating units", Discrete Comput. Geom. 44 (2010) 245-252.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from habit import lattice_packing as _lp
from habit._arrays import readonly as _readonly
from habit._convex import hull_facets
from habit._typing import FloatArray, IntArray
from habit.errors import InputError, PackingError

__all__ = [
    "PackingCertificate",
    "LatticePacking",
    "DoubleLatticePacking",
    "densest_lattice_packing",
    "densest_double_lattice_packing",
    "packing_overlap",
    "is_packing",
]

ProgressFn = Callable[[int], object]


@dataclass(frozen=True, slots=True)
class PackingCertificate:
    """How a packing's density and optimality were established.

    Attributes
    ----------
    method : str
        ``"multistart SLP + Newton"`` (lattice bases searched by sequential linear programming
        from random starts, end points polished by Newton's method on the KKT system).
    starts : int
        Random starts run.
    hits : int
        Starts whose end point has the best density (relative 1e-7).
    miss_bound : float
        Basin size ``q`` such that an optimum reached from a random start with probability at
        least ``q`` would have been missed by all starts with probability below 1e-3,
        ``q = 1 - 0.001**(1/starts)``.
    min_gauge : float
        Smallest ``||B z||_D`` (lattice) and ``||t + B z||_{2K}`` (reflected copies) over an
        exhaustive enumeration of lattice points: >= 1 means no two particles overlap.
    admissible : bool
        ``min_gauge >= 1 - 1e-10``.
    separation : float
        Largest interpenetration depth (Å) over all neighbour pairs found by the independent
        separating-plane test :func:`packing_overlap` (<= 0 up to rounding for a packing).
    separated : bool
        ``separation <= 1e-9`` times the particle diameter.
    first_order : bool
        The Karush-Kuhn-Tucker conditions hold with nonnegative multipliers for every
        choice of facet at contacts lying on edges or vertices of ``D`` (Betke & Henk 2000
        show the local problem is a union of such polyhedral cones).
    second_order : bool
        The Hessian of ``det`` is positive definite on the directions that keep every
        contact with a positive multiplier on its facet (a strict local minimum), or the
        active constraints fix the lattice.
    kkt_residual : float
        Worst relative residual of the first-order conditions.
    reduced_hessian_min : float
        Smallest eigenvalue of that reduced Hessian divided by ``det`` (inf if none).
    contact_rank : int
        Rank of the active constraints (9 unknowns for a lattice, 12 with the shift).
    space_filling : bool
        Density 1 to 1e-12: a tiling, optimal by volume alone.
    minkowski_type : str or None
        ``"i"`` or ``"ii"``: the pattern of Minkowski's theorem the contact vectors form
        (lattice packings only).
    minkowski_basis : (3, 3) int array or None
        Rows: lattice coordinates (in :attr:`LatticePacking.basis`) of the three basis vectors
        of that pattern.
    configuration : str or None
        The contact configuration whose family was used for the tightness test:
        ``"Minkowski (i), 6 points"`` or ``"all k contacts"`` (lattice packings only).
    tight : bool or None
        No lattice in that family has a smaller determinant, other lattice vectors ignored
        (multistart minimisation in the family; the step of Betke & Henk's algorithm that
        decides whether a configuration yields the optimum).
    family_dimension : int or None
        Dimension of the family (9 minus the rank of its facet equations).
    family_best_ratio : float or None
        Smallest determinant found in the family divided by that of the optimum (>= 1 - 1e-7
        means tight).
    enumeration : str or None
        Summary of the Minkowski-configuration enumeration, when it was run
        (``check_configurations=True``).
    enumeration_confirms : bool or None
        Every configuration family was resolved against the result and none gave a denser
        packing lattice.
    """

    method: str
    starts: int
    hits: int
    miss_bound: float
    min_gauge: float
    admissible: bool
    separation: float
    separated: bool
    first_order: bool
    second_order: bool
    kkt_residual: float
    reduced_hessian_min: float
    contact_rank: int
    space_filling: bool
    minkowski_type: str | None
    minkowski_basis: IntArray | None
    configuration: str | None = None
    tight: bool | None = None
    family_dimension: int | None = None
    family_best_ratio: float | None = None
    enumeration: str | None = None
    enumeration_confirms: bool | None = None

    @property
    def is_certified(self) -> bool:
        """Admissible, separated, and optimal (tiling, or local optimum found twice or more)."""
        if not (self.admissible and self.separated):
            return False
        if self.enumeration_confirms is False:
            return False
        if self.space_filling:
            return True
        locally = self.first_order and self.second_order and self.hits >= 2
        return locally and self.tight is not False

    def summary(self) -> str:
        """One line saying how the result was established."""
        if self.space_filling:
            why = "space filling (density 1)"
        elif self.first_order and self.second_order:
            why = (
                f"strict local optimum (KKT residual {self.kkt_residual:.1e}), best of "
                f"{self.starts} starts, reached {self.hits} times"
            )
        else:
            why = f"not shown locally optimal; best of {self.starts} starts"
        adm = "admissible" if self.admissible else "NOT admissible"
        tight = ""
        if self.tight is not None:
            tight = f"; {'tight' if self.tight else 'NOT tight'} for {self.configuration}"
        enum = f"; {self.enumeration}" if self.enumeration else ""
        return f"{why}{tight}{enum}; {adm} (min gauge {self.min_gauge:.12f})"


@dataclass(frozen=True, slots=True)
class LatticePacking:
    """The densest lattice packing found for a convex solid.

    Attributes
    ----------
    density : float
        Packing density ``vol(K) / |det basis|`` (dimensionless, in (0, 1]).
    basis : (3, 3) float array
        Rows: lattice vectors in Å (input units), LLL-reduced, right-handed.
    contacts : (k, 3) float array
        Translation vectors (Å) to the neighbours that touch the central particle, both
        signs (``2 x`` the number of contact pairs).
    contact_indices : (k, 3) int array
        The same vectors in lattice coordinates (``contacts = contact_indices @ basis``).
    vertices : (V, 3) float array
        Hull vertices of the particle (Å), as given (not centred).
    particle_volume : float
        Volume of the particle (Å^3).
    cell_volume : float
        Volume of the lattice cell (Å^3).
    certificate : PackingCertificate
        How the result was established.
    """

    density: float
    basis: FloatArray
    contacts: FloatArray
    contact_indices: IntArray
    vertices: FloatArray
    particle_volume: float
    cell_volume: float
    certificate: PackingCertificate

    @property
    def is_certified(self) -> bool:
        """See :attr:`PackingCertificate.is_certified`."""
        return self.certificate.is_certified

    def neighbours(self, radius: float | None = None) -> FloatArray:
        """Lattice translations within ``radius`` (Å; default the particle diameter), (N, 3)."""
        r = _diameter(self.vertices) if radius is None else float(radius)
        return _translations(self.basis, r, None)


@dataclass(frozen=True, slots=True)
class DoubleLatticePacking:
    """The densest double-lattice packing found: ``K + x`` and ``K' + t + x``, ``x`` in L.

    ``K'`` is the point reflection of ``K`` through its centroid ``c`` (``K' = 2c - K``).

    Attributes
    ----------
    density : float
        ``2 vol(K) / |det basis|``.
    basis : (3, 3) float array
        Rows: lattice vectors (Å).
    shift : (3,) float array
        ``t`` (Å): offset of the reflected copies.
    centroid : (3,) float array
        ``c`` (Å).
    contacts : (k, 3) float array
        Translations (Å) to touching copies of ``K`` itself (both signs).
    reflected_contacts : (m, 3) float array
        Offsets ``t + x`` (Å) of the touching reflected copies.
    vertices : (V, 3) float array
        Hull vertices of ``K`` (Å).
    particle_volume : float
        Å^3.
    cell_volume : float
        Å^3 (holds two particles).
    certificate : PackingCertificate
        How the result was established (``minkowski_type`` is None).
    """

    density: float
    basis: FloatArray
    shift: FloatArray
    centroid: FloatArray
    contacts: FloatArray
    reflected_contacts: FloatArray
    vertices: FloatArray
    particle_volume: float
    cell_volume: float
    certificate: PackingCertificate

    @property
    def is_certified(self) -> bool:
        """See :attr:`PackingCertificate.is_certified`."""
        return self.certificate.is_certified


# ---------------------------------------------------------------------------------------
# input handling


def _vertices_of(solid: Any) -> FloatArray:
    if isinstance(solid, str):
        from habit.solids import reference_solid

        return reference_solid(solid)
    if hasattr(solid, "vertices") and not isinstance(solid, np.ndarray):
        solid = solid.vertices
    try:
        v = np.asarray(solid, dtype=np.float64)
    except (TypeError, ValueError) as exc:
        raise InputError(
            "solid must be a (V, 3) array of vertex coordinates in Å, a Polyhedron or a "
            "solid name such as 'octahedron'."
        ) from exc
    if v.ndim != 2 or v.shape[1] != 3 or v.shape[0] < 4:
        raise InputError(
            f"solid must be a (V, 3) array of at least 4 vertices in Å; got shape {v.shape}."
        )
    if not np.all(np.isfinite(v)):
        raise InputError("solid vertices must be finite numbers (no NaN or inf).")
    return v


def _rng(rng: int | np.random.Generator | None) -> np.random.Generator:
    return rng if isinstance(rng, np.random.Generator) else np.random.default_rng(rng)


def _check_starts(starts: int) -> int:
    if not isinstance(starts, (int, np.integer)) or starts < 1:
        raise InputError(f"starts must be a positive whole number (e.g. 40); got {starts!r}.")
    return int(starts)


def _certificate(
    method: str, out: Any, opt: Any, sep: float, v: np.ndarray, density: float, **extra: Any
) -> PackingCertificate:
    """The certificate fields both searches share, plus their own ``extra`` ones."""
    return PackingCertificate(
        method=method,
        starts=out.starts,
        hits=out.hits,
        miss_bound=1.0 - 0.001 ** (1.0 / out.starts),
        min_gauge=out.min_gauge,
        admissible=bool(out.min_gauge >= 1.0 - 1e-10),
        separation=sep,
        separated=bool(sep <= 1e-9 * _diameter(v)),
        first_order=opt.first_order,
        second_order=opt.second_order,
        kkt_residual=opt.kkt_residual,
        reduced_hessian_min=opt.reduced_hessian_min,
        contact_rank=opt.rank,
        space_filling=bool(density >= 1.0 - 1e-12),
        **extra,
    )


def _diameter(v: np.ndarray) -> float:
    return float(np.max(np.linalg.norm(v[:, None, :] - v[None, :, :], axis=-1)))


# ---------------------------------------------------------------------------------------
# public searches

_PATTERNS = {
    "i": np.array([[1, 0, 0], [0, 1, 0], [0, 0, 1], [1, 1, 0], [0, 1, 1], [1, 1, 1]]),
    "ii": np.array([[1, 0, 0], [0, 1, 0], [0, 0, 1], [1, 1, 0], [1, 0, 1], [0, 1, 1]]),
}


def _enumeration(body: _lp.Body, det: float, rng: np.random.Generator) -> tuple[str, bool]:
    from habit.lattice_configurations import enumerate_configurations

    chk = enumerate_configurations(body, det, rng=rng)
    text = (
        f"{chk.configurations} Minkowski configurations enumerated, {chk.resolved} resolved, "
        f"{chk.open} open" + (", a denser lattice found" if chk.improved else "")
    )
    return text, chk.confirms


def _tightness(
    body: _lp.Body,
    basis_cols: np.ndarray,
    contacts: np.ndarray,
    mk: tuple[str, np.ndarray] | None,
    rng: np.random.Generator,
) -> tuple[str | None, _lp.Tightness | None]:
    """Test the Minkowski six-point family, then (if not tight) the family of all contacts."""
    if len(contacts) < 3:
        return None, None
    if mk is not None:
        z6 = (_PATTERNS[mk[0]] @ mk[1].T).astype(np.float64)
        t6 = _lp.family_tightness(body, basis_cols, z6, rng=rng, starts=5)
        if t6.tight:
            return f"Minkowski ({mk[0]}), 6 points", t6
    ta = _lp.family_tightness(
        body, basis_cols, np.asarray(contacts, dtype=np.float64), rng=rng, starts=5
    )
    return f"all {len(contacts)} contacts", ta


def densest_lattice_packing(
    solid: Any,
    *,
    starts: int = 30,
    max_starts: int = 200,
    rng: int | np.random.Generator | None = 0,
    progress: ProgressFn | None = None,
    check_configurations: bool = False,
) -> LatticePacking:
    """Find the densest packing of translates of a convex solid by a lattice.

    Parameters
    ----------
    solid : (V, 3) array_like, Polyhedron or str
        Vertex coordinates in Å (the convex hull is used), an object with a ``vertices``
        attribute, or a name accepted by :func:`habit.solids.reference_solid`.
    starts : int, keyword-only
        Minimum number of random starts; more are run (up to ``max_starts``) until the
        best density has been reached three times.
    max_starts : int, keyword-only
        Upper limit on starts.
    rng : int, numpy Generator or None, keyword-only
        Seed or generator for the random starts (default 0: reproducible).
    progress : callable, optional, keyword-only
        Called with the number of starts finished.
    check_configurations : bool, keyword-only
        Also enumerate every Minkowski configuration of ``D`` (Betke & Henk's algorithm,
        see :mod:`habit.lattice_configurations`) and check the result against each family.
        Costs seconds to minutes; practical when ``D`` has at most about 20 facets
        (refused above 26).

    Returns
    -------
    LatticePacking

    Raises
    ------
    InputError
        If the solid is not a (V, 3) array of finite numbers or ``starts`` is not positive.
    EmptyPolyhedronError
        If the points span no volume.

    References
    ----------
    Minkowski (1904); Betke & Henk (2000), Comput. Geom. 16, 157.

    Examples
    --------
    >>> p = densest_lattice_packing("octahedron", starts=8)
    >>> round(p.density * 19, 9)   # Minkowski 1904: 18/19
    18.0
    >>> p.is_certified
    True
    """
    v = _vertices_of(solid)
    n0 = _check_starts(starts)
    body = _lp.make_body(v)
    if check_configurations and len(body.facets_d) > 26:
        raise InputError(
            f"the difference body has {len(body.facets_d)} facets; the configuration check "
            "is limited to 26 (use check_configurations=False)."
        )
    out = _lp.search_lattice(
        body,
        rng=_rng(rng),
        min_starts=n0,
        max_starts=max(n0, int(max_starts)),
        hits_needed=3,
        progress=progress,
    )
    b = np.linalg.solve(body.transform, out.x[:9].reshape(3, 3))  # columns, Å
    basis = b.T.copy()
    opt = out.optimality
    if opt is None:  # pragma: no cover - the search always returns its evidence
        raise PackingError("the search returned no optimality evidence.")
    zc = opt.contacts[:, :3].astype(np.int64)
    z_all = np.vstack([zc, -zc])
    contacts = z_all @ basis
    mk = _lp.minkowski_configuration(zc) if len(zc) else None
    vol = body.volume / abs(np.linalg.det(body.transform))
    cell = float(abs(np.linalg.det(basis)))
    density = vol / cell
    sep = packing_overlap(v, basis)
    enum_text, enum_ok = None, None
    if check_configurations:
        enum_text, enum_ok = _enumeration(body, float(out.det), _rng(rng))
    if density >= 1.0 - 1e-12:
        config, tight = None, None  # a tiling: optimal by volume, no family test needed
    else:
        config, tight = _tightness(body, out.x[:9].reshape(3, 3), zc, mk, _rng(rng))
    cert = _certificate(
        "multistart SLP + Newton",
        out,
        opt,
        sep,
        v,
        density,
        minkowski_type=None if mk is None else mk[0],
        minkowski_basis=None if mk is None else _readonly(mk[1].T, np.int64),
        configuration=config,
        tight=None if tight is None else tight.tight,
        family_dimension=None if tight is None else tight.family_dimension,
        family_best_ratio=None if tight is None else tight.best_det_ratio,
        enumeration=enum_text,
        enumeration_confirms=enum_ok,
    )
    if not cert.admissible:  # pragma: no cover - guarded by the search
        raise PackingError("the best lattice found overlaps; rerun with more starts.")
    hull = hull_facets(v)
    return LatticePacking(
        density=float(density),
        basis=_readonly(basis),
        contacts=_readonly(contacts),
        contact_indices=_readonly(z_all, np.int64),
        vertices=_readonly(hull.points),
        particle_volume=float(vol),
        cell_volume=cell,
        certificate=cert,
    )


def densest_double_lattice_packing(
    solid: Any,
    *,
    starts: int = 20,
    max_starts: int = 200,
    rng: int | np.random.Generator | None = 0,
    progress: ProgressFn | None = None,
) -> DoubleLatticePacking:
    """Find the densest double-lattice packing of a convex solid and its point reflection.

    The packing is ``{K + x} ∪ {K' + t + x}``, ``x`` in a lattice, ``K'`` the reflection of
    ``K`` through its centroid. For a centrally symmetric solid ``K' = K`` and this is a
    lattice packing of a sub-lattice; the search still runs.

    Parameters
    ----------
    solid : (V, 3) array_like, Polyhedron or str
        As for :func:`densest_lattice_packing`.
    starts, max_starts, rng, progress
        As for :func:`densest_lattice_packing`.

    Returns
    -------
    DoubleLatticePacking

    References
    ----------
    Kallus, Elser & Gravel (2010), Discrete Comput. Geom. 44, 245 (regular tetrahedron:
    ``(139 + 40 sqrt 10) / 369``).

    Examples
    --------
    >>> p = densest_double_lattice_packing("tetrahedron", starts=3)
    >>> round(p.density, 9)
    0.719488093
    """
    v = _vertices_of(solid)
    n0 = _check_starts(starts)
    body = _lp.make_body(v)
    out = _lp.search_double_lattice(
        body,
        rng=_rng(rng),
        min_starts=n0,
        max_starts=max(n0, int(max_starts)),
        hits_needed=3,
        progress=progress,
    )
    b = np.linalg.solve(body.transform, out.x[:9].reshape(3, 3))
    t = np.linalg.solve(body.transform, out.x[9:12])
    basis = b.T.copy()
    opt = out.optimality
    if opt is None:  # pragma: no cover - the search always returns its evidence
        raise PackingError("the search returned no optimality evidence.")
    lat = opt.contacts[opt.contacts[:, 3] == 0, :3].astype(np.int64)
    cos = opt.contacts[opt.contacts[:, 3] == 1, :3].astype(np.int64)
    vol = body.volume / abs(np.linalg.det(body.transform))
    cell = float(abs(np.linalg.det(basis)))
    density = 2.0 * vol / cell
    sep = packing_overlap(v, basis, shift=t)
    cert = _certificate(
        "multistart SLP + Newton (lattice basis and shift)",
        out,
        opt,
        sep,
        v,
        density,
        minkowski_type=None,
        minkowski_basis=None,
    )
    hull = hull_facets(v)
    return DoubleLatticePacking(
        density=float(density),
        basis=_readonly(basis),
        shift=_readonly(t),
        centroid=_readonly(body.centroid),
        contacts=_readonly(np.vstack([lat, -lat]) @ basis),
        reflected_contacts=_readonly(t + cos @ basis),
        vertices=_readonly(hull.points),
        particle_volume=float(vol),
        cell_volume=cell,
        certificate=cert,
    )


# ---------------------------------------------------------------------------------------
# independent non-overlap test (separating axes)


def _translations(basis: np.ndarray, radius: float, centre: np.ndarray | None) -> FloatArray:
    """All lattice vectors ``x`` (rows of basis combined) with ``|c + x| <= radius``."""
    binv = np.linalg.inv(basis)  # x = z @ basis  ->  z = x @ binv
    c = np.zeros(3) if centre is None else np.asarray(centre, dtype=np.float64)
    zc = -c @ binv
    span = radius * np.linalg.norm(binv, axis=0)  # |z_k| <= radius * |column k of binv|
    lo = np.ceil(zc - span - 1e-9).astype(int)
    hi = np.floor(zc + span + 1e-9).astype(int)
    if np.prod(hi - lo + 1) > 5_000_000:
        raise InputError("the lattice basis is too skewed to enumerate neighbours; reduce it.")
    g = np.mgrid[lo[0] : hi[0] + 1, lo[1] : hi[1] + 1, lo[2] : hi[2] + 1].reshape(3, -1).T
    x = g @ basis
    keep = np.linalg.norm(c + x, axis=1) <= radius
    if centre is None:
        keep &= np.any(g != 0, axis=1)
    return np.asarray(x[keep])


def _axes(v: np.ndarray) -> FloatArray:
    """Candidate separating directions: facet normals and edge-edge cross products."""
    h = hull_facets(v)
    e = h.edges
    d = h.points[e[:, 1]] - h.points[e[:, 0]]
    d /= np.linalg.norm(d, axis=1)[:, None]
    cr = np.cross(d[:, None, :], d[None, :, :]).reshape(-1, 3)  # (E*E, 3)
    n = np.linalg.norm(cr, axis=1)
    cr = cr[n > 1e-9] / n[n > 1e-9, None]
    ax = np.vstack([h.normals, cr])
    ax *= np.where(ax[:, [0]] < 0, -1.0, 1.0)  # one of each +-u
    key = np.round(ax, 9)
    _, idx = np.unique(key, axis=0, return_index=True)
    return np.asarray(ax[np.sort(idx)])


def packing_overlap(
    vertices: ArrayLike, basis: ArrayLike, *, shift: ArrayLike | None = None
) -> float:
    """Largest interpenetration depth of a particle with any neighbour, by separating axes.

    For two convex polyhedra, interiors are disjoint iff some plane separates them, and it
    can be chosen parallel to a facet of one or to an edge of each (the separating axis
    theorem). For each neighbour this function takes the smallest projected overlap over
    those directions; the result is the largest such value over all neighbours. It uses
    neither the difference body nor the gauge of the search, so it checks the search
    independently.

    Parameters
    ----------
    vertices : (V, 3) array_like
        The particle (Å).
    basis : (3, 3) array_like
        Rows: lattice vectors (Å).
    shift : (3,) array_like, optional
        For a double lattice: offset ``t`` (Å) of the copies reflected through the centroid.

    Returns
    -------
    float
        Interpenetration depth in Å: ``<= 0`` (up to rounding) means a packing (touching
        allowed); positive means two particles overlap by that much along the best axis.

    Examples
    --------
    >>> cube = np.array([[x, y, z] for x in (0, 1) for y in (0, 1) for z in (0, 1)], float)
    >>> packing_overlap(cube, np.eye(3)) <= 1e-12
    True
    >>> round(packing_overlap(cube, 0.9 * np.eye(3)), 6)
    0.1
    """
    v = np.asarray(vertices, dtype=np.float64)
    b = np.asarray(basis, dtype=np.float64)
    if b.shape != (3, 3) or abs(np.linalg.det(b)) < 1e-300:
        raise InputError(f"basis must be a nonsingular (3, 3) array (rows in Å); got {b.shape}.")
    ax = _axes(v)  # (A, 3)
    proj = v @ ax.T  # (V, A)
    lo, hi = proj.min(axis=0), proj.max(axis=0)
    diam = _diameter(v)
    worst = -np.inf
    x = _translations(b, diam * (1 + 1e-9), None)  # (N, 3)
    if len(x):
        s = np.abs(x @ ax.T)  # (N, A): shift of the projected interval
        overlap = (hi - lo)[None, :] - s  # same width on both sides
        worst = max(worst, float(overlap.min(axis=1).max()))
    if shift is not None:
        t = np.asarray(shift, dtype=np.float64).reshape(3)
        c = hull_facets(v)
        cen = _lp._centroid(c)
        # reflected copy: 2c - K + t + x, projected interval [2c.u - hi + s, 2c.u - lo + s]
        y = t + _translations(b, diam * (1 + 1e-9), t)  # offsets t + x
        if len(y):
            s = y @ ax.T + 2.0 * (cen @ ax.T)[None, :]  # (N, A)
            ov = np.minimum(hi[None, :], s - lo[None, :]) - np.maximum(lo[None, :], s - hi[None, :])
            worst = max(worst, float(ov.min(axis=1).max()))
    return float(worst) if np.isfinite(worst) else -diam


def is_packing(
    vertices: ArrayLike, basis: ArrayLike, *, shift: ArrayLike | None = None, rel_tol: float = 1e-9
) -> bool:
    """Whether no two particles of a (double-)lattice arrangement overlap.

    Parameters
    ----------
    vertices, basis, shift
        As for :func:`packing_overlap`.
    rel_tol : float
        Overlap allowed, as a fraction of the particle diameter (rounding).

    Returns
    -------
    bool

    Examples
    --------
    >>> cube = np.array([[x, y, z] for x in (0, 1) for y in (0, 1) for z in (0, 1)], float)
    >>> is_packing(cube, np.eye(3)), is_packing(cube, 0.99 * np.eye(3))
    (True, False)
    """
    v = np.asarray(vertices, dtype=np.float64)
    return packing_overlap(v, basis, shift=shift) <= rel_tol * _diameter(v)
