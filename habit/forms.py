"""Names of crystal forms and whether a set of forms encloses a solid.

A form {hkl} is the set of faces ``{(hkl) @ W}`` over the operations of a crystal class
(see :mod:`habit.symmetry` for the conventions). Its name is read from the geometry of
its face normals, not from a list of indices:

* uniaxial classes (tetragonal, trigonal, hexagonal): where the normals lie relative to
  the main axis (on it, perpendicular to it, all on one side, on both sides), how their
  azimuths are spaced (equal spacing: trigonal/tetragonal/hexagonal; alternating:
  ditrigonal/ditetragonal/dihexagonal) and whether the lower faces sit straight below the
  upper ones (dipyramid) or are turned (rhombohedron, trapezohedron, scalenohedron,
  disphenoid);
* cubic classes: the position of the normal relative to the <100>, <110> and <111>
  directions and to the {100} and {110} planes, named through a table keyed by
  (class, kind of position);
* triclinic, monoclinic, orthorhombic: the number of faces, whether two faces are
  parallel, related by a mirror (dome) or a 2-fold axis (sphenoid), and whether the faces
  lie in one zone (prism).

Normals are computed in a Cartesian frame built from a metric that the group keeps
(the average of ``W.T @ W``); every metric the group keeps gives the same names.

References
----------
.. [1] Hahn, T. (ed.) (2005). International Tables for Crystallography, Vol. A,
   Table 10.1.2.2 (names of the crystal forms of the 32 point groups).
.. [2] Klein, C. & Dutrow, B. (2007). Manual of Mineral Science, 23rd ed., Chapter 5.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from habit.errors import InputError
from habit.symmetry import (
    PointGroup,
    _axis,
    _main_axis,
    _rotation_types,
    expand_form,
    point_group,
    point_group_from_operations,
)

__all__ = ["form_name", "is_closed_form", "CUBIC_FORM_NAMES"]

_TOL = 1e-7

_CUBIC_KINDS = ("100", "111", "110", "hk0", "hhl", "hll", "hkl")
CUBIC_FORM_NAMES: dict[str, dict[str, str]] = {
    cls: dict(zip(_CUBIC_KINDS, names, strict=True))
    for cls, names in {
        "m-3m": ("cube", "octahedron", "rhombic dodecahedron", "tetrahexahedron",
                 "trisoctahedron", "trapezohedron", "hexoctahedron"),
        "432": ("cube", "octahedron", "rhombic dodecahedron", "tetrahexahedron",
                "trisoctahedron", "trapezohedron", "gyroid"),
        "-43m": ("cube", "tetrahedron", "rhombic dodecahedron", "tetrahexahedron",
                 "deltoid dodecahedron", "tristetrahedron", "hextetrahedron"),
        "m-3": ("cube", "octahedron", "rhombic dodecahedron", "pyritohedron",
                "trisoctahedron", "trapezohedron", "diploid"),
        "23": ("cube", "tetrahedron", "rhombic dodecahedron", "pyritohedron",
               "deltoid dodecahedron", "tristetrahedron", "tetartoid"),
    }.items()
}  # fmt: skip
"""Names of the cubic forms by class and kind of position of the face normal.

Kinds: on <100>; on <111>; on <110>; in a {100} plane; in a {110} plane between <111>
and <110> ({hhl} with h > l, e.g. {221}); in a {110} plane between <100> and <111>
({hll} with h > l, e.g. {211}); general.
"""


def _group(group: PointGroup | str | ArrayLike) -> PointGroup:
    if isinstance(group, (PointGroup, str)):
        return point_group(group)
    return point_group_from_operations(group)


def _cartesian(ops: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Direct (rows a, b, c) and reciprocal (rows a*, b*, c*) bases for a kept metric."""
    metric = np.einsum("gji,gjk->ik", ops, ops).astype(np.float64)  # (3, 3) sum of W^T W
    lattice = np.linalg.cholesky(metric)  # rows: basis vectors, lattice @ lattice.T = G
    return lattice, np.linalg.inv(lattice).T


def _unit(v: np.ndarray) -> np.ndarray:
    out: np.ndarray = v / np.linalg.norm(v, axis=-1, keepdims=True)
    return out


