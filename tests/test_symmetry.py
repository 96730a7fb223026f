"""Tests of habit.symmetry: crystal classes, symbols, identification, space groups, absences."""

from __future__ import annotations

import dataclasses
import doctest
import itertools
import re
import subprocess
import sys

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from habit import symmetry
from habit.errors import InputError, InvalidMillerIndexError, UnknownSymbolError
from habit.symmetry import (
    POINT_GROUP_SYMBOLS,
    RHOMBOHEDRAL_AXES,
    UNIQUE_AXIS_A,
    UNIQUE_AXIS_C,
    PointGroup,
    expand_form,
    multiplicity,
    point_group,
    point_group_from_operations,
    space_group,
)

# Order of each crystal class = number of faces of its general form {hkl}.
# Source: International Tables for Crystallography Vol. A (Hahn 2005), Table 10.1.2.2
# (from memory); exact integers, tolerance 0.
GENERAL_FORM_ORDER = {
    "1": 1, "-1": 2, "2": 2, "m": 2, "2/m": 4, "222": 4, "mm2": 4, "mmm": 8,
    "4": 4, "-4": 4, "4/m": 8, "422": 8, "4mm": 8, "-42m": 8, "4/mmm": 16,
    "3": 3, "-3": 6, "32": 6, "3m": 6, "-3m": 12, "6": 6, "-6": 6, "6/m": 12,
    "622": 12, "6mm": 12, "-6m2": 12, "6/mmm": 24, "23": 12, "m-3": 24, "432": 24,
    "-43m": 24, "m-3m": 48,
}  # fmt: skip
SCHOENFLIES = {
    "1": "C1", "-1": "Ci", "2": "C2", "m": "Cs", "2/m": "C2h", "222": "D2", "mm2": "C2v",
    "mmm": "D2h", "4": "C4", "-4": "S4", "4/m": "C4h", "422": "D4", "4mm": "C4v",
    "-42m": "D2d", "4/mmm": "D4h", "3": "C3", "-3": "C3i", "32": "D3", "3m": "C3v",
    "-3m": "D3d", "6": "C6", "-6": "C3h", "6/m": "C6h", "622": "D6", "6mm": "C6v",
    "-6m2": "D3h", "6/mmm": "D6h", "23": "T", "m-3": "Th", "432": "O", "-43m": "Td",
    "m-3m": "Oh",
}  # fmt: skip
GENERAL_FACE = (7, 3, 1)  # no zero, no two equal |indices|, h+k != 0: general in every class


# ---------------------------------------------------------------- the 32 classes
def test_32_classes_orders_sum_to_332():
    # ITA Vol. A Table 10.1.2.2: the orders of the 32 point groups sum to 332 (from memory;
    # also the sum of the table above). Exact.
    assert len(GENERAL_FORM_ORDER) == 32
    assert sum(point_group(s).order for s in GENERAL_FORM_ORDER) == 332


@pytest.mark.parametrize("symbol", POINT_GROUP_SYMBOLS)
def test_general_form_multiplicity_equals_order(symbol):
    g = point_group(symbol)
    expected = GENERAL_FORM_ORDER[g.geometric_class]  # ITA Vol. A Table 10.1.2.2, exact
    assert g.order == expected
    assert multiplicity(GENERAL_FACE, g) == expected
    assert g.schoenflies == SCHOENFLIES[g.geometric_class]


@pytest.mark.parametrize("symbol", POINT_GROUP_SYMBOLS)
def test_operations_form_a_group_with_identity_first(symbol):
    ops = point_group(symbol).operations
    assert np.array_equal(ops[0], np.eye(3))
    keys = {w.tobytes() for w in ops}
    assert len(keys) == len(ops)
    for a, b in itertools.product(ops, ops):
        assert (a @ b).tobytes() in keys
    assert set(np.rint(np.linalg.det(ops)).astype(int)) <= {-1, 1}


@pytest.mark.parametrize(
    ("symbol", "system", "laue", "centro"),
    [
        ("1", "triclinic", "-1", False),
        ("2/m", "monoclinic", "2/m", True),
        ("mm2", "orthorhombic", "mmm", False),
        ("-42m", "tetragonal", "4/mmm", False),
        ("312", "trigonal", "-31m", False),
        ("-3m1", "trigonal", "-3m1", True),
        ("-6", "hexagonal", "6/m", False),
        ("m-3", "cubic", "m-3", True),
        ("-43m", "cubic", "m-3m", False),
    ],
)
def test_class_attributes(symbol, system, laue, centro):
    # common practice (crystal system, Laue class and centrosymmetry of each class)
    g = point_group(symbol)
    assert (g.system, g.laue_class, g.is_centrosymmetric) == (system, laue, centro)


