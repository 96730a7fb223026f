"""Measured faces: two-circle readings, lab-frame normals, or interfacial-angle tables.

Three kinds of measurement, read from CSV or TOML (formats in ``docs/measurements.md``):

``two-circle``
    One row per face: azimuth φ and polar distance ρ in degrees from a two-circle
    (reflecting) goniometer; optional label and weight or standard uncertainty.
``normals``
    One row per face: a unit outward normal ``x, y, z`` in a laboratory frame.
``interfacial-angles``
    One row per pair of labelled faces: the angle between their normals in degrees, as
    read on a contact goniometer (180° minus the dihedral angle across the edge).

The readers return a frozen :class:`Measurements`; :func:`measurements_from_arrays` builds
the same object in memory. All angles inside are radians.
"""

from __future__ import annotations

import csv
import io
import math
import os
import tomllib
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from habit._arrays import readonly as _readonly
from habit._typing import ArrayLike, FloatArray, IntArray
from habit.errors import FileFormatError, InputError
from habit.stereo import phi_rho_to_vectors

__all__ = [
    "KINDS",
    "Measurements",
    "measurements_from_arrays",
    "read_measurements",
    "parse_measurements",
]

#: kinds of measurement understood by the readers
KINDS: tuple[str, ...] = ("two-circle", "normals", "interfacial-angles")

_UNIT_TOL = 1e-3  # |normal| must be 1 within this, unless normalize=True


@dataclass(frozen=True, slots=True, eq=False)  # holds arrays: compared by identity
class Measurements:
    """A set of measured faces.

    Attributes
    ----------
    kind : str
        One of :data:`KINDS`.
    labels : tuple of str
        One label per face (generated as ``"F1"``, ``"F2"``, ... when none is given).
    normals : (N, 3) float array or None
        Unit outward normals in the measurement (lab / goniometer) frame; None for an
        interfacial-angle table, which fixes no orientation.
    weights : (N,) float array
        Relative weights of the faces (``1/σ²`` when σ was given, else 1).
    pairs : (P, 2) int array
        For ``interfacial-angles``: indices into ``labels`` of each measured pair.
    angles : (P,) float array
        For ``interfacial-angles``: measured angles between the normals, radians.
    pair_weights : (P,) float array
        Relative weights of the measured angles.
    phi, rho : (N,) float array or None
        For ``two-circle``: the readings in radians.
    phi_zero : float
        Reading (radians) of φ at the +y direction of the goniometer frame.
    clockwise : bool
        Sense of φ (see :mod:`habit.stereo`).
    specimen : str
        Free text naming the specimen.
    source : str
        File the data came from, or ``""``.
    """

    kind: str
    labels: tuple[str, ...]
    normals: FloatArray | None
    weights: FloatArray
    pairs: IntArray
    angles: FloatArray
    pair_weights: FloatArray
    phi: FloatArray | None = None
    rho: FloatArray | None = None
    phi_zero: float = 0.0
    clockwise: bool = True
    specimen: str = ""
    source: str = ""

    @property
    def n_faces(self) -> int:
        """Number of faces."""
        return len(self.labels)

    def rotated(self, rotation: ArrayLike) -> Measurements:
        """Return the same measurements with normals rotated by a (3, 3) rotation matrix."""
        if self.normals is None:
            return self
        r = np.asarray(rotation, dtype=float)
        return Measurements(
            kind="normals",
            labels=self.labels,
            normals=_readonly(self.normals @ r.T),
            weights=self.weights,
            pairs=self.pairs,
            angles=self.angles,
            pair_weights=self.pair_weights,
            specimen=self.specimen,
            source=self.source,
        )


def _check_labels(labels: Sequence[str], where: str) -> tuple[str, ...]:
    seen: set[str] = set()
    for label in labels:
        if not label:
            raise InputError(f"{where}: a face label is empty; give every face a label.")
        if label in seen:
            raise InputError(f"{where}: face label {label!r} appears twice; labels must be unique.")
        seen.add(label)
    return tuple(labels)


