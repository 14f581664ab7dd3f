"""Contact risk for the page: ``garnav-drift`` documents (``garnav drift --json``) paired with routes.

A drift document (docs/uncertainty.md) does not name its route; it carries the garment, the planned
end pose (piece, x, y) and the distance driven. :func:`attach_drift` pairs each with the route whose
last waypoint and pattern length agree (within 0.5 mm) and adds a ``drift`` object to that route's
document, which :mod:`garnav.page.figures` shows: the overall contact probability (any hard
keep-out or an open edge), its 95 % interval's upper end, the runs, the end-point 2σ ellipse and the
largest cross-track spread.
"""

from __future__ import annotations

import math
import os
from pathlib import Path
from typing import Sequence

from garnav.errors import QueryError
from garnav.textio import read_json_document

__all__ = ["read_drift_document", "attach_drift", "DRIFT_FORMAT", "MATCH_MM"]

DRIFT_FORMAT = "garnav-drift"
#: A drift document belongs to a route whose end point and length agree within this, mm.
MATCH_MM = 0.5


def _num(v) -> bool:
    return isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(float(v))


def read_drift_document(path: str | os.PathLike) -> dict:
    """Read a ``garnav-drift`` JSON file and check the fields the page uses.

    Raises
    ------
    QueryError
        Naming the file and the problem.
    """
    p = Path(path)
    doc = read_json_document(p, QueryError, DRIFT_FORMAT, 1, writer_hint="; write one with 'garnav drift --json'")
    end = doc.get("end")
    overall = doc.get("overall")
    if not isinstance(doc.get("garment"), str) or not _num(doc.get("distance_mm")):
        raise QueryError(f"{p}: 'garment' must be a name and 'distance_mm' a number")
    if not isinstance(end, dict) or not isinstance(end.get("piece"), str) or not all(_num(end.get(k)) for k in "xy"):
        raise QueryError(f"{p}: 'end' must be an object with 'piece', 'x' and 'y'")
    if not isinstance(overall, dict) or not _num(overall.get("probability")):
        raise QueryError(f"{p}: 'overall' must be an object with a 'probability' number")
    return doc


def _summary(drift: dict) -> dict:
    out: dict = {"overall_contact_probability": float(drift["overall"]["probability"])}
    ci = drift["overall"].get("ci95")
    if isinstance(ci, list) and len(ci) == 2 and _num(ci[1]):
        out["contact_ci95_upper"] = float(ci[1])
    if _num(drift.get("runs")):
        out["runs"] = int(drift["runs"])
    ellipse = drift["end"].get("ellipse_2sigma_monte_carlo")
    if isinstance(ellipse, dict) and _num(ellipse.get("semi_major_mm")):
        out["end_2sigma_semi_major_mm"] = float(ellipse["semi_major_mm"])
    spread = drift.get("cross_track_2sigma_mm")
    if isinstance(spread, dict) and _num(spread.get("monte_carlo")):
        out["cross_track_2sigma_mm"] = float(spread["monte_carlo"])
    return out


def attach_drift(documents: Sequence[tuple[str, dict]], drifts: Sequence[tuple[str, dict]]) -> list[tuple[str, dict]]:
    """Route documents with the matching drift summaries added as a ``drift`` object.

    Parameters
    ----------
    documents : sequence of (name, garnav-route document)
    drifts : sequence of (source, garnav-drift document)

    Returns
    -------
    list of (name, document)
        Copies; the inputs are not changed.

    Raises
    ------
    QueryError
        A drift document of another garment, or one that matches none of the routes (or only
        routes that already have one).
    """
    out = [(name, dict(doc)) for name, doc in documents]
    taken: set[int] = set()
    for source, drift in drifts:
        end = drift["end"]
        match = None
        for i, (_, doc) in enumerate(out):
            last = doc["waypoints"][-1]
            if (i not in taken and doc["garment"]["name"] == drift["garment"] and last["piece"] == end["piece"]
                    and math.hypot(last["x"] - end["x"], last["y"] - end["y"]) <= MATCH_MM
                    and abs(float(doc["length_mm"]) - float(drift["distance_mm"])) <= MATCH_MM):
                match = i
                break
        if match is None:
            raise QueryError(
                f"{source}: matches none of the routes given (its route ends at {end['piece']}:"
                f"{float(end['x']):.1f},{float(end['y']):.1f} after {float(drift['distance_mm']):.1f} mm on "
                f"garment '{drift['garment']}'); give the route it was computed for"
            )
        taken.add(match)
        out[match][1]["drift"] = _summary(drift)
    return out
