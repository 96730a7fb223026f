"""``habit bfdh``: rank the forms of a crystal by the BFDH rule and draw the habit."""

from __future__ import annotations

from typing import Any

import click

from habit.cli._common import crystal_options, json_option


def bfdh_report(result: Any) -> dict[str, Any]:
    """Build the stable JSON record of a BFDH ranking."""
    poly = result.polyhedron
    return {
        "method": "BFDH" if result.reflection_conditions else "Bravais-Friedel (lattice only)",
        "reflection_conditions": result.reflection_conditions,
        "max_index": result.max_index,
        "forms": [
            {
                "rank": f.rank,
                "form": f.label,
                "hkl": list(f.hkl),
                "name": f.name,
                "multiplicity": f.multiplicity,
                "order": f.order,
                "reflection": result.crystal.format_face(f.reflection),
                "d_hkl_A": f.d_spacing,
                "d_eff_A": f.d_eff,
                "central_distance_rel": f.distance,
                "area_percent": 100.0 * f.area_fraction,
                "present": f.present,
            }
            for f in result.forms
        ],
        "shape": {
            "n_faces": int(poly.n_faces),
            "n_edges": int(poly.n_edges),
            "n_vertices": int(poly.n_vertices),
            "length_unit": "central distance of the first-ranked form",
            "volume_rel3": float(poly.volume),
            "surface_area_rel2": float(poly.area),
        },
    }


def draw_and_export(poly: Any, title: str, plot_path: str | None, export_path: str | None) -> None:
    """Write the plot (.png/.svg/.pdf) and the mesh (.stl/.obj/.json) of a polyhedron."""
    if plot_path:
        from habit.plot.shape import plot_polyhedron, save_figure

        artists = plot_polyhedron(poly, label_min_fraction=0.12)
        figure = artists.faces.axes.figure
        figure.suptitle(title)
        save_figure(figure, plot_path)
    if export_path:
        from habit.cli._common import write_solid

        write_solid(poly, export_path)


@click.command("bfdh")
@click.argument("args", nargs=-1, metavar="CRYSTAL")
@crystal_options
@click.option(
    "--max-index",
    type=click.IntRange(1, 6),
    default=2,
    show_default=True,
    help="Consider every form with a face whose indices are all within ±N.",
)
@click.option(
    "--lattice-only",
    is_flag=True,
    help="Ignore the space group's reflection conditions (plain Bravais–Friedel rule).",
)
@click.option("--plot", "plot_path", metavar="FILE", help="Draw the BFDH habit (.png, .svg).")
@click.option("--export", "export_path", metavar="FILE", help="Write the solid (.stl, .obj).")
@json_option
def command(
    args: tuple[str, ...],
    cell: str | None,
    crystal_class: str | None,
    space_group: str | None,
    max_index: int,
    lattice_only: bool,
    plot_path: str | None,
    export_path: str | None,
    json_path: str | None,
) -> None:
    """Rank the forms of CRYSTAL by the BFDH rule (Donnay & Harker 1937).

    Each form {hkl} is replaced by its first reflection n(hkl) allowed by the space
    group (centring, glide planes, screw axes); forms are ranked by the effective
    spacing d_eff = d(nh nk nl) in Å, largest first. The BFDH habit puts each form at a
    central distance proportional to 1/d_eff. CRYSTAL is a CIF, a crystal TOML file or a
    bundled name; or give --cell with --space-group.
    """
    from habit.cli._common import (
        check_outputs,
        crystal_header,
        crystal_json,
        resolve_crystal,
        write_json,
    )
    from habit.errors import InputError
    from habit.morphology import bfdh

    crystal, rest = resolve_crystal(args, cell, crystal_class, space_group)
    if rest:
        raise InputError(f"unexpected argument {rest[0]!r}; habit bfdh takes one crystal.")
    check_outputs(plot_path, export_path)
    result = bfdh(crystal, max_index, reflection_conditions=not lattice_only)
    report = {"crystal": crystal_json(crystal), **bfdh_report(result)}
    if json_path != "-":
        _print(report, crystal_header(crystal))
    draw_and_export(result.polyhedron, f"{crystal.name} (BFDH)", plot_path, export_path)
    if json_path is not None:
        write_json(report, json_path)
    if json_path != "-":
        for p in (plot_path, export_path):
            if p:
                click.echo(f"wrote {p}")


def _print(report: dict[str, Any], header: str) -> None:
    click.echo(header)
    click.echo(f"method: {report['method']}; forms with indices within ±{report['max_index']}")
    click.echo(
        f"\n{'rank':>4}  {'form':<12}{'name':<26}{'faces':>6}{'n':>4}  {'reflection':<12}"
        f"{'d(hkl) (Å)':>11}{'d_eff (Å)':>11}{'dist. (rel)':>12}{'area (%)':>10}"
    )
    for f in report["forms"]:
        click.echo(
            f"{f['rank']:>4}  {f['form']:<12}{f['name'][:25]:<26}{f['multiplicity']:>6}"
            f"{f['order']:>4}  {f['reflection']:<12}{f['d_hkl_A']:>11.4f}{f['d_eff_A']:>11.4f}"
            f"{f['central_distance_rel']:>12.4f}{f['area_percent']:>10.2f}"
        )
    s = report["shape"]
    click.echo(
        f"\nBFDH habit: {s['n_faces']} faces, {s['n_edges']} edges, {s['n_vertices']} vertices "
        "(distance = central distance relative to the first-ranked form)"
    )
