"""The map, sample and batch commands, through click's test runner."""

from __future__ import annotations

import json
import math

import pytest

from habit.cli import main

CUBIC = ["--cell", "5.0,5.0,5.0,90,90,90", "--class", "m-3m"]
SQRT3 = math.sqrt(3.0)


def test_map_json_regions_and_thresholds(runner, tmp_path):
    # {100}+{111}, x = gamma111 with gamma100 = 1: octahedron below 1/sqrt(3), cube above
    # sqrt(3) (Wulff 1901; closed form)
    out_csv = tmp_path / "points.csv"
    result = runner.invoke(
        main,
        [
            "map", *CUBIC, "--form", "100=1", "--form", "111=1",
            "--x", "111=0.3:2.0", "--y", "100=0.9:1.1", "--size", "9", "--levels", "3",
            "--csv", str(out_csv), "--json", "-",
        ],
    )  # fmt: skip
    assert result.exit_code == 0, result.output
    data = json.loads(result.output)
    names = {r["forms_present"] for r in data["regions"]}
    assert {"{100}", "{111}", "{100} + {111}"} <= {n.split(" (")[0] for n in names}
    assert data["n_shapes_computed"] < data["n_grid_points"]
    header = out_csv.read_text().splitlines()[0]
    assert header.startswith("{111} (J/m²),{100} (J/m²),forms_present,area_fraction_{100}")
    shares = sum(r["share_of_map"] for r in data["regions"])
    assert abs(shares - 1.0) < 1e-12


def test_map_plot_written(runner, tmp_path):
    png = tmp_path / "map.png"
    result = runner.invoke(
        main,
        ["map", *CUBIC, "--form", "100=1", "--form", "111=1", "--x", "111=0.3:2",
         "--y", "100=0.9:1.1", "--size", "5", "--levels", "1", "--plot", str(png)],
    )  # fmt: skip
    assert result.exit_code == 0, result.output
    assert png.stat().st_size > 1000


def test_map_bad_range_is_one_line(runner):
    result = runner.invoke(
        main, ["map", *CUBIC, "--form", "100=1", "--form", "111=1", "--x", "111=2",
               "--y", "100=0.9:1.1"],
    )  # fmt: skip
    assert result.exit_code == 1
    assert result.output.strip().count("\n") == 0
    assert "FORM=LOW:HIGH" in result.output


def test_sample_json_same_seed_same_numbers(runner):
    args = ["sample", *CUBIC, "--form", "100=1", "--form", "111=1.6", "--sd", "111=0.1",
            "-n", "3000", "--seed", "5", "--json", "-"]  # fmt: skip
    a = runner.invoke(main, args)
    b = runner.invoke(main, args)
    assert a.exit_code == 0, a.output
    assert a.output == b.output
    data = json.loads(a.output)
    octa = data["forms"][1]
    # P(gamma111 < sqrt(3)) = Phi((sqrt(3) - 1.6) / 0.1) (closed form), 4 standard errors
    p = 0.5 * (1 + math.erf((SQRT3 - 1.6) / 0.1 / math.sqrt(2)))
    assert abs(octa["p_present"] - p) < 4 * math.sqrt(p * (1 - p) / 3000) + 1e-3
    assert data["forms"][0]["p_present"] == 1.0


def test_sample_zero_spread(runner):
    result = runner.invoke(
        main, ["sample", *CUBIC, "--form", "100=1", "--form", "111=1.2", "-n", "200", "--json", "-"]
    )
    data = json.loads(result.stdout)  # the note about zero spread goes to stderr
    for f in data["forms"]:
        lo, hi = f["area_fraction_interval"]
        assert hi - lo <= 1e-12


def test_batch_restart_and_errors(runner, tmp_path):
    table = tmp_path / "sets.csv"
    table.write_text("id,100,111\na,1.0,1.0\nb,1.0,zz\nc,1.0,2.0\n")
    crystal = tmp_path / "cube.toml"
    crystal.write_text('name = "cube"\n[cell]\na = 5.0\ncrystal_class = "m-3m"\n')
    out = tmp_path / "r.jsonl"
    args = ["batch", str(table), "--crystal", str(crystal), "--out", str(out), "--json", "-"]
    first = runner.invoke(main, args)
    assert first.exit_code == 0, first.output
    summary = json.loads(first.output)
    assert summary["computed"] == 3 and summary["errors"] == 1
    rows = {r["id"]: r for r in map(json.loads, out.read_text().splitlines())}
    assert rows["c"]["present_forms"] == ["{100}"]  # r = 2 > sqrt(3): the cube
    assert "zz" in rows["b"]["error"]
    second = json.loads(runner.invoke(main, args).output)
    assert second["computed"] == 0 and second["skipped_already_done"] == 3


def test_batch_needs_a_crystal_for_a_table(runner, tmp_path):
    table = tmp_path / "sets.csv"
    table.write_text("id,100,111\na,1.0,1.0\n")
    result = runner.invoke(main, ["batch", str(table), "--out", str(tmp_path / "r.csv")])
    assert result.exit_code == 1
    assert "needs a crystal" in result.output
    assert not (tmp_path / "r.csv").exists()


@pytest.mark.parametrize("name", ["map", "sample", "batch"])
def test_help_lists_the_command(runner, name):
    result = runner.invoke(main, ["--help"])
    assert name in result.output
