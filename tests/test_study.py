"""Studies: the study file, graded sizes, the rows and their failure reasons, resume, the summary,
the report and the command (the Dask runs are in tests/test_study_cluster.py)."""

from __future__ import annotations

import dataclasses
import math
from pathlib import Path

import numpy as np
import pytest

from garnav.spec import load_garment
import shapely
import shapely.affinity

pa = pytest.importorskip("pyarrow")

import study_files as SF  # noqa: E402
from garnav.cli import main  # noqa: E402
from garnav.errors import GarnavError, SpecError  # noqa: E402
from garnav.plan import Planner  # noqa: E402
from garnav.study import (  # noqa: E402
    COLUMNS,
    GradingRule,
    grade_garment,
    load_study,
    loads_study,
    prepare_study,
    read_rows,
    run_prepared,
    run_study,
)
from garnav.study.results import done_chunks, part_path  # noqa: E402
from garnav.study.summary import summarise  # noqa: E402


@pytest.fixture
def small(tmp_path):
    return SF.write_study(tmp_path, SF.SMALL)


@pytest.fixture
def small_run(small):
    study = load_study(small)
    done = run_study(study, workers=1, progress=False)
    return study, done, read_rows(done.out)


# ----------------------------------------------------------------------------------- grading


def test_grading_rule_is_geometric_in_the_size_steps():
    # hand-worked: (1 + 4/100)^k for k = -1, 0, 2; the sleeve's own 3 % step overrides
    rule = GradingRule(("S", "M", "L", "XL"), "M", 4.0, (("sleeve", 3.0),))
    assert rule.factor("S") == pytest.approx(1 / 1.04, rel=1e-15)
    assert rule.factor("M") == 1.0
    assert rule.factor("XL") == pytest.approx(1.04**2, rel=1e-15)
    assert rule.factor("XL", "sleeve") == pytest.approx(1.03**2, rel=1e-15)
    assert not rule.uniform and GradingRule(("S", "M"), "M", 4.0).uniform


def test_graded_geometry_equals_shapely_affine_scaling():
    """Oracle: shapely.affinity.scale about the piece frame's origin, for pieces and keep-outs."""
    base = SF.panel_garment()
    s = 1.07
    graded = grade_garment(base, {"panel": s})
    ref = shapely.affinity.scale(base.piece("panel").polygon, s, s, origin=(0, 0))
    assert graded.piece("panel").polygon.symmetric_difference(ref).area < 1e-9  # observed 0.0
    for k0, k1 in zip(base.keepouts, graded.keepouts, strict=True):
        ref = shapely.affinity.scale(k0.shape.exact_geometry(), s, s, origin=(0, 0))
        assert k1.shape.exact_geometry().symmetric_difference(ref).area < 1e-6 * ref.area  # observed ~1e-13
        assert k1.clearance_mm == k0.clearance_mm  # the robot's margins do not grade
    m0, m1 = base.landmark("c"), graded.landmark("c")
    assert (m1.x, m1.y) == pytest.approx((m0.x * s, m0.y * s), abs=1e-12)
    assert graded.sheet_size_mm == pytest.approx((base.sheet_size_mm[0] * s, base.sheet_size_mm[1] * s))


def test_uniform_grading_with_a_scaled_robot_scales_route_lengths_exactly():
    """A similarity maps shortest paths among obstacles onto shortest paths (Euclidean geometry):
    with the robot's radius and margins scaled too, every route length scales by s."""
    base = SF.panel_garment()
    s = 1.1
    robot = base.robot
    big = dataclasses.replace(robot, radius_mm=robot.radius_mm * s, edge_margin_mm=robot.edge_margin_mm * s)
    r0 = Planner(base, robot).route("a", "c")
    r1 = Planner(grade_garment(base, {"panel": s}), big).route("a", "c")
    assert r1.length_mm == pytest.approx(s * r0.length_mm, rel=1e-9)  # observed ~1e-15


def test_uniformly_scaled_drape_stays_a_valid_isometric_drape(tmp_path):
    """Oracle: trimesh's area of the scaled mesh is s² times the base's; the linked drape's
    pattern → 3D Jacobian keeps singular values 1 (an isometry of the scaled pattern)."""
    import trimesh

    spec = SF.write_panel_spec(tmp_path)
    study = loads_study(f'format = "garnav-study"\nmeasures = ["length_3d"]\n[[garment]]\nspec = "{spec}"\n'
                        '[garment.grading]\nsizes = ["M", "XL"]\nbase = "M"\nstep_percent = 6.0\n[queries]\n'
                        'landmarks = ["a", "b"]\n', "t.toml", tmp_path)
    prepared = prepare_study(study)
    m, xl = prepared.inputs["panel@M"], prepared.inputs["panel@XL"]
    s = 1.06**1
    area = [trimesh.Trimesh(g.mesh("default").positions, g.mesh("default").faces, process=False).area for g in (m, xl)]
    assert area[1] == pytest.approx(s * s * area[0], rel=1e-12)
    from garnav.drape.drape import link_drape

    drape = link_drape(xl.garment, xl.mesh("default"))
    assert np.allclose(drape.singular_values, 1.0, atol=1e-9)  # observed ~1e-15


