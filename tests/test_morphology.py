"""BFDH ranking: first allowed orders, effective spacings, the BFDH polyhedron."""

from __future__ import annotations

import math

import numpy as np
import pytest
import spglib
from hypothesis import given, settings
from hypothesis import strategies as st
from pymatgen.core import Lattice, Structure

from habit.crystal import Crystal
from habit.errors import HabitError, InputError
from habit.morphology import bfdh, first_allowed_orders, form_representatives, representative_faces
from tests import morph_samples as samples


def _forms_by_hkl(result):
    return {f.hkl: f for f in result.forms}


# Reflection conditions (International Tables for Crystallography Vol. A, from memory):
# F lattice: h, k, l all even or all odd; I lattice: h + k + l even; Fd-3m adds
# 00l: l = 4n (d glide). Exact integers.
@pytest.mark.parametrize(
    ("make", "hkl", "order"),
    [
        (samples.copper, (1, 0, 0), 2),
        (samples.copper, (1, 1, 0), 2),
        (samples.copper, (1, 1, 1), 1),
        (samples.iron, (1, 0, 0), 2),
        (samples.iron, (1, 1, 1), 2),
        (samples.iron, (1, 1, 0), 1),
        (samples.silicon, (1, 0, 0), 4),
        (samples.silicon, (1, 1, 0), 2),
        (samples.silicon, (1, 1, 1), 1),
    ],
    ids=[
        "fcc-100",
        "fcc-110",
        "fcc-111",
        "bcc-100",
        "bcc-111",
        "bcc-110",
        "diamond-100",
        "diamond-110",
        "diamond-111",
    ],
)
def test_first_allowed_orders_of_cubic_lattices(make, hkl, order):
    assert int(first_allowed_orders(make(), [hkl])[0]) == order


def test_alpha_iron_worked_orders():
    # REFERENCES: α-Fe (Im-3m, a = 2.8665 Å, from memory): {110} 2.027, {100} 1.433 (200),
    # {211} 1.170 Å [computed from the cell, d = a / sqrt(h²+k²+l²) / n]; tolerance 1e-3 Å,
    # and the closed form itself to 1e-9 Å.
    result = bfdh(samples.iron(), 2)
    forms = _forms_by_hkl(result)
    for hkl, n, d_eff in [((1, 1, 0), 1, 2.027), ((1, 0, 0), 2, 1.433), ((2, 1, 1), 1, 1.170)]:
        f = forms[hkl]
        assert f.order == n
        assert f.d_eff == pytest.approx(d_eff, abs=1e-3)
        assert f.d_eff == pytest.approx(
            samples.A_FE / math.sqrt(sum(x * x for x in hkl)) / n, abs=1e-9
        )
    assert [f.label for f in result.forms[:3]] == ["{110}", "{100}", "{211}"]
    assert [f.rank for f in result.forms[:3]] == [1, 2, 3]


def test_quartz_worked_orders_and_screw_axis():
    # Quartz P3_221, a 4.9133, c 5.4053 Å: m{10-10} 4.255, r/z{10-11} 3.343,
    # {0001} -> (0003) 1.802 Å because of the 3_2 screw axis (00l: l = 3n).
    # Values [computed] in the REFERENCES §8 table from the HoM cell; tolerance 1e-3 Å.
    result = bfdh(samples.quartz(), 2)
    forms = _forms_by_hkl(result)
    m, r, z, c = forms[(1, 0, 0)], forms[(1, 0, 1)], forms[(0, 1, 1)], forms[(0, 0, 1)]
    assert (m.label, r.label, z.label, c.label) == ("{10-10}", "{10-11}", "{01-11}", "{0001}")
    assert m.d_eff == pytest.approx(4.255, abs=1e-3)
    assert r.d_eff == pytest.approx(3.343, abs=1e-3) and z.d_eff == pytest.approx(3.343, abs=1e-3)
    assert c.order == 3 and c.reflection == (0, 0, 3)
    assert c.d_eff == pytest.approx(1.802, abs=1e-3)
    assert c.d_eff == pytest.approx(samples.C_QZ / 3, abs=1e-12)  # closed form c/3
    # m first; r and z tie (same d) and share rank 2; the next rank is 4
    assert (m.rank, r.rank, z.rank) == (1, 2, 2)
    assert result.forms[3].rank == 4
    # the observed dominant forms of quartz are m, r, z (quartzpage.de, REFERENCES §8)
    present = {f.hkl for f in result.present_forms}
    assert {(1, 0, 0), (1, 0, 1), (0, 1, 1)} <= present


def test_hexagonal_spacings_match_the_closed_form():
    # 1/d² = 4/3 (h² + hk + k²)/a² + l²/c² (hexagonal axes; textbook closed form), 1e-9 Å
    result = bfdh(samples.quartz(), 2)
    for f in result.forms:
        h, k, l = f.hkl  # noqa: E741
        inv_d2 = 4.0 / 3.0 * (h * h + h * k + k * k) / samples.A_QZ**2 + l * l / samples.C_QZ**2
        assert f.d_spacing == pytest.approx(1.0 / math.sqrt(inv_d2), abs=1e-9)
        assert f.d_eff == pytest.approx(f.d_spacing / f.order, abs=1e-12)


