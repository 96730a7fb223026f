"""Speed of the broken-bond termination scan and of the BFDH ranking.

The floor, measured in the same run, is the bare numpy work at the heart of the scan: one
(cuts x bonds) array of floor() differences and a matrix-vector product for a crystal of
the same size. The ratio says how much the bookkeeping around it costs.
Usage: python benchmarks/morphology.py [CRYSTAL] (default: the bundled albite).
"""

from __future__ import annotations

import statistics
import sys
import time

import numpy as np

REPEATS = 5


def _median_time(func, repeats: int = REPEATS) -> float:
    times = []
    for _ in range(repeats):
        start = time.perf_counter()
        func()
        times.append(time.perf_counter() - start)
    return statistics.median(times)


def main() -> None:
    from habit.bonds import find_bonds, surface_termination
    from habit.crystal import load_crystal
    from habit.morphology import bfdh, form_representatives

    name = sys.argv[1] if len(sys.argv) > 1 else "albite"
    crystal = load_crystal(name)
    bonds = find_bonds(crystal, cutoff=2.0)
    reps = form_representatives(crystal, 2)
    n_sites = len(crystal.structure)
    n_bonds = len(bonds.start)
    rng = np.random.default_rng(0)
    t_start = rng.uniform(0, 1, n_bonds)
    t_end = t_start + rng.normal(0, 0.5, n_bonds)
    cuts = np.sort(rng.uniform(0, 1, n_sites))

    def floor_work() -> None:
        for _ in reps:
            crossings = np.abs(
                np.floor(t_end[None, :] - cuts[:, None])
                - np.floor(t_start[None, :] - cuts[:, None])
            )
            crossings @ bonds.energies

    def scan() -> None:
        for hkl in reps:
            surface_termination(bonds, hkl)

    def ranking() -> None:
        bfdh(crystal, 2)

    floor = _median_time(floor_work)
    rows = [
        ("floor: numpy (cuts x bonds) per form", floor),
        ("broken-bond scan, all forms", _median_time(scan)),
        ("BFDH ranking + polyhedron", _median_time(ranking)),
    ]
    print(f"{name}: {n_sites} sites, {n_bonds // 2} bonds, {len(reps)} forms (indices within ±2)")
    print(f"{'task':<40}{'median (ms)':>12}{'ratio to floor':>16}")
    for label, value in rows:
        print(f"{label:<40}{value * 1e3:>12.1f}{value / floor:>16.2f}")


if __name__ == "__main__":
    main()
