"""The bfdh and bonds commands and the substrate options of wulff, through CliRunner."""

from __future__ import annotations

import json
import math

import pytest
from pymatgen.io.cif import CifWriter

from habit.cli import main
from habit.crystal import Crystal
from tests import morph_samples as samples

IRON_INLINE = ["--cell", "2.8665,2.8665,2.8665,90,90,90", "--space-group", "Im-3m"]
QUARTZ_INLINE = ["--cell", "4.9133,4.9133,5.4053,90,90,120", "--space-group", "P3_221"]
CUBIC_INLINE = ["--cell", "4.08,4.08,4.08,90,90,90", "--class", "m-3m"]


@pytest.fixture
def fluorite_cif(tmp_path):
    path = tmp_path / "fluorite.cif"
    CifWriter(samples.fluorite().structure).write_file(str(path))
    return path


def test_bfdh_json_for_alpha_iron(runner):
    result = runner.invoke(main, ["bfdh", *IRON_INLINE, "--max-index", "2", "--json", "-"])
    assert result.exit_code == 0, result.output
    data = json.loads(result.output)
    first, second = data["forms"][:2]
    # α-Fe: {110} 2.027 Å, {100} via (200) 1.433 Å (REFERENCES §8 [computed]; 1e-3 Å)
    assert (first["form"], first["order"], first["rank"]) == ("{110}", 1, 1)
    assert first["d_eff_A"] == pytest.approx(2.027, abs=1e-3)
    assert (second["form"], second["reflection"]) == ("{100}", "(200)")
    assert second["d_eff_A"] == pytest.approx(samples.A_FE / 2, abs=1e-12)
    assert data["crystal"]["space_group"] == "Im-3m"
    assert sum(f["area_percent"] for f in data["forms"]) == pytest.approx(100.0, abs=1e-9)


def test_bfdh_table_prints_units_and_four_index_faces(runner):
    result = runner.invoke(main, ["bfdh", *QUARTZ_INLINE, "--max-index", "1"])
    assert result.exit_code == 0, result.output
    assert "d_eff (Å)" in result.output
    assert "(0003)" in result.output  # the 3_2 screw axis: {0001} via (0003)
    assert "{10-10}" in result.output


def test_bfdh_without_space_group_is_one_line(runner):
    result = runner.invoke(main, ["bfdh", *CUBIC_INLINE])
    assert result.exit_code == 1
    assert result.output.startswith("Error:") and "no space group" in result.output
    assert "Traceback" not in result.output
    ok = runner.invoke(main, ["bfdh", *CUBIC_INLINE, "--lattice-only", "--json", "-"])
    assert ok.exit_code == 0, ok.output
    assert all(f["order"] == 1 for f in json.loads(ok.output)["forms"])


def test_bonds_json_for_fluorite(runner, fluorite_cif, tmp_path):
    out = tmp_path / "bonds.json"
    result = runner.invoke(
        main,
        [
            "bonds",
            str(fluorite_cif),
            "--pair-cutoff",
            "Ca-F=2.5",
            "--bond-energy",
            "F-Ca=0.5",
            "--max-index",
            "1",
            "--wulff",
            "--json",
            str(out),
        ],
    )
    assert result.exit_code == 0, result.output
    data = json.loads(out.read_text())
    assert data["energy_unit"] == "J/m²"
    assert data["bonds"] == [
        {
            "pair": "Ca-F",
            "bonds_per_cell": 32,
            "shortest_A": pytest.approx(samples.A_CAF2 * math.sqrt(3) / 4, abs=1e-6),
            "longest_A": pytest.approx(samples.A_CAF2 * math.sqrt(3) / 4, abs=1e-6),
        }
    ]
    top = data["forms"][0]
    # (111) between the F layers: 2 Ca–F bonds per Ca over √3a²/4 per Ca, two surfaces,
    # 0.5 eV per bond, 1 eV/Å² = 16.0218 J/m² -> closed form; 1e-9 relative
    expected = 2 * 0.5 / (2 * math.sqrt(3) * samples.A_CAF2**2 / 4) * 16.02176634
    assert top["form"] == "{111}"
    assert top["energy"] == pytest.approx(expected, rel=1e-9)
    assert top["layer_above"] == "F4" and top["layer_below"] == "F4"
    assert "wulff" in data and any(f["present"] for f in data["wulff"]["forms"])
    assert "γ (J/m²)" in result.output


