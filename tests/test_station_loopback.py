"""End to end on 127.0.0.1: ``garnav robot-sim`` and ``garnav station --headless`` as separate processes.

Arrival is judged against the dead-reckoning tolerance: the simulated robot's true end pose, from
its own truth file, must lie inside the 99.9 % region of the linearised end covariance of the plan
(``propagate_covariance``), the region's size taken from the χ² quantile of scipy.stats (2 degrees
of freedom) — an oracle the project did not write.
"""

from __future__ import annotations

import json
import math
import subprocess
import sys

import numpy as np
import pytest
from scipy.stats import chi2

from link_scenes import free_port, noisy_two_panels, write_spec

from garnav.export.commands import CommandList
from garnav.link.protocol import ops_to_commands
from garnav.telemetry.logfile import read_truth
from garnav.uncertainty.model import OdometryModel
from garnav.uncertainty.plan_ops import compile_commands
from garnav.uncertainty.propagate import propagate_covariance

GARNAV = [sys.executable, "-m", "garnav"]


def start_robot(spec, port, tmp_path, name, start, *, speedup=20.0, extra=()):
    log, truth = tmp_path / f"{name}.sim.jsonl", tmp_path / f"{name}.truth.csv"
    proc = subprocess.Popen(GARNAV + ["robot-sim", "--listen", f"udp://127.0.0.1:{port}", "--garment", str(spec),
                                      "--start", start, "--heading", "0", "--speedup", str(speedup), "--seed", "4",
                                      "--max-seconds", "60", "--quit-after-silence", "1.5", "--name", name,
                                      "--log", str(log), "--truth", str(truth), *extra],
                            stdout=subprocess.PIPE, stderr=subprocess.STDOUT, text=True)
    return proc, log, truth


def run_station(spec, robots: dict, goals: dict, tmp_path, *extra, timeout=90):
    log = tmp_path / "run.jsonl"
    args = GARNAV + ["station", str(spec), "--headless", "--until-arrived", "--log", str(log), "--no-cache",
                     "--timeout", "40"]
    for name, port in robots.items():
        args += ["--robot", f"{name}=udp://127.0.0.1:{port}"]
    for name, point in goals.items():
        args += ["--goto", f"{name}:{point}"]
    done = subprocess.run(args + list(extra), capture_output=True, text=True, timeout=timeout)
    return done, [json.loads(line) for line in log.read_text().splitlines()]


def finish(procs):
    outs = []
    for p in procs:
        try:
            out, _ = p.communicate(timeout=20)
        except subprocess.TimeoutExpired:
            p.kill()
            out, _ = p.communicate()
        outs.append(out)
    return outs


def jsonl(path):
    return [json.loads(line) for line in path.read_text().splitlines()]


def check_arrival_within_dead_reckoning(records, truth_path, robot="ada"):
    """The true end lies in the 99.9 % region of the plan's propagated end covariance."""
    garment = noisy_two_panels()
    sent = [r["msg"] for r in records if r.get("robot") == robot and r.get("dir") == "tx" and r["msg"]["t"] == "commands"]
    msg = sent[-1]
    s = msg["start"]
    from garnav.export.commands import Start

    cl = CommandList(ops_to_commands(msg["ops"]), side=msg["side"], start=Start(s["piece"], s["x_mm"], s["y_mm"], s["heading_deg"]))
    plan = compile_commands(garment, cl, garment.robot)
    cov = propagate_covariance(plan, garment.robot.odometry or OdometryModel()).end[:2, :2]
    truth = read_truth(truth_path)
    piece, x, y, _ = plan.end
    assert truth.piece[-1] == piece
    d = np.array([truth.x_mm[-1] - x, truth.y_mm[-1] - y])
    m2 = float(d @ np.linalg.solve(cov, d))
    assert m2 <= chi2.ppf(0.999, 2), (d, cov)  # observed: see the callers
    return math.hypot(*d), m2


@pytest.mark.slow
def test_goto_a_landmark_over_udp_loopback(tmp_path):
    spec = write_spec(tmp_path)
    port = free_port()
    proc, sim_log, truth = start_robot(spec, port, tmp_path, "ada", "left:60,200")
    done, records = run_station(spec, {"ada": port}, {"ada": "right_centre"}, tmp_path)
    (sim_out,) = finish([proc])
    assert done.returncode == 0, done.stdout + done.stderr + sim_out
    assert done.stdout.splitlines()[0] == "Safety cautions:" and "no authentication" in done.stdout
    # the log holds the commands, their ack, telemetry of that plan, then done — in that order
    msgs = [r for r in records if "msg" in r]
    i_cmd = next(i for i, r in enumerate(msgs) if r["dir"] == "tx" and r["msg"]["t"] == "commands")
    cmd_seq = msgs[i_cmd]["msg"]["seq"]
    i_ack = next(i for i, r in enumerate(msgs) if r["dir"] == "rx" and r["msg"]["t"] == "ack" and r["msg"]["ack"] == cmd_seq)
    i_tel = next(i for i, r in enumerate(msgs) if r["msg"]["t"] == "telemetry" and r["msg"]["plan"] == 1)
    i_done = next(i for i, r in enumerate(msgs) if r["dir"] == "rx" and r["msg"]["t"] == "done")
    assert i_cmd < i_ack < i_done and i_cmd < i_tel < i_done
    telemetry = [r["msg"]["seq"] for r in msgs if r["msg"]["t"] == "telemetry"]
    assert telemetry == sorted(telemetry)  # delivered in order (stale ones dropped)
    # the robot's own log: it acknowledged exactly that message
    sim = [r for r in jsonl(sim_log) if "msg" in r]
    assert any(r["dir"] == "tx" and r["msg"]["t"] == "ack" and r["msg"]["ack"] == cmd_seq for r in sim)
    events = [r["event"] for r in records if "event" in r]
    assert events[:2] == ["connected", "plan_sent"] and events[-1] == "finished"
    dist, m2 = check_arrival_within_dead_reckoning(records, truth)
    # observed: the true end 5.2 mm from the planned one, Mahalanobis² 1.5 (limit 13.8)
    assert dist < 20.0


