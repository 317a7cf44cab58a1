"""Voltage drive (compare.models.drive): the case keys and their refusals, the
operating point each model finds, the EMF equation, and a linear core's
sinusoidal magnetizing current in both models."""

from __future__ import annotations

import dataclasses
import math
import tomllib
from pathlib import Path

import pytest

from magcheck.analytic.constants import mu_0
from magcheck.compare.reading.casefile import case_from_dict
from magcheck.compare.errors import CaseError
from magcheck.compare.models.hand import run_hand

CASE = Path(__file__).resolve().parents[1] / "cases" / "demo_ei_transformer.toml"


def _doc() -> dict:
    return tomllib.loads(CASE.read_text())


def test_the_driven_windings_current_is_where_the_hand_reaches_lambda_pk():
    # Source: lambda_pk = sqrt(2) V / (2 pi f) (Faraday's law; the EMF equation)
    case = case_from_dict(_doc())
    lam_pk = math.sqrt(2) * 230 / (2 * math.pi * 50)
    assert abs(run_hand(case).flux_linkage) == pytest.approx(lam_pk, rel=1e-9)
    assert case.winding.voltage == 230.0 and case.winding.frequency == 50.0


def _linear(d: dict) -> dict:
    """The EI transformer's document with a linear core (mu_r 2000): a linear
    material has no loss data, so no loss budget (nor its margins)."""
    d["materials"]["core"] = {"mu_r": 2000}
    d.pop("loss")
    for k in ("total_loss", "core_loss", "efficiency", "regulation", "temperature_rise"):
        d["margins"].pop(k)
    return d


def test_linear_ideal_core_drive_in_closed_form():
    # Source: exact for a linear circuit: i_pk = lambda_pk / L, L = N^2 / R
    # with the EI core's two outer loops in parallel (typed from the
    # dimensions; ideal-gap network, mu_r 2000)
    d = _doc()
    _linear(d)
    case = case_from_dict(d)
    lam_pk = math.sqrt(2) * 230 / (2 * math.pi * 50)
    L = run_hand(case).inductance
    assert case.winding.current == pytest.approx(lam_pk / L, rel=1e-9)
    from magcheck.compare.models.drive import hand_curve
    from magcheck.analytic.magnetizing import magnetizing_current

    m = magnetizing_current(*hand_curve(case, False, 1.02 * case.winding.current), lam_pk, 50.0)
    assert m.peak == pytest.approx(lam_pk / L, rel=1e-9)
    assert max(m.harmonics_pct.values()) < 1e-6
    # the inrush estimate's first peak (2 + r) lambda_pk on the same line
    from magcheck.compare.models.drive import hand_current_at

    assert hand_current_at(case, 2.6 * lam_pk) == pytest.approx(2.6 * lam_pk / L, rel=1e-9)


def test_hand_peak_flux_density_is_the_emf_equation():
    # Source: the transformer EMF equation B_pk = V / (4.44 f N A_c) with
    # A_c the centre limb's 25 mm x 30 mm (4.44 = 2 pi / sqrt(2) unrounded)
    from magcheck.compare.models.drive import _limb_area

    case = case_from_dict(_doc())
    a_c = 25e-3 * 30e-3
    assert _limb_area(case) == pytest.approx(a_c, rel=1e-12)
    b_pk = 230 / (2 * math.pi / math.sqrt(2) * 50 * 1000 * a_c)
    assert b_pk == pytest.approx(1.3805, rel=1e-4)


@pytest.mark.parametrize("change, key, words", [
    (lambda d: d["windings"][0].update(current="1 A"), "windings[0].voltage", "not both"),
    (lambda d: d["windings"][0].pop("frequency"), "windings[0].frequency", "needs its"),
    (lambda d: d["windings"][1].update(frequency="50 Hz"), "windings[1].frequency",
     "without a voltage"),
    (lambda d: d["windings"][1].update(voltage="24 V", frequency="50 Hz", current=None) or
     d["windings"][1].pop("current"), "windings[1].voltage", "only the first"),
    (lambda d: d["windings"][1].update(current="1 A"), "windings[1].current", "DC bias"),
    (lambda d: d["windings"][0].update(voltage="-5 V"), "windings[0].voltage", ""),
    (lambda d: d["windings"][1].update(residual_flux=0.5), "windings[1].residual_flux",
     "inrush estimate of a voltage drive"),
    (lambda d: d["windings"][0].update(residual_flux=1.5), "windings[0].residual_flux",
     "must lie in"),
    (lambda d: d["windings"][0].pop("residual_flux") and d["windings"][0].pop("resistance")
     and d["margins"].update(inrush_current_peak="100 A"), "margins.inrush_current_peak",
     "residual_flux"),
    (lambda d: d["windings"][0].update(residual_flux=math.nan), "windings[0].residual_flux",
     "finite"),
    (lambda d: d["windings"][0].update(resistance="-3 ohm"), "windings[0].resistance",
     "must not be negative"),
    (lambda d: d["windings"][0].update(resistance="3 A"), "windings[0].resistance",
     "not a resistance"),
    (lambda d: d["windings"][0].pop("residual_flux") and d["windings"][0].update(
        resistance="3 ohm"), "windings[0].resistance", "residual_flux"),
    (lambda d: d["windings"][1].update(resistance="3 ohm"), "windings[1].resistance",
     "inrush estimate of a voltage drive"),
])
def test_bad_drives_name_the_key(change, key, words):
    d = _doc()
    change(d)
    with pytest.raises(CaseError) as info:
        case_from_dict(d)
    assert info.value.key == key and words in str(info.value)


