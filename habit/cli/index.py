"""``habit index``: Miller indices of measured faces (and the cell shape when unknown)."""

from __future__ import annotations

from typing import Any

import click

from habit.cli._common import crystal_options, json_option


def face_text(crystal: Any, hkl: Any) -> str:
    """Format a face as (hkl), or (hkil) for the hexagonal family on hexagonal axes."""
    from habit.indexing import CellModel, _uses_hex_axes
    from habit.miller import format_hkl

    if not isinstance(crystal, CellModel) and hasattr(crystal, "format_face"):
        return str(crystal.format_face(hkl))
    return format_hkl(hkl, hexagonal=_uses_hex_axes(crystal))


def indexing_rows(crystal: Any, measurements: Any, result: Any) -> list[dict[str, Any]]:
    """One JSON-ready row per face: label, indices, residual, (φ, ρ) measured and calculated."""
    import math

    rows = []
    for i, label in enumerate(result.labels):
        ok = bool(result.indexed[i])
        row: dict[str, Any] = {
            "label": label,
            "indexed": ok,
            "face": face_text(crystal, result.hkl[i]) if ok else None,
            "hkl": [int(v) for v in result.hkl[i]] if ok else None,
            "nearest_face": face_text(crystal, result.nearest_hkl[i]),
            "residual_deg": math.degrees(float(result.residuals[i])),
        }
        if measurements.kind == "two-circle":
            row["measured_phi_deg"] = math.degrees(float(measurements.phi[i]))
            row["measured_rho_deg"] = math.degrees(float(measurements.rho[i]))
            if result.calculated_phi_rho is not None and ok:
                phi_c = math.degrees(float(result.calculated_phi_rho[i, 0]))
                rho_c = math.degrees(float(result.calculated_phi_rho[i, 1]))
                row["calculated_phi_deg"] = phi_c
                row["calculated_rho_deg"] = rho_c
                # measured minus calculated; φ wrapped to (-180, 180]
                d_phi = (row["measured_phi_deg"] - phi_c + 180.0) % 360.0 - 180.0
                row["delta_phi_deg"] = d_phi
                row["delta_rho_deg"] = row["measured_rho_deg"] - rho_c
        rows.append(row)
    return rows


def refinement_json(ref: Any) -> dict[str, Any]:
    """JSON-ready refined parameters with standard uncertainties."""
    import math

    return {
        "parameters": {
            name: {"value": float(v), "su": float(s)}
            for name, v, s in zip(ref.names, ref.values, ref.uncertainties, strict=True)
        },
        "relative_cell": dict(zip(("a", "b", "c", "alpha_deg", "beta_deg", "gamma_deg"),
                                  ref.crystal.cell, strict=True)),
        "rms_deg": math.degrees(ref.rms),
        "degrees_of_freedom": ref.dof,
    }


def print_indexing(crystal: Any, measurements: Any, result: Any, rows: list[dict[str, Any]]
                   ) -> None:
    """Print the table of faces, the RMS, the orientation."""
    import math

    two_circle = measurements.kind == "two-circle"
    w = max([len(r["label"]) for r in rows] + [5]) + 2
    fw = max([len(r["nearest_face"]) for r in rows] + [6]) + 2
    head = f"{'face':<{w}}{'(hkl)':<{fw}}"
    if two_circle:
        head += f"{'φ meas (°)':>11}{'ρ meas (°)':>11}{'φ calc (°)':>11}{'ρ calc (°)':>11}"
    head += f"{'residual (°)':>14}"
    click.echo(head)
    for r in rows:
        line = f"{r['label']:<{w}}{(r['face'] or '—'):<{fw}}"
        if two_circle:
            line += f"{r['measured_phi_deg']:>11.2f}{r['measured_rho_deg']:>11.2f}"
            if r["indexed"]:
                line += f"{r['calculated_phi_deg']:>11.2f}{r['calculated_rho_deg']:>11.2f}"
            else:
                line += f"{'—':>11}{'—':>11}"
        line += f"{r['residual_deg']:>14.3f}"
        if not r["indexed"]:
            line += f"  fits nothing (nearest {r['nearest_face']})"
        click.echo(line)
    click.echo(f"\n{result.n_indexed} of {len(rows)} faces indexed; RMS residual "
               f"{math.degrees(result.rms):.3f}° (tolerance {math.degrees(result.tolerance):.2f}°, "
               f"indices up to {result.max_index}); {result.equivalent_settings} equivalent "
               "settings, the one with most non-negative indices shown.")
    for k, r in result.alternatives[:2]:
        click.echo(f"Another indexing fits {k} faces (RMS {math.degrees(r):.3f}°).")
    if measurements.kind == "interfacial-angles":
        click.echo(f"\n{'faces':<{2 * w}}{'measured (°)':>14}{'calculated (°)':>16}"
                   f"{'meas − calc (°)':>17}")
        for (i, j), a, r in zip(measurements.pairs.tolist(), measurements.angles,
                                result.pair_residuals, strict=True):
            pair = f"{measurements.labels[i]} ∧ {measurements.labels[j]}"
            meas_deg = math.degrees(float(a))
            if math.isnan(float(r)):
                click.echo(f"{pair:<{2 * w}}{meas_deg:>14.2f}{'—':>16}{'—':>17}")
            else:
                calc = meas_deg - math.degrees(float(r))
                click.echo(f"{pair:<{2 * w}}{meas_deg:>14.2f}{calc:>16.2f}"
                           f"{math.degrees(float(r)):>17.2f}")
        click.echo("Angle table: no orientation is fixed by interfacial angles alone.")


