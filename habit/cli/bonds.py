"""``habit bonds``: broken-bond surface energies of a structure and their Wulff shape."""

from __future__ import annotations

from typing import Any

import click

from habit.cli._common import json_option


def _pair_values(texts: tuple[str, ...], option: str, unit: str) -> dict[str, float]:
    from habit.bonds import parse_pair
    from habit.cli._common import parse_assignments

    pairs = parse_assignments(
        texts, option, metavar=f"A-B=VALUE ({unit})", example=f"{option} Ca-F=2.6"
    )
    return {"-".join(parse_pair(key)): value for key, value in pairs}


def bonds_report(result: Any) -> dict[str, Any]:
    """Build the stable JSON record of broken-bond energies."""
    bonds = result.bonds
    return {
        "bond_rule": bonds.rule,
        "energy_unit": result.energy_unit,
        "bond_energy_unit": bonds.energy_unit,
        "bonds": [
            {
                "pair": f"{a}-{b}",
                "bonds_per_cell": n,
                "shortest_A": lo,
                "longest_A": hi,
            }
            for (a, b), (n, lo, hi) in bonds.pair_table().items()
        ],
        "max_index": result.max_index,
        "forms": [
            {
                "form": t.label,
                "hkl": list(t.hkl),
                "energy": t.energy,
                "cut_height_A": t.cut_height,
                "d_hkl_A": t.d_spacing,
                "broken_bonds_per_nm2": 100.0 * t.broken_bonds_per_area,
                "layer_above": t.layer_above,
                "layer_below": t.layer_below,
                "cuts_tried": t.n_cuts,
            }
            for t in result.terminations
        ],
    }


@click.command("bonds")
@click.argument("crystal")
@click.option(
    "--cutoff", type=float, metavar="Å", help="Bond every pair of atoms closer than this."
)
@click.option(
    "--shells",
    type=int,
    metavar="N",
    help="Bond each atom to its first N neighbour shells (default 1).",
)
@click.option(
    "--pair-cutoff",
    "pair_cutoffs",
    multiple=True,
    metavar="A-B=Å",
    help="Bond element pair A-B up to this length; repeat for more pairs.",
)
@click.option(
    "--bond-energy",
    "bond_energies",
    multiple=True,
    metavar="A-B=eV",
    help="Bond energy of pair A-B in eV (then energies are in J/m²; default: every bond 1, "
    "relative energies).",
)
@click.option(
    "--max-index",
    type=click.IntRange(1, 6),
    default=2,
    show_default=True,
    help="Every form with a face whose indices are all within ±N.",
)
@click.option("--wulff", "with_wulff", is_flag=True, help="Also build the Wulff shape.")
@click.option("--plot", "plot_path", metavar="FILE", help="Draw the Wulff shape (.png, .svg).")
@json_option
def command(
    crystal: str,
    cutoff: float | None,
    shells: int | None,
    pair_cutoffs: tuple[str, ...],
    bond_energies: tuple[str, ...],
    max_index: int,
    with_wulff: bool,
    plot_path: str | None,
    json_path: str | None,
) -> None:
    """Broken-bond surface energies of CRYSTAL (a CIF, or a bundled structure).

    For every form up to --max-index, the cut parallel to (hkl) that breaks the least
    bond energy per unit area is found by trying every distinct cut position; its energy
    per area, shared by the two surfaces the cut makes, is the form's surface energy.
    """
    import contextlib
    import sys

    from habit.bonds import broken_bond_energies, find_bonds
    from habit.cli._common import (
        check_outputs,
        crystal_header,
        crystal_json,
        progress_bar,
        write_json,
    )
    from habit.crystal import load_crystal
    from habit.morphology import form_representatives

    check_outputs(plot_path, None)
    xtal = load_crystal(crystal)
    pairs = _pair_values(pair_cutoffs, "--pair-cutoff", "Å") if pair_cutoffs else None
    energies = _pair_values(bond_energies, "--bond-energy", "eV") if bond_energies else None
    bonds = find_bonds(
        xtal, cutoff=cutoff, shells=shells, pair_cutoffs=pairs, bond_energies=energies
    )
    n_forms = len(form_representatives(xtal, max_index))
    bar = progress_bar(n_forms, "surfaces") if sys.stderr.isatty() else contextlib.nullcontext(None)
    with bar as update:
        result = broken_bond_energies(xtal, max_index, bonds=bonds, progress=update)
    report = {"crystal": crystal_json(xtal), **bonds_report(result)}
    shape = None
    if with_wulff or plot_path:
        shape = result.wulff()
        report["wulff"] = _wulff_summary(shape)
    if json_path != "-":
        _print(report, crystal_header(xtal))
    if plot_path and shape is not None:
        from habit.cli.bfdh import draw_and_export

        draw_and_export(shape.polyhedron, f"{xtal.name} (broken bonds)", plot_path, None)
    if json_path is not None:
        write_json(report, json_path)
    if json_path != "-" and plot_path:
        click.echo(f"wrote {plot_path}")


def _wulff_summary(shape: Any) -> dict[str, Any]:
    poly = shape.polyhedron
    try:
        name = shape.shape_name()
    except ImportError:  # shape naming not in this build
        name = None
    return {
        "forms": [
            {"form": f.label, "area_percent": 100.0 * f.area_fraction, "present": f.present}
            for f in shape.forms
        ],
        "shape_name": name,
        "n_faces": int(poly.n_faces),
        "n_edges": int(poly.n_edges),
        "n_vertices": int(poly.n_vertices),
    }


def _print(report: dict[str, Any], header: str) -> None:
    unit = report["energy_unit"]
    click.echo(header)
    click.echo(f"bonds: {report['bond_rule']}; bond energies {report['bond_energy_unit']}")
    for b in report["bonds"]:
        click.echo(
            f"  {b['pair']:<8}{b['bonds_per_cell']:>5} per cell, "
            f"{b['shortest_A']:.3f}–{b['longest_A']:.3f} Å"
        )
    head = "γ (J/m²)" if unit == "J/m²" else "γ (relative)"
    click.echo(
        f"\n{'form':<12}{head:>14}{'cut (Å)':>9}{'d (Å)':>9}{'bonds/nm²':>11}  "
        f"{'layer above':<14}{'layer below':<14}{'cuts':>5}"
    )
    for f in report["forms"]:
        click.echo(
            f"{f['form']:<12}{f['energy']:>14.5g}{f['cut_height_A']:>9.3f}{f['d_hkl_A']:>9.4f}"
            f"{f['broken_bonds_per_nm2']:>11.3f}  {f['layer_above'][:13]:<14}"
            f"{f['layer_below'][:13]:<14}{f['cuts_tried']:>5}"
        )
    if unit == "relative":
        click.echo("(relative: every bond counts 1; γ in bonds per Å², halved for two surfaces)")
    wulff = report.get("wulff")
    if wulff:
        named = f"{wulff['shape_name']}; " if wulff["shape_name"] else ""
        click.echo(
            f"\nWulff shape: {named}{wulff['n_faces']} faces, {wulff['n_edges']} edges, "
            f"{wulff['n_vertices']} vertices"
        )
        for f in wulff["forms"]:
            if f["present"]:
                click.echo(f"  {f['form']:<12}{f['area_percent']:>8.2f} % of the area")
