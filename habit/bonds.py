"""Broken-bond surface energies from a structure, and the Wulff shape they give.

A surface (hkl) is made by cutting the crystal along a plane parallel to (hkl); every
bond that crosses the plane is broken. The energy of the cut, per unit area, is shared
by the *two* surfaces it creates, so the surface energy of the best termination is

    γ(hkl) = min over cut positions c of  Σ_b E_b N_b(c) / (2 A),

where the sum runs over the bonds b of one unit cell (each bond once), E_b is the bond's
energy, N_b(c) the number of planes of the family {c + m d(hkl)} the bond crosses, and
A = V / d(hkl) the area of the (hkl) plane inside one cell (V the cell volume). The cut
is scanned along the normal over one period d(hkl): the broken-bond count only changes
when the plane passes an atomic layer, so trying the midpoint between every pair of
consecutive layer heights tries every distinct termination. The count is computed for
all bonds and all cuts at once as a (cuts, bonds) array.

Bonds come from one of: a distance cutoff (every pair of atoms closer than it), the
first N nearest-neighbour shells of each atom (a pair is bonded if it lies in the first
N shells of either atom), or a cutoff per pair of elements. Bond energies are per pair of
elements; by default every bond counts 1 and the energies are *relative* (bond energy
units per Å²). With energies in eV, γ is in J/m² (1 eV/Å² = 16.0218 J/m²).

For first-neighbour bonds in a Bravais lattice the rule reduces to the bond-counting
form γ(n) = (ρ/2) Σ_{b: n·b > 0} E (n · b) with ρ the number density of atoms; for fcc
this gives γ111 : γ100 : γ110 = 1 : 2/√3 : √(3/2) and for bcc
γ110 : γ100 : γ211 = 1 : √2 : 2/√3 (Mackenzie, Moore & Nicholas 1962). The Wulff shapes
are the regular truncated octahedron (fcc) and the rhombic dodecahedron (bcc).

The model ignores relaxation, reconstruction and the electrostatics of polar surfaces:
a termination with the fewest broken bonds may still be a polar (Tasker type 3) surface.

References
----------
.. [1] J. K. Mackenzie, A. J. W. Moore and J. F. Nicholas, "Bonds broken at atomically
   flat crystal surfaces — I. Face-centred and body-centred cubic crystals",
   J. Phys. Chem. Solids 23, 185–196 (1962) (from memory).
.. [2] P. W. Tasker, "The stability of ionic crystal surfaces", J. Phys. C: Solid State
   Phys. 12, 4977–4984 (1979) (from memory).
.. [3] E. Dowty, "Crystal structure and crystal growth: I. The influence of internal
   structure on morphology", Am. Mineral. 61, 448–459 (1976): the surface of least
   bonding is the exposed surface.
.. [4] P. Hartman and W. G. Perdok, "On the relations between structure and morphology
   of crystals. I", Acta Cryst. 8, 49–52 (1955) (bonds across a slice; from memory).
"""

from __future__ import annotations

import math
from collections import Counter
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np

from habit._arrays import readonly as _readonly
from habit._typing import FloatArray, IntArray
from habit.crystal import Crystal
from habit.errors import InputError
from habit.tolerances import DEFAULT, Tolerances

__all__ = [
    "EV_PER_A2_IN_J_PER_M2",
    "BondSet",
    "Termination",
    "BrokenBondResult",
    "find_bonds",
    "scan_cuts",
    "surface_termination",
    "broken_bond_energies",
    "parse_pair",
]

#: 1 eV/Å² in J/m² (CODATA 2018: e = 1.602176634e-19 C exactly).
EV_PER_A2_IN_J_PER_M2 = 1.602176634e-19 / 1e-20

#: Atoms whose heights along the normal differ by less than this (Å) form one layer.
LAYER_TOL = 1e-4


