"""The optional packages behind MCAP recordings (``pip install 'garnav[mcap]'``)."""

from __future__ import annotations

import importlib
from types import ModuleType

from garnav.errors import GarnavError

__all__ = ["require", "MCAP_PACKAGES"]

# import name -> distribution name
MCAP_PACKAGES = {"mcap": "mcap", "rosbags": "rosbags"}


def require(module: str) -> ModuleType:
    """Import ``module`` (a module of one of :data:`MCAP_PACKAGES`) or raise a
    :class:`GarnavError` that says how to install it."""
    try:
        return importlib.import_module(module)
    except ImportError:
        top = module.split(".")[0]
        raise GarnavError(
            f"MCAP recordings need the optional package '{MCAP_PACKAGES.get(top, top)}': "
            "install it with  pip install 'garnav[mcap]'"
        ) from None
