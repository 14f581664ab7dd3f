"""The examples in the planning modules' docstrings run."""

import doctest
import importlib

import pytest

MODULES = ["freespace", "visgraph", "portals", "navgraph", "search", "route", "refine", "points", "explain", "planner", "cache"]


@pytest.mark.parametrize("name", MODULES)
def test_docstring_examples(name):
    module = importlib.import_module(f"garnav.plan.{name}")
    result = doctest.testmod(module, optionflags=doctest.ELLIPSIS)
    assert result.failed == 0
