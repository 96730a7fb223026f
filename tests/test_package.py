"""The top-level package: its public names resolve, and `import habit` stays light."""

from __future__ import annotations

import importlib
import pkgutil
import subprocess
import sys
from pathlib import Path

import pytest

import habit

HEAVY = ("pymatgen", "matplotlib", "scipy", "spglib", "dask", "trimesh")


@pytest.mark.parametrize("name", habit.__all__)
def test_every_public_name_resolves_to_its_module(name: str) -> None:
    obj = getattr(habit, name)
    module = habit._PUBLIC[name]
    assert obj is getattr(sys.modules[module], name)
    # defined there or re-exported from a submodule of habit, never a third-party object
    assert getattr(obj, "__module__", "").startswith("habit.")


def test_public_surface_lists_the_core_names() -> None:
    core = {
        "Crystal",
        "load_crystal",
        "parse_hkl",
        "format_hkl",
        "point_group",
        "space_group",
        "wulff_shape",
        "WulffShape",
        "Polyhedron",
        "HabitError",
        "Tolerances",
    }
    assert core <= set(habit.__all__)
    assert set(habit.__all__) <= set(dir(habit))
    with pytest.raises(AttributeError, match="no attribute 'not_a_name'"):
        habit.not_a_name  # noqa: B018


def test_import_habit_loads_no_heavy_library() -> None:
    code = f"import sys, habit; print(sorted(m for m in {HEAVY!r} if m in sys.modules))"
    out = subprocess.run(
        [sys.executable, "-c", code],
        capture_output=True,
        text=True,
        check=True,
        cwd=Path(__file__).resolve().parents[1],
    )
    assert out.stdout.strip() == "[]"


LIBRARY_MODULES = sorted(
    m.name
    for m in pkgutil.walk_packages(habit.__path__, "habit.")
    if not m.name.startswith("habit.cli") and m.name != "habit.__main__"
)


@pytest.mark.parametrize("name", LIBRARY_MODULES)
def test_library_modules_declare_names_that_resolve(name: str) -> None:
    # re-exports (habit.symmetry from habit.spacegroups, habit.particle from its private
    # modules) must keep every listed name importable
    module = importlib.import_module(name)
    assert isinstance(module.__all__, list | tuple)
    missing = [n for n in module.__all__ if not hasattr(module, n)]
    assert missing == []
