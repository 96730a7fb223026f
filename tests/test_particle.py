"""Tests of habit.particle against closed forms and a general-purpose library.

Sources
-------
- fcc copper, a = 3.615 Å at room temperature: R. W. G. Wyckoff, Crystal Structures,
  Vol. 1, 2nd ed. (Interscience, 1963) — from memory.
- Cuboctahedral (Mackay) magic numbers N(K) = 10K^3/3 + 5K^2 + 11K/3 + 1 and
  10K^2 + 2 atoms in the K-th shell: A. L. Mackay, Acta Cryst. 15, 916-918 (1962)
  (reference checked); T. P. Martin, Phys. Rep. 273, 199 (1996) — from memory.
- Octahedral numbers n(2n^2 + 1)/3 (atoms of an fcc octahedron with n atoms per edge):
  closed form, e.g. Martin (1996) — from memory.
- Lattice points in a large convex body ~ volume / cell volume (Gauss's lattice-point
  count; the error grows only with the surface): closed-form limit, common practice.
- Wyckoff positions of Fm-3m (225): 4a (0,0,0), 4b (1/2,1/2,1/2), 8c (1/4,1/4,1/4),
  24d (0,1/4,1/4): International Tables for Crystallography Vol. A — from memory.
- Coordination numbers are cross-checked against pymatgen's neighbour search
  (Structure.get_neighbors), a general-purpose reference library.
"""

from __future__ import annotations

import dataclasses
import math
import os

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from pymatgen.core import Lattice, Structure

from habit.errors import EmptyPolyhedronError, HabitError, InputError, OpenShapeError
from habit.particle import (
    achievable_counts,
    carve,
    classify_sites,
    critical_scales,
    first_shells,
    format_extxyz,
    make_particle,
    particle_series,
    resolve_centre,
    shape_geometry,
    write_extxyz,
)

A_CU = 3.615  # Å, Wyckoff (1963), from memory
NN_CU = A_CU / math.sqrt(2.0)  # nearest-neighbour distance of fcc

OCT = np.array(
    [[i, j, k] for i in (-1, 1) for j in (-1, 1) for k in (-1, 1)], dtype=float
) / math.sqrt(3.0)  # the eight {111} normals
CUBE = np.vstack([np.eye(3), -np.eye(3)])  # the six {100} normals
CUBOCT = np.vstack([OCT, CUBE])
CUBOCT_FORMS = [0] * 8 + [1] * 6
CUBOCT_HKL = np.rint(np.vstack([OCT * math.sqrt(3.0), CUBE])).astype(int)
# first-allowed layer spacings of fcc: d_111 (111 allowed) and d_200 = a/2 (100 absent)
CUBOCT_SPACINGS = np.r_[np.full(8, A_CU / math.sqrt(3.0)), np.full(6, A_CU / 2.0)]


_CU = Structure.from_spacegroup("Fm-3m", Lattice.cubic(A_CU), ["Cu"], [[0, 0, 0]])
_CU_PRIM = Structure(
    Lattice(0.5 * A_CU * np.array([[0, 1, 1], [1, 0, 1], [1, 1, 0]], dtype=float)),
    ["Cu"],
    [[0, 0, 0]],
)


def fcc_cu() -> Structure:
    """Fcc copper, conventional cell (4 atoms), built once."""
    return _CU


def fcc_cu_primitive() -> Structure:
    """Fcc copper, primitive rhombohedral cell (1 atom)."""
    return _CU_PRIM


def mackay(k: int) -> int:
    return (10 * k**3 + 15 * k**2 + 11 * k + 3) // 3


def octahedral(n: int) -> int:
    return n * (2 * n * n + 1) // 3


# ---------------------------------------------------------------- closed-form counts


