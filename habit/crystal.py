"""The :class:`Crystal`: a lattice and its point group, and where they come from.

A crystal can be made from

* cell parameters plus a crystal class or a space group (:meth:`Crystal.from_cell`),
* a CIF file, read by pymatgen, with the space group found by spglib in the cell as
  given (:meth:`Crystal.from_cif`),
* a crystal TOML file (format in ``docs/crystal-file.md``; :func:`read_crystal_file`),
* the name of a bundled crystal in ``structures/`` (:func:`load_crystal`).

Miller indices always refer to the cell as the user gave it. habit never changes a
CIF's cell or setting; :meth:`Crystal.conventional` offers the conventional setting
on request together with the matrix that transforms the indices.
"""

from __future__ import annotations

import math
import tomllib
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any

import numpy as np

from habit import geometry
from habit._arrays import readonly as _readonly
from habit._typing import ArrayLike, BoolArray, FloatArray, IntArray
from habit.errors import CellError, FileFormatError, InputError, UnknownSymbolError
from habit.tolerances import DEFAULT, Tolerances

__all__ = [
    "Crystal",
    "FormValues",
    "FORM_KINDS",
    "load_crystal",
    "read_crystal_file",
    "bundled_crystals",
    "STRUCTURES_DIR",
]

#: Folder of the bundled crystals.
STRUCTURES_DIR = Path(__file__).resolve().parent.parent / "structures"

#: What the numbers of a ``[forms]`` table mean.
FORM_KINDS = {
    "energy": "surface energy, J/m²",
    "distance": "central distance, relative",
    "rate": "growth rate, relative",
}


@dataclass(frozen=True, slots=True)
class FormValues:
    """Numbers attached to forms: surface energies, central distances or growth rates.

    Attributes
    ----------
    kind : str
        ``'energy'`` (J/m²), ``'distance'`` or ``'rate'`` (relative units).
    hkl : tuple of (h, k, l) tuples
        One representative face per form, as the user wrote it (three indices).
    values : tuple of float
        One positive number per form.
    source : str
        Where the numbers come from (a citation, or "invented for the demo").
    """

    kind: str
    hkl: tuple[tuple[int, int, int], ...]
    values: tuple[float, ...]
    source: str = ""

    def __post_init__(self) -> None:
        if self.kind not in FORM_KINDS:
            raise UnknownSymbolError(
                f"unknown kind of form values {self.kind!r}; use one of {', '.join(FORM_KINDS)}."
            )
        if len(self.hkl) != len(self.values):
            raise InputError("FormValues needs one value per form.")

    def as_dict(self) -> dict[tuple[int, int, int], float]:
        """The values keyed by (h, k, l)."""
        return dict(zip(self.hkl, self.values, strict=True))


def _is_rhombohedral(cell: tuple[float, ...], tol: Tolerances) -> bool:
    a, b, c, al, be, ga = cell
    return (
        math.isclose(a, b, rel_tol=tol.cell_length)
        and math.isclose(a, c, rel_tol=tol.cell_length)
        and abs(al - be) <= tol.cell_angle_deg
        and abs(al - ga) <= tol.cell_angle_deg
        and abs(al - 90.0) > tol.cell_angle_deg
    )


# basis change from hexagonal (obverse) axes to rhombohedral axes: columns are the
# rhombohedral vectors in hexagonal coordinates (International Tables Vol. A, Table 5.1.3.1)
_HEX_TO_RHOMB = np.array([[2, -1, -1], [1, 1, -2], [1, 1, 1]], dtype=float) / 3.0
# monoclinic unique axis b -> unique axis c (a' = c, b' = a, c' = b; cyclic, det +1)
_B_TO_C = np.array([[0, 1, 0], [0, 0, 1], [1, 0, 0]], dtype=float)
# monoclinic unique axis b -> unique axis a (a' = b, b' = c, c' = a)
_B_TO_A = np.array([[0, 0, 1], [1, 0, 0], [0, 1, 0]], dtype=float)


_SETTING_MATRICES = {"rhombohedral": _HEX_TO_RHOMB, "unique-c": _B_TO_C, "unique-a": _B_TO_A}


