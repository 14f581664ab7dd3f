"""Gravity in the body frame for a named posture or an explicit vector.

The drape lives in the body (world) frame of an upright wearer: mm, z up, y forward (where the
wearer faces), x towards the wearer's right. A posture is the rotation R that carries the body
frame into the room; the room's gravity is (0, 0, −1), so in the body frame gravity points along
Rᵀ·(0, 0, −1). Mechanics read the drape's face normals in the body frame against that vector, so a
route is planned and lifted once and only its gravity changes with the posture.

==========  ===================================================  =====================
posture     body-frame rotation (R, applied to the upright body)  gravity in body frame
==========  ===================================================  =====================
upright     none                                                  (0, 0, −1)
supine      +90° about x: lying on the back, face up               (0, −1, 0)
prone       −90° about x: lying on the front, face down            (0, +1, 0)
left_side   −90° about y: lying on the left side                   (−1, 0, 0)
right_side  +90° about y: lying on the right side                  (+1, 0, 0)
seated      +20° about x: sitting, torso leaning 20° back          (0, −sin 20°, −cos 20°)
==========  ===================================================  =====================

The seated recline of 20° is a typical backrest angle (common practice, no source).

>>> (gravity_vector("supine").round(12) + 0.0).tolist()  # + 0.0: no negative zero
[0.0, -1.0, 0.0]
"""

from __future__ import annotations

import math

import numpy as np

from garnav.errors import QueryError, did_you_mean

__all__ = ["POSTURES", "SEATED_RECLINE_DEG", "posture_rotation", "gravity_vector", "parse_gravity"]

SEATED_RECLINE_DEG = 20.0

#: Each posture: (rotation axis of the body frame, angle in degrees).
POSTURES: dict[str, tuple[str, float]] = {
    "upright": ("x", 0.0),
    "supine": ("x", 90.0),
    "prone": ("x", -90.0),
    "left_side": ("y", -90.0),
    "right_side": ("y", 90.0),
    "seated": ("x", SEATED_RECLINE_DEG),
}


def _axis_rotation(axis: str, angle_deg: float) -> np.ndarray:
    a = math.radians(angle_deg)
    c, s = math.cos(a), math.sin(a)
    if axis == "x":
        return np.array([[1.0, 0.0, 0.0], [0.0, c, -s], [0.0, s, c]])
    return np.array([[c, 0.0, s], [0.0, 1.0, 0.0], [-s, 0.0, c]])


def posture_rotation(name: str) -> np.ndarray:
    """(3, 3) rotation carrying the body frame into the room for posture ``name``."""
    if name not in POSTURES:
        raise QueryError(
            f"unknown posture '{name}'; postures: {', '.join(POSTURES)}"
            + (f"; {h}" if (h := did_you_mean(name, POSTURES)) else "")
        )
    return _axis_rotation(*POSTURES[name])


def gravity_vector(posture: str = "upright") -> np.ndarray:
    """(3,) unit gravity direction in the body frame for posture ``name``."""
    return posture_rotation(posture).T @ np.array([0.0, 0.0, -1.0])


def parse_gravity(text: str | None, posture: str | None = None) -> tuple[str, np.ndarray]:
    """The posture label and unit gravity vector from ``--posture NAME`` or ``--gravity X,Y,Z``.

    Parameters
    ----------
    text : str, optional
        ``"X,Y,Z"``: any non-zero vector in the body frame (normalised).
    posture : str, optional
        A name of :data:`POSTURES`; default ``upright``.

    Returns
    -------
    (label, (3,) unit vector)
        ``label`` is the posture name, or ``"custom"`` for an explicit vector.
    """
    if text is not None and posture is not None:
        raise QueryError("give either --posture or --gravity, not both")
    if text is None:
        name = posture or "upright"
        return name, gravity_vector(name)
    try:
        values = [float(v) for v in text.split(",")]
    except ValueError:
        raise QueryError(f"--gravity '{text}': give three numbers X,Y,Z") from None
    v = np.array(values, dtype=float)
    if v.shape != (3,) or not np.all(np.isfinite(v)) or not np.linalg.norm(v) > 0:
        raise QueryError(f"--gravity '{text}': give three finite numbers X,Y,Z, not all zero")
    return "custom", v / np.linalg.norm(v)