def test_drive_margins_need_a_drive():
    d = tomllib.loads((CASE.parent / "demo_choke.toml").read_text())
    d["margins"] = {"B_peak": "1.5 T"}
    with pytest.raises(CaseError) as info:
        case_from_dict(d, base_dir=CASE.parent)
    assert info.value.key == "margins.B_peak" and "voltage-drive margin" in str(info.value)


@pytest.mark.slow
def test_linear_core_fe_magnetizing_current_is_sinusoidal():
    # Source: exact for a linear field problem: lambda = L_FE i, so the FE's
    # magnetizing current is lambda_pk / L_FE sin(wt), harmonics nil (the
    # inversion of linear data is exact; Newton's tolerance bounds the rest)
    from magcheck.compare.judge.check import run_check

    # and the inrush estimate's first peak (2 + r) lambda_pk / L_FE on the same line
    d = _linear(_doc())
    d["fe"] = {"mesh_size": "4 mm"}
    d["windings"][0]["residual_flux"] = 0.6
    d["windings"][0].pop("resistance")  # undamped
    d.setdefault("margins", {})["inrush_current_peak"] = "1 A"
    res = run_check(case_from_dict(d))
    lam_pk = math.sqrt(2) * 230 / (2 * math.pi * 50)
    L_fe = res.fe.values["inductance"]
    assert res.drive.fe.peak == pytest.approx(lam_pk / L_fe, rel=1e-6)
    assert res.drive.fe.rms == pytest.approx(lam_pk / L_fe / math.sqrt(2), rel=1e-6)
    assert max(res.drive.fe.harmonics_pct.values()) < 1e-3
    # the limb's mean B at the drive's peak: the limb flux scales with the
    # current on a linear core, so it is the check's limb flux times
    # (lambda_pk / L_FE) / I over A_c (exact for a linear field problem)
    i_case = res.case.winding.current
    b_limb = res.fe.values["flux"] * (lam_pk / L_fe) / i_case / (25e-3 * 30e-3)
    assert res.drive.B_limb[1] == pytest.approx(b_limb, rel=1e-6)
    assert res.drive.B_limb[0] == pytest.approx(lam_pk / (1000 * 25e-3 * 30e-3), rel=1e-12)
    assert res.drive.inrush["fe"] == pytest.approx(2.6 * lam_pk / L_fe, rel=1e-6)
    L = res.hand_planar.inductance
    assert res.drive.inrush["hand"] == pytest.approx(2.6 * lam_pk / L, rel=1e-9)
    rows = {r.key: r for r in res.rows}
    assert {"B_peak", "magnetizing_current_peak", "magnetizing_current_rms",
            "magnetizing_inductance", "magnetizing_harmonic_3", "inrush_current_peak"} <= set(rows)
    margin = rows["margin:inrush_current_peak"]
    assert margin.fe == pytest.approx(2.6 * lam_pk / L_fe, rel=1e-6)  # judged on the planar FE
    assert 2.6 * lam_pk / L_fe < 1.0 and margin.verdict == "pass"
    from magcheck.compare.outputs.serialize import check_json

    doc = check_json(res)
    assert doc["fe"]["inrush"]["current_peak"] == pytest.approx(res.drive.inrush["fe"])
    assert doc["hand"]["inrush"]["residual_flux"] == 0.6
    assert doc["fe"]["inrush"]["peak_flux_linkage"] == pytest.approx(2.6 * lam_pk, rel=1e-12)
    _ = mu_0


