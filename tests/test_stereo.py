"""Projection maths and two-circle coordinates (habit.stereo)."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from habit.errors import InputError, UnknownSymbolError
from habit.stereo import (
    equal_area_project,
    equal_area_unproject,
    great_circle,
    phi_rho_to_vectors,
    project,
    small_circle,
    stereographic_project,
    stereographic_unproject,
    vectors_to_phi_rho,
    zone_axis,
)

SQ3 = math.sqrt(3.0)

# Cubic poles in an orthogonal frame (a ∥ x, b ∥ y, c ∥ z), closed-form radii [C]:
# Wulff net r = tan(ρ/2), Schmidt net r = sqrt(2) sin(ρ/2) (Snyder 1987, USGS PP 1395,
# ch. 21 and 24); ρ(111) = arccos(1/√3) = 54.7356° (REFERENCES of cubic angles, exact).
CUBIC = [
    ("(001)", (0, 0, 1), 0.0, 0.0),
    ("(100)", (1, 0, 0), 1.0, 1.0),
    ("(010)", (0, 1, 0), 1.0, 1.0),
    ("(111)", (1, 1, 1), (SQ3 - 1.0) / math.sqrt(2.0), math.sqrt(1.0 - 1.0 / SQ3)),
    ("(110)", (1, 1, 0), 1.0, 1.0),
    ("(101)", (1, 0, 1), math.tan(math.pi / 8), math.sqrt(2.0) * math.sin(math.pi / 8)),
]


@pytest.mark.parametrize("name, hkl, r_wulff, r_area", CUBIC, ids=[c[0] for c in CUBIC])
def test_cubic_pole_radii(name, hkl, r_wulff, r_area):
    # closed forms above; tolerance 1e-12 (round-off)
    assert np.hypot(*stereographic_project(hkl)) == pytest.approx(r_wulff, abs=1e-12)
    assert np.hypot(*equal_area_project(hkl)) == pytest.approx(r_area, abs=1e-12)


def test_cubic_111_radius_numbers():
    # tan(54.7356°/2) = 0.517638 and sqrt(2) sin(54.7356°/2) = 0.650115 [C], 1e-6
    assert np.hypot(*stereographic_project([1, 1, 1])) == pytest.approx(0.517638, abs=1e-6)
    assert np.hypot(*equal_area_project([1, 1, 1])) == pytest.approx(0.650115, abs=1e-6)


def test_quartz_r_pole_radius():
    # quartz r(10-11): ρ = 51.790° ± 0.03° from the Handbook of Mineralogy cell
    # a 4.9133, c 5.4053 Å ([C], computed from that cell); radius tan(ρ/2) and √2 sin(ρ/2).
    from habit.geometry import cell_to_lattice, reciprocal_lattice

    recip = reciprocal_lattice(cell_to_lattice(4.9133, 4.9133, 5.4053, 90, 90, 120))
    n = np.array([1, 0, 1]) @ recip
    phi, rho = vectors_to_phi_rho(n)
    assert math.degrees(rho) == pytest.approx(51.790, abs=0.03)
    assert np.hypot(*stereographic_project(n)) == pytest.approx(math.tan(rho / 2), abs=1e-12)
    assert np.hypot(*equal_area_project(n)) == pytest.approx(
        math.sqrt(2) * math.sin(rho / 2), abs=1e-12)


def test_goldschmidt_convention():
    # φ = 0 at the pole of (010), clockwise seen from +c: (010) φ 0°, ρ 90°; (100) φ 90°,
    # ρ 90° (Goldschmidt 1897 / Dana's System; common practice, from memory). Exact.
    phi, rho = vectors_to_phi_rho([[0, 1, 0], [1, 0, 0], [0, -1, 0], [-1, 0, 0]])
    assert np.degrees(phi) == pytest.approx([0, 90, 180, 270], abs=1e-12)
    assert np.degrees(rho) == pytest.approx([90, 90, 90, 90], abs=1e-12)
    # the other sense and a shifted zero
    phi2, _ = vectors_to_phi_rho([1, 0, 0], phi_zero=math.radians(10), clockwise=False)
    assert math.degrees(float(phi2)) == pytest.approx(280.0, abs=1e-12)


@settings(max_examples=200, deadline=None)
@given(
    phi=st.floats(0, 2 * math.pi - 1e-6),
    rho=st.floats(1e-6, math.pi - 1e-6),
    zero=st.floats(-math.pi, math.pi),
    clockwise=st.booleans(),
)
def test_phi_rho_round_trip(phi, rho, zero, clockwise):
    # invariant: vectors_to_phi_rho inverts phi_rho_to_vectors (1e-9 rad)
    v = phi_rho_to_vectors(phi, rho, phi_zero=zero, clockwise=clockwise)
    assert np.linalg.norm(v) == pytest.approx(1.0, abs=1e-12)
    p2, r2 = vectors_to_phi_rho(v, phi_zero=zero, clockwise=clockwise)
    assert float(r2) == pytest.approx(rho, abs=1e-9)
    d = (float(p2) - phi) % (2 * math.pi)
    assert min(d, 2 * math.pi - d) * math.sin(rho) < 1e-9


unit_upper = st.tuples(st.floats(-1, 1), st.floats(-1, 1), st.floats(0.0, 1)).filter(
    lambda v: np.linalg.norm(v) > 1e-3
)


@settings(max_examples=200, deadline=None)
@given(v=unit_upper)
def test_projection_round_trips_and_radii(v):
    n = np.asarray(v) / np.linalg.norm(v)
    rho = math.atan2(math.hypot(n[0], n[1]), n[2])
    xy = stereographic_project(n)
    assert np.hypot(*xy) == pytest.approx(math.tan(rho / 2), abs=1e-12)
    assert stereographic_unproject(xy) == pytest.approx(n, abs=1e-12)
    ea = equal_area_project(n)
    assert np.hypot(*ea) == pytest.approx(math.sqrt(2) * math.sin(rho / 2), abs=1e-12)
    assert equal_area_unproject(ea) == pytest.approx(n, abs=1e-9)
    assert np.hypot(*ea) <= 1.0 + 1e-12


@settings(max_examples=50, deadline=None)
@given(theta=st.floats(0.05, math.pi / 2))
def test_equal_area_preserves_area(theta):
    # a cap of angular radius θ about the centre has area 2π(1 − cos θ) on the unit sphere
    # and maps to a disc of area π r² = π(1 − cos θ): ratio 1/2 (the hemisphere, 2π, maps
    # to the unit disc, π) — the defining property of Lambert's projection.
    pts = equal_area_project(small_circle([0, 0, 1], theta, 721))
    x, y = pts[:, 0], pts[:, 1]
    area = 0.5 * abs(np.dot(x[:-1], y[1:]) - np.dot(x[1:], y[:-1]))
    assert area / (2 * math.pi * (1 - math.cos(theta))) == pytest.approx(0.5, rel=1e-4)


@settings(max_examples=50, deadline=None)
@given(
    axis=st.tuples(st.floats(-1, 1), st.floats(-1, 1), st.floats(0.3, 1)),
    theta=st.floats(0.05, 0.6),
)
def test_stereographic_maps_circles_to_circles(axis, theta):
    # circles on the sphere stay circles (standard property of the stereographic projection)
    pts = stereographic_project(small_circle(axis, theta, 60))
    a = np.column_stack([2 * pts[:, 0], 2 * pts[:, 1], np.ones(len(pts))])
    b = (pts ** 2).sum(axis=1)
    sol, *_ = np.linalg.lstsq(a, b, rcond=None)
    cx, cy, c = sol
    r = math.sqrt(c + cx * cx + cy * cy)
    assert np.hypot(pts[:, 0] - cx, pts[:, 1] - cy) == pytest.approx(np.full(len(pts), r),
                                                                     abs=1e-9)


def test_great_circle_of_a_zone():
    axis = zone_axis([1, 0, 0], [0, 0, 1])  # zone [010]: (100), (001), (101) ...
    arc = great_circle(axis, 91)
    assert np.abs(arc @ axis).max() < 1e-12
    assert arc[:, 2].min() >= -1e-12
    assert np.linalg.norm(arc[0] + arc[-1]) < 1e-12  # ends on the primitive, opposite


def test_project_folds_lower_poles():
    pts, upper = project([[0.0, 0.6, -0.8], [0.0, 0.6, 0.8]])
    assert upper.tolist() == [False, True]
    assert pts[0] == pytest.approx(pts[1])


def test_refusals():
    with pytest.raises(UnknownSymbolError, match="unknown net"):
        project([0, 0, 1], net="gnomonic-ish")
    with pytest.raises(InputError, match="non-zero"):
        stereographic_project([0, 0, 0])
    with pytest.raises(InputError, match="parallel"):
        zone_axis([1, 0, 0], [2, 0, 0])
    with pytest.raises(InputError, match=r"shape \(\.\.\., 3\)"):
        equal_area_project([1, 0])
