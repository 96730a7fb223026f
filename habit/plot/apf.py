"""Figure of an atomic packing fraction: each site's share of the filled volume."""

from __future__ import annotations

from typing import Any

__all__ = ["plot_packing_fraction"]


def plot_packing_fraction(result: Any, ax: Any = None, **kwargs: Any) -> list[Any]:
    """Bar chart of the packing-fraction contribution of each site.

    Parameters
    ----------
    result : habit.apf.PackingFraction
    ax : matplotlib Axes, optional
    **kwargs
        Passed to ``ax.bar``.

    Returns
    -------
    list of matplotlib artists
    """
    import matplotlib.pyplot as plt

    if ax is None:
        _, ax = plt.subplots(figsize=(6.0, 3.5))
    labels = [f"{i}: {lab}" for i, lab in enumerate(result.site_labels)]
    kwargs.setdefault("color", "#4d7ea8")
    bars = ax.bar(range(len(labels)), result.site_fractions * 100.0, **kwargs)
    ax.set_xticks(range(len(labels)), labels, rotation=60, ha="right", fontsize=7)
    ax.set_ylabel("share of cell volume (%)")
    ax.set_title(f"packing fraction {result.fraction * 100:.2f} % ({result.radius_source} radii)")
    ax.figure.tight_layout()
    return list(bars)
