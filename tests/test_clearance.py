"""The winding's clearance to its limb (the bobbin wall): geometry, input
checks, and its effect on both models' window leakage."""
from __future__ import annotations

import tomllib
from dataclasses import replace
from pathlib import Path

import pytest
from scipy.constants import mu_0

from magcheck.compare.reading.casefile import case_from_dict
from magcheck.compare.errors import CaseError
from magcheck.compare.models.fe import case_layout, run_fe
from magcheck.compare.models.hand import run_hand
from magcheck.compare.design.keys import key_dimension, parse_vary

from study_cases import ideal_window_core

CASES = Path(__file__).resolve().parents[1] / "cases"


def _with_winding(**changes) -> dict:
    data = tomllib.loads((CASES / "demo_choke.toml").read_text())
    data["winding"].update(changes)
    return data


def test_the_coil_sides_stand_off_the_limb_by_the_clearance():
    # demo choke: left limb x in [0, 12] mm, coil build 10 mm; with 0.8 mm
    # clearance the window-side coil starts at 12.8 mm and the outer one
    # ends at -0.8 mm (exact geometry)
    case = case_from_dict(_with_winding(clearance="0.8 mm"))
    assert case.winding.clearance == pytest.approx(0.8e-3, abs=1e-15)
    regions = {r.name: r for r in case_layout(case).regions}
    plus, minus = regions["coil+"].shapes[0], regions["coil-"].shapes[0]
    assert plus.x0 == pytest.approx(12.8e-3, abs=1e-12)
    assert plus.x1 == pytest.approx(22.8e-3, abs=1e-12)
    assert minus.x1 == pytest.approx(-0.8e-3, abs=1e-12)
    assert minus.x0 == pytest.approx(-10.8e-3, abs=1e-12)
    # no clearance: today's geometry, the coil on the limb
    regions0 = {r.name: r for r in case_layout(case_from_dict(_with_winding())).regions}
    assert regions0["coil+"].shapes[0].x0 == pytest.approx(12e-3, abs=1e-12)


def test_fill_takes_its_fraction_of_the_width_left_beside_the_clearance():
    data = tomllib.loads((CASES / "demo_ei_inductor.toml").read_text())
    data["winding"]["clearance"] = "0.8 mm"
    case = case_from_dict(data)
    # window width 12 mm, fill 0.7: 0.7 x (12 - 0.8) mm
    assert case.winding.thickness == pytest.approx(0.7 * 11.2e-3, rel=1e-12)


@pytest.mark.parametrize("changes, key, words", [
    ({"clearance": "-1 mm"}, "winding.clearance", "must be >= 0"),
    ({"clearance": "40 mm"}, "winding.clearance", "less than the 36 mm window width"),
    ({"clearance": "27 mm"}, "winding.thickness", "plus the 27 mm clearance"),
    ({"clearance": "nan mm"}, "winding.clearance", None),
    ({"clearance": "2 A"}, "winding.clearance", "length"),
])
def test_bad_clearance_names_the_key(changes, key, words):
    with pytest.raises(CaseError, match=words) as exc:
        case_from_dict(_with_winding(**changes))
    assert exc.value.key == key


def test_clearance_is_a_sweep_and_tolerance_key():
    assert key_dimension("winding.clearance") == "length"
    assert parse_vary("winding.clearance=0mm,0.5mm,1mm").values == pytest.approx(
        (0.0, 0.5e-3, 1e-3))


def test_the_yoke_to_yoke_bypass_leaves_out_the_clearance():
    # Source: exact solution of the linear circuit with ideal iron
    # (mu_r = 1e6), as tests/test_leakage.py: the gap and the yoke-to-yoke
    # path mu0 d (w - c - t + t/3)/h in parallel (a line in the clearance
    # encloses the whole coil side, so with the gap taking N I it sees no
    # MMF), plus the across-window leakage, which depends on the coil's span
    # along the limb only.  Window 40 x 40 mm, t = 6 mm, c = 3 mm.
    base = ideal_window_core(60, 60, leakage=True)
    case = replace(base, winding=replace(base.winding, clearance=3e-3))
    h = run_hand(case, planar=True)
    p_gap = mu_0 * 10e-3 * 20e-3 / 0.5e-3
    p_bypass = mu_0 * 20e-3 * (40e-3 - 3e-3 - 6e-3 + 2e-3) / 40e-3
    assert h.inductance == pytest.approx(100**2 * (p_gap + p_bypass + h.leakage_permeance),
                                         rel=1e-3)
    assert h.leakage_permeance == pytest.approx(run_hand(base, planar=True).leakage_permeance,
                                                rel=1e-4)


@pytest.mark.slow
def test_both_models_lose_leakage_inductance_as_the_coil_stands_off():
    # Consistency of the two models (no outside reference): moving the coil
    # 6 mm off the limb lowers both inductances, the FE by 5.9e-5 H and the
    # hand model by 3.8e-5 H (measured; the hand bypass is a straight-line
    # estimate, so only the sign and the order of magnitude are held)
    base = ideal_window_core(60, 60, leakage=True)
    off = replace(base, winding=replace(base.winding, clearance=6e-3))
    dh = run_hand(off, planar=True).inductance - run_hand(base, planar=True).inductance
    dfe = run_fe(off)[0].values["inductance"] - run_fe(base)[0].values["inductance"]
    assert dh < 0 and dfe < 0
    assert 0.3 < dh / dfe < 1.5