# ----------------------------------------------------------------------------------- the study file


def test_study_file_reports_every_problem_at_once(tmp_path):
    text = """format = "garnav-study"
colour = "red"
postures = ["upright", "supin"]
measures = ["length", "enrgy"]
chunk_size = 0
[[garment]]
label = "x"
[garment.grading]
sizes = ["S", "M"]
base = "L"
step_percent = 0.05e3
[queries]
pairs = [["a"]]
"""
    with pytest.raises(SpecError) as err:
        loads_study(text, "bad.toml", tmp_path)
    msg = str(err.value)
    for part in ("unknown key 'colour'", "unknown posture 'supin'", "did you mean 'supine'?",
                 "unknown measure 'enrgy'", "several postures", "chunk_size", "garment[0] spec",
                 "'L' is not one of the sizes", "step_percent", "queries pairs[0]"):
        assert part in msg, part
    assert msg.startswith("9 problems found") and "bad.toml" in msg  # unknown key, 2 postures, measure, chunk, spec, base, step, pair


def test_prepare_refuses_what_the_garments_and_robots_cannot_give(tmp_path):
    SF.write_panel_spec(tmp_path)
    (tmp_path / "plain.toml").write_text('format = "garnav-robot"\n[robot]\nname = "plain"\n', encoding="utf-8")
    text = """format = "garnav-study"
robots = ["spec", "plain.toml"]
measures = ["energy", "contact"]
[[garment]]
spec = "panel.toml"
poses = ["default", "arms_up"]
[[garment]]
spec = "DEMO"
label = "graded"
[garment.grading]
sizes = ["M", "L"]
base = "M"
step_percent = 5.0
piece_step_percent = { sleeve_left = 3.0, sleeve_right = 3.0 }
[queries]
landmarks = ["a", "elbow"]
"""
    demo = Path(__file__).resolve().parent.parent / "meshes" / "sensing_top.toml"
    with pytest.raises(SpecError) as err:
        prepare_study(loads_study(text.replace("DEMO", str(demo)), "s.toml", tmp_path))
    msg = str(err.value)
    for part in ("has no pose 'arms_up'", "robot 'plain'", "has no [robot.physics]", "has no [robot.odometry]",
                 "no landmark 'elbow'", "per-piece grading has no drape"):
        assert part in msg, part


def test_random_queries_are_seeded_and_free(tmp_path):
    SF.write_panel_spec(tmp_path)
    text = ('format = "garnav-study"\n[[garment]]\nspec = "panel.toml"\n[queries]\nordered = false\n'
            'random = { per_piece = 6, seed = 3, max_pairs = 9 }\n')
    a = prepare_study(loads_study(text, "r.toml", tmp_path))
    b = prepare_study(loads_study(text, "r.toml", tmp_path))
    cases = [c for ch in a.chunks for c in ch.cases]
    assert len(cases) == 9 and cases == [c for ch in b.chunks for c in ch.cases]
    planner = Planner(SF.panel_garment())
    for c in cases:  # every drawn point is a place the robot can stand
        for text_point in (c.start, c.goal):
            assert planner.point(text_point) is not None


# ----------------------------------------------------------------------------------- rows


def test_rows_have_every_column_and_the_reasons_of_failures(small_run):
    study, done, table = small_run
    assert table.column_names == [n for n, _, _ in COLUMNS]
    assert done.cases == table.num_rows == 2 * 2 * 10  # sizes × postures × landmark pairs
    assert done.builds == 2  # one planner per (size, robot), answering every chunk of it
    rows = table.to_pylist()
    by = {(r["size"], r["posture"], r["start"], r["goal"]): r for r in rows}
    pocket = by[("M", "upright", "a", "in_pocket")]
    assert pocket["status"] == "bad_point" and pocket["blocker"] == "keep-out 'pocket'"
    assert "inside keep-out 'pocket'" in pocket["reason"]
    top = by[("M", "upright", "a", "top")]
    assert top["status"] == "no_route" and "keep-out 'wall'" in top["blocker"].split(";")
    assert top["length_mm"] is None and top["energy_j"] is None
    assert {r["status"] for r in rows} == {"ok", "bad_point", "no_route"}


