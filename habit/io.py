"""Writers for polyhedra (binary STL, Wavefront OBJ, JSON) and particles (extended XYZ).

Every writer writes to a temporary file beside the target and moves it into place with
``os.replace`` only when the whole file has been written, so a failed write never leaves
a half-written file behind.

References
----------
.. [1] 3D Systems, *StereoLithography Interface Specification* (1989): the binary STL
   layout (80-byte header, uint32 count, 50 bytes per triangle, little-endian float32).
.. [2] Wavefront Technologies, *Advanced Visualizer* manual, appendix B1 "Object files
   (.obj)": ``v``, ``f`` and ``g`` statements, 1-based vertex indices.
"""

from __future__ import annotations

import json
import math
import os
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np

from habit.errors import FileFormatError
from habit.polyhedron import Polyhedron, fan_triangles

if TYPE_CHECKING:
    from habit.particle import Particle

__all__ = [
    "write_stl",
    "write_obj",
    "write_polyhedron_json",
    "read_polyhedron_json",
    "polyhedron_from_dict",
    "polyhedron_to_dict",
    "stl_bytes",
    "obj_text",
    "atomic_write",
    "format_extxyz",
    "write_extxyz",
]


def atomic_write(path: str | os.PathLike[str], data: bytes | str) -> Path:
    """Write ``data`` to ``path`` through a temporary file and ``os.replace``.

    Parameters
    ----------
    path : str or path-like
        Target file; its folder must exist.
    data : bytes or str
        Content (str is written as UTF-8).

    Returns
    -------
    pathlib.Path
        The target path.

    Raises
    ------
    FileFormatError
        The folder does not exist or the file cannot be written.
    """
    from habit._files import replacing

    target = Path(path)
    raw = data.encode("utf-8") if isinstance(data, str) else data
    with replacing(target) as tmp:
        tmp.write_bytes(raw)
    return target


def stl_bytes(poly: Polyhedron, *, name: str = "habit polyhedron") -> bytes:
    """Encode the polyhedron as binary STL (faces split into fans of triangles).

    Coordinates are stored as float32, as the format requires (about 7 significant
    digits). Triangles are wound counter-clockwise seen from outside and carry the face's
    outward unit normal.

    Parameters
    ----------
    poly : Polyhedron
        The solid, coordinates in Å.
    name : str
        Text for the 80-byte header (ASCII; must not start with "solid").

    Returns
    -------
    bytes
    """
    corners, face_of = fan_triangles(poly.face_offsets)
    tri = poly.vertices[poly.face_vertices[corners]]  # (T, 3, 3)
    rec = np.zeros(tri.shape[0], dtype=[("n", "<f4", (3,)), ("v", "<f4", (3, 3)), ("attr", "<u2")])
    rec["n"] = poly.normals[face_of]
    rec["v"] = tri
    header = name.encode("ascii", "replace")[:80]
    if header.lower().startswith(b"solid"):
        header = b"habit: " + header[:73]
    header = header.ljust(80, b" ")
    return header + np.uint32(tri.shape[0]).tobytes() + rec.tobytes()


def write_stl(poly: Polyhedron, path: str | os.PathLike[str], *, name: str = "habit") -> Path:
    """Write binary STL atomically; see :func:`stl_bytes`. Returns the path."""
    return atomic_write(path, stl_bytes(poly, name=name))


def _hkl_tag(hkl: np.ndarray) -> str:
    return "hkl_" + "_".join(str(int(v)) for v in hkl)


def obj_text(poly: Polyhedron, *, name: str = "habit_polyhedron") -> str:
    """Encode the polyhedron as Wavefront OBJ text with one group per face.

    Polygon faces are kept whole (``f`` with all their vertices, counter-clockwise seen
    from outside); each face is in a group named by its Miller indices
    (``g hkl_1_0_-1``) or, without indices, ``g face_<n>``. Coordinates in Å with 17
    significant digits.

    Parameters
    ----------
    poly : Polyhedron
        The solid.
    name : str
        Object name (spaces are replaced by underscores).

    Returns
    -------
    str
    """
    lines = [
        "# habit polyhedron; units: angstrom",
        f"o {name.replace(' ', '_')}",
    ]
    lines += [f"v {x:.17g} {y:.17g} {z:.17g}" for x, y, z in poly.vertices.tolist()]
    lines += [f"vn {x:.17g} {y:.17g} {z:.17g}" for x, y, z in poly.normals.tolist()]
    for f, loop in enumerate(poly.faces):
        tag = _hkl_tag(poly.hkl[f]) if poly.hkl is not None else f"face_{f}"
        lines.append(f"g {tag}")
        lines.append("f " + " ".join(f"{i + 1}//{f + 1}" for i in loop.tolist()))
    return "\n".join(lines) + "\n"