def parse_pair(key: Any) -> tuple[str, str]:
    """Read an element pair ``'Ca-F'`` or ``('Ca', 'F')``; return it sorted.

    Examples
    --------
    >>> parse_pair('F-Ca')
    ('Ca', 'F')
    >>> parse_pair('CaF')
    Traceback (most recent call last):
    ...
    habit.errors.InputError: an element pair is written A-B, e.g. Ca-F; got 'CaF'.
    """
    if isinstance(key, str):
        parts = [p.strip() for p in key.split("-")]
    else:
        parts = [str(p).strip() for p in key]
    if len(parts) != 2 or not all(parts):
        raise InputError(f"an element pair is written A-B, e.g. Ca-F; got {key!r}.")
    a, b = sorted(parts)
    return (a, b)


@dataclass(frozen=True, slots=True)
class BondSet:
    """The bonds of a structure. Each bond is listed twice (i→j and j→i), weight ½.

    Attributes
    ----------
    lattice : (3, 3) float array
        Rows a, b, c, Å.
    frac_coords : (N, 3) float array
        Fractional coordinates of the sites.
    species : tuple of str
        Element symbol of each site.
    start, end : (B,) int arrays
        Site indices of the two ends.
    images : (B, 3) int array
        Lattice translation of the end atom (fractional).
    lengths : (B,) float array
        Bond lengths, Å.
    energies : (B,) float array
        Bond energies (eV, or 1 for relative).
    energy_unit : str
        ``'eV'`` or ``'relative'``.
    rule : str
        How bonds were chosen, in words.
    """

    lattice: FloatArray
    frac_coords: FloatArray
    species: tuple[str, ...]
    start: IntArray
    end: IntArray
    images: IntArray
    lengths: FloatArray
    energies: FloatArray
    energy_unit: str
    rule: str

    @property
    def n_bonds(self) -> int:
        """Number of distinct bonds per cell (each counted once)."""
        return int(len(self.start) // 2)

    def pair_table(self) -> dict[tuple[str, str], tuple[int, float, float]]:
        """Per element pair: (bonds per cell, shortest length Å, longest length Å)."""
        out: dict[tuple[str, str], tuple[int, float, float]] = {}
        pairs = [
            parse_pair((self.species[i], self.species[j]))
            for i, j in zip(self.start, self.end, strict=True)
        ]
        for key in sorted(set(pairs)):
            mask = np.array([p == key for p in pairs])
            out[key] = (
                int(mask.sum() // 2),
                float(self.lengths[mask].min()),
                float(self.lengths[mask].max()),
            )
        return out


def _site_symbols(structure: Any) -> tuple[str, ...]:
    out = []
    for site in structure:
        if site.is_ordered:
            out.append(str(site.specie.symbol))
        else:
            out.append(str(site.species_string))
    return tuple(out)


def _neighbour_list(
    structure: Any, radius: float
) -> tuple[IntArray, IntArray, IntArray, FloatArray]:
    centres, points, images, dists = structure.get_neighbor_list(radius)
    keep = dists > 1e-6  # an atom is not bonded to itself or to a copy on top of it
    return (
        np.asarray(centres, dtype=np.int64)[keep],
        np.asarray(points, dtype=np.int64)[keep],
        np.rint(np.asarray(images, dtype=float)[keep]).astype(np.int64).reshape(-1, 3),
        np.asarray(dists, dtype=float)[keep],
    )


def _shell_bonds(
    structure: Any, shells: int, shell_tol: float
) -> tuple[IntArray, IntArray, IntArray, FloatArray]:
    """Neighbour pairs within the first ``shells`` shells of either atom."""
    n_sites = len(structure)
    per_atom = structure.volume / n_sites
    radius = max(2.0, 1.6 * per_atom ** (1.0 / 3.0))
    while True:
        c, p, im, d = _neighbour_list(structure, radius)
        limits = np.full(n_sites, np.inf)
        enough = True
        for i in range(n_sites):
            di = np.sort(d[c == i])
            if di.size == 0:
                enough = False
                break
            # a new shell starts wherever the gap to the previous distance exceeds shell_tol
            starts = np.concatenate([[True], np.diff(di) > shell_tol])
            shell_of = np.cumsum(starts)  # 1-based shell number of each neighbour
            if shell_of[-1] <= shells:  # need one more shell to know shell N is complete
                enough = False
                break
            limits[i] = di[shell_of == shells].max()
        if enough:
            break
        if radius > 20.0:
            raise InputError(
                f"could not find {shells} neighbour shells within 20 Å of every atom; "
                "use fewer shells or give --cutoff in Å."
            )
        radius *= 1.5
    thr = np.maximum(limits[c], limits[p]) + 0.5 * shell_tol
    keep = d <= thr
    return c[keep], p[keep], im[keep], d[keep]


def find_bonds(
    crystal: Crystal,
    *,
    cutoff: float | None = None,
    shells: int | None = None,
    pair_cutoffs: Mapping[Any, float] | None = None,
    bond_energies: Mapping[Any, float] | None = None,
    shell_tol: float = 0.01,
) -> BondSet:
    """Find the bonds of a crystal's structure by one of three rules.

    Parameters
    ----------
    crystal : Crystal
        Must carry atoms (``crystal.structure``; a CIF or a bundled structure).
    cutoff : float, optional
        Every pair of atoms closer than this (Å) is bonded.
    shells : int, optional
        Bond each atom to its first ``shells`` neighbour shells (distances equal within
        ``shell_tol`` form one shell); a pair is bonded if it is in the first shells of
        either atom, so the bond set is symmetric. Default: 1 when no rule is given.
    pair_cutoffs : mapping, optional
        Element pair (``'Ca-F'`` or ``('Ca', 'F')``) -> cutoff, Å. Pairs not listed are
        not bonded.
    bond_energies : mapping, optional
        Element pair -> bond energy, eV (every bonded pair needs one). Without it every
        bond has energy 1 and energies are relative.
    shell_tol : float
        Å; distances closer than this belong to one shell.

    Returns
    -------
    BondSet

    Raises
    ------
    InputError
        No atoms; more than one rule; a cutoff that bonds nothing; a bonded pair with no
        energy; non-positive values.

    Examples
    --------
    >>> from pymatgen.core import Lattice, Structure
    >>> cu = Structure(Lattice.cubic(3.615), ['Cu'] * 4,
    ...                [[0, 0, 0], [0, .5, .5], [.5, 0, .5], [.5, .5, 0]])
    >>> xtal = Crystal.from_structure(cu, name='copper')
    >>> find_bonds(xtal, shells=1).n_bonds       # 4 atoms x 12 neighbours / 2
    24
    >>> find_bonds(xtal, cutoff=2.0)
    Traceback (most recent call last):
    ...
    habit.errors.InputError: a cutoff of 2 Å bonds no atoms in copper (... 2.556 Å); ...
    """
    structure = crystal.structure
    name = crystal.name or "this crystal"
    if structure is None or len(structure) == 0:
        raise InputError(
            f"{name} has no atoms; broken-bond energies need a structure (a CIF with atom "
            "positions or a bundled structure)."
        )
    given = sum(x is not None for x in (cutoff, shells, pair_cutoffs))
    if given > 1:
        raise InputError("choose one bond rule: a cutoff, a number of shells or pair cutoffs.")
    if given == 0:
        shells = 1
    symbols = _site_symbols(structure)
    shortest = _shortest_distance(structure)
    if cutoff is not None:
        cutoff = _positive(cutoff, "the bond cutoff (Å)")
        c, p, im, d = _neighbour_list(structure, cutoff)
        if c.size == 0:
            raise InputError(
                f"a cutoff of {cutoff:g} Å bonds no atoms in {name} (the shortest distance is "
                f"{shortest:.3f} Å); give a larger cutoff."
            )
        rule = f"distance cutoff {cutoff:g} Å"
    elif shells is not None:
        if isinstance(shells, bool) or not isinstance(shells, (int, np.integer)) or shells < 1:
            raise InputError(f"the number of shells must be a whole number >= 1; got {shells!r}.")
        c, p, im, d = _shell_bonds(structure, int(shells), shell_tol)
        rule = f"first {int(shells)} neighbour shell{'s' if shells > 1 else ''} of each atom"
    else:
        assert pair_cutoffs is not None
        table = {parse_pair(k): _positive(v, f"the cutoff of {k}") for k, v in pair_cutoffs.items()}
        if not table:
            raise InputError("give at least one pair cutoff, e.g. Ca-F=2.6.")
        c, p, im, d = _neighbour_list(structure, max(table.values()))
        limit = np.array(
            [
                table.get(parse_pair((symbols[i], symbols[j])), -1.0)
                for i, j in zip(c, p, strict=True)
            ]
        )
        keep = d <= limit
        c, p, im, d = c[keep], p[keep], im[keep], d[keep]
        if c.size == 0:
            listed = ", ".join(f"{a}-{b}={v:g} Å" for (a, b), v in table.items())
            raise InputError(
                f"the pair cutoffs {listed} bond no atoms in {name}; check the element names "
                f"and lengths (the shortest distance is {shortest:.3f} Å)."
            )
        rule = "pair cutoffs " + ", ".join(f"{a}-{b} {v:g} Å" for (a, b), v in table.items())
    pairs = [parse_pair((symbols[i], symbols[j])) for i, j in zip(c, p, strict=True)]
    if bond_energies is None:
        energies = np.ones(len(c))
        unit = "relative"
    else:
        etable = {
            parse_pair(k): _positive(v, f"the bond energy of {k}") for k, v in bond_energies.items()
        }
        missing = sorted({pr for pr in pairs if pr not in etable})
        if missing:
            names = ", ".join(f"{a}-{b}" for a, b in missing)
            raise InputError(
                f"no bond energy for the bonded pair{'s' if len(missing) > 1 else ''} {names}; "
                "give one for every bonded pair, e.g. --bond-energy Ca-F=0.5 (eV)."
            )
        energies = np.array([etable[pr] for pr in pairs])
        unit = "eV"
    return BondSet(
        lattice=_readonly(crystal.lattice),
        frac_coords=_readonly(structure.frac_coords),
        species=symbols,
        start=_readonly(c, np.int64),
        end=_readonly(p, np.int64),
        images=_readonly(im, np.int64),
        lengths=_readonly(d),
        energies=_readonly(energies),
        energy_unit=unit,
        rule=rule,
    )


def _shortest_distance(structure: Any) -> float:
    radius = 2.0 * (structure.volume / len(structure)) ** (1.0 / 3.0) + 1.0
    _, _, _, d = _neighbour_list(structure, radius)
    return float(d.min()) if d.size else float("inf")


def _positive(value: Any, what: str) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{what} must be a number; got {value!r}.") from None
    if not (math.isfinite(v) and v > 0):
        raise InputError(f"{what} must be a positive finite number; got {value!r}.")
    return v


def _primitive_hkl(hkl: Any) -> tuple[int, int, int]:
    arr = np.asarray(hkl)
    if arr.shape != (3,) or not np.all(np.isfinite(arr)) or not np.allclose(arr, np.rint(arr)):
        raise InputError(f"a face needs three whole Miller indices; got {hkl!r}.")
    ints = np.rint(arr).astype(np.int64)
    g = int(np.gcd.reduce(np.abs(ints)))
    if g == 0:
        raise InputError("(000) is not a face: at least one index must be non-zero.")
    h, k, l = (int(x) // g for x in ints)  # noqa: E741
    return (h, k, l)


@dataclass(frozen=True, slots=True)
class CutScan:
    """Every distinct cut of one (hkl) plane family.

    Attributes
    ----------
    hkl : tuple of 3 int
    d_spacing : float
        d(hkl), Å (the period scanned).
    area : float
        A = V / d(hkl), the area of the plane inside one cell, Å².
    layer_heights : (L,) float array
        Heights of the atomic layers along the normal, Å, in [0, d).
    cut_heights : (C,) float array
        Midpoints between consecutive layers, Å, in [0, d).
    broken : (C,) float array
        Bonds broken per cell area A by each cut (each bond once).
    energies : (C,) float array
        Surface energy of each cut: Σ E_b N_b / (2 A), in the bond set's unit per Å².
    """

    hkl: tuple[int, int, int]
    d_spacing: float
    area: float
    layer_heights: FloatArray
    cut_heights: FloatArray
    broken: FloatArray
    energies: FloatArray
    _layers: Any


def scan_cuts(bonds: BondSet, hkl: Any, *, layer_tol: float = LAYER_TOL) -> CutScan:
    """Broken bonds and energy of every distinct cut of the plane family (hkl).

    Parameters
    ----------
    bonds : BondSet
    hkl : (3,) int array_like
        The face; indices with a common factor are reduced (a surface orientation).
    layer_tol : float
        Å; atoms closer than this along the normal make one layer.

    Returns
    -------
    CutScan
        Energies in (bond energy unit)/Å²: eV/Å² or relative.
    """
    hkl_t = _primitive_hkl(hkl)
    h = np.array(hkl_t, dtype=float)
    lattice = np.asarray(bonds.lattice)
    recip = np.linalg.inv(lattice).T  # rows a*, b*, c*
    gvec = h @ recip  # (3,) Å⁻¹, |g| = 1/d
    d = 1.0 / float(np.linalg.norm(gvec))
    volume = abs(float(np.linalg.det(lattice)))
    area = volume / d
    frac = np.asarray(bonds.frac_coords)
    t = frac @ h  # (N,) height of each site in units of d
    t_start = t[bonds.start]  # (B,)
    t_end = t[bonds.end] + np.asarray(bonds.images) @ h  # (B,)
    # layers: distinct heights modulo one period
    tau = np.sort(np.mod(t, 1.0))
    gap_tol = layer_tol / d
    new = np.concatenate([[True], np.diff(tau) > gap_tol])
    layer_of_sorted = np.cumsum(new) - 1
    counts = np.bincount(layer_of_sorted)  # atoms per layer
    layers = np.bincount(layer_of_sorted, weights=tau) / counts  # (L,) mean height
    if len(layers) > 1 and (layers[0] + 1.0 - tau[-1]) <= gap_tol:
        # the top layer wraps onto the bottom one
        layers = layers[:-1]
    nxt = np.append(layers[1:], layers[0] + 1.0)
    cuts = 0.5 * (layers + nxt)  # (C,)
    # planes c + m crossed by each bond: |floor(t_end - c) - floor(t_start - c)|
    crossings = np.abs(
        np.floor(t_end[None, :] - cuts[:, None]) - np.floor(t_start[None, :] - cuts[:, None])
    )  # (C, B)
    weights = 0.5  # each bond appears twice in the set
    broken = crossings.sum(axis=1) * weights  # (C,)
    energies = crossings @ (weights * np.asarray(bonds.energies)) / (2.0 * area)  # (C,)
    return CutScan(
        hkl=hkl_t,
        d_spacing=d,
        area=area,
        layer_heights=_readonly(layers * d),
        cut_heights=_readonly(np.mod(cuts, 1.0) * d),
        broken=_readonly(broken),
        energies=_readonly(energies),
        _layers=(np.mod(t, 1.0), layers, gap_tol),
    )


def _layer_composition(
    site_t: FloatArray, level: float, gap_tol: float, species: tuple[str, ...]
) -> str:
    diff = np.abs(((site_t - level) + 0.5) % 1.0 - 0.5)
    counts = Counter(species[i] for i in np.nonzero(diff <= gap_tol)[0])
    return " ".join(f"{el}{n if n > 1 else ''}" for el, n in sorted(counts.items()))


@dataclass(frozen=True, slots=True)
class Termination:
    """The best (least broken-bond energy) termination of one form.

    Attributes
    ----------
    hkl : tuple of 3 int
    label : str
        ``{hkl}`` as printed.
    energy : float
        Surface energy of the best cut: J/m² (bond energies in eV) or relative
        (bond energy units per Å²).
    cut_height : float
        Position of the best cut along the normal, Å, in [0, d(hkl)).
    d_spacing : float
        d(hkl), Å.
    broken_bonds_per_area : float
        Bonds broken per Å² of one surface (dangling bonds per Å²).
    layer_above, layer_below : str
        Composition per cell of the atomic layers just above and below the best cut
        (the outermost layers of the two surfaces it makes).
    n_cuts : int
        Number of distinct cuts tried.
    scan : CutScan
        Every cut, for inspection.
    """

    hkl: tuple[int, int, int]
    label: str
    energy: float
    cut_height: float
    d_spacing: float
    broken_bonds_per_area: float
    layer_above: str
    layer_below: str
    n_cuts: int
    scan: CutScan


def surface_termination(
    bonds: BondSet, hkl: Any, *, label: str | None = None, layer_tol: float = LAYER_TOL
) -> Termination:
    """Find the termination of (hkl) that breaks the least bond energy per unit area.

    Parameters
    ----------
    bonds : BondSet
    hkl : (3,) int array_like
    label : str, optional
        How to print the form; default ``{hkl}``.
    layer_tol : float
        Å; atoms closer than this along the normal make one layer.

    Returns
    -------
    Termination
        ``energy`` in J/m² when the bonds carry energies in eV, relative otherwise.

    Examples
    --------
    >>> from pymatgen.core import Lattice, Structure
    >>> fe = Structure(Lattice.cubic(2.8665), ['Fe'] * 2, [[0, 0, 0], [.5, .5, .5]])
    >>> bonds = find_bonds(Crystal.from_structure(fe), shells=1)
    >>> g110 = surface_termination(bonds, (1, 1, 0)).energy
    >>> g100 = surface_termination(bonds, (1, 0, 0)).energy
    >>> round(g100 / g110, 9)                  # sqrt(2), first-neighbour bcc
    1.414213562
    """
    scan = scan_cuts(bonds, hkl, layer_tol=layer_tol)
    best = int(np.argmin(scan.energies))  # first of equal minima
    factor = EV_PER_A2_IN_J_PER_M2 if bonds.energy_unit == "eV" else 1.0
    site_t, layers, gap_tol = scan._layers
    c = scan.cut_heights[best] / scan.d_spacing
    above = layers[(best + 1) % len(layers)]
    below = layers[best]
    del c
    hkl_t = scan.hkl
    return Termination(
        hkl=hkl_t,
        label=label or "{" + "".join(str(x) if x >= 0 else f"-{-x}" for x in hkl_t) + "}",
        energy=float(scan.energies[best]) * factor,
        cut_height=float(scan.cut_heights[best]),
        d_spacing=scan.d_spacing,
        broken_bonds_per_area=float(scan.broken[best] / scan.area),
        layer_above=_layer_composition(site_t, above, gap_tol, bonds.species),
        layer_below=_layer_composition(site_t, below, gap_tol, bonds.species),
        n_cuts=int(len(scan.energies)),
        scan=scan,
    )


@dataclass(frozen=True, slots=True)
class BrokenBondResult:
    """Broken-bond surface energies of the forms of a crystal.

    Attributes
    ----------
    crystal : Crystal
    bonds : BondSet
    terminations : tuple of Termination
        One per form, lowest energy first.
    energy_unit : str
        ``'J/m²'`` (bond energies in eV) or ``'relative'`` (bond energy units per Å²).
    max_index : int
    """

    crystal: Crystal
    bonds: BondSet
    terminations: tuple[Termination, ...]
    energy_unit: str
    max_index: int

    def energies(self) -> dict[tuple[int, int, int], float]:
        """Surface energy of each form, keyed by its representative face."""
        return {t.hkl: t.energy for t in self.terminations}

    def wulff(self, *, tol: Tolerances = DEFAULT) -> Any:
        """Build the Wulff shape of these energies (:func:`habit.wulff.wulff_shape`).

        Raises
        ------
        InputError
            If a form breaks no bonds (zero energy: the crystal falls apart into slabs
            with these bonds and has no Wulff shape).
        """
        from habit.wulff import wulff_shape

        zero = [t.label for t in self.terminations if not t.energy > 0]
        if zero:
            raise InputError(
                f"no bond crosses the best cut of {', '.join(zero)}, so its broken-bond "
                "energy is zero and the Wulff shape is not bounded; bond the layers "
                "together (a larger cutoff or more shells)."
            )
        return wulff_shape(self.crystal, self.energies(), kind="energy", tol=tol)


def broken_bond_energies(
    crystal: Crystal,
    max_index: int = 2,
    *,
    cutoff: float | None = None,
    shells: int | None = None,
    pair_cutoffs: Mapping[Any, float] | None = None,
    bond_energies: Mapping[Any, float] | None = None,
    forms: Any = None,
    bonds: BondSet | None = None,
    layer_tol: float = LAYER_TOL,
    progress: Callable[[int], None] | None = None,
) -> BrokenBondResult:
    """Broken-bond surface energy and best termination of every form up to an index bound.

    Parameters
    ----------
    crystal : Crystal
        Must carry atoms.
    max_index : int
        Index bound (see :func:`habit.morphology.form_representatives`).
    cutoff, shells, pair_cutoffs, bond_energies
        The bond rule and energies (see :func:`find_bonds`).
    forms : sequence of (3,) int, optional
        Faces to use instead of every form up to ``max_index``.
    bonds : BondSet, optional
        Bonds found already (then the bond rule arguments are not used).
    layer_tol : float
        Å; atoms closer than this along the normal make one layer.
    progress : callable, optional
        Called with the number of forms done.

    Returns
    -------
    BrokenBondResult

    Examples
    --------
    >>> from pymatgen.core import Lattice, Structure
    >>> cu = Structure(Lattice.cubic(3.615), ['Cu'] * 4,
    ...                [[0, 0, 0], [0, .5, .5], [.5, 0, .5], [.5, .5, 0]])
    >>> result = broken_bond_energies(Crystal.from_structure(cu), 1)
    >>> [t.label for t in result.terminations]
    ['{111}', '{100}', '{110}']
    """
    from habit.morphology import form_representatives

    bonds = bonds or find_bonds(
        crystal,
        cutoff=cutoff,
        shells=shells,
        pair_cutoffs=pair_cutoffs,
        bond_energies=bond_energies,
    )
    if forms is None:
        reps = [tuple(int(x) for x in h) for h in form_representatives(crystal, max_index)]
    else:
        reps = [_primitive_hkl(h) for h in forms]
    terms = []
    for i, hkl in enumerate(reps):
        terms.append(
            surface_termination(
                bonds, hkl, label=crystal.format_face(hkl, "{}"), layer_tol=layer_tol
            )
        )
        if progress is not None:
            progress(i + 1)
    terms.sort(key=lambda t: t.energy)
    unit = "J/m²" if bonds.energy_unit == "eV" else "relative"
    return BrokenBondResult(
        crystal=crystal,
        bonds=bonds,
        terminations=tuple(terms),
        energy_unit=unit,
        max_index=int(max_index),
    )
