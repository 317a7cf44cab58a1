"""Window leakage of the hand model (analytic.leakage, compare.models.hand).

Closed forms: with straight field lines across a window of width w, depth d
and height h, the linkage-weighted permeance is (mu0 d / w) * integral u^2,
u the potential across the window over N I (analytic.leakage docstring)."""

from __future__ import annotations

import math
import tomllib
from pathlib import Path

import pytest
from scipy.constants import mu_0

from magcheck.analytic.leakage import LeakageError, window_leakage
from magcheck.compare.reading.casefile import case_from_dict
from magcheck.compare.models.hand import run_hand
from study_cases import ideal_window_core

CASES = Path(__file__).resolve().parents[1] / "cases"
W, D, H = 20e-3, 10e-3, 40e-3  # invented for the test
P_WINDOW = mu_0 * D * H / W


def test_coil_along_the_window_with_the_gap_at_one_end_sees_a_third():
    # Source: MMF rising linearly across a leakage path: 1/3 of the path's
    # permeance (Roters, Electromagnetic Devices, 1941 [from memory]); exact
    # integral of s^2 from 0 to 1. Tolerance 1e-9: piecewise Simpson, exact.
    lk = window_leakage(W, D, (0.0, H), (0.0, H))
    assert lk.permeance == pytest.approx(P_WINDOW / 3, rel=1e-9)


def test_gap_opposite_the_coils_middle_sees_a_twelfth():
    # u = s below the gap, s - 1 above: 2 * integral_0^(1/2) s^2 ds = 1/12 (exact).
    lk = window_leakage(W, D, (0.0, H), (0.0, H), steps=[(H / 2, 1.0)])
    assert lk.permeance == pytest.approx(P_WINDOW / 12, rel=1e-9)
    assert lk.middle_flux == pytest.approx(0.0, abs=1e-20)  # none of it passes the middle


def test_short_coil_and_off_centre_gap_against_a_written_out_integral():
    # Coil over [10, 30] mm of a 40 mm window, gap share 0.8 at 25 mm, 0.2
    # in the lo yoke (offset): u piecewise linear, integrated here by a fine
    # midpoint sum (independent of the module's Simpson pieces).
    c0, c1, yg = 10e-3, 30e-3, 25e-3
    n = 200000
    total = 0.0
    for k in range(n):
        t = (k + 0.5) * H / n
        s = min(max((t - c0) / (c1 - c0), 0.0), 1.0)
        u = s - 0.2 - (0.8 if t > yg else 0.0)
        total += u * u * H / n
    lk = window_leakage(W, D, (0.0, H), (c0, c1), steps=[(yg, 0.8)], offset=0.2)
    # Tolerance 1e-6: the midpoint sum's error near the step, ~(H/n)
    assert lk.permeance == pytest.approx(mu_0 * D / W * total, rel=1e-6)


def test_bad_window_names_the_value():
    with pytest.raises(LeakageError, match="width"):
        window_leakage(0.0, D, (0.0, H), (0.0, H))
    with pytest.raises(LeakageError, match="coil"):
        window_leakage(W, D, (0.0, H), (50e-3, 60e-3))


def _case(name: str, **hand):
    data = tomllib.loads((CASES / name).read_text())
    data["hand"] = {**data.get("hand", {}), **hand}
    return case_from_dict(data, base_dir=CASES)


@pytest.mark.parametrize("name", ["demo_choke.toml", "demo_ei_inductor.toml"])
def test_leakage_adds_its_permeance_to_both_inductances_and_the_energy(name):
    # Linear addition of the across-window part (module docstring) to the
    # network's own values (which hold the yoke-to-yoke bypass):
    # L = L_net + N^2 P, W = W_net + N^2 P I^2/2.
    from magcheck.compare.models.hand import WINDING_NAME

    on = run_hand(_case(name, leakage=True), planar=True)
    case = _case(name)
    n, i = case.winding.turns, case.winding.current
    add = n * n * on.leakage_permeance
    assert add > 0
    net = on.network
    assert on.inductance == pytest.approx(abs(net.inductance[WINDING_NAME]) + add, rel=1e-12)
    assert on.incremental_inductance == pytest.approx(
        net.incremental_inductance[WINDING_NAME] + add, rel=1e-12)
    assert on.energy == pytest.approx(net.energy + 0.5 * add * i * i, rel=1e-12)
    assert on.refinements == ("window leakage",)
    assert run_hand(case, planar=True).refinements == ()


