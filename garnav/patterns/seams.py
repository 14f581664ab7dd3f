"""Seams for an imported pattern: from a seams file (by edge or by notch pairs), and proposals.

A pattern file says nothing about which edges are sewn together, so garnav never guesses silently:

* :func:`apply_seams` joins edges as a seams file (TOML, docs/pattern-files.md) says — either by
  piece and edge, exactly like a spec's ``[[seam]]``, or by boundary points (notches ``n1``…,
  corners ``c1``…): ``a = { piece = "front", from = "n1", to = "c3" }`` is the stretch of the
  outline from n1 to c3 in outline (counter-clockwise) order, and the notches between the ends
  pair up with those on the other run, one seam per pair of edges;
* :func:`propose_seams` matches the pieces' sides (corner to corner) by length and notch count and
  returns proposals, which :func:`dumps_seams` writes as a seams file for the user to check.

The result goes through the spec reader, so every seam gets the same checks as in a spec file.
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from typing import Any

import numpy as np

from garnav.errors import Problem, SpecError, did_you_mean
from garnav.model import Garment
from garnav.patterns.build import BuiltPattern, PiecePoints
from garnav.polyline import point_at_length, polyline_length

__all__ = ["load_seams", "apply_seams", "Proposal", "propose_seams", "dumps_seams",
           "seams_file_text", "SEAMS_FORMAT"]

SEAMS_FORMAT = "garnav-seams"
_SEAM_KEYS = {"name", "a", "b", "crossable", "crossing_cost_mm", "min_crossing_angle_deg"}
_POINT_RUN_KEYS = {"piece", "from", "to", "reverse"}


def load_seams(path: str | os.PathLike) -> list[dict[str, Any]]:
    """The ``[[seam]]`` tables of a seams file, structure checked (runs are checked on apply)."""
    from garnav.spec import parse_toml
    from garnav.spec.reader import read_toml_text

    text, source = read_toml_text(path)
    data = parse_toml(text, source)
    problems = []
    for key in data:
        if key not in ("format", "seam"):
            problems.append(Problem(source, "file", f"unknown key '{key}'",
                                    hint=did_you_mean(key, ["format", "seam"])))
    if "format" in data and data["format"] != SEAMS_FORMAT:
        problems.append(Problem(source, "format", f"is {data['format']!r}, expected "
                                f"'{SEAMS_FORMAT}'"))
    tables = data.get("seam", [])
    if not isinstance(tables, list) or not all(isinstance(t, dict) for t in tables):
        problems.append(Problem(source, "seam", "must be an array of tables ([[seam]])"))
        tables = []
    if problems:
        raise SpecError(problems)
    return tables


def _edge_runs(built: BuiltPattern, garment: Garment, run: Any, item: str, source: str,
               problems: list[Problem]) -> list[dict[str, Any]] | None:
    """A run table → the spec run tables it stands for, in travel order."""
    if not isinstance(run, dict):
        problems.append(Problem(source, item, "must be a table { piece = …, edge = … } or "
                                "{ piece = …, from = …, to = … }"))
        return None
    if "from" not in run and "to" not in run:
        return [run]  # edge form: checked by the spec reader
    for key in run:
        if key not in _POINT_RUN_KEYS:
            problems.append(Problem(source, item, f"unknown key '{key}' in a run by points",
                                    hint=did_you_mean(key, _POINT_RUN_KEYS)))
            return None
    piece = run.get("piece")
    points = {pp.piece: pp for pp in built.points}
    if piece not in points:
        problems.append(Problem(source, item, f"unknown piece {piece!r}",
                                hint=did_you_mean(str(piece), points)))
        return None
    pp: PiecePoints = points[piece]
    idx = {}
    for end in ("from", "to"):
        name = run.get(end)
        if name not in pp.points:
            problems.append(Problem(source, item, f"'{end}': piece '{piece}' has no boundary point "
                                    f"{name!r} (it has {', '.join(pp.points)})",
                                    hint=did_you_mean(str(name), pp.points)))
            return None
        idx[end] = pp.points.index(name)
    if idx["from"] == idx["to"]:
        problems.append(Problem(source, item, "'from' and 'to' are the same point"))
        return None
    edges = garment.piece(piece).edge_names
    k = len(edges)
    covered = [edges[i % k] for i in range(idx["from"], idx["to"] + (k if idx["to"] < idx["from"] else 0))]
    reverse = run.get("reverse", False)
    if not isinstance(reverse, bool):
        problems.append(Problem(source, item, "'reverse' must be true or false"))
        return None
    out = [{"piece": piece, "edge": e, "reverse": reverse} for e in covered]
    return out[::-1] if reverse else out


def apply_seams(built: BuiltPattern, tables: list[dict[str, Any]], source: str) -> Garment:
    """The built garment with the seams of ``tables`` (from :func:`load_seams`).

    Raises
    ------
    SpecError
        Every problem: unknown keys, pieces, edges or points; runs by points that cover different
        numbers of edges; and all the checks a spec's seams get (no edge stretch in two seams…).
    """
    from garnav.spec import garment_from_dict, garment_to_dict

    garment = built.garment
    problems: list[Problem] = []
    seams: list[dict[str, Any]] = []
    for i, t in enumerate(tables):
        item = f"seam '{t.get('name', f'#{i + 1}')}'"
        for key in t:
            if key not in _SEAM_KEYS:
                problems.append(Problem(source, item, f"unknown key '{key}'",
                                        hint=did_you_mean(key, _SEAM_KEYS)))
        ra = _edge_runs(built, garment, t.get("a"), f"{item} run 'a'", source, problems)
        rb = _edge_runs(built, garment, t.get("b"), f"{item} run 'b'", source, problems)
        if "a" not in t or "b" not in t:
            problems.append(Problem(source, item, "needs both runs 'a' and 'b'"))
            continue
        if ra is None or rb is None:
            continue
        if len(ra) != len(rb):
            problems.append(Problem(
                source, item, f"run 'a' covers {len(ra)} edges and run 'b' {len(rb)}; runs by "
                "points must have the same number of notches between their ends"))
            continue
        rest = {k: v for k, v in t.items() if k not in ("a", "b", "name")}
        name = t.get("name")
        for j, (a, b) in enumerate(zip(ra, rb, strict=True)):
            nm = name if len(ra) == 1 or not isinstance(name, str) else f"{name}_{j + 1}"
            seams.append({"name": nm, "a": a, "b": b, **rest})
    if problems:
        raise SpecError(problems)
    data = garment_to_dict(garment)
    data["seam"] = seams
    return garment_from_dict(data, source)


@dataclass(frozen=True)
class Proposal:
    """A proposed seam between two sides (corner to corner stretches) of pieces.

    ``table`` is the seams-file table (runs by points); ``length_a``/``length_b`` in mm;
    ``notches`` the number of notches inside each side; ``mismatch`` the relative length
    difference; ``alternatives`` other sides that would match side ``a`` as well
    ("piece c1-c2").
    """

    table: dict[str, Any]
    length_a: float
    length_b: float
    notches: int
    mismatch: float
    alternatives: tuple[str, ...] = ()


@dataclass(frozen=True)
class _Side:
    piece: str
    first: int  # index of the first edge
    count: int  # number of edges
    start: str
    end: str
    lengths: tuple[float, ...]
    turn_deg: float = 0.0  # total signed turning along the side (left turns positive)


def _turning_deg(points: np.ndarray) -> float:
    """Total signed turning (degrees) of a polyline (n, 2): the integral of its curvature."""
    d = np.diff(np.asarray(points, dtype=float), axis=0)
    d = d[np.hypot(d[:, 0], d[:, 1]) > 0]
    if len(d) < 2:
        return 0.0
    a = np.arctan2(d[:, 1], d[:, 0])
    return float(np.degrees(((np.diff(a) + np.pi) % (2 * np.pi) - np.pi).sum()))


def _midpoint(garment: Garment, side: _Side):
    """Sheet position (mm) of the middle of a side, by arc length (a tie-breaker)."""
    piece = garment.piece(side.piece)
    k = len(piece.edges)
    pts = np.array([p for j in range(side.count) for p in piece.edges[(side.first + j) % k].points],
                   dtype=float)
    mid = point_at_length(pts, 0.5 * polyline_length(pts))
    return piece.placement.to_sheet(mid[None])[0]


def _stretches(garment: Garment, pp: PiecePoints) -> list[_Side]:
    """Every run of consecutive edges of a piece that stays within one side (corner to corner):
    whole sides, and parts of sides that begin or end at a notch."""
    piece = garment.piece(pp.piece)
    k = len(piece.edges)
    lengths = [e.length for e in piece.edges]
    corners = [i for i, n in enumerate(pp.is_notch) if not n]
    bounds = list(zip(corners, corners[1:] + [corners[0] + k], strict=True)) if corners else \
        [(i, i + 1) for i in range(k)]
    out = []
    for c0, c1 in bounds:
        for a in range(c0, c1):
            for b in range(a + 1, c1 + 1):
                idx = [i % k for i in range(a, b)]
                pts = np.array([p for i in idx for p in piece.edges[i].points], dtype=float)
                out.append(_Side(pp.piece, a % k, len(idx), pp.points[a % k], pp.points[b % k],
                                 tuple(lengths[i] for i in idx), _turning_deg(pts)))
    return out


def _edges_of(side: _Side, k: int) -> frozenset[tuple[str, int]]:
    return frozenset((side.piece, (side.first + j) % k) for j in range(side.count))


def propose_seams(built: BuiltPattern, tolerance: float = 0.03,
                  taken: Garment | None = None) -> list[Proposal]:
    """Propose seams by matching outline stretches of equal length and equal notch count.

    A stretch is a run of edges within one side of a piece (corner to corner): a whole side, or a
    part of it that begins or ends at a notch (a sleeve cap's notch splits it between the front
    and the back armhole). Two stretches match when their lengths agree within ``tolerance``
    (relative; 3 % allows for ease: common practice, no source), they hold the same number of
    notches, and the pieces between the notches agree within twice that, the notches of one
    matching those of the other run backwards. Better matches first: closer lengths (to 0.1 %),
    then curvatures that cancel — a seam that joins two pieces smoothly has boundary curvatures
    of opposite sign, since both boundaries are isometric images of the same curve on the body
    and geodesic curvature is intrinsic (do Carmo, *Differential Geometry of Curves and
    Surfaces*, §4-4) — to 15°, then more notches, then stretches nearer each other on the sheet.
    Each edge is proposed once; edges that a seam of ``taken`` covers are left out. These are
    proposals only: nothing is sewn until the user puts them in a seams file.
    """
    garment = built.garment
    used_names: set[tuple[str, str]] = set()
    if taken is not None:
        for seam in taken.seams:
            used_names |= {(seam.a.piece, seam.a.edge), (seam.b.piece, seam.b.edge)}
    sizes = {p.name: len(p.edges) for p in garment.pieces}
    sides = []
    for pp in built.points:
        names = garment.piece(pp.piece).edge_names
        for st in _stretches(garment, pp):
            if not any((st.piece, names[i]) in used_names for _, i in _edges_of(st, sizes[st.piece])):
                sides.append(st)
    edge_sets = [_edges_of(st, sizes[st.piece]) for st in sides]
    candidates = []
    for i, sa in enumerate(sides):
        for j in range(i + 1, len(sides)):
            sb = sides[j]
            if sa.count != sb.count:
                continue
            if sa.piece == sb.piece and (edge_sets[i] & edge_sets[j] or sa.end == sb.start
                                         or sb.end == sa.start):
                continue  # overlapping or neighbouring stretches of one piece
            la, lb = sum(sa.lengths), sum(sb.lengths)
            if min(la, lb) <= 0:
                continue
            mismatch = abs(la - lb) / max(la, lb)
            if mismatch > tolerance:
                continue
            parts = [abs(x - y) / max(x, y)
                     for x, y in zip(sa.lengths, reversed(sb.lengths), strict=True)]
            if max(parts) > 2 * tolerance:
                continue
            gap = float(np.hypot(*(_midpoint(garment, sa) - _midpoint(garment, sb))))
            bend = abs(sa.turn_deg + sb.turn_deg)
            key = (round(mismatch, 3), round(bend / 15.0), -sa.count, round(gap, 6), i, j)
            candidates.append((key, mismatch, i, j, la, lb))
    candidates.sort()
    used: set[tuple[str, int]] = set()
    out = []
    for _, mismatch, i, j, la, lb in candidates:
        if edge_sets[i] & used or edge_sets[j] & used:
            continue
        used |= edge_sets[i] | edge_sets[j]
        sa, sb = sides[i], sides[j]
        alts = tuple(f"{sides[y].piece} {sides[y].start}-{sides[y].end}"
                     for _, _, x, y, _, _ in candidates
                     if x == i and y != j and not edge_sets[y] & used)[:5]
        table = {
            "name": f"{sa.piece}_{sa.start}_{sb.piece}_{sb.start}",
            "a": {"piece": sa.piece, "from": sa.start, "to": sa.end},
            "b": {"piece": sb.piece, "from": sb.start, "to": sb.end, "reverse": True},
        }
        out.append(Proposal(table, la, lb, sa.count - 1, mismatch, alts))
    return out


def dumps_seams(proposals: list[Proposal], header: str = "") -> str:
    """A seams file holding the proposals, each with a comment giving the lengths matched."""
    lines = [f"# {line}" for line in header.splitlines()]
    lines.append(f'format = "{SEAMS_FORMAT}"')
    for p in proposals:
        t = p.table
        lines += ["", f"# proposed: {p.length_a:.1f} mm and {p.length_b:.1f} mm "
                      f"({100 * p.mismatch:.1f} % apart), {p.notches} notch"
                      f"{'es' if p.notches != 1 else ''} between the ends",
                  ]
        if p.alternatives:
            lines.append(f"# {p.table['a']['piece']} {p.table['a']['from']}-{p.table['a']['to']} "
                         f"would also match: {', '.join(p.alternatives)}")
        lines.append("[[seam]]")
        lines.append(f"name = {_inline(t['name'])}")
        for key in ("a", "b"):
            lines.append(f"{key} = {_inline(t[key])}")
    return "\n".join(lines) + "\n"


def seams_file_text(garment: Garment) -> str:
    """The garment's seams as a seams file (runs by edge), to import a written pattern again."""
    from garnav.spec import garment_to_dict

    lines = [f'format = "{SEAMS_FORMAT}"']
    for t in garment_to_dict(garment).get("seam", []):
        lines += ["", "[[seam]]"]
        for key, value in t.items():
            lines.append(f"{key} = {_inline(value)}")
    return "\n".join(lines) + "\n"


def _inline(value: Any) -> str:
    import tomli_w

    if isinstance(value, dict):
        return "{ " + ", ".join(f"{k} = {_inline(v)}" for k, v in value.items()) + " }"
    return tomli_w.dumps({"v": value}).strip()[4:]
