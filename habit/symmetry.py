"""The 32 crystal classes, their operations and the forms of faces.

Conventions (stated once for the whole package)
-----------------------------------------------
* An operation is an integer 3x3 matrix ``W`` acting on **fractional coordinates of the
  direct lattice** written as a column: ``x' = W x``. A direction ``[uvw]`` transforms the
  same way.
* A face ``(hkl)`` is a **row** vector of Miller indices (a covector). Under ``W`` it maps
  to ``(hkl) @ inv(W)``. Because a group contains the inverse of each of its elements, the
  set of faces of a form is ``{(hkl) @ W : W in G}``; :func:`expand_form` uses that.
* Cartesian rotation of ``W`` for a cell with lattice matrix ``L`` (rows a, b, c):
  ``R = L.T @ W @ inv(L.T)``.
* Conventional settings: triclinic and monoclinic with **unique axis b**; orthorhombic,
  tetragonal and cubic on their standard axes; trigonal and hexagonal classes on
  **hexagonal axes** (a, b at 120 degrees, c the main axis). Where a class has two
  orientations relative to the hexagonal or tetragonal axes both are given:
  ``321``/``312``, ``3m1``/``31m``, ``-3m1``/``-31m``, ``-6m2``/``-62m``, ``-42m``/``-4m2``
  (the short forms ``32``, ``3m``, ``-3m`` mean ``321``, ``3m1``, ``-3m1``).
* A basis change ``P`` follows International Tables Vol. A, Part 5:
  ``(a', b', c') = (a, b, c) @ P`` (the columns of ``P`` are the new basis vectors in the
  old basis), so fractional coordinates become ``inv(P) @ x``, operations become
  ``inv(P) @ W @ P`` and Miller indices become ``(hkl) @ P``. :data:`UNIQUE_AXIS_C` and
  :data:`RHOMBOHEDRAL_AXES` are two such matrices.

Space groups and reflection conditions live in :mod:`habit.spacegroups`, form names and
closedness in :mod:`habit.forms`; both are re-exported here (``habit.symmetry.space_group``,
``habit.symmetry.is_absent``, ``habit.symmetry.form_name`` ... keep working).

References
----------
.. [1] Hahn, T. (ed.) (2005). International Tables for Crystallography, Vol. A, 5th ed.,
   Part 10 (point groups, Table 10.1.2.2) and Part 5 (transformations).
.. [2] Togo, A., Shinohara, K. & Tanaka, I. (2024). Spglib: a software library for
   crystal symmetry search. Sci. Technol. Adv. Mater. Methods 4, 2384822.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from functools import cache, lru_cache, reduce
from typing import TYPE_CHECKING, Any

import numpy as np
from numpy.typing import ArrayLike

from habit._arrays import readonly as _readonly
from habit._typing import IntArray
from habit.errors import CellError, InputError, InvalidMillerIndexError, UnknownSymbolError

if TYPE_CHECKING:
    from habit.forms import form_name, is_closed_form
    from habit.spacegroups import (
        SpaceGroup,
        first_allowed_order,
        is_absent,
        space_group,
        space_group_from_operations,
    )

__all__ = [
    "PointGroup",
    "SpaceGroup",
    "POINT_GROUP_SYMBOLS",
    "UNIQUE_AXIS_C",
    "UNIQUE_AXIS_A",
    "RHOMBOHEDRAL_AXES",
    "point_group",
    "point_group_from_operations",
    "expand_form",
    "multiplicity",
    "form_name",
    "is_closed_form",
    "space_group",
    "space_group_from_operations",
    "is_absent",
    "first_allowed_order",
]

_ABS_TOL = 1e-6  # integrality / phase tolerance


UNIQUE_AXIS_C = _readonly([[0, 1, 0], [0, 0, 1], [1, 0, 0]], np.int64)
"""Basis change from unique axis b to unique axis c: a' = c, b' = a, c' = b."""
UNIQUE_AXIS_A = _readonly([[0, 0, 1], [1, 0, 0], [0, 1, 0]], np.int64)
"""Basis change from unique axis b to unique axis a: a' = b, b' = c, c' = a."""
RHOMBOHEDRAL_AXES = _readonly(np.array([[2, -1, -1], [1, 1, -2], [1, 1, 1]]) / 3.0, np.float64)
"""Basis change from hexagonal to rhombohedral axes (obverse setting, ITA Vol. A Table 5.1.3.1)."""

