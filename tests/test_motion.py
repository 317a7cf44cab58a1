"""analytic/motion.py: the load line, pull-in and drop-out, the coupled motion,
each against an exact solution (docs/references.md section 14)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from magcheck.analytic.motion import (ForceMap, GapActuator, GridMap, Load, MotionError, Spring,
                                      release_current,
                                      coil_resistance, drop_out_current, limit_voltage, load_margin,
                                      operate, pull_in_current, release, series_springs,
                                      simulate)

# an invented actuator: K = N^2 mu0 A, closed gap 0.2 mm, travel 2 mm
K, GC, T = 2.0e-5, 0.2e-3, 2.0e-3
ACT = GapActuator(K, GC, T)


def test_load_line_piecewise_with_contact_spring_and_weight():
    load = Load(T, (Spring(500.0, 1.0), Spring(2000.0, 0.5, engage=1.5e-3)), weight=0.2)
    # Source: exact (Hooke's law, forces in parallel add)
    assert load.force(1.0e-3) == pytest.approx(0.2 + 1.0 + 500.0 * 1.0e-3, rel=1e-14)
    assert load.force(2.0e-3) == pytest.approx(0.2 + 1.0 + 1.0 + 0.5 + 2000.0 * 0.5e-3, rel=1e-14)
    assert list(load.breakpoints()) == [0.0, 1.5e-3, 2.0e-3]
    # Source: exact (series springs carry one force: 1/k = 1/k1 + 1/k2)
    assert series_springs((300.0, 600.0)).rate == pytest.approx(200.0, rel=1e-14)


@pytest.mark.parametrize("make, word", [
    (lambda: Load(T, (Spring(100.0, solid=1.0e-3),)), "solid"),
    (lambda: Load(T, (Spring(100.0, engage=3.0e-3),)), "engage"),
    (lambda: Load(T, table_strokes=(0.0, 1.0e-3), table_forces=(1.0, 2.0)), "whole travel"),
    (lambda: Load(T, table_strokes=(0.5e-3, 2.0e-3), table_forces=(1.0, 2.0)), "whole travel"),
    (lambda: Load(T, (Spring(-1.0),)), "rate"),
    (lambda: Load(0.0, (Spring(1.0),)), "travel"),
])
def test_bad_load_lines_refused(make, word):
    with pytest.raises(MotionError, match=word):
        make()
    assert issubclass(MotionError, ValueError)


def test_fixed_armature_current_is_the_rl_circuits():
    v, r = 12.0, 30.0
    load = Load(T, (Spring(100.0, 1.0),))
    L = ACT.inductance(0.0)
    mo = simulate(ACT.linkage, ACT.force, load, 1.0, r, v, 5 * L / r, held=True, i_max=10.0)
    exact = v / r * (1.0 - np.exp(-mo.t * r / L))
    # Source: exact solution of the first-order RL circuit, i = V/R (1 - exp(-t R/L));
    # tolerance 1e-7 of V/R: the integrator's rtol 1e-10 over a few time constants
    assert np.max(np.abs(mo.i - exact)) < 1e-7 * v / r
    assert mo.t[-1] == pytest.approx(5 * L / r, rel=1e-12)
    assert np.all(mo.s == 0.0)


def test_constant_force_on_a_spring_is_the_undamped_oscillator_until_the_stop():
    f0, k, m = 3.0, 2000.0, 0.01
    load = Load(T, (Spring(k),))
    omega = math.sqrt(k / m)
    mo = simulate(lambda i, s: 1e-3 * i, lambda i, s: f0, load, m, 1.0, 0.0, 1.0,
                  current=lambda lam, s: 1e3 * lam, stop_when="closed")
    # Source: exact solution of the undamped oscillator m s'' = F - k s, s(0) = s'(0) = 0:
    # s = F/k (1 - cos(omega t)), omega = sqrt(k/m); tolerance 1e-9 of the travel (rtol 1e-10)
    assert np.max(np.abs(mo.s - f0 / k * (1.0 - np.cos(omega * mo.t)))) < 1e-9 * T
    t_stop = math.acos(1.0 - k * T / f0) / omega
    # Source: exact, the same solution reaching s = T; tolerance 1e-8 relative (event root)
    assert mo.closed_time == pytest.approx(t_stop, rel=1e-8)
    assert mo.impact_speed == pytest.approx(f0 / k * omega * math.sin(omega * t_stop), rel=1e-7)


def _gap_pull_in(p, k):
    """Closed form for F = i^2 K/(2 z^2) (z = GC + T - s the gap) against P + k s:
    the margin m(s) is convex in s (m'' = 3 i^2 K / z^4 > 0); where its minimum
    is inside the travel, m'(s) = i^2 K / z^3 - k = 0, so i^2 K = k z^3 and
    m = k z / 2 - P - k (GC + T - z) = 0 gives z* = 2 (P + k (GC + T)) / (3 k),
    i^2 = k z*^3 / K (inside when 2 P < k (GC + T) and z* > GC)."""
    z = 2.0 * (p + k * (GC + T)) / (3.0 * k)
    return math.sqrt(k * z ** 3 / K), GC + T - z


def test_pull_in_against_the_gap_closed_form():
    p, k = 0.05, 400.0
    load = Load(T, (Spring(k, p),))
    i_exact, s_exact = _gap_pull_in(p, k)
    assert 0.0 < s_exact < T
    got = pull_in_current(ACT.force, load, 10.0)
    # Source: exact (derived above from L = K/z, F = (1/2) i^2 dL/ds); tolerance 1e-9: brentq's
    # 1e-13 and the bounded search of the minimum (the margin is flat there: the current
    # error is second order in the stroke error)
    assert got.current == pytest.approx(i_exact, rel=1e-9)
    assert got.stroke == pytest.approx(s_exact, rel=1e-4)  # flat minimum: sqrt(1e-13)-ish
    # preload-bound case: the minimum at the open stop, i = (GC + T) sqrt(2 P / K)
    p2 = 2.0
    got2 = pull_in_current(ACT.force, Load(T, (Spring(k, p2),)), 100.0)
    # Source: exact, F(i, 0) = P with m'(0) > 0 (2 P > k (GC + T))
    assert got2.current == pytest.approx((GC + T) * math.sqrt(2 * p2 / K), rel=1e-10)
    assert got2.stroke == 0.0


def test_drop_out_against_the_closed_armature_closed_form():
    p, k = 0.05, 400.0
    load = Load(T, (Spring(k, p),))
    got = drop_out_current(ACT.force, load, 10.0)
    # Source: exact, i^2 K / (2 GC^2) = P + k T at the closed stop
    assert got.current == pytest.approx(GC * math.sqrt(2 * (p + k * T) / K), rel=1e-11)
    r20 = 50.0
    # Source: the linear law R(T) = R20 (1 + 0.00393 (T - 20)), copper, from memory
    assert coil_resistance(r20, 70.0) == pytest.approx(r20 * (1 + 0.00393 * 50.0), rel=1e-14)
    assert limit_voltage(got, r20, 70.0) == pytest.approx(got.current * r20 * 1.1965, rel=1e-12)


def test_grid_map_pull_in_matches_the_closed_form_within_its_interpolation():
    p, k = 0.05, 400.0
    cur = np.linspace(0.0, 2.0, 41)
    strokes = np.linspace(0.0, T, 81)
    fmap = ForceMap(tuple(cur), tuple(strokes),
                    tuple(tuple(ACT.force(a, b) for b in strokes) for a in cur),
                    tuple(tuple(ACT.linkage(a, b) for b in strokes) for a in cur))
    i_exact, _ = _gap_pull_in(p, k)
    # Source: exact closed form above; tolerance 1e-3: the pchip interpolation error of
    # the map (h = 0.05 A, 0.025 mm on a 1/z^2 surface)
    assert pull_in_current(fmap.force, Load(T, (Spring(k, p),)), 2.0).current == \
        pytest.approx(i_exact, rel=1e-3)
    with pytest.raises(MotionError, match="rise"):
        ForceMap((0.0, 1.0), (0.0, T), ((0.0, 0.0), (1.0, 1.0)), ((1.0, 1.0), (0.5, 0.5)))


def test_energy_balance_of_the_coupled_motion():
    load = Load(T, (Spring(400.0, 0.05),))
    mo = operate(ACT.linkage, ACT.force, load, 0.005, 20.0, 24.0, 1.0, current=ACT.current,
                 max_step=2e-5)
    assert mo.closed_time is not None
    # Source: exact, F(i, 0) = P at the start of the motion, i = (GC + T) sqrt(2 P / K)
    assert mo.i_motion_start == pytest.approx((GC + T) * math.sqrt(2 * 0.05 / K), rel=1e-8)
    # the back-EMF dip: the current falls while the gap closes (this invented actuator
    # peaks near 1.08 A and closes at 0.22 A; a check of the sense, common practice, no source)
    assert mo.i_motion_min < 0.5 * mo.i_motion_peak
    assert mo.i_motion_min == pytest.approx(mo.i[-1])
    w_field = ACT.field_energy(mo.lam[-1], mo.s[-1]) - ACT.field_energy(mo.lam[0], mo.s[0])
    # Source: exact, v i = R i^2 + dW_field/dt + F ds/dt (conservation of energy, virtual work);
    # tolerance 1e-4 of the input energy: the integrator's rtol 1e-10 (a consistency check)
    assert abs(mo.e_in - mo.e_copper - w_field - mo.w_mech) < 1e-4 * mo.e_in
    # the mechanical work is the kinetic energy plus the load's work: independent of the field
    load_work = 0.05 * T + 0.5 * 400.0 * T ** 2
    assert mo.w_mech == pytest.approx(0.5 * 0.005 * mo.impact_speed ** 2 + load_work, rel=1e-6)


def test_release_with_a_suppression_resistor_and_without():
    load = Load(T, (Spring(400.0, 0.05),))
    i_hold = 1.0
    fast = release(ACT.linkage, ACT.force, load, 0.005, 20.0, i_hold, 1.0, current=ACT.current)
    slow = release(ACT.linkage, ACT.force, load, 0.005, 20.0, i_hold, 1.0, suppression=20.0,
                   current=ACT.current)
    assert fast.open_time is not None and slow.open_time is not None
    assert slow.open_time > fast.open_time  # the resistor keeps the current flowing
    # with the current zero at once the armature falls from the closed stop under the spring
    # alone; Source: exact, the spring's oscillator about s_e = -P/k from s = T, at rest:
    # s = s_e + (T - s_e) cos(omega t), reaching 0 at arccos(-s_e / (T - s_e)) / omega
    omega, s_e = math.sqrt(400.0 / 0.005), -0.05 / 400.0
    assert fast.open_time == pytest.approx(math.acos(-s_e / (T - s_e)) / omega, rel=1e-8)


def test_diode_release_of_a_held_armature():
    load = Load(T, (Spring(400.0, 0.05),))
    r, vd, i0 = 20.0, 0.7, 1.0
    L = ACT.inductance(T)
    mo = release(ACT.linkage, ACT.force, load, 0.005, r, i0, 0.05, diode_drop=vd,
                 current=ACT.current, held=True)
    t_zero = L / r * math.log(1.0 + r * i0 / vd)
    on = mo.t < t_zero * (1 - 1e-9)
    # Source: exact solution of L di/dt = -V_d - R i: i = (i0 + V_d/R) e^{-tR/L} - V_d/R,
    # zero at t = (L/R) ln(1 + R i0 / V_d); tolerance 1e-8 of i0 (rtol 1e-10)
    exact = (i0 + vd / r) * np.exp(-mo.t[on] * r / L) - vd / r
    assert np.max(np.abs(mo.i[on] - exact)) < 1e-8 * i0
    assert np.all(mo.i[mo.t > t_zero * (1 + 1e-9)] == 0.0)
    assert mo.t[np.argmax(mo.i <= 0.0)] == pytest.approx(t_zero, rel=1e-8)


def test_restitution_reverses_the_impact_speed():
    f0, k, m, e = 3.0, 2000.0, 0.01, 0.5
    load = Load(T, (Spring(k),))
    mo = simulate(lambda i, s: 1e-3 * i, lambda i, s: f0, load, m, 1.0, 0.0, 0.2,
                  current=lambda lam, s: 1e3 * lam, restitution=e, max_step=1e-4)
    omega, s_e, v0 = math.sqrt(k / m), f0 / k, -e * mo.impact_speed
    tau = mo.t - mo.closed_time
    back = (tau > 0) & (mo.s < T) & (tau < 0.5 * math.pi / omega)
    assert np.count_nonzero(back) > 5
    # Source: Newton's law of restitution (from memory): the speed after the impact is -e times
    # the speed before; then the exact oscillator from s = T at that speed,
    # s = s_e + (T - s_e) cos(omega tau) + (v0 / omega) sin(omega tau), s_e = F/k;
    # tolerance 1e-9 of the travel (rtol 1e-10)
    exact = s_e + (T - s_e) * np.cos(omega * tau[back]) + v0 / omega * np.sin(omega * tau[back])
    assert np.max(np.abs(mo.s[back] - exact)) < 1e-9 * T


def test_margin_at_a_current_names_the_tightest_stroke():
    p, k, i = 0.05, 400.0, 0.4
    mg = load_margin(ACT.force, Load(T, (Spring(k, p),)), i)
    # Source: derived, m'(s) = 0 at z^3 = i^2 K / k (convex margin), m = i^2 K/(2 z^2) - P - k s;
    # tolerance 1e-9 N (bounded search to 1e-12 of the travel on a flat minimum)
    z = (i * i * K / k) ** (1.0 / 3.0)
    assert mg.stroke == pytest.approx(GC + T - z, rel=1e-5)
    assert mg.margin == pytest.approx(i * i * K / (2 * z * z) - p - k * (GC + T - z), abs=1e-9)


def test_motion_by_the_monotone_inversion_matches_the_closed_form_current():
    load = Load(T, (Spring(400.0, 0.05),))
    exact = operate(ACT.linkage, ACT.force, load, 0.005, 20.0, 24.0, 1.0, current=ACT.current)
    inv = operate(ACT.linkage, ACT.force, load, 0.005, 20.0, 24.0, 1.0, i_max=10.0)
    # Source: exact, i = lambda / L(s) for the ideal gap against the bracketed inversion of
    # lambda(i, s); tolerance 1e-6 relative (the inversion's 1e-14 and rtol 1e-10)
    assert inv.closed_time == pytest.approx(exact.closed_time, rel=1e-6)
    assert inv.impact_speed == pytest.approx(exact.impact_speed, rel=1e-6)


def test_voltage_table_and_bad_settings():
    load = Load(T, (Spring(100.0, 1.0),))
    L, r = ACT.inductance(0.0), 30.0
    # a ramp v = a t on the held armature; Source: exact solution of L di/dt + R i = a t,
    # i = (a/R)(t - tau (1 - e^{-t/tau})), tau = L/R; tolerance 1e-7 of the final current
    a, t_end = 1000.0, 0.002
    mo = simulate(ACT.linkage, ACT.force, load, 1.0, r, ((0.0, 1.0), (0.0, a)), t_end,
                  held=True, current=ACT.current)
    tau = L / r
    exact = a / r * (mo.t - tau * (1.0 - np.exp(-mo.t / tau)))
    assert np.max(np.abs(mo.i - exact)) < 1e-7 * exact[-1]
    with pytest.raises(MotionError, match="restitution"):
        simulate(ACT.linkage, ACT.force, load, 1.0, r, 1.0, 1.0, restitution=1.0)
    with pytest.raises(MotionError, match="mass"):
        simulate(ACT.linkage, ACT.force, load, 0.0, r, 1.0, 1.0)
    with pytest.raises(MotionError, match="pull-in"):
        pull_in_current(ACT.force, Load(T, (Spring(1e6, 1e3),)), 1.0)


# --- a holding magnet's release current (analytic.motion.release_current) ---
# An invented linear ideal-gap magnet actuator (ideal iron, no fringing): the
# magnet an MMF H_c l_m behind its recoil reluctance, in series with the gap.
MU0 = 4e-7 * math.pi
BR, MUR, LM, AM = 0.4, 1.08, 5e-3, 2.0e-4       # T, -, m, m^2: a ferrite-like disc
AG, NT = 2.0e-4, 100                            # gap face (m^2), coil turns
HC = BR / (MU0 * MUR)                            # A/m, the linear recoil's coercivity
RM = LM / (MU0 * MUR * AM)                       # A/Wb, the magnet's recoil reluctance
MG_CLOSED, MG_TRAVEL = 0.3e-3, 0.7e-3


def _mag_flux(i: float, s: float) -> float:
    # Source: docs/references.md section 8 (the magnet an MMF source H_c l_m in
    # series with l_m/(mu0 mu_r A_m)), exact for a linear circuit
    g = MG_CLOSED + MG_TRAVEL - s
    return (HC * LM + NT * i) / (RM + g / (MU0 * AG))


def _mag_force(i: float, s: float) -> float:
    # Source: docs/references.md section 5/14: the gap's pull B^2 A / (2 mu0), exact
    # for ideal iron (the co-energy's derivative of this linear circuit)
    return _mag_flux(i, s) ** 2 / (2.0 * MU0 * AG)


def _mag_linkage(i: float, s: float) -> float:
    return NT * _mag_flux(i, s)


def test_release_current_of_an_ideal_gap_magnet_is_the_closed_form():
    keeper = 4.0  # N, the keeper load
    load = Load(MG_TRAVEL, (), weight=keeper)
    # by hand: the flux at release phi_r = sqrt(2 mu0 A F_load); the MMF balance
    # H_c l_m + N i = phi_r (R_m + R_g(closed)) gives i (negative, opposing);
    # the other root (phi = -phi_r, the coil overpowering the magnet) lies below
    phi_r = math.sqrt(2.0 * MU0 * AG * keeper)
    r_tot = RM + MG_CLOSED / (MU0 * AG)
    i_exact = (phi_r * r_tot - HC * LM) / NT
    i_second = (-phi_r * r_tot - HC * LM) / NT
    assert i_second < i_exact < 0.0
    got = release_current(_mag_force, load, 3.0 * i_second)
    # Source: exact solution above; tolerance: brentq's xtol 1e-13 of the range
    assert got.current == pytest.approx(i_exact, rel=1e-9)
    assert got.stroke == MG_TRAVEL
    # the force's minimum (zero flux) lies between the two crossings, F there 0
    assert _mag_force(-HC * LM / NT, MG_TRAVEL) == pytest.approx(0.0, abs=1e-12)
    # on a map (GridMap: monotone cubic in i, no i^2 law with a magnet) the release
    # moves by the interpolation error only: 9 currents over +-1.2 |i_second|
    top = 1.2 * abs(i_second)
    cur = np.linspace(-top, top, 9)
    st = np.linspace(0.0, MG_TRAVEL, 5)
    f = np.array([[_mag_force(c, s) for s in st] for c in cur])
    lam = np.array([[_mag_linkage(c, s) for s in st] for c in cur])
    gm = GridMap(cur, st, f, lam, gap_open=MG_CLOSED + MG_TRAVEL)
    on_map = release_current(gm.force, load, -top).current
    # tolerance: a monotone cubic through 9 samples of this quadratic in i (with
    # its zero-slope minimum flattened) is within a few percent (measured 1-3 %)
    assert on_map == pytest.approx(i_exact, rel=0.05)
    with pytest.raises(MotionError, match="zero current"):
        release_current(_mag_force, Load(MG_TRAVEL, (), weight=1e3), 3.0 * i_second)
    with pytest.raises(MotionError, match="stays above"):
        release_current(_mag_force, load, 0.2 * i_exact)