def write_obj(
    poly: Polyhedron, path: str | os.PathLike[str], *, name: str = "habit_polyhedron"
) -> Path:
    """Write Wavefront OBJ atomically; see :func:`obj_text`. Returns the path."""
    return atomic_write(path, obj_text(poly, name=name))


def _clean(value: Any) -> Any:
    if isinstance(value, float) and not math.isfinite(value):
        return None
    return value


def polyhedron_to_dict(poly: Polyhedron) -> dict[str, Any]:
    """Describe the polyhedron as plain JSON-ready data; keys carry units.

    Returns
    -------
    dict
        ``vertices_A`` (V lists of 3), ``faces`` (vertex-index loops, counter-clockwise
        from outside), ``face_normals`` (unit), ``face_distances_A``, ``face_areas_A2``,
        ``face_hkl``, ``face_labels``, ``form_ids``, ``form_labels``,
        ``area_by_form_A2``, ``edges``, ``edge_lengths_A``, ``interfacial_angles_deg``
        and ``metrics`` (volume_A3, surface_area_A2, ...).
    """
    return {
        "units": {"length": "angstrom", "area": "angstrom^2", "volume": "angstrom^3"},
        "vertices_A": poly.vertices.tolist(),
        "faces": [loop.tolist() for loop in poly.faces],
        "face_normals": poly.normals.tolist(),
        "face_distances_A": poly.distances.tolist(),
        "face_areas_A2": poly.face_areas.tolist(),
        "face_hkl": None if poly.hkl is None else poly.hkl.tolist(),
        "face_labels": None if poly.face_labels is None else list(poly.face_labels),
        "form_ids": np.asarray(poly.form_ids).tolist(),
        "form_labels": None if poly.form_labels is None else list(poly.form_labels),
        "area_by_form_A2": poly.area_by_form.tolist(),
        "edges": poly.edges.tolist(),
        "edge_lengths_A": poly.edge_lengths.tolist(),
        "interfacial_angles_deg": np.degrees(poly.interfacial_angles).tolist(),
        "metrics": {k: _clean(v) for k, v in poly.metrics().items()},
    }


def write_polyhedron_json(poly: Polyhedron, path: str | os.PathLike[str]) -> Path:
    """Write :func:`polyhedron_to_dict` as indented JSON, atomically. Returns the path."""
    text = json.dumps(polyhedron_to_dict(poly), indent=2) + "\n"
    return atomic_write(path, text)


