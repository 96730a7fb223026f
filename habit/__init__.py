"""habit: crystal shapes with every face indexed.

The names most users need are imported here; everything else is reached through its
module (``habit.symmetry``, ``habit.miller``, ...). Heavy modules are loaded on first use.
"""

from __future__ import annotations

import importlib
from typing import Any

__version__ = "0.1.0"

# public name -> module that defines it; loaded lazily so `import habit` stays fast.
_PUBLIC: dict[str, str] = {
    "Crystal": "habit.crystal",
    "load_crystal": "habit.crystal",
    "parse_hkl": "habit.miller",
    "format_hkl": "habit.miller",
    "point_group": "habit.symmetry",
    "space_group": "habit.spacegroups",
    "wulff_shape": "habit.wulff",
    "WulffShape": "habit.wulff",
    "atomic_packing_fraction": "habit.apf",
    "reference_polyhedron": "habit.solids",
    "HabitError": "habit.errors",
    "Tolerances": "habit.tolerances",
    "Polyhedron": "habit.polyhedron",
    "symmetry_of": "habit.polysym",
    "shape_name": "habit.shapes",
    "bfdh": "habit.morphology",
    "broken_bond_energies": "habit.bonds",
    "winterbottom_shape": "habit.substrate",
    "make_particle": "habit.particle",
    "index_faces": "habit.indexing",
    "read_measurements": "habit.measurements",
    "scan_facets": "habit.scan",
    "solve_shapes": "habit.batch",
    "shape_map": "habit.batch",
    "sample_shapes": "habit.batch",
    "run_batch": "habit.batch",
    "densest_lattice_packing": "habit.packing",
    "reference_solid": "habit.solids",
}

__all__ = sorted(_PUBLIC)


def __getattr__(name: str) -> Any:
    module = _PUBLIC.get(name)
    if module is None:
        raise AttributeError(f"module 'habit' has no attribute {name!r}")
    return getattr(importlib.import_module(module), name)


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(__all__))
