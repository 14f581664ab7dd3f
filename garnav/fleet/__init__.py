"""Several robots on one garment: timed, conflict-free schedules (docs/fleet.md).

Usage, from a checkout (see docs/fleet.md)::

    from garnav.spec import load_garment
    from garnav.fleet import load_tasks, plan_fleet, check_schedule
    garment = load_garment("meshes/sensing_top.toml")
    tasks = load_tasks("examples/fleet_tasks.toml", garment.robot)
    schedule = plan_fleet(garment, tasks)
    print(check_schedule(garment, schedule).text())
"""

from garnav.fleet.check import CheckReport, check_schedule
from garnav.fleet.motion import Move, closest_approach
from garnav.fleet.planner import FleetPlanner, plan_fleet
from garnav.fleet.schedule import FleetError, FleetPlanError, RobotPlan, Schedule
from garnav.fleet.tasks import FleetTasks, Meeting, Task, load_tasks, tasks_from_dict

__all__ = [
    "CheckReport",
    "FleetError",
    "FleetPlanError",
    "FleetPlanner",
    "FleetTasks",
    "Meeting",
    "Move",
    "RobotPlan",
    "Schedule",
    "Task",
    "check_schedule",
    "closest_approach",
    "load_tasks",
    "plan_fleet",
    "tasks_from_dict",
]
