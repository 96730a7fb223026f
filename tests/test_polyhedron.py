"""Polyhedron: invariants over random plane sets, transformations, duals, metrics."""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from hypothesis.extra.numpy import arrays
from poly_samples import (
    CUBE_NORMALS,
    DODECAHEDRON_NORMALS,
    ICOSAHEDRON_NORMALS,
    OCTAHEDRON_NORMALS,
    TETRAHEDRON_NORMALS,
    cubic_planes,
    random_rotation,
)

from habit.errors import EmptyPolyhedronError, InputError
from habit.polyhedron import Polyhedron, edges_from_loops, fan_triangles

SETTINGS = settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])


@st.composite
def plane_sets(draw: st.DrawFn) -> tuple[np.ndarray, np.ndarray]:
    """Eight octahedral planes (so the set is closed) plus up to 18 random ones.

    The random normals come from a seeded numpy generator; a normal within 2.6 degrees
    of an earlier one is dropped, so no two planes are near-duplicates.
    """
    k = draw(st.integers(0, 18))
    seed = draw(st.integers(0, 2**32 - 1))
    base_d = draw(arrays(np.float64, (8,), elements=st.floats(0.8, 1.6)))
    rng = np.random.default_rng(seed)
    extra = rng.normal(size=(k, 3))
    extra /= np.linalg.norm(extra, axis=1)[:, None]
    n = np.vstack([OCTAHEDRON_NORMALS, extra])
    d = np.concatenate([base_d, rng.uniform(0.5, 2.0, size=k)])
    cosines = np.triu(n @ n.T, 1)
    keep = ~(cosines > 0.999).any(axis=0)
    return n[keep], d[keep]


def _faces_on_planes(p: Polyhedron) -> float:
    # largest |n_f . v - d_f| over the vertices of every face
    worst = 0.0
    for f, loop in enumerate(p.faces):
        worst = max(worst, float(np.abs(p.vertices[loop] @ p.normals[f] - p.distances[f]).max()))
    return worst


@SETTINGS
@given(plane_sets())
def test_random_planes_invariants(planes: tuple[np.ndarray, np.ndarray]) -> None:
    n, d = planes
    p = Polyhedron.from_halfspaces(n, d)
    size = p.circumradius
    # every present face lies in its plane, at distance d from the origin
    assert _faces_on_planes(p) < 1e-9 * size
    assert np.allclose(p.distances, d[p.plane_ids])
    # no vertex outside any plane
    assert (p.vertices @ n.T - d).max() < 1e-9 * size
    # Euler (V - E + F = 2) and Descartes (total angle defect 4 pi = 720 degrees);
    # Coxeter, Regular Polytopes (1973), sections 1.6 and 9.1.
    assert p.euler_characteristic == 2
    assert p.angle_defects.sum() == pytest.approx(4 * math.pi, rel=1e-9)
    assert (p.angle_defects > 0).all()
    # loops are counter-clockwise from outside: Newell normal agrees with the face normal
    for f, loop in enumerate(p.faces):
        v = p.vertices[loop]
        newell = np.cross(v, np.roll(v, -1, axis=0)).sum(axis=0)
        assert newell @ p.normals[f] > 0
    # areas from the loops agree with the stored areas
    corners, face_of = fan_triangles(p.face_offsets)
    tri = p.vertices[p.face_vertices[corners]]
    a = 0.5 * np.linalg.norm(np.cross(tri[:, 1] - tri[:, 0], tri[:, 2] - tri[:, 0]), axis=1)
    assert np.allclose(np.bincount(face_of, a), p.face_areas, rtol=1e-9, atol=1e-12 * size**2)
    # volume against scipy's convex hull of the vertices (independent reference library)
    from scipy.spatial import ConvexHull

    assert p.volume == pytest.approx(ConvexHull(p.vertices).volume, rel=1e-9)


