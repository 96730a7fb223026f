"""``habit sample``: Monte Carlo over uncertain form values of a crystal."""

from __future__ import annotations

from typing import Any

import click

from habit.cli._common import crystal_options, json_option, kind_options
from habit.cli._scale import execution_options


@click.command("sample")
@click.argument("args", nargs=-1, metavar="CRYSTAL")
@crystal_options
@click.option(
    "--form",
    "form_texts",
    multiple=True,
    metavar="HKL=VALUE",
    help="A form and its mean value (replaces the crystal file's forms).",
)
@click.option(
    "--sd",
    "sd_texts",
    multiple=True,
    metavar="HKL=SD",
    help="Standard deviation of a form's value, same unit as the value (default 0).",
)
@click.option(
    "--relative-sd",
    type=float,
    default=None,
    metavar="R",
    help="Standard deviation of every form as a fraction of its value (e.g. 0.05).",
)
@click.option(
    "--corr",
    "corr_texts",
    multiple=True,
    metavar="HKL:HKL=R",
    help="Correlation of two forms' values, e.g. --corr 100:111=0.5.",
)
@click.option(
    "-n",
    "--draws",
    type=click.IntRange(1, 100_000_000),
    default=10_000,
    show_default=True,
    help="Number of draws.",
)
@click.option(
    "--distribution",
    type=click.Choice(["normal", "uniform"]),
    default="normal",
    show_default=True,
    help="Normal, or uniform with the same standard deviation.",
)
@click.option("--per-face", is_flag=True, help="Draw every face on its own (breaks symmetry).")
@click.option("--seed", type=int, default=None, help="Seed: the same seed gives the same numbers.")
@click.option(
    "--level",
    type=click.FloatRange(0.0, 1.0, min_open=True, max_open=True),
    default=0.95,
    show_default=True,
    help="Confidence level of intervals, between 0 and 1.",
)
@kind_options
@click.option("--csv", "csv_path", metavar="PATH", help="Write every draw as CSV.")
@click.option("--plot", "plot_path", metavar="FILE", help="Histograms with intervals (.png).")
@execution_options
@json_option
def command(
    args: tuple[str, ...],
    cell: str | None,
    crystal_class: str | None,
    space_group: str | None,
    form_texts: tuple[str, ...],
    sd_texts: tuple[str, ...],
    relative_sd: float | None,
    corr_texts: tuple[str, ...],
    draws: int,
    distribution: str,
    per_face: bool,
    seed: int | None,
    level: float,
    kind: str | None,
    csv_path: str | None,
    plot_path: str | None,
    scheduler: str | None,
    workers: int | None,
    json_path: str | None,
) -> None:
    """How likely each form of CRYSTAL is to show, when its values are uncertain.

    Prints, per form, the probability that it is present and its area fraction with a
    central interval, and the volume's interval. Example:

    habit sample demo --relative-sd 0.05 -n 20000 --seed 1
    """
    import numpy as np

    from habit.batch import crystal_planes, sample_shapes
    from habit.cli._common import atomic_output, progress_bar, resolve_crystal, write_json
    from habit.cli._scale import check_plot_path, forms_and_values, value_unit
    from habit.errors import InputError

    crystal, rest = resolve_crystal(args, cell, crystal_class, space_group)
    if rest:
        raise InputError(f"unexpected argument {rest[0]!r}; give forms as --form HKL=VALUE.")
    check_plot_path(plot_path)
    hkls, values, kind = forms_and_values(crystal, form_texts, kind)
    unit = value_unit(kind)
    planes = crystal_planes(crystal, hkls)
    mean = np.array(values, dtype=float)
    sd = np.zeros(planes.n_forms) if relative_sd is None else relative_sd * mean
    for text in sd_texts:
        form, sep, val = text.partition("=")
        try:
            sd[planes.form_index(form)] = float(val)
        except ValueError:
            raise InputError(f"--sd takes HKL=SD, e.g. 111=0.05; got {text!r}.") from None
    if not np.any(sd > 0):
        click.echo(
            "note: no spread given (--sd HKL=SD or --relative-sd R), so every draw is the "
            "same shape.",
            err=True,
        )
    corr = None
    if corr_texts:
        corr = np.eye(planes.n_forms)
        for text in corr_texts:
            pair, sep, val = text.partition("=")
            a, sep2, b = pair.partition(":")
            try:
                if not (sep and sep2):
                    raise ValueError
                r = float(val)
            except ValueError:
                raise InputError(
                    f"--corr takes HKL:HKL=R, e.g. 100:111=0.5; got {text!r}."
                ) from None
            i, j = planes.form_index(a), planes.form_index(b)
            corr[i, j] = corr[j, i] = r
    kw: dict[str, Any] = dict(
        n=draws, distribution=distribution, correlation=corr, per_face=per_face,
        rng=seed, level=level, scheduler=scheduler, workers=workers,
    )  # fmt: skip
    quiet = json_path == "-"
    if quiet:
        out = sample_shapes(planes, mean, sd, **kw)
    else:
        with progress_bar(draws, "draws") as update:
            out = sample_shapes(planes, mean, sd, progress=update, **kw)
    labels = [planes.label(f) for f in range(planes.n_forms)]
    pct = round(100 * level)
    report = {
        "crystal": crystal.name,
        "kind": kind,
        "value_unit": unit,
        "draws": draws,
        "used": out.n,
        "dropped_non_positive": out.n_dropped,
        "seed": seed,
        "distribution": distribution,
        "per_face": per_face,
        "level": level,
        "forms": [
            {
                "form": labels[f],
                "mean_value": float(mean[f]),
                "sd_value": float(sd[f]),
                "p_present": float(out.p_present[f]),
                "p_present_interval": out.p_present_interval[f].tolist(),
                "area_fraction_mean": float(out.fraction_mean[f]),
                "area_fraction_sd": float(out.fraction_sd[f]),
                "area_fraction_interval": out.fraction_interval[f].tolist(),
            }
            for f in range(planes.n_forms)
        ],
        "volume_A3": {
            "mean": out.volume_mean,
            "sd": out.volume_sd,
            "interval": out.volume_interval.tolist(),
        },
        "shapes": out.region_counts(),
    }
    if not quiet:
        seed_text = f"seed {seed}" if seed is not None else "unseeded: give --seed to repeat"
        click.echo(f"{crystal.name}: {out.n} shapes ({distribution} draws, {seed_text})")
        if out.n_dropped:
            click.echo(
                f"warning: {out.n_dropped} of {draws} draws gave a value <= 0 and were "
                "dropped; the spread is too large for a positive quantity."
            )
        click.echo(
            f"\n{'form':<10}{'value (' + unit + ')':>18}{'P(present)':>12}"
            f"{'area fraction':>15}{pct:>4d} % interval"
        )
        for f, lab in enumerate(labels):
            lo, hi = out.fraction_interval[f]
            click.echo(
                f"{lab:<10}{mean[f]:>10.4g} ± {sd[f]:<5.3g}{out.p_present[f]:>12.4f}"
                f"{out.fraction_mean[f]:>15.4f}   [{lo:.4f}, {hi:.4f}]"
            )
        vlo, vhi = out.volume_interval
        click.echo(f"\nvolume (Å³, values read as Å): mean {out.volume_mean:.4g}, "
                   f"{pct} % interval [{vlo:.4g}, {vhi:.4g}]")  # fmt: skip
        click.echo("\nshapes seen (forms present: count)")
        for name, count in sorted(out.region_counts().items(), key=lambda kv: -kv[1]):
            click.echo(f"  {name}: {count}")
    if csv_path:
        import csv

        with atomic_output(csv_path) as handle:
            writer = csv.writer(handle, lineterminator="\n")
            head = [f"value_{lab} ({unit})" for lab in labels]
            head += [f"area_fraction_{lab}" for lab in labels] + ["volume_A3"]
            writer.writerow(head)
            for v, fr, vol in zip(out.values.tolist(), out.form_fractions.tolist(),
                                  out.volume.tolist(), strict=True):  # fmt: skip
                writer.writerow([repr(x) for x in v + fr + [vol]])
    if plot_path:
        from habit.plot import save_figure
        from habit.plot.maps import plot_sample_histograms

        artists = plot_sample_histograms(out)
        save_figure(artists[0][0].figure, plot_path)
    if json_path is not None:
        write_json(report, json_path)
    if not quiet:
        for p in (csv_path, plot_path):
            if p:
                click.echo(f"wrote {p}")
