"""garnav — route planning for small robots that drive on clothing.

Data flow: garment spec → :class:`~garnav.model.Garment` → free space → navigation graph →
route (pattern space) → lifted route (3D) → export / preview.

The names below are loaded on first use (PEP 562 module ``__getattr__``), so that importing a
light module such as :mod:`garnav.errors` — or starting the command line for ``--help`` — does not
load numpy and shapely through :mod:`garnav.model`.

>>> import garnav
>>> garnav.Robot().radius_mm > 0
True
"""

from __future__ import annotations

import importlib
from typing import TYPE_CHECKING

__version__ = "0.1.0"

if TYPE_CHECKING:  # what the lazy names are, for type checkers and readers
    from garnav.errors import GarnavError, MeshError, NoRouteError, Problem, QueryError, SpecError
    from garnav.model import (
        Circle,
        Edge,
        Garment,
        KeepOut,
        Landmark,
        Opening,
        Piece,
        Placement,
        PolygonShape,
        Rectangle,
        Robot,
        Seam,
        SeamRun,
    )

__all__ = [
    "__version__",
    "GarnavError",
    "MeshError",
    "NoRouteError",
    "Problem",
    "QueryError",
    "SpecError",
    "Circle",
    "Edge",
    "Garment",
    "KeepOut",
    "Landmark",
    "Opening",
    "Piece",
    "Placement",
    "PolygonShape",
    "Rectangle",
    "Robot",
    "Seam",
    "SeamRun",
]

#: Where each re-exported name lives (read only).
_ERRORS = frozenset({"GarnavError", "MeshError", "NoRouteError", "Problem", "QueryError", "SpecError"})


def __getattr__(name: str):
    """The re-exported name ``name``, imported from :mod:`garnav.errors` or :mod:`garnav.model`."""
    if name in __all__ and name != "__version__":
        module = importlib.import_module("garnav.errors" if name in _ERRORS else "garnav.model")
        return getattr(module, name)
    raise AttributeError(f"module 'garnav' has no attribute {name!r}")


def __dir__() -> list[str]:
    return sorted({*globals(), *__all__})
