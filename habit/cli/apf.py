"""``habit apf``: atomic packing fraction of a crystal structure."""

from __future__ import annotations

from typing import Any

import click

from habit.cli._common import json_option


@click.command("apf")
@click.argument("crystal")
@click.option(
    "--radii",
    "radius_source",
    default="contact",
    show_default=True,
    help="Radius source: contact, metallic, atomic, covalent, ionic (Shannon 1976), crystal.",
)
@click.option("--radius", "radius", multiple=True, metavar="EL=Å", help="Your own radius, Å.")
@click.option(
    "--coordination",
    multiple=True,
    metavar="ION=CN",
    help="Coordination number for Shannon radii, e.g. Ca2+=8 (default: counted).",
)
@click.option("--plot", "plot_path", metavar="FILE", help="Bar chart of site shares (PNG/SVG).")
@json_option
def command(
    crystal: str,
    radius_source: str,
    radius: tuple[str, ...],
    coordination: tuple[str, ...],
    plot_path: str | None,
    json_path: str | None,
) -> None:
    """Atomic packing fraction of CRYSTAL (a CIF, crystal TOML with a CIF, or bundled name).

    Sums one sphere per atom over the cell volume. Overlapping spheres are counted in
    full and listed, so the number can be judged.
    """
    from habit.apf import atomic_packing_fraction
    from habit.cli._common import crystal_json, parse_assignments, write_json
    from habit.crystal import load_crystal
    from habit.errors import InputError

    xtal = load_crystal(crystal)
    if xtal.structure is None:
        raise InputError(f"{crystal} has no atom positions; give a CIF.")
    radii: dict[str, float] | str = radius_source
    if radius:
        radii = dict(
            parse_assignments(radius, "--radius", metavar="SYMBOL=VALUE (Å)", example="Cu=1.28")
        )
    cn = None
    if coordination:
        cn = dict(
            parse_assignments(
                coordination, "--coordination", metavar="ION=CN", example="Ca2+=8", cast=int
            )
        )
    result = atomic_packing_fraction(xtal.structure, radii=radii, coordination=cn)
    sites: list[dict[str, Any]] = [
        {
            "site": i,
            "species": label,
            "radius_A": float(r),
            "coordination": int(c),
            "fraction": float(f),
        }
        for i, (label, r, c, f) in enumerate(
            zip(
                result.site_labels,
                result.radii,
                result.coordination,
                result.site_fractions,
                strict=True,
            )
        )
    ]
    overlaps = [
        {"site1": o.site1, "site2": o.site2, "distance_A": o.distance, "radius_sum_A": o.radius_sum}
        for o in result.overlaps
    ]
    if json_path != "-":
        click.echo(
            f"{xtal.name}: atomic packing fraction {result.fraction:.4f} "
            f"({result.fraction * 100:.2f} % of the cell), {result.radius_source} radii, "
            f"cell volume {result.cell_volume:.3f} Å³"
        )
        click.echo(
            f"\n{'site':>4}  {'species':<8}{'radius (Å)':>11}{'CN':>4}{'share of cell (%)':>19}"
        )
        for s in sites:
            click.echo(
                f"{s['site']:>4}  {s['species']:<8}{s['radius_A']:>11.4f}{s['coordination']:>4}"
                f"{s['fraction'] * 100:>19.3f}"
            )
        if overlaps:
            worst = max(o["radius_sum_A"] - o["distance_A"] for o in overlaps)
            click.echo(
                f"\nwarning: {len(overlaps)} pairs of spheres overlap (by up to {worst:.3f} Å); "
                "their common volume is counted twice."
            )
    if plot_path:
        from habit.plot import save_figure
        from habit.plot.apf import plot_packing_fraction

        artists = plot_packing_fraction(result)
        save_figure(artists[0].figure, plot_path)
        if json_path != "-":
            click.echo(f"wrote {plot_path}")
    if json_path is not None:
        write_json(
            {
                "crystal": crystal_json(xtal),
                "packing_fraction": result.fraction,
                "radius_source": result.radius_source,
                "cell_volume_A3": result.cell_volume,
                "sites": sites,
                "overlaps": overlaps,
            },
            json_path,
        )
