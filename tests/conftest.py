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


@pytest.fixture(autouse=True, scope="session")
def _graph_cache_in_a_temporary_folder(tmp_path_factory):
    """`garnav route` caches graphs in the user's cache folder by default: tests use their own."""
    mp = pytest.MonkeyPatch()
    mp.setenv("GARNAV_CACHE_DIR", str(tmp_path_factory.mktemp("navgraph-cache")))
    yield
    mp.undo()


@pytest.fixture
def single_panel():
    return garments.single_panel()


@pytest.fixture
def two_panels():
    return garments.two_panels()


@pytest.fixture
def tube():
    return garments.tube()
