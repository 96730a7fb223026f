"""Private kernel: many Wulff shapes of one plane set at once, without a hull per shape.

The shape is ``W = {x : n_i . x <= gamma_i}`` for unit normals ``n_i`` and positive
energies (central distances) ``gamma_i``. Every edge of ``W`` lies on the line where two
planes ``r`` and ``j`` meet. We write that line as ``x(t) = gamma_r u + gamma_j w + t d``
with ``d`` the unit direction ``n_r x n_j / |n_r x n_j|`` and ``u``, ``w`` the fixed vectors
in the span of ``n_r``, ``n_j`` with ``n_r.u = 1, n_j.u = 0, n_r.w = 0, n_j.w = 1``.
Each other plane ``k`` then says ``t (n_k.d) <= gamma_k - gamma_r (n_k.u) - gamma_j (n_k.w)``:
an upper bound on ``t`` when ``n_k.d > 0``, a lower bound when ``n_k.d < 0``, and, when the
plane is parallel to the line, either nothing or "the line lies outside". The part of the
line inside ``W`` is the interval between the largest lower and the smallest upper bound;
its length (or zero) is the length of the edge between faces ``r`` and ``j``.

Every bound is a *linear* function of the energies, so for a fixed plane set all bounds of
a whole stack of energy vectors come from one matrix product; the edge lengths are then
row-wise minima and maxima. With edge lengths known, the area of face ``r`` is
``A_r = 1/2 sum_j h_rj l_rj`` where ``h_rj = (gamma_j - (n_r.n_j) gamma_r) / sin(theta_rj)`` is
the signed distance, inside plane ``r``, from the foot of the perpendicular from the origin
to the edge line (the polygon split into triangles from that foot point), and the volume is
``V = 1/3 sum_r gamma_r A_r`` (pyramids from the origin).

Symmetry. When the plane set is closed under a group of orthogonal operations and the
energies are equal within each orbit (a form), all faces of a form have the same area, so
only one representative face per form is needed; for that face, partners ``j`` related by
an operation that fixes the face give identical edges, so one partner per orbit of the
face's stabiliser is enough (weighted by the orbit size). Lines related by any operation
have the same length, so each orbit of unordered plane pairs is clipped only once.

Ties. When more than two planes pass through one edge line, every pair through that line
finds the same segment. On face ``r`` the segment must be counted once per side: partners
whose in-plane outward direction points the same way are counted with weight ``1/m`` (``m``
of them); partners from the opposite side (then the face has collapsed onto the line)
cancel. The weights are computed per shape, since ties happen only at special energies.

Whether a parallel plane ``k`` passes through the line of ``r`` and ``j`` is judged by
``D = sin(theta_rj) * b_k``, where ``b_k`` is the line's distance from plane ``k``: ``D`` is
(up to sign) the determinant of the three planes in the cross-section, so the pairs
``(r, j)``, ``(r, k)`` and ``(j, k)`` always agree on whether the three planes meet in one line
(``|D| <= TIE``) and, if not, which plane cuts which line away.

Self-check. For every face the edge vectors must close: the sum over its edges of
``l_rj * m_rj`` (``m_rj`` the in-plane outward unit normal of the edge) is zero. Shapes that
fail this check (nearly degenerate input, rounding) are marked, and the caller recomputes
them with a convex hull.

References
----------
G. Wulff, "Zur Frage der Geschwindigkeit des Wachsthums und der Auflösung der
Krystallflächen", Z. Kristallogr. 34, 449-530 (1901).
C. B. Barber, D. P. Dobkin, H. Huhdanpaa, "The quickhull algorithm for convex hulls",
ACM Trans. Math. Software 22, 469-483 (1996) (the hull route used as fallback).
"""

from __future__ import annotations

import contextlib
import functools
from collections.abc import Callable, Iterator
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import NDArray

__all__ = [
    "IntervalPlan",
    "build_plan",
    "solve_chunk",
    "hull_shape",
    "TIE",
    "single_thread_blas",
]

#: Two energies-normalised bound values closer than this (relative to the largest energy of
#: the shape) are an exact tie: the plane passes through the edge line.
TIE = 1e-11
#: |n_k . d| below this: plane ``k`` is parallel to the line with direction ``d``.
_PARALLEL = 1e-9
#: Normals closer than this (1 - cos) are the same direction.
_SAME = 1e-12
#: A face's edge vectors must close to this fraction of its perimeter (plus a floor).
_CLOSURE = 1e-9
#: Padding value for empty parallel-plane groups (never a violation, never a tie).
_BIG = 1e30

