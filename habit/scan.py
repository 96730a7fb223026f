"""From a 3-D scan of a real crystal (a triangle mesh) to its facets.

The scan's path into habit's inverse problem:

1. :func:`read_mesh` reads an STL, OBJ or PLY file and refuses, with one sentence, a file
   that is missing, unreadable, not a closed surface (holes) or has no area.
2. :func:`segment_facets` splits the surface into facets: triangle normals are first
   denoised, then regions grow over edge-adjacent triangles whose normals agree with the
   region's mean normal; small regions (rounded edges, chips, the matrix the crystal grew
   on, noise) are dropped.
3. :func:`fit_planes` fits a plane to each facet and reports its area, flatness and the
   uncertainty of its normal, as a frozen :class:`ScanFacets`.
4. :func:`scan_to_measurements` turns the facets into the :class:`~habit.measurements.
   Measurements` that :func:`habit.indexing.index_faces` indexes.

Lengths are in the mesh's own unit (scanners mostly write millimetres; STL stores no
unit), areas in that unit squared, angles in radians (the parameters in degrees say so).

Method
------
*Denoising.* Each triangle's unit normal is replaced by the area-weighted mean of its
own and its edge neighbours' normals, each neighbour weighted by
``exp(-|n_i - n_j|² / (2 s²))`` with ``s`` the segmentation angle: a bilateral filter on
normals [2]_, which averages noise within a face but hardly across an edge between faces.
It runs at least 4 passes, and more (at most 40) while the median angle between
neighbouring normals is above 0.2 ``s`` — finely triangulated noisy scans need more. The
denoised normals serve the segmentation only; planes are fitted to the measured
vertices.

*Segmentation rule.* Seeds are taken in order of how well a triangle's denoised normal
agrees with its neighbours' (the flattest spots first). From a seed, a region grows ring
by ring over edge-adjacent free triangles whose denoised normal lies within ``angle_deg``
of the region's area-weighted mean normal, which is updated after each ring (region
growing [1]_). Regions whose mean normals agree within ``angle_deg`` are then merged
when they share an edge, or, for regions of at least a fifth of the area threshold,
when each one's centroid lies within 2.5 % of the mesh's bounding-box diagonal of the
other's plane (one face split by a band of noisy or damaged triangles). A region is
kept as a facet when its area is at least ``min_area_fraction`` of the mesh's total
area; the triangles of smaller regions get the label −1 (dropped). A curved patch (a
rounded edge, a chip) breaks into many narrow regions, each of which spans only about
``2 * angle_deg`` of the curvature, so it is dropped by the same rule unless it is large.

*Plane fit.* For each facet, every distinct vertex gets the weight of one third of the
area of the facet's triangles that meet there; the plane passes through the weighted
centroid, and its normal is the eigenvector of the smallest eigenvalue of the weighted
covariance matrix (total least squares, as in [3]_), turned to agree with the facet's
outward triangle normals. The flatness is the weighted RMS distance of the vertices from
the plane, the square root of that eigenvalue. The standard uncertainty of the normal's
direction is the regression formula for the uncertainty of a slope [4]_:
``flatness / sqrt(n_eff * lambda_2)``, with ``lambda_2`` the smaller in-plane eigenvalue
(the vertices' spread along the facet's narrow direction) and ``n_eff = (Σw)² / Σw²`` the
effective number of vertices; it assumes independent vertex errors.

References
----------
.. [1] Besl, P. J. & Jain, R. C. (1988). Segmentation through variable-order surface
   fitting. *IEEE Trans. Pattern Anal. Mach. Intell.* 10, 167–192.
.. [2] Zheng, Y., Fu, H., Au, O. K.-C. & Tai, C.-L. (2011). Bilateral normal filtering
   for mesh denoising. *IEEE Trans. Vis. Comput. Graph.* 17, 1521–1530.
.. [3] Hoppe, H., DeRose, T., Duchamp, T., McDonald, J. & Stuetzle, W. (1992). Surface
   reconstruction from unorganized points. *Computer Graphics (SIGGRAPH '92)* 26, 71–78.
.. [4] Taylor, J. R. (1997). *An Introduction to Error Analysis*, 2nd ed., University
   Science Books, ch. 8 (uncertainty of the slope of a least-squares line).
"""

from __future__ import annotations

import math
import os
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from habit._arrays import readonly as _readonly
from habit._typing import ArrayLike, FloatArray, IntArray
from habit.errors import FileFormatError, InputError, MissingDependencyError
from habit.measurements import Measurements, measurements_from_arrays

__all__ = [
    "MESH_SUFFIXES",
    "ScanFacets",
    "read_mesh",
    "check_mesh",
    "mesh_arrays",
    "triangle_normals",
    "segment_facets",
    "fit_planes",
    "scan_facets",
    "scan_to_measurements",
    "synthetic_scan",
]

#: file types :func:`read_mesh` understands
MESH_SUFFIXES: tuple[str, ...] = (".stl", ".obj", ".ply")

_SMOOTHING_PASSES = 4  # bilateral normal-filter passes before segmentation, at least
_MAX_PASSES = 40  # and at most
_SETTLED = 0.2  # stop when the median neighbour angle is below this x the segmentation angle


def _trimesh() -> Any:
    try:
        import trimesh
    except ImportError:
        raise MissingDependencyError(
            "reading and segmenting meshes needs trimesh; install it with "
            "'pip install habit[mesh]'."
        ) from None
    return trimesh


