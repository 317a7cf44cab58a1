"""A moving armature in the check: the [motion] case keys, the maps'
interpolation (analytic.motion.GridMap), the motion against independent
solutions, and (slow) the FE map's pull-in against single FE solves
(docs/references.md section 14)."""

from __future__ import annotations

import copy
import math
import tomllib
from pathlib import Path

import numpy as np
import pytest
from scipy.integrate import solve_ivp
from scipy.interpolate import PchipInterpolator

from magcheck.analytic.motion import (GapActuator, GridMap, Load, Spring, operate,
                                      pchip_slopes, simulate)
from magcheck.compare.errors import CaseError
from magcheck.compare.front.cli import main
from magcheck.compare.reading.casefile import case_from_dict
from tests.test_new_user import one_line

ROOT = Path(__file__).resolve().parents[1]
RELAY = ROOT / "cases" / "demo_clapper_relay.toml"
MAGNET = ROOT / "cases" / "demo_holding_magnet.toml"

# an invented ideal-gap actuator: K = N^2 mu0 A (H m), closed gap 0.2 mm, travel 2 mm
K, GC, T = 2.0e-5, 0.2e-3, 2.0e-3
ACT = GapActuator(K, GC, T)


def _relay_tables() -> dict:
    return tomllib.loads(RELAY.read_text())


# ---------------------------------------------------------------- the case keys
def test_motion_table_reads_the_load_line_and_the_coil():
    case = case_from_dict(_relay_tables())
    spec = case.motion
    assert spec.stroke_key == "core.stroke"
    assert spec.open_gap == pytest.approx(0.8e-3) and spec.travel == pytest.approx(0.7e-3)
    # Source: exact (Hooke's law; two 10 N/mm springs in series carry one force: 5 N/mm)
    assert spec.load.force(0.7e-3) == pytest.approx(0.8 + 400 * 0.7e-3 + 2.0 + 5000 * 0.2e-3,
                                                    rel=1e-12)
    # Source: R(T) = R20 (1 + 0.00393 (T - 20)), copper (from memory, docs/references.md s14)
    assert spec.coil_resistance == pytest.approx(150.0 * (1 + 0.00393 * 20.0), rel=1e-12)
    assert spec.rated_current == pytest.approx(24.0 / spec.coil_resistance, rel=1e-12)


def test_gravity_and_keeper_load_add_to_the_load_line():
    data = _relay_tables()
    data["motion"]["gravity"] = "opening"
    data["motion"]["constant_load"] = "0.25 N"
    spec = case_from_dict(data).motion
    # Source: exact, the weight m g (g = 9.80665 m/s^2, a definition) opens the armature
    assert spec.load.force(0.0) == pytest.approx(0.8 + 0.25 + 3e-3 * 9.80665, rel=1e-12)
    data["motion"]["gravity"] = "closing"
    spec = case_from_dict(data).motion
    assert spec.load.force(0.0) == pytest.approx(0.8 + 0.25 - 3e-3 * 9.80665, rel=1e-12)


@pytest.mark.parametrize("edit, key", [
    (lambda m: m["springs"][1].update(engage="0.75 mm"), "motion.springs[1].engage"),
    (lambda m: m["springs"][0].update(solid="0.5 mm"), "motion.springs[0].solid"),
    (lambda m: m["springs"][0].update(series=["1 N/mm"]), "motion.springs[0].rate"),
    (lambda m: m.update(closed_gap="0.9 mm"), "motion.closed_gap"),
    (lambda m: m.update(mass="-3 g"), "motion.mass"),
    (lambda m: m.update(mass="3 N"), "motion.mass"),
    (lambda m: m.update(suppression="resistor"), "motion.suppression_resistance"),
    (lambda m: m.update(diode_drop="1 V", suppression="none"), "motion.diode_drop"),
    (lambda m: m.update(springs=[]), "motion.springs"),
    (lambda m: m.update(voltage_table={"time": [0.0, 0.0], "voltage": [1.0, 2.0]}),
     "motion.voltage_table.time"),
    (lambda m: m.update(map_strokes=2), "motion.map_strokes"),
    (lambda m: (m.pop("mass"), m.update(gravity="opening")), "motion.gravity"),
])
def test_bad_motion_values_are_refused_naming_the_key(edit, key):
    data = _relay_tables()
    edit(data["motion"])
    with pytest.raises(CaseError) as err:
        case_from_dict(data)
    assert err.value.key == key