@SETTINGS
@given(plane_sets(), st.floats(0.1, 10.0))
def test_scaling_distances(planes: tuple[np.ndarray, np.ndarray], k: float) -> None:
    n, d = planes
    p = Polyhedron.from_halfspaces(n, d)
    q = Polyhedron.from_halfspaces(n, k * d)
    assert q.n_faces == p.n_faces and q.plane_ids.tolist() == p.plane_ids.tolist()
    assert np.sort(q.edge_lengths) == pytest.approx(k * np.sort(p.edge_lengths), rel=1e-9)
    assert q.area_fractions_by_form == pytest.approx(p.area_fractions_by_form, abs=1e-12)
    assert q.volume == pytest.approx(k**3 * p.volume, rel=1e-9)
    s = p.scaled(k)
    assert s.volume == pytest.approx(q.volume, rel=1e-12)
    assert s.face_areas == pytest.approx(q.face_areas, rel=1e-9)


@SETTINGS
@given(plane_sets(), st.randoms(use_true_random=False))
def test_plane_order_does_not_matter(planes: tuple[np.ndarray, np.ndarray], rnd) -> None:
    n, d = planes
    perm = list(range(len(d)))
    rnd.shuffle(perm)
    perm = np.array(perm)
    p = Polyhedron.from_halfspaces(n, d)
    q = Polyhedron.from_halfspaces(n[perm], d[perm])
    assert q.volume == pytest.approx(p.volume, rel=1e-12)
    # the same planes are present, with the same areas
    area_p = np.zeros(len(d))
    area_p[p.plane_ids] = p.face_areas
    area_q = np.zeros(len(d))
    area_q[perm[q.plane_ids]] = q.face_areas
    assert area_q == pytest.approx(area_p, rel=1e-9, abs=1e-12)
    assert sorted(map(tuple, np.round(q.vertices, 9))) == sorted(
        map(tuple, np.round(p.vertices, 9))
    )


@SETTINGS
@given(plane_sets(), st.integers(0, 2**32 - 1))
def test_rotation_invariance(planes: tuple[np.ndarray, np.ndarray], seed: int) -> None:
    n, d = planes
    rot = random_rotation(np.random.default_rng(seed))
    p = Polyhedron.from_halfspaces(n, d)
    q = Polyhedron.from_halfspaces(n @ rot.T, d)
    assert q.volume == pytest.approx(p.volume, rel=1e-10)
    assert q.area == pytest.approx(p.area, rel=1e-10)
    r = p.rotated(rot)
    assert r.vertices == pytest.approx(p.vertices @ rot.T)
    assert r.volume == pytest.approx(p.volume, rel=1e-12)


@SETTINGS
@given(plane_sets())
def test_dual_of_dual_is_the_original(planes: tuple[np.ndarray, np.ndarray]) -> None:
    n, d = planes
    p = Polyhedron.from_halfspaces(n, d)
    first = p.dual(scale=None)
    dual = first.polyhedron
    # combinatorial duality: V <-> F, E = E
    assert (dual.n_vertices, dual.n_edges, dual.n_faces) == (p.n_faces, p.n_edges, p.n_vertices)
    back = dual.dual(scale=None).polyhedron
    assert (back.n_vertices, back.n_edges, back.n_faces) == (p.n_vertices, p.n_edges, p.n_faces)
    # reciprocation in the unit sphere is an involution: the same vertices and planes
    assert back.vertices == pytest.approx(p.vertices, rel=1e-8, abs=1e-10)
    assert back.normals == pytest.approx(p.normals, abs=1e-9)
    assert back.distances == pytest.approx(p.distances, rel=1e-9)
    # the dual vertex of face f is at n_f / d_f (polar, rho = 1)
    assert dual.vertices[first.vertex_of_face] == pytest.approx(p.normals / p.distances[:, None])


@SETTINGS
@given(plane_sets())
def test_dual_of_dual_with_midsphere_scaling(planes: tuple[np.ndarray, np.ndarray]) -> None:
    n, d = planes
    p = Polyhedron.from_halfspaces(n, d)
    back = p.dual().polyhedron.dual().polyhedron
    # Each reciprocation picks its own radius; the result is the original up to a scale.
    k = back.circumradius / p.circumradius
    assert back.vertices == pytest.approx(k * p.vertices, rel=1e-8, abs=1e-10)


