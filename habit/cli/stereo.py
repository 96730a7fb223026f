"""``habit stereo``: a stereogram of a crystal's faces, optionally with measured poles."""

from __future__ import annotations

from typing import Any

import click

from habit.cli._common import crystal_options, json_option


@click.command("stereo", context_settings={"ignore_unknown_options": True})
@click.argument("args", nargs=-1, metavar="CRYSTAL [HKL ...]")
@crystal_options
@click.option("--measured", "measured", default=None, metavar="FILE",
              help="Measured faces (.csv/.toml, normals or φ, ρ readings): index them and "
                   "draw measured and calculated poles side by side.")
@click.option("--net", type=click.Choice(["wulff", "equal-area"]), default="wulff",
              show_default=True, help="Stereographic (Wulff) or equal-area (Schmidt) net.")
@click.option("--zone", "zones", multiple=True, metavar="UVW",
              help="Draw the zone circle of the zone axis [uvw]; repeat for several.")
@click.option("--no-net", "no_net", is_flag=True, help="Draw only the primitive circle.")
@click.option("--max-index", "max_index", type=click.IntRange(1, 8), default=3,
              show_default=True, help="Largest index when indexing --measured.")
@click.option("--tolerance", "tolerance_deg", type=click.FloatRange(0.01, 15.0), default=1.0,
              show_default=True, help="Indexing tolerance for --measured, degrees.")
@click.option("--plot", "plot_path", required=True, metavar="FILE",
              help="Write the stereogram to FILE (.png or .svg).")
@json_option
def command(
    args: tuple[str, ...],
    cell: str | None,
    crystal_class: str | None,
    space_group: str | None,
    measured: str | None,
    net: str,
    zones: tuple[str, ...],
    no_net: bool,
    max_index: int,
    tolerance_deg: float,
    plot_path: str,
    json_path: str | None,
) -> None:
    """Draw the poles of the forms HKL of CRYSTAL on the upper hemisphere (c at the centre).

    Each HKL is expanded to its whole form. Without HKL the forms of a crystal file are
    drawn, or else {100}, {010}, {001}, {110}, {101}, {011} and {111}. The pole of (010)
    is at the right, φ runs clockwise; lower-hemisphere poles are open symbols.
    """
    import math
    from pathlib import Path

    import numpy as np

    from habit.cli._common import (
        crystal_header,
        crystal_json,
        parse_faces,
        resolve_crystal,
        write_json,
    )
    from habit.errors import InputError
    from habit.miller import parse_uvw
    from habit.stereo import project, vectors_to_phi_rho

    suffix = Path(plot_path).suffix.lower()
    if suffix not in (".png", ".svg", ".pdf"):
        raise InputError(f"--plot must end in .png, .svg or .pdf; got {plot_path!r}.")
    crystal, rest = resolve_crystal(args, cell, crystal_class, space_group)
    if rest:
        forms = parse_faces(crystal, rest)
    elif getattr(crystal, "forms", None) is not None:
        forms = [(int(h[0]), int(h[1]), int(h[2])) for h in crystal.forms.hkl]
    else:
        forms = [(1, 0, 0), (0, 1, 0), (0, 0, 1), (1, 1, 0), (1, 0, 1), (0, 1, 1), (1, 1, 1)]
    seen: set[tuple[int, ...]] = set()
    faces: list[tuple[int, ...]] = []
    for form in forms:
        for f in np.asarray(crystal.expand_form(form)).tolist():
            if tuple(f) not in seen:
                seen.add(tuple(f))
                faces.append(tuple(f))
    hkl = np.array(faces, dtype=int)
    poles = np.asarray(crystal.normals(hkl), dtype=float)
    labels = [crystal.format_face(h) for h in hkl]
    zone_axes = None
    if zones:
        uvw = np.array([parse_uvw(z) for z in zones], dtype=float)
        vec = np.asarray(crystal.directions(uvw), dtype=float)
        zone_axes = vec / np.linalg.norm(vec, axis=1, keepdims=True)
    meas_c = None
    meas_labels = None
    result = None
    if measured is not None:
        from habit.indexing import index_faces
        from habit.measurements import read_measurements

        meas = read_measurements(measured)
        if meas.normals is None:
            raise InputError("--measured needs normals or φ, ρ readings, not an angle table.")
        result = index_faces(crystal, meas, max_index=max_index,
                             tolerance=math.radians(tolerance_deg))
        assert result.orientation is not None
        meas_c = np.asarray(meas.normals) @ result.orientation.matrix  # into the crystal frame
        meas_labels = list(meas.labels)
        extra = [tuple(h) for h, ok in zip(result.hkl.tolist(), result.indexed, strict=True)
                 if ok and tuple(h) not in seen]
        if extra:
            hkl = np.vstack([hkl, np.array(extra)])
            poles = np.asarray(crystal.normals(hkl), dtype=float)
            labels += [crystal.format_face(h) for h in extra]

    from habit.plot import save_figure
    from habit.plot.stereo import plot_stereogram

    title = f"{crystal.name or 'crystal'} — " + (
        "Wulff net (equal-angle)" if net == "wulff" else "Schmidt net (equal-area)")
    artists = plot_stereogram(poles, labels, None, net=net, draw_net=not no_net,
                              zones=zone_axes, measured=meas_c, measured_labels=meas_labels,
                              title=title)
    save_figure(artists[0].axes.figure, plot_path)

    pts, upper = project(poles, net)
    phi, rho = vectors_to_phi_rho(poles)
    rows = [{"face": lab, "hkl": [int(v) for v in h], "phi_deg": math.degrees(float(p)),
             "rho_deg": math.degrees(float(r)), "upper_hemisphere": bool(u),
             "radius": float(np.hypot(*xy))}
            for lab, h, p, r, u, xy in zip(labels, hkl, phi, rho, upper, pts, strict=True)]
    out: dict[str, Any] = {"crystal": crystal_json(crystal), "net": net, "plot": plot_path,
                           "radius_unit": "primitive circle = 1", "poles": rows}
    if result is not None and meas_c is not None:
        mphi, mrho = vectors_to_phi_rho(meas_c)
        out["measured"] = [
            {"label": lab, "face": crystal.format_face(h) if ok else None,
             "phi_deg": math.degrees(float(p)), "rho_deg": math.degrees(float(r)),
             "residual_deg": math.degrees(float(res))}
            for lab, h, ok, p, r, res in zip(result.labels, result.hkl, result.indexed, mphi,
                                             mrho, result.residuals, strict=True)]
    if json_path != "-":
        click.echo(crystal_header(crystal))
        click.echo(f"{len(rows)} poles drawn on the {net} net"
                   + (f", {len(meas_labels or [])} measured" if meas_c is not None else "")
                   + f"; written to {plot_path}")
    if json_path is not None:
        write_json(out, json_path)
