"""Scanned meshes -> facets -> indices (habit.scan).

Ground truth comes from outside the scan code: the synthetic "scans" are meshes of habit's
own Wulff shapes whose face normals and areas are known exactly, turned by a seeded random
rotation and jittered by Gaussian noise of known size. What is checked:

* noise-free meshes: areas equal the polyhedron's face areas (closed form: the mesh tiles
  each face exactly) and normals equal the rotated face normals to rounding;
* noisy meshes: one facet per face present (count); the fitted normals' errors agree with
  their reported standard uncertainties (the slope formula of least squares, Taylor 1997,
  ch. 8); the flatness equals the vertex noise (the RMS distance of points with isotropic
  Gaussian noise σ from their plane is σ, less a fit's few degrees of freedom);
* indexing recovers each face's (hkl) up to one lattice rotation shared by all faces,
  and the rotation itself.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.spatial.transform import Rotation

from habit.crystal import load_crystal
from habit.errors import FileFormatError, InputError
from habit.indexing import _cartesian_rotation, index_faces, lattice_rotations
from habit.polyhedron import Polyhedron
from habit.scan import (
    ScanFacets,
    check_mesh,
    fit_planes,
    read_mesh,
    scan_facets,
    scan_to_measurements,
    segment_facets,
    synthetic_scan,
)
from habit.wulff import wulff_shape

trimesh = pytest.importorskip("trimesh")

SIZE = 5.0  # mm, equivalent-sphere diameter of the synthetic crystals
MIN_AREA = 0.005  # the default min_area_fraction

# (crystal, noise as a fraction of the size, spacing, seed): one per crystal class tried
CASES = [
    pytest.param("demo", 0.002, 0.04, 11, id="cubic-demo-0.2%"),
    pytest.param("quartz", 0.003, 0.05, 12, id="trigonal-quartz-0.3%"),
    pytest.param("zircon", 0.005, 0.05, 13, id="tetragonal-zircon-0.5%"),
    pytest.param("gypsum", 0.005, 0.05, 14, id="monoclinic-gypsum-0.5%"),
    pytest.param("zircon", 0.001, 0.05, 15, id="tetragonal-zircon-0.1%"),
]

_SHAPES: dict[str, tuple[object, Polyhedron]] = {}


def _shape(name: str) -> tuple[object, Polyhedron]:
    if name not in _SHAPES:
        crystal = load_crystal(name)
        _SHAPES[name] = (crystal, wulff_shape(crystal).polyhedron)
    return _SHAPES[name]


def _scan(name: str, noise: float, spacing: float, seed: int):
    crystal, poly = _shape(name)
    rng = np.random.default_rng(seed)
    rot = Rotation.random(random_state=rng).as_matrix()
    mesh = synthetic_scan(poly, rotation=rot, size=SIZE, spacing=spacing, noise=noise, rng=rng)
    return crystal, poly, rot, mesh


def _match(normals: np.ndarray, true_normals: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    cos = np.clip(normals @ true_normals.T, -1.0, 1.0)
    j = np.argmax(cos, axis=1)
    return j, np.arccos(cos[np.arange(len(j)), j])


def _rotation_angle(a: np.ndarray, b: np.ndarray) -> float:
    c = (np.trace(a.T @ b) - 1.0) / 2.0
    return math.acos(max(-1.0, min(1.0, c)))


@pytest.mark.parametrize(("name", "noise", "spacing", "seed"), CASES)
def test_noisy_scan_gives_faces_normals_indices_and_rotation(name, noise, spacing, seed):
    crystal, poly, rot, mesh = _scan(name, noise, spacing, seed)
    fractions = poly.face_areas / poly.area
    # no face sits near the area threshold, so the expected count is unambiguous
    assert not np.any((fractions > 0.7 * MIN_AREA) & (fractions < 1.3 * MIN_AREA))
    expected = int(np.count_nonzero(fractions >= MIN_AREA))
    facets = scan_facets(mesh)
    assert facets.n_facets == expected
    true_n = poly.normals @ rot.T
    j, err = _match(np.asarray(facets.normals), true_n)
    assert len(set(j.tolist())) == expected  # one facet per face
    # the reported uncertainties are calibrated: for a 2-D Gaussian tilt whose worse axis
    # has the reported σ, E[(err/σ)²] <= 2, so the RMS ratio lies below √2 ≈ 1.41 (we
    # allow 0.4–1.8 for the few facets of one scan); no facet beyond 5σ (a chance of
    # exp(-12.5) ≈ 4e-6 per facet under that model)
    ratio = err / facets.uncertainties
    assert 0.4 < math.sqrt(float(np.mean(ratio**2))) < 1.8, ratio
    assert np.all(ratio < 5.0), ratio
    # flatness = vertex noise σ (independent Gaussian, σ per coordinate): within 25 %
    sigma = noise * SIZE
    big = facets.n_triangles >= 100
    assert np.all(np.abs(facets.flatness[big] / sigma - 1.0) < 0.25)
    # area of each facet close to its face's (triangles along the edges may go either way)
    scale2 = (SIZE / (6 * poly.volume / math.pi) ** (1 / 3)) ** 2
    assert np.allclose(facets.areas, poly.face_areas[j] * scale2, rtol=0.25)

    result = index_faces(crystal, scan_to_measurements(facets), tolerance=math.radians(2.0))
    assert result.n_indexed == expected
    # indices: the true (hkl) of every face, up to one lattice rotation W for all faces
    rots = lattice_rotations(crystal.cell)
    true_hkl = poly.hkl[j]
    settings_fit = [w for w in rots
                    if np.array_equal(result.hkl @ np.rint(np.linalg.inv(w)).astype(int),
                                      true_hkl)
                    or np.array_equal(true_hkl @ np.rint(np.linalg.inv(w)).astype(int),
                                      result.hkl)]
    assert settings_fit
    # rotation: the orientation equals the applied one up to the same lattice rotations;
    # tolerance 3 x (RMS residual / sqrt(faces)) + 0.02°, the error of a mean of N normals
    lattice = crystal.lattice
    best = min(_rotation_angle(result.orientation.matrix, rot @ _cartesian_rotation(lattice, w))
               for w in rots)
    tol = 3.0 * result.rms / math.sqrt(expected) + math.radians(0.02)
    assert best < tol, (math.degrees(best), math.degrees(tol))


@settings(max_examples=6, deadline=None)
@given(st.lists(st.floats(-1.0, 1.0), min_size=4, max_size=4).filter(
    lambda q: np.linalg.norm(q) > 0.1))
def test_noise_free_scan_is_exact_in_any_rotation(q):
    # invariant: with no noise, areas are the face areas (the mesh tiles every face) and
    # normals the rotated face normals, whatever the rotation
    _, poly = _shape("zircon")
    rot = Rotation.from_quat(np.asarray(q) / np.linalg.norm(q)).as_matrix()
    mesh = synthetic_scan(poly, rotation=rot, spacing=0.08)
    facets = scan_facets(mesh)
    assert facets.n_facets == poly.n_faces
    j, err = _match(np.asarray(facets.normals), poly.normals @ rot.T)
    # 1e-6: arccos near 1 and the square root of a rounding-size eigenvalue resolve only
    # about sqrt(machine epsilon) ≈ 1.5e-8
    assert np.all(err < 1e-6)
    assert np.allclose(facets.areas, poly.face_areas[j], rtol=1e-9)
    assert np.all(facets.flatness < 1e-6 * poly.circumradius)
    assert facets.dropped_triangles == 0
    assert facets.total_area == pytest.approx(poly.area, rel=1e-12)


def _dent(vertices: np.ndarray, corner: np.ndarray, centre: np.ndarray, radius: float,
          depth: float) -> np.ndarray:
    """Push vertices within ``radius`` of ``corner`` inwards by a smooth paraboloid bump."""
    inward = (centre - corner) / np.linalg.norm(centre - corner)
    r2 = np.sum((vertices - corner) ** 2, axis=1) / radius**2
    push = np.where(r2 < 1.0, depth * (1.0 - r2), 0.0)
    return vertices + push[:, None] * inward


def test_chipped_corner_is_dropped_not_forced_into_a_facet():
    crystal, poly, rot, (v, t) = _scan("zircon", 0.001, 0.04, 21)
    corner = v[:len(poly.vertices)][0]  # the solid's own corners come first in the mesh
    radius = 0.15 * SIZE
    chipped = _dent(v, corner, v.mean(axis=0), radius, 0.5 * radius)
    facets = scan_facets((chipped, t))
    # still exactly the crystal's faces: the curved chip formed no facet of its own
    assert facets.n_facets == poly.n_faces
    j, err = _match(np.asarray(facets.normals), poly.normals @ rot.T)
    assert len(set(j.tolist())) == poly.n_faces
    assert np.all(np.degrees(err) < 0.5)
    # the chip's steep middle (slope over 20° from every face) lies in no facet
    steep = np.linalg.norm(v[t].mean(axis=1) - corner, axis=1) < 0.5 * radius
    assert np.count_nonzero(steep) > 10
    assert np.mean(facets.labels[steep] < 0) > 0.8
    assert facets.dropped_area > 0


def _round_edge(v, a, b, n1, n2, rho):
    """Replace the edge a-b between faces of outward normals n1, n2 by a cylinder of radius rho.

    Points between the edge and the two tangent lines are projected radially onto the
    cylinder (tangent to both faces), as a rounded (worn) edge looks.
    """
    axis = (b - a) / np.linalg.norm(b - a)
    u1 = np.cross(axis, n1)
    u1 = -u1 if u1 @ n2 > 0 else u1  # in face 1, away from the edge
    u2 = np.cross(axis, n2)
    u2 = -u2 if u2 @ n1 > 0 else u2
    half = math.acos(float(np.clip(u1 @ u2, -1, 1))) / 2  # half the interior dihedral angle
    w = (u1 + u2) / np.linalg.norm(u1 + u2)
    centre = a + rho / math.sin(half) * w
    tangent = rho / math.tan(half)
    rel = v - a
    along = rel @ axis
    inside = ((rel @ u1) < tangent) & ((rel @ u2) < tangent) & (along > 0) & \
        (along < np.linalg.norm(b - a)) & ((v - centre) @ w < 0)
    foot = centre + np.outer((v - centre) @ axis, axis)  # nearest point of the cylinder axis
    radial = v - foot
    out = v.copy()
    out[inside] = foot[inside] + rho * radial[inside] / np.linalg.norm(
        radial[inside], axis=1, keepdims=True)
    return out, inside


def test_rounded_edge_is_dropped():
    # the longest edge of a 5 mm crystal worn round with a 0.3 mm radius: the rounded
    # band breaks into strips of about 2 x 10° of arc, each under the 0.5 % area
    # threshold, so they are dropped; every face is still found, no band facet appears
    _, poly, rot, (v, t) = _scan("gypsum", 0.001, 0.03, 22)
    k = int(np.argmax(poly.edge_lengths))
    ia, ib = poly.edges[k]
    f1, f2 = poly.edge_faces[k]
    n1, n2 = rot @ poly.normals[f1], rot @ poly.normals[f2]
    rounded, moved = _round_edge(v, v[ia], v[ib], n1, n2, 0.06 * SIZE)
    assert np.count_nonzero(moved) > 20
    facets = scan_facets((rounded, t))
    j, err = _match(np.asarray(facets.normals), poly.normals @ rot.T)
    assert facets.n_facets == poly.n_faces
    assert len(set(j.tolist())) == poly.n_faces
    assert np.all(np.degrees(err) < 0.5)
    # triangles wholly on the band: those near its rims join the faces (within 10°),
    # the rest are dropped
    band = np.all(moved[t], axis=1)
    assert np.count_nonzero(band) > 10
    assert np.mean(facets.labels[band] < 0) > 0.3


def test_min_area_threshold_drops_small_faces():
    # the demo's {110} and {111} faces each hold about 0.7–0.85 % of the area: a 2 %
    # threshold keeps only the six cube faces
    _, poly, rot, mesh = _scan("demo", 0.001, 0.04, 23)
    facets = scan_facets(mesh, min_area_fraction=0.02)
    assert facets.n_facets == 6
    j, _ = _match(np.asarray(facets.normals), poly.normals @ rot.T)
    assert sorted(np.abs(poly.hkl[j]).sum(axis=1).tolist()) == [1] * 6


def test_labels_and_measurements():
    _, poly, rot, mesh = _scan("quartz", 0.002, 0.06, 24)
    facets = scan_facets(mesh)
    assert np.all(np.diff(facets.areas) <= 0)  # largest first
    meas = scan_to_measurements(facets, source="x.stl")
    assert meas.kind == "normals"
    assert meas.labels == tuple(f"F{k + 1}" for k in range(facets.n_facets))
    assert np.allclose(meas.weights / meas.weights[0], facets.areas / facets.areas[0])
    assert np.allclose(meas.normals, facets.normals)
    assert meas.source == "x.stl"
    # the labels are the evidence: areas of labelled triangles add up to the facet areas
    tri = facets.vertices[facets.triangles]
    a = 0.5 * np.linalg.norm(np.cross(tri[:, 1] - tri[:, 0], tri[:, 2] - tri[:, 0]), axis=1)
    ok = facets.labels >= 0
    assert np.allclose(np.bincount(facets.labels[ok], weights=a[ok]), facets.areas)


def test_scan_facets_is_frozen():
    _, poly, _, mesh = _scan("zircon", 0.0, 0.1, 25)
    facets = scan_facets(mesh)
    assert isinstance(facets, ScanFacets)
    with pytest.raises(dataclasses.FrozenInstanceError):
        facets.normals = None  # type: ignore[misc]
    with pytest.raises(ValueError):
        facets.normals[0, 0] = 1.0
    with pytest.raises(ValueError):
        facets.labels[0] = 3


def test_inverted_winding_is_turned_outward():
    _, poly, rot, (v, t) = _scan("zircon", 0.0, 0.1, 26)
    facets = fit_planes((v, t[:, ::-1]), segment_facets((v, t[:, ::-1])))
    j, err = _match(np.asarray(facets.normals), poly.normals @ rot.T)
    assert np.all(err < 1e-6)  # outward, as the faces' normals (not antiparallel: err ~ π)


# ---------------------------------------------------------------------------- refusals


def _demo_mesh():
    _, poly = _shape("demo")
    return synthetic_scan(poly, spacing=0.1)


def test_hole_is_refused_naming_boundary_edges():
    v, t = _demo_mesh()
    # deleting two triangles that share no vertex opens 2 x 3 = 6 boundary edges
    first = t[0]
    other = next(k for k in range(1, len(t)) if not set(t[k]) & set(first))
    holed = np.delete(t, [0, other], axis=0)
    with pytest.raises(FileFormatError, match=r"holes \(6 boundary edges"):
        check_mesh((v, holed))


def test_read_mesh_round_trip_and_refusals(tmp_path):
    v, t = _demo_mesh()
    good = tmp_path / "ok.stl"
    trimesh.Trimesh(vertices=v, faces=t, process=False).export(good)
    mesh = read_mesh(good)
    assert len(mesh.faces) == len(t) and len(mesh.vertices) == len(v)  # vertices merged
    ply = tmp_path / "ok.ply"
    trimesh.Trimesh(vertices=v, faces=t, process=False).export(ply)
    assert len(read_mesh(ply).faces) == len(t)
    obj = tmp_path / "ok.obj"
    trimesh.Trimesh(vertices=v, faces=t, process=False).export(obj)
    assert len(read_mesh(obj).faces) == len(t)
    # quads in an OBJ are split into triangles: a unit cube of six squares
    cube = tmp_path / "cube.obj"
    cube.write_text("\n".join(
        [f"v {x} {y} {z}" for x in (0, 1) for y in (0, 1) for z in (0, 1)]
        + ["f 1 2 4 3", "f 5 7 8 6", "f 1 5 6 2", "f 3 4 8 7", "f 1 3 7 5", "f 2 6 8 4"])
        + "\n")
    quads = read_mesh(cube)
    assert len(quads.faces) == 12 and quads.area == pytest.approx(6.0)
    assert quads.volume == pytest.approx(1.0)  # wound outward

    holed = tmp_path / "holed.stl"
    trimesh.Trimesh(vertices=v, faces=t[1:], process=False).export(holed)
    with pytest.raises(FileFormatError, match=r"holes \(3 boundary edges"):
        read_mesh(holed)
    empty = tmp_path / "empty.stl"
    empty.write_bytes(b"")
    with pytest.raises(FileFormatError, match="empty"):
        read_mesh(empty)
    with pytest.raises(FileFormatError, match="no such file"):
        read_mesh(tmp_path / "missing.obj")
    text = tmp_path / "notes.stl"
    text.write_text("these are field notes, not a mesh\n")
    with pytest.raises(FileFormatError, match="not a readable STL|no triangles"):
        read_mesh(text)
    with pytest.raises(FileFormatError, match="unknown mesh file type"):
        read_mesh(tmp_path / "scan.xyz")


def test_flat_mesh_has_no_area():
    v = np.array([[0, 0, 0], [1, 0, 0], [2, 0, 0], [3, 0, 0]], float)
    t = np.array([[0, 1, 2], [0, 2, 1], [1, 2, 3], [1, 3, 2]])
    with pytest.raises(FileFormatError, match="no area"):
        check_mesh((v, t))


@pytest.mark.parametrize(("kwargs", "fragment"), [
    ({"angle_deg": 0.5}, "angle_deg"),
    ({"angle_deg": 45.0}, "angle_deg"),
    ({"min_area_fraction": 0.6}, "min_area_fraction"),
    ({"min_area_fraction": -0.1}, "min_area_fraction"),
], ids=["angle-small", "angle-large", "area-large", "area-negative"])
def test_bad_options_are_refused(kwargs, fragment):
    v, t = _demo_mesh()
    with pytest.raises(InputError, match=fragment):
        segment_facets((v, t), **kwargs)


def test_plot_scan_colours_touching_facets_apart():
    from habit.plot.scan import plot_scan

    _, poly, _, mesh = _scan("demo", 0.001, 0.06, 27)
    facets = scan_facets(mesh)
    art = plot_scan(facets)
    assert len(art.triangles.get_facecolors()) == len(facets.triangles)
    assert 0 < len(art.labels) < facets.n_facets  # only the side facing the viewer
    # facets that share an edge have different colours
    lab = facets.labels
    e = np.sort(facets.triangles[:, [0, 1, 1, 2, 2, 0]].reshape(-1, 2), axis=1)
    owner = np.repeat(lab, 3)
    order = np.lexsort((e[:, 1], e[:, 0]))
    e, owner = e[order], owner[order]
    same = np.all(e[1:] == e[:-1], axis=1)
    a, b = owner[:-1][same], owner[1:][same]
    touching = (a != b) & (a >= 0) & (b >= 0)
    assert np.any(touching)
    assert all(art.colours[i] != art.colours[k] for i, k in zip(a[touching], b[touching],
                                                                 strict=True))
    with pytest.raises(InputError):
        plot_scan(facets, face_labels=["only one"])


def test_missing_trimesh_names_the_extra(monkeypatch, tmp_path):
    import sys

    from habit.errors import MissingDependencyError

    path = tmp_path / "x.stl"
    path.write_bytes(b"\0" * 84)
    monkeypatch.setitem(sys.modules, "trimesh", None)  # import now fails
    with pytest.raises(MissingDependencyError, match=r"pip install habit\[mesh\]"):
        read_mesh(path)


def test_progress_reports_triangles_placed():
    _, poly, _, (v, t) = _scan("zircon", 0.002, 0.05, 28)
    seen: list[int] = []
    facets = scan_facets((v, t), progress=seen.append)
    assert seen and seen[-1] == len(t)
    assert all(b >= a for a, b in zip(seen, seen[1:], strict=False))
    assert facets.n_facets == poly.n_faces


def test_finely_triangulated_noisy_scan_still_segments():
    # triangles 0.1 mm across with 15 µm noise (σ/edge = 0.15, raw triangle normals
    # scattered by about 12°): the denoising runs longer and every face is still found
    crystal, poly, rot, mesh = _scan("zircon", 0.003, 0.02, 29)
    facets = scan_facets(mesh)
    assert facets.n_facets == poly.n_faces
    j, err = _match(np.asarray(facets.normals), poly.normals @ rot.T)
    assert len(set(j.tolist())) == poly.n_faces
    assert np.all(err / facets.uncertainties < 5.0)
