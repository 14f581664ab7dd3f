"""The optional packages behind pattern files (``pip install garnav[patterns]``)."""

from __future__ import annotations

import importlib
from types import ModuleType

from garnav.errors import GarnavError

__all__ = ["require", "PATTERN_PACKAGES"]

PATTERN_PACKAGES = {"ezdxf": "ezdxf", "svgelements": "svgelements", "defusedxml": "defusedxml"}


def require(module: str) -> ModuleType:
    """Import ``module`` (one of :data:`PATTERN_PACKAGES`) or raise a :class:`GarnavError` that
    says how to install it."""
    try:
        return importlib.import_module(module)
    except ImportError:
        raise GarnavError(
            f"pattern files need the optional package '{PATTERN_PACKAGES.get(module, module)}': "
            "install it with  pip install 'garnav[patterns]'"
        ) from None