def test_motion_without_mass_gives_the_static_limits_only():
    from magcheck.compare.models.motion import model_motion

    data = _relay_tables()
    del data["motion"]["mass"]
    spec = case_from_dict(data).motion
    assert spec.mass is None
    import dataclasses

    spec0, res = _ideal_gap_result()
    spec = dataclasses.replace(spec0, mass=None)
    mm = model_motion("fe", res.maps.grid_map("fe"), spec)
    assert mm.values["pull_in_current"] == res.models["fe"].values["pull_in_current"]
    assert mm.operate is None and mm.release is None and math.isnan(mm.values["operate_time"])


def test_motion_margin_without_a_motion_table_is_refused():
    data = _relay_tables()
    del data["motion"]
    with pytest.raises(CaseError) as err:
        case_from_dict(data)
    assert err.value.key == "margins.pull_in_voltage"


def test_bad_motion_key_exits_2_in_one_line(tmp_path, capsys):
    text = RELAY.read_text().replace('closed_gap = "0.1 mm"', 'closed_gap = "1.1 mm"')
    path = tmp_path / "relay.toml"
    path.write_text(text)
    assert main(["check", str(path)]) == 2
    one_line(capsys, "motion.closed_gap")


# ---------------------------------------------------------------- the map
def test_pchip_slopes_are_the_reference_librarys():
    x = np.array([0.0, 1.0, 2.5, 3.0, 5.0, 5.5])
    y = np.array([[0.0, 1.0, 1.5, 4.0, 4.1, 7.0], [0.0, 2.0, 1.0, 3.0, 9.0, 8.0]])
    # Source: reference library, scipy.interpolate.PchipInterpolator (Fritsch-Carlson);
    # tolerance: rounding
    ref = PchipInterpolator(x, y, axis=1).derivative()(x)
    assert np.max(np.abs(pchip_slopes(x, y) - ref)) < 1e-13
    from magcheck.analytic.motion import _slopes_1d

    for row, r in zip(y, ref):  # the map's plain-Python row form, the same rule
        assert np.max(np.abs(np.array(_slopes_1d(x.tolist(), row.tolist())) - r)) < 1e-13


def _gap_grid(n_i=6, n_s=5):
    currents = np.linspace(0.0, 2.0, n_i)
    g = (GC + T) * (GC / (GC + T)) ** (np.arange(n_s) / (n_s - 1))
    strokes = GC + T - g
    strokes[0], strokes[-1] = 0.0, T
    f = np.array([[ACT.force(i, s) for s in strokes] for i in currents])
    lam = np.array([[ACT.linkage(i, s) for s in strokes] for i in currents])
    return currents, strokes, f, lam


def test_ideal_gap_force_is_exact_between_strokes_with_the_gap_law():
    currents, strokes, f, lam = _gap_grid()
    gm = GridMap(currents, strokes, f, lam, gap_open=GC + T)
    for s in (0.3e-3, 1.234e-3, 1.9e-3):
        # Source: exact, F g^2 = i^2 K / 2 is constant in s for the ideal gap, so its
        # interpolant in s is exact; tolerance: rounding
        assert gm.force(currents[3], s) == pytest.approx(ACT.force(currents[3], s), rel=1e-12)
        # the current from lambda inverts the same cubic (exact: tolerance rounding)
        assert gm.current(gm.linkage(0.77, s), s) == pytest.approx(0.77, rel=1e-12)
    for s in strokes:
        # Source: exact, lambda = i K / g is linear in i, which the monotone cubic keeps
        assert gm.current(ACT.linkage(0.77, s), s) == pytest.approx(0.77, rel=1e-12)
    plain = GridMap(currents, strokes, f, lam)
    assert abs(plain.force(currents[3], 1.234e-3) / ACT.force(currents[3], 1.234e-3) - 1) > 1e-3


