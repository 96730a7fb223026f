"""Symmetry of a polyhedron from its geometry alone.

Every orthogonal map of a convex polyhedron onto itself fixes its centroid and sends an
edge to an edge. Fix one reference edge ``(a, b)``: a symmetry is determined by the
directed edge ``(a', b')`` it sends it to and by whether it is proper or improper, so the
candidate maps are at most the 4E flags of the polyhedron. Each candidate is built from
orthonormal frames of the two edges and kept when it maps the vertex set onto itself
(a map of the vertex set onto itself maps the convex hull, hence the face structure,
onto itself). All candidates are tested at once.

The point group is then named from the numbers of rotations of each order, mirrors and
the inversion (Hermann-Mauguin short symbol and Schoenflies symbol).

References
----------
.. [1] H. S. M. Coxeter, *Regular Polytopes*, 3rd ed., Dover (1973), sections 2.1 and 3.6
   (flags; symmetry groups of the regular polyhedra).
.. [2] International Tables for Crystallography, Vol. A (2002), Table 10.1.2.2 (symbols of
   the crystallographic point groups) and Table 10.1.4.3 (non-crystallographic groups;
   quoted from memory).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from habit._typing import FloatArray, IntArray
from habit.errors import InputError
from habit.polyhedron import Polyhedron

__all__ = [
    "PolyhedronSymmetry",
    "symmetry_of",
    "point_group_symbols",
    "rotation_orders",
]

_CRYSTALLOGRAPHIC_HM = {
    "C1": "1",
    "Ci": "-1",
    "C2": "2",
    "Cs": "m",
    "C2h": "2/m",
    "D2": "222",
    "C2v": "mm2",
    "D2h": "mmm",
    "C4": "4",
    "S4": "-4",
    "C4h": "4/m",
    "D4": "422",
    "C4v": "4mm",
    "D2d": "-42m",
    "D4h": "4/mmm",
    "C3": "3",
    "S6": "-3",
    "D3": "32",
    "C3v": "3m",
    "D3d": "-3m",
    "C6": "6",
    "C3h": "-6",
    "C6h": "6/m",
    "D6": "622",
    "C6v": "6mm",
    "D3h": "-6m2",
    "D6h": "6/mmm",
    "T": "23",
    "Th": "m-3",
    "O": "432",
    "Td": "-43m",
    "Oh": "m-3m",
    "I": "235",
    "Ih": "m-3-5",
}


@dataclass(frozen=True, slots=True, eq=False)
class PolyhedronSymmetry:
    """The symmetry group of a polyhedron (immutable).

    Attributes
    ----------
    operations : (G, 3, 3) float array
        Orthogonal matrices acting on Cartesian column vectors relative to ``centre``
        (``x' = centre + R (x - centre)``); the identity first.
    centre : (3,) float array
        The fixed point (the polyhedron's centroid), Å.
    vertex_permutations : (G, V) int array
        ``vertex_permutations[g, i]`` is the vertex that operation ``g`` sends vertex
        ``i`` to.
    hm : str
        Hermann-Mauguin short symbol, e.g. ``"m-3m"``.
    schoenflies : str
        Schoenflies symbol, e.g. ``"Oh"``.
    """

    operations: FloatArray
    centre: FloatArray
    vertex_permutations: IntArray
    hm: str
    schoenflies: str

    @property
    def order(self) -> int:
        """Number of operations."""
        return int(self.operations.shape[0])

    @property
    def is_centrosymmetric(self) -> bool:
        """True when the inversion is an operation."""
        return bool(np.any(np.abs(self.operations + np.eye(3)).max(axis=(1, 2)) < 1e-6))

    @property
    def n_proper(self) -> int:
        """Number of proper rotations (det +1)."""
        return int((np.linalg.det(self.operations) > 0).sum())

    def contains(self, operations: ArrayLike, *, atol: float = 1e-6) -> bool:
        """Whether every given Cartesian operation is a symmetry of the polyhedron.

        Parameters
        ----------
        operations : (K, 3, 3) or (3, 3) array_like
            Orthogonal matrices in the same Cartesian frame, about ``centre`` (e.g. the
            operations of a crystal class turned into Cartesian form, ``A W A^-1``).
        atol : float
            Largest allowed element-wise difference.

        Returns
        -------
        bool
        """
        ops = np.asarray(operations, dtype=np.float64).reshape(-1, 3, 3)
        diff = np.abs(ops[:, None, :, :] - self.operations[None, :, :, :]).max(axis=(2, 3))
        return bool((diff.min(axis=1) < atol).all())


def _frames(a: FloatArray, b: FloatArray) -> FloatArray:
    """Orthonormal frames (rows e1, e2, e3) from pairs of vectors, (K, 3, 3)."""
    e1 = a / np.linalg.norm(a, axis=-1, keepdims=True)
    t = b - np.einsum("ij,ij->i", b, e1)[:, None] * e1
    e2 = t / np.linalg.norm(t, axis=-1, keepdims=True)
    e3 = np.cross(e1, e2)
    return np.stack([e1, e2, e3], axis=1)


def rotation_orders(operations: ArrayLike, *, atol: float = 1e-6) -> IntArray:
    """Order of the rotation part of each operation (improper ones via ``-R``).

    Parameters
    ----------
    operations : (G, 3, 3) array_like
        Orthogonal matrices.
    atol : float
        Tolerance on the rotation angle as a fraction of a turn.

    Returns
    -------
    (G,) int array
        For a proper operation the smallest k with R^k = I; for an improper one the
        order of the proper rotation ``-R``.

    Raises
    ------
    InputError
        A rotation angle is not a rational fraction of a turn with denominator <= 240.

    Examples
    --------
    >>> rotation_orders([np.eye(3), [[0, -1, 0], [1, 0, 0], [0, 0, 1]]]).tolist()
    [1, 4]
    """
    ops = np.asarray(operations, dtype=np.float64).reshape(-1, 3, 3)
    det = np.linalg.det(ops)
    prop = ops * np.sign(det)[:, None, None]
    tr = np.trace(prop, axis1=1, axis2=2)
    turns = np.arccos(np.clip((tr - 1.0) / 2.0, -1.0, 1.0)) / (2 * np.pi)  # (G,)
    ks = np.arange(1, 241)
    hit = np.abs(ks[None, :] * turns[:, None] - np.round(ks[None, :] * turns[:, None])) < atol * ks
    if not hit.any(axis=1).all():
        raise InputError("an operation is a rotation of infinite order; not a point group.")
    return np.asarray(ks[hit.argmax(axis=1)], dtype=np.int64)


def point_group_symbols(operations: ArrayLike, *, atol: float = 1e-6) -> tuple[str, str]:
    """Name a finite point group from its operations.

    Parameters
    ----------
    operations : (G, 3, 3) array_like
        All operations of the group (orthogonal matrices).
    atol : float
        Numerical tolerance.

    Returns
    -------
    hm, schoenflies : str
        Hermann-Mauguin short symbol (ITA convention for the 32 crystal classes; general
        axial and icosahedral groups by the same rules) and Schoenflies symbol.

    Raises
    ------
    InputError
        The matrices do not form one of the finite point groups (checked through the
        rotation orders and the counts; full closure is assumed, not tested).

    Examples
    --------
    >>> point_group_symbols([np.eye(3), -np.eye(3)])
    ('-1', 'Ci')
    """
    ops = np.asarray(operations, dtype=np.float64).reshape(-1, 3, 3)
    det = np.linalg.det(ops)
    proper = det > 0
    g_plus = int(proper.sum())
    orders = rotation_orders(ops, atol=atol)
    n = int(orders[proper].max())
    tr = np.trace(ops, axis1=1, axis2=2)
    mirrors = int(((~proper) & (np.abs(tr - 1.0) < 1e-6)).sum())
    inversion = bool(((~proper) & (np.abs(tr + 3.0) < 1e-6)).any())
    improper = bool((~proper).any())
    if g_plus == n:
        if not improper:
            sch = f"C{n}"
        elif n == 1:
            sch = "Cs" if mirrors else "Ci"
        elif mirrors == n:
            sch = f"C{n}v"
        elif mirrors == 1:
            sch = f"C{n}h"
        else:
            sch = f"S{2 * n}"
    elif g_plus == 2 * n:
        if not improper:
            sch = f"D{n}"
        elif mirrors == n + 1:
            sch = f"D{n}h"
        elif mirrors == n:
            sch = f"D{n}d"
        else:
            raise InputError("the operations do not form a point group (dihedral mirrors).")
    elif (n, g_plus) in {(3, 12), (4, 24), (5, 60)}:
        base = {3: "T", 4: "O", 5: "I"}[n]
        if not improper:
            sch = base
        elif base == "T" and not inversion:
            sch = "Td"
        else:
            sch = base + "h"
    else:
        raise InputError(
            f"the {ops.shape[0]} operations do not form a finite point group "
            f"({g_plus} rotations, largest order {n})."
        )
    return _hm_from_schoenflies(sch), sch


def _hm_from_schoenflies(sch: str) -> str:
    if sch in _CRYSTALLOGRAPHIC_HM:
        return _CRYSTALLOGRAPHIC_HM[sch]
    fam = sch[0]
    digits = "".join(ch for ch in sch if ch.isdigit())
    n = int(digits)
    suffix = sch[1 + len(digits) :]
    if fam == "S":  # S_2k
        k = n // 2
        return f"-{k}" if k % 2 else f"-{n}"
    if fam == "C":
        if suffix == "":
            return f"{n}"
        if suffix == "v":
            return f"{n}m" if n % 2 else f"{n}mm"
        if suffix == "h":
            return f"-{2 * n}" if n % 2 else f"{n}/m"
    if fam == "D":
        if suffix == "":
            return f"{n}2" if n % 2 else f"{n}22"
        if suffix == "h":
            return f"-{2 * n}m2" if n % 2 else f"{n}/mmm"
        if suffix == "d":
            return f"-{n}m" if n % 2 else f"-{2 * n}2m"
    return sch  # pragma: no cover


def symmetry_of(
    poly: Polyhedron, *, by_form: bool = False, rtol: float = 1e-6
) -> PolyhedronSymmetry:
    """Find every orthogonal map about the centroid that maps the polyhedron onto itself.

    Parameters
    ----------
    poly : Polyhedron
        The polyhedron.
    by_form : bool
        Also require each face to go to a face of the same form (``poly.form_ids``);
        without it only the geometry counts.
    rtol : float
        Distance tolerance as a fraction of the circumradius about the centroid.

    Returns
    -------
    PolyhedronSymmetry
        The operations, vertex permutations and the point-group symbols.

    Examples
    --------
    >>> cube = Polyhedron.from_halfspaces(np.vstack([np.eye(3), -np.eye(3)]), np.ones(6))
    >>> s = symmetry_of(cube)
    >>> s.order, s.hm
    (48, 'm-3m')
    """
    from scipy.spatial import cKDTree

    c = poly.centroid
    x = poly.vertices - c  # (V, 3)
    nv = x.shape[0]
    r = np.sqrt(np.einsum("ij,ij->i", x, x))  # (V,)
    size = float(r.max())
    tol = rtol * size
    deg = poly.vertex_degrees
    # reference vertex: the one with the fewest look-alikes (same radius and degree)
    alike = (np.abs(r[:, None] - r[None, :]) < tol) & (deg[:, None] == deg[None, :])
    a = int(alike.sum(axis=1).argmin())
    e = poly.edges
    directed = np.concatenate([e, e[:, ::-1]])  # (2E, 2)
    b = int(directed[directed[:, 0] == a][0, 1])
    dot_ab = float(x[a] @ x[b])
    ca, cb = directed[:, 0], directed[:, 1]
    ok = (
        (np.abs(r[ca] - r[a]) < tol)
        & (np.abs(r[cb] - r[b]) < tol)
        & (deg[ca] == deg[a])
        & (deg[cb] == deg[b])
        & (np.abs(np.einsum("ij,ij->i", x[ca], x[cb]) - dot_ab) < 4 * tol * size)
    )
    ca, cb = ca[ok], cb[ok]
    ref = _frames(x[a][None, :], x[b][None, :])[0]  # (3, 3) rows
    img = _frames(x[ca], x[cb])  # (K, 3, 3)
    img_improper = img.copy()
    img_improper[:, 2, :] *= -1.0
    cand = np.concatenate([img, img_improper])  # (2K, 3, 3) rows e'_i
    rots = np.einsum("kij,il->kjl", cand, ref)  # R = E'^T E, (2K, 3, 3)
    images = np.einsum("kij,vj->kvi", rots, x)  # (2K, V, 3)
    tree = cKDTree(x)
    dist, idx = tree.query(images.reshape(-1, 3), distance_upper_bound=tol)
    dist = dist.reshape(rots.shape[0], nv)
    idx = idx.reshape(rots.shape[0], nv)
    good = np.isfinite(dist).all(axis=1)
    good &= (np.sort(np.where(np.isfinite(dist), idx, -1), axis=1) == np.arange(nv)).all(axis=1)
    if by_form:
        fid = np.asarray(poly.form_ids)
        d = poly.distances - poly.normals @ c
        key = np.concatenate([poly.normals, (d / size)[:, None]], axis=1)  # (F, 4)
        ftree = cKDTree(key)
        fimg = np.einsum("kij,fj->kfi", rots, poly.normals)  # (2K, F, 3)
        fkey = np.concatenate([fimg, np.broadcast_to(key[:, 3:], fimg.shape[:2] + (1,))], axis=2)
        fd, fi = ftree.query(fkey.reshape(-1, 4), distance_upper_bound=max(rtol, 1e-9) * 10)
        fd = fd.reshape(rots.shape[0], -1)
        fi = np.where(np.isfinite(fd), fi.reshape(rots.shape[0], -1), 0)
        good &= np.isfinite(fd).all(axis=1) & (fid[fi] == fid[None, :]).all(axis=1)
    ops = rots[good]
    perms = idx[good]
    # identity first
    first = int(np.abs(ops - np.eye(3)).max(axis=(1, 2)).argmin())
    order = np.r_[first, np.delete(np.arange(ops.shape[0]), first)]
    ops = np.round(ops[order], 12) + 0.0
    perms = perms[order]
    hm, sch = point_group_symbols(ops, atol=1e-5)
    for arr in (ops, perms, c):
        arr.setflags(write=False)
    return PolyhedronSymmetry(
        operations=ops, centre=c, vertex_permutations=perms, hm=hm, schoenflies=sch
    )
