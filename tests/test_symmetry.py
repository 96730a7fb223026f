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
    first_allowed_order,
    is_absent,
    multiplicity,
    point_group,
    point_group_from_operations,
    space_group,
    space_group_from_operations,
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


# ---------------------------------------------------------------- space groups
SPACE_GROUP_NAMES = [
    ("P21/c", 14, 81), ("P2_1/c", 14, 81), ("P 1 21/c 1", 14, 81), ("p 1 2_1/c 1", 14, 81),
    ("P 1 1 21/b", 14, 86), ("Fm-3m", 225, 523), ("F m -3 m", 225, 523), ("Fd-3m", 227, 525),
    ("Fd-3m:2", 227, 526), ("Ia-3d", 230, 530), ("R-3c", 167, 460), ("R-3c:R", 167, 461),
    (225, 225, 523), ("62", 62, None), ("Pnma", 62, None), ("Cmca", 64, None), (1, 1, 1),
    (230, 230, 530),
]  # fmt: skip


@pytest.mark.parametrize(("text", "number", "hall"), SPACE_GROUP_NAMES)
def test_space_group_lookup(text, number, hall):
    # Hall numbers from spglib's table (Togo et al. 2024); numbers from ITA Vol. A. Exact.
    sg = space_group(text)
    assert sg.number == number
    if hall is not None:
        assert sg.hall_number == hall
    assert sg.rotations.shape == (sg.order, 3, 3) and sg.translations.shape == (sg.order, 3)


def test_all_numbers_resolve():
    for n in range(1, 231):
        assert space_group(n).number == n


@pytest.mark.parametrize("bad", ["P7", "X1", "", "Fm-3m:9", 0, 231, "Q21/c"])
def test_unknown_space_group(bad):
    with pytest.raises(UnknownSymbolError):
        space_group(bad)


def test_space_group_operation_counts_include_centring():
    # ITA Vol. A: Fm-3m has 48 x 4 operations in the F cell, R-3c 12 x 3 in hexagonal axes
    # and 12 in rhombohedral axes, P2_1/c 4. Exact.
    assert space_group("Fm-3m").order == 192
    assert space_group("R-3c").order == 36 and space_group("R-3c:R").order == 12
    assert space_group("P2_1/c").order == 4
    t = space_group("Fm-3m").translations
    assert any(np.allclose(v, [0, 0.5, 0.5]) for v in t)
    sg = space_group("Fd-3m")
    with pytest.raises(ValueError):
        sg.translations[0, 0] = 0.3
    with pytest.raises(dataclasses.FrozenInstanceError):
        sg.number = 1


def test_space_group_from_operations_in_user_cell():
    ref = space_group("P2_1/c")
    moved_rot = np.array([np.linalg.inv(UNIQUE_AXIS_C) @ w @ UNIQUE_AXIS_C for w in ref.rotations])
    moved_trans = ref.translations @ np.linalg.inv(UNIQUE_AXIS_C).T
    sg = space_group_from_operations(np.rint(moved_rot).astype(int), moved_trans)
    assert sg.number == 14 and sg.hall_number is None
    assert sg.point_group.symbol == "2/m"
    assert any(np.array_equal(w, np.diag([-1, -1, 1])) for w in sg.rotations)
    with pytest.raises(InputError, match="not 15"):
        space_group_from_operations(ref.rotations, ref.translations, number=15)
    with pytest.raises(InputError, match="translations"):
        space_group_from_operations(ref.rotations, ref.translations[:2])


# ---------------------------------------------------------------- reflection conditions
GRID = np.array(
    [h for h in itertools.product(range(-6, 7), repeat=3) if any(h)], dtype=np.int64
)  # (2196, 3): all |h|, |k|, |l| <= 6


def _fcc_ok(h, k, l):  # noqa: E741 (Miller index l)
    return (h + k) % 2 == 0 and (h + l) % 2 == 0 and (k + l) % 2 == 0


def _fm3m_present(h, k, l):  # noqa: E741 (Miller index l)
    # ITA Vol. A, No. 225 Fm-3m: hkl: h+k, h+l, k+l = 2n (no further general conditions).
    return _fcc_ok(h, k, l)