# ------------------------------------------------------------------------ mesh checks


def mesh_arrays(mesh: Any) -> tuple[FloatArray, IntArray]:
    """Vertices and triangles of a mesh given as an object or a pair of arrays.

    Parameters
    ----------
    mesh : trimesh.Trimesh, or (vertices, triangles)
        Anything with ``vertices`` (V, 3) and ``faces`` (F, 3) attributes, or the two
        arrays.

    Returns
    -------
    vertices : (V, 3) float array
    triangles : (F, 3) int array

    Raises
    ------
    InputError
        If the arrays do not have those shapes or indices are out of range.

    Examples
    --------
    >>> v, t = mesh_arrays(([[0, 0, 0], [1, 0, 0], [0, 1, 0]], [[0, 1, 2]]))
    >>> v.shape, t.tolist()
    ((3, 3), [[0, 1, 2]])
    """
    if hasattr(mesh, "vertices") and hasattr(mesh, "faces"):
        v, t = mesh.vertices, mesh.faces
    else:
        try:
            v, t = mesh
        except (TypeError, ValueError):
            raise InputError("a mesh must be a trimesh.Trimesh or a pair (vertices, "
                             "triangles).") from None
    vertices = np.asarray(v, dtype=np.float64)
    triangles = np.asarray(t)
    if vertices.ndim != 2 or vertices.shape[1] != 3:
        raise InputError(f"mesh vertices must have shape (V, 3); got {vertices.shape}.")
    if triangles.ndim != 2 or triangles.shape[1] != 3 or (
            triangles.size and not np.issubdtype(triangles.dtype, np.integer)):
        raise InputError(f"mesh triangles must be an (F, 3) integer array; got shape "
                         f"{triangles.shape}.")
    triangles = triangles.astype(np.int64)
    if triangles.size and (triangles.min() < 0 or triangles.max() >= len(vertices)):
        raise InputError("mesh triangles refer to vertices that do not exist.")
    if not np.all(np.isfinite(vertices)):
        raise InputError("mesh vertices must be finite numbers.")
    return vertices, triangles