def test_laue_class_is_the_group_with_inversion():
    for symbol in POINT_GROUP_SYMBOLS:
        g = point_group(symbol)
        with_inv = {w.tobytes() for w in g.operations} | {(-w).tobytes() for w in g.operations}
        laue = {w.tobytes() for w in point_group(g.laue_class).operations}
        assert with_inv == laue, symbol


def test_orientation_variants_use_their_axes():
    # ITA Vol. A, Part 10: in 321 a 2-fold lies along [100] (hexagonal axes), in 312 along
    # [1-10]; 3m1 has a mirror normal to [100]; -42m a 2-fold along [100], -4m2 a mirror
    # normal to [100]. Operation (x-y, -y, -z) = 2 along [100]. Exact.
    two_a = np.array([[1, -1, 0], [0, -1, 0], [0, 0, -1]])
    two_d = np.array([[0, -1, 0], [-1, 0, 0], [0, 0, -1]])

    def has(sym, w):
        return any(np.array_equal(o, w) for o in point_group(sym).operations)

    assert has("321", two_a) and not has("312", two_a)
    assert has("312", two_d) and not has("321", two_d)
    assert has("3m1", -two_a) and has("31m", -two_d)
    assert has("-62m", two_a) and has("-6m2", -two_a)
    assert has("-42m", np.diag([1, -1, -1])) and has("-4m2", np.diag([-1, 1, 1]))


def test_point_group_is_frozen_and_read_only():
    g = point_group("4/mmm")
    with pytest.raises(dataclasses.FrozenInstanceError):
        g.symbol = "4"
    with pytest.raises(ValueError):
        g.operations[0, 0, 0] = 5
    assert hash(g) == hash(point_group("4/m 2/m 2/m")) and g == point_group("D4h")
    assert g != point_group("4mm")


# ---------------------------------------------------------------- symbols
GOOD_SYMBOLS = [
    ("m-3m", "m-3m"), ("m3m", "m-3m"), ("4/m -3 2/m", "m-3m"), ("M-3M", "m-3m"),
    ("4/mmm", "4/mmm"), ("4/m 2/m 2/m", "4/mmm"), ("-3m", "-3m1"), ("-3 2/m", "-3m1"),
    ("-3 2/m 1", "-3m1"), ("-3 1 2/m", "-31m"), ("bar3m", "-3m1"), ("3\u0304m", "-3m1"),
    ("\u22123m", "-3m1"), ("2/m", "2/m"), ("-1", "-1"), ("1", "1"), ("6/mmm", "6/mmm"),
    (" 6 / m m m ", "6/mmm"), ("6/m 2/m 2/m", "6/mmm"), ("32", "321"), ("3 2", "321"),
    ("312", "312"), ("3m", "3m1"), ("31m", "31m"), ("-6m2", "-6m2"), ("-6 2 m", "-62m"),
    ("-42m", "-42m"), ("-4m2", "-4m2"), ("m3", "m-3"), ("2/m -3", "m-3"), ("23", "23"),
    ("432", "432"), ("-43m", "-43m"), ("mm2", "mm2"), ("222", "222"), ("2/m 2/m 2/m", "mmm"),
    ("Oh", "m-3m"), ("oh", "m-3m"), ("D4h", "4/mmm"), ("C2h", "2/m"), ("Td", "-43m"),
    ("D3d", "-3m1"), ("D3", "321"), ("C3v", "3m1"), ("D3h", "-6m2"), ("S6", "-3"),
    ("C3i", "-3"), ("Th", "m-3"), ("T", "23"), ("O", "432"), ("Cs", "m"), ("D2d", "-42m"),
    ("1 2/m 1", "2/m"),
]  # fmt: skip


@pytest.mark.parametrize(("text", "symbol"), GOOD_SYMBOLS, ids=[t for t, _ in GOOD_SYMBOLS])
def test_symbol_parsing(text, symbol):
    assert point_group(text).symbol == symbol


@pytest.mark.parametrize(
    "text", ["", "5", "5/m", "m-3m-", "P1", "mmmm", "3 2/m", "-3-3", "4/mm", "xyz", "D7h", 7]
)
def test_unknown_symbol_raises_one_sentence(text):
    with pytest.raises(UnknownSymbolError, match="unknown crystal class") as info:
        point_group(text)
    message = str(info.value)
    assert "m-3m" in message and "-4m2" in message and "\n" not in message


