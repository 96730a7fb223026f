"""Plane sets shared by the polyhedron tests (built directly in Cartesian coordinates)."""

from __future__ import annotations

import itertools

import numpy as np

PHI = (1.0 + 5.0**0.5) / 2.0


def unit(v: np.ndarray) -> np.ndarray:
    v = np.asarray(v, dtype=float)
    return v / np.linalg.norm(v, axis=-1, keepdims=True)


def cubic_family(base: tuple[int, int, int]) -> np.ndarray:
    """All signed permutations of (h, k, l): the {hkl} form of class m-3m, (M, 3) ints."""
    rows = {
        tuple(int(s) * int(p) for s, p in zip(signs, perm, strict=True))
        for perm in itertools.permutations(base)
        for signs in itertools.product((1, -1), repeat=3)
    }
    return np.array(sorted(rows), dtype=int)


def cyclic(v: list[float]) -> list[list[float]]:
    return [v, v[1:] + v[:1], v[2:] + v[:2]]


CUBE_NORMALS = cubic_family((1, 0, 0)).astype(float)
OCTAHEDRON_NORMALS = unit(cubic_family((1, 1, 1)))
TETRAHEDRON_NORMALS = unit(np.array([[1, 1, 1], [1, -1, -1], [-1, 1, -1], [-1, -1, 1]]))
# Face normals of the dodecahedron point to the vertices of an icosahedron and vice versa.
DODECAHEDRON_NORMALS = unit(
    np.array([v for s1 in (1, -1) for s2 in (1, -1) for v in cyclic([0.0, s1, s2 * PHI])])
)
ICOSAHEDRON_NORMALS = unit(
    np.vstack(
        [
            np.array(list(itertools.product((1, -1), repeat=3)), dtype=float),
            [v for s1 in (1, -1) for s2 in (1, -1) for v in cyclic([0.0, s1 / PHI, s2 * PHI])],
        ]
    )
)


def cubic_planes(
    distances: dict[tuple[int, int, int], float],
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Normals, distances, hkl and form ids for cubic forms given as {(h,k,l): distance}."""
    normals, dist, hkl, fid = [], [], [], []
    for i, (base, d) in enumerate(distances.items()):
        fam = cubic_family(base)
        normals.append(unit(fam))
        dist.append(np.full(len(fam), float(d)))
        hkl.append(fam)
        fid.append(np.full(len(fam), i))
    return np.vstack(normals), np.concatenate(dist), np.vstack(hkl), np.concatenate(fid)


def hexagonal_prism_normals() -> np.ndarray:
    """Six prism normals in the x-y plane (every 60 degrees) and the pinacoid +-z."""
    ang = np.arange(6) * np.pi / 3.0
    prism = np.stack([np.cos(ang), np.sin(ang), np.zeros(6)], axis=1)
    return np.vstack([prism, [[0.0, 0.0, 1.0], [0.0, 0.0, -1.0]]])


def random_rotation(rng: np.random.Generator) -> np.ndarray:
    q, r = np.linalg.qr(rng.normal(size=(3, 3)))
    q = q * np.sign(np.diag(r))
    if np.linalg.det(q) < 0:
        q[:, 0] *= -1.0
    return q
