"""The study report: ``summary.json``, ``summary.md`` and two PNG plots (matplotlib, off-screen).

* ``feasibility_pairs.png`` — a heat map of the feasible fraction of every (start, goal) pair over
  all sizes, poses, postures and robots (grey: pair not in the study); at most
  :data:`MAX_HEATMAP_POINTS` points per axis (the most frequent), so large random studies stay
  readable;
* ``energy_by_pose.png`` — box plots of the energy of the feasible routes per pose (and posture,
  when there are several); without energy in the measures, of the route length instead.

Figures are drawn on :class:`matplotlib.figure.Figure` objects (no pyplot state) with the Agg
canvas, and every file is written through :mod:`garnav.atomic`.
"""

from __future__ import annotations

import io
import json
import math
from collections import Counter
from pathlib import Path

import numpy as np

from garnav.atomic import write_bytes_atomic, write_text_atomic
from garnav.cautions import cautions_markdown
from garnav.study.extra import require
from garnav.study.results import read_rows
from garnav.study.summary import summarise

__all__ = ["write_report", "markdown_report", "MAX_HEATMAP_POINTS", "REPORT_FILES", "SAFETY_NOTE"]

MAX_HEATMAP_POINTS = 40
REPORT_FILES = ("summary.json", "summary.md", "feasibility_pairs.png", "energy_by_pose.png")
SAFETY_NOTE = ("Feasible here means a route the planner found and, with physics measures, one that keeps the "
               "robot's margins in the model; it certifies nothing. Magnets can disturb implanted medical "
               "devices; keep robots off the neck and face; use protected batteries and keep an emergency stop "
               "at hand. Follow the device maker, clinicians, the applicable standards and qualified professionals.")


def _png(fig) -> bytes:
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    FigureCanvasAgg(fig)
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=110, metadata={"Software": None})
    return buf.getvalue()


def heatmap_png(summary: dict) -> bytes:
    """The feasibility heat map (see the module notes) as PNG bytes."""
    require("matplotlib", "study plots")
    from matplotlib.figure import Figure

    pairs = summary["pairs"]
    freq: Counter = Counter()
    for p in pairs:
        freq[p["start"]] += p["cases"]
        freq[p["goal"]] += p["cases"]
    keep = sorted(n for n, _ in sorted(freq.items(), key=lambda kv: (-kv[1], kv[0]))[:MAX_HEATMAP_POINTS])
    index = {n: i for i, n in enumerate(keep)}
    grid = np.full((len(keep), len(keep)), np.nan)
    for p in pairs:
        if p["start"] in index and p["goal"] in index:
            grid[index[p["start"]], index[p["goal"]]] = p["feasible_fraction"]
    side = max(4.0, 0.28 * len(keep) + 2.5)
    fig = Figure(figsize=(side + 1.2, side))
    ax = fig.add_subplot()
    ax.set_facecolor("#d9d9d9")
    im = ax.imshow(np.ma.masked_invalid(grid), cmap="RdYlGn", vmin=0.0, vmax=1.0, interpolation="nearest")
    ax.set_xticks(range(len(keep)), keep, rotation=90, fontsize=7)
    ax.set_yticks(range(len(keep)), keep, fontsize=7)
    ax.set_xlabel("goal")
    ax.set_ylabel("start")
    shown = "" if len(keep) == len(freq) else f" ({len(keep)} of {len(freq)} points)"
    ax.set_title(f"feasible fraction by pair{shown}", fontsize=10)
    fig.colorbar(im, ax=ax, fraction=0.046, pad=0.04, label="feasible fraction")
    fig.tight_layout()
    return _png(fig)