def _equispaced(az: np.ndarray) -> bool:
    """Tell whether the azimuths (radians) divide the circle into equal parts."""
    a = np.sort(np.mod(az, 2 * np.pi))
    gaps = np.diff(np.concatenate([a, a[:1] + 2 * np.pi]))
    return bool(np.allclose(gaps, 2 * np.pi / len(a), atol=1e-6))


def _same_azimuths(a: np.ndarray, b: np.ndarray) -> bool:
    d = np.abs(np.angle(np.exp(1j * (a[:, None] - b[None, :]))))  # (len a, len b)
    return bool(np.all(d.min(axis=1) < 1e-6))


def _ring(az: np.ndarray) -> str:
    k = len(az)
    if k == 6:
        return "hexagonal" if _equispaced(az) else "ditrigonal"
    return {3: "trigonal", 4: "tetragonal", 8: "ditetragonal", 12: "dihexagonal"}[k]


def _uniaxial_name(faces: np.ndarray, group: PointGroup) -> str:
    lattice, recip = _cartesian(group.operations)
    normals = _unit(faces @ recip)  # (M, 3)
    z = _unit(_main_axis(group.operations) @ lattice)
    x = _unit(np.cross(z, [1.0, 0.0, 0.0] if abs(z[0]) < 0.9 else [0.0, 1.0, 0.0]))
    y = np.cross(z, x)
    height = normals @ z  # (M,)
    if np.all(np.abs(np.abs(height) - 1) < _TOL):
        return "pedion" if len(faces) == 1 else "pinacoid"
    az = np.arctan2(normals @ y, normals @ x)  # (M,)
    up, down = height > _TOL, height < -_TOL
    if not np.any(up | down):
        return f"{_ring(az)} prism"
    if not np.any(down) or not np.any(up):
        return f"{_ring(az)} pyramid"
    if _same_azimuths(az[up], az[down]):
        return f"{_ring(az[up])} dipyramid"
    k = int(up.sum())
    if k == 2:
        return "tetragonal disphenoid"
    if k == 3:
        return "rhombohedron" if _equispaced(az) else "trigonal trapezohedron"
    if k == 4:
        return "tetragonal trapezohedron" if _equispaced(az[up]) else "tetragonal scalenohedron"
    return "hexagonal trapezohedron" if _equispaced(az[up]) else "ditrigonal scalenohedron"


def _cubic_name(faces: np.ndarray, group: PointGroup) -> str:
    ops = group.operations
    types = _rotation_types(ops)  # (G,)
    chosen = ops[np.abs(types) == 4] if np.any(np.abs(types) == 4) else ops[types == 2]
    lattice, recip = _cartesian(ops)
    axes = _unit(np.array([_axis(w) for w in chosen]) @ lattice)  # <100> directions
    frame = [axes[0]]
    for a in axes[1:]:
        if all(abs(abs(a @ f) - 1) > _TOL for f in frame):
            frame.append(a)
    x, y, z = -np.sort(-np.abs(np.array(frame[:3]) @ _unit(faces[0] @ recip)))
    if y < _TOL:
        kind = "100"
    elif abs(x - z) < _TOL:
        kind = "111"
    elif z < _TOL:
        kind = "110" if abs(x - y) < _TOL else "hk0"
    elif abs(x - y) < _TOL:
        kind = "hhl"
    elif abs(y - z) < _TOL:
        kind = "hll"
    else:
        kind = "hkl"
    return CUBIC_FORM_NAMES[group.geometric_class][kind]


def _low_name(faces: np.ndarray, group: PointGroup) -> str:
    m = len(faces)
    if m == 1:
        return "pedion"
    if m == 2:
        if np.array_equal(faces[1], -faces[0]):
            return "pinacoid"
        mirrors = [w for w in group.operations if round(np.linalg.det(w)) < 0]
        return (
            "dome" if any(np.array_equal(faces[0] @ w, faces[1]) for w in mirrors) else "sphenoid"
        )
    if m == 4:
        if np.linalg.matrix_rank(faces.astype(np.float64)) == 2:
            return "rhombic prism"
        proper = all(round(np.linalg.det(w)) > 0 for w in group.operations)
        return "rhombic disphenoid" if proper else "rhombic pyramid"
    return "rhombic dipyramid"


