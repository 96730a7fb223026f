"""Facets of the convex hull of a point set, with coplanar hull triangles merged.

A small private routine used by :mod:`habit.solids` and the lattice-packing code; it needs
only :class:`scipy.spatial.ConvexHull` and does not depend on :mod:`habit.polyhedron`.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike
from scipy.spatial import ConvexHull

from habit._typing import FloatArray, IntArray
from habit.errors import EmptyPolyhedronError

__all__ = ["HullFacets", "hull_facets"]


@dataclass(frozen=True, slots=True)
class HullFacets:
    """Facets of a convex polytope.

    Attributes
    ----------
    points : (V, 3) float array
        The vertices of the hull (only points that are hull vertices), in input units.
    normals : (F, 3) float array
        Outward unit normals.
    offsets : (F,) float array
        Plane offsets, ``normals[i] @ x <= offsets[i]`` for points of the solid.
    faces : tuple of (k,) int arrays
        Vertex indices (into ``points``) of each facet, ordered counter-clockwise seen from
        outside.
    volume : float
        Volume of the hull.
    """

    points: FloatArray
    normals: FloatArray
    offsets: FloatArray
    faces: tuple[IntArray, ...]
    volume: float

    @property
    def edges(self) -> IntArray:
        """(E, 2) int array of vertex index pairs, each edge once, smaller index first."""
        pairs = set()
        for face in self.faces:
            for a, b in zip(face, np.roll(face, -1), strict=True):
                pairs.add((int(min(a, b)), int(max(a, b))))
        return np.array(sorted(pairs), dtype=np.int64).reshape(-1, 2)


def hull_facets(points: ArrayLike, rel_tol: float = 1e-9) -> HullFacets:
    """Return the facets of the convex hull of ``points``, coplanar triangles merged.

    Parameters
    ----------
    points : (N, 3) array_like of float
        The points; need not all be hull vertices.
    rel_tol : float
        Two hull triangles lie in one facet when their unit normals and offsets agree to
        ``rel_tol`` times the diameter of the point set.

    Returns
    -------
    HullFacets

    Raises
    ------
    EmptyPolyhedronError
        If the points do not span three dimensions.
    """
    pts = np.asarray(points, dtype=np.float64).reshape(-1, 3)
    if pts.shape[0] < 4:
        raise EmptyPolyhedronError(
            f"a solid needs at least 4 points that are not coplanar; got {pts.shape[0]}."
        )
    centre = pts.mean(axis=0)
    scale = float(np.max(np.linalg.norm(pts - centre, axis=1)))
    if scale == 0.0:
        raise EmptyPolyhedronError("all points coincide; a solid needs volume.")
    try:
        hull = ConvexHull((pts - centre) / scale)
    except Exception as exc:  # qhull raises QhullError for flat input
        raise EmptyPolyhedronError(
            "the points are coplanar or collinear; a solid needs points spanning 3-D."
        ) from exc
    if hull.volume < 1e-12:
        raise EmptyPolyhedronError("the points span no volume; a solid needs 3-D extent.")
    eq = hull.equations  # (T, 4): n.x + c <= 0 for inner points
    # group triangles by plane: quantise the (normal, offset) tuple
    key = np.round(eq / (10 * rel_tol)).astype(np.int64)
    _, label = np.unique(key, axis=0, return_inverse=True)
    label = label.ravel()
    # merge near-identical planes whose quantised keys differ by rounding
    planes: list[np.ndarray] = []
    plane_of_label: dict[int, int] = {}
    for lab in np.unique(label):
        e = eq[label == lab][0]
        for k, p in enumerate(planes):
            if np.max(np.abs(p - e)) < 100 * rel_tol:
                plane_of_label[int(lab)] = k
                break
        else:
            plane_of_label[int(lab)] = len(planes)
            planes.append(e)
    tri_plane = np.array([plane_of_label[int(lab)] for lab in label])
    vert_ids = np.unique(hull.simplices)
    new_index = -np.ones(pts.shape[0], dtype=np.int64)
    new_index[vert_ids] = np.arange(vert_ids.size)
    hull_pts = pts[vert_ids]
    normals = []
    offsets = []
    faces = []
    for k, e in enumerate(planes):
        n = e[:3] / np.linalg.norm(e[:3])
        ids = np.unique(hull.simplices[tri_plane == k])
        # all hull vertices lying on this plane (qhull may leave coplanar vertices out)
        on = np.abs((hull.points[vert_ids] @ e[:3]) + e[3]) < 100 * rel_tol
        ids = np.union1d(new_index[ids], np.nonzero(on)[0])
        loop_pts = hull_pts[ids]
        c = loop_pts.mean(axis=0)
        u = loop_pts[0] - c
        u /= np.linalg.norm(u)
        w = np.cross(n, u)
        ang = np.arctan2((loop_pts - c) @ w, (loop_pts - c) @ u)
        faces.append(ids[np.argsort(ang)].astype(np.int64))
        normals.append(n)
        offsets.append(float(n @ c))
    normals_arr = np.array(normals)
    offsets_arr = np.array(offsets)
    for a in (hull_pts, normals_arr, offsets_arr):
        a.setflags(write=False)
    return HullFacets(
        points=hull_pts,
        normals=normals_arr,
        offsets=offsets_arr,
        faces=tuple(faces),
        volume=float(hull.volume * scale**3),
    )
