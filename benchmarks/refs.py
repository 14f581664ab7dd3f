"""Reference methods the benchmarks measure garnav against, run on the same free-space polygons.

* :class:`PyvisgraphRef` — ``pyvisgraph`` (Reksten-Monsen), a general-purpose visibility graph with a
  rotational sweep per vertex (Lee 1978); the obstacles are the free region's holes and its outside.
* :class:`GridAstarRef` — 8-connected grid on the rasterised free region, ``networkx.astar_path``.
* :class:`NaiveVisibilityRef` — every pair of free-space vertices, one ``shapely.covers`` test each,
  then Dijkstra: the textbook O(n²) visibility graph.
* :class:`TangentVisibilityRef` — the reduced (tangent) visibility graph of a free region: reflex
  corners only, an edge where the segment is tangent at both ends and ``shapely.covers`` holds,
  ``scipy.sparse.csgraph.dijkstra`` (Lozano-Pérez & Wesley 1979); reference (b) of the cross-seam
  cases on the unfolded garment (:mod:`benchmarks.seam_garments`).
* point location: ``scipy.spatial.Delaunay(uv).find_simplex`` and a ``shapely.STRtree`` query.
* 3D length: potpourri3d's ``EdgeFlipGeodesicSolver`` (FlipOut, Sharp & Crane 2020).
"""

from __future__ import annotations

import heapq
import math
import time

import networkx as nx
import numpy as np
import shapely

__all__ = [
    "component_of",
    "path_length",
    "path_in_region",
    "pyvisgraph_obstacles",
    "PyvisgraphRef",
    "GridAstarRef",
    "NaiveVisibilityRef",
    "TangentVisibilityRef",
    "region_vertices",
]


def component_of(region: shapely.Geometry, point: np.ndarray) -> shapely.Polygon:
    """The polygon of a (multi)polygon region that covers ``point``."""
    p = shapely.Point(float(point[0]), float(point[1]))
    for part in shapely.get_parts(region):
        if part.covers(p):
            return part
    raise ValueError(f"point {tuple(point)} is not in the free space")


def path_length(path: np.ndarray) -> float:
    """Length (mm) of a polyline (n, d), d = 2 or 3."""
    path = np.asarray(path, dtype=float)
    return float(np.linalg.norm(np.diff(path, axis=0), axis=1).sum()) if len(path) > 1 else 0.0


def path_in_region(region: shapely.Geometry, path: np.ndarray, tol_mm: float = 1e-6) -> bool:
    """Whether every segment of ``path`` lies in ``region`` grown by ``tol_mm`` (round-off slack)."""
    grown = region.buffer(tol_mm, quad_segs=2) if tol_mm > 0 else region
    path = np.asarray(path, dtype=float)
    if len(path) < 2:
        return bool(grown.covers(shapely.Point(path[0])))
    segs = shapely.linestrings(np.stack([path[:-1], path[1:]], axis=1))
    return bool(np.all(shapely.covers(grown, segs)))


def region_vertices(region: shapely.Geometry) -> np.ndarray:
    """All ring vertices of a (multi)polygon (first point of each ring not repeated), (n, 2)."""
    rings = []
    for part in shapely.get_parts(region):
        rings.append(np.asarray(part.exterior.coords)[:-1])
        rings.extend(np.asarray(r.coords)[:-1] for r in part.interiors)
    return np.vstack(rings) if rings else np.zeros((0, 2))


# --------------------------------------------------------------------------------------------
# pyvisgraph


