"""Numerical core of the densest lattice and double-lattice packing of a convex polyhedron.

The public entry points are in :mod:`habit.packing`; this module holds the kernels on plain
arrays. Everything here works on a copy of the solid scaled so that the difference body
``D = K - K`` has circumradius 1; :mod:`habit.packing` scales results back.

Method (after Minkowski 1904 and Betke & Henk 2000; double lattices after Kallus, Elser &
Gravel 2010): translates ``K + x``, ``x`` in a lattice ``L = B Z^3``, have disjoint interiors
iff no nonzero lattice vector lies in the interior of ``D``, i.e. ``||B z||_D >= 1`` with the
gauge ``||x||_D = max_j a_j . x`` over the facets ``a_j . x <= 1`` of ``D``. The densest
lattice packing minimises ``|det B|`` over such *admissible* bases. We minimise by sequential
linear programming over the nine entries of ``B`` (each lattice vector near the boundary of
``D`` contributes the half-space of the facet it sits on), polish the optimum by Newton's
method on its Lagrange (KKT) system, and certify it by an exhaustive admissibility check,
the first- and second-order optimality conditions for every facet choice at edge contacts,
and agreement of independent random starts.

Bases are stored with the lattice vectors as **columns** here (``p = B @ z``); the public
result objects give them as rows.
"""

from __future__ import annotations

import itertools
from collections.abc import Callable
from dataclasses import dataclass, field
from functools import lru_cache

import numpy as np
from scipy.optimize import linprog, nnls

from habit._convex import hull_facets
from habit._typing import FloatArray, IntArray
from habit.errors import EmptyPolyhedronError, PackingError

__all__ = [
    "Body",
    "make_body",
    "lll_reduce",
    "lattice_points",
    "gauge",
    "SearchOutcome",
    "search_lattice",
    "search_double_lattice",
    "minkowski_configuration",
]

_ADM_TOL = 1e-10  # admissibility tolerance on the gauge after polishing (circumradius 1)
_ACTIVE_TOL = 1e-7  # lattice vectors this close to the boundary of D count as contacts
_STOP = 1e-12  # SLP stops when the predicted relative decrease falls below this
_TIE_TOL = 1e-9  # facets this close to the maximum count as ties


# ---------------------------------------------------------------------------------------
# the solid, its difference body and gauges


@dataclass(frozen=True)
class Body:
    """A convex solid prepared for packing (scaled so that ``D = K - K`` has circumradius 1).

    Attributes
    ----------
    vertices : (n, 3) float array
        Hull vertices of ``K``, centred at the centroid, scaled.
    scale : float
        Overall length factor applied to the input coordinates (after centring).
    transform : (3, 3) float array
        Linear map ``T`` (determinant ``scale**3``) taking centred input coordinates to the
        working frame: ``working = T @ (input - centroid)``. It whitens the vertex
        covariance (densities are affine invariant, Minkowski 1904) and scales ``D`` to
        circumradius 1.
    centroid : (3,) float array
        Centroid of the input solid (input units).
    volume : float
        Volume of the scaled ``K``.
    facets_d : (F, 3) float array
        Facet vectors ``a_j`` of ``D = {x : a_j . x <= 1}`` (they come in +- pairs).
    volume_d : float
        Volume of ``D``.
    facets_2k : (G, 3) float array
        Facet vectors ``e_k`` of ``2 K = {x : e_k . x <= 1}`` (centred ``K``).
    radius_2k : float
        Circumradius of ``2 K`` about the centroid.
    normals : (f, 3) float array
        Outer unit facet normals of ``K``.
    offsets : (f,) float array
        Facet offsets of the scaled, centred ``K``.
    edges : (E, 2) int array
        Edges of ``K`` as vertex index pairs.
    centrally_symmetric : bool
        Whether ``K = -K`` about its centroid.
    """

    vertices: FloatArray
    scale: float
    centroid: FloatArray
    volume: float
    facets_d: FloatArray
    volume_d: float
    facets_2k: FloatArray
    radius_2k: float
    normals: FloatArray
    offsets: FloatArray
    edges: IntArray
    centrally_symmetric: bool
    transform: FloatArray


def _centroid(h: object) -> np.ndarray:
    """Volume centroid of a hull given as HullFacets (fan decomposition)."""
    pts = h.points  # type: ignore[attr-defined]
    ref = pts.mean(axis=0)
    total = 0.0
    acc = np.zeros(3)
    for face in h.faces:  # type: ignore[attr-defined]
        p0 = pts[face[0]]
        for i in range(1, len(face) - 1):
            p1, p2 = pts[face[i]], pts[face[i + 1]]
            v = abs(np.dot(p0 - ref, np.cross(p1 - ref, p2 - ref))) / 6.0
            total += v
            acc += v * (ref + p0 + p1 + p2) / 4.0
    return np.asarray(acc / total)