@pytest.mark.parametrize("k", [1, 2, 3, 4, 5], ids=lambda k: f"K={k}")
def test_cuboctahedron_shells_give_mackay_numbers(k: int) -> None:
    # Mackay (1962); Martin (1996): 13, 55, 147, 309, 561; exact (tolerance 0 atoms)
    p = make_particle(
        fcc_cu(),
        CUBOCT,
        None,
        shells=k,
        layer_spacings=CUBOCT_SPACINGS,
        form_ids=CUBOCT_FORMS,
        hkl=CUBOCT_HKL,
    )
    assert p.n_atoms == mackay(k) == [13, 55, 147, 309, 561][k - 1]
    # outer shell 10K^2 + 2 atoms (Mackay 1962), every one under-coordinated
    assert p.n_surface == 10 * k * k + 2
    s = p.summary()
    assert s["vertex_atoms"] == 12  # the 12 corners of a cuboctahedron
    assert s["edge_atoms"] == 24 * (k - 1)  # 24 edges, K - 1 atoms inside each
    # square faces (K-1)^2 inner atoms x 6, triangles (K-1)(K-2)/2 x 8
    assert s["facet_atoms_by_form"] == {"{111}": 4 * (k - 1) * (k - 2), "{100}": 6 * (k - 1) ** 2}


@pytest.mark.parametrize("k", [1, 2, 3, 4])
def test_cuboctahedron_by_edge_equals_by_shells(k: int) -> None:
    # the K-shell cuboctahedron has edges of K nearest-neighbour spacings (Mackay 1962)
    p = make_particle(
        fcc_cu(), CUBOCT, np.r_[np.full(8, 1 / math.sqrt(3)), np.full(6, 0.5)], edge=k * NN_CU
    )
    assert p.n_atoms == mackay(k)


def test_surface_counts_of_55_and_147_atom_cuboctahedra() -> None:
    # Mackay (1962): 42 and 92 surface atoms; exact
    counts = {}
    for k in (2, 3):
        p = make_particle(fcc_cu(), CUBOCT, None, shells=k, layer_spacings=CUBOCT_SPACINGS)
        counts[p.n_atoms] = p.n_surface
    assert counts == {55: 42, 147: 92}


@pytest.mark.parametrize("m", [1, 2, 3, 4, 5, 6], ids=lambda m: f"edge={m}nn")
def test_octahedra_give_octahedral_numbers(m: int) -> None:
    # octahedral numbers n(2n^2+1)/3 with n = m + 1 atoms per edge: 6, 19, 44, 85, 146, 231
    # odd edges are centred on an octahedral void (Wyckoff 4b), even ones on an atom
    centre = "4b" if m % 2 else "atom"
    p = make_particle(fcc_cu(), OCT, np.ones(8), edge=m * NN_CU, centre=centre)
    assert p.n_atoms == octahedral(m + 1) == [6, 19, 44, 85, 146, 231][m - 1]
    # every atom on the outer octahedral shell is a surface atom: O(n) - O(n - 2)
    assert p.n_surface == octahedral(m + 1) - octahedral(max(m - 1, 0))


def test_large_particle_matches_volume_times_number_density() -> None:
    # Gauss lattice-point count: N -> V / (cell volume / 4); tolerance 1 % (common practice)
    rng = np.random.default_rng(7)
    normals = rng.normal(size=(40, 3))
    geom = shape_geometry(normals, np.full(40, 50.0))
    pos, _ = carve(
        Lattice.cubic(A_CU).matrix,
        fcc_cu().frac_coords,
        normals,
        np.full(40, 50.0),
        centre=rng.random(3),
    )
    expected = geom.volume * 4 / A_CU**3
    assert expected > 40_000
    assert abs(len(pos) - expected) / expected < 0.01


# ---------------------------------------------------------------- invariance


def _unimodular(entries: list[int], order: list[int]) -> np.ndarray:
    """An integer matrix of determinant +-1 built from shears and a permutation."""
    m = np.eye(3, dtype=int)[order]
    for n, (i, j) in enumerate([(0, 1), (1, 2), (2, 0), (0, 2)]):
        shear = np.eye(3, dtype=int)
        shear[i, j] = entries[n]
        m = shear @ m
    return m


