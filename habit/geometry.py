"""Lattice geometry as functions on stacked arrays.

Every function here broadcasts over leading axes: indices shaped ``(..., 3)`` give
results shaped ``(...)`` or ``(..., 3)``. The :class:`habit.crystal.Crystal` methods call
these functions with the crystal's own matrices.

Conventions
-----------
* ``lattice`` is a ``(3, 3)`` array whose rows are the cell vectors **a**, **b**, **c** in
  Cartesian coordinates (ångström). habit places **c** along z and **a** in the x–z plane,
  so orthogonal cells have a ∥ x, b ∥ y, c ∥ z, and hexagonal cells have a ∥ x with **b**
  at 120° in the x–y plane.
* ``reciprocal`` holds the rows **a***, **b***, **c*** (no factor 2π), so
  ``lattice @ reciprocal.T`` is the identity.
* The normal of the face (hkl) is ``h a* + k b* + l c*``; the vector of the direction
  [uvw] is ``u a + v b + w c``.
* Angles are in radians.
"""

from __future__ import annotations

import numpy as np

from habit._typing import ArrayLike, BoolArray, FloatArray, IntArray
from habit.errors import CellError

__all__ = [
    "cell_to_lattice",
    "lattice_to_cell",
    "reciprocal_lattice",
    "metric_tensor",
    "d_spacings",
    "hkl_to_normals",
    "uvw_to_vectors",
    "angles_between",
    "zone_axes",
    "is_in_zone",
]


def cell_to_lattice(
    a: float, b: float, c: float, alpha_deg: float, beta_deg: float, gamma_deg: float
) -> FloatArray:
    """Cell vectors (rows, Å) from cell parameters, with c along z and a in the x–z plane.

    Parameters
    ----------
    a, b, c : float
        Cell edges in ångström, all positive.
    alpha_deg, beta_deg, gamma_deg : float
        Cell angles in degrees (alpha between b and c, beta between a and c, gamma
        between a and b).

    Returns
    -------
    (3, 3) float array
        Rows **a**, **b**, **c** in Cartesian coordinates, Å.

    Raises
    ------
    CellError
        If an edge is not positive or the angles do not describe a real cell
        (zero or imaginary volume).

    Examples
    --------
    >>> cell_to_lattice(2, 3, 4, 90, 90, 90).round(12).tolist()
    [[2.0, 0.0, 0.0], [0.0, 3.0, 0.0], [0.0, 0.0, 4.0]]
    >>> cell_to_lattice(1, 1, 1, 120, 120, 120)
    Traceback (most recent call last):
    ...
    habit.errors.CellError: the cell angles alpha=120°, beta=120°, gamma=120° do not describe a real cell (its volume would be zero); each angle must be less than the sum of the other two and the three must add up to less than 360°.
    """
    edges = np.array([a, b, c], dtype=float)
    angles = np.array([alpha_deg, beta_deg, gamma_deg], dtype=float)
    if not np.all(np.isfinite(edges)) or np.any(edges <= 0):
        raise CellError(f"cell edges must be positive lengths in Å; got a={a}, b={b}, c={c}.")
    if not np.all(np.isfinite(angles)) or np.any(angles <= 0) or np.any(angles >= 180):
        raise CellError(
            "cell angles must lie strictly between 0° and 180°; got "
            f"alpha={alpha_deg}°, beta={beta_deg}°, gamma={gamma_deg}°."
        )
    ca, cb, cg = np.cos(np.radians(angles))
    sb = np.sin(np.radians(beta_deg))
    # volume factor: 1 - cos²α - cos²β - cos²γ + 2 cosα cosβ cosγ must be > 0
    factor = 1.0 - ca**2 - cb**2 - cg**2 + 2.0 * ca * cb * cg
    if factor <= 1e-12:
        raise CellError(
            f"the cell angles alpha={alpha_deg:g}°, beta={beta_deg:g}°, gamma={gamma_deg:g}° "
            "do not describe a real cell (its volume would be zero); each angle must be less "
            "than the sum of the other two and the three must add up to less than 360°."
        )
    vec_a = a * np.array([sb, 0.0, cb])
    bx = b * (cg - cb * ca) / sb
    bz = b * ca
    by = np.sqrt(max(b * b - bx * bx - bz * bz, 0.0))
    vec_b = np.array([bx, by, bz])
    vec_c = np.array([0.0, 0.0, c])
    lattice: FloatArray = np.vstack([vec_a, vec_b, vec_c])
    return lattice


def lattice_to_cell(lattice: ArrayLike) -> tuple[float, float, float, float, float, float]:
    """Cell parameters (Å, degrees) of a lattice given by its row vectors.

    Examples
    --------
    >>> [round(x, 9) for x in lattice_to_cell(cell_to_lattice(3, 4, 5, 80, 95, 100))]
    [3.0, 4.0, 5.0, 80.0, 95.0, 100.0]
    """
    m = np.asarray(lattice, dtype=float)
    lengths = np.linalg.norm(m, axis=1)
    a, b, c = m
    alpha = np.degrees(np.arccos(np.clip(b @ c / (lengths[1] * lengths[2]), -1, 1)))
    beta = np.degrees(np.arccos(np.clip(a @ c / (lengths[0] * lengths[2]), -1, 1)))
    gamma = np.degrees(np.arccos(np.clip(a @ b / (lengths[0] * lengths[1]), -1, 1)))
    return (
        float(lengths[0]),
        float(lengths[1]),
        float(lengths[2]),
        float(alpha),
        float(beta),
        float(gamma),
    )