def pyvisgraph_obstacles(component: shapely.Polygon, margin_mm: float = 60.0, gap_mm: float = 1.0):
    """Obstacle polygons (lists of (x, y)) equivalent to one free-space polygon, for pyvisgraph.

    pyvisgraph knows only polygonal obstacles, so the free polygon is given as its holes plus its
    *outside*: a frame (bounding box + margin minus the polygon) cut into two simple polygons by
    two thin radial strips. Each strip leaves a ``gap_mm`` opening of the frame over a straight
    stretch of the free polygon's boundary; a path could leave the free polygon only through such a
    straight opening and come back through it, which is never shorter than staying inside, so
    shortest paths are unchanged.
    """
    ext = np.asarray(component.exterior.coords)
    x0, y0, x1, y1 = component.bounds
    box = shapely.box(x0 - margin_mm, y0 - margin_mm, x1 + margin_mm, y1 + margin_mm)
    frame = box.difference(shapely.Polygon(ext))
    cx, cy = (x0 + x1) / 2.0, (y0 + y1) / 2.0
    # candidate gaps: straight boundary segments long enough; strip goes outward along the normal
    shell = shapely.Polygon(ext)
    cands = []
    seg = np.diff(ext, axis=0)
    lens = np.hypot(seg[:, 0], seg[:, 1])
    order = np.argsort(-lens, kind="stable")
    for i in order:
        if lens[i] < 4.0 * gap_mm:
            break
        a, d = ext[i], seg[i] / lens[i]
        mid = a + 0.5 * seg[i]
        normal = np.array([d[1], -d[0]])  # exterior ring CCW in shapely-normalised output? test below
        if shell.covers(shapely.Point(mid + 1e-3 * normal)):
            normal = -normal
        far = mid + normal * (2 * margin_mm + (x1 - x0) + (y1 - y0))
        strip = shapely.LineString([mid, far]).buffer(gap_mm / 2.0, cap_style="flat")
        if strip.intersection(shell).area > 1e-9 * max(1.0, strip.area):
            continue  # the strip would cut back into the free polygon
        cands.append((i, strip, mid))
        if len(cands) >= 2 and _far_apart(cands):
            break
    if len(cands) < 2 or not _far_apart(cands):
        raise RuntimeError("no two straight boundary stretches to open the frame at")
    s1, s2 = cands[0][1], _far_pick(cands)[1]
    pieces = shapely.get_parts(frame.difference(s1.union(s2)))
    polys = []
    for p in pieces:
        if p.area <= 0:
            continue
        if len(p.interiors):
            raise RuntimeError("frame piece has a hole")
        polys.append(np.asarray(p.exterior.coords)[:-1])
    for hole in component.interiors:
        polys.append(np.asarray(hole.coords)[:-1])
    del cx, cy
    return polys


def _far_apart(cands) -> bool:
    return any(np.hypot(*(c[2] - cands[0][2])) > 10.0 for c in cands[1:])


def _far_pick(cands):
    for c in cands[1:]:
        if np.hypot(*(c[2] - cands[0][2])) > 10.0:
            return c
    raise RuntimeError("no second gap")


class PyvisgraphRef:
    """pyvisgraph on one free-space polygon (single worker, no status bar)."""

    name = "pyvisgraph"

    def __init__(self, component: shapely.Polygon):
        import pyvisgraph as vg

        self._vg = vg
        self.obstacles = pyvisgraph_obstacles(component)
        self.n_vertices = int(sum(len(p) for p in self.obstacles))

    def build(self) -> None:
        vg = self._vg
        polys = [[vg.Point(float(x), float(y)) for x, y in poly] for poly in self.obstacles]
        self.graph = vg.VisGraph()
        self.graph.build(polys, workers=1, status=False)

    def query(self, start: np.ndarray, goal: np.ndarray) -> np.ndarray:
        vg = self._vg
        pts = self.graph.shortest_path(vg.Point(*map(float, start)), vg.Point(*map(float, goal)))
        return np.array([[p.x, p.y] for p in pts])

    @property
    def n_edges(self) -> int:
        return len(self.graph.visgraph.edges)

    def query_lower_bound(self, start: np.ndarray, goal: np.ndarray) -> None:
        """The part of a query that needs no visibility graph: the rotational sweeps that link
        start and goal to the obstacle vertices (what ``shortest_path`` does before Dijkstra).

        Timing this gives a lower bound of the query time when the full build is too slow to run.
        """
        vg = self._vg
        if not hasattr(self, "_obstacle_graph"):
            polys = [[vg.Point(float(x), float(y)) for x, y in poly] for poly in self.obstacles]
            self._obstacle_graph = vg.graph.Graph(polys)
        o, d = vg.Point(*map(float, start)), vg.Point(*map(float, goal))
        vg.visible_vertices.visible_vertices(o, self._obstacle_graph, destination=d)
        vg.visible_vertices.visible_vertices(d, self._obstacle_graph, origin=o)


# --------------------------------------------------------------------------------------------
# grid A*


