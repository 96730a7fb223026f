"""Reference solids by name: the Platonic and Archimedean solids and a few space fillers.

Coordinates are the classical ones (centred at the origin; edge lengths as they come from the
coordinates, not normalised). The two snub solids are chiral; the vertex sets given here
are orbits of one point under the rotation group (octahedral for the snub cube, icosahedral
for the snub dodecahedron), the point being found by solving the three equal-edge conditions
to machine precision. Their mirror images pack and measure identically.

Names are the standard English names ("truncated octahedron", "snub cube"); lookup ignores
case, spaces, hyphens and underscores. The Catalan solids are obtained as duals of the
Archimedean ones and are not listed here.
"""

from __future__ import annotations

import itertools
from functools import cache
from typing import Any

import numpy as np

from habit._typing import FloatArray
from habit.errors import UnknownSymbolError

__all__ = [
    "PLATONIC",
    "ARCHIMEDEAN",
    "SPACE_FILLERS",
    "CATALAN",
    "solid_names",
    "reference_solid",
    "reference_polyhedron",
]

PHI = (1.0 + np.sqrt(5.0)) / 2.0
SQ2 = np.sqrt(2.0)

PLATONIC: tuple[str, ...] = ("tetrahedron", "cube", "octahedron", "dodecahedron", "icosahedron")
ARCHIMEDEAN: tuple[str, ...] = (
    "truncated tetrahedron",
    "cuboctahedron",
    "truncated cube",
    "truncated octahedron",
    "rhombicuboctahedron",
    "truncated cuboctahedron",
    "snub cube",
    "icosidodecahedron",
    "truncated dodecahedron",
    "truncated icosahedron",
    "rhombicosidodecahedron",
    "truncated icosidodecahedron",
    "snub dodecahedron",
)
#: Solids whose translates tile space by a lattice (lattice packing density 1).
SPACE_FILLERS: tuple[str, ...] = (
    "cube",
    "truncated octahedron",
    "rhombic dodecahedron",
    "hexagonal prism",
    "elongated dodecahedron",
)
_OTHER: tuple[str, ...] = ("rhombic dodecahedron", "hexagonal prism", "elongated dodecahedron")

#: The Catalan solids, each the dual of the Archimedean solid it maps to (Catalan 1865;
#: names as in Wenninger, Dual Models, 1983 — from memory). They are made by polar
#: reciprocation of that solid in its midsphere.
CATALAN: dict[str, str] = {
    "triakis tetrahedron": "truncated tetrahedron",
    "rhombic dodecahedron": "cuboctahedron",
    "triakis octahedron": "truncated cube",
    "tetrakis hexahedron": "truncated octahedron",
    "deltoidal icositetrahedron": "rhombicuboctahedron",
    "disdyakis dodecahedron": "truncated cuboctahedron",
    "pentagonal icositetrahedron": "snub cube",
    "rhombic triacontahedron": "icosidodecahedron",
    "triakis icosahedron": "truncated dodecahedron",
    "pentakis dodecahedron": "truncated icosahedron",
    "deltoidal hexecontahedron": "rhombicosidodecahedron",
    "disdyakis triacontahedron": "truncated icosidodecahedron",
    "pentagonal hexecontahedron": "snub dodecahedron",
}

_ALIASES = {
    "regulartetrahedron": "tetrahedron",
    "hexahedron": "cube",
    "regularoctahedron": "octahedron",
    "regulardodecahedron": "dodecahedron",
    "pentagonaldodecahedron": "dodecahedron",
    "regularicosahedron": "icosahedron",
    "truncatedicosidodecahedron": "truncated icosidodecahedron",
    "greatrhombicuboctahedron": "truncated cuboctahedron",
    "smallrhombicuboctahedron": "rhombicuboctahedron",
    "greatrhombicosidodecahedron": "truncated icosidodecahedron",
    "smallrhombicosidodecahedron": "rhombicosidodecahedron",
    "snubcuboctahedron": "snub cube",
    "snubicosidodecahedron": "snub dodecahedron",
    "buckyball": "truncated icosahedron",
}


def _key(name: str) -> str:
    return "".join(ch for ch in name.lower() if ch.isalnum())


def solid_names() -> tuple[str, ...]:
    """Return the names :func:`reference_solid` accepts (canonical spelling).

    Returns
    -------
    tuple of str
        Platonic, then Archimedean, then the other space fillers.

    Examples
    --------
    >>> len(solid_names())
    21
    """
    return PLATONIC + ARCHIMEDEAN + _OTHER


