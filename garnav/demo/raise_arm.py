"""The demo's second pose, ``arm_raised``: the wearer's right arm raised forward and up.

The pose keeps the standing drape's topology, vertex order, UVs and face order; only vertex
positions change, so both drapes share one pattern link. Pure computation, no file I/O.

Why the raised arm cannot be an exact development of this pattern
------------------------------------------------------------------
The torso stays where it is, so the armhole seam C, the closed cone ∩ cylinder curve, which is
not planar, stays fixed point by point.

* An isometry of space that fixes a non-planar curve point by point is the identity (fixing three
  non-collinear points leaves the identity or the reflection in their plane; a fourth point off
  that plane rules out the reflection), so no rigid motion of the whole sleeve keeps C closed.
* A smooth bending of the sleeve that keeps every pattern length is again a developable surface
  through C (a C² surface of zero Gaussian curvature is ruled: Hartman & Nirenberg 1959). Along C
  its geodesic curvature κ_g is the pattern curve's curvature (a development keeps it) and
  κ² = κ_g² + κ_n² (Meusnier; do Carmo, *Differential Geometry of Curves and Surfaces*, §3-2), so
  the normal curvature κ_n is fixed up to its sign: the tangent plane along C is the standing one
  or its mirror in C's osculating plane. The cone's κ_n = cos β / (ρ sin β) · sin²ω (Euler's
  formula, ω the angle between C and the generator) never vanishes on C, which crosses every
  generator, so the choice cannot switch along C. A developable surface is the envelope of its
  tangent planes along C, so the sleeve is fixed near C, and, since every generator runs from C
  to the cuff, everywhere: standing, or mirrored.
* The mirrored choice is what a mitre gives (reflecting the part of a tube beyond a plane through
  the plane; for a planar C it is exactly that): where C's curvature vector points into the loop,
  as on an armhole, the mirrored normal that keeps the pattern's orientation points into the tube,
  so against the outward normal every triangle is flipped: the fabric's face side looks inside.
  No drape.

Hence the raised pose is built as: the sleeve's distal part (the forearm, ``rigid_length_mm``
from the cuff) moved by one rigid motion — exact there: every length, angle and geodesic is the
standing drape's — and the band between it and the armhole deformed as-rigid-as-possibly with
the seam vertices and the forearm as handle constraints (Sorkine & Alexa, "As-rigid-as-possible
surface modeling", SGP 2007; libigl's ``arap_precomputation`` / ``arap_solve``, spokes energy,
a fixed iteration count, so the result is deterministic). The band stretches and compresses
(measured with :mod:`garnav.drape.report`); a robot's odometry there is approximate.

The forearm's rigid motion is a hinge: a rotation by θ = ``angle_deg`` about the axis
ω = d × u through a point of the sleeve axis d at ``hinge_fraction`` of the band (from the
armhole's mean slant distance to the forearm's edge), u = cos λ·ŷ + sin λ·e1 the bend direction
(λ = ``lift_deg``; ŷ forward and e1, the side of the sleeve's top generator, are both ⊥ d). ARAP
starts from the hinge field: the rotation about the same axis by θ·h(x / L), x the distance along
the axis from the band's start, L the band's length, h the smoothstep 3s² − 2s³.
The default pose (θ = 75°, λ = 60°, a 200 mm forearm, hinge at 0.6) turns the arm from 40° below
the horizontal, sideways, to 28° above it and 33° forward of sideways. Of the hinges at 0.4, 0.5,
0.6 and 0.7 of the band, 0.6 gave the least ARAP energy; bending the axis along a circular arc of
its own length instead costs about five times more. Measured with :func:`garnav.drape.report.
stretch_stats`: σ 0.83 .. 1.10 over the band (area-weighted medians 0.988 / 1.008), the forearm
as the standing sleeve (0.997 .. 1.002, the mesh's chords), the largest dihedral angle inside the
sleeve 33° (standing 13°): the band's inner side wrinkles, no triangle folds over.

The mannequin's right arm follows the raised sleeve: each arm vertex inside the sleeve is placed
at the same pattern point of the raised sleeve, ``inset`` mm inside along the raised surface
normal (as the standing arm is the cone moved inwards); the hand moves rigidly with the forearm;
the part inside the torso stays.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np
import scipy.sparse
import scipy.sparse.csgraph
from scipy.spatial import cKDTree
from scipy.spatial.transform import Rotation

from garnav.demo.mannequin import Cone, cone_cylinder_intersection
from garnav.demo.mesh import BodyMesh, DrapeMesh, build_body
from garnav.demo.pattern import DemoDesign
from garnav.errors import MeshError

__all__ = ["ArmRaise", "RaisedArm", "arm_motion", "bend_points", "raise_arm_drape", "raise_arm_body"]


#: Rings along the raised arm of the mannequin (the standing one has 30): about 8 mm apart.
ARM_RINGS = 90


@dataclass(frozen=True)
class ArmRaise:
    """How the arm is raised (mm, degrees).

    Attributes
    ----------
    side : str
        "right" or "left".
    angle_deg : float
        Rotation θ of the forearm, degrees (0 < θ < 180).
    lift_deg : float
        Direction of the bend: 0 swings the arm forward, 90 raises it in its own vertical plane.
    rigid_length_mm : float
        Length of the rigid distal part along the sleeve's generators, from the cuff.
    hinge_fraction : float
        Where the hinge lies on the sleeve axis: 0 at the armhole's mean slant distance, 1 at the
        rigid part's edge.
    iterations : int
        ARAP local/global iterations (fixed: the result is deterministic).
    """

    side: str = "right"
    angle_deg: float = 75.0
    lift_deg: float = 60.0
    rigid_length_mm: float = 200.0
    hinge_fraction: float = 0.6
    iterations: int = 100


@dataclass(frozen=True)
class RaisedArm:
    """The raised drape and what was done to it.

    Attributes
    ----------
    drape : DrapeMesh
        Same faces, UVs and pattern as the standing drape; new vertex positions (mm).
    rotation : (3, 3) float array
        The forearm's rigid motion x ↦ rotation · x + translation.
    translation : (3,) float array, mm
    rigid_vertices, band_vertices : (k,) int arrays
        Vertices moved rigidly, and vertices moved by ARAP (the seam vertices stay).
    rigid_faces, band_faces : (k,) int arrays
        Faces with all corners rigid, and the sleeve's other faces.
    """

    drape: DrapeMesh
    rotation: np.ndarray
    translation: np.ndarray
    rigid_vertices: np.ndarray
    band_vertices: np.ndarray
    rigid_faces: np.ndarray
    band_faces: np.ndarray


@dataclass(frozen=True)
class _Bend:
    """The hinge of the raise: where the band lies, the pivot and the rotation (internal)."""

    apex: np.ndarray  # (3,) the sleeve cone's apex
    d: np.ndarray  # (3,) sleeve axis, body → hand
    u: np.ndarray  # (3,) bend direction ⊥ d
    omega: np.ndarray  # (3,) unit rotation axis d × u
    s_start: float  # axial distance apex → band start (mm)
    length: float  # the band's axial length L (mm)
    pivot: np.ndarray  # (3,) the hinge point on the sleeve axis
    theta: float  # radians
    rho_cut: float  # slant distance of the rigid part's edge


def _bend(design: DemoDesign, raise_: ArmRaise) -> _Bend:
    if raise_.side not in design.cones:
        raise MeshError(f"arm raise: unknown side '{raise_.side}' (sides: left, right)")
    if not 0.0 < raise_.angle_deg < 180.0:
        raise MeshError(f"arm raise: angle {raise_.angle_deg:g}° is not in (0°, 180°)")
    if not 0.0 <= raise_.hinge_fraction <= 1.0:
        raise MeshError(f"arm raise: hinge fraction {raise_.hinge_fraction:g} is not in [0, 1]")
    cone: Cone = design.cones[raise_.side]
    d = np.asarray(cone.d, dtype=float)
    e1 = np.asarray(cone.e1, dtype=float)
    lam = math.radians(raise_.lift_deg)
    u = math.cos(lam) * np.array([0.0, 1.0, 0.0]) + math.sin(lam) * e1
    u = u - (u @ d) * d
    u /= np.linalg.norm(u)
    rho_cut = design.dims.sleeve_radius_wrist / math.sin(cone.beta) + raise_.rigid_length_mm
    # the armhole's mean slant distance, over generators spaced evenly around
    phi = np.linspace(-math.pi, math.pi, 721)[:-1]
    rho_arm = float(np.mean(cone_cylinder_intersection(cone, design.torso, phi)))
    if rho_cut >= rho_arm:
        raise MeshError(
            f"arm raise: rigid length {raise_.rigid_length_mm:g} mm leaves no band below the armhole"
        )
    c = math.cos(cone.beta)
    apex = np.asarray(cone.apex, dtype=float)
    s_start, length = rho_arm * c, (rho_arm - rho_cut) * c
    pivot = apex - (s_start - raise_.hinge_fraction * length) * d
    return _Bend(
        apex, d, u, np.cross(d, u), s_start, length, pivot, math.radians(raise_.angle_deg), rho_cut
    )


def _hinge_map(bend: _Bend, points: np.ndarray) -> np.ndarray:
    """The hinge field at points (n, 3): rotation about the hinge by θ·h(x/L), x the distal axial
    distance from the band's start, h(s) = 3s² − 2s³ clipped to [0, 1] (smoothstep): the identity
    before the band, the rigid motion beyond it."""
    points = np.asarray(points, dtype=float).reshape(-1, 3)
    x = bend.s_start + (points - bend.apex) @ bend.d
    s = np.clip(x / bend.length, 0.0, 1.0)
    t = bend.theta * s * s * (3.0 - 2.0 * s)
    rot = Rotation.from_rotvec(t[:, None] * bend.omega[None, :])
    return bend.pivot + rot.apply(points - bend.pivot)


def arm_motion(design: DemoDesign, raise_: ArmRaise = ArmRaise()) -> tuple[np.ndarray, np.ndarray]:
    """The forearm's rigid motion: (3, 3) rotation R and (3,) translation t (mm), x ↦ R x + t."""
    bend = _bend(design, raise_)
    rot = Rotation.from_rotvec(bend.theta * bend.omega).as_matrix()
    return rot, bend.pivot - rot @ bend.pivot


