"""Stereographic and equal-area projections of face poles, and two-circle coordinates.

Conventions (stated once, used by the whole inverse path)
----------------------------------------------------------
*Frame.* Poles are unit vectors in a right-handed Cartesian frame whose z axis is the
projection axis (the crystal's c axis, or the polar axis of a two-circle goniometer).
The projections below map the upper hemisphere (``z >= 0``) into the unit disc, the
*primitive circle*; ``x`` and ``y`` of the plane are those of the frame.

*Wulff net (stereographic, equal-angle).* ``(x, y) = (n_x, n_y) / (1 + n_z)``, so a pole at
polar distance ρ lands at radius ``r = tan(ρ/2)``. Circles on the sphere stay circles.

*Schmidt net (Lambert azimuthal equal-area).* ``(x, y) = (n_x, n_y) / sqrt(1 + n_z)``, so
``r = sqrt(2) sin(ρ/2)``; scaled so the primitive has radius 1. Areas are preserved.

*Two-circle coordinates (φ, ρ).* ρ is the polar distance of the pole from the polar axis
(+z, the c axis when the crystal is set up on c). φ is the azimuth, zero at the pole of
(010) (+y of the crystal frame used in habit, where b* lies along y) and counted
clockwise as seen from +c looking down the axis, so that (100) of an orthogonal cell has
φ = 90°, ρ = 90°. This is the convention of Goldschmidt's angle tables as commonly used
(common practice, from memory). Both the zero and the sense can be changed with
``phi_zero`` and ``clockwise``::

    t = (φ - phi_zero) if clockwise else -(φ - phi_zero)
    n = (sin ρ sin t, sin ρ cos t, cos ρ)

Every function here works on stacked arrays: ``(..., 3)`` vectors, ``(..., 2)`` plane
points, and broadcasts over the leading axes. Angles are in radians.

References
----------
.. [1] Goldschmidt, V. (1897). *Krystallographische Winkeltabellen*. Springer, Berlin.
   (Introduction: two-circle coordinates φ, ρ.)
.. [2] Snyder, J. P. (1987). *Map Projections — A Working Manual*. USGS Professional
   Paper 1395, ch. 21 (stereographic) and ch. 24 (Lambert azimuthal equal-area).
"""

from __future__ import annotations

from typing import Literal

import numpy as np

from habit._typing import ArrayLike, BoolArray, FloatArray
from habit.errors import InputError, UnknownSymbolError

__all__ = [
    "NETS",
    "stereographic_project",
    "stereographic_unproject",
    "equal_area_project",
    "equal_area_unproject",
    "project",
    "phi_rho_to_vectors",
    "vectors_to_phi_rho",
    "great_circle",
    "small_circle",
    "zone_axis",
]

Net = Literal["wulff", "equal-area"]
#: names of the two nets accepted by :func:`project`
NETS: tuple[str, ...] = ("wulff", "equal-area")


def _unit_vectors(vectors: ArrayLike, name: str = "vectors") -> FloatArray:
    v = np.asarray(vectors, dtype=float)
    if v.ndim == 0 or v.shape[-1] != 3:
        raise InputError(f"{name} must have shape (..., 3); got shape {v.shape}.")
    norm = np.linalg.norm(v, axis=-1, keepdims=True)
    if np.any(~np.isfinite(norm)) or np.any(norm == 0.0):
        raise InputError(f"{name} must be finite and non-zero vectors.")
    return np.asarray(v / norm, dtype=np.float64)