def _canonical(name: str) -> str:
    if not isinstance(name, str):
        raise UnknownSymbolError(
            f"solid name must be a string such as 'snub cube'; got {type(name).__name__}."
        )
    k = _key(name)
    table = {_key(n): n for n in solid_names()}
    table.update(_ALIASES)
    if k not in table:
        catalan = sorted(set(CATALAN) - set(solid_names()))
        raise UnknownSymbolError(
            f"unknown solid {name!r}; valid names are: "
            + ", ".join(solid_names() + tuple(catalan))
            + "."
        )
    return table[k]


# -- coordinate helpers --------------------------------------------------------------------


def _signs(base: tuple[float, ...]) -> np.ndarray:
    """All sign changes of the nonzero entries of ``base``, duplicates removed."""
    out = set()
    for s in itertools.product((1.0, -1.0), repeat=3):
        out.add(tuple(float(b * si) for b, si in zip(base, s, strict=True)))
    return np.array(sorted(out))


def _cyclic(pts: np.ndarray) -> np.ndarray:
    """Return the three cyclic permutations of the coordinates of each point."""
    return np.vstack([pts, pts[:, [1, 2, 0]], pts[:, [2, 0, 1]]])


def _all_perms(pts: np.ndarray) -> np.ndarray:
    return np.vstack([pts[:, list(p)] for p in itertools.permutations(range(3))])


def _unique(pts: np.ndarray) -> np.ndarray:
    key = np.round(pts, 9)
    _, idx = np.unique(key, axis=0, return_index=True)
    return pts[np.sort(idx)]


def _rotation_group(vertices: np.ndarray, neighbour_distance: float) -> np.ndarray:
    """Rotations mapping a vertex set onto itself, from frames on adjacent vertex pairs."""
    d = np.linalg.norm(vertices[:, None] - vertices[None], axis=-1)
    adj = np.argwhere(np.abs(d - neighbour_distance) < 1e-9)

    def frame(p: np.ndarray, q: np.ndarray) -> np.ndarray:
        e1 = p / np.linalg.norm(p)
        e2 = q - (q @ e1) * e1
        e2 /= np.linalg.norm(e2)
        return np.column_stack([e1, e2, np.cross(e1, e2)])

    f0 = frame(vertices[adj[0, 0]], vertices[adj[0, 1]])
    mats = [frame(vertices[i], vertices[j]) @ f0.T for i, j in adj]
    return _unique_mats(np.array(mats))


def _unique_mats(mats: np.ndarray) -> np.ndarray:
    key = np.round(mats.reshape(len(mats), 9), 8)
    _, idx = np.unique(key, axis=0, return_index=True)
    return mats[np.sort(idx)]


def _snub(group: np.ndarray, axes: list[tuple[np.ndarray, int]], start: np.ndarray) -> np.ndarray:
    """Orbit of the point whose three kinds of neighbour distances are equal.

    For a unit point ``p`` and a rotation by ``2 pi / k`` about a unit axis ``u`` the distance
    from ``p`` to its image is ``2 sin(pi/k) sqrt(1 - (p.u)^2)``; a snub vertex has equal
    distances to its images under the nearest face rotation, the nearest triangle rotation
    and the nearest half turn.
    """
    from scipy.optimize import least_squares

    def dist(p: np.ndarray) -> np.ndarray:
        p = p / np.linalg.norm(p)
        out = []
        for u, k in axes:
            c = np.max((u @ p) ** 2)
            out.append(2.0 * np.sin(np.pi / k) * np.sqrt(max(1.0 - c, 0.0)))
        return np.array(out)

    def resid(p: np.ndarray) -> np.ndarray:
        d = dist(p)
        return np.array([d[0] - d[1], d[0] - d[2], p @ p - 1.0])

    sol = least_squares(resid, start, xtol=1e-15, ftol=1e-15, gtol=1e-15)
    p = sol.x / np.linalg.norm(sol.x)
    return _unique(np.einsum("gij,j->gi", group, p))


