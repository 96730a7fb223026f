"""Enumeration of Minkowski configurations: an independent check of a densest lattice.

By Minkowski (1904) a critical lattice of a symmetric convex body ``D`` in 3-D has a basis
``b1, b2, b3`` with six vectors on the boundary of ``D``: pattern (i)
``c1, c2, c3, c2-c1, c3-c1, c3-c2`` with ``c1 = b1, c2 = b1+b2, c3 = b1+b2+b3`` (the edge
vectors of a simplex), or pattern (ii) ``b1, b2, b3, b1+b2, b1+b3, b2+b3``. Betke & Henk
(2000) turn this into an algorithm: assign a facet of ``D`` to each of the six vectors, keep
the assignments that can be realised, and minimise ``|det|`` over each resulting family of
lattices, ignoring all other lattice vectors. The smallest value over all families is a
lower bound for the critical determinant; a family minimiser that is admissible is a
packing lattice.

This module implements that enumeration as a cross-check of the search in
:mod:`habit.lattice_packing`: with the search's determinant as incumbent, every family whose
minimum is not below it is *resolved*. A family whose minimiser is below the incumbent but
not admissible is branched once on the offending lattice vector (it must lie outside the
interior of ``D``: we try it on each facet); anything still open is reported. Families are
minimised numerically (sequential LP from several points of the family), so the check is
strong evidence, not a proof. Practical for difference bodies with up to about 20 facets.

References
----------
H. Minkowski, Nachr. Ges. Wiss. Göttingen (1904) 311-355; U. Betke and M. Henk, Comput. Geom.
16 (2000) 157-186.
"""

from __future__ import annotations

import itertools
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from habit import lattice_packing as lp

__all__ = ["EnumerationCheck", "facet_symmetries", "triangle_table", "enumerate_configurations"]

# edge vectors of the simplex {0, c1, c2, c3} in coordinates of (c1, c2, c3)
_W_I = np.array([[1, 0, 0], [0, 1, 0], [0, 0, 1], [-1, 1, 0], [-1, 0, 1], [0, -1, 1]], float)
_EDGES_I = [(0, 1), (0, 2), (0, 3), (1, 2), (1, 3), (2, 3)]
# pattern (ii) in coordinates of (b1, b2, b3)
_W_II = np.array([[1, 0, 0], [0, 1, 0], [0, 0, 1], [1, 1, 0], [1, 0, 1], [0, 1, 1]], float)


@dataclass(frozen=True)
class EnumerationCheck:
    """Outcome of the configuration enumeration against an incumbent determinant."""

    facets: int  # facets of D
    symmetries: int  # linear symmetries of D found (facet permutations)
    configurations: int  # distinct feasible configurations (types i and ii) after symmetry
    resolved: int  # families whose minimum is not below the incumbent
    open: int  # families neither resolved nor improved (after one branching level)
    improved: bool  # an admissible lattice denser than the incumbent was found
    best_ratio: float  # smallest admissible determinant found / incumbent (<= 1 if improved)
    lower_ratio: float  # smallest family minimum over resolved/branched families / incumbent

    @property
    def confirms(self) -> bool:
        """Every configuration resolved and nothing denser found."""
        return self.open == 0 and not self.improved


def facet_symmetries(a: np.ndarray, tol: float = 1e-8) -> np.ndarray:
    """Permutations of the facets of ``D`` induced by its orthogonal symmetries.

    Returns
    -------
    (G, F) int array
        Row g maps facet j to facet ``perms[g, j]``; includes the identity and ``-I``.
    """
    f = len(a)
    norms = np.linalg.norm(a, axis=1)
    i0 = 0
    i1 = int(np.argmin(np.abs(a @ a[i0]) / (norms * norms[i0]) + (norms != norms) * 9))
    cr = np.abs(np.cross(a[i0], a[i1]) @ a.T)
    i2 = int(np.argmax(cr))
    base = a[[i0, i1, i2]]  # (3, 3) rows
    g0 = base @ base.T
    binv = np.linalg.inv(base)
    gram = a @ a.T
    perms = []
    for i in np.nonzero(np.abs(gram.diagonal() - g0[0, 0]) < tol)[0]:
        for j in np.nonzero(np.abs(gram[i] - g0[0, 1]) < tol)[0]:
            if abs(gram[j, j] - g0[1, 1]) > tol:
                continue
            for k in np.nonzero(
                (np.abs(gram[i] - g0[0, 2]) < tol) & (np.abs(gram[j] - g0[1, 2]) < tol)
            )[0]:
                if abs(gram[k, k] - g0[2, 2]) > tol:
                    continue
                m = binv @ a[[i, j, k]]  # a_new = a_old @ m  (rows)
                img = a @ m
                d = np.linalg.norm(img[:, None, :] - a[None, :, :], axis=-1)  # (F, F)
                p = np.argmin(d, axis=1)
                if np.all(d[np.arange(f), p] < 1e-7) and len(set(p.tolist())) == f:
                    perms.append(p)
    out = np.unique(np.array(perms, dtype=np.int64), axis=0)
    return out


