"""Reference solids: counts, regularity and lookup.

Sources: V, E, F of the Platonic solids from Coxeter, *Regular Polytopes* (3rd ed. 1973),
Table I; Archimedean counts and face types are common practice (the standard tables of
the 13 Archimedean solids); circumradius/edge ratios of the snub solids from memory.
"""

from __future__ import annotations

import numpy as np
import pytest

from habit._convex import hull_facets
from habit.errors import UnknownSymbolError
from habit.solids import ARCHIMEDEAN, PLATONIC, reference_solid, solid_names

# name: (V, E, F, {face size: count})
COUNTS = {
    # Coxeter 1973, Table I (exact)
    "tetrahedron": (4, 6, 4, {3: 4}),
    "cube": (8, 12, 6, {4: 6}),
    "octahedron": (6, 12, 8, {3: 8}),
    "dodecahedron": (20, 30, 12, {5: 12}),
    "icosahedron": (12, 30, 20, {3: 20}),
    # common practice (standard table of Archimedean solids), exact
    "truncated tetrahedron": (12, 18, 8, {3: 4, 6: 4}),
    "cuboctahedron": (12, 24, 14, {3: 8, 4: 6}),
    "truncated cube": (24, 36, 14, {3: 8, 8: 6}),
    "truncated octahedron": (24, 36, 14, {4: 6, 6: 8}),
    "rhombicuboctahedron": (24, 48, 26, {3: 8, 4: 18}),
    "truncated cuboctahedron": (48, 72, 26, {4: 12, 6: 8, 8: 6}),
    "snub cube": (24, 60, 38, {3: 32, 4: 6}),
    "icosidodecahedron": (30, 60, 32, {3: 20, 5: 12}),
    "truncated dodecahedron": (60, 90, 32, {3: 20, 10: 12}),
    "truncated icosahedron": (60, 90, 32, {5: 12, 6: 20}),
    "rhombicosidodecahedron": (60, 120, 62, {3: 20, 4: 30, 5: 12}),
    "truncated icosidodecahedron": (120, 180, 62, {4: 30, 6: 20, 10: 12}),
    "snub dodecahedron": (60, 150, 92, {3: 80, 5: 12}),
    # common practice: rhombic dodecahedron 14/24/12 (also eg-models), hexagonal prism,
    # elongated dodecahedron (8 rhombi + 4 hexagons)
    "rhombic dodecahedron": (14, 24, 12, {4: 12}),
    "hexagonal prism": (12, 18, 8, {4: 6, 6: 2}),
    "elongated dodecahedron": (18, 28, 12, {4: 8, 6: 4}),
}

UNIFORM = PLATONIC + ARCHIMEDEAN


def test_names_cover_18_uniform_solids_and_fillers():
    assert len(PLATONIC) == 5 and len(ARCHIMEDEAN) == 13  # Coxeter 1973; common practice
    assert set(solid_names()) == set(COUNTS)


@pytest.mark.parametrize("name", list(COUNTS), ids=list(COUNTS))
def test_counts_and_euler(name):
    v = reference_solid(name)
    h = hull_facets(v)
    nv, ne, nf, ftypes = COUNTS[name]
    assert len(v) == nv and len(h.points) == nv  # every given point is a hull vertex
    assert len(h.edges) == ne
    assert len(h.faces) == nf
    assert len(v) - len(h.edges) + len(h.faces) == 2  # Euler (exact)
    sizes, counts = np.unique([len(f) for f in h.faces], return_counts=True)
    assert dict(zip(sizes.tolist(), counts.tolist(), strict=True)) == ftypes