class GridAstarRef:
    """8-connected grid A* on the free region rasterised at ``cell_mm`` (cell centres inside).

    Edge weights are the centre distances (cell or cell·√2); the heuristic is the straight-line
    distance (admissible). A query snaps start and goal to the nearest free cell centre and adds
    the two straight connectors to the path.
    """

    name = "grid_astar"

    def __init__(self, region: shapely.Geometry, cell_mm: float = 2.0):
        self.region = region
        self.cell = float(cell_mm)

    def build(self) -> None:
        x0, y0, x1, y1 = self.region.bounds
        h = self.cell
        xs = np.arange(x0 + h / 2.0, x1, h)
        ys = np.arange(y0 + h / 2.0, y1, h)
        gx, gy = np.meshgrid(xs, ys, indexing="ij")
        free = shapely.contains_xy(self.region, gx, gy)
        self.xs, self.ys, self.free = xs, ys, free
        nx_, ny_ = free.shape
        ids = np.arange(nx_ * ny_).reshape(nx_, ny_)
        self.centres = np.column_stack([gx.ravel(), gy.ravel()])
        us, vs, ws = [], [], []
        for di, dj in ((1, 0), (0, 1), (1, 1), (1, -1)):
            i0, i1 = 0, nx_ - di
            j0, j1 = (0, ny_ - dj) if dj >= 0 else (-dj, ny_)
            ok = free[i0:i1, j0:j1] & free[i0 + di : i1 + di, j0 + dj : j1 + dj]
            us.append(ids[i0:i1, j0:j1][ok])
            vs.append(ids[i0 + di : i1 + di, j0 + dj : j1 + dj][ok])
            ws.append(np.full(int(ok.sum()), h * math.hypot(di, dj)))
        u = np.concatenate(us)
        v = np.concatenate(vs)
        w = np.concatenate(ws)
        order = np.lexsort((v, u))
        g = nx.Graph()
        g.add_nodes_from(np.flatnonzero(free.ravel()).tolist())
        g.add_weighted_edges_from(zip(u[order].tolist(), v[order].tolist(), w[order].tolist()))
        self.graph = g
        self._free_ids = np.flatnonzero(free.ravel())
        self._tree = shapely.STRtree(shapely.points(self.centres[self._free_ids]))

    def _snap(self, p: np.ndarray) -> int:
        k = self._tree.nearest(shapely.Point(float(p[0]), float(p[1])))
        return int(self._free_ids[int(k)])

    def query(self, start: np.ndarray, goal: np.ndarray) -> np.ndarray:
        s, t = self._snap(start), self._snap(goal)
        c = self.centres

        def h(a, b):
            return math.hypot(c[a, 0] - c[b, 0], c[a, 1] - c[b, 1])

        nodes = nx.astar_path(self.graph, s, t, heuristic=h, weight="weight")
        return np.vstack([start, c[nodes], goal])

    @property
    def n_nodes(self) -> int:
        return self.graph.number_of_nodes()

    @property
    def n_edges(self) -> int:
        return self.graph.number_of_edges()


# --------------------------------------------------------------------------------------------
# naive all-pairs visibility


