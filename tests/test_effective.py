"""IEC 60205 effective parameters and the hand model built on them."""

from __future__ import annotations

import pytest
from scipy.constants import mu_0

from analytic.effective import EffectiveParametersError, effective_parameters
from compare.casefile import case_from_dict
from compare.errors import CaseError
from compare.hand import run_hand


def test_effective_parameters_of_two_parts():
    # Source: IEC 60205 definitions C1 = sum l/A, C2 = sum l/A^2,
    # l_e = C1^2/C2, A_e = C1/C2; evaluated by hand for 40 mm at 100 mm^2
    # and 60 mm at 200 mm^2: C1 = 400 + 300 = 700 /m,
    # C2 = 4e6 + 1.5e6 = 5.5e6 /m^3, l_e = 0.0890909 m, A_e = 1.27273e-4 m^2.
    e = effective_parameters([(0.040, 100e-6), (0.060, 200e-6)])
    assert e.c1 == pytest.approx(700.0, rel=1e-12)
    assert e.c2 == pytest.approx(5.5e6, rel=1e-12)
    assert e.length == pytest.approx(700.0**2 / 5.5e6, rel=1e-12)
    assert e.area == pytest.approx(700.0 / 5.5e6, rel=1e-12)
    assert e.volume == pytest.approx(e.length * e.area, rel=1e-12)
    # a uniform core is its own effective core
    u = effective_parameters([(0.03, 1e-4), (0.05, 1e-4)])
    assert (u.length, u.area) == pytest.approx((0.08, 1e-4), rel=1e-12)


def test_bad_part_names_the_value():
    with pytest.raises(EffectiveParametersError, match="area"):
        effective_parameters([(0.01, 0.0)])


def _window(mu_r, fringing="none", **hand):
    return case_from_dict({
        "case": {"name": "eff", "family": "window-core"},
        "core": {"outer_width": "60 mm", "outer_height": "70 mm", "depth": "20 mm",
                 "limb_width": {"left": "10 mm", "right": "14 mm", "top": "8 mm",
                                "bottom": "12 mm"}},
        "gaps": [{"limb": "right", "length": "0.5 mm"}],
        "winding": {"limb": "left", "turns": 80, "current": "2 A", "thickness": "8 mm",
                    "length": "30 mm"},
        "materials": {"core": mu_r if isinstance(mu_r, str) else {"mu_r": mu_r}},
        "hand": {"fringing": fringing, **hand},
    })


def test_linear_core_keeps_its_reluctance_and_carries_one_flux_density():
    # Linear core: l_e/A_e = C1, so the circuit is the segment model's
    # (exact); B is uniform: flux / A_e.
    seg = run_hand(_window(400.0), planar=True)
    eff = run_hand(_window(400.0, effective_parameters=True), planar=True)
    assert eff.inductance == pytest.approx(seg.inductance, rel=1e-9)
    case = _window(400.0)
    parts, _ = case.family_model.effective_path(case.core)
    e = effective_parameters([(length - (0.5e-3 if limb == "right" else 0.0), area)
                              for limb, length, area in parts])
    assert eff.core_B == pytest.approx(abs(eff.flux) / e.area, rel=1e-9)
    assert eff.path_H == pytest.approx(eff.core_B / (mu_0 * 400.0), rel=1e-9)
    assert eff.refinements == ("effective parameters",)


def test_nonlinear_core_differs_from_the_segments_when_limbs_differ():
    # Unequal limbs near saturation: one B on A_e against each limb's own B.
    seg = run_hand(_window("demo-sisteel"), planar=True)
    eff = run_hand(_window("demo-sisteel", effective_parameters=True), planar=True)
    assert eff.inductance != pytest.approx(seg.inductance, rel=1e-6)


def test_ei_gap_off_the_single_loop_is_refused():
    case = case_from_dict({
        "case": {"name": "ei", "family": "ei-core"},
        "core": {"centre_width": "16 mm", "window_width": "10 mm", "window_height": "30 mm",
                 "depth": "20 mm"},
        "gaps": [{"limb": "left", "length": "0.3 mm"}],
        "winding": {"limb": "centre", "turns": 50, "current": "1 A", "thickness": "6 mm",
                    "length": "26 mm"},
        "materials": {"core": {"mu_r": 2000.0}},
        "hand": {"effective_parameters": True},
    })
    with pytest.raises(CaseError) as exc:
        run_hand(case)
    assert exc.value.key == "gaps[0].limb" and exc.value.value == "left"
