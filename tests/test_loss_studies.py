"""The loss budget along sweeps and in tolerance studies (compare.models.loss.point_budget,
compare.judge.lossbudget.sweep_loss_margins, compare.studies.tolerance.sample_loss_margins,
compare.outputs.plots.fig_sweep_loss): a point's budget is the check's at that operating
point, the sweep's margins name the worst and the first failing point, a sample's verdict
matches its value, and the figure draws the values and the limits."""

from __future__ import annotations

import json
import math
import shutil
from pathlib import Path

import numpy as np
import pytest

from magcheck.compare.judge.baseline import FE_RTOL_FLOOR, FE_UNC_CAP
from magcheck.compare.judge.lossbudget import sweep_loss_margins
from magcheck.compare.models import loss as ml
from magcheck.compare.studies.sweep import parse_vary, case_source, run_sweep, sweep_rows

CASES = Path(__file__).resolve().parents[1] / "cases"
BASELINE = json.loads((CASES / "baseline.json").read_text())
LOSS_DEMOS = {"demo_foil_choke": "winding.current", "demo_ei_transformer": "windings[0].voltage",
              "demo_ferrite_transformer": "windings[0].voltage"}


def _own_point_sweep(name: str, with_fe: bool):
    """A one-point sweep of a demo at its own operating point."""
    src, case = case_source(CASES / f"{name}.toml")
    key = LOSS_DEMOS[name]
    value = case.winding.current if key == "winding.current" else case.winding.voltage
    return run_sweep(src, [parse_vary(f"{key}={value!r}", where="vary")], with_fe=with_fe,
                     workers=1)


@pytest.mark.parametrize("name", sorted(LOSS_DEMOS))
def test_hand_sweep_point_budget_is_the_checks_at_its_operating_point(name):
    res = _own_point_sweep(name, with_fe=False)
    row = sweep_rows(res)[0]
    stored = BASELINE[name.replace("_", "-")]["loss"]
    assert set(stored["hand"]) <= {k[len("hand_loss_"):] for k in row if
                                   k.startswith("hand_loss_")}
    for key, value in stored["hand"].items():
        # Source: the check's own stored result (cases/baseline.json, written by
        # tools/update_baseline.py from magcheck check); the sweep point runs the same
        # hand formulas (models.loss.budget_entries) at the same operating point, and the
        # hand-only point takes the surface area from the layout, which for these
        # straight-sided parts is the mesh's box: equal to round-off.
        assert row[f"hand_loss_{key}"] == pytest.approx(value, rel=1e-9), key
        assert row[f"hand_planar_loss_{key}"] == pytest.approx(
            stored["hand_planar"][key], rel=1e-9), key


@pytest.mark.slow
@pytest.mark.parametrize("name", sorted(LOSS_DEMOS))
def test_fe_sweep_point_budget_is_the_checks_within_the_baseline_rule(name):
    res = _own_point_sweep(name, with_fe=True)
    row = sweep_rows(res)[0]
    stored = BASELINE[name.replace("_", "-")]["loss"]
    for key, value in stored["fe"].items():
        unc = stored["fe_uncertainty"][key]
        # Source: the check's stored FE result; the sweep solves the same case on the
        # case's own mesh (the check's finest), from its own Newton start: the baseline's
        # drift rule (compare.judge.baseline: 0.2 %, or twice the three-mesh uncertainty
        # capped at 1 %) bounds the difference.
        tol = max(FE_RTOL_FLOOR * abs(value),
                  min(2.0 * unc, FE_UNC_CAP * abs(value)) if math.isfinite(unc) else 0.0)
        assert abs(row[f"fe_loss_{key}"] - value) <= tol, (key, row[f"fe_loss_{key}"], value)
    # the FE 3D core loss is the planar FE times the hand's 3D / planar ratio (run_core_loss)
    ratio = row["hand_loss_core_loss"] / row["hand_planar_loss_core_loss"]
    assert row["fe_3d_loss_core_loss"] == pytest.approx(row["fe_loss_core_loss"] * ratio,
                                                        rel=1e-12)
    if name == "demo_foil_choke":  # an AC winding: the copper's 3D column takes R_dc's ratio
        assert ratio != pytest.approx(1.0, abs=0.05)
        r3 = row["hand_loss_copper_loss"] / row["hand_planar_loss_copper_loss"]
        assert row["fe_3d_loss_copper_loss"] == pytest.approx(row["fe_loss_copper_loss"] * r3,
                                                              rel=1e-12)


def _voltage_sweep():
    src, _ = case_source(CASES / "demo_ferrite_transformer.toml")
    return run_sweep(src, [parse_vary("windings[0].voltage=36:60V:5", where="vary")],
                     with_fe=False, workers=1)


