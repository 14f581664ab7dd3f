"""The garnav exception family.

Every error a user can cause is a :class:`GarnavError`. Its message names the file (where there is
one), the item (piece, seam, keep-out, landmark, point) and the reason, and where it helps the place
(in mm) and a suggestion. The CLI prints the message and exits non-zero; it never shows a traceback
for a ``GarnavError``.

``SpecError`` carries *all* problems found in a file, not only the first.
``NoRouteError`` ("the query is fine but no route exists") is kept apart from ``QueryError``
("the query itself is bad"), as networkx keeps ``NetworkXNoPath`` apart from ``NetworkXError``.
"""

from __future__ import annotations

import difflib
from dataclasses import dataclass
from typing import Iterable, Sequence

__all__ = [
    "GarnavError",
    "Problem",
    "SpecError",
    "QueryError",
    "NoRouteError",
    "MeshError",
    "did_you_mean",
]


class GarnavError(Exception):
    """Base class of every error garnav raises on purpose."""


@dataclass(frozen=True)
class Problem:
    """One problem found in an input file.

    Parameters
    ----------
    file : str
        The file the problem is in ("<memory>" for objects built in Python).
    item : str
        What the problem is about, e.g. ``"keepout 'pocket'"`` or ``"seam 'side_left'"``.
    reason : str
        Why it is a problem, in plain words.
    where : tuple of float, optional
        A place in mm (piece frame) that shows the problem, e.g. a self-intersection point.
    hint : str, optional
        A suggestion, e.g. ``"did you mean 'clearance'?"``.
    """

    file: str
    item: str
    reason: str
    where: tuple[float, ...] | None = None
    hint: str | None = None

    def __str__(self) -> str:
        text = f"{self.file}: {self.item}: {self.reason}"
        if self.where is not None:
            text += " at (" + ", ".join(f"{v:.1f}" for v in self.where) + ") mm"
        if self.hint:
            text += f"; {self.hint}"
        return text


class SpecError(GarnavError):
    """A garment spec (or a garment built in Python) has one or more problems."""

    def __init__(self, problems: Sequence[Problem]):
        self.problems = tuple(problems)
        count = len(self.problems)
        head = f"{count} problem{'s' if count != 1 else ''} found:"
        super().__init__("\n".join([head] + [f"  - {p}" for p in self.problems]))


class QueryError(GarnavError):
    """A query is bad: an unknown landmark, a point inside a keep-out, a malformed point text."""


class NoRouteError(GarnavError):
    """The query is valid but no route exists; the message names what cuts the goal off."""


class MeshError(GarnavError):
    """A mesh file is missing, unreadable, or does not fit the garment."""


def did_you_mean(word: str, choices: Iterable[str]) -> str | None:
    """Return ``"did you mean 'x'?"`` for the closest choice, or None when nothing is close.

    >>> did_you_mean("clerance", ["clearance", "hard", "kind"])
    "did you mean 'clearance'?"
    >>> did_you_mean("zzz", ["clearance"]) is None
    True
    """
    close = difflib.get_close_matches(word, sorted(set(choices)), n=1, cutoff=0.6)
    return f"did you mean '{close[0]}'?" if close else None


def table_key_problems(table: dict, item: str, known, required, required_note: str = ""
                       ) -> list[tuple[str, str, str | None]]:
    """Unknown and missing keys of one spec sub-table, as ``(item, reason, hint)`` problems.

    >>> table_key_problems({"nme": "a"}, "pose #1", ("name", "drape"), ("name",))
    [('pose #1', "unknown key 'nme'", "did you mean 'name'?"), ('pose #1', "missing required key 'name'", None)]
    """
    out: list[tuple[str, str, str | None]] = []
    for key in table:
        if key not in known:
            out.append((item, f"unknown key '{key}'", did_you_mean(key, list(known))))
    for key in required:
        if key not in table:
            out.append((item, f"missing required key '{key}'{required_note}", None))
    return out