# --- generators (x' = W x on fractional coordinates) ---------------------------------
_I = np.eye(3, dtype=np.int64)
_INV = -_I
_C2X = np.diag([1, -1, -1])
_C2Y = np.diag([-1, 1, -1])
_C2Z = np.diag([-1, -1, 1])
_C4Z = np.array([[0, -1, 0], [1, 0, 0], [0, 0, 1]])
_S4Z = -_C4Z  # -4 along c
_C3D = np.array([[0, 0, 1], [1, 0, 0], [0, 1, 0]])  # 3 along [111]
_C3Z = np.array([[0, -1, 0], [1, -1, 0], [0, 0, 1]])  # hexagonal axes
_C6Z = np.array([[1, -1, 0], [1, 0, 0], [0, 0, 1]])
_C2A = np.array([[1, -1, 0], [0, -1, 0], [0, 0, -1]])  # 2 along [100], hexagonal axes
_C2D = np.array([[0, -1, 0], [-1, 0, 0], [0, 0, -1]])  # 2 along [1-10], hexagonal axes

# key: (Schoenflies, system, Laue class, geometric class, generators)
_CLASSES: dict[str, tuple[str, str, str, str, tuple[Any, ...]]] = {
    "1": ("C1", "triclinic", "-1", "1", ()),
    "-1": ("Ci", "triclinic", "-1", "-1", (_INV,)),
    "2": ("C2", "monoclinic", "2/m", "2", (_C2Y,)),
    "m": ("Cs", "monoclinic", "2/m", "m", (-_C2Y,)),
    "2/m": ("C2h", "monoclinic", "2/m", "2/m", (_C2Y, _INV)),
    "222": ("D2", "orthorhombic", "mmm", "222", (_C2Z, _C2Y)),
    "mm2": ("C2v", "orthorhombic", "mmm", "mm2", (_C2Z, -_C2X)),
    "mmm": ("D2h", "orthorhombic", "mmm", "mmm", (_C2Z, _C2Y, _INV)),
    "4": ("C4", "tetragonal", "4/m", "4", (_C4Z,)),
    "-4": ("S4", "tetragonal", "4/m", "-4", (_S4Z,)),
    "4/m": ("C4h", "tetragonal", "4/m", "4/m", (_C4Z, _INV)),
    "422": ("D4", "tetragonal", "4/mmm", "422", (_C4Z, _C2X)),
    "4mm": ("C4v", "tetragonal", "4/mmm", "4mm", (_C4Z, -_C2X)),
    "-42m": ("D2d", "tetragonal", "4/mmm", "-42m", (_S4Z, _C2X)),
    "-4m2": ("D2d", "tetragonal", "4/mmm", "-42m", (_S4Z, -_C2X)),
    "4/mmm": ("D4h", "tetragonal", "4/mmm", "4/mmm", (_C4Z, _C2X, _INV)),
    "3": ("C3", "trigonal", "-3", "3", (_C3Z,)),
    "-3": ("C3i", "trigonal", "-3", "-3", (_C3Z, _INV)),
    "321": ("D3", "trigonal", "-3m1", "32", (_C3Z, _C2A)),
    "312": ("D3", "trigonal", "-31m", "32", (_C3Z, _C2D)),
    "3m1": ("C3v", "trigonal", "-3m1", "3m", (_C3Z, -_C2A)),
    "31m": ("C3v", "trigonal", "-31m", "3m", (_C3Z, -_C2D)),
    "-3m1": ("D3d", "trigonal", "-3m1", "-3m", (_C3Z, _C2A, _INV)),
    "-31m": ("D3d", "trigonal", "-31m", "-3m", (_C3Z, _C2D, _INV)),
    "6": ("C6", "hexagonal", "6/m", "6", (_C6Z,)),
    "-6": ("C3h", "hexagonal", "6/m", "-6", (-_C6Z,)),
    "6/m": ("C6h", "hexagonal", "6/m", "6/m", (_C6Z, _INV)),
    "622": ("D6", "hexagonal", "6/mmm", "622", (_C6Z, _C2A)),
    "6mm": ("C6v", "hexagonal", "6/mmm", "6mm", (_C6Z, -_C2A)),
    "-6m2": ("D3h", "hexagonal", "6/mmm", "-6m2", (-_C6Z, -_C2A)),
    "-62m": ("D3h", "hexagonal", "6/mmm", "-6m2", (-_C6Z, _C2A)),
    "6/mmm": ("D6h", "hexagonal", "6/mmm", "6/mmm", (_C6Z, _C2A, _INV)),
    "23": ("T", "cubic", "m-3", "23", (_C2Z, _C2X, _C3D)),
    "m-3": ("Th", "cubic", "m-3", "m-3", (_C2Z, _C2X, _C3D, _INV)),
    "432": ("O", "cubic", "m-3m", "432", (_C4Z, _C3D)),
    "-43m": ("Td", "cubic", "m-3m", "-43m", (_S4Z, _C3D)),
    "m-3m": ("Oh", "cubic", "m-3m", "m-3m", (_C4Z, _C3D, _INV)),
}

