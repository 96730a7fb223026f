"""``habit map``: which forms a crystal shows over a range of two form values."""

from __future__ import annotations

import click

from habit.cli._common import crystal_options, json_option, kind_options
from habit.cli._scale import execution_options


@click.command("map")
@click.argument("args", nargs=-1, metavar="CRYSTAL")
@crystal_options
@click.option(
    "--form",
    "form_texts",
    multiple=True,
    metavar="HKL=VALUE",
    help="A form and its value (replaces the crystal file's forms); e.g. --form 100=1.0.",
)
@click.option("--x", "x_text", required=True, metavar="FORM=LOW:HIGH", help="Form along x.")
@click.option("--y", "y_text", required=True, metavar="FORM=LOW:HIGH", help="Form along y.")
@click.option(
    "--size",
    type=click.IntRange(3, 1001),
    default=17,
    show_default=True,
    help="Coarse grid points per axis.",
)
@click.option(
    "--levels",
    type=click.IntRange(0, 8),
    default=3,
    show_default=True,
    help="Refinements near boundaries (0: plain grid).",
)
@kind_options
@click.option("--csv", "csv_path", metavar="PATH", help="Write the computed points as CSV.")
@click.option("--plot", "plot_path", metavar="FILE", help="Draw the region map (.png/.svg).")
@click.option(
    "--fraction",
    "fraction_form",
    metavar="FORM",
    help="With --plot: colour by this form's area fraction instead of by region.",
)
@execution_options
@json_option
def command(
    args: tuple[str, ...],
    cell: str | None,
    crystal_class: str | None,
    space_group: str | None,
    form_texts: tuple[str, ...],
    x_text: str,
    y_text: str,
    size: int,
    levels: int,
    kind: str | None,
    csv_path: str | None,
    plot_path: str | None,
    fraction_form: str | None,
    scheduler: str | None,
    workers: int | None,
    json_path: str | None,
) -> None:
    """Map the forms present over two form values of CRYSTAL.

    The grid is refined only where the set of present forms changes, so boundaries come
    out at the fine resolution for a fraction of the cost. Example: a ratio map of
    {110} and {111} against {100} = 1:

    habit map demo --x 110=0.65:1.5 --y 111=0.55:1.8
    """
    import numpy as np

    from habit.batch import crystal_planes, shape_map
    from habit.cli._common import atomic_output, progress_bar, resolve_crystal, write_json
    from habit.cli._scale import check_plot_path, forms_and_values, parse_range, value_unit
    from habit.errors import InputError

    crystal, rest = resolve_crystal(args, cell, crystal_class, space_group)
    if rest:
        raise InputError(f"unexpected argument {rest[0]!r}; give forms as --form HKL=VALUE.")
    check_plot_path(plot_path)
    hkls, values, kind = forms_and_values(crystal, form_texts, kind)
    unit = value_unit(kind)
    planes = crystal_planes(crystal, hkls)
    x = parse_range(x_text, "--x")
    y = parse_range(y_text, "--y")
    for form in (x[0], y[0]):
        planes.form_index(form)  # a clear error for a form not in the set
    nfine = ((size - 1) * 2**levels + 1) ** 2
    quiet = json_path == "-"
    if quiet:
        result = shape_map(planes, values, x, y, size=size, levels=levels,
                           scheduler=scheduler, workers=workers)  # fmt: skip
    else:
        with progress_bar(nfine, "shapes (at most)") as update:
            result = shape_map(planes, values, x, y, size=size, levels=levels,
                               progress=update, scheduler=scheduler, workers=workers)  # fmt: skip
    names = result.region_names()
    shares = {m: float(np.mean(result.regions == m)) for m in names}
    labels = [planes.label(f) for f in range(planes.n_forms)]
    report = {
        "crystal": crystal.name,
        "kind": kind,
        "value_unit": unit,
        "forms": {lab: v for lab, v in zip(labels, values, strict=True)},
        "x": _axis_json(planes.label(result.x_form), x, len(result.x)),
        "y": _axis_json(planes.label(result.y_form), y, len(result.y)),
        "n_shapes_computed": result.n_shapes,
        "n_grid_points": int(result.regions.size),
        "n_fallback": result.n_fallback,
        "regions": [
            {"mask": m, "forms_present": names[m], "share_of_map": shares[m]} for m in names
        ],
    }  # fmt: skip
    if not quiet:
        click.echo(
            f"{crystal.name}: {result.n_shapes} shapes computed for a "
            f"{len(result.x)} x {len(result.y)} grid ({result.regions.size} points)"
        )
        click.echo(f"x: {report['x']['form']} {x[1]:g}–{x[2]:g} {unit}; "
                   f"y: {report['y']['form']} {y[1]:g}–{y[2]:g} {unit}")  # fmt: skip
        click.echo(f"\n{'share of map (%)':>17}  forms present")
        for m in sorted(names, key=lambda k: -shares[k]):
            click.echo(f"{100 * shares[m]:>17.1f}  {names[m]}")
    if csv_path:
        import csv

        with atomic_output(csv_path) as handle:
            writer = csv.writer(handle, lineterminator="\n")
            cols = [f"{planes.label(f)} ({unit})" for f in (result.x_form, result.y_form)]
            cols += ["forms_present"] + [f"area_fraction_{lab}" for lab in labels]
            writer.writerow(cols + ["volume_A3"])
            every = zip(result.points.tolist(), result.point_regions.tolist(),
                        result.point_fractions.tolist(), result.point_volume.tolist(),
                        strict=True)  # fmt: skip
            for (px, py), m, fr, v in every:
                writer.writerow([repr(px), repr(py), _name(planes, m)] + [repr(a) for a in fr]
                                + [repr(v)])  # fmt: skip
    if plot_path:
        from habit.plot import save_figure
        from habit.plot.maps import plot_map_fraction, plot_map_regions

        if fraction_form:
            artists = plot_map_fraction(result, fraction_form, unit=unit)
        else:
            artists = plot_map_regions(result, unit=unit)
        save_figure(artists[0].axes.figure, plot_path)
    if json_path is not None:
        write_json(report, json_path)
    if not quiet:
        for p in (csv_path, plot_path):
            if p:
                click.echo(f"wrote {p}")


def _axis_json(label: str, spec: tuple[str, float, float], points: int) -> dict[str, object]:
    return {"form": label, "low": spec[1], "high": spec[2], "grid_points": points}


def _name(planes: object, mask: int) -> str:
    from habit._solve import _region_name

    return _region_name(planes, int(mask))  # type: ignore[arg-type]
