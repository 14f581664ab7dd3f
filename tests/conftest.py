"""Shared fixtures. Rendering tests set up off-screen pyvista themselves."""

from __future__ import annotations

import sys
from pathlib import Path

import pytest
from hypothesis import HealthCheck, settings

# Property tests are deterministic and never time-limited: a loaded 2-core machine must not turn
# a slow example into a failure. Individual tests may ask for more examples.
settings.register_profile(
    "garnav",
    derandomize=True,
    deadline=None,
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.filter_too_much],
)
settings.load_profile("garnav")

sys.path.insert(0, str(Path(__file__).parent))

import garments  # noqa: E402


@pytest.fixture
def single_panel():
    return garments.single_panel()


@pytest.fixture
def two_panels():
    return garments.two_panels()


@pytest.fixture
def tube():
    return garments.tube()
