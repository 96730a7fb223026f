"""Private: shapes for many inputs, written row by row and restartable (see habit.batch)."""

from __future__ import annotations

import math
import os
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from habit import _execute
from habit._solve import (
    PlaneSet,
    Progress,
    ShapeBatch,
    _seconds_per_shape,
    crystal_planes,
    solve_shapes,
)
from habit.errors import InputError
from habit.tolerances import DEFAULT, Tolerances

__all__ = ["BatchReport", "run_batch"]


@dataclass(frozen=True, slots=True)
class BatchReport:
    """What a :func:`run_batch` call did.

    Attributes
    ----------
    outputs : tuple of str
        The results files (CSV or JSON lines).
    columns : tuple of str
        Columns of the table (keys of each JSON line).
    n_rows : int
        Rows in the input.
    n_skipped : int
        Rows already finished in the outputs before this run (not recomputed).
    n_computed : int
        Rows computed in this run.
    n_errors : int
        Rows of this run whose status is 'error' (the message is in the row).
    """

    outputs: tuple[str, ...]
    columns: tuple[str, ...]
    n_rows: int
    n_skipped: int
    n_computed: int
    n_errors: int


def _row_results(planes: PlaneSet, batch: ShapeBatch) -> list[dict[str, Any]]:
    labels = [planes.label(f) for f in range(planes.n_forms)]
    present = batch.form_present.tolist()
    fractions = batch.form_fractions.tolist()
    volume = batch.volume.tolist()
    return [
        {
            "status": "ok",
            "error": "",
            "volume_A3": v,
            "present_forms": [lab for lab, p in zip(labels, pr, strict=True) if p],
            "area_fractions": dict(zip(labels, fr, strict=True)),
        }
        for v, pr, fr in zip(volume, present, fractions, strict=True)
    ]


def _energy_rows_task(task: tuple[Any, ...]) -> list[dict[str, Any]]:
    """Solve a block of energy-table rows; a bad row gets its error, the rest go on."""
    planes, columns, rows, tol = task
    nf = planes.n_forms
    out: list[dict[str, Any]] = []
    good: list[int] = []
    values: list[list[float]] = []
    for k, (row_id, fields) in enumerate(rows):
        out.append({"id": row_id})
        try:
            if len(fields) != len(columns):
                raise InputError(
                    f"the row has {len(fields)} fields but the header has {len(columns)}."
                )
            vals = []
            for label, text in zip(columns, fields, strict=True):
                try:
                    v = float(text)
                except ValueError:
                    raise InputError(f"{label} = {text!r} is not a number.") from None
                if not (math.isfinite(v) and v > 0):
                    raise InputError(f"{label} = {text!r} must be a positive number.")
                vals.append(v)
            good.append(k)
            values.append(vals)
        except InputError as exc:
            out[k].update({"status": "error", "error": str(exc)})
    if good:
        batch = solve_shapes(
            planes, planes.expand(np.array(values).reshape(-1, nf)), tol=tol, scheduler="inline"
        )
        for k, result in zip(good, _row_results(planes, batch), strict=True):
            out[k].update(result)
    return out


def _crystal_files_task(task: tuple[Any, ...]) -> list[dict[str, Any]]:
    """Load crystal files and solve each one's shape; errors stay in their rows."""
    from habit.crystal import load_crystal
    from habit.errors import HabitError

    paths, tol = task
    out = []
    for path in paths:
        row: dict[str, Any] = {"id": Path(path).name, "name": ""}
        try:
            crystal = load_crystal(path)
            row["name"] = crystal.name
            if crystal.forms is None:
                raise InputError("the file gives no [forms] table (faces and their values).")
            planes = crystal_planes(crystal, crystal.forms.hkl)
            batch = solve_shapes(
                planes,
                planes.expand(np.array(crystal.forms.values)[None]),
                tol=tol,
                scheduler="inline",
            )
            row.update(_row_results(planes, batch)[0])
            row["kind"] = crystal.forms.kind
        except HabitError as exc:
            row.update({"status": "error", "error": str(exc)})
        except Exception as exc:  # one bad file must not stop the batch
            row.update({"status": "error", "error": f"{type(exc).__name__}: {exc}"})
        out.append(row)
    return out


def _read_energy_table(path: Path, planes: PlaneSet) -> tuple[list[str], list[Any]]:
    import csv

    if not path.is_file():
        raise InputError(f"no such energy table: {path}.")
    with open(path, newline="", encoding="utf-8") as handle:
        reader = csv.reader(handle)
        try:
            header = [h.strip() for h in next(reader)]
        except StopIteration:
            raise InputError(f"{path} is empty; it needs a header of form labels.") from None
        body = [r for r in reader if any(cell.strip() for cell in r)]
    has_id = bool(header) and header[0].lower() == "id"
    labels = header[1:] if has_id else header
    order = [planes.form_index(lab) for lab in labels]
    if sorted(order) != list(range(planes.n_forms)):
        raise InputError(
            f"the header of {path} must name every form once: "
            + ", ".join(planes.label(f) for f in range(planes.n_forms))
            + "."
        )
    rows = []
    seen: set[str] = set()
    for k, r in enumerate(body, start=1):
        row_id = r[0].strip() if has_id and r else str(k)
        if row_id in seen:
            raise InputError(f"row id {row_id!r} appears twice in {path}; ids must be unique.")
        seen.add(row_id)
        fields = [c.strip() for c in (r[1:] if has_id else r)]
        if len(fields) == len(order):
            fields = [fields[order.index(f)] for f in range(planes.n_forms)]
        rows.append((row_id, fields))
    columns = [planes.label(f) for f in range(planes.n_forms)]
    return columns, rows


