"""The scan command, through click's test runner."""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pytest

from habit.cli import main

EXAMPLES = Path(__file__).resolve().parents[2] / "examples"
FLUORITE_SCAN = str(EXAMPLES / "fluorite-scan.stl")

trimesh = pytest.importorskip("trimesh")


def test_scan_example_json(runner):
    result = runner.invoke(main, ["scan", "demo", FLUORITE_SCAN, "--json", "-"])
    assert result.exit_code == 0, result.output
    data = json.loads(result.output)
    # the invented scan is the demo habit: 6 {100} + 12 {110} + 8 {111} faces, all large
    # enough to keep and all indexed
    assert len(data["facets"]) == 26 and data["indexed"] == 26 and data["flagged"] == []
    forms = sorted(sorted(abs(h) for h in f["hkl"]) for f in data["facets"])
    assert forms.count([0, 0, 1]) == 6 and forms.count([0, 1, 1]) == 12
    assert forms.count([1, 1, 1]) == 8
    # interfacial angles of the indexed facets: (100)∧(110) = 45°, (100)∧(111) = 54.7356°
    # (cubic closed form, arccos(1/√3)); measured on the fitted normals within 1.5°
    normals = {tuple(f["hkl"]): np.array(f["normal_lab"]) for f in data["facets"]}
    for h1, h2 in (((1, 0, 0), (1, 1, 0)), ((1, 0, 0), (1, 1, 1))):
        pairs = [(a, b) for a in normals for b in normals
                 if sorted(map(abs, a)) == sorted(map(abs, h1))
                 and sorted(map(abs, b)) == sorted(map(abs, h2))]
        pa, pb = pairs[0]
        calc = math.degrees(math.acos(np.dot(pa, pb) / np.linalg.norm(pa)
                                      / np.linalg.norm(pb)))
        meas = math.degrees(math.acos(float(np.clip(normals[pa] @ normals[pb], -1, 1))))
        assert abs(meas - calc) < 1.5
    # the example is invented with 0.1 % noise on a 6 mm crystal: flatness about 6 µm
    big = [f for f in data["facets"] if f["area_fraction"] > 0.1]
    assert all(0.004 < f["flatness_rms"] < 0.008 for f in big)
    assert data["mesh"]["length_unit"] == "mm" and data["mesh"]["area_unit"] == "mm²"
    axes = np.array([data["axes_lab"][k] for k in "abc"])
    assert np.allclose(axes @ axes.T, np.eye(3), atol=1e-9)  # cubic axes: orthonormal


def test_scan_table_and_plot(runner, tmp_path):
    png = tmp_path / "scan.png"
    out = tmp_path / "scan.json"
    result = runner.invoke(main, ["scan", "demo", FLUORITE_SCAN, "--plot", str(png),
                                  "--json", str(out), "--unit", "mm"])
    assert result.exit_code == 0, result.output
    assert "26 of 26 facets indexed" in result.output
    assert "area (mm²)" in result.output and "flatness (mm)" in result.output
    assert "residual (°)" in result.output and "axis   lab x" in result.output
    assert png.stat().st_size > 1000 and json.loads(out.read_text())["indexed"] == 26


def _mesh_file(tmp_path: Path, name: str, drop: int = 0) -> Path:
    from habit.crystal import load_crystal
    from habit.scan import synthetic_scan
    from habit.wulff import wulff_shape

    v, t = synthetic_scan(wulff_shape(load_crystal("zircon")).polyhedron, spacing=0.12)
    path = tmp_path / name
    trimesh.Trimesh(vertices=v, faces=t[drop:], process=False).export(path)
    return path


@pytest.mark.parametrize(("kind", "fragment"), [
    ("hole", "holes (3 boundary edges"),
    ("empty", "empty"),
    ("missing", "no such file"),
    ("text", "STL"),
    ("suffix", "unknown mesh file type"),
    ("plot-suffix", "cannot save a figure"),
    ("plot-folder", "does not exist"),
], ids=["hole", "empty", "missing", "not-a-mesh", "suffix", "plot-suffix", "plot-folder"])
def test_scan_refusals_one_line_nothing_written(runner, tmp_path, kind, fragment):
    if kind == "hole":
        mesh = _mesh_file(tmp_path, "holed.stl", drop=1)
    elif kind == "empty":
        mesh = tmp_path / "empty.stl"
        mesh.write_bytes(b"")
    elif kind == "missing":
        mesh = tmp_path / "nowhere.ply"
    elif kind == "text":
        mesh = tmp_path / "notes.stl"
        mesh.write_text("solid? no: a list of specimens, not a mesh\n")
    elif kind == "suffix":
        mesh = tmp_path / "scan.dat"
        mesh.write_text("1 2 3\n")
    else:
        mesh = _mesh_file(tmp_path, "ok.stl")
    out = tmp_path / "out.json"
    plot = tmp_path / ("out.jpg" if kind == "plot-suffix" else "out.png")
    if kind == "plot-folder":
        plot = tmp_path / "no-such-folder" / "out.png"
    result = runner.invoke(main, ["scan", "zircon", str(mesh), "--json", str(out),
                                  "--plot", str(plot)])
    assert result.exit_code == 1
    lines = [ln for ln in result.output.splitlines() if ln.strip()]
    assert len(lines) == 1 and lines[0].startswith("Error:") and fragment in lines[0], lines
    assert "Traceback" not in result.output
    assert not out.exists() and not plot.exists()
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".")]  # no temp files


def test_scan_too_few_facets(runner, tmp_path):
    mesh = _mesh_file(tmp_path, "zircon.stl")
    # a 30 % threshold keeps no facet of a 12-faced zircon
    result = runner.invoke(main, ["scan", "zircon", str(mesh), "--min-area", "0.3"])
    assert result.exit_code == 1 and "facet" in result.output
    assert "Traceback" not in result.output


def test_scan_is_listed(runner):
    result = runner.invoke(main, ["--help"])
    assert result.exit_code == 0 and "scan" in result.output