def _classes(p) -> tuple:
    s = p.summary()
    return (
        s["atoms"],
        s["surface_atoms"],
        s["edge_atoms"],
        s["vertex_atoms"],
        tuple(sorted(s["facet_atoms_by_form"].values())),
    )


@settings(max_examples=12, deadline=None)
@given(
    entries=st.lists(st.integers(-2, 2), min_size=4, max_size=4),
    order=st.permutations([0, 1, 2]),
    ratio=st.floats(0.8, 1.3),
)
def test_counts_do_not_depend_on_the_cell_description(entries, order, ratio) -> None:
    # the same crystal in an equivalent (sheared, permuted) cell: same atoms, same classes
    base = fcc_cu()
    m = _unimodular(entries, order)
    lat = m @ base.lattice.matrix  # rows: new cell vectors
    frac = base.frac_coords @ np.linalg.inv(m)
    d = np.r_[np.full(8, 1.0), np.full(6, ratio)] * 6.0
    ref = make_particle(base, CUBOCT, d, form_ids=CUBOCT_FORMS)
    other = make_particle((lat, frac, ["Cu"] * 4), CUBOCT, d, form_ids=CUBOCT_FORMS)
    assert _classes(other) == _classes(ref)


def test_primitive_and_conventional_cells_agree() -> None:
    d = np.r_[np.full(8, 1.0), np.full(6, 1.15)]
    a = make_particle(fcc_cu(), CUBOCT, d, diameter=30.0, form_ids=CUBOCT_FORMS)
    b = make_particle(fcc_cu_primitive(), CUBOCT, d, diameter=30.0, form_ids=CUBOCT_FORMS)
    assert _classes(a) == _classes(b)
    assert a.n_atoms > 500


@settings(max_examples=10, deadline=None)
@given(
    quat=st.lists(st.floats(-1, 1), min_size=4, max_size=4).filter(
        lambda q: sum(x * x for x in q) > 0.1
    )
)
def test_counts_are_invariant_under_rotation(quat) -> None:
    w, x, y, z = np.asarray(quat) / np.linalg.norm(quat)
    rot = np.array(
        [
            [1 - 2 * (y * y + z * z), 2 * (x * y - z * w), 2 * (x * z + y * w)],
            [2 * (x * y + z * w), 1 - 2 * (x * x + z * z), 2 * (y * z - x * w)],
            [2 * (x * z - y * w), 2 * (y * z + x * w), 1 - 2 * (x * x + y * y)],
        ]
    )
    base = fcc_cu()
    d = np.r_[np.full(8, 1.0), np.full(6, 1.1)] * 7.0
    ref = make_particle(base, CUBOCT, d, form_ids=CUBOCT_FORMS)
    turned = (base.lattice.matrix @ rot.T, base.frac_coords, ["Cu"] * 4)
    other = make_particle(turned, CUBOCT @ rot.T, d, form_ids=CUBOCT_FORMS)
    assert _classes(other) == _classes(ref)


# ---------------------------------------------------------------- site statistics


@pytest.mark.parametrize(
    ("structure", "expected"),
    [
        ("fcc", [12]),
        ("bcc", [8]),
        ("rocksalt", [6, 6]),
    ],
)
def test_bulk_coordination_matches_pymatgen_neighbours(structure: str, expected) -> None:
    # reference: pymatgen Structure.get_neighbors within the same cutoff; exact counts
    if structure == "fcc":
        s = fcc_cu()
    elif structure == "bcc":  # alpha-iron, a = 2.8665 Å (from memory)
        s = Structure(Lattice.cubic(2.8665), ["Fe", "Fe"], [[0, 0, 0], [0.5, 0.5, 0.5]])
    else:  # periclase MgO, a = 4.212 Å (from memory)
        s = Structure.from_spacegroup(
            "Fm-3m", Lattice.cubic(4.212), ["Mg", "O"], [[0, 0, 0], [0.5, 0.5, 0.5]]
        )
    shells = first_shells(s.lattice.matrix, s.frac_coords)
    for i in range(len(s)):
        ref = len(s.get_neighbors(s[i], float(shells.cutoff[i])))
        assert shells.coordination[i] == ref
    assert sorted(set(shells.coordination.tolist())) == sorted(set(expected))


