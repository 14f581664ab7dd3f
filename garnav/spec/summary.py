"""A summary of a garment for people: pieces, seams (with ease), open edges, keep-outs, landmarks,
robot. Pure computation (:func:`garment_summary`) apart from plain-text layout
(:func:`format_summary`); the ``garnav check`` command prints the latter.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from garnav.model import Circle, Garment, PolygonShape, Rectangle

__all__ = ["Section", "garment_summary", "format_summary", "seam_ease"]


@dataclass(frozen=True)
class Section:
    """One block of the summary: a title, column headers and rows of already formatted cells."""

    title: str
    headers: tuple[str, ...]
    rows: tuple[tuple[str, ...], ...]


@dataclass(frozen=True)
class SeamEase:
    """Run lengths of one seam, mm. ``ease_mm = length_b - length_a``."""

    seam: str
    length_a: float
    length_b: float

    @property
    def ease_mm(self) -> float:
        return self.length_b - self.length_a

    @property
    def ease_percent(self) -> float:
        """Ease relative to the shorter run, percent (0 when both runs are empty)."""
        short = min(self.length_a, self.length_b)
        return 100.0 * abs(self.ease_mm) / short if short > 0 else 0.0


def seam_ease(garment: Garment) -> tuple[SeamEase, ...]:
    """Both run lengths of every seam (mm), in file order: the ease a sewer builds in on purpose."""
    return tuple(
        SeamEase(s.name, garment.run_length(s.a), garment.run_length(s.b)) for s in garment.seams
    )


def _mm(v: float) -> str:
    return f"{v:.1f}"


def _run_text(run) -> str:
    text = f"{run.piece}.{run.edge}"
    if run.from_mm is not None or run.to_mm is not None:
        lo = "start" if run.from_mm is None else f"{run.from_mm:g}"
        hi = "end" if run.to_mm is None else f"{run.to_mm:g}"
        text += f" [{lo}–{hi}]"
    if run.reverse:
        text += " (reversed)"
    return text


def _shape_text(shape) -> tuple[str, str]:
    if isinstance(shape, Circle):
        return "circle", f"r {shape.radius:g} at ({shape.cx:g}, {shape.cy:g})"
    if isinstance(shape, Rectangle):
        turn = f" turned {shape.angle_deg:g}°" if shape.angle_deg else ""
        return "rectangle", f"{shape.width:g} × {shape.height:g}{turn} at ({shape.cx:g}, {shape.cy:g})"
    if isinstance(shape, PolygonShape):
        return "polygon", f"{len(shape.points)} corners"
    return type(shape).__name__, ""


def garment_summary(garment: Garment) -> tuple[Section, ...]:
    """The garment in tables: pieces, seams, open edges, keep-outs, landmarks, robot.

    The garment should be valid (see :func:`garnav.spec.garment_problems`). Areas in cm², lengths
    in mm, angles in degrees.
    """
    g = garment
    sections = []
    sections.append(Section(
        "pieces",
        ("piece", "area cm²", "perimeter mm", "edges", "openings", "sheet position mm"),
        tuple(
            (
                p.name,
                f"{p.area / 100.0:.1f}",
                _mm(p.perimeter),
                str(len(p.edges)),
                ", ".join(o.name for o in p.openings) or "-",
                f"({p.placement.x:g}, {p.placement.y:g}) {p.placement.angle_deg:g}°",
            )
            for p in g.pieces
        ),
    ))
    eases = {e.seam: e for e in seam_ease(g)}
    sections.append(Section(
        "seams",
        ("seam", "run a", "run b", "a mm", "b mm", "ease mm", "crossable", "cost mm",
         "min angle °"),
        tuple(
            (
                s.name,
                _run_text(s.a),
                _run_text(s.b),
                _mm(eases[s.name].length_a),
                _mm(eases[s.name].length_b),
                f"{round(eases[s.name].ease_mm, 1) + 0.0:+.1f} "  # + 0.0 turns -0.0 into 0.0
                f"({eases[s.name].ease_percent:.1f}%)",
                "yes" if s.crossable else "no",
                f"{s.crossing_cost_mm:g}",
                f"{s.min_crossing_angle_deg:g}",
            )
            for s in g.seams
        ),
    ))
    open_rows = [
        (r.piece, r.edge, f"{r.from_mm:.1f}–{r.to_mm:.1f}", _mm(r.to_mm - r.from_mm))
        for r in g.open_runs()
    ]
    for p in g.pieces:
        for o in p.openings:
            ring = o.array
            length = float(sum(math.dist(ring[i], ring[(i + 1) % len(ring)])
                               for i in range(len(ring))))
            open_rows.append((p.name, f"opening {o.name}", "whole loop", _mm(length)))
    sections.append(Section("open edges (drops)", ("piece", "edge", "span mm", "length mm"),
                            tuple(open_rows)))
    sections.append(Section(
        "keep-outs",
        ("keep-out", "piece", "kind", "shape", "size mm", "clearance mm", "zone"),
        tuple(
            (
                k.name,
                k.piece,
                k.kind,
                *_shape_text(k.shape),
                f"{k.clearance_mm:g}",
                "hard" if k.hard else f"soft ×{k.cost_factor:g}",
            )
            for k in g.keepouts
        ),
    ))
    sections.append(Section(
        "landmarks",
        ("landmark", "on", "position mm", "description"),
        tuple(
            (
                m.name,
                f"pattern: {m.piece}" if m.on_pattern else "body",
                f"({m.x:g}, {m.y:g})" if m.on_pattern
                else "(" + ", ".join(f"{v:g}" for v in m.xyz) + ")",
                m.description or "-",
            )
            for m in g.landmarks
        ),
    ))
    if g.body_zones:  # [[body_zone]]: kept out through the drape (docs/zones.md)
        sections.append(Section(
            "body zones (kept out through the drape)",
            ("zone", "kind", "shape", "anchors", "radius mm", "distance mm", "hard/soft"),
            tuple(
                (z.name, z.kind, z.shape,
                 "; ".join(a if isinstance(a, str) else "(" + ", ".join(f"{v:g}" for v in a) + ")" for a in z.anchors),
                 f"{z.radius_mm:g}" if z.shape != "above_plane" else "-", f"{z.distance_mm:g}",
                 "hard" if z.hard else f"soft ×{z.cost_factor:g}")
                for z in g.body_zones
            ),
        ))
    if g.poses:  # [[pose]]: drapes of the same pattern (docs/poses.md)
        sections.append(Section(
            "poses (drapes of the same pattern)",
            ("pose", "drape", "body", "posture", "default"),
            tuple((p.name, p.drape, p.body or "-", p.posture, "yes" if p.drape == g.drape and
                   p == next(q for q in g.poses if q.drape == g.drape) else "")
                  for p in g.poses),
        ))
    r = g.robot
    sections.append(Section(
        "robot",
        ("robot", "radius mm", "wheel base mm", "speed mm/s", "side", "edge margin mm"),
        () if r is None else ((r.name, f"{r.radius_mm:g}", f"{r.wheel_base_mm:g}",
                               f"{r.speed_mm_s:g}", r.side, f"{r.edge_margin_mm:g}"),),
    ))
    if r is not None and r.physics is not None:  # docs/physics.md
        p = r.physics
        magnet = (f"{min(p.magnet_table_force_n):g}..{max(p.magnet_table_force_n):g} (table)"
                  if p.magnet_table_gap_mm else f"{p.magnet_force_n:g}")
        sections.append(Section(
            "robot physics",
            ("mass kg", "magnet N", "mu", "rolling", "drive N", "battery", "power W", "safety"),
            ((f"{p.mass_kg:g}", magnet, f"{p.friction_coefficient:g}", f"{p.rolling_resistance:g}",
              f"{p.drive_force_n:g}", f"{p.battery_mah:g} mAh {p.battery_voltage_v:g} V",
              f"{p.drive_power_w:g} + {p.idle_power_w:g}", f"{p.safety_factor:g} / {p.drive_safety_factor:g}"),),
        ))
    return tuple(sections)


def _table(headers: tuple[str, ...], rows: tuple[tuple[str, ...], ...]) -> list[str]:
    widths = [max(len(h), *(len(r[i]) for r in rows)) for i, h in enumerate(headers)]
    line = lambda cells: "  ".join(c.ljust(w) for c, w in zip(cells, widths)).rstrip()  # noqa: E731
    return [line(headers), line(tuple("-" * w for w in widths))] + [line(r) for r in rows]


def _count(n: int, word: str) -> str:
    return f"{n} {word}{'' if n == 1 else 's'}"


def format_summary(garment: Garment, sections: tuple[Section, ...] | None = None) -> str:
    """The summary as plain text with aligned columns."""
    g = garment
    sections = garment_summary(g) if sections is None else sections
    w, h = g.sheet_size_mm
    counts = ", ".join(_count(n, word) for n, word in (
        (len(g.pieces), "piece"), (len(g.seams), "seam"), (len(g.keepouts), "keep-out"),
        (len(g.landmarks), "landmark")))
    head = [f"garment '{g.name}': {counts}; sheet {w:g} × {h:g} mm"]
    if g.description:
        head.append(g.description)
    if g.drape:
        head.append(f"drape: {g.drape}")
    if g.body:
        head.append(f"body: {g.body}")
    out = head
    for s in sections:
        out.append("")
        if s.rows:
            out.append(f"{s.title}:")
            out += ["  " + line for line in _table(s.headers, s.rows)]
        else:
            out.append(f"{s.title}: none")
    return "\n".join(out) + "\n"
