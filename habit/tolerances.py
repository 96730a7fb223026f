"""The numerical tolerances habit uses, gathered in one frozen object.

Pass ``tol=Tolerances(...)`` to any function that takes one; never change a global.
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["Tolerances", "DEFAULT"]


@dataclass(frozen=True, slots=True)
class Tolerances:
    """Angular, length and area tolerances.

    Parameters
    ----------
    angle : float
        Two unit vectors closer than this angle (radians) are the same direction.
        Default 1e-7 rad (about 2e-5 degree).
    length : float
        Relative length tolerance (a fraction of the polyhedron's circumradius, or of the
        cell edge) below which two points coincide or a point lies on a plane. A face of
        a half-space intersection is present while it keeps at least three distinct
        vertices after points closer than this are merged; a face that shrinks to an
        edge or a point is absent, never a sliver. Default 1e-9.
    area : float
        In results computed for many shapes at once (:mod:`habit.batch`), where no
        vertices are merged, a face whose area is below this fraction of the total
        surface area counts as absent. Default 1e-9.
    cell_length : float
        Relative tolerance when checking that cell edges required equal by the crystal
        class are equal. Default 1e-4 (0.0005 Å on a 5 Å edge).
    cell_angle_deg : float
        Tolerance in degrees when checking cell angles required by the crystal class.
        Default 0.01 degree.
    """

    angle: float = 1e-7
    length: float = 1e-9
    area: float = 1e-9
    cell_length: float = 1e-4
    cell_angle_deg: float = 0.01


DEFAULT = Tolerances()