@settings(max_examples=8, deadline=None)
@given(seed=st.integers(0, 2**32 - 1))
def test_tree_coordination_equals_brute_force_count(seed: int) -> None:
    # all-pairs distances as an independent count (checks the near-surface shortcut)
    rng = np.random.default_rng(seed)
    # 12 random planes plus a closing box, so every seed gives a bounded shape
    normals = np.vstack([rng.normal(size=(12, 3)), np.eye(3), -np.eye(3)])
    d = rng.uniform(7.0, 10.0, size=18)
    s = fcc_cu()
    pos, site = carve(s.lattice.matrix, s.frac_coords, normals, d, centre=rng.random(3))
    shells = first_shells(s.lattice.matrix, s.frac_coords)
    classes = classify_sites(pos, site, shells, normals, d)
    dist = np.linalg.norm(pos[:, None] - pos[None], axis=2)
    brute = (dist <= shells.cutoff[site][:, None]).sum(axis=1) - 1
    assert np.array_equal(classes.coordination, brute)
    assert np.all((classes.kind > 0) == (brute < 12))


def test_dispersion_falls_with_size_along_the_mackay_series() -> None:
    # dispersion = (10K^2+2)/N(K) strictly decreasing (Mackay 1962 closed forms)
    rows = particle_series(
        fcc_cu(),
        CUBOCT,
        None,
        kind="shells",
        values=[1, 2, 3, 4],
        layer_spacings=CUBOCT_SPACINGS,
        form_ids=CUBOCT_FORMS,
    )
    disp = [r["dispersion"] for r in rows]
    assert disp == pytest.approx([(10 * k * k + 2) / mackay(k) for k in (1, 2, 3, 4)], rel=1e-12)
    assert all(x > y for x, y in zip(disp, disp[1:], strict=False))
    # equivalent diameter from N atoms of volume a^3/4 each: exact closed form
    k4 = rows[-1]
    assert k4["equivalent_diameter_A"] == pytest.approx(
        (6 * 309 * A_CU**3 / 4 / math.pi) ** (1 / 3), rel=1e-12
    )
    assert k4["equivalent_diameter_nm"] == pytest.approx(k4["equivalent_diameter_A"] / 10)


# ---------------------------------------------------------------- sizing by atom count


@pytest.mark.parametrize("target", [100, 1000, 2500])
def test_target_atoms_picks_the_nearest_achievable_count(target: int) -> None:
    d = np.r_[np.full(8, 1.0), np.full(6, 1.1)]
    p = make_particle(fcc_cu(), CUBOCT, d, atoms=target)
    note = p.size_note
    below, above = note["nearest_below"], note["nearest_above"]
    assert below < target <= above or below == target == above
    assert p.n_atoms in (below, above)
    assert abs(p.n_atoms - target) == min(target - below, above - target)
    # both neighbours really are achievable: carving at their scales gives them back
    s = fcc_cu()
    for count, scale in ((below, note["scale_below"]), (above, note["scale_above"])):
        pos, _ = carve(s.lattice.matrix, s.frac_coords, CUBOCT, d * scale)
        assert len(pos) == count
        # and nothing in between: a slightly smaller particle has fewer atoms
        pos, _ = carve(s.lattice.matrix, s.frac_coords, CUBOCT, d * scale * (1 - 1e-4))
        assert len(pos) < count


