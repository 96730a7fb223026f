"""Atomic packing fraction: how much of a crystal's cell its atoms fill as hard spheres.

The packing fraction is the summed volume of one sphere per atom in the cell divided by
the cell volume,

    APF = Σ_i (4/3) π r_i³ / V_cell,

with radii from one of several sources (:data:`RADIUS_SOURCES`). Where spheres overlap
(their radii add up to more than the distance between the atoms) the overlapping volume
is counted twice, as in the usual textbook definition; every such overlap is reported so
the number can be judged.

References
----------
R. D. Shannon (1976), "Revised effective ionic radii and systematic studies of
interatomic distances in halides and chalcogenides", Acta Cryst. A32, 751–767.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from habit._typing import FloatArray
from habit.errors import InputError, UnknownSymbolError

__all__ = ["PackingFraction", "Overlap", "atomic_packing_fraction", "RADIUS_SOURCES"]

#: Where sphere radii can come from.
RADIUS_SOURCES = {
    "contact": "half the distance from each atom to its nearest neighbour (touching spheres)",
    "metallic": "metallic radii (pymatgen's element table)",
    "atomic": "empirical atomic radii (pymatgen's element table)",
    "covalent": "covalent radii (pymatgen's table)",
    "ionic": "Shannon (1976) effective ionic radii by oxidation state and coordination",
    "crystal": "Shannon (1976) crystal radii by oxidation state and coordination",
}

_ROMAN = {
    1: "I",
    2: "II",
    3: "III",
    4: "IV",
    5: "V",
    6: "VI",
    7: "VII",
    8: "VIII",
    9: "IX",
    10: "X",
    11: "XI",
    12: "XII",
    14: "XIV",
}


@dataclass(frozen=True, slots=True)
class Overlap:
    """Two spheres that overlap: site indices, distance and radius sum (Å)."""

    site1: int
    site2: int
    distance: float
    radius_sum: float


@dataclass(frozen=True, slots=True)
class PackingFraction:
    """The atomic packing fraction of a structure, with its evidence.

    Attributes
    ----------
    fraction : float
        Summed sphere volume over cell volume (dimensionless).
    radius_source : str
    radii : (N,) float array
        Radius used for each site, Å.
    site_labels : tuple of str
    site_fractions : (N,) float array
        Each site's contribution to the packing fraction (they sum to ``fraction``).
    coordination : (N,) int array
        Number of nearest neighbours used (for ionic radii and for reporting).
    cell_volume : float
        Å³.
    overlaps : tuple of Overlap
        Pairs of spheres that overlap by more than 0.01 Å.
    """

    fraction: float
    radius_source: str
    radii: FloatArray
    site_labels: tuple[str, ...]
    site_fractions: FloatArray
    coordination: Any
    cell_volume: float
    overlaps: tuple[Overlap, ...]


def _nearest_shell(structure: Any, tol: float = 0.05) -> tuple[FloatArray, Any]:
    """Nearest-neighbour distance (Å) and count of each site (within ``tol`` relative)."""
    lattice_lengths = np.array(structure.lattice.abc)
    cutoff = float(max(lattice_lengths.max(), 3.0)) * 1.01
    nn_dist = np.empty(len(structure))
    counts = np.empty(len(structure), dtype=np.int64)
    center, point, _, dist = structure.get_neighbor_list(cutoff)
    for i in range(len(structure)):
        d = dist[(center == i) & (dist > 1e-8)]
        if d.size == 0:
            raise InputError(f"site {i} of the structure has no neighbour within {cutoff:.1f} Å.")
        nn_dist[i] = d.min()
        counts[i] = int(np.sum(d <= d.min() * (1.0 + tol)))
    del point
    return nn_dist, counts


def _coordination_for_ions(structure: Any, radii_guess: FloatArray) -> Any:
    """Coordination numbers of ions: neighbours of opposite sign in the first shell."""
    counts = np.zeros(len(structure), dtype=np.int64)
    cutoff = 4.0
    center, point, _, dist = structure.get_neighbor_list(cutoff)
    oxi = np.array([getattr(s.specie, "oxi_state", 0) or 0 for s in structure], dtype=float)
    for i in range(len(structure)):
        mask = (center == i) & (np.sign(oxi[point]) == -np.sign(oxi[i])) & (dist > 1e-8)
        d = dist[mask]
        if d.size == 0:
            continue
        counts[i] = int(np.sum(d <= d.min() * 1.15))
    del radii_guess
    return counts


def atomic_packing_fraction(
    structure: Any,
    *,
    radii: str | dict[str, float] = "contact",
    coordination: dict[str, int] | None = None,
) -> PackingFraction:
    """Atomic packing fraction of a structure.

    Parameters
    ----------
    structure : pymatgen.core.Structure
        The atoms in their cell. For ionic radii the species must carry oxidation states
        (e.g. ``Ca2+``; a CIF with ``_atom_type_oxidation_number`` gives them).
    radii : str or dict
        One of :data:`RADIUS_SOURCES`, or a mapping from element or species symbol
        (``'Cu'``, ``'O2-'``) to a radius in Å given by the user.
    coordination : dict, optional
        For ionic and crystal radii, coordination numbers by species symbol overriding
        the ones counted from the structure (first shell of oppositely charged ions).

    Returns
    -------
    PackingFraction

    Examples
    --------
    >>> from pymatgen.core import Lattice, Structure
    >>> po = Structure(Lattice.cubic(3.35), ["Po"], [[0, 0, 0]])
    >>> round(atomic_packing_fraction(po).fraction, 6)   # simple cubic: pi/6
    0.523599
    >>> atomic_packing_fraction(po, radii="magic")
    Traceback (most recent call last):
    ...
    habit.errors.UnknownSymbolError: unknown radius source 'magic'; use one of contact, ...
    """
    if len(structure) == 0:
        raise InputError("the structure has no atoms; a packing fraction needs atom positions.")
    n = len(structure)
    labels = tuple(str(site.specie) if site.is_ordered else str(site.species) for site in structure)
    nn_dist, nn_count = _nearest_shell(structure)
    coord = nn_count
    if isinstance(radii, dict):
        source = "user"
        r = np.empty(n)
        for i, site in enumerate(structure):
            keys = [str(site.specie), getattr(site.specie, "symbol", str(site.specie))]
            for key in keys:
                if key in radii:
                    r[i] = float(radii[key])
                    break
            else:
                raise InputError(f"no radius given for {keys[0]}; give one in Å for every element.")
        if np.any(~np.isfinite(r)) or np.any(r <= 0):
            raise InputError("radii must be positive lengths in Å.")
    elif radii == "contact":
        source = radii
        r = nn_dist / 2.0
    elif radii in ("metallic", "atomic", "covalent"):
        source = radii
        r = np.array([_table_radius(site, radii) for site in structure])
    elif radii in ("ionic", "crystal"):
        source = radii
        coord = _coordination_for_ions(structure, nn_dist)
        r = np.empty(n)
        for i, site in enumerate(structure):
            cn = int(coord[i])
            if coordination and str(site.specie) in coordination:
                cn = int(coordination[str(site.specie)])
                coord[i] = cn
            r[i] = _shannon_radius(site, cn, radii)
    else:
        raise UnknownSymbolError(
            f"unknown radius source {radii!r}; use one of {', '.join(RADIUS_SOURCES)}, "
            "or give radii per element in Å."
        )
    volume = float(structure.lattice.volume)
    site_fractions = (4.0 / 3.0) * math.pi * r**3 / volume
    overlaps = _find_overlaps(structure, r)
    r.setflags(write=False)
    site_fractions.setflags(write=False)
    return PackingFraction(
        fraction=float(site_fractions.sum()),
        radius_source=source,
        radii=r,
        site_labels=labels,
        site_fractions=site_fractions,
        coordination=coord,
        cell_volume=volume,
        overlaps=overlaps,
    )


def _table_radius(site: Any, kind: str) -> float:
    from pymatgen.core.periodic_table import Element

    element = Element(getattr(site.specie, "symbol", str(site.specie)))
    if kind == "covalent":
        from pymatgen.analysis.molecule_structure_comparator import CovalentRadius

        value = CovalentRadius.radius.get(element.symbol)
    elif kind == "metallic":
        value = element.metallic_radius
    else:
        value = element.atomic_radius
    if value is None or not math.isfinite(float(value)) or float(value) <= 0:
        raise InputError(f"no {kind} radius is tabulated for {element.symbol}; give radii in Å.")
    return float(value)


def _shannon_radius(site: Any, cn: int, kind: str) -> float:
    specie = site.specie
    oxi = getattr(specie, "oxi_state", None)
    if not oxi:
        raise InputError(
            f"{specie} has no oxidation state; ionic radii need species like 'Ca2+' "
            "(in the CIF's _atom_type_oxidation_number) or radii given in Å."
        )
    roman = _ROMAN.get(cn)
    try:
        return float(specie.get_shannon_radius(roman or str(cn), radius_type=kind))
    except (KeyError, TypeError, ValueError):
        raise InputError(
            f"Shannon (1976) lists no {kind} radius for {specie} in {cn}-fold coordination; "
            "give the coordination (--coordination) or radii in Å."
        ) from None


def _find_overlaps(structure: Any, radii: FloatArray, slack: float = 0.01) -> tuple[Overlap, ...]:
    cutoff = float(2.0 * radii.max()) + slack
    center, point, _, dist = structure.get_neighbor_list(cutoff)
    keep = (center <= point) & (dist > 1e-8) & (dist < radii[center] + radii[point] - slack)
    found: dict[tuple[int, int], Overlap] = {}
    for i, j, d in zip(center[keep], point[keep], dist[keep], strict=True):
        key = (int(i), int(j))
        if key not in found or d < found[key].distance:
            found[key] = Overlap(int(i), int(j), float(d), float(radii[i] + radii[j]))
    return tuple(found[k] for k in sorted(found))
