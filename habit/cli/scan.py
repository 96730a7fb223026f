"""``habit scan``: facets of a scanned crystal (STL, OBJ, PLY), their (hkl) and orientation."""

from __future__ import annotations

from typing import Any

import click

from habit.cli._common import crystal_options, json_option


@click.command("scan", context_settings={"ignore_unknown_options": True})
@click.argument("args", nargs=-1, metavar="CRYSTAL MESH")
@crystal_options
@click.option("--angle", "angle_deg", type=click.FloatRange(1.0, 30.0), default=10.0,
              show_default=True, help="Segmentation angle (degrees): a triangle joins a "
              "facet when its denoised normal lies this close to the facet's mean normal.")
@click.option("--min-area", "min_area", type=click.FloatRange(0.0, 0.5, max_open=True),
              default=0.005, show_default=True, help="Smallest facet kept, as a fraction of "
              "the mesh's total area; smaller regions (rounded edges, chips) are dropped.")
@click.option("--max-index", "max_index", type=click.IntRange(1, 8), default=3,
              show_default=True, help="Largest absolute Miller index tried.")
@click.option("--tolerance", "tolerance_deg", type=click.FloatRange(0.01, 15.0), default=2.0,
              show_default=True, help="Largest angle (degrees) between a fitted and a "
              "calculated normal for a facet to count as indexed.")
@click.option("--unit", default="mm", show_default=True, metavar="UNIT",
              help="The mesh's length unit (STL stores none), used in the table.")
@click.option("--plot", "plot_path", default=None, metavar="FILE",
              help="Draw the mesh coloured by facet, labelled with (hkl) (.png, .svg, .pdf).")
