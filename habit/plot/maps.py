"""Figures for shape maps and Monte Carlo summaries (:mod:`habit.batch`).

Each function takes ``ax=None`` (a new figure when None), forwards ``**kwargs`` to the
main matplotlib call and returns the artists it made; none calls ``show()``.
"""

from __future__ import annotations

from typing import Any

import numpy as np

__all__ = ["plot_map_regions", "plot_map_fraction", "plot_sample_histograms"]

#: Colours of the regions, in order of first appearance (a colour-blind-safe set).
_COLOURS = (
    "#4477AA", "#EE6677", "#228833", "#CCBB44", "#66CCEE", "#AA3377", "#BBBBBB",
    "#332288", "#DDCC77", "#117733", "#88CCEE", "#882255",
)  # fmt: skip


def _axes(ax: Any) -> Any:
    if ax is None:
        import matplotlib.pyplot as plt

        _, ax = plt.subplots(figsize=(6.4, 6.4), layout="constrained")
    return ax


def _axis_labels(ax: Any, shape_map: Any, unit: str) -> None:
    planes = shape_map.planes
    ax.set_xlabel(f"{planes.label(shape_map.x_form)} value ({unit})")
    ax.set_ylabel(f"{planes.label(shape_map.y_form)} value ({unit})")


def _boundary_segments(shape_map: Any) -> list[list[tuple[float, float]]]:
    """Segments on the cell edges between neighbouring grid points of different regions."""
    x, y, r = shape_map.x, shape_map.y, shape_map.regions
    dx = np.diff(x).mean() / 2
    dy = np.diff(y).mean() / 2
    segs = []
    jj, ii = np.nonzero(r[:, 1:] != r[:, :-1])  # vertical segments between x neighbours
    for j, i in zip(jj, ii, strict=True):
        xm = (x[i] + x[i + 1]) / 2
        segs.append([(xm, y[j] - dy), (xm, y[j] + dy)])
    jj, ii = np.nonzero(r[1:, :] != r[:-1, :])  # horizontal segments between y neighbours
    for j, i in zip(jj, ii, strict=True):
        ym = (y[j] + y[j + 1]) / 2
        segs.append([(x[i] - dx, ym), (x[i] + dx, ym)])
    return segs


def plot_map_regions(
    shape_map: Any,
    ax: Any = None,
    *,
    unit: str = "J/m²",
    boundaries: bool = True,
    computed: bool = False,
    legend: bool = True,
    **kwargs: Any,
) -> list[Any]:
    """Colour the map by the set of present forms and draw the boundaries.

    Parameters
    ----------
    shape_map : habit.batch.ShapeMap
    ax : matplotlib Axes, optional
    unit : str
        Unit of the two inputs, for the axis labels.
    boundaries : bool
        Draw the region boundaries (black lines on the cell edges).
    computed : bool
        Mark the points where a shape was computed (shows the refinement).
    legend : bool
        Name each region (present forms, with their names when known).
    **kwargs
        Passed to ``pcolormesh``.

    Returns
    -------
    list of matplotlib artists
        The mesh first, then the boundary lines, markers and legend when drawn.
    """
    from matplotlib.collections import LineCollection
    from matplotlib.colors import BoundaryNorm, ListedColormap
    from matplotlib.patches import Patch

    ax = _axes(ax)
    masks = [int(m) for m in np.unique(shape_map.regions)]
    index = {m: k for k, m in enumerate(masks)}
    image = np.vectorize(index.get)(shape_map.regions)  # (ny, nx) region numbers
    colours = [_COLOURS[k % len(_COLOURS)] for k in range(len(masks))]
    cmap = ListedColormap(colours)
    norm = BoundaryNorm(np.arange(len(masks) + 1) - 0.5, len(masks))
    kwargs.setdefault("shading", "nearest")
    mesh = ax.pcolormesh(shape_map.x, shape_map.y, image, cmap=cmap, norm=norm, **kwargs)
    artists: list[Any] = [mesh]
    if boundaries:
        lines = LineCollection(_boundary_segments(shape_map), colors="black", linewidths=1.0)
        ax.add_collection(lines)
        artists.append(lines)
    if computed:
        pts = shape_map.points
        artists.append(ax.plot(pts[:, 0], pts[:, 1], ",", color="black", alpha=0.5)[0])
    if legend:
        names = shape_map.region_names()
        handles = [
            Patch(facecolor=colours[index[m]], edgecolor="black", label=names[m]) for m in masks
        ]
        artists.append(
            ax.legend(
                handles=handles,
                title="forms present",
                fontsize="small",
                loc="upper center",
                bbox_to_anchor=(0.5, -0.14),
                borderaxespad=0.0,
            )
        )
    _axis_labels(ax, shape_map, unit)
    ax.set_title(f"Shape map: {shape_map.n_shapes} shapes computed")
    return artists