def test_cube_octahedron_duality_and_midsphere() -> None:
    cube = Polyhedron.from_halfspaces(CUBE_NORMALS, np.ones(6))
    res = cube.dual()  # midsphere radius sqrt 2: the dual octahedron's edges touch it too
    octa = res.polyhedron
    assert res.radius == pytest.approx(math.sqrt(2))
    assert (octa.n_vertices, octa.n_faces) == (6, 8)
    assert octa.midradius == pytest.approx(cube.midradius, rel=1e-12)
    assert octa.vertices == pytest.approx(2.0 * CUBE_NORMALS)  # rho^2 / d = 2
    assert sorted(res.face_of_vertex.tolist()) == list(range(8))


def test_dual_vertices_carry_hkl() -> None:
    n, d, hkl, fid = cubic_planes({(1, 0, 0): 1.0, (1, 1, 1): 1.0})
    p = Polyhedron.from_halfspaces(n, d, hkl=hkl, form_ids=fid)
    res = p.dual()
    assert res.polyhedron.vertex_hkl is not None
    assert res.polyhedron.vertex_hkl[res.vertex_of_face].tolist() == p.hkl.tolist()
    # the vertex from face (hkl) lies along the normal of (hkl)
    v = res.polyhedron.vertices[res.vertex_of_face]
    cos = np.einsum("ij,ij->i", v / np.linalg.norm(v, axis=1)[:, None], p.normals)
    assert cos == pytest.approx(np.ones(p.n_faces))


def test_frozen_and_read_only() -> None:
    p = Polyhedron.from_halfspaces(CUBE_NORMALS, np.ones(6))
    with pytest.raises(dataclasses.FrozenInstanceError):
        p.vertices = np.zeros((8, 3))  # type: ignore[misc]
    with pytest.raises(ValueError, match="read-only"):
        p.vertices[0, 0] = 5.0
    with pytest.raises(ValueError, match="read-only"):
        p.face_areas[0] = 5.0
    with pytest.raises((AttributeError, TypeError)):
        p.new_attribute = 1  # type: ignore[attr-defined]


def test_cube_metrics() -> None:
    # Cube of edge 2 about the origin (closed forms).
    p = Polyhedron.from_halfspaces(CUBE_NORMALS, np.ones(6))
    assert (p.n_vertices, p.n_edges, p.n_faces, p.flag_count) == (8, 12, 6, 48)
    assert p.edge_lengths == pytest.approx(np.full(12, 2.0))
    assert p.interfacial_angles == pytest.approx(np.full(12, math.pi / 2))
    assert p.dihedral_angles == pytest.approx(np.full(12, math.pi / 2))
    assert p.circumradius == pytest.approx(math.sqrt(3))
    assert p.inradius == pytest.approx(1.0)
    assert p.midradius == pytest.approx(math.sqrt(2))
    assert p.centroid == pytest.approx(np.zeros(3), abs=1e-12)
    assert p.angle_defects == pytest.approx(np.full(8, math.pi / 2))
    # Wadell sphericity of a cube (pi/6)^(1/3) = 0.806 (closed form from the definition)
    assert p.sphericity == pytest.approx((math.pi / 6) ** (1 / 3), rel=1e-12)
    assert p.equivalent_sphere_diameter == pytest.approx((48 / math.pi) ** (1 / 3))
    assert p.vertex_degrees.tolist() == [3] * 8


def test_octahedron_interfacial_angle() -> None:
    # (111)^(11-1) = 70.53 degrees = arccos(1/3) between octahedron face normals
    # (International Tables / common practice; exact arccos(1/3)).
    p = Polyhedron.from_halfspaces(OCTAHEDRON_NORMALS, np.ones(8))
    assert p.interfacial_angles == pytest.approx(np.full(12, math.acos(1 / 3)))
    # dihedral angle of the regular octahedron 109.47 degrees
    assert p.dihedral_angles == pytest.approx(np.full(12, math.pi - math.acos(1 / 3)))