def test_fixed_armature_on_a_map_rises_as_the_rl_circuit():
    currents, strokes, f, lam = _gap_grid()
    gm = GridMap(currents, strokes, f, lam, gap_open=GC + T)
    v, r, s0 = 12.0, 30.0, strokes[2]  # at a grid stroke lambda(i) is the exact K i / g
    L = ACT.inductance(s0)
    load = Load(T, (Spring(100.0, 1.0),))
    mo = simulate(gm.linkage, gm.force, load, 1.0, r, v, 5 * L / r, s0=s0, held=True,
                  current=gm.current)
    # Source: exact solution of the RL circuit i = V/R (1 - exp(-t R / L)), L = K/g from the
    # same linear lambda(i); tolerance 1e-7 of V/R: the integrator's rtol 1e-10
    assert np.max(np.abs(mo.i - v / r * (1.0 - np.exp(-mo.t * r / L)))) < 1e-7 * v / r


def test_ideal_gap_operate_time_against_an_independent_ode():
    p, k, m, r, v = 1.0, 300.0, 5e-3, 30.0, 24.0
    load = Load(T, (Spring(k, p),))
    mo = operate(ACT.linkage, ACT.force, load, m, r, v, 0.5, current=ACT.current)

    # Source: exact closed forms of the ideal gap, written out again here: i = lambda g / K,
    # F = lambda^2 / (2 K); the armature waits at the open stop until F exceeds P, then
    # m s'' = F - P - k s; integrated independently (LSODA, its own events)
    def rhs(t, y, moving):
        lam, s, u = y
        i = lam * (GC + T - s) / K
        acc = (lam * lam / (2 * K) - p - k * s) / m if moving else 0.0
        return [v - r * i, u if moving else 0.0, acc]

    def starts(t, y, moving):
        return y[0] * y[0] / (2 * K) - p
    starts.terminal = True

    def closes(t, y, moving):
        return y[1] - T
    closes.terminal = True
    a = solve_ivp(rhs, (0, 0.5), [0.0, 0.0, 0.0], args=(False,), events=starts, method="LSODA",
                  rtol=1e-12, atol=1e-15)
    b = solve_ivp(rhs, (a.t[-1], 0.5), a.y[:, -1], args=(True,), events=closes,
                  method="LSODA", rtol=1e-12, atol=1e-15)
    # tolerance 1e-6 relative: both integrators' tolerances and the event roots
    assert mo.closed_time == pytest.approx(b.t_events[0][0], rel=1e-6)
    assert mo.impact_speed == pytest.approx(b.y_events[0][0][2], rel=1e-6)


def test_leave_one_out_error_of_the_ideal_gap_map():
    from magcheck.compare.models.motion import leave_one_out_error

    currents, strokes, f, lam = _gap_grid()
    err = leave_one_out_error(strokes, currents, f, lam, GC + T)
    # Source: exact, F g^2 is constant in s and lambda linear in i (above); tolerance: rounding
    assert err["force_stroke"] < 1e-12 and err["linkage_current"] < 1e-12
    # lambda = K i / g in s is not a cubic: at twice the spacing, a few percent to tens
    assert 1e-3 < err["linkage_stroke"] == err["linkage"] < 0.5
    # a quadratic by the monotone cubic at twice the spacing is not exact
    # (common practice, no source): a few percent of the row's largest force
    assert 1e-3 < err["force_current"] < 0.1
    # Source: exact, F = i^2 K / (2 g^2) is linear in i^2, which the cubic keeps; rounding
    assert leave_one_out_error(strokes, currents, f, lam, GC + T, True)["force"] < 1e-12


