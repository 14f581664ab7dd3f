"""The figures of each route for the page's table, read from ``garnav-route`` documents (pure).

Always present in a route document (docs/route-format.md): pattern length, 3D length (with a
drape), climbs, seams crossed, turns and the time estimate. Read when a document carries them and
left out when it does not:

* a ``physics`` object (robot on a body: ``energy_j``, ``energy_mah``, ``battery_used_fraction``,
  ``min_grip_margin``, ``min_hold_margin``, ``min_drive_margin``, ``unsafe_segments``);
* a drift / risk object (``drift``, ``risk`` or ``uncertainty``) whose keys containing
  ``probability`` give the chance of touching a keep-out or leaving the fabric (``garnav page
  --drift`` adds one from ``garnav drift --json`` files: :mod:`garnav.page.risk`).

* a ``sweep`` object (a coverage sweep, docs/sweeps.md): the covered share of the reachable region
  and the swath.

Other numbers in the physics and risk objects are listed as they are, with their key names. A present object of
the wrong type is refused with one message naming the file and the key.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from garnav.errors import QueryError
from garnav.preview.sheet import ROUTE_COLOURS

__all__ = ["RouteFigures", "route_figures", "table_columns", "cell_text", "PHYSICS_KEYS", "RISK_OBJECTS"]

#: physics keys shown in their own columns or used there (the other scalars are listed under "more";
#: ``time_s`` repeats the route's time estimate).
PHYSICS_KEYS = ("energy_j", "energy_mah", "battery_used_fraction", "charge_left_fraction", "battery_ok",
                "min_grip_margin", "min_hold_margin", "min_drive_margin", "unsafe_segments", "safety_factor",
                "drive_safety_factor", "time_s")
#: Names of the objects that may carry contact probabilities, in the order they are looked for.
RISK_OBJECTS = ("drift", "risk", "uncertainty")


@dataclass(frozen=True)
class RouteFigures:
    """The table row of one route. Lengths mm, times s, energy J; None where not known."""

    name: str
    colour: str
    pieces: tuple[str, ...]
    seams: tuple[str, ...]
    length_mm: float
    length_3d_mm: float | None
    climb_up_mm: float | None
    climb_down_mm: float | None
    turn_count: int
    turn_total_deg: float
    time_s: float
    energy_j: float | None = None
    energy_mah: float | None = None
    battery_used_fraction: float | None = None
    charge_left_fraction: float | None = None
    battery_ok: bool | None = None
    margins: tuple[tuple[str, float], ...] = ()
    required: tuple[tuple[str, float], ...] = ()
    unsafe_segments: int | None = None
    risk: float | None = None
    risk_upper: float | None = None
    coverage: float | None = None
    swath_mm: float | None = None
    more: tuple[tuple[str, str], ...] = ()

    @property
    def worst_margin(self) -> tuple[str, float] | None:
        """(which, value) of the margin closest to its requirement (the smallest margin when the
        requirements are not known), or None without physics."""
        if not self.margins:
            return None
        need = dict(self.required)
        return min(self.margins, key=lambda m: m[1] / need.get(m[0], 1.0))


def _number(v) -> float | None:
    if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(float(v)):
        return None
    return float(v)


def _fmt(v) -> str:
    if isinstance(v, bool):
        return "yes" if v else "no"
    if isinstance(v, float):
        return f"{v:.4g}"
    if isinstance(v, list):
        return f"{len(v)} items"
    return str(v)


def _object(doc: dict, key: str, source: str) -> dict | None:
    value = doc.get(key)
    if value is None:
        return None
    if not isinstance(value, dict):
        raise QueryError(f"{source}: '{key}' must be an object, not {type(value).__name__}")
    return value


def route_figures(name: str, document: dict, index: int = 0, source: str = "route") -> RouteFigures:
    """The figures of one route document (as read by ``garnav.export.read_route_document``).

    Parameters
    ----------
    name : str
        Shown in the table (usually the file stem).
    document : dict
    index : int
        Position among the page's routes: picks the route colour.
    source : str
        The file, for messages.

    Raises
    ------
    QueryError
        A ``summary``, ``physics`` or risk object of the wrong type, or a summary without the
        time estimate.
    """
    summary = _object(document, "summary", source) or {}
    time_s = _number(summary.get("estimated_time_s"))
    length = _number(document.get("length_mm"))
    if time_s is None or length is None:
        raise QueryError(f"{source}: 'length_mm' and 'summary.estimated_time_s' must be numbers")
    fig: dict = {
        "name": name,
        "colour": ROUTE_COLOURS[index % len(ROUTE_COLOURS)],
        "pieces": tuple(str(p) for p in summary.get("pieces") or ()),
        "seams": tuple(str(s) for s in summary.get("seams_crossed") or ()),
        "length_mm": length,
        "length_3d_mm": _number(document.get("length_3d_mm")),
        "climb_up_mm": _number(summary.get("climb_up_mm")),
        "climb_down_mm": _number(summary.get("climb_down_mm")),
        "turn_count": int(_number(summary.get("turn_count")) or 0),
        "turn_total_deg": _number(summary.get("turn_total_deg")) or 0.0,
        "time_s": time_s,
    }
    more: list[tuple[str, str]] = []
    physics = _object(document, "physics", source)
    if physics is not None:
        for key in ("energy_j", "energy_mah", "battery_used_fraction", "charge_left_fraction"):
            fig[key] = _number(physics.get(key))
        if isinstance(physics.get("battery_ok"), bool):
            fig["battery_ok"] = physics["battery_ok"]
        # grip and hold must reach safety_factor, drive drive_safety_factor (docs/physics.md)
        need = [(m, v) for m, key in (("grip", "safety_factor"), ("hold", "safety_factor"),
                                      ("drive", "drive_safety_factor"))
                if (v := _number(physics.get(key))) is not None]
        fig["required"] = tuple(need)
        fig["margins"] = tuple(
            (key[4:-7], float(v)) for key in ("min_grip_margin", "min_hold_margin", "min_drive_margin")
            if (v := _number(physics.get(key))) is not None
        )
        unsafe = physics.get("unsafe_segments")
        if isinstance(unsafe, list):
            fig["unsafe_segments"] = len(unsafe)
        elif (count := _number(unsafe)) is not None:
            fig["unsafe_segments"] = int(count)
        more += [(f"physics.{k}", _fmt(v)) for k, v in physics.items()
                 if k not in PHYSICS_KEYS and not isinstance(v, (dict, list)) and v is not None]
    for key in RISK_OBJECTS:
        risk = _object(document, key, source)
        if risk is None:
            continue
        probs = [(k, p) for k, v in risk.items() if "probability" in k and (p := _number(v)) is not None]
        overall = [p for k, p in probs if "overall" in k or k in ("probability", "contact_probability")]
        if overall or probs:
            fig["risk"] = overall[0] if overall else max(p for _, p in probs)
        fig["risk_upper"] = _number(risk.get("contact_ci95_upper"))
        more += [(f"{key}.{k}", _fmt(v)) for k, v in risk.items()
                 if not isinstance(v, (dict, list)) and v is not None and k != "contact_ci95_upper"
                 and not (overall and "overall" in k)]
        break
    fleet = _object(document, "fleet", source)  # a robot of a fleet schedule (garnav.page.fleet)
    if fleet is not None:
        more += [(f"fleet.{k}", _fmt(v)) for k, v in fleet.items() if not isinstance(v, (dict, list))]
    sweep = _object(document, "sweep", source)  # a coverage sweep (docs/sweeps.md)
    if sweep is not None:
        fig["coverage"] = _number(sweep.get("covered_fraction"))
        fig["swath_mm"] = _number(sweep.get("swath_mm"))
    fig["more"] = tuple(more)
    return RouteFigures(**fig)


def table_columns(rows: list[RouteFigures]) -> list[tuple[str, str]]:
    """(key, heading) of the table's columns: the fixed ones, then physics and risk columns when
    any route carries them. The "more" figures go on a line of their own under each route."""
    cols = [
        ("name", "Route"),
        ("seams", "Seams crossed"),
        ("length", "Length (pattern)"),
        ("length3d", "Length (3D)"),
        ("climb", "Climb up / down"),
        ("turns", "Turns"),
        ("time", "Time"),
    ]
    if any(r.energy_j is not None or r.energy_mah is not None for r in rows):
        cols.append(("energy", "Energy"))
    if any(r.battery_used_fraction is not None for r in rows):
        cols.append(("battery", "Battery used"))
    if any(r.margins for r in rows):
        cols.append(("margin", "Tightest margin"))
    if any(r.unsafe_segments is not None for r in rows):
        cols.append(("unsafe", "Unsafe segments"))
    if any(r.risk is not None for r in rows):
        cols.append(("risk", "Contact risk"))
    if any(r.coverage is not None for r in rows):
        cols.append(("coverage", "Covered (sweep)"))
    return cols


def cell_text(row: RouteFigures, key: str) -> str:
    """The text of one cell (units written out)."""
    def mm(v):
        return "—" if v is None else f"{v:.0f} mm"

    if key == "name":
        return row.name
    if key == "seams":
        return ", ".join(row.seams) if row.seams else "none"
    if key == "length":
        return f"{row.length_mm:.1f} mm"
    if key == "length3d":
        return "—" if row.length_3d_mm is None else f"{row.length_3d_mm:.1f} mm"
    if key == "climb":
        return f"{mm(row.climb_up_mm)} / {mm(row.climb_down_mm)}"
    if key == "turns":
        return f"{row.turn_count} ({row.turn_total_deg:.0f}°)"
    if key == "time":
        return f"{row.time_s:.1f} s"
    if key == "energy":
        parts = []
        if row.energy_j is not None:
            parts.append(f"{row.energy_j:.1f} J")
        if row.energy_mah is not None:
            parts.append(f"{row.energy_mah:.2f} mAh")
        return " / ".join(parts) or "—"
    if key == "battery":
        if row.battery_used_fraction is None:
            return "—"
        text = f"{100 * row.battery_used_fraction:.1f} %"
        if row.charge_left_fraction is not None:
            text += f" ({100 * row.charge_left_fraction:.1f} % left)"
        if row.battery_ok is False:
            text += " — NOT ENOUGH"
        return text
    if key == "margin":
        worst = row.worst_margin
        if worst is None:
            return "—"
        need = dict(row.required).get(worst[0])
        return f"{worst[1]:.2f} {worst[0]}" + ("" if need is None else f" (needs ≥ {need:g})")
    if key == "unsafe":
        return "—" if row.unsafe_segments is None else str(row.unsafe_segments)
    if key == "risk":
        if row.risk is None:
            return "—"
        upper = "" if row.risk_upper is None else f" (95 % ≤ {100 * row.risk_upper:.2g} %)"
        return f"{100 * row.risk:.2g} %{upper}"
    if key == "coverage":
        if row.coverage is None:
            return "—"
        swath = "" if row.swath_mm is None else f", {row.swath_mm:g} mm swath"
        return f"{100 * row.coverage:.1f} % of reachable{swath}"
    if key == "more":
        return "; ".join(f"{k}: {v}" for k, v in row.more) or "—"
    raise KeyError(key)
