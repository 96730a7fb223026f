"""Checks of the bundled crystals in structures/ against their published sources.

Every CIF is read with pymatgen (a general-purpose structure library) and its symmetry is
found independently with spglib; both are compared with the values the cited papers and
handbooks give. The source and the tolerance of every check are written beside it.
"From memory" marks a reference value that could not be confirmed in a stored copy of its
source while this file was written.
"""

from __future__ import annotations

import functools
import math
import re
import tomllib
from pathlib import Path

import numpy as np
import pytest
import spglib
from pymatgen.core import Composition, Structure

STRUCTURES = Path(__file__).resolve().parent.parent / "structures"

# --------------------------------------------------------------------------------------
# Published values for every bundled CIF.
#   cell     a, b, c (Å), alpha, beta, gamma (°) as printed in the cited source
#   formula  ideal formula; Z formula units per cell
#   number   International Tables space-group number
#   density  (low, high) in g/cm^3, with the source and why that tolerance
# Tolerances: cells are copied, so they must agree to 1e-4 Å and 1e-3°.
# --------------------------------------------------------------------------------------


def _pm(value: float, rel: float) -> tuple[float, float]:
    return (value * (1.0 - rel), value * (1.0 + rel))


CITED: dict[str, dict] = {
    "fluorite": dict(
        formula="CaF2",
        Z=4,
        number=225,
        cell=(5.463, 5.463, 5.463, 90, 90, 90),
        cell_source="Wyckoff 1963, Crystal Structures vol. 1, p. 239",
        density=(3.175, 3.184),
        density_source="Handbook of Mineralogy, fluorite, specific gravity range 3.175-3.184",
    ),
    "pyrite": dict(
        formula="FeS2",
        Z=4,
        number=205,
        cell=(5.417, 5.417, 5.417, 90, 90, 90),
        cell_source="Handbook of Mineralogy vol. I (1990), pyrite",
        density=(4.95, 5.10),
        density_source="Handbook of Mineralogy, pyrite, specific gravity range 4.95-5.10",
    ),
    "copper": dict(
        formula="Cu",
        Z=4,
        number=225,
        cell=(3.61496, 3.61496, 3.61496, 90, 90, 90),
        cell_source="Wyckoff 1963 (AMCSD 0011145)",
        # CRC Handbook of Chemistry and Physics, 80th ed. (Lide 1999), 8.96 g/cm3 at 20 C;
        # +-0.5 % covers the 20 C / room-temperature difference of the two sources.
        density=_pm(8.96, 0.005),
        density_source="CRC Handbook 80th ed. (1999): 8.96, +-0.5 %",
    ),
    "gold": dict(
        formula="Au",
        Z=4,
        number=225,
        cell=(4.07825, 4.07825, 4.07825, 90, 90, 90),
        cell_source="Wyckoff 1963 (AMCSD 0011140)",
        density=_pm(19.3, 0.005),
        density_source="CRC Handbook 80th ed. (1999): 19.3, +-0.5 %",
    ),
    "platinum": dict(
        formula="Pt",
        Z=4,
        number=225,
        cell=(3.9231, 3.9231, 3.9231, 90, 90, 90),
        cell_source="Wyckoff 1963 (AMCSD 0011157)",
        density=_pm(21.45, 0.005),
        density_source="CRC Handbook 80th ed. (1999): 21.45, +-0.5 %",
    ),
    "iron": dict(
        formula="Fe",
        Z=2,
        number=229,
        cell=(2.8665, 2.8665, 2.8665, 90, 90, 90),
        cell_source="Wyckoff 1963 (AMCSD 0011214)",
        density=_pm(7.874, 0.005),
        density_source="CRC Handbook 80th ed. (1999): 7.874, +-0.5 %",
    ),
    "rutile": dict(
        formula="TiO2",
        Z=2,
        number=136,
        cell=(4.5937, 4.5937, 2.9587, 90, 90, 90),
        cell_source="Howard, Sabine & Dickson 1991, Acta Cryst. B47, 462",
        # diffraction density of the AMCSD entry (0019092) of the same paper; +-0.2 %
        # allows for rounding of atomic masses.
        density=_pm(4.249, 0.002),
        density_source="AMCSD 0019092 (Howard et al. 1991): 4.249",
    ),
    "zircon": dict(
        formula="ZrSiO4",
        Z=4,
        number=141,
        cell=(6.607, 6.607, 5.982, 90, 90, 90),
        cell_source="Robinson, Gibbs & Ribbe 1971, Am. Mineral. 56, 782",
        # the paper's 4.714 g/cm3 is for natural Hf-bearing zircon; pure ZrSiO4 in the same
        # cell is ~1.1 % lighter, hence +-1.5 %.
        density=_pm(4.714, 0.015),
        density_source="Robinson et al. 1971 abstract: 4.714 (Hf-bearing), +-1.5 %",
    ),
    "quartz": dict(
        formula="SiO2",
        Z=3,
        number=154,
        cell=(4.916, 4.916, 5.4054, 90, 90, 120),
        cell_source="Levien, Prewitt & Weidner 1980, Am. Mineral. 65, 920",
        density=_pm(2.646, 0.002),
        density_source="AMCSD 0000789 (Levien et al. 1980): 2.646",
    ),
    "calcite": dict(
        formula="CaCO3",
        Z=6,
        number=167,
        cell=(4.988, 4.988, 17.061, 90, 90, 120),
        cell_source="Markgraf & Reeder 1985, Am. Mineral. 70, 590 (24 C)",
        density=_pm(2.712, 0.002),
        density_source="AMCSD 0000984 (Markgraf & Reeder 1985): 2.712",
    ),
    "corundum": dict(
        formula="Al2O3",
        Z=6,
        number=167,
        cell=(4.757, 4.757, 12.9877, 90, 90, 120),
        cell_source="Kirfel & Eichhorn 1990, Acta Cryst. A46, 271 (AMCSD 0009327)",
        density=(3.95, 4.10),
        density_source="Handbook of Mineralogy, corundum, specific gravity range 3.95-4.10",
    ),
    "zincite": dict(
        formula="ZnO",
        Z=2,
        number=186,
        cell=(3.24992, 3.24992, 5.20658, 90, 90, 120),
        cell_source="Kisi & Elcombe 1989, Acta Cryst. C45, 1867 (from memory)",
        # the range is printed to two decimals, so 5.685 still rounds to its upper end 5.68
        density=(5.64, 5.685),
        density_source="Handbook of Mineralogy, zincite, specific gravity range 5.64-5.68",
    ),
    "forsterite": dict(
        formula="Mg2SiO4",
        Z=4,
        number=62,
        cell=(4.752, 10.193, 5.977, 90, 90, 90),
        cell_source="Hazen 1976, Am. Mineral. 61, 1280 (Pbnm)",
        density=_pm(3.228, 0.002),
        density_source="AMCSD 0000546 (Hazen 1976): 3.228",
    ),
    "diopside": dict(
        formula="CaMgSi2O6",
        Z=4,
        number=15,
        cell=(9.7397, 8.9174, 5.2503, 90, 105.866, 90),
        cell_source="Thompson & Downs 2008, Am. Mineral. 93, 177",
        density=_pm(3.279, 0.002),
        density_source="AMCSD 0004495 (Thompson & Downs 2008): 3.279",
    ),
    "albite": dict(
        formula="NaAlSi3O8",
        Z=4,
        number=2,
        cell=(8.1372, 12.787, 7.1574, 94.245, 116.605, 87.809),
        cell_source="Downs, Hazen & Finger 1994, Am. Mineral. 79, 1042 (C-1 cell)",
        density=_pm(2.623, 0.002),
        density_source="AMCSD 0001683 (Downs et al. 1994): 2.623",
    ),
    "kyanite": dict(
        formula="Al2SiO5",
        Z=4,
        number=2,
        cell=(7.12, 7.8479, 5.5738, 89.974, 101.117, 106.0),
        cell_source="Yang, Downs, Finger, Hazen & Prewitt 1997, Am. Mineral. 82, 467",
        density=_pm(3.670, 0.002),
        density_source="AMCSD 0001892 (Yang et al. 1997): 3.670",
    ),
}

