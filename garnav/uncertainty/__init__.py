"""Dead reckoning: the odometry error model, covariance propagation along a command list, a Monte
Carlo of the same model, contact risk, planning to a confidence, and UMBmark calibration.

* :mod:`~garnav.uncertainty.model` — :class:`OdometryModel` (``[robot.odometry]``).
* :mod:`~garnav.uncertainty.plan_ops` — a command list compiled into motion steps on the pattern.
* :mod:`~garnav.uncertainty.propagate` — linearised covariance propagation.
* :mod:`~garnav.uncertainty.montecarlo` — seeded, vectorised Monte Carlo and contact risk.
* :mod:`~garnav.uncertainty.confidence` — re-planning until a contact bound holds.
* :mod:`~garnav.uncertainty.calibrate` — UMBmark (Borenstein & Feng 1996).

See docs/uncertainty.md.
"""

from garnav.uncertainty.model import NOISE_FREE, OdometryModel, odometry_to_dict, parse_odometry

__all__ = ["NOISE_FREE", "OdometryModel", "odometry_to_dict", "parse_odometry"]
