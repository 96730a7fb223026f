"""``habit orient``: where the crystal axes point in the lab frame, from measured faces."""

from __future__ import annotations

from typing import Any

import click

from habit.cli._common import crystal_options, json_option


def _vector(text: str) -> tuple[float, float, float]:
    from habit.errors import InputError

    parts = [p for p in text.replace(";", ",").split(",") if p.strip()]
    try:
        values = tuple(float(p) for p in parts)
    except ValueError:
        raise InputError(f"--direction takes three numbers X,Y,Z; got {text!r}.") from None
    if len(values) != 3 or all(v == 0 for v in values):
        raise InputError(f"--direction takes three numbers X,Y,Z, not all zero; got {text!r}.")
    return values[0], values[1], values[2]


def _nearest(orientation: Any, lab: Any, kind: str, max_index: int = 3) -> tuple[Any, float]:
    """Simplest low-index [uvw] (or (hkl)) closest to a lab direction, and the angle."""
    import numpy as np

    from habit.indexing import candidate_indices

    cand = candidate_indices(max_index)
    vec = orientation.directions_lab(cand) if kind == "uvw" else orientation.normals_lab(cand)
    ang = np.arccos(np.clip(vec @ lab, -1.0, 1.0))
    k = int(np.argmin(ang + 1e-9 * np.abs(cand).sum(axis=1)))
    return cand[k], float(ang[k])


@click.command("orient", context_settings={"ignore_unknown_options": True})
@click.argument("args", nargs=-1, metavar="CRYSTAL MEASUREMENTS")
@crystal_options
@click.option("--direction", "directions", multiple=True, metavar="X,Y,Z",
              help="A lab-frame direction (e.g. the dop axis) to relate to the crystal; "
                   "repeat for several.")
@click.option("--uvw", "uvws", multiple=True, metavar="UVW",
              help="Also give the angle from each --direction to the crystal direction "
                   "[uvw] (e.g. 001 or 2-1-10); repeat for several.")
@click.option("--hkl", "hkls", multiple=True, metavar="HKL",
              help="Also give the angle from each --direction to the normal of (hkl); "
                   "repeat for several.")
@click.option("--refine", is_flag=True, help="Refine the cell shape with the orientation.")
@click.option("--max-index", "max_index", type=click.IntRange(1, 8), default=3,
              show_default=True, help="Largest absolute Miller index tried when indexing.")
@click.option("--tolerance", "tolerance_deg", type=click.FloatRange(0.01, 15.0), default=1.0,
              show_default=True, help="Indexing tolerance in degrees.")