def test_bonds_bad_input_is_one_line_and_leaves_no_file(runner, fluorite_cif, tmp_path):
    out = tmp_path / "never.json"
    result = runner.invoke(
        main, ["bonds", str(fluorite_cif), "--cutoff", "1.0", "--json", str(out)]
    )
    assert result.exit_code == 1
    assert result.output.startswith("Error: a cutoff of 1 Å bonds no atoms")
    assert result.output.count("\n") == 1
    assert not out.exists()
    bad = runner.invoke(main, ["bonds", str(fluorite_cif), "--bond-energy", "Ca-F"])
    assert bad.exit_code == 1 and "--bond-energy takes A-B=VALUE" in bad.output


def test_bonds_on_a_cif_with_no_atoms(runner, tmp_path):
    path = tmp_path / "empty.cif"
    path.write_text(
        "data_empty\n_cell_length_a 5.0\n_cell_length_b 5.0\n_cell_length_c 5.0\n"
        "_cell_angle_alpha 90\n_cell_angle_beta 90\n_cell_angle_gamma 90\n"
    )
    result = runner.invoke(main, ["bonds", str(path)])
    assert result.exit_code == 1
    assert result.output.startswith("Error:") and "Traceback" not in result.output


def test_wulff_on_a_substrate(runner):
    args = ["wulff", *CUBIC_INLINE, "--form", "111=1.0", "--form", "100=1.1"]
    result = runner.invoke(main, [*args, "--substrate", "111", "--adhesion", "0.5", "--json", "-"])
    assert result.exit_code == 0, result.output
    sub = json.loads(result.output)["substrate"]
    # h_int = h_free (1 - β/γ) = 1 (1 - 0.5) = 0.5 h0 (closed form)
    assert sub["interface_height_h0"] == pytest.approx(0.5, abs=1e-12)
    assert sub["regime"] == "supported"
    assert sub["forms"][-1]["form"] == "interface"
    film = runner.invoke(main, [*args, "--substrate", "111", "--adhesion", "2.0", "--json", "-"])
    assert json.loads(film.output)["substrate"]["regime"] == "film"
    past = runner.invoke(main, [*args, "--substrate", "111", "--adhesion", "2.5"])
    assert past.exit_code == 1 and "past full wetting" in past.output
    alone = runner.invoke(main, [*args, "--adhesion", "0.5"])
    assert alone.exit_code == 1 and "need --substrate" in alone.output


def test_bfdh_plot_and_export_are_written(runner, tmp_path):
    png, stl = tmp_path / "habit.png", tmp_path / "habit.stl"
    result = runner.invoke(
        main, ["bfdh", *QUARTZ_INLINE, "--max-index", "1", "--plot", str(png), "--export", str(stl)]
    )
    assert result.exit_code == 0, result.output
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"  # PNG signature (PNG standard)
    data = stl.read_bytes()  # binary STL: 80-byte header, uint32 count, 50 bytes a triangle
    n_triangles = int.from_bytes(data[80:84], "little")
    assert n_triangles >= 18 and len(data) == 84 + 50 * n_triangles  # 18 faces at least


def test_bfdh_refuses_an_unknown_plot_suffix_before_work(runner, tmp_path):
    result = runner.invoke(main, ["bfdh", *IRON_INLINE, "--plot", str(tmp_path / "x.gif")])
    assert result.exit_code == 1 and "--plot writes .png, .svg or .pdf" in result.output
    assert list(tmp_path.iterdir()) == []


def test_wulff_on_a_substrate_draws_and_exports_the_cut_shape(runner, tmp_path):
    png, obj = tmp_path / "particle.png", tmp_path / "particle.obj"
    args = ["wulff", *CUBIC_INLINE, "--form", "111=1.0", "--form", "100=1.1"]
    result = runner.invoke(
        main,
        [
            *args,
            "--substrate",
            "111",
            "--adhesion",
            "1.0",
            "--plot",
            str(png),
            "--export",
            str(obj),
        ],
    )
    assert result.exit_code == 0, result.output
    assert png.read_bytes()[:4] == b"\x89PNG"
    # the exported solid is the cut one (its face count), not the free one (14 faces)
    from habit.substrate import winterbottom_shape
    from habit.wulff import wulff_shape

    free = wulff_shape(Crystal.from_cell(4.08, crystal_class="m-3m"), {"111": 1.0, "100": 1.1})
    cut = winterbottom_shape(free, "111", adhesion=1.0).polyhedron
    assert obj.read_text().count("\nf ") == cut.n_faces != free.polyhedron.n_faces
    film = runner.invoke(
        main, [*args, "--substrate", "111", "--adhesion", "2.0", "--plot", str(tmp_path / "f.png")]
    )
    assert film.exit_code == 1 and "a film has no particle shape" in film.output
    assert not (tmp_path / "f.png").exists()
