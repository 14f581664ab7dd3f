"""A study expanded into cases and chunks: every garment size × robot × pose × posture × query.

:func:`prepare_study` reads what the study names (specs, drape meshes, robot files), grades the
sizes, draws the random query points, checks that every measure asked for has what it needs, and
lays the cases out in a fixed order (garments → sizes → robots → poses → postures → queries). The
cases of one (garment size, robot) are cut into chunks of ``chunk_size``: a chunk is the unit of
work (one task) and of resumption (one part file). Every worker builds one planner per (garment
size, robot) and answers all the chunks of it that it gets (:mod:`garnav.study.worker`).

The fingerprint is a SHA-256 of the study, the text of every spec and robot file and the bytes of
every drape mesh: ``--resume`` refuses to add rows to results of a different study.
"""

from __future__ import annotations

import hashlib
import itertools
import json
from dataclasses import asdict, dataclass
from pathlib import Path

import numpy as np
import shapely

from garnav.errors import Problem, SpecError, did_you_mean
from garnav.model import Garment, Robot
from garnav.study.grading import grade_garment, scale_positions
from garnav.study.poses import garment_poses
from garnav.study.studyfile import Study

__all__ = ["GarmentInputs", "Case", "Chunk", "PreparedStudy", "prepare_study", "query_pairs", "sample_free_points",
           "ROWS_VERSION"]

#: Version of the row layout (:mod:`garnav.study.results`); part of the fingerprint.
ROWS_VERSION = "1"
BASE_SIZE = "base"


@dataclass(frozen=True, eq=False)
class GarmentInputs:
    """What a worker needs to build one garment size: the (graded) garment and its drape meshes.

    Sent to each worker once (scattered); the planner and drapes are built there.

    Attributes
    ----------
    key : str
        ``LABEL@SIZE`` (``LABEL@base`` for an ungraded garment).
    label, size : str
    factors : tuple of (str, float)
        Length factor of each piece in this size (1 for an ungraded garment).
    garment : Garment
    meshes : tuple of (str, UVMesh or None)
        Pose name → drape mesh of this size (scaled), None when the pose has no drape.
    """

    key: str
    label: str
    size: str
    factors: tuple[tuple[str, float], ...]
    garment: Garment
    meshes: tuple[tuple[str, object], ...]

    def factor(self, piece: str) -> float:
        return dict(self.factors).get(piece, 1.0)

    @property
    def scale(self) -> float:
        """The size's common length factor (the largest piece factor)."""
        return max((f for _, f in self.factors), default=1.0)

    def mesh(self, pose: str):
        return dict(self.meshes).get(pose)


@dataclass(frozen=True)
class Case:
    """One route case; ``start`` and ``goal`` are point texts of the base size."""

    index: int
    garment: str
    robot: str
    pose: str
    posture: str
    start: str
    goal: str

    @property
    def key(self) -> str:
        """Text identifying the case (its Monte Carlo seed is derived from it)."""
        return "|".join((self.garment, self.robot, self.pose, self.posture, self.start, self.goal))


@dataclass(frozen=True)
class Chunk:
    """Consecutive cases of one (garment size, robot): one task, one part file."""

    id: str
    garment: str
    robot_label: str
    robot: Robot
    cases: tuple[Case, ...]


@dataclass(frozen=True, eq=False)
class PreparedStudy:
    study: Study
    inputs: dict[str, GarmentInputs]
    chunks: tuple[Chunk, ...]
    fingerprint: str

    @property
    def n_cases(self) -> int:
        return sum(len(c.cases) for c in self.chunks)


def sample_free_points(region: shapely.Geometry, n: int, rng: np.random.Generator, decimals: int = 1) -> np.ndarray:
    """(n, 2) points uniform in ``region`` (rejection sampling in its bounds), rounded to
    ``decimals`` and still inside; (0, 2) when the region is empty.

    >>> pts = sample_free_points(shapely.box(0, 0, 10, 10), 3, np.random.default_rng(0))
    >>> pts.shape, bool(shapely.contains_xy(shapely.box(0, 0, 10, 10), pts[:, 0], pts[:, 1]).all())
    ((3, 2), True)
    """
    if region.is_empty or region.area <= 0:
        return np.zeros((0, 2))
    x0, y0, x1, y1 = region.bounds
    out = np.zeros((0, 2))
    for _ in range(200):  # bounded: a region filling 1 % of its bounds needs ~100 rounds for n
        cand = np.round(rng.uniform((x0, y0), (x1, y1), size=(max(64, 4 * n), 2)), decimals)
        ok = shapely.contains_xy(region, cand[:, 0], cand[:, 1])
        out = np.vstack([out, cand[ok]])
        if len(out) >= n:
            return out[:n]
    return out


