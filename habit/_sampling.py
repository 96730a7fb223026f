"""Private: Monte Carlo over uncertain form values, seeded per chunk (see habit.batch)."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from habit import _execute
from habit._solve import (
    PlaneSet,
    Progress,
    _region_name,
    _seconds_per_shape,
    prepare_planes,
    solve_shapes,
)
from habit.errors import InputError
from habit.tolerances import DEFAULT, Tolerances

__all__ = ["SAMPLE_CHUNK", "SampleSummary", "sample_shapes"]

#: Draws per task; fixed so that the numbers do not depend on the number of workers.
SAMPLE_CHUNK = 20_000


@dataclass(frozen=True, slots=True)
class SampleSummary:
    """Monte Carlo over uncertain form values: what the shape does, with intervals.

    Attributes
    ----------
    planes : PlaneSet
    values : (n, F) float array
        The drawn values (draws with a value <= 0 are dropped, see ``n_dropped``).
    form_fractions : (n, F) float array
        Area fraction of each form in each drawn shape.
    volume : (n,) float array
        Volume of each shape (the values read as lengths, cubed).
    present : (n, F) bool array
    level : float
        Confidence level of the intervals, e.g. 0.95.
    p_present : (F,) float array
        Share of the shapes in which each form is present.
    p_present_interval : (F, 2) float array
        Wilson score interval of that probability.
    fraction_mean, fraction_sd : (F,) float arrays
    fraction_interval : (F, 2) float array
        Central interval of the area fraction (percentiles of the draws).
    volume_mean, volume_sd : float
    volume_interval : (2,) float array
    n_dropped : int
        Draws with a non-positive value (not used).
    n_fallback : int
        Shapes recomputed with a hull.
    """

    planes: PlaneSet
    values: NDArray[np.float64]
    form_fractions: NDArray[np.float64]
    volume: NDArray[np.float64]
    present: NDArray[np.bool_]
    level: float
    p_present: NDArray[np.float64]
    p_present_interval: NDArray[np.float64]
    fraction_mean: NDArray[np.float64]
    fraction_sd: NDArray[np.float64]
    fraction_interval: NDArray[np.float64]
    volume_mean: float
    volume_sd: float
    volume_interval: NDArray[np.float64]
    n_dropped: int
    n_fallback: int

    @property
    def n(self) -> int:
        """Number of shapes used."""
        return int(self.volume.shape[0])

    def region_counts(self) -> dict[str, int]:
        """How many shapes show each present-form set, by name."""
        bits = (1 << np.arange(self.present.shape[1])).astype(np.int64)
        masks = (self.present.astype(np.int64) * bits).sum(axis=1)
        found, counts = np.unique(masks, return_counts=True)
        return {
            _region_name(self.planes, int(m)): int(c) for m, c in zip(found, counts, strict=True)
        }


def _seed_sequence(rng: Any) -> np.random.SeedSequence:
    if isinstance(rng, np.random.SeedSequence):
        return rng
    if isinstance(rng, np.random.Generator):
        return np.random.SeedSequence(int(rng.integers(0, 2**63)))
    if rng is None or isinstance(rng, (int, np.integer)):
        return np.random.SeedSequence(None if rng is None else int(rng))
    raise InputError(f"rng must be an int seed, a numpy Generator or None; got {rng!r}.")


def _wilson(k: NDArray[np.float64], n: int, level: float) -> NDArray[np.float64]:
    """Wilson score interval (Wilson 1927) of k successes in n trials, (F, 2)."""
    from scipy.special import ndtri

    if n == 0:
        return np.full((len(k), 2), np.nan)
    z = float(ndtri(0.5 + level / 2))
    p = k / n
    centre = (p + z * z / (2 * n)) / (1 + z * z / n)
    half = z * np.sqrt(p * (1 - p) / n + z * z / (4 * n * n)) / (1 + z * z / n)
    return np.column_stack([np.clip(centre - half, 0, 1), np.clip(centre + half, 0, 1)])


def _sample_task(task: tuple[Any, ...]) -> tuple[Any, ...]:
    """Draw one chunk of values from its own seed and solve the shapes (runs anywhere)."""
    planes, plain, mean, sd, chol, dist, n, seed, per_face, tol = task
    rng = np.random.default_rng(seed)
    nf = len(mean)
    if per_face:
        z = rng.standard_normal((n, planes.n_planes))  # (n, N): every face on its own
        scale = sd[planes.forms]
        centre = mean[planes.forms]
    else:
        z = rng.standard_normal((n, nf)) @ chol.T  # (n, F), correlated
        scale, centre = sd, mean
    if dist == "uniform":
        from scipy.special import ndtr

        values = centre + scale * np.sqrt(3.0) * (2.0 * ndtr(z) - 1.0)  # same sd as normal
    else:
        values = centre + scale * z
    ok = np.all(values > 0, axis=1)
    values = values[ok]
    target = plain if per_face else planes
    energies = values if per_face else planes.expand(values)
    if len(values):
        batch = solve_shapes(target, energies, tol=tol, scheduler="inline")
        fr, vol, pres, nfb = (
            batch.form_fractions,
            batch.volume,
            batch.form_present,
            batch.n_fallback,
        )
    else:
        fr, vol, pres, nfb = np.zeros((0, nf)), np.zeros(0), np.zeros((0, nf), bool), 0
    if per_face:  # report the mean value of each form's faces
        values = np.stack([values[:, planes.forms == f].mean(axis=1) for f in range(nf)], axis=1)
    return values, fr, vol, pres, int((~ok).sum()), nfb


def sample_shapes(
    planes: PlaneSet,
    mean: ArrayLike,
    sd: ArrayLike,
    *,
    n: int = 10_000,
    distribution: str = "normal",
    correlation: ArrayLike | None = None,
    per_face: bool = False,
    rng: Any = None,
    level: float = 0.95,
    tol: Tolerances = DEFAULT,
    progress: Progress | None = None,
    scheduler: str | None = None,
    workers: int | None = None,
) -> SampleSummary:
    """Monte Carlo over uncertain form values (energies, distances or rates).

    Each form's value is drawn around ``mean`` with standard deviation ``sd``: normal,
    or uniform on ``mean +- sqrt(3) sd``. A correlation matrix couples the forms (for the
    uniform case through normal scores, a Gaussian copula). With ``per_face`` every face
    gets its own draw (symmetry broken; slower, since no symmetry can be used).

    Draws are made in chunks of :data:`SAMPLE_CHUNK`, each from its own child of one
    ``numpy.random.SeedSequence``, so the same ``rng`` gives the same numbers in-process,
    in local processes or on a dask cluster.

    Parameters
    ----------
    planes : PlaneSet
    mean, sd : (F,) array_like
        Mean and standard deviation of each form's value (sd >= 0).
    n : int
        Number of draws.
    distribution : {'normal', 'uniform'}
    correlation : (F, F) array_like, optional
        Correlation matrix (symmetric, unit diagonal, positive semi-definite).
    per_face : bool
        Draw every face separately instead of every form.
    rng : int, numpy.random.Generator or None
        Seed.
    level : float
        Confidence level of the intervals (0 < level < 1).
    tol : Tolerances
    progress : callable, optional
        Called with the number of draws done so far.
    scheduler, workers
        As for :func:`solve_shapes`.

    Returns
    -------
    SampleSummary

    References
    ----------
    E. B. Wilson, "Probable inference, the law of succession, and statistical inference",
    J. Am. Stat. Assoc. 22, 209-212 (1927) (interval of a probability).

    Examples
    --------
    >>> import numpy as np
    >>> from habit.batch import prepare_planes, sample_shapes
    >>> cube = np.vstack([np.eye(3), -np.eye(3)])
    >>> octa = np.array([[a, b, c] for a in (1, -1) for b in (1, -1) for c in (1, -1)])
    >>> planes = prepare_planes(np.vstack([cube, octa / 3 ** 0.5]), forms=[0] * 6 + [1] * 8)
    >>> out = sample_shapes(planes, [1.0, 1.0], [0.0, 0.0], n=100, rng=1)
    >>> out.fraction_sd.round(12).tolist(), out.p_present.tolist()
    ([0.0, 0.0], [1.0, 1.0])
    """
    mu = np.asarray(mean, dtype=float).reshape(-1)
    sig = np.asarray(sd, dtype=float).reshape(-1)
    nf = planes.n_forms
    if mu.shape != (nf,) or sig.shape != (nf,):
        raise InputError(f"mean and sd need one value per form ({nf}).")
    if not (np.all(np.isfinite(mu)) and np.all(mu > 0)):
        raise InputError("every mean value must be a positive finite number.")
    if not (np.all(np.isfinite(sig)) and np.all(sig >= 0)):
        raise InputError("every standard deviation must be a finite number >= 0.")
    if distribution not in ("normal", "uniform"):
        raise InputError(f"distribution must be 'normal' or 'uniform', got {distribution!r}.")
    if not (0 < level < 1):
        raise InputError(f"level must lie between 0 and 1 (e.g. 0.95), got {level}.")
    if int(n) < 1:
        raise InputError(f"n must be a positive number of draws, got {n}.")
    n = int(n)
    if correlation is None:
        chol = np.eye(nf)
    else:
        if per_face:
            raise InputError("a correlation matrix couples forms; it cannot be used per face.")
        corr = np.asarray(correlation, dtype=float)
        if (
            corr.shape != (nf, nf)
            or not np.allclose(corr, corr.T)
            or not np.allclose(np.diag(corr), 1.0)
        ):
            raise InputError(
                f"correlation must be a symmetric ({nf}, {nf}) matrix with ones on the diagonal."
            )
        w, v = np.linalg.eigh(corr)
        if w.min() < -1e-10:
            raise InputError("correlation must be positive semi-definite (a valid correlation).")
        chol = v * np.sqrt(np.clip(w, 0, None))  # chol @ chol.T == corr
    plain = None
    if per_face:
        plain = prepare_planes(
            planes.normals,
            forms=planes.forms,
            form_labels=planes.form_labels,
            form_names=planes.form_names,
            hkl=planes.hkl,
        )
    sizes = [SAMPLE_CHUNK] * (n // SAMPLE_CHUNK) + ([n % SAMPLE_CHUNK] if n % SAMPLE_CHUNK else [])
    seeds = _seed_sequence(rng).spawn(len(sizes))
    tasks = [
        (planes, plain, mu, sig, chol, distribution, k, seeds[i], per_face, tol)
        for i, k in enumerate(sizes)
    ]
    per_shape = _seconds_per_shape(plain if plain is not None else planes, "auto")
    mode = _execute.choose_mode(scheduler, n * per_shape, workers)
    parts: list[Any] = [None] * len(tasks)
    done = 0
    for i, result in _execute.run_tasks(
        _sample_task, tasks, mode=mode, workers=workers, scheduler=scheduler
    ):
        parts[i] = result
        done += sizes[i]
        if progress is not None:
            progress(done)
    values = np.vstack([p[0] for p in parts])
    fractions = np.vstack([p[1] for p in parts])
    volume = np.concatenate([p[2] for p in parts])
    present = np.vstack([p[3] for p in parts])
    n_dropped = sum(p[4] for p in parts)
    n_fallback = sum(p[5] for p in parts)
    m = len(volume)
    if m == 0:
        raise InputError("every draw had a value <= 0; reduce the standard deviations.")
    lo, hi = 50 * (1 - level), 50 * (1 + level)
    out = SampleSummary(
        planes=planes,
        values=values,
        form_fractions=fractions,
        volume=volume,
        present=present,
        level=float(level),
        p_present=present.mean(axis=0),
        p_present_interval=_wilson(present.sum(axis=0).astype(float), m, level),
        fraction_mean=fractions.mean(axis=0),
        fraction_sd=fractions.std(axis=0, ddof=1) if m > 1 else np.zeros(nf),
        fraction_interval=np.percentile(fractions, [lo, hi], axis=0).T,
        volume_mean=float(volume.mean()),
        volume_sd=float(volume.std(ddof=1)) if m > 1 else 0.0,
        volume_interval=np.percentile(volume, [lo, hi]),
        n_dropped=int(n_dropped),
        n_fallback=int(n_fallback),
    )
    for name in ("values", "form_fractions", "volume", "present", "p_present",
                 "p_present_interval", "fraction_mean", "fraction_sd", "fraction_interval",
                 "volume_interval"):  # fmt: skip
        getattr(out, name).setflags(write=False)
    return out