@settings(max_examples=6, deadline=None)
@given(target=st.integers(2, 1500), ratio=st.floats(0.9, 1.6), seed=st.integers(0, 10**6))
def test_nearest_counts_are_achieved_for_any_target(target, ratio, seed) -> None:
    s = fcc_cu()
    centre = np.random.default_rng(seed).random(3)
    d = np.r_[np.full(8, 1.0), np.full(6, ratio)]
    p = make_particle(s, CUBOCT, d, atoms=target, centre=centre)
    note = p.size_note
    assert note["nearest_below"] <= target <= note["nearest_above"]
    assert p.n_atoms in (note["nearest_below"], note["nearest_above"])
    for key in ("below", "above"):
        if note[f"nearest_{key}"] > 0:
            pos, _ = carve(
                s.lattice.matrix, s.frac_coords, CUBOCT, d * note[f"scale_{key}"], centre=centre
            )
            assert len(pos) == note[f"nearest_{key}"]


def test_achievable_counts_on_a_hand_made_step_function() -> None:
    crit = [0.0, 1.0, 1.0, 2.0, 3.0, 3.0, 3.0]
    assert achievable_counts(crit, 2) == (1, 0.0, 3, 1.0)
    assert achievable_counts(crit, 4) == (4, 2.0, 4, 2.0)
    assert achievable_counts(crit, 5) == (4, 2.0, 7, 3.0)
    assert achievable_counts(crit, 7) == (7, 3.0, 7, 3.0)


@settings(max_examples=20, deadline=None)
@given(s1=st.floats(2.0, 12.0), s2=st.floats(2.0, 12.0))
def test_count_grows_with_scale_and_matches_critical_scales(s1: float, s2: float) -> None:
    s = fcc_cu()
    lo, hi = sorted((s1, s2))
    d = np.r_[np.full(8, 1.0), np.full(6, 1.2)]
    small, _ = carve(s.lattice.matrix, s.frac_coords, CUBOCT, d * lo)
    big, _ = carve(s.lattice.matrix, s.frac_coords, CUBOCT, d * hi)
    assert len(small) <= len(big)
    crit = critical_scales(big, CUBOCT, d)
    assert np.count_nonzero(crit <= lo * (1 + 1e-9)) == len(small)


# ---------------------------------------------------------------- centres


def test_wyckoff_positions_of_fm3m() -> None:
    # International Tables Vol. A (from memory): the positions of Fm-3m without a free
    # parameter are 4a (0,0,0), 4b (1/2,1/2,1/2), 8c (1/4,1/4,1/4) and 24d (0,1/4,1/4)
    from habit._sites import _wyckoff_points

    s = fcc_cu()
    species = tuple(["Cu"] * 4)
    points = _wyckoff_points(s.lattice.matrix, s.frac_coords, species)
    assert sorted(points) == ["24d", "4a", "4b", "8c"]
    centring = np.array([[0, 0, 0], [0, 0.5, 0.5], [0.5, 0, 0.5], [0.5, 0.5, 0]])
    orbits = {  # representatives of each orbit modulo the F-centring
        "4a": [[0, 0, 0]],
        "4b": [[0.5, 0.5, 0.5]],
        "8c": [[0.25, 0.25, 0.25], [0.75, 0.75, 0.75]],
    }
    for label, reps in orbits.items():
        point, note = resolve_centre(label, s.lattice.matrix, s.frac_coords, species)
        assert label in note
        cands = (np.asarray(reps)[:, None, :] + centring[None]).reshape(-1, 3)
        diff = (point - cands) % 1.0
        assert np.any(np.all(np.minimum(diff, 1 - diff) < 1e-9, axis=1)), label
    with pytest.raises(InputError, match="Wyckoff"):
        resolve_centre("9z", s.lattice.matrix, s.frac_coords, species)


def test_wyckoff_multiplicity_does_not_depend_on_the_cell() -> None:
    s = fcc_cu_primitive()
    point, note = resolve_centre("b", s.lattice.matrix, s.frac_coords, ("Cu",))
    assert "4b" in note
    p = make_particle(s, OCT, np.ones(8), edge=NN_CU, centre=point)
    assert p.n_atoms == 6  # octahedron around an octahedral void