@json_option
def command(
    args: tuple[str, ...],
    cell: str | None,
    crystal_class: str | None,
    space_group: str | None,
    directions: tuple[str, ...],
    uvws: tuple[str, ...],
    hkls: tuple[str, ...],
    refine: bool,
    max_index: int,
    tolerance_deg: float,
    json_path: str | None,
) -> None:
    """Orientation of CRYSTAL from the faces in MEASUREMENTS (normals or φ, ρ readings).

    Prints the lab-frame directions of the axes a, b, c (and of the optic axis of a
    uniaxial crystal), and for each --direction its angles to the axes and the
    nearest simple zone axis [uvw] and face normal (hkl).
    """
    import math

    import numpy as np

    from habit.cli._common import crystal_header, crystal_json, resolve_crystal, write_json
    from habit.cli.index import face_text
    from habit.errors import InputError
    from habit.indexing import index_faces, refine_cell
    from habit.measurements import read_measurements
    from habit.miller import format_uvw, parse_uvw

    crystal, rest = resolve_crystal(args, cell, crystal_class, space_group)
    if len(rest) != 1:
        raise InputError("give one MEASUREMENTS file after the crystal.")
    meas = read_measurements(rest[0])
    if meas.kind == "interfacial-angles":
        raise InputError("an interfacial-angle table fixes no orientation; give two-circle "
                         "readings or lab-frame normals.")
    lab_dirs = [np.array(_vector(d)) / np.linalg.norm(_vector(d)) for d in directions]
    if (uvws or hkls) and not lab_dirs:
        raise InputError("--uvw and --hkl give angles to a --direction; add --direction X,Y,Z.")
    wanted_uvw = [parse_uvw(u) for u in uvws]
    wanted_hkl = [crystal.parse_face(h) for h in hkls]
    result = index_faces(crystal, meas, max_index=max_index, tolerance=math.radians(tolerance_deg))
    orientation = result.orientation
    if refine:
        orientation = refine_cell(crystal, meas, result).orientation
    assert orientation is not None
    axes = orientation.axes_lab()
    from habit.indexing import _as_model, _uses_hex_axes

    hexa = _uses_hex_axes(_as_model(crystal))
    out: dict[str, Any] = {
        "crystal": crystal_json(crystal),
        "measurements": {"file": meas.source, "kind": meas.kind},
        "indexed": result.n_indexed,
        "flagged": list(result.flagged),
        "rms_deg": math.degrees(result.rms),
        "orientation_matrix": orientation.matrix,
        "axes_lab": {"a": axes[0], "b": axes[1], "c": axes[2]},
        "optic_axis_lab": axes[2] if orientation.is_uniaxial else None,
        "directions": [],
    }
    for d in lab_dirs:
        uvw, ang_uvw = _nearest(orientation, d, "uvw")
        hkl, ang_hkl = _nearest(orientation, d, "hkl")
        out["directions"].append({
            "lab": d,
            "angle_to_a_deg": math.degrees(float(np.arccos(np.clip(axes[0] @ d, -1, 1)))),
            "angle_to_b_deg": math.degrees(float(np.arccos(np.clip(axes[1] @ d, -1, 1)))),
            "angle_to_c_deg": math.degrees(float(np.arccos(np.clip(axes[2] @ d, -1, 1)))),
            "crystal_components_uvw": orientation.to_crystal(d),
            "nearest_uvw": [int(v) for v in uvw],
            "angle_to_nearest_uvw_deg": math.degrees(ang_uvw),
            "nearest_face": face_text(crystal, hkl),
            "angle_to_nearest_face_normal_deg": math.degrees(ang_hkl),
            "angles_to_uvw_deg": {
                format_uvw(u, hexagonal=hexa): math.degrees(float(
                    orientation.angle_to_direction(d, u)))
                for u in wanted_uvw},
            "angles_to_face_normals_deg": {
                face_text(crystal, h): math.degrees(float(orientation.angle_to_normal(d, h)))
                for h in wanted_hkl},
        })
    if json_path != "-":
        click.echo(crystal_header(crystal))
        click.echo(f"{result.n_indexed} of {meas.n_faces} faces indexed, RMS "
                   f"{math.degrees(result.rms):.3f}°"
                   + (f"; flagged: {', '.join(result.flagged)}" if result.flagged else ""))
        click.echo("\naxis   lab x      lab y      lab z")
        for name, v in zip("abc", axes, strict=True):
            click.echo(f"{name:<6}{v[0]:>9.5f}  {v[1]:>9.5f}  {v[2]:>9.5f}")
        if orientation.is_uniaxial:
            click.echo("optic axis (uniaxial crystal) = c")
        for row in out["directions"]:
            lab = ", ".join(f"{x:.4f}" for x in row["lab"])
            click.echo(f"\ndirection ({lab}): angle to a {row['angle_to_a_deg']:.2f}°, "
                       f"b {row['angle_to_b_deg']:.2f}°, c {row['angle_to_c_deg']:.2f}°")
            click.echo(f"  nearest zone axis {format_uvw(row['nearest_uvw'], hexagonal=hexa)}"
                       f" at {row['angle_to_nearest_uvw_deg']:.2f}°; nearest face normal "
                       f"{row['nearest_face']} at {row['angle_to_nearest_face_normal_deg']:.2f}°")
            for name, ang in {**row["angles_to_uvw_deg"],
                              **row["angles_to_face_normals_deg"]}.items():
                click.echo(f"  angle to {name}: {ang:.2f}°")
    if json_path is not None:
        write_json(out, json_path)