# ---------------------------------------------------------------- the check (FE, slow)
@pytest.mark.slow
def test_fe_map_pull_in_against_single_fe_solves():
    """The pull-in current found on the FE map, against a direct search with
    single FE solves at the tightest stroke (a bracketing secant on the
    margin F(i) - F_load), within the map's stated interpolation error."""

    from magcheck.compare.design.case import with_current
    from magcheck.compare.models.fe import REFINE, mesh_case, solve_case
    from magcheck.compare.models.motion import case_at, run_motion
    from magcheck.compare.reading.variants import case_source

    case = case_source(RELAY)[1]
    res = run_motion(case, axisymmetric=False)
    fe = res.models["fe"]
    i_map, s_star = fe.values["pull_in_current"], fe.pull_in_stroke
    spec = case.motion
    at = case_at(case, spec.gap(s_star))
    mesh = mesh_case(at, refine=1.0 / REFINE)  # the map's own mesh size
    load = float(spec.load.force(s_star))

    def margin(i):
        q, _, _ = solve_case(with_current(at, i), mesh)
        return q.force_values["force"] - load

    a, b = 0.8 * i_map, 1.2 * i_map
    fa, fb = margin(a), margin(b)
    assert fa < 0 < fb
    for _ in range(4):  # regula falsi on a smooth rising margin
        c = b - fb * (b - a) / (fb - fa)
        fc = margin(c)
        a, fa, b, fb = (c, fc, b, fb) if fc < 0 else (a, fa, c, fc)
    i_direct = c
    # Source: the map's own leave-one-out error (an upper estimate): F ~ i^2 below
    # saturation, so a relative force error e moves the current by about e / 2
    assert abs(i_map / i_direct - 1) <= 0.5 * res.interpolation["force"]
    assert res.maps.fe_solves == spec.map_strokes * spec.map_currents


@pytest.mark.slow
def test_fe_map_release_current_against_single_fe_solves():
    """The holding magnet's release current found on the FE map (magnitude;
    the coil reverse, opposing the magnet), against a direct search with
    single FE solves at the closed gap (regula falsi on F(i) - F_load), within
    the map's stated interpolation error moved into the current through the
    force's slope dF/di there."""
    from magcheck.compare.design.case import with_current
    from magcheck.compare.models.fe import REFINE, mesh_case, solve_case
    from magcheck.compare.models.motion import case_at, run_motion
    from magcheck.compare.reading.variants import case_source

    case = case_source(MAGNET)[1]
    res = run_motion(case, axisymmetric=True)
    i_map = -res.models["fe"].values["release_current"]  # signed: reverse is negative
    spec = case.motion
    at = case_at(case, spec.closed_gap)
    mesh = mesh_case(at, refine=1.0 / REFINE)  # the map's own mesh size
    load = float(spec.load.force(spec.travel))

    def margin(i):
        q, _, _ = solve_case(with_current(at, i), mesh)
        return q.force_values["force"] - load

    a, b = 1.2 * i_map, 0.8 * i_map  # a: more reverse, released; b: still holding
    fa, fb = margin(a), margin(b)
    assert fa < 0 < fb
    slope = (fb - fa) / (b - a)
    assert slope > 0  # the hold weakens as the current goes reverse (above the minimum)
    for _ in range(4):  # regula falsi on a smooth margin
        c = b - fb * (b - a) / (fb - fa)
        fc = margin(c)
        a, fa, b, fb = (c, fc, b, fb) if fc < 0 else (a, fa, c, fc)
    i_direct = c
    # Source: the map's own leave-one-out error (an upper estimate) carried to the
    # current through dF/di (the rows' uncertainty, interpolation_uncertainty);
    # checked against this test's own secant slope and the load: the same order
    tol = res.uncertainty["release_current"]
    assert tol >= res.interpolation["force"] * load / abs(slope) * 0.8
    print(f"release current: map {i_map:.6g} A, direct {i_direct:.6g} A, tolerance {tol:.3g} A")
    assert abs(i_map - i_direct) <= tol
    assert res.maps.fe_solves == spec.map_strokes * (spec.map_currents + 1)
    # the map spans reverse currents only, down to 1.5 x the release supply's current
    assert res.maps.currents[0] == pytest.approx(-1.5 * spec.rated_current)
    assert res.maps.currents[-1] == 0.0


