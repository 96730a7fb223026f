"""Atomistic particles: fill a convex shape with the atoms of a crystal structure.

A shape is a set of planes ``n_i . x <= d_i`` (unit Cartesian normals ``n_i``, central
distances ``d_i`` in ångström) around a carving centre at the origin; it can be a Wulff
construction, a habit drawing or a reference solid. The functions here take plain arrays
(a lattice matrix, fractional coordinates, species, normals, distances, form ids) so that
they do not depend on how the shape was made.

Definitions used throughout
---------------------------
inside
    An atom at ``r`` (relative to the centre) belongs to the particle when
    ``max_i(n_i . r - d_i) <= eps`` with ``eps = on_face_tol * max(1 Å, max_i d_i)``:
    atoms exactly on a face are kept. The default ``on_face_tol`` is ``1e-6``, i.e.
    one part per million of the particle's largest central distance (never less than
    1e-6 Å) — far above rounding error, far below any interplanar spacing.
first-neighbour shell
    For every site of the structure, the neighbours within ``(1 + shell_width)`` times
    its nearest-neighbour distance in the infinite crystal (default ``shell_width=0.1``).
    Their number is the site's bulk coordination.
surface atom
    An atom whose coordination in the particle (counted with a k-d tree over the
    particle, within its site's first-shell cutoff) is below its bulk coordination.
facet, edge, vertex atom
    A surface atom's missing neighbours lie outside the particle; each of them violates
    one or more of the shape's planes. The atom is a *facet* atom of the form of that
    plane when its missing bonds cross exactly one plane, an *edge* atom when they cross
    two, and a *vertex* atom when they cross three or more.
equivalent diameter
    The diameter of the sphere whose volume is the number of atoms times the volume per
    atom of the bulk crystal (cell volume / atoms per cell).

References
----------
.. [1] A. L. Mackay, "A dense non-crystallographic packing of equal spheres",
   Acta Cryst. 15, 916-918 (1962) — shell magic numbers 10K^2 + 2 (reference checked
   against a citing article's list).
.. [2] T. P. Martin, "Shells of atoms", Phys. Rep. 273, 199-241 (1996) — shell
   structure and magic numbers of cluster series (from memory).
"""

from __future__ import annotations

import math
import os
import tempfile
import types
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from habit._typing import FloatArray, IntArray
from habit.errors import EmptyPolyhedronError, InputError, OpenShapeError
from habit.polyhedron import Polyhedron

__all__ = [
    "SITE_KINDS",
    "ON_FACE_TOL",
    "ShapeGeometry",
    "FirstShells",
    "SiteClasses",
    "Particle",
    "as_sites",
    "shape_geometry",
    "first_shells",
    "carve",
    "critical_scales",
    "classify_sites",
    "scale_for_size",
    "achievable_counts",
    "make_particle",
    "crystal_planes",
    "polyhedron_planes",
    "resolve_centre",
    "particle_series",
    "format_extxyz",
    "write_extxyz",
]

#: Site kinds, indexed by the codes in :attr:`Particle.site_kind`.
SITE_KINDS: tuple[str, ...] = ("bulk", "facet", "edge", "vertex")

#: Default relative tolerance for "on a face" (see module docstring).
ON_FACE_TOL = 1e-6

_CHUNK = 1 << 18  # atoms per block in the chunked passes (about 2 MB per float column)

Progress = Callable[[int], None] | None


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
        u = exc.direction if exc.direction is not None else (0.0, 0.0, 1.0)
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


# --------------------------------------------------------------------------------------
# first-neighbour shells of the infinite structure
# --------------------------------------------------------------------------------------


@dataclass(frozen=True, slots=True)
class FirstShells:
    """First-neighbour shell of every site in the infinite structure.

    Attributes
    ----------
    nearest : (S,) float array, Å
        Nearest-neighbour distance of each site.
    cutoff : (S,) float array, Å
        ``(1 + shell_width) * nearest``.
    coordination : (S,) int array
        Number of neighbours within ``cutoff`` (the bulk coordination).
    vectors : (S, K, 3) float array, Å
        Cartesian vectors to those neighbours, padded with NaN to ``K = max
        coordination``.
    """

    nearest: FloatArray
    cutoff: FloatArray
    coordination: IntArray
    vectors: FloatArray


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


def _translations_within(lattice: FloatArray, radius: float) -> IntArray:
    """Integer translations (T, 3) covering every lattice vector within ``radius`` Å."""
    recip = np.linalg.inv(lattice).T  # rows a*, b*, c* (no 2 pi)
    reach = np.ceil(radius * np.linalg.norm(recip, axis=1)).astype(int) + 1
    grids = np.meshgrid(*[np.arange(-r, r + 1) for r in reach], indexing="ij")
    return np.stack([g.ravel() for g in grids], axis=1)  # (T, 3)


