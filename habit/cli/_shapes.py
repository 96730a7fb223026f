"""Resolve a SHAPE argument: a reference solid's name, a polyhedron JSON, or a crystal."""

from __future__ import annotations

from pathlib import Path
from typing import Any


def resolve_shape(spec: str) -> tuple[Any, str]:
    """Return ``(polyhedron, description)`` for a SHAPE argument.

    SHAPE is tried, in order, as the name of a reference solid (``'cuboctahedron'``), a
    polyhedron JSON file written by habit (``--export shape.json``), and a crystal (CIF,
    crystal TOML or bundled name) whose Wulff shape is meant.
    """
    from habit.errors import FileFormatError, UnknownSymbolError
    from habit.solids import reference_polyhedron

    try:
        return reference_polyhedron(spec), f"{spec} (reference solid)"
    except UnknownSymbolError:
        pass
    path = Path(spec)
    if path.suffix.lower() == ".json":
        from habit.io import read_polyhedron_json

        if not path.is_file():
            raise FileFormatError(f"no such file: {path}.")
        return read_polyhedron_json(path), f"{path.name} (polyhedron JSON)"
    from habit.crystal import load_crystal
    from habit.wulff import wulff_shape

    try:
        crystal = load_crystal(spec)
    except FileFormatError as exc:
        from habit.solids import solid_names

        raise FileFormatError(
            f"{spec!r} is not a reference solid ({', '.join(solid_names())}), a polyhedron "
            f"JSON or a crystal: {exc}"
        ) from None
    shape = wulff_shape(crystal)
    return shape.polyhedron, f"Wulff shape of {crystal.name}"


def describe(poly: Any) -> dict[str, Any]:
    """Counts, name and symmetry of a polyhedron (stable JSON keys)."""
    from habit.polysym import symmetry_of
    from habit.shapes import shape_name

    sym = symmetry_of(poly)
    return {
        "name": shape_name(poly, symmetry=sym),
        "n_vertices": int(poly.n_vertices),
        "n_edges": int(poly.n_edges),
        "n_faces": int(poly.n_faces),
        "symmetry": sym.hm,
        "symmetry_order": int(sym.order),
        "flag_count": int(poly.flag_count),
        "volume_A3": float(poly.volume),
        "surface_area_A2": float(poly.area),
    }