def test_centre_on_another_element() -> None:
    # periclase MgO (a = 4.212 Å, from memory): a cube of edge a centred on O holds
    # 27 atoms: a 3x3x3 block of the rock-salt lattice; the centre and the 12 edge
    # midpoints are O, the 6 face centres and 8 corners Mg (closed form)
    mgo = Structure.from_spacegroup(
        "Fm-3m", Lattice.cubic(4.212), ["Mg", "O"], [[0, 0, 0], [0.5, 0.5, 0.5]]
    )
    p = make_particle(mgo, CUBE, np.full(6, 4.212 / 2), centre="O")
    assert p.n_atoms == 27
    assert p.summary()["atoms_by_species"] == {"O": 13, "Mg": 14}


# ---------------------------------------------------------------- bad input


@pytest.mark.parametrize(
    ("kwargs", "error", "match"),
    [
        ({"edge": 0.5}, InputError, "nearest-neighbour"),
        ({"diameter": 20.0, "centre": [1.5, 0, 0]}, InputError, "outside the cell"),
        ({"diameter": 20.0, "centre": "1,2"}, InputError, "three"),
        ({"diameter": 20.0, "edge": 5.0}, InputError, "one size"),
        ({"atoms": 1}, InputError, "whole number"),
        ({"shells": 2}, InputError, "layer spacing"),
        ({"diameter": -3.0}, InputError, "positive"),
    ],
)
def test_bad_input_gets_one_clear_sentence(kwargs, error, match) -> None:
    with pytest.raises(error, match=match) as info:
        make_particle(fcc_cu(), CUBOCT, np.ones(14), **kwargs)
    assert isinstance(info.value, HabitError)
    assert "\n" not in str(info.value)


def test_planes_that_do_not_close_are_refused() -> None:
    with pytest.raises(OpenShapeError, match="do not enclose"):
        make_particle(fcc_cu(), np.eye(3), np.ones(3), diameter=10.0)


def test_centre_outside_the_shape_is_refused() -> None:
    with pytest.raises(InputError, match="strictly inside"):
        make_particle(fcc_cu(), CUBE, [1, 1, 1, 1, 1, -0.5], edge=10.0)


def test_shape_between_atoms_is_empty() -> None:
    # a small cube around an octahedral void holds no atom
    with pytest.raises(EmptyPolyhedronError):
        make_particle(fcc_cu(), CUBE, np.full(6, 1.0), edge=2.6, centre=[0.5, 0.5, 0.5])


# ---------------------------------------------------------------- objects and export


def test_progress_is_reported_in_thousandths_up_to_the_end() -> None:
    seen: list[int] = []
    make_particle(fcc_cu(), CUBOCT, np.ones(14), diameter=40.0, progress=seen.append)
    assert seen == sorted(seen) and seen[-1] == 1000 and 0 <= seen[0] < 1000


def test_particle_is_frozen_and_read_only() -> None:
    p = make_particle(fcc_cu(), CUBOCT, None, shells=1, layer_spacings=CUBOCT_SPACINGS)
    with pytest.raises(dataclasses.FrozenInstanceError):
        p.scale = 2.0  # type: ignore[misc]
    with pytest.raises(ValueError):
        p.positions[0, 0] = 1.0


def test_extxyz_round_trip(tmp_path) -> None:
    p = make_particle(
        fcc_cu(),
        CUBOCT,
        None,
        shells=2,
        layer_spacings=CUBOCT_SPACINGS,
        form_ids=CUBOCT_FORMS,
        hkl=CUBOCT_HKL,
    )
    path = tmp_path / "cu55.xyz"
    write_extxyz(p, path, comment="our batch 7")
    lines = path.read_text().splitlines()
    assert int(lines[0]) == 55 == len(lines) - 2
    assert "Properties=species:S:1:pos:R:3:site:S:1:coordination:I:1" in lines[1]
    box = [float(x) for x in lines[1].split('Lattice="')[1].split('"')[0].split()]
    rows = [line.split() for line in lines[2:]]
    xyz = np.array([[float(v) for v in r[1:4]] for r in rows])
    assert np.all(xyz > 0) and np.all(xyz < [box[0], box[4], box[8]])
    # shifting back reproduces the particle's positions (to the 1e-6 Å printed)
    shift = xyz - p.positions
    assert np.allclose(shift, shift[0], atol=2e-6)
    labels = [r[4] for r in rows]
    assert labels.count("vertex") == 12 and labels.count("edge") == 24
    assert labels.count("facet{100}") == 6 and labels.count("bulk") == 13
    assert [int(r[5]) for r in rows] == p.coordination.tolist()
    assert [f for f in os.listdir(tmp_path) if f != "cu55.xyz"] == []


