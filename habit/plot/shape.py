"""Shaded drawings of crystal shapes.

The default view is the clinographic projection used for crystal drawings in mineralogy
textbooks (common practice): a parallel projection with the c axis vertical, the crystal
first turned 18°26′ (arctan 1/3) about the vertical axis, so that the front end of the
a axis moves to the viewer's left, and the eye then raised 9°28′ (arctan 1/6) above the
horizontal. Any other azimuth and elevation can be asked for.

Shading is our own: Lambert diffuse light from one direction plus an ambient term,
applied to a colour per form; only the faces turned towards the viewer are drawn (for a
convex solid that is exactly the visible part), and hidden edges may be drawn dashed.

Only this module (within habit's shape code) imports matplotlib, inside the functions.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any, NamedTuple

import numpy as np

from habit.plot import save_figure
from habit.polyhedron import Polyhedron

__all__ = [
    "CLINOGRAPHIC_AZIMUTH_DEG",
    "CLINOGRAPHIC_ELEVATION_DEG",
    "FORM_PALETTE",
    "ShapeArtists",
    "plot_polyhedron",
    "plot_polyhedra",
    "save_figure",
    "format_hkl_label",
    "view_direction",
    "shade_colours",
]

CLINOGRAPHIC_AZIMUTH_DEG = math.degrees(math.atan(1.0 / 3.0))  # 18.43° = 18°26′
CLINOGRAPHIC_ELEVATION_DEG = math.degrees(math.atan(1.0 / 6.0))  # 9.46° = 9°28′

# habit's own palette, one colour per form (cycled): mineral-like tones that stay apart
# under shading.
FORM_PALETTE: tuple[str, ...] = (
    "#6f9fd8",  # slate blue
    "#e3b05b",  # amber
    "#7cbf8e",  # sage
    "#d9786b",  # terracotta
    "#a98fd0",  # lavender
    "#5fc1c4",  # teal
    "#c9c46a",  # olive gold
    "#d68fb4",  # rose
    "#9aa6b2",  # steel grey
    "#b98a63",  # umber
)

_LIGHT = np.array([-0.45, 0.55, 0.70])  # towards the light: up-left of the eye (viewer frame)


class ShapeArtists(NamedTuple):
    """What :func:`plot_polyhedron` drew.

    Attributes
    ----------
    faces : Poly3DCollection
        The visible faces.
    edges : Line3DCollection
        Visible edges (and hidden ones, dashed, if asked for, in ``hidden_edges``).
    hidden_edges : Line3DCollection or None
        Hidden edges.
    labels : list of Text
        One label per visible face.
    legend : Legend or None
        The legend of forms.
    visible : (F,) bool array
        Which faces face the viewer.
    face_colours : (F, 4) float array
        Shaded RGBA colour of every face.
    """

    faces: Any
    edges: Any
    hidden_edges: Any
    labels: list[Any]
    legend: Any
    visible: np.ndarray
    face_colours: np.ndarray


def format_hkl_label(hkl: Sequence[int]) -> str:
    """Format Miller indices as mathtext with bars over negative digits, e.g. ``(1-10)``.

    Indices above 9 are separated by commas so they stay readable.
    """
    values = [int(v) for v in hkl]
    sep = "," if any(abs(v) > 9 for v in values) else ""
    parts = [f"$\\bar{{{abs(v)}}}$" if v < 0 else str(v) for v in values]
    return "(" + sep.join(parts) + ")"


def view_direction(azimuth_deg: float, elevation_deg: float) -> np.ndarray:
    """Return the unit vector from the object towards the eye for a matplotlib-style view.

    Parameters
    ----------
    azimuth_deg, elevation_deg : float
        Azimuth about z from +x, and elevation above the x-y plane, degrees.
    """
    az, el = math.radians(azimuth_deg), math.radians(elevation_deg)
    return np.array([math.cos(el) * math.cos(az), math.cos(el) * math.sin(az), math.sin(el)])


def _view_frame(eye: np.ndarray) -> np.ndarray:
    """Rows: screen right, screen up, towards the eye."""
    up0 = np.array([0.0, 0.0, 1.0])
    right = np.cross(up0, eye)
    if np.linalg.norm(right) < 1e-9:
        right = np.array([0.0, 1.0, 0.0])
    right /= np.linalg.norm(right)
    up = np.cross(eye, right)
    return np.stack([right, up, eye])


def shade_colours(
    normals: np.ndarray,
    base_rgb: np.ndarray,
    eye: np.ndarray,
    *,
    ambient: float = 0.45,
    diffuse: float = 0.55,
) -> np.ndarray:
    """Lambert shading: ``rgb * (ambient + diffuse * max(0, n . L))``.

    Parameters
    ----------
    normals : (F, 3) float array
        Unit outward normals.
    base_rgb : (F, 3) float array
        Unlit colours in [0, 1].
    eye : (3,) float array
        Unit vector towards the viewer; the light sits up and to the left of the eye.
    ambient, diffuse : float
        Weights of the two terms.

    Returns
    -------
    (F, 3) float array
        Shaded colours in [0, 1].
    """
    frame = _view_frame(eye)
    light = _LIGHT @ frame  # viewer frame -> world
    light /= np.linalg.norm(light)
    lam = np.clip(normals @ light, 0.0, 1.0)
    return np.asarray(np.clip(base_rgb * (ambient + diffuse * lam)[:, None], 0.0, 1.0))


def plot_polyhedron(
    poly: Polyhedron,
    ax: Any = None,
    *,
    azimuth_deg: float | None = None,
    elevation_deg: float | None = None,
    labels: Sequence[str] | bool = True,
    form_labels: Sequence[str] | None = None,
    palette: Sequence[str] = FORM_PALETTE,
    legend: bool = True,
    hidden_edges: bool = False,
    edge_colour: str = "#2b2b2b",
    label_size: float = 8.0,
    label_min_fraction: float = 0.0,
    **kwargs: Any,
) -> ShapeArtists:
    """Draw a shaded polyhedron, faces coloured by form and labelled.

    Parameters
    ----------
    poly : Polyhedron
        The solid, Å.
    ax : matplotlib 3-D axes, optional
        Where to draw; default: a new figure (no pyplot, no global state).
    azimuth_deg, elevation_deg : float, optional
        View direction in degrees. Default: the clinographic view
        (:data:`CLINOGRAPHIC_AZIMUTH_DEG`, :data:`CLINOGRAPHIC_ELEVATION_DEG`).
    labels : sequence of str or bool
        One label per face (e.g. four-index strings for hexagonal crystals); True uses
        ``poly.face_labels`` or the Miller indices; False draws none.
    form_labels : sequence of str, optional
        Legend text per form id; default ``poly.form_labels`` or ``"form <id>"``.
    palette : sequence of colours
        Colour per form id (cycled).
    legend : bool
        Draw a legend of forms.
    hidden_edges : bool
        Draw the edges at the back dashed.
    edge_colour : str
        Edge colour.
    label_size : float
        Font size of face labels, points.
    label_min_fraction : float
        Leave unlabelled the visible faces whose apparent (projected) area is below this
        fraction of the largest one, so labels of thin faces do not pile up. Default 0.
    **kwargs
        Passed to the face ``Poly3DCollection``.

    Returns
    -------
    ShapeArtists
    """
    from matplotlib import colors as mcolors
    from matplotlib.figure import Figure
    from matplotlib.patches import Patch
    from mpl_toolkits.mplot3d.art3d import Line3DCollection, Poly3DCollection

    az = CLINOGRAPHIC_AZIMUTH_DEG if azimuth_deg is None else float(azimuth_deg)
    el = CLINOGRAPHIC_ELEVATION_DEG if elevation_deg is None else float(elevation_deg)
    if ax is None:
        fig = Figure(figsize=(5.0, 5.0))
        ax = fig.add_subplot(projection="3d")
    ax.set_proj_type("ortho")
    ax.computed_zorder = False  # our own order: faces, then edges (hidden ones dashed), labels
    ax.view_init(elev=el, azim=az)
    eye = view_direction(az, el)

    fid = np.asarray(poly.form_ids)
    base = np.array([mcolors.to_rgb(palette[i % len(palette)]) for i in fid]).reshape(-1, 3)
    rgb = shade_colours(poly.normals, base, eye)
    rgba = np.concatenate([rgb, np.ones((rgb.shape[0], 1))], axis=1)
    visible = poly.normals @ eye > 1e-9

    loops = poly.faces
    polys = [poly.vertices[loops[f]] for f in np.flatnonzero(visible)]
    coll = Poly3DCollection(
        polys, facecolors=rgba[visible], edgecolors="none", linewidths=0.0, zorder=1, **kwargs
    )
    ax.add_collection3d(coll)

    ef = poly.edge_faces
    edge_vis = visible[ef[:, 0]] | visible[ef[:, 1]]
    segs = poly.vertices[poly.edges]  # (E, 2, 3)
    edges = Line3DCollection(segs[edge_vis], colors=edge_colour, linewidths=1.0, zorder=3)
    ax.add_collection3d(edges)
    hidden = None
    if hidden_edges and (~edge_vis).any():
        hidden = Line3DCollection(
            segs[~edge_vis], colors=edge_colour, linewidths=0.6, linestyles="dashed", zorder=2
        )
        ax.add_collection3d(hidden)

    texts: list[Any] = []
    if labels is not False:
        if labels is True:
            if poly.face_labels is not None:
                text = list(poly.face_labels)
            elif poly.hkl is not None:
                text = [format_hkl_label(h) for h in poly.hkl.tolist()]
            else:
                text = []
        else:
            text = [str(t) for t in labels]
            if len(text) != poly.n_faces:
                from habit.errors import InputError

                raise InputError(
                    f"labels needs one string per face ({poly.n_faces}); got {len(text)}."
                )
        if text:
            cen = poly.face_centroids()
            lift = 0.02 * poly.circumradius
            apparent = poly.face_areas * np.clip(poly.normals @ eye, 0.0, None)  # (F,)
            big = apparent >= label_min_fraction * apparent.max()
            for f in np.flatnonzero(visible & big):
                p = cen[f] + lift * poly.normals[f]
                texts.append(
                    ax.text(
                        p[0],
                        p[1],
                        p[2],
                        text[f],
                        ha="center",
                        va="center",
                        fontsize=label_size,
                        zorder=10,
                    )
                )

    leg = None
    names = form_labels if form_labels is not None else poly.form_labels
    present = np.unique(fid)
    if legend and (names is not None or len(present) < poly.n_faces):
        handles = [
            Patch(
                facecolor=palette[i % len(palette)],
                edgecolor=edge_colour,
                label=(names[i] if names is not None and i < len(names) else f"form {i}"),
            )
            for i in present.tolist()
        ]
        leg = ax.legend(handles=handles, loc="upper left", fontsize=8, frameon=False)

    r = poly.circumradius
    c = 0.5 * (poly.vertices.max(axis=0) + poly.vertices.min(axis=0))
    for setter, k in ((ax.set_xlim, 0), (ax.set_ylim, 1), (ax.set_zlim, 2)):
        setter(c[k] - r, c[k] + r)
    ax.set_box_aspect((1.0, 1.0, 1.0))
    ax.set_axis_off()
    return ShapeArtists(coll, edges, hidden, texts, leg, visible, rgba)


def plot_polyhedra(
    polys: Sequence[Polyhedron], titles: Sequence[str] | None = None, **kwargs: Any
) -> list[ShapeArtists]:
    """Draw several polyhedra side by side in one figure, one 3-D axes each.

    Parameters
    ----------
    polys : sequence of Polyhedron
    titles : sequence of str, optional
        One title per polyhedron.
    **kwargs
        Passed to :func:`plot_polyhedron`.

    Returns
    -------
    list of ShapeArtists
        One per polyhedron; ``artists[0].faces.axes.figure`` is the figure.
    """
    from matplotlib.figure import Figure

    fig = Figure(figsize=(4.5 * len(polys), 4.8))
    out = []
    for i, poly in enumerate(polys):
        ax = fig.add_subplot(1, len(polys), i + 1, projection="3d")
        art = plot_polyhedron(poly, ax, **kwargs)
        if titles is not None:
            ax.set_title(titles[i], fontsize=9)
        out.append(art)
    return out