def _fd3m_present(h, k, l):  # noqa: E741 (Miller index l)
    # ITA Vol. A, No. 227 Fd-3m: hkl: h+k, h+l, k+l = 2n; 0kl: k+l = 4n with k, l = 2n;
    # hhl: h+l = 2n; h00: h = 4n (and permutations, Laue class m-3m).
    if not _fcc_ok(h, k, l):
        return False
    idx = [h, k, l]
    for i in range(3):
        if idx[i] == 0:
            a, b = (abs(idx[j]) for j in range(3) if j != i)
            if a % 2 or b % 2 or (a + b) % 4:
                return False
    return True


def _ia3d_present(h, k, l):  # noqa: E741 (Miller index l)
    # ITA Vol. A, No. 230 Ia-3d: hkl: h+k+l = 2n; 0kl: k, l = 2n; hhl: 2h+l = 4n;
    # h00: h = 4n (and permutations / signs, Laue class m-3m).
    if (h + k + l) % 2:
        return False
    idx = [abs(h), abs(k), abs(l)]
    for i in range(3):
        others = [idx[j] for j in range(3) if j != i]
        if idx[i] == 0 and (others[0] % 2 or others[1] % 2):
            return False
        if others[0] == others[1] and (2 * others[0] + idx[i]) % 4:
            return False
    if sorted(idx)[:2] == [0, 0] and max(idx) % 4:
        return False
    return True


def _p21c_present(h, k, l):  # noqa: E741 (Miller index l)
    # ITA Vol. A, No. 14 P2_1/c (unique axis b, cell choice 1): h0l: l = 2n; 0k0: k = 2n;
    # 00l: l = 2n.
    if k == 0 and l % 2:
        return False
    if h == 0 and l == 0 and k % 2:
        return False
    return True


def _r3c_present(h, k, l):  # noqa: E741 (Miller index l)
    # ITA Vol. A, No. 167 R-3c, hexagonal axes (obverse): hkil: -h+k+l = 3n;
    # h-h0l: h+l = 3n, l = 2n; 000l: l = 6n. With i = -(h+k); h-h0l and its Laue (-3m1)
    # equivalents are the reflections with one of h, k, i zero.
    i = -(h + k)
    if (-h + k + l) % 3:
        return False
    if 0 in (h, k, i) and l % 2:
        return False
    return True


@pytest.mark.parametrize(
    ("symbol", "present"),
    [
        ("Fm-3m", _fm3m_present),
        ("Fd-3m", _fd3m_present),
        ("Fd-3m:2", _fd3m_present),
        ("Ia-3d", _ia3d_present),
        ("P2_1/c", _p21c_present),
        ("R-3c", _r3c_present),
    ],
)
def test_reflection_conditions_match_international_tables(symbol, present):
    # exact integer conditions over all |h|,|k|,|l| <= 6; phase tolerance 1e-6
    absent = is_absent(GRID, space_group(symbol))
    expected = np.array([not present(*map(int, h)) for h in GRID])
    wrong = GRID[absent != expected]
    assert len(wrong) == 0, f"{symbol}: first disagreement at {wrong[:5].tolist()}"


def test_is_absent_with_explicit_operations_and_shapes():
    sg = space_group("Ia-3d")
    a = is_absent(GRID[:50], sg.rotations, sg.translations)
    assert a.shape == (50,) and a.dtype == bool
    assert np.array_equal(a, is_absent(GRID[:50], "Ia-3d"))
    assert bool(is_absent([1, 0, 0], sg)) is True
    with pytest.raises(InputError, match="translations"):
        is_absent([1, 0, 0], sg.rotations)