def stereographic_project(vectors: ArrayLike) -> FloatArray:
    """Project poles stereographically (Wulff net) from the south pole onto z = 0.

    Parameters
    ----------
    vectors : (..., 3) float array
        Pole directions; normalised here.

    Returns
    -------
    (..., 2) float array
        Plane points; the upper hemisphere maps into the unit disc with
        ``r = tan(ρ/2)``. Poles of the lower hemisphere land outside it; the south pole
        itself gives ``inf``.

    Examples
    --------
    >>> stereographic_project([0.0, 0.0, 1.0])
    array([0., 0.])
    >>> stereographic_project([1.0, 0.0, 0.0])   # on the primitive circle
    array([1., 0.])
    """
    n = _unit_vectors(vectors)
    with np.errstate(divide="ignore", invalid="ignore"):
        denom = 1.0 + n[..., 2:3]
        out = np.where(denom > 0.0, n[..., :2] / np.where(denom > 0, denom, 1.0), np.inf)
    return out


def stereographic_unproject(points: ArrayLike) -> FloatArray:
    """Invert :func:`stereographic_project`.

    Parameters
    ----------
    points : (..., 2) float array
        Plane points (radius 1 = primitive circle).

    Returns
    -------
    (..., 3) float array
        Unit vectors.

    Examples
    --------
    >>> stereographic_unproject([0.0, 0.0])
    array([0., 0., 1.])
    """
    p = np.asarray(points, dtype=float)
    r2 = np.sum(p * p, axis=-1, keepdims=True)
    xy = 2.0 * p / (1.0 + r2)
    z = (1.0 - r2) / (1.0 + r2)
    return np.concatenate([xy, z], axis=-1)


def equal_area_project(vectors: ArrayLike) -> FloatArray:
    """Lambert azimuthal equal-area projection (Schmidt net), primitive of radius 1.

    Parameters
    ----------
    vectors : (..., 3) float array
        Pole directions; normalised here.

    Returns
    -------
    (..., 2) float array
        Plane points with ``r = sqrt(2) sin(ρ/2)``; the whole sphere maps into the disc of
        radius sqrt(2), the upper hemisphere into the unit disc.

    Examples
    --------
    >>> equal_area_project([1.0, 0.0, 0.0])
    array([1., 0.])
    >>> float(np.hypot(*equal_area_project([0.0, 0.0, -1.0])))  # south pole: r = sqrt(2)
    1.4142135623730951
    """
    n = _unit_vectors(vectors)
    s = np.sqrt(np.clip(1.0 + n[..., 2:3], 0.0, None))
    with np.errstate(divide="ignore", invalid="ignore"):
        out = np.where(s > 0.0, n[..., :2] / np.where(s > 0, s, 1.0), 0.0)
    # the south pole is a circle of radius sqrt(2), not a point; report azimuth 0
    south = s[..., 0] == 0.0
    if np.any(south):
        out[south] = np.array([np.sqrt(2.0), 0.0])
    return out


def equal_area_unproject(points: ArrayLike) -> FloatArray:
    """Invert :func:`equal_area_project` (radius up to sqrt(2)).

    Parameters
    ----------
    points : (..., 2) float array
        Plane points.

    Returns
    -------
    (..., 3) float array
        Unit vectors.

    Examples
    --------
    >>> equal_area_unproject([1.0, 0.0])
    array([1., 0., 0.])
    """
    p = np.asarray(points, dtype=float)
    r2 = np.sum(p * p, axis=-1, keepdims=True)
    if np.any(r2 > 2.0 + 1e-12):
        raise InputError("equal-area points must lie within radius sqrt(2) of the centre.")
    z = 1.0 - r2
    xy = p * np.sqrt(np.clip(2.0 - r2, 0.0, None))
    return np.concatenate([xy, z], axis=-1)