POINT_GROUP_SYMBOLS: tuple[str, ...] = tuple(_CLASSES)
"""The accepted canonical short symbols: the 32 classes plus the second orientations."""

_SCHOENFLIES = {
    "c1": "1", "ci": "-1", "s2": "-1", "c2": "2", "cs": "m", "c1h": "m", "c2h": "2/m",
    "d2": "222", "v": "222", "c2v": "mm2", "d2h": "mmm", "vh": "mmm", "c4": "4", "s4": "-4",
    "c4h": "4/m", "d4": "422", "c4v": "4mm", "d2d": "-42m", "vd": "-42m", "d4h": "4/mmm",
    "c3": "3", "c3i": "-3", "s6": "-3", "d3": "321", "c3v": "3m1", "d3d": "-3m1", "c6": "6",
    "c3h": "-6", "c6h": "6/m", "d6": "622", "c6v": "6mm", "d3h": "-6m2", "d6h": "6/mmm",
    "t": "23", "th": "m-3", "o": "432", "td": "-43m", "oh": "m-3m",
}  # fmt: skip
_DEFAULT_VARIANT = {"32": "321", "3m": "3m1", "-3m": "-3m1"}
_TOKEN = re.compile(r"-?[1-6](?:/m)?|m")


def _close_group(generators: tuple[Any, ...]) -> IntArray:
    """All products of the generators, sorted: identity first, proper before improper."""
    found = {_I.tobytes(): _I}
    frontier = [_I]
    while frontier:
        new = []
        for a in frontier:
            for g in generators:
                p = np.asarray(g, dtype=np.int64) @ a
                key = p.tobytes()
                if key not in found:
                    found[key] = p
                    new.append(p)
        frontier = new
    ops = list(found.values())
    ops.sort(key=lambda w: (round(np.linalg.det(w)) < 0, _rotation_order(w), tuple(w.ravel())))
    return np.array(ops, dtype=np.int64)


def _rotation_order(w: IntArray) -> int:
    """Order of the proper part of ``w`` (1, 2, 3, 4 or 6)."""
    proper = w * round(np.linalg.det(w))
    return {3: 1, -1: 2, 0: 3, 1: 4, 2: 6}[int(np.trace(proper))]


def _rotation_type(w: IntArray) -> int:
    """Crystallographic type of ``w``: 1, 2, 3, 4, 6, -1, -2 (mirror), -3, -4, -6."""
    det = round(np.linalg.det(w))
    n = _rotation_order(w)
    if det > 0:
        return n
    return -n  # -n = inversion times a proper rotation of order n


