"""The demo garment as spec (TOML) text.

Uses :func:`garnav.spec.dumps_garment` when the spec package provides it; otherwise an interim
writer of the same documented format (``format = "garnav-garment"``, ``version = 1``), written with
``tomli_w``. Pure: returns text, writes nothing.
"""

from __future__ import annotations

import tomli_w

from garnav.model import Circle, Garment, PolygonShape, Rectangle, SeamRun

__all__ = ["garment_toml"]


def garment_toml(garment: Garment) -> str:
    """TOML spec text of ``garment`` (deterministic)."""
    try:
        from garnav.spec import dumps_garment  # type: ignore[attr-defined]
    except ImportError:
        return _interim_dumps(garment)
    return dumps_garment(garment)


def _run(run: SeamRun) -> dict:
    out: dict = {"piece": run.piece, "edge": run.edge}
    if run.from_mm is not None:
        out["from_mm"] = float(run.from_mm)
    if run.to_mm is not None:
        out["to_mm"] = float(run.to_mm)
    if run.reverse:
        out["reverse"] = True
    return out


def _interim_dumps(garment: Garment) -> str:
    doc: dict = {
        "format": "garnav-garment",
        "version": 1,
        "name": garment.name,
        "description": garment.description,
        "sheet_size_mm": [float(v) for v in garment.sheet_size_mm],
    }
    if garment.drape:
        doc["drape"] = garment.drape
    if garment.body:
        doc["body"] = garment.body
    if garment.robot is not None:
        r = garment.robot
        doc["robot"] = {
            "name": r.name,
            "radius_mm": float(r.radius_mm),
            "wheel_base_mm": float(r.wheel_base_mm),
            "speed_mm_s": float(r.speed_mm_s),
            "side": r.side,
            "edge_margin_mm": float(r.edge_margin_mm),
        }
    doc["piece"] = []
    for p in garment.pieces:
        entry: dict = {
            "name": p.name,
            "placement": {"x": p.placement.x, "y": p.placement.y, "angle_deg": p.placement.angle_deg},
            "edge": [{"name": e.name, "points": [list(pt) for pt in e.points]} for e in p.edges],
        }
        if p.openings:
            entry["opening"] = [{"name": o.name, "points": [list(pt) for pt in o.points]} for o in p.openings]
        doc["piece"].append(entry)
    doc["seam"] = [
        {
            "name": s.name,
            "a": _run(s.a),
            "b": _run(s.b),
            "crossable": s.crossable,
            "crossing_cost_mm": float(s.crossing_cost_mm),
            "min_crossing_angle_deg": float(s.min_crossing_angle_deg),
        }
        for s in garment.seams
    ]
    keepouts = []
    for k in garment.keepouts:
        entry = {"name": k.name, "piece": k.piece, "kind": k.kind}
        shape = k.shape
        if isinstance(shape, Circle):
            entry.update(shape="circle", center=[shape.cx, shape.cy], radius=shape.radius)
        elif isinstance(shape, Rectangle):
            entry.update(shape="rectangle", center=[shape.cx, shape.cy],
                         size=[shape.width, shape.height], angle_deg=shape.angle_deg)
        elif isinstance(shape, PolygonShape):
            entry.update(shape="polygon", points=[list(pt) for pt in shape.points])
        entry.update(clearance_mm=float(k.clearance_mm), hard=k.hard, cost_factor=float(k.cost_factor))
        keepouts.append(entry)
    doc["keepout"] = keepouts
    landmarks = []
    for lm in garment.landmarks:
        entry = {"name": lm.name}
        if lm.on_pattern:
            entry.update(piece=lm.piece, at=[float(lm.x), float(lm.y)])
        else:
            entry["xyz"] = [float(v) for v in lm.xyz]
        if lm.description:
            entry["description"] = lm.description
        landmarks.append(entry)
    doc["landmark"] = landmarks
    return tomli_w.dumps(doc)
