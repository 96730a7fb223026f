"""Helpers shared by ``habit map``, ``habit sample`` and ``habit batch``."""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

import click

__all__ = [
    "execution_options",
    "forms_and_values",
    "parse_range",
    "value_unit",
    "check_plot_path",
]

UNITS = {"energy": "J/m²", "distance": "relative", "rate": "relative"}


def execution_options(func: Callable[..., Any]) -> Callable[..., Any]:
    """Add ``--scheduler`` and ``--workers``."""
    func = click.option(
        "--workers",
        type=int,
        default=None,
        metavar="N",
        help="Local worker processes for large jobs (default: all CPUs).",
    )(func)
    func = click.option(
        "--scheduler",
        default=None,
        metavar="WHERE",
        help="auto (default: in-process for small work, local processes for large), inline, "
        "processes, dask (a local dask cluster) or the address of a dask scheduler "
        "(tcp://HOST:8786). The numbers do not depend on it.",
    )(func)
    return func


def forms_and_values(
    crystal: Any, form_texts: tuple[str, ...], kind: str | None
) -> tuple[list[tuple[int, int, int]], list[float], str]:
    """Forms, their values and what the values mean, from --form options or the crystal."""
    from habit.cli._common import parse_form_options
    from habit.errors import InputError

    if form_texts:
        pairs = parse_form_options(crystal, form_texts)
        hkls = [h for h, _ in pairs]
        values = [v for _, v in pairs]
        return hkls, values, kind or "energy"
    if crystal.forms is None:
        raise InputError(
            f"{crystal.name or 'the crystal'} has no forms; give them as --form HKL=VALUE."
        )
    return list(crystal.forms.hkl), list(crystal.forms.values), kind or crystal.forms.kind


def parse_range(text: str, option: str) -> tuple[str, float, float]:
    """``FORM=LOW:HIGH`` -> (form, low, high)."""
    from habit.errors import InputError

    form, sep, rng = text.partition("=")
    low, sep2, high = rng.partition(":")
    try:
        if not (sep and sep2):
            raise ValueError
        lo, hi = float(low), float(high)
    except ValueError:
        raise InputError(f"{option} takes FORM=LOW:HIGH, e.g. 110=0.6:1.5; got {text!r}.") from None
    if not (0 < lo < hi < float("inf")):
        raise InputError(
            f"{option} needs 0 < LOW < HIGH (positive values, low first); got {lo:g} and {hi:g}."
        )
    return form.strip(), lo, hi


def value_unit(kind: str) -> str:
    """Return the unit of form values of this kind."""
    return UNITS.get(kind, "relative")


def check_plot_path(path: str | None) -> None:
    """Refuse a plot file name with an unknown suffix before any work is done."""
    from pathlib import Path

    from habit.errors import InputError

    if path and Path(path).suffix.lower() not in (".png", ".svg", ".pdf"):
        raise InputError(f"--plot writes .png, .svg or .pdf; got {path!r}.")