def first_shells(
    lattice: ArrayLike, frac_coords: ArrayLike, *, shell_width: float = 0.1
) -> FirstShells:
    """First-neighbour shells of every site of a periodic structure.

    Parameters
    ----------
    lattice : (3, 3) float array, rows a, b, c in Å
    frac_coords : (S, 3) float array
    shell_width : float
        Neighbours within ``(1 + shell_width)`` times the nearest distance form the shell.

    Returns
    -------
    FirstShells

    Examples
    --------
    >>> a = 3.615  # fcc copper, primitive cell
    >>> lat = 0.5 * a * np.array([[0, 1, 1], [1, 0, 1], [1, 1, 0]])
    >>> int(first_shells(lat, [[0, 0, 0]]).coordination[0])
    12
    """
    lat, frac = _reduced(
        np.asarray(lattice, dtype=float), np.atleast_2d(np.asarray(frac_coords, dtype=float))
    )
    if not 0.0 < shell_width < 1.0:
        raise InputError(f"shell_width must lie between 0 and 1, got {shell_width}.")
    from scipy.spatial import cKDTree

    cart = frac @ lat  # (S, 3)
    # the shortest cell vector bounds the nearest-neighbour distance of every site
    radius = 1.0 + (1.0 + shell_width) * float(np.min(np.linalg.norm(lat, axis=1)))
    shift = _translations_within(lat, radius) @ lat  # (T, 3)
    images = (cart[None, :, :] + shift[:, None, :]).reshape(-1, 3)  # (T*S, 3)
    tree = cKDTree(images)
    dist, _ = tree.query(cart, k=2)  # (S, 2): the site itself, then its nearest neighbour
    nearest = dist[:, 1]
    cutoff = (1.0 + shell_width) * nearest
    found = tree.query_ball_point(cart, cutoff)  # one list of image indices per site
    vectors_list = [
        images[np.asarray(ids, dtype=np.int64)] - cart[i] for i, ids in enumerate(found)
    ]  # loop over the sites of one cell, not over atoms
    vectors_list = [v[np.linalg.norm(v, axis=1) > 1e-8] for v in vectors_list]
    coordination = np.array([len(v) for v in vectors_list], dtype=np.int64)
    vectors = np.full((len(frac), int(coordination.max()), 3), np.nan)
    for i, v in enumerate(vectors_list):
        vectors[i, : len(v)] = v
    return FirstShells(_frozen(nearest), _frozen(cutoff), _frozen(coordination), _frozen(vectors))


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


# --------------------------------------------------------------------------------------
# site classification
# --------------------------------------------------------------------------------------


@dataclass(frozen=True, slots=True)
class SiteClasses:
    """Coordination and site kind of every atom of a particle.

    Attributes
    ----------
    coordination : (M,) int array
        Neighbours within the site's first-shell cutoff, in the particle.
    kind : (M,) int8 array
        Index into :data:`SITE_KINDS`: 0 bulk, 1 facet, 2 edge, 3 vertex.
    facet_form : (M,) int array
        Form id of the plane a facet atom's missing bonds cross; -1 for other atoms.
    planes_crossed : (M,) int array
        Number of planes crossed by the missing bonds (0 for bulk atoms).
    """

    coordination: IntArray
    kind: Any
    facet_form: IntArray
    planes_crossed: IntArray