def test_yoke_to_yoke_bypass_is_in_parallel_with_the_gap():
    # Source: exact solution of the linear circuit (Kirchhoff's laws of the
    # magnetic circuit), mu_r = 1e6, no fringing: the facing (right) limb's
    # iron and gap in parallel with the window's yoke-to-yoke path
    # mu0 d (w - t + t/3)/h, in series with the other three limbs; plus the
    # across-window leakage N^2 P_leak.  Window 40 x 40 mm, limbs 10 mm
    # (corner to corner 50 mm), coil build t = 6 mm, window height h = 40 mm.
    case = ideal_window_core(60, 60, leakage=True)
    h = run_hand(case, planar=True)
    mu, a = mu_0 * 1e6, 10e-3 * 20e-3
    r_other = 3 * 50e-3 / (mu * a)  # left, top, bottom
    r_facing = (50e-3 - 0.5e-3) / (mu * a) + 0.5e-3 / (mu_0 * a)
    p_bypass = mu_0 * 20e-3 * (40e-3 - 6e-3 + 6e-3 / 3) / 40e-3
    want = 100**2 * (1 / (r_other + 1 / (1 / r_facing + p_bypass)) + h.leakage_permeance)
    # tolerance 1e-9: the same linear circuit, solved by the network to its
    # residual (the iron's share of N I, 4e-4, is in both)
    assert h.inductance == pytest.approx(want, rel=1e-9)
    seg = {s["name"]: s for s in h.segments}
    assert seg["window0-bypass"]["kind"] == "leakage"


def _bypass_closed_form(width, clearance, build, height, depth):
    # Source: energy-equivalent permeance of a flux tube whose MMF varies
    # across it, (mu0 d / h) * integral of u(x)^2 dx over the window's width
    # (straight field lines from yoke to yoke; Roters, Electromagnetic
    # Devices, Wiley 1941, ch. on leakage permeance [from memory]).  u is the
    # part of the gap's MMF (all of N I with ideal iron) a line at x from the
    # winding limb sees: 0 in the clearance (it encloses the whole coil side),
    # rising linearly through the coil build, 1 beyond the coil.  Integrated
    # here numerically piece by piece (scipy quad), not from the code's t/3.
    from scipy.integrate import quad

    def u(x):
        return min(max((x - clearance) / build, 0.0), 1.0)

    edges = [0.0, clearance, clearance + build, width]
    total = sum(quad(lambda x: u(x) ** 2, a, b, epsabs=0.0, epsrel=1e-13)[0]
                for a, b in zip(edges[:-1], edges[1:]) if b > a)
    return mu_0 * depth / height * total


@pytest.mark.parametrize("name, clearance_mm", [
    ("demo_choke.toml", None), ("demo_ei_inductor.toml", None),
    ("demo_choke.toml", 3.0), ("demo_ei_inductor.toml", 1.5)])
