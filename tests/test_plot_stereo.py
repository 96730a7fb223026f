"""Stereogram plots (habit.plot.stereo): artists and positions, not pixels."""

from __future__ import annotations

import numpy as np
import pytest

from habit.plot.stereo import plot_net, plot_poles, plot_stereogram, plot_zone, to_display


def test_display_puts_010_right_and_100_down():
    # stereogram custom: (010) at the right, (100) towards the viewer (bottom); φ clockwise
    # (common practice, Goldschmidt's φ convention; from memory)
    pts = to_display(np.array([[0.0, 1.0], [1.0, 0.0]]))  # projections of +y and +x
    assert pts[0] == pytest.approx([1.0, 0.0])
    assert pts[1] == pytest.approx([0.0, -1.0])


def test_plot_poles_positions_and_hemispheres():
    import matplotlib.pyplot as plt

    fig, ax = plt.subplots()
    artists = plot_poles([[0, 1, 0.0001], [1, 1, 1], [1, 1, -1]], ["(010)", "(111)", "(11-1)"],
                         ax)
    filled, open_ = artists[0], artists[1]
    up = np.asarray(filled.get_offsets())
    assert up[0] == pytest.approx([1.0, 0.0], abs=1e-3)
    # (111): Wulff radius 0.517638 [C], display azimuth between (010) right and (100) down
    assert np.hypot(*up[1]) == pytest.approx(0.517638, abs=1e-6)
    assert up[1][0] > 0 and up[1][1] < 0
    assert np.asarray(open_.get_offsets())[0] == pytest.approx(up[1])  # (11-1) folded onto (111)
    texts = [a for a in artists if hasattr(a, "get_text")]
    assert [t.get_text() for t in texts] == ["(010)", "(111)", "(11-1)"]


def test_net_and_zone_stay_inside_primitive():
    import matplotlib.pyplot as plt

    fig, ax = plt.subplots()
    for net in ("wulff", "equal-area"):
        lines = plot_net(ax, net=net, step_deg=30)
        for line in lines:
            xy = np.column_stack(line.get_data())
            xy = xy[np.all(np.isfinite(xy), axis=1)]
            assert np.hypot(xy[:, 0], xy[:, 1]).max() <= 1.0 + 1e-9
    (zone,) = plot_zone([0, 0, 1], ax)  # zone [001]: the primitive itself
    xy = np.column_stack(zone.get_data())
    assert np.hypot(xy[:, 0], xy[:, 1]) == pytest.approx(np.ones(len(xy)))


def test_stereogram_with_measured_poles():
    import matplotlib.pyplot as plt

    fig, ax = plt.subplots()
    artists = plot_stereogram([[0, 0, 1]], ["(001)"], ax, net="equal-area",
                              zones=[[1, 0, 0]], measured=[[0.01, 0, 1]],
                              measured_labels=["f1"])
    assert ax.get_legend() is not None
    assert any(getattr(a, "get_text", lambda: "")() == "f1" for a in artists)
    assert "Schmidt" in ax.get_title()