def run_batch(
    source: str | os.PathLike[str],
    output: str | os.PathLike[str] | list[str | os.PathLike[str]],
    *,
    crystal: Any = None,
    chunk: int = 500,
    tol: Tolerances = DEFAULT,
    progress: Progress | None = None,
    scheduler: str | None = None,
    workers: int | None = None,
) -> BatchReport:
    """Shapes for many inputs, written to a results table row by row; restartable.

    Two kinds of input:

    * a folder of crystal files (``*.toml`` with a ``[forms]`` table; a file without one
      gets an error row): one row per file;
    * a CSV table of energy sets for one ``crystal``: a header naming the forms
      (``100,110,111`` or ``{100},...``; an optional first column ``id``), then one row
      per energy set (J/m², or distances).

    Each row holds ``status`` ('ok' or 'error'), the error message when there is one, the
    volume, the present forms and every form's area fraction. Rows are appended to
    ``<output>.part`` as they finish and the file is moved to ``output`` when all are
    done. Running again with the same output skips the rows already finished (also after
    an interruption) and computes only the rest.

    Parameters
    ----------
    source : path
        Folder of crystal files, or a CSV file of energy sets.
    output : path or list of paths
        ``.csv`` and/or ``.jsonl`` (JSON lines) results files.
    crystal : habit.crystal.Crystal, optional
        Needed for a CSV of energy sets.
    chunk : int
        Rows per task.
    tol : Tolerances
    progress : callable, optional
        Called with the number of rows finished (including skipped ones).
    scheduler, workers
        As for :func:`solve_shapes`.

    Returns
    -------
    BatchReport

    Raises
    ------
    InputError
        Missing source, a header that does not name the crystal's forms, duplicate row ids,
        an output holding a table with other columns.
    """
    from habit import _tables

    src = Path(source)
    outputs = [output] if isinstance(output, (str, os.PathLike)) else list(output)
    for o in outputs:
        _tables.table_format(o)
    if chunk < 1:
        raise InputError(f"chunk must be a positive number of rows, got {chunk}.")
    if src.is_dir():
        files = sorted(str(p) for p in src.glob("*.toml") if p.is_file())
        ids = [Path(p).name for p in files]
        columns = ["id", "name", "status", "error", "kind", "volume_A3", "present_forms"]
        columns += ["area_fractions"]
        items: list[Any] = files
        per_row = 0.05
    else:
        if crystal is None:
            raise InputError(
                f"{src} is not a folder of crystal files; a CSV of energy sets needs a crystal."
            )
        if isinstance(crystal, PlaneSet):
            planes = crystal
        else:
            if not src.is_file():
                raise InputError(f"no such energy table: {src}.")
            with open(src, encoding="utf-8") as handle:
                first = handle.readline()
            labels = [h.strip() for h in first.strip().split(",") if h.strip()]
            if labels and labels[0].lower() == "id":
                labels = labels[1:]
            if not labels:
                raise InputError(f"{src} needs a header naming the forms, e.g. id,100,110,111.")
            planes = crystal_planes(crystal, labels)
        form_columns, rows = _read_energy_table(src, planes)
        ids = [r[0] for r in rows]
        columns = ["id", "status", "error", "volume_A3", "present_forms"]
        columns += [f"area_fraction_{lab}" for lab in form_columns]
        items = rows
        per_row = _seconds_per_shape(planes, "auto") + 2e-5
    table = _tables.ResultTable(outputs, columns)
    todo = [k for k, i in enumerate(ids) if i not in table.finished]
    n_skipped = len(ids) - len(todo)
    blocks = [todo[a : a + chunk] for a in range(0, len(todo), chunk)]
    tasks: list[Any]
    if src.is_dir():
        tasks = [([items[k] for k in b], tol) for b in blocks]
        func = _crystal_files_task
    else:
        tasks = [(planes, form_columns, [items[k] for k in b], tol) for b in blocks]
        func = _energy_rows_task
    mode = _execute.choose_mode(scheduler, len(todo) * per_row, workers)
    done, errors, finished = n_skipped, 0, False
    try:
        if progress is not None:
            progress(done)
        for _, rows_out in _execute.run_tasks(
            func, tasks, mode=mode, workers=workers, scheduler=scheduler
        ):
            for row in rows_out:
                if "area_fractions" not in columns and "area_fractions" in row:
                    for lab, v in row.pop("area_fractions").items():
                        row[f"area_fraction_{lab}"] = v
                errors += row.get("status") == "error"
            table.write(rows_out)
            done += len(rows_out)
            if progress is not None:
                progress(done)
        finished = True
    finally:
        table.close(finished)
    return BatchReport(
        outputs=tuple(str(o) for o in outputs),
        columns=tuple(columns),
        n_rows=len(ids),
        n_skipped=n_skipped,
        n_computed=len(todo),
        n_errors=errors,
    )
