"""Pictures of a schedule: the robots moving on the pattern sheet and on the 3D drape (GIF), and a
space-time chart.

Frames are drawn with matplotlib (Agg, off-screen) or pyvista (off-screen) and joined into a GIF
with Pillow (a matplotlib dependency); every file is written through :mod:`garnav.atomic`.
"""

from __future__ import annotations

import io
import math

import numpy as np

from garnav.atomic import write_bytes_atomic
from garnav.fleet.check import _pair_distance, sample_positions
from garnav.fleet.schedule import Schedule
from garnav.fleet.unfold import seam_sides
from garnav.model import Garment

__all__ = ["frame_times", "sheet_positions", "write_sheet_gif", "write_space_time_chart", "write_drape_gif"]

# Colour per robot (cycled); our own muted palette.
_COLOURS = ("#2f6f8f", "#c2703d", "#5b8c3a", "#8a4f9e", "#b8433f", "#3d8c86", "#a88a2d", "#5a5a7a")


def frame_times(schedule: Schedule, max_frames: int = 120, fps: float = 10.0) -> np.ndarray:
    """Frame times (s) from 0 to the makespan: real time at ``fps`` when that fits
    ``max_frames``, else ``max_frames`` evenly spaced frames."""
    end = schedule.makespan_s
    n = min(max_frames, max(2, int(math.ceil(end * fps)) + 1))
    return np.linspace(0.0, end, n)


