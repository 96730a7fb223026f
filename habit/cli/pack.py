"""``habit pack``: the densest lattice (or double-lattice) packing of a convex shape."""

from __future__ import annotations

import click

from habit.cli._common import json_option


@click.command("pack")
@click.argument("shape")
@click.option("--double", is_flag=True, help="Also search double lattices (K and -K).")
@click.option(
    "--starts",
    type=click.IntRange(1, 10_000),
    default=30,
    show_default=True,
    help="Random starts of the search (it goes on until the best is reached three times).",
)
@click.option("--seed", default=0, show_default=True, help="Seed of the random starts.")
@click.option("--plot", "plot_path", metavar="FILE", help="Particle with touching neighbours.")
@json_option
def command(
    shape: str, double: bool, starts: int, seed: int, plot_path: str | None, json_path: str | None
) -> None:
    """Densest packing of translates of SHAPE, with the lattice and its contacts.

    SHAPE is a reference solid's name, a polyhedron JSON written by habit, or a crystal
    whose Wulff shape is meant. The density is certified by the optimality conditions
    of Minkowski's critical-lattice problem (see docs/packing.md).
    """
    from habit.cli._common import progress_bar, write_json
    from habit.cli._shapes import describe, resolve_shape
    from habit.packing import densest_double_lattice_packing, densest_lattice_packing

    if plot_path:
        from habit.cli._common import check_outputs

        check_outputs(plot_path, None)
    poly, what = resolve_shape(shape)
    with progress_bar(starts, "lattice search") as update:
        result = densest_lattice_packing(poly, starts=starts, rng=seed, progress=update)
    data = {"shape": what, "polyhedron": describe(poly), "lattice": _record(result)}
    dbl = None
    if double:
        with progress_bar(starts, "double-lattice search") as update:
            dbl = densest_double_lattice_packing(poly, starts=starts, rng=seed, progress=update)
        data["double_lattice"] = _record(dbl) | {"shift_A": dbl.shift}
    if json_path != "-":
        click.echo(what)
        _print(result, "lattice packing")
        if dbl is not None:
            _print(dbl, "double-lattice packing")
    if plot_path:
        from habit.plot import save_figure
        from habit.plot.packing import plot_packing

        artists = plot_packing(result)
        fig = artists[0].axes.figure if isinstance(artists, list) else artists.figure
        save_figure(fig, plot_path)
        if json_path != "-":
            click.echo(f"wrote {plot_path}")
    if json_path is not None:
        write_json(data, json_path)


def _record(result: object) -> dict[str, object]:
    r = result  # LatticePacking or DoubleLatticePacking
    return {
        "density": r.density,  # type: ignore[attr-defined]
        "basis_A": r.basis,  # type: ignore[attr-defined]
        "cell_volume_A3": r.cell_volume,  # type: ignore[attr-defined]
        "particle_volume_A3": r.particle_volume,  # type: ignore[attr-defined]
        "contacts_A": r.contacts,  # type: ignore[attr-defined]
        "certified": bool(r.is_certified),  # type: ignore[attr-defined]
        "certificate": r.certificate.summary(),  # type: ignore[attr-defined]
    }


def _print(result: object, title: str) -> None:
    r = result
    click.echo(f"\n{title}: density {r.density:.12f} ({r.density * 100:.4f} % of space)")  # type: ignore[attr-defined]
    click.echo(
        f"particle volume {r.particle_volume:.6g} Å³ in a cell of {r.cell_volume:.6g} Å³"  # type: ignore[attr-defined]
    )
    click.echo("basis (rows, Å):")
    for row in r.basis:  # type: ignore[attr-defined]
        click.echo("  [" + "  ".join(f"{x:>10.5f}" for x in row) + " ]")
    click.echo(f"touching neighbours: {len(r.contacts)}")  # type: ignore[attr-defined]
    status = "certified" if r.is_certified else "NOT certified"  # type: ignore[attr-defined]
    click.echo(f"{status}: {r.certificate.summary()}")  # type: ignore[attr-defined]