def test_unique_axis_settings():
    # unique axis c: the 2-fold of 2/m lies along c; unique axis a: along a. Exact.
    c = point_group("1 1 2/m")
    a = point_group("2/m 1 1")
    assert any(np.array_equal(w, np.diag([-1, -1, 1])) for w in c.operations)
    assert any(np.array_equal(w, np.diag([1, -1, -1])) for w in a.operations)
    assert c == point_group("2/m").transformed(UNIQUE_AXIS_C)
    assert a == point_group("2/m").transformed(UNIQUE_AXIS_A)
    assert any(np.array_equal(w, np.diag([1, -1, -1])) for w in point_group("2mm").operations)


# ---------------------------------------------------------------- basis changes
def test_rhombohedral_axes_give_permutation_threefold():
    # In rhombohedral axes the 3-fold along [111] permutes the axes (ITA Vol. A,
    # Table 5.1.3.1 basis change; from memory). Exact.
    g = point_group("-3m1").transformed(RHOMBOHEDRAL_AXES)
    cyc = np.array([[0, 0, 1], [1, 0, 0], [0, 1, 0]])
    assert any(np.array_equal(w, cyc) for w in g.operations)
    assert point_group_from_operations(g.operations).symbol == "-3m1"


@pytest.mark.parametrize("symbol", ["312", "31m", "-31m", "6", "-6m2"])
def test_rhombohedral_axes_refused_for_classes_without_that_lattice(symbol):
    with pytest.raises(InputError, match="non-integral"):
        point_group(symbol).transformed(RHOMBOHEDRAL_AXES)


def test_transformed_rejects_singular_matrix():
    with pytest.raises(InputError, match="non-singular"):
        point_group("mmm").transformed(np.zeros((3, 3)))


def _unimodular(rng: np.random.Generator) -> np.ndarray:
    p = np.eye(3, dtype=np.int64)
    for _ in range(6):
        i, j = rng.choice(3, size=2, replace=False)
        e = np.eye(3, dtype=np.int64)
        e[i, j] = rng.integers(-2, 3)
        p = p @ e
    return p


@pytest.mark.parametrize("symbol", POINT_GROUP_SYMBOLS)
def test_identification_round_trip_in_random_bases(symbol):
    rng = np.random.default_rng(POINT_GROUP_SYMBOLS.index(symbol))
    g = point_group(symbol)
    for _ in range(3):
        p = _unimodular(rng)
        moved = g.transformed(p)
        shuffled = moved.operations[rng.permutation(g.order)]
        found = point_group_from_operations(shuffled)
        assert found.symbol == symbol
        assert {w.tobytes() for w in found.operations} == {w.tobytes() for w in shuffled}
        assert np.array_equal(found.operations[0], np.eye(3))


@settings(max_examples=40, deadline=None)
@given(st.sampled_from(POINT_GROUP_SYMBOLS), st.integers(0, 2**32 - 1))
def test_identification_invariant_under_unimodular_change(symbol, seed):
    p = _unimodular(np.random.default_rng(seed))
    assert point_group_from_operations(point_group(symbol).transformed(p).operations).symbol == (
        symbol
    )


def test_identification_merges_repeated_rotations_and_checks_metric():
    ops = point_group("mmm").operations
    assert point_group_from_operations(np.concatenate([ops, ops])).order == 8
    cubic = np.eye(3) * 4.0
    assert point_group_from_operations(point_group("m-3m").operations, cubic).order == 48
    from habit.errors import CellError

    with pytest.raises(CellError):
        point_group_from_operations(point_group("m-3m").operations, np.diag([4.0, 4.0, 5.0]))


@pytest.mark.parametrize(
    ("ops", "match"),
    [
        (np.array([np.eye(3), np.diag([-1, -1, 1]), np.diag([1, -1, -1])]), "do not form a group"),
        (np.array([np.eye(3) * 2]), "determinant"),
        (np.array([np.eye(3) * 0.5]), "integer"),
        (np.zeros((2, 2)), "shape"),
    ],
)
def test_identification_rejects_non_groups(ops, match):
    with pytest.raises(InputError, match=match):
        point_group_from_operations(ops)


def _class_of_space_group_symbol(symbol: str) -> str:
    # Hermann–Mauguin rule (ITA Vol. A Section 12.1; common practice): drop the lattice
    # letter, screws n_m -> n, glides a b c n d e -> m.
    core = re.sub(r"_\d", "", symbol[1:])
    return re.sub("[abcnde]", "m", core)


