"""Sign of the winding current: both models keep it, magnitudes stay magnitudes.

Source (for every check here): exact symmetry. The planar magnetostatic
problem curl(nu(|B|) curl A) = J with an isotropic B-H law, H(-B) = -H(B),
is odd in J: A(-J) = -A(J). So reversing the current reverses flux, flux
linkage, gap B and every segment's B, H, flux and MMF drop, and keeps |B|,
|H|, energy and both inductances. The same holds for the reluctance network
(its branch laws are odd functions of the flux).
"""

from __future__ import annotations

import math
from pathlib import Path

import pytest

from magcheck.compare.reading.casefile import load_case
from magcheck.compare.judge.check import _diff_pct, _verdict
from magcheck.compare.models.fe import mesh_case, solve_case
from magcheck.compare.models.hand import run_hand
from magcheck.compare.design.case import with_current

CASES = Path(__file__).resolve().parent.parent / "cases"

SIGNED = ("gap_B", "flux", "flux_linkage")
UNSIGNED = ("core_B", "path_H", "inductance", "incremental_inductance", "energy")


@pytest.mark.parametrize("planar", [False, True])
@pytest.mark.parametrize("name", ["demo_choke.toml", "demo_saturating_choke.toml"])
def test_hand_model_is_odd_in_the_current(name: str, planar: bool) -> None:
    case = load_case(CASES / name)
    i = case.winding.current
    assert i > 0
    pos = run_hand(with_current(case, i), planar=planar)
    neg = run_hand(with_current(case, -i), planar=planar)
    # Tolerance 1e-9 relative: the network Newton converges to ~1e-12 and the
    # solve is the same up to the sign of the source.
    for k in SIGNED:
        assert pos.values()[k] > 0
        assert neg.values()[k] == pytest.approx(-pos.values()[k], rel=1e-9), k
    for k in UNSIGNED:
        assert neg.values()[k] > 0
        assert neg.values()[k] == pytest.approx(pos.values()[k], rel=1e-9), k
    for sp, sn in zip(pos.segments, neg.segments):
        for k in ("flux", "B", "H", "mmf_drop"):
            assert sn[k] == pytest.approx(-sp[k], rel=1e-9, abs=1e-300), (sp["name"], k)
            if sp[k] != 0:
                assert math.copysign(1.0, sn[k]) == -1.0
        assert sn["energy"] == pytest.approx(sp["energy"], rel=1e-9)


def test_differences_and_verdicts_do_not_depend_on_the_sign() -> None:
    # Source: exact - (hand - FE)/FE is unchanged when both change sign.
    assert _diff_pct(-1.0, -1.1) == pytest.approx(_diff_pct(1.0, 1.1), rel=1e-12)
    assert _diff_pct(1.0, 1.1) == pytest.approx(-100 * 0.1 / 1.1, rel=1e-12)
    d_neg, d_pos = _diff_pct(-1.0, -1.2), _diff_pct(1.0, 1.2)
    assert _verdict(d_neg, -1.0, -1.2, 0.001, 10.0) == _verdict(d_pos, 1.0, 1.2, 0.001, 10.0) == "FAIL"
    assert _verdict(_diff_pct(-1.0, -1.05), -1.0, -1.05, 0.001, 10.0) == "pass"


@pytest.mark.slow
def test_fe_is_odd_in_the_current() -> None:
    case = load_case(CASES / "demo_choke.toml")
    mesh = mesh_case(case)
    i = case.winding.current
    pos, _, _ = solve_case(with_current(case, i), mesh)
    neg, _, _ = solve_case(with_current(case, -i), mesh)
    # Tolerance 1e-6 relative: each Newton solve stops at a relative residual
    # of [fe] tol = 1e-8; the two solutions agree to about that times the
    # conditioning of the nonlinear step, far below the 1e-4 a sign bug would
    # hide behind (a sign error is a 200 % difference).
    for k in SIGNED:
        assert pos.values[k] > 0
        assert neg.values[k] == pytest.approx(-pos.values[k], rel=1e-6), k
    for k in UNSIGNED:
        assert neg.values[k] > 0
        assert neg.values[k] == pytest.approx(pos.values[k], rel=1e-6), k
    assert neg.peak_B == pytest.approx(pos.peak_B, rel=1e-6)


