"""Helpers shared by the commands: output files, JSON, progress bars, number formatting."""

from __future__ import annotations

import contextlib
import json
import math
import os
import sys
from collections.abc import Callable, Iterator
from pathlib import Path
from typing import Any

import click

__all__ = [
    "atomic_output",
    "write_json",
    "json_option",
    "progress_bar",
    "deg_min",
    "to_jsonable",
    "parse_assignments",
    "parse_form_options",
    "check_outputs",
    "write_solid",
]


@contextlib.contextmanager
def atomic_output(path: str | os.PathLike[str], mode: str = "w") -> Iterator[Any]:
    """Open a temporary file beside ``path``; move it into place only if the block succeeds.

    Nothing half-written is ever left at ``path``: on any exception the temporary file is
    removed and the exception propagates.
    """
    from habit._files import replacing

    with replacing(path) as tmp, open(tmp, mode) as handle:
        yield handle


def to_jsonable(value: Any) -> Any:
    """Convert numpy scalars/arrays, tuples and NaN into plain JSON values."""
    import numpy as np

    if isinstance(value, np.ndarray):
        return [to_jsonable(v) for v in value.tolist()]
    if isinstance(value, np.generic):
        return to_jsonable(value.item())
    if isinstance(value, dict):
        return {str(k): to_jsonable(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [to_jsonable(v) for v in value]
    if isinstance(value, float) and not math.isfinite(value):
        return None
    return value


def write_json(data: Any, path: str) -> None:
    """Write ``data`` as indented JSON to ``path`` (``-`` means standard output)."""
    text = json.dumps(to_jsonable(data), indent=2, ensure_ascii=False) + "\n"
    if path == "-":
        sys.stdout.write(text)
        return
    with atomic_output(path) as handle:
        handle.write(text)


def json_option(func: Callable[..., Any]) -> Callable[..., Any]:
    """Add the standard ``--json PATH`` option (``-`` for standard output)."""
    return click.option(
        "--json",
        "json_path",
        metavar="PATH",
        default=None,
        help="Also write the results as JSON to PATH ('-' for standard output).",
    )(func)


@contextlib.contextmanager
def progress_bar(total: int, label: str) -> Iterator[Callable[[int], None]]:
    """Yield a callback ``update(done)`` that draws a progress bar on standard error.

    The library reports progress through such callbacks; only the CLI draws. Nothing is
    drawn when standard error is not a terminal (a pipe, a log file, a test).
    """
    if not sys.stderr.isatty():
        yield lambda done: None
        return
    with click.progressbar(length=total, label=label, file=sys.stderr) as bar:
        state = {"done": 0}

        def update(done: int) -> None:
            step = done - state["done"]
            if step > 0:
                bar.update(step)
                state["done"] = done

        yield update


def deg_min(angle_deg: float) -> str:
    """Format an angle as degrees and minutes, e.g. ``54°44.1′``."""
    sign = "-" if angle_deg < 0 else ""
    total_min = round(abs(angle_deg) * 60.0, 1)
    degrees = int(total_min // 60)
    minutes = total_min - 60 * degrees
    return f"{sign}{degrees}°{minutes:04.1f}′"


class MillerType(click.ParamType):  # type: ignore[type-arg, unused-ignore]
    """A face or form typed as people write it: ``111``, ``1 0 -1 1``, ``(10-11)``, ``{100}``."""

    name = "HKL"

    def convert(self, value: Any, param: click.Parameter | None, ctx: click.Context | None) -> Any:
        if isinstance(value, tuple):
            return value
        from habit.errors import InvalidMillerIndexError
        from habit.miller import parse_hkl

        try:
            return parse_hkl(str(value))
        except InvalidMillerIndexError as exc:
            self.fail(str(exc), param, ctx)


def crystal_options(func: Callable[..., Any]) -> Callable[..., Any]:
    """Add ``--cell``, ``--class`` and ``--space-group`` (a crystal given inline)."""
    func = click.option(
        "--space-group",
        "space_group",
        metavar="SYMBOL|NUMBER",
        default=None,
        help="Space group of an inline cell, e.g. 'Fm-3m' or 225.",
    )(func)
    func = click.option(
        "--class",
        "crystal_class",
        metavar="SYMBOL",
        default=None,
        help="Crystal class (Hermann–Mauguin) of an inline cell, e.g. 'm-3m', '-3m', '2/m'.",
    )(func)
    func = click.option(
        "--cell",
        metavar="A,B,C,ALPHA,BETA,GAMMA",
        default=None,
        help="Give the crystal inline: edges in Å, angles in degrees "
        "(with --class or --space-group; then CRYSTAL is left out).",
    )(func)
    return func


def resolve_crystal(
    args: tuple[str, ...],
    cell: str | None,
    crystal_class: str | None,
    space_group: str | None,
) -> tuple[Any, tuple[str, ...]]:
    """Split ``(CRYSTAL, rest...)`` or use an inline cell; return the crystal and the rest."""
    from habit.crystal import Crystal, load_crystal
    from habit.errors import CellError, InputError

    if cell is None:
        if crystal_class or space_group:
            raise InputError("--class and --space-group need --cell A,B,C,ALPHA,BETA,GAMMA.")
        if not args:
            raise InputError("name a crystal (a CIF, a crystal TOML or a bundled name).")
        return load_crystal(args[0]), tuple(args[1:])
    parts = [p for p in cell.replace(";", ",").split(",") if p.strip()]
    try:
        values = [float(p) for p in parts]
    except ValueError:
        raise CellError(f"--cell takes six numbers A,B,C,ALPHA,BETA,GAMMA; got {cell!r}.") from None
    if len(values) != 6:
        raise CellError(
            f"--cell takes six numbers A,B,C,ALPHA,BETA,GAMMA (Å, degrees); got {len(values)}."
        )
    sg: str | int | None = space_group
    if space_group is not None and space_group.strip().isdigit():
        sg = int(space_group)
    crystal = Crystal.from_cell(
        *values, crystal_class=crystal_class, space_group=sg, name="inline cell"
    )
    return crystal, tuple(args)


def parse_assignments(
    texts: tuple[str, ...],
    option: str,
    *,
    metavar: str,
    example: str,
    cast: Callable[[str], Any] = float,
) -> list[tuple[str, Any]]:
    """Read repeated ``KEY=VALUE`` options (``--form 111=1.0``, ``--radius Cu=1.28`` ...).

    Parameters
    ----------
    texts : tuple of str
        The option's values as typed.
    option : str
        The option's name, for the message (``"--form"``).
    metavar, example : str
        How the value is written and an example of it, for the message.
    cast : callable
        Turns the text after ``=`` into the value; a ``ValueError`` from it is bad input.

    Returns
    -------
    list of (str, value)
        The keys (stripped) and the converted values, in the order given.

    Raises
    ------
    InputError
        For the first value with no ``=`` or whose value ``cast`` refuses.
    """
    from habit.errors import InputError

    out = []
    for text in texts:
        key, sep, value = text.partition("=")
        try:
            if not sep:
                raise ValueError
            out.append((key.strip(), cast(value)))
        except ValueError:
            raise InputError(f"{option} takes {metavar}, e.g. {example}; got {text!r}.") from None
    return out


def parse_form_options(
    crystal: Any, texts: tuple[str, ...], *, example: str = "111=1.0"
) -> list[tuple[tuple[int, int, int], float]]:
    """Read ``--form HKL=VALUE`` options against a crystal (its Miller-index rules)."""
    pairs = parse_assignments(texts, "--form", metavar="HKL=VALUE", example=example)
    return [(crystal.parse_face(key), value) for key, value in pairs]


#: File types the commands draw (--plot) and export solids to (--export).
PLOT_SUFFIXES = (".png", ".svg", ".pdf")
SOLID_SUFFIXES = (".stl", ".obj", ".json")


def check_outputs(plot_path: str | None, export_path: str | None) -> None:
    """Refuse a --plot or --export file of a type that cannot be written, before any work."""
    from habit.errors import InputError

    if plot_path and Path(plot_path).suffix.lower() not in PLOT_SUFFIXES:
        raise InputError(f"--plot writes .png, .svg or .pdf; got {plot_path!r}.")
    if export_path and Path(export_path).suffix.lower() not in SOLID_SUFFIXES:
        raise InputError(f"--export writes .stl, .obj or .json; got {export_path!r}.")


def write_solid(poly: Any, path: str | os.PathLike[str]) -> None:
    """Write a polyhedron as STL, OBJ or JSON, by the file's suffix."""
    from habit import io

    writer = {".stl": io.write_stl, ".obj": io.write_obj, ".json": io.write_polyhedron_json}
    writer[Path(path).suffix.lower()](poly, path)


def parse_faces(crystal: Any, texts: tuple[str, ...]) -> list[tuple[int, int, int]]:
    """Parse face arguments for a crystal, raising one clear error for the first bad one."""
    return [crystal.parse_face(t) for t in texts]


def crystal_header(crystal: Any) -> str:
    """One line naming a crystal, its class and cell."""
    a, b, c, al, be, ga = crystal.cell
    sg = f", space group {crystal.space_group.symbol}" if crystal.space_group is not None else ""
    return (
        f"{crystal.name or 'crystal'}: class {crystal.point_group.symbol} "
        f"({crystal.system}{sg}); a = {a:.4f} Å, b = {b:.4f} Å, c = {c:.4f} Å, "
        f"α = {al:.3f}°, β = {be:.3f}°, γ = {ga:.3f}°"
    )


def crystal_json(crystal: Any) -> dict[str, Any]:
    """The stable JSON description of a crystal."""
    a, b, c, al, be, ga = crystal.cell
    return {
        "name": crystal.name,
        "crystal_class": crystal.point_group.symbol,
        "system": crystal.system,
        "space_group": None if crystal.space_group is None else crystal.space_group.symbol,
        "space_group_number": None
        if crystal.space_group is None
        else int(crystal.space_group.number),
        "setting": crystal.setting,
        "cell": {"a_A": a, "b_A": b, "c_A": c, "alpha_deg": al, "beta_deg": be, "gamma_deg": ga},
        "source": crystal.source,
    }


def kind_options(func: Callable[..., Any]) -> Callable[..., Any]:
    """Add ``--energies``, ``--distances`` and ``--rates``; the command gets ``kind``.

    ``kind`` is ``'energy'``, ``'distance'``, ``'rate'`` or None (use the crystal file's
    kind). Giving more than one of the three is refused with one sentence.
    """
    import functools

    @functools.wraps(func)
    def wrapper(
        *args: Any, energies_flag: bool, distances_flag: bool, rates_flag: bool, **kwargs: Any
    ) -> Any:
        flags = (("energy", energies_flag), ("distance", distances_flag), ("rate", rates_flag))
        chosen = [kind for kind, on in flags if on]
        if len(chosen) > 1:
            raise click.UsageError("give only one of --energies, --distances and --rates.")
        return func(*args, kind=chosen[0] if chosen else None, **kwargs)

    for name, text in (
        ("rates", "Values are growth rates (the kinetic shape), relative."),
        ("distances", "Values are central distances (a habit drawing), relative."),
        ("energies", "Values are surface energies, J/m² (the equilibrium shape)."),
    ):
        wrapper = click.option(f"--{name}", f"{name}_flag", is_flag=True, help=text)(wrapper)
    return wrapper
