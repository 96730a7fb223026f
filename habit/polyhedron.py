"""Convex polyhedra with labelled faces: geometry, metrics, transformations and duals.

A :class:`Polyhedron` is an immutable value. Its faces are planes ``n_f . x = d_f``
(``n_f`` unit, outward; ``d_f`` the offset from the origin, which for a Wulff shape is the
Wulff point) bounded by vertex loops that run counter-clockwise seen from outside. Every
method that "changes" a polyhedron returns a new one.

Lengths are in ångström, areas in Å², volumes in Å³, angles in radians.

References
----------
.. [1] H. S. M. Coxeter, *Regular Polytopes*, 3rd ed., Dover (1973): Euler's formula
   (section 1.6), reciprocation (section 2.8).
.. [2] D. Richeson, *Euler's Gem*, Princeton University Press (2008): Descartes' theorem
   on the total angle defect, 4*pi.
.. [3] H. Wadell, "Volume, shape, and roundness of quartz particles", J. Geol. 43,
   250-280 (1935): sphericity.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Literal, NamedTuple

import numpy as np
from numpy.typing import ArrayLike

from habit._typing import BoolArray, FloatArray, IntArray
from habit.errors import EmptyPolyhedronError, InputError
from habit.halfspace import intersect_halfspaces
from habit.tolerances import Tolerances

__all__ = [
    "Polyhedron",
    "DualResult",
    "fan_triangles",
    "edges_from_loops",
]

_DEFAULT_TOL = Tolerances()


def _frozen(a: Any, dtype: Any) -> Any:
    if a is None:
        return None
    arr = np.array(a, dtype=dtype)
    arr.setflags(write=False)
    return arr


def fan_triangles(face_offsets: IntArray) -> tuple[IntArray, IntArray]:
    """Split every face loop into a fan of triangles from its first vertex.

    Parameters
    ----------
    face_offsets : (F + 1,) int array
        Loop boundaries into the flat ``face_vertices`` array.

    Returns
    -------
    corners : (T, 3) int array
        Positions into ``face_vertices`` of each triangle's corners (same orientation
        as the loop).
    face_of_triangle : (T,) int array
        The face each triangle belongs to.
    """
    sizes = np.diff(face_offsets)  # (F,)
    ntri = sizes - 2
    face_of = np.repeat(np.arange(sizes.size), ntri)  # (T,)
    first = face_offsets[:-1][face_of]
    tri_start = np.zeros(sizes.size, dtype=np.int64)
    np.cumsum(ntri[:-1], out=tri_start[1:])
    j = np.arange(face_of.size) - tri_start[face_of] + 1  # 1 .. k-2 within each face
    corners = np.stack([first, first + j, first + j + 1], axis=1)
    return corners, face_of


def _next_in_loop(face_offsets: IntArray) -> IntArray:
    m = int(face_offsets[-1])
    nxt = np.arange(1, m + 1)
    nxt[face_offsets[1:] - 1] = face_offsets[:-1]
    return nxt


def _prev_in_loop(face_offsets: IntArray) -> IntArray:
    m = int(face_offsets[-1])
    prv = np.arange(-1, m - 1)
    prv[face_offsets[:-1]] = face_offsets[1:] - 1
    return prv


def edges_from_loops(face_vertices: IntArray, face_offsets: IntArray) -> tuple[IntArray, IntArray]:
    """Undirected edges of a closed polyhedral surface and the two faces at each.

    Parameters
    ----------
    face_vertices : (M,) int array
        Loops of vertex indices, counter-clockwise seen from outside.
    face_offsets : (F + 1,) int array
        Loop boundaries.

    Returns
    -------
    edges : (E, 2) int array
        Vertex pairs ``(a, b)``; the edge runs ``a -> b`` in the loop of ``edge_faces[:, 0]``.
    edge_faces : (E, 2) int array
        The face on each side: ``edge_faces[:, 0]`` has ``a -> b`` in its loop,
        ``edge_faces[:, 1]`` has ``b -> a``.

    Raises
    ------
    InputError
        The loops do not form a closed, consistently oriented surface.
    """
    nxt = _next_in_loop(face_offsets)
    a = face_vertices
    b = face_vertices[nxt]
    face_of = np.repeat(np.arange(face_offsets.size - 1), np.diff(face_offsets))
    nv = int(face_vertices.max()) + 1
    lo = np.minimum(a, b)
    hi = np.maximum(a, b)
    key = lo * nv + hi
    order = np.argsort(key, kind="stable")
    ks = key[order]
    if ks.size % 2 or not np.array_equal(ks[0::2], ks[1::2]):
        raise InputError("the face loops do not form a closed surface (an edge is unpaired).")
    first, second = order[0::2], order[1::2]
    if not np.array_equal(a[first], b[second]):
        raise InputError("the face loops are not consistently oriented.")
    edges = np.stack([a[first], b[first]], axis=1)
    edge_faces = np.stack([face_of[first], face_of[second]], axis=1)
    return edges, edge_faces


class DualResult(NamedTuple):
    """The dual polyhedron and how its parts correspond to the original.

    Attributes
    ----------
    polyhedron : Polyhedron
        The polar reciprocal.
    vertex_of_face : (F,) int array
        ``vertex_of_face[f]`` is the dual vertex made from original face ``f``.
    face_of_vertex : (V,) int array
        ``face_of_vertex[v]`` is the dual face made from original vertex ``v``.
    radius : float
        Radius of the reciprocation sphere, Å.
    centre : (3,) float array
        Its centre, Å.
    """

    polyhedron: Polyhedron
    vertex_of_face: IntArray
    face_of_vertex: IntArray
    radius: float
    centre: FloatArray


@dataclass(frozen=True, slots=True, eq=False)
class Polyhedron:
    """A convex polyhedron with labelled faces (immutable).

    Parameters
    ----------
    vertices : (V, 3) float array
        Vertex positions, Å.
    face_vertices : (M,) int array
        Vertex indices of every face loop, one loop after another, each loop
        counter-clockwise seen from outside.
    face_offsets : (F + 1,) int array
        Loop ``f`` is ``face_vertices[face_offsets[f]:face_offsets[f + 1]]``.
    normals : (F, 3) float array
        Unit outward normal of each face.
    distances : (F,) float array
        Offset of each face plane from the origin, Å (``normals[f] . x = distances[f]``).
    face_areas : (F,) float array
        Face areas, Å².
    hkl : (F, 3) int array or None
        Miller indices of each face.
    form_ids : (F,) int array
        Which form each face belongs to (0-based).
    form_labels : tuple of str or None
        One label per form id (e.g. ``"{100}"``).
    face_labels : tuple of str or None
        One label per face (e.g. four-index strings for hexagonal crystals).
    plane_ids : (F,) int array or None
        For a polyhedron built from planes: the input plane index of each face.
    n_planes : int
        How many planes were given (0 when not built from planes).
    vertex_hkl : (V, 3) int array or None
        Miller indices carried by vertices (a dual's vertices carry those of the faces
        they came from).

    Notes
    -----
    Build one with :meth:`from_halfspaces` or :meth:`from_vertices`; the plain
    constructor trusts its arguments.
    """

    vertices: FloatArray
    face_vertices: IntArray
    face_offsets: IntArray
    normals: FloatArray
    distances: FloatArray
    face_areas: FloatArray
    hkl: IntArray | None = None
    form_ids: IntArray | None = None
    form_labels: tuple[str, ...] | None = None
    face_labels: tuple[str, ...] | None = None
    plane_ids: IntArray | None = None
    n_planes: int = 0
    vertex_hkl: IntArray | None = None
    _cache: dict[str, Any] = field(default_factory=dict, repr=False, compare=False)

    def __post_init__(self) -> None:
        s = object.__setattr__
        s(self, "vertices", _frozen(self.vertices, np.float64))
        s(self, "face_vertices", _frozen(self.face_vertices, np.int64))
        s(self, "face_offsets", _frozen(self.face_offsets, np.int64))
        s(self, "normals", _frozen(self.normals, np.float64))
        s(self, "distances", _frozen(self.distances, np.float64))
        s(self, "face_areas", _frozen(self.face_areas, np.float64))
        nf = self.face_offsets.size - 1
        s(self, "hkl", _frozen(self.hkl, np.int64))
        fid = np.arange(nf) if self.form_ids is None else self.form_ids
        s(self, "form_ids", _frozen(fid, np.int64))
        s(self, "plane_ids", _frozen(self.plane_ids, np.int64))
        s(self, "vertex_hkl", _frozen(self.vertex_hkl, np.int64))
        if self.form_labels is not None:
            s(self, "form_labels", tuple(str(x) for x in self.form_labels))
        if self.face_labels is not None:
            s(self, "face_labels", tuple(str(x) for x in self.face_labels))
            if len(self.face_labels) != nf:
                raise InputError(
                    f"face_labels needs one label per face ({nf}); got {len(self.face_labels)}."
                )
        if self.normals.shape != (nf, 3) or self.distances.shape != (nf,):
            raise InputError(
                f"normals must be ({nf}, 3) and distances ({nf},) for {nf} faces; got "
                f"{self.normals.shape} and {self.distances.shape}."
            )
        if self.hkl is not None and self.hkl.shape != (nf, 3):
            raise InputError(f"hkl must be ({nf}, 3); got {self.hkl.shape}.")

    # ------------------------------------------------------------------ constructors
    @classmethod
    def from_halfspaces(
        cls,
        normals: ArrayLike,
        distances: ArrayLike,
        *,
        hkl: ArrayLike | None = None,
        form_ids: ArrayLike | None = None,
        form_labels: tuple[str, ...] | list[str] | None = None,
        face_labels: tuple[str, ...] | list[str] | None = None,
        tol: Tolerances = _DEFAULT_TOL,
    ) -> Polyhedron:
        """Intersect the half-spaces ``n_i . x <= d_i`` (the origin strictly inside).

        Parameters
        ----------
        normals : (N, 3) array_like
            Outward normals (any length; they are made unit and the distances divided
            by the same length).
        distances : (N,) array_like
            Distances of the planes from the origin, Å; finite and > 0.
        hkl : (N, 3) int array_like, optional
            Miller indices of the planes.
        form_ids : (N,) int array_like, optional
            Form of each plane; default: every plane its own form.
        form_labels : sequence of str, optional
            One label per form id.
        face_labels : sequence of str, optional
            One label per input plane (kept for the faces present).
        tol : Tolerances, optional
            Vertices closer than ``tol.length`` times the circumradius are merged; a
            face left with fewer than 3 distinct vertices has shrunk to an edge or a
            point and is absent (not kept as a sliver). This is the only presence
            test, so the surface always stays closed.

        Returns
        -------
        Polyhedron
            Faces in input-plane order; ``plane_ids`` gives each face's plane and
            :attr:`present` which planes carry a face.

        Raises
        ------
        InputError
            Zero, negative or NaN distances, malformed arrays.
        OpenShapeError
            The planes do not close a solid (the message names an open direction).

        Examples
        --------
        >>> cube = Polyhedron.from_halfspaces(np.vstack([np.eye(3), -np.eye(3)]), [1] * 6)
        >>> float(cube.volume), cube.n_faces
        (8.0, 6)
        """
        res = intersect_halfspaces(normals, distances, tol=tol)
        pid = res.plane_ids
        nplanes = res.normals.shape[0]
        hkl_f = None
        if hkl is not None:
            h = np.asarray(hkl)
            if h.shape != (nplanes, 3):
                raise InputError(f"hkl must be ({nplanes}, 3) like the normals; got {h.shape}.")
            hkl_f = h[pid]
        if form_ids is None:
            fid = pid
        else:
            f = np.asarray(form_ids)
            if f.shape != (nplanes,) or (f < 0).any():
                raise InputError(
                    f"form_ids must be {nplanes} integers >= 0, one per plane; got shape {f.shape}."
                )
            fid = f[pid]
        labels = None
        if face_labels is not None:
            if len(face_labels) != nplanes:
                raise InputError(
                    f"face_labels needs one label per plane ({nplanes}); got {len(face_labels)}."
                )
            labels = tuple(str(face_labels[i]) for i in pid)
        return cls(
            vertices=res.vertices,
            face_vertices=res.face_vertices,
            face_offsets=res.face_offsets,
            normals=res.normals[pid],
            distances=res.distances[pid],
            face_areas=res.face_areas,
            hkl=hkl_f,
            form_ids=fid,
            form_labels=None if form_labels is None else tuple(form_labels),
            face_labels=labels,
            plane_ids=pid,
            n_planes=nplanes,
        )

    @classmethod
    def from_vertices(cls, points: ArrayLike, *, tol: Tolerances = _DEFAULT_TOL) -> Polyhedron:
        """Convex hull of points; coplanar hull triangles are merged into one face.

        Parameters
        ----------
        points : (P, 3) array_like
            Points, Å; at least four not in one plane.
        tol : Tolerances, optional
            Hull facets whose planes differ by less than ``tol.length`` (relative to the
            size) are one face.

        Returns
        -------
        Polyhedron
            Points inside the hull or on its edges are not vertices.

        Raises
        ------
        InputError
            Malformed or non-finite points.
        EmptyPolyhedronError
            Fewer than four points, or all points in one plane.

        Examples
        --------
        >>> corners = np.array([[x, y, z] for x in (0, 1) for y in (0, 1) for z in (0, 1)])
        >>> box = Polyhedron.from_vertices(corners)
        >>> box.n_faces, float(box.volume)
        (6, 1.0)
        """
        from scipy.spatial import ConvexHull, QhullError

        p = np.asarray(points, dtype=np.float64)
        if p.ndim != 2 or p.shape[1] != 3:
            raise InputError(f"points must be a (P, 3) array; got shape {p.shape}.")
        if not np.isfinite(p).all():
            raise InputError("points contain NaN or infinite values; give finite coordinates.")
        if p.shape[0] < 4:
            raise EmptyPolyhedronError(
                f"a solid needs at least 4 points not in one plane; got {p.shape[0]}."
            )
        try:
            hull = ConvexHull(p)
        except QhullError:
            raise EmptyPolyhedronError(
                "the points lie in one plane (or on one line); they enclose no volume."
            ) from None
        eq = hull.equations  # (S, 4): a . x + b <= 0
        scale = float(np.abs(p - p.mean(axis=0)).max())
        nbr = hull.neighbors.astype(np.int64)
        de = eq[nbr] - eq[:, None, :]  # (S, 3, 4)
        de[..., 3] /= max(scale, 1e-300)
        close = np.einsum("ijk,ijk->ij", de, de) <= max(tol.length, 1e-9) ** 2
        from habit.halfspace import _merge_labels

        lab = _merge_labels(close, nbr)
        reps = np.unique(lab)
        n = eq[reps, :3]
        d = -eq[reps, 3]
        centre = p[hull.vertices].mean(axis=0)
        inner = cls.from_halfspaces(n, d - n @ centre, tol=tol)
        return inner.translated(centre)._without_planes()

    def _without_planes(self) -> Polyhedron:
        return self._replace(plane_ids=None, n_planes=0, form_ids=None)

    def _replace(self, **changes: Any) -> Polyhedron:
        kw = {
            "vertices": self.vertices,
            "face_vertices": self.face_vertices,
            "face_offsets": self.face_offsets,
            "normals": self.normals,
            "distances": self.distances,
            "face_areas": self.face_areas,
            "hkl": self.hkl,
            "form_ids": self.form_ids,
            "form_labels": self.form_labels,
            "face_labels": self.face_labels,
            "plane_ids": self.plane_ids,
            "n_planes": self.n_planes,
            "vertex_hkl": self.vertex_hkl,
        }
        kw.update(changes)
        return Polyhedron(**kw)

    # ------------------------------------------------------------------ structure
    @property
    def n_vertices(self) -> int:
        """Number of vertices V."""
        return int(self.vertices.shape[0])

    @property
    def n_faces(self) -> int:
        """Number of faces F."""
        return int(self.face_offsets.size - 1)

    @property
    def n_edges(self) -> int:
        """Number of edges E."""
        return int(self.edges.shape[0])

    @property
    def faces(self) -> tuple[IntArray, ...]:
        """Vertex loops, one int array per face, counter-clockwise seen from outside."""
        return tuple(np.split(self.face_vertices, self.face_offsets[1:-1]))

    @property
    def face_sizes(self) -> IntArray:
        """Number of vertices (= edges) of each face, (F,)."""
        return np.diff(self.face_offsets)

    @property
    def present(self) -> BoolArray:
        """For a polyhedron built from planes: (N,) bool, True where plane i is a face."""
        mask = np.zeros(self.n_planes, dtype=bool)
        if self.plane_ids is not None:
            mask[self.plane_ids] = True
        return mask

    def _edge_data(self) -> tuple[IntArray, IntArray]:
        if "edges" not in self._cache:
            e, ef = edges_from_loops(self.face_vertices, self.face_offsets)
            e.setflags(write=False)
            ef.setflags(write=False)
            self._cache["edges"] = (e, ef)
        out: tuple[IntArray, IntArray] = self._cache["edges"]
        return out

    @property
    def edges(self) -> IntArray:
        """Vertex index pairs of the edges, (E, 2)."""
        return self._edge_data()[0]

    @property
    def edge_faces(self) -> IntArray:
        """The two faces meeting at each edge, (E, 2) (left face of ``a -> b`` first)."""
        return self._edge_data()[1]

    @property
    def vertex_degrees(self) -> IntArray:
        """Number of edges at each vertex, (V,)."""
        return np.bincount(self.edges.ravel(), minlength=self.n_vertices)

    @property
    def euler_characteristic(self) -> int:
        """V - E + F (2 for every convex polyhedron)."""
        return self.n_vertices - self.n_edges + self.n_faces

    @property
    def flag_count(self) -> int:
        """Number of flags (vertex, edge, face incident triples) = 4E."""
        return 4 * self.n_edges

    # ------------------------------------------------------------------ metrics
    @property
    def volume(self) -> float:
        """Volume, Å³: (1/3) sum of distance x area over faces."""
        return float(np.dot(self.distances, self.face_areas) / 3.0)

    @property
    def area(self) -> float:
        """Total surface area, Å²."""
        return float(self.face_areas.sum())

    @property
    def n_forms(self) -> int:
        """Number of form ids (max id + 1)."""
        fid = np.asarray(self.form_ids)
        return int(fid.max()) + 1 if fid.size else 0

    @property
    def area_by_form(self) -> FloatArray:
        """Area of each form (indexed by form id), Å², (n_forms,)."""
        fid = np.asarray(self.form_ids)
        return np.bincount(fid, self.face_areas, minlength=self.n_forms)

    @property
    def area_fractions_by_form(self) -> FloatArray:
        """Fraction of the surface area on each form, (n_forms,)."""
        a = self.area_by_form
        return np.asarray(a / a.sum(), dtype=np.float64)

    @property
    def edge_lengths(self) -> FloatArray:
        """Length of each edge, Å, (E,)."""
        e = self.edges
        diff = self.vertices[e[:, 1]] - self.vertices[e[:, 0]]
        return np.sqrt(np.einsum("ij,ij->i", diff, diff))

    @property
    def interfacial_angles(self) -> FloatArray:
        """Angle between the normals of the two faces at each edge, radians, (E,)."""
        ef = self.edge_faces
        c = np.einsum("ij,ij->i", self.normals[ef[:, 0]], self.normals[ef[:, 1]])
        return np.arccos(np.clip(c, -1.0, 1.0))

    @property
    def dihedral_angles(self) -> FloatArray:
        """Interior (dihedral) angle at each edge, radians: pi - interfacial angle, (E,)."""
        return np.pi - self.interfacial_angles

    @property
    def centroid(self) -> FloatArray:
        """Centre of mass of the solid (uniform density), Å, (3,)."""
        corners, _ = fan_triangles(self.face_offsets)
        tri = self.vertices[self.face_vertices[corners]]  # (T, 3, 3)
        a, b, c = tri[:, 0], tri[:, 1], tri[:, 2]
        # signed volume of tetrahedron (0, a, b, c) times 6
        v6 = np.einsum("ij,ij->i", a, np.cross(b, c))
        return np.asarray((v6[:, None] * (a + b + c)).sum(axis=0) / (4.0 * v6.sum()))

    @property
    def circumradius(self) -> float:
        """Largest distance of a vertex from the origin (the Wulff point), Å."""
        return float(np.sqrt(np.einsum("ij,ij->i", self.vertices, self.vertices).max()))

    @property
    def inradius(self) -> float:
        """Radius of the largest sphere about the origin inside the solid, Å (min distance)."""
        return float(self.distances.min())

    @property
    def midradius(self) -> float:
        """Mean distance of the edges (as segments' lines) from the origin, Å."""
        e = self.edges
        a = self.vertices[e[:, 0]]
        b = self.vertices[e[:, 1]]
        t = b - a
        s = -np.einsum("ij,ij->i", a, t) / np.einsum("ij,ij->i", t, t)
        foot = a + s[:, None] * t
        return float(np.sqrt(np.einsum("ij,ij->i", foot, foot)).mean())

    @property
    def equivalent_sphere_diameter(self) -> float:
        """Diameter of the sphere with the same volume, Å: (6 V / pi)^(1/3)."""
        return float((6.0 * self.volume / np.pi) ** (1.0 / 3.0))

    @property
    def sphericity(self) -> float:
        """Wadell sphericity: area of the equal-volume sphere / surface area (1 = sphere)."""
        return float(np.pi ** (1.0 / 3.0) * (6.0 * self.volume) ** (2.0 / 3.0) / self.area)

    @property
    def face_angles(self) -> FloatArray:
        """Interior angle of each face at each loop entry, radians, (M,) like face_vertices."""
        fv = self.face_vertices
        p = self.vertices[fv]
        a = self.vertices[fv[_prev_in_loop(self.face_offsets)]] - p
        b = self.vertices[fv[_next_in_loop(self.face_offsets)]] - p
        cosv = np.einsum("ij,ij->i", a, b) / np.sqrt(
            np.einsum("ij,ij->i", a, a) * np.einsum("ij,ij->i", b, b)
        )
        return np.arccos(np.clip(cosv, -1.0, 1.0))

    @property
    def angle_defects(self) -> FloatArray:
        """Angle defect at each vertex, 2 pi - sum of face angles there, radians, (V,)."""
        s = np.bincount(self.face_vertices, self.face_angles, minlength=self.n_vertices)
        return np.asarray(2.0 * np.pi - s, dtype=np.float64)

    def face_centroids(self) -> FloatArray:
        """Area centroid of each face, Å, (F, 3)."""
        corners, face_of = fan_triangles(self.face_offsets)
        tri = self.vertices[self.face_vertices[corners]]  # (T, 3, 3)
        cr = np.cross(tri[:, 1] - tri[:, 0], tri[:, 2] - tri[:, 0])
        w = np.einsum("ij,ij->i", cr, self.normals[face_of])  # 2 x triangle area
        c = tri.mean(axis=1) * w[:, None]
        out = np.zeros((self.n_faces, 3))
        np.add.at(out, face_of, c)
        tot = np.bincount(face_of, w, minlength=self.n_faces)
        return np.asarray(out / tot[:, None], dtype=np.float64)

    def metrics(self) -> dict[str, float | int]:
        """Return the scalar metrics as a dict whose keys carry their units."""
        return {
            "volume_A3": self.volume,
            "surface_area_A2": self.area,
            "n_vertices": self.n_vertices,
            "n_edges": self.n_edges,
            "n_faces": self.n_faces,
            "euler_characteristic": self.euler_characteristic,
            "circumradius_A": self.circumradius,
            "inradius_A": self.inradius,
            "equivalent_sphere_diameter_A": self.equivalent_sphere_diameter,
            "sphericity": self.sphericity,
        }

    # ------------------------------------------------------------------ new objects
    def scaled(self, factor: float) -> Polyhedron:
        """Return a copy scaled about the origin by ``factor`` (> 0)."""
        f = float(factor)
        if not np.isfinite(f) or f <= 0:
            raise InputError(f"scale factor must be finite and > 0; got {factor!r}.")
        return self._replace(
            vertices=self.vertices * f,
            distances=self.distances * f,
            face_areas=self.face_areas * (f * f),
        )

    def translated(self, shift: ArrayLike) -> Polyhedron:
        """Return a copy moved by ``shift`` (3,), Å (distances change by n . shift)."""
        t = np.asarray(shift, dtype=np.float64)
        if t.shape != (3,) or not np.isfinite(t).all():
            raise InputError(f"shift must be 3 finite numbers; got {t!r}.")
        return self._replace(
            vertices=self.vertices + t, distances=self.distances + self.normals @ t
        )

    def rotated(self, rotation: ArrayLike) -> Polyhedron:
        """Return a copy transformed by an orthogonal matrix about the origin.

        Parameters
        ----------
        rotation : (3, 3) array_like
            Orthogonal matrix acting on column vectors (``x' = R x``). An improper one
            (det -1) is allowed; loops are reversed so they stay counter-clockwise.
        """
        r = np.asarray(rotation, dtype=np.float64)
        if r.shape != (3, 3) or not np.allclose(r @ r.T, np.eye(3), atol=1e-9):
            raise InputError("rotation must be an orthogonal (3, 3) matrix (R R^T = I).")
        out = self._replace(vertices=self.vertices @ r.T, normals=self.normals @ r.T)
        if np.linalg.det(r) < 0:
            out = out._replace(face_vertices=_reverse_loops(self.face_vertices, self.face_offsets))
        return out

    def with_labels(
        self,
        *,
        form_labels: tuple[str, ...] | list[str] | None = None,
        face_labels: tuple[str, ...] | list[str] | None = None,
        hkl: ArrayLike | None = None,
        form_ids: ArrayLike | None = None,
    ) -> Polyhedron:
        """Return a copy with new labels (arguments left as None keep the old ones)."""
        ch: dict[str, Any] = {}
        if form_labels is not None:
            ch["form_labels"] = tuple(form_labels)
        if face_labels is not None:
            ch["face_labels"] = tuple(face_labels)
        if hkl is not None:
            ch["hkl"] = hkl
        if form_ids is not None:
            ch["form_ids"] = form_ids
        return self._replace(**ch)

    def dual(
        self,
        centre: ArrayLike | None = None,
        scale: Literal["midsphere", "insphere"] | float | None = "midsphere",
    ) -> DualResult:
        """Polar reciprocal about a sphere: faces become vertices and vertices faces.

        The face plane ``n . (x - c) = d`` becomes the vertex ``c + rho^2 n / d`` and the
        vertex ``v`` the plane with normal ``(v - c)/|v - c|`` at distance
        ``rho^2 / |v - c|`` from ``c``.

        Parameters
        ----------
        centre : (3,) array_like, optional
            Centre of reciprocation, Å. Default: the origin (the Wulff point) when it lies
            strictly inside, else the centroid.
        scale : {"midsphere", "insphere"} or float or None
            Radius ``rho``: the mean distance of the edges from the centre
            ("midsphere", exact for polyhedra whose edges touch one sphere), the least
            face distance ("insphere"), a given radius in Å, or None for 1 Å.

        Returns
        -------
        DualResult
            The dual (its vertices carry the ``hkl`` of the faces they came from) and the
            face <-> vertex correspondence.

        References
        ----------
        .. [1] H. S. M. Coxeter, *Regular Polytopes*, 3rd ed. (1973), section 2.8.
        """
        if centre is None:
            c = np.zeros(3) if (self.distances > 0).all() else self.centroid
        else:
            c = np.asarray(centre, dtype=np.float64)
        d = self.distances - self.normals @ c
        if (d <= 0).any():
            raise InputError("the centre of reciprocation must lie strictly inside the solid.")
        if scale is None:
            rho = 1.0
        elif isinstance(scale, str):
            if scale == "midsphere":
                rho = self.translated(-c).midradius
            elif scale == "insphere":
                rho = float(d.min())
            else:
                raise InputError(
                    f"scale must be 'midsphere', 'insphere', a radius or None; got {scale!r}."
                )
        else:
            rho = float(scale)
            if not np.isfinite(rho) or rho <= 0:
                raise InputError(f"scale radius must be finite and > 0; got {scale!r}.")
        rel = self.vertices - c  # (V, 3)
        r = np.sqrt(np.einsum("ij,ij->i", rel, rel))
        dual0 = Polyhedron.from_halfspaces(rel / r[:, None], rho * rho / r)
        if dual0.n_faces != self.n_vertices:
            raise EmptyPolyhedronError(  # pragma: no cover - only for degenerate input
                "the dual lost faces: some vertices of the original are not extreme points."
            )
        expected = rho * rho * self.normals / d[:, None]  # (F, 3) dual vertices
        dist = ((expected[:, None, :] - dual0.vertices[None, :, :]) ** 2).sum(axis=2)
        match = dist.argmin(axis=1)  # original face -> dual vertex (before reordering)
        if np.unique(match).size != self.n_faces or dual0.n_vertices != self.n_faces:
            raise EmptyPolyhedronError(  # pragma: no cover
                "the dual's vertices do not match the original faces one to one."
            )
        # renumber dual vertices so that dual vertex i comes from original face i
        inv = np.empty_like(match)
        inv[match] = np.arange(match.size)
        dual = Polyhedron(
            vertices=expected + c,
            face_vertices=inv[dual0.face_vertices],
            face_offsets=dual0.face_offsets,
            normals=dual0.normals,
            distances=dual0.distances + dual0.normals @ c,
            face_areas=dual0.face_areas,
            vertex_hkl=self.hkl,
        )
        face_of_vertex = np.empty(self.n_vertices, dtype=np.int64)
        face_of_vertex[np.asarray(dual0.plane_ids)] = np.arange(dual0.n_faces)
        return DualResult(
            polyhedron=dual,
            vertex_of_face=np.arange(self.n_faces),
            face_of_vertex=face_of_vertex,
            radius=rho,
            centre=c,
        )


def _reverse_loops(face_vertices: IntArray, face_offsets: IntArray) -> IntArray:
    """Reverse the direction of every loop, keeping its first vertex first."""
    sizes = np.diff(face_offsets)
    face_of = np.repeat(np.arange(sizes.size), sizes)
    start = face_offsets[:-1][face_of]
    k = np.arange(face_vertices.size) - start  # position within loop
    src = start + (-k) % sizes[face_of]
    return np.asarray(face_vertices[src])
