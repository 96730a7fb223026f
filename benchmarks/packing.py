"""Time the densest lattice packing of every Platonic and Archimedean solid (certified).

Usage::

    python benchmarks/packing.py [--repeat 1] [--json out.json]

Runs on one core (BLAS threads pinned to 1). For each solid: wall time of
``densest_lattice_packing`` with its defaults (30+ random starts, Newton polish, optimality
and tightness checks, separating-axis check), the density, the published value where one is
known (Minkowski 1904; Betke & Henk 2000), and whether the result is certified. Then the
double-lattice search for the regular tetrahedron (Kallus, Elser & Gravel 2010).

Times are also given as ratios to a floor measured in the same run: one bare
``scipy.spatial.ConvexHull`` call on the point set ``K - K`` of that solid (the first step of
any method that works with the difference body).
"""

from __future__ import annotations

import os

os.environ.setdefault("OMP_NUM_THREADS", "1")
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("MKL_NUM_THREADS", "1")

import argparse  # noqa: E402
import json  # noqa: E402
import sys  # noqa: E402
import time  # noqa: E402
from pathlib import Path  # noqa: E402

import numpy as np  # noqa: E402
from scipy.spatial import ConvexHull  # noqa: E402

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from habit.packing import densest_double_lattice_packing, densest_lattice_packing  # noqa: E402
from habit.solids import ARCHIMEDEAN, PLATONIC, reference_solid  # noqa: E402

S2, S5, S10 = np.sqrt(2.0), np.sqrt(5.0), np.sqrt(10.0)
PUBLISHED = {  # Minkowski 1904; Hoylman 1970; Betke & Henk 2000 (as in tests/test_packing.py)
    "tetrahedron": 18 / 49,
    "cube": 1.0,
    "octahedron": 18 / 19,
    "dodecahedron": (5 + S5) / 8,
    "icosahedron": 0.836357445379711,
    "cuboctahedron": 45 / 49,
    "truncated cube": 9 * (5 - 3 * S2) / 7,
    "truncated octahedron": 1.0,
    "rhombicuboctahedron": (16 * S2 - 20) / 3,
    "truncated cuboctahedron": 0.849373251725345,
    "icosidodecahedron": (45 + 17 * S5) / 96,
    "truncated dodecahedron": (25 + 37 * S5) / 120,
}


def floor_seconds(v: np.ndarray, repeat: int = 20) -> float:
    d = (v[:, None, :] - v[None, :, :]).reshape(-1, 3)
    best = np.inf
    for _ in range(repeat):
        t = time.perf_counter()
        ConvexHull(d)
        best = min(best, time.perf_counter() - t)
    return float(best)


def configurations(names: list[str]) -> None:
    """Time ``check_configurations=True`` (search with 10 starts plus the enumeration)."""
    from habit import lattice_packing as lp

    print(f"{'solid':22s} {'facets of D':>11s} {'time (s)':>9s} confirms  enumeration")
    for name in names:
        v = reference_solid(name)
        t = time.perf_counter()
        p = densest_lattice_packing(v, starts=10, check_configurations=True)
        dt = time.perf_counter() - t
        nf = len(lp.make_body(v).facets_d)
        c = p.certificate
        print(f"{name:22s} {nf:11d} {dt:9.1f} {c.enumeration_confirms!s:8s}  {c.enumeration}")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=1, help="runs per solid (best taken)")
    ap.add_argument("--json", help="write the rows as JSON to this file")
    ap.add_argument(
        "--configurations",
        nargs="*",
        metavar="SOLID",
        help="only time the Minkowski-configuration check for these solids and exit",
    )
    args = ap.parse_args()
    if args.configurations:
        configurations(args.configurations)
        return
    rows = []
    print(
        f"{'solid':28s} {'density':>18s} {'published':>18s} {'|diff|':>8s} "
        f"{'time (s)':>9s} {'/floor':>9s} {'starts':>6s} {'hits':>4s} certified"
    )
    for name in PLATONIC + ARCHIMEDEAN:
        v = reference_solid(name)
        fl = floor_seconds(v)
        best = np.inf
        p = None
        for _ in range(args.repeat):
            t = time.perf_counter()
            p = densest_lattice_packing(v)
            best = min(best, time.perf_counter() - t)
        assert p is not None
        pub = PUBLISHED.get(name)
        diff = abs(p.density - pub) if pub is not None else float("nan")
        c = p.certificate
        rows.append(
            {
                "solid": name,
                "density": p.density,
                "published": pub,
                "abs_diff": diff,
                "time_s": best,
                "floor_s": fl,
                "ratio_to_floor": best / fl,
                "starts": c.starts,
                "hits": c.hits,
                "certified": p.is_certified,
                "configuration": c.configuration,
            }
        )
        pub_s = f"{pub:18.15f}" if pub is not None else f"{'-':>18s}"
        print(
            f"{name:28s} {p.density:18.15f} {pub_s} {diff:8.1e} {best:9.2f} "
            f"{best / fl:9.0f} {c.starts:6d} {c.hits:4d} {p.is_certified}",
            flush=True,
        )
    v = reference_solid("tetrahedron")
    fl = floor_seconds(v)
    t = time.perf_counter()
    d = densest_double_lattice_packing(v)
    dt = time.perf_counter() - t
    ref = (139 + 40 * S10) / 369
    print(
        f"\ndouble lattice, tetrahedron: density {d.density:.15f} (published {ref:.15f}, "
        f"|diff| {abs(d.density - ref):.1e}), {dt:.2f} s = {dt / fl:.0f} x floor, "
        f"{d.certificate.starts} starts, {d.certificate.hits} hits, certified {d.is_certified}"
    )
    rows.append(
        {
            "solid": "tetrahedron (double lattice)",
            "density": d.density,
            "published": ref,
            "abs_diff": abs(d.density - ref),
            "time_s": dt,
            "floor_s": fl,
            "ratio_to_floor": dt / fl,
            "starts": d.certificate.starts,
            "hits": d.certificate.hits,
            "certified": d.is_certified,
        }
    )
    total = sum(r["time_s"] for r in rows[:-1])
    print(f"total for the 18 solids: {total:.1f} s; load average {os.getloadavg()[0]:.1f}")
    if args.json:
        Path(args.json).write_text(json.dumps(rows, indent=2) + "\n")


if __name__ == "__main__":
    main()
