"""Carving: the atoms of a periodic structure inside a convex shape ``n . x <= d``.

The shape's geometry (vertices, volume, edges, extent) and the membership tests used by
:mod:`habit.particle`; the definitions (what "inside" means, the on-face tolerance) are
stated in that module's docstring, which is the public entry to all of this.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from habit._typing import FloatArray, IntArray
from habit.errors import InputError, OpenShapeError
from habit.polyhedron import Polyhedron

__all__ = [
    "ON_FACE_TOL",
    "ShapeGeometry",
    "as_sites",
    "shape_geometry",
    "carve",
    "critical_scales",
]

#: Default relative tolerance for "on a face" (see :mod:`habit.particle`).
ON_FACE_TOL = 1e-6

_CHUNK = 1 << 18  # atoms per block in the chunked passes (about 2 MB per float column)

Progress = Callable[[int], None] | None


def _frozen(a: Any) -> Any:
    a = np.ascontiguousarray(a)
    a.setflags(write=False)
    return a


# --------------------------------------------------------------------------------------
# input checks
# --------------------------------------------------------------------------------------


def as_sites(structure: Any) -> tuple[FloatArray, FloatArray, tuple[str, ...]]:
    """Return ``(lattice, frac_coords, species)`` from a structure.

    Parameters
    ----------
    structure : pymatgen Structure or tuple
        An ordered pymatgen ``Structure`` or a tuple ``(lattice, frac_coords, species)``
        with ``lattice`` a (3, 3) array whose rows are a, b, c in Å, ``frac_coords``
        (S, 3) and ``species`` S element symbols.

    Returns
    -------
    lattice : (3, 3) float array, Å
    frac_coords : (S, 3) float array, wrapped into [0, 1)
    species : tuple of S str

    Raises
    ------
    InputError
        If the structure is disordered, empty or has a singular cell.
    """
    if hasattr(structure, "lattice") and hasattr(structure, "frac_coords"):
        if not getattr(structure, "is_ordered", True):
            raise InputError(
                "the structure has partially occupied sites; carving needs an ordered "
                "structure (one element per site)."
            )
        lattice = np.array(structure.lattice.matrix, dtype=float)
        frac = np.array(structure.frac_coords, dtype=float)
        species = tuple(getattr(sp, "symbol", str(sp)) for sp in structure.species)
    else:
        try:
            lattice_in, frac_in, species_in = structure
        except (TypeError, ValueError):
            raise InputError(
                "structure must be a pymatgen Structure or a tuple (lattice, frac_coords, species)."
            ) from None
        lattice = np.array(lattice_in, dtype=float)
        frac = np.atleast_2d(np.array(frac_in, dtype=float))
        species = tuple(str(s) for s in species_in)
    if lattice.shape != (3, 3) or not np.all(np.isfinite(lattice)):
        raise InputError(f"lattice must be a finite (3, 3) array, got shape {lattice.shape}.")
    if abs(np.linalg.det(lattice)) < 1e-9:
        raise InputError("the lattice vectors are coplanar (cell volume is zero).")
    if frac.ndim != 2 or frac.shape[1] != 3 or len(frac) == 0:
        raise InputError(f"frac_coords must have shape (S, 3) with S >= 1, got {frac.shape}.")
    if len(species) != len(frac):
        raise InputError(f"species has {len(species)} entries but there are {len(frac)} sites.")
    frac = frac - np.floor(frac)
    frac[frac >= 1.0 - 1e-12] = 0.0
    return lattice, frac, species


def _check_planes(normals: ArrayLike, distances: ArrayLike) -> tuple[FloatArray, FloatArray]:
    """Return unit normals (N, 3) and distances (N,) in Å; raise on malformed input."""
    n = np.atleast_2d(np.asarray(normals, dtype=float))
    d = np.atleast_1d(np.asarray(distances, dtype=float)).ravel()
    if n.ndim != 2 or n.shape[1] != 3:
        raise InputError(f"normals must have shape (N, 3), got {n.shape}.")
    if d.shape != (len(n),):
        raise InputError(f"distances must have one value per normal ({len(n)}), got {d.shape[0]}.")
    if not (np.all(np.isfinite(n)) and np.all(np.isfinite(d))):
        raise InputError("normals and distances must be finite numbers.")
    length = np.linalg.norm(n, axis=1)
    if np.any(length < 1e-12):
        raise InputError("every plane needs a non-zero normal vector.")
    n = n / length[:, None]  # directions only: distances are central distances in Å
    if np.any(d <= 0.0):
        i = int(np.argmin(d))
        raise InputError(
            f"plane {i} has central distance {d[i]:.6g} Å; the carving centre must lie "
            "strictly inside the shape, so every distance must be positive."
        )
    return n, d


# --------------------------------------------------------------------------------------
# the shape: bounds, vertices, volume, edges
# --------------------------------------------------------------------------------------


@dataclass(frozen=True, slots=True)
class ShapeGeometry:
    """Geometry of the shape ``n . x <= d`` needed to size a particle.

    Attributes
    ----------
    vertices : (V, 3) float array, Å
    volume : float, Å^3
    edge_lengths : (E,) float array, Å
    lower, upper : (3,) float arrays
        Extent of the shape along each Cartesian axis, Å.
    """

    vertices: FloatArray
    volume: float
    edge_lengths: FloatArray
    lower: FloatArray
    upper: FloatArray


def _polyhedron(normals: FloatArray, distances: FloatArray) -> Polyhedron:
    """The solid ``n . x <= d`` (unit normals, distances in Å, all positive)."""
    try:
        return Polyhedron.from_halfspaces(normals, distances)
    except OpenShapeError as exc:
        if exc.direction is None:
            raise
        u = exc.direction
        raise OpenShapeError(
            "the planes do not enclose a bounded solid: it is open along "
            f"({u[0]:.3f}, {u[1]:.3f}, {u[2]:.3f}); add faces whose normals point "
            "that way.",
            direction=u,
        ) from None


def shape_geometry(normals: ArrayLike, distances: ArrayLike) -> ShapeGeometry:
    """Vertices, volume, edge lengths and extent of the shape ``n . x <= d``.

    The half-space step is :meth:`habit.polyhedron.Polyhedron.from_halfspaces`.

    Parameters
    ----------
    normals : (N, 3) float array, Cartesian directions (normalised here)
    distances : (N,) float array, Å, all positive (the origin is inside)

    Returns
    -------
    ShapeGeometry

    Raises
    ------
    OpenShapeError
        If the planes do not close.

    Examples
    --------
    >>> g = shape_geometry(np.vstack([np.eye(3), -np.eye(3)]), np.ones(6))
    >>> round(g.volume, 9), round(float(g.edge_lengths.max()), 9)
    (8.0, 2.0)
    """
    n, d = _check_planes(normals, distances)
    poly = _polyhedron(n, d)
    vertices = np.array(poly.vertices)
    # the maximum of a linear function over a convex solid is reached at a vertex
    return ShapeGeometry(
        _frozen(vertices),
        float(poly.volume),
        _frozen(poly.edge_lengths),
        _frozen(vertices.min(axis=0)),
        _frozen(vertices.max(axis=0)),
    )


def _reduced(lattice: FloatArray, frac: FloatArray) -> tuple[FloatArray, FloatArray]:
    """Describe the same crystal in an LLL-reduced cell; atoms are unchanged.

    Short, nearly orthogonal cell vectors keep the enumeration boxes small whatever cell
    the user chose (pymatgen's lattice reduction).
    """
    from pymatgen.core.lattice import Lattice

    red = Lattice(lattice)
    mapping = np.rint(np.asarray(red.lll_mapping, dtype=float))  # lll = mapping @ lattice
    lat_r = mapping @ lattice
    if not np.allclose(lat_r, red.lll_matrix, atol=1e-8 * np.abs(lattice).max()):
        mapping = np.eye(3)  # pragma: no cover - defensive: keep the given cell
        lat_r = lattice
    frac_r = frac @ np.linalg.inv(mapping)
    return lat_r, frac_r - np.floor(frac_r + 1e-12)  # wrapped: each site's own cell


# --------------------------------------------------------------------------------------
# carving
# --------------------------------------------------------------------------------------


def _eps(distances: FloatArray, on_face_tol: float) -> float:
    return on_face_tol * max(1.0, float(np.max(distances)))


def carve(
    lattice: ArrayLike,
    frac_coords: ArrayLike,
    normals: ArrayLike,
    distances: ArrayLike,
    *,
    centre: ArrayLike = (0.0, 0.0, 0.0),
    on_face_tol: float = ON_FACE_TOL,
    progress: Progress = None,
) -> tuple[FloatArray, IntArray]:
    """All atoms of a periodic structure inside the shape ``n . x <= d``.

    The shape is placed with its origin on the carving centre. Lattice translations are
    enumerated as lines along the third cell vector: for every site and every pair
    ``(t0, t1)`` the interval of ``t2`` inside all planes is solved at once (one
    broadcast over sites x translations x planes), then expanded; a final exact test
    ``max_i(n_i . r - d_i) <= eps`` decides membership. Work and memory grow with the
    number of atoms kept, not with the bounding box.

    Parameters
    ----------
    lattice : (3, 3) float array, rows a, b, c in Å
    frac_coords : (S, 3) float array
    normals : (N, 3) float array, Cartesian
    distances : (N,) float array, Å, positive
    centre : (3,) float array
        Carving centre in fractional coordinates of ``lattice``.
    on_face_tol : float
        Relative tolerance for atoms on a face (see module docstring).
    progress : callable, optional
        Called with the work done so far, in thousandths (0..1000).

    Returns
    -------
    positions : (M, 3) float array, Å, relative to the centre
    site_index : (M,) int array, index of each atom's site in ``frac_coords``

    Examples
    --------
    >>> cube = np.vstack([np.eye(3), -np.eye(3)])
    >>> pos, site = carve(np.eye(3), [[0, 0, 0]], cube, np.full(6, 1.0))
    >>> len(pos)  # a 3 x 3 x 3 block: atoms on the faces are kept
    27
    """
    lat = np.asarray(lattice, dtype=float)
    frac = np.atleast_2d(np.asarray(frac_coords, dtype=float))
    n, d = _check_planes(normals, distances)
    eps = _eps(d, on_face_tol)
    c_cart = np.asarray(centre, dtype=float).reshape(3) @ lat
    lat, frac = _reduced(lat, frac)
    u = frac - c_cart @ np.linalg.inv(lat)  # (S, 3) site offsets from the centre, fractional
    recip = np.asarray(np.linalg.inv(lat).T, dtype=np.float64)  # rows a*, b*, c*
    frac_vertices = _polyhedron(n, d + 2 * eps).vertices @ recip.T  # (V, 3)
    # the extremes of each fractional coordinate over the shape are reached at vertices
    hi, lo = frac_vertices.max(axis=0), frac_vertices.min(axis=0)
    t_lo = np.floor(lo - u.max(axis=0)).astype(int) - 1
    t_hi = np.ceil(hi - u.min(axis=0)).astype(int) + 1
    t0 = np.arange(t_lo[0], t_hi[0] + 1)
    t1 = np.arange(t_lo[1], t_hi[1] + 1)
    m = lat @ n.T  # (3, N): m[j, i] = a_j . n_i
    slope = m[2]  # (N,) change of n_i . r per step of t2
    rising = slope > 1e-12
    falling = slope < -1e-12
    flat = ~(rising | falling)
    margin = d + 2 * eps  # generous here; the exact test follows
    rows = max(1, _CHUNK // max(1, len(frac) * len(t1) * len(n)))
    pos_parts: list[FloatArray] = []
    site_parts: list[IntArray] = []
    for start in range(0, len(t0), rows):
        tt0 = t0[start : start + rows]
        # base[s, a, b, i] = n_i . r at t2 = 0
        base = (
            (u @ m)[:, None, None, :]
            + tt0[None, :, None, None] * m[0][None, None, None, :]
            + t1[None, None, :, None] * m[1][None, None, None, :]
        )  # (S, A, B, N)
        room = margin - base  # (S, A, B, N)
        with np.errstate(divide="ignore", invalid="ignore"):
            ratio = room / np.where(flat, 1.0, slope)
        up = np.where(rising, np.floor(ratio), np.inf).min(axis=3)  # (S, A, B)
        down = np.where(falling, np.ceil(ratio), -np.inf).max(axis=3)  # (S, A, B)
        blocked = np.any(flat & (room < 0), axis=3)  # (S, A, B)
        up = np.minimum(up, t_hi[2])
        down = np.maximum(down, t_lo[2])
        count = np.where(blocked, 0, np.maximum(up - down + 1, 0)).astype(np.int64).ravel()
        total = int(count.sum())
        if total:
            line = np.repeat(np.arange(count.size), count)  # (K,) line of each atom
            offset = np.arange(total) - np.repeat(np.cumsum(count) - count, count)
            s_idx, a_idx, b_idx = np.unravel_index(line, up.shape)
            t2 = down.ravel()[line].astype(np.int64) + offset
            fr = u[s_idx] + np.stack([tt0[a_idx], t1[b_idx], t2], axis=1)  # (K, 3)
            pos = fr @ lat  # (K, 3)
            keep = _inside(pos, n, d, eps)
            pos_parts.append(pos[keep])
            site_parts.append(s_idx[keep].astype(np.int64))
        if progress is not None:
            progress(1000 * min(start + rows, len(t0)) // len(t0))
    if not pos_parts:
        return np.zeros((0, 3)), np.zeros(0, dtype=np.int64)
    return np.concatenate(pos_parts), np.concatenate(site_parts)


def _inside(pos: FloatArray, n: FloatArray, d: FloatArray, eps: float) -> Any:
    """Boolean mask (M,): ``max_i(n_i . r - d_i) <= eps``, in blocks."""
    out = np.empty(len(pos), dtype=bool)
    step = max(1, _CHUNK // max(1, len(n)))
    for k in range(0, len(pos), step):
        out[k : k + step] = np.max(pos[k : k + step] @ n.T - d, axis=1) <= eps
    return out


def _depth(pos: FloatArray, n: FloatArray, d: FloatArray) -> FloatArray:
    """Distance (M,) in Å from each atom to the nearest plane, inward positive."""
    out = np.empty(len(pos))
    step = max(1, _CHUNK // max(1, len(n)))
    for k in range(0, len(pos), step):
        out[k : k + step] = np.min(d - pos[k : k + step] @ n.T, axis=1)
    return out


def critical_scales(positions: ArrayLike, normals: ArrayLike, distances: ArrayLike) -> FloatArray:
    """Smallest scale of the shape at which each atom lies inside it.

    Parameters
    ----------
    positions : (M, 3) float array, Å, relative to the centre
    normals : (N, 3) float array
    distances : (N,) float array, Å, at scale 1

    Returns
    -------
    (M,) float array
        ``max_i (n_i . r) / d_i`` (zero for the centre itself).

    Examples
    --------
    >>> critical_scales([[0.5, 0, 0]], np.vstack([np.eye(3), -np.eye(3)]), np.ones(6))
    array([0.5])
    """
    n, d = _check_planes(normals, distances)
    pos = np.atleast_2d(np.asarray(positions, dtype=float))
    out = np.empty(len(pos))
    step = max(1, _CHUNK // max(1, len(n)))
    for k in range(0, len(pos), step):
        out[k : k + step] = np.max((pos[k : k + step] @ n.T) / d, axis=1)
    return np.maximum(out, 0.0)
