"""The particle command, end to end, on the bundled copper crystal.

Closed forms: the K-shell fcc cuboctahedron has 10K^3/3 + 5K^2 + 11K/3 + 1 atoms and
10K^2 + 2 surface atoms (A. L. Mackay, Acta Cryst. 15, 916 (1962) — from memory).
"""

from __future__ import annotations

import json

import pytest

from habit.cli import main


def test_shells_give_the_147_atom_cuboctahedron(runner, tmp_path) -> None:
    js, xyz = tmp_path / "p.json", tmp_path / "p.xyz"
    result = runner.invoke(
        main,
        [
            "particle",
            "copper",
            "--form",
            "111=1",
            "--form",
            "100=1",
            "--shells",
            "3",
            "--json",
            str(js),
            "--xyz",
            str(xyz),
        ],
    )
    assert result.exit_code == 0, result.output
    report = json.loads(js.read_text())
    p = report["particle"]
    assert (p["atoms"], p["surface_atoms"]) == (147, 92)
    assert report["size_kind"] == "shells" and report["forms"] == ["{111}", "{100}"]
    assert xyz.read_text().splitlines()[0] == "147"
    assert "dispersion" in result.output and "wrote" in result.output


def test_json_to_stdout_is_the_only_output(runner) -> None:
    result = runner.invoke(main, ["particle", "copper", "--atoms", "300", "--json", "-"])
    assert result.exit_code == 0, result.output
    report = json.loads(result.output)
    size = report["particle"]["size"]
    assert size["nearest_below"] <= 300 <= size["nearest_above"]
    assert report["particle"]["atoms"] in (size["nearest_below"], size["nearest_above"])


def test_series_table_and_plots(runner, tmp_path) -> None:
    png, dpng, js = tmp_path / "p.png", tmp_path / "d.png", tmp_path / "s.json"
    result = runner.invoke(
        main,
        [
            "particle",
            "copper",
            "--diameter",
            "15",
            "--series",
            "10,15,25",
            "--plot",
            str(png),
            "--series-plot",
            str(dpng),
            "--json",
            str(js),
        ],
    )
    assert result.exit_code == 0, result.output
    rows = json.loads(js.read_text())["series"]
    assert [r["size_value"] for r in rows] == [10, 15, 25]
    atoms = [r["atoms"] for r in rows]
    assert atoms == sorted(atoms) and atoms[0] < atoms[-1]
    assert png.stat().st_size > 1000 and dpng.stat().st_size > 1000
    assert "diameter (Å)" in result.output


@pytest.mark.parametrize(
    ("args", "fragment"),
    [
        (["--diameter", "0.5"], "nearest-neighbour"),
        (["--diameter", "20", "--centre", "2,0,0"], "outside the cell"),
        (["--diameter", "20", "--atoms", "30"], "exactly one size"),
        ([], "exactly one size"),
        (
            [
                "--form",
                "100=1",
                "--form",
                "010=1",
                "--form",
                "001=1",
                "--diameter",
                "20",
                "--centre",
                "9x",
            ],
            "Wyckoff",
        ),
        (["--diameter", "20", "--plot", "p.jpg"], ".png"),
    ],
)
def test_bad_input_is_one_line_and_writes_nothing(runner, tmp_path, args, fragment) -> None:
    xyz = tmp_path / "never.xyz"
    result = runner.invoke(main, ["particle", "copper", *args, "--xyz", str(xyz)])
    assert result.exit_code == 1
    assert fragment in result.output
    assert "Traceback" not in result.output
    assert len(result.output.strip().splitlines()) == 1
    assert not xyz.exists()
