"""garnav — route planning for small robots that drive on clothing.

Data flow: garment spec → :class:`~garnav.model.Garment` → free space → navigation graph →
route (pattern space) → lifted route (3D) → export / preview.
"""

__version__ = "0.1.0"

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
