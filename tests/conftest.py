"""Shared test set-up: a non-interactive matplotlib backend and figure clean-up."""

from __future__ import annotations

import os

import pytest
from hypothesis import settings

os.environ.setdefault("MPLBACKEND", "Agg")

# CI runs the property tests with a fixed seed, so a run can be repeated exactly;
# elsewhere hypothesis explores new examples every run.
settings.register_profile("ci", derandomize=True, deadline=None, print_blob=True)
if os.environ.get("CI"):
    settings.load_profile("ci")


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