def project(vectors: ArrayLike, net: str = "wulff") -> tuple[FloatArray, BoolArray]:
    """Project poles into the unit disc as drawn on a stereogram.

    Poles of the lower hemisphere are folded to the upper one by reflection through the
    equatorial plane (same azimuth, polar distance 180° − ρ), the usual way of marking
    them with open symbols.

    Parameters
    ----------
    vectors : (..., 3) float array
        Pole directions; normalised here.
    net : {"wulff", "equal-area"}
        Stereographic (equal-angle) or Lambert equal-area projection.

    Returns
    -------
    points : (..., 2) float array
        Plane points inside the unit disc.
    upper : (...,) bool array
        True for poles on the upper hemisphere (``z >= 0``).

    Examples
    --------
    >>> pts, upper = project([[0, 0, 1], [0, 1, -1]], net="wulff")
    >>> upper.tolist()
    [True, False]
    """
    n = _unit_vectors(vectors)
    upper = n[..., 2] >= 0.0
    folded = n.copy()
    folded[..., 2] = np.abs(folded[..., 2])
    if net == "wulff":
        return stereographic_project(folded), upper
    if net == "equal-area":
        return equal_area_project(folded), upper
    raise UnknownSymbolError(f"unknown net {net!r}; choose one of: {', '.join(NETS)}.")


def phi_rho_to_vectors(
    phi: ArrayLike,
    rho: ArrayLike,
    *,
    phi_zero: float = 0.0,
    clockwise: bool = True,
) -> FloatArray:
    """Convert two-circle coordinates (φ, ρ) in radians to unit vectors.

    Parameters
    ----------
    phi : (...) float array
        Azimuth φ in radians (zero at +y when ``phi_zero`` = 0).
    rho : (...) float array
        Polar distance ρ from +z in radians, 0 ≤ ρ ≤ π.
    phi_zero : float
        The reading φ at which the pole lies in the +y direction (radians).
    clockwise : bool
        True: φ increases clockwise seen from +z (Goldschmidt's sense, +y towards +x).

    Returns
    -------
    (..., 3) float array
        Unit vectors ``(sin ρ sin t, sin ρ cos t, cos ρ)`` with ``t = ±(φ − phi_zero)``.

    Examples
    --------
    >>> np.round(phi_rho_to_vectors(np.pi / 2, np.pi / 2), 12)   # (100) of a cube
    array([1., 0., 0.])
    """
    phi_a = np.asarray(phi, dtype=float)
    rho_a = np.asarray(rho, dtype=float)
    t = phi_a - phi_zero
    if not clockwise:
        t = -t
    s = np.sin(rho_a)
    return np.stack(np.broadcast_arrays(s * np.sin(t), s * np.cos(t), np.cos(rho_a)), axis=-1)


def vectors_to_phi_rho(
    vectors: ArrayLike, *, phi_zero: float = 0.0, clockwise: bool = True
) -> tuple[FloatArray, FloatArray]:
    """Convert unit vectors to two-circle coordinates (φ, ρ) in radians.

    Parameters
    ----------
    vectors : (..., 3) float array
        Pole directions; normalised here.
    phi_zero, clockwise
        As in :func:`phi_rho_to_vectors`.

    Returns
    -------
    phi : (...) float array
        Azimuth in [0, 2π). For poles on the axis (ρ = 0 or π) φ is 0 by convention.
    rho : (...) float array
        Polar distance in [0, π].

    Examples
    --------
    >>> phi, rho = vectors_to_phi_rho([0.0, 1.0, 0.0])   # (010): φ 0°, ρ 90°
    >>> float(phi), round(float(np.degrees(rho)), 9)
    (0.0, 90.0)
    """
    n = _unit_vectors(vectors)
    rho = np.arctan2(np.hypot(n[..., 0], n[..., 1]), n[..., 2])
    t = np.arctan2(n[..., 0], n[..., 1])
    if not clockwise:
        t = -t
    phi = np.mod(t + phi_zero, 2.0 * np.pi)
    phi = np.where(np.hypot(n[..., 0], n[..., 1]) < 1e-15, 0.0, phi)
    return phi, rho


def zone_axis(pole1: ArrayLike, pole2: ArrayLike) -> FloatArray:
    """Return the unit zone axis common to two poles (their normalised cross product).

    Parameters
    ----------
    pole1, pole2 : (..., 3) float array
        Face poles.

    Returns
    -------
    (..., 3) float array
        Unit vectors along ``pole1 × pole2``.

    Examples
    --------
    >>> zone_axis([1, 0, 0], [0, 1, 0])
    array([0., 0., 1.])
    """
    axis = np.cross(_unit_vectors(pole1, "pole1"), _unit_vectors(pole2, "pole2"))
    norm = np.linalg.norm(axis, axis=-1, keepdims=True)
    if np.any(norm < 1e-12):
        raise InputError("the two poles are parallel; they do not define a zone.")
    return np.asarray(axis / norm, dtype=np.float64)