def make_body(vertices: np.ndarray) -> Body:
    """Prepare a convex solid given by points (hull taken) for the packing kernels."""
    h = hull_facets(vertices)
    c = _centroid(h)
    pts = h.points - c
    # affine normalisation (density is affine invariant): whiten the vertex covariance so
    # that sheared or flattened input is as well conditioned as the regular solid
    w = _whitening(pts)
    pts = pts @ w.T
    diff = (pts[:, None, :] - pts[None, :, :]).reshape(-1, 3)  # (n*n, 3)
    rad = float(np.max(np.linalg.norm(diff, axis=1)))
    if rad <= 0:
        raise EmptyPolyhedronError("the solid has no extent; give vertices spanning 3-D.")
    s = 1.0 / rad
    pts = pts * s
    hd = hull_facets(diff * s)
    a = hd.normals / hd.offsets[:, None]
    hk = hull_facets(pts)
    normals = hk.normals
    offsets = hk.offsets
    e = normals / (2.0 * offsets[:, None])
    sym = _is_symmetric(pts)
    return Body(
        vertices=hk.points,
        scale=s,
        centroid=c,
        volume=hk.volume,
        facets_d=a,
        volume_d=hd.volume,
        facets_2k=e,
        radius_2k=float(2.0 * np.max(np.linalg.norm(pts, axis=1))),
        normals=normals,
        offsets=offsets,
        edges=hk.edges,
        transform=w * s,
        centrally_symmetric=sym,
    )


def _whitening(pts: np.ndarray) -> np.ndarray:
    """Symmetric ``W`` with ``cov(pts @ W.T)`` proportional to the identity (unit determinant)."""
    cov = np.cov(pts.T)
    ev, vec = np.linalg.eigh(cov)
    w = vec @ np.diag(ev**-0.5) @ vec.T
    return np.asarray(w / np.cbrt(np.linalg.det(w)))


def _is_symmetric(pts: np.ndarray) -> bool:
    d = np.linalg.norm(pts[:, None, :] + pts[None, :, :], axis=-1)
    return bool(np.all(d.min(axis=1) < 1e-9))


def gauge(points: np.ndarray, facets: np.ndarray) -> np.ndarray:
    """Gauge ``max_j a_j . p`` of each point (``(P, 3)`` -> ``(P,)``)."""
    return np.asarray((points @ facets.T).max(axis=1))


# ---------------------------------------------------------------------------------------
# lattice kernels


def lll_reduce(basis: np.ndarray, delta: float = 0.99) -> tuple[np.ndarray, np.ndarray]:
    """LLL-reduce a 3x3 basis (columns); return the reduced basis and the unimodular ``U``.

    ``reduced = basis @ U``. Lenstra, Lenstra & Lovasz (1982), Math. Ann. 261, 515.
    """
    b = np.array(basis, dtype=np.float64)
    u = np.eye(3, dtype=np.int64)
    n = 3
    k = 1
    it = 0
    while k < n and it < 1000:
        it += 1
        # Gram-Schmidt of the current basis
        q = np.zeros_like(b)
        mu = np.zeros((n, n))
        for i in range(n):
            v = b[:, i].copy()
            for j in range(i):
                mu[i, j] = b[:, i] @ q[:, j] / (q[:, j] @ q[:, j])
                v -= mu[i, j] * q[:, j]
            q[:, i] = v
        for j in range(k - 1, -1, -1):
            r = round(mu[k, j])
            if r != 0:
                b[:, k] -= r * b[:, j]
                u[:, k] -= r * u[:, j]
                mu[k, : j + 1] -= r * np.append(mu[j, :j], 1.0)
        qk = q[:, k] @ q[:, k]
        qk1 = q[:, k - 1] @ q[:, k - 1]
        if qk >= (delta - mu[k, k - 1] ** 2) * qk1:
            k += 1
        else:
            b[:, [k - 1, k]] = b[:, [k, k - 1]]
            u[:, [k - 1, k]] = u[:, [k, k - 1]]
            k = max(k - 1, 1)
    return b, u


@lru_cache(maxsize=256)
def _box(b0: int, b1: int, b2: int) -> np.ndarray:
    g = np.mgrid[-b0 : b0 + 1, -b1 : b1 + 1, -b2 : b2 + 1].reshape(3, -1).T  # (N, 3)
    # one of each pair +-z: first nonzero coordinate positive
    first = np.where(g[:, 0] != 0, g[:, 0], np.where(g[:, 1] != 0, g[:, 1], g[:, 2]))
    out = g[first > 0].astype(np.float64)
    out.setflags(write=False)
    return out


_BOX_CAP = 60


def lattice_points(
    basis: np.ndarray, radius: float, centre: np.ndarray | None = None
) -> np.ndarray:
    """Integer vectors ``z`` with ``|B z + centre| <= radius``.

    Without ``centre`` only one of each pair ``+-z`` is returned and ``z = 0`` is left out.
    The basis should be LLL-reduced (the search box grows with its skewness).

    Returns
    -------
    (N, 3) float array of integer values
    """
    if not (np.isfinite(radius) and np.all(np.isfinite(basis))):
        raise PackingError("lattice basis or radius is not finite.")
    binv = np.linalg.inv(basis)
    rows = np.linalg.norm(binv, axis=1)  # |z_i| <= radius * |row_i(B^-1)| (+ shift)
    if centre is None:
        bounds = np.floor(radius * rows + 1e-9).astype(int)
        if np.any(bounds > _BOX_CAP):
            raise PackingError("lattice basis too skewed to enumerate; reduce it first.")
        z = _box(int(bounds[0]), int(bounds[1]), int(bounds[2]))
        p = z @ basis.T
        return np.asarray(z[np.einsum("ij,ij->i", p, p) <= radius * radius])
    zc = -binv @ centre
    lo = np.ceil(zc - radius * rows - 1e-9).astype(int)
    hi = np.floor(zc + radius * rows + 1e-9).astype(int)
    if np.any(hi - lo > 2 * _BOX_CAP):
        raise PackingError("lattice basis too skewed to enumerate; reduce it first.")
    g = np.mgrid[lo[0] : hi[0] + 1, lo[1] : hi[1] + 1, lo[2] : hi[2] + 1].reshape(3, -1).T
    z = g.astype(np.float64)
    p = z @ basis.T + centre
    return np.asarray(z[np.einsum("ij,ij->i", p, p) <= radius * radius])


