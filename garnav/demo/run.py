"""The whole job on the demo garment: plan routes, lift them, export them and draw them.

:func:`run_demo` builds the demo sensing top in memory (pattern, drape mesh, mannequin — about a
second; no files needed, so it works from an installed package), plans :data:`DEMO_ROUTES` between
body landmarks with one :class:`~garnav.plan.Planner`, lifts each route onto the drape and writes
into one folder:

* per route ``NAME.json`` (route document, docs/route-format.md), ``NAME.csv`` (waypoints) and
  ``NAME.cmd`` (robot commands, docs/commands.md);
* ``routes_3d.png``: all routes on the drape and mannequin, front and back views side by side
  (rendered off-screen);
* ``routes_sheet.svg`` and ``routes_sheet.png``: all routes on the flat pattern sheet;
* the demo spec and meshes (``sensing_top.toml``, ``sensing_top_drape.obj``, ``mannequin.obj``), so
  that ``garnav route`` and ``garnav show`` can work on the folder afterwards.

:func:`summary_table` formats the results as a text table.
"""

from __future__ import annotations

import os
import time
from dataclasses import dataclass, field
from pathlib import Path
from typing import Callable

import numpy as np

from garnav.model import Garment, Robot

__all__ = [
    "DemoRoute",
    "DemoResult",
    "DemoScene",
    "demo_scene",
    "DEMO_ROUTES",
    "DEMO_STEPS",
    "SCREENSHOT_NAME",
    "SCREENSHOT_SIZE",
    "SHEET_NAME",
    "PAGE_NAME",
    "run_demo",
    "summary_table",
]

#: The demo's queries: (start, goal, what the route shows). ``scapula_right`` is a body landmark
#: (xyz) that snaps onto the garment through the drape. No route ends in (or crosses) the demo's
#: body zones: the implanted device on the left chest and the neck and face (garnav.zones).
DEMO_ROUTES: tuple[tuple[str, str, str], ...] = (
    ("wrist_left", "sternum_left", "sleeve to chest, round the back: the implant zone blocks the front armhole"),
    ("olecranon_right", "dock", "elbow back to the charging dock on the lower back"),
    ("wrist_right", "scapula_right", "across the right armhole to the shoulder blade, a body landmark"),
    ("omphalion", "sternum_right", "straight up the chest is too steep for the drive: a switchback"),
)

#: Labels passed to ``progress`` (one call after each step), in order.
DEMO_STEPS: tuple[str, ...] = (
    "garment and drape",
    "planner",
    *(f"route {s} → {g}" for s, g, _ in DEMO_ROUTES),
    "poses",
    "demo files",
    "3D view",
    "sheet",
    "page",
)

SCREENSHOT_NAME = "routes_3d.png"
#: Size of each of the two views in the 3D screenshot, pixels; the PNG is twice as wide.
SCREENSHOT_SIZE = (900, 900)
SHEET_NAME = "routes_sheet"
#: The shareable plan page (garnav.page): one offline HTML file.
PAGE_NAME = "plan.html"


@dataclass(frozen=True, eq=False)
class DemoRoute:
    """One planned, lifted and exported demo route.

    Attributes
    ----------
    name : str
        File stem, ``START_to_GOAL``.
    start, goal, about : str
    route : garnav.plan.Route
    lifted : garnav.drape.LiftedRoute
    document : dict
        The ``garnav-route`` document written to ``files["json"]``.
    files : dict
        ``json``, ``csv``, ``commands`` → Path.
    planned : garnav.mechanics.PlannedRoute, optional
        With the robot's physics profile: the route's mechanics, and the refused shortest route
        when that one was not drivable.
    drift : dict
        Open-loop dead reckoning of the route's commands (:data:`DRIFT_RUNS` seeded Monte Carlo
        runs of the robot's odometry model): ``cross_track_2sigma_mm``, ``contact`` (share of runs
        touching a hard keep-out, a body zone or an open edge) and ``zone_contact`` (a body zone).
    """

    name: str
    start: str
    goal: str
    about: str
    route: object
    lifted: object
    document: dict
    files: dict[str, Path]
    planned: object = None
    drift: dict | None = None


#: Monte Carlo runs of each demo route's open-loop drift (seed 0).
DRIFT_RUNS = 2000


