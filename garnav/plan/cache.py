"""An on-disk cache of built navigation graphs (numpy ``.npz``, no pickle; :mod:`garnav.npzcache`).

The key is a SHA-256 of everything the graph depends on: the garment (its full ``repr``, which
lists every coordinate), the robot, the planner options, :data:`PLANNER_VERSION` and the shapely /
GEOS versions (geometry results may differ between them). A file whose key does not match, or that
cannot be read, is ignored and rebuilt. Free space is recomputed on load (it is cheap); only the
graph (node arrays and edges) is stored. Files are written atomically (:mod:`garnav.atomic`).
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import numpy as np

from garnav.model import Garment, Robot
from garnav.npzcache import cache_file, content_key, read_npz, write_npz
from garnav.plan.edgegraph import EdgeGraph
from garnav.plan.freespace import FreeSpace
from garnav.plan.navgraph import NavGraph, seam_run_points
from garnav.plan.visgraph import Corners

__all__ = ["cache_key", "save_nav_graph", "load_nav_graph", "cache_path"]

_NODE_ARRAYS = ("xy", "node_piece", "portal_seam", "portal_side", "portal_t", "portal_tan", "portal_in", "approach_of")
_EDGE_ARRAYS = ("edge_i", "edge_j", "edge_length", "edge_weight", "edge_crossing")


def cache_key(garment: Garment, robot: Robot, options: dict, version: str) -> str:
    """Hex SHA-256 of the inputs of a graph build."""
    return content_key(
        {
            "garment": repr(garment),
            "robot": repr(robot),
            "options": {k: repr(v) for k, v in sorted(options.items())},
            "planner": version,
        }
    )


def cache_path(folder: str | Path, key: str) -> Path:
    """The graph's file in ``folder``: ``navgraph-<first 24 hex digits of key>.npz``."""
    return cache_file(folder, "navgraph", key)


def save_nav_graph(ng: NavGraph, path: str | Path, key: str) -> Path:
    """Write the graph of ``ng`` to ``path`` (npz) under ``key``."""
    g = ng.graph
    corner_prev = np.zeros_like(ng.xy)
    corner_next = np.zeros_like(ng.xy)
    for c, off in ng.corners.values():
        corner_prev[off : off + len(c)] = c.prev
        corner_next[off : off + len(c)] = c.next
    meta = {
        "pieces": list(ng.pieces),
        "seams": [s.name for s in ng.seams],
        "intervals": {k: [list(iv) for iv in v] for k, v in ng.intervals.items()},
        "spacing_mm": ng.spacing_mm,
        "approach_mm": ng.approach_mm,
        "corner_counts": {p: len(c) for p, (c, _) in ng.corners.items()},
        "corner_offsets": {p: off for p, (_, off) in ng.corners.items()},
        "stats": ng.stats,
    }
    arrays = {
        "corner_prev": corner_prev,
        "corner_next": corner_next,
        "edge_i": g.i,
        "edge_j": g.j,
        "edge_length": g.length,
        "edge_weight": g.weight,
        "edge_crossing": g.crossing,
        **{name: getattr(ng, name) for name in _NODE_ARRAYS},
    }
    return write_npz(path, key, meta, arrays)


def load_nav_graph(path: str | Path, garment: Garment, free: FreeSpace, key: str) -> NavGraph | None:
    """The cached graph at ``path`` if it exists and was stored under ``key``; else None."""
    found = read_npz(path, key, (*_NODE_ARRAYS, "corner_prev", "corner_next", *_EDGE_ARRAYS))
    if found is None:
        return None
    meta, stored = found
    arrays: dict[str, Any] = {name: stored[name] for name in _NODE_ARRAYS}
    prev, nxt = stored["corner_prev"], stored["corner_next"]
    edges = [stored[n] for n in _EDGE_ARRAYS]
    seams = tuple(sorted(garment.seams, key=lambda s: s.name))
    pieces = tuple(meta["pieces"])
    if [s.name for s in seams] != meta["seams"] or pieces != tuple(p.name for p in garment.pieces):
        return None
    corners = {}
    for p in pieces:
        off, k = int(meta["corner_offsets"][p]), int(meta["corner_counts"][p])
        sl = slice(off, off + k)
        corners[p] = (Corners(arrays["xy"][sl], prev[sl], nxt[sl]), off)
    piece_idx = {p: i for i, p in enumerate(pieces)}
    portal_nodes = {p: np.nonzero((arrays["node_piece"] == piece_idx[p]) & (arrays["portal_seam"] >= 0))[0] for p in pieces}
    approach_nodes = {p: np.nonzero((arrays["node_piece"] == piece_idx[p]) & (arrays["approach_of"] >= 0))[0] for p in pieces}
    try:
        g = EdgeGraph(len(arrays["xy"]), *edges)
    except ValueError:  # edges out of order or out of range: not a graph this module wrote
        return None
    return NavGraph(
        garment=garment,
        free=free,
        seams=seams,
        pieces=pieces,
        graph=g,
        corners=corners,
        portal_nodes=portal_nodes,
        approach_nodes=approach_nodes,
        intervals={k: [tuple(iv) for iv in v] for k, v in meta["intervals"].items()},
        spacing_mm=float(meta["spacing_mm"]),
        approach_mm=float(meta["approach_mm"]),
        run_points=seam_run_points(garment, seams),
        stats=dict(meta["stats"], cached=True),
        **arrays,
    )