def test_sweep_loss_margins_take_the_worst_and_name_the_first_failing_point():
    res = _voltage_sweep()
    margins = {m.key: m for m in res.margins()[0]}
    m = res.case.margins
    limits = {"total_loss": m.total_loss, "core_loss": m.core_loss,
              "efficiency": 100 * m.efficiency, "regulation": 100 * m.regulation,
              "temperature_rise": m.temperature_rise}
    pts = list(res.points)
    for key, limit in limits.items():
        r = margins[f"{key}:sweep"]
        vals = [p.hand[f"loss_{key}"] for p in pts]
        kind = "min" if key == "efficiency" else "max"
        assert r.kind == kind and r.limit == pytest.approx(limit, rel=1e-12)
        # the worst point: the largest value of a maximum, the smallest of a minimum
        assert r.value == (max(vals) if kind == "max" else min(vals))
        bad = [p for p, v in zip(pts, vals) if (v > limit if kind == "max" else v < limit)]
        if bad:
            where = ", ".join(f"{k} = {v:g}" for k, v in bad[0].settings.items())
            assert f"first fails at {where}" in r.note
            assert r.margin_pct < 0
        else:
            assert f"met at all {len(pts)} points" in r.note and r.margin_pct >= 0
    # the demo's 1 W core-loss limit is crossed inside the 36-60 V range (hand: 0.74 W at
    # 48 V, rising as V^beta): the highest voltage fails
    assert margins["core_loss:sweep"].margin_pct < 0


def test_sweep_loss_margin_names_the_first_failing_point_not_the_worst():
    src, case = case_source(CASES / "demo_ferrite_transformer.toml")
    res = run_sweep(src, [parse_vary("windings[0].voltage=40V,56V,62V,59V", where="vary")],
                    with_fe=False, workers=1)
    core = {m.key: m for m in res.margins()[0]}["core_loss:sweep"]
    vals = [p.hand["loss_core_loss"] for p in res.points]
    # 56, 62 and 59 V are above the 1 W limit (the hand's 0.74 W at 48 V times
    # (V/48)^beta), 40 V below: the worst is 62 V, the first failing in grid order 56 V
    assert [v > case.margins.core_loss for v in vals] == [False, True, True, True]
    assert core.value == vals[2]
    assert core.note == ("worst at windings[0].voltage = 62; "
                         "first fails at windings[0].voltage = 56")


def test_sweep_without_a_loss_budget_has_no_loss_margins():
    src, _ = case_source(CASES / "demo_choke_margins.toml")
    res = run_sweep(src, [parse_vary("winding.current=1:3A:3", where="vary")], with_fe=False,
                    workers=1)
    assert sweep_loss_margins(res.case, res.points, False) == []
    assert not any(k.startswith("hand_loss_") for k in sweep_rows(res)[0])


def test_sweep_loss_figure_draws_the_points_and_the_limits():
    import matplotlib

    matplotlib.use("Agg")
    from matplotlib import pyplot as plt

    from magcheck.compare.outputs.plots import sweep_figures

    res = _voltage_sweep()
    figs = dict(sweep_figures(res))
    fig = figs["sweep_loss.png"]
    try:
        loss_ax, rise_ax, eff_ax = fig.axes
        pts = sorted(res.points, key=lambda p: p.settings["windings[0].voltage"])
        lines = {ln.get_label(): ln for ln in loss_ax.get_lines()}
        np.testing.assert_allclose(lines["hand core loss (3D)"].get_ydata(),
                                   [p.hand["loss_core_loss"] for p in pts])
        np.testing.assert_allclose(lines["hand core loss (3D)"].get_xdata(),
                                   [p.settings["windings[0].voltage"] for p in pts])
        m = res.case.margins
        assert lines["core loss limit 1 W"].get_ydata()[0] == pytest.approx(m.core_loss)
        assert lines["total loss limit 2 W"].get_ydata()[0] == pytest.approx(m.total_loss)
        eff = {ln.get_label(): ln for ln in eff_ax.get_lines()}
        assert eff["efficiency limit 97 %"].get_ydata()[0] == pytest.approx(97.0)
        rise = {ln.get_label(): ln for ln in rise_ax.get_lines()}
        np.testing.assert_allclose(rise["hand temperature rise (3D)"].get_ydata(),
                                   [p.hand["loss_temperature_rise"] for p in pts])
    finally:
        for f in figs.values():
            plt.close(f)