_ORDER_OF_TRACE = np.array([2, 3, 4, 6, 1])  # proper trace -1, 0, 1, 2, 3 -> order


def _rotation_types(ops: IntArray) -> IntArray:
    """Vectorised :func:`_rotation_type` for (G, 3, 3) operations; returns (G,) ints."""
    dets = np.rint(np.linalg.det(ops.astype(np.float64))).astype(np.int64)  # (G,)
    traces = np.trace(ops, axis1=1, axis2=2) * dets  # (G,) trace of the proper part
    return np.asarray(_ORDER_OF_TRACE[traces + 1] * dets, dtype=np.int64)


@dataclass(frozen=True, slots=True, eq=False)
class PointGroup:
    """One of the 32 crystal classes with its operations in a given basis.

    Parameters
    ----------
    symbol : str
        Hermann–Mauguin short symbol, e.g. ``"m-3m"``, ``"321"``, ``"-42m"``.
    schoenflies : str
        Schoenflies symbol, e.g. ``"Oh"``.
    system : str
        Crystal system: 'triclinic', 'monoclinic', 'orthorhombic', 'tetragonal',
        'trigonal', 'hexagonal' or 'cubic'.
    laue_class : str
        Short symbol of the Laue class (the group with inversion added).
    operations : (G, 3, 3) int array, read-only
        The operations acting on fractional coordinates (columns), identity first.

    Notes
    -----
    Equality compares the symbol and the set of operations; instances are hashable.
    """

    symbol: str
    schoenflies: str
    system: str
    laue_class: str
    operations: IntArray

    def __post_init__(self) -> None:
        ops = np.array(self.operations, dtype=np.int64)
        ops.setflags(write=False)
        object.__setattr__(self, "operations", ops)

    @property
    def order(self) -> int:
        """Number of operations (the multiplicity of the general form)."""
        return int(self.operations.shape[0])

    @property
    def is_centrosymmetric(self) -> bool:
        """True if the inversion ``-1`` is an operation."""
        return bool(np.any(np.all(self.operations == -_I, axis=(1, 2))))

    @property
    def geometric_class(self) -> str:
        """The class symbol without orientation, e.g. ``"32"`` for both 321 and 312."""
        return _CLASSES[self.symbol][3]

    def transformed(self, P: ArrayLike) -> PointGroup:
        """Return the same group in the basis ``(a', b', c') = (a, b, c) @ P``.

        Parameters
        ----------
        P : (3, 3) array
            Basis change (columns: new basis vectors in the old basis); may be rational.

        Returns
        -------
        PointGroup
            Same symbol, operations ``inv(P) @ W @ P``.

        Raises
        ------
        InputError
            If ``P`` is singular or the transformed operations are not integral (the new
            basis is not a lattice basis compatible with the group).

        Examples
        --------
        >>> g = point_group("-3m").transformed(RHOMBOHEDRAL_AXES)
        >>> g.order, g.operations[1].tolist()
        (12, [[-1, 0, 0], [0, 0, -1], [0, -1, 0]])
        >>> point_group("2/m").transformed(UNIQUE_AXIS_C).operations[1].tolist()
        [[-1, 0, 0], [0, -1, 0], [0, 0, 1]]
        """
        p = np.asarray(P, dtype=np.float64)
        if p.shape != (3, 3) or abs(np.linalg.det(p)) < 1e-9:
            raise InputError(f"basis change P must be a non-singular 3x3 matrix, got {P!r}.")
        new = np.linalg.inv(p) @ self.operations @ p  # (G, 3, 3)
        rounded = np.rint(new)
        if not np.allclose(new, rounded, atol=_ABS_TOL):
            raise InputError(
                f"the basis change makes the operations of {self.symbol} non-integral; "
                "use a basis of the lattice in which the symmetry is expressible"
                " (e.g. rhombohedral axes only for -3m1, 321, 3m1 and their subgroups)."
            )
        return PointGroup(
            self.symbol, self.schoenflies, self.system, self.laue_class, rounded.astype(np.int64)
        )

    def __eq__(self, other: object) -> bool:
        if not isinstance(other, PointGroup):
            return NotImplemented
        return self.symbol == other.symbol and _op_set(self.operations) == _op_set(other.operations)

    def __hash__(self) -> int:
        return hash((self.symbol, _op_set(self.operations)))

    def __repr__(self) -> str:
        return f"PointGroup({self.symbol!r}, order={self.order})"