def test_ok_rows_agree_with_the_planner_and_the_energy_formula(small_run):
    """3D length on a plane equals the pattern length (a plane is an isometric drape); energy on the
    straight a → b route (no bends) is (P_drive + P_idle)·L/v + W·Δh/η with Δh = Δy·s·sin 20°
    (docs/physics.md's model; hand-worked here)."""
    study, done, table = small_run
    rows = [r for r in table.to_pylist() if r["status"] == "ok"]
    garment = SF.panel_garment()
    planner = Planner(garment)
    for r in rows:
        assert r["length_3d_mm"] == pytest.approx(r["length_mm"], rel=1e-9)  # observed ~1e-15
    ab = next(r for r in rows if (r["size"], r["posture"], r["start"], r["goal"]) == ("M", "upright", "a", "b"))
    assert ab["bends"] == "" and ab["method"] == "length-optimal"
    route = planner.route("a", "b")
    assert ab["length_mm"] == pytest.approx(route.length_mm, rel=1e-12)
    p = SF.ROBOT.physics
    rise_m = (60.0 - 40.0) * math.sin(math.radians(SF.SLOPE_DEG)) * 1e-3
    expected = p.power_w * route.length_mm / SF.ROBOT.speed_mm_s + p.weight_n * rise_m / p.drive_efficiency
    assert ab["energy_j"] == pytest.approx(expected, rel=1e-6)  # observed ~1e-12
    assert ab["time_s"] == pytest.approx(route.length_mm / SF.ROBOT.speed_mm_s, rel=1e-9)
    small_ab = next(r for r in rows if (r["size"], r["posture"], r["start"], r["goal"]) == ("S", "upright", "a", "b"))
    assert small_ab["length_mm"] == pytest.approx(route.length_mm / 1.05, rel=1e-9)  # a straight line scales


def test_contact_probability_is_the_monte_carlo_of_the_route(small_run):
    from garnav.export.commands import route_commands
    from garnav.study.cases import Case
    from garnav.study.worker import case_seed
    from garnav.uncertainty.montecarlo import RiskMap, monte_carlo
    from garnav.uncertainty.plan_ops import compile_commands

    study, _, table = small_run
    r = next(r for r in table.to_pylist() if (r["size"], r["posture"], r["start"], r["goal"]) == ("M", "upright", "a", "c"))
    garment, robot = SF.panel_garment(), SF.ROBOT
    route = Planner(garment, robot).route("a", "c")
    plan = compile_commands(garment, route_commands(route, garment, robot), robot)
    case = Case(r["case"], "panel@M", "tester", "default", "upright", "a", "c")
    mc = monte_carlo(plan, robot.odometry, RiskMap(garment, robot), runs=study.contact_runs, seed=case_seed(0, case))
    assert r["contact_probability"] == mc.probability()
    assert 0.0 < r["contact_probability"] < 1.0  # the wide start heading touches now and then


def test_a_weak_robot_gives_not_drivable_rows_naming_the_margin(tmp_path):
    SF.write_panel_spec(tmp_path)
    (tmp_path / "weak.toml").write_text(SF.WEAK_ROBOT, encoding="utf-8")
    text = ('format = "garnav-study"\nrobots = ["weak.toml"]\nmeasures = ["energy"]\n[[garment]]\n'
            'spec = "panel.toml"\n[queries]\npairs = [["a", "c"]]\n')
    study = loads_study(text, "w.toml", tmp_path)
    done = run_study(study, out=tmp_path / "out", workers=1, progress=False)
    (row,) = read_rows(done.out).to_pylist()
    assert row["status"] == "not_drivable" and row["robot"] == "weak"
    assert row["blocker"].startswith("piece 'panel': ") and "drive" in row["blocker"]
    assert "no drivable route" in row["reason"]


# ----------------------------------------------------------------------------------- resume


def test_resume_computes_only_the_missing_chunks(small_run, small):
    study, done, table = small_run
    with pytest.raises(GarnavError, match="add --resume"):
        run_study(study, workers=1, progress=False)
    lost = sorted(done_chunks(done.out))[1:3]
    for cid in lost:
        part_path(done.out, cid).unlink()
    again = run_study(study, workers=1, progress=False, resume=True)
    assert again.computed == 10 and again.skipped == done.cases - 10  # two chunks of 5
    assert read_rows(done.out).equals(table)
    changed = dataclasses.replace(study, contact_runs=60)
    with pytest.raises(GarnavError, match="different study"):
        run_prepared(prepare_study(changed), out=done.out, workers=1, progress=False, resume=True)


# ----------------------------------------------------------------------------------- summary and report