def _lambda1(basis: np.ndarray, a: np.ndarray) -> float:
    """Smallest gauge over nonzero lattice vectors (``D`` has circumradius 1)."""
    r = float(np.min(gauge(basis.T, a)))  # |x| <= ||x||_D for circumradius 1
    z = lattice_points(basis, r)
    return float(np.min(gauge(z @ basis.T, a)))


# ---------------------------------------------------------------------------------------
# the optimisation problem: x = (vec B row-major[, t])


class _Problem:
    """Minimise det B subject to admissibility (lattice) [and coset avoidance (double)]."""

    def __init__(self, body: Body, double: bool) -> None:
        self.body = body
        self.double = double
        self.dim = 12 if double else 9
        self.a = body.facets_d
        self.e = body.facets_2k
        self.amax = float(np.max(np.abs(self.a).sum(axis=1)))
        self.emax = float(np.max(np.abs(self.e).sum(axis=1)))

    @staticmethod
    def split(x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        b = x[:9].reshape(3, 3)
        t = x[9:12] if x.size == 12 else np.zeros(3)
        return b, t

    def join(self, b: np.ndarray, t: np.ndarray) -> np.ndarray:
        return np.concatenate([b.ravel(), t]) if self.double else b.ravel().copy()

    def det(self, x: np.ndarray) -> float:
        return float(np.linalg.det(x[:9].reshape(3, 3)))

    def grad(self, x: np.ndarray) -> np.ndarray:
        b = x[:9].reshape(3, 3)
        g = np.zeros(self.dim)
        g[:9] = (np.linalg.det(b) * np.linalg.inv(b).T).ravel()  # cofactor matrix
        return g

    def hessian(self, x: np.ndarray) -> np.ndarray:
        b = x[:9].reshape(3, 3)
        m = np.linalg.inv(b)
        d = np.linalg.det(b)
        # H[(ik),(jl)] = det (M_ki M_lj - M_kj M_li)
        h9 = d * (np.einsum("ki,lj->ikjl", m, m) - np.einsum("kj,li->ikjl", m, m))
        h = np.zeros((self.dim, self.dim))
        h[:9, :9] = h9.reshape(9, 9)
        return h

    # -- points and constraint rows -------------------------------------------------------
    def points(
        self, x: np.ndarray, margin: float
    ) -> list[tuple[np.ndarray, np.ndarray, np.ndarray, bool]]:
        """Lattice and coset points near the boundary: (z, values per facet, facets, coset)."""
        b, t = self.split(x)
        out = []
        z = lattice_points(b, 1.0 + margin)
        if len(z):
            vals = (z @ b.T) @ self.a.T  # (N, F)
            out.append((z, vals, self.a, False))
        if self.double:
            z2 = lattice_points(b, self.body.radius_2k + margin, centre=t)
            if len(z2):
                vals2 = (z2 @ b.T + t) @ self.e.T  # (N, G)
                out.append((z2, vals2, self.e, True))
        return out

    def row(self, z: np.ndarray, f: np.ndarray, coset: bool) -> np.ndarray:
        return np.asarray(self.rows(z, f[None, :], coset)[0])

    def rows(self, z: np.ndarray, f: np.ndarray, coset: bool) -> np.ndarray:
        """Constraint rows ``r . x >= 1`` of point ``z`` on each facet in ``f`` (k, 3)."""
        r = np.zeros((len(f), self.dim))
        r[:, :9] = (f[:, :, None] * z[None, None, :]).reshape(len(f), 9)  # (k, 9): f_i z_k
        if coset:
            r[:, 9:12] = f
        return r

    def min_gauge(self, x: np.ndarray) -> float:
        """Smallest gauge of all lattice (and coset) points: >= 1 means a packing.

        The search radius adapts: every point with gauge below that of a known point lies
        within that gauge times the circumradius (1 for ``D``, ``radius_2k`` for ``2K``).
        """
        b, t = self.split(x)
        ub = float(np.min(gauge(np.vstack([b.T, -b.T]), self.a)))
        z = lattice_points(b, ub)
        m = float(np.min(gauge(z @ b.T, self.a))) if len(z) else ub
        if self.double:
            q0 = t - b @ np.round(np.linalg.solve(b, t))
            g0 = float(gauge(q0[None, :], self.e)[0])
            z2 = lattice_points(b, self.body.radius_2k * g0 * (1 + 1e-12), centre=t)
            m2 = float(np.min(gauge(z2 @ b.T + t, self.e))) if len(z2) else g0
            m = min(m, m2)
        return m

    def normalise(self, x: np.ndarray, reduce: bool = True) -> np.ndarray:
        """Scale so that the smallest gauge is 1 (touching packing); LLL-reduce first."""
        b, t = self.split(x)
        if reduce:
            b, _ = lll_reduce(b)
        if np.linalg.det(b) < 0:
            b[:, 2] *= -1
        if self.double:
            t = t - b @ np.round(np.linalg.solve(b, t))
        x = self.join(b, t)
        m = self.min_gauge(x)
        if m < 1.0 - 1e-13 or m > 1.0 + 1e-13:
            x = x / m
        return x


# ---------------------------------------------------------------------------------------
# sequential linear programming


def _slp(prob: _Problem, x: np.ndarray, max_iter: int = 400) -> np.ndarray:
    rho = 0.05
    det = prob.det(x)
    accepted = 0
    for it in range(max_iter):
        g = prob.grad(x)
        cand_rows = _candidate_rows(prob, x, rho)
        best = _lp_step(prob, x, g, cand_rows, rho, combos=False)
        if best is None or best[1] < _STOP * det:
            # stalled: try every facet combination at points on edges of D / of 2K
            best2 = _lp_step(prob, x, g, cand_rows, rho, combos=True)
            if best2 is not None and (best is None or best2[1] > best[1]):
                best = best2
        if best is None or best[1] < _STOP * det:
            break  # stationary for the linearised problem: hand over to the Newton polish
        dx, pred = best
        if prob.det(x + dx) < 1e-3 * det:  # never step through a singular basis
            rho *= 0.3
            continue
        xn = prob.normalise(x + dx, reduce=it % 4 == 0)
        dn = prob.det(xn)
        if np.isfinite(dn) and 0 < dn < det and det - dn >= 0.1 * pred:
            x, det = xn, dn
            rho = min(2.0 * rho, 0.1)
            accepted += 1
            if accepted >= 8 and accepted % 4 == 0:
                # the contact set has usually settled: jump to its critical point
                xp = _newton_jump(prob, x)
                if xp is not None:
                    return xp
        else:
            rho *= 0.3
            if rho < 1e-10:
                break
    return x


def _newton_jump(prob: _Problem, x: np.ndarray) -> np.ndarray | None:
    """Newton's method on the KKT system of the points within 1e-4 of the boundary.

    Returns the new basis if it is admissible, no worse, and satisfies the first-order
    conditions with nonnegative multipliers; otherwise None (the SLP continues).
    """
    try:
        xp = _polish(prob, x, active_tol=1e-4, accept_rel=1e-12)
    except (np.linalg.LinAlgError, PackingError):
        return None
    if xp is x:
        return None
    act = _active(prob, xp, 1e-9)
    if not act:
        return None
    if prob.body.volume * (2.0 if prob.double else 1.0) / prob.det(xp) >= 1.0 - 1e-12:
        return xp  # a tiling: nothing can be denser
    opt = _optimality(prob, xp, max_choices=16)
    return xp if opt.second_order else None


def _candidate_rows(prob: _Problem, x: np.ndarray, rho: float) -> list[np.ndarray]:
    """Constraint rows of the points that may reach the boundary within the trust region.

    One entry per point: an (k, dim) array of the rows of its facets tied for the maximum
    (k = 1 except on edges and vertices of ``D`` or ``2K``).
    """
    out: list[np.ndarray] = []
    for z, vals, facets, coset in prob.points(x, 3.0 * rho):
        zn = np.abs(z).sum(axis=1) + (1.0 if coset else 0.0)
        mx = vals.max(axis=1)
        fmax = prob.emax if coset else prob.amax
        near = np.nonzero(mx - rho * zn * fmax < 1.0 + 1e-12)[0]
        if not near.size:
            continue
        ties = vals[near] >= mx[near, None] - _TIE_TOL  # (P, F)
        for i, t in zip(near, ties, strict=True):
            out.append(prob.rows(z[i], facets[t], coset))
    return out


def _reduced(prob: _Problem, x: np.ndarray) -> np.ndarray:
    """Return the same lattice (and coset) with an LLL-reduced, right-handed basis."""
    b, t = prob.split(x)
    b, _ = lll_reduce(b)
    if np.linalg.det(b) < 0:
        b[:, 2] *= -1
    if prob.double:
        t = t - b @ np.round(np.linalg.solve(b, t))
    return prob.join(b, t)


def _rescale(prob: _Problem, x: np.ndarray) -> np.ndarray:
    b, _ = prob.split(x)
    if np.linalg.det(b) <= 0:
        return x * np.inf
    m = prob.min_gauge(x)
    return x / m


def _lp_step(
    prob: _Problem,
    x: np.ndarray,
    g: np.ndarray,
    cand_rows: list[np.ndarray],
    rho: float,
    combos: bool,
) -> tuple[np.ndarray, float] | None:
    if not cand_rows:
        return None
    if combos:
        multi = [i for i, r in enumerate(cand_rows) if len(r) > 1]
        if not multi:
            return None
        choices = list(itertools.product(*[range(len(cand_rows[i])) for i in multi]))
        if len(choices) > 256:
            rng = np.random.default_rng(len(choices))
            choices = [choices[k] for k in rng.choice(len(choices), 256, replace=False)]
    else:
        multi = []
        choices = [()]
    best: tuple[np.ndarray, float] | None = None
    for ch in choices:
        pick = [0] * len(cand_rows)
        for i, c in zip(multi, ch, strict=True):
            pick[i] = c
        rows = np.array([cand_rows[i][pick[i]] for i in range(len(cand_rows))])
        sol = _solve_lp(g, -rows, rows @ x - 1.0, rho)
        if sol is None:
            continue
        pred = -float(g @ sol)
        if best is None or pred > best[1]:
            best = (sol, pred)
    return best


def _solve_lp(c: np.ndarray, a_ub: np.ndarray, b_ub: np.ndarray, rho: float) -> np.ndarray | None:
    """``min c.d`` subject to ``a_ub d <= b_ub`` and ``|d_i| <= rho``; None if infeasible.

    Calls the HiGHS solver bundled with SciPy directly for the tiny dense problems here
    (the general :func:`scipy.optimize.linprog` front end costs several times the solve);
    falls back to :func:`scipy.optimize.linprog` if that interface is unavailable.
    """
    global _FAST_LP
    if _FAST_LP:
        try:
            return _solve_lp_core(c, a_ub, b_ub, rho)
        except Exception:  # pragma: no cover - depends on the SciPy build
            _FAST_LP = False
    res = linprog(c, A_ub=a_ub, b_ub=b_ub, bounds=[(-rho, rho)] * len(c), method="highs")
    return np.asarray(res.x) if res.status == 0 else None


_FAST_LP = True


def _solve_lp_core(
    c: np.ndarray,
    a_ub: np.ndarray,
    b_ub: np.ndarray,
    rho: float,
    a_eq: np.ndarray | None = None,
    b_eq: np.ndarray | None = None,
    centre: np.ndarray | None = None,
) -> np.ndarray | None:
    from scipy.optimize._highspy import _core as h

    lower = np.full(len(a_ub), -np.inf)
    upper = np.asarray(b_ub, dtype=np.float64)
    if a_eq is not None and b_eq is not None and len(a_eq):
        a_ub = np.vstack([a_ub, a_eq])
        lower = np.concatenate([lower, b_eq])
        upper = np.concatenate([upper, b_eq])
    m, n = a_ub.shape
    lp = h.HighsLp()
    lp.num_col_ = n
    lp.num_row_ = m
    lp.a_matrix_.num_col_ = n
    lp.a_matrix_.num_row_ = m
    lp.a_matrix_.format_ = h.MatrixFormat.kColwise
    lp.col_cost_ = np.ascontiguousarray(c, dtype=np.float64)
    mid = np.zeros(n) if centre is None else centre
    lp.col_lower_ = mid - rho
    lp.col_upper_ = mid + rho
    lp.row_lower_ = np.ascontiguousarray(lower)
    lp.row_upper_ = np.ascontiguousarray(upper)
    lp.a_matrix_.start_ = np.arange(0, m * n + 1, m, dtype=np.int32)
    lp.a_matrix_.index_ = np.tile(np.arange(m, dtype=np.int32), n)
    lp.a_matrix_.value_ = np.ascontiguousarray(a_ub.T, dtype=np.float64).ravel()
    highs = h._Highs()
    opts = h.HighsOptions()
    opts.output_flag = False
    opts.log_to_console = False
    highs.passOptions(opts)
    highs.passModel(lp)
    highs.run()
    if highs.getModelStatus() != h.HighsModelStatus.kOptimal:
        return None
    return np.array(highs.getSolution().col_value)


# ---------------------------------------------------------------------------------------
# Newton polish on the KKT system and the optimality certificate


def _active(
    prob: _Problem, x: np.ndarray, tol: float, tie_tol: float | None = None
) -> list[tuple[np.ndarray, np.ndarray, bool]]:
    """Points on the boundary: (z, (k, dim) rows of all tied facets, coset flag)."""
    tie = tol if tie_tol is None else tie_tol
    out = []
    for z, vals, facets, coset in prob.points(x, 1e-6):
        mx = vals.max(axis=1)
        for i in np.nonzero(np.abs(mx - 1.0) < tol)[0]:
            ties = vals[i] >= mx[i] - tie
            out.append((z[i], prob.rows(z[i], facets[ties], coset), coset))
    return out


def _independent_rows(rows: np.ndarray, tol: float = 1e-9) -> np.ndarray:
    from scipy.linalg import qr

    if len(rows) == 0:
        return rows
    _, r, piv = qr(rows.T, pivoting=True, mode="economic")
    d = np.abs(np.diag(r))
    rank = int(np.sum(d > tol * max(d[0], 1e-300)))
    return np.asarray(rows[np.sort(piv[:rank])])


def _polish(
    prob: _Problem, x: np.ndarray, active_tol: float = _ACTIVE_TOL, accept_rel: float = 1e-9
) -> np.ndarray:
    """Newton's method on the Lagrange system of the contacts (points within ``active_tol``).

    Returns ``x`` itself when the polished basis is not a packing or is worse by more than
    ``accept_rel`` (relative determinant).
    """
    act = _active(prob, x, active_tol, tie_tol=min(active_tol, 1e-6))
    if not act:
        return x
    rows = np.array([r for _, rs, _ in act for r in rs])
    c = _independent_rows(rows)
    n, r = prob.dim, len(c)
    if r >= n:
        xn = np.linalg.lstsq(c, np.ones(r), rcond=None)[0]
    else:
        lam = np.linalg.lstsq(c.T, prob.grad(x), rcond=None)[0]
        xn = x.copy()
        for _ in range(30):
            f1 = prob.grad(xn) - c.T @ lam
            f2 = c @ xn - 1.0
            jac = np.block([[prob.hessian(xn), -c.T], [c, np.zeros((r, r))]])
            step = np.linalg.lstsq(jac, -np.concatenate([f1, f2]), rcond=None)[0]
            xn = xn + step[:n]
            lam = lam + step[n:]
            if np.max(np.abs(step[:n])) < 1e-16:
                break
    # keep the polished point only if it is still a packing and no worse
    if not np.all(np.isfinite(xn)) or prob.det(xn) <= 0:
        return x
    m = prob.min_gauge(xn)
    dn = prob.det(xn)
    if not np.isfinite(m) or m < 1.0 - _ADM_TOL or not 0 < dn <= prob.det(x) * (1 + accept_rel):
        return x
    return np.asarray(xn)


@dataclass(frozen=True)
class Optimality:
    """Evidence that a basis is a local minimum of ``det`` among packing lattices."""

    contacts: np.ndarray  # (k, 3) integer z (and coset flag in column 3)
    rank: int  # rank of the active constraint rows (dimension of x is 9 or 12)
    choices: int  # facet choices checked (product over edge contacts)
    kkt_residual: float  # worst relative NNLS residual over the facet choices
    min_multiplier: float  # smallest positive-part multiplier seen (relative)
    reduced_hessian_min: float  # smallest eigenvalue of the reduced Hessian (relative), inf if none
    first_order: bool
    second_order: bool


def _reduced_min_eig(strong: np.ndarray, h: np.ndarray, dim: int) -> float:
    """Smallest eigenvalue of ``h`` on the null space of ``strong`` (inf if that is {0})."""
    if len(strong):
        _, sv, vt = np.linalg.svd(strong)
        rk = int(np.sum(sv > 1e-9 * sv[0]))
        null = vt[rk:].T
    else:
        null = np.eye(dim)
    if null.shape[1] == 0:
        return float("inf")
    return float(np.linalg.eigvalsh(null.T @ h @ null).min())


def _multiplier_support(rows: np.ndarray, g: np.ndarray, lam: np.ndarray) -> np.ndarray:
    """Rows that carry a positive multiplier in some solution of ``rows.T @ lam = g, lam >= 0``.

    Multipliers are not unique when the contact rows are dependent; the union of the
    supports is found with one small LP per row that is zero in the NNLS solution.
    """
    gn = float(np.linalg.norm(g))
    support = lam > 1e-8 * gn
    for i in np.nonzero(~support)[0]:
        cost = np.zeros(len(rows))
        cost[i] = -1.0
        box = 5.0 * gn + 0.5  # lam in [0, 10 |g| + 1]
        sol = _solve_lp_core(
            cost,
            np.zeros((0, len(rows))),
            np.zeros(0),
            box,
            rows.T,
            g,
            centre=np.full(len(rows), box),
        )
        if sol is not None and sol[i] > 1e-8 * gn:
            support[i] = True
    return np.asarray(support)


def _optimality(prob: _Problem, x: np.ndarray, max_choices: int = 128) -> Optimality:
    """First- and second-order optimality conditions at ``x`` for every facet choice.

    For a tiling (density 1) the second-order test is skipped: such a lattice is optimal by
    volume, and its optima form continua (degenerate Hessian).
    """
    factor = 2.0 if prob.double else 1.0
    tiling = factor * prob.body.volume / prob.det(x) >= 1.0 - 1e-12
    act = _active(prob, x, 1e-9)
    g = prob.grad(x)
    gn = float(np.linalg.norm(g))
    det = prob.det(x)
    h = prob.hessian(x)
    contacts = np.array([np.append(z, 1.0 if cs else 0.0) for z, _, cs in act]).reshape(-1, 4)
    all_rows = np.array([r for _, rs, _ in act for r in rs]).reshape(-1, prob.dim)
    rank = int(np.linalg.matrix_rank(all_rows, tol=1e-9)) if len(all_rows) else 0
    sizes = [len(rs) for _, rs, _ in act]
    choices = list(itertools.product(*[range(s) for s in sizes]))
    if len(choices) > max_choices:
        rng = np.random.default_rng(0)
        choices = [choices[k] for k in rng.choice(len(choices), max_choices, replace=False)]
    worst_res = 0.0
    min_lam = np.inf
    min_eig = np.inf
    second = True
    for ch in choices:
        rows = np.array([act[i][1][c] for i, c in enumerate(ch)]).reshape(-1, prob.dim)
        if len(rows) == 0:
            worst_res = np.inf
            continue
        lam, res = nnls(rows.T, g, maxiter=2000)
        worst_res = max(worst_res, res / gn)
        if (lam > 1e-8 * gn).any():
            min_lam = min(min_lam, float(lam[lam > 1e-8 * gn].min() / gn))
        # second order: Hessian of det on the directions keeping every contact that can
        # carry a positive multiplier on its facet (the critical cone's linear part). Try
        # the support of the NNLS multipliers first (a larger subspace: positive definite
        # there suffices); only if that fails find the union of all supports by LP.
        if tiling:
            second = False
            continue
        ev = _reduced_min_eig(rows[lam > 1e-8 * gn], h, prob.dim) / abs(det)
        if ev <= 1e-9:
            support = _multiplier_support(rows, g, lam)
            ev = _reduced_min_eig(rows[support], h, prob.dim) / abs(det)
        min_eig = min(min_eig, ev)
        if ev <= 1e-9:
            second = False
    first = bool(worst_res < 1e-8)
    return Optimality(
        contacts=contacts,
        rank=rank,
        choices=len(choices),
        kkt_residual=float(worst_res),
        min_multiplier=float(min_lam),
        reduced_hessian_min=float(min_eig),
        first_order=first,
        second_order=bool(second and first),
    )


# ---------------------------------------------------------------------------------------
# multistart search


@dataclass(frozen=True)
class SearchOutcome:
    """What a multistart search found (scaled units; basis columns)."""

    x: np.ndarray
    det: float
    density: float
    starts: int
    hits: int
    values: np.ndarray = field(repr=False)
    optimality: Optimality | None = None
    min_gauge: float = float("nan")


def _random_start(prob: _Problem, rng: np.random.Generator) -> np.ndarray:
    b = rng.normal(size=(3, 3))
    while abs(np.linalg.det(b)) < 1e-3:
        b = rng.normal(size=(3, 3))
    t = rng.normal(size=3) if prob.double else np.zeros(3)
    return prob.normalise(prob.join(b, t))


def _search(
    prob: _Problem,
    *,
    rng: np.random.Generator,
    min_starts: int,
    max_starts: int,
    hits_needed: int,
    progress: Callable[[int], object] | None,
    factor: float,
) -> SearchOutcome:
    best_x: np.ndarray | None = None
    best = np.inf
    values = []
    hits = 0
    for k in range(max_starts):
        try:
            x = _slp(prob, _random_start(prob, rng))
            x = _polish(prob, x)
        except (PackingError, np.linalg.LinAlgError):
            values.append(np.inf)  # a degenerate start; counted, never best
            continue
        d = prob.det(x)
        values.append(d)
        if d < best:
            best, best_x = d, x
        hits = int(np.sum(np.array(values) <= best * (1 + 1e-7)))
        if progress is not None:
            progress(k + 1)
        if k + 1 >= min_starts and hits >= hits_needed:
            break
    if best_x is None:  # pragma: no cover - max_starts >= 1 is checked by the caller
        raise PackingError("no start converged; raise max_starts.")
    best_x = _reduced(prob, best_x)
    opt = _optimality(prob, best_x)
    return SearchOutcome(
        x=best_x,
        det=best,
        density=factor * prob.body.volume / best,
        starts=len(values),
        hits=hits,
        values=np.array(values),
        optimality=opt,
        min_gauge=prob.min_gauge(best_x),
    )


def search_lattice(
    body: Body,
    *,
    rng: np.random.Generator,
    min_starts: int = 4,
    max_starts: int = 60,
    hits_needed: int = 3,
    progress: Callable[[int], object] | None = None,
) -> SearchOutcome:
    """Multistart SLP + Newton polish for the densest lattice packing (Algorithm B)."""
    prob = _Problem(body, double=False)
    return _search(
        prob,
        rng=rng,
        min_starts=min_starts,
        max_starts=max_starts,
        hits_needed=hits_needed,
        progress=progress,
        factor=1.0,
    )


def search_double_lattice(
    body: Body,
    *,
    rng: np.random.Generator,
    min_starts: int = 6,
    max_starts: int = 200,
    hits_needed: int = 3,
    progress: Callable[[int], object] | None = None,
) -> SearchOutcome:
    """Multistart SLP + Newton polish over (B, t) for the densest double-lattice packing."""
    prob = _Problem(body, double=True)
    return _search(
        prob,
        rng=rng,
        min_starts=min_starts,
        max_starts=max_starts,
        hits_needed=hits_needed,
        progress=progress,
        factor=2.0,
    )


# ---------------------------------------------------------------------------------------
# tightness: the optimum against its own contact family (Betke & Henk 2000, step of Alg. A)


@dataclass(frozen=True)
class Tightness:
    """Result of minimising ``det`` over the family of lattices sharing a contact pattern.

    The family: every basis ``B`` for which the given lattice vectors ``B z_k`` lie on the
    same facets of ``D`` as at the optimum (``a_{j_k} . B z_k = 1``) and inside ``D``; all other
    lattice vectors are ignored. If no member has a smaller determinant, the optimum is
    *tight* for this configuration.
    """

    points: int  # number of contact vectors defining the family
    family_dimension: int  # 9 - rank of the facet equations
    starts: int
    best_det_ratio: float  # smallest det found in the family / det of the optimum
    tight: bool
    best_basis: np.ndarray = field(repr=False, default_factory=lambda: np.eye(3))


def family_tightness(
    body: Body,
    basis: np.ndarray,
    z: np.ndarray,
    *,
    rng: np.random.Generator,
    starts: int = 8,
    facets: np.ndarray | None = None,
    target: float | None = None,
) -> Tightness:
    """Minimise ``det`` over the contact family of ``z`` (columns basis, working frame).

    ``facets`` fixes the facet of each ``z`` (default: the facet each lies on at ``basis``);
    ``target`` is the value to beat (default ``|det basis|``): descent stops below it.
    """
    a = body.facets_d
    b0 = np.array(basis, dtype=np.float64)
    det0 = float(np.linalg.det(b0))
    sign = 1.0 if det0 > 0 else -1.0
    p = z @ b0.T  # (k, 3)
    vals = p @ a.T  # (k, F)
    jk = np.argmax(vals, axis=1) if facets is None else np.asarray(facets)
    eq = (a[jk][:, :, None] * z[:, None, :]).reshape(len(z), 9)  # (k, 9)
    ineq = (a[None, :, :, None] * z[:, None, None, :]).reshape(-1, 9)  # (k*F, 9)
    rank = int(np.linalg.matrix_rank(eq, tol=1e-9))
    x0 = b0.ravel()
    floor_det = body.volume_d / 8.0  # Minkowski's convex body theorem

    def det(x: np.ndarray) -> float:
        return sign * float(np.linalg.det(x.reshape(3, 3)))

    def grad(x: np.ndarray) -> np.ndarray:
        m = x.reshape(3, 3)
        return np.asarray(sign * (np.linalg.det(m) * np.linalg.inv(m).T).ravel())

    eq_ind = _independent_rows(eq)

    def newton(x: np.ndarray) -> np.ndarray | None:
        """Critical point of det on the affine family (inequalities ignored), if near."""
        r = len(eq_ind)
        mu = np.linalg.lstsq(eq_ind.T, grad(x), rcond=None)[0]
        for _ in range(20):
            m = np.linalg.inv(x.reshape(3, 3))
            dd = np.linalg.det(x.reshape(3, 3))
            h = sign * dd * (np.einsum("ki,lj->ikjl", m, m) - np.einsum("kj,li->ikjl", m, m))
            jac = np.block([[h.reshape(9, 9), -eq_ind.T], [eq_ind, np.zeros((r, r))]])
            f = np.concatenate([grad(x) - eq_ind.T @ mu, eq_ind @ x - 1.0])
            step = np.linalg.lstsq(jac, -f, rcond=None)[0]
            x, mu = x + step[:9], mu + step[9:]
            if np.max(np.abs(step)) < 1e-14:
                break
        if not np.all(np.isfinite(x)) or np.max(ineq @ x) > 1.0 + 1e-9:
            return None
        return x

    def descend(x: np.ndarray) -> tuple[float, np.ndarray]:
        rho = 0.05
        d = det(x)
        for it in range(300):
            if it % 10 == 9:
                xn = newton(x)
                if xn is not None and 0 < det(xn) <= d:
                    return det(xn), xn
            if d <= 0.5 * floor_det or d < goal * (1 - 1e-7):
                return d, x  # below the optimum (not tight), or collapsing to a flat lattice
            if d <= goal * (1 + 1e-9):
                return d, x  # reached the optimum's value
            g = grad(x)
            dx = _solve_lp_core(g, ineq, 1.0 - ineq @ x, rho, eq, np.zeros(len(eq)))
            if dx is None:
                rho *= 0.3
                if rho < 1e-10:
                    break
                continue
            pred = -float(g @ dx)
            if pred < 1e-12 * d:
                break
            dn = det(x + dx)
            if d - dn >= 0.1 * pred:
                x, d = x + dx, dn
                rho = min(2 * rho, 0.2)
            else:
                rho *= 0.3
                if rho < 1e-10:
                    break
        return d, x

    goal = abs(det0) if target is None else float(target)
    best, best_x = descend(x0.copy())
    done = 1
    for _ in range(max(starts - 1, 0)):
        # a vertex of the family polytope in a random direction, within a box around x0
        c = rng.normal(size=9)
        xs = _solve_lp_core(c, ineq, np.ones(len(ineq)), 2.0, eq, np.ones(len(eq)), centre=x0)
        if xs is None or det(xs) <= 0:
            continue
        val, xv = descend(xs)
        if val < best:
            best, best_x = val, xv
        done += 1
        if best < goal * (1 - 1e-7):
            break
    ratio = best / abs(det0)
    return Tightness(
        points=len(z),
        family_dimension=9 - rank,
        starts=done,
        best_det_ratio=float(ratio),
        tight=bool(best >= goal * (1.0 - 1e-7)),
        best_basis=best_x.reshape(3, 3),
    )


# ---------------------------------------------------------------------------------------
# Minkowski's configuration of a critical lattice


def minkowski_configuration(contacts: np.ndarray) -> tuple[str, np.ndarray] | None:
    """Find a basis of contact vectors in one of Minkowski's two patterns.

    Parameters
    ----------
    contacts : (k, 3) int array
        Lattice coordinates of the contact vectors (one of each +- pair).

    Returns
    -------
    (kind, U) or None
        ``kind`` is ``"i"`` (``b1, b2, b3, b1+b2, b2+b3, b1+b2+b3`` are contacts) or ``"ii"``
        (``b1, b2, b3, b1+b2, b1+b3, b2+b3``); ``U`` (3, 3) int has the basis as columns in the
        coordinates of the input. Minkowski (1904) showed one of the two exists for every
        critical lattice of a symmetric convex body in 3-D.
    """
    c = np.asarray(contacts, dtype=np.int64)
    allc = np.vstack([c, -c])
    keys = {tuple(v) for v in allc.tolist()}
    for kind, extra in (("i", [(0, 1), (1, 2), (0, 1, 2)]), ("ii", [(0, 1), (0, 2), (1, 2)])):
        for i, j, k in itertools.product(range(len(allc)), repeat=3):
            u = np.column_stack([allc[i], allc[j], allc[k]])
            if abs(round(np.linalg.det(u))) != 1:
                continue
            if all(tuple(u[:, list(s)].sum(axis=1).tolist()) in keys for s in extra):
                return kind, u
    return None
