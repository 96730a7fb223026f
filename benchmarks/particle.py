"""Throughput of particle carving and site classification, against floors in the same run.

Shape: the fcc copper cuboctahedron-like Wulff shape with {111} at 1.0 and {100} at 1.1
(relative central distances; invented for the benchmark), a = 3.615 Å (Wyckoff 1963,
from memory), centred on an atom.

Reported for each size:
- carving: atoms per second of :func:`habit.particle.carve`, and the ratio of its time
  to a floor measured on the same atoms: one bare ``positions @ normals.T`` product
  with a max-reduction (the cheapest possible membership test of atoms already listed);
- classification: atoms per second of :func:`habit.particle.classify_sites`, and the
  ratio of its time to a floor: building one bare ``scipy.spatial.cKDTree`` on the
  particle's positions;
- the whole job (:func:`habit.particle.make_particle`, sizing, carving, classification)
  in wall-clock seconds, for the ~10^6-atom case.

Times are CPU time of the running thread (``time.thread_time``) so that other load on a
shared machine does not distort the ratios; ``--wall`` uses wall-clock time. Medians of
``--repeats`` runs.

Usage: python benchmarks/particle.py [--repeats 3] [--diameters 50,100,200,270] [--wall]
"""

from __future__ import annotations

import argparse
import math
import statistics
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from scipy.spatial import cKDTree  # noqa: E402

from habit.particle import (  # noqa: E402
    carve,
    classify_sites,
    first_shells,
    make_particle,
    scale_for_size,
    shape_geometry,
)

A = 3.615
LATTICE = A * np.eye(3)
FRAC = np.array([[0, 0, 0], [0, 0.5, 0.5], [0.5, 0, 0.5], [0.5, 0.5, 0]])
OCT = np.array([[i, j, k] for i in (-1, 1) for j in (-1, 1) for k in (-1, 1)]) / math.sqrt(3)
NORMALS = np.vstack([OCT, np.eye(3), -np.eye(3)])
RELATIVE = np.r_[np.full(8, 1.0), np.full(6, 1.1)]  # invented for the benchmark


def timed(clock, fn, repeats):
    times, out = [], None
    for _ in range(repeats):
        t0 = clock()
        out = fn()
        times.append(clock() - t0)
    return statistics.median(times), out


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=3)
    ap.add_argument("--diameters", default="50,100,200,270", help="Å, comma-separated")
    ap.add_argument("--wall", action="store_true", help="wall-clock instead of thread CPU time")
    args = ap.parse_args()
    clock = time.perf_counter if args.wall else time.thread_time
    geom = shape_geometry(NORMALS, RELATIVE)
    shells = first_shells(LATTICE, FRAC)
    print(f"clock: {'wall' if args.wall else 'thread CPU'}; median of {args.repeats} runs")
    print(
        f"{'diameter (Å)':>12}{'atoms':>10}{'carve (s)':>11}{'carve atoms/s':>15}"
        f"{'ratio':>8}{'classify (s)':>14}{'classify atoms/s':>18}{'ratio':>8}"
    )
    for diameter in (float(x) for x in args.diameters.split(",")):
        d = RELATIVE * scale_for_size(geom, "diameter", diameter)
        t_carve, (pos, site) = timed(
            clock, lambda d=d: carve(LATTICE, FRAC, NORMALS, d), args.repeats
        )
        t_floor_c, _ = timed(
            clock, lambda pos=pos, d=d: np.max(pos @ NORMALS.T - d, axis=1), args.repeats
        )
        t_class, _ = timed(
            clock,
            lambda pos=pos, site=site, d=d: classify_sites(pos, site, shells, NORMALS, d),
            args.repeats,
        )
        t_floor_k, _ = timed(clock, lambda pos=pos: cKDTree(pos), args.repeats)
        m = len(pos)
        print(
            f"{diameter:>12.0f}{m:>10}{t_carve:>11.3f}{m / t_carve:>15.3g}"
            f"{t_carve / t_floor_c:>8.1f}{t_class:>14.3f}{m / t_class:>18.3g}"
            f"{t_class / t_floor_k:>8.2f}"
        )
    # the whole job for about a million atoms, wall clock (what a user waits)
    t0 = time.perf_counter()
    p = make_particle((LATTICE, FRAC, ["Cu"] * 4), NORMALS, RELATIVE, atoms=1_000_000)
    wall = time.perf_counter() - t0
    print(
        f"\nmake_particle(atoms=1_000_000): {p.n_atoms} atoms, {p.n_surface} surface, "
        f"{wall:.2f} s wall clock (sizing + carving + classification)"
    )
    t0 = time.perf_counter()
    p = make_particle((LATTICE, FRAC, ["Cu"] * 4), NORMALS, RELATIVE, diameter=270.0)
    wall = time.perf_counter() - t0
    print(f"make_particle(diameter=270 Å): {p.n_atoms} atoms, {wall:.2f} s wall clock")


if __name__ == "__main__":
    main()