@pytest.mark.parametrize(
    "normals", [TETRAHEDRON_NORMALS, DODECAHEDRON_NORMALS, ICOSAHEDRON_NORMALS], ids=str
)
def test_edges_pair_faces_across(normals: np.ndarray) -> None:
    p = Polyhedron.from_halfspaces(normals, np.ones(len(normals)))
    e, ef = p.edges, p.edge_faces
    for (a, b), (f0, f1) in zip(e.tolist(), ef.tolist(), strict=True):
        assert f0 != f1
        for f in (f0, f1):
            assert a in p.faces[f] and b in p.faces[f]


def test_edges_from_open_surface_raise() -> None:
    fv = np.array([0, 1, 2, 0, 2, 3])
    with pytest.raises(InputError, match="closed surface"):
        edges_from_loops(fv, np.array([0, 3, 6]))


def test_from_vertices_merges_coplanar_triangles() -> None:
    rng = np.random.default_rng(7)
    corners = np.array([[x, y, z] for x in (0, 2) for y in (0, 3) for z in (0, 5)], float)
    # add points inside and on faces / edges: none of them becomes a vertex
    inside = rng.uniform(0.1, 1.9, size=(20, 3)) * [1, 1.5, 2.5]
    on_face = np.c_[rng.uniform(0, 2, 5), np.full(5, 3.0), rng.uniform(0, 5, 5)]
    box = Polyhedron.from_vertices(np.vstack([corners, inside, on_face]))
    assert (box.n_vertices, box.n_edges, box.n_faces) == (8, 12, 6)
    assert box.volume == pytest.approx(30.0, rel=1e-12)
    assert box.area == pytest.approx(2 * (6 + 10 + 15), rel=1e-12)
    assert sorted(map(tuple, box.vertices.round(9))) == sorted(map(tuple, corners))


def test_from_vertices_rejects_flat_input() -> None:
    with pytest.raises(EmptyPolyhedronError):
        Polyhedron.from_vertices([[0, 0, 0], [1, 0, 0], [0, 1, 0], [1, 1, 0]])
    with pytest.raises(EmptyPolyhedronError):
        Polyhedron.from_vertices([[0, 0, 0], [1, 0, 0], [0, 1, 0]])
    with pytest.raises(InputError):
        Polyhedron.from_vertices([[0, 0, float("nan")]] * 5)


def test_translated_and_improper_rotation_keep_orientation() -> None:
    n, d, hkl, fid = cubic_planes({(1, 0, 0): 1.0, (1, 1, 1): 1.1})
    p = Polyhedron.from_halfspaces(n, d)
    t = p.translated([1.0, -2.0, 0.5])
    assert t.volume == pytest.approx(p.volume, rel=1e-12)
    assert t.centroid == pytest.approx([1.0, -2.0, 0.5], abs=1e-12)
    mirror = np.diag([-1.0, 1.0, 1.0])
    m = p.rotated(mirror)
    assert m.volume == pytest.approx(p.volume, rel=1e-12)
    edges_from_loops(m.face_vertices, m.face_offsets)  # still a consistent surface
    for f, loop in enumerate(m.faces):
        v = m.vertices[loop]
        assert np.cross(v, np.roll(v, -1, axis=0)).sum(axis=0) @ m.normals[f] > 0
    with pytest.raises(InputError, match="orthogonal"):
        p.rotated(np.eye(3) * 2)
    with pytest.raises(InputError, match="> 0"):
        p.scaled(-1.0)


def test_labels_and_forms() -> None:
    n, d, hkl, fid = cubic_planes({(1, 0, 0): 1.0, (1, 1, 1): 1.0})
    p = Polyhedron.from_halfspaces(n, d, hkl=hkl, form_ids=fid, form_labels=["{100}", "{111}"])
    assert p.n_forms == 2
    assert p.area_by_form.sum() == pytest.approx(p.area)
    q = p.with_labels(face_labels=[f"f{i}" for i in range(p.n_faces)])
    assert q.face_labels[3] == "f3" and q.form_labels == ("{100}", "{111}")
    assert p.face_labels is None  # the original is unchanged
    with pytest.raises(InputError, match="one label per face"):
        p.with_labels(face_labels=["x"])
    assert p.present.tolist() == [True] * 14