@cache
def _snub_cube() -> np.ndarray:
    cube = _signs((1.0, 1.0, 1.0))
    group = _rotation_group(cube, 2.0)  # 24 rotations
    ax4 = np.eye(3)
    ax3 = cube / np.sqrt(3.0)
    ax2 = _unique(_all_perms(_signs((1.0, 1.0, 0.0)))) / SQ2
    # start from the closed form with the tribonacci constant (checked in the tests)
    start = np.array([1.0, 0.5437, 1.8393])
    return _snub(group, [(ax4, 4), (ax3, 3), (ax2, 2)], start / np.linalg.norm(start))


@cache
def _snub_dodecahedron() -> np.ndarray:
    ico = _icosahedron()
    group = _rotation_group(ico, 2.0)  # 60 rotations
    ax5 = ico / np.linalg.norm(ico, axis=1)[:, None]
    dod = _dodecahedron()
    ax3 = dod / np.linalg.norm(dod, axis=1)[:, None]
    d = np.linalg.norm(ico[:, None] - ico[None], axis=-1)
    i, j = np.nonzero(np.triu(np.abs(d - 2.0) < 1e-9))
    mid = ico[i] + ico[j]
    ax2 = mid / np.linalg.norm(mid, axis=1)[:, None]
    # start about 23 degrees from a five-fold axis (pentagon circumradius / solid
    # circumradius ~ 0.39); try azimuths until the orbit has 60 distinct vertices
    u = ax5[0]
    e1 = np.cross(u, [1.0, 0.0, 0.0])
    e1 /= np.linalg.norm(e1)
    e2 = np.cross(u, e1)
    for az in np.linspace(0.0, 2 * np.pi / 5, 9, endpoint=False):
        start = np.cos(0.40) * u + np.sin(0.40) * (np.cos(az) * e1 + np.sin(az) * e2)
        pts = _snub(group, [(ax5, 5), (ax3, 3), (ax2, 2)], start)
        if len(pts) == 60 and _is_equilateral(pts):
            return pts
    raise RuntimeError("snub dodecahedron construction failed")  # pragma: no cover


def _is_equilateral(pts: np.ndarray) -> bool:
    from habit._convex import hull_facets

    h = hull_facets(pts)
    e = h.edges
    lengths = np.linalg.norm(pts[e[:, 0]] - pts[e[:, 1]], axis=1)
    return bool(len(h.points) == len(pts) and np.ptp(lengths) < 1e-9 * lengths.max())


@cache
def _icosahedron() -> np.ndarray:
    return _cyclic(_signs((0.0, 1.0, PHI)))


@cache
def _dodecahedron() -> np.ndarray:
    return np.vstack([_signs((1.0, 1.0, 1.0)), _cyclic(_signs((0.0, 1.0 / PHI, PHI)))])


def _even_sign_perms(base: tuple[float, float, float]) -> np.ndarray:
    """All permutations of ``base`` with an even number of minus signs."""
    pts = _all_perms(_signs(base))
    return _unique(pts[np.sum(pts < 0, axis=1) % 2 == 0])