def _transform_space_group(sg: Any, p_matrix: FloatArray) -> Any:
    """The space group in a new basis (columns of ``p_matrix`` = new vectors in old ones)."""
    from habit import symmetry

    p_inv = np.linalg.inv(p_matrix)
    rots = np.einsum("ij,njk,kl->nil", p_inv, np.asarray(sg.rotations, float), p_matrix)
    trans = np.asarray(sg.translations, float) @ p_inv.T
    trans = np.mod(np.round(trans, 10), 1.0)
    rots_int = np.rint(rots).astype(np.int64)
    # centring translations of the old cell become lattice vectors: drop duplicates
    keys: dict[tuple[bytes, tuple[float, ...]], tuple[Any, Any]] = {}
    for r, t in zip(rots_int, trans, strict=True):
        keys.setdefault((r.tobytes(), tuple(np.round(t, 8) % 1.0)), (r, t))
    rot_out = np.array([v[0] for v in keys.values()])
    tr_out = np.array([v[1] for v in keys.values()])
    return symmetry.space_group_from_operations(rot_out, tr_out, number=sg.number)


def _setting_symbol(sg: Any) -> Any:
    """Give a space group found in a user's cell the symbol of that cell's setting.

    The settings of one space-group type (e.g. Pnma and Pbnm, P2_1/c and P2_1/n) share
    their rotations but differ in their reflection conditions, which do not depend on
    the origin; the setting is the one of spglib's database whose rotations and
    systematic absences (all |h|, |k|, |l| <= 4) match. Unmatched groups keep their
    standard symbol.
    """
    import spglib

    from habit import symmetry

    rng = np.arange(-4, 5)
    hkl = np.stack(np.meshgrid(rng, rng, rng, indexing="ij"), axis=-1).reshape(-1, 3)
    hkl = hkl[np.any(hkl != 0, axis=1)]
    mine = symmetry.is_absent(hkl, sg.rotations, sg.translations)
    my_rots = {r.tobytes() for r in np.asarray(sg.rotations, dtype=np.int64)}
    for hall in range(1, 531):
        kind = spglib.get_spacegroup_type(hall)
        if kind is None or kind.number != sg.number:
            continue
        db = spglib.get_symmetry_from_database(hall)
        if db is None:
            continue
        rots = np.asarray(db["rotations"], dtype=np.int64)
        if {r.tobytes() for r in rots} != my_rots:
            continue
        if np.array_equal(symmetry.is_absent(hkl, rots, db["translations"]), mine):
            symbol = str(kind.international_short)
            if 3 <= sg.number <= 15:  # monoclinic: the full symbol names the setting
                full = str(kind.international).split("=")[-1].split()
                symbol = full[0] + "".join(t for t in full[1:] if t != "1")
            return replace(sg, symbol=symbol, hall_number=hall)
    letter = _centring_letter(sg)
    if letter and sg.symbol[0] != letter:
        return replace(sg, symbol=letter + sg.symbol[1:])
    return sg


def _centring_letter(sg: Any) -> str:
    """The lattice letter of a cell from its pure translations ('' if none fits)."""
    rots = np.asarray(sg.rotations)
    trans = np.mod(np.asarray(sg.translations, dtype=float), 1.0)
    pure = {
        tuple(np.round(t, 4))
        for r, t in zip(rots, trans, strict=True)
        if np.array_equal(r, np.eye(3, dtype=rots.dtype)) and np.any(np.round(t, 4) % 1.0)
    }
    table = {
        frozenset({(0.0, 0.5, 0.5)}): "A",
        frozenset({(0.5, 0.0, 0.5)}): "B",
        frozenset({(0.5, 0.5, 0.0)}): "C",
        frozenset({(0.5, 0.5, 0.5)}): "I",
        frozenset({(0.0, 0.5, 0.5), (0.5, 0.0, 0.5), (0.5, 0.5, 0.0)}): "F",
    }
    if not pure:
        return "P"
    return table.get(frozenset(pure), "")


def _fmt_cell(cell: tuple[float, ...]) -> str:
    a, b, c, al, be, ga = cell
    return f"a={a:g} Å, b={b:g} Å, c={c:g} Å, alpha={al:g}°, beta={be:g}°, gamma={ga:g}°"


