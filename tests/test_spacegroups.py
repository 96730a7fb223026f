"""Tests of habit.spacegroups: space-group lookup, operations and reflection conditions."""

from __future__ import annotations

import dataclasses
import itertools

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from test_symmetry import _unimodular

from habit.errors import InputError, InvalidMillerIndexError, UnknownSymbolError
from habit.spacegroups import (
    first_allowed_order,
    is_absent,
    space_group,
    space_group_from_operations,
)
from habit.symmetry import UNIQUE_AXIS_C

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