F64 = NDArray[np.float64]
I64 = NDArray[np.int64]


@dataclass(frozen=True, slots=True)
class IntervalPlan:
    """Everything about a plane set that does not depend on the energies.

    Attributes
    ----------
    normals : (N, 3) float array
        Unit normals, Cartesian.
    family : (N,) int array
        Form (orbit) number of each plane, ``0..F-1``.
    reps : (F,) int array
        One representative plane per form.
    family_size : (F,) int array
        Number of planes in each form.
    operations : (G, 3, 3) float array
        The closed group of Cartesian operations used.
    permutation : (G, N) int array
        ``permutation[g, i]`` is the plane that operation ``g`` maps plane ``i`` to.
    n_lines, n_contrib : int
        Lines clipped per shape and (face, partner) contributions summed per shape.
    matrix : (F + 1, K) float array
        All linear forms; the last row multiplies a column of ones.
    pair_line : (N, N) int array
        Index of the line of each plane pair (-1: parallel or same plane).
    """

    normals: F64
    family: I64
    reps: I64
    family_size: I64
    operations: F64
    permutation: I64
    n_lines: int
    n_contrib: int
    matrix: F64
    ku: int
    kl: int
    kk: int
    kt: int
    slices: tuple[slice, slice, slice, slice, slice]
    contrib_line: I64
    face_matrix: F64
    check_matrix: F64
    pair_line: I64
    estimated_forms: int = 0

    @property
    def form_members(self) -> list[I64]:
        """The planes of each orbit (form), as index arrays."""
        return [np.nonzero(self.family == f)[0] for f in range(len(self.reps))]

    @property
    def n_planes(self) -> int:
        """Number of planes N."""
        return int(self.normals.shape[0])

    @property
    def n_families(self) -> int:
        """Number of forms F."""
        return int(self.reps.shape[0])

    @property
    def cost(self) -> int:
        """Number of linear forms evaluated per shape (a cost estimate)."""
        return int(self.matrix.shape[1]) if self.usable else self.estimated_forms

    @property
    def usable(self) -> bool:
        """False when the bounds were not built (too many; only the hull route is open)."""
        return self.estimated_forms >= 0 and self.matrix.shape[1] > 0


# --------------------------------------------------------------------------- symmetry


def _close_group(ops: F64, atol: float = 1e-8, limit: int = 2000) -> F64:
    """Close a set of orthogonal 3x3 matrices under multiplication (identity included)."""
    gens = [np.asarray(o, dtype=float) for o in ops]
    group = [np.eye(3)]
    keys = {tuple(np.round(np.eye(3), 6).ravel())}
    frontier = [np.eye(3)]
    while frontier:
        nxt = []
        for g in frontier:
            for s in gens:
                cand = s @ g
                key = tuple(np.round(cand, 6).ravel() + 0.0)
                if key in keys:
                    continue
                keys.add(key)
                group.append(cand)
                nxt.append(cand)
                if len(group) > limit:
                    raise ValueError(f"the operations generate more than {limit} elements")
        frontier = nxt
    return np.array(group)


def _permutations(normals: F64, ops: F64, atol: float) -> I64:
    """``perm[g, i]`` = index of the plane ``ops[g] @ n_i``; raise if the set is not closed."""
    moved = np.einsum("gab,nb->gna", ops, normals)  # (G, N, 3)
    cos = np.einsum("gna,ma->gnm", moved, normals)  # (G, N, N)
    perm = np.argmax(cos, axis=2)  # (G, N)
    best = np.take_along_axis(cos, perm[..., None], axis=2)[..., 0]
    if np.any(best < 1.0 - atol):
        g, i = np.argwhere(best < 1.0 - atol)[0]
        raise ValueError(
            f"operation {int(g)} maps plane {int(i)} onto no plane of the set; "
            "the operations must map the plane set onto itself"
        )
    out: I64 = perm.astype(np.int64)
    return out


def _orbits(perms: I64) -> I64:
    """Orbit label (smallest member) of each point under a permutation group (G, n)."""
    out: I64 = perms.min(axis=0).astype(np.int64)
    return out


# --------------------------------------------------------------------------- plan