def test_yoke_to_yoke_bypass_permeance_against_its_integral(name, clearance_mm):
    # Every window's bypass branch (compare.models.hand.window_bypass) of a window
    # core (one window) and an EI core (two), with and without a clearance
    # between limb and coil.
    from magcheck.compare.models.hand import window_bypass

    data = tomllib.loads((CASES / name).read_text())
    if clearance_mm is not None:
        data["winding"]["clearance"] = f"{clearance_mm} mm"
    case = case_from_dict(data, base_dir=CASES)
    w = case.winding
    windows = case.family_model.windows(case.core, w.limb)
    branches = window_bypass(case)
    assert len(branches) == len(windows) >= 1
    height = case.limbs[w.limb].span
    for win, br in zip(windows, branches):
        want = _bypass_closed_form(win.width, w.clearance, w.thickness, height, case.depth)
        # tolerance 1e-9: the same integral in closed form (t/3) against
        # adaptive quadrature of a piecewise polynomial (error ~1e-15)
        assert br.permeance == pytest.approx(want, rel=1e-9)
        assert br.length == pytest.approx(height, rel=1e-12)


@pytest.mark.slow
def test_leakage_brings_the_hand_inductance_toward_the_fe_for_three_window_shapes():
    # Ideal iron (mu_r = 1e6), gap 0.5 mm mid-way up the facing limb, coil on
    # the other limb; conformal fringing (planar form). The reference is the
    # planar FE.  Measured on this code (hand - FE, % of FE; README's
    # generated block leakage-windows, tools/make_readme.py):
    #   window  20x80 mm: no leakage -3.1, with leakage -0.9
    #   window  40x40 mm: no leakage -6.4, with leakage -2.5
    #   window  80x20 mm: no leakage -17.0, with leakage -3.3
    # The model's approximation (straight field lines, fringing of the gap
    # and the window paths added) is stated in analytic.leakage: assert that
    # the leakage always helps and that the remainder is inside 4 %.
    from magcheck.compare.models.fe import run_fe

    for ow, oh in ((40, 100), (60, 60), (100, 40)):
        q, _, _ = run_fe(ideal_window_core(ow, oh, "conformal"))
        l_fe = q.values["inductance"]
        off = run_hand(ideal_window_core(ow, oh, "conformal"), planar=True).inductance
        on = run_hand(ideal_window_core(ow, oh, "conformal", leakage=True), planar=True).inductance
        assert abs(on - l_fe) < abs(off - l_fe), (ow, oh)
        assert abs(on - l_fe) < 0.04 * l_fe, (ow, oh, on / l_fe)


def test_demo_choke_leakage_by_hand():
    # Demo choke: window 36 x 46 mm (span 12..58 mm), stack 20 mm, coil
    # 40 mm centred (15..55 mm), one gap mid-way up the facing limb.  The
    # potential across the window over N I (analytic.leakage docstring):
    # u(t) = s(t) - [bottom yoke's drop + (left + right limbs' drops per metre)
    # x (t - corner line)] - gap share [t > 35 mm], with the drops of the
    # solved network.  Integrated here by a fine midpoint sum; the gap takes
    # ~87 % of N I at 6 A (near the knee), the iron the rest.
    case = _case("demo_choke.toml", leakage=True)
    h = run_hand(case, planar=True)
    ni = abs(case.winding.mmf)
    seg = {s["name"]: s for s in h.segments}
    q = abs(seg["gap0"]["mmf_drop"]) / ni
    assert 0.8 < q < 1.0
    seg_len = 70e-3 - 12e-3  # corner to corner, 58 mm
    per_m = (abs(seg["left"]["mmf_drop"]) + abs(seg["right"]["mmf_drop"])) / ni / seg_len
    base = abs(seg["bottom"]["mmf_drop"]) / ni
    lo, hi, c0, c1, yg = 12e-3, 58e-3, 15e-3, 55e-3, 35e-3
    n = 200000
    total = 0.0
    for k in range(n):
        t = lo + (k + 0.5) * (hi - lo) / n
        s = min(max((t - c0) / (c1 - c0), 0.0), 1.0)
        u = s - base - per_m * (t - 6e-3) - (q if t > yg else 0.0)
        total += u * u * (hi - lo) / n
    p = mu_0 * 20e-3 / 36e-3 * total
    # tolerance 1e-5: the midpoint sum's error at the step
    assert h.leakage_permeance == pytest.approx(p, rel=1e-5)
    assert not math.isnan(h.flux)


