"""Shapes per second per core for a 200 x 200 shape map, as ratios to a qhull floor.

Plane set: the 26 planes {100} + {110} + {111} of a cubic crystal (point group m-3m).
Map: gamma100 = 1, gamma110/gamma100 in [0.65, 1.5], gamma111/gamma100 in [0.55, 1.8].

Measured in the same run, interleaved, median of the repeats:
  floor     bare scipy ConvexHull of the dual points n_i / gamma_i, one call per shape,
            nothing else (no areas, no volume) -- the cost of any one-hull-per-shape design;
  hull      habit's per-shape hull route (areas, volume) for reference;
  fast      habit.batch.solve_shapes with the symmetry-reduced interval method (areas of
            every face, volumes, present faces, form fractions);
  fast, no symmetry   the same with every face's energy perturbed by 2 % (no symmetry
            to use; method "auto" picks the line method or a hull per shape);
  fast x2   5 copies of the map as one job over 2 local worker processes (--workers 2,
            --scheduler processes|dask), next to the same job in one process.
Results of the fast path are compared with the hull route (max relative difference).

Usage:  python benchmarks/throughput.py [--repeats 5] [--floor-every 10] [--workers 2]
"""

from __future__ import annotations

import argparse
import itertools
import json
import statistics
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from scipy.spatial import ConvexHull  # noqa: E402

from habit import _intervals  # noqa: E402
from habit.batch import prepare_planes, solve_shapes  # noqa: E402


def cubic_setup():
    ops = []
    for perm in itertools.permutations(range(3)):
        for signs in itertools.product((1, -1), repeat=3):
            m = np.zeros((3, 3))
            m[range(3), perm] = signs
            ops.append(m)
    rows = []
    for hkl in ((1, 0, 0), (1, 1, 0), (1, 1, 1)):
        faces = set()
        for perm in itertools.permutations(hkl):
            for signs in itertools.product((1, -1), repeat=3):
                faces.add(tuple(a * b for a, b in zip(perm, signs, strict=True)))
        rows += sorted(faces)
    n = np.array(rows, dtype=float)
    return n / np.linalg.norm(n, axis=1, keepdims=True), np.array(ops)


def the_map(size: int = 200) -> np.ndarray:
    x, y = np.meshgrid(np.linspace(0.65, 1.5, size), np.linspace(0.55, 1.8, size))
    return np.column_stack([np.ones(x.size), x.ravel(), y.ravel()])  # (S, 3) per form


def time_floor(normals, energies):
    t = time.perf_counter()
    for g in energies:
        ConvexHull(normals / g[:, None])
    return (time.perf_counter() - t) / len(energies)


def time_hull(normals, energies):
    t = time.perf_counter()
    for g in energies:
        _intervals.hull_shape(normals, g, edges=False)
    return (time.perf_counter() - t) / len(energies)