def _op_set(ops: IntArray) -> frozenset[bytes]:
    return frozenset(np.ascontiguousarray(w, dtype=np.int64).tobytes() for w in ops)


@cache
def _standard(key: str) -> PointGroup:
    schoen, system, laue, _, gens = _CLASSES[key]
    return PointGroup(key, schoen, system, laue, _close_group(gens))


def _unknown(symbol: object) -> UnknownSymbolError:
    return UnknownSymbolError(
        f"unknown crystal class {symbol!r}; use a Hermann–Mauguin symbol "
        f"({', '.join(POINT_GROUP_SYMBOLS)}; also 32, 3m, -3m, full symbols such as "
        "'4/m -3 2/m') or a Schoenflies symbol such as Oh, D4h or C2h."
    )


def point_group(symbol: str | PointGroup) -> PointGroup:
    """Return the crystal class named by ``symbol`` in its conventional setting.

    Parameters
    ----------
    symbol : str or PointGroup
        Hermann–Mauguin short or full symbol (``"m-3m"``, ``"m3m"``, ``"4/m -3 2/m"``,
        ``"4/mmm"``, ``"-3 2/m"``, ``"bar3m"``, ``"3̄m"``), a monoclinic full symbol
        giving the unique axis (``"1 2/m 1"``, ``"1 1 2/m"``, ``"2/m 1 1"``), or a
        Schoenflies symbol (``"Oh"``, ``"D3d"``); case and spaces do not matter.
        A suffix picks the axes: ``":R"`` rhombohedral (``"-3m:R"``), ``":H"``
        hexagonal (default), ``":a"``, ``":b"`` (default), ``":c"`` the unique axis of a
        monoclinic class. A PointGroup is returned unchanged.

    Returns
    -------
    PointGroup

    Raises
    ------
    UnknownSymbolError
        If the symbol names no crystal class.

    Examples
    --------
    >>> g = point_group("4/m -3 2/m")
    >>> g.symbol, g.schoenflies, g.order, g.is_centrosymmetric
    ('m-3m', 'Oh', 48, True)
    >>> point_group("32").symbol, point_group("D3h").symbol
    ('321', '-6m2')
    >>> point_group("5/m")  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    habit.errors.UnknownSymbolError: unknown crystal class '5/m'; ...
    """
    if isinstance(symbol, PointGroup):
        return symbol
    if isinstance(symbol, (int, np.integer)) and not isinstance(symbol, bool):
        symbol = str(int(symbol))  # 432, 222, -1 typed as numbers
    if not isinstance(symbol, str):
        raise _unknown(symbol)
    return _parse_point_group(symbol)


