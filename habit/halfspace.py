"""Intersection of half-spaces ``n_i . x <= d_i`` that all contain the origin.

The intersection is computed through its polar dual: the points ``p_i = n_i / d_i`` are
handed to qhull once; each facet of their convex hull is one vertex of the intersection
(the facet plane ``a . p = 1`` is the polar of the vertex ``a``), and the planes whose dual
points are hull vertices are the faces that survive. Everything after the qhull call is
vectorised: no Python loop runs over faces or vertices.

References
----------
.. [1] H. S. M. Coxeter, *Regular Polytopes*, 3rd ed., Dover (1973), section 2.8
   (reciprocation with respect to a sphere).
.. [2] C. B. Barber, D. P. Dobkin and H. Huhdanpaa, "The Quickhull algorithm for convex
   hulls", ACM Trans. Math. Softw. 22, 469-483 (1996).
.. [3] F. P. Preparata and M. I. Shamos, *Computational Geometry*, Springer (1985),
   section 7.2 (half-space intersection by duality).
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np
from numpy.typing import ArrayLike

from habit._typing import BoolArray, FloatArray, IntArray
from habit.errors import EmptyPolyhedronError, InputError, OpenShapeError
from habit.tolerances import Tolerances

__all__ = [
    "HalfspaceIntersection",
    "intersect_halfspaces",
    "open_direction",
    "check_planes",
    "polygon_frames",
]

_DEFAULT_TOL = Tolerances()


class HalfspaceIntersection(NamedTuple):
    """Arrays describing the intersection of half-spaces (see :func:`intersect_halfspaces`).

    Attributes
    ----------
    vertices : (V, 3) float array
        Vertex positions, Å (the unit of the distances).
    face_vertices : (M,) int array
        Vertex indices of all faces, loop after loop, each loop counter-clockwise seen
        from outside.
    face_offsets : (F + 1,) int array
        Loop ``f`` is ``face_vertices[face_offsets[f]:face_offsets[f + 1]]``.
    plane_ids : (F,) int array
        Index of the input plane each face lies in (increasing).
    face_areas : (F,) float array
        Area of each face, Å².
    present : (N,) bool array
        ``present[i]`` is True when input plane ``i`` carries a face.
    normals : (N,) float array
        The input normals made unit length, (N, 3).
    distances : (N,) float array
        The input distances divided by the input normal lengths, Å.
    """

    vertices: FloatArray
    face_vertices: IntArray
    face_offsets: IntArray
    plane_ids: IntArray
    face_areas: FloatArray
    present: BoolArray
    normals: FloatArray
    distances: FloatArray


def check_planes(normals: ArrayLike, distances: ArrayLike) -> tuple[FloatArray, FloatArray]:
    """Validate planes and return unit normals and the matching distances.

    Parameters
    ----------
    normals : (N, 3) array_like
        Outward plane normals, any non-zero length.
    distances : (N,) array_like
        Plane offsets from the origin, > 0, in the unit of the normals' length times Å.

    Returns
    -------
    normals : (N, 3) float array
        Unit normals.
    distances : (N,) float array
        Distances divided by the normals' lengths, so that ``n . x <= d`` is unchanged.

    Raises
    ------
    InputError
        Wrong shapes, non-finite values, zero normals, or distances that are not > 0.
    """
    n = np.asarray(normals, dtype=np.float64)
    d = np.asarray(distances, dtype=np.float64)
    if n.ndim != 2 or n.shape[1] != 3:
        raise InputError(f"normals must be an (N, 3) array; got shape {n.shape}.")
    if d.shape != (n.shape[0],):
        raise InputError(
            f"distances must have one value per normal, shape ({n.shape[0]},); got {d.shape}."
        )
    if not np.isfinite(n.sum() + d.sum()):  # NaN/inf anywhere makes the sum non-finite
        if not np.isfinite(n).all():
            raise InputError("normals contain NaN or infinite values; give finite vectors.")
        bad = int(np.flatnonzero(~np.isfinite(d))[0])
        raise InputError(f"distance of plane {bad} is {d[bad]}; distances must be finite and > 0.")
    if d.min() <= 0:
        bad = int(np.flatnonzero(d <= 0)[0])
        raise InputError(
            f"distance of plane {bad} is {d[bad]:g}; every plane must lie at a distance > 0 "
            "from the origin (the origin must be strictly inside)."
        )
    length = np.sqrt(np.einsum("ij,ij->i", n, n))
    if length.min() <= 1e-300:
        bad = int(np.flatnonzero(length <= 1e-300)[0])
        raise InputError(f"normal of plane {bad} is the zero vector; give a non-zero direction.")
    return n / length[:, None], d / length


def open_direction(normals: ArrayLike) -> FloatArray | None:
    """Find a unit direction ``u`` with ``n_i . u <= 0`` for every normal, if one exists.

    Such a ``u`` is a direction in which ``{x : n_i . x <= d_i}`` (``d_i > 0``) is
    unbounded. Found by linear programs: maximise ``+-u_k`` subject to ``N u <= 0`` and
    ``-1 <= u <= 1``, for k = x, y, z, stopping at the first positive optimum.

    Parameters
    ----------
    normals : (N, 3) array_like
        Plane normals.

    Returns
    -------
    (3,) float array or None
        A unit direction of unboundedness, or None when the planes close a solid.

    Examples
    --------
    >>> open_direction([[1, 0, 0], [-1, 0, 0], [0, 1, 0], [0, -1, 0]]).round(6).tolist()
    [0.0, 0.0, 1.0]
    >>> open_direction(np.vstack([np.eye(3), -np.eye(3)])) is None
    True
    """
    from scipy.optimize import linprog

    n = np.asarray(normals, dtype=np.float64).reshape(-1, 3)
    if n.shape[0] == 0:
        return np.array([0.0, 0.0, 1.0])
    b = np.zeros(n.shape[0])
    for k in (2, 0, 1):
        for sign in (1.0, -1.0):
            c = np.zeros(3)
            c[k] = -sign  # linprog minimises
            res = linprog(c, A_ub=n, b_ub=b, bounds=[(-1.0, 1.0)] * 3, method="highs")
            if res.status == 0 and -res.fun > 1e-9:
                u = np.asarray(res.x, dtype=np.float64)
                u = u / np.linalg.norm(u)
                # Clean the tiny LP noise so the reported direction reads well.
                u[np.abs(u) < 1e-12] = 0.0
                return np.asarray(u / np.linalg.norm(u), dtype=np.float64)
    return None


def _raise_open(normals: FloatArray) -> None:
    u = open_direction(normals)
    if u is None:  # pragma: no cover - qhull failed on a closed set: degenerate input
        raise EmptyPolyhedronError(
            "the planes do not bound a solid with an interior; check for repeated or "
            "nearly parallel planes."
        )
    raise OpenShapeError(
        "the planes do not close a solid: it is open along the Cartesian direction "
        f"({u[0]:.4f}, {u[1]:.4f}, {u[2]:.4f}); add faces whose normals point that way.",
        direction=tuple(float(x) for x in u),
    )


def polygon_frames(normals: FloatArray) -> tuple[FloatArray, FloatArray]:
    """Two in-plane unit vectors ``u, w`` per normal with ``u x w = n``.

    Parameters
    ----------
    normals : (N, 3) float array
        Unit normals.

    Returns
    -------
    u, w : (N, 3) float arrays
        Angles measured from ``u`` towards ``w`` increase counter-clockwise when the
        plane is seen from the side ``n`` points to.
    """
    nx, ny, nz = normals[:, 0], normals[:, 1], normals[:, 2]
    # helper axis: e_x unless the normal is close to it, then e_y
    use_y = np.abs(nx) > 0.9
    # u = normalise(a x n) with a = e_x or e_y
    ux = np.where(use_y, nz, 0.0)
    uy = np.where(use_y, 0.0, -nz)
    uz = np.where(use_y, -nx, ny)
    norm = np.sqrt(ux * ux + uy * uy + uz * uz)
    ux, uy, uz = ux / norm, uy / norm, uz / norm
    # w = n x u
    wx = ny * uz - nz * uy
    wy = nz * ux - nx * uz
    wz = nx * uy - ny * ux
    return np.stack([ux, uy, uz], axis=1), np.stack([wx, wy, wz], axis=1)


def _cross(a: FloatArray, b: FloatArray) -> FloatArray:
    """Row-wise cross product of two (N, 3) arrays (cheaper than np.cross on small arrays)."""
    a0, a1, a2 = a[:, 0], a[:, 1], a[:, 2]
    b0, b1, b2 = b[:, 0], b[:, 1], b[:, 2]
    return np.stack([a1 * b2 - a2 * b1, a2 * b0 - a0 * b2, a0 * b1 - a1 * b0], axis=1)


def _merge_labels(close: BoolArray, neighbors: IntArray) -> IntArray:
    """Label the connected groups of simplices joined through ``close`` neighbour links."""
    s = close.shape[0]
    lab = np.arange(s)
    big = s
    while True:
        cand = np.where(close, lab[neighbors], big).min(axis=1)  # (S,)
        new = np.minimum(lab, cand)
        new = new[new]  # pointer jumping
        if np.array_equal(new, lab):
            return lab
        lab = new


def intersect_halfspaces(
    normals: ArrayLike,
    distances: ArrayLike,
    *,
    tol: Tolerances = _DEFAULT_TOL,
) -> HalfspaceIntersection:
    """Intersect the half-spaces ``n_i . x <= d_i`` (origin strictly inside).

    Parameters
    ----------
    normals : (N, 3) array_like
        Outward normals; made unit length (the distances are divided by the same length).
    distances : (N,) array_like
        Plane offsets from the origin, Å; every one must be finite and > 0.
    tol : Tolerances, optional
        ``tol.length`` (relative to the circumradius) merges vertices closer than that:
        a face whose loop then has fewer than three distinct vertices has shrunk to an
        edge or a point and is absent. This is the only presence test, so the surface
        stays closed: a face with edges longer than the tolerance is kept however small
        its area.

    Returns
    -------
    HalfspaceIntersection
        Vertices, ordered face loops, areas and which planes are present.

    Raises
    ------
    InputError
        Malformed or non-positive input.
    OpenShapeError
        The planes do not close a solid; the error names a direction of unboundedness.

    References
    ----------
    .. [1] F. P. Preparata and M. I. Shamos, *Computational Geometry*, Springer (1985),
       section 7.2.

    Examples
    --------
    >>> cube = intersect_halfspaces(np.vstack([np.eye(3), -np.eye(3)]), np.ones(6))
    >>> len(cube.vertices), len(cube.plane_ids), float(cube.face_areas.sum())
    (8, 6, 24.0)
    """
    from scipy.spatial import ConvexHull, QhullError

    n, d = check_planes(normals, distances)
    nplanes = n.shape[0]
    if nplanes < 4:
        _raise_open(n)
    dual = n / d[:, None]  # (N, 3) polar points
    try:
        hull = ConvexHull(dual)
    except QhullError:
        _raise_open(n)
        raise  # pragma: no cover
    eq = hull.equations  # (S, 4): a . p + b <= 0 inside, |a| = 1
    offs = eq[:, 3]
    top = offs.max()
    if top >= -1e-12 * -offs.min():
        _raise_open(n)
    verts_all = eq[:, :3] / (-offs[:, None])  # (S, 3): polar of each facet plane
    simp = hull.simplices  # (S, 3) plane indices
    nsimp = simp.shape[0]

    # --- merge coincident vertices (coplanar dual facets, or faces shrunk to nothing)
    scale2 = 1.0 / (top * top)  # squared circumradius: |v| = 1 / |b|
    nbr = hull.neighbors  # (S, 3)
    diff = verts_all[nbr] - verts_all[:, None, :]  # (S, 3, 3)
    close = np.einsum("ijk,ijk->ij", diff, diff) <= (tol.length * tol.length) * scale2  # (S, 3)
    plane = simp.ravel()  # (3S,) incidences (plane, vertex)
    if close.any():
        lab = _merge_labels(close, nbr)
        reps, vid = np.unique(lab, return_inverse=True)
        vertices = verts_all[reps]
        nvert = vertices.shape[0]
        key = np.sort(plane * nvert + np.repeat(vid, 3))
        key = key[np.r_[True, key[1:] != key[:-1]]]  # unique (plane, vertex) pairs
        plane = key // nvert
        vert = key - plane * nvert
    else:
        vertices = verts_all
        nvert = nsimp
        vert = np.repeat(np.arange(nsimp), 3)
    counts = np.bincount(plane, minlength=nplanes)  # (N,)
    if counts.max() > 0 and (counts[plane] < 3).any():
        keep = counts[plane] >= 3
        plane, vert = plane[keep], vert[keep]
        counts = np.bincount(plane, minlength=nplanes)

    # --- order each loop by angle about the mean of its vertices
    pv = vertices[vert]  # (M, 3)
    cnt = np.maximum(counts, 1)[:, None]
    cen = np.stack([np.bincount(plane, pv[:, k], minlength=nplanes) for k in range(3)], 1) / cnt
    r = pv - cen[plane]  # (M, 3) offsets from each face's vertex mean
    first = np.empty(nplanes, dtype=np.intp)
    first[plane[::-1]] = np.arange(plane.size - 1, -1, -1)  # first entry of each plane
    r0 = np.zeros((nplanes, 3))
    r0[counts > 0] = r[first[counts > 0]]  # (N, 3) reference direction in each face
    q = _cross(n, r0)  # (N, 3): n x r0, so (r0, q) is a counter-clockwise frame
    x = np.einsum("ij,ij->i", r, r0[plane])
    y = np.einsum("ij,ij->i", r, q[plane])
    # one sort: by plane, then by angle in (-pi, pi]
    order = np.argsort(plane * 8.0 + np.arctan2(y, x))
    vert, x, y = vert[order], x[order], y[order]

    present_counts = counts[counts > 0]
    plane_ids = np.flatnonzero(counts)
    offsets = np.zeros(present_counts.size + 1, dtype=np.int64)
    np.cumsum(present_counts, out=offsets[1:])
    starts = offsets[:-1]
    nxt = np.arange(1, vert.size + 1)
    nxt[offsets[1:] - 1] = starts
    # shoelace in the (r0, q) frame; both axes have length |r0|, so divide by |r0|^2
    scale_f = np.einsum("ij,ij->i", r0, r0)[plane_ids]
    areas = 0.5 * np.add.reduceat(x * y[nxt] - x[nxt] * y, starts) / scale_f

    # --- drop vertices no face uses, renumber
    used = np.zeros(nvert, dtype=bool)
    used[vert] = True
    if not used.all():
        newid = np.cumsum(used) - 1
        vert = newid[vert]
        vertices = vertices[used]

    present = np.zeros(nplanes, dtype=bool)
    present[plane_ids] = True
    if plane_ids.size < 4:
        raise EmptyPolyhedronError(  # pragma: no cover - guarded by the open-shape test
            "the planes bound no solid with an interior."
        )
    return HalfspaceIntersection(
        vertices=vertices,
        face_vertices=vert,
        face_offsets=offsets,
        plane_ids=plane_ids,
        face_areas=areas,
        present=present,
        normals=n,
        distances=d,
    )
