"""Habit from structure: the Bravais–Friedel–Donnay–Harker (BFDH) ranking of forms.

The BFDH rule ranks the forms {hkl} of a crystal by their *effective* interplanar
spacing: the larger the spacing, the slower the face grows and the larger it is on the
crystal. Bravais (1866) and Friedel (1907) used the lattice spacing d(hkl); Donnay and
Harker (1937) replaced it by the spacing of the first *allowed* reflection of the space
group: d_eff = d(nh nk nl), where n is the smallest positive integer for which
(nh nk nl) is not systematically absent (centring, glide planes, screw axes). The
polyhedron drawn from the rule puts each face at a central distance proportional to
1/d_eff (the growth rate of the face, read as in a kinetic Wulff construction).

Conventions
-----------
* Faces are written in the cell the user gave (a CIF's cell is never changed); for the
  hexagonal family the printed label has four indices.
* Forms are enumerated from all faces with ``max(|h|, |k|, |l|) <= max_index`` and
  coprime indices; a form is listed once, by its *representative face*: of the faces
  of the form (under the crystal class), the one with the fewest negative indices, and
  among those the largest (h, k, l) in lexicographic order. So {110} is written (110),
  quartz's r and z are (10-11) and (01-11).
* Reflection conditions are derived from the space group's operations
  (:meth:`habit.crystal.Crystal.is_absent`), never from a table of group names.
* Ranks use competition ranking: forms with equal d_eff (to 1e-9 relative) share a
  rank and the next rank skips ("1, 2, 2, 4").

References
----------
.. [1] A. Bravais, *Études cristallographiques*, Gauthier-Villars, Paris (1866)
   (from memory).
.. [2] G. Friedel, "Études sur la loi de Bravais", Bull. Soc. franç. Minéral. 30,
   326–455 (1907) (from memory).
.. [3] J. D. H. Donnay and D. Harker, "A new law of crystal morphology extending the law
   of Bravais", Am. Mineral. 22, 446–467 (1937) (title and first page checked in a
   stored copy; last page from memory).
.. [4] R. Docherty, G. Clydesdale, K. J. Roberts and P. Bennema, "Application of
   Bravais–Friedel–Donnay–Harker, attachment energy and Ising models to predicting and
   understanding the morphology of molecular crystals", J. Phys. D: Appl. Phys. 24,
   89–99 (1991) (checked in a stored copy of the first page).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np

from habit._typing import FloatArray, IntArray
from habit.crystal import Crystal
from habit.errors import InputError
from habit.tolerances import DEFAULT, Tolerances

__all__ = [
    "BFDHForm",
    "BFDHResult",
    "bfdh",
    "form_representatives",
    "representative_faces",
    "first_allowed_orders",
]

#: Largest order n tried for the first allowed reflection n(hkl). Screw axes need at
#: most 6, glides and centring at most 4 (d-glides); 12 leaves room for combinations.
MAX_ORDER = 12


def _face_scores(faces: IntArray, bound: int) -> IntArray:
    """Integer score of faces (..., 3): larger = preferred representative.

    Fewest negative indices first, then the largest (h, k, l) lexicographically.
    """
    base = 2 * bound + 1
    shifted = faces + bound  # all entries in [0, 2*bound]
    negatives = np.sum(faces < 0, axis=-1)
    score: IntArray = (  # (...,)
        ((3 - negatives) * base + shifted[..., 0]) * base + shifted[..., 1]
    ) * base + shifted[..., 2]
    return score


def representative_faces(hkl: Any, operations: Any) -> IntArray:
    """Return the representative face of the form of each face, under a crystal class.

    Parameters
    ----------
    hkl : (M, 3) int array_like
        Faces.
    operations : (G, 3, 3) int array_like
        Point-group operations on fractional coordinates; faces map as (hkl) W.

    Returns
    -------
    (M, 3) int array
        For each face, the member of its form with the fewest negative indices and then
        the largest (h, k, l) (the rule in the module docstring).

    Examples
    --------
    >>> import numpy as np
    >>> ops = np.array([np.eye(3, dtype=int), -np.eye(3, dtype=int)])   # class -1
    >>> representative_faces([[-1, 0, 0], [1, -1, 0]], ops).tolist()
    [[1, 0, 0], [1, -1, 0]]
    """
    faces = np.asarray(hkl, dtype=np.int64).reshape(-1, 3)
    ops = np.asarray(operations, dtype=np.int64)
    # the set {h W^-1 : W in G} equals {h W : W in G} because G is a group
    images = np.einsum("mj,gjk->mgk", faces, ops)  # (M, G, 3)
    bound = int(np.abs(images).max(initial=0))
    best = np.argmax(_face_scores(images, bound), axis=1)  # (M,)
    out: IntArray = images[np.arange(len(faces)), best]  # (M, 3)
    return out


def form_representatives(crystal: Crystal, max_index: int) -> IntArray:
    """One representative face of every form with a face inside the index bound.

    Parameters
    ----------
    crystal : Crystal
    max_index : int
        Faces with ``max(|h|, |k|, |l|) <= max_index`` (three-index, the user's cell) and
        coprime indices are considered; every form having one of them is returned once.

    Returns
    -------
    (F, 3) int array
        Representative faces (rule in the module docstring), sorted by
        ``max(|h|, |k|, |l|)``, then ``|h| + |k| + |l|``, then preference.

    Raises
    ------
    InputError
        If ``max_index`` is not a whole number from 1 to 12.

    Examples
    --------
    >>> cubic = Crystal.from_cell(4.0, crystal_class='m-3m')
    >>> form_representatives(cubic, 1).tolist()
    [[1, 0, 0], [1, 1, 0], [1, 1, 1]]
    >>> form_representatives(cubic, 0)
    Traceback (most recent call last):
    ...
    habit.errors.InputError: max_index must be a whole number from 1 to 12; got 0.
    """
    n = _check_max_index(max_index)
    axis = np.arange(-n, n + 1)
    grid = np.stack(np.meshgrid(axis, axis, axis, indexing="ij"), axis=-1).reshape(-1, 3)
    grid = grid[np.any(grid != 0, axis=1)]  # (K, 3) without (000)
    g = np.gcd.reduce(np.abs(grid), axis=1)
    grid = grid[g == 1]  # coprime faces only
    reps = np.unique(representative_faces(grid, crystal.point_group.operations), axis=0)
    big = np.abs(reps).max(axis=1)
    total = np.abs(reps).sum(axis=1)
    score = _face_scores(reps, int(np.abs(reps).max()))
    order = np.lexsort((-score, total, big))
    out: IntArray = reps[order]
    return out


def _check_max_index(max_index: Any) -> int:
    if (
        isinstance(max_index, bool)
        or not isinstance(max_index, (int, np.integer))
        or not 1 <= int(max_index) <= 12
    ):
        raise InputError(f"max_index must be a whole number from 1 to 12; got {max_index!r}.")
    return int(max_index)


def first_allowed_orders(crystal: Crystal, hkl: Any, max_order: int = MAX_ORDER) -> IntArray:
    """Return the smallest n >= 1 with reflection n(hkl) allowed by the space group.

    Parameters
    ----------
    crystal : Crystal
        Must have a space group.
    hkl : (M, 3) int array_like
        Faces (coprime indices expected).
    max_order : int
        Largest n tried.

    Returns
    -------
    (M,) int array

    Raises
    ------
    InputError
        If the crystal has no space group.
    InvalidMillerIndexError
        If no order up to ``max_order`` is allowed.

    Examples
    --------
    >>> iron = Crystal.from_cell(2.8665, space_group='Im-3m')
    >>> first_allowed_orders(iron, [[1, 0, 0], [1, 1, 0], [1, 1, 1]]).tolist()
    [2, 1, 2]
    """
    faces = np.asarray(hkl, dtype=np.int64).reshape(-1, 3)
    if crystal.space_group is None:
        raise InputError(
            f"{crystal.name or 'this crystal'} has no space group, which the Donnay–Harker "
            "orders need; give a CIF or a space group, or use the lattice-only rule "
            "(--lattice-only)."
        )
    from habit.symmetry import first_allowed_order

    out: IntArray = np.asarray(
        first_allowed_order(faces, crystal.space_group, max_order), dtype=np.int64
    ).reshape(-1)
    return out


@dataclass(frozen=True, slots=True)
class BFDHForm:
    """One form in the BFDH ranking.

    Attributes
    ----------
    hkl : tuple of 3 int
        Representative face, in the user's cell.
    label : str
        ``{hkl}`` as printed (four indices on hexagonal axes).
    name : str
        Name of the form in the crystal class.
    multiplicity : int
        Number of faces of the form.
    order : int
        n, the first allowed order of the reflection.
    reflection : tuple of 3 int
        (nh nk nl).
    d_spacing : float
        d(hkl), Å.
    d_eff : float
        d(nh nk nl) = d(hkl)/n, Å: the morphological importance.
    rank : int
        1 for the largest d_eff; ties share a rank.
    distance : float
        Central distance in the BFDH polyhedron, d_eff(max)/d_eff (1 for the first form).
    area_fraction : float
        Share of the BFDH polyhedron's surface, 0–1.
    present : bool
        Whether the form has faces on the BFDH polyhedron.
    """

    hkl: tuple[int, int, int]
    label: str
    name: str
    multiplicity: int
    order: int
    reflection: tuple[int, int, int]
    d_spacing: float
    d_eff: float
    rank: int
    distance: float
    area_fraction: float
    present: bool


@dataclass(frozen=True, slots=True)
class BFDHResult:
    """BFDH ranking of the forms of a crystal and the polyhedron it predicts.

    Attributes
    ----------
    crystal : Crystal
    forms : tuple of BFDHForm
        In rank order (largest d_eff first).
    shape : habit.wulff.WulffShape
        The BFDH polyhedron (``kind='distance'``), central distances d_eff(max)/d_eff.
    max_index : int
    reflection_conditions : bool
        False when the plain Bravais–Friedel rule (n = 1 for every form) was used.
    """

    crystal: Crystal
    forms: tuple[BFDHForm, ...]
    shape: Any
    max_index: int
    reflection_conditions: bool

    @property
    def polyhedron(self) -> Any:
        """The BFDH polyhedron (habit.polyhedron.Polyhedron)."""
        return self.shape.polyhedron

    @property
    def present_forms(self) -> tuple[BFDHForm, ...]:
        """The forms with faces on the BFDH polyhedron, in rank order."""
        return tuple(f for f in self.forms if f.present)


def _competition_ranks(values: FloatArray, rel: float = 1e-9) -> IntArray:
    """Ranks 1, 2, 2, 4 ... of values already sorted in decreasing order."""
    ranks = np.ones(len(values), dtype=np.int64)
    for i in range(1, len(values)):
        same = math.isclose(values[i], values[i - 1], rel_tol=rel)
        ranks[i] = ranks[i - 1] if same else i + 1
    return ranks


def bfdh(
    crystal: Crystal,
    max_index: int = 2,
    *,
    reflection_conditions: bool = True,
    max_order: int = MAX_ORDER,
    tol: Tolerances = DEFAULT,
    progress: Callable[[int], None] | None = None,
) -> BFDHResult:
    """Rank the forms of a crystal by the BFDH rule and build the BFDH polyhedron.

    Parameters
    ----------
    crystal : Crystal
        Needs a space group unless ``reflection_conditions`` is False.
    max_index : int
        Index bound for the forms considered (see :func:`form_representatives`).
    reflection_conditions : bool
        True (default): Donnay–Harker, d_eff = d(hkl)/n with n the first allowed order.
        False: the plain Bravais–Friedel rule, d_eff = d(hkl).
    max_order : int
        Largest order n tried.
    tol : Tolerances
        Passed to the Wulff construction.
    progress : callable, optional
        Called with the number of steps done (3 steps: forms, orders, polyhedron).

    Returns
    -------
    BFDHResult

    Raises
    ------
    InputError
        Bad ``max_index``; no space group with ``reflection_conditions``.

    References
    ----------
    Donnay & Harker (1937); Docherty et al. (1991) — full entries in the module docstring.

    Examples
    --------
    >>> iron = Crystal.from_cell(2.8665, space_group='Im-3m', name='alpha-iron')
    >>> result = bfdh(iron, 1)
    >>> [(f.label, f.order, round(f.d_eff, 3)) for f in result.forms]
    [('{110}', 1, 2.027), ('{100}', 2, 1.433), ('{111}', 2, 0.827)]
    >>> bfdh(Crystal.from_cell(2.8665, crystal_class='m-3m'))
    Traceback (most recent call last):
    ...
    habit.errors.InputError: this crystal has no space group, which the Donnay–Harker ... need; ...
    """
    from habit.wulff import wulff_shape

    max_index = _check_max_index(max_index)
    reps = form_representatives(crystal, max_index)  # (F, 3)
    if progress is not None:
        progress(1)
    if reflection_conditions:
        orders = first_allowed_orders(crystal, reps, max_order)  # (F,)
    else:
        orders = np.ones(len(reps), dtype=np.int64)
    if progress is not None:
        progress(2)
    d = np.asarray(crystal.d_spacing(reps), dtype=float)  # (F,)
    d_eff = d / orders  # (F,)
    score = _face_scores(reps, int(np.abs(reps).max()))
    order = np.lexsort((-score, -d_eff))  # largest d_eff first, ties by preference
    reps, orders, d, d_eff = reps[order], orders[order], d[order], d_eff[order]
    ranks = _competition_ranks(d_eff)
    distances = d_eff[0] / d_eff  # (F,) central distance, 1 for the first form
    hkls = [tuple(int(x) for x in h) for h in reps]
    shape = wulff_shape(
        crystal, list(zip(hkls, distances.tolist(), strict=True)), kind="distance", tol=tol
    )
    if progress is not None:
        progress(3)
    forms = []
    for i, hkl in enumerate(hkls):
        fr = shape.forms[i]
        n = int(orders[i])
        forms.append(
            BFDHForm(
                hkl=hkl,  # type: ignore[arg-type]
                label=fr.label,
                name=fr.name,
                multiplicity=fr.multiplicity,
                order=n,
                reflection=(n * hkl[0], n * hkl[1], n * hkl[2]),
                d_spacing=float(d[i]),
                d_eff=float(d_eff[i]),
                rank=int(ranks[i]),
                distance=float(distances[i]),
                area_fraction=fr.area_fraction,
                present=fr.present,
            )
        )
    return BFDHResult(
        crystal=crystal,
        forms=tuple(forms),
        shape=shape,
        max_index=max_index,
        reflection_conditions=reflection_conditions,
    )
