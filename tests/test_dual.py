"""Duals of the reference solids (polar reciprocation), against the classical pairs."""

from __future__ import annotations

import numpy as np
import pytest

from habit.shapes import shape_name
from habit.solids import reference_polyhedron

# Dual pairs and face/vertex counts: Coxeter, Regular Polytopes (1973), Table I; Catalan
# solids as duals of the Archimedean ones: Wenninger, Dual Models (1983) (from memory).
PAIRS = [
    ("cube", "octahedron", (6, 12, 8)),
    ("dodecahedron", "icosahedron", (12, 30, 20)),
    ("tetrahedron", "tetrahedron", (4, 6, 4)),
    ("cuboctahedron", "rhombic dodecahedron", (14, 24, 12)),
    ("rhombicuboctahedron", "deltoidal icositetrahedron", (26, 48, 24)),
    ("truncated octahedron", "tetrakis hexahedron", (14, 36, 24)),
]


@pytest.mark.parametrize(("solid", "dual_name", "vef"), PAIRS, ids=[p[0] for p in PAIRS])
def test_dual_pairs(solid, dual_name, vef):
    poly = reference_polyhedron(solid)
    result = poly.dual()
    dual = result.polyhedron
    assert (dual.n_vertices, dual.n_edges, dual.n_faces) == vef
    # faces <-> vertices: the dual has one vertex per face of the original
    assert dual.n_vertices == poly.n_faces and dual.n_faces == poly.n_vertices
    assert sorted(result.vertex_of_face.tolist()) == list(range(poly.n_faces))
    if dual_name in ("octahedron", "icosahedron", "tetrahedron", "rhombic dodecahedron"):
        assert shape_name(dual) == dual_name


def test_tetrahedron_is_self_dual_metrically_at_midsphere_scale():
    # reciprocation in the midsphere maps a regular tetrahedron onto its point reflection
    # (Coxeter 1973, §2.8): same edge length, same midradius
    tet = reference_polyhedron("tetrahedron")
    dual = tet.dual(scale="midsphere").polyhedron
    assert np.allclose(np.sort(dual.edge_lengths), np.sort(tet.edge_lengths), rtol=1e-12)
    assert dual.midradius == pytest.approx(tet.midradius, rel=1e-12)
    assert dual.volume == pytest.approx(tet.volume, rel=1e-12)
    # and its vertices are the original's reflected through the centre
    reflected = -tet.vertices
    d = np.linalg.norm(dual.vertices[:, None, :] - reflected[None, :, :], axis=-1)
    assert np.allclose(d.min(axis=1), 0.0, atol=1e-12)


@pytest.mark.parametrize("solid", ["cube", "icosahedron", "snub cube", "cuboctahedron"])
def test_dual_of_dual_is_the_original(solid):
    poly = reference_polyhedron(solid)
    twice = poly.dual(scale="midsphere").polyhedron.dual(scale="midsphere").polyhedron
    d = np.linalg.norm(twice.vertices[:, None, :] - poly.vertices[None, :, :], axis=-1)
    assert np.allclose(d.min(axis=1), 0.0, atol=1e-9 * poly.circumradius)
    assert twice.n_faces == poly.n_faces


# --- Catalan solids by name: duals of the Archimedean solids --------------------------------
from habit.solids import ARCHIMEDEAN, CATALAN  # noqa: E402

# (V, E, F) of each Catalan solid = (F, E, V) of its Archimedean dual (Euler; Wenninger,
# Dual Models, 1983, from memory for the names)
ARCH_VEF = {
    "truncated tetrahedron": (12, 18, 8),
    "cuboctahedron": (12, 24, 14),
    "truncated cube": (24, 36, 14),
    "truncated octahedron": (24, 36, 14),
    "rhombicuboctahedron": (24, 48, 26),
    "truncated cuboctahedron": (48, 72, 26),
    "snub cube": (24, 60, 38),
    "icosidodecahedron": (30, 60, 32),
    "truncated dodecahedron": (60, 90, 32),
    "truncated icosahedron": (60, 90, 32),
    "rhombicosidodecahedron": (60, 120, 62),
    "truncated icosidodecahedron": (120, 180, 62),
    "snub dodecahedron": (60, 150, 92),
}


@pytest.mark.parametrize("name", sorted(CATALAN))
def test_catalan_solids_by_name(name):
    poly = reference_polyhedron(name)
    v, e, f = ARCH_VEF[CATALAN[name]]
    assert (poly.n_vertices, poly.n_edges, poly.n_faces) == (f, e, v)
    # a Catalan solid has all its faces tangent to one sphere (insphere): equal distances
    assert np.ptp(poly.distances) < 1e-9 * poly.distances.max()


@pytest.mark.parametrize("name", ARCHIMEDEAN)
def test_archimedean_solids_are_named(name):
    poly = reference_polyhedron(name)
    assert (poly.n_vertices, poly.n_edges, poly.n_faces) == ARCH_VEF[name]
    assert shape_name(poly) == name