def _line_frame(nr: F64, nj: F64) -> tuple[F64, F64, F64, float, float]:
    """Direction d, vectors u, w (see module docstring), cos and sin of the angle."""
    c = float(nr @ nj)
    cross = np.array(
        [
            nr[1] * nj[2] - nr[2] * nj[1],
            nr[2] * nj[0] - nr[0] * nj[2],
            nr[0] * nj[1] - nr[1] * nj[0],
        ]
    )
    s = float(np.sqrt(cross @ cross))
    d = cross / s
    u = (nr - c * nj) / (s * s)
    w = (nj - c * nr) / (s * s)
    return d, u, w, c, s


def _prune(cols: list[F64], upper: bool) -> list[F64]:
    """Drop bounds that can never be the active one for positive energies.

    An upper bound with coefficients ``b`` is never smaller than one with ``a`` when
    ``b - a >= 0`` elementwise (the energies are positive); equal columns are kept once.
    """
    if len(cols) <= 1:
        return cols
    arr = np.array(cols)  # (K, F+1)
    if not upper:
        arr = -arr
    # below[i, j]: bound j is never above bound i; same[i, j]: the two are equal
    below = np.all(arr[None, :, :] <= arr[:, None, :] + 1e-14, axis=2)  # (K, K)
    same = below & below.T
    earlier = np.tri(len(arr), k=-1, dtype=bool)  # j < i
    dominated = np.any(below & ~same, axis=1) | np.any(same & earlier, axis=1)
    return [c for c, d in zip(cols, dominated, strict=True) if not d]


def _form(coef: dict[int, float], family: I64, nf: int, const: float = 0.0) -> F64:
    """Turn a linear form over plane energies into one over form energies plus a constant."""
    out = np.zeros(nf + 1)
    for plane, value in coef.items():
        out[family[plane]] += value
    out[nf] = const
    return out


