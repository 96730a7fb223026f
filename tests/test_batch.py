"""Shape maps, Monte Carlo and many-input batches (habit.batch).

Reference facts used here:
* {100}+{111} Wulff shapes (cubic): the octahedron faces appear when
  gamma111/gamma100 < sqrt(3) and the cube faces vanish when gamma111/gamma100 <= 1/sqrt(3)
  (Wulff 1901; closed-form geometry of the cube cut at its corners).
* A Wulff shape depends only on the ratios of the energies (closed form: scaling all
  distances scales the solid).
* P(gamma111 < sqrt(3)) for gamma111 ~ Normal(mu, sigma) is Phi((sqrt(3) - mu) / sigma)
  (closed form); the Monte Carlo estimate is checked against it within 4 binomial
  standard errors.
"""

from __future__ import annotations

import itertools
import json
import math

import numpy as np
import pytest

from habit.batch import (
    SAMPLE_CHUNK,
    crystal_planes,
    prepare_planes,
    run_batch,
    sample_shapes,
    shape_map,
)
from habit.errors import InputError

SQRT3 = math.sqrt(3.0)


def _cubic(*forms):
    ops = []
    for perm in itertools.permutations(range(3)):
        for signs in itertools.product((1, -1), repeat=3):
            m = np.zeros((3, 3))
            m[range(3), perm] = signs
            ops.append(m)
    rows, ids = [], []
    for f, hkl in enumerate(forms):
        faces = set()
        for perm in itertools.permutations(hkl):
            for signs in itertools.product((1, -1), repeat=3):
                faces.add(tuple(a * b for a, b in zip(perm, signs, strict=True)))
        rows += sorted(faces)
        ids += [f] * len(faces)
    n = np.array(rows, dtype=float)
    n /= np.linalg.norm(n, axis=1, keepdims=True)
    labels = tuple("{" + "".join(map(str, h)) + "}" for h in forms)
    return prepare_planes(n, operations=np.array(ops), forms=ids, form_labels=labels)


CUBE_OCTA = _cubic((1, 0, 0), (1, 1, 1))
CUBIC3 = _cubic((1, 0, 0), (1, 1, 0), (1, 1, 1))


# -- maps --------------------------------------------------------------------------------


def _transitions(m):
    """Per row: the x intervals [x_k, x_k+1] where the region changes."""
    out = []
    for j in range(len(m.y)):
        ks = np.nonzero(m.regions[j, 1:] != m.regions[j, :-1])[0]
        out.append([(m.x[k], m.x[k + 1]) for k in ks])
    return out


def test_map_boundaries_at_the_wulff_thresholds():
    # x = gamma111, y = gamma100: boundaries on the lines x = y / sqrt(3) and x = sqrt(3) y
    # (Wulff 1901; closed form), found within one grid step.
    m = shape_map(CUBE_OCTA, [1.0, 1.0], x=("111", 0.3, 2.0), y=("100", 0.8, 1.1), size=9, levels=4)
    names = m.region_names()
    assert sorted(names.values()) == ["{100}", "{100} + {111}", "{111}"]
    step = m.x[1] - m.x[0]
    for yv, cuts in zip(m.y, _transitions(m), strict=True):
        assert len(cuts) == 2
        (a0, a1), (b0, b1) = cuts
        # the boundary estimate (midpoint of the cut) is within one grid step of the truth
        assert abs((a0 + a1) / 2 - yv / SQRT3) <= step
        assert abs((b0 + b1) / 2 - SQRT3 * yv) <= step
    # the region left of the first cut is the octahedron, right of the second the cube
    assert names[int(m.regions[0, 0])] == "{111}"
    assert names[int(m.regions[0, -1])] == "{100}"