CIF_NAMES = sorted(p.stem for p in STRUCTURES.glob("*.cif"))
TOML_NAMES = sorted(p.stem for p in STRUCTURES.glob("*.toml"))

# Compounds whose CIF must carry formal oxidation states (all but the native metals).
METALS = {"copper", "gold", "platinum", "iron"}


@functools.cache
def load(name: str) -> Structure:
    return Structure.from_file(STRUCTURES / f"{name}.cif", primitive=False)


@functools.cache
def cif_text(name: str) -> str:
    return (STRUCTURES / f"{name}.cif").read_text(encoding="utf-8")


def cif_value(name: str, tag: str) -> str:
    m = re.search(rf"^{re.escape(tag)}\s+(.+?)\s*$", cif_text(name), re.MULTILINE)
    if m is None:
        raise KeyError(f"{tag} missing in {name}.cif")
    return m.group(1).strip().strip("'\"")


def cif_symops(name: str) -> list[str]:
    lines = cif_text(name).splitlines()
    start = lines.index("_symmetry_equiv_pos_as_xyz") + 1
    ops = []
    for line in lines[start:]:
        if line.startswith(("loop_", "_")) or not line.strip():
            break
        ops.append(line.split(None, 1)[1].strip("'"))
    return ops


def spglib_dataset(structure: Structure):
    cell = (
        structure.lattice.matrix,
        structure.frac_coords,
        [site.specie.Z for site in structure],
    )
    return spglib.get_symmetry_dataset(cell, symprec=1e-3)