def time_fast(planes, energies, workers=1, scheduler="inline"):
    t = time.perf_counter()
    out = solve_shapes(planes, energies, scheduler=scheduler, workers=workers)
    return (time.perf_counter() - t) / len(energies), out


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=5)
    parser.add_argument("--floor-every", type=int, default=10, help="floor on every k-th shape")
    parser.add_argument("--size", type=int, default=200)
    parser.add_argument("--blocks", type=int, default=20, help="interleaving blocks per repeat")
    parser.add_argument("--workers", type=int, default=1)
    parser.add_argument("--scheduler", default="processes", help="processes or dask")
    parser.add_argument("--parallel-maps", type=int, default=5, help="maps per parallel job")
    parser.add_argument("--json", default=None)
    args = parser.parse_args()

    normals, ops = cubic_setup()
    planes = prepare_planes(normals, operations=ops)
    fam = the_map(args.size)
    energies = planes.expand(fam)  # (S, 26)
    plain = prepare_planes(normals)  # no symmetry: every face its own energy
    rng = np.random.default_rng(0)
    noisy = energies * rng.normal(1.0, 0.02, energies.shape)  # per-face energies
    rows: dict[str, list[float]] = {"floor": [], "hull": [], "fast": [], "fast, no symmetry": []}
    if args.workers > 1:
        rows[f"fast x{args.workers}"] = []
        rows[f"fast 1 proc ({args.parallel_maps} maps)"] = []
    # interleave finely: every block of the map is timed with every method in turn, so
    # load from other users of the machine falls on all methods alike
    blocks = np.array_split(np.arange(len(energies)), args.blocks)
    areas = np.empty_like(energies)
    volume = np.empty(len(energies))
    n_fallback = 0
    for _ in range(args.repeats):
        n_fallback = 0
        spent = dict.fromkeys(rows, 0.0)
        counts = dict.fromkeys(rows, 0)
        for idx in blocks:
            e = energies[idx]
            sub = e[:: args.floor_every]
            spent["floor"] += time_floor(normals, sub) * len(sub)
            counts["floor"] += len(sub)
            few = e[:: 4 * args.floor_every]
            spent["hull"] += time_hull(normals, few) * len(few)
            counts["hull"] += len(few)
            dt, out = time_fast(planes, e)
            spent["fast"] += dt * len(e)
            counts["fast"] += len(e)
            few = noisy[idx][:: args.floor_every]
            spent["fast, no symmetry"] += time_fast(plain, few)[0] * len(few)
            counts["fast, no symmetry"] += len(few)
            areas[idx] = out.areas
            volume[idx] = out.volume
            n_fallback += out.n_fallback
        if args.workers > 1:
            # a job big enough to pay for the pool: several maps at once, same shapes
            big = np.tile(energies, (args.parallel_maps, 1))
            name = f"fast x{args.workers}"
            one = f"fast 1 proc ({args.parallel_maps} maps)"
            order = [name, one] if _ % 2 == 0 else [one, name]  # alternate who goes first
            for label in order:
                if label == name:
                    dt = time_fast(planes, big, args.workers, args.scheduler)[0]
                else:
                    dt = time_fast(planes, big)[0]
                spent[label] = dt * len(big)
                counts[label] = len(big)
        for name in rows:
            rows[name].append(spent[name] / counts[name])

    # identical results: the fast path against the per-shape hull route
    check = np.arange(0, len(energies), max(1, len(energies) // 2000))
    worst = 0.0
    for s in check:
        a, v, _ = _intervals.hull_shape(normals, energies[s], edges=False)
        worst = max(worst, abs(volume[s] - v) / v, np.abs(areas[s] - a).max() / a.sum())

    floor = statistics.median(rows["floor"])
    report = {
        "shapes": len(energies),
        "repeats": args.repeats,
        "max_relative_difference_vs_hull": worst,
        "fallback_shapes": n_fallback,
        "methods": {},
    }
    print(f"{len(energies)} shapes, 26 planes, {args.repeats} interleaved repeats (medians)")
    print(f"{'method':<26}{'us/shape':>10}{'shapes/s':>12}{'vs floor':>10}{'per core':>10}")
    for name, values in rows.items():
        med = statistics.median(values)
        cores = args.workers if name.startswith("fast x") else 1
        ratio = floor / med
        report["methods"][name] = {
            "us_per_shape": med * 1e6,
            "shapes_per_s": 1.0 / med,
            "cores": cores,
            "ratio_to_floor": ratio,
            "ratio_to_floor_per_core": ratio / cores,
        }
        print(f"{name:<26}{med * 1e6:>10.2f}{1 / med:>12.0f}{ratio:>9.1f}x{ratio / cores:>9.1f}x")
    print(f"max relative difference fast vs hull: {worst:.2e}; fallbacks: {n_fallback}")
    if args.workers > 1:
        par = report["methods"][f"fast x{args.workers}"]["us_per_shape"]
        seq = report["methods"][f"fast 1 proc ({args.parallel_maps} maps)"]["us_per_shape"]
        report["speed_up"] = seq / par
        print(
            f"speed-up of the {args.parallel_maps}-map job on {args.workers} workers: "
            f"{seq / par:.2f}x ({100 * seq / par / args.workers:.0f} % efficiency)"
        )
    if args.json:
        Path(args.json).write_text(json.dumps(report, indent=2) + "\n")


if __name__ == "__main__":
    main()
