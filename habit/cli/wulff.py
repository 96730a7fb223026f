"""``habit wulff``: the equilibrium shape, kinetic shape or habit drawing of a crystal."""

from __future__ import annotations

from typing import Any

import click

from habit.cli._common import check_outputs as _check_outputs
from habit.cli._common import (
    crystal_options,
    json_option,
    kind_options,
    parse_form_options,
    write_solid,
)
from habit.cli._substrate import substrate_options

KIND_UNITS = {"energy": "J/m²", "distance": "relative", "rate": "relative"}


def shape_report(shape: Any) -> dict[str, Any]:
    """The stable JSON/table record of a Wulff shape."""
    poly = shape.polyhedron
    sym = shape.symmetry()
    crystal = shape.crystal
    h0 = min(f.distance for f in shape.forms)
    return {
        "crystal": None,
        "kind": shape.kind,
        "value_unit": KIND_UNITS[shape.kind],
        "length_unit": "h0 (the smallest central distance)",
        "forms": [
            {
                "form": f.label,
                "hkl": list(f.hkl),
                "name": f.name,
                "multiplicity": f.multiplicity,
                "value": f.value,
                "central_distance_h0": f.distance / h0,
                "area_percent": 100.0 * f.area_fraction,
                "present": f.present,
            }
            for f in shape.forms
        ],
        "shape_name": shape.shape_name(),
        "volume_h0_3": float(poly.volume) / h0**3,
        "surface_area_h0_2": float(poly.area) / h0**2,
        "n_vertices": int(poly.n_vertices),
        "n_edges": int(poly.n_edges),
        "n_faces": int(poly.n_faces),
        "mean_energy_J_m2": shape.mean_energy,
        "symmetry": {
            "point_group": sym.hm,
            "schoenflies": sym.schoenflies,
            "order": int(sym.order),
            "contains_crystal_class": bool(sym.contains(crystal.cartesian_operations)),
            "crystal_class": crystal.point_group.symbol,
        },
    }


def print_report(report: dict[str, Any], crystal_line: str) -> None:
    """Print the form table and the shape summary."""
    unit = report["value_unit"]
    head = {"energy": f"energy ({unit})", "distance": "dist. (rel.)", "rate": "rate (rel.)"}[
        report["kind"]
    ]
    click.echo(crystal_line)
    click.echo(
        f"\n{'form':<12}{'name':<28}{'faces':>6}{head:>16}{'distance (h0)':>15}"
        f"{'area (%)':>10}  present"
    )
    for f in report["forms"]:
        click.echo(
            f"{f['form']:<12}{f['name'][:27]:<28}{f['multiplicity']:>6}{f['value']:>16.4f}"
            f"{f['central_distance_h0']:>15.4f}{f['area_percent']:>10.2f}  "
            f"{'yes' if f['present'] else 'no'}"
        )
    click.echo(
        f"\nshape: {report['shape_name']}; {report['n_faces']} faces, {report['n_edges']} edges, "
        f"{report['n_vertices']} vertices"
    )
    click.echo(
        f"volume {report['volume_h0_3']:.4f} h0³, surface area {report['surface_area_h0_2']:.4f} "
        "h0² (h0 = the smallest central distance)"
    )
    if report["mean_energy_J_m2"] is not None:
        click.echo(f"area-weighted mean surface energy {report['mean_energy_J_m2']:.4f} J/m²")
    sym = report["symmetry"]
    verdict = "contains" if sym["contains_crystal_class"] else "does NOT contain"
    click.echo(
        f"symmetry of the shape: {sym['point_group']} (order {sym['order']}); it {verdict} "
        f"the crystal class {sym['crystal_class']}"
    )


@click.command("wulff", context_settings={"ignore_unknown_options": False})
@click.argument("args", nargs=-1, metavar="CRYSTAL")
@crystal_options
@click.option(
    "--form",
    "form_texts",
    multiple=True,
    metavar="HKL=VALUE",
    help="A form and its value, e.g. --form 111=1.0 --form 100=1.15 (replaces the "
    "crystal file's forms).",
)
@kind_options
@click.option("--plot", "plot_path", metavar="FILE", help="Draw the shape (.png or .svg).")
@click.option(
    "--view", metavar="AZIM,ELEV", help="View direction in degrees (default clinographic)."
)
@click.option("--export", "export_path", metavar="FILE", help="Write the solid (.stl, .obj).")
@substrate_options
@json_option
def command(
    args: tuple[str, ...],
    cell: str | None,
    crystal_class: str | None,
    space_group: str | None,
    form_texts: tuple[str, ...],
    kind: str | None,
    plot_path: str | None,
    view: str | None,
    export_path: str | None,
    substrate: str | None,
    adhesion: float | None,
    interface_energy: float | None,
    substrate_energy: float | None,
    json_path: str | None,
) -> None:
    """Build the Wulff shape of CRYSTAL and print its form table.

    The numbers are surface energies (J/m², the equilibrium shape) unless --distances
    (a habit drawing from central distances) or --rates (the kinetic shape) is given, or
    the crystal file says otherwise. Lengths are given in units of the smallest
    central distance, h0.
    """
    from habit.cli._common import crystal_header, crystal_json, resolve_crystal, write_json
    from habit.errors import InputError
    from habit.wulff import wulff_shape

    crystal, rest = resolve_crystal(args, cell, crystal_class, space_group)
    if rest:
        raise InputError(f"unexpected argument {rest[0]!r}; give forms as --form HKL=VALUE.")
    forms = parse_form_options(crystal, form_texts) if form_texts else None
    outputs = [p for p in (plot_path, export_path) if p]
    _check_outputs(plot_path, export_path)
    shape = wulff_shape(crystal, forms, kind=kind)
    report = shape_report(shape)
    report["crystal"] = crystal_json(crystal)
    from habit.cli import _substrate as sub

    extra = (adhesion, interface_energy, substrate_energy)
    particle = sub.supported_particle(shape, substrate, *extra)
    if particle is not None:
        h0 = min(f.distance for f in shape.forms)
        report["substrate"] = sub.substrate_report(particle, h0)
        if particle.polyhedron is None and outputs:
            raise InputError("a film has no particle shape to draw or export.")
        shape = particle  # draw and export the supported particle
    if json_path != "-":
        print_report(report, crystal_header(crystal))
        if particle is not None:
            sub.print_substrate(report["substrate"])
    if plot_path:
        draw_shape(shape, plot_path, _parse_view(view))
    if export_path:
        write_solid(shape.polyhedron, export_path)
    if json_path is not None:
        write_json(report, json_path)
    if json_path != "-":
        for p in outputs:
            click.echo(f"wrote {p}")


def draw_shape(shape: Any, path: str, view: tuple[float, float] | None = None) -> None:
    """Draw a Wulff shape to PNG/SVG, titled with the crystal and the shape's name."""
    from habit.plot import save_figure
    from habit.plot.shape import plot_polyhedron

    azim, elev = view if view is not None else (None, None)
    art = plot_polyhedron(
        shape.polyhedron, azimuth_deg=azim, elevation_deg=elev, label_min_fraction=0.12
    )
    ax = art.faces.axes
    ax.set_title(f"{shape.crystal.name}\n{shape.shape_name()}", fontsize=9)
    save_figure(ax.figure, path)


def _parse_view(view: str | None) -> tuple[float, float] | None:
    from habit.errors import InputError

    if view is None:
        return None
    try:
        azim, elev = (float(x) for x in view.split(","))
    except ValueError:
        raise InputError(f"--view takes AZIM,ELEV in degrees, e.g. 30,20; got {view!r}.") from None
    return (azim, elev)
