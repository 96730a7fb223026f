"""Drawings of scanned crystals: the mesh with its triangles coloured by facet."""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any, NamedTuple

__all__ = ["FACET_PALETTE", "DROPPED_COLOUR", "ScanArtists", "plot_scan"]

#: colours of facets (touching facets get different ones); our own choice
FACET_PALETTE: tuple[str, ...] = (
    "#4f86c6", "#e0a44a", "#6cb38a", "#cf6a5e", "#9a7cc4", "#4db3b5",
    "#bdb65a", "#c97fa8", "#8c99a6", "#a9805a", "#7fa0d8", "#d8c27a",
)
#: colour of triangles that belong to no facet (rounded edges, chips, noise)
DROPPED_COLOUR = "#d0d0d0"


class ScanArtists(NamedTuple):
    """What :func:`plot_scan` drew.

    Attributes
    ----------
    triangles : Poly3DCollection
        Every triangle of the mesh.
    labels : list of Text
        One label per facet turned towards the viewer, at its centroid, pushed out
        along its normal.
    colours : list of str
        Colour of each facet (hex), in facet order.
    """

    triangles: Any
    labels: list[Any]
    colours: list[str]


def _colour_indices(facets: Any) -> list[int]:
    """Palette slot of each facet: greedy colouring, so that touching facets differ."""
    import numpy as np

    tri = np.asarray(facets.triangles)
    lab = np.asarray(facets.labels)
    e = np.sort(tri[:, [0, 1, 1, 2, 2, 0]].reshape(-1, 2), axis=1)  # (3F, 2)
    owner = np.repeat(lab, 3)
    order = np.lexsort((e[:, 1], e[:, 0]))
    e, owner = e[order], owner[order]
    same = np.all(e[1:] == e[:-1], axis=1)  # consecutive rows: the two sides of an edge
    a, b = owner[:-1][same], owner[1:][same]
    ok = (a >= 0) & (b >= 0) & (a != b)
    neighbours: dict[int, set[int]] = {k: set() for k in range(facets.n_facets)}
    for i, j in zip(a[ok].tolist(), b[ok].tolist(), strict=True):
        neighbours[i].add(j)
        neighbours[j].add(i)
    slots: list[int] = []
    for k in range(facets.n_facets):
        taken = {slots[j] for j in neighbours[k] if j < k}
        free = [c for c in range(len(FACET_PALETTE)) if c not in taken]
        slots.append(free[0] if free else k % len(FACET_PALETTE))
    return slots


def plot_scan(
    facets: Any,
    ax: Any = None,
    *,
    face_labels: Sequence[str] | None = None,
    unit: str = "mm",
    **kwargs: Any,
) -> ScanArtists:
    """Draw a scanned mesh with its triangles coloured by facet and facets labelled.

    Parameters
    ----------
    facets : habit.scan.ScanFacets
        The segmented, fitted scan (it carries the mesh).
    ax : matplotlib 3-D Axes, optional
        Drawn into a new figure when not given.
    face_labels : sequence of str, optional
        Text for each facet, e.g. ``"F1 (100)"``; default the facet names F1, F2, ...
    unit : str
        The mesh's length unit, for the axis labels.
    **kwargs
        Passed to ``Poly3DCollection``.

    Returns
    -------
    ScanArtists
    """
    import matplotlib.pyplot as plt
    import numpy as np
    from mpl_toolkits.mplot3d.art3d import Poly3DCollection

    if ax is None:
        fig = plt.figure(figsize=(6.0, 5.5))
        ax = fig.add_subplot(projection="3d")
    names = list(face_labels) if face_labels is not None else list(facets.names)
    if len(names) != facets.n_facets:
        from habit.errors import InputError

        raise InputError(f"face_labels needs one label per facet ({facets.n_facets}); got "
                         f"{len(names)}.")
    colours = [FACET_PALETTE[c] for c in _colour_indices(facets)]
    tri = np.asarray(facets.vertices)[np.asarray(facets.triangles)]  # (F, 3, 3)
    per_tri = [colours[k] if k >= 0 else DROPPED_COLOUR for k in facets.labels.tolist()]
    kwargs.setdefault("linewidths", 0.1)
    kwargs.setdefault("edgecolors", "#555555")
    coll = Poly3DCollection(tri, facecolors=per_tri, **kwargs)
    ax.add_collection3d(coll)
    pts = np.asarray(facets.vertices)
    centre = (pts.max(axis=0) + pts.min(axis=0)) / 2
    span = float(np.ptp(pts, axis=0).max()) / 2 or 1.0
    # label only the facets turned towards the viewer (matplotlib's azimuth, elevation)
    azim, elev = np.radians(ax.azim), np.radians(ax.elev)
    eye = np.array([np.cos(elev) * np.cos(azim), np.cos(elev) * np.sin(azim), np.sin(elev)])
    texts = []
    for k in range(facets.n_facets):
        if float(facets.normals[k] @ eye) <= 0.0:
            continue
        at = facets.centroids[k] + 0.12 * span * facets.normals[k]
        texts.append(ax.text(at[0], at[1], at[2], names[k], fontsize=7, ha="center",
                             va="center", color="#111111"))
    for setter, c in zip((ax.set_xlim, ax.set_ylim, ax.set_zlim), centre, strict=True):
        setter(c - span, c + span)
    ax.set_box_aspect((1, 1, 1))
    ax.set_xlabel(f"x ({unit})")
    ax.set_ylabel(f"y ({unit})")
    ax.set_zlabel(f"z ({unit})")
    ax.set_title(f"{facets.n_facets} facets; grey: {facets.dropped_triangles} triangles in "
                 "no facet", fontsize=9)
    return ScanArtists(coll, texts, colours)