def test_extxyz_refuses_a_missing_folder(tmp_path) -> None:
    p = make_particle(fcc_cu(), CUBOCT, None, shells=1, layer_spacings=CUBOCT_SPACINGS)
    with pytest.raises(HabitError, match="does not exist"):
        write_extxyz(p, tmp_path / "nowhere" / "p.xyz")
    assert format_extxyz(p).startswith("13\n")


# ---------------------------------------------------------------- from a Crystal


def test_layer_spacings_from_the_crystal_follow_the_f_centring_condition() -> None:
    # F-centred lattice: hkl reflect only when all even or all odd (International Tables
    # Vol. A, from memory) -> d_eff = a/sqrt(3), a/2, a/(2 sqrt 2) for {111}, {100}, {110}
    from habit.crystal import load_crystal
    from habit.particle import crystal_planes

    fluorite = load_crystal("fluorite")
    a = fluorite.cell[0]
    kw = crystal_planes(fluorite, {"111": 1.0, "100": 1.0, "110": 1.0}, shells=True)
    assert kw["form_labels"] == ("{111}", "{100}", "{110}")
    expected = np.array([a / math.sqrt(3), a / 2, a / (2 * math.sqrt(2))])
    assert np.allclose(kw["layer_spacings"], expected[kw["form_ids"]], rtol=1e-12)
    assert np.bincount(kw["form_ids"]).tolist() == [8, 6, 12]


def test_ionic_particle_keeps_the_formula_in_the_large_limit() -> None:
    # fluorite CaF2 (bundled CIF, Wyckoff 1963): Ca and F counts of a large particle with
    # generic faces each within 1 % of volume x their number density (Gauss count)
    from habit.crystal import load_crystal

    fluorite = load_crystal("fluorite")
    rng = np.random.default_rng(7)
    normals = rng.normal(size=(40, 3))
    d = np.full(40, 40.0)
    p = make_particle(fluorite.structure, normals, d, centre="Ca")
    volume = shape_geometry(normals, d).volume
    counts = p.summary()["atoms_by_species"]
    assert counts["Ca"] == pytest.approx(4 * volume / fluorite.volume, rel=0.01)
    assert counts["F"] == pytest.approx(8 * volume / fluorite.volume, rel=0.01)


def test_a_crystal_without_atoms_is_refused() -> None:
    from habit.crystal import Crystal
    from habit.particle import crystal_planes

    bare = Crystal.from_cell(3.615, crystal_class="m-3m")
    with pytest.raises(InputError, match="no atoms"):
        crystal_planes(bare, {"111": 1.0})


def test_hexagonal_wurtzite_particle() -> None:
    # zincite ZnO (bundled CIF): tetrahedral first shells (4 neighbours, pymatgen agrees),
    # and Zn, O counts of a large generic particle within 1 % of volume x number density
    from habit.crystal import load_crystal

    zincite = load_crystal("zincite")
    s = zincite.structure
    shells = first_shells(s.lattice.matrix, s.frac_coords)
    assert shells.coordination.tolist() == [4, 4, 4, 4]
    for i in range(len(s)):
        assert len(s.get_neighbors(s[i], float(shells.cutoff[i]))) == 4
    rng = np.random.default_rng(11)
    normals = rng.normal(size=(40, 3))
    d = np.full(40, 35.0)
    p = make_particle(s, normals, d, centre="Zn")
    expected = 2 * shape_geometry(normals, d).volume / zincite.volume
    counts = p.summary()["atoms_by_species"]
    assert counts["Zn"] == pytest.approx(expected, rel=0.01)
    assert counts["O"] == pytest.approx(expected, rel=0.01)