@lru_cache(maxsize=256)
def _parse_point_group(symbol: str) -> PointGroup:
    name, colon, setting = symbol.partition(":")
    if colon:
        group = _parse_point_group(name) if name.strip() else None
        change = {"r": RHOMBOHEDRAL_AXES, "h": _I, "a": UNIQUE_AXIS_A, "b": _I}
        change["c"] = UNIQUE_AXIS_C
        key = setting.strip().lower()
        if group is None or key not in change:
            raise _unknown(symbol)
        if (
            key in "abc"
            and group.system != "monoclinic"
            or key in "rh"
            and group.system != "trigonal"
        ):
            raise UnknownSymbolError(
                f"setting ':{setting.strip()}' in {symbol!r} does not apply to class "
                f"{group.symbol}; use ':R' or ':H' for trigonal and ':a', ':b', ':c' for "
                "monoclinic classes."
            )
        return group if key in "bh" else group.transformed(change[key])
    text = symbol.strip().replace("\u2212", "-").replace("\u2013", "-")
    text = re.sub(r"(\d)[\u0304\u0305]", r"-\1", text)  # 3̄ -> -3
    text = re.sub(r"bar\s*", "-", text, flags=re.IGNORECASE)
    key = re.sub(r"\s+", "", text).lower()
    if key in _SCHOENFLIES:
        return _standard(_SCHOENFLIES[key])
    if not key or _TOKEN.sub("", key):
        raise _unknown(symbol)
    tokens = _TOKEN.findall(key)
    # monoclinic full symbols: the position of the non-1 symbol is the unique axis
    if len(tokens) == 3 and tokens.count("1") == 2 and tokens != ["1", "1", "1"]:
        axis = next(i for i, t in enumerate(tokens) if t != "1")
        core = tokens[axis]
        if core not in ("2", "m", "2/m"):
            raise _unknown(symbol)
        group = _standard(core)
        return group.transformed((UNIQUE_AXIS_A, _I, UNIQUE_AXIS_C)[axis])
    if len(tokens) > 1:
        if "2/m" in tokens[1:] and tokens[0] not in ("2/m", "4/m", "6/m", "-3", "m"):
            raise _unknown(symbol)  # secondary 2/m only in centrosymmetric classes
        tokens = ["m" if t == "2/m" else t for t in tokens]
        if tokens[1] in ("3", "-3"):  # cubic: m3m, 4/m -3 2/m, 2/m -3
            tokens[0] = "m" if tokens[0] in ("4/m", "m") else tokens[0]
            tokens[1] = "-3" if tokens[0] == "m" else tokens[1]
    canonical = "".join(tokens)
    canonical = _DEFAULT_VARIANT.get(canonical, canonical)
    if canonical in ("2mm", "m2m"):  # mm2 with the 2-fold along a or b
        return _standard("mm2").transformed(UNIQUE_AXIS_C if canonical == "2mm" else UNIQUE_AXIS_A)
    if canonical not in _CLASSES:
        raise _unknown(symbol)
    return _standard(canonical)


# --- identification from matrices --------------------------------------------------------
def _signature(ops: IntArray) -> tuple[int, ...]:
    types = _rotation_types(ops)
    return tuple(int(np.count_nonzero(types == t)) for t in (1, 2, 3, 4, 6, -1, -2, -3, -4, -6))


@lru_cache(maxsize=1)
def _signatures() -> dict[tuple[int, ...], str]:
    table: dict[tuple[int, ...], str] = {}
    for key, (_, _, _, geometric, _) in _CLASSES.items():
        table.setdefault(_signature(_standard(key).operations), geometric)
    return table


def _primitive(v: ArrayLike) -> IntArray:
    v = np.asarray(v, dtype=np.int64)
    g = reduce(math.gcd, (abs(int(x)) for x in v))
    return v // g


def _axis(w: IntArray) -> IntArray:
    """Primitive integer direction of the rotation axis of ``w`` (or of ``-w`` if improper).

    For a mirror this is the normal of the plane; for the identity or the inversion the
    result is meaningless.
    """
    proper = w * round(np.linalg.det(w))
    s = sum(np.linalg.matrix_power(proper, k) for k in range(_rotation_order(w)))
    cols = np.asarray(s).T  # every column of the projector sum lies on the axis
    return _primitive(cols[np.argmax(np.abs(cols).sum(axis=1))])


def _main_axis(ops: IntArray) -> IntArray:
    """Axis of the operation of highest order (3, 4 or 6) as a primitive integer vector."""
    return _axis(max(ops, key=_rotation_order))