def _opposite(a: np.ndarray) -> np.ndarray:
    d = np.linalg.norm(a[:, None, :] + a[None, :, :], axis=-1)
    return np.asarray(np.argmin(d, axis=1))


def triangle_table(a: np.ndarray, perms: np.ndarray) -> np.ndarray:
    """``T[i, j, k]``: some ``p`` on facet i and ``q`` on facet j have ``q - p`` on facet k.

    Facets are closed (``D`` itself plus the facet plane). One LP per orbit representative
    of the ordered pair ``(i, j)`` under the symmetries and per ``k``.
    """
    f = len(a)
    t = np.zeros((f, f, f), dtype=bool)
    done = np.zeros((f, f), dtype=bool)
    ineq = np.zeros((3 * f, 6))
    ineq[:f, :3] = a  # A p <= 1
    ineq[f : 2 * f, 3:] = a  # A q <= 1
    ineq[2 * f :, :3] = -a  # A (q - p) <= 1
    ineq[2 * f :, 3:] = a
    for i in range(f):
        for j in range(f):
            if done[i, j]:
                continue
            row = np.zeros(f, dtype=bool)
            for k in range(f):
                eq = np.zeros((3, 6))
                eq[0, :3] = a[i]
                eq[1, 3:] = a[j]
                eq[2, :3] = -a[k]
                eq[2, 3:] = a[k]
                sol = lp._solve_lp_core(np.zeros(6), ineq, np.ones(3 * f), 2.0, eq, np.ones(3))
                row[k] = sol is not None
            for p in perms:
                t[p[i], p[j], p] = row
                done[p[i], p[j]] = True
    return t


def _relabelings_i() -> list[tuple[np.ndarray, np.ndarray]]:
    """For each of the 24 vertex relabelings of the simplex: (source edge, sign flip)."""
    out = []
    for pi in itertools.permutations(range(4)):
        src, flip = [], []
        for i, j in _EDGES_I:
            u, v = pi[i], pi[j]
            src.append(_EDGES_I.index((min(u, v), max(u, v))))
            flip.append(u > v)
        out.append((np.array(src), np.array(flip)))
    return out


def _relabelings_ii() -> list[tuple[np.ndarray, np.ndarray]]:
    """Return the 6 permutations of b1, b2, b3 acting on the pattern-(ii) slots."""
    out = []
    pairs = [(0, 1), (0, 2), (1, 2)]
    for pi in itertools.permutations(range(3)):
        src = [pi[0], pi[1], pi[2]]
        for i, j in pairs:
            u, v = pi[i], pi[j]
            src.append(3 + pairs.index((min(u, v), max(u, v))))
        out.append((np.array(src), np.zeros(6, dtype=bool)))
    return out


def _canonical(
    conf: np.ndarray, perms: np.ndarray, opp: np.ndarray, rel: list[tuple[np.ndarray, np.ndarray]]
) -> np.ndarray:
    """Smallest code of each configuration over symmetries x relabelings; (N, 6) -> (N,)."""
    f = perms.shape[1]
    weights = f ** np.arange(5, -1, -1, dtype=np.int64)
    best = np.full(len(conf), np.iinfo(np.int64).max)
    for src, flip in rel:
        c = conf[:, src]
        c = np.where(flip[None, :], opp[c], c)  # (N, 6)
        imgs = perms[:, c]  # (G, N, 6)
        codes = imgs @ weights  # (G, N)
        best = np.minimum(best, codes.min(axis=0))
    return best


def _configurations(t: np.ndarray, perms: np.ndarray, opp: np.ndarray, kind: str) -> np.ndarray:
    f = t.shape[0]
    reps = sorted({int(perms[:, i].min()) for i in range(f)})  # one facet per orbit
    out = []
    for s1 in reps:
        for s2 in range(f):
            for s3 in range(f):
                if kind == "i":
                    s4s = np.nonzero(t[s1, s2])[0]
                    s5s = np.nonzero(t[s1, s3])[0]
                    ok6 = t[s2, s3]
                    for s4 in s4s:
                        for s5 in s5s:
                            for s6 in np.nonzero(ok6 & t[s4, s5])[0]:
                                out.append((s1, s2, s3, s4, s5, s6))
                else:
                    for s4 in np.nonzero(t[opp[s1], s2])[0]:
                        for s5 in np.nonzero(t[opp[s1], s3])[0]:
                            for s6 in np.nonzero(t[opp[s2], s3])[0]:
                                out.append((s1, s2, s3, s4, s5, s6))
    conf = np.array(out, dtype=np.int64).reshape(-1, 6)
    if not len(conf):
        return conf
    rel = _relabelings_i() if kind == "i" else _relabelings_ii()
    codes = np.concatenate(
        [_canonical(conf[k : k + 2000], perms, opp, rel) for k in range(0, len(conf), 2000)]
    )
    _, idx = np.unique(codes, return_index=True)
    return conf[np.sort(idx)]