@pytest.mark.slow
def test_linear_core_damped_inrush_is_the_switched_rl_circuit():
    # Source: exact solution of the switched series RL circuit
    # (tests.test_magnetizing.rl_first_peak) with L the FE's own inductance:
    # a linear core makes d lambda/dt = v - R i that circuit in both models
    from magcheck.compare.judge.check import run_check
    from magcheck.compare.outputs.serialize import check_json
    from tests.test_magnetizing import rl_first_peak

    d = _linear(_doc())
    d["fe"] = {"mesh_size": "4 mm"}
    d["windings"][0].update(residual_flux=0.6, resistance="400 ohm")
    res = run_check(case_from_dict(d))
    lam_pk = math.sqrt(2) * 230 / (2 * math.pi * 50)
    for model, L in (("fe", res.fe.values["inductance"]), ("hand", res.hand_planar.inductance)):
        ref, _ = rl_first_peak(230.0, 50.0, L, 400.0, 0.6 * lam_pk / L)
        assert res.drive.inrush[model] == pytest.approx(ref, rel=2e-6)
        assert res.drive.inrush_linkage[model] == pytest.approx(L * ref, rel=2e-6)
    assert res.drive.inrush["fe"] < 0.9 * 2.6 * lam_pk / res.fe.values["inductance"]
    doc = check_json(res)
    assert doc["fe"]["inrush"]["resistance"] == 400.0
    rows = {r.key: r for r in res.rows}
    assert "400 ohm" in rows["inrush_current_peak"].label
    # the note's coupling from the leakage row: L_s = L_11 (1 - k^2) (the
    # issue's definition), the FE's with its 3D self-inductance
    k_fe = math.sqrt(1 - rows["leakage_inductance"].fe / rows["L:primary,primary"].fe_3d)
    note = next(n for n in res.notes if "coupling that leakage implies" in n)
    assert f"{k_fe:.5f} FE" in note and 0.9 < k_fe < 1.0


def _tanh_curve(a: float = 1.0, b: float = 0.2, c: float = 0.01):
    # lambda = a tanh(i/b) + c i and its slope: saturating, slope c past the knee
    return (lambda i: (a * math.tanh(i / b) + c * i, a / b * (1 - math.tanh(i / b) ** 2) + c))


def _lists(f, i0: float = 0.1, slope0: float | None = None):
    """The curve's lists from (0, 0) and i0, and a solve that appends to them
    (continue_curve's contract); slope0 overrides the slope at i0."""
    i, lam, sl = [0.0, i0], [0.0, f(i0)[0]], [math.nan, f(i0)[1] if slope0 is None else slope0]

    def solve(x):
        y, d = f(x)
        i.append(x)
        lam.append(y)
        sl.append(d)

    return i, lam, sl, solve


def test_curve_continuation_reaches_the_target_on_a_saturating_curve():
    # Source: the analytic curve above, its root by brentq (test only); the
    # continuation's last point lies past the target and within the 1 % aim
    # plus the curve's concavity, and no step exceeds 3x the current
    from scipy.optimize import brentq

    from magcheck.compare.models.drive import continue_curve

    f = _tanh_curve()
    i, lam, sl, solve = _lists(f)
    continue_curve(solve, i, lam, sl, 1.8, 1e4, 30)
    assert lam[-1] >= 1.8 and lam[-2] < 1.8
    assert lam[-1] <= 1.01 * 1.8 + 1e-12
    assert all(b <= 3.0 * a + 1e-12 for a, b in zip(i[1:], i[2:]))
    ref = brentq(lambda x: f(x)[0] - 1.8, 0.0, 1e3, xtol=1e-14)
    assert i[-2] < ref <= i[-1]
    # a NaN slope falls back on the 3x step
    i2, lam2, sl2, solve2 = _lists(f, slope0=math.nan)
    continue_curve(solve2, i2, lam2, sl2, 0.9, 1e4, 30)
    assert i2[2] == pytest.approx(0.3, rel=1e-15)


def test_curve_continuation_that_cannot_reach_says_so():
    from magcheck.compare.models.drive import continue_curve
    from magcheck.compare.errors import RunError

    i, lam, sl, solve = _lists(_tanh_curve(c=0.0))  # never above 1 Wb-turn
    with pytest.raises(RunError, match="short of the inrush"):
        continue_curve(solve, i, lam, sl, 1.5, 1e4, 30)
    i, lam, sl, solve = _lists(_tanh_curve(c=1e-9))
    with pytest.raises(RunError, match="after 5 solves"):
        continue_curve(solve, i, lam, sl, 1.5, 1e30, 5)
    assert len(i) == 2 + 5