def _ideal_gap_result():
    """A MotionResult from ideal-gap maps (hand and "FE" the same closed forms)."""
    from magcheck.compare.design.actuator import ActuatorSpec
    from magcheck.compare.models.motion import MotionMaps, MotionResult, model_motion

    spec = ActuatorSpec("core.stroke", GC + T, GC, 5e-3, (Spring(300.0, 1.0),),
                        resistance=30.0, voltage=24.0, suppression="diode")
    currents, strokes, f, lam = _gap_grid(n_i=8)
    currents = currents * 1.2 / currents[-1]  # 1.5 x rated, as the check's map
    f = np.array([[ACT.force(i, s) for s in strokes] for i in currents])
    lam = np.array([[ACT.linkage(i, s) for s in strokes] for i in currents])
    maps = MotionMaps(strokes, currents, {"hand": (f, lam), "fe": (f, lam)}, gap_open=GC + T,
                      square=True)
    models = {k: model_motion(k, maps.grid_map(k), spec) for k in ("hand", "fe")}
    return spec, MotionResult(maps, models, {}, spec.rated_current, spec.coil_resistance, 0.0)


def test_ideal_gap_limits_on_the_map_against_the_closed_forms():
    spec, res = _ideal_gap_result()
    m = res.models["fe"].values
    p, k = 1.0, 300.0
    # Source: exact closed forms (tests/test_motion.py, docs/references.md s14): the margin's
    # minimum is at the open stop when 2 P > k (GC + T): i = (GC + T) sqrt(2 P / K); the
    # drop-out i = GC sqrt(2 (P + k T) / K); tolerance 1e-9: the map is exact for the ideal
    # gap (F linear in i^2, F g^2 constant in s), brentq's tolerance
    assert m["pull_in_current"] == pytest.approx((GC + T) * math.sqrt(2 * p / K), rel=1e-9)
    assert m["drop_out_current"] == pytest.approx(GC * math.sqrt(2 * (p + k * T) / K), rel=1e-9)
    assert m["pull_in_voltage"] == pytest.approx(m["pull_in_current"] * 30.0, rel=1e-12)
    assert m["operate_time"] > 0 and m["release_time"] > 0 and m["current_dip"] > 0


def test_motion_figure_draws_both_models():
    import matplotlib

    matplotlib.use("Agg")
    from types import SimpleNamespace

    from magcheck.compare.outputs.plots import FIGURES, fig_motion

    spec, res = _ideal_gap_result()
    fig = fig_motion(SimpleNamespace(motion=res, case=SimpleNamespace(motion=spec)))
    assert FIGURES["motion.png"] is fig_motion
    axes = fig.get_axes()
    assert len(axes) == 3
    # each panel holds both models' curves (hand, FE)
    assert all(len(ax.get_lines()) >= 2 for ax in axes)
    assert fig_motion(SimpleNamespace(motion=None)) is None


def test_energy_bookkeeping_of_the_operate_on_a_map():
    """An actuator whose map is exact: L(s) = a + b s, lambda = L i, F = (i^2/2) dL/ds = b i^2/2
    (linear in s and i, the force linear in i^2 and constant in s)."""
    from magcheck.compare.design.actuator import ActuatorSpec
    from magcheck.compare.models.motion import MotionMaps, model_motion

    a, b = 0.02, 20.0
    spec = ActuatorSpec("core.stroke", 2 * T, T, 5e-3, (Spring(300.0, 1.0),),
                        resistance=30.0, voltage=24.0)
    currents = np.linspace(0.0, 1.2, 5)
    strokes = np.linspace(0.0, T, 4)
    f = np.array([[0.5 * b * i * i for _ in strokes] for i in currents])
    lam = np.array([[(a + b * s) * i for s in strokes] for i in currents])
    maps = MotionMaps(strokes, currents, {"fe": (f, lam)}, square=True)
    op = model_motion("fe", maps.grid_map("fe"), spec).operate
    assert op is not None and op.closed_time is not None
    lam_end, s_end = op.lam[-1], op.s[-1]
    w_field = lam_end ** 2 / (2 * (a + b * s_end))
    # Source: exact, conservation of energy: int v i dt = int R i^2 dt + W_field + int F ds,
    # W_field = lambda^2 / (2 L) of a linear circuit (virtual work, docs/references.md s14);
    # tolerance 1e-6 of the energy in: the integrator's rtol 1e-8 over the motion
    assert op.e_in == pytest.approx(op.e_copper + w_field + op.w_mech, rel=1e-6)
    assert op.w_mech > 0.01 * op.e_in


