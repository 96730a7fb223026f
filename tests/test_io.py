"""Exports: binary STL (read back by trimesh and by a numpy parser), OBJ, JSON."""

from __future__ import annotations

import io
import json
import math
import os

import numpy as np
import pytest
from poly_samples import OCTAHEDRON_NORMALS, cubic_planes

from habit.errors import FileFormatError
from habit.io import (
    obj_text,
    polyhedron_to_dict,
    stl_bytes,
    write_obj,
    write_polyhedron_json,
    write_stl,
)
from habit.polyhedron import Polyhedron

SQ3 = math.sqrt(3.0)


def truncated_octahedron() -> Polyhedron:
    # {100} at 2 and {111} at sqrt 3: vertices are the permutations of (0, +-1, +-2),
    # exactly representable in float32; V = 32 (Archimedean, edge sqrt 2: 8 sqrt2 a^3).
    n, d, hkl, fid = cubic_planes({(1, 0, 0): 2.0, (1, 1, 1): SQ3})
    return Polyhedron.from_halfspaces(n, d, hkl=hkl, form_ids=fid, form_labels=["{100}", "{111}"])


def general_shape() -> Polyhedron:
    rng = np.random.default_rng(2)
    n = np.vstack([OCTAHEDRON_NORMALS, rng.normal(size=(12, 3))])
    return Polyhedron.from_halfspaces(n, rng.uniform(0.8, 1.5, len(n)))


def _parse_stl(raw: bytes) -> tuple[np.ndarray, np.ndarray]:
    """Independent reader of the binary layout (3D Systems 1989 specification)."""
    count = int(np.frombuffer(raw, "<u4", 1, 80)[0])
    assert len(raw) == 84 + 50 * count
    rec = np.frombuffer(
        raw, dtype=[("n", "<f4", (3,)), ("v", "<f4", (3, 3)), ("a", "<u2")], count=count, offset=84
    )
    return rec["n"].astype(float), rec["v"].astype(float)


def _mesh_volume(tri: np.ndarray) -> float:
    return float(np.einsum("ij,ij->i", tri[:, 0], np.cross(tri[:, 1], tri[:, 2])).sum() / 6)


def test_stl_read_back_by_trimesh(tmp_path) -> None:
    trimesh = pytest.importorskip("trimesh")
    p = truncated_octahedron()
    path = write_stl(p, tmp_path / "shape.stl")
    mesh = trimesh.load(str(path), file_type="stl")
    # trimesh (independent reference library): same volume to 1e-9 relative
    assert mesh.is_watertight and mesh.is_winding_consistent
    assert mesh.volume == pytest.approx(p.volume, rel=1e-9)
    assert mesh.volume == pytest.approx(32.0, rel=1e-9)


def test_stl_general_shape_float32(tmp_path) -> None:
    trimesh = pytest.importorskip("trimesh")
    p = general_shape()
    path = write_stl(p, tmp_path / "g.stl")
    mesh = trimesh.load(str(path), file_type="stl")
    # STL stores float32: compare with the same polyhedron rounded to float32 (1e-9), and
    # with the exact one at float32 precision (1e-6).
    rounded = p.vertices.astype(np.float32).astype(float)
    corners, _ = __import__("habit.polyhedron", fromlist=["x"]).fan_triangles(p.face_offsets)
    ref32 = _mesh_volume(rounded[p.face_vertices[corners]])
    assert mesh.volume == pytest.approx(ref32, rel=1e-9)
    assert mesh.volume == pytest.approx(p.volume, rel=1e-6)


def test_stl_numpy_parser_normals_and_winding() -> None:
    p = truncated_octahedron()
    normals, tri = _parse_stl(stl_bytes(p))
    assert _mesh_volume(tri) == pytest.approx(32.0, rel=1e-12)
    # normals are unit, outward (origin inside) and agree with the winding
    cross = np.cross(tri[:, 1] - tri[:, 0], tri[:, 2] - tri[:, 0])
    assert np.linalg.norm(normals, axis=1) == pytest.approx(np.ones(len(tri)), abs=1e-6)
    assert (np.einsum("ij,ij->i", cross, normals) > 0).all()
    assert (np.einsum("ij,ij->i", tri.mean(axis=1), normals) > 0).all()
    assert len(tri) == (p.face_sizes - 2).sum()
    assert not stl_bytes(p, name="solid x")[:5].lower() == b"solid"


def test_obj_groups_and_faces(tmp_path) -> None:
    p = truncated_octahedron()
    path = write_obj(p, tmp_path / "shape.obj")
    text = path.read_text()
    assert text == obj_text(p)
    v = np.array([[float(x) for x in ln.split()[1:]] for ln in text.splitlines() if ln[:2] == "v "])
    faces = [
        [int(tok.split("/")[0]) - 1 for tok in ln.split()[1:]]
        for ln in text.splitlines()
        if ln.startswith("f ")
    ]
    groups = [ln.split()[1] for ln in text.splitlines() if ln.startswith("g ")]
    assert v == pytest.approx(p.vertices, abs=0)  # 17 significant digits round-trip
    assert [len(f) for f in faces] == p.face_sizes.tolist()
    assert groups[0] == "hkl_" + "_".join(map(str, p.hkl[0]))
    assert len(set(groups)) == p.n_faces
    trimesh = pytest.importorskip("trimesh")
    mesh = trimesh.load(str(path), file_type="obj", process=True)
    assert mesh.volume == pytest.approx(32.0, rel=1e-9)


def test_json_round_trip(tmp_path) -> None:
    p = truncated_octahedron()
    path = write_polyhedron_json(p, tmp_path / "shape.json")
    data = json.loads(path.read_text())
    assert data == json.loads(json.dumps(polyhedron_to_dict(p)))
    assert data["metrics"]["volume_A3"] == pytest.approx(32.0)
    assert data["form_labels"] == ["{100}", "{111}"]
    assert len(data["faces"]) == 14 and len(data["vertices_A"]) == 24
    assert sum(data["area_by_form_A2"]) == pytest.approx(data["metrics"]["surface_area_A2"])
    assert all(
        k.endswith(("_A", "_A2", "_A3"))
        or "_" not in k
        or k in {"n_vertices", "n_edges", "n_faces", "euler_characteristic"}
        for k in data["metrics"]
    )


def test_writes_are_atomic(tmp_path, monkeypatch) -> None:
    p = truncated_octahedron()
    with pytest.raises(FileFormatError, match="does not exist"):
        write_stl(p, tmp_path / "missing" / "x.stl")
    target = tmp_path / "keep.obj"
    target.write_text("old")

    def boom(*args, **kwargs):
        raise OSError("disk full")

    monkeypatch.setattr(os, "replace", boom)
    with pytest.raises(OSError, match="disk full"):
        write_obj(p, target)
    # the old file is untouched and no temporary file is left behind
    assert target.read_text() == "old"
    assert sorted(os.listdir(tmp_path)) == ["keep.obj"]
    assert io.BytesIO(b"").read() == b""