class NaiveVisibilityRef:
    """All pairs of free-space vertices, one batched ``shapely.covers`` test each; Dijkstra queries.

    When the pair count exceeds ``max_pairs`` only a random sample of ``sample_pairs`` pairs is
    tested and the build time is extrapolated linearly in the pair count (``estimated = True``).
    """

    name = "naive_allpairs"

    def __init__(self, region: shapely.Geometry, max_pairs: int = 2_000_000, sample_pairs: int = 50_000, seed: int = 0):
        self.region = region
        shapely.prepare(region)
        self.verts = region_vertices(region)
        self.max_pairs = max_pairs
        self.sample_pairs = sample_pairs
        self.seed = seed
        n = len(self.verts)
        self.n_pairs = n * (n - 1) // 2
        self.estimated = self.n_pairs > max_pairs
        self.graph = None

    def _covers(self, a: np.ndarray, b: np.ndarray, chunk: int = 50_000) -> np.ndarray:
        out = np.zeros(len(a), dtype=bool)
        for s in range(0, len(a), chunk):
            lines = shapely.linestrings(np.stack([a[s : s + chunk], b[s : s + chunk]], axis=1))
            out[s : s + chunk] = shapely.covers(self.region, lines)
        return out

    def build(self) -> float:
        """Build (or sample); returns the build time in seconds (extrapolated when estimated)."""
        n = len(self.verts)
        t0 = time.perf_counter()
        if self.estimated:
            rng = np.random.default_rng(self.seed)
            i = rng.integers(0, n, self.sample_pairs)
            j = rng.integers(0, n, self.sample_pairs)
            keep = i != j
            self._covers(self.verts[i[keep]], self.verts[j[keep]])
            dt = time.perf_counter() - t0
            return dt * self.n_pairs / max(1, int(keep.sum()))
        i, j = np.triu_indices(n, k=1)
        ok = self._covers(self.verts[i], self.verts[j])
        i, j = i[ok], j[ok]
        w = np.hypot(*(self.verts[i] - self.verts[j]).T)
        adj: list[list[tuple[int, float]]] = [[] for _ in range(n)]
        for a, b, c in zip(i.tolist(), j.tolist(), w.tolist()):
            adj[a].append((b, c))
            adj[b].append((a, c))
        self.graph = adj
        self.n_edges = int(len(i))
        return time.perf_counter() - t0

    def query(self, start: np.ndarray, goal: np.ndarray) -> np.ndarray:
        """Exact shortest path (Dijkstra on the full visibility graph plus start and goal)."""
        if self.graph is None:
            raise RuntimeError("graph was only sampled")
        n = len(self.verts)
        pts = np.vstack([self.verts, start, goal])
        s_id, g_id = n, n + 1
        links = {}
        for pid in (s_id, g_id):
            ok = self._covers(np.repeat(pts[pid][None], n, axis=0), self.verts)
            idx = np.flatnonzero(ok)
            links[pid] = list(zip(idx.tolist(), np.hypot(*(self.verts[idx] - pts[pid]).T).tolist()))
        direct = bool(self._covers(start[None], goal[None])[0])
        goal_links = {a: c for a, c in links[g_id]}
        dist = {s_id: 0.0}
        prev: dict[int, int] = {}
        heap = [(0.0, s_id)]
        done = set()
        if direct:
            dist[g_id] = math.hypot(*(goal - start))
            prev[g_id] = s_id
            heapq.heappush(heap, (dist[g_id], g_id))
        while heap:
            d, u = heapq.heappop(heap)
            if u in done:
                continue
            done.add(u)
            if u == g_id:
                break
            nbrs = links[s_id] if u == s_id else self.graph[u]
            for v, c in nbrs:
                nd = d + c
                if nd < dist.get(v, math.inf):
                    dist[v] = nd
                    prev[v] = u
                    heapq.heappush(heap, (nd, v))
            if u != s_id and u in goal_links:
                nd = d + goal_links[u]
                if nd < dist.get(g_id, math.inf):
                    dist[g_id] = nd
                    prev[g_id] = u
                    heapq.heappush(heap, (nd, g_id))
        if g_id not in done:
            raise RuntimeError("no path")
        seq = [g_id]
        while seq[-1] != s_id:
            seq.append(prev[seq[-1]])
        return pts[seq[::-1]]


# --------------------------------------------------------------------------------------------
# tangent (reduced) visibility graph


def _cross(ax, ay, bx, by):
    return ax * by - ay * bx