@pytest.mark.slow
def test_twenty_percent_loss_recovers_or_stops_safely(tmp_path):
    spec = write_spec(tmp_path)
    port = free_port()
    proc, sim_log, truth = start_robot(spec, port, tmp_path, "ada", "left:60,200",
                                       extra=("--loss", "0.2", "--reorder", "0.05", "--loss-seed", "7"))
    done, records = run_station(spec, {"ada": port}, {"ada": "right_centre"}, tmp_path,
                                "--loss", "0.2", "--reorder", "0.05", "--loss-seed", "8")
    (sim_out,) = finish([proc])
    sim = jsonl(sim_log)
    # loss happened: of the telemetry the robot sent, about a fifth never arrived
    first = min(r["wall_s"] for r in records if "msg" in r and r["msg"]["t"] == "telemetry")
    last = max(r["wall_s"] for r in records if "msg" in r and r["msg"]["t"] == "telemetry")
    sent = sum(1 for r in sim if "msg" in r and r["dir"] == "tx" and r["msg"]["t"] == "telemetry"
               and first - 0.01 <= r["wall_s"] <= last)
    got = sum(1 for r in records if "msg" in r and r["dir"] == "rx" and r["msg"]["t"] == "telemetry")
    assert 0.6 * sent < got < 0.95 * sent, (got, sent)
    # the robot ran each plan once, whatever arrived twice
    loads = [r for r in sim if "msg" in r and r["dir"] == "rx" and r["msg"]["t"] == "commands"]
    assert len(loads) == 1
    if done.returncode == 0:  # recovered: arrived like without loss
        check_arrival_within_dead_reckoning(records, truth)
    else:  # stopped safely: every robot acknowledged the stop and stands
        assert done.returncode == 1, done.stdout + done.stderr + sim_out
        assert any(r.get("event") == "stop_acked" for r in records)
        states = [r["state"] for r in sim if "state" in r]
        assert states[-1] in ("stopped", "idle")
    # observed: recovered (exit 0) in every run, 0-3 resends, 82 of 99 and 98 of 119 samples arrived


@pytest.mark.slow
def test_emergency_stop_stops_every_robot_within_one_telemetry_period(tmp_path):
    spec = write_spec(tmp_path)
    ports = {"ada": free_port(), "bea": free_port()}
    procs = [start_robot(spec, ports["ada"], tmp_path, "ada", "left:60,100", speedup=1.0),
             start_robot(spec, ports["bea"], tmp_path, "bea", "right:60,300", speedup=1.0)]
    done, records = run_station(spec, ports, {"ada": "left:240,100", "bea": "right:240,300"}, tmp_path,
                                "--stop-after", "1.5")
    outs = finish([p for p, _, _ in procs])
    assert done.returncode == 1, done.stdout + done.stderr + "".join(outs)  # not arrived: stopped on request
    assert any(r.get("event") == "fleet_schedule" for r in records)  # several robots: the fleet planner
    stop_sent = {r["robot"]: r["wall_s"] for r in records if r.get("event") == "stop_sent"}
    assert set(stop_sent) == {"ada", "bea"}
    period = 0.1  # s: 10 Hz telemetry, real time (speedup 1)
    for name, (_, sim_log, _) in zip(("ada", "bea"), procs, strict=True):
        sim = jsonl(sim_log)
        k = next(i for i, r in enumerate(sim) if r.get("event") == "stopped")
        stopped = sim[k]
        # the stop reached the robot within one period of the station sending it (observed 1.6 ms)
        assert stopped["wall_s"] - stop_sent[name] < period
        after = [r for r in sim[k + 1:] if "truth" in r and "event" not in r]
        assert after and all(r["state"] == "stopped" for r in after)
        # no motion after the stop arrived: the next sample (one period later) is where it stood
        assert all(r["truth"] == stopped["truth"] for r in after)
        moved = [r for r in sim[:k] if "truth" in r and "event" not in r and r["state"] == "driving"]
        assert moved, "the robot was driving when the stop came"