@pytest.mark.parametrize(
    ("symbol", "hkl", "order"),
    [
        # BFDH orders: Donnay & Harker (1937) rule applied with the reflection conditions
        # of ITA Vol. A; the first allowed reflections fcc 200, 220, 111; bcc 200, 110,
        # 222; diamond 400, 220, 111, 311 are the standard powder lines of these
        # structures (common practice); P2_1/c 020, 002 (screw and glide); P6_3/mmc 002.
        # Exact.
        ("Fm-3m", (1, 0, 0), 2), ("Fm-3m", (1, 1, 0), 2), ("Fm-3m", (1, 1, 1), 1),
        ("Im-3m", (1, 0, 0), 2), ("Im-3m", (1, 1, 0), 1), ("Im-3m", (1, 1, 1), 2),
        ("Fd-3m", (1, 0, 0), 4), ("Fd-3m", (1, 1, 0), 2), ("Fd-3m", (1, 1, 1), 1),
        ("Fd-3m", (3, 1, 1), 1), ("P2_1/c", (0, 1, 0), 2), ("P2_1/c", (0, 0, 1), 2),
        ("P2_1/c", (1, 0, 0), 1), ("Pm-3m", (1, 0, 0), 1), ("P6_3/mmc", (0, 0, 1), 2),
    ],
)  # fmt: skip
def test_first_allowed_order(symbol, hkl, order):
    assert first_allowed_order(hkl, symbol) == order


def test_first_allowed_order_vectorised_and_errors():
    orders = first_allowed_order([[1, 0, 0], [1, 1, 1], [2, 2, 0]], space_group("Fd-3m"))
    assert orders.tolist() == [4, 1, 1]
    with pytest.raises(InvalidMillerIndexError):
        first_allowed_order([0, 0, 0], "Fm-3m")
    with pytest.raises(InvalidMillerIndexError, match="no order"):
        first_allowed_order([1, 0, 0], "Fd-3m", max_order=3)


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


# ---------------------------------------------------------------- absences: invariants
@settings(max_examples=60, deadline=None)
@given(st.integers(1, 230), st.integers(0, 2**32 - 1))
def test_absences_invariant_under_laue_symmetry_and_origin_shift(number, seed):
    # Closed-form facts (ITA Vol. A Section 2.2.13): systematic absences are the same for
    # Laue-equivalent reflections, for h and -h (Friedel), and do not depend on the origin
    # (an origin shift p changes w into w + (W - I) p). Exact, phase tolerance 1e-6.
    rng = np.random.default_rng(seed)
    sg = space_group(number)
    hkl = rng.integers(-6, 7, size=(40, 3))
    hkl = hkl[np.any(hkl != 0, axis=1)]
    base = is_absent(hkl, sg)
    assert np.array_equal(base, is_absent(-hkl, sg))
    w = sg.point_group.operations[rng.integers(sg.point_group.order)]
    assert np.array_equal(base, is_absent(hkl @ w, sg))
    shift = rng.random(3)
    moved = sg.translations + np.einsum("nij,j->ni", sg.rotations - np.eye(3), shift)
    assert np.array_equal(base, is_absent(hkl, sg.rotations, moved))


@settings(max_examples=25, deadline=None)
@given(st.integers(1, 230), st.integers(0, 2**32 - 1))
def test_space_group_identified_after_basis_change(number, seed):
    # spglib (reference library) must identify the type from operations written in a
    # random unimodular basis; the point group is identified by habit. Exact.
    sg = space_group(number)
    p = _unimodular(np.random.default_rng(seed))
    p_inv = np.linalg.inv(p)
    rot = np.rint(p_inv @ sg.rotations @ p).astype(np.int64)
    trans = sg.translations @ p_inv.T  # x' = P^-1 x, so w' = P^-1 w
    moved = space_group_from_operations(rot, trans)
    assert moved.number == number
    assert moved.point_group.geometric_class == sg.point_group.geometric_class


def test_absence_input_validation():
    with pytest.raises(InvalidMillerIndexError):
        is_absent([0.5, 1, 0], "Fm-3m")
    with pytest.raises(InvalidMillerIndexError):
        is_absent([[1, 0], [0, 1]], "Fm-3m")
    sg = space_group("Fm-3m")
    with pytest.raises(InputError, match="shape"):
        is_absent([1, 0, 0], sg.rotations, sg.translations[:5])


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