class TangentVisibilityRef:
    """Exact shortest paths in a polygonal free region by its reduced visibility graph.

    Method (Lozano-Pérez & Wesley, "An algorithm for planning collision-free paths among polyhedral
    obstacles", CACM 22(10), 1979; Latombe, *Robot Motion Planning*, 1991, §4.1): a shortest path
    bends only at reflex corners of the free region (interior angle > 180°), and at such a corner
    both region edges lie on one side of each path segment (the segment is *tangent* there). So:

    * vertices: the reflex corners of every ring, each ring oriented with the region on its left
      (``shapely.orient_polygons``: a right turn is a reflex corner);
    * edges: the corner pairs tangent at both ends (numpy cross products, all pairs in row blocks)
      whose segment the region covers (``shapely.covers`` on the prepared region, vectorised:
      boundary contact allowed), weighted by length;
    * a query links start and goal to the corners they see (tangent at the corner end), adds the
      straight segment when the region covers it, and runs ``scipy.sparse.csgraph.dijkstra``.

    Written for the benchmarks with shapely and scipy only (no garnav code): reference (b) of the
    cross-seam optimality target, on the free region of the unfolded garment.

    Attributes (after :meth:`build`)
    --------------------------------
    xy : (m, 2) reflex corners, mm; ``n_edges`` : int
    """

    name = "tangent_visgraph"

    def __init__(self, region: shapely.Geometry, block: int = 256, chunk: int = 50_000):
        self.region = region
        shapely.prepare(region)
        self.block = int(block)
        self.chunk = int(chunk)
        self.graph = None

    def _rings(self):
        oriented = shapely.orient_polygons(self.region)
        for part in shapely.get_parts(oriented):
            yield np.asarray(part.exterior.coords)[:-1]
            for r in part.interiors:
                yield np.asarray(r.coords)[:-1]

    def _covers(self, a: np.ndarray, b: np.ndarray) -> np.ndarray:
        out = np.zeros(len(a), dtype=bool)
        for s in range(0, len(a), self.chunk):
            lines = shapely.linestrings(np.stack([a[s : s + self.chunk], b[s : s + self.chunk]], axis=1))
            out[s : s + self.chunk] = shapely.covers(self.region, lines)
        return out

    def _tangent(self, i: np.ndarray, d: np.ndarray) -> np.ndarray:
        """Whether a segment leaving corner i (k,) in direction d (k, 2) is tangent there."""
        v = self.xy[i]
        s1 = _cross(d[:, 0], d[:, 1], self.prev[i, 0] - v[:, 0], self.prev[i, 1] - v[:, 1])
        s2 = _cross(d[:, 0], d[:, 1], self.next[i, 0] - v[:, 0], self.next[i, 1] - v[:, 1])
        return s1 * s2 >= 0.0

    def build(self) -> float:
        """Build the graph; returns its build time, s."""
        t0 = time.perf_counter()
        xy, prev, nxt = [], [], []
        for ring in self._rings():
            p, n = np.roll(ring, 1, axis=0), np.roll(ring, -1, axis=0)
            turn = _cross(ring[:, 0] - p[:, 0], ring[:, 1] - p[:, 1], n[:, 0] - ring[:, 0], n[:, 1] - ring[:, 1])
            keep = turn < 0.0  # right turn with the region on the left: reflex corner
            xy.append(ring[keep])
            prev.append(p[keep])
            nxt.append(n[keep])
        self.xy = np.vstack(xy) if xy else np.zeros((0, 2))
        self.prev = np.vstack(prev) if prev else np.zeros((0, 2))
        self.next = np.vstack(nxt) if nxt else np.zeros((0, 2))
        m = len(self.xy)
        ia, ib = [], []
        for r0 in range(0, m, self.block):
            rows = np.arange(r0, min(m, r0 + self.block))
            i, j = np.meshgrid(rows, np.arange(m), indexing="ij")
            up = j > i
            i, j = i[up], j[up]
            d = self.xy[j] - self.xy[i]
            ok = self._tangent(i, d) & self._tangent(j, -d)
            ia.append(i[ok])
            ib.append(j[ok])
        i = np.concatenate(ia) if ia else np.zeros(0, int)
        j = np.concatenate(ib) if ib else np.zeros(0, int)
        self.n_candidates = int(len(i))
        vis = self._covers(self.xy[i], self.xy[j])
        i, j = i[vis], j[vis]
        w = np.hypot(*(self.xy[j] - self.xy[i]).T)
        self._edges = (i, j, w)
        self.n_edges = int(len(i))
        self.graph = True
        return time.perf_counter() - t0

    def _links(self, p: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Corners a point sees with tangency at the corner: (indices (k,), lengths (k,))."""
        m = len(self.xy)
        idx = np.arange(m)
        ok = self._tangent(idx, np.asarray(p, dtype=float)[None, :] - self.xy)
        idx = idx[ok]
        vis = self._covers(np.repeat(np.asarray(p, dtype=float)[None], len(idx), axis=0), self.xy[idx])
        idx = idx[vis]
        return idx, np.hypot(*(self.xy[idx] - p).T)

    def query(self, start: np.ndarray, goal: np.ndarray) -> tuple[float, np.ndarray]:
        """Shortest path length (mm, inf when none) and the path (n, 2) from ``start`` to ``goal``."""
        import scipy.sparse as sp
        from scipy.sparse.csgraph import dijkstra

        if self.graph is None:
            self.build()
        start = np.asarray(start, dtype=float)
        goal = np.asarray(goal, dtype=float)
        m = len(self.xy)
        s_id, g_id = m, m + 1
        i, j, w = self._edges
        si, sw = self._links(start)
        gi, gw = self._links(goal)
        rows = [i, np.full(len(si), s_id), np.full(len(gi), g_id)]
        cols = [j, si, gi]
        vals = [w, sw, gw]
        if self._covers(start[None], goal[None])[0]:
            rows.append(np.array([s_id]))
            cols.append(np.array([g_id]))
            vals.append(np.array([math.hypot(*(goal - start))]))
        mat = sp.csr_matrix((np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))), shape=(m + 2, m + 2))
        dist, pred = dijkstra(mat, directed=False, indices=s_id, return_predecessors=True)
        if not np.isfinite(dist[g_id]):
            return math.inf, np.zeros((0, 2))
        pts = np.vstack([self.xy, start, goal])
        seq = [g_id]
        while seq[-1] != s_id:
            seq.append(int(pred[seq[-1]]))
        return float(dist[g_id]), pts[seq[::-1]]
