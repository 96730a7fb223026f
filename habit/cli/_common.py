"""Helpers shared by the commands: output files, JSON, progress bars, number formatting."""

from __future__ import annotations

import contextlib
import json
import math
import os
import sys
import tempfile
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
]


@contextlib.contextmanager
def atomic_output(path: str | os.PathLike[str], mode: str = "w") -> Iterator[Any]:
    """Open a temporary file beside ``path``; move it into place only if the block succeeds.

    Nothing half-written is ever left at ``path``: on any exception the temporary file is
    removed and the exception propagates.
    """
    target = Path(path)
    directory = target.parent if str(target.parent) else Path(".")
    if not directory.is_dir():
        from habit.errors import FileFormatError

        raise FileFormatError(f"cannot write {target}: folder {directory} does not exist.")
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".part", dir=directory)
    try:
        with os.fdopen(fd, mode) as handle:
            yield handle
        os.replace(tmp, target)
    except BaseException:
        with contextlib.suppress(FileNotFoundError):
            os.unlink(tmp)
        raise


def to_jsonable(value: Any) -> Any:
    """Convert numpy scalars/arrays, tuples and NaN into plain JSON values."""
    try:
        import numpy as np
    except ImportError:  # pragma: no cover - numpy is a core dependency
        np = None
    if np is not None:
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

    The library reports progress through such callbacks; only the CLI draws.
    """
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
