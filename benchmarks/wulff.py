"""Time one full Wulff result against one bare scipy ConvexHull call, in the same run.

Full result = Polyhedron.from_halfspaces with Miller indices and form ids (ordered face
loops, face areas, labels) plus the volume and the area of each form. The floor is one
``scipy.spatial.ConvexHull`` call on as many points as there are planes (the dual points
n_i / d_i). Batches of the two are interleaved; the ratio of the medians is reported.

Times are CPU time of the running thread (``time.thread_time``), so that other load on
a shared machine does not distort the ratio; ``--wall`` uses wall-clock time instead.

Energies are invented for the benchmark (gamma_100 = 1, gamma_110 = 1.05,
gamma_111 = 0.95, gamma_321 = 1.02), chosen so that every form is present.

Usage: python benchmarks/wulff.py [--repeats 400] [--batch 5]
"""

from __future__ import annotations

import argparse
import itertools
import statistics
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from scipy.spatial import ConvexHull  # noqa: E402

from habit.polyhedron import Polyhedron  # noqa: E402

# CPU time of this thread: on a shared machine other processes' load does not enter it
# (wall-clock times are inflated by preemption, more for the longer of two calls).
CLOCK = time.thread_time


def cubic_family(base: tuple[int, int, int]) -> np.ndarray:
    rows = {
        tuple(s * p for s, p in zip(signs, perm, strict=True))
        for perm in itertools.permutations(base)
        for signs in itertools.product((1, -1), repeat=3)
    }
    return np.array(sorted(rows), dtype=int)


def planes(forms: dict[tuple[int, int, int], float]):
    hkl, dist, fid = [], [], []
    for i, (base, gamma) in enumerate(forms.items()):
        fam = cubic_family(base)
        hkl.append(fam)
        dist.append(np.full(len(fam), gamma))
        fid.append(np.full(len(fam), i))
    hkl = np.vstack(hkl)
    normals = hkl / np.linalg.norm(hkl, axis=1)[:, None]
    labels = ["{" + "".join(map(str, b)) + "}" for b in forms]
    return normals, np.concatenate(dist), hkl, np.concatenate(fid), labels


def full_result(normals, distances, hkl, fid, labels):
    p = Polyhedron.from_halfspaces(normals, distances, hkl=hkl, form_ids=fid, form_labels=labels)
    return p, p.volume, p.area_by_form


def measure(case, repeats: int, batch: int) -> dict[str, float]:
    """Interleave batches of the full result and of the bare hull; medians and ratios.

    Each repeat times one batch of each back to back (in alternating order), so slow
    drifts in the machine's load hit both; the per-repeat ratios give the median ratio.
    """
    normals, distances, hkl, fid, labels = case
    pts = normals / distances[:, None]
    p, _, _ = full_result(*case)
    t_full, t_hull = [], []

    def run_full() -> float:
        t0 = CLOCK()
        for _ in range(batch):
            full_result(normals, distances, hkl, fid, labels)
        return (CLOCK() - t0) / batch

    def run_hull() -> float:
        t0 = CLOCK()
        for _ in range(batch):
            ConvexHull(pts)
        return (CLOCK() - t0) / batch

    for i in range(repeats):
        if i % 2:
            t_full.append(run_full())
            t_hull.append(run_hull())
        else:
            t_hull.append(run_hull())
            t_full.append(run_full())
    ratios = [f / h for f, h in zip(t_full, t_hull, strict=True)]
    return {
        "full": statistics.median(t_full),
        "hull": statistics.median(t_hull),
        "ratio": statistics.median(ratios),
        "ratio_q1": statistics.quantiles(ratios, n=4)[0],
        "ratio_q3": statistics.quantiles(ratios, n=4)[2],
        "faces": p.n_faces,
        "vertices": p.n_vertices,
    }


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=400)
    ap.add_argument("--batch", type=int, default=5)
    ap.add_argument("--wall", action="store_true", help="wall-clock instead of CPU time")
    args = ap.parse_args()
    global CLOCK
    if args.wall:
        CLOCK = time.perf_counter
    cases = {
        "26 planes {100}+{110}+{111}": planes({(1, 0, 0): 1.0, (1, 1, 0): 1.05, (1, 1, 1): 0.95}),
        "74 planes {100}+{110}+{111}+{321}": planes(
            {(1, 0, 0): 1.0, (1, 1, 0): 1.05, (1, 1, 1): 0.95, (3, 2, 1): 1.02}
        ),
    }
    clock = "wall-clock" if args.wall else "thread CPU"
    print(f"repeats={args.repeats} batch={args.batch} clock={clock} (interleaved batches)")
    print(
        f"{'case':36s} {'faces':>5s} {'verts':>5s} {'full, us':>9s} {'hull, us':>9s} "
        f"{'ratio':>6s}  {'ratio IQR':>11s}"
    )
    for name, case in cases.items():
        m = measure(case, args.repeats, args.batch)
        print(
            f"{name:36s} {m['faces']:5d} {m['vertices']:5d} {m['full'] * 1e6:9.1f} "
            f"{m['hull'] * 1e6:9.1f} {m['ratio']:5.2f}x  {m['ratio_q1']:4.2f}-{m['ratio_q3']:4.2f}x"
        )


if __name__ == "__main__":
    main()
