"""Figures for lattice packings: a particle with the neighbours that touch it."""

from __future__ import annotations

from typing import Any

import numpy as np

from habit._convex import hull_facets

__all__ = ["plot_packing"]


def _faces(vertices: np.ndarray) -> list[np.ndarray]:
    h = hull_facets(vertices)
    return [h.points[f] for f in h.faces]


def plot_packing(
    packing: Any,
    ax: Any = None,
    *,
    neighbours: str = "contacts",
    centre_color: str = "tab:orange",
    neighbour_color: str = "tab:blue",
    reflected_color: str = "tab:green",
    alpha: float = 0.35,
    **kwargs: Any,
) -> list[Any]:
    """Draw a particle and its touching neighbours in 3-D.

    Parameters
    ----------
    packing : LatticePacking or DoubleLatticePacking
        A result of :func:`habit.packing.densest_lattice_packing` or
        :func:`habit.packing.densest_double_lattice_packing`.
    ax : matplotlib 3-D Axes, optional
        Axes to draw into; a new figure with 3-D axes is made when omitted.
    neighbours : {"contacts", "none"}
        Draw the touching neighbours, or only the central particle.
    centre_color, neighbour_color, reflected_color : str
        Matplotlib colours of the central particle, its touching translates and (double
        lattices) its touching reflected copies.
    alpha : float
        Face opacity of the neighbours (the central particle is opaque).
    **kwargs
        Passed to each :class:`mpl_toolkits.mplot3d.art3d.Poly3DCollection`.

    Returns
    -------
    list of Poly3DCollection
        One collection per particle drawn, the central one first.

    Examples
    --------
    >>> import matplotlib
    >>> matplotlib.use("Agg")
    >>> from habit.packing import densest_lattice_packing
    >>> arts = plot_packing(densest_lattice_packing("cube", starts=2))
    >>> len(arts) >= 7
    True
    """
    from habit.errors import InputError

    if neighbours not in ("contacts", "none"):
        raise InputError(f"neighbours must be 'contacts' or 'none'; got {neighbours!r}.")
    import matplotlib.pyplot as plt
    from mpl_toolkits.mplot3d.art3d import Poly3DCollection

    if ax is None:
        fig = plt.figure()
        ax = fig.add_subplot(projection="3d")
    v = np.asarray(packing.vertices, dtype=np.float64)
    faces = _faces(v)
    arts = []
    edge = kwargs.pop("edgecolor", "k")
    lw = kwargs.pop("linewidths", 0.5)

    def add(shift: np.ndarray, face_list: list[np.ndarray], color: str, a: float) -> None:
        coll = Poly3DCollection(
            [f + shift for f in face_list],
            facecolor=color,
            edgecolor=edge,
            linewidths=lw,
            alpha=a,
            **kwargs,
        )
        ax.add_collection3d(coll, autolim=False)
        arts.append(coll)

    add(np.zeros(3), faces, centre_color, 1.0)
    pts = [v]
    if neighbours == "contacts":
        for c in np.asarray(packing.contacts):
            add(c, faces, neighbour_color, alpha)
            pts.append(v + c)
        refl = getattr(packing, "reflected_contacts", None)
        if refl is not None:
            cen = np.asarray(packing.centroid)
            rv = 2.0 * cen - v
            rfaces = _faces(rv)
            for y in np.asarray(refl):
                add(y, rfaces, reflected_color, alpha)
                pts.append(rv + y)
    allp = np.vstack(pts)
    lo, hi = allp.min(axis=0), allp.max(axis=0)
    mid, half = (lo + hi) / 2, float(np.max(hi - lo)) / 2
    ax.set_xlim(mid[0] - half, mid[0] + half)
    ax.set_ylim(mid[1] - half, mid[1] + half)
    ax.set_zlim(mid[2] - half, mid[2] + half)
    ax.set_xlabel("x (Å)")
    ax.set_ylabel("y (Å)")
    ax.set_zlabel("z (Å)")
    ax.set_title(f"packing density {packing.density:.6f}")
    return arts