def _coordinates(name: str) -> np.ndarray:
    p = PHI
    if name == "tetrahedron":
        return np.array([[1.0, 1, 1], [1, -1, -1], [-1, 1, -1], [-1, -1, 1]])
    if name == "cube":
        return _signs((1.0, 1.0, 1.0))
    if name == "octahedron":
        return _unique(_all_perms(_signs((1.0, 0.0, 0.0))))
    if name == "dodecahedron":
        return _dodecahedron()
    if name == "icosahedron":
        return _icosahedron()
    if name == "truncated tetrahedron":
        return _even_sign_perms((3.0, 1.0, 1.0))
    if name == "cuboctahedron":
        return _unique(_all_perms(_signs((1.0, 1.0, 0.0))))
    if name == "truncated cube":
        return _unique(_all_perms(_signs((SQ2 - 1.0, 1.0, 1.0))))
    if name == "truncated octahedron":
        return _unique(_all_perms(_signs((0.0, 1.0, 2.0))))
    if name == "rhombicuboctahedron":
        return _unique(_all_perms(_signs((1.0, 1.0, 1.0 + SQ2))))
    if name == "truncated cuboctahedron":
        return _unique(_all_perms(_signs((1.0, 1.0 + SQ2, 1.0 + 2.0 * SQ2))))
    if name == "snub cube":
        return _snub_cube()
    if name == "icosidodecahedron":
        return np.vstack([_cyclic(_signs((0.0, 0.0, p))), _cyclic(_signs((0.5, p / 2, p * p / 2)))])
    if name == "truncated dodecahedron":
        return np.vstack(
            [
                _cyclic(_signs((0.0, 1 / p, 2 + p))),
                _cyclic(_signs((1 / p, p, 2 * p))),
                _cyclic(_signs((p, 2.0, p + 1))),
            ]
        )
    if name == "truncated icosahedron":
        return np.vstack(
            [
                _cyclic(_signs((0.0, 1.0, 3 * p))),
                _cyclic(_signs((1.0, 2 + p, 2 * p))),
                _cyclic(_signs((p, 2.0, p**3))),
            ]
        )
    if name == "rhombicosidodecahedron":
        return np.vstack(
            [
                _cyclic(_signs((1.0, 1.0, p**3))),
                _cyclic(_signs((p * p, p, 2 * p))),
                _cyclic(_signs((2 + p, 0.0, p * p))),
            ]
        )
    if name == "truncated icosidodecahedron":
        return np.vstack(
            [
                _cyclic(_signs((1 / p, 1 / p, 3 + p))),
                _cyclic(_signs((2 / p, p, 1 + 2 * p))),
                _cyclic(_signs((1 / p, p * p, -1 + 3 * p))),
                _cyclic(_signs((2 * p - 1, 2.0, 2 + p))),
                _cyclic(_signs((p, 3.0, 2 * p))),
            ]
        )
    if name == "snub dodecahedron":
        return _snub_dodecahedron()
    if name == "rhombic dodecahedron":
        return np.vstack([_signs((1.0, 1.0, 1.0)), _unique(_all_perms(_signs((2.0, 0, 0))))])
    if name == "hexagonal prism":
        ang = np.arange(6) * np.pi / 3
        ring = np.column_stack([np.cos(ang), np.sin(ang)])
        return np.vstack(
            [np.column_stack([ring, np.full(6, h)]) for h in (-0.5, 0.5)]
        )  # edge 1, height 1
    if name == "elongated dodecahedron":
        # rhombic dodecahedron stretched along z by inserting a belt: a parallelohedron
        rd = np.vstack([_signs((1.0, 1.0, 1.0)), _unique(_all_perms(_signs((2.0, 0, 0))))])
        shift = np.where(rd[:, 2:3] > 0, 1.0, np.where(rd[:, 2:3] < 0, -1.0, 0.0))
        mid = rd[np.abs(rd[:, 2]) < 1e-12]
        top = (rd + shift * np.array([0.0, 0.0, 1.0]))[np.abs(rd[:, 2]) > 1e-12]
        return _unique(np.vstack([top, mid + [0, 0, 1.0], mid - [0, 0, 1.0]]))
    raise AssertionError(name)  # pragma: no cover - _canonical filters names


def reference_solid(name: str) -> FloatArray:
    """Return the vertices of a named reference solid.

    Parameters
    ----------
    name : str
        A Platonic or Archimedean solid, or one of ``rhombic dodecahedron``,
        ``hexagonal prism`` (regular, edge 1, height 1), ``elongated dodecahedron``.
        Case, spaces, hyphens and underscores are ignored.

    Returns
    -------
    (V, 3) float array
        Vertex coordinates (dimensionless; multiply by an edge length in Å as needed),
        centred at the origin. A fresh writable copy.

    Raises
    ------
    UnknownSymbolError
        If the name is not known; the message lists the valid names.

    Examples
    --------
    >>> reference_solid("Truncated-Octahedron").shape
    (24, 3)
    >>> reference_solid("snub cube").shape
    (24, 3)
    """
    return np.array(_coordinates(_canonical(name)), dtype=np.float64)


def reference_polyhedron(name: str) -> Any:
    """Return a named reference solid as a :class:`habit.polyhedron.Polyhedron`.

    Parameters
    ----------
    name : str
        As for :func:`reference_solid`, or one of the Catalan solids (:data:`CATALAN`),
        made as the dual of its Archimedean solid in the midsphere.

    Returns
    -------
    Polyhedron
        Built with ``Polyhedron.from_vertices``.
    """
    from habit.polyhedron import Polyhedron

    catalan = {_key(n): arch for n, arch in CATALAN.items() if n not in solid_names()}
    if isinstance(name, str) and _key(name) in catalan:
        archimedean = Polyhedron.from_vertices(reference_solid(catalan[_key(name)]))
        return archimedean.dual(scale="midsphere").polyhedron
    return Polyhedron.from_vertices(reference_solid(name))
