"""Speed of face indexing, against the floor of one bare scoring pass in the same run.

The floor is one numpy evaluation of the angles between every measured normal and every
candidate normal (what each orientation hypothesis costs). Indexing a crystal costs many
such passes; the ratio says how many. Usage: python benchmarks/indexing.py
"""

from __future__ import annotations

import functools
import math
import statistics
import time

import numpy as np

from habit.indexing import CellModel, candidate_indices, index_faces
from habit.measurements import measurements_from_arrays

REPEATS = 5
CASES = {
    "cubic (fluorite cell)": ((5.463, 5.463, 5.463, 90, 90, 90), "cubic"),
    "tetragonal (rutile cell)": ((4.5937, 4.5937, 2.9587, 90, 90, 90), "tetragonal"),
    "monoclinic (diopside cell)": ((9.7397, 8.9174, 5.2503, 90, 105.866, 90), "monoclinic"),
    "triclinic (kyanite cell)": ((7.12, 7.8479, 5.5738, 89.974, 101.117, 106.0), "triclinic"),
}


def faces(model: CellModel, rng: np.random.Generator) -> np.ndarray:
    hkl = candidate_indices(1)[:16]  # {100}, {010}, {001} and twelve {110}-type faces
    n = hkl @ model.reciprocal
    n /= np.linalg.norm(n, axis=1, keepdims=True)
    q, _ = np.linalg.qr(rng.normal(size=(3, 3)))
    q *= np.sign(np.linalg.det(q))
    return n @ q.T


def _score(normals: np.ndarray, cand_n: np.ndarray) -> np.ndarray:
    return np.arccos(np.clip(normals @ cand_n.T, -1, 1))


def median_time(func, repeats: int = REPEATS) -> float:
    values = []
    for _ in range(repeats):
        start = time.perf_counter()
        func()
        values.append(time.perf_counter() - start)
    return statistics.median(values)


def main() -> None:
    rng = np.random.default_rng(0)
    print(f"{'case':<30}{'faces':>6}{'median (ms)':>13}{'ratio to floor':>16}")
    for label, (cell, system) in CASES.items():
        model = CellModel(cell, system)
        normals = faces(model, rng)
        meas = measurements_from_arrays(normals=normals)
        cand_n = candidate_indices(3) @ model.reciprocal
        cand_n /= np.linalg.norm(cand_n, axis=1, keepdims=True)
        floor = median_time(functools.partial(_score, normals, cand_n), 50)
        t = median_time(functools.partial(index_faces, model, meas,
                                          tolerance=math.radians(1.0)))
        print(f"{label:<30}{len(normals):>6}{t * 1e3:>13.1f}{t / floor:>16.0f}")


if __name__ == "__main__":
    main()