def _weights_from(
    weights: ArrayLike | None, sigmas_deg: ArrayLike | None, n: int, where: str
) -> FloatArray:
    if weights is not None and sigmas_deg is not None:
        raise InputError(f"{where}: give either weights or sigma_deg, not both.")
    if sigmas_deg is not None:
        s = np.asarray(sigmas_deg, dtype=float).reshape(-1)
        if s.shape != (n,) or not np.all(np.isfinite(s)) or np.any(s <= 0):
            raise InputError(f"{where}: sigma_deg must be {n} positive numbers (degrees).")
        return np.asarray(np.radians(s) ** -2.0, dtype=np.float64)
    if weights is not None:
        w = np.asarray(weights, dtype=float).reshape(-1)
        if w.shape != (n,) or not np.all(np.isfinite(w)) or np.any(w <= 0):
            raise InputError(f"{where}: weight must be {n} positive numbers.")
        return w
    return np.ones(n)


def measurements_from_arrays(
    *,
    labels: Sequence[str] | None = None,
    normals: ArrayLike | None = None,
    phi_deg: ArrayLike | None = None,
    rho_deg: ArrayLike | None = None,
    pairs: Sequence[tuple[str, str]] | None = None,
    angles_deg: ArrayLike | None = None,
    weights: ArrayLike | None = None,
    sigma_deg: ArrayLike | None = None,
    phi_zero_deg: float = 0.0,
    clockwise: bool = True,
    normalize: bool = False,
    specimen: str = "",
    source: str = "",
) -> Measurements:
    """Build and validate :class:`Measurements` from arrays (degrees, as in files).

    Give exactly one of: ``normals``; ``phi_deg`` with ``rho_deg``; ``pairs`` with
    ``angles_deg`` (weights / sigma then refer to the pairs).

    Parameters
    ----------
    labels : sequence of str, optional
        Face labels (unique). Required with ``pairs`` only if faces should keep an order
        other than first appearance.
    normals : (N, 3) float array, optional
        Unit outward normals in a lab frame.
    phi_deg, rho_deg : (N,) float arrays, optional
        Two-circle readings in degrees; −360 ≤ φ ≤ 360, 0 ≤ ρ ≤ 180.
    pairs : sequence of (str, str), optional
        Labelled face pairs of an interfacial-angle table.
    angles_deg : (P,) float array, optional
        Angles between face normals, degrees, 0 < angle < 180.
    weights, sigma_deg : (N,) or (P,) float array, optional
        Relative weights, or standard uncertainties in degrees (weight = 1/σ²).
    phi_zero_deg, clockwise
        The φ convention of the readings (see :mod:`habit.stereo`).
    normalize : bool
        Scale normals to unit length instead of refusing ones whose length is not 1.
    specimen, source : str
        Free text kept with the data.

    Returns
    -------
    Measurements

    Raises
    ------
    InputError
        On any value out of range, mismatched lengths or duplicate labels.

    Examples
    --------
    >>> m = measurements_from_arrays(phi_deg=[0, 90], rho_deg=[90, 90])
    >>> m.kind, m.labels
    ('two-circle', ('F1', 'F2'))
    >>> measurements_from_arrays(phi_deg=[0], rho_deg=[190])
    Traceback (most recent call last):
    ...
    habit.errors.InputError: face F1: rho 190 degrees is out of range; give 0 <= rho <= 180.
    """
    given = [normals is not None, phi_deg is not None or rho_deg is not None, pairs is not None]
    if sum(given) != 1:
        raise InputError(
            "give exactly one kind of measurement: normals, phi/rho readings, "
            "or an interfacial-angle table."
        )
    empty_pairs = np.zeros((0, 2), dtype=np.int64)
    if pairs is not None:
        if angles_deg is None:
            raise InputError("an interfacial-angle table needs angles_deg for its pairs.")
        ang = np.asarray(angles_deg, dtype=float).reshape(-1)
        if len(ang) != len(pairs):
            raise InputError(
                f"the angle table has {len(pairs)} pairs but {len(ang)} angles; give one "
                "angle per pair."
            )
        names: list[str] = list(labels) if labels is not None else []
        if labels is not None:
            _check_labels(names, "labels")
        index = {name: i for i, name in enumerate(names)}
        idx = []
        seen_pairs: set[frozenset[str]] = set()
        for k, (p, q) in enumerate(pairs):
            p, q = str(p).strip(), str(q).strip()
            if not p or not q:
                raise InputError(f"angle row {k + 1}: both face labels are needed.")
            if p == q:
                raise InputError(f"angle row {k + 1}: a face ({p}) cannot be paired with itself.")
            key = frozenset((p, q))
            if key in seen_pairs:
                raise InputError(f"angle row {k + 1}: the pair {p}, {q} is listed twice.")
            seen_pairs.add(key)
            a = ang[k]
            if not math.isfinite(a) or not 0.0 < a < 180.0:
                raise InputError(
                    f"angle row {k + 1} ({p}, {q}): {a:g} degrees is out of range; give an "
                    "angle between face normals with 0 < angle < 180."
                )
            for name in (p, q):
                if name not in index:
                    if labels is not None:
                        raise InputError(f"angle row {k + 1}: face {name!r} is not in labels.")
                    index[name] = len(names)
                    names.append(name)
            idx.append((index[p], index[q]))
        pw = _weights_from(weights, sigma_deg, len(ang), "angle table")
        return Measurements(
            kind="interfacial-angles",
            labels=tuple(names),
            normals=None,
            weights=_readonly(np.ones(len(names))),
            pairs=_readonly(np.array(idx, dtype=np.int64).reshape(-1, 2), np.int64),
            angles=_readonly(np.radians(ang)),
            pair_weights=_readonly(pw),
            specimen=specimen,
            source=source,
        )

    if normals is not None:
        n = np.asarray(normals, dtype=float)
        if n.ndim != 2 or n.shape[1] != 3:
            raise InputError(f"normals must have shape (N, 3); got shape {n.shape}.")
        count = len(n)
    else:
        if phi_deg is None or rho_deg is None:
            raise InputError("two-circle readings need both phi_deg and rho_deg.")
        phi = np.asarray(phi_deg, dtype=float).reshape(-1)
        rho = np.asarray(rho_deg, dtype=float).reshape(-1)
        if phi.shape != rho.shape:
            raise InputError(f"{len(phi)} phi readings but {len(rho)} rho readings; give pairs.")
        count = len(phi)
    names = list(labels) if labels is not None else [f"F{i + 1}" for i in range(count)]
    if len(names) != count:
        raise InputError(f"{len(names)} labels for {count} faces; give one label per face.")
    _check_labels(names, "labels")
    w = _weights_from(weights, sigma_deg, count, "faces")
    if normals is not None:
        for label, row in zip(names, n, strict=True):
            length = float(np.linalg.norm(row))
            if not np.all(np.isfinite(row)) or length == 0.0:
                raise InputError(f"face {label}: the normal is zero or not finite; give a unit "
                                 "vector x, y, z.")
            if not normalize and abs(length - 1.0) > _UNIT_TOL:
                raise InputError(
                    f"face {label}: the normal has length {length:.4g}, not 1; give a unit "
                    "vector (or ask for normalisation)."
                )
        unit = n / np.linalg.norm(n, axis=1, keepdims=True)
        return Measurements(
            kind="normals",
            labels=tuple(names),
            normals=_readonly(unit),
            weights=_readonly(w),
            pairs=_readonly(empty_pairs, np.int64),
            angles=_readonly(np.zeros(0)),
            pair_weights=_readonly(np.zeros(0)),
            specimen=specimen,
            source=source,
        )
    for label, p, r in zip(names, phi, rho, strict=True):
        if not math.isfinite(p) or not -360.0 <= p <= 360.0:
            raise InputError(
                f"face {label}: phi {p:g} degrees is out of range; give -360 <= phi <= 360."
            )
        if not math.isfinite(r) or not 0.0 <= r <= 180.0:
            raise InputError(
                f"face {label}: rho {r:g} degrees is out of range; give 0 <= rho <= 180."
            )
    phi_r, rho_r = np.radians(phi), np.radians(rho)
    vec = phi_rho_to_vectors(phi_r, rho_r, phi_zero=math.radians(phi_zero_deg),
                             clockwise=clockwise)
    return Measurements(
        kind="two-circle",
        labels=tuple(names),
        normals=_readonly(vec),
        weights=_readonly(w),
        pairs=_readonly(empty_pairs, np.int64),
        angles=_readonly(np.zeros(0)),
        pair_weights=_readonly(np.zeros(0)),
        phi=_readonly(phi_r),
        rho=_readonly(rho_r),
        phi_zero=math.radians(phi_zero_deg),
        clockwise=clockwise,
        specimen=specimen,
        source=source,
    )


