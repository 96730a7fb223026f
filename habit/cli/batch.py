"""``habit batch``: shapes for a folder of crystal files or a table of energy sets."""

from __future__ import annotations

from typing import Any

import click

from habit.cli._common import json_option
from habit.cli._scale import execution_options


@click.command("batch")
@click.argument("source", metavar="SOURCE")
@click.option(
    "--out",
    "outputs",
    multiple=True,
    required=True,
    metavar="PATH",
    help="Results file, .csv or .jsonl (JSON lines); repeat for both.",
)
@click.option(
    "--crystal",
    "crystal_spec",
    metavar="CRYSTAL",
    help="The crystal of a CSV of energy sets (a CIF, crystal TOML or bundled name).",
)
@click.option("--chunk", default=500, show_default=True, help="Rows per task.")
@execution_options
@json_option
def command(
    source: str,
    outputs: tuple[str, ...],
    crystal_spec: str | None,
    chunk: int,
    scheduler: str | None,
    workers: int | None,
    json_path: str | None,
) -> None:
    """Shapes for every crystal file in a folder, or every energy set in a CSV table.

    SOURCE is a folder of crystal TOML files (each with a [forms] table) or a CSV file
    whose header names the forms of --crystal (e.g. id,100,110,111; values in J/m²).
    Each row of the results holds its status and, on failure, the error. Rows are
    written as they finish; run the same command again after an interruption and the
    finished rows are skipped.
    """
    from pathlib import Path

    from habit.batch import run_batch
    from habit.cli._common import progress_bar, write_json
    from habit.errors import InputError

    crystal = None
    if crystal_spec:
        from habit.crystal import load_crystal

        crystal = load_crystal(crystal_spec)
    src = Path(source)
    if src.is_dir():
        total = len(list(src.glob("*.toml")))
    elif src.is_file():
        with open(src, encoding="utf-8") as handle:
            total = max(0, sum(1 for line in handle if line.strip()) - 1)
    else:
        raise InputError(f"no such folder or file: {source}.")
    quiet = json_path == "-"
    kw: dict[str, Any] = dict(crystal=crystal, chunk=chunk, scheduler=scheduler, workers=workers)
    if quiet:
        report = run_batch(src, list(outputs), **kw)
    else:
        with progress_bar(total, "rows") as update:
            report = run_batch(src, list(outputs), progress=update, **kw)
    summary = {
        "source": str(source),
        "outputs": list(report.outputs),
        "columns": list(report.columns),
        "rows": report.n_rows,
        "skipped_already_done": report.n_skipped,
        "computed": report.n_computed,
        "errors": report.n_errors,
    }
    if not quiet:
        click.echo(
            f"{report.n_rows} rows: {report.n_computed} computed, {report.n_skipped} already "
            f"done; {report.n_errors} of the computed rows failed (see their 'error' column)"
        )
        for p in report.outputs:
            click.echo(f"wrote {p}")
    if json_path is not None:
        write_json(summary, json_path)
