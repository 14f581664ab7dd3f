"""Shared fixtures. Rendering tests set up off-screen pyvista themselves."""

from __future__ import annotations

import sys
from pathlib import Path

import pytest

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