def test_fluorite_face_centred_orders():
    # Fluorite Fm-3m, a 5.4626 Å: {111} 3.154 Å, {100} -> (200) 2.731 Å
    # (closed form a/sqrt(3) and a/2; tolerance 1e-3 Å as in the REFERENCES §8 rows).
    forms = _forms_by_hkl(bfdh(samples.fluorite(), 1))
    assert forms[(1, 1, 1)].order == 1
    assert forms[(1, 1, 1)].d_eff == pytest.approx(3.154, abs=1e-3)
    assert forms[(1, 0, 0)].reflection == (2, 0, 0)
    assert forms[(1, 0, 0)].d_eff == pytest.approx(2.731, abs=1e-3)
    assert forms[(1, 1, 1)].rank == 1


def test_lattice_only_rule_uses_plain_spacings():
    # Bravais–Friedel without reflection conditions: every order is 1, so for bcc the
    # cube {100} (d = a) outranks the dodecahedron {110} (d = a/sqrt 2). Closed form.
    result = bfdh(samples.iron(), 1, reflection_conditions=False)
    assert [f.hkl for f in result.forms] == [(1, 0, 0), (1, 1, 0), (1, 1, 1)]
    assert all(f.order == 1 for f in result.forms)


def test_bfdh_polyhedron_distances_and_area_fractions():
    result = bfdh(samples.quartz(), 2)
    poly = result.polyhedron
    # every face sits at d_eff(first) / d_eff of its form (the BFDH rule), 1e-12 relative
    by_label = {f.label: f for f in result.forms}
    for fid, dist in zip(poly.form_ids, poly.distances, strict=True):
        form = result.forms[int(fid)]
        assert dist == pytest.approx(result.forms[0].d_eff / form.d_eff, rel=1e-12)
    assert sum(f.area_fraction for f in result.forms) == pytest.approx(1.0, abs=1e-12)
    assert by_label["{10-10}"].area_fraction > by_label["{10-11}"].area_fraction


def test_bcc_bfdh_habit_is_the_rhombic_dodecahedron():
    # {110} at 1, {100} at sqrt 2: exactly the threshold at which {100} vanishes
    # (REFERENCES §6: pure rhombic dodecahedron if h110/h100 <= 1/sqrt 2), 12 faces,
    # 14 vertices (Euler: 14 - 24 + 12 = 2).
    poly = bfdh(samples.iron(), 2).polyhedron
    assert poly.n_faces == 12 and poly.n_vertices == 14


# A generic atom in general position: a systematically absent reflection has a zero
# structure factor for every structure of the space group; an allowed one is non-zero
# for almost every position. Independent of habit's symmetry code: the structure factor
# F(h) = sum_j exp(2 pi i h.x_j) over all atoms (equal scatterers) built by pymatgen.
def _orbit(symbol, position):
    """All images of a point under the space group's operations, from spglib's database."""
    hall = next(
        h for h in range(1, 531) if spglib.get_spacegroup_type(h).international_short == symbol
    )
    ops = spglib.get_symmetry_from_database(hall)
    pts = np.einsum("gij,j->gi", ops["rotations"], position) + ops["translations"]
    pts = np.mod(np.round(pts, 12), 1.0)
    return np.unique(np.round(pts, 9), axis=0)


@pytest.mark.parametrize(
    ("group", "lattice"),
    [
        ("Fd-3m", Lattice.cubic(5.4)),
        ("Im-3m", Lattice.cubic(3.0)),
        ("P3_221", Lattice.hexagonal(4.9, 5.4)),
        ("P6_3/mmc", Lattice.hexagonal(3.2, 5.2)),
        ("I4_1/amd", Lattice.tetragonal(4.0, 9.0)),
        ("P2_1/c", Lattice.monoclinic(5.0, 6.0, 7.0, 100.0)),
        ("Pnma", Lattice.orthorhombic(5.0, 6.0, 7.0)),
        ("Pbca", Lattice.orthorhombic(5.5, 6.5, 7.5)),
    ],
)
def test_first_allowed_order_against_structure_factors(group, lattice):
    rng = np.random.default_rng(20261201)
    position = rng.uniform(0.05, 0.45, size=3)
    s = Structure(lattice, ["Si"] * len(orbit := _orbit(group, position)), orbit)
    crystal = Crystal.from_structure(s, name=group)
    frac = np.asarray(s.frac_coords)
    reps = form_representatives(crystal, 2)
    orders = first_allowed_orders(crystal, reps)
    for hkl, n in zip(reps, orders, strict=True):
        for m in range(1, int(n) + 1):
            f = np.exp(2j * np.pi * frac @ (m * hkl)).sum()
            if m < n:
                assert abs(f) < 1e-8 * len(s), (group, hkl, m)
            else:
                assert abs(f) > 1e-6 * len(s), (group, hkl, m)