def small_circle(axis: ArrayLike, angle: float, num: int = 181) -> FloatArray:
    """Points of the circle on the unit sphere at angular distance ``angle`` from ``axis``.

    Parameters
    ----------
    axis : (3,) float array
        Centre of the circle (normalised here).
    angle : float
        Angular radius in radians, 0 < angle ≤ π/2 gives a small circle; π/2 a great
        circle.
    num : int
        Number of points; the first and last coincide (closed loop).

    Returns
    -------
    (num, 3) float array
        Unit vectors.

    Examples
    --------
    >>> pts = small_circle([0, 0, 1], np.pi / 2, num=5)
    >>> bool(np.allclose(pts[:, 2], 0.0))
    True
    """
    a = _unit_vectors(axis, "axis")
    if a.shape != (3,):
        raise InputError(f"axis must be one 3-vector; got shape {a.shape}.")
    # two unit vectors perpendicular to the axis
    helper = np.array([1.0, 0.0, 0.0]) if abs(a[0]) < 0.9 else np.array([0.0, 1.0, 0.0])
    u = np.cross(a, helper)
    u /= np.linalg.norm(u)
    v = np.cross(a, u)
    t = np.linspace(0.0, 2.0 * np.pi, int(num))
    # (num, 3)
    ring = np.cos(t)[:, None] * u[None, :] + np.sin(t)[:, None] * v[None, :]
    return np.asarray(np.cos(angle) * a[None, :] + np.sin(angle) * ring, dtype=np.float64)


def great_circle(axis: ArrayLike, num: int = 181, *, upper_only: bool = True) -> FloatArray:
    """Points of the zone circle (great circle) perpendicular to a zone axis.

    Parameters
    ----------
    axis : (3,) float array
        Zone axis (normalised here).
    num : int
        Number of points.
    upper_only : bool
        True: return the half circle on the upper hemisphere as one continuous arc from
        one point of the primitive to the opposite one (what a stereogram draws).

    Returns
    -------
    (num, 3) float array
        Unit vectors; all with ``z >= -1e-12`` when ``upper_only``.

    Examples
    --------
    >>> arc = great_circle([1, 0, 0], num=3)   # the zone circle of [100]: the y–z plane
    >>> np.round(arc, 12).tolist()
    [[0.0, -1.0, 0.0], [0.0, 0.0, 1.0], [0.0, 1.0, 0.0]]
    """
    a = _unit_vectors(axis, "axis")
    if a.shape != (3,):
        raise InputError(f"axis must be one 3-vector; got shape {a.shape}.")
    if not upper_only:
        return small_circle(a, np.pi / 2, num)
    z = np.array([0.0, 0.0, 1.0])
    u = np.cross(z, a)  # horizontal, in the circle's plane
    if np.linalg.norm(u) < 1e-12:  # axis vertical: the circle is the primitive
        u = np.array([1.0, 0.0, 0.0])
        v = np.array([0.0, 1.0, 0.0])
        t = np.linspace(0.0, 2.0 * np.pi, int(num))
        return np.asarray(np.cos(t)[:, None] * u + np.sin(t)[:, None] * v, dtype=np.float64)
    u /= np.linalg.norm(u)
    v = np.cross(a, u)  # the highest point of the circle
    if v[2] < 0:
        v = -v
    t = np.linspace(-np.pi / 2, np.pi / 2, int(num))
    # (num, 3)
    arc = np.cos(t)[:, None] * v[None, :] + np.sin(t)[:, None] * u[None, :]
    return np.asarray(arc, dtype=np.float64)