def _check_cell_fits(cell: tuple[float, ...], system: str, tol: Tolerances) -> str:
    """Check the cell against the crystal system; return the setting name.

    Returns ``'standard'``, ``'rhombohedral'``, ``'unique-c'`` or ``'unique-a'``.
    """
    a, b, c, al, be, ga = cell

    def eq_len(x: float, y: float) -> bool:
        return math.isclose(x, y, rel_tol=tol.cell_length)

    def eq_ang(x: float, y: float) -> bool:
        return abs(x - y) <= tol.cell_angle_deg

    right = [eq_ang(x, 90.0) for x in (al, be, ga)]
    need = None
    setting = "standard"
    if system == "cubic":
        if not (eq_len(a, b) and eq_len(a, c) and all(right)):
            need = "a cubic class needs a = b = c and alpha = beta = gamma = 90°"
    elif system == "tetragonal":
        if not (eq_len(a, b) and all(right)):
            need = "a tetragonal class needs a = b and alpha = beta = gamma = 90°"
    elif system == "orthorhombic":
        if not all(right):
            need = "an orthorhombic class needs alpha = beta = gamma = 90°"
    elif system == "hexagonal":
        if not (eq_len(a, b) and right[0] and right[1] and eq_ang(ga, 120.0)):
            need = "a hexagonal class needs a = b, alpha = beta = 90° and gamma = 120°"
    elif system == "trigonal":
        if _is_rhombohedral(cell, tol):
            setting = "rhombohedral"
        elif not (eq_len(a, b) and right[0] and right[1] and eq_ang(ga, 120.0)):
            need = (
                "a trigonal class needs hexagonal axes (a = b, alpha = beta = 90°, "
                "gamma = 120°) or rhombohedral axes (a = b = c, alpha = beta = gamma ≠ 90°)"
            )
    elif system == "monoclinic":
        if right[0] and right[2]:
            setting = "standard"
        elif right[0] and right[1]:
            setting = "unique-c"
        elif right[1] and right[2]:
            setting = "unique-a"
        else:
            need = (
                "a monoclinic class needs two right angles (unique axis b: alpha = gamma = 90°; "
                "unique axis c: alpha = beta = 90°)"
            )
    if need is not None:
        raise CellError(f"{need}; got {_fmt_cell(cell)}.")
    return setting


def _group_for_setting(group: Any, setting: str) -> Any:
    if setting == "standard":
        return group
    return group.transformed(_SETTING_MATRICES[setting])


