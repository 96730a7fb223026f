"""Names of polyhedra: recognised by combinatorial type and symmetry, else by their forms.

A polyhedron is recognised when its numbers of vertices, edges and faces, its face sizes,
its vertex degrees and its point group (found from the geometry by
:func:`habit.polysym.symmetry_of`) match a row of the table below. The names are the
usual ones of crystal morphology and of solid geometry (common practice; see e.g.
C. Klein and B. Dutrow, *Manual of Mineral Science*, 23rd ed., Wiley (2007), chapter 5,
for the crystal forms, and H. S. M. Coxeter, *Regular Polytopes* (1973) for the solids).
Anything else is named by the forms present, e.g. ``"cube + octahedron"``.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import NamedTuple

import numpy as np

from habit.polyhedron import Polyhedron
from habit.polysym import PolyhedronSymmetry, symmetry_of

__all__ = ["CombinatorialType", "combinatorial_type", "shape_name", "forms_name", "NAMED_SOLIDS"]


class CombinatorialType(NamedTuple):
    """Counts that describe a polyhedron up to combinatorial equivalence (in part).

    Attributes
    ----------
    n_vertices, n_edges, n_faces : int
        V, E, F.
    face_sizes : tuple of (int, int)
        (number of sides, how many faces) pairs, sorted.
    vertex_degrees : tuple of (int, int)
        (degree, how many vertices) pairs, sorted.
    """

    n_vertices: int
    n_edges: int
    n_faces: int
    face_sizes: tuple[tuple[int, int], ...]
    vertex_degrees: tuple[tuple[int, int], ...]


def _hist(values: np.ndarray) -> tuple[tuple[int, int], ...]:
    u, c = np.unique(values, return_counts=True)
    return tuple((int(a), int(b)) for a, b in zip(u, c, strict=True))


def combinatorial_type(poly: Polyhedron) -> CombinatorialType:
    """Return V, E, F, the face-size histogram and the vertex-degree histogram.

    Examples
    --------
    >>> cube = Polyhedron.from_halfspaces(np.vstack([np.eye(3), -np.eye(3)]), np.ones(6))
    >>> combinatorial_type(cube)[:4]
    (8, 12, 6, ((4, 6),))
    """
    return CombinatorialType(
        poly.n_vertices,
        poly.n_edges,
        poly.n_faces,
        _hist(poly.face_sizes),
        _hist(poly.vertex_degrees),
    )


# name, (V, E, F), face sizes {sides: count}, vertex degrees {deg: count} or None, groups
_T = tuple[str, tuple[int, int, int], dict[int, int], dict[int, int] | None, frozenset[str]]


def _row(
    name: str,
    vef: tuple[int, int, int],
    faces: dict[int, int],
    groups: str,
    degrees: dict[int, int] | None = None,
) -> _T:
    return (name, vef, faces, degrees, frozenset(groups.split()))


NAMED_SOLIDS: tuple[_T, ...] = (
    _row("tetrahedron", (4, 6, 4), {3: 4}, "Td"),
    _row("tetragonal disphenoid", (4, 6, 4), {3: 4}, "D2d"),
    _row("rhombic disphenoid", (4, 6, 4), {3: 4}, "D2"),
    _row("cube", (8, 12, 6), {4: 6}, "Oh"),
    _row("tetragonal prism", (8, 12, 6), {4: 6}, "D4h"),
    _row("rectangular prism", (8, 12, 6), {4: 6}, "D2h"),
    _row("rhombohedron", (8, 12, 6), {4: 6}, "D3d"),
    _row("trigonal trapezohedron", (8, 12, 6), {4: 6}, "D3"),
    _row("octahedron", (6, 12, 8), {3: 8}, "Oh"),
    _row("tetragonal dipyramid", (6, 12, 8), {3: 8}, "D4h"),
    _row("rhombic dipyramid", (6, 12, 8), {3: 8}, "D2h"),
    _row("tetragonal scalenohedron", (6, 12, 8), {3: 8}, "D2d"),
    _row("trigonal antiprism", (6, 12, 8), {3: 8}, "D3d"),
    _row("trigonal prism", (6, 9, 5), {3: 2, 4: 3}, "D3h"),
    _row("trigonal dipyramid", (5, 9, 6), {3: 6}, "D3h"),
    _row("hexagonal prism", (12, 18, 8), {4: 6, 6: 2}, "D6h"),
    _row("truncated tetrahedron", (12, 18, 8), {3: 4, 6: 4}, "Td"),
    _row("hexagonal dipyramid", (8, 18, 12), {3: 12}, "D6h"),
    _row("ditrigonal dipyramid", (8, 18, 12), {3: 12}, "D3h"),
    _row("scalenohedron", (8, 18, 12), {3: 12}, "D3d"),
    _row("tristetrahedron", (8, 18, 12), {3: 12}, "Td"),
    _row("tetragonal trapezohedron", (10, 16, 8), {4: 8}, "D4"),
    _row("hexagonal trapezohedron", (14, 24, 12), {4: 12}, "D6"),
    _row("rhombic dodecahedron", (14, 24, 12), {4: 12}, "Oh"),
    _row("deltoid dodecahedron", (14, 24, 12), {4: 12}, "Td"),
    _row("cuboctahedron", (12, 24, 14), {3: 8, 4: 6}, "Oh"),
    _row("truncated octahedron", (24, 36, 14), {4: 6, 6: 8}, "Oh"),
    _row("truncated cube", (24, 36, 14), {3: 8, 8: 6}, "Oh"),
    _row("pyritohedron", (20, 30, 12), {5: 12}, "Th"),
    _row("regular dodecahedron", (20, 30, 12), {5: 12}, "Ih"),
    _row("tetartoid", (20, 30, 12), {5: 12}, "T"),
    _row("icosahedron", (12, 30, 20), {3: 20}, "Ih"),
    _row("pseudo-icosahedron", (12, 30, 20), {3: 20}, "Th"),
    _row("tetrahexahedron", (14, 36, 24), {3: 24}, "Oh", {4: 6, 6: 8}),
    _row("trisoctahedron", (14, 36, 24), {3: 24}, "Oh", {3: 8, 8: 6}),
    _row("hextetrahedron", (14, 36, 24), {3: 24}, "Td"),
    _row("trapezohedron", (26, 48, 24), {4: 24}, "Oh"),
    _row("diploid", (26, 48, 24), {4: 24}, "Th"),
    _row("gyroid", (38, 60, 24), {5: 24}, "O"),
    _row("hexoctahedron", (26, 72, 48), {3: 48}, "Oh"),
    # the remaining Archimedean solids and the icosahedral Catalan solids (their duals);
    # counts from Wenninger, Polyhedron Models (1971) and Dual Models (1983), from memory
    _row("rhombicuboctahedron", (24, 48, 26), {3: 8, 4: 18}, "Oh"),
    _row("truncated cuboctahedron", (48, 72, 26), {4: 12, 6: 8, 8: 6}, "Oh"),
    _row("snub cube", (24, 60, 38), {3: 32, 4: 6}, "O"),
    _row("icosidodecahedron", (30, 60, 32), {3: 20, 5: 12}, "Ih"),
    _row("truncated dodecahedron", (60, 90, 32), {3: 20, 10: 12}, "Ih"),
    _row("truncated icosahedron", (60, 90, 32), {5: 12, 6: 20}, "Ih"),
    _row("rhombicosidodecahedron", (60, 120, 62), {3: 20, 4: 30, 5: 12}, "Ih"),
    _row("truncated icosidodecahedron", (120, 180, 62), {4: 30, 6: 20, 10: 12}, "Ih"),
    _row("snub dodecahedron", (60, 150, 92), {3: 80, 5: 12}, "I"),
    _row("rhombic triacontahedron", (32, 60, 30), {4: 30}, "Ih"),
    _row("triakis icosahedron", (32, 90, 60), {3: 60}, "Ih", {3: 20, 10: 12}),
    _row("pentakis dodecahedron", (32, 90, 60), {3: 60}, "Ih", {5: 12, 6: 20}),
    _row("deltoidal hexecontahedron", (62, 120, 60), {4: 60}, "Ih"),
    _row("disdyakis triacontahedron", (62, 180, 120), {3: 120}, "Ih"),
    _row("pentagonal hexecontahedron", (92, 150, 60), {5: 60}, "I"),
)


#: Names given only when all edges are equal: the same combinatorial type with unequal
#: edges is an ordinary combination of crystal forms (e.g. cube + rhombic dodecahedron +
#: octahedron has the type of the truncated cuboctahedron) and is named by its forms.
_EQUAL_EDGES_ONLY = frozenset({"rhombicuboctahedron", "truncated cuboctahedron", "snub cube"})


def forms_name(
    poly: Polyhedron, form_names: Sequence[str] | Mapping[int, str] | None = None
) -> str:
    """Join the names of the forms present, largest area first: ``"cube + octahedron"``.

    Parameters
    ----------
    poly : Polyhedron
        The polyhedron; its ``form_ids`` say which form each face belongs to.
    form_names : sequence or mapping of str, optional
        Name of each form id. Default: ``poly.form_labels``, else ``"form <id>"``.
    """
    names = form_names if form_names is not None else poly.form_labels
    if names is None and poly.n_forms >= poly.n_faces:  # every face its own form
        sizes = {3: "triangles", 4: "quadrilaterals", 5: "pentagons", 6: "hexagons"}
        counts = np.bincount(poly.face_sizes)
        parts = [
            f"{int(c)} {sizes.get(k, f'{k}-gons')}" for k, c in enumerate(counts) if c and k
        ]
        return f"polyhedron of {poly.n_faces} faces ({', '.join(parts)})"
    area = poly.area_by_form
    present = [int(i) for i in np.argsort(-area, kind="stable") if area[i] > 0]

    def label(i: int) -> str:
        if names is None:
            return f"form {i}"
        if isinstance(names, Mapping):
            return str(names.get(i, f"form {i}"))
        return str(names[i]) if i < len(names) else f"form {i}"

    out: list[str] = []
    for i in present:
        lab = label(i)
        if lab not in out:
            out.append(lab)
    return " + ".join(out)


def shape_name(
    poly: Polyhedron,
    form_names: Sequence[str] | Mapping[int, str] | None = None,
    *,
    symmetry: PolyhedronSymmetry | None = None,
) -> str:
    """Name a polyhedron: a named solid if it is one, else the forms it shows.

    Parameters
    ----------
    poly : Polyhedron
        The polyhedron.
    form_names : sequence or mapping of str, optional
        Names of the forms by form id (e.g. ``["cube", "octahedron"]``), used when the
        solid is not one of :data:`NAMED_SOLIDS`.
    symmetry : PolyhedronSymmetry, optional
        Its symmetry, if already computed.

    Returns
    -------
    str

    Examples
    --------
    >>> cube = Polyhedron.from_halfspaces(np.vstack([np.eye(3), -np.eye(3)]), np.ones(6))
    >>> shape_name(cube)
    'cube'
    >>> box = Polyhedron.from_halfspaces(np.vstack([np.eye(3), -np.eye(3)]), [1, 2, 3] * 2)
    >>> shape_name(box)
    'rectangular prism'
    """
    ct = combinatorial_type(poly)
    sym = symmetry if symmetry is not None else symmetry_of(poly)
    faces = dict(ct.face_sizes)
    degrees = dict(ct.vertex_degrees)
    for name, vef, fsz, deg, groups in NAMED_SOLIDS:
        if (
            vef == (ct.n_vertices, ct.n_edges, ct.n_faces)
            and fsz == faces
            and (deg is None or deg == degrees)
            and sym.schoenflies in groups
        ):
            if name in _EQUAL_EDGES_ONLY:
                lengths = poly.edge_lengths
                if np.ptp(lengths) > 1e-6 * lengths.max():
                    continue
            return name
    return forms_name(poly, form_names)