def query_pairs(study: Study, garment: Garment, robot: Robot, problems: list[Problem], label: str) -> list[tuple[str, str]]:
    """The (start, goal) texts of the study's queries on the base garment, in a fixed order."""
    q = study.queries
    points: list[str] = []
    pairs: list[tuple[str, str]] = []
    names = [m.name for m in garment.landmarks]
    if q.landmarks is not None:
        chosen = names if q.landmarks == "all" else list(q.landmarks)
        for m in chosen:
            if m not in names:
                problems.append(Problem(study.source, f"queries landmarks ({label})", f"garment '{garment.name}' has no "
                                        f"landmark '{m}'", hint=did_you_mean(m, names)))
        points = [m for m in chosen if m in names]
        pairs += _pairs_of(points, q.ordered)
    pairs += list(q.pairs)
    if q.random is not None:
        from garnav.plan.freespace import build_free_space

        per, seed, cap, pieces = q.random
        for p in pieces:
            if p not in [pc.name for pc in garment.pieces]:
                problems.append(Problem(study.source, f"queries random pieces ({label})", f"no piece '{p}'",
                                        hint=did_you_mean(p, [pc.name for pc in garment.pieces])))
        free = build_free_space(garment, robot)
        rng = np.random.default_rng([seed, 7])
        rnd: list[str] = []
        for pc in garment.pieces:
            if pieces and pc.name not in pieces:
                continue
            for x, y in sample_free_points(free[pc.name].region, per, rng):
                rnd.append(f"{pc.name}:{x:.1f},{y:.1f}")
        more = _pairs_of(rnd, q.ordered)
        if cap and len(more) > cap:
            keep = np.sort(rng.choice(len(more), cap, replace=False))
            more = [more[i] for i in keep]
        pairs += more
    seen: set[tuple[str, str]] = set()
    out: list[tuple[str, str]] = []
    for pair in pairs:
        if pair not in seen:
            seen.add(pair)
            out.append(pair)
    return out


def _pairs_of(points: list[str], ordered: bool) -> list[tuple[str, str]]:
    it = itertools.permutations(points, 2) if ordered else itertools.combinations(points, 2)
    return [(a, b) for a, b in it]


def _digest(h, path: str) -> None:
    try:
        h.update(Path(path).read_bytes())
    except OSError:
        h.update(b"<unreadable>")