def bend_points(design: DemoDesign, points: np.ndarray, raise_: ArmRaise = ArmRaise()) -> np.ndarray:
    """The hinge field (ARAP's starting point) at world points (n, 3) → (n, 3), mm."""
    return _hinge_map(_bend(design, raise_), points)


def _sleeve_parts(design: DemoDesign, mesh: DrapeMesh, raise_: ArmRaise):
    """Sleeve faces, sleeve vertices, seam mask (vertices shared with other pieces), slant ρ."""
    name = f"sleeve_{raise_.side}"
    if name not in mesh.piece_names:
        raise MeshError(f"arm raise: the drape has no piece '{name}'")
    in_sleeve = mesh.face_piece == mesh.piece_names.index(name)
    faces = np.flatnonzero(in_sleeve)
    verts = np.unique(mesh.faces[faces])
    seam = np.isin(verts, np.unique(mesh.faces[~in_sleeve]))
    rho, _ = design.cones[raise_.side].coordinates(mesh.vertices[verts])
    return faces, verts, seam, rho


def raise_arm_drape(
    design: DemoDesign, mesh: DrapeMesh, raise_: ArmRaise = ArmRaise()
) -> RaisedArm:
    """The drape with the arm raised: forearm rigid, band by ARAP, everything else unchanged.

    Parameters
    ----------
    design : DemoDesign
    mesh : DrapeMesh
        The standing drape of ``design`` (:func:`garnav.demo.mesh.build_drape`).
    raise_ : ArmRaise

    Returns
    -------
    RaisedArm

    Raises
    ------
    MeshError
        When the ARAP solve fails (non-finite positions).
    """
    import igl

    bend = _bend(design, raise_)
    faces, verts, seam, rho = _sleeve_parts(design, mesh, raise_)
    rigid = (rho <= bend.rho_cut) & ~seam
    local = np.full(len(mesh.vertices), -1, dtype=np.int64)
    local[verts] = np.arange(len(verts))
    f_local = np.ascontiguousarray(local[mesh.faces[faces]], dtype=np.int64)
    rest = np.ascontiguousarray(mesh.vertices[verts], dtype=np.float64)
    start = _hinge_map(bend, rest)
    start[seam] = rest[seam]
    handles = np.flatnonzero(rigid | seam).astype(np.int32)
    data = igl.ARAPData()
    data.energy = igl.ARAP_ENERGY_TYPE_SPOKES  # Sorkine & Alexa 2007, eq. (3)
    data.max_iter = int(raise_.iterations)
    igl.arap_precomputation(rest, f_local, 3, handles, data)
    moved = np.asarray(
        igl.arap_solve(np.ascontiguousarray(start[handles]), data, np.ascontiguousarray(start)),
        dtype=float,
    )
    if not np.all(np.isfinite(moved)):
        raise MeshError("arm raise: ARAP gave non-finite positions")
    moved[handles] = start[handles]  # the handles exactly where they were put
    vertices = mesh.vertices.copy()
    vertices[verts] = moved
    rigid_faces = faces[np.all(rigid[f_local], axis=1)]
    band_faces = np.setdiff1d(faces, rigid_faces)
    rot, origin = arm_motion(design, raise_)
    return RaisedArm(
        drape=replace(mesh, vertices=vertices),
        rotation=rot,
        translation=origin,
        rigid_vertices=verts[rigid],
        band_vertices=verts[~rigid & ~seam],
        rigid_faces=rigid_faces,
        band_faces=band_faces,
    )


