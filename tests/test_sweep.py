"""Sweeps: spec parsing, saturation current against independent root-finds,
warm starts against cold solves, and the executor not changing results."""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
from figures import assert_drawn
from scipy.constants import mu_0
from scipy.optimize import brentq

from magcheck.analytic.bh import LinearMaterial
from magcheck.analytic.materials import builtin
from magcheck.compare.front.cli import main
from magcheck.compare.errors import CaseError
from magcheck.compare.models.hand import run_hand
from magcheck.compare.design.case import with_current
from magcheck.compare.judge.margins import hand_saturation_current, saturation_from_curve
from magcheck.compare.studies.sweep import (case_source, make_case, parse_vary, run_block,
                                            run_sweep, scale_law, sweep_margins)

CASES = Path(__file__).resolve().parents[1] / "cases"
CHOKE = CASES / "demo_choke.toml"

# A coarse FE mesh keeps these tests fast; what they check (warm vs cold
# start, executors) does not depend on the mesh.
COARSE = '[fe]\nmesh_size = "3 mm"\ngap_elements = 2\n'


def coarse_choke(tmp_path: Path, extra: str = "") -> Path:
    text = CHOKE.read_text().replace("[fe]\n", COARSE) + extra
    p = tmp_path / "choke.toml"
    p.write_text(text)
    return p


# --------------------------------------------------------------------------- specs
def test_range_and_list_specs():
    s = parse_vary("winding.current=0:20A:41")
    assert s.key == "winding.current" and len(s.values) == 41
    assert s.values[0] == 0.0 and s.values[-1] == 20.0 and s.values[1] == pytest.approx(0.5)
    g = parse_vary("gaps[0].length=0.5mm,0.8mm,1.2mm")
    assert g.values == pytest.approx((0.5e-3, 0.8e-3, 1.2e-3), rel=1e-12)
    # a unit on one item applies to the items without one
    assert parse_vary("gaps[0].length=0.5,0.8mm").values == pytest.approx((0.5e-3, 0.8e-3))
    assert parse_vary("winding.turns=60:100:5").values == (60, 70, 80, 90, 100)
    # no unit anywhere: SI, as an unquoted number in a case file
    assert parse_vary("gaps[0].length=0.0005:0.003:2").values == pytest.approx((5e-4, 3e-3))


@pytest.mark.parametrize("spec, words", [
    ("winding.current=0:20X:41", "unknown unit"),
    ("winding.current=0:20mm:41", "not a current"),
    ("winding.curent=0:20A:41", "did you mean 'current'"),
    ("winding.current=0:20A", "start:stop:count"),
    ("winding.current", "KEY=SPEC"),
    ("fe.tol=1e-6,1e-7", "cannot vary"),
    ("winding.turns=1:2:3", "whole numbers"),
])
def test_bad_spec_names_it(spec, words):
    with pytest.raises(CaseError) as exc:
        parse_vary(spec)
    assert spec in str(exc.value) and words in str(exc.value)


