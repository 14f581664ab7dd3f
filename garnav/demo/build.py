"""Write the demo files: the garment spec, the draped garment mesh and the mannequin mesh.

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
from garnav.spec import check_garment, save_garment

__all__ = ["DemoFiles", "build_demo", "SPEC_NAME", "DRAPE_NAME", "BODY_NAME"]

SPEC_NAME = "sensing_top.toml"
DRAPE_NAME = "sensing_top_drape.obj"
BODY_NAME = "mannequin.obj"


@dataclass(frozen=True)
class DemoFiles:
    """Paths written by :func:`build_demo` and the drape's size."""

    spec: Path
    drape: Path
    body: Path
    vertices: int
    triangles: int


def build_demo(
    folder: str | os.PathLike, progress: Callable[[str], None] | None = None
) -> DemoFiles:
    """Build the demo garment and write its three files into ``folder`` (created if missing).

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
    garment = check_garment(design.garment, "<demo>")
    spec = save_garment(garment, folder / SPEC_NAME)
    drape_path = write_text_atomic(folder / DRAPE_NAME, drape_obj_text(drape, garment.name))
    body_path = write_text_atomic(folder / BODY_NAME, body_obj_text(body))
    step("files")
    return DemoFiles(spec, drape_path, body_path, len(drape.vertices), len(drape.faces))