def test_interpolation_error_carried_to_the_limits_through_the_force_slope():
    """interpolation_uncertainty on the ideal-gap map: the pull-in and
    drop-out currents' uncertainty is the force's error over dF/di."""
    from magcheck.compare.models.motion import interpolation_uncertainty

    spec, res = _ideal_gap_result()
    mm = res.models["fe"]
    e_i, e_s, e_l = 0.02, 0.01, 0.03
    err = {"force": e_i, "force_current": e_i, "force_stroke": e_s, "linkage": e_l}
    u = interpolation_uncertainty(res.maps.grid_map("fe"), spec, mm, err)
    top = float(res.maps.currents[-1])
    for key, s in (("pull_in_current", mm.pull_in_stroke), ("drop_out_current", T)):
        i = mm.values[key]
        g = GC + T - s
        # Source: exact closed forms of the ideal gap, F = i^2 K / (2 g^2), dF/di = i K / g^2;
        # the force's error e_i over the stroke's largest grid force (at the top current)
        # or e_s of the load (F(i) there): the larger, over the slope. Tolerance: the
        # central difference's and the map's round-off (the map is exact for this gap)
        d_f = max(e_i * ACT.force(top, s), e_s * ACT.force(i, s))
        assert u[key] == pytest.approx(d_f / (i * K / g**2), rel=1e-6)
        assert u[key.replace("current", "voltage")] == pytest.approx(u[key] * 30.0, rel=1e-12)
    v = mm.values
    assert u["operate_time"] == pytest.approx((e_l + e_i / 2) * v["operate_time"], rel=1e-12)
    assert math.isnan(u["release_current"])


def test_motion_rows_judge_with_the_interpolation_uncertainty():
    """A motion row beyond its limit but within the map's uncertainty is
    inconclusive, as a three-mesh uncertainty makes it; beyond both, FAIL."""
    import dataclasses

    from magcheck.compare.judge.check import motion_rows
    from magcheck.compare.models.motion import ModelMotion

    spec, res = _ideal_gap_result()
    fe = res.models["fe"]
    hand_v = dict(fe.values, pull_in_current=fe.values["pull_in_current"] * 1.15)
    models = dict(res.models, hand=dataclasses.replace(fe, model="hand", values=hand_v))
    case = type("C", (), {"motion": spec, "margins": type("M", (), {
        "motion": (), "agreement_limit": staticmethod(lambda k, d: d)})()})()
    for u_rel, verdict in ((0.2, "inconclusive"), (0.05, "FAIL")):
        unc = {"pull_in_current": u_rel * fe.values["pull_in_current"]}
        mo = dataclasses.replace(res, models=models, uncertainty=unc)
        row = {r.key: r for r in motion_rows(case, mo)}["motion:pull_in_current"]
        assert row.uncertainty == unc["pull_in_current"]
        assert row.verdict == verdict, (u_rel, row)