@dataclass(frozen=True, slots=True)
class Crystal:
    """A crystal lattice with its point group (and, when known, space group and atoms).

    Build one with :meth:`from_cell`, :meth:`from_cif` or :func:`load_crystal`.

    Attributes
    ----------
    name : str
    cell : tuple of 6 float
        a, b, c in Å and alpha, beta, gamma in degrees, as given.
    point_group : habit.symmetry.PointGroup
        The crystal class, with operations in the basis of this cell.
    space_group : habit.symmetry.SpaceGroup or None
    structure : pymatgen.core.Structure or None
        The atoms, in this cell and this Cartesian frame.
    forms : FormValues or None
        Energies, distances or rates given with the crystal (crystal TOML file).
    source : str
        Where the cell comes from.
    setting : str
        ``'standard'``, ``'rhombohedral'`` (trigonal class on rhombohedral axes),
        ``'unique-c'`` or ``'unique-a'`` (monoclinic).
    lattice : (3, 3) float array
        Rows **a**, **b**, **c** (Å), c along z, a in the x–z plane.
    reciprocal : (3, 3) float array
        Rows **a***, **b***, **c*** (Å⁻¹, no 2π).
    metric, reciprocal_metric : (3, 3) float array
        G (Å²) and G* (Å⁻²).
    """

    name: str
    cell: tuple[float, float, float, float, float, float]
    point_group: Any
    space_group: Any = None
    structure: Any = None
    forms: FormValues | None = None
    source: str = ""
    setting: str = "standard"
    lattice: FloatArray = field(init=False, repr=False, compare=False)
    reciprocal: FloatArray = field(init=False, repr=False, compare=False)
    metric: FloatArray = field(init=False, repr=False, compare=False)
    reciprocal_metric: FloatArray = field(init=False, repr=False, compare=False)

    def __post_init__(self) -> None:
        lattice = geometry.cell_to_lattice(*self.cell)
        recip = geometry.reciprocal_lattice(lattice)
        object.__setattr__(self, "lattice", _readonly(lattice))
        object.__setattr__(self, "reciprocal", _readonly(recip))
        object.__setattr__(self, "metric", _readonly(geometry.metric_tensor(lattice)))
        object.__setattr__(self, "reciprocal_metric", _readonly(geometry.metric_tensor(recip)))

    # ------------------------------------------------------------------ constructors
    @classmethod
    def from_cell(
        cls,
        a: float,
        b: float | None = None,
        c: float | None = None,
        alpha: float = 90.0,
        beta: float | None = None,
        gamma: float | None = None,
        *,
        crystal_class: str | None = None,
        space_group: str | int | None = None,
        name: str = "",
        forms: FormValues | None = None,
        source: str = "",
        tol: Tolerances = DEFAULT,
    ) -> Crystal:
        """Make a crystal from cell parameters and a crystal class or space group.

        Edges left out default to the values the class forces (b = a for tetragonal,
        hexagonal, trigonal and cubic; c = a for cubic); gamma defaults to 120° for
        the hexagonal family on hexagonal axes and to 90° otherwise.

        Parameters
        ----------
        a, b, c : float
            Cell edges, Å.
        alpha, beta, gamma : float
            Cell angles, degrees.
        crystal_class : str, optional
            Hermann–Mauguin point-group symbol such as ``'m-3m'``, ``'-3m'``, ``'2/m'``.
        space_group : str or int, optional
            Space-group symbol (``'P2_1/c'``) or number (1–230); gives the class too.

        Raises
        ------
        CellError
            If the cell is not a real cell or does not fit the class.
        UnknownSymbolError
            If the class or space group is not known.

        Examples
        --------
        >>> quartz = Crystal.from_cell(4.9133, c=5.4053, crystal_class='32')
        >>> quartz.system, quartz.cell[5]
        ('trigonal', 120.0)
        >>> Crystal.from_cell(5.0, 5.0, 6.0, crystal_class='m-3m')
        Traceback (most recent call last):
        ...
        habit.errors.CellError: a cubic class needs a = b = c and ...
        """
        from habit import symmetry

        if (crystal_class is None) == (space_group is None):
            raise InputError("give exactly one of a crystal class or a space group.")
        sg = None
        if space_group is not None:
            sg = symmetry.space_group(space_group)
            group = sg.point_group
        else:
            group = symmetry.point_group(str(crystal_class))
        system = group.system
        rhombo = system == "trigonal" and alpha != 90.0
        if b is None:
            if system not in ("cubic", "tetragonal", "hexagonal", "trigonal"):
                raise CellError(f"a {system} cell needs b; give b in Å.")
            b = a
        if c is None:
            if not (system == "cubic" or rhombo):
                raise CellError(f"a {system} cell needs c; give c in Å.")
            c = a
        if beta is None:
            beta = alpha if rhombo else 90.0
        if gamma is None:
            if rhombo:
                gamma = alpha
            else:
                gamma = 120.0 if system in ("hexagonal", "trigonal") else 90.0
        cell = tuple(float(x) for x in (a, b, c, alpha, beta, gamma))
        geometry.cell_to_lattice(*cell)  # refuses cells that are not real
        setting = _check_cell_fits(cell, system, tol)
        group = _group_for_setting(group, setting)
        if sg is not None and setting != "standard":
            sg = _transform_space_group(sg, _SETTING_MATRICES[setting])
        return cls(
            name=name,
            cell=cell,  # type: ignore[arg-type]
            point_group=group,
            space_group=sg,
            forms=forms,
            source=source,
            setting=setting,
        )

    @classmethod
    def from_cif(
        cls,
        path: str | Path,
        *,
        name: str | None = None,
        symprec: float = 1e-3,
        forms: FormValues | None = None,
        source: str | None = None,
    ) -> Crystal:
        """Read a CIF with pymatgen; find its space group with spglib in the cell as given.

        The cell and setting of the file are kept: Miller indices refer to them.

        Raises
        ------
        FileFormatError
            If the file is missing or pymatgen cannot read a structure from it.
        """
        path = Path(path)
        if not path.is_file():
            raise FileFormatError(f"no such CIF file: {path}.")
        structure = _read_cif_structure(path)
        return cls.from_structure(
            structure,
            name=name or path.stem,
            symprec=symprec,
            forms=forms,
            source=source if source is not None else _cif_source(path),
        )

    @classmethod
    def from_structure(
        cls,
        structure: Any,
        *,
        name: str = "",
        symprec: float = 1e-3,
        forms: FormValues | None = None,
        source: str = "",
    ) -> Crystal:
        """Make a crystal from a pymatgen Structure, keeping its cell and setting."""
        import spglib
        from pymatgen.core import Lattice, Structure  # type: ignore[attr-defined]

        from habit import symmetry

        # rounded to 1e-10 so that 120° stays 120° after pymatgen's own arithmetic
        cell = tuple(
            round(float(x), 10) for x in (*structure.lattice.abc, *structure.lattice.angles)
        )
        lattice = geometry.cell_to_lattice(*cell)
        frac = np.asarray(structure.frac_coords, dtype=float)
        species = [site.species for site in structure]
        kinds: dict[str, int] = {}
        numbers = [kinds.setdefault(str(sp), len(kinds) + 1) for sp in species]
        dataset = spglib.get_symmetry_dataset(
            (lattice, frac, numbers),  # type: ignore[arg-type]
            symprec=symprec,
        )
        if dataset is None:
            raise FileFormatError(
                f"spglib could not find the symmetry of {name or 'the structure'}; check the "
                "atom positions or loosen symprec."
            )
        sg = symmetry.space_group_from_operations(
            np.asarray(dataset.rotations), np.asarray(dataset.translations), number=dataset.number
        )
        sg = _setting_symbol(sg)
        rebuilt = Structure(
            Lattice(lattice),
            species,
            frac,
            site_properties=structure.site_properties or None,
        )
        return cls(
            name=name,
            cell=cell,  # type: ignore[arg-type]
            point_group=sg.point_group,
            space_group=sg,
            structure=rebuilt,
            forms=forms,
            source=source,
        )

    # ------------------------------------------------------------------ properties
    @property
    def system(self) -> str:
        """The crystal system of the class ('triclinic' ... 'cubic')."""
        return str(self.point_group.system)

    @property
    def is_hexagonal_family(self) -> bool:
        """True for trigonal and hexagonal classes on hexagonal axes (print (hkil))."""
        return self.system in ("hexagonal", "trigonal") and self.setting != "rhombohedral"

    @property
    def cartesian_operations(self) -> FloatArray:
        """The class's operations as Cartesian orthogonal matrices, (G, 3, 3).

        ``R = A W A⁻¹`` with ``A`` the matrix whose columns are **a**, **b**, **c**.
        """
        a = self.lattice.T
        ops = np.asarray(self.point_group.operations, dtype=float)
        out: FloatArray = np.einsum("ij,gjk,kl->gil", a, ops, np.linalg.inv(a))
        return out

    @property
    def volume(self) -> float:
        """Cell volume, Å³."""
        return float(abs(np.linalg.det(self.lattice)))

    # ------------------------------------------------------------------ geometry
    def d_spacing(self, hkl: ArrayLike) -> FloatArray:
        """Interplanar spacing d(hkl), Å; ``hkl`` shaped (..., 3)."""
        return geometry.d_spacings(self.reciprocal_metric, _check_hkl(hkl))

    def normals(self, hkl: ArrayLike) -> FloatArray:
        """Cartesian unit normals of faces (hkl); ``hkl`` shaped (..., 3)."""
        return geometry.hkl_to_normals(self.reciprocal, _check_hkl(hkl))

    def directions(self, uvw: ArrayLike) -> FloatArray:
        """Cartesian vectors (Å) of directions [uvw]; ``uvw`` shaped (..., 3)."""
        return geometry.uvw_to_vectors(self.lattice, uvw)

    def interfacial_angle(self, hkl1: ArrayLike, hkl2: ArrayLike) -> FloatArray:
        """Interfacial angle between faces: the angle between their normals, radians."""
        return geometry.angles_between(self.normals(hkl1), self.normals(hkl2))

    def direction_angle(self, uvw1: ArrayLike, uvw2: ArrayLike) -> FloatArray:
        """Angle between two directions [uvw], radians."""
        return geometry.angles_between(self.directions(uvw1), self.directions(uvw2))

    def face_direction_angle(self, hkl: ArrayLike, uvw: ArrayLike) -> FloatArray:
        """Angle between the normal of a face (hkl) and a direction [uvw], radians."""
        return geometry.angles_between(self.normals(hkl), self.directions(uvw))

    def zone_axis(self, hkl1: ArrayLike, hkl2: ArrayLike) -> IntArray:
        """Zone axis [uvw] of two faces (smallest integers; [000] if parallel)."""
        return geometry.zone_axes(_check_hkl(hkl1), _check_hkl(hkl2))

    def is_in_zone(self, hkl: ArrayLike, uvw: ArrayLike) -> BoolArray:
        """Whether faces (hkl) lie in the zone [uvw] (Weiss zone law)."""
        return geometry.is_in_zone(hkl, uvw)

    # ------------------------------------------------------------------ forms
    def expand_form(self, hkl: ArrayLike) -> IntArray:
        """All distinct faces of the form {hkl} under the crystal class, (M, 3) int."""
        from habit import symmetry

        out: IntArray = symmetry.expand_form(_check_hkl(hkl), self.point_group.operations)
        return out

    def multiplicity(self, hkl: ArrayLike) -> int:
        """Number of faces of the form {hkl}."""
        return int(len(self.expand_form(hkl)))

    def form_name(self, hkl: ArrayLike) -> str:
        """Standard name of the form {hkl} in this crystal class."""
        from habit import forms

        return str(forms.form_name(_check_hkl(hkl), self.point_group))

    def is_closed_form(self, hkl: ArrayLike) -> bool:
        """Whether the faces of {hkl} alone enclose a solid."""
        from habit import forms

        return bool(forms.is_closed_form(_check_hkl(hkl), self.point_group))

    def parse_face(self, text: str) -> tuple[int, int, int]:
        """Read a face as typed; four indices are accepted only on hexagonal axes.

        Examples
        --------
        >>> Crystal.from_cell(5.0, crystal_class='m-3m').parse_face('10-11')
        Traceback (most recent call last):
        ...
        habit.errors.InvalidMillerIndexError: (10-11) has four indices, but ...
        """
        from habit.errors import InvalidMillerIndexError
        from habit.miller import parse_hkl, parse_indices

        _, values = parse_indices(text)
        if len(values) == 4 and not self.is_hexagonal_family:
            where = self.system if self.setting != "rhombohedral" else "on rhombohedral axes"
            raise InvalidMillerIndexError(
                f"({''.join(str(v) for v in values)}) has four indices, but this crystal is "
                f"{where}; write three indices (hkl)."
            )
        return parse_hkl(text)

    def format_face(self, hkl: ArrayLike, brackets: str = "()") -> str:
        """Write a face, in four-index form for the hexagonal family."""
        from habit.miller import format_hkl

        return format_hkl(hkl, hexagonal=self.is_hexagonal_family, brackets=brackets)

    def is_absent(self, hkl: ArrayLike) -> BoolArray:
        """Whether reflections hkl are systematically absent (needs a space group)."""
        from habit import symmetry

        if self.space_group is None:
            raise InputError(
                f"{self.name or 'this crystal'} has no space group; give one to use "
                "reflection conditions."
            )
        out: BoolArray = np.asarray(
            symmetry.is_absent(hkl, self.space_group.rotations, self.space_group.translations),
            dtype=bool,
        )
        return out

    # ------------------------------------------------------------------ settings
    def conventional(self, symprec: float = 1e-3) -> tuple[Crystal, IntArray | FloatArray]:
        """The crystal in spglib's conventional setting, and the index transformation.

        Returns
        -------
        crystal : Crystal
        hkl_matrix : (3, 3) array
            Faces transform as ``hkl_conventional = hkl_given @ hkl_matrix``.
        """
        if self.structure is None:
            raise InputError("the conventional setting needs atom positions (a CIF).")
        import spglib
        from pymatgen.core import Lattice, Structure  # type: ignore[attr-defined]

        frac = np.asarray(self.structure.frac_coords, dtype=float)
        kinds: dict[str, int] = {}
        numbers = [kinds.setdefault(str(s.species), len(kinds) + 1) for s in self.structure]
        ds = spglib.get_symmetry_dataset(
            (np.array(self.lattice), frac, numbers),  # type: ignore[arg-type]
            symprec=symprec,
        )
        if ds is None:
            raise InputError("spglib could not find the symmetry of this structure.")
        p_matrix = np.asarray(ds.transformation_matrix, dtype=float)
        # (a_s, b_s, c_s) = (a, b, c) P^-1, so a face (row) transforms as h_s = h P^-1
        hkl_matrix = np.linalg.inv(p_matrix)
        rounded = np.rint(hkl_matrix)
        if np.allclose(hkl_matrix, rounded, atol=1e-8):
            hkl_matrix = rounded.astype(np.int64)
        std_lattice = np.asarray(ds.std_lattice, dtype=float)
        first_species: dict[int, Any] = {}
        for site in self.structure:
            first_species.setdefault(kinds[str(site.species)], site.species)
        structure = Structure(
            Lattice(std_lattice),
            [first_species[n] for n in ds.std_types],
            np.asarray(ds.std_positions),
        )
        crystal = Crystal.from_structure(
            structure, name=self.name, symprec=symprec, forms=None, source=self.source
        )
        return crystal, hkl_matrix