def _vertex_normals(v: np.ndarray, f: np.ndarray) -> np.ndarray:
    """Area-weighted unit vertex normals (n, 3) of a triangle mesh."""
    n = np.cross(v[f[:, 1]] - v[f[:, 0]], v[f[:, 2]] - v[f[:, 0]])
    out = np.zeros_like(v)
    for i in range(3):
        np.add.at(out, f[:, i], n)
    return out / np.maximum(np.linalg.norm(out, axis=1, keepdims=True), 1e-300)


def _locate(tri2d: np.ndarray, pts: np.ndarray, k: int = 12) -> tuple[np.ndarray, np.ndarray]:
    """Triangle index (m,) and clamped barycentric coordinates (m, 3) of 2D points in triangles."""
    tree = cKDTree(tri2d.mean(axis=1))
    _, cand = tree.query(pts, k=k)
    a, b, c = (tri2d[cand][..., i, :] for i in range(3))
    v0, v1, v2 = b - a, c - a, pts[:, None, :] - a
    den = v0[..., 0] * v1[..., 1] - v0[..., 1] * v1[..., 0]
    l1 = (v2[..., 0] * v1[..., 1] - v2[..., 1] * v1[..., 0]) / den
    l2 = (v0[..., 0] * v2[..., 1] - v0[..., 1] * v2[..., 0]) / den
    bary = np.stack([1.0 - l1 - l2, l1, l2], axis=-1)
    worst = bary.min(axis=-1)  # ≥ 0 inside; the first candidate that holds the point, else the best
    best = np.argmax(worst, axis=1)
    rows = np.arange(len(pts))
    bary = np.clip(bary[rows, best], 0.0, None)
    return cand[rows, best], bary / bary.sum(axis=1, keepdims=True)


