"""``habit angles``: interfacial angles between faces."""

from __future__ import annotations

import click

from habit.cli._common import crystal_options, json_option


@click.command("angles", context_settings={"ignore_unknown_options": True})
@click.argument("args", nargs=-1, metavar="CRYSTAL HKL HKL [HKL ...]")
@crystal_options
@json_option
def command(
    args: tuple[str, ...],
    cell: str | None,
    crystal_class: str | None,
    space_group: str | None,
    json_path: str | None,
) -> None:
    """Print the interfacial angle of every pair of the given faces of CRYSTAL.

    The interfacial angle is the angle between the face normals, as goniometers
    report it (the interior dihedral angle is 180° minus it). Angles are given in
    degrees and in degrees and minutes.
    """
    import itertools

    import numpy as np

    from habit.cli._common import (
        crystal_header,
        crystal_json,
        deg_min,
        parse_faces,
        resolve_crystal,
        write_json,
    )
    from habit.errors import InputError

    crystal, rest = resolve_crystal(args, cell, crystal_class, space_group)
    if len(rest) < 2:
        raise InputError("give at least two faces, e.g. 100 111.")
    faces = parse_faces(crystal, rest)
    pairs = list(itertools.combinations(range(len(faces)), 2))
    first = np.array([faces[i] for i, _ in pairs])
    second = np.array([faces[j] for _, j in pairs])
    angles = np.degrees(crystal.interfacial_angle(first, second))
    rows = []
    for (i, j), angle in zip(pairs, angles, strict=True):
        rows.append(
            {
                "face1": crystal.format_face(faces[i]),
                "face2": crystal.format_face(faces[j]),
                "hkl1": list(faces[i]),
                "hkl2": list(faces[j]),
                "angle_deg": float(angle),
                "angle_deg_min": deg_min(float(angle)),
                "dihedral_deg": float(180.0 - angle),
            }
        )
    if json_path != "-":
        click.echo(crystal_header(crystal))
        w = max(len(r["face1"]) for r in rows) + 2
        click.echo(f"\n{'face':<{w}}{'face':<{w}}{'angle (°)':>12}  {'angle (° ′)':>12}")
        for r in rows:
            click.echo(
                f"{r['face1']:<{w}}{r['face2']:<{w}}{r['angle_deg']:>12.4f}  "
                f"{r['angle_deg_min']:>12}"
            )
    if json_path is not None:
        write_json({"crystal": crystal_json(crystal), "angles": rows}, json_path)