@click.command("index", context_settings={"ignore_unknown_options": True})
@click.argument("args", nargs=-1, metavar="[CRYSTAL] MEASUREMENTS")
@crystal_options
@click.option("--system", "system", default=None, metavar="SYSTEM",
              help="Crystal system when the cell is unknown (instead of CRYSTAL): "
                   "cubic, tetragonal, hexagonal, trigonal, orthorhombic, monoclinic or "
                   "triclinic.")
@click.option("--refine", is_flag=True, help="Refine the cell shape (axial ratios, free "
              "angles) and the orientation by least squares.")
@click.option("--max-index", "max_index", type=click.IntRange(1, 8), default=3,
              show_default=True, help="Largest absolute Miller index tried.")
@click.option("--tolerance", "tolerance_deg", type=click.FloatRange(0.01, 15.0), default=1.0,
              show_default=True, help="Largest angle (degrees) between measured and "
              "calculated normals for a face to count as indexed.")
@json_option
def command(
    args: tuple[str, ...],
    cell: str | None,
    crystal_class: str | None,
    space_group: str | None,
    system: str | None,
    refine: bool,
    max_index: int,
    tolerance_deg: float,
    json_path: str | None,
) -> None:
    """Index the faces in MEASUREMENTS (.csv or .toml) with the cell of CRYSTAL.

    MEASUREMENTS holds two-circle readings (phi_deg, rho_deg), unit normals (x, y, z)
    or a table of interfacial angles (face1, face2, angle_deg); see docs/measurements.md.
    All faces share one orientation; faces that fit nothing within the tolerance are
    flagged, not forced. With --system instead of CRYSTAL, the axial ratios are found
    from the angles.
    """
    import math

    from habit.cli._common import crystal_json, progress_bar, resolve_crystal, write_json
    from habit.errors import InputError
    from habit.indexing import find_axial_ratios, index_faces, refine_cell
    from habit.measurements import read_measurements

    tol = math.radians(tolerance_deg)
    out: dict[str, Any] = {}
    ref: Any = None
    if system is not None:
        if cell is not None or len(args) != 1:
            raise InputError("with --system give only MEASUREMENTS (no CRYSTAL or --cell).")
        meas = read_measurements(args[0])
        from habit.cellfit import _trial_models

        grid = _trial_models(system.lower(), 0.03)
        total = len(grid) + 21 if grid else 6
        if json_path != "-":
            with progress_bar(total, "Searching cell shapes") as update:
                found = find_axial_ratios(system.lower(), meas, tolerance=tol, progress=update)
        else:
            found = find_axial_ratios(system.lower(), meas, tolerance=tol)
        result, ref = found.indexing, found.refinement
        crystal: Any = ref.crystal
        out["crystal"] = {"system": crystal.system, "cell_known": False,
                          "trial_cells": found.trials}
    else:
        crystal, rest = resolve_crystal(args, cell, crystal_class, space_group)
        if len(rest) != 1:
            raise InputError("give one MEASUREMENTS file after the crystal.")
        meas = read_measurements(rest[0])
        result = index_faces(crystal, meas, max_index=max_index, tolerance=tol)
        ref = refine_cell(crystal, meas, result) if refine else None
        out["crystal"] = crystal_json(crystal)
    rows = indexing_rows(crystal, meas, result)
    out.update({
        "measurements": {"file": meas.source, "kind": meas.kind, "specimen": meas.specimen},
        "faces": rows,
        "indexed": result.n_indexed,
        "flagged": list(result.flagged),
        "rms_deg": math.degrees(result.rms),
        "tolerance_deg": tolerance_deg,
        "max_index": result.max_index,
        "setting_matrix": result.setting,
        "equivalent_settings": result.equivalent_settings,
        "alternatives": [{"indexed": k, "rms_deg": math.degrees(r)}
                         for k, r in result.alternatives],
        "orientation_matrix": None if result.orientation is None else result.orientation.matrix,
    })
    if meas.kind == "interfacial-angles":
        out["angles"] = [
            {"face1": meas.labels[i], "face2": meas.labels[j],
             "measured_deg": math.degrees(float(a)),
             "residual_deg": math.degrees(float(r))}
            for (i, j), a, r in zip(meas.pairs.tolist(), meas.angles, result.pair_residuals,
                                    strict=True)
        ]
    if ref is not None:
        out["refinement"] = refinement_json(ref)
    if json_path != "-":
        if system is None:
            from habit.cli._common import crystal_header

            click.echo(crystal_header(crystal))
        else:
            click.echo(f"cell unknown, {system} system: searched {found.trials} cell shapes")
        click.echo(f"measurements: {meas.source} ({meas.kind}, {meas.n_faces} faces)\n")
        print_indexing(crystal, meas, result, rows)
        if ref is not None:
            click.echo("\nrefined cell shape (least squares; value ± standard uncertainty):")
            for name, v, s in zip(ref.names, ref.values, ref.uncertainties, strict=True):
                unit = " (°)" if name.endswith("_deg") else ""
                click.echo(f"  {name.removesuffix('_deg')}{unit} = {v:.5f} ± {s:.5f}")
            if not ref.names:
                click.echo("  (cubic: no free shape parameter; orientation refined)")
            click.echo(f"  RMS residual {math.degrees(ref.rms):.3f}°, {ref.dof} degrees of "
                       "freedom")
    if json_path is not None:
        write_json(out, json_path)
