"""The index, orient and stereo commands, through click's test runner."""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pytest

from habit.cli import main

EXAMPLES = Path(__file__).resolve().parents[2] / "examples"
RUTILE_TC = str(EXAMPLES / "rutile-two-circle.toml")
QUARTZ_TABLE = str(EXAMPLES / "quartz-contact-angles.csv")
ZIRCON_NORMALS = str(EXAMPLES / "zircon-normals.csv")
RUTILE_CELL = ["--cell", "4.5937,4.5937,2.9587,90,90,90", "--class", "4/mmm"]


def test_index_two_circle_json(runner):
    result = runner.invoke(main, ["index", *RUTILE_CELL, RUTILE_TC, "--refine", "--json", "-"])
    assert result.exit_code == 0, result.output
    data = json.loads(result.output)
    faces = {f["label"]: f for f in data["faces"]}
    # the invented broken patch x1 is flagged, not forced
    assert data["flagged"] == ["x1"] and faces["x1"]["face"] is None
    # forms recovered: m{110} (ρ 90°), e{101}, s{111}; the CLI reports φ, ρ calculated
    assert all(abs(faces[k]["hkl"][2]) == 0 and abs(faces[k]["hkl"][0]) == 1 for k in
               ("m1", "m2", "m3", "m4"))
    assert all(abs(v) for v in faces["s1"]["hkl"])
    # e(101) of a tetragonal cell: tan ρ = |a*| / |c*| = c / a (closed form)
    assert faces["e1"]["calculated_rho_deg"] == pytest.approx(
        math.degrees(math.atan(2.9587 / 4.5937)), abs=0.05)
    # measured − calculated (φ, ρ) of indexed faces stay within the 1° tolerance
    for f in data["faces"]:
        if f["indexed"]:
            assert abs(f["delta_rho_deg"]) < 1.0 and abs(f["delta_phi_deg"]) < 3.0
    ref = data["refinement"]["parameters"]["c/a"]
    # rutile c/a = 0.64408 (HoM cell, [C]); invented readings with σ ~ 0.15°
    assert abs(ref["value"] - 2.9587 / 4.5937) < 4 * ref["su"]
    assert data["rms_deg"] < 0.3


def test_index_text_table(runner):
    result = runner.invoke(main, ["index", "zircon", ZIRCON_NORMALS])
    assert result.exit_code == 0, result.output
    assert "12 of 12 faces indexed" in result.output
    assert "residual (°)" in result.output


def test_index_angle_table(runner):
    result = runner.invoke(main, ["index", "quartz", QUARTZ_TABLE, "--json", "-"])
    assert result.exit_code == 0, result.output
    data = json.loads(result.output)
    assert data["orientation_matrix"] is None
    assert data["indexed"] == 7
    assert max(abs(a["residual_deg"]) for a in data["angles"]) < 1.0


@pytest.mark.slow
def test_index_with_system_only(runner):
    result = runner.invoke(main, ["index", "--system", "trigonal", QUARTZ_TABLE, "--json", "-"])
    assert result.exit_code == 0, result.output
    data = json.loads(result.output)
    c = data["refinement"]["parameters"]["c/a"]
    # quartz c/a 1.1001 (HoM cell, [C]); the invented table is read to 0.5°
    assert abs(c["value"] - 5.4053 / 4.9133) < 3 * c["su"] + 1e-3


def test_orient_json(runner):
    result = runner.invoke(main, ["orient", *RUTILE_CELL, RUTILE_TC, "--direction", "0,0,1",
                                  "--uvw", "001", "--uvw", "100", "--hkl", "110",
                                  "--json", "-"])
    assert result.exit_code == 0, result.output
    data = json.loads(result.output)
    # the invented specimen was set with c on the goniometer's polar axis
    assert data["directions"][0]["angle_to_c_deg"] < 0.3
    assert data["directions"][0]["nearest_uvw"] == [0, 0, 1]
    row = data["directions"][0]
    assert row["angles_to_uvw_deg"]["[001]"] == pytest.approx(row["angle_to_c_deg"])
    assert row["angles_to_uvw_deg"]["[100]"] == pytest.approx(row["angle_to_a_deg"])
    # (110) of a tetragonal crystal is parallel to c: its normal is at 90° to c
    assert row["angles_to_face_normals_deg"]["(110)"] == pytest.approx(90.0, abs=0.3)
    c = np.array(data["axes_lab"]["c"])
    assert np.array(data["optic_axis_lab"]) == pytest.approx(c)


def test_stereo_writes_png_and_svg(runner, tmp_path):
    png = tmp_path / "s.png"
    result = runner.invoke(main, ["stereo", *RUTILE_CELL, "110", "101", "--measured", RUTILE_TC,
                                  "--zone", "001", "--plot", str(png), "--json", "-"])
    assert result.exit_code == 0, result.output
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    data = json.loads(result.output)
    poles = {p["face"]: p for p in data["poles"]}
    # (110) of a tetragonal crystal lies on the primitive: ρ 90°, radius 1 (closed form)
    assert poles["(110)"]["rho_deg"] == pytest.approx(90.0)
    assert poles["(110)"]["radius"] == pytest.approx(1.0)
    svg = tmp_path / "s.svg"
    result = runner.invoke(main, ["stereo", *RUTILE_CELL, "--net", "equal-area",
                                  "--plot", str(svg)])
    assert result.exit_code == 0, result.output
    assert "<svg" in svg.read_text()


def test_bad_input_gives_one_line_and_no_file(runner, tmp_path):
    bad = tmp_path / "bad.csv"
    bad.write_text("label,phi_deg,rho_deg\na,0,200\nb,1,2\nc,3,4\n")
    result = runner.invoke(main, ["index", *RUTILE_CELL, str(bad)])
    assert result.exit_code == 1
    assert result.output.strip().count("\n") == 0
    assert "rho 200 degrees is out of range" in result.output
    out = tmp_path / "x.bmp"  # not a figure format
    result = runner.invoke(main, ["stereo", *RUTILE_CELL, "--plot", str(out)])
    assert result.exit_code == 1 and not out.exists()
    result = runner.invoke(main, ["orient", *RUTILE_CELL, QUARTZ_TABLE])
    assert result.exit_code == 1 and "fixes no orientation" in result.output


def test_stereo_uses_the_forms_of_a_crystal_file(runner, tmp_path):
    # the bundled quartz crystal file lists m{10-10}, r{10-11} and z{01-11}
    png = tmp_path / "q.png"
    result = runner.invoke(main, ["stereo", "quartz", "--plot", str(png), "--json", "-"])
    assert result.exit_code == 0, result.output
    faces = {p["face"] for p in json.loads(result.output)["poles"]}
    assert {"(10-10)", "(10-11)", "(01-11)"} <= faces