@json_option
def command(
    args: tuple[str, ...],
    cell: str | None,
    crystal_class: str | None,
    space_group: str | None,
    angle_deg: float,
    min_area: float,
    max_index: int,
    tolerance_deg: float,
    unit: str,
    plot_path: str | None,
    json_path: str | None,
) -> None:
    """Find the facets of the scanned crystal MESH and index them with the cell of CRYSTAL.

    MESH is a closed triangle surface (.stl, .obj or .ply) in the scanner's frame and
    length unit. Facets are found by region growing over triangles whose normals agree
    within --angle, planes are fitted to them, and all facets are indexed under one
    orientation; facets that fit nothing are flagged, not forced. See docs/scan.md.
    """
    import math
    from pathlib import Path

    from habit.cli._common import (
        crystal_header,
        crystal_json,
        progress_bar,
        resolve_crystal,
        write_json,
    )
    from habit.cli.index import face_text
    from habit.errors import FileFormatError, InputError
    from habit.indexing import index_faces
    from habit.scan import read_mesh, scan_facets, scan_to_measurements

    crystal, rest = resolve_crystal(args, cell, crystal_class, space_group)
    if len(rest) != 1:
        raise InputError("give one MESH file (.stl, .obj or .ply) after the crystal.")
    for target in (plot_path, None if json_path == "-" else json_path):
        if target is not None and not (Path(target).parent or Path(".")).is_dir():
            raise FileFormatError(f"cannot write {target}: folder {Path(target).parent} "
                                  "does not exist.")
    if plot_path is not None and Path(plot_path).suffix.lower() not in (".png", ".svg", ".pdf"):
        raise FileFormatError(f"cannot save a figure as {Path(plot_path).name!r}: use a .png, "
                              ".svg or .pdf file name.")
    if not unit.strip():
        raise InputError("--unit needs a name, e.g. mm.")
    mesh_path = rest[0]
    mesh = read_mesh(mesh_path)
    if json_path != "-":
        with progress_bar(len(mesh.faces), "Segmenting facets") as update:
            facets = scan_facets(mesh, angle_deg=angle_deg, min_area_fraction=min_area,
                                 progress=update)
    else:
        facets = scan_facets(mesh, angle_deg=angle_deg, min_area_fraction=min_area)
    if facets.n_facets < 3:
        raise InputError(
            f"{mesh_path}: only {facets.n_facets} facet(s) found; indexing needs at least "
            "three — lower --min-area or raise --angle."
        )
    meas = scan_to_measurements(facets, source=str(mesh_path))
    result = index_faces(crystal, meas, max_index=max_index,
                         tolerance=math.radians(tolerance_deg))
    orientation = result.orientation
    assert orientation is not None  # lab-frame normals always fix one
    axes = orientation.axes_lab()
    area_unit = f"{unit}²"
    rows: list[dict[str, Any]] = []
    for k, label in enumerate(meas.labels):
        ok = bool(result.indexed[k])
        rows.append({
            "label": label,
            "area": float(facets.areas[k]),
            "area_fraction": float(facets.areas[k] / facets.total_area),
            "flatness_rms": float(facets.flatness[k]),
            "normal_lab": facets.normals[k],
            "normal_uncertainty_deg": math.degrees(float(facets.uncertainties[k])),
            "triangles": int(facets.n_triangles[k]),
            "indexed": ok,
            "face": face_text(crystal, result.hkl[k]) if ok else None,
            "hkl": [int(v) for v in result.hkl[k]] if ok else None,
            "nearest_face": face_text(crystal, result.nearest_hkl[k]),
            "residual_deg": math.degrees(float(result.residuals[k])),
        })
    out: dict[str, Any] = {
        "crystal": crystal_json(crystal),
        "mesh": {
            "file": str(mesh_path),
            "length_unit": unit,
            "area_unit": area_unit,
            "vertices": int(len(facets.vertices)),
            "triangles": int(len(facets.triangles)),
            "total_area": facets.total_area,
            "dropped_triangles": facets.dropped_triangles,
            "dropped_area_fraction": facets.dropped_area / facets.total_area,
        },
        "segmentation": {"angle_deg": angle_deg, "min_area_fraction": min_area},
        "facets": rows,
        "indexed": result.n_indexed,
        "flagged": list(result.flagged),
        "rms_deg": math.degrees(result.rms),
        "tolerance_deg": tolerance_deg,
        "max_index": result.max_index,
        "equivalent_settings": result.equivalent_settings,
        "orientation_matrix": orientation.matrix,
        "axes_lab": {"a": axes[0], "b": axes[1], "c": axes[2]},
        "optic_axis_lab": axes[2] if orientation.is_uniaxial else None,
    }
    if json_path != "-":
        click.echo(crystal_header(crystal))
        click.echo(f"mesh: {mesh_path} ({len(facets.triangles)} triangles, area "
                   f"{facets.total_area:.4g} {area_unit}); {facets.n_facets} facets, "
                   f"{100 * facets.dropped_area / facets.total_area:.1f} % of the area in no "
                   "facet\n")
        fw = max([len(r["nearest_face"]) for r in rows] + [6]) + 2
        click.echo(f"{'facet':<7}{f'area ({area_unit})':>14}{f'flatness ({unit})':>16}"
                   f"{'normal (lab x, y, z)':>27}  {'(hkl)':<{fw}}{'residual (°)':>13}")
        for r in rows:
            n = r["normal_lab"]
            normal = f"{n[0]:>8.4f} {n[1]:>8.4f} {n[2]:>8.4f}"
            click.echo(f"{r['label']:<7}{r['area']:>14.4g}{r['flatness_rms']:>16.3g}"
                       f"{normal:>27}  {(r['face'] or '—'):<{fw}}{r['residual_deg']:>13.3f}"
                       + ("" if r["indexed"] else
                          f"  fits nothing (nearest {r['nearest_face']})"))
        click.echo(f"\n{result.n_indexed} of {len(rows)} facets indexed; RMS residual "
                   f"{math.degrees(result.rms):.3f}° (tolerance {tolerance_deg:.2f}°, indices "
                   f"up to {result.max_index}); {result.equivalent_settings} equivalent "
                   "settings, the one with most non-negative indices shown.")
        click.echo("\naxis   lab x      lab y      lab z")
        for name, v in zip("abc", axes, strict=True):
            click.echo(f"{name:<6}{v[0]:>9.5f}  {v[1]:>9.5f}  {v[2]:>9.5f}")
        if orientation.is_uniaxial:
            click.echo("optic axis (uniaxial crystal) = c")
    if json_path is not None:
        write_json(out, json_path)
    if plot_path is not None:
        from habit.plot import save_figure
        from habit.plot.scan import plot_scan

        names = [f"{r['label']} {r['face']}" if r["indexed"] else r["label"] for r in rows]
        artists = plot_scan(facets, face_labels=names, unit=unit)
        save_figure(artists.triangles.axes.figure, plot_path)
        if json_path != "-":
            click.echo(f"\nwrote {plot_path}")