def _check_hkl(hkl: ArrayLike) -> IntArray:
    from habit.errors import InvalidMillerIndexError
    from habit.miller import parse_hkl

    if isinstance(hkl, str):  # a face typed as people write it: '10-11', '(111)'
        hkl = parse_hkl(hkl)
    elif isinstance(hkl, (list, tuple)) and hkl and all(isinstance(h, str) for h in hkl):
        hkl = [parse_hkl(h) for h in hkl]
    arr = np.asarray(hkl)
    if arr.shape[-1:] != (3,):
        raise InvalidMillerIndexError(
            f"Miller indices must have 3 components (shape (..., 3)); got shape {arr.shape}."
        )
    if not np.issubdtype(arr.dtype, np.integer):
        as_float = np.asarray(arr, dtype=float)
        if not np.all(np.isfinite(as_float)) or not np.allclose(as_float, np.rint(as_float)):
            raise InvalidMillerIndexError("Miller indices must be whole numbers.")
        arr = np.rint(as_float)
    out = arr.astype(np.int64)
    if np.any(np.all(out == 0, axis=-1)):
        raise InvalidMillerIndexError("(000) is not a face: at least one index must be non-zero.")
    return out


def _read_cif_structure(path: Path) -> Any:
    import warnings

    from pymatgen.io.cif import CifParser

    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            parser = CifParser(str(path))
            structures = parser.parse_structures(primitive=False)
    except Exception as exc:  # pymatgen raises many kinds on a malformed file
        message = f"cannot read a structure from CIF {path}: {exc}".rstrip(".") + "."
        raise FileFormatError(message) from None
    if not structures:
        raise FileFormatError(f"CIF {path} holds no structure with atoms.")
    return structures[0]


