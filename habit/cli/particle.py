"""``habit particle``: carve a particle of atoms from a crystal by its shape; count sites."""

from __future__ import annotations

import sys
from typing import Any

import click

from habit.cli._common import json_option, parse_form_options

SIZE_UNITS = {"diameter": "Å", "edge": "Å", "volume": "Å³", "atoms": "atoms", "shells": "shells"}
SIZE_HEADERS = {
    "diameter": "diameter (Å)",
    "edge": "edge (Å)",
    "volume": "volume (Å³)",
    "atoms": "target atoms",
    "shells": "shells K",
}


def _parse_series(text: str, kind: str) -> list[float]:
    from habit.errors import InputError

    try:
        values = [float(v) for v in text.replace(";", ",").split(",") if v.strip()]
    except ValueError:
        raise InputError(
            f"--series takes comma-separated sizes in {SIZE_UNITS[kind]}, e.g. 10,20,40; "
            f"got {text!r}."
        ) from None
    if not values:
        raise InputError("--series needs at least one size.")
    return values


def _print_particle(summary: dict[str, Any], header: str) -> None:
    click.echo(header)
    n = summary["atoms"]
    species = ", ".join(f"{k} {v}" for k, v in summary["atoms_by_species"].items())
    click.echo(
        f"{n} atoms ({species}); equivalent diameter {summary['equivalent_diameter_nm']:.3f} nm "
        f"({summary['equivalent_diameter_A']:.2f} Å); centre: {summary['centre']}"
    )
    size = summary["size"]
    if "requested_atoms" in size:
        click.echo(
            f"asked for {size['requested_atoms']} atoms; nearest achievable counts "
            f"{size['nearest_below']} and {size['nearest_above']}"
        )
    rows = [("bulk", summary["bulk_atoms"])]
    rows += [(f"facet {k}", v) for k, v in summary["facet_atoms_by_form"].items()]
    rows += [("edge", summary["edge_atoms"]), ("vertex", summary["vertex_atoms"])]
    click.echo(f"\n{'site':<18}{'atoms':>10}{'share (%)':>12}")
    for label, count in rows:
        click.echo(f"{label:<18}{count:>10}{100.0 * count / n:>12.2f}")
    click.echo(
        f"{'surface (total)':<18}{summary['surface_atoms']:>10}"
        f"{100.0 * summary['dispersion']:>12.2f}"
    )
    click.echo(f"\ndispersion (surface atoms / atoms): {summary['dispersion']:.4f}")


def _print_series(rows: list[dict[str, Any]], kind: str, values: list[float]) -> None:
    head = SIZE_HEADERS[kind]
    click.echo(
        f"\n{head:>16}{'atoms':>10}{'surface atoms':>15}{'dispersion':>12}{'diameter (nm)':>15}"
    )
    for v, r in zip(values, rows, strict=True):
        click.echo(
            f"{v:>16.6g}{r['atoms']:>10}{r['surface_atoms']:>15}{r['dispersion']:>12.4f}"
            f"{r['equivalent_diameter_nm']:>15.3f}"
        )


