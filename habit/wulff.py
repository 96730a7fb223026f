"""Equilibrium, kinetic and drawn crystal shapes by the Wulff construction.

Every face of every form gets a plane ``n · x <= h`` whose distance ``h`` from the Wulff
point is proportional to the face's surface energy (equilibrium shape: Wulff 1901), to
its growth rate (kinetic shape: the same construction with rates, e.g. Chernov 1984), or
given directly as a central distance (a habit drawing). The shape is the intersection
of these half-spaces.

Units: with energies the central distances are the energies read as lengths
(1 J/m² -> 1 Å), so only ratios matter; :meth:`WulffShape.scaled_to` sets a real size.

References
----------
G. Wulff (1901), Z. Kristallogr. 34, 449–530.
C. Herring (1951), Phys. Rev. 82, 87–93 (the construction's proof).
A. A. Chernov (1984), Modern Crystallography III: Crystal Growth, Springer (kinetic shapes).
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np

from habit._typing import FloatArray, IntArray
from habit.crystal import FORM_KINDS, Crystal, FormValues
from habit.errors import InputError, OpenShapeError, UnknownSymbolError
from habit.miller import reduce_indices
from habit.tolerances import DEFAULT, Tolerances

__all__ = ["FormResult", "WulffShape", "wulff_shape", "form_planes", "plane_set"]


@dataclass(frozen=True, slots=True)
class FormResult:
    """One form of a Wulff shape.

    Attributes
    ----------
    hkl : tuple of 3 int
        The face of the form as given.
    label : str
        ``{hkl}`` as printed (four indices on hexagonal axes).
    name : str
        The form's name in the crystal class.
    multiplicity : int
        Number of faces of the form.
    value : float
        The number given: energy (J/m²), distance or rate.
    distance : float
        Central distance of its faces in the polyhedron's length unit.
    area : float
        Total area of its faces present.
    area_fraction : float
        Share of the surface area, 0–1.
    present : bool
        Whether any face of the form has non-zero area.
    """

    hkl: tuple[int, int, int]
    label: str
    name: str
    multiplicity: int
    value: float
    distance: float
    area: float
    area_fraction: float
    present: bool


@dataclass(frozen=True, slots=True)
class WulffShape:
    """The result of a Wulff construction: the polyhedron and a table of its forms.

    Attributes
    ----------
    crystal : Crystal
    kind : str
        ``'energy'``, ``'distance'`` or ``'rate'``.
    polyhedron : habit.polyhedron.Polyhedron
        Faces labelled with (hkl), ``form_ids`` indexing :attr:`forms`.
    forms : tuple of FormResult
    mean_energy : float or None
        Area-weighted mean surface energy, J/m² (energies only).
    """

    crystal: Crystal
    kind: str
    polyhedron: Any
    forms: tuple[FormResult, ...]
    mean_energy: float | None

    @property
    def present_forms(self) -> tuple[FormResult, ...]:
        """The forms whose faces have non-zero area."""
        return tuple(f for f in self.forms if f.present)

    def shape_name(self) -> str:
        """Name of the solid ('cuboctahedron', 'cube + octahedron', ...)."""
        from habit.shapes import shape_name

        names = {i: f.name for i, f in enumerate(self.forms)}
        return str(shape_name(self.polyhedron, form_names=names))

    def symmetry(self) -> Any:
        """Symmetry of the shape found from its geometry alone (habit.polysym)."""
        from habit.polysym import symmetry_of

        return symmetry_of(self.polyhedron)

    def scaled_to(self, *, volume: float | None = None, diameter: float | None = None) -> Any:
        """The polyhedron scaled to a volume (Å³) or equivalent-sphere diameter (Å)."""
        if (volume is None) == (diameter is None):
            raise InputError("give exactly one of volume or diameter.")
        if volume is None:
            assert diameter is not None
            volume = math.pi * diameter**3 / 6.0
        if not (volume > 0 and math.isfinite(volume)):
            raise InputError("the size must be a positive finite number.")
        factor = (volume / float(self.polyhedron.volume)) ** (1.0 / 3.0)
        return self.polyhedron.scaled(factor)


def _as_items(
    crystal: Crystal, forms: Mapping[Any, float] | FormValues | Iterable[tuple[Any, float]] | None
) -> tuple[list[tuple[int, int, int]], list[float], str | None]:
    if forms is None:
        if crystal.forms is None:
            raise InputError(
                f"{crystal.name or 'the crystal'} has no forms; give forms and their values, "
                "e.g. --form 111=1.0 --form 100=1.15."
            )
        forms = crystal.forms
    if isinstance(forms, FormValues):
        return list(forms.hkl), list(forms.values), forms.kind
    items = forms.items() if isinstance(forms, Mapping) else forms
    hkls: list[tuple[int, int, int]] = []
    values: list[float] = []
    for key, value in items:
        hkl = crystal.parse_face(key) if isinstance(key, str) else tuple(int(v) for v in key)
        if len(hkl) != 3:
            raise InputError(f"a form needs three Miller indices; got {key!r}.")
        hkls.append((hkl[0], hkl[1], hkl[2]))
        values.append(value)
    return hkls, values, None


def _check_values(
    crystal: Crystal, hkls: list[tuple[int, int, int]], values: list[Any], kind: str
) -> list[float]:
    what = {"energy": "surface energy", "distance": "central distance", "rate": "growth rate"}[kind]
    out = []
    for hkl, value in zip(hkls, values, strict=True):
        label = crystal.format_face(hkl, "{}")
        try:
            v = float(value)
        except (TypeError, ValueError):
            raise InputError(f"the {what} of {label} must be a number; got {value!r}.") from None
        if not math.isfinite(v) or v <= 0:
            raise InputError(
                f"the {what} of {label} must be a positive finite number; got {value!r}."
            )
        out.append(v)
    return out


def _distinct_forms(
    crystal: Crystal, hkls: list[tuple[int, int, int]], values: list[float]
) -> tuple[list[tuple[int, int, int]], list[float]]:
    """Drop repeats of a form given again with the same value (the first one is kept)."""
    seen: dict[tuple[tuple[int, ...], ...], float] = {}
    out_h, out_v = [], []
    for hkl, value in zip(hkls, values, strict=True):
        # (202) is the face (101): compare forms by their reduced indices
        key = tuple(sorted(map(tuple, reduce_indices(crystal.expand_form(hkl)).tolist())))
        if key in seen:
            if not math.isclose(seen[key], value, rel_tol=1e-12):
                raise InputError(
                    f"the form {crystal.format_face(hkl, '{}')} is given twice with different "
                    f"values ({seen[key]:g} and {value:g}); give each form once."
                )
            continue
        seen[key] = value
        out_h.append(hkl)
        out_v.append(value)
    return out_h, out_v


def form_planes(
    crystal: Crystal, hkls: Iterable[Any], values: Iterable[float]
) -> tuple[FloatArray, FloatArray, IntArray, IntArray]:
    """Expand forms into the planes of all their faces.

    Parameters
    ----------
    crystal : Crystal
    hkls : iterable of (3,) int
        One face of each form.
    values : iterable of float
        Central distance of each form (any positive length unit).

    Returns
    -------
    normals : (N, 3) float array
        Cartesian unit normals of all faces.
    distances : (N,) float array
    hkl : (N, 3) int array
    form_ids : (N,) int array
        Index of each face's form in the input order.

    Raises
    ------
    InputError
        If one form is given twice with different values.
    """
    hkl_list = [tuple(int(x) for x in h) for h in hkls]
    value_list = [float(v) for v in values]
    faces: list[IntArray] = []
    owner: dict[tuple[int, ...], int] = {}
    keep: list[int] = []
    for i, hkl in enumerate(hkl_list):
        members = crystal.expand_form(hkl)
        key = tuple(sorted(map(tuple, reduce_indices(members).tolist())))
        first = owner.get(key[0])
        if first is not None:
            if not math.isclose(value_list[first], value_list[i], rel_tol=1e-12):
                raise InputError(
                    f"the form {crystal.format_face(hkl, '{}')} is given twice with different "
                    f"values ({value_list[first]:g} and {value_list[i]:g}); give each form once."
                )
            continue
        for m in key:
            owner[m] = i
        faces.append(members)
        keep.append(i)
    hkl_all = np.vstack(faces)  # (N, 3)
    form_ids = np.concatenate([np.full(len(f), k) for k, f in zip(keep, faces, strict=True)])
    normals = crystal.normals(hkl_all)  # (N, 3)
    distances = np.array([value_list[k] for k in form_ids], dtype=float)  # (N,)
    return normals, distances, hkl_all, form_ids.astype(np.int64)


def plane_set(crystal: Crystal, hkls: Iterable[Any]) -> tuple[FloatArray, IntArray, IntArray]:
    """Normals, indices and form ids of all faces of the given forms (no values)."""
    hkl_list = [tuple(int(x) for x in h) for h in hkls]
    normals, _, hkl_all, form_ids = form_planes(crystal, hkl_list, range(1, len(hkl_list) + 1))
    return normals, hkl_all, form_ids


def _open_message(crystal: Crystal, labels: list[str], direction: Any) -> str:
    text = ", ".join(labels)
    if direction is None:
        return f"the forms {text} do not close a solid; add forms that bound it."
    d = np.asarray(direction, dtype=float)
    uvw = d @ np.linalg.inv(crystal.lattice)  # fractional components of the direction
    uvw = uvw / np.abs(uvw).max()
    best = None
    for n in range(1, 7):
        cand = np.rint(uvw * n)
        if np.any(cand) and np.allclose(cand, uvw * n, atol=0.02 * n):
            best = cand.astype(int)
            break
    from habit.miller import format_uvw

    where = (
        format_uvw(best, hexagonal=crystal.is_hexagonal_family)
        if best is not None
        else "(" + ", ".join(f"{x:.3f}" for x in d) + ") in Cartesian coordinates"
    )
    return (
        f"the forms {text} do not close a solid: it is open along {where}; add a form "
        "whose faces cut that direction."
    )


def wulff_shape(
    crystal: Crystal,
    forms: Mapping[Any, float] | FormValues | Iterable[tuple[Any, float]] | None = None,
    *,
    kind: str | None = None,
    tol: Tolerances = DEFAULT,
) -> WulffShape:
    """Build the Wulff shape (or kinetic shape, or habit drawing) of a crystal.

    Parameters
    ----------
    crystal : Crystal
    forms : mapping or FormValues, optional
        One face of each form -> its energy (J/m²), central distance or growth rate.
        Keys may be index tuples or strings as people type them ('111', '10-11').
        Default: the forms given with the crystal (its TOML file).
    kind : {'energy', 'distance', 'rate'}, optional
        What the numbers mean; default the kind stored with the forms, else 'energy'.
    tol : Tolerances

    Returns
    -------
    WulffShape

    Raises
    ------
    InputError
        Zero, negative or NaN values; one form given twice with different values.
    OpenShapeError
        If the forms do not close a solid; the message names a direction it is open along.

    Examples
    --------
    >>> xtal = Crystal.from_cell(4.08, crystal_class='m-3m')
    >>> shape = wulff_shape(xtal, {'100': 1.0, '111': 2 / 3 ** 0.5})   # r = 2/sqrt(3)
    >>> [f.label for f in shape.present_forms], shape.polyhedron.n_vertices
    (['{100}', '{111}'], 12)
    >>> wulff_shape(xtal, {'111': -1.0})
    Traceback (most recent call last):
    ...
    habit.errors.InputError: the surface energy of {111} must be a positive finite number; got -1.0.
    """
    from habit.polyhedron import Polyhedron

    hkls, raw_values, stored_kind = _as_items(crystal, forms)
    kind = kind or stored_kind or "energy"
    if kind not in FORM_KINDS:
        raise UnknownSymbolError(f"unknown kind {kind!r}; use one of {', '.join(FORM_KINDS)}.")
    if not hkls:
        raise InputError("give at least one form and its value.")
    values = _check_values(crystal, hkls, raw_values, kind)
    hkls, values = _distinct_forms(crystal, hkls, values)
    normals, distances, hkl_all, form_ids = form_planes(crystal, hkls, values)
    labels = [crystal.format_face(h, "{}") for h in hkls]
    try:
        poly = Polyhedron.from_halfspaces(
            normals,
            distances,
            hkl=hkl_all,
            form_ids=form_ids,
            form_labels=tuple(labels),
            face_labels=tuple(crystal.format_face(h) for h in hkl_all),
            tol=tol,
        )
    except OpenShapeError as exc:
        given = sorted({labels[i] for i in form_ids}, key=labels.index)
        raise OpenShapeError(_open_message(crystal, given, exc.direction), exc.direction) from None
    n_forms = len(hkls)
    face_forms = np.asarray(poly.form_ids, dtype=np.int64)  # (F,) form of each face
    areas = np.bincount(face_forms, weights=poly.face_areas, minlength=n_forms)
    total = float(areas.sum())
    on_shape = set(face_forms.tolist())
    results = []
    for i, hkl in enumerate(hkls):
        results.append(
            FormResult(
                hkl=tuple(int(x) for x in hkl),  # type: ignore[arg-type]
                label=labels[i],
                name=crystal.form_name(hkl),
                multiplicity=int(np.sum(form_ids == i)),
                value=values[i],
                distance=values[i],
                area=float(areas[i]),
                area_fraction=float(areas[i] / total),
                present=i in on_shape,
            )
        )
    mean = None
    if kind == "energy":
        mean = float(sum(r.value * r.area for r in results) / total)
    return WulffShape(
        crystal=crystal, kind=kind, polyhedron=poly, forms=tuple(results), mean_energy=mean
    )