def test_bad_spec_exit_2_one_line(capsys):
    assert main(["sweep", str(CHOKE), "--vary", "winding.current=0:20X:41"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "winding.current=0:20X:41" in err[0] and "Traceback" not in err[0]


def test_swept_value_validated_like_case_input(capsys):
    # 13 mm is longer than the 12 mm limb width: the case file would reject it.
    assert main(["sweep", str(CHOKE), "--hand-only",
                 "--vary", "gaps[0].length=0.6mm,13mm"]) == 2
    err = capsys.readouterr().err
    assert "gaps[0].length" in err and "'13 mm'" in err  # in the sweep's unit, not bare metres


# --------------------------------------------------------------------------- B-H scaling
def test_scale_law_acts_on_polarisation():
    law = builtin("demo-sisteel")
    k_h, k_b = 1.1, 0.95
    s = scale_law(law, k_h, k_b)
    h = np.array([10.0, 100.0, 1e3, 1e4, 1e5])
    # Source: exact, by the definition in compare.studies.sweep.scale_law:
    # B_new(H) = mu0 H + k_b (B(H/k_h) - mu0 H/k_h).
    expect = mu_0 * h + k_b * (law.b_of_h(h / k_h) - mu_0 * h / k_h)
    # 2e-6: the curve is rebuilt by monotone cubic interpolation through the
    # scaled table; between knots the two interpolants differ slightly (by at
    # most 1.1e-6 relative over H = 1 A/m .. 1 MA/m, measured on a dense grid).
    assert np.allclose(s.b_of_h(h), expect, rtol=2e-6, atol=0.0)
    assert np.allclose(s.b_of_h(law.h_points[1:] * k_h),
                       mu_0 * law.h_points[1:] * k_h + k_b * (law.b_points[1:] - mu_0 * law.h_points[1:]),
                       rtol=1e-9)  # at the knots the table is reproduced to round-off
    lin = scale_law(LinearMaterial(2001.0), 2.0, 1.0)
    assert lin.mu_r == pytest.approx(1001.0, rel=1e-12)  # exact: 1 + k_b (mu_r - 1)/k_h


# --------------------------------------------------------------------------- saturation
def test_saturation_from_curve_exact_function():
    # L(I) = L0 / (1 + (I/I0)^2): L falls by d at I = I0 sqrt(d/(1-d)).
    L0, I0 = 3e-3, 7.0
    i = np.linspace(0, 30, 601)
    sat = saturation_from_curve(i, L0 / (1 + (i / I0) ** 2), (0.1, 0.2, 0.3))
    for d, val in sat.items():
        # Source: exact solution of the test function above.
        exact = I0 * math.sqrt(d / (1 - d))
        # 0.05 A grid: linear interpolation error <= h^2/8 |L''|/|L'| ~ 1e-4 relative.
        assert val == pytest.approx(exact, rel=1e-3)
    assert math.isnan(saturation_from_curve([0, 1], [1.0, 0.99], (0.1,))[0.1])


def _independent_hand_root(case, drop: float) -> float:
    """Root of L_inc(I) = (1 - drop) L_inc(0) on the 3D hand model, by bisection
    bracket from a scan; written apart from compare.judge.margins."""
    def L(i):
        return run_hand(with_current(case, i)).incremental_inductance

    target = (1 - drop) * L(0.0)
    grid = np.linspace(0.0, 20.0, 11)
    vals = [L(i) - target for i in grid]
    k = next(j for j in range(1, len(grid)) if vals[j] < 0)
    return brentq(lambda i: L(i) - target, grid[k - 1], grid[k], xtol=1e-10)


@pytest.mark.slow
def test_hand_saturation_current_against_independent_root():
    src, case = case_source(CHOKE)
    for drop in (0.1, 0.3):
        ref = _independent_hand_root(case, drop)
        # Source: independent root-find on the hand model's own L(I) curve.
        # Both solve the same equation to <= 1e-6 relative.
        assert hand_saturation_current(case, drop) == pytest.approx(ref, rel=1e-5)


@pytest.mark.slow
def test_hand_sweep_saturation_current(tmp_path):
    src, case = case_source(CHOKE)
    res = run_sweep(src, [parse_vary("winding.current=0:20A:41")], with_fe=False)
    assert [p.current for p in res.points] == pytest.approx(np.linspace(0, 20, 41))
    _, table = sweep_margins(res, (0.1, 0.2, 0.3))
    row = next(r for r in table if r["model"] == "hand")
    for drop in (0.1, 0.2, 0.3):
        ref = _independent_hand_root(case, drop)
        # Source: independent root-find on the hand model's L(I).
        # 2 %: the sweep reads the crossing by linear interpolation on a 0.5 A
        # grid; L(I) bends over a few amperes near the knee (measured ~0.6 %).
        assert row[f"{100 * drop:g}%"] == pytest.approx(ref, rel=0.02)


@pytest.mark.slow
def test_sweep_margins_judge_declared_limits(tmp_path):
    extra = ('\n[[margins.saturation_current]]\ndrop_pct = 20\nmin = "5 A"\n'
             '\n[[margins.saturation_current]]\ndrop_pct = 10\nmin = "9 A"\n')
    p = tmp_path / "c.toml"
    p.write_text(CHOKE.read_text() + extra)
    src, case = case_source(p)
    res = run_sweep(src, [parse_vary("winding.current=0:12A:25")], with_fe=False)
    margins, _ = sweep_margins(res)
    by = {m.key: m for m in margins}
    ref20 = _independent_hand_root(case, 0.2)
    ref10 = _independent_hand_root(case, 0.1)
    m20, m10 = by["saturation_current@20%"], by["saturation_current@10%"]
    # Source: independent root-find; 2 % for the 0.5 A grid interpolation.
    assert m20.value == pytest.approx(ref20, rel=0.02) and m20.verdict == "pass"
    assert m20.margin_pct == pytest.approx(100 * (m20.value - 5.0) / 5.0, rel=1e-12)
    assert m10.value == pytest.approx(ref10, rel=0.02) and m10.verdict == "FAIL"
    assert main(["sweep", str(p), "--hand-only", "--vary", "winding.current=0:12A:25"]) == 1


# --------------------------------------------------------------------------- FE sweeps
@pytest.fixture(scope="module")
def fe_src(tmp_path_factory):
    p = coarse_choke(tmp_path_factory.mktemp("fe"))
    return case_source(p)[0]


FE_SPEC = "winding.current=2A,4A,8A,10A"
# Half-ampere steps through the knee of the B-H curve, as in a 41-point sweep.
WARM_SPEC = "winding.current=7A,7.5A,8A,8.5A"


@pytest.mark.slow
def test_warm_start_matches_cold_and_predicts_better(fe_src):
    spec = [parse_vary(WARM_SPEC)]
    cold = run_sweep(fe_src, spec, predictor="none", workers=1)
    prev = run_sweep(fe_src, spec, predictor="previous", workers=1)
    warm = run_sweep(fe_src, spec, predictor="tangent", workers=1)
    assert cold.converged and warm.converged and prev.converged
    for a, b in zip(cold.points, warm.points):
        for k in ("flux_linkage", "inductance", "incremental_inductance", "energy"):
            # Newton stops at relative residual 1e-8 (the case's [fe] tol) from
            # either start; the error in A is bounded by the residual times the
            # tangent's condition, so quantities from the two starts agree to
            # ~1e-6 relative, far below the FE discretisation error (~1 %).
            assert b.fe[k] == pytest.approx(a.fe[k], rel=1e-6), k
        assert b.fe_peak_B == pytest.approx(a.fe_peak_B, rel=1e-6)
    assert warm.points[0].start == "cold" and warm.points[0].first_residual == 1.0
    # After the first point, Newton starts from the tangent prediction
    # A + dI dA/dI (a stalled run would be retried cold and say so). The
    # prediction is first-order accurate in dI, the previous solution only
    # zeroth-order: its starting residual must be the smaller, and far below
    # a cold start's 1.
    for p_prev, p_tan in zip(prev.points[1:], warm.points[1:]):
        if p_tan.start == "tangent":
            assert p_tan.first_residual < 0.5 * p_prev.first_residual < 0.5


@pytest.mark.slow
def test_processes_equal_serial(fe_src):
    spec = [parse_vary(FE_SPEC)]
    serial = run_sweep(fe_src, spec, workers=1, block=3)
    par = run_sweep(fe_src, spec, workers=2, block=3)
    assert par.executor == "processes" and par.workers == 2
    # Every point converges on this mesh (2..10 A, warm starts in blocks of 3);
    # a stalled point would leave nothing to compare, so it fails the test.
    assert [p.converged for p in serial.points] == [True] * 4
    assert [p.converged for p in par.points] == [True] * 4
    for a, b in zip(serial.points, par.points):
        assert a.index == b.index and a.settings == b.settings
        assert a.start == b.start  # same blocks: the same warm-start sequence
        for k in ("inductance", "incremental_inductance", "energy"):
            # Same blocks, same warm-start sequence; only the AMG setup's
            # random start vector differs, inside the Newton tolerance (1e-8).
            assert b.fe[k] == pytest.approx(a.fe[k], rel=1e-6), k


@pytest.mark.slow
def test_sweep_cli_outputs(tmp_path):
    p = coarse_choke(tmp_path)
    out = tmp_path / "o"
    code = main(["sweep", str(p), "--vary", "winding.current=0:8A:3", "--workers", "1",
                 "--csv", str(out / "s.csv"), "--json", str(out / "s.json"),
                 "--plots", str(out / "fig")])
    assert code == 0
    import json

    data = json.loads((out / "s.json").read_text())
    assert len(data["points"]) == 3 and data["converged"] is True
    assert len((out / "s.csv").read_text().splitlines()) == 4
    for name in ("sweep_inductance.png", "sweep_flux_linkage.png", "sweep_core_B.png"):
        assert (out / "fig" / name).read_bytes()[:4] == b"\x89PNG"
        assert_drawn(out / "fig" / name)
    # The CSV and the JSON say the same (round trip of the point table).
    import csv

    # The CSV header gives each column's unit ("fe_inductance [H]"); its values
    # are the JSON's to 12 significant digits (tolerance: half a unit in the 12th digit).
    rows = [{k.split(" [")[0]: v for k, v in r.items()}
            for r in csv.DictReader((out / "s.csv").open())]
    for r, pj in zip(rows, data["points"]):
        for k in ("fe_inductance", "hand_incremental_inductance", "fe_peak_B", "fe_3d_inductance"):
            assert float(r[k]) == pytest.approx(pj[k], rel=5e-12)
    # Secant inductance is flux linkage over current at every point.
    p2 = data["points"][2]
    assert p2["fe_inductance"] == pytest.approx(p2["fe_flux_linkage"] / 8.0, rel=1e-12)


def test_failed_point_reported_not_raised(fe_src, monkeypatch):
    from magcheck.compare.models import fe as fe_mod
    from magcheck.compare.errors import RunError
    from magcheck.compare.studies.sweep import plan_sweep

    tasks = plan_sweep(fe_src, [parse_vary("winding.current=2A,4A")])

    def boom(*a, **k):
        raise RunError("field solve did not converge: test")

    monkeypatch.setattr(fe_mod, "solve_case_full", boom)
    pts = run_block(tasks[0])
    assert [p.converged for p in pts] == [False, False]
    assert "did not converge" in pts[0].message


def test_make_case_applies_b_h_scale(fe_src):
    case = make_case(fe_src, {"materials.core.scale_B": 0.9})
    law = case.material("core").law
    base = make_case(fe_src, {}).material("core").law
    assert law.b_max == pytest.approx(mu_0 * base.h_max + 0.9 * (base.b_max - mu_0 * base.h_max),
                                      rel=1e-12)  # exact: definition of the scaling


# --------------------------------------------------------------------------- depth model
def _stand_in_fe(monkeypatch, values: dict) -> None:
    """Replace the sweep's mesh and field solve by fixed planar FE values."""
    import types

    from magcheck.compare.models import fe as fe_mod

    def solve_case_full(case, mesh, **kw):
        q = types.SimpleNamespace(values=dict(values), force_values={}, magnet_values={},
                                  peak_B=1.0, iterations=1, ndofs=1)
        sol = types.SimpleNamespace(A=np.zeros(1), residual_history=[1.0])
        return types.SimpleNamespace(quantities=q, solution=sol, dA_dI=None)

    monkeypatch.setattr(fe_mod, "mesh_case", lambda case, **kw: object())
    monkeypatch.setattr(fe_mod, "solve_case_full", solve_case_full)


def test_sweep_fe_3d_inductance_equals_check(monkeypatch):
    """A sweep point's FE 3D inductance is the number `magcheck check` shows
    for the same case and the same planar FE values: the depth model ranked
    against the point's FE (compare.judge.check.choose_depth_model), not the case's
    own fringing model.  The stand-in FE is the "flux-tube" model's planar
    hand values with the inductance 1 % off, so the ranking picks a model
    other than the case's ("area") and the two rules give different numbers."""
    import types

    from magcheck.compare.judge.check import depth_correction, rank_fringing
    from magcheck.compare.studies.sweep import _fe_3d, plan_sweep, sweep_rows

    src = case_source(CHOKE)[0]
    case = make_case(src, {"winding.current": 6.0})
    assert case.hand.fringing == "area"
    fe_vals = dict(run_hand(case, fringing="flux-tube", planar=True).values())
    fe_vals["inductance"] *= 1.01
    _stand_in_fe(monkeypatch, fe_vals)
    tasks = plan_sweep(src, [parse_vary("winding.current=6A")])
    (p,) = run_block(tasks[0])
    # what run_check does with the same FE values (its FE 3D inductance row:
    # FE x depth.factor("inductance"))
    depth = depth_correction(case, rank_fringing(case, types.SimpleNamespace(values=fe_vals)))
    check_l3d = fe_vals["inductance"] * depth.factor("inductance")
    assert depth.model == "flux-tube" and p.depth_model == depth.model and p.depth_basis == "FE"
    # Same model, same hand solves to Newton's rtol 1e-10 (warm starts only
    # change the iterate, not the converged value): 1e-9 relative.
    assert p.fe["inductance"] * _fe_3d(p, "inductance") == pytest.approx(check_l3d, rel=1e-9)
    assert p.depth_factor == pytest.approx(depth.factor("inductance"), rel=1e-9)
    res = types.SimpleNamespace(points=(p,), with_fe=True)
    (row,) = sweep_rows(res)  # type: ignore[arg-type]
    assert row["depth_model"] == "flux-tube"
    assert row["fe_3d_inductance"] == pytest.approx(check_l3d, rel=1e-9)
    # the case's own model would give another number (what the test tells apart)
    own = run_hand(case, planar=True), run_hand(case)
    k_own = own[1].inductance / own[0].inductance
    assert abs(k_own / depth.factor("inductance") - 1) > 1e-4


def test_hand_only_sweep_keeps_the_case_model():
    """Without FE values a point keeps the case's own fringing model for the
    depth correction, and says so (``depth_basis`` "case")."""
    from magcheck.compare.studies.sweep import sweep_rows

    src = case_source(CHOKE)[0]
    res = run_sweep(src, [parse_vary("winding.current=2A,6A")], with_fe=False)
    for p, row in zip(res.points, sweep_rows(res)):
        case = make_case(src, p.settings)
        k = run_hand(case).inductance / run_hand(case, planar=True).inductance
        assert (p.depth_model, p.depth_basis) == ("area", "case")
        assert (row["depth_model"], row["depth_basis"]) == ("area", "case")  # the JSON/CSV row
        assert p.depth_factor == pytest.approx(k, rel=1e-9)


# --------------------------------------------------------------------------- the CSV
def _significant_digits(cell: str) -> int:
    mantissa = cell.lstrip("+-").lower().split("e")[0].replace(".", "").lstrip("0")
    return len(mantissa.rstrip("0")) or 1


def test_sweep_csv_header_units_and_no_float_noise(tmp_path, capsys):
    """The sweep CSV: the JSON's point keys in their order, each with its SI
    unit in brackets; values the JSON's rounded to 12 significant digits,
    so a gap of 0.4 mm reads 0.0004, not 0.00039999999999999996."""
    import csv
    import json

    code = main(["sweep", str(CHOKE), "--vary", "gaps[0].length=0.2mm:0.6mm:5",
                 "--vary", "winding.current=0.1:0.3:3", "--hand-only",
                 "--csv", str(tmp_path / "s.csv"), "--json", str(tmp_path / "s.json")])
    assert code == 0
    header, *rows = list(csv.reader((tmp_path / "s.csv").open()))
    points = json.loads((tmp_path / "s.json").read_text())["points"]
    assert header[:4] == ["index", "gaps[0].length [m]", "winding.current [A]", "hand_gap_B [T]"]
    names = [h.split(" [")[0] for h in header]
    assert names == list(points[0])  # the old header by position: the same columns in order
    units = dict(zip(names, (h[len(n) + 2:-1] for h, n in zip(header, names))))
    assert (units["hand_path_H"], units["hand_planar_flux"], units["hand_inductance"],
            units["hand_energy"], units["hand_planar_peak_B"]) == ("A/m", "Wb", "H", "J", "T")
    assert "depth_model" in header and "converged" in header and "index" in header  # no unit
    assert [r[1] for r in rows[::3]] == ["0.0002", "0.0003", "0.0004", "0.0005", "0.0006"]
    assert [r[2] for r in rows[:3]] == ["0.1", "0.2", "0.3"]
    floats = 0
    for r, pj in zip(rows, points, strict=True):
        for name, cell in zip(names, r, strict=True):
            v = pj[name]
            if isinstance(v, float):
                floats += 1
                assert float(cell) == float(f"{v:.12g}"), (name, cell, v)
                assert _significant_digits(cell) <= 12, (name, cell)
            else:
                assert cell == ("" if v is None else str(v)), (name, cell, v)
    assert floats > 200  # 15 points of 19 float columns were compared


def test_sweep_column_units_of_fe_and_other_keys():
    from magcheck.compare.outputs.serialize import sweep_column_unit

    fe = {"fe_inductance": "H", "fe_3d_inductance": "H", "fe_incremental_inductance": "H",
          "fe_peak_B": "T", "fe_seconds": "s", "fe_force_maxwell": "N",
          "fe_force_virtual_work": "N", "hand_force_pull": "N", "fe_newton_iterations": "",
          "fe_start": "", "message": "", "depth_basis": ""}
    for col, unit in fe.items():
        assert sweep_column_unit(col) == unit, col
    swept = ("core.stroke", "winding.turns", "materials.core.mu_r", "windings[0].voltage",
             "windings[0].frequency", "gaps[1].position")
    got = {k: sweep_column_unit(k, swept) for k in swept}
    assert got == {"core.stroke": "m", "winding.turns": "", "materials.core.mu_r": "",
                   "windings[0].voltage": "V", "windings[0].frequency": "Hz",
                   "gaps[1].position": "m"}
    assert sweep_column_unit("winding.current") == "A"  # always a column


def test_csv_cell_and_check_csv_without_float_noise():
    from types import SimpleNamespace

    from magcheck.compare.outputs.serialize import check_csv, csv_cell

    assert csv_cell(0.4e-3 * (1 + 1e-16)) == "0.0004"
    assert csv_cell(0.1 + 0.2) == "0.3"  # 0.30000000000000004
    assert csv_cell(3.0) == "3.0" and csv_cell(2.5e-6) == "2.5e-06" and csv_cell(-0.0) == "-0.0"
    assert csv_cell(123456789.0123456) == "123456789.012"
    assert csv_cell(float("nan")) == "" and csv_cell(None) == "" and csv_cell(7) == 7
    assert csv_cell(True) is True and csv_cell("pass") == "pass"
    row = {"quantity": "inductance", "hand": 0.002955234269967902, "fe": 0.1 + 0.2,
           "difference_pct": -13.814324783197069, "limit_value": None, "judges": "agreement"}
    res = SimpleNamespace(rows=[SimpleNamespace(to_dict=lambda: row)])
    assert check_csv(res).splitlines() == [
        "quantity,hand,fe,difference_pct,limit_value,judges",
        "inductance,0.00295523426997,0.3,-13.8143247832,,agreement"]
