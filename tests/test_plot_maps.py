"""Map and Monte Carlo figures: check the artists' data, not pixels."""

from __future__ import annotations

import numpy as np

from habit.batch import prepare_planes, sample_shapes, shape_map
from habit.plot.maps import plot_map_fraction, plot_map_regions, plot_sample_histograms


def _planes():
    cube = np.vstack([np.eye(3), -np.eye(3)])
    octa = np.array([[a, b, c] for a in (1, -1) for b in (1, -1) for c in (1, -1)]) / 3**0.5
    return prepare_planes(np.vstack([cube, octa]), forms=[0] * 6 + [1] * 8,
                          form_labels=("{100}", "{111}"))  # fmt: skip


def test_region_plot_colours_every_region_and_draws_boundaries():
    m = shape_map(_planes(), [1.0, 1.0], x=("{111}", 0.3, 2.0), y=("{100}", 0.9, 1.1),
                  size=5, levels=2)  # fmt: skip
    mesh, lines, legend = plot_map_regions(m)
    assert mesh.get_array().size == m.regions.size
    assert len(np.unique(mesh.get_array())) == 3  # octahedron, both, cube
    assert len(lines.get_segments()) > 0
    # every boundary segment sits between grid points of different regions
    xs = np.array([seg[0][0] for seg in lines.get_segments() if seg[0][0] == seg[1][0]])
    assert np.all((xs > 0.3) & (xs < 2.0))
    assert [t.get_text() for t in legend.get_texts()] == ["{100}", "{111}", "{100} + {111}"]
    assert "J/m²" in mesh.axes.get_xlabel()


def test_fraction_plot_has_unit_labels():
    m = shape_map(_planes(), [1.0, 1.0], x=("{111}", 0.3, 2.0), y=("{100}", 0.9, 1.1),
                  size=5, levels=1)  # fmt: skip
    filled, bar = plot_map_fraction(m, "111")
    assert "area fraction of {111}" in bar.ax.get_ylabel()
    assert filled.levels[0] == 0.0 and filled.levels[-1] == 1.0


def test_histograms_mark_the_intervals():
    s = sample_shapes(_planes(), [1.0, 1.2], [0.05, 0.05], n=500, rng=0)
    artists = plot_sample_histograms(s)
    lines = [a for a in artists if hasattr(a, "get_xdata")]
    assert len(lines) == 6  # two per form and two for the volume
    assert lines[0].get_xdata()[0] == s.fraction_interval[0, 0]
    assert lines[-1].get_xdata()[0] == s.volume_interval[1]
