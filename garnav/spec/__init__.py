"""The garment spec file (TOML, ``format = "garnav-garment"``, ``version = 1``).

* :func:`load_garment` / :func:`loads_garment` read and validate a spec, raising
  :class:`~garnav.errors.SpecError` with *every* problem found.
* :func:`dumps_garment` / :func:`save_garment` write one losslessly (load → write → load gives an
  equal garment; write → load → write gives the same text).
* :func:`garment_problems` runs the geometric and cross-reference checks on any garment, also one
  built in Python; :func:`check_garment` raises when there are any.

The format is documented field by field in ``docs/spec.md``; the known keys live in
:mod:`garnav.spec.fields`.
"""

from garnav.spec.geometry_checks import check_garment, garment_problems
from garnav.spec.reader import garment_from_dict, load_garment, loads_garment, parse_toml
from garnav.spec.writer import dumps_garment, garment_to_dict, save_garment

__all__ = [
    "load_garment",
    "loads_garment",
    "dumps_garment",
    "save_garment",
    "garment_problems",
    "check_garment",
    "garment_from_dict",
    "garment_to_dict",
    "parse_toml",
]
