"""The batch Wulff kernel against an independent hull computation and closed forms.

Reference route (written here, independent of habit): scipy.spatial.HalfspaceIntersection
gives the vertices of W = {x : n.x <= gamma}; scipy.spatial.ConvexHull of those vertices
gives the volume and triangles, each triangle's area going to the plane it lies on.
Tolerance: 1e-9 relative to the shape's total area / volume (qhull's own rounding is far
below that).
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.spatial import ConvexHull, HalfspaceIntersection

from habit import _intervals
from habit.batch import prepare_planes, solve_shapes
from habit.errors import InputError, OpenShapeError

SQRT2 = np.sqrt(2.0)
SQRT3 = np.sqrt(3.0)
REL = 1e-9  # relative tolerance against the hull route


def cubic_operations() -> np.ndarray:
    """The 48 signed permutation matrices (point group m-3m, Cartesian)."""
    ops = []
    for perm in itertools.permutations(range(3)):
        for signs in itertools.product((1, -1), repeat=3):
            m = np.zeros((3, 3))
            m[range(3), perm] = signs
            ops.append(m)
    return np.array(ops)


def cubic_form(hkl: tuple[int, int, int]) -> list[tuple[int, ...]]:
    faces = set()
    for perm in itertools.permutations(hkl):
        for signs in itertools.product((1, -1), repeat=3):
            faces.add(tuple(int(a * b) for a, b in zip(perm, signs, strict=True)))
    return sorted(faces)


def cubic_planes(*forms: tuple[int, int, int]) -> tuple[np.ndarray, np.ndarray]:
    """Unit normals (Cartesian; for a cubic cell hkl is parallel to the normal) and form ids."""
    rows, ids = [], []
    for f, hkl in enumerate(forms):
        faces = cubic_form(hkl)
        rows += faces
        ids += [f] * len(faces)
    n = np.array(rows, dtype=float)
    return n / np.linalg.norm(n, axis=1, keepdims=True), np.array(ids)


N26, F26 = cubic_planes((1, 0, 0), (1, 1, 0), (1, 1, 1))
N74, F74 = cubic_planes((1, 0, 0), (1, 1, 0), (1, 1, 1), (3, 2, 1))
N2, F2 = cubic_planes((1, 0, 0), (1, 1, 1))
OPS = cubic_operations()
PLANES26 = prepare_planes(N26, operations=OPS)
PLANES74 = prepare_planes(N74, operations=OPS)
PLANES2 = prepare_planes(N2, operations=OPS)


def reference(normals: np.ndarray, gamma: np.ndarray):
    """Independent areas (N,), volume and vertices from half-space intersection."""
    hs = np.hstack([normals, -gamma[:, None]])  # n.x - gamma <= 0
    verts = HalfspaceIntersection(hs, np.zeros(3)).intersections
    hull = ConvexHull(verts)
    areas = np.zeros(len(normals))
    for simplex, eq in zip(hull.simplices, hull.equations, strict=True):
        p = verts[simplex]
        tri = 0.5 * np.linalg.norm(np.cross(p[1] - p[0], p[2] - p[0]))
        i = int(np.argmax(normals @ eq[:3]))  # the plane this triangle lies on
        areas[i] += tri
    return areas, hull.volume, verts


def reference_edges(normals, gamma, verts):
    """Length of the segment where planes i and j meet (from the vertices on both)."""
    scale = gamma.max()
    on = np.abs(verts @ normals.T - gamma) <= 1e-9 * scale  # (V, N)
    n = len(normals)
    out = np.zeros((n, n))
    for i in range(n):
        for j in range(i + 1, n):
            pts = verts[on[:, i] & on[:, j]]
            if len(pts) >= 2:
                out[i, j] = out[j, i] = np.max(np.linalg.norm(pts[:, None] - pts[None], axis=2))
    return out


def assert_matches(batch, normals, energies):
    for s, gamma in enumerate(energies):
        areas, volume, _ = reference(normals, gamma)
        total = areas.sum()
        np.testing.assert_allclose(batch.areas[s], areas, rtol=0, atol=REL * total)
        assert abs(batch.volume[s] - volume) <= REL * volume


ratio = st.floats(0.55, 2.0, allow_nan=False)


# -- agreement with the hull route (Wulff 1901 construction; scipy qhull reference) --------


@settings(max_examples=30, deadline=None, derandomize=True)
@given(r110=ratio, r111=ratio)
def test_cubic26_symmetric_matches_hull(r110, r111):
    gamma = np.array([1.0, r110, r111])[F26]
    batch = solve_shapes(PLANES26, gamma[None], edges=True)
    assert_matches(batch, N26, gamma[None])
    assert batch.n_fallback == 0
    _, _, verts = reference(N26, gamma)
    np.testing.assert_allclose(
        batch.edge_lengths[0], reference_edges(N26, gamma, verts), rtol=0, atol=1e-9
    )


@settings(max_examples=10, deadline=None, derandomize=True)
@given(r110=ratio, r111=ratio, r321=st.floats(0.9, 1.4))
def test_cubic74_symmetric_matches_hull(r110, r111, r321):
    gamma = np.array([1.0, r110, r111, r321])[F74]
    batch = solve_shapes(PLANES74, gamma[None])
    assert_matches(batch, N74, gamma[None])
    assert batch.n_fallback == 0


PLAIN26 = prepare_planes(N26)  # no symmetry: every pair of planes is clipped


@settings(max_examples=8, deadline=None, derandomize=True)
@given(seed=st.integers(0, 2**32 - 1))
def test_cubic26_per_plane_energies_without_symmetry(seed):
    rng = np.random.default_rng(seed)
    energies = rng.uniform(0.8, 1.6, (5, 26))
    batch = solve_shapes(PLAIN26, energies, method="intervals", edges=True)
    assert_matches(batch, N26, energies)
    _, _, verts = reference(N26, energies[0])
    np.testing.assert_allclose(
        batch.edge_lengths[0], reference_edges(N26, energies[0], verts), rtol=0, atol=1e-9
    )


RNG_PLANES = np.random.default_rng(11).normal(size=(18, 3))  # a fixed low-symmetry set
LOW = prepare_planes(RNG_PLANES)


@settings(max_examples=10, deadline=None, derandomize=True)
@given(seed=st.integers(0, 2**32 - 1))
def test_low_symmetry_random_planes(seed):
    energies = np.random.default_rng(seed).uniform(0.5, 2.0, (6, 18))
    batch = solve_shapes(LOW, energies, method="intervals")
    assert_matches(batch, LOW.normals, energies)


def test_low_symmetry_set_really_loses_faces():
    energies = np.random.default_rng(1).uniform(0.5, 2.0, (50, 18))
    batch = solve_shapes(LOW, energies)
    assert batch.method == "intervals"
    assert batch.present.sum(axis=1).min() < 18  # some faces really are cut away


def test_hull_method_and_forced_fallback_agree(monkeypatch):
    rng = np.random.default_rng(3)
    fam = rng.uniform(0.7, 1.6, (25, 3))
    energies = PLANES26.expand(fam)
    fast = solve_shapes(PLANES26, energies)
    hull = solve_shapes(PLANES26, energies, method="hull")
    np.testing.assert_allclose(fast.areas, hull.areas, rtol=0, atol=1e-9 * fast.areas.max())
    # make every self-check fail: every shape must be recomputed and still agree
    monkeypatch.setattr(_intervals, "_CLOSURE", -1.0)
    redone = solve_shapes(PLANES26, energies)
    assert redone.n_fallback == 25
    np.testing.assert_allclose(redone.volume, fast.volume, rtol=1e-12)


@settings(max_examples=10, deadline=None, derandomize=True)
@given(seed=st.integers(0, 10_000))
def test_rotation_invariance(seed):
    # a rotated plane set with rotated operations gives the same areas and volume
    rng = np.random.default_rng(seed)
    q, _ = np.linalg.qr(rng.normal(size=(3, 3)))
    planes = prepare_planes(N26 @ q.T, operations=q @ OPS @ q.T)
    gamma = PLANES26.expand(rng.uniform(0.6, 1.8, 3))[None]
    a = solve_shapes(PLANES26, gamma)
    b = solve_shapes(planes, gamma)
    np.testing.assert_allclose(a.areas, b.areas, rtol=0, atol=1e-12 * a.areas.max())


# -- closed forms -------------------------------------------------------------------------


def test_exact_tie_110_gives_the_cube():
    # gamma110 = sqrt(2) gamma100: every {110} plane passes through a cube edge, so the
    # shape is the cube of half-width 1 (V = 8, each {100} face 4, {110} faces 0).
    # Closed-form geometry; tolerance 1e-12.
    for r111 in (SQRT3, 2.0, 10.0):
        gamma = np.array([1.0, SQRT2, r111])[F26]
        for planes, method in ((PLANES26, "intervals"), (PLAIN26, "intervals"), (PLAIN26, "hull")):
            out = solve_shapes(planes, gamma[None], method=method)
            assert abs(out.volume[0] - 8.0) < 1e-12
            np.testing.assert_allclose(out.areas[0][F26 == 0], 4.0, atol=1e-12)
            np.testing.assert_allclose(out.areas[0][F26 > 0], 0.0, atol=1e-12)
            assert out.n_fallback == 0


def test_collapsed_face_with_oblique_normal_has_no_area():
    # a plane through a cube edge whose normal is not the bisector: its face is a segment,
    # the cube is unchanged. Closed-form geometry (V = 8); tolerance 1e-12.
    phi = 0.3
    extra = np.array([[np.cos(phi), np.sin(phi), 0.0]])
    normals = np.vstack([np.eye(3), -np.eye(3), extra])
    gamma = np.r_[np.ones(6), np.cos(phi) + np.sin(phi)]
    out = solve_shapes(normals, gamma[None], method="intervals")
    assert abs(out.volume[0] - 8.0) < 1e-12
    assert abs(out.areas[0, 6]) < 1e-12
    assert out.n_fallback == 0


def test_cube_octahedron_thresholds():
    # {100}+{111}, r = gamma111/gamma100: {111} appears below r = sqrt(3) and {100} vanishes
    # below r = 1/sqrt(3) (Wulff 1901; closed-form geometry).
    r = np.array([SQRT3 * 1.001, SQRT3 * 0.999, 1.0, 0.999 / SQRT3, 1.001 / SQRT3])
    out = solve_shapes(PLANES2, PLANES2.expand(np.c_[np.ones(5), r]))
    present = out.form_present
    np.testing.assert_array_equal(present[:, 0], [True, True, True, False, True])
    np.testing.assert_array_equal(present[:, 1], [False, True, True, True, True])


@settings(max_examples=20, deadline=None, derandomize=True)
@given(r=st.floats(2.0 / SQRT3, SQRT3))
def test_corner_truncated_cube_closed_form(r):
    # cube |x_i| <= 1 cut by x+y+z <= t, t = sqrt(3) r in [2, 3]: eight disjoint corner
    # tetrahedra of leg 3 - t, V = 8 - 8 (3 - t)^3 / 6; each {111} face an equilateral
    # triangle of side sqrt(2)(3 - t). Closed-form geometry; tolerance 1e-12.
    t = SQRT3 * r
    out = solve_shapes(PLANES2, PLANES2.expand([[1.0, r]]))
    assert abs(out.volume[0] - (8.0 - 8.0 * (3.0 - t) ** 3 / 6.0)) < 1e-12
    tri = SQRT3 / 4.0 * 2.0 * (3.0 - t) ** 2
    np.testing.assert_allclose(out.areas[0][F2 == 1], tri, atol=1e-12)


def test_octahedron_closed_form():
    # r <= 1/sqrt(3): regular octahedron of inradius gamma111, V = 4 sqrt(3) gamma111^3
    # (closed-form geometry); tolerance 1e-12.
    out = solve_shapes(PLANES2, PLANES2.expand([[1.0, 0.5], [2.0, 0.4]]))
    np.testing.assert_allclose(out.volume, 4 * SQRT3 * np.array([0.5, 0.4]) ** 3, rtol=1e-12)
    np.testing.assert_allclose(out.form_fractions[:, 1], 1.0, atol=1e-12)


# -- bad input ----------------------------------------------------------------------------


def test_energies_must_be_equal_within_a_form():
    gamma = PLANES26.expand([1.0, 1.2, 1.3]).copy()
    gamma[5] *= 1.01
    with pytest.raises(InputError, match="same energy"):
        solve_shapes(PLANES26, gamma[None])


def test_open_plane_set_is_refused():
    with pytest.raises(OpenShapeError):
        prepare_planes([[1, 0, 0], [0, 1, 0], [0, 0, 1], [1, 1, 1]])


def test_operations_must_map_the_planes():
    c, s = np.cos(0.1), np.sin(0.1)
    turn = np.array([[c, -s, 0.0], [s, c, 0.0], [0.0, 0.0, 1.0]])  # 5.7 degrees about z
    with pytest.raises(InputError, match="onto itself"):
        prepare_planes(N2, operations=[turn])


def test_open_plane_set_with_every_pair_line_cut_is_refused():
    # normals all in the upper half-space: the solid is open downwards
    rng = np.random.default_rng(5)
    n = rng.normal(size=(8, 3))
    n[:, 2] = np.abs(n[:, 2]) + 0.1
    with pytest.raises(OpenShapeError):
        prepare_planes(n)


@settings(max_examples=25, deadline=None, derandomize=True)
@given(
    log_eps=st.floats(-15.0, -4.0),
    sign=st.sampled_from([-1.0, 1.0]),
    r111=st.sampled_from([SQRT3, 1.5, 3.0]),
)
def test_near_ties_match_hull(log_eps, sign, r111):
    # energies a hair away from the tie gamma110 = sqrt(2) gamma100 (and, for r111 = sqrt(3),
    # from the {111} corner tie): the result must stay continuous and agree with the hull
    r110 = SQRT2 * (1.0 + sign * 10.0**log_eps)
    gamma = np.array([1.0, r110, r111])[F26]
    for planes in (PLANES26, PLAIN26):
        batch = solve_shapes(planes, gamma[None], method="intervals")
        assert_matches(batch, N26, gamma[None])


@settings(max_examples=30, deadline=None, derandomize=True)
@given(
    phi=st.floats(0.05, 1.5),
    log_eps=st.floats(-16.0, -3.0),
    sign=st.sampled_from([-1.0, 1.0]),
)
def test_near_tie_of_an_oblique_plane_through_a_cube_edge(phi, log_eps, sign):
    # an extra plane through (or a hair off) the cube edge x = y = 1: continuous areas,
    # in agreement with the independent hull route (1e-9)
    normals = np.vstack([np.eye(3), -np.eye(3), [[np.cos(phi), np.sin(phi), 0.0]]])
    gamma = np.r_[np.ones(6), (np.cos(phi) + np.sin(phi)) * (1.0 + sign * 10.0**log_eps)]
    batch = solve_shapes(normals, gamma[None], method="intervals")
    assert_matches(batch, normals, gamma[None])