# --------------------------------------------------------------------------------------
# The table above covers every file, and every file is in the table.
# --------------------------------------------------------------------------------------


def test_every_cif_has_cited_values():
    assert len(CIF_NAMES) >= 12
    assert set(CIF_NAMES) == set(CITED)


def test_all_seven_crystal_systems_are_bundled():
    systems = set()
    for name in CIF_NAMES:
        number = spglib_dataset(load(name)).number
        for upper, system in [
            (2, "triclinic"),
            (15, "monoclinic"),
            (74, "orthorhombic"),
            (142, "tetragonal"),
            (167, "trigonal"),
            (194, "hexagonal"),
            (230, "cubic"),
        ]:
            if number <= upper:
                systems.add(system)
                break
    assert systems == {
        "triclinic",
        "monoclinic",
        "orthorhombic",
        "tetragonal",
        "trigonal",
        "hexagonal",
        "cubic",
    }


# --------------------------------------------------------------------------------------
# Per-CIF checks
# --------------------------------------------------------------------------------------


@pytest.mark.parametrize("name", CIF_NAMES, ids=CIF_NAMES)
def test_cif_is_read_by_pymatgen(name):
    s = load(name)
    assert len(s) > 0
    assert s.is_ordered
    # every atom-site occupancy in the file is 1 (ordered structures only)
    assert all(abs(sum(site.species.values()) - 1.0) < 1e-9 for site in s)


@pytest.mark.parametrize("name", CIF_NAMES, ids=CIF_NAMES)
def test_space_group_found_by_spglib(name):
    claimed = int(cif_value(name, "_space_group_IT_number"))
    assert claimed == CITED[name]["number"]
    assert spglib_dataset(load(name)).number == claimed


@pytest.mark.parametrize("name", CIF_NAMES, ids=CIF_NAMES)
def test_symmetry_loop_is_complete(name):
    """The operator loop lists the whole group of the (conventional) cell as given:
    spglib finds exactly as many operations, and the file's operators map the structure
    onto itself."""
    s = load(name)
    ops = cif_symops(name)
    assert len(ops) == len(set(ops))
    assert len(ops) == len(spglib_dataset(s).rotations)
    from pymatgen.core.operations import SymmOp

    frac = s.frac_coords
    numbers = np.array([site.specie.Z for site in s])
    for text in ops:
        op = SymmOp.from_xyz_str(text)
        image = op.operate_multi(frac)
        for point, z in zip(image, numbers, strict=True):
            delta = frac[numbers == z] - point
            delta -= np.round(delta)
            assert np.min(np.linalg.norm(delta @ s.lattice.matrix, axis=1)) < 1e-3


