"""The summary of a study's rows (pure): feasibility per group, distributions, what blocks.

:func:`summarise` takes the rows (a list of dicts, or a pyarrow Table) and returns a JSON-ready
dict:

* ``groups``: per (garment, size, pose, posture, robot) the case count, the routes found, the
  feasibility rate (ok / cases), the count of every status, and for each measure the median, 10th
  and 90th percentile over the feasible cases (numpy's linear interpolation);
* ``blockers``: how often each keep-out, edge, seam or (piece, margin) is named as what blocks a
  failed case; ``detours``: what made the shortest route undrivable where a detour was taken;
  ``bends``: which keep-outs and edges the feasible routes wrap around (the bottlenecks that lengthen
  routes); ``contact``: the regions touched most often in the Monte Carlo;
* ``pairs``: feasibility per (start, goal) over every other axis, for the heat map.
"""

from __future__ import annotations

from collections import Counter

import numpy as np

from garnav.study.results import STATUSES

__all__ = ["GROUP_KEYS", "MEASURE_COLUMNS", "summarise"]

GROUP_KEYS = ("garment", "size", "pose", "posture", "robot")
#: Columns summarised by distribution (when any feasible row has them).
MEASURE_COLUMNS = ("length_mm", "length_3d_mm", "time_s", "energy_j", "battery_used_fraction", "min_grip_margin",
                   "min_hold_margin", "min_drive_margin", "contact_probability", "seams_crossed", "turns")


def _rows(rows) -> list[dict]:
    return rows.to_pylist() if hasattr(rows, "to_pylist") else list(rows)


def _dist(values: list) -> dict | None:
    v = np.asarray([x for x in values if x is not None], dtype=float)
    if not len(v):
        return None
    p10, med, p90 = np.percentile(v, [10, 50, 90])
    return {"n": int(len(v)), "median": float(med), "p10": float(p10), "p90": float(p90),
            "min": float(v.min()), "max": float(v.max())}


def _count_labels(texts) -> list[tuple[str, int]]:
    c: Counter = Counter()
    for t in texts:
        for name in (t or "").split(";"):
            if name:
                c[name] += 1
    return sorted(c.items(), key=lambda kv: (-kv[1], kv[0]))


def summarise(rows) -> dict:
    """The summary dict of a study's rows (see the module notes).

    >>> s = summarise([{"garment": "g", "size": "base", "pose": "default", "posture": "upright",
    ...                 "robot": "r", "start": "a", "goal": "b", "status": "ok", "length_mm": 10.0,
    ...                 "blocker": "", "detour_blocker": "", "bends": "", "contact_worst": ""}])
    >>> s["groups"][0]["feasible_fraction"], s["groups"][0]["length_mm"]["median"]
    (1.0, 10.0)
    """
    data = _rows(rows)
    groups: dict[tuple, list[dict]] = {}
    for r in data:
        groups.setdefault(tuple(r.get(k, "") for k in GROUP_KEYS), []).append(r)
    out_groups = []
    for key in sorted(groups):
        rs = groups[key]
        ok = [r for r in rs if r.get("status") == "ok"]
        g: dict = dict(zip(GROUP_KEYS, key, strict=True))
        g.update(cases=len(rs), feasible=len(ok), feasible_fraction=len(ok) / len(rs),
                 statuses={s: n for s in STATUSES if (n := sum(r.get("status") == s for r in rs))})
        for col in MEASURE_COLUMNS:
            d = _dist([r.get(col) for r in ok])
            if d is not None:
                g[col] = d
        out_groups.append(g)
    failed = [r for r in data if r.get("status") != "ok"]
    pairs: dict[tuple[str, str], list[int]] = {}
    for r in data:
        pairs.setdefault((r.get("start", ""), r.get("goal", "")), []).append(int(r.get("status") == "ok"))
    reasons: dict[str, str] = {}
    for r in failed:
        reasons.setdefault(r.get("status", ""), r.get("reason", ""))
    return {
        "cases": len(data),
        "feasible": sum(r.get("status") == "ok" for r in data),
        "statuses": {s: n for s in STATUSES if (n := sum(r.get("status") == s for r in data))},
        "groups": out_groups,
        "blockers": _count_labels(r.get("blocker") for r in failed),
        "detours": _count_labels(r.get("detour_blocker") for r in data if r.get("status") == "ok"),
        "bends": _count_labels(r.get("bends") for r in data if r.get("status") == "ok"),
        "contact": _count_labels(r.get("contact_worst") for r in data if r.get("status") == "ok"),
        "example_reasons": reasons,
        "pairs": [{"start": a, "goal": b, "cases": len(v), "feasible_fraction": sum(v) / len(v)}
                  for (a, b), v in sorted(pairs.items())],
    }
