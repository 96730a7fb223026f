"""Symmetry detection from geometry alone.

Orders of the full symmetry groups of the Platonic solids: tetrahedron 24, cube and
octahedron 48, dodecahedron and icosahedron 120 (Coxeter, Regular Polytopes (1973),
Table I; exact). A regular polyhedron is flag-transitive, so its order equals its flag
count 4E (Coxeter 1973, section 2.1) -- checked as an independent relation.
"""

from __future__ import annotations

import numpy as np
import pytest
from poly_samples import (
    CUBE_NORMALS,
    DODECAHEDRON_NORMALS,
    ICOSAHEDRON_NORMALS,
    OCTAHEDRON_NORMALS,
    TETRAHEDRON_NORMALS,
    cubic_planes,
    hexagonal_prism_normals,
    random_rotation,
    unit,
)

from habit.errors import InputError
from habit.polyhedron import Polyhedron
from habit.polysym import point_group_symbols, rotation_orders, symmetry_of

PLATONIC = [
    ("tetrahedron", TETRAHEDRON_NORMALS, 24, "-43m", "Td"),
    ("cube", CUBE_NORMALS, 48, "m-3m", "Oh"),
    ("octahedron", OCTAHEDRON_NORMALS, 48, "m-3m", "Oh"),
    ("dodecahedron", DODECAHEDRON_NORMALS, 120, "m-3-5", "Ih"),
    ("icosahedron", ICOSAHEDRON_NORMALS, 120, "m-3-5", "Ih"),
]


@pytest.mark.parametrize("name,normals,order,hm,sch", PLATONIC, ids=[r[0] for r in PLATONIC])
def test_platonic_symmetry(name, normals, order, hm, sch) -> None:
    p = Polyhedron.from_halfspaces(normals, np.ones(len(normals)))
    s = symmetry_of(p)
    assert s.order == order
    assert s.order == p.flag_count  # flag-transitive
    assert (s.hm, s.schoenflies) == (hm, sch)
    assert s.n_proper == order // 2
    # every operation is orthogonal and maps vertices onto vertices
    for op, perm in zip(s.operations, s.vertex_permutations, strict=True):
        assert op @ op.T == pytest.approx(np.eye(3), abs=1e-9)
        assert p.vertices @ op.T == pytest.approx(p.vertices[perm], abs=1e-9)


def test_symmetry_survives_a_random_rotation() -> None:
    rot = random_rotation(np.random.default_rng(11))
    p = Polyhedron.from_halfspaces(ICOSAHEDRON_NORMALS @ rot.T, np.ones(20)).translated([3, 1, 2])
    s = symmetry_of(p)
    assert (s.order, s.schoenflies) == (120, "Ih")
    assert s.centre == pytest.approx([3, 1, 2], abs=1e-9)


@pytest.mark.parametrize(
    "forms,order,hm",
    [
        ({(1, 0, 0): 1.0, (1, 1, 1): 1.0}, 48, "m-3m"),  # truncated octahedron
        ({(2, 1, 0): 1.0}, 48, "m-3m"),  # tetrahexahedron (all signed permutations)
    ],
)
def test_cubic_shapes(forms, order, hm) -> None:
    n, d, hkl, fid = cubic_planes(forms)
    s = symmetry_of(Polyhedron.from_halfspaces(n, d))
    assert (s.order, s.hm) == (order, hm)


def test_pyritohedron_is_m3bar() -> None:
    # {210} in class m-3: cyclic permutations only of (0, +-1, +-2) -> pyritohedron, m-3
    # (order 24; International Tables Vol. A, point group m-3; common practice).
    rows = [[0, s1, 2 * s2] for s1 in (1, -1) for s2 in (1, -1)]
    h = np.array([np.roll(r, k) for r in rows for k in range(3)], float)
    s = symmetry_of(Polyhedron.from_halfspaces(unit(h), np.ones(12)))
    assert (s.order, s.hm, s.schoenflies) == (24, "m-3", "Th")
    assert s.is_centrosymmetric


def test_hexagonal_prism_and_tetragonal_shapes() -> None:
    p = Polyhedron.from_halfspaces(hexagonal_prism_normals(), [1.0] * 6 + [2.0] * 2)
    s = symmetry_of(p)
    assert (s.order, s.hm) == (24, "6/mmm")
    axes = np.vstack([np.eye(3), -np.eye(3)])  # +x, +y, +z, -x, -y, -z
    box = Polyhedron.from_halfspaces(axes, [1, 1, 2, 1, 1, 2])
    assert (symmetry_of(box).order, symmetry_of(box).hm) == (16, "4/mmm")
    brick = Polyhedron.from_halfspaces(axes, [1, 2, 3, 1, 2, 3])
    assert (symmetry_of(brick).order, symmetry_of(brick).hm) == (8, "mmm")


