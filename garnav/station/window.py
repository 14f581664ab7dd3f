"""The station's pyvista window: the draped garment, each robot's estimated pose and 2σ ellipse,
the route it drives, a panel — and click-to-go.

A click on the garment (pyvista surface point picking) gives a world point; it is located on the
pattern through the drape (:func:`garnav.drape.inverse.pattern_locator`) and the selected robot is
planned there from its estimated pose (:meth:`garnav.station.controller.Station.goto`). Keys:
**space** stops every robot (the emergency stop), **r** re-plans the selected robot from its
estimated pose to its goal, **1**–**9** select a robot. A timer polls the link and redraws
about ten times a second. Estimated poses and ellipses are drawn in the pattern and lifted onto
the drape (the ellipse sampled in the piece frame, then lifted), lifted a little off the surface
along its normal so they do not flicker into it.
"""

from __future__ import annotations

import math

import numpy as np

from garnav.errors import GarnavError
from garnav.plan import PiecePoint
from garnav.preview.scene import build_plotter
from garnav.station.controller import Station

__all__ = ["StationWindow", "ellipse_points"]

ROBOT_COLOURS = ("#1f6f8b", "#b5651d", "#6a4c93", "#2a9d8f", "#9c2f2f")


def ellipse_points(centre: tuple[float, float], ellipse: dict, n: int = 48) -> np.ndarray:
    """(n, 2) points of a 2σ ellipse (``semi_major_mm``, ``semi_minor_mm``, ``angle_deg``) around
    ``centre`` (mm, piece frame).

    >>> ellipse_points((0.0, 0.0), {"semi_major_mm": 2.0, "semi_minor_mm": 1.0, "angle_deg": 90.0}, 4).round(6).tolist()
    [[0.0, 2.0], [-1.0, 0.0], [-0.0, -2.0], [1.0, -0.0]]
    """
    t = np.linspace(0.0, 2.0 * math.pi, n, endpoint=False)
    a, b = float(ellipse["semi_major_mm"]), float(ellipse["semi_minor_mm"])
    phi = math.radians(float(ellipse["angle_deg"]))
    local = np.column_stack([a * np.cos(t), b * np.sin(t)])
    rot = np.array([[math.cos(phi), -math.sin(phi)], [math.sin(phi), math.cos(phi)]])
    return np.asarray(centre, dtype=float) + local @ rot.T


