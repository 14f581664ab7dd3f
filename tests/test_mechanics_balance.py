"""The force balance against statics closed forms (each source named beside its check)."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.optimize import minimize_scalar
from scipy.spatial.transform import Rotation

from garnav.mechanics.balance import force_balance, heading_limits
from garnav.mechanics.gravity import POSTURES, gravity_vector, parse_gravity
from garnav.errors import QueryError

G = np.array([0.0, 0.0, -1.0])


def plane(theta_deg: float, psi_deg: float):
    """Unit normal of a plane whose normal is θ from up, and the unit travel direction at
    heading ψ from the uphill direction; (1, 3) each."""
    t, p = math.radians(theta_deg), math.radians(psi_deg)
    n = np.array([0.0, -math.sin(t), math.cos(t)])
    up = np.array([0.0, math.cos(t), math.sin(t)])  # uphill, in the plane
    x = np.array([1.0, 0.0, 0.0])
    d = math.cos(p) * up + math.sin(p) * x
    return n[None], d[None]


def balance(theta, psi, w=1.0, f=0.0, mu=0.5, c=0.0, drive=10.0):
    n, d = plane(theta, psi)
    return force_balance(n, d, G, w, f, mu, c, drive)


def test_block_slides_at_tan_phi_equal_mu():
    # Inclined plane without magnets: slide starts at tan φ = μ (Meriam & Kraige, Statics, ch. 6).
    for mu in (0.2, 0.5, 1.0):
        phi = math.degrees(math.atan(mu))
        assert balance(phi, 0.0, mu=mu).grip_margin[0] == pytest.approx(1.0, rel=1e-12)
        assert balance(phi - 0.5, 0.0, mu=mu).grip_margin[0] > 1.0
        assert balance(phi + 0.5, 0.0, mu=mu).grip_margin[0] < 1.0


def test_added_normal_force_slide_condition():
    # With an added normal force F the block slides when m g sin φ > μ (F + m g cos φ)
    # (statics textbook inclined plane with an added normal load).
    rng = np.random.default_rng(1)
    for _ in range(50):
        phi, w, f, mu = rng.uniform(0, 90), rng.uniform(0.1, 2), rng.uniform(0, 5), rng.uniform(0.1, 1.5)
        b = balance(phi, 0.0, w=w, f=f, mu=mu)
        expect = mu * (f + w * math.cos(math.radians(phi))) / (w * math.sin(math.radians(phi)))
        assert b.grip_margin[0] == pytest.approx(expect, rel=1e-12)
        assert (b.grip_margin[0] < 1.0) == (w * math.sin(math.radians(phi)) > mu * (f + w * math.cos(math.radians(phi))))


def test_overhang_hold_lost_when_magnet_below_weight_component():
    # Overhang (surface facing down at θ > 90°): hold lost when F < m g |cos θ| (statics; the
    # wall-climbing robot literature's adhesion condition).
    for theta in (100.0, 135.0, 180.0):
        w = 0.5
        limit = w * abs(math.cos(math.radians(theta)))
        assert balance(theta, 30.0, w=w, f=limit).hold_margin[0] == pytest.approx(1.0, rel=1e-12)
        assert balance(theta, 30.0, w=w, f=0.99 * limit).hold_margin[0] < 1.0
        assert balance(theta, 30.0, w=w, f=0.99 * limit).normal_n[0] < 0.0
    assert math.isinf(balance(60.0, 0.0, f=0.1).hold_margin[0])  # not an overhang: nothing pulls off


def test_vertical_wall_holds_when_mu_f_at_least_mg():
    # Vertical wall: the robot holds when μ F ≥ m g (wall-climbing robot literature).
    w, mu = 0.49, 0.6
    f = w / mu
    assert balance(90.0, 45.0, w=w, f=f, mu=mu).grip_margin[0] == pytest.approx(1.0, rel=1e-12)
    assert balance(90.0, 45.0, w=w, f=1.01 * f, mu=mu).grip_margin[0] > 1.0


def test_friction_circle_closed_forms():
    # N = F + m g cos θ, T = m g sin θ cos ψ + C_rr N, S = m g sin θ sin ψ, no slip while
    # √(T² + S²) ≤ μ N (friction circle with a normal load; the stated closed forms).
    rng = np.random.default_rng(2)
    for _ in range(100):
        th, ps = rng.uniform(0, 180), rng.uniform(-180, 180)
        w, f, mu, c = rng.uniform(0.1, 1), rng.uniform(0, 4), rng.uniform(0.2, 1.2), rng.uniform(0, 0.2)
        b = balance(th, ps, w=w, f=f, mu=mu, c=c, drive=100.0)
        t, p = math.radians(th), math.radians(ps)
        n = f + w * math.cos(t)
        if n <= 0:
            assert b.grip_margin[0] == 0.0
            continue
        tt = w * math.sin(t) * math.cos(p) + c * n
        ss = w * math.sin(t) * abs(math.sin(p))
        assert b.normal_n[0] == pytest.approx(n, rel=1e-12, abs=1e-12)
        assert b.track_n[0] == pytest.approx(tt, rel=1e-9, abs=1e-12)
        assert b.side_n[0] == pytest.approx(ss, rel=1e-9, abs=1e-12)
        driving = mu * n / math.hypot(tt, ss) if math.hypot(tt, ss) > 0 else math.inf
        rest = mu * n / (w * math.sin(t)) if math.sin(t) > 1e-12 else math.inf
        assert b.grip_margin[0] == pytest.approx(min(driving, rest), rel=1e-9)
        assert b.drive_margin[0] == pytest.approx(100.0 / abs(tt), rel=1e-9)


def test_worst_orientation_at_rest_is_90_plus_atan_mu():
    # At rest the worst surface orientation is θ* = 90° + atan μ, so μ F ≥ m g √(1 + μ²) holds at
    # every orientation (closed form of the issue; scipy minimize_scalar as the optimiser oracle).
    for mu in (0.3, 0.6, 1.0):
        w = 1.0
        f = w * math.sqrt(1 + mu * mu) / mu

        def margin(theta_deg, w=w, f=f, mu=mu):
            n, _ = plane(theta_deg, 0.0)
            return float(force_balance(n, np.zeros((1, 3)), G, w, f, mu, 0.0, 10.0).grip_margin[0])

        res = minimize_scalar(margin, bounds=(1.0, 179.0), method="bounded", options={"xatol": 1e-8})
        assert res.x == pytest.approx(90.0 + math.degrees(math.atan(mu)), abs=1e-3)  # observed ~1e-5
        assert res.fun == pytest.approx(1.0, abs=1e-9)
        assert min(margin(t) for t in np.linspace(1, 179, 357)) >= 1.0 - 1e-12


@pytest.mark.slow
def test_heading_limits_match_the_margins():
    # The planner's cos ψ limits are the margin conditions solved for ψ: on either side of the
    # limit the recomputed margins cross the required value.
    rng = np.random.default_rng(3)
    for _ in range(80):
        th = rng.uniform(0, 100)
        w, f, mu, c, drive = 0.5, rng.uniform(0.5, 4), rng.uniform(0.3, 1.2), rng.uniform(0, 0.15), rng.uniform(0.2, 1.0)
        s, sd = 1.5, 1.1
        n, _ = plane(th, 0.0)
        lim = heading_limits(n, G, w, f, mu, c, drive, s, sd)
        for psi in np.linspace(0, 180, 37):
            b = balance(th, psi, w=w, f=f, mu=mu, c=c, drive=drive)
            safe = b.grip_margin[0] >= s * (1 - 1e-9) and b.hold_margin[0] >= s * (1 - 1e-9) and b.drive_margin[0] >= sd * (1 - 1e-9)
            cp = math.cos(math.radians(psi))
            inside = (not lim.blocked[0]) and lim.c_lo[0] - 1e-9 <= cp <= lim.c_hi[0] + 1e-9
            near = min(abs(cp - lim.c_lo[0]), abs(cp - lim.c_hi[0])) < 1e-6
            if not near:
                assert safe == inside, (th, psi, f, mu, c, drive)


def test_postures_against_scipy_rotation():
    # Gravity in the body frame = Rᵀ (0, 0, −1) for the posture's rotation R (scipy Rotation as
    # the reference for the axis-angle rotations).
    for name, (axis, angle) in POSTURES.items():
        ref = Rotation.from_euler(axis, angle, degrees=True).inv().apply([0.0, 0.0, -1.0])
        assert np.allclose(gravity_vector(name), ref, atol=1e-12)
    assert np.allclose(gravity_vector("supine"), [0, -1, 0], atol=1e-12)  # back down
    assert np.allclose(gravity_vector("left_side"), [-1, 0, 0], atol=1e-12)  # wearer's left is −x


def test_parse_gravity():
    assert parse_gravity(None)[0] == "upright"
    label, g = parse_gravity("0,0,-2")
    assert label == "custom" and np.allclose(g, [0, 0, -1])
    for bad in ("1,2", "a,b,c", "0,0,0", "nan,0,1"):
        with pytest.raises(QueryError, match="--gravity"):
            parse_gravity(bad)
    with pytest.raises(QueryError, match="did you mean 'supine'"):
        gravity_vector("supin")
    with pytest.raises(QueryError, match="not both"):
        parse_gravity("0,0,-1", "upright")
