"""Space groups from spglib's database, and the reflection conditions they impose.

A space group is held as operations ``(W, w)`` on fractional coordinates of one cell
(centring translations as separate operations); its point group is a
:class:`habit.symmetry.PointGroup` in the same basis. Conventions for operations, faces
and settings are those stated in :mod:`habit.symmetry`. spglib is imported only inside
the functions, so importing this module stays cheap.

References
----------
.. [1] Hahn, T. (ed.) (2005). International Tables for Crystallography, Vol. A, 5th ed.,
   Section 2.2.13 (reflection conditions).
.. [2] Togo, A., Shinohara, K. & Tanaka, I. (2024). Spglib: a software library for
   crystal symmetry search. Sci. Technol. Adv. Mater. Methods 4, 2384822.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from functools import lru_cache
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from habit._arrays import readonly as _readonly
from habit._typing import BoolArray, FloatArray, IntArray
from habit.errors import InputError, InvalidMillerIndexError, UnknownSymbolError
from habit.symmetry import (
    _ABS_TOL,
    PointGroup,
    _as_operations,
    point_group_from_operations,
)

__all__ = [
    "SpaceGroup",
    "space_group",
    "space_group_from_operations",
    "is_absent",
    "first_allowed_order",
]


@dataclass(frozen=True, slots=True, eq=False)
class SpaceGroup:
    """A space group as operations (W, w) on fractional coordinates of one cell.

    Parameters
    ----------
    number : int
        International Tables number, 1–230.
    symbol : str
        Hermann–Mauguin short symbol with underscores for screws, e.g. ``"P2_1/c"``.
    hall_number : int or None
        spglib's Hall number (1–530) of the setting, or None for operations given in a
        user's cell.
    rotations : (n, 3, 3) int array, read-only
        Rotation parts W.
    translations : (n, 3) float array, read-only
        Translation parts w, centring translations included as separate operations.
    point_group : PointGroup
        The crystal class, with operations in the same basis.
    """

    number: int
    symbol: str
    hall_number: int | None
    rotations: IntArray
    translations: FloatArray
    point_group: PointGroup

    def __post_init__(self) -> None:
        object.__setattr__(self, "rotations", _readonly(self.rotations, np.int64))
        object.__setattr__(self, "translations", _readonly(self.translations, np.float64))

    @property
    def order(self) -> int:
        """Number of operations in the cell (centring included)."""
        return int(self.rotations.shape[0])

    def __repr__(self) -> str:
        return f"SpaceGroup({self.symbol!r}, number={self.number}, hall_number={self.hall_number})"


def _norm_sg(text: str) -> str:
    return re.sub(r"[\s_]", "", text).replace("\u2212", "-").lower()


_OLD_SG = {"cmca": 64, "cmma": 67, "ccca": 68, "abm2": 39, "aba2": 41, "c2/c2/m21/a": 64}


@lru_cache(maxsize=1)
def _hall_table() -> tuple[dict[str, list[int]], dict[int, int], dict[int, Any]]:
    import spglib

    keys: dict[str, list[int]] = {}
    first: dict[int, int] = {}
    types: dict[int, Any] = {}
    for hall in range(1, 531):
        t = spglib.get_spacegroup_type(hall)
        if t is None:  # pragma: no cover - spglib's table covers 1..530
            raise UnknownSymbolError(f"spglib has no Hall number {hall}.")
        types[hall] = t
        first.setdefault(t.number, hall)
        names = {t.international_short, t.international_full}
        names.update(t.international.split("="))
        for name in names:
            keys.setdefault(_norm_sg(name), []).append(hall)
    return keys, first, types


@lru_cache(maxsize=600)
def _space_group_from_hall(hall: int) -> SpaceGroup:
    import spglib

    _, _, types = _hall_table()
    t = types[hall]
    sym = spglib.get_symmetry_from_database(hall)
    if sym is None:  # pragma: no cover - spglib's table covers 1..530
        raise UnknownSymbolError(f"spglib has no operations for Hall number {hall}.")
    rot = np.asarray(sym["rotations"], dtype=np.int64)
    trans = np.asarray(sym["translations"], dtype=np.float64) % 1.0
    pg = point_group_from_operations(rot)
    return SpaceGroup(t.number, t.international_short, hall, rot, trans, pg)


def space_group(symbol_or_number: str | int | SpaceGroup) -> SpaceGroup:
    """Return a space group from spglib's database.

    Parameters
    ----------
    symbol_or_number : str or int
        A number 1–230 (its first setting in spglib's list: unique axis b, cell choice 1,
        origin choice 1, hexagonal axes for R groups), or a Hermann–Mauguin symbol, short
        or full, screws written ``21`` or ``2_1``, spaces ignored: ``"P21/c"``,
        ``"P 1 21/c 1"``, ``"Fm-3m"``, ``"R-3c"`` (hexagonal axes). A suffix ``:choice``
        picks a setting by spglib's choice label, e.g. ``"Fd-3m:2"`` (origin 2) or
        ``"R-3c:R"`` (rhombohedral axes).

    Returns
    -------
    SpaceGroup

    Raises
    ------
    UnknownSymbolError
        If nothing matches.

    Examples
    --------
    >>> sg = space_group("P21/c")
    >>> sg.number, sg.symbol, sg.hall_number, sg.point_group.symbol
    (14, 'P2_1/c', 81, '2/m')
    >>> space_group(225).rotations.shape
    (192, 3, 3)
    """
    if isinstance(symbol_or_number, SpaceGroup):
        return symbol_or_number
    keys, first, types = _hall_table()
    text = str(symbol_or_number).strip()
    if isinstance(symbol_or_number, (int, np.integer)) or text.isdigit():
        number = int(text)
        if not 1 <= number <= 230:
            raise UnknownSymbolError(f"space-group number must be 1 to 230, got {number}.")
        return _space_group_from_hall(first[number])
    name, _, choice = text.partition(":")
    halls = list(keys.get(_norm_sg(name), []))
    if not halls and _norm_sg(name) in _OLD_SG:
        halls = [first[_OLD_SG[_norm_sg(name)]]]
    if choice:
        halls = [h for h in halls if types[h].choice.lower() == choice.strip().lower()]
    if not halls:
        raise UnknownSymbolError(
            f"unknown space group {symbol_or_number!r}; give a number 1-230 or a "
            "Hermann–Mauguin symbol such as 'P2_1/c', 'P 1 21/c 1', 'Fm-3m' or 'R-3c:R'."
        )
    return _space_group_from_hall(halls[0])


def space_group_from_operations(
    rotations: ArrayLike,
    translations: ArrayLike,
    number: int | None = None,
    lattice: ArrayLike | None = None,
) -> SpaceGroup:
    """Build a SpaceGroup from operations given in the user's cell (e.g. from a CIF).

    Parameters
    ----------
    rotations : (n, 3, 3) int array
        Rotation parts on fractional coordinates of the user's cell.
    translations : (n, 3) float array
        Translation parts (fractions of the cell edges), centrings as separate operations.
    number : int, optional
        Space-group number when known; it is checked against spglib's identification.
    lattice : (3, 3) float array, optional
        Rows a, b, c of the cell (Å). Without it a metric kept by the rotations (the
        average of ``W.T @ W``) is used, which is enough to identify the type.

    Returns
    -------
    SpaceGroup
        With ``hall_number=None`` and the operations as given (translations reduced
        modulo 1).

    Raises
    ------
    InputError
        If the shapes disagree, spglib cannot identify the operations or the type is not
        ``number``.

    Examples
    --------
    >>> ref = space_group("Fm-3m")
    >>> sg = space_group_from_operations(ref.rotations, ref.translations)
    >>> sg.number, sg.symbol, sg.point_group.symbol
    (225, 'Fm-3m', 'm-3m')
    """
    rot = _as_operations(rotations)
    trans = np.asarray(translations, dtype=np.float64).reshape(-1, 3)
    if trans.shape[0] != rot.shape[0]:
        raise InputError(
            f"got {rot.shape[0]} rotations but {trans.shape[0]} translations;"
            " give one translation per rotation."
        )
    if lattice is None:
        metric = np.einsum("nji,njk->ik", rot, rot).astype(np.float64)  # sum of W^T W
        cell = np.linalg.cholesky(metric / len(rot))  # rows a, b, c with cell @ cell.T = G
    else:
        cell = np.asarray(lattice, dtype=np.float64)
        if cell.shape != (3, 3):
            raise InputError(f"lattice must be a (3, 3) array of rows a, b, c, got {cell.shape}.")
    import spglib

    t = spglib.get_spacegroup_type_from_symmetry(rot.astype(np.intc), trans, lattice=cell)
    if t is None:
        raise InputError("spglib could not identify these operations as a space group.")
    if number is not None and int(number) != t.number:
        raise InputError(f"the operations are space group {t.number}, not {number} as given.")
    return SpaceGroup(
        t.number, t.international_short, None, rot, trans % 1.0, point_group_from_operations(rot)
    )


def _operations_pair(
    group: ArrayLike | SpaceGroup | str | int, translations: ArrayLike | None
) -> tuple[IntArray, FloatArray]:
    if isinstance(group, (SpaceGroup, str, int)):
        sg = space_group(group)
        return sg.rotations, sg.translations
    if translations is None:
        raise InputError("give translations with the rotations, or pass a SpaceGroup.")
    rot = _as_operations(group)
    trans = np.asarray(translations, dtype=np.float64)
    if trans.shape != (len(rot), 3):
        raise InputError(
            f"translations must have shape ({len(rot)}, 3) to match the rotations,"
            f" got {trans.shape}."
        )
    return rot, trans


def _as_hkl_rows(hkl: ArrayLike) -> IntArray:
    """Validate (3,) or (N, 3) integer Miller indices; returns (N, 3)."""
    arr = np.asarray(hkl)
    if arr.ndim not in (1, 2) or arr.shape[-1] != 3 or not np.issubdtype(arr.dtype, np.number):
        raise InvalidMillerIndexError(f"expected (3,) or (N, 3) Miller indices, got {hkl!r}.")
    rounded = np.rint(arr.astype(np.float64))
    if not np.allclose(arr, rounded):
        raise InvalidMillerIndexError(f"Miller indices must be integers, got {hkl!r}.")
    return np.atleast_2d(rounded.astype(np.int64))


def is_absent(
    hkl: ArrayLike,
    rotations: ArrayLike | SpaceGroup | str | int,
    translations: ArrayLike | None = None,
) -> bool | BoolArray:
    """Tell which reflections are systematically absent, from the operations alone.

    Parameters
    ----------
    hkl : (3,) or (N, 3) int array
        Miller indices of reflections.
    rotations : (n, 3, 3) int array, or SpaceGroup / symbol / number
        Rotation parts W; or a space group, in which case ``translations`` is not needed.
    translations : (n, 3) float array, optional
        Translation parts w (fractions of the cell edges).

    Returns
    -------
    bool or (N,) bool array
        True where some operation has ``h @ W == h`` and ``h . w`` not an integer
        (tolerance 1e-6): the structure factor then vanishes for every structure.

    References
    ----------
    .. [1] Hahn, T. (ed.) (2005). International Tables for Crystallography, Vol. A,
       Section 2.2.13 (reflection conditions).

    Examples
    --------
    >>> is_absent([[1, 0, 0], [2, 0, 0], [1, 1, 1]], "Fm-3m").tolist()
    [True, False, False]
    >>> [bool(is_absent(h, "P2_1/c")) for h in ([1, 0, 0], [0, 1, 0], [1, 0, 1], [1, 1, 1])]
    [False, True, True, False]
    """
    rot, trans = _operations_pair(rotations, translations)
    single = np.ndim(hkl) == 1
    h = _as_hkl_rows(hkl)  # (N, 3)
    moved = np.einsum("ni,gij->ngj", h, rot)  # (N, n, 3)
    fixed = np.all(moved == h[:, None, :], axis=-1)  # (N, n)
    phase = h @ trans.T  # (N, n)
    shifted = np.abs(phase - np.rint(phase)) > _ABS_TOL
    absent: BoolArray = np.any(fixed & shifted, axis=1)  # (N,)
    return bool(absent[0]) if single else absent


def first_allowed_order(
    hkl: ArrayLike, space_group: ArrayLike | SpaceGroup | str | int, max_order: int = 12
) -> int | IntArray:
    """Return the smallest n >= 1 for which n(hkl) is not systematically absent.

    Parameters
    ----------
    hkl : (3,) or (N, 3) int array
        Face indices (not all zero).
    space_group : SpaceGroup, symbol or number
        The space group.
    max_order : int
        Largest n tried.

    Returns
    -------
    int or (N,) int array
        The order n used by the Bravais–Friedel–Donnay–Harker rule (d_eff = d(hkl) / n).

    Raises
    ------
    InvalidMillerIndexError
        If an index triple is all zero or no order up to ``max_order`` is allowed.

    References
    ----------
    .. [1] Donnay, J. D. H. & Harker, D. (1937). A new law of crystal morphology
       extending the law of Bravais. Am. Mineral. 22, 446–467.

    Examples
    --------
    >>> first_allowed_order([1, 0, 0], "Fd-3m"), first_allowed_order([1, 1, 1], "Fd-3m")
    (4, 1)
    """
    rot, trans = _operations_pair(space_group, None)
    h = _as_hkl_rows(hkl)  # (N, 3)
    if np.any(np.all(h == 0, axis=1)):
        raise InvalidMillerIndexError(f"faces must be non-zero index triples, got {hkl!r}.")
    orders = np.zeros(len(h), dtype=np.int64)
    for n in range(1, max_order + 1):
        todo = orders == 0
        if not np.any(todo):
            break
        ok = ~is_absent(n * h[todo], rot, trans)
        orders[np.flatnonzero(todo)[ok]] = n
    if np.any(orders == 0):
        raise InvalidMillerIndexError(
            f"no order n <= {max_order} of {h[orders == 0][0].tolist()} is an allowed reflection."
        )
    return int(orders[0]) if np.asarray(hkl).ndim == 1 else orders