def test_a_zero_fe_value_gets_no_verdict() -> None:
    # No relative difference exists against a zero FE value; equal zeros are
    # not "within FE noise" but not comparable (n/a).
    assert _verdict(_diff_pct(0.0, 0.0), 0.0, 0.0, 0.0, 10.0) == "n/a"
    assert _verdict(_diff_pct(1e-3, 0.0), 1e-3, 0.0, 0.0, 10.0) == "n/a"


@pytest.mark.slow
def test_zero_current_check_reports_small_signal_inductance_and_na() -> None:
    import json

    from magcheck.compare.reading.casefile import case_from_dict
    from magcheck.compare.judge.check import ZERO_AT_ZERO_CURRENT, run_check
    import tomllib

    from magcheck.compare.outputs.output import _clean
    from magcheck.compare.outputs.serialize import check_json, table_cells

    data = tomllib.loads((CASES / "demo_choke.toml").read_text())
    data["winding"]["current"] = "0 A"
    case = case_from_dict(data, base_dir=CASES)
    res = run_check(case)
    rows = {r.key: r for r in res.rows}
    for k in ZERO_AT_ZERO_CURRENT:
        r = rows[k]
        # Source: exact - with no source current both fields are identically zero.
        assert r.hand == 0.0 and r.fe == 0.0, k
        assert math.isnan(r.diff_pct) and r.verdict == "n/a", k
        assert "nan" not in " ".join(table_cells(r)), k
    # The secant inductance at I = 0 is its small-signal limit, dlambda/dI at 0.
    for model in (res.hand_planar, res.hand_3d):
        assert model.inductance == pytest.approx(model.incremental_inductance, rel=1e-12)
        assert model.inductance > 0
    assert rows["inductance"].fe == pytest.approx(rows["incremental_inductance"].fe, rel=1e-12)
    assert rows["inductance"].verdict in ("pass", "FAIL")
    assert math.isfinite(rows["inductance"].diff_pct)
    assert any(n.startswith("At zero current") for n in res.notes)
    doc = _clean(check_json(res))  # what write_json writes
    text = json.dumps(doc, allow_nan=False)  # valid JSON: non-finite values are null
    assert "NaN" not in text
    by_key = {r["quantity"]: r for r in doc["comparison"]}
    assert by_key["flux"]["difference_pct"] is None and by_key["flux"]["verdict"] == "n/a"


def test_saturation_current_and_inductance_do_not_depend_on_the_sign() -> None:
    # Source: exact symmetry (module docstring) - L(-I) = L(I), so the
    # current at which L has dropped by d is the same |I| for both signs.
    from magcheck.compare.judge.margins import hand_saturation_current, saturation_from_curve
    case = load_case(CASES / "demo_saturating_choke.toml")
    i = case.winding.current
    pos = hand_saturation_current(with_current(case, i), 0.2)
    neg = hand_saturation_current(with_current(case, -i), 0.2)
    assert math.isfinite(pos) and pos > 0
    # Tolerance 1e-6 relative: Brent's method stops at rtol = 1e-6.
    assert neg == pytest.approx(pos, rel=1e-6)
    currents = [0.0, 1.0, 2.0, 3.0, 4.0, 6.0, 8.0]
    ls = [run_hand(with_current(case, c)).incremental_inductance for c in currents]
    ls_neg = [run_hand(with_current(case, -c)).incremental_inductance for c in currents]
    assert ls_neg == pytest.approx(ls, rel=1e-9)
    assert saturation_from_curve([-c for c in currents], ls_neg) == pytest.approx(
        saturation_from_curve(currents, ls), rel=1e-12, nan_ok=True)