def build_plan(
    normals: Any, operations: Any = None, atol: float = 1e-9, max_forms: int | None = None
) -> IntervalPlan:
    """Precompute the line bounds of a plane set (optionally reduced by symmetry).

    Parameters
    ----------
    normals : (N, 3) array
        Unit normals (normalised here).
    operations : (G, 3, 3) array or None
        Cartesian orthogonal operations mapping the plane set onto itself; closed into a
        group here. None: no symmetry (every plane its own form).
    atol : float
        Tolerance on ``1 - cos`` when matching planes under the operations.
    max_forms : int, optional
        When the lines would need more linear forms than this (estimated before any is
        built), build none: the plan then serves only the hull route (``usable`` False).

    Returns
    -------
    IntervalPlan
    """
    n = np.asarray(normals, dtype=float)
    n = n / np.linalg.norm(n, axis=1, keepdims=True)
    nplanes = len(n)
    if operations is None:
        ops = np.eye(3)[None]
    else:
        gens = np.asarray(operations, dtype=float)
        _permutations(n, gens, atol)  # the generators must map the set onto itself
        ops = _close_group(gens)
    perm = _permutations(n, ops, atol)  # (G, N)
    family_label = _orbits(perm)
    reps_sorted = np.unique(family_label)
    fam_index = {int(r): i for i, r in enumerate(reps_sorted)}
    family = np.array([fam_index[int(x)] for x in family_label], dtype=np.int64)
    nf = len(reps_sorted)
    reps = reps_sorted.astype(np.int64)
    family_size = np.bincount(family, minlength=nf).astype(np.int64)
    cosmat = n @ n.T  # (N, N)
    antiparallel = cosmat < -1.0 + _SAME
    same = cosmat > 1.0 - _SAME

    # canonical key of the unordered pair {a, b}: smallest sorted image under the group
    ia, ib = np.nonzero(~antiparallel & ~same)  # ordered pairs with a line
    imgs_a = perm[:, ia]  # (G, P)
    imgs_b = perm[:, ib]
    lo = np.minimum(imgs_a, imgs_b)
    hi = np.maximum(imgs_a, imgs_b)
    code = lo * nplanes + hi  # (G, P)
    key = code.min(axis=0)  # (P,)
    line_keys, inverse = np.unique(key, return_inverse=True)
    pair_line = -np.ones((nplanes, nplanes), dtype=np.int64)
    pair_line[ia, ib] = inverse
    nlines = len(line_keys)
    estimate = nlines * (nplanes - 2)
    if max_forms is not None and estimate > max_forms:
        nf_ = len(reps)
        empty = np.zeros((nf_ + 1, 0))
        zero = slice(0, 0)
        for arr in (n, family, reps, family_size, ops, perm, pair_line):
            arr.setflags(write=False)
        return IntervalPlan(
            normals=n, family=family, reps=reps, family_size=family_size, operations=ops,
            permutation=perm, n_lines=nlines, n_contrib=0, matrix=empty, ku=0, kl=0, kk=0,
            kt=0, slices=(zero, zero, zero, zero, zero), contrib_line=np.zeros(0, np.int64),
            face_matrix=np.zeros((0, nf_)), check_matrix=np.zeros((0, 4 * nf_)),
            pair_line=pair_line, estimated_forms=estimate,
        )  # fmt: skip

    upper_groups: list[list[F64]] = []
    lower_groups: list[list[F64]] = []
    kill_groups: list[list[F64]] = []
    rows = np.arange(nplanes)
    onehot = np.eye(nf + 1)[family]  # (N, F+1): plane energy -> form energy

    def forms_for(a: int, b: int, u: F64, w: F64) -> F64:
        """(N, F+1): the linear form gamma_k - gamma_a (n_k.u) - gamma_b (n_k.w) per plane k."""
        out = onehot.copy()
        out[:, family[a]] -= n @ u
        out[:, family[b]] -= n @ w
        return out

    for keyval in line_keys:
        a, b = divmod(int(keyval), nplanes)
        d, u, w, _, s_ab = _line_frame(n[a], n[b])
        ak = n @ d  # (N,)
        coef = forms_for(a, b, u, w)  # (N, F+1)
        other = (rows != a) & (rows != b)
        parallel = other & (np.abs(ak) < _PARALLEL)
        # a plane opposite to a or b never cuts the line (gamma_k + gamma_a > 0)
        parallel &= ~antiparallel[:, a] & ~antiparallel[:, b]
        cutting = other & (np.abs(ak) >= _PARALLEL)
        scaled = coef / np.where(cutting, ak, 1.0)[:, None]
        ups = list(scaled[cutting & (ak > 0)])
        lows = list(scaled[cutting & (ak < 0)])
        if not ups or not lows:
            raise ValueError(
                "the planes do not enclose a bounded solid (the line where planes "
                f"{a} and {b} meet is not cut on both sides)"
            )
        upper_groups.append(_prune(ups, True))
        lower_groups.append(_prune(lows, False))
        # parallel planes are judged by s_ab * b (see _tie_note), a minimum like upper bounds
        kill_groups.append(_prune(list(s_ab * coef[parallel]), True))

    # contributions: representative face r of each form, one partner per stabiliser orbit
    contrib_line: list[int] = []
    contrib_face: list[int] = []
    contrib_mult: list[int] = []
    h_forms: list[F64] = []
    tie_groups: list[list[F64]] = []
    msum: list[F64] = []
    for f, r in enumerate(reps):
        stab = perm[perm[:, r] == r]  # (H, N)
        partner_label = _orbits(stab)
        for j in np.unique(partner_label):
            j = int(j)
            if j == r or pair_line[r, j] < 0:
                continue
            members = np.nonzero(partner_label == j)[0]
            d, u, w, c, s = _line_frame(n[r], n[j])
            contrib_line.append(int(pair_line[r, j]))
            contrib_face.append(f)
            contrib_mult.append(len(members))
            coef_h = {j: 1.0 / s}
            coef_h[int(r)] = coef_h.get(int(r), 0.0) - c / s
            h_forms.append(_form(coef_h, family, nf))
            m_j = n[j] - c * n[r]
            m_k = n - np.outer(n @ n[r], n[r])  # (N, 3) in-plane directions of the planes
            same_side = (
                (rows != r)
                & (rows != j)
                & (np.abs(n @ d) < _PARALLEL)
                & ~antiparallel[:, r]
                & ~antiparallel[:, j]
                & (m_k @ m_j > 0)
            )
            ties = list(s * forms_for(int(r), j, u, w)[same_side])
            tie_groups.append(ties)
            # outward in-plane normals of the edges of the whole stabiliser orbit
            mm = n[members] - np.outer(cosmat[r, members], n[r])
            mm /= np.linalg.norm(mm, axis=1, keepdims=True)
            msum.append(mm.sum(axis=0))

    def pad(groups: list[list[F64]], neutral: F64 | None) -> tuple[F64, int]:
        width = max((len(g) for g in groups), default=0)
        if width == 0:
            return np.zeros((nf + 1, 0)), 0
        cols = []
        for g in groups:
            filler = neutral if neutral is not None else g[0]
            cols.extend(g + [filler] * (width - len(g)))
        return np.array(cols).T, width

    neutral = np.zeros(nf + 1)
    neutral[nf] = _BIG
    mu, ku = pad(upper_groups, None)
    ml, kl = pad(lower_groups, None)
    mk, kk = pad(kill_groups, neutral)
    mt, kt = pad(tie_groups, neutral)
    mh = np.array(h_forms).T.reshape(nf + 1, -1)
    blocks = [mu, ml, mk, mh, mt]
    edges = np.cumsum([0] + [b.shape[1] for b in blocks])
    slices = tuple(slice(int(edges[i]), int(edges[i + 1])) for i in range(5))
    matrix = np.ascontiguousarray(np.concatenate(blocks, axis=1))
    ncontrib = len(contrib_line)
    face_matrix = np.zeros((ncontrib, nf))
    face_matrix[np.arange(ncontrib), contrib_face] = 0.5 * np.array(contrib_mult)
    # check: per face the closure vector (3 columns) and the perimeter (1 column)
    check = np.zeros((ncontrib, 4 * nf))
    for c_i in range(ncontrib):
        f = contrib_face[c_i]
        check[c_i, 3 * f : 3 * f + 3] = msum[c_i]
        check[c_i, 3 * nf + f] = contrib_mult[c_i]
    plan = IntervalPlan(
        normals=n,
        family=family,
        reps=reps,
        family_size=family_size,
        operations=ops,
        permutation=perm,
        n_lines=nlines,
        n_contrib=ncontrib,
        matrix=matrix,
        ku=ku,
        kl=kl,
        kk=kk,
        kt=kt,
        slices=slices,  # type: ignore[arg-type]
        contrib_line=np.array(contrib_line, dtype=np.int64),
        face_matrix=face_matrix,
        check_matrix=check,
        pair_line=pair_line,
    )
    for arr in (n, family, reps, family_size, ops, perm, matrix, face_matrix, check, pair_line):
        arr.setflags(write=False)
    return plan