def test_motion_margins_fail_when_the_armature_never_pulls_in():
    """A spring the coil cannot beat at 1.5 x rated: the pull-in voltage and
    operate time maxima are FAILED on the bound the motion explored (no
    pull-in below the map's top current, not closed by the end time), not
    left "n/a" under a design PASS."""
    from magcheck.compare.design.actuator import ActuatorSpec
    from magcheck.compare.judge.motionrows import motion_margins, motion_notes
    from magcheck.compare.models.motion import MotionMaps, MotionResult, model_motion

    # Source: exact closed form (tests/test_motion.py): pull-in at the open stop needs
    # i = (GC + T) sqrt(2 P / K) = 1.56 A for a 5 N preload, above the map's 1.2 A top
    spec = ActuatorSpec("core.stroke", GC + T, GC, 5e-3, (Spring(300.0, 5.0),),
                        resistance=30.0, voltage=24.0, suppression="diode")
    currents, strokes, f, lam = _gap_grid(n_i=8)
    currents = currents * 1.2 / currents[-1]
    f = np.array([[ACT.force(i, s) for s in strokes] for i in currents])
    lam = np.array([[ACT.linkage(i, s) for s in strokes] for i in currents])
    maps = MotionMaps(strokes, currents, {"hand": (f, lam), "fe": (f, lam)}, gap_open=GC + T,
                      square=True)
    models = {k: model_motion(k, maps.grid_map(k), spec) for k in ("hand", "fe")}
    res = MotionResult(maps, models, {"force": 0.0, "linkage": 0.0}, spec.rated_current,
                       spec.coil_resistance, 0.0)
    assert math.isnan(models["fe"].values["pull_in_voltage"])
    limits = (("pull_in_voltage", 19.2), ("operate_time", 10e-3), ("drop_out_voltage", 2.4))
    case = type("C", (), {"motion": spec, "margins": type("M", (), {
        "motion": limits, "agreement_limit": staticmethod(lambda k, d: d)})()})()
    got = {r.key: r for r in motion_margins(case, res)}
    assert got["pull_in_voltage"].verdict == "FAIL"
    assert got["pull_in_voltage"].value == pytest.approx(1.2 * 30.0, rel=1e-9)
    assert got["operate_time"].verdict == "FAIL"
    assert "bound" in got["operate_time"].note
    # a limit above the bound stays unjudged: the true value may lie below it
    case.margins.motion = (("pull_in_voltage", 40.0),)
    assert motion_margins(case, res)[0].verdict == "n/a"
    case.margins.motion = limits
    assert any("FAILs beyond the motion's range" in n for n in motion_notes(case, res))


def test_voltage_table_without_the_rated_voltage_says_what_is_missing():
    """A drive table without the rated voltage: the message asks for the rated
    voltage, not whether voltage_table is a misspelling of voltage."""
    data = _relay_tables()
    data["motion"].pop("voltage")
    data["motion"]["voltage_table"] = {"time": [0.0, 0.01], "voltage": [24.0, 24.0]}
    with pytest.raises(CaseError) as err:
        case_from_dict(data)
    assert err.value.key == "motion.voltage"
    assert "rated voltage" in str(err.value) and "misspelling" not in str(err.value)


def test_motion_margin_met_within_the_map_uncertainty_is_inconclusive():
    """A motion margin met by less than the FE map's interpolation uncertainty
    is inconclusive, as the three-mesh band makes the other margins; met by
    more, a pass; missed, a FAIL."""
    import dataclasses

    from magcheck.compare.judge.check import motion_rows

    spec, res = _ideal_gap_result()
    v = res.models["fe"].values["pull_in_voltage"]
    for limit, u_rel, verdict in ((1.05 * v, 0.10, "inconclusive"), (1.05 * v, 0.02, "pass"),
                                  (0.95 * v, 0.10, "FAIL")):
        case = type("C", (), {"motion": spec, "margins": type("M", (), {
            "motion": (("pull_in_voltage", limit),),
            "agreement_limit": staticmethod(lambda k, d: d)})()})()
        mo = dataclasses.replace(res, uncertainty={"pull_in_voltage": u_rel * v})
        row = {r.key: r for r in motion_rows(case, mo)}["margin:pull_in_voltage"]
        assert row.verdict == verdict, (limit, u_rel, row.verdict)
        assert row.fe_3d_uncertainty == pytest.approx(u_rel * v, rel=1e-12)