def route_drift(garment, robot, route, risk) -> dict:
    """Open-loop drift of one route's commands: cross-track 2σ and the share of seeded Monte Carlo
    runs (:data:`DRIFT_RUNS`) whose disc touches a hard keep-out, a body zone (names ``ZONE@PIECE``)
    or an open edge (``risk``: :class:`garnav.uncertainty.montecarlo.RiskMap` of ``garment``)."""
    from garnav.export.commands import route_commands
    from garnav.uncertainty import OdometryModel
    from garnav.uncertainty.montecarlo import monte_carlo
    from garnav.uncertainty.plan_ops import compile_commands

    plan = compile_commands(garment, route_commands(route, garment, robot), robot)
    mc = monte_carlo(plan, robot.odometry or OdometryModel(), risk, runs=DRIFT_RUNS, seed=0)
    zones = [v for k, v in mc.contact.items() if "@" in k]
    return {"cross_track_2sigma_mm": 2.0 * mc.cross_track_sigma_mm,
            "contact": float(mc.any_contact.mean()),
            "zone_contact": float(np.any(zones, axis=0).mean()) if zones else 0.0}


@dataclass(frozen=True, eq=False)
class DemoResult:
    """What :func:`run_demo` did.

    Attributes
    ----------
    out_dir : Path
    garment : Garment
    robot : Robot
    routes : tuple of DemoRoute
    files : dict
        Every file written, by role: ``screenshot``, ``sheet_svg``, ``sheet_png``, ``page``, ``spec``,
        ``drape``, ``body``, and ``NAME.json`` / ``NAME.csv`` / ``NAME.cmd`` per route.
    screenshot_px : (width, height)
    seconds : dict
        Wall time of each step, s.
    notes : tuple of str
        What could not be done (the 3D picture when off-screen rendering is not available).
    """

    out_dir: Path
    garment: Garment
    robot: Robot
    routes: tuple[DemoRoute, ...]
    files: dict[str, Path]
    screenshot_px: tuple[int, int]
    seconds: dict[str, float] = field(default_factory=dict)
    notes: tuple[str, ...] = ()
    poses: object = None  # garnav.demo.pose_demo.PoseDemo


@dataclass(frozen=True, eq=False)
class DemoScene:
    """The demo garment with its drape and mannequin, built in memory.

    Attributes
    ----------
    garment : Garment
        Checked; equal to the garment of ``meshes/sensing_top.toml``.
    drape : garnav.drape.Drape
        The drape mesh linked to the garment's pieces.
    body : (vertices (B, 3), faces (G, 3))
        The mannequin, world mm.
    drape_mesh, body_mesh : garnav.demo.mesh.DrapeMesh, BodyMesh
        The raw meshes (what ``garnav demo --rebuild`` writes as OBJ).
    """

    garment: Garment
    drape: object
    body: tuple
    drape_mesh: object
    body_mesh: object


def demo_scene() -> DemoScene:
    """Build the demo garment, its drape and its mannequin in memory (about a second, no files)."""
    from garnav.demo.mesh import build_body, build_drape
    from garnav.demo.pattern import build_design
    from garnav.drape import link_drape
    from garnav.drape.meshio import uv_mesh_from_arrays
    from garnav.spec import check_garment

    design = build_design()
    garment = check_garment(design.garment, "<demo>")
    mesh = build_drape(design)
    body = build_body(design)
    drape = link_drape(
        garment, uv_mesh_from_arrays(mesh.vertices, mesh.faces, mesh.uv[mesh.face_uv], source="<demo drape>")
    )
    return DemoScene(garment, drape, (body.vertices, body.faces), mesh, body)


