"""The 3D preview colours a route by its tightest margin, with a colour bar."""

from __future__ import annotations

import io
import os

import matplotlib.image
import matplotlib.pyplot as plt
import numpy as np

import garments
from cylinder_drape import CylinderDrape, cylinder_drape
from garnav.preview.scene import MARGIN_CLIM, MARGIN_CMAP, SceneRoute, build_plotter, document_margins, screenshot_png

os.environ.setdefault("PYVISTA_OFF_SCREEN", "true")
os.environ.setdefault("VTK_DEFAULT_OPENGL_WINDOW", "vtkEGLRenderWindow")


def test_document_margins_take_the_tightest_over_its_requirement():
    doc = {"physics": {"safety_factor": 1.5, "drive_safety_factor": 1.1,
                       "segments": {"grip_margin": [3.0, None], "hold_margin": [None, None], "drive_margin": [1.1, 2.2]}}}
    assert np.allclose(document_margins(doc), [1.0, 2.0])
    assert document_margins({"physics": None}) is None


def test_route_coloured_by_margin_with_a_colour_bar():
    g = garments.two_panels()
    d = cylinder_drape(g)
    dense = np.column_stack([np.linspace(40, 260, 80), np.linspace(60, 300, 80)])
    margin = np.full(len(dense) - 1, 0.0)  # all at the bottom of the colour range
    route = SceneRoute("r", d.pattern_to_3d("left", dense), CylinderDrape.normal("left", dense[:, 0]), margin)
    plotter = build_plotter(g, d, None, [route], off_screen=True, size=(320, 240), labels=False)
    try:
        assert len(plotter.scalar_bars) == 1
        img = matplotlib.image.imread(io.BytesIO(screenshot_png(plotter)), format="png")[..., :3]
        # the colour map's low end (matplotlib's own colour table as the reference) is on screen
        low = np.array(plt.get_cmap(MARGIN_CMAP)(0.0)[:3])
        assert MARGIN_CLIM[0] == 0.0
        assert np.any(np.all(np.abs(img - low) < 0.08, axis=2))
    finally:
        plotter.close()