def test_tetrahedron_plus_inverse_tetrahedron() -> None:
    # {111} + {-1-1-1} unequal: truncated tetrahedron, -43m; equal: octahedron, m-3m
    n = np.vstack([TETRAHEDRON_NORMALS, -TETRAHEDRON_NORMALS])
    fid = [0] * 4 + [1] * 4
    p = Polyhedron.from_halfspaces(n, [1] * 4 + [1.5] * 4, form_ids=fid)
    assert symmetry_of(p).hm == "-43m"
    eq = Polyhedron.from_halfspaces(n, np.ones(8), form_ids=fid)
    assert symmetry_of(eq).hm == "m-3m"
    # counting the two forms as different lowers it to the tetrahedral class again
    assert symmetry_of(eq, by_form=True).hm == "-43m"


def test_general_shape_has_only_identity() -> None:
    rng = np.random.default_rng(5)
    n = rng.normal(size=(15, 3))
    p = Polyhedron.from_halfspaces(np.vstack([OCTAHEDRON_NORMALS, n]), rng.uniform(1, 2, 23))
    s = symmetry_of(p)
    assert (s.order, s.hm) == (1, "1")
    assert s.operations[0] == pytest.approx(np.eye(3))


def test_contains_a_crystal_class() -> None:
    cube = symmetry_of(Polyhedron.from_halfspaces(CUBE_NORMALS, np.ones(6)))
    four_fold_z = np.array([[0, -1, 0], [1, 0, 0], [0, 0, 1]], float)
    three_fold = np.array([[0, 0, 1], [1, 0, 0], [0, 1, 0]], float)
    assert cube.contains([four_fold_z, three_fold, -np.eye(3)])
    tilted = np.array([[np.cos(0.3), -np.sin(0.3), 0], [np.sin(0.3), np.cos(0.3), 0], [0, 0, 1]])
    assert not cube.contains(tilted)
    axes = np.vstack([np.eye(3), -np.eye(3)])
    box = symmetry_of(Polyhedron.from_halfspaces(axes, [1, 1, 2, 1, 1, 2]))
    assert box.contains(four_fold_z) and not box.contains(three_fold)


@pytest.mark.parametrize(
    "sch,hm",
    [("S4", "-4"), ("C3h", "-6"), ("D3d", "-3m"), ("D2d", "-42m"), ("C2v", "mm2")],
)
def test_symbols_from_generated_groups(sch, hm) -> None:
    gens = {
        "S4": [-np.array([[0, -1, 0], [1, 0, 0], [0, 0, 1]], float)],
        "C3h": [_rz(2 * np.pi / 3), np.diag([1.0, 1.0, -1.0])],
        "D3d": [_rz(2 * np.pi / 3), np.diag([1.0, -1.0, -1.0]), -np.eye(3)],
        "D2d": [-np.array([[0, -1, 0], [1, 0, 0], [0, 0, 1]], float), np.diag([1.0, -1, -1])],
        "C2v": [np.diag([-1.0, -1.0, 1.0]), np.diag([-1.0, 1.0, 1.0])],
    }[sch]
    assert point_group_symbols(_close(gens)) == (hm, sch)


def test_non_group_raises() -> None:
    with pytest.raises(InputError):
        point_group_symbols([np.eye(3), _rz(0.7)])


def test_rotation_orders() -> None:
    assert rotation_orders([_rz(2 * np.pi / 5), _rz(4 * np.pi / 5), -_rz(np.pi / 3)]).tolist() == [
        5,
        5,
        6,
    ]


def _rz(t: float) -> np.ndarray:
    c, s = np.cos(t), np.sin(t)
    return np.array([[c, -s, 0], [s, c, 0], [0, 0, 1.0]])


def _close(gens: list[np.ndarray]) -> np.ndarray:
    ops = [np.eye(3)]
    frontier = [np.eye(3)]
    while frontier:
        new = []
        for a in frontier:
            for g in gens:
                b = g @ a
                if not any(np.allclose(b, o) for o in ops):
                    ops.append(b)
                    new.append(b)
        frontier = new
    return np.array(ops)
