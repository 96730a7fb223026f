"""Shape names from combinatorial type and symmetry.

Form and solid names: C. Klein and B. Dutrow, Manual of Mineral Science, 23rd ed. (2007),
chapter 5 (crystal forms; from memory) and common practice; V, E, F of the solids:
Coxeter, Regular Polytopes (1973), Table I, and Euler's formula.
"""

from __future__ import annotations

import numpy as np
import pytest
from poly_samples import (
    DODECAHEDRON_NORMALS,
    ICOSAHEDRON_NORMALS,
    TETRAHEDRON_NORMALS,
    cubic_planes,
    hexagonal_prism_normals,
    unit,
)

from habit.polyhedron import Polyhedron
from habit.shapes import combinatorial_type, forms_name, shape_name

SQ3 = np.sqrt(3.0)


def cubic(forms):
    n, d, hkl, fid = cubic_planes(forms)
    return Polyhedron.from_halfspaces(n, d, hkl=hkl, form_ids=fid)


@pytest.mark.parametrize(
    "forms,name,vef",
    [
        ({(1, 0, 0): 1}, "cube", (8, 12, 6)),
        ({(1, 1, 1): 1}, "octahedron", (6, 12, 8)),
        ({(1, 1, 0): 1}, "rhombic dodecahedron", (14, 24, 12)),
        ({(1, 0, 0): 1, (1, 1, 1): 1.0}, "truncated octahedron", (24, 36, 14)),
        ({(1, 0, 0): 1, (1, 1, 1): 2 / SQ3}, "cuboctahedron", (12, 24, 14)),
        ({(1, 0, 0): 1, (1, 1, 1): 1.5}, "truncated cube", (24, 36, 14)),
        ({(2, 1, 0): 1}, "tetrahexahedron", (14, 36, 24)),
        ({(2, 2, 1): 1}, "trisoctahedron", (14, 36, 24)),
        ({(2, 1, 1): 1}, "trapezohedron", (26, 48, 24)),
        ({(3, 2, 1): 1}, "hexoctahedron", (26, 72, 48)),
    ],
)
def test_cubic_names(forms, name, vef) -> None:
    p = cubic(forms)
    ct = combinatorial_type(p)
    assert (ct.n_vertices, ct.n_edges, ct.n_faces) == vef
    assert shape_name(p) == name


def test_platonic_and_pyritohedron_names() -> None:
    assert shape_name(Polyhedron.from_halfspaces(TETRAHEDRON_NORMALS, np.ones(4))) == "tetrahedron"
    assert (
        shape_name(Polyhedron.from_halfspaces(DODECAHEDRON_NORMALS, np.ones(12)))
        == "regular dodecahedron"
    )
    assert shape_name(Polyhedron.from_halfspaces(ICOSAHEDRON_NORMALS, np.ones(20))) == "icosahedron"
    rows = [[0, s1, 2 * s2] for s1 in (1, -1) for s2 in (1, -1)]
    h = np.array([np.roll(r, k) for r in rows for k in range(3)], float)
    pyr = Polyhedron.from_halfspaces(unit(h), np.ones(12))
    assert combinatorial_type(pyr).face_sizes == ((5, 12),)
    assert shape_name(pyr) == "pyritohedron"
    tt = Polyhedron.from_halfspaces(
        np.vstack([TETRAHEDRON_NORMALS, -TETRAHEDRON_NORMALS]), [1] * 4 + [2] * 4
    )
    assert shape_name(tt) == "truncated tetrahedron"


def _ring(n: int, z: float, phase: float = 0.0, alternate: bool = False) -> np.ndarray:
    ang = np.arange(n) * 2 * np.pi / n + phase
    zs = z * ((-1.0) ** np.arange(n) if alternate else np.ones(n))
    return unit(np.stack([np.cos(ang), np.sin(ang), zs], axis=1))


def test_hexagonal_and_trigonal_names() -> None:
    prism = Polyhedron.from_halfspaces(hexagonal_prism_normals(), [1.0] * 6 + [1.5] * 2)
    assert shape_name(prism) == "hexagonal prism"
    dip = Polyhedron.from_halfspaces(np.vstack([_ring(6, 0.6), _ring(6, -0.6)]), np.ones(12))
    assert shape_name(dip) == "hexagonal dipyramid"
    rhomb = Polyhedron.from_halfspaces(_ring(6, 0.5, alternate=True), np.ones(6))
    assert shape_name(rhomb) == "rhombohedron"
    # scalenohedron: 12 faces in pairs about the mirrors of -3m
    up = np.vstack([_ring(3, 0.5, 0.3), _ring(3, 0.5, -0.3)])
    scal = np.vstack([up, -up])
    assert shape_name(Polyhedron.from_halfspaces(scal, np.ones(12))) == "scalenohedron"
    tri = np.vstack([_ring(3, 0.0), [[0, 0, 1.0], [0, 0, -1.0]]])
    assert shape_name(Polyhedron.from_halfspaces(tri, [1, 1, 1, 2, 2])) == "trigonal prism"
    tet_prism = np.vstack([_ring(4, 0.0), [[0, 0, 1.0], [0, 0, -1.0]]])
    assert shape_name(Polyhedron.from_halfspaces(tet_prism, [1] * 4 + [2, 2])) == (
        "tetragonal prism"
    )
    tdip = np.vstack([_ring(4, 0.7), _ring(4, -0.7)])
    assert shape_name(Polyhedron.from_halfspaces(tdip, np.ones(8))) == "tetragonal dipyramid"
    trdip = np.vstack([_ring(3, 0.7), _ring(3, -0.7)])
    assert shape_name(Polyhedron.from_halfspaces(trdip, np.ones(6))) == "trigonal dipyramid"


def test_unnamed_combinations_use_form_names() -> None:
    p = cubic({(1, 0, 0): 1.0, (1, 1, 0): 1.3, (1, 1, 1): 1.1})
    name = shape_name(p, ["cube", "rhombic dodecahedron", "octahedron"])
    # largest area first; all three present
    assert set(name.split(" + ")) == {"cube", "rhombic dodecahedron", "octahedron"}
    areas = p.area_by_form
    assert name.split(" + ")[0] == ["cube", "rhombic dodecahedron", "octahedron"][areas.argmax()]
    assert forms_name(p, {0: "a", 1: "b", 2: "c"}).count("+") == 2
    assert forms_name(p).startswith("form ")
