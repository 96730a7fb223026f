"""The dual and pack commands through click's runner."""

from __future__ import annotations

import json

import pytest

from habit.cli import main


def test_dual_of_cuboctahedron_is_rhombic_dodecahedron(runner):
    result = runner.invoke(main, ["dual", "cuboctahedron", "--json", "-"])
    assert result.exit_code == 0, result.output
    data = json.loads(result.output)
    assert data["dual"]["name"] == "rhombic dodecahedron"
    assert (data["dual"]["n_vertices"], data["dual"]["n_faces"]) == (14, 12)
    # flags = 4E (Coxeter 1973); symmetry order 48 for both (m-3m)
    assert data["original"]["flag_count"] == 4 * data["original"]["n_edges"] == 96
    assert data["dual"]["symmetry_order"] == 48


def test_dual_of_a_wulff_shape_carries_face_labels(runner, tmp_path):
    out = tmp_path / "dual.json"
    result = runner.invoke(main, ["dual", "copper", "--export", str(out)])
    assert result.exit_code == 0, result.output
    assert "(111)" in result.output  # face -> dual vertex correspondence printed
    exported = json.loads(out.read_text())["metrics"]
    summary = json.loads(runner.invoke(main, ["dual", "copper", "--json", "-"]).stdout)
    # faces become vertices and vertices faces
    assert exported["n_vertices"] == summary["original"]["n_faces"]
    assert exported["n_faces"] == summary["original"]["n_vertices"]


def test_pack_a_bundled_wulff_shape(runner):
    result = runner.invoke(main, ["pack", "zircon", "--starts", "8", "--json", "-"])
    assert result.exit_code == 0, result.output
    data = json.loads(result.stdout)
    density = data["lattice"]["density"]
    assert 0.0 < density <= 1.0 + 1e-12
    assert data["lattice"]["certified"] is True


def test_pack_octahedron_published_density(runner):
    # octahedron: 18/19 (Minkowski 1904; Betke & Henk 2000, Comput. Geom. 16, 157)
    result = runner.invoke(main, ["pack", "octahedron", "--starts", "12", "--json", "-"])
    assert result.exit_code == 0, result.output
    assert json.loads(result.stdout)["lattice"]["density"] == pytest.approx(18 / 19, abs=1e-9)


def test_unknown_shape_is_one_sentence(runner):
    result = runner.invoke(main, ["pack", "unobtainium"])
    assert result.exit_code == 1
    assert "not a reference solid" in result.output
    assert "Traceback" not in result.output
