"""The optional packages behind studies (``pip install garnav[cluster]``)."""

from __future__ import annotations

import importlib
from types import ModuleType

from garnav.errors import GarnavError

__all__ = ["require", "CLUSTER_PACKAGES"]

#: Module → the package that provides it.
CLUSTER_PACKAGES = {"distributed": "dask[distributed]", "dask": "dask[distributed]", "pyarrow": "pyarrow",
                    "matplotlib": "matplotlib"}


def require(module: str, why: str = "studies") -> ModuleType:
    """Import ``module`` (one of :data:`CLUSTER_PACKAGES`) or raise a :class:`GarnavError` that
    says how to install it."""
    try:
        return importlib.import_module(module)
    except ImportError:
        raise GarnavError(
            f"{why} need the optional package '{CLUSTER_PACKAGES.get(module, module)}': "
            "install it with  pip install 'garnav[cluster]'"
        ) from None
