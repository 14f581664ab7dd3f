"""Small study folders for the study tests: a tilted panel with keep-outs, its drape, a robot.

The panel (300 × 400 mm) slopes up along pattern +y by 20° and carries a circle keep-out
(``button``), a rectangle (``pocket``) and a full-width strip (``wall``) that cuts off the top; its
landmarks are ``a``, ``b``, ``c`` (free, below the wall), ``in_pocket`` (inside the pocket) and
``top`` (above the wall, unreachable).
"""

from __future__ import annotations

import dataclasses
from pathlib import Path

import numpy as np

import drape_meshes
import garments
import physics_planes
from garnav.drape.meshio import save_obj
from garnav.mechanics.profile import RobotPhysics
from garnav.model import Circle, KeepOut, Landmark, Rectangle, Robot
from garnav.spec import save_garment
from garnav.uncertainty.model import OdometryModel

W_MM, H_MM = 300.0, 400.0
SLOPE_DEG = 20.0
ROBOT = Robot(name="tester", radius_mm=10.0, wheel_base_mm=15.0, speed_mm_s=20.0, edge_margin_mm=2.0,
              physics=RobotPhysics(mass_kg=0.05),
              odometry=OdometryModel(start_position_mm=3.0, start_heading_deg=8.0))


def panel_garment():
    g = garments.single_panel(W_MM, H_MM)
    keepouts = (
        KeepOut("button", "panel", "button", Circle(150.0, 120.0, 12.0)),
        KeepOut("pocket", "panel", "pocket", Rectangle(80.0, 220.0, 60.0, 40.0)),
        KeepOut("wall", "panel", "custom", Rectangle(150.0, 300.0, 300.0, 10.0)),
    )
    marks = (
        Landmark("a", "panel", 40.0, 40.0),
        Landmark("b", "panel", 260.0, 60.0),
        Landmark("c", "panel", 200.0, 230.0),
        Landmark("in_pocket", "panel", 80.0, 220.0),
        Landmark("top", "panel", 150.0, 360.0),
    )
    return dataclasses.replace(g, keepouts=keepouts, landmarks=marks, robot=ROBOT, drape="panel.obj")


def write_panel_spec(folder: Path) -> Path:
    """Write ``panel.toml`` and its drape ``panel.obj`` into ``folder``; return the spec path."""
    garment = panel_garment()
    pattern, tris = drape_meshes.rect_grid(W_MM, H_MM, 12, 16)
    xyz = np.column_stack([pattern, np.zeros(len(pattern))]) @ physics_planes.slope_rotation(SLOPE_DEG).T
    mesh = drape_meshes.mesh_from_parts(garment, {"panel": (pattern, tris, xyz)})
    folder.mkdir(parents=True, exist_ok=True)
    save_obj(mesh, folder / "panel.obj")
    save_garment(garment, folder / "panel.toml")
    return folder / "panel.toml"


WEAK_ROBOT = """format = "garnav-robot"
[robot]
name = "weak"
radius_mm = 10.0
wheel_base_mm = 15.0
speed_mm_s = 20.0
edge_margin_mm = 2.0
[robot.physics]
mass_kg = 0.05
max_drive_force_n = 0.02
"""


def write_study(folder: Path, body: str, name: str = "small") -> Path:
    """Write the panel spec and a study file ``NAME.toml`` with ``body`` after the header."""
    write_panel_spec(folder)
    path = folder / f"{name}.toml"
    path.write_text(f'format = "garnav-study"\nversion = 1\nname = "{name}"\noutput = "{name}-out"\n{body}',
                    encoding="utf-8")
    return path


SMALL = """
measures = ["length", "length_3d", "time", "energy", "margins", "contact"]
contact_runs = 50
postures = ["upright", "supine"]
chunk_size = 5

[[garment]]
spec = "panel.toml"
[garment.grading]
sizes = ["S", "M"]
base = "M"
step_percent = 5.0

[queries]
landmarks = ["a", "b", "c", "in_pocket", "top"]
ordered = false
"""