def _cif_source(path: Path) -> str:
    """A one-line citation from the CIF's publication fields, if any."""
    from pymatgen.io.cif import CifFile

    try:
        blocks = CifFile.from_file(str(path)).data
    except Exception:  # a file pymatgen read once already; be lenient here
        return ""
    if not blocks:
        return ""
    data = next(iter(blocks.values())).data

    def field(key: str) -> str:
        value = data.get(key)
        if isinstance(value, list):
            return "; ".join(str(v).strip() for v in value)
        return "" if value is None else " ".join(str(value).split())

    authors = field("_publ_author_name")
    journal = field("_journal_name_full")
    year = field("_journal_year")
    volume = field("_journal_volume")
    page = field("_journal_page_first")
    parts = [p for p in (authors, f"({year})" if year else "", journal, volume, page) if p]
    return " ".join(parts[:2]) + (", " + ", ".join(parts[2:]) if parts[2:] else "")


# ---------------------------------------------------------------------- files and names
def _parse_forms(table: dict[str, Any], where: str, crystal: Crystal) -> FormValues:
    kind = str(table.get("kind", "energy"))
    if kind not in FORM_KINDS:
        raise FileFormatError(
            f"{where}: [forms] kind must be one of {', '.join(FORM_KINDS)}; got {kind!r}."
        )
    source = str(table.get("source", ""))
    hkls: list[tuple[int, int, int]] = []
    values: list[float] = []
    for key, value in table.items():
        if key in ("kind", "source", "unit"):
            continue
        hkl = crystal.parse_face(str(key))
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            raise FileFormatError(f"{where}: the value of form {key} must be a number.")
        hkls.append(hkl)
        values.append(float(value))
    return FormValues(kind=kind, hkl=tuple(hkls), values=tuple(values), source=source)