def sheet_positions(garment: Garment, schedule: Schedule, times: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Robot centres on the sheet (r, m, 2) mm at ``times`` (m,), and (r, m) bool: the piece
    changes before that sample (a seam crossing: the sheet position jumps)."""
    out, jumps = [], []
    for p in schedule.plans:
        pieces, xy = sample_positions(p, times)
        sheet = np.empty_like(xy)
        for name in set(pieces):
            sel = np.array([q == name for q in pieces])
            sheet[sel] = garment.piece(name).placement.to_sheet(xy[sel])
        out.append(sheet)
        jumps.append(np.array([False] + [a != b for a, b in zip(pieces[:-1], pieces[1:], strict=True)]))
    return np.array(out), np.array(jumps)


def _gif(frames: list, fps: float) -> bytes:
    from PIL import Image

    imgs = [Image.fromarray(np.asarray(f)[..., :3]).convert("P", palette=Image.Palette.ADAPTIVE) for f in frames]
    buf = io.BytesIO()
    imgs[0].save(buf, format="GIF", save_all=True, append_images=imgs[1:], duration=int(1000 / fps), loop=0)
    return buf.getvalue()


def _sheet_axes(garment: Garment, ax) -> None:
    for piece in garment.pieces:
        out = piece.placement.to_sheet(piece.outline)
        ax.fill(out[:, 0], out[:, 1], color="#ece6dc", ec="#6b6358", lw=0.8)
        ax.text(*out.mean(axis=0), piece.name, ha="center", va="center", fontsize=7, color="#8a8175")
    for k in garment.keepouts:
        geom = k.shape.exact_geometry()
        for part in getattr(geom, "geoms", [geom]):
            xy = garment.piece(k.piece).placement.to_sheet(np.asarray(part.exterior.coords))
            ax.fill(xy[:, 0], xy[:, 1], color="#e3b7ae" if k.hard else "#efd9c4", lw=0)
    ax.set_aspect("equal")
    ax.set_xlim(0, garment.sheet_size_mm[0])
    ax.set_ylim(0, garment.sheet_size_mm[1])
    ax.set_xticks([])
    ax.set_yticks([])


def write_sheet_gif(path, garment: Garment, schedule: Schedule, max_frames: int = 120, fps: float = 10.0,
                    size_px: int = 640):
    """Animation of the robots (discs to scale) on the pattern sheet. Returns the path."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt
    from matplotlib.patches import Circle

    times = frame_times(schedule, max_frames, fps)
    pos, jumps = sheet_positions(garment, schedule, times)
    w, h = garment.sheet_size_mm
    fig = plt.figure(figsize=(size_px / 100, size_px / 100 * h / w + 0.3), dpi=100)
    ax = fig.add_axes((0.01, 0.01, 0.98, 0.93))
    _sheet_axes(garment, ax)
    discs = []
    for i, p in enumerate(schedule.plans):
        c = _COLOURS[i % len(_COLOURS)]
        trail = pos[i].copy()
        trail[jumps[i]] = np.nan  # no line across the sheet where the robot crosses a seam
        ax.plot(trail[:, 0], trail[:, 1], color=c, lw=0.6, alpha=0.5)
        disc = Circle(tuple(pos[i, 0]), p.robot.radius_mm, color=c, alpha=0.9)
        ax.add_patch(disc)
        discs.append((disc, ax.text(0, 0, p.name, fontsize=6, ha="center", va="center", color="white")))
    title = fig.suptitle("", fontsize=9)
    frames = []
    for k, t in enumerate(times):
        for i, (disc, label) in enumerate(discs):
            disc.center = tuple(pos[i, k])
            label.set_position(tuple(pos[i, k]))
        title.set_text(f"{garment.name}: t = {t:5.1f} s  (pattern sheet; robots drawn to scale)")
        fig.canvas.draw()
        frames.append(np.asarray(fig.canvas.buffer_rgba()).copy())  # type: ignore[attr-defined]
    plt.close(fig)
    return write_bytes_atomic(path, _gif(frames, fps))


def write_space_time_chart(path, garment: Garment, schedule: Schedule, step_s: float = 0.05):
    """Space-time chart: distance driven against time for each robot (flat = waiting), and the
    smallest gap between any two robots against time. PNG or SVG by the file name. Returns the path."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    times = np.arange(0.0, schedule.makespan_s + step_s, step_s)
    fig, (top, bottom) = plt.subplots(2, 1, figsize=(7.5, 5.5), sharex=True, height_ratios=(3, 2))
    sampled = []
    for i, p in enumerate(schedule.plans):
        pieces, xy = sample_positions(p, times)
        sampled.append((pieces, xy))
        step = np.hypot(*np.diff(xy, axis=0).T)
        # a crossing is no driving (on a seam joining a piece to itself only the position jumps)
        step[[pieces[k] != pieces[k + 1] for k in range(len(step))]] = 0.0
        step[step > p.robot.speed_mm_s * step_s * 1.01 + 1e-6] = 0.0
        top.plot(times, np.concatenate([[0.0], np.cumsum(step)]), color=_COLOURS[i % len(_COLOURS)], label=p.name)
    top.set_ylabel("distance driven (mm)")
    top.legend(fontsize=7, loc="upper left")
    top.set_title(f"{garment.name}: {len(schedule.plans)} robots, makespan {schedule.makespan_s:.1f} s", fontsize=9)
    sides = seam_sides(garment)
    gaps = np.full(len(times), np.inf)
    plans = schedule.plans
    for i in range(len(plans)):
        for j in range(i + 1, len(plans)):
            ri, rj = plans[i].robot.radius_mm, plans[j].robot.radius_mm
            d = _pair_distance(garment, sides, *sampled[i], *sampled[j], ri + rj + 4 * schedule.gap_mm + 5.0)
            gaps = np.minimum(gaps, d - ri - rj)
    shown = np.where(np.isfinite(gaps), gaps, np.nan)
    bottom.plot(times, shown, color="#333333", lw=1)
    bottom.axhline(schedule.gap_mm, color="#b8433f", ls="--", lw=0.8, label=f"gap kept ({schedule.gap_mm:g} mm)")
    bottom.set_ylabel("smallest gap (mm)\n(one piece or one seam apart)")
    bottom.set_xlabel("time (s)")
    bottom.legend(fontsize=7)
    fig.tight_layout()
    buf = io.BytesIO()
    fmt = "svg" if str(path).lower().endswith(".svg") else "png"
    fig.savefig(buf, format=fmt, dpi=110)
    plt.close(fig)
    return write_bytes_atomic(path, buf.getvalue())


def write_drape_gif(path, garment: Garment, drape, schedule: Schedule, max_frames: int = 40, fps: float = 5.0,
                    view: str = "front", size: tuple[int, int] = (480, 400)):
    """Animation of the robots (spheres of their radius) on the 3D drape, rendered off-screen with
    pyvista. Returns the path."""
    import pyvista as pv

    from garnav.preview.scene import build_plotter, set_view

    times = frame_times(schedule, max_frames, fps)
    world = []
    for p in schedule.plans:
        pieces, xy = sample_positions(p, times)
        xyz = np.zeros((len(times), 3))
        for name in set(pieces):
            sel = np.array([q == name for q in pieces])
            xyz[sel] = drape.pattern_to_3d(name, xy[sel], snap_mm=2.0)
        world.append(xyz)
    plotter = build_plotter(garment, drape, off_screen=True, size=size, labels=False)
    set_view(plotter, view)
    frames = []
    for k in range(len(times)):
        for i, p in enumerate(schedule.plans):
            plotter.add_mesh(pv.Sphere(radius=p.robot.radius_mm, center=world[i][k]),
                             color=_COLOURS[i % len(_COLOURS)], name=f"robot{i}")
        plotter.add_text(f"t = {times[k]:5.1f} s", font_size=9, name="clock")
        frames.append(plotter.screenshot(return_img=True))
    plotter.close()
    return write_bytes_atomic(path, _gif(frames, fps))