def test_a_polar_pedion_alone_leaves_the_particle_open() -> None:
    # in the polar class 6mm, {0001} is the single face (0001): no face closes -z
    from habit.crystal import load_crystal
    from habit.particle import crystal_planes

    zincite = load_crystal("zincite")
    kw = crystal_planes(zincite, {"10-10": 1.0, "0001": 1.2}, shells=True)
    with pytest.raises(OpenShapeError, match="open along"):
        make_particle(**kw, shells=3)
    kw = crystal_planes(zincite, {"10-10": 1.0, "0001": 1.2, "000-1": 1.2}, shells=True)
    p = make_particle(**kw, shells=3)
    assert p.n_surface > 0 and set(p.summary()["facet_atoms_by_form"]) == {
        "{10-10}",
        "{0001}",
        "{000-1}",
    }


def _bundled_with_atoms() -> list[str]:
    from habit.crystal import bundled_crystals, load_crystal

    return sorted(n for n in bundled_crystals() if load_crystal(n).structure is not None)


@pytest.mark.parametrize("name", _bundled_with_atoms())
def test_every_bundled_structure_carves_to_its_formula(name: str) -> None:
    # triclinic to cubic cells: per-species counts of a generic particle within 3 % of
    # volume x number density (Gauss lattice-point count; tolerance common practice for
    # particles of a few thousand atoms), and the carving centre is always kept
    from habit.crystal import load_crystal

    crystal = load_crystal(name)
    s = crystal.structure
    rng = np.random.default_rng(5)
    normals = rng.normal(size=(30, 3))
    d = np.full(30, 22.0)
    p = make_particle(s, normals, d)
    volume = shape_geometry(normals, d).volume
    counts = p.summary()["atoms_by_species"]
    for element, per_cell in s.composition.element_composition.items():
        expected = per_cell * volume / crystal.volume
        assert counts[str(element)] == pytest.approx(expected, rel=0.03), element
    assert np.min(np.linalg.norm(p.positions, axis=1)) < 1e-9


def test_a_wulff_polyhedron_can_be_carved_directly() -> None:
    # a Wulff polyhedron of copper ({111} : {100} = 1 : 1.1, invented for the test):
    # carving its faces gives the same particle as carving the raw planes
    from habit.crystal import load_crystal
    from habit.particle import crystal_planes, polyhedron_planes
    from habit.wulff import wulff_shape

    copper = load_crystal("copper")
    shape = wulff_shape(copper, {"111": 1.0, "100": 1.1})
    kw = polyhedron_planes(shape.polyhedron)
    a = make_particle(copper.structure, **kw, diameter=25.0)
    planes = crystal_planes(copper, {"111": 1.0, "100": 1.1})
    b = make_particle(**planes, diameter=25.0)
    assert _classes(a) == _classes(b)
    assert set(a.summary()["facet_atoms_by_form"]) == {"{111}", "{100}"}


def test_extxyz_reads_back_with_pymatgen() -> None:
    # an independent reader (pymatgen.io.xyz, a general-purpose library) sees the same
    # atoms: count, species and geometry to the 1e-6 Å printed
    from pymatgen.io.xyz import XYZ

    mgo = Structure.from_spacegroup(
        "Fm-3m", Lattice.cubic(4.212), ["Mg", "O"], [[0, 0, 0], [0.5, 0.5, 0.5]]
    )
    p = make_particle(mgo, CUBOCT, np.r_[np.full(8, 1.0), np.full(6, 0.9)], diameter=18.0)
    molecule = XYZ.from_str(format_extxyz(p)).molecule
    assert len(molecule) == p.n_atoms
    assert [str(sp) for sp in molecule.species] == p.species.tolist()
    shifted = molecule.cart_coords - p.positions
    assert np.allclose(shifted, shifted[0], atol=2e-6)