def _family_min(
    body: lp.Body,
    w: np.ndarray,
    facets: np.ndarray,
    incumbent: float,
    rng: np.random.Generator,
    starts: int,
) -> tuple[float, np.ndarray | None]:
    """Smallest |det| found in the family (all signs), and its basis (columns)."""
    a = body.facets_d
    eq = (a[facets][:, :, None] * w[:, None, :]).reshape(len(w), 9)
    ineq = (a[None, :, :, None] * w[:, None, None, :]).reshape(-1, 9)
    best, best_x = np.inf, None
    for _ in range(starts):
        c = rng.normal(size=9)
        xs = lp._solve_lp_core(c, ineq, np.ones(len(ineq)), 3.0, eq, np.ones(len(eq)))
        if xs is None:
            return np.inf, None  # the family is empty
        d0 = float(np.linalg.det(xs.reshape(3, 3)))
        if abs(d0) < 1e-12:
            continue
        tight = lp.family_tightness(
            body, xs.reshape(3, 3), w, rng=rng, starts=1, facets=facets, target=incumbent
        )
        val = tight.best_det_ratio * abs(d0)
        if val < best:
            best, best_x = val, tight.best_basis
    return best, best_x


def enumerate_configurations(
    body: lp.Body,
    incumbent: float,
    *,
    rng: np.random.Generator,
    starts: int = 3,
    progress: Callable[[int], object] | None = None,
) -> EnumerationCheck:
    """Check an incumbent critical determinant against every Minkowski configuration.

    Parameters
    ----------
    body : Body
        Prepared solid (see :func:`habit.lattice_packing.make_body`).
    incumbent : float
        Determinant of the best packing lattice known (working frame).
    rng : numpy Generator
        For the start points inside each family.
    starts : int
        Start points per family.
    progress : callable, optional
        Called with the number of families done.

    Returns
    -------
    EnumerationCheck
    """
    a = body.facets_d
    perms = facet_symmetries(a)
    opp = _opposite(a)
    t = triangle_table(a, perms)
    prob = lp._Problem(body, double=False)
    resolved = open_ = 0
    improved = False
    best_adm = incumbent
    lower = np.inf
    total = 0
    for kind, w in (("i", _W_I), ("ii", _W_II)):
        conf = _configurations(t, perms, opp, kind)
        for sigma in conf:
            total += 1
            val, x = _family_min(body, w, sigma, incumbent, rng, starts)
            if progress is not None:
                progress(total)
            if not np.isfinite(val):
                resolved += 1  # empty family
                continue
            if val >= incumbent * (1 - 1e-7):
                resolved += 1
                lower = min(lower, val)
                continue
            assert x is not None
            m = prob.min_gauge(x.ravel()) if abs(np.linalg.det(x)) > 1e-12 else 0.0
            if m >= 1 - 1e-9:
                improved = True
                best_adm = min(best_adm, val)
                continue
            # branch once: the vector that enters int D must lie on some facet
            ok = _branch(body, prob, w, sigma, x, incumbent, rng, starts)
            if ok is None:
                open_ += 1
            else:
                resolved += 1
                lower = min(lower, ok)
    return EnumerationCheck(
        facets=len(a),
        symmetries=len(perms),
        configurations=total,
        resolved=resolved,
        open=open_,
        improved=improved,
        best_ratio=best_adm / incumbent,
        lower_ratio=lower / incumbent if np.isfinite(lower) else float("inf"),
    )


def _branch(
    body: lp.Body,
    prob: lp._Problem,
    w: np.ndarray,
    sigma: np.ndarray,
    x: np.ndarray,
    incumbent: float,
    rng: np.random.Generator,
    starts: int,
) -> float | None:
    """Add the deepest inadmissible vector on each facet; None if any branch stays below."""
    z = lp.lattice_points(lp.lll_reduce(x)[0], 1.0)
    if not len(z):
        return None
    # express in the family's own coordinates
    _, u = lp.lll_reduce(x)
    zz = z @ u.T  # lattice coords w.r.t. x's columns
    g = lp.gauge(z @ lp.lll_reduce(x)[0].T, body.facets_d)
    znew = zz[int(np.argmin(g))]
    w2 = np.vstack([w, znew])
    low = np.inf
    for f in range(len(body.facets_d)):
        val, _ = _family_min(body, w2, np.append(sigma, f), incumbent, rng, starts)
        if val < incumbent * (1 - 1e-7):
            return None
        low = min(low, val)
    return float(low)
