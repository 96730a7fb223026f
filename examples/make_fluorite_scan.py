"""Make ``fluorite-scan.stl``: an invented "scan" of a fluorite crystal, for the examples.

INVENTED SCENARIO: no crystal was scanned. The mesh is habit's own habit drawing of the
bundled demo crystal (``structures/demo.toml``: cube {100} bevelled by {110}, corners cut
by {111}; invented central distances), scaled to an equivalent-sphere diameter of 6 mm,
turned to a random orientation in the "scanner's" frame, triangulated evenly (edges about
0.27 mm) and every vertex moved by Gaussian noise of 0.1 % of the size (6 µm), as an
invented stand-in for a structured-light scanner's error.

Run from the repository root::

    python examples/make_fluorite_scan.py

and try::

    habit scan demo examples/fluorite-scan.stl --plot fluorite-scan.png
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
from scipy.spatial.transform import Rotation

from habit.crystal import load_crystal
from habit.io import atomic_write
from habit.scan import synthetic_scan
from habit.wulff import wulff_shape

SEED = 20261201  # invented; fixes the orientation and the noise
SIZE_MM = 6.0  # equivalent-sphere diameter, mm (invented)
SPACING = 0.045  # triangle edge / size
NOISE = 0.001  # vertex noise / size (invented)


def stl_bytes(vertices: np.ndarray, triangles: np.ndarray, header: str) -> bytes:
    """Binary STL (80-byte header, uint32 count, 50 bytes per triangle, little-endian)."""
    tri = vertices[triangles]  # (T, 3, 3)
    normal = np.cross(tri[:, 1] - tri[:, 0], tri[:, 2] - tri[:, 0])
    normal /= np.linalg.norm(normal, axis=1, keepdims=True)
    rec = np.zeros(len(tri), dtype=[("n", "<f4", (3,)), ("v", "<f4", (3, 3)), ("a", "<u2")])
    rec["n"] = normal
    rec["v"] = tri
    head = header.encode("ascii")[:80].ljust(80, b" ")
    return head + np.uint32(len(tri)).tobytes() + rec.tobytes()


def main() -> None:
    """Build the mesh and write it beside this script."""
    rng = np.random.default_rng(SEED)
    shape = wulff_shape(load_crystal("demo"))
    rotation = Rotation.random(random_state=rng).as_matrix()
    vertices, triangles = synthetic_scan(shape.polyhedron, rotation=rotation, size=SIZE_MM,
                                         spacing=SPACING, noise=NOISE, rng=rng)
    # float32 vertices, as STL stores them; shared vertices stay shared
    vertices = vertices.astype(np.float32).astype(np.float64)
    target = Path(__file__).resolve().parent / "fluorite-scan.stl"
    atomic_write(target, stl_bytes(vertices, triangles,
                                   "habit example: INVENTED fluorite scan, mm"))
    print(f"wrote {target.name}: {len(triangles)} triangles")


if __name__ == "__main__":
    main()