# --------------------------------------------------------------------------- files

_COLUMNS = {
    "two-circle": ("phi_deg", "rho_deg"),
    "normals": ("x", "y", "z"),
    "interfacial-angles": ("face1", "face2", "angle_deg"),
}
_KNOWN = {
    "label", "phi_deg", "rho_deg", "x", "y", "z", "face1", "face2", "angle_deg",
    "weight", "sigma_deg",
}


def _float(text: str, what: str) -> float:
    try:
        return float(text)
    except ValueError:
        raise FileFormatError(f"{what}: {text!r} is not a number.") from None


def _parse_csv(text: str, where: str, normalize: bool) -> Measurements:
    lines = [ln for ln in text.splitlines() if ln.strip() and not ln.lstrip().startswith("#")]
    if not lines:
        raise FileFormatError(f"{where}: no data; expected a header row and one row per face.")
    reader = csv.reader(io.StringIO("\n".join(lines)))
    rows = list(reader)
    header = [h.strip().lower() for h in rows[0]]
    unknown = [h for h in header if h not in _KNOWN]
    if unknown:
        raise FileFormatError(
            f"{where}: unknown column {unknown[0]!r}; columns are label, phi_deg, rho_deg | "
            "x, y, z | face1, face2, angle_deg, and optionally weight or sigma_deg."
        )
    if len(set(header)) != len(header):
        raise FileFormatError(f"{where}: a column name appears twice in the header.")
    kinds = [k for k, cols in _COLUMNS.items() if any(c in header for c in cols)]
    if len(kinds) != 1:
        raise FileFormatError(
            f"{where}: the header must name the columns of one kind: phi_deg, rho_deg "
            "(two-circle) or x, y, z (normals) or face1, face2, angle_deg (angle table)."
        )
    kind = kinds[0]
    missing = [c for c in _COLUMNS[kind] if c not in header]
    if missing:
        raise FileFormatError(f"{where}: missing column {missing[0]!r} for {kind} data.")
    col = {h: i for i, h in enumerate(header)}
    data = rows[1:]
    if not data:
        raise FileFormatError(f"{where}: a header but no data rows.")
    for k, row in enumerate(data):
        if len(row) != len(header):
            raise FileFormatError(
                f"{where}: data row {k + 1} has {len(row)} fields; the header has {len(header)}."
            )

    def column(name: str) -> list[str]:
        return [row[col[name]].strip() for row in data]

    def numbers(name: str) -> list[float]:
        return [_float(v, f"{where}, column {name}, row {k + 1}")
                for k, v in enumerate(column(name))]

    weights = numbers("weight") if "weight" in col else None
    sigma = numbers("sigma_deg") if "sigma_deg" in col else None
    labels = column("label") if "label" in col else None
    try:
        if kind == "interfacial-angles":
            pairs = list(zip(column("face1"), column("face2"), strict=True))
            return measurements_from_arrays(pairs=pairs, angles_deg=numbers("angle_deg"),
                                            weights=weights, sigma_deg=sigma, source=where)
        if kind == "normals":
            normals = np.column_stack([numbers("x"), numbers("y"), numbers("z")])
            return measurements_from_arrays(labels=labels, normals=normals, weights=weights,
                                            sigma_deg=sigma, normalize=normalize, source=where)
        return measurements_from_arrays(labels=labels, phi_deg=numbers("phi_deg"),
                                        rho_deg=numbers("rho_deg"), weights=weights,
                                        sigma_deg=sigma, source=where)
    except InputError as exc:
        raise FileFormatError(f"{where}: {exc}") from None


