"""Figures of particles: check the artists' data, not pixels."""

from __future__ import annotations

import math

import numpy as np

from habit.particle import make_particle
from habit.plot.particle import plot_dispersion, plot_particle

A = 3.615  # fcc copper, Å (Wyckoff 1963, from memory)
FCC = (A * np.eye(3), [[0, 0, 0], [0, 0.5, 0.5], [0.5, 0, 0.5], [0.5, 0.5, 0]], ["Cu"] * 4)
OCT = np.array([[i, j, k] for i in (-1, 1) for j in (-1, 1) for k in (-1, 1)]) / math.sqrt(3)
NORMALS = np.vstack([OCT, np.eye(3), -np.eye(3)])
SPACINGS = np.r_[np.full(8, A / math.sqrt(3)), np.full(6, A / 2)]


def test_scatter_draws_each_site_kind_with_its_count() -> None:
    # 55-atom cuboctahedron: 12 vertices, 24 edge atoms, 6 {100} facet atoms (Mackay 1962)
    p = make_particle(
        FCC,
        NORMALS,
        None,
        shells=2,
        layer_spacings=SPACINGS,
        form_ids=[0] * 8 + [1] * 6,
        form_labels=["{111}", "{100}"],
    )
    artists = plot_particle(p)
    sizes = {k: len(v.get_offsets()) for k, v in artists.items()}
    assert sizes == {"vertex": 12, "edge": 24, "facet{100}": 6}
    with_bulk = plot_particle(p, show_bulk=True)
    assert len(with_bulk["bulk"].get_offsets()) == 13
    ax = next(iter(artists.values())).axes
    assert "(Å)" in ax.get_xlabel()


def test_dispersion_plot_has_one_point_per_row() -> None:
    rows = [{"equivalent_diameter_nm": d, "dispersion": f} for d, f in [(1, 0.8), (2, 0.5)]]
    (line,) = plot_dispersion(rows)
    assert list(line.get_xdata()) == [1, 2] and list(line.get_ydata()) == [0.8, 0.5]
    assert "nm" in line.axes.get_xlabel()
