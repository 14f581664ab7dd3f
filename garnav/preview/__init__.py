"""Pictures of garments and routes.

* :mod:`~garnav.preview.sheet` — the flat pattern sheet as to-scale SVG and PNG.
* :mod:`~garnav.preview.scene` — the 3D scene (pyvista): window or off-screen PNG.

pyvista and matplotlib are imported only when something is drawn.
"""

from garnav.preview.sheet import sheet_drawing, sheet_png, sheet_svg, write_sheet_png, write_sheet_svg

__all__ = ["sheet_drawing", "sheet_png", "sheet_svg", "write_sheet_png", "write_sheet_svg"]