def test_limits_below_the_maps_first_current_step_are_flagged():
    """A pull-in or drop-out current below the map's first nonzero current is
    interpolated from zero: the model's notes say so (and the clapper demo's
    do not: its limits lie inside the map)."""
    from magcheck.compare.design.actuator import ActuatorSpec
    from magcheck.compare.models.motion import MotionMaps, model_motion

    spec, res = _ideal_gap_result()
    assert not any("first current step" in n for n in res.models["fe"].notes)
    # rated 100 x higher: the same map shape spread over currents 100 x higher
    hot = ActuatorSpec("core.stroke", GC + T, GC, 5e-3, (Spring(300.0, 1.0),),
                       resistance=30.0, voltage=2400.0, suppression="diode")
    currents, strokes, _, _ = _gap_grid(n_i=4)
    currents = currents * 1.5 * hot.rated_current / currents[-1]
    f = np.array([[ACT.force(i, s) for s in strokes] for i in currents])
    lam = np.array([[ACT.linkage(i, s) for s in strokes] for i in currents])
    maps = MotionMaps(strokes, currents, {"fe": (f, lam)}, gap_open=GC + T, square=True)
    mm = model_motion("fe", maps.grid_map("fe"), hot)
    assert mm.values["pull_in_current"] < currents[1]
    # the ideal gap's F ~ i^2 holds everywhere: interpolated from zero, and right
    assert not any("first current step" in n for n in mm.notes)
    # a map saturating by its first steps (F capped at the first step's force)
    f_sat = np.minimum(f, f[1][None, :])
    maps = MotionMaps(strokes, currents, {"fe": (f_sat, lam)}, gap_open=GC + T, square=True)
    mm = model_motion("fe", maps.grid_map("fe"), hot)
    note = [n for n in mm.notes if "first current step" in n]
    assert note and "pull-in (-75 %) and drop-out (-75 %)" in note[0], mm.notes


def test_motion_margin_the_actuator_cannot_have_is_refused():
    """A release-current limit on a relay (no magnet) and a pull-in limit on a
    holding magnet (its [motion] gives the release current only) would stay
    n/a for ever: refused naming the margin."""
    data = _relay_tables()
    data["margins"]["release_current"] = "1 A"
    with pytest.raises(CaseError) as err:
        case_from_dict(data)
    assert err.value.key == "margins.release_current" and "no magnet" in str(err.value)
    data = tomllib.loads(MAGNET.read_text())
    data["margins"]["pull_in_voltage"] = "10 V"
    with pytest.raises(CaseError) as err:
        case_from_dict(data)
    assert err.value.key == "margins.pull_in_voltage" and "release current only" in str(
        err.value)
    case_from_dict(tomllib.loads(MAGNET.read_text()))  # the demo's own: accepted


def test_no_release_time_when_the_closed_armature_is_not_held_at_rated_current():
    """The release starts from the armature held closed at rated current: a
    contact load the coil cannot hold closed has no release time (it was a
    release 'time' of an armature the load threw open at once)."""
    from magcheck.compare.design.actuator import ActuatorSpec
    from magcheck.compare.models.motion import MotionMaps, model_motion

    # Source: exact closed form (tests/test_motion.py): holding at the closed gap GC needs
    # i = GC sqrt(2 F / K) = 2.8 A for the 2000 N contact load, above the 0.8 A rated
    contact = Spring(0.0, 2000.0, engage=0.9 * T)
    for springs, held in (((Spring(300.0, 1.0),), True), ((Spring(300.0, 1.0), contact), False)):
        spec = ActuatorSpec("core.stroke", GC + T, GC, 5e-3, springs,
                            resistance=30.0, voltage=24.0, suppression="diode")
        currents, strokes, f, lam = _gap_grid(n_i=8)
        currents = currents * 1.2 / currents[-1]
        f = np.array([[ACT.force(i, s) for s in strokes] for i in currents])
        lam = np.array([[ACT.linkage(i, s) for s in strokes] for i in currents])
        maps = MotionMaps(strokes, currents, {"fe": (f, lam)}, gap_open=GC + T, square=True)
        mm = model_motion("fe", maps.grid_map("fe"), spec)
        assert math.isfinite(mm.values["release_time"]) == held
        assert any("not held closed at rated current" in n for n in mm.notes) != held
        assert "release_time" not in mm.beyond  # unjudged, not failed: no release to time