def classify_sites(
    positions: ArrayLike,
    site_index: ArrayLike,
    shells: FirstShells,
    normals: ArrayLike,
    distances: ArrayLike,
    form_ids: ArrayLike | None = None,
    *,
    on_face_tol: float = ON_FACE_TOL,
    progress: Progress = None,
) -> SiteClasses:
    """Coordination and bulk / facet / edge / vertex class of every atom.

    Coordination is counted with a k-d tree over the particle (``scipy.spatial.cKDTree``,
    radius = the site's first-shell cutoff). Only atoms closer to a plane than their
    cutoff are queried, in a tree of the atoms within two cutoffs of the surface; deeper
    atoms keep their bulk coordination exactly, because the particle is every atom of
    the structure inside a convex shape. Surface atoms (coordination below bulk) are then
    classified by the planes their missing bonds cross (module docstring).

    Parameters
    ----------
    positions : (M, 3) float array, Å
    site_index : (M,) int array
    shells : FirstShells
        From :func:`first_shells` on the same structure.
    normals : (N, 3) float array
    distances : (N,) float array, Å, the planes the particle was carved with
    form_ids : (N,) int array, optional
        Form of each plane; default each plane its own form.
    on_face_tol : float
        As in :func:`carve`.
    progress : callable, optional
        Called with the work done so far, in thousandths (0..1000).

    Returns
    -------
    SiteClasses
    """
    from scipy.spatial import cKDTree

    pos = np.atleast_2d(np.asarray(positions, dtype=float))
    site = np.asarray(site_index, dtype=np.int64)
    n, d = _check_planes(normals, distances)
    forms = np.arange(len(n)) if form_ids is None else np.asarray(form_ids, dtype=np.int64)
    eps = _eps(d, on_face_tol)
    m = len(pos)
    # Atoms deeper than their cutoff below every plane keep all their bulk neighbours
    # (each neighbour lies inside the convex shape, and the particle holds every atom
    # of the structure inside it), so the k-d tree is needed only near the surface.
    radius = shells.cutoff[site]  # (M,)
    depth = _depth(pos, n, d)  # (M,) distance below the nearest plane, Å
    reach = float(shells.cutoff.max())
    near = np.nonzero(depth < radius + eps)[0]
    layer = depth < 2.0 * reach + 2.0 * eps  # every neighbour of a near atom is in here
    coordination = shells.coordination[site].astype(np.int64)
    if len(near):
        tree = cKDTree(pos[layer])
        for k in range(0, len(near), _CHUNK):
            idx = near[k : k + _CHUNK]
            coordination[idx] = tree.query_ball_point(pos[idx], radius[idx], return_length=True)
            coordination[idx] -= 1  # the atom itself
            if progress is not None:
                progress(1000 * min(k + _CHUNK, len(near)) // len(near))
    surface = np.nonzero(coordination < shells.coordination[site])[0]
    crossed = np.zeros((len(surface), len(n)), dtype=bool)
    step = max(1, _CHUNK // max(1, shells.vectors.shape[1] * len(n)))
    for k in range(0, len(surface), step):
        idx = surface[k : k + step]
        nb = pos[idx][:, None, :] + shells.vectors[site[idx]]  # (B, K, 3) bulk neighbours
        excess = nb @ n.T - d  # (B, K, N); NaN for padding
        with np.errstate(invalid="ignore"):
            crossed[k : k + step] = np.any(excess > eps, axis=1)  # (B, N)
    count = crossed.sum(axis=1)
    kind = np.zeros(m, dtype=np.int8)
    kind[surface] = np.clip(count, 1, 3)
    facet_form = np.full(m, -1, dtype=np.int64)
    if len(surface):
        # facet atoms: the one plane crossed; a rounding stray that crosses none is
        # assigned to its nearest plane
        nearest = np.argmax(pos[surface] @ n.T - d, axis=1)
        which = np.where(count >= 1, np.argmax(crossed, axis=1), nearest)
        is_facet = count <= 1
        facet_form[surface[is_facet]] = forms[which[is_facet]]
    planes_crossed = np.zeros(m, dtype=np.int64)
    planes_crossed[surface] = count
    return SiteClasses(
        _frozen(coordination), _frozen(kind), _frozen(facet_form), _frozen(planes_crossed)
    )


# --------------------------------------------------------------------------------------
# carving centre
# --------------------------------------------------------------------------------------


def _wyckoff_points(
    lattice: FloatArray, frac: FloatArray, species: tuple[str, ...], *, denominator: int = 24
) -> dict[str, FloatArray]:
    """Wyckoff positions without free parameters: label (e.g. ``'4b'``) -> (3,) fractional.

    Candidate points on a ``1/denominator`` grid of the cell are kept when the operations
    fixing them fix no line (the stacked ``W - I`` have rank 3); each orbit is then named
    by spglib, which is given the structure plus that orbit as an extra element. Letters
    follow the standard setting of the space group (International Tables, Vol. A).
    """
    import spglib

    numbers = np.unique(species, return_inverse=True)[1].astype(int) + 1
    cell = (lattice, frac, numbers)
    data = spglib.get_symmetry_dataset(cell, symprec=1e-3)  # type: ignore[arg-type]
    if data is None:
        raise InputError("spglib could not find the symmetry of the structure.")
    rot = np.asarray(data.rotations, dtype=float)  # (G, 3, 3)
    tra = np.asarray(data.translations, dtype=float)  # (G, 3)
    steps = np.arange(denominator)
    ticks = np.stack(np.meshgrid(steps, steps, steps, indexing="ij"), axis=-1).reshape(-1, 3)
    grid = ticks / denominator  # (P, 3) candidate points
    shift = tra * denominator  # translations in grid steps
    exact = np.allclose(shift, np.rint(shift), atol=1e-6)
    gram = np.zeros((len(grid), 3, 3))  # (P, 3, 3): sum of (W-I)^T (W-I) over fixing ops
    for w_rot, w_shift in zip(rot, shift, strict=True):  # one pass per operation
        if exact:
            moved = ticks @ w_rot.astype(np.int64).T + np.rint(w_shift).astype(np.int64)
            fixes = np.all((moved - ticks) % denominator == 0, axis=1)  # (P,)
        else:  # pragma: no cover - translations off the grid: compare as floats
            delta = (ticks @ w_rot.T + w_shift - ticks) / denominator
            fixes = np.all(np.abs(delta - np.rint(delta)) < 1e-6, axis=1)
        wmi = w_rot - np.eye(3)
        gram[fixes] += wmi.T @ wmi
    isolated = np.abs(np.linalg.det(gram)) > 1e-6
    conv_volume = abs(np.linalg.det(np.asarray(data.std_lattice)))
    ratio = conv_volume / abs(np.linalg.det(lattice))
    out: dict[str, FloatArray] = {}
    seen: set[tuple[int, ...]] = set()
    for p in grid[isolated]:  # a few dozen special points at most
        if _key(p) in seen:
            continue
        orbit = rot @ p + tra  # (G, 3)
        keys = {_key(q) for q in orbit}
        seen |= keys
        orbit = np.array(sorted(keys), dtype=float) / _GRID_KEY
        on_atom = [i for i in range(len(frac)) if _key(frac[i]) in keys]
        if on_atom:
            letter = str(data.wyckoffs[on_atom[0]])
        else:
            aug = (
                lattice,
                np.vstack([frac, orbit]),
                np.concatenate([numbers, np.full(len(orbit), numbers.max() + 1)]),
            )
            aug_data = spglib.get_symmetry_dataset(aug, symprec=1e-3)  # type: ignore[arg-type]
            if aug_data is None or aug_data.number != data.number:
                continue
            letter = str(aug_data.wyckoffs[len(frac)])
        mult = int(round(len(orbit) * ratio))
        out.setdefault(f"{mult}{letter}", p.copy())
    return out


_GRID_KEY = 240000  # fractional coordinates compared in steps of 1/240000


def _key(p: Any) -> tuple[int, ...]:
    """Hashable key of a fractional point modulo the lattice."""
    k = np.rint(np.asarray(p, dtype=float) * _GRID_KEY).astype(np.int64) % _GRID_KEY
    return tuple(int(x) for x in k)


def resolve_centre(
    centre: Any, lattice: FloatArray, frac: FloatArray, species: tuple[str, ...]
) -> tuple[FloatArray, str]:
    """Fractional carving centre and a description of it.

    ``centre`` is ``'atom'`` (the first site), a site index, an element symbol (its first
    site), a Wyckoff label such as ``'4b'`` or ``'b'`` (a position without free
    parameters), a string ``'x,y,z'`` or a sequence of three fractional coordinates in
    [0, 1].
    """
    if isinstance(centre, (int, np.integer)) and not isinstance(centre, bool):
        if not 0 <= int(centre) < len(frac):
            raise InputError(
                f"centre site {int(centre)} does not exist; the structure has sites "
                f"0..{len(frac) - 1}."
            )
        return frac[int(centre)].copy(), f"site {int(centre)} ({species[int(centre)]})"
    if isinstance(centre, str):
        text = centre.strip()
        if text.lower() == "atom":
            return frac[0].copy(), f"atom (site 0, {species[0]})"
        if text in species:
            i = species.index(text)
            return frac[i].copy(), f"atom (site {i}, {text})"
        if "," in text or " " in text:
            try:
                centre = [float(v) for v in text.replace(",", " ").split()]
            except ValueError:
                raise InputError(
                    f"centre {text!r} is not three fractional coordinates like '0.5,0.5,0.5'."
                ) from None
        else:
            points = _wyckoff_points(lattice, frac, species)
            for label, point in points.items():
                if text == label or (text.isalpha() and label.lstrip("0123456789") == text):
                    return point, f"Wyckoff {label}"
            known = ", ".join(sorted(points)) or "none"
            raise InputError(
                f"centre {text!r} is neither 'atom', an element of the structure, a "
                f"Wyckoff position without free parameters ({known}) nor 'x,y,z'."
            )
    c = np.asarray(centre, dtype=float).ravel()
    if c.shape != (3,) or not np.all(np.isfinite(c)):
        raise InputError(f"centre must have three fractional coordinates, got {c.size}.")
    if np.any(c < -1e-9) or np.any(c > 1.0 + 1e-9):
        raise InputError(
            f"centre ({c[0]:g}, {c[1]:g}, {c[2]:g}) lies outside the cell; give "
            "fractional coordinates between 0 and 1."
        )
    return c, f"point ({c[0]:g}, {c[1]:g}, {c[2]:g})"


# --------------------------------------------------------------------------------------
# size
# --------------------------------------------------------------------------------------


def scale_for_size(geometry: ShapeGeometry, kind: str, value: float) -> float:
    """Scale factor that gives the shape (at scale 1: ``geometry``) the requested size.

    Parameters
    ----------
    geometry : ShapeGeometry
        The shape at scale 1.
    kind : {'edge', 'diameter', 'volume'}
        ``edge``: longest edge, Å; ``diameter``: diameter of the sphere of equal volume,
        Å; ``volume``: Å^3.
    value : float
        The size, positive.

    Returns
    -------
    float

    Examples
    --------
    >>> g = shape_geometry(np.vstack([np.eye(3), -np.eye(3)]), np.ones(6))
    >>> scale_for_size(g, "edge", 10.0)
    5.0
    """
    if not (math.isfinite(value) and value > 0):
        raise InputError(f"the {kind} must be a positive number, got {value}.")
    if kind == "edge":
        return float(value / geometry.edge_lengths.max())
    if kind == "volume":
        return float((value / geometry.volume) ** (1.0 / 3.0))
    if kind == "diameter":
        return float((math.pi * value**3 / 6.0 / geometry.volume) ** (1.0 / 3.0))
    raise InputError(f"size kind {kind!r} is not one of 'edge', 'diameter', 'volume'.")


def achievable_counts(
    critical: ArrayLike, target: int, *, rel_gap: float = 1e-7
) -> tuple[int, float, int, float]:
    """Find the atom counts reachable just below and above ``target``, with scales.

    The count of a particle is a step function of the scale: an atom enters when the
    scale reaches its critical scale. Sorting the critical scales and bisecting
    (``numpy.searchsorted``) gives the nearest reachable counts exactly.

    Parameters
    ----------
    critical : (M,) float array
        Critical scales (:func:`critical_scales`) of every atom of a particle carved at
        a scale large enough to hold ``target`` atoms.
    target : int
    rel_gap : float
        Critical scales closer than this (relative) enter together.

    Returns
    -------
    below, scale_below, above, scale_above
        ``below <= target <= above`` (``below`` may be 0 and ``above`` -1 when no count
        is reachable on that side).
    """
    s = np.sort(np.asarray(critical, dtype=float))
    if len(s) == 0:
        return 0, 0.0, -1, math.inf
    # last index of each level: where the next critical scale is clearly larger
    gap = np.diff(s) > rel_gap * np.maximum(s[1:], 1e-300)
    ends = np.append(np.nonzero(gap)[0], len(s) - 1)  # (L,) level ends
    counts = ends + 1
    k = int(np.searchsorted(counts, target, side="left"))  # first level with >= target
    above, scale_above = (int(counts[k]), float(s[ends[k]])) if k < len(counts) else (-1, math.inf)
    if k < len(counts) and counts[k] == target:
        return above, scale_above, above, scale_above
    below, scale_below = (int(counts[k - 1]), float(s[ends[k - 1]])) if k > 0 else (0, 0.0)
    return below, scale_below, above, scale_above


# --------------------------------------------------------------------------------------
# the particle
# --------------------------------------------------------------------------------------


def _frozen(a: Any) -> Any:
    a = np.ascontiguousarray(a)
    a.setflags(write=False)
    return a


def _form_label(hkl: Sequence[int]) -> str:
    h = [int(x) for x in hkl]
    sep = " " if any(abs(x) > 9 for x in h) else ""
    return "{" + sep.join(str(x) for x in h) + "}"


@dataclass(frozen=True, slots=True)
class Particle:
    """A particle of atoms carved from a crystal structure, with its site classes.

    Attributes
    ----------
    positions : (M, 3) float array, Å, relative to the carving centre
    species : (M,) str array
    site_index : (M,) int array, index of each atom's site in the structure
    coordination : (M,) int array
    kind : (M,) int8 array, index into :data:`SITE_KINDS`
    facet_form : (M,) int array, form id of facet atoms, -1 otherwise
    bulk_coordination : (S,) int array, per site of the structure
    normals : (N, 3) float array, unit
    distances : (N,) float array, Å, central distances of the particle's planes
    form_ids : (N,) int array
    form_labels : tuple of str, label of each form id (e.g. ``'{111}'``)
    lattice : (3, 3) float array, Å
    centre : (3,) float array, fractional carving centre
    centre_note : str, how the centre was chosen
    scale : float, factor applied to the given distances (or the shell number K)
    atom_volume : float, Å^3, cell volume / atoms per cell
    shape_volume : float, Å^3, volume of the carving shape
    size_note : mapping, how the size was reached (e.g. nearest achievable counts)
    """

    positions: FloatArray
    species: Any
    site_index: IntArray
    coordination: IntArray
    kind: Any
    facet_form: IntArray
    bulk_coordination: IntArray
    normals: FloatArray
    distances: FloatArray
    form_ids: IntArray
    form_labels: tuple[str, ...]
    lattice: FloatArray
    centre: FloatArray
    centre_note: str
    scale: float
    atom_volume: float
    shape_volume: float
    size_note: Mapping[str, Any]

    @property
    def n_atoms(self) -> int:
        """Number of atoms."""
        return int(len(self.positions))

    @property
    def is_surface(self) -> Any:
        """(M,) bool array: coordination below the bulk value of the site."""
        return self.kind > 0

    @property
    def n_surface(self) -> int:
        """Number of surface atoms."""
        return int(np.count_nonzero(self.kind))

    @property
    def dispersion(self) -> float:
        """Surface atoms / all atoms."""
        return self.n_surface / self.n_atoms if self.n_atoms else 0.0

    @property
    def diameter(self) -> float:
        """Equivalent diameter, Å: sphere of volume ``n_atoms * atom_volume``."""
        return float((6.0 * self.n_atoms * self.atom_volume / math.pi) ** (1.0 / 3.0))

    def site_labels(self) -> Any:
        """(M,) str array: ``bulk``, ``facet{hkl}``, ``edge`` or ``vertex``."""
        names = np.array(SITE_KINDS, dtype=object)[self.kind]
        facet = self.kind == 1
        forms = np.array(
            [f"facet{lab}" if lab.startswith("{") else f"facet_{lab}" for lab in self.form_labels]
            + ["facet"],
            dtype=object,
        )
        names[facet] = forms[self.facet_form[facet]]
        return names.astype(str)

    def summary(self) -> dict[str, Any]:
        """Site statistics as a JSON-ready dict (keys carry their units)."""
        facet_counts = {
            lab: int(np.count_nonzero((self.kind == 1) & (self.facet_form == f)))
            for f, lab in enumerate(self.form_labels)
        }
        names, counts = np.unique(self.species, return_counts=True)
        by_species = {str(sp): int(k) for sp, k in zip(names, counts, strict=True)}
        return {
            "atoms": self.n_atoms,
            "atoms_by_species": by_species,
            "surface_atoms": self.n_surface,
            "bulk_atoms": int(np.count_nonzero(self.kind == 0)),
            "facet_atoms": int(np.count_nonzero(self.kind == 1)),
            "facet_atoms_by_form": facet_counts,
            "edge_atoms": int(np.count_nonzero(self.kind == 2)),
            "vertex_atoms": int(np.count_nonzero(self.kind == 3)),
            "dispersion": self.dispersion,
            "equivalent_diameter_A": self.diameter,
            "equivalent_diameter_nm": self.diameter / 10.0,
            "shape_volume_A3": self.shape_volume,
            "scale": self.scale,
            "centre_frac": [float(x) for x in self.centre],
            "centre": self.centre_note,
            "bulk_coordination_by_site": [int(x) for x in self.bulk_coordination],
            "size": dict(self.size_note),
        }


def make_particle(
    structure: Any,
    normals: ArrayLike,
    distances: ArrayLike | None,
    *,
    hkl: ArrayLike | None = None,
    form_ids: ArrayLike | None = None,
    form_labels: Sequence[str] | None = None,
    centre: Any = "atom",
    edge: float | None = None,
    diameter: float | None = None,
    volume: float | None = None,
    atoms: int | None = None,
    shells: int | None = None,
    layer_spacings: ArrayLike | None = None,
    shell_width: float = 0.1,
    on_face_tol: float = ON_FACE_TOL,
    progress: Progress = None,
) -> Particle:
    """Carve a particle from a structure, sized one of five ways, and classify its sites.

    Parameters
    ----------
    structure : pymatgen Structure or (lattice, frac_coords, species)
        See :func:`as_sites`.
    normals : (N, 3) float array, Cartesian (same frame as the structure's lattice)
    distances : (N,) float array, Å, or None with ``shells``
        Central distances of the shape; only their ratios matter when a size is given.
    hkl : (N, 3) int array, optional
        Miller indices of the planes, used for the default form labels.
    form_ids : (N,) int array, optional
        Form of each plane (0..F-1); default: each plane its own form.
    form_labels : sequence of F str, optional
        Default ``'{hkl}'`` of the form's first plane, or ``'form<i>'``.
    centre : str, int or (3,) array
        ``'atom'`` (default), an element symbol, a site index, a Wyckoff label
        (``'4b'``), ``'x,y,z'`` or three fractional coordinates in [0, 1].
    edge, diameter, volume : float, optional
        Longest edge (Å), equivalent-sphere diameter of the shape (Å) or its volume (Å^3).
    atoms : int, optional
        Target number of atoms; the nearest achievable count is used (ties: the larger)
        and both neighbours are reported in ``size_note``.
    shells : int, optional
        Closed shells: every plane at ``shells * layer_spacings`` from the centre.
    layer_spacings : (N,) float array, Å
        First-allowed layer spacing ``d_eff`` of each plane's form (for ``shells``).
    shell_width : float
        See :func:`first_shells`.
    on_face_tol : float
        See the module docstring.
    progress : callable, optional
        Called with the work done so far in thousandths of the whole job (0..1000).

    Returns
    -------
    Particle

    Raises
    ------
    InputError
        Several sizes or none-with-nothing, a size smaller than one atom, a bad centre.
    OpenShapeError
        Planes that do not close.

    Examples
    --------
    >>> lat = 3.615 * np.eye(3)  # fcc copper, conventional cell (invented use)
    >>> fcc = (lat, [[0, 0, 0], [0, .5, .5], [.5, 0, .5], [.5, .5, 0]], ["Cu"] * 4)
    >>> n = np.array([[i, j, k] for i in (-1, 1) for j in (-1, 1) for k in (-1, 1)])
    >>> n = np.vstack([n, np.eye(3), -np.eye(3)])
    >>> spacing = np.r_[np.full(8, 3.615 / 3**0.5), np.full(6, 3.615 / 2)]
    >>> p = make_particle(fcc, n, None, shells=2, layer_spacings=spacing,
    ...                   form_ids=[0] * 8 + [1] * 6)
    >>> p.n_atoms, p.n_surface
    (55, 42)
    """
    lat, frac, species = as_sites(structure)
    chosen = [
        k
        for k, v in {
            "edge": edge,
            "diameter": diameter,
            "volume": volume,
            "atoms": atoms,
            "shells": shells,
        }.items()
        if v is not None
    ]
    if len(chosen) > 1:
        raise InputError(f"give one size only, got {', '.join(chosen)}.")
    n_raw = np.atleast_2d(np.asarray(normals, dtype=float))
    if shells is not None:
        if layer_spacings is None:
            raise InputError("shells needs the layer spacing d_eff of every plane.")
        if int(shells) != shells or shells < 1:
            raise InputError(f"shells must be a whole number of at least 1, got {shells}.")
        distances = float(shells) * np.asarray(layer_spacings, dtype=float)
    if distances is None:
        raise InputError("give the planes' central distances or a number of shells.")
    n, d = _check_planes(n_raw, distances)
    nplanes = len(n)
    fid = np.arange(nplanes) if form_ids is None else np.asarray(form_ids, dtype=np.int64)
    if fid.shape != (nplanes,) or (nplanes and (fid.min() < 0)):
        raise InputError(f"form_ids must be {nplanes} non-negative integers.")
    nforms = int(fid.max()) + 1 if nplanes else 0
    if form_labels is None:
        if hkl is not None:
            h = np.asarray(hkl, dtype=np.int64).reshape(nplanes, 3)
            labels = tuple(
                _form_label(max(map(tuple, h[fid == f]))) if np.any(fid == f) else f"form{f}"
                for f in range(nforms)
            )
        else:
            labels = tuple(f"form{f}" for f in range(nforms))
    else:
        labels = tuple(str(x) for x in form_labels)
        if len(labels) < nforms:
            raise InputError(f"form_labels needs {nforms} labels, got {len(labels)}.")
    c, centre_note = resolve_centre(centre, lat, frac, species)
    geom = shape_geometry(n, d)
    atom_volume = abs(float(np.linalg.det(lat))) / len(frac)
    size_note: dict[str, Any] = {}

    def report(done: int) -> None:
        if progress is not None:
            progress(done)

    scale = 1.0
    if shells is not None:
        scale = float(shells)
        size_note = {"shells": int(shells)}
        d_use = d
        shape_volume = geom.volume
    elif atoms is not None:
        if int(atoms) != atoms or atoms < 2:
            raise InputError(f"the number of atoms must be a whole number >= 2, got {atoms}.")
        target = int(atoms)
        # the expected volume plus one neighbour shell of margin; enlarged if too small
        nn = float(np.max(first_shells(lat, frac, shell_width=shell_width).nearest))
        s_try = (target * atom_volume / geom.volume) ** (1.0 / 3.0) + nn / float(d.min())
        for _ in range(60):
            pos, site = carve(
                lat,
                frac,
                n,
                d * s_try,
                centre=c,
                on_face_tol=on_face_tol,
                progress=(lambda k: report(k // 2)) if progress is not None else None,
            )
            crit = critical_scales(pos, n, d)
            # critical scales closer than the on-face tolerance enter together
            gap = 2.0 * on_face_tol * max(1.0, s_try * float(d.max())) / (s_try * float(d.min()))
            below, sb, above, sa = achievable_counts(crit, target, rel_gap=gap)
            if above > 0 and sa < s_try * (1 - 1e-6):
                break
            s_try *= 1.25
        # ties go to the larger particle; a lone atom (scale 0) is not a particle
        use_above = above > 0 and (below < 2 or above - target <= target - below)
        scale = sa if use_above else sb
        if below < 2 and not use_above:
            raise InputError(f"no particle with about {target} atoms could be made.")
        size_note = {
            "requested_atoms": target,
            "nearest_below": below,
            "nearest_above": above,
            "scale_below": sb,
            "scale_above": sa,
        }
        report(600)
        d_use = d * scale
        shape_volume = geom.volume * scale**3
    else:
        for kind, value in (("edge", edge), ("diameter", diameter), ("volume", volume)):
            if value is not None:
                scale = scale_for_size(geom, kind, float(value))
                size_note = {f"requested_{kind}": float(value)}
        d_use = d * scale
        shape_volume = geom.volume * scale**3
    span = 2.0 * scale * float(np.max(np.linalg.norm(geom.vertices, axis=1)))
    nearest = float(np.min(first_shells(lat, frac, shell_width=shell_width).nearest))
    if span < nearest:
        raise InputError(
            f"the requested shape spans {span:.3g} Å, less than the nearest-neighbour "
            f"distance {nearest:.3g} Å, so it cannot hold more than one atom; ask for a "
            "larger size."
        )
    if atoms is not None:
        # the particle at the chosen scale is a subset of the one already carved
        keep = _inside(pos, n, d_use, _eps(d_use, on_face_tol))
        pos, site = pos[keep], site[keep]
    else:
        pos, site = carve(
            lat,
            frac,
            n,
            d_use,
            centre=c,
            on_face_tol=on_face_tol,
            progress=(lambda k: report(100 + k // 2)) if progress is not None else None,
        )
    if len(pos) == 0:
        raise EmptyPolyhedronError(
            "no atom lies inside the shape at this size; ask for a larger size or centre "
            "the shape on an atom."
        )
    report(600)
    shells_info = first_shells(lat, frac, shell_width=shell_width)
    classes = classify_sites(
        pos,
        site,
        shells_info,
        n,
        d_use,
        fid,
        on_face_tol=on_face_tol,
        progress=(lambda k: report(600 + 38 * k // 100)) if progress is not None else None,
    )
    report(1000)
    size_note.setdefault("atoms", int(len(pos)))
    return Particle(
        positions=_frozen(pos),
        species=_frozen(np.array(species)[site]),
        site_index=_frozen(site),
        coordination=_frozen(classes.coordination),
        kind=_frozen(classes.kind),
        facet_form=_frozen(classes.facet_form),
        bulk_coordination=_frozen(shells_info.coordination),
        normals=_frozen(n),
        distances=_frozen(d_use),
        form_ids=_frozen(fid),
        form_labels=labels,
        lattice=_frozen(lat),
        centre=_frozen(c),
        centre_note=centre_note,
        scale=float(scale),
        atom_volume=atom_volume,
        shape_volume=float(shape_volume),
        size_note=types.MappingProxyType(size_note),
    )


def particle_series(
    structure: Any,
    normals: ArrayLike,
    distances: ArrayLike | None,
    *,
    kind: str,
    values: Sequence[float],
    progress: Progress = None,
    **kwargs: Any,
) -> list[dict[str, Any]]:
    """Site statistics over a series of sizes.

    Parameters
    ----------
    structure, normals, distances, **kwargs
        As in :func:`make_particle`.
    kind : {'edge', 'diameter', 'volume', 'atoms', 'shells'}
    values : sequence of float
        The sizes, in the unit of ``kind``.
    progress : callable, optional
        Called with the number of sizes done.

    Returns
    -------
    list of dict
        One :meth:`Particle.summary` per size, in the given order.
    """
    if kind not in ("edge", "diameter", "volume", "atoms", "shells"):
        raise InputError(
            f"series kind {kind!r} is not one of edge, diameter, volume, atoms, shells."
        )
    rows = []
    for i, value in enumerate(values):
        v: Any = int(value) if kind in ("atoms", "shells") else float(value)
        p = make_particle(structure, normals, distances, **{kind: v}, **kwargs)
        rows.append(p.summary())
        if progress is not None:
            progress(i + 1)
    return rows


# --------------------------------------------------------------------------------------
# from a Crystal (habit.crystal) and its forms
# --------------------------------------------------------------------------------------


def _form_items(crystal: Any, forms: Any) -> tuple[list[tuple[int, int, int]], list[float]]:
    """One face per form and its value, from a mapping, FormValues, pairs or the crystal."""
    if forms is None:
        forms = crystal.forms
        if forms is None:
            raise InputError(
                f"{crystal.name or 'the crystal'} has no forms; give forms and their values, "
                "e.g. --form 111=1.95 --form 100=2.17."
            )
    if hasattr(forms, "hkl") and hasattr(forms, "values") and not isinstance(forms, Mapping):
        pairs: Any = zip(forms.hkl, forms.values, strict=True)
    else:
        pairs = forms.items() if isinstance(forms, Mapping) else forms
    hkls: list[tuple[int, int, int]] = []
    values: list[float] = []
    for key, value in pairs:
        hkl = crystal.parse_face(key) if isinstance(key, str) else tuple(int(v) for v in key)
        if len(hkl) != 3:
            raise InputError(f"a form needs three Miller indices; got {key!r}.")
        try:
            v = float(value)
        except (TypeError, ValueError):
            raise InputError(
                f"the value of form {key!r} must be a number; got {value!r}."
            ) from None
        if not (math.isfinite(v) and v > 0):
            raise InputError(f"the value of form {key!r} must be positive; got {value!r}.")
        hkls.append(hkl)  # type: ignore[arg-type]
        values.append(v)
    if not hkls:
        raise InputError("give at least one form, e.g. --form 111=1.95.")
    return hkls, values


def crystal_planes(crystal: Any, forms: Any = None, *, shells: bool = False) -> dict[str, Any]:
    """Planes of a crystal's forms, ready for :func:`make_particle`.

    Every face of every form (expanded by the crystal class) gets a plane at a central
    distance proportional to the form's value (energy, distance or rate: the Wulff
    construction, G. Wulff 1901). With ``shells=True`` the values are not used and each
    plane instead carries its form's first-allowed layer spacing
    ``d_eff = d(hkl) / n``, n the first order not absent in the space group
    (Donnay & Harker 1937).

    Parameters
    ----------
    crystal : habit.crystal.Crystal
        With atoms (``crystal.structure``).
    forms : mapping, FormValues or None
        Face -> value; default the crystal's own forms.
    shells : bool
        Return layer spacings for a closed-shell particle.

    Returns
    -------
    dict
        ``structure``, ``normals`` (N, 3), ``distances`` (N,) (None with ``shells``),
        ``layer_spacings`` (N,) Å (only with ``shells``), ``hkl`` (N, 3), ``form_ids``
        (N,), ``form_labels`` (F,): keyword arguments for :func:`make_particle`.
    """
    from habit.wulff import form_planes

    if getattr(crystal, "structure", None) is None:
        raise InputError(
            f"{crystal.name or 'the crystal'} has no atoms; load it from a CIF (or a crystal "
            "file that names one) to carve a particle."
        )
    hkls, values = _form_items(crystal, forms)
    normals, distances, hkl_all, form_ids = form_planes(crystal, hkls, values)
    # form_planes drops repeated forms: renumber the ids 0..F-1 in order of appearance
    kept, form_ids = np.unique(form_ids, return_inverse=True)
    labels = tuple(crystal.format_face(hkls[int(k)], "{}").replace(" ", "") for k in kept)
    out: dict[str, Any] = {
        "structure": crystal.structure,
        "normals": normals,
        "distances": distances,
        "hkl": hkl_all,
        "form_ids": form_ids.astype(np.int64),
        "form_labels": labels,
    }
    if shells:
        from habit.symmetry import first_allowed_order

        if crystal.space_group is None:
            raise InputError("shells need the space group of the crystal (load it from a CIF).")
        orders = np.asarray(first_allowed_order(hkl_all, crystal.space_group))
        out["layer_spacings"] = np.asarray(crystal.d_spacing(hkl_all), dtype=float) / orders
        out["distances"] = None
    return out


def polyhedron_planes(polyhedron: Any) -> dict[str, Any]:
    """Planes of a habit Polyhedron (Wulff shape, drawing, reference solid) as keywords.

    Parameters
    ----------
    polyhedron : habit.polyhedron.Polyhedron
        Its origin becomes the carving centre, so it must lie inside the solid.

    Returns
    -------
    dict
        ``normals``, ``distances`` (Å: sizes given to :func:`make_particle` rescale
        them), ``hkl`` (or None), ``form_ids`` and ``form_labels`` (when known), to be
        passed to :func:`make_particle` together with a structure in the same frame.
    """
    normals = np.asarray(polyhedron.normals, dtype=float)
    out: dict[str, Any] = {
        "normals": normals,
        "distances": np.asarray(polyhedron.distances, dtype=float),
        "hkl": None if polyhedron.hkl is None else np.asarray(polyhedron.hkl),
    }
    if polyhedron.form_ids is not None:
        kept, ids = np.unique(np.asarray(polyhedron.form_ids), return_inverse=True)
        out["form_ids"] = ids.astype(np.int64)
        if polyhedron.form_labels is not None:
            labels = tuple(polyhedron.form_labels)
            out["form_labels"] = tuple(
                labels[int(k)].replace(" ", "") if int(k) < len(labels) else f"form{int(k)}"
                for k in kept
            )
    return out


# --------------------------------------------------------------------------------------
# export
# --------------------------------------------------------------------------------------


def format_extxyz(particle: Particle, *, vacuum: float = 10.0, comment: str = "") -> str:
    """Return the particle as extended XYZ text.

    The atoms are shifted into an orthogonal box that leaves ``vacuum`` Å on every side
    (``Lattice=`` of the comment line, ``pbc="F F F"``); the columns are species,
    position (Å), site label (``bulk``, ``facet{hkl}``, ``edge``, ``vertex``) and
    coordination.

    Parameters
    ----------
    particle : Particle
    vacuum : float
        Space around the particle, Å.
    comment : str
        Free text added as ``comment="..."`` (double quotes are replaced).

    Returns
    -------
    str
    """
    pos = particle.positions
    low = pos.min(axis=0) - vacuum
    box = pos.max(axis=0) - pos.min(axis=0) + 2.0 * vacuum
    shifted = pos - low
    centre = -low
    lattice = f"{box[0]:.6f} 0 0 0 {box[1]:.6f} 0 0 0 {box[2]:.6f}"
    header = (
        f'Lattice="{lattice}" '
        "Properties=species:S:1:pos:R:3:site:S:1:coordination:I:1 "
        f'pbc="F F F" centre="{centre[0]:.6f} {centre[1]:.6f} {centre[2]:.6f}"'
    )
    if comment:
        header += ' comment="' + comment.replace('"', "'") + '"'
    labels = ["_".join(lab.split()) for lab in particle.site_labels().tolist()]  # no blanks
    line = "{:<3}{:14.6f}{:14.6f}{:14.6f}  {} {}".format
    body = map(
        line,
        particle.species.tolist(),
        shifted[:, 0].tolist(),
        shifted[:, 1].tolist(),
        shifted[:, 2].tolist(),
        labels,
        particle.coordination.tolist(),
    )
    return f"{particle.n_atoms}\n{header}\n" + "\n".join(body) + "\n"


def write_extxyz(particle: Particle, path: str | os.PathLike[str], **kwargs: Any) -> None:
    """Write :func:`format_extxyz` to ``path`` atomically (temporary file, then rename).

    Parameters
    ----------
    particle : Particle
    path : str or path-like
    **kwargs
        Passed to :func:`format_extxyz`.
    """
    from habit.errors import FileFormatError

    text = format_extxyz(particle, **kwargs)
    target = os.fspath(path)
    folder = os.path.dirname(target) or "."
    if not os.path.isdir(folder):
        raise FileFormatError(f"cannot write {target}: folder {folder} does not exist.")
    fd, tmp = tempfile.mkstemp(prefix=".particle.", suffix=".part", dir=folder)
    try:
        with os.fdopen(fd, "w") as handle:
            handle.write(text)
        os.replace(tmp, target)
    except BaseException:
        if os.path.exists(tmp):
            os.unlink(tmp)
        raise