@pytest.mark.parametrize("name", CIF_NAMES, ids=CIF_NAMES)
def test_cell_matches_cited_values(name):
    lat = load(name).lattice
    a, b, c, alpha, beta, gamma = CITED[name]["cell"]
    # copied values: 1e-4 Å and 1e-3 degrees
    assert lat.abc == pytest.approx((a, b, c), abs=1e-4), CITED[name]["cell_source"]
    assert lat.angles == pytest.approx((alpha, beta, gamma), abs=1e-3), CITED[name]["cell_source"]
    assert float(cif_value(name, "_cell_length_a")) == pytest.approx(a, abs=1e-9)


@pytest.mark.parametrize("name", CIF_NAMES, ids=CIF_NAMES)
def test_composition_reduces_to_formula_with_cited_z(name):
    comp = load(name).composition.element_composition
    reduced, factor = comp.get_reduced_composition_and_factor()
    expected = Composition(CITED[name]["formula"])
    assert reduced.almost_equals(expected.reduced_composition)
    # number of formula units in the cell = Z of the source
    assert comp.num_atoms / expected.num_atoms == pytest.approx(CITED[name]["Z"], abs=1e-9)
    assert int(cif_value(name, "_cell_formula_units_Z")) == CITED[name]["Z"]


@pytest.mark.parametrize("name", CIF_NAMES, ids=CIF_NAMES)
def test_density_matches_published(name):
    low, high = CITED[name]["density"]
    rho = load(name).density  # g/cm^3 from cell volume and atomic masses
    assert low <= float(rho) <= high, f"{rho:.4f} g/cm3 vs {CITED[name]['density_source']}"


@pytest.mark.parametrize(
    "name", sorted(set(CIF_NAMES) - METALS), ids=sorted(set(CIF_NAMES) - METALS)
)
def test_ionic_compounds_carry_oxidation_states(name):
    """Formal charges are present on every site and the cell is neutral."""
    s = load(name)
    charges = [getattr(site.specie, "oxi_state", None) for site in s]
    assert all(q is not None and q != 0 for q in charges)
    assert sum(charges) == pytest.approx(0.0, abs=1e-9)
    assert "_atom_type_oxidation_number" in cif_text(name)


@pytest.mark.parametrize("name", sorted(METALS), ids=sorted(METALS))
def test_metals_have_no_charges(name):
    s = load(name)
    assert all(getattr(site.specie, "oxi_state", None) in (None, 0) for site in s)


@pytest.mark.parametrize("name", CIF_NAMES, ids=CIF_NAMES)
def test_cif_cites_its_source(name):
    text = cif_text(name)
    assert re.search(r"^# Source:", text, re.MULTILINE)
    assert int(cif_value(name, "_journal_year")) > 1900
    assert cif_value(name, "_journal_name_full")
    assert re.search(r"^_publ_author_name", text, re.MULTILINE)
    assert "/work" not in text


# Bond lengths fix the origin/setting of each file (a wrong origin choice or axis order
# would move them by tenths of an ångström).
BONDS = [
    # (file, centre, neighbour, published distance Å, tolerance Å, source)
    ("zircon", "Si", "O", 1.622, 0.002, "Robinson et al. 1971 abstract (confirmed)"),
    ("zircon", "Zr", "O", 2.131, 0.003, "Robinson et al. 1971 abstract (confirmed)"),
    ("pyrite", "S", "S", 2.16, 0.02, "S-S dumbbell of pyrite, from memory"),
    ("calcite", "C", "O", 1.28, 0.01, "C-O of the carbonate group, from memory"),
    ("quartz", "Si", "O", 1.605, 0.005, "Levien et al. 1980 shorter Si-O, from memory"),
    ("corundum", "Al", "O", 1.855, 0.01, "Al-O short distance in corundum, from memory"),
    ("rutile", "Ti", "O", 1.949, 0.01, "Ti-O equatorial distance in rutile, from memory"),
]