class StationWindow:
    """The window over a connected :class:`Station` and the garment's drape.

    Parameters
    ----------
    station : Station
    drape : garnav.drape.Drape
    off_screen : bool
        Render without a screen (tests, screenshots).
    """

    def __init__(self, station: Station, drape, *, off_screen: bool = False, size: tuple[int, int] = (1200, 900)):
        from garnav.drape.inverse import pattern_locator

        self.station = station
        self.drape = drape
        self.garment = station.garment
        self.locate = pattern_locator(drape, self.garment)
        self.plotter = build_plotter(self.garment, drape, off_screen=off_screen, size=size)
        self.names = list(station.robots)
        self.margins: dict[str, str] = {}
        self.selected = self.names[0]
        self.message = "click the garment to send the selected robot there; space: STOP ALL"
        self.scale = float(np.linalg.norm(np.ptp(np.asarray(drape.positions), axis=0)))
        self.plotter.add_key_event("space", self.stop_all)
        self.plotter.add_key_event("r", self.replan)
        for i, name in enumerate(self.names[:9]):
            self.plotter.add_key_event(str(i + 1), lambda n=name: self.select(n))
        self.plotter.enable_surface_point_picking(callback=self.on_pick, show_message=False, show_point=True,
                                                  left_clicking=True)
        self.refresh()

    # ------------------------------------------------------------------ actions

    def select(self, name: str) -> None:
        if name not in self.station.robots:
            raise KeyError(name)
        self.selected = name
        self.message = f"selected {name}"

    def on_pick(self, point) -> PiecePoint | None:
        """The pick callback: plan and send the selected robot to the picked world point (mm).
        Returns the planned goal on the pattern (None when refused; the panel says why)."""
        try:
            piece, x, y = self.locate(np.asarray(point, dtype=float))
            goal = PiecePoint(str(piece), float(x), float(y), label="picked point")
            self.station.goto(self.selected, goal)
            r = self.station.robots[self.selected]
            self.message = f"{self.selected}: plan {r.plan_id} sent to {piece}:{x:.1f},{y:.1f}"
            self._draw_route(self.selected)
            self.refresh()
            return r.goal
        except GarnavError as exc:
            self.message = f"not sent: {exc}"
            self.refresh()
            return None

    def stop_all(self) -> None:
        self.station.emergency_stop("stop key in the station window")
        self.message = "EMERGENCY STOP sent to every robot (repeated until each acknowledges)"
        self.refresh()

    def replan(self) -> None:
        try:
            self.station.replan(self.selected)
            self._draw_route(self.selected)
            self.message = f"{self.selected}: re-planned from its estimated pose"
        except GarnavError as exc:
            self.message = f"not re-planned: {exc}"
        self.refresh()

    # ------------------------------------------------------------------ drawing

    def _lift(self, piece: str, pts: np.ndarray) -> np.ndarray | None:
        try:
            return np.asarray(self.drape.pattern_to_3d(piece, np.asarray(pts, dtype=float), 2.0), dtype=float)
        except GarnavError:
            return None

    def _draw_route(self, name: str) -> None:
        import pyvista as pv

        from garnav.drape.lift import lift_route

        r = self.station.robots[name]
        if r.route is None:
            return
        try:
            lifted = lift_route(self.drape, self.garment, r.route)
        except GarnavError:
            return
        self.margins[name] = self._route_margins(r, lifted)
        pts = np.asarray(lifted.points, dtype=float) + 0.004 * self.scale * np.asarray(lifted.normals, dtype=float)
        keep = np.r_[True, np.linalg.norm(np.diff(pts, axis=0), axis=1) > 1e-9]
        if keep.sum() >= 2:
            colour = ROBOT_COLOURS[self.names.index(name) % len(ROBOT_COLOURS)]
            self.plotter.add_mesh(pv.lines_from_points(pts[keep]).tube(radius=0.002 * self.scale, n_sides=10),
                                  color=colour, opacity=0.6, lighting=False, name=f"station-route-{name}")

    def refresh(self) -> None:
        """Redraw poses, ellipses and the panel from the station's current state."""
        import pyvista as pv

        lines = [f"garnav station — {self.garment.name}", ""]
        for i, name in enumerate(self.names):
            st = self.station.status(name)
            colour = ROBOT_COLOURS[i % len(ROBOT_COLOURS)]
            mark = ">" if name == self.selected else " "
            batt = "?" if st["battery_fraction"] is None else f"{100 * st['battery_fraction']:.0f} %"
            ell = st["ellipse"]
            sigma = "" if ell is None else f", 2σ {ell['semi_major_mm']:.1f} mm"
            lines.append(f"{mark}{i + 1} {name}: {st['state']}, battery {batt}, progress {100 * st['progress']:.0f} %{sigma}"
                         + (f", LOST ({st['lost']})" if st["lost"] else ""))
            if st["pose"] is None:
                continue
            piece, x, y, _ = st["pose"]
            centre = self._lift(piece, np.array([[x, y]]))
            if centre is not None:
                self.plotter.add_mesh(pv.Sphere(radius=0.008 * self.scale, center=centre[0]), color=colour,
                                      lighting=False, name=f"station-robot-{name}")
            if ell is not None:
                ring = self._lift(piece, ellipse_points((x, y), ell))
                if ring is not None and len(ring) > 2:
                    self.plotter.add_mesh(pv.lines_from_points(np.vstack([ring, ring[:1]])), color=colour,
                                          line_width=2.0, name=f"station-ellipse-{name}")
            if self.margins.get(name):
                lines.append(f"     {self.margins[name]}")
        lines += ["", self.message]
        self.plotter.add_text("\n".join(lines), position="upper_left", font_size=10, color="#222222", name="station-panel")

    def _route_margins(self, r, lifted) -> str:
        """The margins line of the route's mechanics (upright wearer; docs/physics.md) when the
        robot has a physics profile, else ""."""
        robot = r.robot or self.garment.robot
        physics = getattr(self.garment.robot, "physics", None)
        if robot is None or physics is None:
            return ""
        from garnav.mechanics.evaluate import route_mechanics
        from garnav.mechanics.gravity import parse_gravity

        try:
            posture, g = parse_gravity(None, None)
            mech = route_mechanics(lifted, self.drape, physics, g, speed_mm_s=robot.speed_mm_s, side=robot.side,
                                   posture=posture)
        except (GarnavError, ValueError):
            return ""
        return " ".join(mech.lines()[2].split()) + f" ({posture})"

    def tick(self, *_args) -> None:
        """Timer callback: poll the link, redraw."""
        self.station.poll(0.0)
        self.refresh()

    def show(self) -> int:
        """Open the window until it is closed; stops every robot on close. Returns the exit status."""
        self.plotter.add_timer_event(max_steps=10**9, duration=100, callback=self.tick)
        try:
            self.plotter.show(title="garnav station")
        finally:
            self.station.emergency_stop("station window closed")
            end = self.station.clock() + 3.0
            while self.station.clock() < end and not self.station.all_stopped():
                self.station.poll(0.02)
        return 0
