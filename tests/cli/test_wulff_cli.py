"""The wulff and demo commands, end to end."""

from __future__ import annotations

import json

import numpy as np
import pytest

from habit.cli import main
from habit.crystal import bundled_crystals, load_crystal
from habit.wulff import wulff_shape

WITH_FORMS = [name for name, path in bundled_crystals().items() if path.suffix == ".toml"]


def stl_volume(path):
    """Volume of a closed binary STL by the divergence theorem, read with numpy only."""
    data = path.read_bytes()
    count = int(np.frombuffer(data, dtype="<u4", count=1, offset=80)[0])
    record = np.dtype([("n", "<f4", 3), ("v", "<f4", (3, 3)), ("attr", "<u2")])
    tris = np.frombuffer(data, dtype=record, count=count, offset=84)["v"].astype(float)
    return float(np.einsum("ij,ij->i", tris[:, 0], np.cross(tris[:, 1], tris[:, 2])).sum() / 6)


@pytest.mark.parametrize("name", WITH_FORMS)
def test_wulff_runs_on_every_bundled_crystal_with_forms(runner, tmp_path, name):
    png, stl, js = tmp_path / "s.png", tmp_path / "s.stl", tmp_path / "s.json"
    result = runner.invoke(
        main, ["wulff", name, "--plot", str(png), "--export", str(stl), "--json", str(js)]
    )
    assert result.exit_code == 0, result.output
    assert png.stat().st_size > 1000
    report = json.loads(js.read_text())
    assert any(f["present"] for f in report["forms"])
    assert sum(f["area_percent"] for f in report["forms"]) == pytest.approx(100.0, abs=1e-9)
    assert report["symmetry"]["contains_crystal_class"] is True
    # The STL, read back by independent readers (trimesh; numpy below), encloses the
    # same volume as the polyhedron: to 1e-9 relative against the polyhedron's own faces
    # with its vertices rounded to float32 as STL stores them, and to 1e-6 against the
    # double-precision volume.
    import trimesh

    shape = wulff_shape(load_crystal(name))
    poly = shape.polyhedron
    v32 = poly.vertices.astype(np.float32).astype(float)
    exact32 = sum(
        float(np.dot(v32[f[0]], np.cross(v32[f[i]], v32[f[i + 1]])))
        for f in poly.faces
        for i in range(1, len(f) - 1)
    ) / 6.0
    mesh = trimesh.load(stl)
    assert mesh.is_watertight
    assert mesh.volume == pytest.approx(exact32, rel=1e-9)
    assert stl_volume(stl) == pytest.approx(exact32, rel=1e-9)
    assert exact32 == pytest.approx(poly.volume, rel=1e-6)
    assert report["volume_h0_3"] * min(f.distance for f in shape.forms) ** 3 == pytest.approx(
        poly.volume, rel=1e-12
    )


def test_forms_as_options_and_kinds(runner):
    argv = ["wulff", "--cell", "4.0782,4.0782,4.0782,90,90,90", "--class", "m-3m",
            "--form", "100=1.0", "--form", "111=1.1547005383792517", "--json", "-"]
    result = runner.invoke(main, argv)
    assert result.exit_code == 0, result.output
    report = json.loads(result.output)
    assert report["shape_name"] == "cuboctahedron"
    assert report["n_vertices"] == 12
    # r = γ111/γ100 = 2/√3 gives the cuboctahedron, V = 20/3 h100³ (closed form)
    assert report["volume_h0_3"] == pytest.approx(20 / 3, rel=1e-9)
    assert report["mean_energy_J_m2"] is not None


REFUSED = [
    (["--form", "111=0"], "positive"),
    (["--form", "111=-1"], "positive"),
    (["--form", "111=nan"], "positive"),
    (["--form", "100=1", "--form", "010=2"], "twice"),
    (["--form", "10-11=1"], "four indices"),
    (["--form", "000=1"], "(000)"),
]


@pytest.mark.parametrize(("extra", "fragment"), REFUSED, ids=[r[1] for r in REFUSED])
def test_refusals_write_nothing(runner, tmp_path, extra, fragment):
    png, stl, js = tmp_path / "s.png", tmp_path / "s.stl", tmp_path / "s.json"
    argv = ["wulff", "--cell", "4,4,4,90,90,90", "--class", "m-3m", *extra,
            "--plot", str(png), "--export", str(stl), "--json", str(js)]
    result = runner.invoke(main, argv)
    assert result.exit_code != 0
    assert fragment in result.output
    assert "Traceback" not in result.output
    assert list(tmp_path.iterdir()) == []


def test_open_forms_refused_without_files(runner, tmp_path):
    stl = tmp_path / "s.stl"
    argv = ["wulff", "--cell", "4.9133,4.9133,5.4053,90,90,120", "--class", "32",
            "--form", "10-10=1", "--distances", "--export", str(stl)]
    result = runner.invoke(main, argv)
    assert result.exit_code == 1
    assert "do not close a solid" in result.output
    assert not stl.exists()


def test_demo_writes_its_outputs(runner, tmp_path):
    out = tmp_path / "demo"
    result = runner.invoke(main, ["demo", "--out", str(out)])
    assert result.exit_code == 0, result.output
    for name in ("table.txt", "shape.png", "shape.svg", "shape.stl", "shape.obj", "shape.json"):
        assert (out / name).stat().st_size > 0, name
    assert "invented" in result.output