def _variant(geometric: str, ops: IntArray) -> str:
    """Choose between the two orientations (321/312 ...) of a class from its axes.

    The secondary 2-fold axes (mirror normals for 3m) of the first orientation (321, 3m1,
    -3m1, -62m, -42m) are primitive vectors spanning the whole lattice plane normal to
    the main axis (index 1); those of the second orientation span a sublattice of index
    3 (hexagonal) or 2 (tetragonal).
    """
    first, second = {
        "32": ("321", "312"), "3m": ("3m1", "31m"), "-3m": ("-3m1", "-31m"),
        "-6m2": ("-62m", "-6m2"), "-42m": ("-42m", "-4m2"),
    }[geometric]  # fmt: skip
    wanted = -2 if geometric == "3m" else 2
    main = _main_axis(ops)
    twofolds = [_axis(w) for w in ops[_rotation_types(ops) == wanted]]
    axes = [u for u in twofolds if np.any(np.cross(u, main))]  # not along the main axis
    minors = [np.cross(u, v) for i, u in enumerate(axes) for v in axes[i + 1 :]]
    index = reduce(math.gcd, (abs(int(x)) for m in minors for x in m), 0)
    return first if index == 1 else second


def _as_operations(rotations: ArrayLike, name: str = "rotations") -> IntArray:
    arr = np.asarray(rotations)
    if arr.ndim == 2:
        arr = arr[None]
    if arr.ndim != 3 or arr.shape[1:] != (3, 3) or arr.shape[0] == 0:
        raise InputError(f"{name} must be an (n, 3, 3) array of matrices, got shape {arr.shape}.")
    rounded = np.rint(arr.astype(np.float64))
    if not np.allclose(arr, rounded, atol=_ABS_TOL):
        raise InputError(f"{name} must be integer matrices (operations on fractional coordinates).")
    return rounded.astype(np.int64)


def point_group_from_operations(
    rotations: ArrayLike, metric: ArrayLike | None = None
) -> PointGroup:
    """Identify the crystal class of a set of integer rotation matrices.

    Parameters
    ----------
    rotations : (n, 3, 3) int array
        Operations on fractional coordinates of the user's cell (e.g. the rotations spglib
        returns for a CIF); repeated matrices (from centring or screw parts) are merged.
    metric : (3, 3) float array, optional
        Metric tensor G of the cell (Å²). When given, each operation must keep it
        (``W.T @ G @ W == G`` within 1e-6 relative).

    Returns
    -------
    PointGroup
        The class (orientation variant chosen from the lattice, see Notes) whose
        ``operations`` are exactly the distinct given matrices, identity first.

    Raises
    ------
    InputError
        If the matrices are not integral, not invertible over the integers, or do not
        form a group.
    CellError
        If ``metric`` is given and an operation does not preserve it.

    Notes
    -----
    The class follows from the number of operations of each kind (1, 2, 3, 4, 6, -1, m,
    -3, -4, -6), which differs between all 32 classes. For the classes with two
    orientations the choice is made from the lattice: 321, 3m1, -3m1, -62m and -42m have
    their secondary 2-fold axes (mirror normals for 3m) along primitive vectors that span
    the lattice plane normal to the main axis.

    Examples
    --------
    >>> g = point_group("-3m1").transformed(RHOMBOHEDRAL_AXES)
    >>> point_group_from_operations(g.operations).symbol
    '-3m1'
    >>> point_group_from_operations([np.eye(3, dtype=int)]).symbol
    '1'
    """
    ops = _as_operations(rotations)
    dets = np.rint(np.linalg.det(ops.astype(np.float64)))
    if not np.all(np.abs(dets) == 1):
        raise InputError("each rotation must have determinant +1 or -1.")
    _, first = np.unique(ops.reshape(len(ops), 9), axis=0, return_index=True)
    ops = ops[np.sort(first)]
    known = _op_set(ops)
    products = np.einsum("aij,bjk->abik", ops, ops).reshape(-1, 3, 3)  # (n*n, 3, 3)
    if not all(p.tobytes() in known for p in np.ascontiguousarray(products)):
        raise InputError(
            f"the {len(ops)} rotations do not form a group (a product falls outside the set)."
        )
    ident = np.flatnonzero(np.all(ops == _I, axis=(1, 2)))
    ops = np.concatenate([ops[ident], np.delete(ops, ident, axis=0)])
    if metric is not None:
        g = np.asarray(metric, dtype=np.float64)
        moved = np.einsum("nji,jk,nkl->nil", ops, g, ops)  # (n, 3, 3): W^T G W
        if not np.allclose(moved, g, rtol=1e-6, atol=1e-6 * np.abs(g).max()):
            raise CellError(
                "an operation does not preserve the metric; the cell and the symmetry disagree."
            )
    geometric = _signatures().get(_signature(ops))
    if geometric is None:
        raise InputError("the rotations form a group that is not one of the 32 crystal classes.")
    key = _variant(geometric, ops) if geometric in ("32", "3m", "-3m", "-6m2", "-42m") else None
    key = key or next(k for k, v in _CLASSES.items() if v[3] == geometric)
    schoen, system, laue, _, _ = _CLASSES[key]
    return PointGroup(key, schoen, system, laue, ops)