@pytest.mark.parametrize("row", BONDS, ids=[f"{r[0]}-{r[1]}-{r[2]}" for r in BONDS])
def test_shortest_bond_length(row):
    name, centre, other, expected, tol, source = row
    s = load(name)
    dmin = math.inf
    for site in s:
        if site.specie.symbol != centre:
            continue
        for nb in s.get_neighbors(site, 3.0):
            if nb.specie.symbol == other:
                dmin = min(dmin, nb.nn_distance)
    assert dmin == pytest.approx(expected, abs=tol), source


def test_zircon_long_zr_o_distance():
    # Robinson, Gibbs & Ribbe 1971 (abstract, confirmed): Zr-O 2.131 and 2.268 Å
    s = load("zircon")
    zr = next(site for site in s if site.specie.symbol == "Zr")
    dists = sorted(nb.nn_distance for nb in s.get_neighbors(zr, 2.4))
    assert len(dists) == 8
    assert dists[0] == pytest.approx(2.131, abs=0.003)
    assert dists[-1] == pytest.approx(2.268, abs=0.003)


# --------------------------------------------------------------------------------------
# Crystal TOML files
# --------------------------------------------------------------------------------------

RESERVED_FORM_KEYS = {"kind", "source"}
FORM_KINDS = {"energy", "distance", "rate"}


def parse_index(text: str) -> tuple[int, ...]:
    """Miller (3) or Miller-Bravais (4) index string -> integers; raise ValueError if bad.

    Accepts compact single-digit forms ('10-11', '111', '-110') and separated forms
    ('1 0 -1 1', '1,1,0'). Four indices must satisfy i = -(h + k).
    """
    t = text.strip()
    if re.search(r"[\s,]", t):
        tokens = [tok for tok in re.split(r"[\s,]+", t) if tok]
    else:
        tokens = re.findall(r"-?\d", t)
        if "".join(tokens) != t:
            raise ValueError(f"not an index string: {text!r}")
    try:
        values = tuple(int(tok) for tok in tokens)
    except ValueError as exc:
        raise ValueError(f"not an index string: {text!r}") from exc
    if len(values) not in (3, 4):
        raise ValueError(f"need 3 or 4 indices: {text!r}")
    if len(values) == 4 and values[2] != -(values[0] + values[1]):
        raise ValueError(f"i != -(h+k) in {text!r}")
    if not any(values):
        raise ValueError(f"all-zero index: {text!r}")
    return values


@pytest.mark.parametrize(
    "text, expected",
    [
        ("111", (1, 1, 1)),
        ("10-11", (1, 0, -1, 1)),
        ("1 0 -1 4", (1, 0, -1, 4)),
        ("-110", (-1, 1, 0)),
        ("1,1,0", (1, 1, 0)),
        ("01-18", (0, 1, -1, 8)),
    ],
)
def test_parse_index_accepts(text, expected):
    assert parse_index(text) == expected


@pytest.mark.parametrize("text", ["11", "10-21", "abc", "000", "1 1 1 1 1", "1.0 0 0", "kind"])
def test_parse_index_rejects(text):
    with pytest.raises(ValueError):
        parse_index(text)


@functools.cache
def load_toml(name: str) -> dict:
    with open(STRUCTURES / f"{name}.toml", "rb") as fh:
        return tomllib.load(fh)


def test_enough_crystal_files():
    assert len(TOML_NAMES) >= 6
    assert "demo" in TOML_NAMES


@pytest.mark.parametrize("name", TOML_NAMES, ids=TOML_NAMES)
def test_toml_names_existing_cif_or_full_cell(name):
    data = load_toml(name)
    assert isinstance(data.get("name"), str) and data["name"].strip()
    if "cif" in data:
        path = STRUCTURES / data["cif"]
        assert not Path(data["cif"]).is_absolute()
        assert path.is_file(), f"{name}.toml names a missing CIF {data['cif']}"
        assert path.stem in CIF_NAMES
    else:
        cell = data["cell"]
        for key in ("a", "b", "c", "alpha", "beta", "gamma"):
            assert float(cell[key]) > 0
        assert 0 < cell["alpha"] < 180 and 0 < cell["beta"] < 180 and 0 < cell["gamma"] < 180
        assert cell.get("crystal_class") or cell.get("space_group")
        assert str(cell.get("source", "")).strip()


