"""analytic.magnetizing: the EMF equation and the magnetizing current of a
voltage-driven winding, against a linear core and against an analytic
lambda-i curve inverted independently by root-finding at every sample."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.optimize import brentq

from magcheck.analytic.magnetizing import (DriveError, inrush_flux_linkage, inrush_peak,
                                           magnetizing_current, peak_flux_linkage)


def test_peak_flux_linkage_is_the_emf_equation():
    # Source: Faraday's law over a half period; the transformer EMF equation
    # V = 4.44 f N A B_pk (Kulkarni and Khaparde, Transformer Engineering, 2004)
    lam = peak_flux_linkage(230.0, 50.0)
    assert lam == pytest.approx(math.sqrt(2) * 230 / (2 * math.pi * 50), rel=1e-15)
    n, a = 500, 8e-4
    assert lam / (n * a) == pytest.approx(230 / (4.44 * 50 * n * a), rel=1e-3)  # 4.44 rounded
    for v, f in ((0.0, 50.0), (230.0, -1.0), (math.nan, 50.0)):
        with pytest.raises(DriveError):
            peak_flux_linkage(v, f)


def test_linear_core_gives_a_sinusoidal_current():
    # Source: exact for lambda = L i: i(t) = (lambda_pk / L) sin(wt)
    L, lam_pk = 2.5, 1.0
    i = np.linspace(0.0, 1.0, 11)
    m = magnetizing_current(i, L * i, lam_pk, 50.0)
    assert m.peak == pytest.approx(lam_pk / L, rel=1e-12)
    assert m.rms == pytest.approx(lam_pk / L / math.sqrt(2), rel=1e-12)
    assert m.fundamental == pytest.approx(lam_pk / L, rel=1e-12)
    assert m.inductance == pytest.approx(L, rel=1e-12)
    assert max(m.harmonics_pct.values()) < 1e-6


def _lam(i, a=1.0, b=0.2, l0=0.05):
    """A saturating lambda-i curve (Wb-turns), odd and rising, invented for the test."""
    return a * np.arctan(i / b) + l0 * i


def test_saturating_curve_against_root_finding_at_every_sample():
    # Source: independent inversion: brentq on the analytic lambda(i) at each
    # of the 256 time samples, then the same discrete Fourier transform
    lam_pk, f = 1.45, 60.0
    i_grid = np.concatenate([np.linspace(0, 2.0, 60), np.linspace(2.05, 20.0, 80)])
    m = magnetizing_current(i_grid, _lam(i_grid), lam_pk, f)
    t = np.arange(256) / (256 * f)
    ref = np.array([brentq(lambda x, y=y: _lam(x) - y, -50, 50, xtol=1e-14)
                    for y in lam_pk * np.sin(2 * np.pi * f * t)])
    # the interpolation through 140 points, where the curve bends hardest
    assert np.max(np.abs(m.i - ref)) < 2e-3 * np.max(np.abs(ref))
    assert m.peak == pytest.approx(np.max(np.abs(ref)), rel=1e-5)  # 3.7e-7 found
    spec = np.abs(np.fft.rfft(ref)) * 2 / 256
    assert m.rms == pytest.approx(np.sqrt(np.mean(ref ** 2)), rel=1e-3)
    for h in (3, 5, 7):
        assert m.harmonics_pct[h] == pytest.approx(100 * spec[h] / spec[1], abs=0.2)
    assert m.harmonics_pct[3] > 20  # the knee makes it peaked


def test_curve_that_does_not_reach_the_peak_or_falls_is_refused():
    i = np.linspace(0, 1, 5)
    with pytest.raises(DriveError, match="below the drive's peak"):
        magnetizing_current(i, 0.5 * i, 1.0, 50.0)
    with pytest.raises(DriveError, match="does not rise"):
        magnetizing_current(i, np.array([0, 1, 0.9, 2, 3.0]), 1.0, 50.0)
    with pytest.raises(DriveError, match="not zero"):
        magnetizing_current(i, 0.1 + i, 0.5, 50.0)


@pytest.mark.parametrize("residual", [0.0, 0.45, 0.8])
def test_inrush_flux_linkage_is_faradays_law_from_a_voltage_zero(residual):
    # Source: Faraday's law, d lambda / dt = v, integrated here by the
    # trapezoidal rule over one period from a switch-on at a voltage zero,
    # v = sqrt(2) V sin(wt), lambda(0) = residual lambda_pk; the largest
    # lambda reached against the closed form (2 + r) lambda_pk
    v_rms, f = 230.0, 50.0
    lam_pk = peak_flux_linkage(v_rms, f)
    t = np.linspace(0.0, 1.0 / f, 200001)
    v = math.sqrt(2) * v_rms * np.sin(2 * math.pi * f * t)
    lam = residual * lam_pk + np.concatenate([[0.0], np.cumsum(0.5 * (v[1:] + v[:-1])
                                                                * np.diff(t))])
    assert inrush_flux_linkage(lam_pk, residual) == pytest.approx(lam.max(), rel=1e-9)
    for bad in (-0.1, 1.5, math.nan):
        with pytest.raises(DriveError, match="residual"):
            inrush_flux_linkage(lam_pk, bad)


def test_undamped_inrush_current_on_a_linear_and_a_saturating_curve():
    # Source: exact for lambda = L i; for the analytic curve
    # lambda = a tanh(i / b) + c i (saturating, slope c at large i) the
    # current at (2 + r) lambda_pk by root-finding, as for the waveform above
    v, f, r = 230.0, 50.0, 0.5
    lam_in = (2 + r) * peak_flux_linkage(v, f)
    i = np.linspace(0.0, 300.0, 41)
    assert inrush_peak(i, 2.5 * i, v, f, r, 0.0).current == pytest.approx(lam_in / 2.5,
                                                                           rel=1e-12)
    a, b, c = 1.0, 0.2, 0.01
    fine = np.linspace(0.0, 300.0, 3001)
    ref = brentq(lambda x: a * math.tanh(x / b) + c * x - lam_in, 0.0, 300.0, xtol=1e-14)
    got = inrush_peak(fine, a * np.tanh(fine / b) + c * fine, v, f, r, 0.0).current
    assert got == pytest.approx(ref, rel=1e-6)
    with pytest.raises(DriveError, match="extend it"):
        inrush_peak(i, 0.005 * i, v, f, r, 0.0)  # ends at 1.5 Wb-turns


def rl_first_peak(v_rms: float, f: float, L: float, R: float, i0: float) -> tuple[float, float]:
    """The largest current over the first period of L di/dt + R i =
    sqrt(2) V sin(wt), i(0) = i0, and its time, from the exact solution
    i = (V_pk/|Z|) sin(wt - phi) + (i0 + (V_pk/|Z|) sin phi) e^(-t R/L),
    |Z| = sqrt(R^2 + (wL)^2), phi = atan(wL/R) (the classic switched RL
    circuit), sampled at 2e6 points (test only)."""
    w = 2 * math.pi * f
    z, phi = math.hypot(R, w * L), math.atan2(w * L, R)
    a = math.sqrt(2) * v_rms / z
    t = np.linspace(0.0, 1.0 / f, 2_000_001)
    i = a * np.sin(w * t - phi) + (i0 + a * math.sin(phi)) * np.exp(-t * R / L)
    k = int(np.argmax(i))
    return float(i[k]), float(t[k])


@pytest.mark.parametrize("residual, R", [(0.0, 10.0), (0.5, 10.0), (0.8, 2.0), (0.3, 0.2)])
def test_damped_inrush_on_a_linear_curve_is_the_switched_rl_circuit(residual, R):
    # Source: exact solution of the switched series RL circuit (above); a
    # linear lambda-i curve lambda = L i makes equation (2) that circuit
    v, f, L = 230.0, 50.0, 0.05
    lam_pk = peak_flux_linkage(v, f)
    i = np.linspace(0.0, 3.0 * lam_pk / L, 7)
    pk = inrush_peak(i, L * i, v, f, residual, R)
    ref_i, ref_t = rl_first_peak(v, f, L, R, residual * lam_pk / L)
    assert pk.current == pytest.approx(ref_i, rel=1e-7)
    assert pk.linkage == pytest.approx(L * ref_i, rel=1e-7)
    assert pk.time == pytest.approx(ref_t, abs=2e-8)


def test_damped_inrush_on_a_saturating_curve_by_an_independent_integration():
    # Source: the same ODE integrated in the current instead of the flux
    # linkage, di/dt = (v - R i) / lambda'(i) on the analytic curve
    # lambda = a tanh(i/b) + c i (scipy's LSODA, its own tolerances; test
    # only), the peak where v = R i; and without resistance the undamped
    # bound (2 + r) lambda_pk at wt = pi
    from scipy.integrate import solve_ivp

    v, f, r, R = 230.0, 50.0, 0.7, 8.0
    lam_pk = peak_flux_linkage(v, f)
    a, b, c = 1.1 * lam_pk, 0.05, 0.01
    i = np.concatenate([np.linspace(0.0, 1.0, 400), np.geomspace(1.0, 600.0, 400)[1:]])
    lam = a * np.tanh(i / b) + c * i
    i0 = brentq(lambda x: a * math.tanh(x / b) + c * x - r * lam_pk, 0.0, 1.0, xtol=1e-15)
    w = 2 * math.pi * f

    def rate(t, y):
        return [(math.sqrt(2) * v * math.sin(w * t) - R * y[0])
                / (a / b * (1.0 - math.tanh(y[0] / b) ** 2) + c)]

    def top(t, y):
        return math.sqrt(2) * v * math.sin(w * t) - R * y[0]

    top.terminal, top.direction = True, -1
    ref = solve_ivp(rate, (0.0, 1.0 / f), [i0], method="LSODA", rtol=1e-10, atol=1e-12,
                    events=top, max_step=1e-5)
    pk = inrush_peak(i, lam, v, f, r, R)
    # 1e-3: the monotone cubic through 800 samples against the analytic curve
    assert pk.current == pytest.approx(ref.y_events[0][0][0], rel=1e-3)
    assert pk.time == pytest.approx(ref.t_events[0][0], rel=1e-4)
    assert pk.current < 0.5 * inrush_peak(i, lam, v, f, r, 0.0).current
    undamped = inrush_peak(i, lam, v, f, r, 0.0)
    assert undamped.linkage == pytest.approx((2 + r) * lam_pk, rel=1e-15)
    assert undamped.time == pytest.approx(0.5 / f, rel=1e-15)
    for bad in (-1.0, math.nan, math.inf):
        with pytest.raises(DriveError, match="resistance"):
            inrush_peak(i, lam, v, f, r, bad)
    with pytest.raises(DriveError, match="extend it"):
        inrush_peak(i[:300], lam[:300], v, f, r, 0.0)


@pytest.mark.parametrize("duty", [1.0, 0.5, 0.2])
def test_square_voltage_flux_linkage_is_faradays_law(duty):
    from magcheck.analytic.magnetizing import flux_linkage_wave, square_peak_flux_linkage

    v, f = 48.0, 1e5
    lam = square_peak_flux_linkage(v, f, duty)
    # Source: Faraday's law (exact): a pulse of +-V/sqrt(D) lasting D/(2f) swings lambda by
    # 2 lambda_pk, so lambda_pk = V sqrt(D)/(4 f); at D = 1 the square-wave form
    # V = 4 f N A_c B_pk of the EMF equation (Kulkarni and Khaparde, Transformer Engineering)
    assert lam == pytest.approx(v * math.sqrt(duty) / (4 * f), rel=1e-15)
    phase = np.linspace(0.0, 1.0, 4001)
    wave = flux_linkage_wave(lam, phase, "square", duty)
    slope = np.diff(wave) / np.diff(phase / f)  # d lambda / dt = v(t)
    v_pk = v / math.sqrt(duty)
    on = np.abs(slope) > 1e-6 * v_pk
    np.testing.assert_allclose(np.abs(slope[on]), v_pk, rtol=1e-9)  # exact but for the knees
    # the voltage's rms over the period is the case's V (the fraction D of the time at V/sqrt(D))
    assert math.sqrt(np.mean(np.where(on, v_pk, 0.0) ** 2)) == pytest.approx(v, rel=2e-3)
    assert wave.max() == pytest.approx(lam, rel=1e-12) and wave.min() == pytest.approx(-lam)
    for bad in (0.0, 1.5, math.nan):
        with pytest.raises(DriveError):
            square_peak_flux_linkage(v, f, bad)


def test_linear_core_under_a_square_voltage_gives_a_triangular_current():
    # Source: exact for lambda = L i: i(t) is a triangle of peak lambda_pk / L, whose rms is
    # peak / sqrt(3) and whose odd harmonics are 8/(pi^2 n^2) of its peak (the Fourier series
    # of a triangle wave; any table of Fourier series, e.g. Kreyszig, Advanced Engineering
    # Mathematics, ch. 11 [from memory]): n-th in percent of the fundamental 100/n^2.
    L, lam_pk = 0.5, 0.25
    i = np.linspace(0.0, 1.0, 11)
    m = magnetizing_current(i, L * i, lam_pk, 100.0, shape="square")
    peak = lam_pk / L
    assert m.peak == pytest.approx(peak, rel=1e-12)
    assert m.rms == pytest.approx(peak / math.sqrt(3.0), rel=1e-4)  # 256 samples of a triangle
    assert m.fundamental == pytest.approx(8.0 / math.pi ** 2 * peak, rel=1e-4)  # aliasing
    for n in (3, 5, 7):
        # the 256-sample DFT aliases the harmonics 256 k +- n onto n: 0.24 % on the 7th
        assert m.harmonics_pct[n] == pytest.approx(100.0 / n ** 2, rel=5e-3)
    assert m.inductance == pytest.approx(L * math.pi ** 2 / 8.0, rel=1e-4)
