"""Miller indices: reading, writing and the four-index (Miller–Bravais) forms.

Conventions, stated once for the whole package:

* A face (plane) is written ``(hkl)``; a form, the set of faces equivalent under the
  crystal class, ``{hkl}``; a direction ``[uvw]``; a set of equivalent directions
  ``<uvw>``. Negative indices are written with a minus sign, ``(1-10)``, where print
  would use a bar over the digit.
* Indices always refer to the cell as the user gave it; habit never changes the setting.
* In the hexagonal and trigonal systems (hexagonal axes) a face may also be written
  with four indices ``(hkil)`` with ``i = -(h + k)``; the third index is redundant and
  is dropped when converting to three indices. Directions ``[UVTW]`` convert to three
  indices by ``u = 2U + V``, ``v = 2V + U``, ``w = W`` (then divided by their common
  factor) and back by ``U = (2u - v)/3``, ``V = (2v - u)/3``, ``T = -(u + v)/3``, ``W = w``.
"""

from __future__ import annotations

import math
import re
from collections.abc import Iterable
from functools import reduce
from typing import SupportsInt, cast

import numpy as np

from habit._typing import ArrayLike, IntArray
from habit.errors import InvalidMillerIndexError

__all__ = [
    "parse_hkl",
    "parse_uvw",
    "parse_indices",
    "format_hkl",
    "format_uvw",
    "hkl_to_hkil",
    "hkil_to_hkl",
    "uvw_to_uvtw",
    "uvtw_to_uvw",
    "reduce_indices",
]

_BRACKETS = {"(": ")", "{": "}", "[": "]", "<": ">"}
_TOKEN = re.compile(r"-?\d")


def _split(text: str) -> tuple[str | None, list[int]]:
    """Split typed indices into (opening bracket or None, list of ints)."""
    if not isinstance(text, str):
        raise InvalidMillerIndexError(f"indices must be text such as '1 1 0', got {text!r}.")
    raw = text.strip()
    if not raw:
        raise InvalidMillerIndexError(
            "empty Miller index; write e.g. '111', '1 0 -1 1' or '(110)'."
        )
    opening = raw[0] if raw[0] in _BRACKETS else None
    body = raw
    if opening is not None:
        if raw[-1] != _BRACKETS[opening]:
            raise InvalidMillerIndexError(
                f"unbalanced brackets in {text!r}; write e.g. {opening}111{_BRACKETS[opening]}."
            )
        body = raw[1:-1].strip()
    body = body.replace("\u2212", "-").replace("\u0304", "")
    if re.search(r"[^\d\s,;\-+]", body):
        raise InvalidMillerIndexError(
            f"{text!r} is not a Miller index: use whole numbers only, e.g. '1 1 0' or '10-11'."
        )
    if re.search(r"[\s,;]", body.strip()):
        parts = [p for p in re.split(r"[\s,;]+", body.strip()) if p]
        try:
            values = [int(p) for p in parts]
        except ValueError:
            raise InvalidMillerIndexError(
                f"{text!r} is not a Miller index: each index must be a whole number."
            ) from None
    else:
        # compact form: every index is one digit with an optional minus sign
        body = body.replace("+", "")
        tokens = _TOKEN.findall(body)
        if "".join(tokens) != body:
            raise InvalidMillerIndexError(
                f"cannot read {text!r}; separate multi-digit indices with spaces, e.g. '1 0 12'."
            )
        values = [int(t) for t in tokens]
    return opening, values


def parse_indices(text: str) -> tuple[str | None, tuple[int, ...]]:
    """Read 3 or 4 indices as typed, keeping the bracket that enclosed them.

    Parameters
    ----------
    text : str
        E.g. ``'1 0 -1 1'``, ``'10-11'``, ``'(10-11)'``, ``'{111}'``, ``'-1 1 0'``,
        ``'1,1,0'``, ``'[1-10]'``.

    Returns
    -------
    bracket : str or None
        The opening bracket, one of ``( { [ <``, or None.
    indices : tuple of int
        Three or four integers, as typed.

    Examples
    --------
    >>> parse_indices('{10-11}')
    ('{', (1, 0, -1, 1))
    >>> parse_indices('1,1,0')
    (None, (1, 1, 0))
    """
    opening, values = _split(text)
    if len(values) not in (3, 4):
        raise InvalidMillerIndexError(
            f"{text!r} has {len(values)} indices; a face or direction needs 3, or 4 on "
            "hexagonal axes."
        )
    return opening, tuple(values)


def parse_hkl(text: str) -> tuple[int, int, int]:
    """Read a face or form, returning its three Miller indices.

    Four-index Miller–Bravais input ``(hkil)`` is checked for ``i = -(h + k)`` and
    converted to ``(hkl)``. The all-zero index is refused.

    Parameters
    ----------
    text : str
        The face as typed (see :func:`parse_indices`).

    Returns
    -------
    tuple of 3 int

    Examples
    --------
    >>> parse_hkl('(10-11)')
    (1, 0, 1)
    >>> parse_hkl('-1 1 0')
    (-1, 1, 0)
    >>> parse_hkl('000')
    Traceback (most recent call last):
    ...
    habit.errors.InvalidMillerIndexError: (000) is not a face: at least one index must be non-zero.
    """
    opening, values = parse_indices(text)
    if opening in ("[", "<"):
        raise InvalidMillerIndexError(
            f"{text!r} is a direction; a face is written (hkl) or {{hkl}}."
        )
    hkl = hkil_to_hkl(values) if len(values) == 4 else (values[0], values[1], values[2])
    if hkl == (0, 0, 0):
        raise InvalidMillerIndexError("(000) is not a face: at least one index must be non-zero.")
    return hkl