def prepare_study(study: Study) -> PreparedStudy:
    """Load, grade and expand ``study`` (see the module notes).

    Raises
    ------
    SpecError
        A spec or robot file with problems, a graded size that is not a valid garment, an unknown
        pose or landmark, or a measure that a garment or robot cannot give.
    MeshError
        A drape mesh that cannot be read or linked.
    """
    from garnav.drape.drape import link_drape
    from garnav.drape.meshio import UVMesh, load_uv_mesh
    from garnav.spec import garment_problems, load_garment
    from garnav.spec.robot import load_robot
    from garnav.plan import PLANNER_VERSION

    src = study.source
    problems: list[Problem] = []
    h = hashlib.sha256()
    h.update(json.dumps(asdict(study), sort_keys=True, default=str).encode())
    h.update(f"rows {ROWS_VERSION} planner {PLANNER_VERSION}".encode())
    file_robots: dict[str, Robot] = {}
    for path in study.robots:
        if path != "spec":
            file_robots[path] = load_robot(path)
            _digest(h, path)
    needs_drape = study.physics or "length_3d" in study.measures
    inputs: dict[str, GarmentInputs] = {}
    groups: list[tuple[GarmentInputs, list[tuple[str, Robot]], list[tuple[str, str]]]] = []
    for entry in study.garments:
        base = load_garment(entry.spec)
        _digest(h, entry.spec)
        poses = garment_poses(base)
        item = f"garment '{entry.label}'"
        for p in entry.poses:
            if p not in poses:
                problems.append(Problem(src, f"{item} poses", f"spec {entry.spec} has no pose '{p}'; poses: "
                                        f"{', '.join(poses)}", hint=did_you_mean(p, poses)))
        meshes: dict[str, UVMesh | None] = {}
        for p in entry.poses:
            rel = poses.get(p)
            if rel is None:
                if needs_drape and p in poses:
                    problems.append(Problem(src, f"{item} pose '{p}'", "has no drape mesh, but the measures "
                                            f"{', '.join(m for m in study.measures if m in ('length_3d', 'energy', 'margins'))} need one"))
                meshes[p] = None
                continue
            path = str(Path(entry.spec).parent / rel)
            mesh = load_uv_mesh(path)
            _digest(h, path)
            link_drape(base, mesh)  # fail here, once, not in every worker
            meshes[p] = mesh
        robots: list[tuple[str, Robot]] = []
        for path in study.robots:
            robot = (base.robot or Robot()) if path == "spec" else file_robots[path]
            robots.append((robot.name, robot))
        labels = [n for n, _ in robots]
        for n in sorted({n for n in labels if labels.count(n) > 1}):
            problems.append(Problem(src, "robots", f"two robots are named '{n}' on {item}; give each its own name"))
        for name, robot in robots:
            if study.physics and robot.physics is None:
                problems.append(Problem(src, f"robot '{name}'", "has no [robot.physics], which energy and margins need",
                                        hint="drop them from measures or give a robot file with one (docs/physics.md)"))
            if "contact" in study.measures and robot.odometry is None:
                problems.append(Problem(src, f"robot '{name}'", "has no [robot.odometry], which contact needs",
                                        hint="add one (docs/uncertainty.md) or drop contact from measures"))
        pairs = query_pairs(study, base, robots[0][1], problems, entry.label)
        rule = entry.grading
        sizes = rule.sizes if rule else (BASE_SIZE,)
        for size in sizes:
            factors = rule.factors(base, size) if rule else {p.name: 1.0 for p in base.pieces}
            key = f"{entry.label}@{size}"
            graded = base if not rule or rule.steps(size) == 0 else grade_garment(base, factors)
            if graded is not base:
                for pr in garment_problems(graded, f"{src} ({key})"):
                    problems.append(pr)
            uniform = len(set(factors.values())) <= 1
            s = max(factors.values()) if factors else 1.0
            size_meshes: list[tuple[str, object]] = []
            for p, um in meshes.items():
                if um is None or graded is base:
                    size_meshes.append((p, um))
                elif uniform:
                    size_meshes.append((p, UVMesh(scale_positions(um.positions, s), um.faces, um.corner_uv,
                                                  source=f"{um.source} (scaled by {s:.6g} for size {size})")))
                else:
                    if needs_drape:
                        problems.append(Problem(src, f"{item} size '{size}'", "per-piece grading has no drape (no "
                                                "scaling of the mesh fits pieces scaled differently), but the "
                                                "measures need one", hint="use one step_percent for all pieces, "
                                                "or drop length_3d, energy and margins"))
                    size_meshes.append((p, None))
            gi = GarmentInputs(key, entry.label, size, tuple(sorted(factors.items())), graded, tuple(size_meshes))
            inputs[key] = gi
            groups.append((gi, robots, pairs))
    if problems:
        raise SpecError(problems)
    chunks: list[Chunk] = []
    index = 0
    for gi, robots, pairs in groups:
        for name, robot in robots:
            cases = []
            for pose in (p for p, _ in gi.meshes):
                for posture in study.postures:
                    for a, b in pairs:
                        cases.append(Case(index, gi.key, name, pose, posture, a, b))
                        index += 1
            for k in range(0, len(cases), study.chunk_size):
                chunks.append(Chunk(f"{len(chunks):06d}", gi.key, name, robot, tuple(cases[k:k + study.chunk_size])))
    if not chunks:
        raise SpecError([Problem(src, "queries", "give no cases (no pairs of points)")])
    return PreparedStudy(study, inputs, tuple(chunks), h.hexdigest())

