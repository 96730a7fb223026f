"""Densest lattice and double-lattice packings of polyhedra.

Published values (tolerance 1e-9 unless stated):
- Minkowski 1904 (Nachr. Ges. Wiss. Göttingen, 311): octahedron 18/19.
- Tetrahedron 18/49: Groemer 1962 / Hoylman 1970 (correcting Minkowski 1904); Betke & Henk
  2000 (Comput. Geom. 16, 157), table of the regular and Archimedean solids.
- Betke & Henk 2000, table: dodecahedron (5+sqrt5)/8, icosahedron 0.836357445379711,
  cuboctahedron 45/49, truncated cube 9(5-3sqrt2)/7 (also Whitworth 1948),
  rhombicuboctahedron (16sqrt2-20)/3, truncated cuboctahedron 0.849373251725345,
  icosidodecahedron (45+17sqrt5)/96, truncated dodecahedron (25+37sqrt5)/120.
- Same table, values from memory (7 digits, tolerance 5e-7): truncated tetrahedron 207/304
  (exact fraction from memory, checked to 1e-9), truncated icosahedron 0.7849877,
  rhombicosidodecahedron 0.8047084, truncated icosidodecahedron 0.8272135.
- Space fillers (classical): cube, truncated octahedron, rhombic dodecahedron, hexagonal
  prism, elongated dodecahedron tile space by translation, density 1.
- Double lattice, regular tetrahedron: (139 + 40 sqrt10)/369, Kallus, Elser & Gravel 2010
  (Discrete Comput. Geom. 44, 245).
- Free checks: affine invariance of the density (Minkowski's reduction), an independent
  separating-axis test of every returned packing.
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from habit import lattice_packing as lp
from habit.errors import InputError, UnknownSymbolError
from habit.packing import (
    densest_double_lattice_packing,
    densest_lattice_packing,
    is_packing,
    packing_overlap,
)
from habit.solids import ARCHIMEDEAN, PLATONIC, reference_solid

S2, S5, S10 = np.sqrt(2.0), np.sqrt(5.0), np.sqrt(10.0)

# name: (density, tolerance, source)
PUBLISHED = {
    "tetrahedron": (18 / 49, 1e-9, "Hoylman 1970; Betke & Henk 2000"),
    "octahedron": (18 / 19, 1e-9, "Minkowski 1904; Betke & Henk 2000"),
    "cube": (1.0, 1e-9, "space filler"),
    "dodecahedron": ((5 + S5) / 8, 1e-9, "Betke & Henk 2000"),
    "icosahedron": (0.836357445379711, 1e-9, "Betke & Henk 2000"),
    "cuboctahedron": (45 / 49, 1e-9, "Betke & Henk 2000"),
    "truncated cube": (9 * (5 - 3 * S2) / 7, 1e-9, "Betke & Henk 2000; Whitworth 1948"),
    "rhombicuboctahedron": ((16 * S2 - 20) / 3, 1e-9, "Betke & Henk 2000"),
    "truncated cuboctahedron": (0.849373251725345, 1e-9, "Betke & Henk 2000"),
    "icosidodecahedron": ((45 + 17 * S5) / 96, 1e-9, "Betke & Henk 2000"),
    "truncated dodecahedron": ((25 + 37 * S5) / 120, 1e-9, "Betke & Henk 2000"),
    "truncated octahedron": (1.0, 1e-9, "space filler"),
    "truncated tetrahedron": (207 / 304, 1e-9, "Betke & Henk 2000, from memory"),
    "truncated icosahedron": (0.7849877, 5e-7, "Betke & Henk 2000, from memory"),
    "rhombicosidodecahedron": (0.8047084, 5e-7, "Betke & Henk 2000, from memory"),
    "truncated icosidodecahedron": (0.8272135, 5e-7, "Betke & Henk 2000, from memory"),
    "rhombic dodecahedron": (1.0, 1e-9, "space filler"),
    "hexagonal prism": (1.0, 1e-9, "space filler"),
    "elongated dodecahedron": (1.0, 1e-9, "space filler"),
}
NO_PUBLISHED = ("snub cube", "snub dodecahedron")  # no value in our sources: self-consistency


def _check_result(p, name):
    assert p.is_certified, p.certificate.summary()
    # independent separating-axis test on the returned lattice (touching allowed, 1e-9 rel)
    assert is_packing(p.vertices, p.basis)
    # the lattice is tight: shrinking it by 1e-6 makes some pair overlap
    assert not is_packing(p.vertices, p.basis * (1 - 1e-6))
    assert p.density == pytest.approx(p.particle_volume / abs(np.linalg.det(p.basis)), rel=1e-12)
    assert p.certificate.minkowski_type in ("i", "ii")  # Minkowski 1904: every critical lattice


# -- fast checks (default run) ---------------------------------------------------------


@pytest.mark.parametrize("name", ["octahedron", "tetrahedron", "cube"])
def test_minkowski_values_fast(name):
    value, tol, _source = PUBLISHED[name]
    p = densest_lattice_packing(name, starts=10, rng=1)
    assert p.density == pytest.approx(value, abs=tol)
    _check_result(p, name)


def test_affine_invariance_tetrahedron():
    # Minkowski's reduction: density invariant under invertible affine maps (exact)
    rng = np.random.default_rng(20240611)
    a = rng.normal(size=(3, 3)) + 2 * np.eye(3)
    v = reference_solid("tetrahedron") @ a.T + rng.normal(size=3) * 10
    p = densest_lattice_packing(v, starts=10, rng=2)
    assert p.density == pytest.approx(18 / 49, abs=1e-9)  # Hoylman 1970
    assert is_packing(v, p.basis)


def test_units_follow_input_scale():
    v = reference_solid("octahedron") * 3.5  # Å
    p = densest_lattice_packing(v, starts=6)
    q = densest_lattice_packing(reference_solid("octahedron"), starts=6)
    assert p.cell_volume == pytest.approx(q.cell_volume * 3.5**3, rel=1e-9)
    assert p.particle_volume == pytest.approx(4 / 3 * 3.5**3, rel=1e-12)  # octahedron volume
    assert np.all(np.abs(np.linalg.norm(p.contacts, axis=1)) > 0)


def test_neighbours_match_brute_force_enumeration():
    # neighbours() against a plain box enumeration of integer combinations of the basis
    p = densest_lattice_packing("truncated octahedron", starts=2)
    r = 1.5 * np.max(np.linalg.norm(p.basis, axis=1))
    g = np.mgrid[-6:7, -6:7, -6:7].reshape(3, -1).T @ p.basis
    n = np.linalg.norm(g, axis=1)
    expected = np.sort(n[(n > 0) & (n <= r)])
    assert np.allclose(np.sort(np.linalg.norm(p.neighbours(r), axis=1)), expected)


def test_result_is_frozen_and_read_only():
    p = densest_lattice_packing("cube", starts=2)
    with pytest.raises(dataclasses.FrozenInstanceError):
        p.density = 0.5  # type: ignore[misc]
    with pytest.raises(ValueError):
        p.basis[0, 0] = 1.0


def test_progress_is_called_with_counts():
    seen = []
    densest_lattice_packing("cube", starts=3, progress=seen.append)
    assert seen[:3] == [1, 2, 3]


def test_bad_input_raises_one_clear_error():
    with pytest.raises(InputError, match=r"\(V, 3\)"):
        densest_lattice_packing(np.zeros((3, 3)))
    with pytest.raises(InputError, match="starts"):
        densest_lattice_packing("cube", starts=0)
    with pytest.raises(InputError, match="finite"):
        densest_lattice_packing(np.full((4, 3), np.nan))
    with pytest.raises(UnknownSymbolError):
        densest_lattice_packing("hypercube")


def test_separating_axis_check_detects_overlap():
    cube = np.array([[x, y, z] for x in (0, 1) for y in (0, 1) for z in (0, 1)], float)
    assert is_packing(cube, np.eye(3))
    assert packing_overlap(cube, 0.9 * np.eye(3)) == pytest.approx(0.1, abs=1e-12)
    # sheared cube lattice with a shift of half a cell in a layer: still a tiling
    assert is_packing(cube, [[1, 0, 0], [0.5, 1, 0], [0, 0, 1]])
    assert not is_packing(cube, [[1, 0, 0], [0.5, 0.99, 0], [0, 0, 1]])


@settings(max_examples=25, deadline=None)
@given(
    seed=st.integers(0, 2**31 - 1),
    factor=st.floats(0.5, 1.5).filter(lambda f: abs(f - 1) > 1e-6),
)
def test_gauge_and_separating_axes_agree(seed, factor):
    # two independent overlap tests: the difference-body gauge (Minkowski) and separating
    # planes must agree on random lattices scaled away from touching
    rng = np.random.default_rng(seed)
    v = reference_solid("truncated tetrahedron")
    body = lp.make_body(v)
    b, _ = lp.lll_reduce(rng.normal(size=(3, 3)))
    prob = lp._Problem(body, double=False)
    x = prob.normalise(b.ravel())  # touching lattice, smallest gauge exactly 1
    basis = np.linalg.solve(body.transform, x.reshape(3, 3)).T * factor
    assert is_packing(v, basis) == (factor > 1)


@settings(max_examples=40, deadline=None)
@given(st.lists(st.floats(-3, 3), min_size=9, max_size=9))
def test_lll_returns_unimodular_change_of_basis(entries):
    b = np.array(entries).reshape(3, 3)
    if abs(np.linalg.det(b)) < 1e-3:
        return
    red, u = lp.lll_reduce(b)
    assert abs(round(np.linalg.det(u))) == 1
    assert np.allclose(b @ u, red, atol=1e-9)
    assert abs(np.linalg.det(red)) == pytest.approx(abs(np.linalg.det(b)), rel=1e-9)


def test_minkowski_configuration_patterns():
    # type (i) contacts for the standard basis: b1, b2, b3, b1+b2, b2+b3, b1+b2+b3
    z = np.array([[1, 0, 0], [0, 1, 0], [0, 0, 1], [1, 1, 0], [0, 1, 1], [1, 1, 1]])
    kind, u = lp.minkowski_configuration(z)
    assert kind == "i" and abs(round(np.linalg.det(u))) == 1
    assert lp.minkowski_configuration(z[:4]) is None  # four vectors fit neither pattern


def test_plot_returns_artists():
    mpl = pytest.importorskip("matplotlib")
    mpl.use("Agg")
    import matplotlib.pyplot as plt

    from habit.plot.packing import plot_packing

    p = densest_lattice_packing("cuboctahedron", starts=4)
    arts = plot_packing(p)
    assert len(arts) == 1 + len(p.contacts)
    assert "Å" in arts[0].axes.get_xlabel()
    with pytest.raises(InputError):
        plot_packing(p, neighbours="all")
    d = densest_double_lattice_packing("tetrahedron", starts=1, max_starts=1)
    arts = plot_packing(d)
    assert len(arts) == 1 + len(d.contacts) + len(d.reflected_contacts)
    plt.close("all")


# -- full table and certification (slow; run in CI) ------------------------------------


@pytest.mark.slow
@pytest.mark.parametrize("name", list(PUBLISHED), ids=list(PUBLISHED))
def test_published_lattice_densities(name):
    value, tol, _source = PUBLISHED[name]
    p = densest_lattice_packing(name)
    assert p.density == pytest.approx(value, abs=tol)
    _check_result(p, name)


@pytest.mark.slow
@pytest.mark.parametrize("name", NO_PUBLISHED)
def test_chiral_snubs_certified_and_reproducible(name):
    p = densest_lattice_packing(name, rng=11)
    q = densest_lattice_packing(name, rng=12)
    _check_result(p, name)
    assert p.density == pytest.approx(q.density, abs=1e-9)
    # the mirror image packs identically (chirality is harmless)
    m = densest_lattice_packing(reference_solid(name) * [-1, 1, 1], rng=13)
    assert m.density == pytest.approx(p.density, abs=1e-9)


@pytest.mark.slow
def test_every_uniform_solid_is_covered():
    assert set(PUBLISHED) | set(NO_PUBLISHED) >= set(PLATONIC + ARCHIMEDEAN)


@pytest.mark.slow
@pytest.mark.parametrize("name", ["icosahedron", "truncated cube", "rhombic dodecahedron"])
def test_affine_invariance(name):
    rng = np.random.default_rng(7)
    a = rng.normal(size=(3, 3))
    while abs(np.linalg.det(a)) < 0.3:
        a = rng.normal(size=(3, 3))
    v = reference_solid(name) @ a.T + rng.normal(size=3)
    p = densest_lattice_packing(v)
    assert p.density == pytest.approx(PUBLISHED[name][0], abs=1e-9)
    assert is_packing(v, p.basis)


@pytest.mark.slow
def test_double_lattice_tetrahedron():
    # Kallus, Elser & Gravel 2010: (139 + 40 sqrt10)/369 = 0.71948809...
    p = densest_double_lattice_packing("tetrahedron")
    assert p.density == pytest.approx((139 + 40 * S10) / 369, abs=1e-9)
    assert p.is_certified, p.certificate.summary()
    assert is_packing(p.vertices, p.basis, shift=p.shift)
    assert not is_packing(p.vertices, p.basis * (1 - 1e-6), shift=p.shift * (1 - 1e-6))
    assert len(p.reflected_contacts) > 0


@pytest.mark.parametrize(
    ("name", "order"),
    [("cube", 48), ("icosahedron", 120), ("snub cube", 48), ("tetrahedron", 48)],
)
def test_symmetries_of_difference_body(name, order):
    # D = K - K is centrally symmetric: its group is that of K times {I, -I}, i.e. Oh (48)
    # for cube, tetrahedron (Td x {+-I}) and snub cube (O x {+-I}), Ih (120) for the
    # icosahedron (Coxeter 1973, orders of the polyhedral groups)
    from habit.lattice_configurations import facet_symmetries

    perms = facet_symmetries(lp.make_body(reference_solid(name)).facets_d)
    assert len(perms) == order
    assert len(np.unique(perms, axis=0)) == order


@pytest.mark.slow
@pytest.mark.parametrize("name", ["cube", "octahedron"])
def test_configuration_enumeration_confirms(name):
    # Betke & Henk 2000: every critical lattice has a Minkowski configuration; enumerating
    # all of them (with one branching step) must not find anything denser than the search
    p = densest_lattice_packing(name, starts=10, check_configurations=True)
    assert p.certificate.enumeration_confirms, p.certificate.summary()
    assert p.is_certified
    assert p.density == pytest.approx(PUBLISHED[name][0], abs=1e-9)


def test_configuration_check_refuses_large_difference_bodies():
    with pytest.raises(InputError, match="facets"):
        densest_lattice_packing("snub cube", starts=1, check_configurations=True)


@settings(max_examples=6, deadline=None)
@given(seed=st.integers(0, 2**31 - 1), n=st.integers(5, 9))
def test_random_polytopes_pack_with_density_at_most_one(seed, n):
    # invariant: any lattice packing has density in (0, 1]; the returned lattice passes the
    # independent separating-axis test (random convex hulls of n points)
    pts = np.random.default_rng(seed).normal(size=(n, 3))
    p = densest_lattice_packing(pts, starts=3, max_starts=3, rng=seed)
    assert 0.0 < p.density <= 1.0 + 1e-9
    assert is_packing(p.vertices, p.basis)
    assert p.certificate.admissible


def test_flat_input_is_refused():
    from habit.errors import EmptyPolyhedronError

    square = np.array([[0, 0, 0], [1, 0, 0], [0, 1, 0], [1, 1, 0]], float)
    with pytest.raises(EmptyPolyhedronError):
        densest_lattice_packing(square)