def test_adaptive_map_matches_a_full_grid_eight_times_finer_with_a_quarter_of_the_shapes():
    kwargs = dict(x=("110", 0.65, 1.5), y=("111", 0.55, 1.8))
    adaptive = shape_map(CUBIC3, [1.0, 1.0, 1.0], size=17, levels=3, **kwargs)
    full = shape_map(CUBIC3, [1.0, 1.0, 1.0], size=129, levels=0, **kwargs)
    coarse = shape_map(CUBIC3, [1.0, 1.0, 1.0], size=17, levels=0, **kwargs)
    np.testing.assert_array_equal(adaptive.x, full.x)
    # same region at every point of the fine grid: the same boundaries, to the fine step
    np.testing.assert_array_equal(adaptive.regions, full.regions)
    assert adaptive.n_shapes <= full.n_shapes / 4
    assert full.n_shapes == 129 * 129
    # and the refinement mattered: the coarse grid alone misplaces boundaries
    assert (
        not np.array_equal(coarse.regions, full.regions[::8, ::8])
        or len(coarse.boundaries()) < len(full.boundaries()) / 4
    )


def test_map_through_a_crystal():
    from habit.crystal import Crystal

    xtal = Crystal.from_cell(5.0, crystal_class="m-3m")
    planes = crystal_planes(xtal, ["100", "111"])
    assert planes.form_labels == ("{100}", "{111}")
    m = shape_map(planes, [1.0, 1.0], x=("{111}", 0.3, 2.0), y=("100", 0.9, 1.1), size=5, levels=3)
    cuts = _transitions(m)[len(m.y) // 2]
    step = m.x[1] - m.x[0]
    assert abs(sum(cuts[0]) / 2 - 1.0 / SQRT3) <= step
    assert abs(sum(cuts[1]) / 2 - SQRT3) <= step


def test_map_bad_axis():
    with pytest.raises(InputError, match="low < high"):
        shape_map(CUBE_OCTA, [1, 1], x=("111", 2.0, 1.0), y=("100", 0.9, 1.1))
    with pytest.raises(InputError, match="no form"):
        shape_map(CUBE_OCTA, [1, 1], x=("110", 0.5, 1.0), y=("100", 0.9, 1.1))


# -- Monte Carlo -------------------------------------------------------------------------


def test_zero_spread_gives_zero_spread():
    out = sample_shapes(CUBIC3, [1.0, 1.2, 1.3], [0.0, 0.0, 0.0], n=500, rng=4)
    assert np.all(out.fraction_sd <= 1e-12)
    assert np.all(np.ptp(out.fraction_interval, axis=1) <= 1e-12)
    assert out.volume_sd <= 1e-12 * out.volume_mean
    assert set(out.p_present.tolist()) <= {0.0, 1.0}


def test_perfectly_correlated_scaling_keeps_the_shape():
    # the same relative change of every energy only scales the solid (closed form)
    corr = np.ones((3, 3))
    out = sample_shapes(CUBIC3, [1.0, 1.2, 1.3], [0.1, 0.12, 0.13], n=2000, correlation=corr, rng=9)
    assert np.all(out.fraction_sd <= 1e-9)
    assert out.volume_sd > 0.05 * out.volume_mean


@pytest.mark.parametrize("mu", [1.6, SQRT3, 1.85])
def test_probability_of_octahedron_faces_matches_the_normal_law(mu):
    from scipy.special import ndtr

    sigma = 0.1
    out = sample_shapes(CUBE_OCTA, [1.0, mu], [0.0, sigma], n=20_000, rng=21)
    expected = float(ndtr((SQRT3 - mu) / sigma))
    se = math.sqrt(expected * (1 - expected) / out.n)
    assert abs(out.p_present[1] - expected) <= 4 * se + 1e-3
    lo, hi = out.p_present_interval[1]
    assert lo <= out.p_present[1] <= hi


def test_uniform_draws_have_the_requested_spread():
    out = sample_shapes(
        CUBIC3, [1.0, 1.2, 1.3], [0.05, 0.0, 0.0], n=20_000, rng=2, distribution="uniform"
    )
    v = out.values[:, 0]
    assert abs(v.std() - 0.05) < 0.002  # uniform on mean +- sqrt(3) sd has sd = sd
    assert v.min() >= 1.0 - SQRT3 * 0.05 - 1e-12 and v.max() <= 1.0 + SQRT3 * 0.05 + 1e-12


def test_same_seed_same_numbers_in_process_and_in_two_local_processes():
    n = 2 * SAMPLE_CHUNK + 123  # several chunks
    kw = dict(n=n, rng=77)
    a = sample_shapes(CUBIC3, [1.0, 1.2, 1.3], [0.05, 0.06, 0.07], scheduler="inline", **kw)
    b = sample_shapes(
        CUBIC3, [1.0, 1.2, 1.3], [0.05, 0.06, 0.07], scheduler="processes", workers=2, **kw
    )
    np.testing.assert_array_equal(a.values, b.values)
    np.testing.assert_array_equal(a.form_fractions, b.form_fractions)
    np.testing.assert_array_equal(a.volume, b.volume)


@pytest.mark.slow
def test_same_seed_same_numbers_on_a_two_worker_dask_cluster():
    dd = pytest.importorskip("dask.distributed")
    n = SAMPLE_CHUNK + 57
    kw = dict(n=n, rng=5)
    a = sample_shapes(CUBIC3, [1.0, 1.2, 1.3], [0.05, 0.06, 0.07], scheduler="inline", **kw)
    b = sample_shapes(
        CUBIC3, [1.0, 1.2, 1.3], [0.05, 0.06, 0.07], scheduler="dask", workers=2, **kw
    )
    np.testing.assert_array_equal(a.form_fractions, b.form_fractions)
    np.testing.assert_array_equal(a.volume, b.volume)
    # and through the address of a running scheduler
    with dd.LocalCluster(
        n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None
    ) as cluster:
        c = sample_shapes(
            CUBIC3, [1.0, 1.2, 1.3], [0.05, 0.06, 0.07], scheduler=cluster.scheduler_address, **kw
        )
    np.testing.assert_array_equal(a.form_fractions, c.form_fractions)


def test_progress_is_reported_up_to_the_total():
    seen = []
    sample_shapes(CUBIC3, [1.0, 1.2, 1.3], [0.05, 0.06, 0.07], n=SAMPLE_CHUNK + 10, rng=1,
                  progress=seen.append)  # fmt: skip
    assert seen == [SAMPLE_CHUNK, SAMPLE_CHUNK + 10]
    marks = []
    m = shape_map(CUBE_OCTA, [1.0, 1.0], x=("111", 0.3, 2.0), y=("100", 0.9, 1.1), size=5,
                  levels=2, progress=marks.append)  # fmt: skip
    assert marks == sorted(marks) and marks[-1] == m.n_shapes


def test_per_face_noise_breaks_symmetry_but_keeps_means():
    out = sample_shapes(CUBIC3, [1.0, 1.2, 1.3], [0.02, 0.02, 0.02], n=200, per_face=True, rng=3)
    assert out.fraction_sd.max() > 0
    np.testing.assert_allclose(out.values.mean(axis=0), [1.0, 1.2, 1.3], atol=0.01)


def test_sample_bad_input():
    with pytest.raises(InputError, match="standard deviation"):
        sample_shapes(CUBIC3, [1, 1, 1], [0.1, -0.1, 0.1])
    with pytest.raises(InputError, match="correlation"):
        sample_shapes(CUBIC3, [1, 1, 1], [0.1, 0.1, 0.1], correlation=np.eye(2))


# -- batches ------------------------------------------------------------------------------


def _energy_table(path, n, seed=0, bad_rows=()):
    rng = np.random.default_rng(seed)
    lines = ["id,100,110,111"]
    for i in range(n):
        a, b, c = (float(v) for v in rng.uniform(0.8, 1.6, 3))
        lines.append(f"s{i},{a!r},{b!r},{c!r}")
    lines += list(bad_rows)
    path.write_text("\n".join(lines) + "\n")


def test_batch_of_ten_thousand_energy_sets_finishes(tmp_path):
    table = tmp_path / "sets.csv"
    _energy_table(table, 10_000)
    out = tmp_path / "results.csv"
    report = run_batch(table, out, crystal=CUBIC3)
    assert report.n_computed == 10_000 and report.n_errors == 0
    lines = out.read_text().splitlines()
    assert len(lines) == 10_001
    assert lines[0].startswith("id,status,error,volume_A3,present_forms,area_fraction_{100}")
    assert not (tmp_path / "results.csv.part").exists()


def test_malformed_rows_are_reported_in_their_rows(tmp_path):
    table = tmp_path / "sets.csv"
    _energy_table(table, 50, bad_rows=["broken,1.0,abc,1.2", "negative,1.0,-1,1.2", "short,1.0"])
    out = tmp_path / "results.jsonl"
    report = run_batch(table, out, crystal=CUBIC3)
    rows = {r["id"]: r for r in map(json.loads, out.read_text().splitlines())}
    assert report.n_errors == 3 and len(rows) == 53
    assert (
        rows["broken"]["status"] == "error" and "'abc' is not a number" in rows["broken"]["error"]
    )
    assert "positive" in rows["negative"]["error"]
    assert "fields" in rows["short"]["error"]
    assert all(rows[f"s{i}"]["status"] == "ok" for i in range(50))


class _Killed(Exception):
    pass


def test_killed_and_restarted_batch_recomputes_no_finished_row(tmp_path):
    table = tmp_path / "sets.csv"
    _energy_table(table, 1000)
    outs = [tmp_path / "r.csv", tmp_path / "r.jsonl"]

    def kill_after_300(done):
        if done >= 300:
            raise _Killed

    with pytest.raises(_Killed):
        run_batch(table, outs, crystal=CUBIC3, chunk=100, progress=kill_after_300)
    assert not outs[0].exists()  # nothing half-written under the final name
    part = tmp_path / "r.csv.part"
    finished = len(part.read_text().splitlines()) - 1
    assert finished == 300
    with open(tmp_path / "r.jsonl.part", "a") as handle:
        handle.write('{"id": "s99')  # a line cut off by the kill
    report = run_batch(table, outs, crystal=CUBIC3, chunk=100)
    assert report.n_skipped == finished
    assert report.n_computed == 1000 - finished
    ids_csv = [ln.split(",")[0] for ln in outs[0].read_text().splitlines()[1:]]
    ids_json = [json.loads(ln)["id"] for ln in outs[1].read_text().splitlines()]
    assert sorted(ids_csv) == sorted(ids_json) == sorted(f"s{i}" for i in range(1000))
    again = run_batch(table, outs, crystal=CUBIC3)
    assert again.n_computed == 0 and again.n_skipped == 1000


def test_folder_of_crystal_files(tmp_path):
    good = (
        'name = "test cube"\n[cell]\na = 5.0\ncrystal_class = "m-3m"\n'
        '[forms]\nkind = "energy"\n"100" = 1.0\n"111" = 1.0\n'
    )
    (tmp_path / "a.toml").write_text(good)
    (tmp_path / "b.toml").write_text('name = "no forms"\n[cell]\na = 5.0\ncrystal_class = "m-3m"\n')
    (tmp_path / "c.toml").write_text("this is = = not toml")
    out = tmp_path / "out" / "rows.jsonl"
    out.parent.mkdir()
    report = run_batch(tmp_path, out)
    rows = {r["id"]: r for r in map(json.loads, out.read_text().splitlines())}
    assert report.n_rows == 3 and report.n_errors == 2
    assert rows["a.toml"]["status"] == "ok"
    assert sorted(rows["a.toml"]["present_forms"]) == ["{100}", "{111}"]
    # r = 1 lies between 1/sqrt(3) and sqrt(3): both forms present, fractions sum to 1
    assert abs(sum(rows["a.toml"]["area_fractions"].values()) - 1.0) < 1e-12
    assert "forms" in rows["b.toml"]["error"]
    assert rows["c.toml"]["status"] == "error"


def test_batch_refuses_a_header_without_the_forms(tmp_path):
    table = tmp_path / "sets.csv"
    table.write_text("id,100,110\nx,1,1\n")
    with pytest.raises(InputError, match="every form"):
        run_batch(table, tmp_path / "r.csv", crystal=CUBIC3)


def test_solve_shapes_in_two_processes_gives_identical_numbers():
    from habit.batch import solve_shapes

    rng = np.random.default_rng(8)
    energies = CUBIC3.expand(rng.uniform(0.7, 1.6, (3000, 3)))
    a = solve_shapes(CUBIC3, energies, scheduler="inline")
    b = solve_shapes(CUBIC3, energies, scheduler="processes", workers=2)
    np.testing.assert_array_equal(a.areas, b.areas)
    np.testing.assert_array_equal(a.volume, b.volume)
    np.testing.assert_array_equal(a.present, b.present)


@pytest.mark.slow
def test_batch_killed_with_sigkill_restarts_without_recomputing(tmp_path):
    # a real interruption: the command runs in a child process that is killed mid-way
    import os
    import signal
    import subprocess
    import sys
    import time
    from pathlib import Path

    table = tmp_path / "sets.csv"
    _energy_table(table, 60_000)
    crystal = tmp_path / "cube.toml"
    crystal.write_text('name = "cube"\n[cell]\na = 5.0\ncrystal_class = "m-3m"\n')
    out = tmp_path / "r.csv"
    part = tmp_path / "r.csv.part"
    root = Path(__file__).resolve().parents[1]
    env = dict(os.environ, PYTHONPATH=str(root))
    cmd = [sys.executable, "-m", "habit", "batch", str(table), "--crystal", str(crystal),
           "--out", str(out), "--chunk", "200", "--scheduler", "inline"]  # fmt: skip
    child = subprocess.Popen(cmd, env=env, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    try:
        deadline = time.time() + 60
        while time.time() < deadline:
            if part.exists() and part.stat().st_size > 200_000:
                break
            time.sleep(0.02)
        child.send_signal(signal.SIGKILL)
    finally:
        child.wait()
    assert not out.exists()
    text = part.read_text()
    finished = text.count("\n") - 1  # whole lines after the header
    assert 0 < finished < 60_000
    report = run_batch(table, out, crystal=CUBIC3)
    assert report.n_skipped == finished
    assert report.n_computed == 60_000 - finished
    ids = [ln.split(",", 1)[0] for ln in out.read_text().splitlines()[1:]]
    assert len(ids) == len(set(ids)) == 60_000


@pytest.mark.parametrize(
    ("cell", "klass", "forms"),
    [
        ((4.91, 4.91, 5.41, 90, 90, 120), "32", ["10-10", "10-11", "01-11", "0001"]),
        ((4.76, 4.76, 12.99, 90, 90, 120), "-3m", ["10-10", "10-14", "0001", "01-12"]),
        ((5.68, 15.2, 6.29, 90, 114.1, 90), "2/m", ["010", "110", "-111", "001", "100"]),
        ((5.0, 5.0, 5.0, 90, 90, 90), "-43m", ["111", "-1-1-1", "100"]),
        ((3.25, 3.25, 5.21, 90, 90, 120), "6mm", ["10-10", "10-11", "10-1-1", "0001", "000-1"]),
    ],
    ids=["trigonal-32", "trigonal--3m", "monoclinic-2/m", "cubic--43m", "hexagonal-6mm"],
)
def test_crystal_plane_sets_match_an_independent_hull(cell, klass, forms):
    # the point group's operations, turned Cartesian on an oblique cell, must reduce the work
    # without changing the answer: compare with scipy's half-space intersection (1e-9)
    from scipy.spatial import ConvexHull, HalfspaceIntersection

    from habit.batch import solve_shapes
    from habit.crystal import Crystal

    xtal = Crystal.from_cell(*cell, crystal_class=klass)
    planes = crystal_planes(xtal, forms)
    assert planes.symmetric and planes.plan.n_families == planes.n_forms
    rng = np.random.default_rng(4)
    values = rng.uniform(0.8, 1.6, (20, planes.n_forms))
    out = solve_shapes(planes, planes.expand(values))
    assert out.method == "intervals" and out.n_fallback == 0
    for s, gamma in enumerate(planes.expand(values)):
        hs = np.hstack([planes.normals, -gamma[:, None]])
        verts = HalfspaceIntersection(hs, np.zeros(3)).intersections
        assert abs(out.volume[s] - ConvexHull(verts).volume) <= 1e-9 * out.volume[s]


def test_results_are_frozen():
    import dataclasses

    s = sample_shapes(CUBE_OCTA, [1.0, 1.2], [0.05, 0.05], n=50, rng=0)
    m = shape_map(CUBE_OCTA, [1.0, 1.0], x=("111", 0.5, 2.0), y=("100", 0.9, 1.1), size=3,
                  levels=1)  # fmt: skip
    with pytest.raises(dataclasses.FrozenInstanceError):
        s.level = 0.5  # type: ignore[misc]
    with pytest.raises(ValueError, match="read-only"):
        s.volume[0] = 1.0
    with pytest.raises(ValueError, match="read-only"):
        m.regions[0, 0] = 7