def polyhedron_from_dict(data: Any) -> Polyhedron:
    """Rebuild a polyhedron from :func:`polyhedron_to_dict` data.

    The solid is the convex hull of ``vertices_A`` (``vertices`` is accepted too); the
    face labels (``face_hkl``, ``form_ids``, ``form_labels``, ``face_labels``) are
    re-attached by matching each face's normal to the stored ``face_normals``.

    Raises
    ------
    FileFormatError
        The data lack a list of vertices, or the faces do not match the stored normals.
    """
    if not isinstance(data, dict):
        raise FileFormatError("a polyhedron JSON must be an object with a 'vertices_A' list.")
    raw = data.get("vertices_A", data.get("vertices"))
    try:
        vertices = np.asarray(raw, dtype=np.float64)
    except (TypeError, ValueError):
        vertices = np.empty((0,))
    if vertices.ndim != 2 or vertices.shape[1:] != (3,):
        raise FileFormatError(
            "a polyhedron JSON needs 'vertices_A': a list of [x, y, z] coordinates in Å."
        )
    poly = Polyhedron.from_vertices(vertices)
    normals = data.get("face_normals")
    if normals is None:
        return poly
    stored = np.asarray(normals, dtype=np.float64).reshape(-1, 3)
    cos = poly.normals @ stored.T  # (F, F_stored)
    match = cos.argmax(axis=1)
    if stored.shape[0] != poly.n_faces or not np.allclose(cos.max(axis=1), 1.0, atol=1e-6):
        raise FileFormatError("the stored face normals do not match the faces of the vertices.")
    labels: dict[str, Any] = {}
    if data.get("face_hkl") is not None:
        labels["hkl"] = np.asarray(data["face_hkl"], dtype=np.int64)[match]
    if data.get("form_ids") is not None:
        labels["form_ids"] = np.asarray(data["form_ids"], dtype=np.int64)[match]
    if data.get("form_labels") is not None:
        labels["form_labels"] = [str(x) for x in data["form_labels"]]
    if data.get("face_labels") is not None:
        labels["face_labels"] = [str(data["face_labels"][i]) for i in match]
    return poly.with_labels(**labels) if labels else poly


def read_polyhedron_json(path: str | os.PathLike[str]) -> Polyhedron:
    """Read a polyhedron written by :func:`write_polyhedron_json`.

    Raises
    ------
    FileFormatError
        Missing file, invalid JSON, or no vertex list.
    """
    target = Path(path)
    try:
        data = json.loads(target.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise FileFormatError(f"no such file: {target}.") from None
    except (json.JSONDecodeError, UnicodeDecodeError) as exc:
        raise FileFormatError(f"{target} is not valid JSON ({exc}).") from None
    return polyhedron_from_dict(data)


# --- atoms: extended XYZ ------------------------------------------------------------


def format_extxyz(particle: Particle, *, vacuum: float = 10.0, comment: str = "") -> str:
    """Return the particle as extended XYZ text.

    The atoms are shifted into an orthogonal box that leaves ``vacuum`` Å on every side
    (``Lattice=`` of the comment line, ``pbc="F F F"``); the columns are species,
    position (Å), site label (``bulk``, ``facet{hkl}``, ``edge``, ``vertex``) and
    coordination.

    Parameters
    ----------
    particle : habit.particle.Particle
    vacuum : float
        Space around the particle, Å.
    comment : str
        Free text added as ``comment="..."`` (double quotes are replaced).

    Returns
    -------
    str
    """
    pos = particle.positions
    low = pos.min(axis=0) - vacuum
    box = pos.max(axis=0) - pos.min(axis=0) + 2.0 * vacuum
    shifted = pos - low
    centre = -low
    lattice = f"{box[0]:.6f} 0 0 0 {box[1]:.6f} 0 0 0 {box[2]:.6f}"
    header = (
        f'Lattice="{lattice}" '
        "Properties=species:S:1:pos:R:3:site:S:1:coordination:I:1 "
        f'pbc="F F F" centre="{centre[0]:.6f} {centre[1]:.6f} {centre[2]:.6f}"'
    )
    if comment:
        header += ' comment="' + comment.replace('"', "'") + '"'
    labels = ["_".join(lab.split()) for lab in particle.site_labels().tolist()]  # no blanks
    line = "{:<3}{:14.6f}{:14.6f}{:14.6f}  {} {}".format
    body = map(
        line,
        particle.species.tolist(),
        shifted[:, 0].tolist(),
        shifted[:, 1].tolist(),
        shifted[:, 2].tolist(),
        labels,
        particle.coordination.tolist(),
    )
    return f"{particle.n_atoms}\n{header}\n" + "\n".join(body) + "\n"


def write_extxyz(particle: Particle, path: str | os.PathLike[str], **kwargs: Any) -> Path:
    """Write :func:`format_extxyz` to ``path`` atomically (temporary file, then rename).

    Parameters
    ----------
    particle : habit.particle.Particle
    path : str or path-like
    **kwargs
        Passed to :func:`format_extxyz`.

    Returns
    -------
    pathlib.Path
        The target path.
    """
    return atomic_write(path, format_extxyz(particle, **kwargs))