def read_crystal_file(path: str | Path) -> Crystal:
    """Read a crystal TOML file (format in ``docs/crystal-file.md``).

    Raises
    ------
    FileFormatError
        If the file is missing, is not TOML, or lacks a cell or CIF.
    """
    path = Path(path)
    if not path.is_file():
        raise FileFormatError(f"no such crystal file: {path}.")
    try:
        data = tomllib.loads(path.read_text())
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
        raise FileFormatError(f"{path} is not a valid TOML file: {exc}.") from None
    crystal = _crystal_from_table(data, path)
    if "forms" in data:
        if not isinstance(data["forms"], dict):
            raise FileFormatError(f"{path}: [forms] must be a table of Miller index = value.")
        crystal = replace(crystal, forms=_parse_forms(data["forms"], str(path), crystal))
    return crystal


def _crystal_from_table(data: dict[str, Any], path: Path) -> Crystal:
    name = str(data.get("name", path.stem))
    if "cif" in data:
        cif_path = (path.parent / str(data["cif"])).resolve()
        return Crystal.from_cif(cif_path, name=name)
    cell = data.get("cell")
    if not isinstance(cell, dict):
        raise FileFormatError(f'{path} needs either cif = "FILE.cif" or a [cell] table.')
    if "a" not in cell:
        raise FileFormatError(f"{path}: [cell] needs at least a (in Å).")
    klass = cell.get("crystal_class")
    sg = cell.get("space_group")
    if klass is None and sg is None:
        raise FileFormatError(f"{path}: [cell] needs crystal_class or space_group.")

    def num(key: str) -> float | None:
        value = cell.get(key)
        if value is None:
            return None
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            raise FileFormatError(f"{path}: [cell] {key} must be a number.")
        return float(value)

    return Crystal.from_cell(
        num("a"),  # type: ignore[arg-type]
        num("b"),
        num("c"),
        num("alpha") or 90.0,
        num("beta"),
        num("gamma"),
        crystal_class=klass,
        space_group=sg,
        name=name,
        source=str(cell.get("source", data.get("source", ""))),
    )