def _parse_toml(text: str, where: str, normalize: bool) -> Measurements:
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise FileFormatError(f"{where}: not valid TOML ({exc}).") from None
    allowed = {"specimen", "description", "kind", "convention", "face", "angle", "normalize"}
    extra = sorted(set(doc) - allowed)
    if extra:
        raise FileFormatError(
            f"{where}: unknown key {extra[0]!r}; allowed keys are {', '.join(sorted(allowed))}."
        )
    specimen = str(doc.get("specimen", ""))
    conv = doc.get("convention", {})
    if not isinstance(conv, dict):
        raise FileFormatError(f"{where}: [convention] must be a table.")
    bad = sorted(set(conv) - {"phi_zero_deg", "phi_sense"})
    if bad:
        raise FileFormatError(f"{where}: unknown key {bad[0]!r} in [convention]; "
                              "allowed: phi_zero_deg, phi_sense.")
    sense = conv.get("phi_sense", "clockwise")
    if sense not in ("clockwise", "counterclockwise"):
        raise FileFormatError(f"{where}: phi_sense must be 'clockwise' or 'counterclockwise'.")
    phi_zero = conv.get("phi_zero_deg", 0.0)
    if not isinstance(phi_zero, (int, float)):
        raise FileFormatError(f"{where}: phi_zero_deg must be a number of degrees.")
    normalize = bool(doc.get("normalize", normalize))
    faces = doc.get("face", [])
    angles = doc.get("angle", [])
    if not isinstance(faces, list) or not isinstance(angles, list):
        raise FileFormatError(f"{where}: use [[face]] and [[angle]] arrays of tables.")
    if bool(faces) == bool(angles):
        raise FileFormatError(
            f"{where}: give either [[face]] entries (phi_deg/rho_deg or normal) or [[angle]] "
            "entries (faces, angle_deg), not both and not neither."
        )
    try:
        if angles:
            pairs, values, sig, wts = [], [], [], []
            for k, entry in enumerate(angles):
                if not isinstance(entry, dict) or "faces" not in entry or "angle_deg" not in entry:
                    raise FileFormatError(f"{where}: [[angle]] number {k + 1} needs faces = "
                                          "[\"A\", \"B\"] and angle_deg.")
                unknown = sorted(set(entry) - {"faces", "angle_deg", "sigma_deg", "weight",
                                               "note"})
                if unknown:
                    raise FileFormatError(
                        f"{where}: [[angle]] number {k + 1} has unknown key {unknown[0]!r}; "
                        "allowed: faces, angle_deg, sigma_deg, weight, note."
                    )
                pair = entry["faces"]
                if not isinstance(pair, list) or len(pair) != 2:
                    raise FileFormatError(f"{where}: [[angle]] number {k + 1}: faces must list "
                                          "two labels.")
                pairs.append((str(pair[0]), str(pair[1])))
                values.append(_float(str(entry["angle_deg"]), f"{where}, angle {k + 1}"))
                sig.append(entry.get("sigma_deg"))
                wts.append(entry.get("weight"))
            return measurements_from_arrays(
                pairs=pairs, angles_deg=values,
                sigma_deg=_column_or_none(sig, where, "sigma_deg"),
                weights=_column_or_none(wts, where, "weight"),
                specimen=specimen, source=where,
            )
        labels, phis, rhos, normals, sig, wts = [], [], [], [], [], []
        for k, entry in enumerate(faces):
            if not isinstance(entry, dict):
                raise FileFormatError(f"{where}: [[face]] number {k + 1} is not a table.")
            unknown = sorted(set(entry) - {"label", "phi_deg", "rho_deg", "normal",
                                           "sigma_deg", "weight", "note"})
            if unknown:
                raise FileFormatError(
                    f"{where}: [[face]] number {k + 1} has unknown key {unknown[0]!r}; "
                    "allowed: label, phi_deg, rho_deg, normal, sigma_deg, weight, note."
                )
            if "normal" in entry and ("phi_deg" in entry or "rho_deg" in entry):
                raise FileFormatError(f"{where}: [[face]] number {k + 1} gives both a normal "
                                      "and phi/rho readings; give one.")
            labels.append(str(entry.get("label", f"F{k + 1}")))
            if "normal" in entry:
                normals.append(entry["normal"])
            elif "phi_deg" in entry and "rho_deg" in entry:
                phis.append(_float(str(entry["phi_deg"]), f"{where}, face {k + 1} phi_deg"))
                rhos.append(_float(str(entry["rho_deg"]), f"{where}, face {k + 1} rho_deg"))
            else:
                raise FileFormatError(f"{where}: [[face]] number {k + 1} needs phi_deg and "
                                      "rho_deg, or normal = [x, y, z].")
            sig.append(entry.get("sigma_deg"))
            wts.append(entry.get("weight"))
        if normals and phis:
            raise FileFormatError(f"{where}: faces mix normals and phi/rho readings; use one.")
        common: dict[str, Any] = dict(
            labels=labels, sigma_deg=_column_or_none(sig, where, "sigma_deg"),
            weights=_column_or_none(wts, where, "weight"), specimen=specimen, source=where,
        )
        if normals:
            try:
                arr = np.array(normals, dtype=float)
            except (TypeError, ValueError):
                raise FileFormatError(f"{where}: every normal must be a list of three "
                                      "numbers.") from None
            return measurements_from_arrays(normals=arr, normalize=normalize, **common)
        return measurements_from_arrays(
            phi_deg=phis, rho_deg=rhos, phi_zero_deg=float(phi_zero),
            clockwise=(sense == "clockwise"), **common,
        )
    except InputError as exc:
        raise FileFormatError(f"{where}: {exc}") from None