@pytest.mark.parametrize("name", TOML_NAMES, ids=TOML_NAMES)
def test_toml_forms_are_valid(name):
    data = load_toml(name)
    forms = data["forms"]
    assert forms["kind"] in FORM_KINDS
    assert str(forms.get("source", "")).strip()
    keys = [k for k in forms if k not in RESERVED_FORM_KEYS]
    assert keys, "no forms"
    hexagonal_family = False
    if "cif" in data:
        number = spglib_dataset(load(Path(data["cif"]).stem)).number
        hexagonal_family = 143 <= number <= 194
    for key in keys:
        idx = parse_index(key)
        value = forms[key]
        assert isinstance(value, (int, float)) and not isinstance(value, bool)
        assert value > 0, f"{name}: form {key} has non-positive value {value}"
        if len(idx) == 4:
            assert hexagonal_family, f"{name}: four-index form {key} on a non-hexagonal crystal"


@pytest.mark.parametrize("name", TOML_NAMES, ids=TOML_NAMES)
def test_toml_has_source(name):
    data = load_toml(name)
    assert str(data.get("source", "")).strip()
    assert str(data["forms"].get("source", "")).strip()


def test_hexagonal_family_files_use_four_indices():
    for name in TOML_NAMES:
        data = load_toml(name)
        if "cif" not in data:
            continue
        number = spglib_dataset(load(Path(data["cif"]).stem)).number
        if 143 <= number <= 194:
            keys = [k for k in data["forms"] if k not in RESERVED_FORM_KEYS]
            assert all(len(parse_index(k)) == 4 for k in keys), name


def test_demo_is_an_invented_fluorite_scenario():
    data = load_toml("demo")
    assert data["cif"] == "fluorite.cif"
    assert "invented" in data["description"].lower()
    assert "invented" in data["forms"]["source"].lower()
    text = (STRUCTURES / "demo.toml").read_text(encoding="utf-8").lower()
    assert "halite" not in text and "diamond" not in text


@pytest.mark.parametrize("name", TOML_NAMES, ids=TOML_NAMES)
def test_invented_or_cited(name):
    """A forms table is either marked invented or cites author and year."""
    src = load_toml(name)["forms"]["source"]
    assert "invented" in src.lower() or re.search(r"\b(19|20)\d\d\b", src)


# --------------------------------------------------------------------------------------
# README
# --------------------------------------------------------------------------------------


@functools.cache
def readme_rows() -> dict[str, str]:
    rows = {}
    for line in (STRUCTURES / "README.md").read_text(encoding="utf-8").splitlines():
        m = re.match(r"^\|\s*`([\w.-]+\.(?:cif|toml))`\s*\|", line)
        if m:
            rows[m.group(1)] = line
    return rows


@pytest.mark.parametrize("name", CIF_NAMES, ids=CIF_NAMES)
def test_readme_lists_cif_with_source(name):
    row = readme_rows().get(f"{name}.cif")
    assert row is not None, f"{name}.cif missing from structures/README.md"
    cells = [c.strip() for c in row.strip("|").split("|")]
    assert len(cells) == 8
    source = cells[6]
    assert re.search(r"\b(19|20)\d\d\b", source), f"no year in the source of {name}.cif"
    assert cells[7], f"no confirmation status for {name}.cif"


@pytest.mark.parametrize("name", TOML_NAMES, ids=TOML_NAMES)
def test_readme_lists_toml(name):
    assert f"{name}.toml" in readme_rows()


def test_readme_has_safety_note():
    text = (STRUCTURES / "README.md").read_text(encoding="utf-8").lower()
    for word in ("silicosis", "hydrogen fluoride", "nanoparticle", "local rules"):
        assert word in text
