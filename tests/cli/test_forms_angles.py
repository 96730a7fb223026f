"""The forms, angles and crystal commands, through click's test runner."""

from __future__ import annotations

import json
import math
import subprocess
import sys

import pytest

from habit.cli import main

FLUORITE_CELL = ["--cell", "5.4626,5.4626,5.4626,90,90,90", "--class", "m-3m"]
QUARTZ_CELL = ["--cell", "4.9133,4.9133,5.4053,90,90,120", "--class", "32"]


def test_forms_lists_the_octahedron(runner):
    result = runner.invoke(main, ["forms", *FLUORITE_CELL, "111", "--json", "-"])
    assert result.exit_code == 0, result.output
    data = json.loads(result.output)
    form = data["forms"][0]
    assert form["name"] == "octahedron"  # common practice
    assert form["multiplicity"] == 8
    assert form["closed"] is True
    # d(111) = a / sqrt(3) for a cubic cell (closed form)
    assert form["d_spacing_A"] == pytest.approx(5.4626 / math.sqrt(3), rel=1e-12)
    assert len({tuple(f) for f in form["faces"]}) == 8


def test_forms_prints_four_index_faces_for_quartz(runner):
    result = runner.invoke(main, ["forms", *QUARTZ_CELL, "10-10"])
    assert result.exit_code == 0, result.output
    assert "(10-10)" in result.output
    assert "6 faces" in result.output
    assert "Å" in result.output


def test_negative_indices_are_not_taken_for_options(runner):
    result = runner.invoke(main, ["angles", *FLUORITE_CELL, "111", "-1-11", "--json", "-"])
    assert result.exit_code == 0, result.output
    row = json.loads(result.output)["angles"][0]
    # (111)^(-1-11): cos = (-1-1+1)/3 = -1/3 -> 109.4712° (closed form)
    assert row["angle_deg"] == pytest.approx(math.degrees(math.acos(-1 / 3)), abs=1e-9)


def test_angles_every_pair_degrees_and_minutes(runner):
    result = runner.invoke(main, ["angles", *FLUORITE_CELL, "100", "111", "110", "--json", "-"])
    assert result.exit_code == 0, result.output
    rows = json.loads(result.output)["angles"]
    assert len(rows) == 3  # 3 faces -> 3 pairs
    first = rows[0]
    assert first["face1"] == "(100)" and first["face2"] == "(111)"
    # 54°44′ (arccos 1/sqrt 3 = 54.7356° = 54°44.1′; closed form)
    assert first["angle_deg_min"] == "54°44.1′"
    assert first["dihedral_deg"] == pytest.approx(180 - first["angle_deg"])


def test_json_file_is_written(runner, tmp_path):
    out = tmp_path / "angles.json"
    result = runner.invoke(main, ["angles", *FLUORITE_CELL, "100", "010", "--json", str(out)])
    assert result.exit_code == 0, result.output
    assert json.loads(out.read_text())["angles"][0]["angle_deg"] == pytest.approx(90.0)
    assert "(100)" in result.output


REFUSALS = [
    (["forms", *FLUORITE_CELL, "000"], "(000)"),
    (["forms", *FLUORITE_CELL, "1.5 1 0"], "whole numbers"),
    (["forms", "--cell", "5,5,5,90,90,90", "--class", "m-5m", "111"], "m-5m"),
    (["angles", *QUARTZ_CELL, "1 0 1 1", "100"], "-(h+k)"),
    (["angles", "no/such/file.cif", "100", "111"], "no such file"),
    (["forms", "--cell", "5,5,6,90,90,90", "--class", "m-3m", "111"], "cubic"),
    (["angles", "--cell", "5,5,5,90,90", "--class", "m-3m", "100", "111"], "six numbers"),
    (["angles", *FLUORITE_CELL, "100"], "at least two"),
]


@pytest.mark.parametrize(("argv", "fragment"), REFUSALS, ids=[r[1] for r in REFUSALS])
def test_bad_input_gets_one_sentence_and_nonzero_exit(runner, argv, fragment):
    result = runner.invoke(main, argv)
    assert result.exit_code != 0
    assert "Traceback" not in result.output
    assert fragment in result.output
    error_lines = [line for line in result.output.splitlines() if line.strip()]
    assert len(error_lines) <= 3  # click usage errors add a usage line and a hint


def test_malformed_toml_is_refused(runner, tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text("name = 'x'\n[cell\na = 5\n")
    result = runner.invoke(main, ["forms", str(bad), "111"])
    assert result.exit_code == 1
    assert "not a valid TOML file" in result.output
    assert "Traceback" not in result.output


def test_malformed_cif_is_refused(runner, tmp_path):
    bad = tmp_path / "bad.cif"
    bad.write_text("data_nothing\n_cell_length_a 5\n")
    result = runner.invoke(main, ["forms", str(bad), "111"])
    assert result.exit_code == 1
    assert "Traceback" not in result.output
    assert "bad.cif" in result.output


def test_help_does_not_import_numeric_libraries():
    # `habit --help` must stay fast: the group imports its commands lazily and no
    # command module imports numpy, pymatgen or matplotlib at import time.
    code = (
        "import sys\n"
        "from click.testing import CliRunner\n"
        "from habit.cli import main, COMMANDS\n"
        "import importlib\n"
        "r = CliRunner().invoke(main, ['--help'])\n"
        "assert r.exit_code == 0\n"
        "for name in COMMANDS:\n"
        "    importlib.import_module(COMMANDS[name][0])\n"
        "    r = CliRunner().invoke(main, [name, '--help'])\n"
        "    assert r.exit_code == 0, (name, r.output)\n"
        "heavy = [m for m in ('numpy', 'pymatgen', 'matplotlib', 'scipy', 'spglib') "
        "if m in sys.modules]\n"
        "print(','.join(heavy))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == ""