def _column_or_none(values: list[Any], where: str, name: str) -> list[float] | None:
    if all(v is None for v in values):
        return None
    if any(v is None for v in values):
        raise FileFormatError(f"{where}: {name} is given for some entries only; give it for "
                              "all or none.")
    return [_float(str(v), f"{where}, {name}") for v in values]


def parse_measurements(text: str, fmt: str, *, source: str = "",
                       normalize: bool = False) -> Measurements:
    r"""Parse measurement text in ``"csv"`` or ``"toml"`` format.

    Parameters
    ----------
    text : str
        File contents.
    fmt : {"csv", "toml"}
        The format.
    source : str
        Name used in error messages.
    normalize : bool
        Scale given normals to unit length instead of refusing non-unit ones.

    Returns
    -------
    Measurements

    Raises
    ------
    FileFormatError
        With one sentence naming the problem.

    Examples
    --------
    >>> m = parse_measurements("label,phi_deg,rho_deg\nm1,0,90\nm2,60,90\n", "csv")
    >>> m.labels
    ('m1', 'm2')
    """
    where = source or "measurements"
    if fmt == "csv":
        return _parse_csv(text, where, normalize)
    if fmt == "toml":
        return _parse_toml(text, where, normalize)
    raise FileFormatError(f"{where}: unknown format {fmt!r}; use .csv or .toml.")


def read_measurements(path: str | os.PathLike[str], *, normalize: bool = False) -> Measurements:
    """Read measured faces from a ``.csv`` or ``.toml`` file.

    Parameters
    ----------
    path : path-like
        The file; its suffix (.csv or .toml) selects the format.
    normalize : bool
        Scale given normals to unit length instead of refusing non-unit ones.

    Returns
    -------
    Measurements

    Raises
    ------
    FileFormatError
        If the file is missing, unreadable, or breaks the documented format.
    """
    p = Path(path)
    suffix = p.suffix.lower()
    if suffix not in (".csv", ".toml"):
        raise FileFormatError(f"{p}: unknown measurement file type {suffix or '(none)'}; "
                              "use .csv or .toml.")
    try:
        text = p.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise FileFormatError(f"{p}: no such file.") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise FileFormatError(f"{p}: cannot read the file ({exc}).") from None
    return parse_measurements(text, suffix[1:], source=str(p), normalize=normalize)
