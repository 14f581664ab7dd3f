"""Write the demo files: the garment spec, the draped garment mesh and the mannequin mesh, for the
standing pose and for the pose ``arm_raised`` (:mod:`garnav.demo.raise_arm`).

Output is byte-identical from run to run (fixed float formats, fixed order).
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from pathlib import Path
from typing import Callable

from garnav.atomic import write_text_atomic
from garnav.demo.mesh import body_obj_text, build_body, build_drape, drape_obj_text
from garnav.demo.pattern import build_design
from garnav.demo.poses import (
    ARM_RAISED_BODY_NAME,
    ARM_RAISED_DRAPE_NAME,
    ARM_RAISED_POSE,
    ARM_RAISED_POSTURE,
    BASE_POSE,
    BASE_POSTURE,
    BODY_NAME,
    DRAPE_NAME,
)
from garnav.demo.raise_arm import raise_arm_body, raise_arm_drape
from garnav.spec import check_garment, save_garment

__all__ = [
    "DemoFiles",
    "build_demo",
    "SPEC_NAME",
    "DRAPE_NAME",
    "BODY_NAME",
    "BASE_POSE",
    "BASE_POSTURE",
    "ARM_RAISED_POSE",
    "ARM_RAISED_POSTURE",
    "ARM_RAISED_DRAPE_NAME",
    "ARM_RAISED_BODY_NAME",
    "DEMO_FILE_NAMES",
]

SPEC_NAME = "sensing_top.toml"
#: Every file :func:`build_demo` writes, in order.
DEMO_FILE_NAMES = (SPEC_NAME, DRAPE_NAME, BODY_NAME, ARM_RAISED_DRAPE_NAME, ARM_RAISED_BODY_NAME)


@dataclass(frozen=True)
class DemoFiles:
    """Paths written by :func:`build_demo` and the drape's size (both poses share it)."""

    spec: Path
    drape: Path
    body: Path
    vertices: int
    triangles: int
    raised_drape: Path | None = None
    raised_body: Path | None = None


def build_demo(
    folder: str | os.PathLike, progress: Callable[[str], None] | None = None
) -> DemoFiles:
    """Build the demo garment and write its files (:data:`DEMO_FILE_NAMES`) into ``folder``
    (created if missing).

    Parameters
    ----------
    folder : path
        Target folder; existing files of the same names are replaced atomically.
    progress : callable, optional
        Called with a short label after each step (for a progress bar).
    """
    step = progress or (lambda label: None)
    folder = Path(folder)
    design = build_design()
    step("pattern")
    drape = build_drape(design)
    step("drape mesh")
    body = build_body(design)
    step("mannequin mesh")
    raised = raise_arm_drape(design, drape)
    raised_body = raise_arm_body(design, drape, raised)
    step("arm raised")
    garment = check_garment(design.garment, "<demo>")
    spec = save_garment(garment, folder / SPEC_NAME)
    drape_path = write_text_atomic(folder / DRAPE_NAME, drape_obj_text(drape, garment.name))
    body_path = write_text_atomic(folder / BODY_NAME, body_obj_text(body))
    raised_path = write_text_atomic(
        folder / ARM_RAISED_DRAPE_NAME,
        drape_obj_text(raised.drape, f"{garment.name}, pose {ARM_RAISED_POSE}"),
    )
    raised_body_path = write_text_atomic(
        folder / ARM_RAISED_BODY_NAME, body_obj_text(raised_body, f"mannequin_{ARM_RAISED_POSE}")
    )
    step("files")
    return DemoFiles(
        spec,
        drape_path,
        body_path,
        len(drape.vertices),
        len(drape.faces),
        raised_path,
        raised_body_path,
    )