# --------------------------------------------------------------------------- solve


@functools.cache
def _blas_threads() -> tuple[Callable[[], Any], Callable[[int], Any]] | None:
    """Getter and setter of the thread count of numpy's bundled OpenBLAS, if found."""
    import ctypes
    import glob
    import os

    folder = os.path.join(os.path.dirname(os.path.dirname(np.__file__)), "numpy.libs")
    for path in sorted(glob.glob(os.path.join(folder, "*openblas*.so*"))):
        try:
            lib = ctypes.CDLL(path)
        except OSError:
            continue
        for stem in ("scipy_openblas", "openblas"):
            for suffix in ("64_", "_64_", ""):
                get = getattr(lib, f"{stem}_get_num_threads{suffix}", None)
                set_ = getattr(lib, f"{stem}_set_num_threads{suffix}", None)
                if get is not None and set_ is not None:
                    get.restype = ctypes.c_int
                    set_.argtypes = [ctypes.c_int]
                    return get, set_
    return None


@contextlib.contextmanager
def single_thread_blas() -> Iterator[None]:
    """Run the block with numpy's BLAS on one thread (then restore the thread count).

    The products here are many and small; on a shared machine BLAS threads only add
    contention (measured: several times slower), and worker processes bring their own
    parallelism. Does nothing when the BLAS library is not found.
    """
    fns = _blas_threads()
    if fns is None:
        yield
        return
    get, set_ = fns
    old = int(get())
    set_(1)
    try:
        yield
    finally:
        set_(old)