@pytest.mark.parametrize("name", UNIFORM, ids=UNIFORM)
def test_equal_edges_and_one_circumsphere(name):
    # uniform polyhedra: all edges equal, all vertices on a sphere (definition; 1e-12 rel)
    v = reference_solid(name)
    h = hull_facets(v)
    e = h.edges
    lengths = np.linalg.norm(h.points[e[:, 0]] - h.points[e[:, 1]], axis=1)
    assert np.ptp(lengths) <= 1e-12 * lengths.max()
    r = np.linalg.norm(v - v.mean(axis=0), axis=1)
    assert np.ptp(r) <= 1e-12 * r.max()
    assert np.allclose(v.mean(axis=0), 0.0, atol=1e-12)


@pytest.mark.parametrize(
    ("name", "ratio"),
    [
        ("snub cube", 1.3437133737446),  # circumradius / edge, from memory, 1e-10
        ("snub dodecahedron", 2.1558373751156),  # from memory, 1e-10
        ("cube", np.sqrt(3) / 2),  # closed form
        ("icosahedron", np.sqrt((5 + np.sqrt(5)) / 8)),  # closed form: sin(2 pi / 5)
    ],
)
def test_circumradius_over_edge(name, ratio):
    v = reference_solid(name)
    h = hull_facets(v)
    e = h.edges
    edge = np.linalg.norm(h.points[e[0, 0]] - h.points[e[0, 1]])
    assert np.linalg.norm(v[0]) / edge == pytest.approx(ratio, abs=1e-10)


def test_snub_cube_matches_tribonacci_form():
    # closed form (common practice): even permutations of (+-1, +-1/t, +-t) with an even
    # number of minus signs and odd permutations with an odd number, t the tribonacci
    # constant (real root of t^3 = t^2 + t + 1); one enantiomer.
    t = np.max(np.roots([1, -1, -1, -1]).real)
    base = np.array([1.0, 1 / t, t])
    pts = []
    even = [(0, 1, 2), (1, 2, 0), (2, 0, 1)]
    odd = [(1, 0, 2), (0, 2, 1), (2, 1, 0)]
    for s in np.array(np.meshgrid([1, -1], [1, -1], [1, -1])).reshape(3, -1).T:
        nminus = int(np.sum(s < 0))
        for p in even if nminus % 2 == 0 else odd:
            pts.append(s * base[list(p)])
    ref = np.array(pts) / np.linalg.norm(pts[0])
    ours = reference_solid("snub cube")
    ours = ours / np.linalg.norm(ours[0])

    # same vertex set, or the mirror image (the other enantiomer)
    def same(a, b):
        d = np.linalg.norm(a[:, None] - b[None], axis=-1)
        return bool(np.all(d.min(axis=1) < 1e-12))

    assert same(ours, ref) or same(ours, ref * [-1, 1, 1])


@pytest.mark.parametrize("name", ["snub cube", "snub dodecahedron"])
def test_snubs_are_chiral_not_centrosymmetric(name):
    v = reference_solid(name)
    d = np.linalg.norm(v[:, None] + v[None], axis=-1)  # distance from -v_i to each v_j
    assert d.min(axis=1).max() > 1e-3  # -v is not a vertex: no centre of symmetry


@pytest.mark.parametrize(
    "spelling", ["Truncated-Octahedron", "truncated_octahedron", " TRUNCATED  octahedron "]
)
def test_name_lookup_is_tolerant(spelling):
    assert reference_solid(spelling).shape == (24, 3)


def test_unknown_name_lists_valid_names():
    with pytest.raises(UnknownSymbolError, match="valid names are: tetrahedron"):
        reference_solid("great stellated thing")
    with pytest.raises(UnknownSymbolError):
        reference_solid(3)  # type: ignore[arg-type]


def test_reference_solid_returns_fresh_copy():
    a = reference_solid("snub cube")
    a[0] = 99.0
    assert not np.any(reference_solid("snub cube") == 99.0)


def test_reference_polyhedron_when_available():
    pytest.importorskip("habit.polyhedron")
    from habit.solids import reference_polyhedron

    p = reference_polyhedron("cuboctahedron")
    assert len(p.vertices) == 12