@settings(max_examples=60, deadline=None)
@given(
    hkl=st.tuples(*[st.integers(-4, 4)] * 3).filter(any),
    which=st.sampled_from(["m-3m", "6/mmm", "-3m", "4/mmm", "2/m", "-43m", "32"]),
)
def test_representative_is_a_member_and_the_same_for_every_member(hkl, which):
    crystal = {
        "m-3m": lambda: Crystal.from_cell(4.0, crystal_class="m-3m"),
        "6/mmm": lambda: Crystal.from_cell(3.0, c=5.0, crystal_class="6/mmm"),
        "-3m": lambda: Crystal.from_cell(3.0, c=5.0, crystal_class="-3m"),
        "4/mmm": lambda: Crystal.from_cell(3.0, c=5.0, crystal_class="4/mmm"),
        "2/m": lambda: Crystal.from_cell(3.0, 4.0, 5.0, 90, 100, 90, crystal_class="2/m"),
        "-43m": lambda: Crystal.from_cell(4.0, crystal_class="-43m"),
        "32": lambda: Crystal.from_cell(3.0, c=5.0, crystal_class="32"),
    }[which]()
    members = crystal.expand_form(hkl)
    reps = representative_faces(members, crystal.point_group.operations)
    assert len({tuple(r) for r in reps}) == 1  # one representative per form
    rep = reps[0]
    assert any(np.array_equal(rep, m) for m in members)  # it belongs to the form
    # no member has fewer negative indices than the representative
    assert (rep < 0).sum() == min(int((m < 0).sum()) for m in members)


def test_form_enumeration_counts_cubic_forms():
    # m-3m forms with indices within ±2: {100} {110} {111} {210} {211} {221} (6),
    # the coprime h >= k >= l >= 0 triples with h <= 2 (counted by hand).
    reps = form_representatives(Crystal.from_cell(4.0, crystal_class="m-3m"), 2)
    assert sorted(tuple(r) for r in reps) == sorted(
        [(1, 0, 0), (1, 1, 0), (1, 1, 1), (2, 1, 0), (2, 1, 1), (2, 2, 1)]
    )
    # triclinic -1: each form is a pair ±(hkl): (5^3 - 1)/2 = 62 pairs minus the
    # non-coprime ones (±(2,0,0)-type: 13 directions x 1) -> 49 forms (counted by hand)
    tri = Crystal.from_cell(3.0, 4.0, 5.0, 80, 85, 95, crystal_class="-1")
    assert len(form_representatives(tri, 2)) == 49


@pytest.mark.parametrize("bad", [0, 13, 1.5, True])
def test_bad_index_bound_is_refused(bad):
    with pytest.raises(InputError, match="max_index must be a whole number"):
        bfdh(samples.iron(), bad)


def test_no_space_group_is_one_clear_sentence():
    with pytest.raises(HabitError, match="has no space group") as info:
        bfdh(Crystal.from_cell(4.0, crystal_class="m-3m"))
    assert str(info.value).count(".") == 1 and str(info.value).endswith(".")


def test_results_are_frozen_and_reachable_from_the_package():
    import habit

    result = habit.bfdh(samples.iron(), 1)
    with pytest.raises(AttributeError):
        result.forms[0].d_eff = 3.0
    with pytest.raises(AttributeError):
        result.max_index = 3


@pytest.mark.parametrize("group", ["P2_1/c", "Pnma", "C2/c"])
def test_orders_follow_the_users_cell(group):
    # The same crystal described with its axes cycled, (a', b', c') = (c, a, b): the face
    # (hkl) becomes (l h k) and must keep its order n and d_eff (reflection conditions
    # come from the operations in the user's cell, not from the group's name).
    lattice = {
        "P2_1/c": Lattice.monoclinic(5.0, 6.0, 7.0, 100.0),
        "Pnma": Lattice.orthorhombic(5.0, 6.0, 7.0),
        "C2/c": Lattice.monoclinic(9.0, 6.0, 5.0, 105.0),
    }[group]
    frac = _orbit(group, np.array([0.13, 0.27, 0.41]))
    s = Structure(lattice, ["Si"] * len(frac), frac)
    a, b, c = lattice.matrix
    cycled = Structure(Lattice(np.array([c, a, b])), ["Si"] * len(frac), frac[:, [2, 0, 1]])
    one = bfdh(Crystal.from_structure(s), 2)
    two = {f.hkl: f for f in bfdh(Crystal.from_structure(cycled), 2).forms}
    members = Crystal.from_structure(cycled)
    for f in one.forms:
        h, k, l = f.hkl  # noqa: E741
        rep = tuple(
            int(x) for x in representative_faces([[l, h, k]], members.point_group.operations)[0]
        )
        g = two[rep]
        assert g.order == f.order, f.hkl
        assert g.d_eff == pytest.approx(f.d_eff, abs=1e-9)
