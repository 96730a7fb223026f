"""Stereograms: poles with indices, zone circles, the Wulff or Schmidt net.

Display convention: the projection axis (c, or the goniometer's polar axis) is at the
centre; the pole at φ = 0 (the +y direction of habit's frame, the pole of (010)) is at the
right and φ increases clockwise, so (100) of an orthogonal cell is at the bottom — the
usual way of drawing a crystal stereogram (common practice). Poles on the upper
hemisphere are filled symbols; those of the lower hemisphere, folded up, are open.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

import numpy as np

from habit._typing import ArrayLike, FloatArray
from habit.stereo import great_circle, project, small_circle

__all__ = ["to_display", "plot_net", "plot_poles", "plot_zone", "plot_stereogram"]


def to_display(points: ArrayLike) -> FloatArray:
    """Turn projected points (x, y) of habit's frame into drawing coordinates.

    Parameters
    ----------
    points : (..., 2) float array

    Returns
    -------
    (..., 2) float array
        ``(y, -x)``: +y (φ = 0) to the right, +x (φ = 90°) downwards.
    """
    p = np.asarray(points, dtype=float)
    return np.stack([p[..., 1], -p[..., 0]], axis=-1)


def _axes(ax: Any) -> Any:
    if ax is None:
        import matplotlib.pyplot as plt

        _, ax = plt.subplots(figsize=(6, 6))
    ax.set_aspect("equal")
    ax.set_xlim(-1.08, 1.08)
    ax.set_ylim(-1.08, 1.08)
    ax.set_axis_off()
    return ax


def _curve(vectors: FloatArray, net: str) -> FloatArray:
    """Project a curve of unit vectors, cutting it (NaN) where it dips below z = 0."""
    pts, _ = project(vectors, net)
    pts = to_display(pts)
    pts[vectors[:, 2] < -1e-9] = np.nan
    return pts


def plot_net(ax: Any = None, *, net: str = "wulff", step_deg: float = 10.0,
             **kwargs: Any) -> list[Any]:
    """Draw the primitive circle and a net of great and small circles.

    The net's axis lies in the plane of the drawing, vertical (north–south), as on the
    printed Wulff and Schmidt nets: great circles through its ends, small circles about
    them, every ``step_deg`` degrees.

    Parameters
    ----------
    ax : matplotlib Axes, optional
    net : {"wulff", "equal-area"}
    step_deg : float
        Spacing of the net lines, degrees.
    **kwargs
        Passed to ``ax.plot`` for the net lines (default thin grey).

    Returns
    -------
    list of matplotlib artists
    """
    ax = _axes(ax)
    style = {"color": "0.8", "lw": 0.5, "zorder": 0}
    style.update(kwargs)
    artists = []
    # net axis: drawing "up" = -x of habit's frame (display is (y, -x))
    axis = np.array([-1.0, 0.0, 0.0])
    east = np.array([0.0, 1.0, 0.0])
    for deg in np.arange(step_deg, 180.0, step_deg):
        t = np.radians(deg)
        pole = np.cos(t) * east + np.sin(t) * np.array([0.0, 0.0, 1.0])
        if abs(deg - 90.0) > 1e-9:
            pts = _curve(small_circle(pole, np.pi / 2, 361), net)
            artists += ax.plot(pts[:, 0], pts[:, 1], **style)
        pts = _curve(small_circle(axis, t, 361), net)
        artists += ax.plot(pts[:, 0], pts[:, 1], **style)
    prim = np.linspace(0, 2 * np.pi, 361)
    artists += ax.plot(np.cos(prim), np.sin(prim), color="k", lw=1.0, zorder=1)
    return artists


def plot_poles(vectors: ArrayLike, labels: Sequence[str] | None = None, ax: Any = None, *,
               net: str = "wulff", marker: str = "o", color: str = "C0",
               label: str | None = None, text_offset: tuple[float, float] = (4, 4),
               **kwargs: Any) -> list[Any]:
    """Plot poles: filled on the upper hemisphere, open (folded up) on the lower one.

    Parameters
    ----------
    vectors : (N, 3) float array
        Pole directions in the frame of the stereogram (z = centre).
    labels : sequence of str, optional
        Text written beside each pole.
    ax : matplotlib Axes, optional
    net : {"wulff", "equal-area"}
    marker, color : str
    label : str, optional
        Legend entry.
    text_offset : (float, float)
        Offset of the labels from the poles, in points.
    **kwargs
        Passed to ``ax.scatter``.

    Returns
    -------
    list of matplotlib artists
    """
    ax = _axes(ax)
    v = np.atleast_2d(np.asarray(vectors, dtype=float))
    pts, upper = project(v, net)
    pts = to_display(pts)
    artists = []
    if np.any(upper):
        artists.append(ax.scatter(pts[upper, 0], pts[upper, 1], marker=marker, color=color,
                                  label=label, zorder=3, **kwargs))
    if np.any(~upper):
        lower_label = None if np.any(upper) else label
        if marker in ("x", "+", "1", "2", "3", "4", "|", "_"):  # unfilled: paler instead
            artists.append(ax.scatter(pts[~upper, 0], pts[~upper, 1], marker=marker,
                                      color=color, alpha=0.45, zorder=3, label=lower_label,
                                      **kwargs))
        else:
            artists.append(ax.scatter(pts[~upper, 0], pts[~upper, 1], marker=marker,
                                      facecolors="none", edgecolors=color, zorder=3,
                                      label=lower_label, **kwargs))
    if labels is not None:
        for (x, y), text, up in zip(pts, labels, upper, strict=True):
            # lower-hemisphere labels to the left, so a pole pair (hkl)/(hk-l) stays legible
            offset = text_offset if up else (-text_offset[0], text_offset[1])
            artists.append(ax.annotate(text, (x, y), xytext=offset, textcoords="offset points",
                                       fontsize=7, color=color, ha="left" if up else "right"))
    return artists


def plot_zone(axis: ArrayLike, ax: Any = None, *, net: str = "wulff", **kwargs: Any
              ) -> list[Any]:
    """Draw the zone circle (great circle) of a zone axis, upper hemisphere.

    Parameters
    ----------
    axis : (3,) float array
        Zone axis in the stereogram's frame.
    ax : matplotlib Axes, optional
    net : {"wulff", "equal-area"}
    **kwargs
        Passed to ``ax.plot``.

    Returns
    -------
    list of matplotlib artists
    """
    ax = _axes(ax)
    style = {"color": "C2", "lw": 0.8}
    style.update(kwargs)
    pts = _curve(great_circle(axis, 361), net)
    return list(ax.plot(pts[:, 0], pts[:, 1], **style))


def plot_stereogram(
    poles: ArrayLike,
    labels: Sequence[str] | None = None,
    ax: Any = None,
    *,
    net: str = "wulff",
    draw_net: bool = True,
    zones: ArrayLike | None = None,
    measured: ArrayLike | None = None,
    measured_labels: Sequence[str] | None = None,
    title: str | None = None,
) -> list[Any]:
    """Draw a complete stereogram: net, calculated poles, zone circles, measured poles.

    Parameters
    ----------
    poles : (N, 3) float array
        Calculated poles in the crystal frame (c at the centre).
    labels : sequence of str, optional
        Their indices as text.
    ax : matplotlib Axes, optional
    net : {"wulff", "equal-area"}
    draw_net : bool
    zones : (Z, 3) float array, optional
        Zone axes whose circles are drawn.
    measured : (K, 3) float array, optional
        Measured poles rotated into the crystal frame, drawn as crosses beside the
        calculated ones.
    measured_labels : sequence of str, optional
    title : str, optional

    Returns
    -------
    list of matplotlib artists
    """
    ax = _axes(ax)
    artists: list[Any] = []
    if draw_net:
        artists += plot_net(ax, net=net)
    else:
        prim = np.linspace(0, 2 * np.pi, 361)
        artists += ax.plot(np.cos(prim), np.sin(prim), color="k", lw=1.0)
    if zones is not None:
        for z in np.atleast_2d(np.asarray(zones, dtype=float)):
            artists += plot_zone(z, ax, net=net)
    artists += plot_poles(poles, labels, ax, net=net, label="calculated")
    if measured is not None:
        artists += plot_poles(measured, measured_labels, ax, net=net, marker="x", color="C3",
                              label="measured", text_offset=(4, -10))
        artists.append(ax.legend(loc="lower left", fontsize=7, frameon=False))
    name = "Wulff net (equal-angle)" if net == "wulff" else "Schmidt net (equal-area)"
    artists.append(ax.set_title(title or name, fontsize=9))
    return artists
