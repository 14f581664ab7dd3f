"""The built-in demo: a long-sleeved sensing top on a stylised mannequin of developable surfaces.

``demo_garment()`` builds the garment in memory; ``build_demo(folder)`` writes its spec, drape mesh
and mannequin mesh, and the drape and mannequin of its second pose ``arm_raised``
(:mod:`garnav.demo.raise_arm`).
"""

from garnav.demo.build import build_demo
from garnav.demo.pattern import DemoDimensions, build_design, demo_garment

__all__ = ["demo_garment", "build_demo", "build_design", "DemoDimensions"]