def test_summary_counts_agree_with_pyarrow_group_by(small_run):
    """Oracle: pyarrow's own group_by aggregation for case and feasible counts per group."""
    import pyarrow.compute as pc

    _, _, table = small_run
    s = summarise(table)
    keys = ["garment", "size", "pose", "posture", "robot"]
    total = table.group_by(keys).aggregate([("case", "count")]).to_pylist()
    ok = table.filter(pc.equal(table["status"], "ok")).group_by(keys).aggregate([("case", "count")]).to_pylist()
    ref_total = {tuple(r[k] for k in keys): r["case_count"] for r in total}
    ref_ok = {tuple(r[k] for k in keys): r["case_count"] for r in ok}
    for g in s["groups"]:
        key = tuple(g[k] for k in keys)
        assert g["cases"] == ref_total[key] and g["feasible"] == ref_ok.get(key, 0)
        assert g["feasible_fraction"] == pytest.approx(ref_ok.get(key, 0) / ref_total[key])
        lengths = [r["length_mm"] for r in table.to_pylist() if tuple(r[k] for k in keys) == key and r["status"] == "ok"]
        assert g["length_mm"]["median"] == pytest.approx(float(np.median(lengths)))
    assert dict(s["blockers"])["keep-out 'pocket'"] == 16  # 4 pairs with in_pocket × 2 sizes × 2 postures


def test_report_files_and_plots(small_run):
    import matplotlib.image

    from garnav.study.report import REPORT_FILES, write_report

    _, done, _ = small_run
    write_report(done.out, "small")
    for name in REPORT_FILES:
        assert (done.out / name).stat().st_size > 0
    img = matplotlib.image.imread(done.out / "feasibility_pairs.png")
    assert img.ndim == 3 and img.shape[0] > 200
    md = (done.out / "summary.md").read_text(encoding="utf-8")
    assert "## What blocks the failed cases" in md and "keep-out 'pocket'" in md and "certifies nothing" in md
    assert "MRI rooms" in md  # the one caution text (garnav.cautions)


# ----------------------------------------------------------------------------------- command line


def test_cli_study_serial(small, capsys):
    assert main(["study", str(small), "--workers", "1", "--no-progress"]) == 0
    cap = capsys.readouterr()
    assert "40 cases, 40 planned in this process" in cap.out and "Safety cautions:" in cap.err
    assert (small.parent / "small-out" / "summary.md").exists()
    assert main(["study", str(small), "--workers", "1", "--no-progress"]) == 2
    assert "--resume" in capsys.readouterr().err


def test_cli_study_bad_input(tmp_path, capsys):
    bad = tmp_path / "bad.toml"
    bad.write_text('format = "garnav-study"\nmeasures = ["speed"]\n', encoding="utf-8")
    assert main(["study", str(bad), "--workers", "1"]) == 2
    err = capsys.readouterr().err
    assert "bad.toml" in err and "unknown measure 'speed'" in err and "Traceback" not in err
    assert main(["study", str(bad), "--workers", "0"]) == 2
    assert "--workers must be 1 or more" in capsys.readouterr().err


def test_missing_extra_says_how_to_install(monkeypatch):
    import importlib

    from garnav.study import extra

    real = importlib.import_module

    def fake(name, *args):
        if name == "pyarrow":
            raise ImportError("no pyarrow")
        return real(name, *args)

    monkeypatch.setattr(extra.importlib, "import_module", fake)
    with pytest.raises(GarnavError, match=r"pip install 'garnav\[cluster\]'"):
        extra.require("pyarrow")


def test_example_study_file_prepares():
    study = load_study(Path(__file__).resolve().parent.parent / "examples" / "study_sizes.toml")
    prepared = prepare_study(study)
    n = len(load_garment(Path(__file__).resolve().parent.parent / "meshes" / "sensing_top.toml").landmarks)
    assert prepared.n_cases == n * (n - 1) // 2 * 4 * 2  # the demo landmarks' pairs × sizes × postures
    xl = prepared.inputs["sensing_top@XL"]
    assert xl.scale == pytest.approx(1.04**2) and xl.mesh("default") is not None


def test_an_unexpected_error_is_recorded_and_the_command_exits_1(small, monkeypatch, capsys):
    from garnav.study import worker

    real = worker.CaseContext.point

    def broken(self, text, pose, role):
        if text == "b":
            raise RuntimeError("simulated fault")
        return real(self, text, pose, role)

    monkeypatch.setattr(worker.CaseContext, "point", broken)
    assert main(["study", str(small), "--workers", "1", "--no-progress", "--quiet"]) == 1
    assert "failed with an unexpected error" in capsys.readouterr().out
    rows = read_rows(small.parent / "small-out").to_pylist()
    errs = [r for r in rows if r["status"] == "error"]
    assert errs and all(r["reason"] == "RuntimeError: simulated fault" for r in errs)
    assert all("b" in (r["start"], r["goal"]) for r in errs)
