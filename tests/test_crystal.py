"""The Crystal: cells, classes, geometry, and published interfacial angles."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from habit.crystal import Crystal
from habit.errors import CellError, InvalidMillerIndexError, UnknownSymbolError
from habit.miller import parse_hkl


def dm(degrees: int, minutes: float) -> float:
    """Degrees and minutes to decimal degrees."""
    return degrees + minutes / 60.0


def angle_deg(crystal, f1, f2):
    return float(np.degrees(crystal.interfacial_angle(parse_hkl(f1), parse_hkl(f2))))


# --- sample crystals (cells with their sources) ---------------------------------------
# fluorite: a = 5.4626 Å, Fm-3m (Handbook of Mineralogy, "Fluorite")
FLUORITE = Crystal.from_cell(5.4626, crystal_class="m-3m", name="fluorite")
# alpha-quartz: a = 4.9133, c = 5.4053 Å, P3_221 (Handbook of Mineralogy, "Quartz")
QUARTZ = Crystal.from_cell(4.9133, c=5.4053, crystal_class="32", name="quartz")
# calcite: a = 4.9896, c = 17.0610 Å, R-3c (Handbook of Mineralogy, "Calcite")
CALCITE = Crystal.from_cell(4.9896, c=17.0610, crystal_class="-3m", name="calcite")
# zircon: a = 6.607, c = 5.982 Å, I4_1/amd (Handbook of Mineralogy, "Zircon")
ZIRCON = Crystal.from_cell(6.607, c=5.982, crystal_class="4/mmm", name="zircon")
# rutile: a = 4.5937, c = 2.9587 Å, P4_2/mnm (Handbook of Mineralogy, "Rutile")
RUTILE = Crystal.from_cell(4.5937, c=2.9587, crystal_class="4/mmm", name="rutile")
# topaz: a = 4.65, b = 8.80, c = 8.40 Å, Pbnm (rounded; Gatta et al. 2006, Am. Mineral. 91, 1839)
TOPAZ = Crystal.from_cell(4.65, 8.80, 8.40, crystal_class="mmm", name="topaz")


# --- cubic angles: closed forms (independent of a) ---------------------------------------
CUBIC = [
    ("100", "111", math.degrees(math.acos(1 / math.sqrt(3)))),  # 54.7356°, arccos(1/√3)
    ("111", "11-1", math.degrees(math.acos(1 / 3))),  # 70.5288°, arccos(1/3)
    ("110", "101", 60.0),  # arccos(1/2)
    ("100", "210", math.degrees(math.atan(0.5))),  # 26.5651°, atan(1/2)
    ("210", "2-10", math.degrees(math.acos(3 / 5))),  # 53.1301°, pyritohedron edge
    ("211", "121", math.degrees(math.acos(5 / 6))),  # 33.5573°, {211} trapezohedron
]


@pytest.mark.parametrize(("f1", "f2", "expected"), CUBIC, ids=[f"{a}^{b}" for a, b, _ in CUBIC])
def test_cubic_interfacial_angles_closed_form(f1, f2, expected):
    # closed forms from the dot product of the cubic normals; tolerance 1e-9°
    assert angle_deg(FLUORITE, f1, f2) == pytest.approx(expected, abs=1e-9)


def test_classical_cubic_values_in_degrees_and_minutes():
    # (100)^(111) = 54°44′ and (111)^(11-1) = 70°32′ (Dana, from memory; common practice)
    assert angle_deg(FLUORITE, "100", "111") == pytest.approx(dm(54, 44), abs=1 / 60)
    assert angle_deg(FLUORITE, "111", "11-1") == pytest.approx(dm(70, 32), abs=1 / 60)


# --- published angles of non-cubic minerals ---------------------------------------------
PUBLISHED = [
    # quartz r(10-11)^z(01-11): dihedral 133°44′ -> normal angle 46°16′
    # (Brauns, Das Mineralreich, p. 262); tolerance 1′ (precision of the quoted value)
    pytest.param(QUARTZ, "10-11", "01-11", 180 - dm(133, 44), 1 / 60, id="quartz r^z Brauns"),
    # quartz r(10-11)^r'(-1101) across the polar edge: dihedral 94°15′ measured by
    # Bournon (1817), Trans. Geol. Soc. 4, table -> 85°45′; tolerance 2′
    pytest.param(QUARTZ, "10-11", "-1101", 180 - dm(94, 15), 2 / 60, id="quartz r^r' Bournon"),
    # calcite cleavage rhombohedron {10-14} (structural cell): 74°55′
    # (Klein & Hurlbut 1985, Manual of Mineralogy, 20th ed., p. 329); tolerance 0.05°
    # because the modern cell gives 74°56.7′ (the handbook value is classical)
    pytest.param(CALCITE, "10-14", "-1104", dm(74, 55), 0.05, id="calcite cleavage K&H"),
    # zircon {101} (classical p{111}): dihedral over the apex 95°40′ (Bournon 1817)
    # -> (101)^(-101) = 84°20′; tolerance 0.05°
    pytest.param(ZIRCON, "101", "-101", 180 - dm(95, 40), 0.05, id="zircon p^p Bournon"),
    # rutile e(101)^e'(011) = 45°2′ (Dana, Textbook of Mineralogy; from memory); 0.05°
    pytest.param(RUTILE, "101", "011", dm(45, 2), 0.05, id="rutile e^e' Dana"),
    # topaz m(110)^m'(1-10) = 55°43′ (Dana, from memory); rounded cell -> tolerance 0.3°
    pytest.param(TOPAZ, "110", "1-10", dm(55, 43), 0.3, id="topaz m^m' Dana"),
]


@pytest.mark.parametrize(("crystal", "f1", "f2", "expected", "tol"), PUBLISHED)
def test_published_interfacial_angles(crystal, f1, f2, expected, tol):
    assert angle_deg(crystal, f1, f2) == pytest.approx(expected, abs=tol)


def test_orthorhombic_prism_identity():
    # (110)^(1-10) = 2 atan(a/b) for any orthorhombic cell (closed form)
    expected = 2 * math.degrees(math.atan(4.65 / 8.80))
    assert angle_deg(TOPAZ, "110", "1-10") == pytest.approx(expected, abs=1e-9)


def test_monoclinic_beta_identity():
    # (001)^(100) = 180° - beta for a monoclinic cell, unique axis b (closed form);
    # gypsum cell a 5.679, b 15.202, c 6.522 Å, beta 118.43° (Handbook of Mineralogy)
    gypsum = Crystal.from_cell(5.679, 15.202, 6.522, 90, 118.43, 90, crystal_class="2/m")
    assert angle_deg(gypsum, "001", "100") == pytest.approx(180 - 118.43, abs=1e-9)


def test_quartz_rho_of_r_face():
    # rho(r) = angle between (10-11) and (0001): tan rho = (2/sqrt3) c/a (closed form)
    expected = math.degrees(math.atan(2 / math.sqrt(3) * 5.4053 / 4.9133))
    assert angle_deg(QUARTZ, "10-11", "0001") == pytest.approx(expected, abs=1e-9)


# --- cells that do not fit their class ---------------------------------------------------
BAD_CELLS = [
    (dict(a=5, b=5, c=6, crystal_class="m-3m"), "cubic"),
    (dict(a=5, b=5, c=6, gamma=90, crystal_class="6/mmm"), "gamma = 120"),
    (dict(a=5, b=6, c=7, crystal_class="4/mmm"), "a = b"),
    (dict(a=5, b=6, c=7, alpha=80, crystal_class="mmm"), "orthorhombic"),
    (dict(a=5, b=6, c=7, alpha=80, beta=100, gamma=95, crystal_class="2/m"), "monoclinic"),
    (dict(a=1, b=1, c=1, alpha=120, beta=120, gamma=120, crystal_class="-1"), "real cell"),
    (dict(a=-1, b=1, c=1, crystal_class="-1"), "positive"),
    (dict(a=5, b=5, c=6, alpha=90, gamma=100, crystal_class="-3m"), "trigonal"),
]


@pytest.mark.parametrize(("kwargs", "fragment"), BAD_CELLS, ids=[b[1] for b in BAD_CELLS])
def test_cells_that_do_not_fit_are_refused(kwargs, fragment):
    with pytest.raises(CellError) as info:
        Crystal.from_cell(**kwargs)
    assert fragment in str(info.value)


def test_unknown_class_is_refused():
    with pytest.raises(UnknownSymbolError):
        Crystal.from_cell(5.0, crystal_class="m-5m")


def test_000_is_refused():
    with pytest.raises(InvalidMillerIndexError):
        FLUORITE.d_spacing([0, 0, 0])


def test_rhombohedral_axes_give_same_angles_as_hexagonal_axes():
    # calcite's rhombohedral primitive cell from the hexagonal one (International Tables
    # Vol. A, Table 5.1.3.1): a_R = sqrt(a²/3 + c²/9)... built here from the lattice vectors
    hexa = CALCITE.lattice
    p = np.array([[2, -1, -1], [1, 1, -2], [1, 1, 1]]) / 3.0  # columns: a_R, b_R, c_R
    rhomb = p.T @ hexa
    lengths = np.linalg.norm(rhomb, axis=1)
    cos_alpha = rhomb[1] @ rhomb[2] / lengths[1] ** 2
    alpha = math.degrees(math.acos(cos_alpha))
    rc = Crystal.from_cell(lengths[0], alpha=alpha, crystal_class="-3m")
    assert rc.setting == "rhombohedral"
    assert rc.point_group.order == 12
    # the hexagonal face (h k l) is (h k l) @ P in rhombohedral indices
    face_hex = np.array([1, 0, 4])
    other_hex = np.array([-1, 1, 4])
    to_r = lambda f: np.rint(f @ p).astype(int)  # noqa: E731
    a_hex = angle_deg(CALCITE, "1 0 4", "-1 1 4")
    a_r = float(np.degrees(rc.interfacial_angle(to_r(face_hex), to_r(other_hex))))
    assert a_r == pytest.approx(a_hex, abs=1e-9)
    # a form has the same number of faces in both settings
    assert len(rc.expand_form(to_r(face_hex))) == len(CALCITE.expand_form(face_hex)) == 6


# --- property tests --------------------------------------------------------------------
hkl_st = st.tuples(*(st.integers(-4, 4) for _ in range(3))).filter(lambda t: any(t))
CRYSTALS = [FLUORITE, QUARTZ, CALCITE, ZIRCON, TOPAZ]
crystal_st = st.sampled_from(CRYSTALS)


@settings(max_examples=60, deadline=None)
@given(crystal_st, hkl_st)
def test_faces_of_a_form_have_equal_d_spacing(crystal, hkl):
    faces = crystal.expand_form(hkl)
    d = crystal.d_spacing(faces)
    assert np.allclose(d, d[0], rtol=1e-12)


@settings(max_examples=60, deadline=None)
@given(crystal_st, hkl_st, hkl_st, st.data())
def test_angle_unchanged_by_symmetry_operation(crystal, h1, h2, data):
    ops = crystal.point_group.operations
    w = ops[data.draw(st.integers(0, len(ops) - 1))]
    w_inv = np.rint(np.linalg.inv(w)).astype(int)
    moved1 = np.asarray(h1) @ w_inv
    moved2 = np.asarray(h2) @ w_inv
    before = crystal.interfacial_angle(h1, h2)
    after = crystal.interfacial_angle(moved1, moved2)
    assert after == pytest.approx(before, abs=1e-12)


@settings(max_examples=60, deadline=None)
@given(crystal_st, hkl_st, hkl_st)
def test_angle_is_symmetric(crystal, h1, h2):
    assert crystal.interfacial_angle(h1, h2) == crystal.interfacial_angle(h2, h1)


@settings(max_examples=60, deadline=None)
@given(crystal_st, hkl_st, hkl_st)
def test_zone_axis_is_perpendicular_to_both_normals(crystal, h1, h2):
    axis = crystal.zone_axis(h1, h2)
    if not np.any(axis):
        return  # parallel faces have no zone axis
    v = crystal.directions(axis)
    v = v / np.linalg.norm(v)
    assert abs(v @ crystal.normals(h1)) < 1e-12
    assert abs(v @ crystal.normals(h2)) < 1e-12
    assert crystal.is_in_zone(h1, axis) and crystal.is_in_zone(h2, axis)


@settings(max_examples=60, deadline=None)
@given(hkl_st)
def test_four_and_three_index_forms_give_the_same_normal(hkl):
    from habit.miller import format_hkl, hkl_to_hkil

    four = format_hkl(hkl, hexagonal=True)
    three = format_hkl(hkl)
    assert np.allclose(QUARTZ.normals(parse_hkl(four)), QUARTZ.normals(parse_hkl(three)))
    # independent symmetric four-index formula (common practice): with unit vectors
    # e1, e2, e3 along a1, a2, a3 = -(a1 + a2), the normal of (hkil) is
    # (2 / 3a)(h e1 + k e2 + i e3) + (l / c) z
    a, c = QUARTZ.cell[0], QUARTZ.cell[2]
    e1 = QUARTZ.lattice[0] / a
    e2 = QUARTZ.lattice[1] / a
    e3 = -(e1 + e2)
    h, k, i, l = hkl_to_hkil(hkl)
    g = 2 / (3 * a) * (h * e1 + k * e2 + i * e3) + l / c * np.array([0.0, 0.0, 1.0])
    assert np.allclose(QUARTZ.normals(hkl), g / np.linalg.norm(g), atol=1e-12)


# --- loading from files and names ------------------------------------------------------
from habit.crystal import bundled_crystals, load_crystal, read_crystal_file  # noqa: E402
from habit.errors import FileFormatError  # noqa: E402

CIFS = sorted(p for p in bundled_crystals().values() if p.suffix == ".cif")
TOMLS = sorted(p for p in bundled_crystals().values() if p.suffix == ".toml")
# point groups of the bundled space groups (International Tables Vol. A; the class of a
# space group is its symbol with translations dropped)
EXPECTED_CLASS = {
    "quartz": "321", "calcite": "-3m1", "corundum": "-3m1", "zircon": "4/mmm",
    "rutile": "4/mmm", "fluorite": "m-3m", "pyrite": "m-3", "copper": "m-3m",
    "zincite": "6mm", "forsterite": "mmm", "diopside": "2/m", "albite": "-1",
    "kyanite": "-1", "iron": "m-3m",
}


@pytest.mark.parametrize("path", CIFS, ids=[p.stem for p in CIFS])
def test_bundled_cif_keeps_its_cell_and_finds_its_class(path):
    import spglib
    from pymatgen.core import Structure

    crystal = Crystal.from_cif(path)
    structure = Structure.from_file(path, primitive=False)
    given = (*structure.lattice.abc, *structure.lattice.angles)
    assert np.allclose(crystal.cell, given, atol=1e-9)  # never re-standardised
    cell = (crystal.lattice, structure.frac_coords, [s.specie.Z for s in structure])
    dataset = spglib.get_symmetry_dataset(cell, symprec=1e-3)
    assert crystal.space_group.number == dataset.number
    assert crystal.point_group.order == len({r.tobytes() for r in dataset.rotations})
    if path.stem in EXPECTED_CLASS:
        assert crystal.point_group.symbol == EXPECTED_CLASS[path.stem]
    assert crystal.source  # every bundled CIF cites its source


@pytest.mark.parametrize("path", TOMLS, ids=[p.stem for p in TOMLS])
def test_bundled_toml_files_load(path):
    crystal = read_crystal_file(path)
    assert crystal.forms is not None and crystal.forms.values
    assert all(v > 0 for v in crystal.forms.values)
    assert load_crystal(path.stem).name == crystal.name


def test_bundled_name_and_refusals(tmp_path):
    assert load_crystal("zircon").point_group.symbol == "4/mmm"
    with pytest.raises(FileFormatError, match="bundled"):
        load_crystal("unobtainium")
    with pytest.raises(FileFormatError, match="no such file"):
        load_crystal(tmp_path / "missing.cif")
    bad = tmp_path / "four.toml"
    bad.write_text('[cell]\na = 5.0\ncrystal_class = "m-3m"\n[forms]\n"10-11" = 1.0\n')
    with pytest.raises(InvalidMillerIndexError, match="four indices"):
        read_crystal_file(bad)
    nocell = tmp_path / "nocell.toml"
    nocell.write_text('name = "x"\n')
    with pytest.raises(FileFormatError, match="cif"):
        read_crystal_file(nocell)


def test_inline_cell_from_space_group():
    # calcite by its space group R-3c (No. 167) on hexagonal axes
    crystal = Crystal.from_cell(4.9896, c=17.061, space_group="R-3c")
    assert crystal.point_group.symbol == "-3m1"
    assert crystal.is_absent([0, 0, 3]) and not crystal.is_absent([0, 0, 6])
    assert Crystal.from_cell(4.9896, c=17.061, space_group=167).space_group.number == 167


def test_conventional_setting_on_request():
    # forsterite is bundled in Pbnm; the standard setting of No. 62 is Pnma. habit keeps
    # Pbnm and offers the conventional setting with the index transformation on request.
    crystal = load_crystal("forsterite")
    std, matrix = crystal.conventional()
    assert std.space_group.number == crystal.space_group.number == 62
    # the symbol names the setting of the cell (International Tables Vol. A, Table 4.3.2.1)
    assert (crystal.space_group.symbol, std.space_group.symbol) == ("Pbnm", "Pnma")
    face = np.array([0, 1, 0])  # b in Pbnm is the longest edge (10.2 Å)
    face_std = face @ matrix
    assert std.d_spacing(face_std) == pytest.approx(crystal.d_spacing(face), rel=1e-9)


def test_setting_symbols_of_bundled_cells():
    # albite is given in the centred C-1 cell of the feldspar literature (Downs et al. 1994)
    assert load_crystal("albite").space_group.symbol == "C-1"
    assert load_crystal("diopside").space_group.symbol == "C2/c"
