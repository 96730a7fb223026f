"""Half-space intersection checked against closed-form Wulff shapes and solids.

Notation: gamma_100 = 1 gives the {100} planes at distance 1 (Wulff: distance proportional
to surface energy; G. Wulff, Z. Kristallogr. 34, 449 (1901)), and r = gamma_111/gamma_100
puts the {111} planes at distance r. With s = sqrt(3) r the {111} planes are
x + y + z = s (and sign variants) cutting the cube [-1, 1]^3.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from poly_samples import (
    CUBE_NORMALS,
    DODECAHEDRON_NORMALS,
    ICOSAHEDRON_NORMALS,
    OCTAHEDRON_NORMALS,
    TETRAHEDRON_NORMALS,
    cubic_planes,
    hexagonal_prism_normals,
)

from habit.errors import HabitError, InputError, OpenShapeError
from habit.halfspace import intersect_halfspaces, open_direction
from habit.polyhedron import Polyhedron
from habit.tolerances import Tolerances

SQ3 = math.sqrt(3.0)


def cube_octa(r: float, g110: float | None = None) -> Polyhedron:
    forms = {(1, 0, 0): 1.0, (1, 1, 1): r}
    if g110 is not None:
        forms[(1, 1, 0)] = g110
    n, d, hkl, fid = cubic_planes(forms)
    return Polyhedron.from_halfspaces(n, d, hkl=hkl, form_ids=fid)


# ---------------------------------------------------------------- {100} + {111} thresholds
# Closed forms derived in test_area_fractions_closed_form; thresholds: octahedron for
# r <= 1/sqrt(3) (the {100} plane x = 1 no longer meets the octahedron |x|+|y|+|z| <= s
# once s <= 1), cube for r >= sqrt(3) (the {111} plane misses the corner (1,1,1), s >= 3).
# Tolerance: exact thresholds, evaluated 1e-6 relative either side.


@pytest.mark.parametrize("r", [0.3, 0.5, 1 / SQ3], ids=["0.3", "0.5", "1/sqrt3"])
def test_octahedron_below_threshold(r: float) -> None:
    p = cube_octa(r)
    assert (p.n_vertices, p.n_edges, p.n_faces) == (6, 12, 8)
    assert set(p.form_ids.tolist()) == {1}


@pytest.mark.parametrize("r", [SQ3, 2.0, 5.0], ids=["sqrt3", "2", "5"])
def test_cube_above_threshold(r: float) -> None:
    p = cube_octa(r)
    assert (p.n_vertices, p.n_edges, p.n_faces) == (8, 12, 6)
    assert p.volume == pytest.approx(8.0, rel=1e-12)  # cube of edge 2: V = 8 (exact)


@pytest.mark.parametrize("r", [(1 / SQ3) * (1 + 1e-6), SQ3 * (1 - 1e-6)], ids=["lo", "hi"])
def test_both_forms_just_inside_the_thresholds(r: float) -> None:
    assert cube_octa(r).n_faces == 14


def test_cuboctahedron_at_two_over_root_three() -> None:
    # At s = 2 the {111} triangles meet at the cube-edge midpoints: vertices (+-1, +-1, 0)
    # and permutations, 24 edges of length sqrt(2), V = (5 sqrt 2 / 3) a^3 = 20/3.
    # Source: closed form (derivation above; Coxeter, Regular Polytopes (1973), Table I,
    # from memory for the cuboctahedron volume formula). Tolerance 1e-12 relative.
    p = cube_octa(2 / SQ3)
    assert (p.n_vertices, p.n_edges, p.n_faces) == (12, 24, 14)
    assert np.allclose(p.edge_lengths, math.sqrt(2.0), rtol=1e-12)
    assert p.volume == pytest.approx(20.0 / 3.0, rel=1e-12)


def test_regular_truncated_octahedron_at_root_three_over_two() -> None:
    # At s = 3/2 the hexagons and squares have equal edges: vertices are the permutations
    # of (0, +-1/2, +-1), edge sqrt(2)/2, V = 8 sqrt(2) a^3 = 4 (Archimedean truncated
    # octahedron; closed form). Tolerance 1e-12 relative.
    p = cube_octa(SQ3 / 2)
    assert (p.n_vertices, p.n_edges, p.n_faces) == (24, 36, 14)
    assert np.allclose(p.edge_lengths, math.sqrt(2.0) / 2, rtol=1e-12)
    assert p.volume == pytest.approx(4.0, rel=1e-12)


def _closed_form_areas(r: float) -> tuple[float, float]:
    s = SQ3 * r
    if s <= 1:
        return 0.0, SQ3 / 2 * s * s
    if s <= 2:
        return 2 * (s - 1) ** 2, SQ3 / 2 * (s * s - 3 * (s - 1) ** 2)
    if s <= 3:
        return 4 - 2 * (3 - s) ** 2, SQ3 / 2 * (3 - s) ** 2
    return 4.0, 0.0


@pytest.mark.parametrize("r", [0.65, 1.0, 1.5])
def test_area_fractions_closed_form(r: float) -> None:
    """Face areas of {100}+{111} against closed forms (derived here, not looked up).

    Cube [-1, 1]^3 (gamma_100 = 1) cut by x + y + z <= s, s = sqrt(3) r, and sign variants.

    * On the {111} plane x + y + z = s the other {111} planes give x, y, z >= 0 (e.g.
      x + y - z <= s becomes z >= 0), and the cube gives x, y, z <= 1. The face is the
      triangle x, y, z >= 0 (side s sqrt 2, area (sqrt3/2) s^2) with the corners x > 1
      removed (each a triangle of side (s - 1) sqrt 2) when s > 1, and for s >= 2 it is
      the triangle x, y, z <= 1 of side (3 - s) sqrt 2:
      A111 = (sqrt3/2) s^2 (s <= 1); (sqrt3/2)(s^2 - 3 (s-1)^2) (1 <= s <= 2);
      (sqrt3/2)(3 - s)^2 (2 <= s <= 3).
    * On the {100} face z = 1 the {111} planes give |x| + |y| <= s - 1: a square of
      area 2 (s-1)^2 for 1 <= s <= 2; for 2 <= s <= 3 the unit square [-1,1]^2 minus four
      corner triangles with legs 3 - s: A100 = 4 - 2 (3 - s)^2.
    * Check: V = (6 A100 + 8 r A111)/3.

    The fraction of the area on {111} is 8 A111 / (6 A100 + 8 A111). Tolerance 1e-12.
    """
    a100, a111 = _closed_form_areas(r)
    p = cube_octa(r)
    by_form = p.area_by_form
    assert by_form[0] == pytest.approx(6 * a100, rel=1e-12)
    assert by_form[1] == pytest.approx(8 * a111, rel=1e-12)
    frac = 8 * a111 / (6 * a100 + 8 * a111)
    assert p.area_fractions_by_form[1] == pytest.approx(frac, rel=1e-12)
    assert p.volume == pytest.approx((6 * a100 + 8 * r * a111) / 3, rel=1e-12)


# ---------------------------------------------------------------- {110} on the {100}/{111} shape
def _threshold_110(r: float) -> float:
    """gamma_110 below which {110} appears: the support value of the {100}/{111} shape.

    Derivation: the (110) face exists iff its plane x + y = sqrt(2) g cuts the solid, i.e.
    g < h(n110) = max (x + y)/sqrt 2 over the solid. With x + y + z <= s and x + y - z <= s
    (so x + y <= s at z = 0) and x, y <= 1 (so x + y <= 2), max(x + y) = min(s, 2), which
    is attained (at (s/2, s/2, 0) or (1, 1, 0)); hence g* = min(r sqrt(3/2), sqrt 2).
    """
    return min(r * math.sqrt(1.5), math.sqrt(2.0))


@pytest.mark.parametrize("r", [0.5, SQ3 / 2, 1.0, 1.3, 2.0])
def test_110_threshold(r: float) -> None:
    g = _threshold_110(r)
    below = cube_octa(r, g * (1 - 1e-6))
    above = cube_octa(r, g * (1 + 1e-6))
    exact = cube_octa(r, g)
    assert 2 in below.form_ids.tolist()
    assert 2 not in above.form_ids.tolist()
    # At the threshold the {110} faces shrink to edges: absent, not slivers.
    assert 2 not in exact.form_ids.tolist()
    assert exact.n_faces == above.n_faces


@settings(max_examples=40, deadline=None)
@given(st.floats(0.3, 2.5), st.floats(0.4, 2.0))
def test_110_presence_rule(r: float, g: float) -> None:
    thr = _threshold_110(r)
    if abs(g / thr - 1) < 1e-6:
        return
    present = 2 in cube_octa(r, g).form_ids.tolist()
    assert present == (g < thr)


# ---------------------------------------------------------------- Platonic solids, prism
# Closed forms for inradius r_in, area A and volume V in terms of the edge a (Zwillinger,
# CRC Standard Mathematical Tables and Formulae, 31st ed. (2003), section 4.6 "Polyhedra";
# from memory). Every plane at distance 1 -> inradius 1. Tolerance 1e-9 relative.
def _platonic(inr: float, area: float, vol: float) -> tuple[float, float]:
    a = 1.0 / inr  # edge for inradius 1
    return area * a * a, vol * a**3


PLATONIC = {
    "tetrahedron": (TETRAHEDRON_NORMALS, 1 / math.sqrt(24), SQ3, 1 / (6 * math.sqrt(2)), 4, 6),
    "cube": (CUBE_NORMALS, 0.5, 6.0, 1.0, 8, 12),
    "octahedron": (OCTAHEDRON_NORMALS, 1 / math.sqrt(6), 2 * SQ3, math.sqrt(2) / 3, 6, 12),
    "dodecahedron": (
        DODECAHEDRON_NORMALS,
        0.5 * math.sqrt((25 + 11 * math.sqrt(5)) / 10),
        3 * math.sqrt(25 + 10 * math.sqrt(5)),
        (15 + 7 * math.sqrt(5)) / 4,
        20,
        30,
    ),
    "icosahedron": (
        ICOSAHEDRON_NORMALS,
        SQ3 / 12 * (3 + math.sqrt(5)),
        5 * SQ3,
        5 / 12 * (3 + math.sqrt(5)),
        12,
        30,
    ),
}


@pytest.mark.parametrize("name", list(PLATONIC))
def test_platonic_solids(name: str) -> None:
    normals, inr, area, vol, nv, ne = PLATONIC[name]
    p = Polyhedron.from_halfspaces(normals, np.ones(len(normals)))
    exp_area, exp_vol = _platonic(inr, area, vol)
    assert (p.n_vertices, p.n_edges, p.n_faces) == (nv, ne, len(normals))
    assert p.area == pytest.approx(exp_area, rel=1e-9)
    assert p.volume == pytest.approx(exp_vol, rel=1e-9)
    # every tangential solid: V = A r_in / 3 (pyramids on the faces) -- independent check
    assert p.volume == pytest.approx(p.area / 3, rel=1e-12)
    assert np.ptp(p.edge_lengths) < 1e-9 * p.edge_lengths.max()


def test_hexagonal_prism_with_pinacoid() -> None:
    # Regular hexagon of apothem a: side 2a/sqrt3, area 2 sqrt3 a^2; prism of height 2c:
    # V = 2 sqrt3 a^2 * 2c, A = 2 * 2 sqrt3 a^2 + 6 * (2a/sqrt3) * 2c (closed form).
    a, c = 1.3, 2.1
    n = hexagonal_prism_normals()
    p = Polyhedron.from_halfspaces(n, [a] * 6 + [c, c])
    assert (p.n_vertices, p.n_edges, p.n_faces) == (12, 18, 8)
    assert p.volume == pytest.approx(2 * SQ3 * a * a * 2 * c, rel=1e-9)
    assert p.area == pytest.approx(4 * SQ3 * a * a + 6 * (2 * a / SQ3) * 2 * c, rel=1e-9)


# ---------------------------------------------------------------- errors
def test_open_prism_names_the_open_direction() -> None:
    n = hexagonal_prism_normals()[:6]
    with pytest.raises(OpenShapeError) as info:
        Polyhedron.from_halfspaces(n, np.ones(6))
    u = np.array(info.value.direction)
    assert abs(abs(u[2]) - 1) < 1e-9  # open along +-z, and only there
    assert "open along" in str(info.value)


def test_open_half_space_set_direction_satisfies_lp() -> None:
    rng = np.random.default_rng(3)
    n = rng.normal(size=(7, 3))
    n[:, 2] = -np.abs(n[:, 2])  # all normals point down: open upwards
    with pytest.raises(OpenShapeError) as info:
        intersect_halfspaces(n, np.ones(7))
    u = np.array(info.value.direction)
    assert np.all(n @ u <= 1e-9)
    assert np.linalg.norm(u) == pytest.approx(1.0)


def test_open_direction_none_when_closed() -> None:
    assert open_direction(OCTAHEDRON_NORMALS) is None


@pytest.mark.parametrize("bad", [0.0, -1.0, float("nan"), float("inf")])
def test_bad_distances_raise_input_error(bad: float) -> None:
    d = np.ones(6)
    d[2] = bad
    with pytest.raises(InputError, match="plane 2"):
        Polyhedron.from_halfspaces(CUBE_NORMALS, d)


def test_bad_shapes_raise() -> None:
    with pytest.raises(InputError, match=r"\(N, 3\)"):
        Polyhedron.from_halfspaces(np.ones((4, 2)), np.ones(4))
    with pytest.raises(InputError, match="one value per normal"):
        Polyhedron.from_halfspaces(CUBE_NORMALS, np.ones(5))
    z = CUBE_NORMALS.copy()
    z[0] = 0
    with pytest.raises(InputError, match="zero vector"):
        Polyhedron.from_halfspaces(z, np.ones(6))
    with pytest.raises(HabitError):
        Polyhedron.from_halfspaces(CUBE_NORMALS, np.ones(6), hkl=np.ones((5, 3)))


def test_redundant_planes_are_absent_and_reported() -> None:
    n = np.vstack([CUBE_NORMALS, OCTAHEDRON_NORMALS])
    res = intersect_halfspaces(n, np.r_[np.ones(6), 5 * np.ones(8)])
    assert res.present.tolist() == [True] * 6 + [False] * 8
    assert res.plane_ids.tolist() == list(range(6))


def test_tolerance_is_a_parameter() -> None:
    # A {111} corner cut of relative size 1e-7: kept with the default tolerance,
    # dropped (shrunk to a point) with a looser one.
    r = SQ3 * (1 - 1e-7)
    assert cube_octa(r).n_faces == 14
    n, d, hkl, fid = cubic_planes({(1, 0, 0): 1.0, (1, 1, 1): r})
    loose = Polyhedron.from_halfspaces(n, d, tol=Tolerances(length=1e-5))
    assert loose.n_faces == 6
