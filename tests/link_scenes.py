"""Shared by the link and station tests: a small garment with an odometry model, as a spec file."""

from __future__ import annotations

import dataclasses
import socket

import garments

from garnav.spec.writer import save_garment
from garnav.uncertainty.model import OdometryModel


def noisy_two_panels():
    """two_panels (300 × 400 mm pieces joined by seam 'middle') whose robot has the default
    (invented) odometry error model and drives at 40 mm/s."""
    g = garments.two_panels()
    robot = dataclasses.replace(g.robot, odometry=OdometryModel(), speed_mm_s=40.0, edge_margin_mm=2.0)
    return dataclasses.replace(g, robot=robot)


def write_spec(tmp_path, garment=None):
    path = tmp_path / "garment.toml"
    save_garment(garment or noisy_two_panels(), path)
    return path


def free_port() -> int:
    """A UDP port on 127.0.0.1 that is free right now."""
    with socket.socket(socket.AF_INET, socket.SOCK_DGRAM) as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]