def test_concentric_leakage_formula_typed_again():
    # Source: L_s = mu0 N^2 (MLT/h_w)(a1/3 + a2/3 + d), the classic formula
    # for two concentric windings (Kulkarni and Khaparde, Transformer
    # Engineering, 2004, ch. 3 [from memory]); the demo's mean turn round the
    # 25 x 30 mm centre limb at the middle of the 0.5 mm space, typed again
    from magcheck.compare.models.coupling import hand_leakage, mean_turn

    case = case_from_dict(_doc())
    e = 0.8e-3 + 5e-3 + 0.25e-3
    mlt = 2 * (25e-3 + 30e-3) + 2 * math.pi * e
    assert mean_turn(case, case.windings[0], case.windings[1]) == pytest.approx(mlt, rel=1e-12)
    ref = mu_0 * 1000 ** 2 * mlt / 35e-3 * (5e-3 / 3 + 5e-3 / 3 + 0.5e-3)
    assert hand_leakage(case) == pytest.approx(ref, rel=1e-12)


@pytest.mark.slow
def test_fe_leakage_equals_the_short_circuit_inductance_of_its_matrix():
    # Source: exact for a linear field problem: the energy of balanced
    # ampere-turns is (1/2) I1^2 (L11 - L12^2 / L22) (the short-circuit
    # inductance); both scaled by the same mean-turn rule
    from magcheck.compare.models.coupling import fe_leakage, mean_turn
    from magcheck.compare.models.fe import mesh_case, solve_case
    from magcheck.fem2d import post

    d = _linear(_doc())
    d["fe"] = {"mesh_size": "4 mm"}
    case = case_from_dict(d)
    mesh = mesh_case(case)
    ls = fe_leakage(case, mesh)
    _, sol, _ = solve_case(case, mesh)
    m = post.inductance_matrix(sol)
    L = m.incremental
    sc = (L[0][0] - L[0][1] ** 2 / L[1][1]) * 0.5 * mean_turn(case, *case.windings[:2]) / 30e-3
    # 1e-3: the matrix form is a difference of entries 500 times larger than
    # L_s, each to the tangent solve's tolerance (1.3e-4 found)
    assert ls == pytest.approx(sc, rel=1e-3)


def test_drive_rows_fe_3d_under_the_checks_depth_model():
    """The drive rows' FE 3D column takes the hand 3D / planar ratio of the
    depth model the check chose (compare.judge.check.choose_depth_model), like
    every other FE 3D value; without one, the case's own model's ratio, which
    is the drive's own hand_3d / hand (the same lambda-i recipe)."""
    import types

    from magcheck.analytic.magnetizing import magnetizing_current
    from magcheck.compare.judge.check import DepthCorrection, drive_rows
    from magcheck.compare.models.drive import hand_curve, hand_depth_ratios, hand_peak_current

    doc = tomllib.loads((CASE.parent / "demo_choke.toml").read_text())
    doc["winding"].pop("current")
    doc["winding"].update(voltage="4 V", frequency="50 Hz")  # about 5 A peak
    case = case_from_dict(doc)
    assert case.hand.fringing == "area"
    lam_pk = math.sqrt(2) * 4 / (2 * math.pi * 50)
    m = {p: magnetizing_current(*hand_curve(case, p, 1.02 * hand_peak_current(case, p)),
                                lam_pk, 50.0) for p in (True, False)}
    fe_m = dataclasses.replace(m[True], peak=1.02 * m[True].peak, rms=1.02 * m[True].rms)

    def values(model):
        mm = {"hand": m[True], "hand_3d": m[False], "fe": fe_m}[model]
        return {"B_peak": 1.0, "B_limb_peak": 1.0, "magnetizing_current_peak": mm.peak,
                "magnetizing_current_rms": mm.rms, "magnetizing_inductance": mm.inductance}

    drive = types.SimpleNamespace(values=values, uncertainty={}, hand=m[True], hand_3d=m[False],
                                  fe=fe_m, inrush={})
    keys = ("magnetizing_current_peak", "magnetizing_current_rms")
    own = {r.key: r.fe_3d for r in drive_rows(case, drive) if r.key in keys}
    own_ratio = hand_depth_ratios(case)
    chosen = {r.key: r.fe_3d for r in drive_rows(case, drive, DepthCorrection("flux-tube", {}, {}))
              if r.key in keys}
    ratio = hand_depth_ratios(case, "flux-tube")
    for k in keys:
        # the same hand solves in the same order: to rounding
        assert own[k] == pytest.approx(values("fe")[k] * values("hand_3d")[k] / values("hand")[k],
                                       rel=1e-12)
        assert own_ratio[k] == pytest.approx(values("hand_3d")[k] / values("hand")[k], rel=1e-12)
        assert chosen[k] == pytest.approx(values("fe")[k] * ratio[k], rel=1e-12)
        # depth fringing adds gap permeance: less current for the same flux
        # linkage, and the two models' corrections differ (what this tells apart)
        assert ratio[k] < 1.0 and abs(ratio[k] / own_ratio[k] - 1) > 1e-3