def run_demo(
    out_dir: str | os.PathLike,
    progress: Callable[[str], None] | None = None,
    *,
    screenshot: bool = True,
    command_tolerance_mm: float | None = None,
) -> DemoResult:
    """Run the whole job on the demo garment and write its outputs into ``out_dir``.

    Parameters
    ----------
    out_dir : path
        Output folder, created if missing; files of the same names are replaced atomically, all
        of them as one set (:func:`garnav.atomic.writing_set`; docs/outputs.md).
    progress : callable, optional
        Called with each label of :data:`DEMO_STEPS` after that step.
    screenshot : bool
        Render the 3D view (off-screen, no display needed). False skips it (no pyvista/VTK work).
    command_tolerance_mm : float, optional
        Merge tolerance of the command lists, mm (None: the default of
        :func:`garnav.export.commands.route_commands`, 0.5).

    Returns
    -------
    DemoResult
    """
    from garnav.atomic import active_set, write_text_atomic, writing_set

    if active_set() is None:  # called from Python: the demo's files are one set too (docs/outputs.md)
        with writing_set() as files_set:
            result = run_demo(out_dir, progress, screenshot=screenshot, command_tolerance_mm=command_tolerance_mm)
            files_set.commit()
        return result
    from garnav.demo.build import BODY_NAME, DRAPE_NAME, SPEC_NAME
    from garnav.demo.mesh import body_obj_text, drape_obj_text
    from garnav.drape import lift_route
    from garnav.drape.inverse import pattern_locator
    from garnav.export.commands import DEFAULT_TOLERANCE_MM, precision_comment, route_commands, write_commands
    from garnav.export.waypoints import route_document, write_route_csv, write_route_json
    from garnav.plan import Planner
    from garnav.errors import GarnavError
    from garnav.spec import save_garment

    tolerance = DEFAULT_TOLERANCE_MM if command_tolerance_mm is None else float(command_tolerance_mm)
    step = progress or (lambda label: None)
    out = Path(out_dir)
    try:  # fail before the work, not after it
        out.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise GarnavError(f"{out}: cannot write: {exc.strerror or exc}") from None
    seconds: dict[str, float] = {}
    clock = [time.perf_counter()]

    def done(label: str) -> None:
        now = time.perf_counter()
        seconds[label] = now - clock[0]
        clock[0] = now
        step(label)

    scene = demo_scene()
    garment, drape, mesh, body = scene.garment, scene.drape, scene.drape_mesh, scene.body_mesh
    robot = garment.robot or Robot()
    from garnav.zones import with_zone_keepouts

    zoned = with_zone_keepouts(garment, drape)  # the body zones as keep-outs on this drape
    done("garment and drape")
    planner = Planner(zoned, robot, locate_3d=pattern_locator(drape, zoned))
    physics = None
    if robot.physics is not None:  # -- physics: routes the robot can drive (docs/physics.md)
        from garnav.mechanics.planning import PhysicsPlanner

        physics = PhysicsPlanner(planner, drape)
    done("planner")

    files: dict[str, Path] = {}
    routes = []
    from garnav.uncertainty.montecarlo import RiskMap

    risk = RiskMap(zoned, robot)  # keep-outs, body zones and open edges, as the robot's disc meets them
    for start, goal, about in DEMO_ROUTES:
        planned = None
        if physics is not None:
            planned = physics.route(start, goal)
            route, lifted = planned.route, planned.lifted
        else:
            route = planner.route(start, goal)
            lifted = lift_route(drape, garment, route)
        doc = route_document(route, garment, robot, lifted, planned.mechanics if planned else None,
                             command_tolerance_mm=tolerance)
        name = f"{start}_to_{goal}"
        rfiles = {
            "json": Path(write_route_json(out / f"{name}.json", doc)),
            "csv": Path(write_route_csv(out / f"{name}.csv", doc)),
            "commands": Path(
                write_commands(
                    out / f"{name}.cmd",
                    route_commands(route, garment, robot, tolerance_mm=tolerance),
                    comment=f"{start} to {goal} on garment '{garment.name}', robot '{robot.name}'\n"
                    + precision_comment(tolerance),
                )
            ),
        }
        for path in rfiles.values():
            files[path.name] = path
        routes.append(DemoRoute(name, start, goal, about, route, lifted, doc, rfiles, planned,
                                route_drift(zoned, robot, route, risk)))
        done(f"route {start} → {goal}")

    from garnav.demo.pose_demo import run_pose_demo  # one route in both poses (docs/poses.md)

    poses = run_pose_demo(scene, out, tolerance)
    files.update(poses.files)
    done("poses")

    files["spec"] = Path(save_garment(garment, out / SPEC_NAME))
    files["drape"] = Path(write_text_atomic(out / DRAPE_NAME, drape_obj_text(mesh, garment.name)))
    files["body"] = Path(write_text_atomic(out / BODY_NAME, body_obj_text(body)))
    done("demo files")

    px = (0, 0)
    notes: list[str] = []
    if screenshot:
        from garnav.atomic import write_bytes_atomic
        from garnav.preview.scene import SceneRoute, build_plotter, off_screen_environment, views_png

        off_screen_environment()
        scene_routes = [SceneRoute(r.name, r.lifted.points, r.lifted.normals, _margins(r)) for r in routes]
        # -- physics: the refused shortest routes, thin, coloured where they miss a margin
        scene_routes += [
            SceneRoute(f"{r.name}_shortest", r.planned.shortest_lifted.points, r.planned.shortest_lifted.normals,
                       r.planned.shortest.tightest, faint=True)
            for r in routes if r.planned is not None and r.planned.shortest is not None
        ]
        try:
            plotter = build_plotter(
                garment, drape, (body.vertices, body.faces), scene_routes, off_screen=True, size=SCREENSHOT_SIZE
            )
            try:
                png = views_png(plotter, ("front", "back"))
            finally:
                plotter.close()
        except Exception as exc:  # VTK raises many kinds when no off-screen OpenGL is available
            notes.append(f"3D picture skipped: off-screen rendering failed ({type(exc).__name__}: {exc})")
        else:
            files["screenshot"] = Path(write_bytes_atomic(out / SCREENSHOT_NAME, png))
            px = (2 * SCREENSHOT_SIZE[0], SCREENSHOT_SIZE[1])
    done("3D view")

    from garnav.preview.sheet import sheet_drawing, write_sheet_png, write_sheet_svg

    drawing = sheet_drawing(
        zoned, [r.route for r in routes], planner.free, robot, route_names=[r.name for r in routes]
    )
    files["sheet_svg"] = Path(write_sheet_svg(out / f"{SHEET_NAME}.svg", drawing))
    files["sheet_png"] = Path(write_sheet_png(out / f"{SHEET_NAME}.png", drawing))
    done("sheet")

    from garnav.page import plan_page, write_plan_page

    page = plan_page(zoned, [(r.name, r.document) for r in routes], drape, scene.body,
                     free_space=planner.free, title=f"Demo plan: robot routes on {garment.name} (invented scenario)")
    files["page"] = write_plan_page(out / PAGE_NAME, page)
    done("page")
    return DemoResult(out, garment, robot, tuple(routes), files, px, seconds, tuple(notes), poses)