def raise_arm_body(
    design: DemoDesign,
    standing: DrapeMesh,
    raised: RaisedArm,
    raise_: ArmRaise = ArmRaise(),
    inset: float = 3.0,
    rings: int = ARM_RINGS,
) -> BodyMesh:
    """The mannequin with the arm raised like ``raised``.

    The standing mannequin (:func:`garnav.demo.mesh.build_body`) with ``rings`` rings along the
    raised arm instead of 30, so that the arm follows the bent sleeve; then the arm is moved.

    Parameters
    ----------
    design : DemoDesign
    standing : DrapeMesh
        The standing drape ``raised`` was made from.
    raised : RaisedArm
    raise_ : ArmRaise
    inset : float
        Distance (mm) of the arm inside the sleeve.
    rings : int
        Rings along the raised arm.
    """
    body = build_body(design, inset, arm_rings=(30, rings) if raise_.side == "right" else (rings, 30))
    cone = design.cones[raise_.side]
    sleeve = f"sleeve_{raise_.side}"
    smap = design.maps[sleeve]
    # the arm: the body part (connected component) farthest out on the raised side
    n = len(body.vertices)
    edges = np.concatenate([body.faces[:, [0, 1]], body.faces[:, [1, 2]]])
    graph = scipy.sparse.coo_matrix((np.ones(len(edges)), (edges[:, 0], edges[:, 1])), shape=(n, n))
    count, label = scipy.sparse.csgraph.connected_components(graph, directed=False)
    sign = design.dims.x_sign(raise_.side)
    mean_x = np.array([body.vertices[label == i, 0].mean() * sign for i in range(count)])
    arm = np.flatnonzero(label == int(np.argmax(mean_x)))
    pts = body.vertices[arm]
    _, phi = cone.coordinates(pts)
    on_cone = pts + inset * cone.outward_normal(phi)  # the sleeve point over each arm vertex
    rho_c, phi_c = cone.coordinates(on_cone)
    rho_arm = cone_cylinder_intersection(cone, design.torso, phi_c)
    bend = _bend(design, raise_)
    out = body.vertices.copy()
    hand = rho_c <= bend.rho_cut
    out[arm[hand]] = pts[hand] @ raised.rotation.T + raised.translation
    # under the band: between the forearm and the armhole, outside the torso (the arm's end and
    # the fan centre inside the torso stay)
    inside = (rho_c > bend.rho_cut) & (rho_c < rho_arm) & (design.torso.implicit(on_cone) > 0.0)
    if np.any(inside):
        faces, _, _, _ = _sleeve_parts(design, standing, raise_)
        corner_pattern = standing.pattern[standing.face_uv[faces]]  # (m, 3, 2)
        tri, bary = _locate(corner_pattern, smap.from_cone(rho_c[inside], phi_c[inside]))
        tri_v = standing.faces[faces[tri]]  # (q, 3) vertex ids
        new_v = raised.drape.vertices
        sub = np.unique(standing.faces[faces])
        local = np.full(len(new_v), -1, dtype=np.int64)
        local[sub] = np.arange(len(sub))
        normals = _vertex_normals(new_v[sub], local[standing.faces[faces]])
        surf = np.einsum("qi,qij->qj", bary, new_v[tri_v])
        nrm = np.einsum("qi,qij->qj", bary, normals[local[tri_v]])
        nrm /= np.linalg.norm(nrm, axis=1, keepdims=True)
        out[arm[inside]] = surf - inset * nrm
    return BodyMesh(out, body.faces)