def _edge_counts(triangles: IntArray, *, directed: bool = False
                 ) -> tuple[IntArray, IntArray]:
    """Edges (E, 2) with the number of triangles that use each (undirected by default)."""
    e = triangles[:, [0, 1, 1, 2, 2, 0]].reshape(-1, 2)  # (3F, 2) directed
    if not directed:
        e = np.sort(e, axis=1)
    n = int(triangles.max()) + 1
    keys, counts = np.unique(e[:, 0] * n + e[:, 1], return_counts=True)  # (E,)
    return np.column_stack([keys // n, keys % n]), counts


def check_mesh(mesh: Any, *, where: str = "mesh") -> tuple[FloatArray, IntArray]:
    """Check that a mesh is a closed surface with area; return its arrays.

    Parameters
    ----------
    mesh : trimesh.Trimesh or (vertices, triangles)
    where : str
        Name used in messages (the file name).

    Returns
    -------
    vertices : (V, 3) float array
    triangles : (F, 3) int array
        Wound so that the enclosed volume is positive (normals outward).

    Raises
    ------
    FileFormatError
        No triangles, no area, holes (edges used by one triangle only), edges shared by
        more than two triangles, or triangles wound inconsistently.

    Examples
    --------
    >>> tet = ([[0, 0, 0], [1, 0, 0], [0, 1, 0], [0, 0, 1]],
    ...        [[0, 2, 1], [0, 1, 3], [0, 3, 2], [1, 2, 3]])
    >>> check_mesh(tet)[1].shape
    (4, 3)
    >>> check_mesh((tet[0], tet[1][:3]))
    Traceback (most recent call last):
    ...
    habit.errors.FileFormatError: mesh: the surface has holes (3 boundary edges, used by one \
triangle only); a scan must be closed (watertight) — fill the holes in the scanner's \
software first.
    """
    vertices, triangles = mesh_arrays(mesh)
    if len(triangles) == 0:
        raise FileFormatError(f"{where}: the mesh has no triangles; give a closed triangle "
                              "surface (STL, OBJ or PLY).")
    areas = _triangle_areas(vertices, triangles)
    total = float(areas.sum())
    extent = float(np.ptp(vertices[triangles.ravel()], axis=0).max())
    if not total > 1e-12 * max(extent, 1e-300) ** 2:
        raise FileFormatError(f"{where}: the mesh has no area (all {len(triangles)} triangles "
                              "are degenerate); give a scanned surface.")
    edges, counts = _edge_counts(triangles)
    open_edges = int(np.count_nonzero(counts == 1))
    if open_edges:
        raise FileFormatError(
            f"{where}: the surface has holes ({open_edges} boundary edges, used by one "
            "triangle only); a scan must be closed (watertight) — fill the holes in the "
            "scanner's software first."
        )
    shared = int(np.count_nonzero(counts > 2))
    if shared:
        raise FileFormatError(
            f"{where}: {shared} edges are shared by more than two triangles (not a single "
            "closed surface); give one closed, manifold surface."
        )
    _, dcounts = _edge_counts(triangles, directed=True)
    clashes = int(np.count_nonzero(dcounts > 1))
    if clashes:
        raise FileFormatError(
            f"{where}: the triangles are wound inconsistently ({clashes} edges run the same "
            "way in both of their triangles); repair the normals in the scanner's software."
        )
    if _signed_volume(vertices, triangles) < 0:
        triangles = triangles[:, ::-1].copy()
    return vertices, triangles


def _triangle_areas(vertices: FloatArray, triangles: IntArray) -> FloatArray:
    tri = vertices[triangles]  # (F, 3, 3)
    cross = np.cross(tri[:, 1] - tri[:, 0], tri[:, 2] - tri[:, 0])
    return np.asarray(0.5 * np.linalg.norm(cross, axis=1), dtype=np.float64)


def _signed_volume(vertices: FloatArray, triangles: IntArray) -> float:
    tri = vertices[triangles] - vertices.mean(axis=0)
    return float(np.einsum("ij,ij->i", tri[:, 0], np.cross(tri[:, 1], tri[:, 2])).sum() / 6.0)


def triangle_normals(vertices: ArrayLike, triangles: ArrayLike
                     ) -> tuple[FloatArray, FloatArray]:
    """Unit normals and areas of triangles.

    Parameters
    ----------
    vertices : (V, 3) float array
    triangles : (F, 3) int array
        Counter-clockwise seen from the side the normal points to.

    Returns
    -------
    normals : (F, 3) float array
        Unit normals; zero rows for degenerate (zero-area) triangles.
    areas : (F,) float array
        In the mesh's length unit squared.

    Examples
    --------
    >>> n, a = triangle_normals([[0, 0, 0], [2, 0, 0], [0, 2, 0]], [[0, 1, 2], [0, 0, 1]])
    >>> n.tolist(), a.tolist()
    ([[0.0, 0.0, 1.0], [0.0, 0.0, 0.0]], [2.0, 0.0])
    """
    v = np.asarray(vertices, dtype=float)
    tri = v[np.asarray(triangles, dtype=np.int64)]  # (F, 3, 3)
    cross = np.cross(tri[:, 1] - tri[:, 0], tri[:, 2] - tri[:, 0])  # (F, 3)
    norm = np.linalg.norm(cross, axis=1)  # (F,)
    ok = norm > 0
    normals = np.zeros_like(cross)
    normals[ok] = cross[ok] / norm[ok, None]
    return normals, np.asarray(0.5 * norm, dtype=np.float64)


def read_mesh(path: str | os.PathLike[str]) -> Any:
    """Read a triangle mesh (STL, OBJ or PLY) of a scanned crystal and check it.

    Vertices at the same position are merged (STL stores each triangle on its own), and
    the triangles are wound so that their normals point outward.

    Parameters
    ----------
    path : path-like
        A ``.stl``, ``.obj`` or ``.ply`` file; lengths in the scanner's unit.

    Returns
    -------
    trimesh.Trimesh

    Raises
    ------
    FileFormatError
        With one sentence: a missing, empty or unreadable file, an unknown file type, a
        surface with holes (naming the number of boundary edges), or a mesh with no area.
    MissingDependencyError
        If trimesh is not installed.

    Examples
    --------
    >>> read_mesh("no-such-scan.stl")
    Traceback (most recent call last):
    ...
    habit.errors.FileFormatError: no-such-scan.stl: no such file.
    """
    p = Path(path)
    suffix = p.suffix.lower()
    if suffix not in MESH_SUFFIXES:
        raise FileFormatError(f"{p}: unknown mesh file type {suffix or '(none)'}; use "
                              ".stl, .obj or .ply.")
    if not p.is_file():
        raise FileFormatError(f"{p}: no such file.")
    try:
        size = p.stat().st_size
    except OSError as exc:
        raise FileFormatError(f"{p}: cannot read the file ({exc.strerror}).") from None
    if size == 0:
        raise FileFormatError(f"{p}: the file is empty; give a triangle mesh "
                              f"({suffix[1:].upper()}).")
    trimesh = _trimesh()
    try:
        with open(p, "rb") as handle:
            loaded = trimesh.load(handle, file_type=suffix[1:], force="mesh", process=False)
    except OSError as exc:
        raise FileFormatError(f"{p}: cannot read the file ({exc.strerror}).") from None
    except Exception:  # trimesh's readers raise many kinds of error on bad files
        raise FileFormatError(f"{p}: not a readable {suffix[1:].upper()} triangle mesh.") \
            from None
    faces = getattr(loaded, "faces", None)
    if faces is None or len(faces) == 0:
        raise FileFormatError(f"{p}: no triangles found; not a readable "
                              f"{suffix[1:].upper()} triangle mesh.")
    mesh = trimesh.Trimesh(vertices=np.asarray(loaded.vertices, float),
                           faces=np.asarray(loaded.faces, np.int64), process=False)
    mesh.merge_vertices()
    mesh.remove_unreferenced_vertices()
    vertices, triangles = check_mesh(mesh, where=str(p))
    return trimesh.Trimesh(vertices=vertices, faces=triangles, process=False)


# ----------------------------------------------------------------------- segmentation


def _adjacency(triangles: IntArray) -> IntArray:
    """(E, 2) pairs of triangles sharing an edge."""
    trimesh = _trimesh()
    adj = trimesh.graph.face_adjacency(faces=triangles)
    return np.asarray(adj, dtype=np.int64).reshape(-1, 2)


def _smooth_normals(normals: FloatArray, areas: FloatArray, adj: IntArray, sigma: float,
                    passes: int) -> FloatArray:
    """Bilateral filter on triangle normals (see the module notes).

    At least ``passes`` passes; more (up to ``_MAX_PASSES``) while the median angle
    between neighbouring normals exceeds ``_SETTLED`` x sigma, i.e. while the noise within
    faces is still large against the segmentation angle (finely triangulated noisy scans).
    """
    n = normals.copy()
    a, b = adj[:, 0], adj[:, 1]
    for done in range(_MAX_PASSES):
        if done >= passes:
            chord = np.sqrt(np.median(np.sum((n[a] - n[b]) ** 2, axis=1)))
            if chord <= _SETTLED * sigma:
                break
        d2 = np.sum((n[a] - n[b]) ** 2, axis=1)  # (E,)
        w = np.exp(-d2 / (2.0 * sigma * sigma))
        acc = n * areas[:, None]  # (F, 3): the triangle itself
        np.add.at(acc, a, (w * areas[b])[:, None] * n[b])
        np.add.at(acc, b, (w * areas[a])[:, None] * n[a])
        norm = np.linalg.norm(acc, axis=1)
        ok = norm > 0
        n[ok] = acc[ok] / norm[ok, None]
    return n


def _csr(adj: IntArray, count: int) -> tuple[IntArray, IntArray]:
    """Neighbour lists as (offsets (F+1,), neighbours) from the pair list."""
    src = np.concatenate([adj[:, 0], adj[:, 1]])
    dst = np.concatenate([adj[:, 1], adj[:, 0]])
    order = np.argsort(src, kind="stable")
    offsets = np.zeros(count + 1, dtype=np.int64)
    np.cumsum(np.bincount(src, minlength=count), out=offsets[1:])
    return offsets, dst[order]


def _ranges(starts: IntArray, stops: IntArray) -> IntArray:
    """Concatenation of ``arange(s, e)`` for all pairs, without a Python loop."""
    lengths = stops - starts
    total = int(lengths.sum())
    if total == 0:
        return np.zeros(0, dtype=np.int64)
    # position within each range, plus the range's start
    shift = np.repeat(starts - np.concatenate([[0], np.cumsum(lengths)[:-1]]), lengths)
    return np.asarray(np.arange(total) + shift, dtype=np.int64)


def _grow_regions(normals: FloatArray, areas: FloatArray, adj: IntArray, cos_tol: float,
                  progress: Callable[[int], None] | None = None) -> IntArray:
    """Region growing on (denoised) normals; returns a region id per triangle."""
    count = len(normals)
    done, reported, step = 0, 0, max(1, count // 100)
    offsets, neigh = _csr(adj, count)
    # seed order: triangles that agree best with their neighbours first
    a, b = adj[:, 0], adj[:, 1]
    dev = np.zeros(count)
    np.maximum.at(dev, a, 1.0 - np.sum(normals[a] * normals[b], axis=1))
    np.maximum.at(dev, b, 1.0 - np.sum(normals[a] * normals[b], axis=1))
    valid = areas > 0
    seeds = np.lexsort((-areas, dev))
    region = np.full(count, -1, dtype=np.int64)
    region[~valid] = -2  # degenerate triangles take part in no region
    next_id = 0
    for seed in seeds:
        if region[seed] != -1:
            continue
        region[seed] = next_id
        total = normals[seed] * areas[seed]
        ring = np.array([seed])
        while ring.size:
            # all free neighbours of the last ring
            cand = np.unique(neigh[_ranges(offsets[ring], offsets[ring + 1])])
            cand = cand[region[cand] == -1]
            if cand.size == 0:
                break
            mean = total / np.linalg.norm(total)
            take = cand[normals[cand] @ mean >= cos_tol]
            region[take] = next_id
            total = total + (normals[take] * areas[take, None]).sum(axis=0)
            done += take.size
            ring = take
        next_id += 1
        done += 1
        if progress is not None and done - reported >= step:
            progress(done)
            reported = done
    if progress is not None:
        progress(count)
    return region


def _merge_regions(region: IntArray, normals: FloatArray, areas: FloatArray,
                   centres: FloatArray, adj: IntArray, cos_tol: float, min_area: float,
                   gap: float) -> IntArray:
    """Merge regions that belong to one plane (see the module notes).

    Two regions are merged when their area-weighted mean normals agree within the
    tolerance and either they share an edge, or both are not tiny (at least a fifth of
    ``min_area``) and each one's centroid lies within ``gap`` of the other's plane (one
    face split by a band of noisy or damaged triangles).
    """
    from scipy.sparse import coo_matrix
    from scipy.sparse.csgraph import connected_components

    good = region >= 0
    nreg = int(region.max()) + 1 if np.any(good) else 0
    if nreg < 2:
        return region
    w = areas[good]
    sums = np.zeros((nreg, 3))
    np.add.at(sums, region[good], normals[good] * w[:, None])
    means = sums / np.maximum(np.linalg.norm(sums, axis=1, keepdims=True), 1e-300)  # (R, 3)
    reg_area = np.bincount(region[good], weights=w, minlength=nreg)  # (R,)
    cent = np.zeros((nreg, 3))
    np.add.at(cent, region[good], centres[good] * w[:, None])
    cent /= np.maximum(reg_area, 1e-300)[:, None]
    # edge-adjacent pairs
    ra, rb = region[adj[:, 0]], region[adj[:, 1]]
    ok = (ra >= 0) & (rb >= 0) & (ra != rb)
    ra, rb = ra[ok], rb[ok]
    # coplanar pairs among regions that are not tiny
    big = np.nonzero(reg_area >= 0.2 * min_area)[0]
    bi, bj = np.triu_indices(len(big), k=1)
    bi, bj = big[bi], big[bj]  # (P,)
    sep = cent[bj] - cent[bi]  # (P, 3)
    close = (np.abs(np.sum(means[bi] * sep, axis=1)) <= gap) & \
        (np.abs(np.sum(means[bj] * sep, axis=1)) <= gap)
    ra = np.concatenate([ra, bi[close]])
    rb = np.concatenate([rb, bj[close]])
    join = np.sum(means[ra] * means[rb], axis=1) >= cos_tol
    graph = coo_matrix((np.ones(int(join.sum())), (ra[join], rb[join])), shape=(nreg, nreg))
    _, comp = connected_components(graph, directed=False)
    out = region.copy()
    out[good] = comp[region[good]]
    return out


def segment_facets(
    mesh: Any,
    *,
    angle_deg: float = 10.0,
    min_area_fraction: float = 0.005,
    progress: Callable[[int], None] | None = None,
) -> IntArray:
    """Split a closed triangle mesh into flat facets by region growing.

    See the module notes for the rule. Facets are numbered 0, 1, ... by decreasing area;
    triangles of dropped regions (smaller than ``min_area_fraction`` of the total area)
    and degenerate triangles get −1.

    Parameters
    ----------
    mesh : trimesh.Trimesh or (vertices, triangles)
        A closed surface (see :func:`check_mesh`).
    angle_deg : float
        Largest angle (degrees) between a triangle's denoised normal and its region's
        mean normal; also the width of the denoising filter. Between 1 and 30 degrees;
        keep it well below the smallest interfacial angle between neighbouring faces.
    min_area_fraction : float
        Smallest facet kept, as a fraction of the mesh's total area, 0 <= f < 0.5.
    progress : callable, optional
        Called now and then with the number of triangles placed so far (of F).

    Returns
    -------
    (F,) int array
        Facet number of every triangle, −1 for dropped ones (read-only).

    Raises
    ------
    InputError
        Options out of range.
    FileFormatError
        A mesh that is not a closed surface with area.

    Examples
    --------
    >>> from habit.polyhedron import Polyhedron
    >>> cube = Polyhedron.from_halfspaces(np.vstack([np.eye(3), -np.eye(3)]), np.ones(6))
    >>> labels = segment_facets(synthetic_scan(cube, spacing=0.2))
    >>> int(labels.max()) + 1, bool(np.all(labels >= 0))     # six faces, nothing dropped
    (6, True)
    """
    if not (math.isfinite(angle_deg) and 1.0 <= angle_deg <= 30.0):
        raise InputError(f"angle_deg must lie between 1 and 30 degrees; got {angle_deg:g}.")
    if not (math.isfinite(min_area_fraction) and 0.0 <= min_area_fraction < 0.5):
        raise InputError("min_area_fraction must lie in [0, 0.5) (a fraction of the total "
                         f"area); got {min_area_fraction:g}.")
    vertices, triangles = check_mesh(mesh)
    normals, areas = triangle_normals(vertices, triangles)
    adj = _adjacency(triangles)
    tol = math.radians(angle_deg)
    smooth = _smooth_normals(normals, areas, adj, tol, _SMOOTHING_PASSES)
    cos_tol = math.cos(tol)
    region = _grow_regions(smooth, areas, adj, cos_tol, progress)
    centres = vertices[triangles].mean(axis=1)  # (F, 3)
    min_area = min_area_fraction * float(areas.sum())
    gap = 0.025 * float(np.linalg.norm(np.ptp(vertices, axis=0)))
    region = _merge_regions(region, smooth, areas, centres, adj, cos_tol, min_area, gap)
    good = region >= 0
    nreg = int(region[good].max()) + 1 if np.any(good) else 0
    reg_area = np.bincount(region[good], weights=areas[good], minlength=nreg)
    keep = reg_area >= min_area
    keep &= reg_area > 0
    order = np.argsort(-reg_area, kind="stable")
    order = order[keep[order]]
    new_id = np.full(nreg, -1, dtype=np.int64)
    new_id[order] = np.arange(order.size)
    labels = np.full(len(triangles), -1, dtype=np.int64)
    labels[good] = new_id[region[good]]
    out: IntArray = _readonly(labels, np.int64)
    return out


# ------------------------------------------------------------------------- plane fits


@dataclass(frozen=True, slots=True, eq=False)  # holds arrays: compared by identity
class ScanFacets:
    """Facets found on a scanned mesh, with planes fitted and the evidence.

    Facets are ordered by decreasing area; facet ``k`` is labelled ``F{k+1}``.

    Attributes
    ----------
    normals : (K, 3) float array
        Unit outward normals of the fitted planes, in the mesh's (lab) frame.
    offsets : (K,) float array
        Plane offsets: ``normals[k] · x = offsets[k]`` on the plane (mesh length unit).
    centroids : (K, 3) float array
        Area-weighted centroids of the facets' vertices (mesh length unit).
    areas : (K,) float array
        Facet areas, sums of their triangles' areas (mesh length unit squared).
    flatness : (K,) float array
        Weighted RMS distance of a facet's vertices from its plane (mesh length unit).
    uncertainties : (K,) float array
        Standard uncertainty of the direction of each normal, radians.
    n_triangles : (K,) int array
        Triangles in each facet.
    labels : (F,) int array
        Facet of every triangle of the mesh; −1 where the triangle was dropped.
    vertices : (V, 3) float array
        The mesh's vertices (mesh length unit).
    triangles : (F, 3) int array
        The mesh's triangles, wound outward.
    total_area : float
        Area of the whole mesh (mesh length unit squared).
    """

    normals: FloatArray
    offsets: FloatArray
    centroids: FloatArray
    areas: FloatArray
    flatness: FloatArray
    uncertainties: FloatArray
    n_triangles: IntArray
    labels: IntArray
    vertices: FloatArray
    triangles: IntArray
    total_area: float

    @property
    def n_facets(self) -> int:
        """Number of facets."""
        return int(len(self.areas))

    @property
    def names(self) -> tuple[str, ...]:
        """Facet labels ``F1``, ``F2``, ... (largest first)."""
        return tuple(f"F{k + 1}" for k in range(self.n_facets))

    @property
    def dropped_area(self) -> float:
        """Area of the triangles that belong to no facet (mesh length unit squared)."""
        return float(self.total_area - self.areas.sum())

    @property
    def dropped_triangles(self) -> int:
        """Number of triangles that belong to no facet."""
        return int(np.count_nonzero(self.labels < 0))


def fit_planes(mesh: Any, labels: ArrayLike) -> ScanFacets:
    """Fit an area-weighted least-squares plane to every facet of a segmented mesh.

    Parameters
    ----------
    mesh : trimesh.Trimesh or (vertices, triangles)
        The closed mesh that was segmented.
    labels : (F,) int array
        Facet of every triangle (0 .. K−1), −1 for triangles in no facet, as returned by
        :func:`segment_facets`.

    Returns
    -------
    ScanFacets
        Facets in the order of their labels (the segmentation's order: largest first).

    Raises
    ------
    InputError
        Labels of the wrong length, or a facet number with no triangle.

    Examples
    --------
    >>> from habit.polyhedron import Polyhedron
    >>> cube = Polyhedron.from_halfspaces(np.vstack([np.eye(3), -np.eye(3)]), np.ones(6))
    >>> mesh = synthetic_scan(cube, spacing=0.25)
    >>> f = fit_planes(mesh, segment_facets(mesh))
    >>> f.n_facets, bool(np.allclose(np.abs(f.normals).max(axis=1), 1.0))
    (6, True)
    """
    vertices, triangles = check_mesh(mesh)
    lab = np.asarray(labels)
    if lab.shape != (len(triangles),) or not np.issubdtype(lab.dtype, np.integer):
        raise InputError(f"labels must be {len(triangles)} integers, one per triangle; got "
                         f"shape {lab.shape}.")
    lab = lab.astype(np.int64)
    k = int(lab.max()) + 1 if lab.size and lab.max() >= 0 else 0
    normals_t, areas_t = triangle_normals(vertices, triangles)
    n_tri = np.bincount(lab[lab >= 0], minlength=k)
    if np.any(n_tri == 0):
        raise InputError(f"facet {int(np.argmin(n_tri))} has no triangle; number facets "
                         "0, 1, ... without gaps.")
    inside = lab >= 0
    # (C,) one entry per (facet, vertex) pair, weight = a third of the triangle areas
    fac = np.repeat(lab[inside], 3)
    vert = triangles[inside].ravel()
    wts = np.repeat(areas_t[inside] / 3.0, 3)
    key = fac * len(vertices) + vert
    uniq, inv = np.unique(key, return_inverse=True)
    w = np.bincount(inv, weights=wts)  # (P,) weight of each distinct (facet, vertex)
    pf = uniq // len(vertices)  # (P,) facet
    pv = uniq % len(vertices)  # (P,) vertex
    x = vertices[pv]  # (P, 3)
    wsum = np.bincount(pf, weights=w, minlength=k)  # (K,)
    w2sum = np.bincount(pf, weights=w * w, minlength=k)
    centroids = np.stack([np.bincount(pf, weights=w * x[:, i], minlength=k)
                          for i in range(3)], axis=1) / wsum[:, None]  # (K, 3)
    d = x - centroids[pf]  # (P, 3)
    outer = w[:, None, None] * d[:, :, None] * d[:, None, :]  # (P, 3, 3)
    cov = np.zeros((k, 3, 3))
    np.add.at(cov, pf, outer)
    cov /= wsum[:, None, None]
    evals, evecs = np.linalg.eigh(cov)  # ascending eigenvalues; (K, 3), (K, 3, 3)
    normals = evecs[:, :, 0]  # (K, 3)
    outward = np.zeros((k, 3))
    np.add.at(outward, lab[inside], normals_t[inside] * areas_t[inside, None])
    flip = np.sum(normals * outward, axis=1) < 0
    normals[flip] *= -1.0
    lam = np.clip(evals, 0.0, None)
    flatness = np.sqrt(lam[:, 0])
    n_eff = wsum**2 / w2sum
    with np.errstate(divide="ignore", invalid="ignore"):
        sigma = np.where(lam[:, 1] > 0, flatness / np.sqrt(n_eff * lam[:, 1]), np.inf)
    uncertainties = np.arctan(sigma)
    areas = np.bincount(lab[inside], weights=areas_t[inside], minlength=k)
    return ScanFacets(
        normals=_readonly(normals),
        offsets=_readonly(np.sum(normals * centroids, axis=1)),
        centroids=_readonly(centroids),
        areas=_readonly(areas),
        flatness=_readonly(flatness),
        uncertainties=_readonly(uncertainties),
        n_triangles=_readonly(n_tri, np.int64),
        labels=_readonly(lab, np.int64),
        vertices=_readonly(vertices),
        triangles=_readonly(triangles, np.int64),
        total_area=float(areas_t.sum()),
    )


def scan_facets(mesh: Any, *, angle_deg: float = 10.0, min_area_fraction: float = 0.005,
                progress: Callable[[int], None] | None = None) -> ScanFacets:
    """Segment a mesh and fit its facets: :func:`segment_facets` then :func:`fit_planes`.

    Parameters
    ----------
    mesh : trimesh.Trimesh or (vertices, triangles)
    angle_deg, min_area_fraction, progress
        As for :func:`segment_facets`.

    Returns
    -------
    ScanFacets

    Examples
    --------
    >>> from habit.polyhedron import Polyhedron
    >>> cube = Polyhedron.from_halfspaces(np.vstack([np.eye(3), -np.eye(3)]), np.ones(6))
    >>> facets = scan_facets(synthetic_scan(cube, spacing=0.25, noise=0.002, rng=1))
    >>> facets.n_facets, facets.names[:2]
    (6, ('F1', 'F2'))
    """
    labels = segment_facets(mesh, angle_deg=angle_deg, min_area_fraction=min_area_fraction,
                            progress=progress)
    return fit_planes(mesh, labels)


def scan_to_measurements(facets: ScanFacets, *, specimen: str = "", source: str = ""
                         ) -> Measurements:
    """Turn scanned facets into lab-frame normals for :func:`habit.indexing.index_faces`.

    Parameters
    ----------
    facets : ScanFacets
    specimen, source : str
        Free text kept with the measurements (e.g. the mesh file name as ``source``).

    Returns
    -------
    Measurements
        Kind ``"normals"``, labels ``F1``, ``F2``, ... (largest facet first), weights
        proportional to facet area (mean weight 1).

    Raises
    ------
    InputError
        If there are no facets.

    Examples
    --------
    >>> from habit.polyhedron import Polyhedron
    >>> cube = Polyhedron.from_halfspaces(np.vstack([np.eye(3), -np.eye(3)]), np.ones(6))
    >>> m = scan_to_measurements(scan_facets(synthetic_scan(cube, spacing=0.25)))
    >>> m.kind, m.n_faces, m.labels[0]
    ('normals', 6, 'F1')
    """
    if facets.n_facets == 0:
        raise InputError("the scan has no facets; lower min_area_fraction or raise the "
                         "segmentation angle.")
    return measurements_from_arrays(
        labels=list(facets.names),
        normals=np.asarray(facets.normals),
        weights=np.asarray(facets.areas) / float(np.mean(facets.areas)),
        normalize=True,
        specimen=specimen,
        source=source,
    )


# --------------------------------------------------------------------- synthetic scans


def synthetic_scan(
    poly: Any,
    *,
    rotation: ArrayLike | None = None,
    size: float | None = None,
    spacing: float = 0.05,
    noise: float = 0.0,
    rng: np.random.Generator | int | None = None,
) -> tuple[FloatArray, IntArray]:
    """A closed mesh of a convex polyhedron with triangles of even size, optionally noisy.

    Every edge of the solid is cut into pieces no longer than the spacing; each face is
    filled with a triangular grid of points of that spacing and triangulated (Delaunay,
    in the face's plane) together with the points on its edges, which it shares with
    its neighbours, so the mesh is closed. For tests, examples and benchmarks: a "scan"
    whose true faces are known.

    Parameters
    ----------
    poly : habit.polyhedron.Polyhedron
        The solid (its vertices, face loops and outward normals are used).
    rotation : (3, 3) float array, optional
        Proper rotation applied after scaling: ``x_lab = rotation @ x``.
    size : float, optional
        Scale the solid to this equivalent-sphere diameter (mesh length unit) first.
    spacing : float
        Target triangle edge length as a fraction of the equivalent-sphere diameter,
        between 0.005 and 0.5.
    noise : float
        Standard deviation of independent Gaussian noise added to every vertex
        coordinate, as a fraction of the equivalent-sphere diameter.
    rng : numpy Generator or int, optional
        Source of the noise.

    Returns
    -------
    vertices : (V, 3) float array
    triangles : (F, 3) int array
        Wound counter-clockwise seen from outside.

    Examples
    --------
    >>> from habit.polyhedron import Polyhedron
    >>> cube = Polyhedron.from_halfspaces(np.vstack([np.eye(3), -np.eye(3)]), np.ones(6))
    >>> v, t = synthetic_scan(cube, spacing=0.25)
    >>> check_mesh((v, t))[1].shape == t.shape      # closed, wound outward
    True
    >>> synthetic_scan(cube, spacing=0.0)
    Traceback (most recent call last):
    ...
    habit.errors.InputError: spacing must lie between 0.005 and 0.5 (a fraction of the \
size); got 0.
    """
    from scipy.spatial import Delaunay

    if not (math.isfinite(spacing) and 0.005 <= spacing <= 0.5):
        raise InputError(f"spacing must lie between 0.005 and 0.5 (a fraction of the size); "
                         f"got {spacing:g}.")
    if not (math.isfinite(noise) and noise >= 0):
        raise InputError(f"noise must be a non-negative fraction; got {noise:g}.")
    verts = np.asarray(poly.vertices, dtype=float)
    diameter = (6.0 * float(poly.volume) / math.pi) ** (1.0 / 3.0)
    if size is not None:
        if not (math.isfinite(size) and size > 0):
            raise InputError(f"size must be a positive length; got {size:g}.")
        verts = verts * (size / diameter)
        diameter = float(size)
    h = spacing * diameter
    points = [verts]
    count = len(verts)
    edge_chain: dict[tuple[int, int], list[int]] = {}
    for a, b in np.sort(np.asarray(poly.edges), axis=1).tolist():
        k = max(1, math.ceil(float(np.linalg.norm(verts[b] - verts[a])) / h))
        t = np.arange(1, k)[:, None] / k  # (k-1, 1)
        points.append(verts[a] + t * (verts[b] - verts[a]))
        edge_chain[(a, b)] = [a, *range(count, count + k - 1), b]
        count += k - 1
    # triangular lattice of spacing h, (L, 2), centred later on each face
    triangles = []
    for f, loop in enumerate(poly.faces):
        ring: list[int] = []
        for p, q in zip(loop.tolist(), np.roll(loop, -1).tolist(), strict=True):
            chain = edge_chain[(p, q)] if p < q else edge_chain[(q, p)][::-1]
            ring.extend(chain[:-1])
        normal = np.asarray(poly.normals[f], dtype=float)
        origin = verts[loop].mean(axis=0)
        u = verts[loop[0]] - origin
        u /= np.linalg.norm(u)
        w = np.cross(normal, u)
        xyz = np.concatenate(points)
        bound = (xyz[ring] - origin) @ np.stack([u, w], axis=1)  # (B, 2)
        inner = _lattice_inside(bound[[ring.index(v) for v in loop.tolist()]], h)  # (I, 2)
        if len(inner) == 0:
            inner = np.zeros((1, 2))  # a small face: its centre
        pts2 = np.concatenate([bound, inner])
        tri = Delaunay(pts2)
        if len(tri.coplanar):
            tri = Delaunay(pts2, qhull_options="QJ")
        simp = tri.simplices  # (S, 3) positions into pts2
        p2 = pts2[simp]  # (S, 3, 2)
        cross = ((p2[:, 1, 0] - p2[:, 0, 0]) * (p2[:, 2, 1] - p2[:, 0, 1])
                 - (p2[:, 1, 1] - p2[:, 0, 1]) * (p2[:, 2, 0] - p2[:, 0, 0]))
        # Qhull may return zero-area triangles along runs of collinear edge points
        keep = np.abs(cross) > 1e-9 * h * h
        simp = np.where((cross < 0)[:, None], simp[:, ::-1], simp)[keep]
        _check_fill(simp, len(ring))
        ids = np.concatenate([np.asarray(ring), count + np.arange(len(inner))])
        points.append(origin + inner @ np.stack([u, w]))
        count += len(inner)
        triangles.append(ids[simp])
    vertices = np.concatenate(points)
    tris = np.concatenate(triangles).astype(np.int64)
    if rotation is not None:
        r = np.asarray(rotation, dtype=float)
        if r.shape != (3, 3) or not np.allclose(r @ r.T, np.eye(3), atol=1e-9) \
                or np.linalg.det(r) < 0:
            raise InputError("rotation must be a proper 3 x 3 rotation matrix.")
        vertices = vertices @ r.T
    if noise > 0:
        gen = np.random.default_rng(rng)
        vertices = vertices + gen.normal(scale=noise * diameter, size=vertices.shape)
    return np.asarray(vertices, dtype=np.float64), tris


def _check_fill(simplices: IntArray, n_ring: int) -> None:
    """Check that a face's triangles meet its boundary ring exactly once per ring edge."""
    e = np.sort(simplices[:, [0, 1, 1, 2, 2, 0]].reshape(-1, 2), axis=1)
    edges, counts = np.unique(e, axis=0, return_counts=True)
    ring = np.sort(np.column_stack([np.arange(n_ring), np.roll(np.arange(n_ring), -1)]), axis=1)
    outer = edges[counts == 1]
    if len(outer) != n_ring or not np.array_equal(np.unique(ring, axis=0), outer) \
            or np.any(counts > 2):
        raise InputError("could not triangulate a face of the solid; try another spacing.")


def _lattice_inside(polygon: FloatArray, h: float) -> FloatArray:
    """Points of a triangular lattice of spacing h inside a convex CCW polygon (2-D).

    Points closer than 0.6 h to the boundary are left out, so the triangles along the
    edges are not slivers.
    """
    lo, hi = polygon.min(axis=0), polygon.max(axis=0)
    rows = np.arange(lo[1], hi[1] + h, h * math.sqrt(3.0) / 2.0)
    cols = np.arange(lo[0] - h, hi[0] + h, h)
    gx, gy = np.meshgrid(cols, rows)
    gx = gx + (np.arange(len(rows))[:, None] % 2) * (h / 2.0)
    pts = np.column_stack([gx.ravel(), gy.ravel()])  # (L, 2)
    edge = np.roll(polygon, -1, axis=0) - polygon  # (k, 2)
    inward = np.column_stack([-edge[:, 1], edge[:, 0]])
    inward /= np.linalg.norm(inward, axis=1, keepdims=True)
    dist = np.einsum("lkd,kd->lk", pts[:, None, :] - polygon[None, :, :], inward)
    return np.asarray(pts[np.all(dist >= 0.6 * h, axis=1)], dtype=np.float64)