def bundled_crystals() -> dict[str, Path]:
    """Names of the bundled crystals and their files (TOML preferred over CIF)."""
    found: dict[str, Path] = {}
    if STRUCTURES_DIR.is_dir():
        for p in sorted(STRUCTURES_DIR.glob("*.cif")):
            found[p.stem] = p
        for p in sorted(STRUCTURES_DIR.glob("*.toml")):
            found[p.stem] = p
    return found


def load_crystal(spec: str | Path) -> Crystal:
    """Load a crystal from a CIF path, a crystal TOML path or a bundled name.

    Examples
    --------
    >>> load_crystal('no-such-mineral')
    Traceback (most recent call last):
    ...
    habit.errors.FileFormatError: 'no-such-mineral' is neither a CIF or TOML file nor a ...
    """
    text = str(spec)
    path = Path(text)
    suffix = path.suffix.lower()
    if suffix in (".cif", ".toml"):
        if not path.is_file():
            raise FileFormatError(f"no such file: {path}.")
        return Crystal.from_cif(path) if suffix == ".cif" else read_crystal_file(path)
    if path.is_file():
        raise FileFormatError(f"{path}: a crystal file must end in .cif or .toml.")
    bundled = bundled_crystals()
    key = text.lower().replace(" ", "-")
    if key in bundled:
        return load_crystal(bundled[key])
    names = ", ".join(bundled) or "none installed"
    raise FileFormatError(
        f"{text!r} is neither a CIF or TOML file nor a bundled crystal; bundled: {names}."
    )
