"""The fleet scenario on the built-in demo garment (invented data): three robots, one meeting.

Two sensor robots drive from the wrists and link up side by side below the chest (a meeting with a
common heading); a smaller, faster robot goes from the chest to its charging dock on the back,
crossing their paths. :func:`run_fleet_demo` plans it and writes the schedule, the command files and
the pictures into a folder (what ``examples/fleet_demo.py`` does).
"""

from __future__ import annotations

from pathlib import Path

from garnav.fleet.tasks import FleetTasks, Meeting, Task
from garnav.model import Garment, Robot

__all__ = ["demo_fleet_tasks", "run_fleet_demo"]


def demo_fleet_tasks(garment: Garment) -> FleetTasks:
    """The three-robot tasks on the demo garment (``examples/fleet_tasks.toml`` says the same)."""
    crawler = garment.robot or Robot()
    mini = Robot(name="mini", radius_mm=15.0, wheel_base_mm=24.0, speed_mm_s=30.0)
    tasks = (
        Task("left", crawler, "wrist_left", start_s=0.0),
        Task("right", crawler, "wrist_right", start_s=2.0),
        Task("runner", mini, "sternum_left", goal="dock", priority=1),
    )
    meeting = Meeting("link", "side_by_side", "omphalion", ("left", "right"), 46.0, 90.0)
    return FleetTasks(tasks, (meeting,), gap_mm=2.0, source="demo fleet")


def run_fleet_demo(garment: Garment, out_dir, *, drape=None, frames: int = 60) -> dict:
    """Plan :func:`demo_fleet_tasks`, check it and write ``fleet_schedule.json``, ``fleet_NAME.cmd``,
    ``fleet_sheet.gif``, ``fleet_chart.png`` (and ``fleet_drape.gif`` with a drape) into
    ``out_dir``. Returns {"schedule", "check", "files"}."""
    from garnav.export.commands import write_commands
    from garnav.fleet import pictures
    from garnav.fleet.check import check_schedule
    from garnav.fleet.commands import plan_commands
    from garnav.fleet.document import write_schedule_json
    from garnav.fleet.planner import plan_fleet

    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    schedule = plan_fleet(garment, demo_fleet_tasks(garment))
    report = check_schedule(garment, schedule)
    files = [write_schedule_json(out / "fleet_schedule.json", garment, schedule, report)]
    for p in schedule.plans:
        files.append(write_commands(out / f"fleet_{p.name}.cmd", plan_commands(garment, p),
                                    comment=f"robot '{p.name}' in the invented demo fleet scenario"))
    files.append(pictures.write_sheet_gif(out / "fleet_sheet.gif", garment, schedule, max_frames=frames))
    files.append(pictures.write_space_time_chart(out / "fleet_chart.png", garment, schedule))
    if drape is not None:
        files.append(pictures.write_drape_gif(out / "fleet_drape.gif", garment, drape, schedule,
                                              max_frames=max(2, frames // 3)))
    return {"schedule": schedule, "check": report, "files": files}