def form_name(hkl: ArrayLike, group: PointGroup | str | ArrayLike) -> str:
    """Return the name of the form {hkl} in a crystal class, as the trade uses it.

    Parameters
    ----------
    hkl : (3,) int array
        Miller indices of one face (three-index; convert (hkil) first).
    group : PointGroup, str or (G, 3, 3) int array
        The crystal class in the basis of ``hkl``.

    Returns
    -------
    str
        Lower-case name, e.g. ``"cube"``, ``"rhombohedron"``, ``"dihexagonal dipyramid"``,
        ``"rhombic prism"``, ``"dome"``.

    Notes
    -----
    Cubic names follow the common English usage: trapezohedron (tetragon-trioctahedron,
    {211}: kites), trisoctahedron (trigon-trioctahedron, {221}: triangles),
    tristetrahedron ({211} in 23 and -43m: triangles, a tetrahedron with a low pyramid on
    each face), deltoid dodecahedron ({221} in 23 and -43m: kites), pyritohedron ({hk0} in
    23 and m-3), diploid, gyroid (pentagon-icositetrahedron), tetartoid. Halving a form of
    m-3m to the tetrahedral classes changes the face shape, so {211} gives triangles there
    and {221} kites. The general form of -3m is a ditrigonal scalenohedron and the forms
    of 2/m and mmm lying in a zone are rhombic
    prisms. See :data:`CUBIC_FORM_NAMES` and the module docstring.

    Examples
    --------
    >>> form_name([1, 1, 1], "m-3m"), form_name([1, 1, 1], "-43m")
    ('octahedron', 'tetrahedron')
    >>> form_name([1, 0, 1], "-3m"), form_name([2, 1, 1], "-3m")
    ('rhombohedron', 'ditrigonal scalenohedron')
    >>> form_name([0, 0, 1], "6mm")
    'pedion'
    """
    g = _group(group)
    faces = expand_form(hkl, g.operations)
    if g.system == "cubic":
        return _cubic_name(faces, g)
    if g.system in ("tetragonal", "trigonal", "hexagonal"):
        return _uniaxial_name(faces, g)
    return _low_name(faces, g)


def is_closed_form(hkl: ArrayLike, group: PointGroup | str | ArrayLike) -> bool:
    """Tell whether the faces of one or more forms enclose a bounded solid.

    Parameters
    ----------
    hkl : (3,) or (N, 3) int array
        One form, or several forms taken together.
    group : PointGroup, str or (G, 3, 3) int array
        The crystal class in the basis of ``hkl``.

    Returns
    -------
    bool
        True if the face normals are not all in one closed half-space, so that the
        planes, at any positive distances, bound a finite solid.

    Notes
    -----
    Decided combinatorially, without a metric: normals ``n = (hkl) @ B`` (B the
    reciprocal basis) positively span space exactly when the index vectors do, because
    B is invertible. A set of faces positively spans space iff it has rank 3 and some
    strictly positive combination of it is zero (Stiemke's theorem); averaging such a
    combination over the group, it suffices that a strictly positive combination of the
    sums of the forms' faces vanishes. For a single form: closed iff its faces sum to
    zero and have rank 3.

    Examples
    --------
    >>> is_closed_form([1, 1, 1], "-43m"), is_closed_form([1, 0, 1], "mm2")
    (True, False)
    >>> is_closed_form([[1, 1, 1], [0, 0, -1]], "mm2")  # rhombic pyramid + pedion
    True
    """
    g = _group(group)
    forms = np.atleast_2d(np.asarray(hkl))
    if forms.ndim != 2 or forms.shape[1] != 3:
        raise InputError(f"forms must be given as (3,) or (N, 3) Miller indices, got {hkl!r}.")
    orbits = [expand_form(h, g.operations) for h in forms]
    faces = np.concatenate(orbits).astype(np.float64)  # (F, 3)
    if np.linalg.matrix_rank(faces) < 3:
        return False
    sums = np.array([o.sum(axis=0) for o in orbits], dtype=np.float64)  # (N, 3)
    sums = sums[np.any(sums != 0, axis=1)]
    if len(sums) == 0:
        return True
    from scipy.optimize import linprog

    result = linprog(
        np.zeros(len(sums)),
        A_eq=sums.T,
        b_eq=np.zeros(3),
        bounds=[(1, None)] * len(sums),
        method="highs",
    )
    return bool(result.status == 0)