def test_identification_agrees_with_spglib_for_all_230_types():
    # Reference library: spglib's database (Togo et al. 2024). The class and its orientation
    # (321/312, 3m1/31m, -3m1/-31m, -6m2/-62m, -42m/-4m2) read from spglib's space-group
    # symbol must equal the class identified from the rotation matrices. Exact.
    import spglib

    for number in range(1, 231):
        sg = space_group(number)
        t = spglib.get_spacegroup_type(sg.hall_number)
        expected = point_group(_class_of_space_group_symbol(t.international_short)).symbol
        assert sg.point_group.symbol == expected, (number, t.international_short)
        assert sg.point_group.geometric_class in (t.pointgroup_international, expected)


# ---------------------------------------------------------------- expand_form
def test_expand_form_order_and_first_face():
    faces = expand_form([2, 1, 0], "m-3m")
    assert faces.shape == (24, 3) and faces.dtype == np.int64
    assert faces[0].tolist() == [2, 1, 0]
    assert len({tuple(f) for f in faces}) == 24
    assert np.array_equal(faces, expand_form([2, 1, 0], point_group("m-3m").operations))


@pytest.mark.parametrize("bad", [[0, 0, 0], [1, 2], [0.5, 1, 0], "abc"])
def test_expand_form_rejects_bad_indices(bad):
    with pytest.raises(InvalidMillerIndexError):
        expand_form(bad, "m-3m")


# ---------------------------------------------------------------- module hygiene
def test_import_does_not_load_heavy_libraries():
    code = (
        "import sys, habit.symmetry, habit.forms; "
        "heavy = ('spglib', 'pymatgen', 'scipy', 'matplotlib'); "
        "print(sorted(m for m in heavy if m in sys.modules))"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "[]"


def test_point_group_results_are_cached():
    assert point_group("m-3m") is point_group("m3m")
    assert space_group("Fm-3m") is space_group(225)


def test_doctests():
    from habit import forms, spacegroups

    for module in (symmetry, spacegroups, forms):
        result = doctest.testmod(module, optionflags=doctest.ELLIPSIS)
        assert result.attempted > 0 and result.failed == 0, module.__name__


def test_public_names():
    assert set(symmetry.__all__) <= set(dir(symmetry)) | {"form_name", "is_closed_form"}
    assert symmetry.form_name([1, 0, 0], "m-3m") == "cube"
    assert isinstance(point_group("1"), PointGroup)


def test_point_group_accepts_numbers_typed_as_integers():
    assert point_group(432).symbol == "432" and point_group(-1).symbol == "-1"
    with pytest.raises(UnknownSymbolError):
        point_group(5)


# Primitive cells of the centred lattices, (a', b', c') = (a, b, c) @ P (ITA Vol. A
# Table 5.1.3.1; from memory). Exact rational matrices.
PRIMITIVE = {
    "P": np.eye(3),
    "A": np.array([[1, 0, 0], [0, 1, 1], [0, -1, 1]]) / np.array([1, 2, 2]),
    "B": np.array([[1, 0, 1], [0, 1, 0], [-1, 0, 1]]) / np.array([2, 1, 2]),
    "C": np.array([[1, 1, 0], [-1, 1, 0], [0, 0, 1]]) / np.array([2, 2, 1]),
    "I": np.array([[-1, 1, 1], [1, -1, 1], [1, 1, -1]]) / 2,
    "F": np.array([[0, 1, 1], [1, 0, 1], [1, 1, 0]]) / 2,
    "R": RHOMBOHEDRAL_AXES,
}


def test_identification_in_primitive_cells_of_all_230_types():
    # The class and its orientation relative to the lattice do not change when the
    # conventional centred cell is replaced by a primitive one. Exact.
    for number in range(1, 231):
        sg = space_group(number)
        p = PRIMITIVE[sg.symbol[0]]
        primitive = sg.point_group.transformed(p)  # raises if not integral
        found = point_group_from_operations(primitive.operations)
        assert found.symbol == sg.point_group.symbol, (number, sg.symbol)


def test_setting_suffixes():
    assert point_group("-3m:R") == point_group("-3m").transformed(RHOMBOHEDRAL_AXES)
    assert point_group("-3m:H") is point_group("-3m")
    assert point_group("2/m:c") == point_group("1 1 2/m")
    assert point_group("m:a") == point_group("m 1 1")
    with pytest.raises(UnknownSymbolError, match="does not apply"):
        point_group("m-3m:R")
    with pytest.raises(UnknownSymbolError):
        point_group("2/m:x")
    with pytest.raises(InputError, match="non-integral"):
        point_group("312:R")
