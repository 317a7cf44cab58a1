"""IEC 60205 effective parameters and the hand model built on them."""

from __future__ import annotations

import pytest
from scipy.constants import mu_0

from magcheck.analytic.effective import EffectiveParametersError, effective_parameters
from magcheck.compare.reading.casefile import case_from_dict
from magcheck.compare.errors import CaseError
from magcheck.compare.models.hand import run_hand


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


# ---------------------------------------------------------------- every family's effective path
# The effective parameters of each family with an effective path, against
# IEC 60205's sums written out here from the dimensions (not from the
# family's segments): a part's length and area wrong, or a parallel pair not
# combined into one part of twice the area, moves l_e, A_e and the L they give.

def _iec_60205(parts):
    # Source: IEC 60205 (effective parameters of magnetic piece parts):
    # C1 = sum l_i/A_i, C2 = sum l_i/A_i^2, l_e = C1^2/C2, A_e = C1/C2;
    # parts carrying equal shares in parallel count as one part of their
    # summed area.
    c1 = sum(length / area for length, area in parts)
    c2 = sum(length / area**2 for length, area in parts)
    return c1, c1**2 / c2, c1 / c2


def _ei(mu_r, gap_mm=0.4, **hand):
    return case_from_dict({
        "case": {"name": "ei", "family": "ei-core"},
        "core": {"centre_width": "16 mm", "outer_width": "9 mm", "yoke_width": "7 mm",
                 "window_width": "10 mm", "window_height": "30 mm", "depth": "20 mm"},
        "gaps": [{"limb": "centre", "length": f"{gap_mm} mm"}] if gap_mm else [],
        "winding": {"limb": "centre", "turns": 50, "current": "1 A", "thickness": "6 mm",
                    "length": "26 mm"},
        "materials": {"core": {"mu_r": mu_r}},
        "hand": {"fringing": "none", **hand},
    })


def _ei_parts(gap):
    # EI core (invented for the test): centre c = 16, outer limbs o = 9,
    # yokes y = 7, window 10 x 30 mm, stack d = 20 mm. Mean path through the
    # limbs' centre lines (ei_core.segments docstring, common practice, no
    # source): the centre limb and each outer limb run yoke centre line to
    # yoke centre line, 30 + 7 = 37 mm; each yoke from the outer limb's
    # centre line to the half centre limb's centre line,
    # o/2 + window + c/4 = 4.5 + 10 + 4 = 18.5 mm.  The two outer paths
    # (yoke, outer limb, yoke) carry half the flux each: IEC 60205 combines
    # them into one path of twice the area.
    d = 20e-3
    return [(37e-3 - gap, 16e-3 * d),
            (18.5e-3, 2 * 7e-3 * d), (37e-3, 2 * 9e-3 * d), (18.5e-3, 2 * 7e-3 * d)]


def _window_parts(gap):
    # _window above: 60 x 70 mm, limbs left 10, right 14, top 8, bottom 12 mm,
    # d = 20 mm; each limb runs corner centre line to corner centre line:
    # the vertical ones 70 - 8/2 - 12/2 = 60 mm, the horizontal ones
    # 60 - 10/2 - 14/2 = 48 mm; all four in series.  The gap is in the right limb.
    d = 20e-3
    return [(60e-3, 10e-3 * d), (48e-3, 8e-3 * d), (60e-3 - gap, 14e-3 * d), (48e-3, 12e-3 * d)]


@pytest.mark.parametrize("family", ["ei-core", "window-core"])
def test_effective_parameters_against_iec_60205_sums_written_out(family):
    mu_r = 2000.0
    if family == "ei-core":
        case, gap, n, face = _ei(mu_r, effective_parameters=True), 0.4e-3, 50, 16e-3 * 20e-3
        parts = _ei_parts(gap)
    else:
        case, gap, n, face = _window(mu_r, effective_parameters=True), 0.5e-3, 80, 14e-3 * 20e-3
        parts = _window_parts(gap)
    c1, l_e, a_e = _iec_60205(parts)
    got_parts, _ = case.family_model.effective_path(case.core)
    got = effective_parameters([(length - (gap if limb == case.gaps[0].limb else 0.0), area)
                                for limb, length, area in got_parts])
    # tolerance 1e-12: the same sums of the same numbers (rounding only)
    assert got.c1 == pytest.approx(c1, rel=1e-12)
    assert got.length == pytest.approx(l_e, rel=1e-12)
    assert got.area == pytest.approx(a_e, rel=1e-12)
    # The hand model on a linear core with no fringing: the core's reluctance
    # l_e / (mu A_e) = C1/mu in series with the gap's g / (mu0 A_face);
    # L = N^2 / R (exact for the circuit; Ampere's law round the loop), the
    # incremental L the same, B the flux over A_e.
    h = run_hand(case, planar=True)
    want = n**2 / (l_e / (mu_0 * mu_r * a_e) + gap / (mu_0 * face))
    # tolerance 1e-9: the network's linear solve to its residual (exact circuit)
    assert h.inductance == pytest.approx(want, rel=1e-9)
    assert h.incremental_inductance == pytest.approx(want, rel=1e-9)
    assert h.core_B == pytest.approx(abs(h.flux) / a_e, rel=1e-9)
    # and the segment model of the same linear core gives the same L (IEC
    # 60205's point: l_e/A_e = C1 keeps the reluctance)
    seg_case = _ei(mu_r) if family == "ei-core" else _window(mu_r)
    assert run_hand(seg_case, planar=True).inductance == pytest.approx(want, rel=1e-9)


def test_ei_effective_core_without_a_gap():
    # No gap: the whole loop is iron, L = mu0 mu_r N^2 A_e / l_e = mu0 mu_r N^2 / C1
    # (IEC 60205: l_e / A_e = C1), exact for a linear core; tolerance 1e-9 as above.
    mu_r = 3000.0
    c1, l_e, a_e = _iec_60205(_ei_parts(0.0))
    h = run_hand(_ei(mu_r, gap_mm=0, effective_parameters=True), planar=True)
    assert h.inductance == pytest.approx(mu_0 * mu_r * 50**2 / c1, rel=1e-9)
    assert h.core_B == pytest.approx(abs(h.flux) / a_e, rel=1e-9)


def test_every_family_with_an_effective_path_is_checked_against_iec_60205():
    # A built-in family that gains an effective path must get its sums
    # written out in the test above: every other one refuses the setting
    # (before it looks at any dimensions).
    from magcheck.compare.design.families import BUILTIN

    checked = {"ei-core", "window-core"}
    for family in BUILTIN:
        if family.name in checked:
            continue
        with pytest.raises(CaseError) as exc:
            family.effective_path(None)
        assert exc.value.key == "hand.effective_parameters", family.name
    assert checked <= {f.name for f in BUILTIN}
