"""Private: result tables written row by row, restartable, moved into place when complete.

Rows go to ``<output>.part`` as they finish (one flushed line each, CSV or JSON lines by
the output's suffix). When every row is done the part file replaces the output, so a
finished output is never half-written. A rerun with the same output reads the rows already
there (from the part file, or from a finished output), drops a cut-off last line, and
skips those rows.
"""

from __future__ import annotations

import csv
import io
import json
import math
import os
from collections.abc import Sequence
from pathlib import Path
from typing import Any

from habit.errors import FileFormatError, InputError

__all__ = ["ResultTable", "table_format"]


def table_format(path: str | os.PathLike[str]) -> str:
    """'csv' or 'jsonl' from the file name; anything else is refused."""
    suffix = Path(path).suffix.lower()
    if suffix == ".csv":
        return "csv"
    if suffix in (".jsonl", ".ndjson"):
        return "jsonl"
    raise InputError(f"results file {path} must end in .csv or .jsonl (JSON lines).")


def _plain(value: Any) -> Any:
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if hasattr(value, "item"):
        return _plain(value.item())
    if isinstance(value, dict):
        return {str(k): _plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_plain(v) for v in value]
    return value


def _csv_cell(value: Any) -> str:
    if value is None:
        return ""
    if isinstance(value, float):
        return "" if not math.isfinite(value) else repr(value)
    if isinstance(value, (list, tuple)):
        return " ".join(str(v) for v in value)
    if isinstance(value, dict):
        return ";".join(f"{k}={_csv_cell(v)}" for k, v in value.items())
    return str(value)


class _Output:
    def __init__(self, path: Path, columns: Sequence[str]) -> None:
        self.path = path
        self.part = path.with_name(path.name + ".part")
        self.kind = table_format(path)
        self.columns = list(columns)
        if not path.parent.is_dir():
            raise FileFormatError(f"cannot write {path}: folder {path.parent} does not exist.")

    def existing_lines(self) -> list[str]:
        """Complete lines already written (part file first, else a finished output)."""
        source = self.part if self.part.exists() else self.path if self.path.exists() else None
        if source is None:
            return []
        text = source.read_text(encoding="utf-8")
        lines = text.split("\n")
        return [ln for ln in lines[:-1] if ln.strip()]  # the last piece is cut off or empty

    def ids_of(self, lines: list[str]) -> list[str]:
        if self.kind == "jsonl":
            out = []
            for ln in lines:
                try:
                    out.append(str(json.loads(ln)["id"]))
                except (ValueError, KeyError, TypeError):
                    out.append("")
            return out
        if not lines:
            return []
        header = next(csv.reader([lines[0]]))
        if header != self.columns:
            raise InputError(
                f"{self.path} already holds a table with other columns; choose another output "
                "or delete it."
            )
        return [row[0] if row else "" for row in csv.reader(lines[1:])]

    def start(self, keep: set[str], lines: list[str], ids: list[str]) -> None:
        body = lines[1:] if self.kind == "csv" and lines else lines
        kept = [ln for ln, i in zip(body, ids, strict=True) if i in keep]
        header = []
        if self.kind == "csv":
            buf = io.StringIO()
            csv.writer(buf, lineterminator="\n").writerow(self.columns)
            header = [buf.getvalue().rstrip("\n")]
        tmp = self.part.with_name(self.part.name + ".tmp")
        tmp.write_text("".join(ln + "\n" for ln in header + kept), encoding="utf-8")
        os.replace(tmp, self.part)
        self.handle = open(self.part, "a", encoding="utf-8", newline="")  # noqa: SIM115

    def write(self, rows: Sequence[dict[str, Any]]) -> None:
        if self.kind == "jsonl":
            text = "".join(json.dumps(_plain(r), ensure_ascii=False) + "\n" for r in rows)
        else:
            buf = io.StringIO()
            writer = csv.writer(buf, lineterminator="\n")
            writer.writerows([[_csv_cell(r.get(c)) for c in self.columns] for r in rows])
            text = buf.getvalue()
        self.handle.write(text)
        self.handle.flush()

    def close(self, finished: bool) -> None:
        self.handle.close()
        if finished:
            os.replace(self.part, self.path)


class ResultTable:
    """Rows to one or more outputs; knows which row ids are finished already."""

    def __init__(self, paths: Sequence[str | os.PathLike[str]], columns: Sequence[str]) -> None:
        if not paths:
            raise InputError("give at least one results file (.csv or .jsonl).")
        self.outputs = [_Output(Path(p), columns) for p in paths]
        lines = [o.existing_lines() for o in self.outputs]
        ids = [o.ids_of(ln) for o, ln in zip(self.outputs, lines, strict=True)]
        finished = set(ids[0])
        for more in ids[1:]:
            finished &= set(more)
        finished.discard("")
        self.finished = finished
        for o, ln, i in zip(self.outputs, lines, ids, strict=True):
            o.start(finished, ln, i)

    def write(self, rows: Sequence[dict[str, Any]]) -> None:
        """Append finished rows to every output (whole lines, flushed)."""
        for o in self.outputs:
            o.write(rows)

    def close(self, finished: bool) -> None:
        """Close the outputs; move them into place when every row is done."""
        for o in self.outputs:
            o.close(finished)
