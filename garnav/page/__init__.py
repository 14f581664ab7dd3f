"""Share a plan as one self-contained web page (``garnav page``).

* :mod:`~garnav.page.build` — :func:`plan_page` (in memory) and :func:`write_plan_page`;
  :func:`read_routes` reads route files for it.
* :mod:`~garnav.page.geometry` — the 3D view as triangle meshes (garment, mannequin, routes, marks).
* :mod:`~garnav.page.encode` — 16-bit quantised, base64 scene data.
* :mod:`~garnav.page.figures` — the route table from route documents.
* :mod:`~garnav.page.risk` — `garnav drift` documents paired with their routes.
* :mod:`~garnav.page.fleet` — each robot of a `garnav fleet` schedule as a route.
* :mod:`~garnav.page.html` — the HTML text, the cautions, the packaged viewer (three.js, MIT).

See docs/page.md.
"""

from garnav.page.build import PAGE_VIEWS, PlanPage, plan_page, read_routes, write_plan_page
from garnav.page.figures import RouteFigures, route_figures
from garnav.page.geometry import BodyZone

__all__ = ["PAGE_VIEWS", "BodyZone", "PlanPage", "RouteFigures", "plan_page", "read_routes", "route_figures",
           "write_plan_page"]