def parse_uvw(text: str) -> tuple[int, int, int]:
    """Read a direction ``[uvw]`` or ``<uvw>`` (four-index ``[UVTW]`` converted).

    Examples
    --------
    >>> parse_uvw('[2-1-10]')
    (1, 0, 0)
    """
    opening, values = parse_indices(text)
    if opening in ("(", "{"):
        raise InvalidMillerIndexError(f"{text!r} is a face; a direction is written [uvw].")
    uvw = uvtw_to_uvw(values) if len(values) == 4 else (values[0], values[1], values[2])
    if uvw == (0, 0, 0):
        raise InvalidMillerIndexError("[000] is not a direction: one index must be non-zero.")
    return uvw


def _gcd(values: ArrayLike) -> int:
    return reduce(math.gcd, (abs(int(v)) for v in np.ravel(values)), 0)


def reduce_indices(indices: ArrayLike) -> IntArray:
    """Divide integer indices by their greatest common divisor, row by row.

    Examples
    --------
    >>> reduce_indices([[2, 2, 0], [0, 0, 3]]).tolist()
    [[1, 1, 0], [0, 0, 1]]
    >>> reduce_indices([0, 0, 0]).tolist()
    [0, 0, 0]
    """
    arr = np.asarray(indices, dtype=np.int64)
    g = np.gcd.reduce(np.abs(arr), axis=-1, keepdims=True)
    g = np.where(g == 0, 1, g)
    out: IntArray = arr // g
    return out


def _ints(values: ArrayLike) -> tuple[int, ...]:
    """The entries of a flat sequence of indices as Python ints."""
    return tuple(int(v) for v in cast("Iterable[SupportsInt]", values))


def hkil_to_hkl(hkil: ArrayLike) -> tuple[int, int, int]:
    """Convert ``(hkil)`` to ``(hkl)`` after checking ``i = -(h + k)``.

    Examples
    --------
    >>> hkil_to_hkl((1, 0, -1, 1))
    (1, 0, 1)
    """
    h, k, i, l = _ints(hkil)  # noqa: E741
    if i != -(h + k):
        raise InvalidMillerIndexError(
            f"({h} {k} {i} {l}) is not a Miller–Bravais index: the third index must be "
            f"-(h+k) = {-(h + k)}."
        )
    return (h, k, l)


def hkl_to_hkil(hkl: ArrayLike) -> tuple[int, int, int, int]:
    """Convert ``(hkl)`` to four-index ``(hkil)``.

    Examples
    --------
    >>> hkl_to_hkil((1, 0, 1))
    (1, 0, -1, 1)
    """
    h, k, l = _ints(hkl)  # noqa: E741
    return (h, k, -(h + k), l)


def uvtw_to_uvw(uvtw: ArrayLike) -> tuple[int, int, int]:
    """Convert a four-index direction ``[UVTW]`` to three indices ``[uvw]`` (reduced).

    Examples
    --------
    >>> uvtw_to_uvw((2, -1, -1, 0))
    (1, 0, 0)
    """
    U, V, T, W = _ints(uvtw)
    if T != -(U + V):
        raise InvalidMillerIndexError(
            f"[{U} {V} {T} {W}] is not a four-index direction: the third index must be "
            f"-(U+V) = {-(U + V)}."
        )
    u, v, w = 2 * U + V, 2 * V + U, W
    g = _gcd((u, v, w)) or 1
    return (u // g, v // g, w // g)


def uvw_to_uvtw(uvw: ArrayLike) -> tuple[int, int, int, int]:
    """Convert ``[uvw]`` to four indices ``[UVTW]`` (smallest integers).

    Examples
    --------
    >>> uvw_to_uvtw((1, 0, 0))
    (2, -1, -1, 0)
    """
    u, v, w = _ints(uvw)
    U3, V3, T3, W3 = 2 * u - v, 2 * v - u, -(u + v), 3 * w
    g = _gcd((U3, V3, T3, W3)) or 1
    return (U3 // g, V3 // g, T3 // g, W3 // g)


def _written(values: tuple[int, ...], brackets: str) -> str:
    """Indices run together when all are single digits, else spaced; then bracketed."""
    if all(-9 <= v <= 9 for v in values):
        text = "".join(str(v) for v in values)
    else:
        text = " ".join(str(v) for v in values)
    return f"{brackets[0]}{text}{brackets[1]}" if brackets else text


def format_hkl(hkl: ArrayLike, *, hexagonal: bool = False, brackets: str = "()") -> str:
    """Write a face or form.

    Parameters
    ----------
    hkl : (3,) int array_like
    hexagonal : bool
        Write the four-index Miller–Bravais form ``(hkil)``.
    brackets : str
        Two characters, ``'()'`` for a face or ``'{}'`` for a form; ``''`` for none.

    Examples
    --------
    >>> format_hkl((1, 0, 1), hexagonal=True)
    '(10-11)'
    >>> format_hkl((1, 1, 1), brackets='{}')
    '{111}'
    >>> format_hkl((1, 0, 12))
    '(1 0 12)'
    """
    values = _ints(hkl)
    if hexagonal:
        values = hkl_to_hkil(values)
    return _written(values, brackets)


def format_uvw(uvw: ArrayLike, *, hexagonal: bool = False, brackets: str = "[]") -> str:
    """Write a direction ``[uvw]`` (or ``[UVTW]`` with ``hexagonal=True``).

    Examples
    --------
    >>> format_uvw((1, 0, 0), hexagonal=True)
    '[2-1-10]'
    """
    values = _ints(uvw)
    if hexagonal:
        values = uvw_to_uvtw(values)
    return _written(values, brackets)