@click.command("particle")
@click.argument("crystal_spec", metavar="CRYSTAL")
@click.option(
    "--form",
    "form_texts",
    multiple=True,
    metavar="HKL=VALUE",
    help="A form and its surface energy (J/m²; or a central distance or growth rate — only "
    "ratios matter), e.g. --form 111=1.95 --form 100=2.17. Default: the crystal file's forms.",
)
@click.option("--diameter", type=float, help="Equivalent-sphere diameter of the shape, Å.")
@click.option("--edge", type=float, help="Longest edge of the shape, Å.")
@click.option("--volume", type=float, help="Volume of the shape, Å³.")
@click.option("--atoms", type=int, help="Target number of atoms (nearest achievable count).")
@click.option(
    "--shells",
    type=int,
    help="Closed shells: every face at K times its form's layer spacing d_eff (values unused).",
)
@click.option(
    "--centre",
    default="atom",
    show_default=True,
    metavar="atom|ELEMENT|WYCKOFF|x,y,z",
    help="Carving centre: the first atom, an element's first site, a Wyckoff position "
    "without free parameters (e.g. 4b) or fractional coordinates.",
)
@click.option(
    "--series",
    "series_text",
    metavar="S1,S2,...",
    help="Also tabulate a series of sizes (same unit as the chosen size option).",
)
@click.option("--xyz", "xyz_path", metavar="FILE", help="Write the particle as extended XYZ.")
@click.option(
    "--plot", "plot_path", metavar="FILE", help="Draw the particle coloured by site (.png/.svg)."
)
@click.option(
    "--series-plot",
    "series_plot_path",
    metavar="FILE",
    help="Draw dispersion against diameter for --series (.png/.svg).",
)
@json_option
def command(
    crystal_spec: str,
    form_texts: tuple[str, ...],
    diameter: float | None,
    edge: float | None,
    volume: float | None,
    atoms: int | None,
    shells: int | None,
    centre: str,
    series_text: str | None,
    xyz_path: str | None,
    plot_path: str | None,
    series_plot_path: str | None,
    json_path: str | None,
) -> None:
    """Carve a particle of atoms out of CRYSTAL in the shape of its forms.

    Give exactly one size: --diameter, --edge, --volume, --atoms or --shells. Atoms on
    a face are kept. Surface atoms are those with fewer first neighbours than in the
    bulk; they are split into facets (per form), edges and vertices.
    """
    from pathlib import Path

    from habit.cli._common import crystal_header, crystal_json, progress_bar, write_json
    from habit.crystal import load_crystal
    from habit.errors import InputError
    from habit.particle import crystal_planes, make_particle, particle_series, write_extxyz

    sizes: dict[str, Any] = {
        "diameter": diameter,
        "edge": edge,
        "volume": volume,
        "atoms": atoms,
        "shells": shells,
    }
    given = [k for k, v in sizes.items() if v is not None]
    if len(given) != 1:
        raise InputError(
            "give exactly one size: --diameter, --edge, --volume, --atoms or --shells"
            + (f" (got {', '.join('--' + g for g in given)})." if given else ".")
        )
    kind = given[0]
    for path, suffixes in (
        (plot_path, (".png", ".svg", ".pdf")),
        (series_plot_path, (".png", ".svg", ".pdf")),
    ):
        if path and Path(path).suffix.lower() not in suffixes:
            raise InputError(f"a figure is written as .png, .svg or .pdf; got {path!r}.")
    if series_plot_path and not series_text:
        raise InputError("--series-plot needs --series S1,S2,...")
    for path in (xyz_path, plot_path, series_plot_path):
        if path and not (Path(path).parent if str(Path(path).parent) else Path(".")).is_dir():
            raise InputError(f"cannot write {path}: its folder does not exist.")
    series = _parse_series(series_text, kind) if series_text else None

    crystal = load_crystal(crystal_spec)
    forms = parse_form_options(crystal, form_texts, example="111=1.95") if form_texts else None
    planes = crystal_planes(crystal, forms, shells=kind == "shells")
    options: dict[str, Any] = {"centre": centre}
    value = sizes[kind]
    if sys.stderr.isatty():
        with progress_bar(1000, "carving") as update:
            particle = make_particle(**planes, **options, **{kind: value}, progress=update)
    else:
        particle = make_particle(**planes, **options, **{kind: value})
    summary = particle.summary()
    report: dict[str, Any] = {
        "crystal": crystal_json(crystal),
        "forms": list(particle.form_labels),
        "size_kind": kind,
        "size_unit": SIZE_UNITS[kind],
        "size_value": value,
        "particle": summary,
        "series": None,
    }
    rows = None
    if series is not None:
        rows = particle_series(**planes, kind=kind, values=series, **options)
        report["series"] = [{"size_value": v, **r} for v, r in zip(series, rows, strict=True)]
    quiet = json_path == "-"
    if not quiet:
        _print_particle(summary, crystal_header(crystal))
        if rows is not None:
            _print_series(rows, kind, series or [])
    if xyz_path:
        write_extxyz(particle, xyz_path, comment=f"{crystal.name} particle carved by habit")
    if plot_path:
        from habit.plot import save_figure
        from habit.plot.particle import plot_particle

        artists = plot_particle(particle)
        ax = next(iter(artists.values())).axes
        save_figure(ax.figure, plot_path)
    if series_plot_path and rows is not None:
        from habit.plot import save_figure
        from habit.plot.particle import plot_dispersion

        lines = plot_dispersion(rows)
        lines[0].axes.set_title(f"{crystal.name}: dispersion against size", fontsize=9)
        save_figure(lines[0].figure, series_plot_path)
    if json_path is not None:
        write_json(report, json_path)
    if not quiet:
        for p in (xyz_path, plot_path, series_plot_path):
            if p:
                click.echo(f"wrote {p}")
