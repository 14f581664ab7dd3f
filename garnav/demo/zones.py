"""The demo garment's body zones (invented scenario): an implanted device and the neck and face."""

from __future__ import annotations

from typing import TYPE_CHECKING

from garnav.zones.model import BodyZone

if TYPE_CHECKING:
    from garnav.demo.pattern import DemoDimensions

__all__ = ["demo_body_zones", "DRIFT_ALLOWANCE_MM"]

#: Extra distance the demo robot keeps from its body zones beyond their own distance, mm: an
#: allowance for open-loop dead-reckoning drift. With the demo's invented odometry model
#: (garnav.uncertainty.OdometryModel defaults) the cross-track 1σ of the demo routes reaches about
#: 8 mm (wrist_left → sternum_left, 770 mm); 15 mm keeps each route's Monte Carlo probability of
#: touching a body zone below 1 % (docs/demo.md, "Drift").
DRIFT_ALLOWANCE_MM = 15.0


def demo_body_zones(dims: DemoDimensions) -> tuple[BodyZone, ...]:
    """The demo's body zones (invented): an implanted device on the left side of the chest, kept
    at the default distance of garnav.zones (at least 15 cm, after the US FDA 2021 consumer
    guidance; the device maker and the wearer's clinician decide for a real wearer), and the neck
    and face: a capsule round the neck axis from the neck base up, 50 mm beyond a 45 mm neck."""
    return (
        BodyZone(
            "implant",
            "implanted_device",
            "sphere",
            ((dims.left_x_sign * 110.0, 60.0, dims.shoulder_z - 220.0),),
            description="invented: an implanted device under the skin of the left side of the chest",
            clearance_mm=DRIFT_ALLOWANCE_MM,
        ),
        BodyZone(
            "neck_and_face",
            "neck_face",
            "capsule",
            ((0.0, dims.neck_centre_y, dims.shoulder_z - 20.0), (0.0, dims.neck_centre_y, dims.shoulder_z + 300.0)),
            radius_mm=45.0,
            distance_mm=50.0,
            description="neck, face and hair: the robot never goes there",
            clearance_mm=DRIFT_ALLOWANCE_MM,
        ),
    )