def _tolerance_case(tmp_path: Path) -> Path:
    for f in ("demo_ferrite_transformer.toml", "demo_ferrite_transformer_loss.csv"):
        shutil.copy(CASES / f, tmp_path / f)
    path = tmp_path / "demo_ferrite_transformer.toml"
    path.write_text(path.read_text() + '\n[[tolerances]]\nkey = "windings[0].voltage"\n'
                    'distribution = "uniform"\nminus = "30 %"\nplus = "30 %"\n')
    return path


def test_tolerance_sample_loss_margins_match_their_values_and_the_yield(tmp_path):
    from magcheck.compare.models.coupling import hand_leakage
    from magcheck.compare.reading.variants import make_case
    from magcheck.compare.studies.tolerance import run_tolerance

    src, _ = case_source(_tolerance_case(tmp_path))
    res = run_tolerance(src, samples=12, seed=3, fe_samples=0, workers=1)
    keys = ("total_loss", "core_loss", "efficiency", "regulation", "temperature_rise")
    assert all(k in res.values for k in keys)
    passed = []
    for i, s in enumerate(res.samples):
        by_key = {m.key: m for m in s.margins}
        # each sample's loss figure is the hand budget at its own voltage (point_budget, as
        # a hand-only sweep point there): exact
        case = make_case(src, s.settings)
        b = ml.point_budget(case, leakage={"hand": hand_leakage(case)})
        ok = True
        for k in keys:
            mr = by_key[k]
            assert mr.value == pytest.approx(b[k]["hand_3d"], rel=1e-12)
            assert res.values[k][i] == mr.value
            verdict = mr.value <= mr.limit if mr.kind == "max" else mr.value >= mr.limit
            assert (mr.margin_pct >= 0) == verdict
            ok = ok and verdict
        passed.append(ok and all(m.margin_pct >= 0 or not math.isfinite(m.value)
                                 for m in s.margins if m.key not in keys))
    assert list(res.passed) == passed
    # +-30 % on 48 V moves the core loss ~ V^beta across the 1 W limit: some samples fail it
    core = res.values["core_loss"]
    assert (core > res.case.margins.core_loss).any() and (core <= res.case.margins.core_loss).any()
    assert 0.0 < res.yield_fraction < 1.0


@pytest.mark.slow
def test_tolerance_fe_sample_is_judged_on_its_fe_3d_loss(tmp_path):
    from magcheck.compare.models.fe import mesh_case, solve_case
    from magcheck.compare.models.coupling import fe_leakage, hand_leakage
    from magcheck.compare.reading.variants import make_case
    from magcheck.compare.studies.tolerance import run_tolerance

    src, _ = case_source(_tolerance_case(tmp_path))
    res = run_tolerance(src, samples=3, seed=1, fe_samples=1, workers=1)
    s = res.samples[0]
    case = make_case(src, s.settings)
    mesh = mesh_case(case)
    _, sol, _ = solve_case(case, mesh)
    b = ml.point_budget(case, sol, leakage={"hand": hand_leakage(case),
                                            "fe": fe_leakage(case, mesh)})
    by_key = {m.key: m for m in s.margins}
    for k in ("total_loss", "core_loss", "efficiency", "temperature_rise"):
        # the same solve on the same mesh (a cold start both times): the FE 3D column
        assert by_key[k].value == pytest.approx(b[k]["fe_3d"], rel=1e-6), k
        assert by_key[k].hand == pytest.approx(b[k]["hand_3d"], rel=1e-12), k
        assert by_key[k].basis == "FE"


def test_square_drive_takes_the_triangular_flux_and_a_sine_drive_is_unchanged():
    from magcheck.compare.models.drive import drive_linkage, drive_waveform
    from magcheck.compare.models.hand import run_hand
    from magcheck.compare.reading.casefile import load_case

    ferrite = load_case(CASES / "demo_ferrite_transformer.toml")
    w = ferrite.winding
    assert drive_waveform(ferrite) == ("square", 1.0)
    # Source: Faraday's law over one pulse of the square voltage (exact): lambda_pk =
    # V sqrt(D) / (4 f); the driven winding's current is where the hand network reaches it
    assert abs(run_hand(ferrite).flux_linkage) == pytest.approx(w.voltage / (4 * w.frequency),
                                                                rel=1e-9)
    assert drive_linkage(ferrite) == pytest.approx(ml.target_linkage(ferrite), rel=1e-15)
    ei = load_case(CASES / "demo_ei_transformer.toml")
    assert drive_waveform(ei) == ("sine", 1.0)
    # Source: the EMF equation lambda_pk = sqrt(2) V / (2 pi f) (Faraday's law over a half sine)
    assert abs(run_hand(ei).flux_linkage) == pytest.approx(
        math.sqrt(2) * ei.winding.voltage / (2 * math.pi * ei.winding.frequency), rel=1e-9)
