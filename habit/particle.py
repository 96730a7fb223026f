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

Layout
------
This module is the public entry: every name in ``__all__`` is importable from here. The
shape and the carving live in :mod:`habit._carve`, the neighbour shells, site classes and
carving centres in :mod:`habit._sites`, and the extended-XYZ writer in :mod:`habit.io`.

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
import types
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from habit._carve import (
    ON_FACE_TOL,
    Progress,
    ShapeGeometry,
    _check_planes,
    _eps,
    _frozen,
    _inside,
    as_sites,
    carve,
    critical_scales,
    shape_geometry,
)
from habit._sites import (
    SITE_KINDS,
    FirstShells,
    SiteClasses,
    classify_sites,
    first_shells,
    resolve_centre,
)
from habit._typing import FloatArray, IntArray
from habit.errors import EmptyPolyhedronError, InputError
from habit.io import format_extxyz, write_extxyz

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
