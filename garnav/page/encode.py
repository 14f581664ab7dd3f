"""Pack the page's 3D parts into compact JSON: 16-bit quantised positions, base64 arrays (pure).

Positions are quantised onto one uniform 16-bit grid over the scene's bounding box: each coordinate
becomes ``round((p - origin) / step)`` with ``step = extent / 65535`` per axis, and the viewer
restores ``origin + q * step``. This is the scheme of glTF's ``KHR_mesh_quantization`` extension
(Khronos glTF extension registry) with one shared dequantisation per scene; the error of a
coordinate is at most ``step / 2`` (0.011 mm on a 1.5 m scene). Triangle indices are 16-bit when
a part has fewer than 65,536 vertices, else 32-bit. Arrays are little-endian and base64 encoded
(RFC 4648), the form in which a browser decodes them with ``atob`` into typed arrays.
"""

from __future__ import annotations

import base64
from dataclasses import dataclass
from typing import Mapping, Sequence

import numpy as np

from garnav.page.geometry import ScenePart, SceneContent

__all__ = ["Quantisation", "quantisation", "quantise", "dequantise", "pack_scene", "b64"]

LEVELS = 65535


@dataclass(frozen=True)
class Quantisation:
    """The shared 16-bit grid: ``origin`` (3,) and ``step`` (3,), mm."""

    origin: tuple[float, float, float]
    step: tuple[float, float, float]

    @property
    def max_error_mm(self) -> float:
        """Largest distance (mm) between a point and its grid point: half a step diagonal."""
        return float(0.5 * np.linalg.norm(self.step))


def quantisation(parts: Sequence[ScenePart]) -> Quantisation:
    """The grid covering every part's positions (a 1 mm box when there is nothing)."""
    pts = [p.positions for p in parts if len(p.positions)]
    if not pts:
        return Quantisation((0.0, 0.0, 0.0), (1.0 / LEVELS,) * 3)
    allp = np.vstack(pts)
    lo, hi = allp.min(axis=0), allp.max(axis=0)
    step = np.maximum(hi - lo, 1e-6) / LEVELS
    return Quantisation(tuple(float(v) for v in lo), tuple(float(v) for v in step))  # type: ignore[arg-type]


def quantise(positions: np.ndarray, q: Quantisation) -> np.ndarray:
    """(n, 3) uint16 grid coordinates of positions (mm) inside the grid's box."""
    grid = np.rint((np.asarray(positions, dtype=float) - q.origin) / q.step)
    return np.clip(grid, 0, LEVELS).astype("<u2")


def dequantise(grid: np.ndarray, q: Quantisation) -> np.ndarray:
    """Positions (n, 3), mm, back from grid coordinates — what the viewer computes."""
    return np.asarray(q.origin) + np.asarray(grid, dtype=float) * np.asarray(q.step)


def b64(array: np.ndarray) -> str:
    """Base64 text of an array's bytes (C order)."""
    return base64.b64encode(np.ascontiguousarray(array).tobytes()).decode("ascii")


def pack_scene(content: SceneContent, views: Mapping[str, Sequence[float]]) -> dict:
    """The JSON-ready scene of a page.

    Parameters
    ----------
    content : SceneContent
    views : dict
        Camera directions by name (world vectors from the scene centre), e.g. ``front``, ``back``.

    Returns
    -------
    dict
        ``quantisation`` (origin, step, mm), ``parts`` (name, group, colour, shading, opacity,
        overlay, vertex_count, triangle_count, index_bytes, positions, indices as base64),
        ``landmarks`` (name, xyz, normal), ``views``, ``up``, ``scale_mm``.
    """
    q = quantisation(content.parts)
    parts = []
    for part in content.parts:
        if len(part.faces) == 0:
            continue
        n = len(part.positions)
        index_type = "<u2" if n < 65536 else "<u4"
        parts.append(
            {
                "name": part.name,
                "group": part.group,
                "colour": part.colour,
                "shading": part.shading,
                "opacity": float(part.opacity),
                "overlay": bool(part.overlay),
                "vertex_count": n,
                "triangle_count": int(len(part.faces)),
                "index_bytes": 2 if index_type == "<u2" else 4,
                "positions": b64(quantise(part.positions, q)),
                "indices": b64(np.asarray(part.faces).astype(index_type)),
            }
        )
    return {
        "quantisation": {"origin": list(q.origin), "step": list(q.step)},
        "parts": parts,
        "landmarks": [
            {"name": lm.name, "xyz": list(lm.xyz), "normal": None if lm.normal is None else list(lm.normal)}
            for lm in content.landmarks
        ],
        "views": {k: [float(v) for v in d] for k, d in views.items()},
        "up": [0.0, 0.0, 1.0],
        "scale_mm": float(content.scale_mm),
    }
