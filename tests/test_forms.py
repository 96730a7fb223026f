"""Tests of form expansion, form names and closedness (habit.symmetry / habit.forms)."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.spatial import ConvexHull, HalfspaceIntersection

from habit.errors import InputError
from habit.forms import CUBIC_FORM_NAMES, form_name, is_closed_form
from habit.symmetry import (
    POINT_GROUP_SYMBOLS,
    expand_form,
    multiplicity,
    point_group,
)

# Special and general forms: (class, hkl in 3-index hexagonal/standard axes, name, faces).
# Sources: names and face counts of International Tables for Crystallography Vol. A
# (Hahn 2005), Table 10.1.2.2 (from memory), Klein & Dutrow (2007) Manual of Mineral
# Science ch. 5 (from memory); cubic counts cube 6, octahedron 8, rhombic dodecahedron 12,
# tetrahexahedron 24, trapezohedron 24, trisoctahedron 24, hexoctahedron 48, tetrahedron 4,
# tristetrahedron {hll} 12, deltoid dodecahedron {hhl} 12 (h > l), pyritohedron 12 also in
# Encyclopaedia Britannica (1911) "Crystallography". Quartz a {11-20} trigonal prism and s {11-21}
# trigonal dipyramid in 32: common practice. Names and counts are exact.
SPECIAL_FORMS = [
    ("m-3m", (1, 0, 0), "cube", 6),
    ("m-3m", (1, 1, 1), "octahedron", 8),
    ("m-3m", (1, 1, 0), "rhombic dodecahedron", 12),
    ("m-3m", (2, 1, 0), "tetrahexahedron", 24),
    ("m-3m", (2, 1, 1), "trapezohedron", 24),
    ("m-3m", (2, 2, 1), "trisoctahedron", 24),
    ("m-3m", (3, 2, 1), "hexoctahedron", 48),
    ("-43m", (1, 1, 1), "tetrahedron", 4),
    ("-43m", (2, 1, 1), "tristetrahedron", 12),  # {hll}, h > l
    ("-43m", (2, 2, 1), "deltoid dodecahedron", 12),  # {hhl}, h > l
    ("23", (2, 1, 1), "tristetrahedron", 12),
    ("23", (3, 3, 1), "deltoid dodecahedron", 12),
    ("-43m", (3, 2, 1), "hextetrahedron", 24),
    ("-43m", (2, 1, 0), "tetrahexahedron", 24),
    ("m-3", (2, 1, 0), "pyritohedron", 12),
    ("m-3", (3, 2, 1), "diploid", 24),
    ("m-3", (1, 1, 1), "octahedron", 8),
    ("23", (3, 2, 1), "tetartoid", 12),
    ("23", (1, 1, 1), "tetrahedron", 4),
    ("432", (3, 2, 1), "gyroid", 24),
    ("6/mmm", (1, 0, 0), "hexagonal prism", 6),  # {10-10}
    ("6/mmm", (1, 1, 0), "hexagonal prism", 6),  # {11-20}
    ("6/mmm", (2, 1, 0), "dihexagonal prism", 12),  # {21-30}
    ("6/mmm", (1, 0, 1), "hexagonal dipyramid", 12),  # {10-11}
    ("6/mmm", (2, 1, 1), "dihexagonal dipyramid", 24),  # {21-31}
    ("6/mmm", (0, 0, 1), "pinacoid", 2),
    ("-3m", (1, 0, 1), "rhombohedron", 6),  # {10-11}
    ("-3m", (2, 1, 1), "ditrigonal scalenohedron", 12),  # {21-31}
    ("-3m", (1, 1, 1), "hexagonal dipyramid", 12),  # {11-21}
    ("-3", (2, 1, 1), "rhombohedron", 6),
    ("32", (2, 1, 1), "trigonal trapezohedron", 6),
    ("32", (1, 0, 1), "rhombohedron", 6),
    ("32", (1, 1, 0), "trigonal prism", 3),  # quartz a {11-20}
    ("32", (1, 1, 1), "trigonal dipyramid", 6),  # quartz s {11-21}
    ("32", (1, 0, 0), "hexagonal prism", 6),  # quartz m {10-10}
    ("3m", (1, 0, 0), "trigonal prism", 3),  # {10-10} in 3m1
    ("3m", (1, 1, 1), "hexagonal pyramid", 6),  # {11-21} in 3m1
    ("3m", (2, 1, 1), "ditrigonal pyramid", 6),
    ("3", (2, 1, 1), "trigonal pyramid", 3),
    ("6", (2, 1, 1), "hexagonal pyramid", 6),
    ("-6", (2, 1, 1), "trigonal dipyramid", 6),
    ("6/m", (2, 1, 1), "hexagonal dipyramid", 12),
    ("622", (2, 1, 1), "hexagonal trapezohedron", 12),
    ("6mm", (2, 1, 1), "dihexagonal pyramid", 12),
    ("-6m2", (2, 1, 1), "ditrigonal dipyramid", 12),
    ("-6m2", (2, 1, 0), "ditrigonal prism", 6),
    ("-42m", (1, 1, 1), "tetragonal disphenoid", 4),
    ("-42m", (3, 2, 1), "tetragonal scalenohedron", 8),
    ("-4", (3, 2, 1), "tetragonal disphenoid", 4),
    ("4", (3, 2, 1), "tetragonal pyramid", 4),
    ("4/m", (3, 2, 1), "tetragonal dipyramid", 8),
    ("422", (3, 2, 1), "tetragonal trapezohedron", 8),
    ("4mm", (3, 2, 1), "ditetragonal pyramid", 8),
    ("4/mmm", (3, 2, 1), "ditetragonal dipyramid", 16),
    ("4/mmm", (2, 1, 0), "ditetragonal prism", 8),
    ("4/mmm", (1, 0, 0), "tetragonal prism", 4),
    ("4/mmm", (1, 1, 0), "tetragonal prism", 4),
    ("4mm", (0, 0, 1), "pedion", 1),
    ("222", (3, 2, 1), "rhombic disphenoid", 4),
    ("222", (1, 1, 0), "rhombic prism", 4),
    ("mm2", (3, 2, 1), "rhombic pyramid", 4),
    ("mm2", (1, 0, 1), "dome", 2),
    ("mm2", (0, 0, 1), "pedion", 1),
    ("mm2", (1, 0, 0), "pinacoid", 2),
    ("mmm", (3, 2, 1), "rhombic dipyramid", 8),
    ("mmm", (1, 1, 0), "rhombic prism", 4),
    ("2/m", (3, 2, 1), "rhombic prism", 4),
    ("2/m", (1, 0, 1), "pinacoid", 2),
    ("2", (3, 2, 1), "sphenoid", 2),
    ("2", (0, 1, 0), "pedion", 1),
    ("m", (3, 2, 1), "dome", 2),
    ("m", (1, 0, 1), "pedion", 1),
    ("-1", (3, 2, 1), "pinacoid", 2),
    ("1", (3, 2, 1), "pedion", 1),
]

# Vocabulary of form names (ITA Vol. A Table 10.1.2.2, Klein & Dutrow 2007; from memory).
VOCABULARY = {
    "pedion", "pinacoid", "dome", "sphenoid", "rhombic prism", "rhombic pyramid",
    "rhombic disphenoid", "rhombic dipyramid", "trigonal prism", "ditrigonal prism",
    "tetragonal prism", "ditetragonal prism", "hexagonal prism", "dihexagonal prism",
    "trigonal pyramid", "ditrigonal pyramid", "tetragonal pyramid", "ditetragonal pyramid",
    "hexagonal pyramid", "dihexagonal pyramid", "trigonal dipyramid", "ditrigonal dipyramid",
    "tetragonal dipyramid", "ditetragonal dipyramid", "hexagonal dipyramid",
    "dihexagonal dipyramid", "trigonal trapezohedron", "tetragonal trapezohedron",
    "hexagonal trapezohedron", "tetragonal scalenohedron", "ditrigonal scalenohedron",
    "rhombohedron", "tetragonal disphenoid",
} | {name for table in CUBIC_FORM_NAMES.values() for name in table.values()}  # fmt: skip


@pytest.mark.parametrize(
    ("group", "hkl", "name", "count"),
    SPECIAL_FORMS,
    ids=[f"{g}-{''.join(map(str, h))}" for g, h, _, _ in SPECIAL_FORMS],
)
def test_named_forms(group, hkl, name, count):
    assert form_name(hkl, group) == name
    assert multiplicity(hkl, group) == count


# ------------------------------------------------------------ face shapes from geometry
def _lattice(system: str) -> np.ndarray:
    """Rows a, b, c (Å) of a cell compatible with the system (invented numbers)."""
    a, b, c, beta = 1.0, 1.3, 1.7, np.radians(100.0)
    if system == "cubic":
        return np.eye(3)
    if system == "tetragonal":
        return np.diag([1.0, 1.0, 1.4])
    if system in ("trigonal", "hexagonal"):
        return np.array([[1.0, 0, 0], [-0.5, np.sqrt(3) / 2, 0], [0, 0, 1.3]])
    if system == "orthorhombic":
        return np.diag([a, b, c])
    if system == "monoclinic":
        return np.array([[a * np.sin(beta), 0, a * np.cos(beta)], [0, b, 0], [0, 0, c]])
    return np.array([[1.0, 0, 0], [0.3, 1.1, 0], [0.2, 0.4, 1.3]])


def _solid(hkl, group):
    """Polyhedron of one closed form at unit distances: (face sizes, V, E, F)."""
    g = point_group(group)
    faces = expand_form(hkl, g)
    normals = faces @ np.linalg.inv(_lattice(g.system)).T  # (F, 3) Cartesian
    normals /= np.linalg.norm(normals, axis=1, keepdims=True)
    hs = HalfspaceIntersection(np.hstack([normals, -np.ones((len(faces), 1))]), np.zeros(3))
    pts = hs.intersections
    keep = np.ones(len(pts), dtype=bool)  # merge duplicate vertices from degenerate facets
    for i in range(len(pts)):
        if keep[i]:
            dup = np.linalg.norm(pts[i + 1 :] - pts[i], axis=1) < 1e-9
            keep[i + 1 :] &= ~dup
    pts = pts[keep]
    on_face = np.abs(pts @ normals.T - 1.0) < 1e-9  # (V, F)
    sizes = on_face.sum(axis=0)
    v, f = len(pts), len(faces)
    return sorted(set(sizes.tolist())), v, v + f - 2, f  # Euler: E = V + F - 2


@pytest.mark.parametrize(
    ("group", "hkl", "polygon", "vef"),
    [
        # Face polygons and V/E/F (Klein & Dutrow 2007 ch. 5, from memory; pyritohedron
        # 20/30/12 from Wikipedia "Pyritohedron"; triakis tetrahedron 8/18/12 and tetartoid
        # 20/30/12 from Wikipedia "Triakis tetrahedron", "Tetartoid"). Exact counts.
        ("m-3m", (1, 0, 0), 4, (8, 12, 6)),
        ("m-3m", (1, 1, 1), 3, (6, 12, 8)),
        ("m-3m", (1, 1, 0), 4, (14, 24, 12)),
        ("m-3m", (2, 1, 0), 3, (14, 36, 24)),
        ("m-3m", (2, 1, 1), 4, (26, 48, 24)),
        ("m-3m", (2, 2, 1), 3, (14, 36, 24)),
        ("m-3m", (3, 2, 1), 3, (26, 72, 48)),
        ("-43m", (1, 1, 1), 3, (4, 6, 4)),
        ("-43m", (2, 1, 1), 3, (8, 18, 12)),
        ("-43m", (2, 2, 1), 4, (14, 24, 12)),
        ("-43m", (3, 2, 1), 3, (14, 36, 24)),
        ("m-3", (2, 1, 0), 5, (20, 30, 12)),
        ("m-3", (3, 2, 1), 4, (26, 48, 24)),
        ("432", (3, 2, 1), 5, (38, 60, 24)),
        ("23", (3, 2, 1), 5, (20, 30, 12)),
        ("-3m", (1, 0, 1), 4, (8, 12, 6)),
        ("32", (2, 1, 1), 4, (8, 12, 6)),
        ("-3m", (2, 1, 1), 3, (8, 18, 12)),
        ("6/mmm", (1, 0, 1), 3, (8, 18, 12)),
        ("-42m", (3, 2, 1), 3, (6, 12, 8)),
        ("422", (3, 2, 1), 4, (10, 16, 8)),
        ("622", (2, 1, 1), 4, (14, 24, 12)),
        ("-42m", (1, 1, 1), 3, (4, 6, 4)),
        ("222", (3, 2, 1), 3, (4, 6, 4)),
        ("mmm", (3, 2, 1), 3, (6, 12, 8)),
        ("-6", (2, 1, 1), 3, (5, 9, 6)),
    ],
)
def test_face_shapes_of_closed_forms(group, hkl, polygon, vef):
    # geometry computed with scipy's half-space intersection (a general-purpose library)
    sizes, v, e, f = _solid(hkl, group)
    assert sizes == [polygon]
    assert (v, e, f) == vef


# ------------------------------------------------------------ invariants (hypothesis)
indices = st.tuples(*[st.integers(-4, 4)] * 3).filter(any)


def _invariant_metric(ops: np.ndarray, rng: np.random.Generator) -> np.ndarray:
    """A random metric kept by the group: the average of W.T G0 W over the group."""
    m = rng.normal(size=(3, 3))
    g0 = m @ m.T + 3 * np.eye(3)
    return np.einsum("gji,jk,gkl->il", ops, g0, ops) / len(ops)


@settings(max_examples=150, deadline=None)
@given(st.sampled_from(POINT_GROUP_SYMBOLS), indices, st.integers(0, 2**32 - 1))
def test_faces_of_a_form_share_d_spacing(symbol, hkl, seed):
    ops = point_group(symbol).operations
    g = _invariant_metric(ops, np.random.default_rng(seed))
    gstar = np.linalg.inv(g)
    faces = expand_form(hkl, ops).astype(float)
    inv_d2 = np.einsum("fi,ij,fj->f", faces, gstar, faces)  # (F,) 1/d^2
    assert np.allclose(inv_d2, inv_d2[0], rtol=1e-10)


@settings(max_examples=150, deadline=None)
@given(st.sampled_from(POINT_GROUP_SYMBOLS), indices, indices, st.integers(0, 2**32 - 1))
def test_interfacial_angle_unchanged_by_an_operation(symbol, h1, h2, seed):
    rng = np.random.default_rng(seed)
    ops = point_group(symbol).operations
    gstar = np.linalg.inv(_invariant_metric(ops, rng))
    w_inv = np.linalg.inv(ops[rng.integers(len(ops))])

    def cos(a, b):
        return a @ gstar @ b / np.sqrt((a @ gstar @ a) * (b @ gstar @ b))

    a, b = np.array(h1, float), np.array(h2, float)
    assert cos(a @ w_inv, b @ w_inv) == pytest.approx(cos(a, b), abs=1e-12)


@settings(max_examples=200, deadline=None)
@given(st.sampled_from(POINT_GROUP_SYMBOLS), indices)
def test_orbit_closed_and_multiplicity_divides_order(symbol, hkl):
    g = point_group(symbol)
    faces = expand_form(hkl, g)
    keys = {tuple(f) for f in faces}
    assert tuple(faces[0]) == tuple(hkl)
    moved = np.einsum("fi,gij->gfj", faces, g.operations)  # (G, F, 3)
    assert {tuple(f) for f in moved.reshape(-1, 3)} == keys
    assert g.order % len(faces) == 0


def _unimodular(seed: int) -> np.ndarray:
    rng = np.random.default_rng(seed)
    p = np.eye(3, dtype=np.int64)
    for _ in range(5):
        i, j = rng.choice(3, size=2, replace=False)
        e = np.eye(3, dtype=np.int64)
        e[i, j] = rng.integers(-2, 3)
        p = p @ e
    return p


@settings(max_examples=150, deadline=None)
@given(st.sampled_from(POINT_GROUP_SYMBOLS), indices, st.integers(0, 2**32 - 1))
def test_name_and_closedness_do_not_depend_on_the_basis(symbol, hkl, seed):
    # Miller indices transform as (hkl) @ P under the basis change P.
    g = point_group(symbol)
    p = _unimodular(seed)
    moved_hkl = np.asarray(hkl) @ p
    moved_group = g.transformed(p)
    assert form_name(moved_hkl, moved_group) == form_name(hkl, g)
    assert form_name(hkl, g) in VOCABULARY
    assert is_closed_form(moved_hkl, moved_group) == is_closed_form(hkl, g)


def _origin_strictly_inside(normals: np.ndarray) -> bool:
    if np.linalg.matrix_rank(normals) < 3:
        return False
    hull = ConvexHull(np.vstack([normals, np.zeros(3)]))
    return bool(np.all(hull.equations[:, -1] < -1e-9))


@settings(max_examples=150, deadline=None)
@given(
    st.sampled_from(POINT_GROUP_SYMBOLS),
    st.lists(indices, min_size=1, max_size=3),
)
def test_closedness_agrees_with_convex_hull_of_normals(symbol, forms):
    # closed iff the origin is interior to the hull of the Cartesian face normals
    # (closed-form result; hull by scipy/qhull)
    g = point_group(symbol)
    faces = np.concatenate([expand_form(h, g) for h in forms])
    normals = faces @ np.linalg.inv(_lattice(g.system)).T
    normals /= np.linalg.norm(normals, axis=1, keepdims=True)
    assert is_closed_form(np.array(forms), g) == _origin_strictly_inside(normals)


@pytest.mark.parametrize(
    ("group", "forms", "closed"),
    [
        # Open forms: pedion, pinacoid, dome, sphenoid, prisms, pyramids; all others
        # closed (Klein & Dutrow 2007, ch. 5; from memory). Exact.
        ("m-3m", [(1, 0, 0)], True),
        ("-43m", [(1, 1, 1)], True),
        ("6/mmm", [(1, 0, 0)], False),
        ("6/mmm", [(1, 0, 0), (0, 0, 1)], True),
        ("6mm", [(1, 0, 1)], False),
        ("6mm", [(1, 0, 1), (0, 0, -1)], True),
        ("6mm", [(1, 0, 1), (0, 0, 1)], False),
        ("6mm", [(1, 0, 1), (1, 0, -1)], True),
        ("mm2", [(1, 0, 1)], False),
        ("2", [(1, 1, 1)], False),
        ("222", [(1, 1, 1)], True),
        ("-1", [(1, 2, 3)], False),
        ("-1", [(1, 0, 0), (0, 1, 0), (0, 0, 1)], True),
        ("1", [(1, 0, 0), (0, 1, 0), (0, 0, 1), (-1, -1, -1)], True),
        ("1", [(1, 0, 0), (0, 1, 0), (0, 0, 1), (-1, -1, 0)], False),
        ("-3m", [(1, 0, 1)], True),
        ("32", [(2, 1, 1)], True),
    ],
)
def test_closed_and_open_forms(group, forms, closed):
    assert is_closed_form(np.array(forms), group) is closed


def test_form_name_accepts_matrices_and_rejects_bad_forms():
    ops = point_group("-43m").operations
    assert form_name((1, 1, 1), ops) == "tetrahedron"
    with pytest.raises(InputError):
        is_closed_form(np.zeros((2, 2)), "m-3m")