# --- forms ---------------------------------------------------------------------------------
def _as_hkl(hkl: ArrayLike) -> IntArray:
    arr = np.asarray(hkl)
    if arr.shape != (3,):
        raise InvalidMillerIndexError(f"a face needs 3 Miller indices (h, k, l), got {hkl!r}.")
    rounded = np.rint(arr.astype(np.float64))
    if not np.allclose(arr, rounded) or not np.any(rounded):
        raise InvalidMillerIndexError(
            f"Miller indices must be integers, not all zero, got {hkl!r}."
        )
    return rounded.astype(np.int64)


def _operations_of(group: ArrayLike | str | PointGroup) -> IntArray:
    if isinstance(group, (str, PointGroup)):
        return point_group(group).operations
    return _as_operations(group, "operations")


def expand_form(hkl: ArrayLike, operations: ArrayLike | str | PointGroup) -> IntArray:
    """Return the distinct faces of the form {hkl}.

    Parameters
    ----------
    hkl : (3,) int array
        Miller indices of one face.
    operations : (G, 3, 3) int array, PointGroup or str
        The group, as matrices on fractional coordinates or a class.

    Returns
    -------
    (M, 3) int array
        The faces ``{(hkl) @ W}``, the given face first, then in the order of first
        appearance over ``operations``; M is the multiplicity.

    Examples
    --------
    >>> expand_form([1, 1, 1], "-43m").tolist()
    [[1, 1, 1], [-1, -1, 1], [-1, 1, -1], [1, -1, -1]]
    >>> expand_form([0, 0, 1], "4mm").tolist()
    [[0, 0, 1]]
    """
    h = _as_hkl(hkl)
    ops = _operations_of(operations)
    faces = np.concatenate([h[None], np.einsum("i,gij->gj", h, ops)])  # (G + 1, 3)
    _, first = np.unique(faces, axis=0, return_index=True)
    return faces[np.sort(first)]


def multiplicity(hkl: ArrayLike, group: ArrayLike | str | PointGroup) -> int:
    """Return the number of faces of the form {hkl} in ``group``.

    Parameters
    ----------
    hkl : (3,) int array
        Miller indices of one face.
    group : (G, 3, 3) int array, PointGroup or str
        The crystal class.

    Returns
    -------
    int
        The number of distinct faces; it divides the order of the group.

    Examples
    --------
    >>> multiplicity([2, 1, 0], "m-3m"), multiplicity([2, 1, 0], "m-3")
    (24, 12)
    """
    return int(expand_form(hkl, group).shape[0])


# Names kept here for callers, living in modules that import this one:
# habit.forms (form names) and habit.spacegroups (space groups, reflection conditions).
_ELSEWHERE = {
    "form_name": "habit.forms",
    "is_closed_form": "habit.forms",
    "SpaceGroup": "habit.spacegroups",
    "space_group": "habit.spacegroups",
    "space_group_from_operations": "habit.spacegroups",
    "is_absent": "habit.spacegroups",
    "first_allowed_order": "habit.spacegroups",
}


def __getattr__(name: str) -> Any:
    if name in _ELSEWHERE:
        import importlib

        return getattr(importlib.import_module(_ELSEWHERE[name]), name)
    raise AttributeError(f"module 'habit.symmetry' has no attribute {name!r}")


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(_ELSEWHERE))