def plot_map_fraction(
    shape_map: Any, form: int | str, ax: Any = None, *, unit: str = "J/m²", **kwargs: Any
) -> list[Any]:
    """Colour the map by one form's share of the surface area (0 to 1).

    Parameters
    ----------
    shape_map : habit.batch.ShapeMap
    form : int or str
        The form, by number or label ('111').
    ax : matplotlib Axes, optional
    unit : str
        Unit of the two inputs, for the axis labels.
    **kwargs
        Passed to ``tricontourf`` (over the computed points).

    Returns
    -------
    list of matplotlib artists
        The filled contours and the colour bar.
    """
    ax = _axes(ax)
    f = shape_map.planes.form_index(form)
    pts = shape_map.points
    kwargs.setdefault("levels", np.linspace(0.0, 1.0, 21))
    kwargs.setdefault("cmap", "viridis")
    filled = ax.tricontourf(pts[:, 0], pts[:, 1], shape_map.point_fractions[:, f], **kwargs)
    bar = ax.figure.colorbar(filled, ax=ax)
    bar.set_label(f"area fraction of {shape_map.planes.label(f)} (0–1)")
    _axis_labels(ax, shape_map, unit)
    return [filled, bar]


def plot_sample_histograms(
    summary: Any, ax: Any = None, *, bins: int = 40, volume_unit: str = "Å³", **kwargs: Any
) -> list[Any]:
    """Histograms of each form's area fraction and of the volume, with their intervals.

    Parameters
    ----------
    summary : habit.batch.SampleSummary
    ax : sequence of F + 1 matplotlib Axes, optional
        One per form, then one for the volume. Default: a new figure.
    bins : int
    volume_unit : str
        Unit of the volume for its axis label.
    **kwargs
        Passed to ``hist``.

    Returns
    -------
    list of matplotlib artists
        For each panel the bar patches, then the interval lines.
    """
    import matplotlib.pyplot as plt

    planes = summary.planes
    nf = planes.n_forms
    if ax is None:
        _, grid = plt.subplots(
            1, nf + 1, figsize=(3.2 * (nf + 1), 3.0), squeeze=False, layout="constrained"
        )
        axes: list[Any] = list(grid[0])
    else:
        axes = list(np.atleast_1d(ax))
        if len(axes) != nf + 1:
            from habit.errors import InputError

            raise InputError(f"give {nf + 1} axes: one per form and one for the volume.")
    kwargs.setdefault("color", "#4477AA")
    artists: list[Any] = []
    pct = round(100 * summary.level)
    for f in range(nf):
        a = axes[f]
        data = summary.form_fractions[:, f]
        _, _, patches = a.hist(data, bins=bins, range=(0.0, 1.0), **kwargs)
        artists.append(patches)
        lo, hi = summary.fraction_interval[f]
        artists.append(a.axvline(lo, color="black", linestyle="--", linewidth=1))
        artists.append(a.axvline(hi, color="black", linestyle="--", linewidth=1))
        a.set_xlabel(f"area fraction of {planes.label(f)} (0–1)")
        a.set_ylabel("shapes (count)")
        a.set_title(
            f"present in {100 * summary.p_present[f]:.1f} %; {pct} % in [{lo:.3f}, {hi:.3f}]",
            fontsize="small",
        )
    a = axes[nf]
    _, _, patches = a.hist(summary.volume, bins=bins, **kwargs)
    artists.append(patches)
    for v in summary.volume_interval:
        artists.append(a.axvline(v, color="black", linestyle="--", linewidth=1))
    a.set_xlabel(f"volume ({volume_unit})")
    a.set_ylabel("shapes (count)")
    a.set_title(f"{pct} % interval dashed", fontsize="small")
    return artists
