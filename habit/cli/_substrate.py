"""Options and report for a particle on a substrate (``habit wulff --substrate HKL``)."""

from __future__ import annotations

import math
from collections.abc import Callable
from typing import Any

import click

__all__ = ["substrate_options", "supported_particle", "substrate_report", "print_substrate"]


def substrate_options(func: Callable[..., Any]) -> Callable[..., Any]:
    """Add ``--substrate``, ``--adhesion``, ``--interface-energy`` and ``--substrate-energy``."""
    func = click.option(
        "--substrate-energy",
        type=float,
        metavar="J/M2",
        help="Surface energy of the bare substrate, J/m² (with --interface-energy).",
    )(func)
    func = click.option(
        "--interface-energy",
        type=float,
        metavar="J/M2",
        help="Energy of the particle–substrate interface, J/m² (with --substrate-energy).",
    )(func)
    func = click.option(
        "--adhesion",
        type=float,
        metavar="J/M2",
        help="Adhesion energy β between the particle's HKL face and the substrate, J/m²; "
        "0 = the free shape on its facet, 2γ(HKL) = spread into a film.",
    )(func)
    func = click.option(
        "--substrate",
        metavar="HKL",
        help="Put the particle on a substrate on its face HKL (Winterbottom construction; "
        "needs surface energies).",
    )(func)
    return func


def supported_particle(
    shape: Any,
    substrate: str | None,
    adhesion: float | None,
    interface_energy: float | None,
    substrate_energy: float | None,
) -> Any:
    """Run the Winterbottom construction when --substrate is given; else None."""
    from habit.errors import InputError
    from habit.substrate import winterbottom_shape

    if substrate is None:
        if adhesion is not None or interface_energy is not None or substrate_energy is not None:
            raise InputError("--adhesion and the interface energies need --substrate HKL.")
        return None
    return winterbottom_shape(
        shape,
        shape.crystal.parse_face(substrate),
        adhesion=adhesion,
        interface_energy=interface_energy,
        substrate_energy=substrate_energy,
    )


def substrate_report(particle: Any, h0: float) -> dict[str, Any]:
    """Build the stable JSON record of a supported particle; lengths in h0."""

    def rel(x: float, power: int = 1) -> float | None:
        return None if not math.isfinite(x) else x / h0**power

    return {
        "substrate_face": particle.substrate_label,
        "regime": particle.regime,
        "facet_energy_J_m2": particle.facet_energy,
        "adhesion_J_m2": particle.adhesion,
        "wetting_adhesion_J_m2": particle.wetting_adhesion,
        "length_unit": "h0 (the smallest central distance of the free shape)",
        "interface_height_h0": rel(particle.h_interface),
        "facet_height_free_h0": rel(particle.h_free),
        "contact_area_h0_2": rel(particle.contact_area, 2),
        "height_h0": rel(particle.height),
        "width_h0": rel(particle.width),
        "aspect_ratio": particle.aspect_ratio,
        "volume_h0_3": rel(particle.volume, 3),
        "forms": [
            {
                "form": f.label,
                "energy_J_m2": f.energy,
                "area_percent": None
                if not math.isfinite(f.area_fraction)
                else 100.0 * f.area_fraction,
                "present": f.present,
            }
            for f in particle.forms
        ],
    }


def print_substrate(report: dict[str, Any]) -> None:
    """Print the supported particle's summary."""
    click.echo(
        f"\non a substrate, face {report['substrate_face']}: adhesion β = "
        f"{report['adhesion_J_m2']:.4g} J/m² (film at β = {report['wetting_adhesion_J_m2']:.4g} "
        f"J/m²); regime: {report['regime']}"
    )
    if report["regime"] == "film":
        click.echo("the particle spreads into a film: no particle shape.")
        return
    click.echo(
        f"interface plane at {report['interface_height_h0']:.4f} h0 from the Wulff point "
        f"(free facet at {report['facet_height_free_h0']:.4f} h0)"
    )
    click.echo(
        f"contact area {report['contact_area_h0_2']:.4f} h0², height {report['height_h0']:.4f} h0,"
        f" width {report['width_h0']:.4f} h0, height/width {report['aspect_ratio']:.4f}, "
        f"volume {report['volume_h0_3']:.4f} h0³"
    )
    click.echo(f"{'face':<12}{'energy (J/m²)':>15}{'area (%)':>10}")
    for f in report["forms"]:
        if f["present"]:
            click.echo(f"{f['form']:<12}{f['energy_J_m2']:>15.4g}{f['area_percent']:>10.2f}")