def _margins(r: DemoRoute):
    """Per-segment tightest margin over its requirement, for colouring (None without physics)."""
    return None if r.planned is None else r.planned.mechanics.tightest


def summary_table(result: DemoResult) -> str:
    """The demo routes as a text table: length on the pattern and on the drape, seams crossed,
    turns (as ``garnav route`` counts them: more than 0.5°, and their total), climb up and down
    (world z) and the estimated time (driving plus turning in place); with the robot's physics
    profile also the energy (J and share of the battery) and the worst margin, followed by a note
    for every route whose shortest version was not drivable."""
    head = ("route", "length", "3D length", "seams crossed", "turns", "climb up/down", "time", "drift 2σ",
            "P(touch)")
    with_physics = any(r.planned is not None for r in result.routes)
    if with_physics:
        head += ("energy", "worst margin")
    rows = [head]
    for r in result.routes:
        doc = r.document
        s = doc["summary"]
        seams = ", ".join(s["seams_crossed"]) or "none"
        rows.append(
            (
                f"{r.start} → {r.goal}",
                f"{doc['length_mm']:.1f} mm",
                f"{doc['length_3d_mm']:.1f} mm",
                f"{s['crossing_count']} ({seams})",
                f"{r.route.turn_count()} ({float(np.sum(np.abs(r.route.turns_deg))):.0f}°)",
                f"{s['climb_up_mm']:.0f}/{s['climb_down_mm']:.0f} mm",
                f"{s['estimated_time_s']:.1f} s",
                *_drift_cells(r),
            )
            + (_physics_cells(r) if with_physics else ())
        )
    widths = [max(len(row[i]) for row in rows) for i in range(len(head))]
    lines = ["  ".join(cell.ljust(w) for cell, w in zip(row, widths)).rstrip() for row in rows]
    lines.insert(1, "  ".join("-" * w for w in widths))
    if any(r.drift is not None for r in result.routes):
        lines.append(f"drift: open-loop dead reckoning of each route's commands, {DRIFT_RUNS} seeded Monte Carlo "
                     "runs of the invented odometry model; P(touch) = share of runs whose disc touches a hard "
                     "keep-out, a body zone or an open edge (body zones keep a 15 mm drift allowance; docs/demo.md)")
    for r in result.routes:  # -- physics: why a longer route was taken
        if r.planned is not None and r.planned.shortest is not None:
            short = r.planned.shortest
            key, value = short.worst()
            need = short.physics.drive_safety_factor if key == "drive" else short.physics.safety_factor
            lines.append(
                f"note: {r.start} → {r.goal}: the shortest route ({r.planned.shortest_route.length_mm:.0f} mm) "
                f"is not drivable ({key} margin {value:.2f} < {need:g} on {len(short.unsafe)} segments); "
                f"the planner took a longer one ({r.route.length_mm:.0f} mm) that keeps every margin"
            )
    return "\n".join(lines)


def _drift_cells(r: DemoRoute) -> tuple[str, str]:
    if r.drift is None:
        return ("", "")
    d = r.drift
    return (f"{d['cross_track_2sigma_mm']:.0f} mm", f"{100 * d['contact']:.1f} % (zones {100 * d['zone_contact']:.1f} %)")


def _physics_cells(r: DemoRoute) -> tuple[str, str]:
    if r.planned is None:
        return ("", "")
    from garnav.mechanics.evaluate import margin_text

    m = r.planned.mechanics
    key, value = m.worst()
    return (f"{m.total_energy_j:.1f} J ({100 * m.battery_used_fraction:.1f} %)", f"{key} {margin_text(value)}")
