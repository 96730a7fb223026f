"""Shared test set-up: a non-interactive matplotlib backend and figure clean-up."""

from __future__ import annotations

import os

import pytest

os.environ.setdefault("MPLBACKEND", "Agg")


@pytest.fixture(autouse=True)
def _close_figures():
    yield
    import sys

    if "matplotlib.pyplot" in sys.modules:
        sys.modules["matplotlib.pyplot"].close("all")


@pytest.fixture
def runner():
    from click.testing import CliRunner

    return CliRunner()
