"""One exception tree for habit, rooted at :class:`HabitError`.

Every error the library raises on bad input is a ``HabitError``; each subclass also
inherits the built-in exception it corresponds to, so ``except ValueError`` keeps working.
The command line turns a ``HabitError`` into one line on standard error and exit status 1.
"""

from __future__ import annotations

from typing import Any

__all__ = [
    "HabitError",
    "InputError",
    "InvalidMillerIndexError",
    "UnknownSymbolError",
    "CellError",
    "FileFormatError",
    "OpenShapeError",
    "EmptyPolyhedronError",
    "IndexingError",
    "PackingError",
    "MissingDependencyError",
]


class HabitError(Exception):
    """Base class of every error habit raises on purpose."""


class InputError(HabitError, ValueError):
    """A value given by the user is out of range or malformed."""


class InvalidMillerIndexError(InputError):
    """A Miller index cannot be read or does not describe a face or direction."""


class UnknownSymbolError(InputError):
    """A crystal class, space group, system or option name is not known."""


class CellError(InputError):
    """Cell parameters do not describe a real cell, or do not fit the crystal class."""


class FileFormatError(HabitError, ValueError):
    """A file is missing, unreadable or does not follow its documented format."""


class OpenShapeError(HabitError, ValueError):
    """The given planes do not enclose a bounded solid.

    Attributes
    ----------
    direction : tuple of float or None
        A unit vector (Cartesian) along which the solid is unbounded, when known.
    """

    def __init__(self, message: str, direction: Any = None) -> None:
        super().__init__(message)
        self.direction = direction


class EmptyPolyhedronError(HabitError, ValueError):
    """The requested polyhedron has no interior (zero volume)."""


class IndexingError(HabitError, RuntimeError):
    """No consistent indexing of the measured faces exists within tolerance.

    Attributes
    ----------
    candidates : object
        The best partial results found, for the caller to inspect.
    """

    def __init__(self, message: str, candidates: Any = None) -> None:
        super().__init__(message)
        self.candidates = candidates


class PackingError(HabitError, RuntimeError):
    """A packing search failed to produce a certified result."""


class MissingDependencyError(HabitError, ImportError):
    """An optional dependency needed by this function is not installed."""
