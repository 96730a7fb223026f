"""Broken-bond surface energies: closed forms for fcc and bcc, an ionic termination,
invariants and bad input."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from pymatgen.core import Lattice, Structure

from habit.bonds import (
    EV_PER_A2_IN_J_PER_M2,
    broken_bond_energies,
    find_bonds,
    scan_cuts,
    surface_termination,
)
from habit.crystal import Crystal
from habit.errors import HabitError, InputError
from tests import morph_samples as samples

# ---------------------------------------------------------------------------------------
# Derivation (closed form, first neighbours, one atom per primitive cell).
# Every cut of a Bravais lattice is equivalent, and the bonds crossing a plane of normal
# n per unit area are rho * sum_{b: n.b > 0} n.b = (rho / 2) sum_b |n.b| (rho = atoms per
# volume, b over the z first-neighbour vectors of one atom). With E per bond and two
# surfaces per cut: gamma(n) = (rho E / 4) sum_b |n.b|   (Mackenzie, Moore & Nicholas
# 1962, from memory; REFERENCES §7 [computed]).
# fcc, b = (a/2)(±1, ±1, 0) and permutations; with |h| >= |k| >= |l| and
# |x + y| + |x - y| = 2 max(|x|, |y|):  sum_b |n.b| = 2a (2|h| + |k|) / |hkl|, so
#     gamma(hkl) / gamma(111) = (2h + k) / (sqrt 3 |hkl|)   ->  1 : 2/sqrt3 : sqrt(3/2)
# bcc, b = (a/2)(±1, ±1, ±1): sum of |h ± k ± l| over the four sign pairs is 4h when
# h >= k + l and 2(h + k + l) otherwise, so
#     gamma(hkl) / gamma(110) = max(2h, h + k + l) / (sqrt 2 |hkl|) -> 1 : sqrt2 : 2/sqrt3
# ---------------------------------------------------------------------------------------


def _fcc_ratio(hkl):
    h, k, _ = sorted((abs(x) for x in hkl), reverse=True)
    return (2 * h + k) / (math.sqrt(3) * math.sqrt(sum(x * x for x in hkl)))


def _bcc_ratio(hkl):
    h, k, l = sorted((abs(x) for x in hkl), reverse=True)  # noqa: E741
    return max(2 * h, h + k + l) / (math.sqrt(2) * math.sqrt(sum(x * x for x in hkl)))


def test_fcc_first_neighbour_ratios():
    # γ111 : γ100 : γ110 = 1 : 2/√3 : √(3/2) (closed form above), tolerance 1e-9
    g = broken_bond_energies(samples.copper(), 1, shells=1).energies()
    assert g[(1, 0, 0)] / g[(1, 1, 1)] == pytest.approx(2 / math.sqrt(3), abs=1e-9)
    assert g[(1, 1, 0)] / g[(1, 1, 1)] == pytest.approx(math.sqrt(1.5), abs=1e-9)
    assert g[(1, 1, 1)] / g[(1, 0, 0)] == pytest.approx(math.sqrt(3) / 2, abs=1e-9)


def test_bcc_first_neighbour_ratios():
    # γ110 : γ100 : γ211 = 1 : √2 : 2/√3 (closed form above), tolerance 1e-9
    g = broken_bond_energies(samples.iron(), 2, shells=1).energies()
    assert g[(1, 0, 0)] / g[(1, 1, 0)] == pytest.approx(math.sqrt(2), abs=1e-9)
    assert g[(2, 1, 1)] / g[(1, 1, 0)] == pytest.approx(2 / math.sqrt(3), abs=1e-9)


@pytest.mark.parametrize(
    ("make", "reference", "closed"),
    [(samples.copper, (1, 1, 1), _fcc_ratio), (samples.iron, (1, 1, 0), _bcc_ratio)],
    ids=["fcc", "bcc"],
)
def test_every_form_up_to_index_3_follows_the_closed_form(make, reference, closed):
    # includes REFERENCES §7 [computed] fcc γ211 1.17851, γ311 1.21854; bcc γ310 1.34164,
    # γ111 1.22474 (relative to γ111 / γ110); tolerance 1e-9
    g = broken_bond_energies(make(), 3, shells=1).energies()
    assert len(g) == 13  # m-3m forms within ±3 (counted by hand)
    for hkl, value in g.items():
        assert value / g[reference] == pytest.approx(closed(hkl), abs=1e-9), hkl


def test_fcc_energy_in_joules_per_square_metre():
    # (111) of fcc: 3 bonds broken per surface atom, area per atom sqrt3 a²/4:
    # γ = 3 E / (2 · sqrt3 a²/4) = 2 sqrt3 E / a² eV/Å²; 1 eV/Å² = 16.0218 J/m² (CODATA).
    e_bond = 0.5
    result = broken_bond_energies(samples.copper(), 1, bond_energies={"Cu-Cu": e_bond})
    expected = 2 * math.sqrt(3) * e_bond / samples.A_CU**2 * 16.02176634
    assert result.energy_unit == "J/m²"
    assert result.energies()[(1, 1, 1)] == pytest.approx(expected, rel=1e-9)
    assert EV_PER_A2_IN_J_PER_M2 == pytest.approx(16.0218, abs=1e-4)
    top = result.terminations[0]
    # dangling bonds per Å² of (111): 3 per atom / (sqrt3 a²/4)
    assert top.broken_bonds_per_area == pytest.approx(12 / (math.sqrt(3) * samples.A_CU**2))


def test_fcc_wulff_shape_is_the_regular_truncated_octahedron():
    # γ111/γ100 = √3/2: the Archimedean truncated octahedron, all 36 edges equal, 24
    # vertices, 14 faces; {110} exactly marginal (REFERENCES §6, §7); tolerance 1e-9.
    shape = broken_bond_energies(samples.copper(), 1).wulff()
    poly = shape.polyhedron
    assert (poly.n_vertices, poly.n_faces, poly.n_edges) == (24, 14, 36)
    edges = np.asarray(poly.edge_lengths)
    assert np.ptp(edges) <= 1e-9 * edges.mean()
    present = {f.label for f in shape.forms if f.present}
    assert present == {"{111}", "{100}"}


def test_bcc_wulff_shape_is_the_rhombic_dodecahedron():
    # rhombic dodecahedron: 12 rhombic faces, 14 vertices, 24 edges (REFERENCES §7)
    shape = broken_bond_energies(samples.iron(), 2).wulff()
    poly = shape.polyhedron
    assert (poly.n_faces, poly.n_vertices, poly.n_edges) == (12, 14, 24)
    assert {f.label for f in shape.forms if f.present} == {"{110}"}


def test_fluorite_111_termination_is_between_the_fluorine_layers():
    # Fluorite along [111]: layers Ca (0), F (d/4), F (3d/4) per period d = a/√3. Each Ca
    # has 8 F neighbours along <111>/4: 3 at +d/4, 1 at +3d/4, 3 at -d/4, 1 at -3d/4.
    # A cut inside the F–Ca–F triple layer (between Ca and F) breaks 3 + 1 = 4 bonds per
    # Ca; a cut between the two F layers breaks 1 + 1 = 2 (Tasker 1979, from memory:
    # the F–Ca–F terminated (111) is the stable fluorite face). Area per Ca √3a²/4.
    bonds = find_bonds(samples.fluorite(), shells=1)
    scan = scan_cuts(bonds, (1, 1, 1))
    d = samples.A_CAF2 / math.sqrt(3)
    assert scan.layer_heights / d == pytest.approx([0.0, 0.25, 0.75], abs=1e-12)
    per_ca = scan.broken / 4  # 4 Ca per conventional cell
    assert per_ca.tolist() == pytest.approx([4.0, 2.0, 4.0], abs=1e-12)
    best = surface_termination(bonds, (1, 1, 1))
    assert int(np.argmin(scan.energies)) != 0  # the first cut tried is not the best
    assert best.cut_height == pytest.approx(0.5 * d, abs=1e-9)
    assert best.layer_above == "F4" and best.layer_below == "F4"
    area_per_ca = math.sqrt(3) * samples.A_CAF2**2 / 4
    assert best.energy == pytest.approx(2 / (2 * area_per_ca), rel=1e-12)


def test_shells_cutoff_and_pair_cutoffs_agree_on_fluorite():
    # Ca–F 2.365 Å (a √3/4), F–F 2.731 Å (a/2): a 2.5 Å cutoff, one shell and a Ca-F pair
    # cutoff all bond the same 8 Ca–F per Ca (32 per cell); closed form a√3/4.
    xtal = samples.fluorite()
    sets = [
        find_bonds(xtal, cutoff=2.5),
        find_bonds(xtal, shells=1),
        find_bonds(xtal, pair_cutoffs={"F-Ca": 2.5}),
    ]
    for b in sets:
        table = b.pair_table()
        assert list(table) == [("Ca", "F")]
        n, lo, hi = table[("Ca", "F")]
        assert n == 32
        assert lo == pytest.approx(samples.A_CAF2 * math.sqrt(3) / 4, abs=1e-9)
    two = find_bonds(xtal, shells=2).pair_table()
    assert set(two) == {("Ca", "F"), ("F", "F"), ("Ca", "Ca")}  # Ca's 2nd shell: 12 Ca


def _random_crystal(seed):
    rng = np.random.default_rng(seed)
    lat = Lattice.from_parameters(*rng.uniform(3.0, 4.5, 3), *rng.uniform(80.0, 100.0, 3))
    frac = rng.uniform(0, 1, (3, 3))
    s = Structure(lat, ["Si", "O", "O"], frac)
    return s


@settings(max_examples=25, deadline=None)
@given(
    seed=st.integers(0, 10_000),
    hkl=st.tuples(*[st.integers(-2, 2)] * 3).filter(any),
    shift=st.tuples(*[st.floats(-1.0, 1.0)] * 3),
)
def test_energy_is_invariant_under_translation_sign_and_supercell(seed, hkl, shift):
    s = _random_crystal(seed)
    cutoff = 4.0
    base = surface_termination(find_bonds(Crystal.from_structure(s), cutoff=cutoff), hkl)
    # a rigid shift of all atoms changes no bond
    moved = s.copy()
    moved.translate_sites(list(range(len(s))), shift, frac_coords=True, to_unit_cell=True)
    e_moved = surface_termination(find_bonds(Crystal.from_structure(moved), cutoff=cutoff), hkl)
    assert e_moved.energy == pytest.approx(base.energy, rel=1e-9, abs=1e-12)
    # (hkl) and (-h -k -l) are the same plane family
    neg = surface_termination(
        find_bonds(Crystal.from_structure(s), cutoff=cutoff), tuple(-x for x in hkl)
    )
    assert neg.energy == pytest.approx(base.energy, rel=1e-9, abs=1e-12)
    # the same crystal described in a doubled cell: a' = 2a, so (hkl) -> (2h k l)
    big = s.copy()
    big.make_supercell([2, 1, 1])
    e_big = surface_termination(
        find_bonds(Crystal.from_structure(big), cutoff=cutoff), (2 * hkl[0], hkl[1], hkl[2])
    )
    assert e_big.energy == pytest.approx(base.energy, rel=1e-9, abs=1e-12)


def test_layered_crystal_with_no_bonds_between_layers_has_no_wulff_shape():
    # square nets 3 Å apart within, 10 Å between: (001) cuts break nothing
    s = Structure(Lattice.tetragonal(3.0, 10.0), ["C"], [[0, 0, 0]])
    result = broken_bond_energies(Crystal.from_structure(s, name="layers"), 1, cutoff=3.5)
    assert result.energies()[(0, 0, 1)] == 0.0
    with pytest.raises(InputError, match=r"no bond crosses the best cut of \{001\}"):
        result.wulff()


def test_no_atoms_is_refused():
    with pytest.raises(HabitError, match="has no atoms"):
        find_bonds(Crystal.from_cell(4.0, crystal_class="m-3m", name="bare cell"))


def test_cutoff_that_bonds_nothing_is_refused():
    with pytest.raises(InputError, match="bonds no atoms in copper") as info:
        find_bonds(samples.copper(), cutoff=2.0)
    assert "2.556 Å" in str(info.value)  # a/√2, the shortest Cu–Cu distance


@pytest.mark.parametrize(
    ("kwargs", "message"),
    [
        ({"cutoff": 3.0, "shells": 1}, "choose one bond rule"),
        ({"cutoff": -1.0}, "must be a positive finite number"),
        ({"shells": 0}, "whole number >= 1"),
        ({"pair_cutoffs": {"Ca-Cl": 3.0}}, "bond no atoms"),
        ({"pair_cutoffs": {"CaF": 3.0}}, "an element pair is written A-B"),
        ({"bond_energies": {"F-F": 0.3}}, "no bond energy for the bonded pair Ca-F"),
        ({"bond_energies": {"Ca-F": float("nan")}}, "positive finite"),
    ],
)
def test_bad_bond_input_is_one_clear_sentence(kwargs, message):
    with pytest.raises(InputError, match=message) as info:
        find_bonds(samples.fluorite(), **kwargs)
    assert str(info.value).endswith(".")


def test_rutile_110_is_the_lowest_and_breaks_two_bonds_per_cell():
    # Bundled rutile (P4_2/mnm) with Ti–O bonds (1.95–1.98 Å; cutoff 2.2 Å). The
    # stoichiometric (110) surface keeps bridging O rows: per surface cell (a√2 × c) one
    # five-fold Ti and one two-fold bridging O, i.e. 2 broken Ti–O bonds (Diebold 2003,
    # Surf. Sci. Rep. 48, 53, from memory). Order of broken-bond energies
    # (110) < (100) < (101) < (001), as in the first-principles surface energies of
    # Ramamoorthy, Vanderbilt & King-Smith 1994, Phys. Rev. B 49, 16721 (from memory).
    from habit.crystal import load_crystal

    rutile = load_crystal("rutile")
    result = broken_bond_energies(rutile, 1, pair_cutoffs={"Ti-O": 2.2})
    terms = {t.hkl: t for t in result.terminations}
    assert result.terminations[0].hkl == (1, 1, 0)
    g = {h: t.energy for h, t in terms.items()}
    assert g[(1, 1, 0)] < g[(1, 0, 0)] < g[(1, 0, 1)] < g[(0, 0, 1)]
    a, _, c = rutile.cell[:3]
    assert terms[(1, 1, 0)].broken_bonds_per_area == pytest.approx(
        2 / (a * math.sqrt(2) * c), rel=1e-9
    )
    assert terms[(1, 1, 0)].layer_above == "O"  # the bridging-oxygen row is outermost


def test_bond_sets_are_read_only():
    bonds = find_bonds(samples.copper())
    with pytest.raises(ValueError):
        bonds.energies[0] = 2.0
    with pytest.raises(AttributeError):
        bonds.rule = "other"


def test_pyrite_first_shells_keep_the_disulfide_dimers():
    # Bundled pyrite (Pa-3, a 5.417 Å, S at x = 0.3848; structures/README.md). With one
    # shell per atom, Fe takes its 6 S and S its dimer partner, at 2√3 a (1/2 - x)
    # (closed form for S at ±(x, x, x) about the centre (1/2, 1/2, 1/2)): 24 Fe–S and
    # 4 S–S bonds per cell (4 FeS2). The lowest broken-bond energy is {100}, the cube
    # pyrite commonly grows as (common practice), and its cut leaves S2 dimers whole.
    from habit.crystal import load_crystal

    pyrite = load_crystal("pyrite")
    a = pyrite.cell[0]
    table = find_bonds(pyrite, shells=1).pair_table()
    assert table[("Fe", "S")][0] == 24 and table[("S", "S")][0] == 4
    assert table[("S", "S")][1] == pytest.approx(2 * math.sqrt(3) * a * (0.5 - 0.3848), abs=1e-6)
    result = broken_bond_energies(pyrite, 1, shells=1)
    best = result.terminations[0]
    assert best.hkl == (1, 0, 0)
    assert best.layer_above == "S2" and best.layer_below == "S2"
    # no S–S bond crosses the best (100) cut: making S–S bonds 1000 times stronger leaves
    # its energy unchanged (to 1e-12 relative)
    cut = {"Fe-S": 2.3, "S-S": 2.2}
    soft = broken_bond_energies(
        pyrite, 1, pair_cutoffs=cut, bond_energies={"Fe-S": 1.0, "S-S": 1.0}
    ).energies()[(1, 0, 0)]
    hard = broken_bond_energies(
        pyrite, 1, pair_cutoffs=cut, bond_energies={"Fe-S": 1.0, "S-S": 1000.0}
    ).energies()[(1, 0, 0)]
    assert hard == pytest.approx(soft, rel=1e-12)
