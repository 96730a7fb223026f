"""A particle on a substrate: the Winterbottom construction.

A crystal particle resting on a flat substrate on its face (hkl) has, at equilibrium, the
shape of its free Wulff shape cut by a plane parallel to (hkl) (Kaischew 1950;
Winterbottom 1967). With the free shape built so that each face (hkl) lies at central
distance h(hkl) = λ γ(hkl), the interface plane lies at

    h_int = λ (γ_interface − γ_substrate)

from the Wulff point, along the outward normal of (hkl) (towards the substrate). Writing
the adhesion energy (work of adhesion, Dupré) as β = γ_facet + γ_substrate − γ_interface,
with γ_facet = γ(hkl),

    h_int = h_free (1 − β / γ_facet),        h_free = λ γ_facet.

Limiting cases:

* β = 0 — the interface costs as much as the two free surfaces it replaces: the particle
  is its free Wulff shape, sitting on its own (hkl) facet (h_int = h_free). If (hkl) is
  not a facet of the free shape the contact is an edge or a corner (contact area 0), and
  stays so while h_int is beyond the shape's extent h_W(n) along the normal.
* 0 < β < β_wet — a truncated shape; the interface is a face of area > 0.
* β = β_wet — the particle has spread into a film (zero height). β_wet is reached when
  the interface plane reaches the far side of the free shape,
  h_int = −h_W(−n), i.e. β_wet = γ_facet (1 + h_W(−n) / h_free), where h_W(−n) is the
  extent of the free shape away from the substrate. When the opposite face (−h −k −l)
  is a facet at the same distance (every centrosymmetric crystal) β_wet = 2 γ_facet.
* β > β_wet — past full wetting there is no particle: refused.
* β < 0 — the interface costs more than the two free surfaces: the particle would rather
  not touch the substrate at all (no contact face): refused.

Lengths are in the unit of the free Wulff shape's polyhedron (energies read as lengths,
1 J/m² -> 1 Å, by :func:`habit.wulff.wulff_shape`); only ratios matter.

References
----------
.. [1] W. L. Winterbottom, "Equilibrium shape of a small particle in contact with a
   foreign substrate", Acta Metall. 15, 303–310 (1967) (from memory).
.. [2] R. Kaischew, "Zur Theorie des Kristallwachstums" / equilibrium form of a crystal
   on a foreign substrate, Commun. Bulg. Acad. Sci. (Phys.) 1, 100 (1950) (from memory;
   title and venue unverified).
.. [3] A. Dupré, *Théorie mécanique de la chaleur*, Gauthier-Villars, Paris (1869): the
   work of adhesion (from memory).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from habit._typing import FloatArray
from habit.errors import InputError
from habit.tolerances import DEFAULT, Tolerances

__all__ = ["SupportedForm", "SupportedParticle", "winterbottom_shape", "interface_height"]

INTERFACE_LABEL = "interface"


def interface_height(h_free: float, facet_energy: float, adhesion: float) -> float:
    """Height of the interface plane above the Wulff point: h_free (1 − β/γ_facet).

    Parameters
    ----------
    h_free : float
        Central distance of the substrate facet in the free Wulff shape.
    facet_energy : float
        γ of that facet, J/m².
    adhesion : float
        β = γ_facet + γ_substrate − γ_interface, J/m².

    Examples
    --------
    >>> interface_height(1.0, 1.2, 0.0), interface_height(1.0, 1.2, 1.2)
    (1.0, 0.0)
    """
    return float(h_free) * (1.0 - float(adhesion) / float(facet_energy))


@dataclass(frozen=True, slots=True)
class SupportedForm:
    """Area of one form (or of the interface) on a supported particle.

    Attributes
    ----------
    label : str
        ``{hkl}`` or ``'interface'``.
    energy : float
        γ of the form, J/m²; for the interface γ_interface − γ_substrate = γ_facet − β.
    area : float
        Total area of its faces (polyhedron length unit squared).
    area_fraction : float
        Share of the particle's whole surface, interface included, 0–1.
    present : bool
    """

    label: str
    energy: float
    area: float
    area_fraction: float
    present: bool


@dataclass(frozen=True, slots=True)
class SupportedParticle:
    """A Winterbottom shape: a free Wulff shape cut by the interface plane.

    Attributes
    ----------
    free : habit.wulff.WulffShape
        The free equilibrium shape.
    substrate_hkl : tuple of 3 int
        The particle's face parallel to the substrate (outward normal into the substrate).
    substrate_label : str
    regime : str
        ``'free'`` (the plane does not cut the free shape: β = 0, the shape resting on its
        own facet, or a small β when (hkl) is not a facet, the shape touching on an edge
        or corner), ``'supported'`` (the interface is a face of area > 0) or ``'film'``
        (β = β_wet).
    facet_energy : float
        γ_facet, J/m².
    adhesion : float
        β, J/m².
    wetting_adhesion : float
        β_wet, J/m²: the adhesion at which the particle spreads into a film.
    h_free : float
        Central distance of the substrate facet in the free shape.
    h_interface : float
        Signed distance of the interface plane from the Wulff point along the normal.
    polyhedron : habit.polyhedron.Polyhedron or None
        The particle (None for a film). The interface face has form label
        ``'interface'`` and the substrate (hkl).
    contact_area : float
        Area of the interface.
    height : float
        Distance from the interface plane to the farthest point of the particle.
    width : float
        Largest extent of the particle parallel to the substrate (the largest distance
        between two vertices projected onto the interface plane).
    aspect_ratio : float
        height / width.
    volume : float
    forms : tuple of SupportedForm
        The free shape's forms in their order, then the interface.
    normal : (3,) float array
        Unit outward normal of the interface (Cartesian), pointing into the substrate.
    """

    free: Any
    substrate_hkl: tuple[int, int, int]
    substrate_label: str
    regime: str
    facet_energy: float
    adhesion: float
    wetting_adhesion: float
    h_free: float
    h_interface: float
    polyhedron: Any
    contact_area: float
    height: float
    width: float
    aspect_ratio: float
    volume: float
    forms: tuple[SupportedForm, ...]
    normal: FloatArray

    @property
    def crystal(self) -> Any:
        """The crystal of the free shape."""
        return self.free.crystal

    def shape_name(self) -> str:
        """Describe the particle in words, e.g. 'Winterbottom shape on (111)'."""
        if self.regime == "film":
            return f"film on {self.substrate_label}"
        if self.regime == "free":
            return f"free Wulff shape resting on {self.substrate_label}"
        return f"Winterbottom shape on {self.substrate_label}"

    @property
    def interface_fraction(self) -> float:
        """Share of the whole surface that is interface, 0–1 (nan for a film)."""
        return self.forms[-1].area_fraction


def _facet_form(shape: Any, hkl: tuple[int, int, int]) -> int:
    crystal = shape.crystal
    target = np.asarray(hkl)
    for i, form in enumerate(shape.forms):
        members = crystal.expand_form(form.hkl)
        if np.any(np.all(members == target, axis=1)):
            return i
    given = ", ".join(f.label for f in shape.forms)
    raise InputError(
        f"the substrate face {crystal.format_face(hkl)} belongs to none of the forms given "
        f"({given}); add its form with its surface energy."
    )


def _primitive(hkl: Any) -> tuple[int, int, int]:
    arr = np.rint(np.asarray(hkl, dtype=float)).astype(np.int64)
    g = int(np.gcd.reduce(np.abs(arr)))
    if arr.shape != (3,) or g == 0:
        raise InputError(
            f"the substrate face needs three Miller indices, not all zero; got {hkl!r}."
        )
    return (int(arr[0]) // g, int(arr[1]) // g, int(arr[2]) // g)


def _number(value: Any, what: str, *, positive: bool = False) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{what} must be a number in J/m²; got {value!r}.") from None
    if not math.isfinite(v) or (positive and v <= 0):
        kind = "a positive finite number" if positive else "a finite number"
        raise InputError(f"{what} must be {kind} in J/m²; got {value!r}.")
    return v


def _interior_point(normals: FloatArray, distances: FloatArray) -> tuple[FloatArray, float]:
    """Chebyshev centre of {x : normals x <= distances} and its radius (linear program)."""
    from scipy.optimize import linprog

    norms = np.linalg.norm(normals, axis=1, keepdims=True)  # (N, 1)
    a_ub = np.hstack([normals, norms])  # (N, 4)
    res = linprog(
        c=[0.0, 0.0, 0.0, -1.0],
        A_ub=a_ub,
        b_ub=distances,
        bounds=[(None, None)] * 3 + [(0.0, None)],
        method="highs",
    )
    if res.status != 0:  # pragma: no cover - the shape is bounded and non-empty here
        raise InputError("could not find a point inside the supported particle.")
    return np.asarray(res.x[:3], dtype=float), float(res.x[3])


def winterbottom_shape(
    shape: Any,
    substrate: Any,
    *,
    adhesion: float | None = None,
    interface_energy: float | None = None,
    substrate_energy: float | None = None,
    tol: Tolerances = DEFAULT,
) -> SupportedParticle:
    """Cut a free Wulff shape by the interface plane of a substrate (Winterbottom).

    Parameters
    ----------
    shape : habit.wulff.WulffShape
        Free equilibrium shape built from surface energies (``kind='energy'``).
    substrate : str or (3,) int
        The particle's face lying on the substrate, e.g. ``'111'``; it must belong to one
        of the shape's forms (its γ is needed).
    adhesion : float, optional
        β, the adhesion energy (work of adhesion), J/m².
    interface_energy, substrate_energy : float, optional
        γ_interface and γ_substrate, J/m², instead of β:
        β = γ_facet + γ_substrate − γ_interface.
    tol : Tolerances

    Returns
    -------
    SupportedParticle

    Raises
    ------
    InputError
        A shape not built from energies; a substrate face outside the forms; β < 0
        (dewetting) or β > β_wet (past full wetting); both or neither of β and the
        energy pair.

    References
    ----------
    Winterbottom (1967); Kaischew (1950) — full entries in the module docstring.

    Examples
    --------
    >>> from habit.crystal import Crystal
    >>> from habit.wulff import wulff_shape
    >>> cube = wulff_shape(Crystal.from_cell(4.0, crystal_class='m-3m'), {'100': 1.0})
    >>> p = winterbottom_shape(cube, '001', adhesion=0.5)
    >>> round(p.h_interface, 12), round(p.height, 12), round(p.contact_area, 12)
    (0.5, 1.5, 4.0)
    >>> winterbottom_shape(cube, '001', adhesion=2.5)
    Traceback (most recent call last):
    ...
    habit.errors.InputError: an adhesion energy of 2.5 J/m² is past full wetting on (001) ...
    """
    from habit.polyhedron import Polyhedron

    if getattr(shape, "kind", None) != "energy":
        raise InputError(
            "the Winterbottom construction needs a Wulff shape built from surface energies "
            "(J/m²), not from central distances or growth rates."
        )
    crystal = shape.crystal
    hkl = _primitive(crystal.parse_face(substrate) if isinstance(substrate, str) else substrate)
    label = crystal.format_face(hkl)
    k = _facet_form(shape, hkl)
    facet = shape.forms[k]
    gamma_f = float(facet.value)
    h_free = float(facet.distance)
    if adhesion is not None and (interface_energy is not None or substrate_energy is not None):
        raise InputError("give either the adhesion energy or the interface and substrate energies.")
    if adhesion is None:
        if interface_energy is None or substrate_energy is None:
            raise InputError(
                "give the adhesion energy β (J/m²), or both the interface and the substrate "
                "surface energies (J/m²)."
            )
        g_int = _number(interface_energy, "the interface energy")
        g_sub = _number(substrate_energy, "the substrate surface energy", positive=True)
        beta = gamma_f + g_sub - g_int
    else:
        beta = _number(adhesion, "the adhesion energy")
    poly = shape.polyhedron
    n = np.asarray(crystal.normals(hkl), dtype=float).reshape(3)
    heights = poly.vertices @ n  # (V,)
    h_plus = float(heights.max())  # extent towards the substrate
    h_minus = float(-heights.min())  # extent away from it
    eps = tol.length * max(h_plus, h_minus) * 10.0
    beta_wet = gamma_f * (1.0 + h_minus / h_free)
    if beta < -tol.length * gamma_f:
        raise InputError(
            f"an adhesion energy of {beta:g} J/m² is negative: the interface would cost more "
            f"than the free surfaces it replaces, so the particle does not wet {label} "
            "(it stays a free Wulff shape touching at one point); give β >= 0."
        )
    h_int = interface_height(h_free, gamma_f, beta)
    if h_int < -h_minus - eps:
        raise InputError(
            f"an adhesion energy of {beta:g} J/m² is past full wetting on {label} "
            f"(β_wet = {beta_wet:.6g} J/m²): the particle would spread into a film; give "
            f"β <= {beta_wet:.6g} J/m²."
        )
    labels = [f.label for f in shape.forms]
    n_forms = len(labels)
    energies = [f.value for f in shape.forms] + [gamma_f - beta]
    if abs(h_int + h_minus) <= eps:
        nan = float("nan")
        forms = tuple(
            SupportedForm(lab, e, nan, nan, False)
            for lab, e in zip([*labels, INTERFACE_LABEL], energies, strict=True)
        )
        return SupportedParticle(
            free=shape,
            substrate_hkl=hkl,
            substrate_label=label,
            regime="film",
            facet_energy=gamma_f,
            adhesion=beta,
            wetting_adhesion=beta_wet,
            h_free=h_free,
            h_interface=h_int,
            polyhedron=None,
            contact_area=nan,
            height=0.0,
            width=nan,
            aspect_ratio=0.0,
            volume=0.0,
            forms=forms,
            normal=_ro(n),
        )
    normals = np.asarray(poly.normals, dtype=float)  # (F, 3)
    dists = np.asarray(poly.distances, dtype=float)  # (F,)
    hkls = np.asarray(poly.hkl, dtype=np.int64) if poly.hkl is not None else None
    form_ids = np.asarray(poly.form_ids, dtype=np.int64).copy()
    parallel = normals @ n > 1.0 - 1e-9  # faces parallel to the interface, same side
    if h_int >= h_plus - eps:
        regime = "free"
        h_cut = h_plus
        form_ids[parallel] = n_forms  # the particle's own facet is the interface
    else:
        regime = "supported"
        h_cut = h_int
        keep = ~parallel
        normals = np.vstack([normals[keep], n])
        dists = np.append(dists[keep], h_int)
        form_ids = np.append(form_ids[keep], n_forms)
        if hkls is not None:
            hkls = np.vstack([hkls[keep], hkl])
    centre, _ = _interior_point(normals, dists)
    face_labels = [
        INTERFACE_LABEL if f == n_forms else crystal.format_face(h)
        for f, h in zip(form_ids, hkls if hkls is not None else [hkl] * len(form_ids), strict=True)
    ]
    cut = Polyhedron.from_halfspaces(
        normals,
        dists - normals @ centre,
        hkl=hkls,
        form_ids=form_ids,
        form_labels=(*labels, INTERFACE_LABEL),
        face_labels=face_labels,
        tol=tol,
    ).translated(centre)
    areas = np.bincount(np.asarray(cut.form_ids), weights=cut.face_areas, minlength=n_forms + 1)
    total = float(areas.sum())
    forms = tuple(
        SupportedForm(
            label=lab,
            energy=float(e),
            area=float(a),
            area_fraction=float(a / total),
            present=bool(a > tol.area * total),
        )
        for lab, e, a in zip([*labels, INTERFACE_LABEL], energies, areas, strict=True)
    )
    verts = np.asarray(cut.vertices)
    height = float(h_cut - (verts @ n).min())
    flat = verts - np.outer(verts @ n, n)  # (V, 3) projected onto the interface plane
    from scipy.spatial.distance import pdist

    width = float(pdist(flat).max())
    return SupportedParticle(
        free=shape,
        substrate_hkl=hkl,
        substrate_label=label,
        regime=regime,
        facet_energy=gamma_f,
        adhesion=beta,
        wetting_adhesion=beta_wet,
        h_free=h_free,
        h_interface=h_int,
        polyhedron=cut,
        contact_area=float(areas[n_forms]),
        height=height,
        width=width,
        aspect_ratio=height / width,
        volume=float(cut.volume),
        forms=forms,
        normal=_ro(n),
    )


def _ro(arr: Any) -> FloatArray:
    out = np.array(arr, dtype=float)
    out.setflags(write=False)
    return out