def solve_chunk(
    plan: IntervalPlan, family_energies: F64, edges: bool = False
) -> tuple[F64, F64, NDArray[np.bool_], F64 | None]:
    """Face areas per form, volumes and edge lengths for a chunk of energy vectors.

    Parameters
    ----------
    plan : IntervalPlan
    family_energies : (S, F) float array
        One energy per form, all positive.
    edges : bool
        Also return the line lengths (S, n_lines).

    Returns
    -------
    areas : (S, F) float array
        Area of one face of each form.
    volume : (S,) float array
    ok : (S,) bool array
        False where the self-check failed (recompute those with a hull).
    lines : (S, n_lines) float array or None
    """
    g = np.asarray(family_energies, dtype=float)
    nshape, nf = g.shape
    scale = g.max(axis=1)  # (S,)
    ga = np.empty((nshape, nf + 1))
    ga[:, :nf] = g / scale[:, None]
    ga[:, nf] = 1.0
    bounds = ga @ plan.matrix  # (S, K): every linear form of every shape
    su, sl, sk, sh, st = plan.slices
    nl = plan.n_lines
    upper = bounds[:, su].reshape(nshape, nl, plan.ku).min(axis=2)  # (S, L)
    lower = bounds[:, sl].reshape(nshape, nl, plan.kl).max(axis=2)  # (S, L)
    length = upper - lower
    np.maximum(length, 0.0, out=length)
    if plan.kk:
        killed = bounds[:, sk].reshape(nshape, nl, plan.kk).min(axis=2) < -TIE  # (S, L)
        length[killed] = 0.0
    wl = length[:, plan.contrib_line]  # (S, C)
    if plan.kt:
        ties = (np.abs(bounds[:, st].reshape(nshape, plan.n_contrib, plan.kt)) <= TIE).sum(
            axis=2
        )  # (S, C)
        wl = wl / (1.0 + ties)
    h = bounds[:, sh]  # (S, C)
    area = (wl * h) @ plan.face_matrix  # (S, F), normalised units
    check = wl @ plan.check_matrix  # (S, 4F)
    closure = np.linalg.norm(check[:, : 3 * nf].reshape(nshape, nf, 3), axis=2)  # (S, F)
    perimeter = check[:, 3 * nf :]  # (S, F)
    volume = np.einsum("sf,sf->s", area * plan.family_size, ga[:, :nf]) / 3.0  # (S,)
    ok = np.all(closure <= _CLOSURE * perimeter + 1e-12, axis=1)
    ok &= np.all(area >= -1e-12, axis=1) & (volume > 0)
    area *= (scale * scale)[:, None]
    volume *= scale**3
    lines = length * scale[:, None] if edges else None
    return area, volume, ok, lines


# --------------------------------------------------------------------------- hull route


_NEXT = np.array([1, 2, 0])


def hull_shape(
    normals: F64, energies: F64, edges: bool = True, cos: F64 | None = None
) -> tuple[F64, float, F64 | None]:
    """One shape from the convex hull of the dual points ``n_i / gamma_i``.

    Each hull facet is a vertex of the shape (``v = -e / e0`` for the facet plane
    ``e . y + e0 = 0``); each hull edge between points ``i`` and ``j`` is the shape's edge
    between faces ``i`` and ``j``, running between the vertices of the two facets that
    share it. Areas then follow from the same edge sum as the interval method, which makes
    the result insensitive to how qhull triangulates facets with more than three points.

    Parameters
    ----------
    normals : (N, 3) float array
        Unit normals.
    energies : (N,) float array
        Positive central distances.
    edges : bool
        Also return the edge lengths.
    cos : (N, N) float array, optional
        ``normals @ normals.T``, when the caller has it already.

    Returns
    -------
    areas : (N,) float array
    volume : float
    edge_lengths : (N, N) float array, symmetric, or None when ``edges`` is False
    """
    from scipy.spatial import ConvexHull

    nplanes = len(normals)
    if cos is None:
        cos = normals @ normals.T  # (N, N)
    hull = ConvexHull(normals / energies[:, None])
    eq = hull.equations  # (T, 4)
    vert = -eq[:, :3] / eq[:, 3:4]  # (T, 3) shape vertices
    simp = hull.simplices  # (T, 3)
    nb = hull.neighbors  # (T, 3): neighbour k is opposite vertex k
    t, k = np.nonzero(nb > np.arange(len(simp))[:, None])  # each shared edge once
    t2 = nb[t, k]
    i = simp[t, _NEXT[k]]
    j = simp[t, _NEXT[_NEXT[k]]]
    diff = vert[t] - vert[t2]
    length = np.sqrt(np.einsum("ea,ea->e", diff, diff))
    c = cos[i, j]
    gi, gj = energies[i], energies[j]
    half = 0.5 * length / np.sqrt(np.maximum(1.0 - c * c, 1e-300))
    area: F64 = np.bincount(i, half * (gj - c * gi), nplanes)  # type: ignore[assignment]
    area += np.bincount(j, half * (gi - c * gj), nplanes)
    volume = float(energies @ area) / 3.0
    if not edges:
        return area, volume, None
    ell: F64 = np.bincount(i * nplanes + j, weights=length, minlength=nplanes * nplanes)  # type: ignore[assignment]
    ell = ell.reshape(nplanes, nplanes)
    return area, volume, ell + ell.T
