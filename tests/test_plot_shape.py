"""Shaded polyhedron drawing: artists, not pixels."""

from __future__ import annotations

import os

import matplotlib

matplotlib.use("Agg")

import numpy as np  # noqa: E402
import pytest  # noqa: E402
from poly_samples import cubic_planes  # noqa: E402

from habit.errors import FileFormatError, InputError  # noqa: E402
from habit.plot.shape import (  # noqa: E402
    CLINOGRAPHIC_AZIMUTH_DEG,
    CLINOGRAPHIC_ELEVATION_DEG,
    FORM_PALETTE,
    format_hkl_label,
    plot_polyhedron,
    save_figure,
    shade_colours,
    view_direction,
)
from habit.polyhedron import Polyhedron  # noqa: E402


def shape() -> Polyhedron:
    n, d, hkl, fid = cubic_planes({(1, 0, 0): 1.0, (1, 1, 1): 1.05})
    return Polyhedron.from_halfspaces(n, d, hkl=hkl, form_ids=fid, form_labels=["{100}", "{111}"])


def _draw(art) -> None:
    """Render once with Agg so that the 3-D artists hold their projected paths."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    FigureCanvasAgg(art.faces.axes.figure).draw()


def test_clinographic_angles() -> None:
    # tan(18 deg 26') = 1/3 and tan(9 deg 28') = 1/6 (common practice), to 1 arc-minute
    assert abs(CLINOGRAPHIC_AZIMUTH_DEG - (18 + 26 / 60)) < 1 / 60
    assert abs(CLINOGRAPHIC_ELEVATION_DEG - (9 + 28 / 60)) < 1 / 60


def test_default_view_artists() -> None:
    p = shape()
    art = plot_polyhedron(p)
    _draw(art)
    ax = art.faces.axes
    assert ax.elev == pytest.approx(CLINOGRAPHIC_ELEVATION_DEG)
    assert ax.azim == pytest.approx(CLINOGRAPHIC_AZIMUTH_DEG)
    # the faces facing the eye are drawn, and only those
    eye = view_direction(CLINOGRAPHIC_AZIMUTH_DEG, CLINOGRAPHIC_ELEVATION_DEG)
    expected = p.normals @ eye > 0
    assert art.visible.tolist() == expected.tolist()
    assert len(art.faces.get_paths()) == int(expected.sum())
    # (100), (010) and (001) face the viewer in the clinographic view
    visible_hkl = {tuple(h) for h in p.hkl[art.visible].tolist()}
    assert {(1, 0, 0), (0, 1, 0), (0, 0, 1)} <= visible_hkl
    assert (-1, 0, 0) not in visible_hkl
    assert len(art.labels) == int(expected.sum())
    assert "(100)" in {t.get_text() for t in art.labels}
    assert [t.get_text() for t in art.legend.get_texts()] == ["{100}", "{111}"]


def test_colours_follow_forms_and_light() -> None:
    p = shape()
    art = plot_polyhedron(p, azimuth_deg=30, elevation_deg=20, legend=False, labels=False)
    assert art.legend is None and art.labels == []
    base = np.array([matplotlib.colors.to_rgb(FORM_PALETTE[i]) for i in p.form_ids])
    # shaded colour = base colour times one brightness factor per face, in [0.45, 1]
    ratio = art.face_colours[:, :3] / base
    assert np.ptp(ratio, axis=1) == pytest.approx(np.zeros(p.n_faces), abs=1e-9)
    assert ratio.min() >= 0.45 - 1e-9 and ratio.max() <= 1 + 1e-9
    eye = view_direction(30, 20)
    lit = shade_colours(np.array([[0, 0, 1.0], [0, 0, -1.0]]), np.ones((2, 3)), eye)
    assert lit[0, 0] > lit[1, 0]  # the light comes from above


def test_caller_labels_and_hidden_edges() -> None:
    p = shape()
    labels = [f"L{i}" for i in range(p.n_faces)]
    art = plot_polyhedron(p, labels=labels, hidden_edges=True)
    _draw(art)
    assert {t.get_text() for t in art.labels} == {labels[i] for i in np.flatnonzero(art.visible)}
    n_hidden = len(art.hidden_edges.get_segments())
    assert n_hidden + len(art.edges.get_segments()) == p.n_edges
    assert n_hidden > 0
    with pytest.raises(InputError, match="one string per face"):
        plot_polyhedron(p, labels=["x"])


def test_format_hkl_label() -> None:
    assert format_hkl_label((1, -1, 0)) == "(1$\\bar{1}$0)"
    assert format_hkl_label((10, 0, -1)) == "(10,0,$\\bar{1}$)"


@pytest.mark.parametrize("suffix,magic", [(".png", b"\x89PNG"), (".svg", b"<?xml")])
def test_save_figure(tmp_path, suffix, magic) -> None:
    art = plot_polyhedron(shape())
    path = save_figure(art.faces.axes.figure, tmp_path / f"shape{suffix}")
    assert path.read_bytes()[:5].startswith(magic)
    assert os.listdir(tmp_path) == [f"shape{suffix}"]


def test_save_figure_refuses_bad_names(tmp_path) -> None:
    art = plot_polyhedron(shape())
    with pytest.raises(FileFormatError, match=".png, .svg or .pdf"):
        save_figure(art.faces.axes.figure, tmp_path / "shape.bmp")
    with pytest.raises(FileFormatError, match="does not exist"):
        save_figure(art.faces.axes.figure, tmp_path / "no" / "shape.png")
    assert os.listdir(tmp_path) == []


def test_draws_into_a_given_axes() -> None:
    from matplotlib.figure import Figure

    fig = Figure()
    ax = fig.add_subplot(projection="3d")
    art = plot_polyhedron(shape(), ax=ax, azimuth_deg=0.0, elevation_deg=0.0)
    assert art.faces.axes is ax and art.faces in ax.collections
    # looking along -x: only (100) and the {111} faces with h > 0 face the eye
    visible = {tuple(h) for h in shape().hkl[art.visible].tolist()}
    assert visible == {(1, 0, 0), (1, 1, 1), (1, 1, -1), (1, -1, 1), (1, -1, -1)}


def test_thin_faces_can_be_left_unlabelled() -> None:
    # a cube with tiny {111} corners: with a threshold only the large cube faces keep labels
    from habit.crystal import Crystal
    from habit.wulff import wulff_shape

    shape = wulff_shape(Crystal.from_cell(4.0, crystal_class="m-3m"), {"100": 1.0, "111": 1.7})
    poly = shape.polyhedron
    every = plot_polyhedron(poly)
    some = plot_polyhedron(poly, label_min_fraction=0.2)
    labelled = {t.get_text() for t in some.labels}
    assert len(some.labels) < len(every.labels)
    assert labelled and all(text.count("1") == 1 for text in labelled)  # only (100)-type faces