def boxplot_png(rows: list[dict]) -> bytes:
    """Box plots of energy (else length) of the feasible routes per pose / posture, PNG bytes."""
    require("matplotlib", "study plots")
    from matplotlib.figure import Figure

    ok = [r for r in rows if r.get("status") == "ok"]
    col, unit = ("energy_j", "J") if any(r.get("energy_j") is not None for r in ok) else ("length_mm", "mm")
    several = len({r.get("posture") for r in ok}) > 1
    groups: dict[str, list[float]] = {}
    for r in ok:
        if r.get(col) is None:
            continue
        label = f"{r['pose']} / {r['posture']}" if several else str(r["pose"])
        groups.setdefault(label, []).append(float(r[col]))
    labels = sorted(groups)
    fig = Figure(figsize=(max(4.0, 1.2 * len(labels) + 2.0), 4.0))
    ax = fig.add_subplot()
    if labels:
        ax.boxplot([groups[k] for k in labels])
        ax.set_xticks(range(1, len(labels) + 1), labels, rotation=20, fontsize=8)
    else:
        ax.text(0.5, 0.5, "no feasible routes", ha="center", va="center", transform=ax.transAxes)
    ax.set_ylabel(f"{'energy' if col == 'energy_j' else 'route length'} ({unit})")
    ax.set_title(f"{'energy' if col == 'energy_j' else 'route length'} of feasible routes per "
                 f"{'pose / posture' if several else 'pose'}", fontsize=10)
    fig.tight_layout()
    return _png(fig)


def _num(v, digits: int = 1) -> str:
    return "–" if v is None or (isinstance(v, float) and not math.isfinite(v)) else f"{v:.{digits}f}"


def markdown_report(summary: dict, title: str = "study") -> str:
    """The short Markdown report of a summary."""
    lines = [f"# Study: {title}", "",
             f"{summary['cases']} cases, {summary['feasible']} feasible "
             f"({100.0 * summary['feasible'] / max(1, summary['cases']):.1f} %). Statuses: "
             + ", ".join(f"{k} {v}" for k, v in summary["statuses"].items()) + ".", "",
             "## Feasibility and measures per group", "",
             "Medians over the feasible routes, with the 10th–90th percentile range.", "",
             "| garment | size | pose | posture | robot | cases | feasible | length mm | 3D length mm | time s | energy J |",
             "|---|---|---|---|---|---|---|---|---|---|---|"]

    def cell(g: dict, col: str, digits: int = 1) -> str:
        d = g.get(col)
        if d is None:
            return "–"
        return f"{_num(d['median'], digits)} ({_num(d['p10'], digits)}–{_num(d['p90'], digits)})"

    for g in summary["groups"]:
        lines.append(f"| {g['garment']} | {g['size']} | {g['pose']} | {g['posture']} | {g['robot']} | {g['cases']} | "
                     f"{100.0 * g['feasible_fraction']:.1f} % | {cell(g, 'length_mm', 0)} | {cell(g, 'length_3d_mm', 0)} | "
                     f"{cell(g, 'time_s')} | {cell(g, 'energy_j', 2)} |")
    for key, head, what in (("blockers", "What blocks the failed cases", "failed cases naming it"),
                            ("detours", "What forces detours", "feasible routes that detour because of it"),
                            ("bends", "Bottlenecks the routes wrap around", "feasible routes bending at it"),
                            ("contact", "Most-touched regions (Monte Carlo)", "routes where it is touched most")):
        items = summary.get(key) or []
        if not items:
            continue
        lines += ["", f"## {head}", "", f"| name | {what} |", "|---|---|"]
        lines += [f"| {name} | {n} |" for name, n in items[:10]]
    if summary.get("example_reasons"):
        lines += ["", "## One reason per status", ""]
        lines += [f"- **{k}**: {v}" for k, v in summary["example_reasons"].items()]
    lines += ["", "## Plots", "", "![feasibility by pair](feasibility_pairs.png)", "",
              "![energy per pose](energy_by_pose.png)", "", "## Caution", "", SAFETY_NOTE, "", cautions_markdown(), ""]
    return "\n".join(lines)


def write_report(out: str | Path, title: str = "study", rows=None) -> dict:
    """Summarise the rows in ``out`` (or ``rows``) and write the report files there; returns the
    summary dict."""
    folder = Path(out)
    table = read_rows(folder) if rows is None else rows
    data = table.to_pylist() if hasattr(table, "to_pylist") else list(table)
    summary = summarise(data)
    write_text_atomic(folder / "summary.json", json.dumps(summary, indent=1) + "\n")
    write_text_atomic(folder / "summary.md", markdown_report(summary, title))
    write_bytes_atomic(folder / "feasibility_pairs.png", heatmap_png(summary))
    write_bytes_atomic(folder / "energy_by_pose.png", boxplot_png(data))
    return summary
