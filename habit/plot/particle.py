"""Figures of atomistic particles: the particle coloured by site, dispersion against size."""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

__all__ = ["SITE_COLOURS", "plot_particle", "plot_dispersion"]

#: Colour of each site kind (facets of different forms share the facet colour family).
SITE_COLOURS: dict[str, str] = {
    "bulk": "#c9c9c9",
    "edge": "#d1495b",
    "vertex": "#2e2e2e",
}
_FACET_COLOURS = ("#00798c", "#edae49", "#66a182", "#8d6a9f", "#30638e", "#b5838d")


def _colour(label: str, facet_order: list[str]) -> str:
    if label in SITE_COLOURS:
        return SITE_COLOURS[label]
    if label not in facet_order:
        facet_order.append(label)
    return _FACET_COLOURS[facet_order.index(label) % len(_FACET_COLOURS)]


def plot_particle(
    particle: Any, ax: Any = None, *, show_bulk: bool = False, **kwargs: Any
) -> dict[str, Any]:
    """3-D scatter of a particle's atoms, coloured by site (facet form, edge, vertex).

    Parameters
    ----------
    particle : habit.particle.Particle
    ax : matplotlib 3-D Axes, optional
    show_bulk : bool
        Draw the bulk atoms too (hidden behind the surface; off by default).
    **kwargs
        Passed to ``ax.scatter``.

    Returns
    -------
    dict
        Site label -> the PathCollection drawn for it.
    """
    import matplotlib.pyplot as plt
    import numpy as np

    if ax is None:
        fig = plt.figure(figsize=(5.5, 5.0))
        ax = fig.add_subplot(projection="3d")
    labels = particle.site_labels()
    pos = particle.positions
    kwargs.setdefault("s", max(2.0, min(60.0, 6000.0 / max(1, particle.n_surface) ** 0.7)))
    kwargs.setdefault("depthshade", True)
    order: list[str] = []
    artists: dict[str, Any] = {}
    for label in sorted(set(labels.tolist()), key=lambda x: (x != "bulk", x)):
        if label == "bulk" and not show_bulk:
            continue
        mask = labels == label
        count = int(np.count_nonzero(mask))
        artists[label] = ax.scatter(
            pos[mask, 0],
            pos[mask, 1],
            pos[mask, 2],
            color=_colour(label, order),
            label=f"{label} ({count})",
            **kwargs,
        )
    span = float(np.ptp(pos, axis=0).max()) / 2 or 1.0
    centre = (pos.max(axis=0) + pos.min(axis=0)) / 2
    for setter, c in zip((ax.set_xlim, ax.set_ylim, ax.set_zlim), centre, strict=True):
        setter(c - span, c + span)
    ax.set_box_aspect((1, 1, 1))
    ax.set_xlabel("x (Å)")
    ax.set_ylabel("y (Å)")
    ax.set_zlabel("z (Å)")
    ax.set_title(
        f"{particle.n_atoms} atoms, {particle.diameter / 10:.2f} nm, "
        f"dispersion {particle.dispersion:.3f}",
        fontsize=9,
    )
    ax.legend(loc="upper left", fontsize=7, title="site (atoms)", title_fontsize=7)
    return artists


def plot_dispersion(rows: Sequence[dict[str, Any]], ax: Any = None, **kwargs: Any) -> list[Any]:
    """Dispersion (surface atoms / all atoms) against equivalent diameter.

    Parameters
    ----------
    rows : sequence of dict
        :meth:`habit.particle.Particle.summary` records, e.g. from
        :func:`habit.particle.particle_series`.
    ax : matplotlib Axes, optional
    **kwargs
        Passed to ``ax.plot``.

    Returns
    -------
    list of matplotlib Line2D
    """
    import matplotlib.pyplot as plt

    if ax is None:
        _, ax = plt.subplots(figsize=(5.5, 3.8))
    x = [r["equivalent_diameter_nm"] for r in rows]
    y = [r["dispersion"] for r in rows]
    kwargs.setdefault("marker", "o")
    kwargs.setdefault("color", "#00798c")
    lines = ax.plot(x, y, **kwargs)
    ax.set_xlabel("equivalent diameter (nm)")
    ax.set_ylabel("dispersion (surface atoms / atoms)")
    ax.set_ylim(0.0, 1.05)
    ax.grid(True, alpha=0.3)
    ax.figure.tight_layout()
    return list(lines)
