"""Sites of a carved particle: first-neighbour shells, surface-site classes, centres.

The bulk first-neighbour shell of every site, the classification of a particle's atoms
into bulk, facet, edge and vertex sites, and carving centres on special (Wyckoff)
positions.

Definitions (first-neighbour shell, surface, facet, edge and vertex atom) are stated in
:mod:`habit.particle`, the public entry to these functions.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from habit._carve import (
    _CHUNK,
    ON_FACE_TOL,
    Progress,
    _check_planes,
    _depth,
    _eps,
    _frozen,
    _reduced,
)
from habit._typing import FloatArray, IntArray
from habit.errors import InputError

__all__ = [
    "SITE_KINDS",
    "FirstShells",
    "SiteClasses",
    "first_shells",
    "classify_sites",
    "resolve_centre",
]

#: Site kinds, indexed by the codes in :attr:`habit.particle.Particle.site_kind`.
SITE_KINDS: tuple[str, ...] = ("bulk", "facet", "edge", "vertex")


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