def reciprocal_lattice(lattice: ArrayLike) -> FloatArray:
    """Reciprocal cell vectors (rows **a***, **b***, **c***, in Å⁻¹, no factor 2π).

    Examples
    --------
    >>> reciprocal_lattice(np.diag([2.0, 4.0, 5.0])).tolist()
    [[0.5, 0.0, 0.0], [0.0, 0.25, 0.0], [0.0, 0.0, 0.2]]
    """
    recip: FloatArray = np.linalg.inv(np.asarray(lattice, dtype=float)).T
    return recip


def metric_tensor(lattice: ArrayLike) -> FloatArray:
    """Metric tensor ``G = L Lᵀ`` of a lattice given by rows (Å²).

    Pass the reciprocal lattice to get the reciprocal metric ``G*`` (Å⁻²).
    """
    m = np.asarray(lattice, dtype=float)
    metric: FloatArray = m @ m.T
    return metric


def d_spacings(reciprocal_metric: ArrayLike, hkl: ArrayLike) -> FloatArray:
    """Interplanar spacings d(hkl) = 1 / sqrt(h G* hᵀ), in Å.

    Parameters
    ----------
    reciprocal_metric : (3, 3) float array, Å⁻²
    hkl : (..., 3) int array_like
        Must not contain (000).

    Returns
    -------
    (...) float array, Å

    Examples
    --------
    >>> d_spacings(np.eye(3) / 16.0, [[1, 0, 0], [1, 1, 1]]).round(6).tolist()
    [4.0, 2.309401]
    """
    h = np.asarray(hkl, dtype=float)
    q2 = np.einsum("...i,ij,...j->...", h, np.asarray(reciprocal_metric, dtype=float), h)
    out: FloatArray = 1.0 / np.sqrt(q2)
    return out


def hkl_to_normals(reciprocal: ArrayLike, hkl: ArrayLike) -> FloatArray:
    """Cartesian unit normals of faces (hkl).

    Parameters
    ----------
    reciprocal : (3, 3) float array
        Rows **a***, **b***, **c***.
    hkl : (..., 3) array_like
        Miller indices (integers, or real for directions in index space).

    Returns
    -------
    (..., 3) float array, unit length

    Examples
    --------
    >>> hkl_to_normals(np.eye(3), [1, 1, 0]).round(6).tolist()
    [0.707107, 0.707107, 0.0]
    """
    g = np.asarray(hkl, dtype=float) @ np.asarray(reciprocal, dtype=float)  # (..., 3)
    out: FloatArray = g / np.linalg.norm(g, axis=-1, keepdims=True)
    return out


def uvw_to_vectors(lattice: ArrayLike, uvw: ArrayLike) -> FloatArray:
    """Cartesian vectors (Å) of lattice directions [uvw] = u a + v b + w c.

    Examples
    --------
    >>> uvw_to_vectors(np.diag([2.0, 3.0, 4.0]), [1, 1, 0]).tolist()
    [2.0, 3.0, 0.0]
    """
    out: FloatArray = np.asarray(uvw, dtype=float) @ np.asarray(lattice, dtype=float)
    return out


def angles_between(v1: ArrayLike, v2: ArrayLike) -> FloatArray:
    """Angles (radians, in [0, π]) between vectors, broadcasting over leading axes.

    Uses ``atan2(|v1 × v2|, v1 · v2)``, which stays accurate for nearly parallel vectors.

    Examples
    --------
    >>> float(np.degrees(angles_between([1, 0, 0], [1, 1, 1]))).__round__(4)
    54.7356
    """
    a = np.asarray(v1, dtype=float)
    b = np.asarray(v2, dtype=float)
    cross = np.linalg.norm(np.cross(a, b), axis=-1)
    dot = np.sum(a * b, axis=-1)
    out: FloatArray = np.arctan2(cross, dot)
    return out


def zone_axes(hkl1: ArrayLike, hkl2: ArrayLike) -> IntArray:
    """Zone axis [uvw] = (hkl)₁ × (hkl)₂ of two faces, reduced to smallest integers.

    The axis is a direction in the direct lattice, perpendicular to both face normals
    (Weiss zone law). Parallel faces give [000].

    Examples
    --------
    >>> zone_axes([1, 0, 0], [0, 1, 0]).tolist()
    [0, 0, 1]
    >>> zone_axes([1, 1, 0], [1, 1, 1]).tolist()
    [1, -1, 0]
    """
    from habit.miller import reduce_indices

    cross = np.cross(np.asarray(hkl1, dtype=np.int64), np.asarray(hkl2, dtype=np.int64))
    return reduce_indices(cross)


def is_in_zone(hkl: ArrayLike, uvw: ArrayLike) -> BoolArray:
    """Whether faces (hkl) lie in the zone [uvw]: h u + k v + l w = 0 (Weiss zone law).

    Examples
    --------
    >>> is_in_zone([[1, -1, 0], [1, 1, 1]], [0, 0, 1]).tolist()
    [True, False]
    """
    h = np.asarray(hkl, dtype=np.int64)
    u = np.asarray(uvw, dtype=np.int64)
    out: BoolArray = np.sum(h * u, axis=-1) == 0
    return out
