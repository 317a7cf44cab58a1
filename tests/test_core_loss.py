"""Core-loss models of the hand calculation (magcheck.analytic.core_loss): Steinmetz, the iGSE,
laminated steel's loss separation and the Steinmetz fit to a loss table."""

from __future__ import annotations

import math

import numpy as np
import pytest

from magcheck.analytic.core_loss import (
    LaminationLoss,
    SteinmetzCoefficients,
    checked_steinmetz_loss,
    classical_eddy_loss,
    cos_power_integral,
    fit_steinmetz,
    igse_ki,
    igse_loss_sampled,
    igse_square_voltage_loss,
    igse_triangle_loss,
    lamination_loss,
    steinmetz_loss,
)

# an invented ferrite-like set: k in W/m^3 at 1 Hz, 1 T
FERRITE = SteinmetzCoefficients(k=2.5, alpha=1.45, beta=2.6)


def test_cos_power_integral_against_quadrature():
    # Source: exact (the Wallis integral, four quarter periods) [exact]; checked by a midpoint
    # sum of 2e5 points, whose error for |cos|^alpha (alpha >= 1) is below 1e-8.
    for alpha in (1.0, 1.45, 2.0, 2.7):
        n = 200_000
        theta = (np.arange(n) + 0.5) * 2 * math.pi / n
        numeric = float(np.sum(np.abs(np.cos(theta)) ** alpha) * 2 * math.pi / n)
        assert cos_power_integral(alpha) == pytest.approx(numeric, rel=1e-8)
    # alpha = 2: integral of cos^2 over a period is pi [exact]
    assert cos_power_integral(2.0) == pytest.approx(math.pi, rel=1e-14)


@pytest.mark.parametrize("f,b_pk", [(100e3, 0.1), (25e3, 0.25), (50.0, 1.2)])
def test_igse_of_a_sinusoid_is_steinmetz(f, b_pk):
    # Source: Venkatachalam, Sullivan, Abdallah, Tacca, "Accurate prediction of ferrite core loss
    # with nonsinusoidal waveforms using only Steinmetz parameters", IEEE COMPEL 2002: k_i is
    # defined so that the iGSE of a sinusoid equals Steinmetz's k f^alpha B^beta
    # (docs/references.md section 13) [exact: the definition].
    # Tolerance 1e-6: the sampled iGSE differentiates B piecewise linearly, whose error in the
    # mean of |dB/dt|^alpha is O(N^-2) ~ 1e-8 at N = 20000 (plus the kink of |cos|^alpha).
    n = 20_000
    t = (np.arange(n) + 0.37) / n / f  # not aligned with the zero crossings
    b = b_pk * np.sin(2 * math.pi * f * t)
    p_igse = igse_loss_sampled(FERRITE, b, 1.0 / f)
    p_steinmetz = steinmetz_loss(FERRITE, f, b_pk)
    assert p_igse == pytest.approx(p_steinmetz, rel=1e-6)


def test_igse_symmetric_triangle_closed_form():
    # Source: derived here from the iGSE definition (Venkatachalam et al., COMPEL 2002;
    # docs/references.md section 13) [derived]. A symmetric triangle of peak-to-peak dB and period
    # T rises by dB in T/2 and falls by dB in T/2, so |dB/dt| = 2 dB / T on both halves and
    #   P = (1/T) integral_0^T k_i (2 dB/T)^alpha dB^(beta-alpha) dt = k_i 2^alpha f^alpha dB^beta.
    f, db = 100e3, 0.2
    c = FERRITE
    expected = igse_ki(c) * 2.0 ** c.alpha * f ** c.alpha * db ** c.beta
    # the module's closed form (duty 1/2) and the sampled integral (corners on samples: the
    # piecewise-linear integral is exact, so the tolerance is round-off)
    assert igse_triangle_loss(c, f, db, 0.5) == pytest.approx(expected, rel=1e-12)
    n = 1000
    up = np.linspace(-db / 2, db / 2, n // 2, endpoint=False)
    down = np.linspace(db / 2, -db / 2, n // 2, endpoint=False)
    b = np.concatenate([up, down])
    assert igse_loss_sampled(c, b, 1 / f) == pytest.approx(expected, rel=1e-10)


def test_igse_asymmetric_triangle_and_square_voltage_closed_forms():
    # Source: derived here from the iGSE definition (docs/references.md section 13) [derived]:
    # rising dB in D T and falling in (1 - D) T: P = k_i dB^beta f^alpha (D^(1-alpha) +
    # (1-D)^(1-alpha)); a three-level square voltage, ramps of D T/2 each way and flat between:
    # P = k_i dB^beta (2/T) (D T/2)^(1-alpha) = k_i dB^beta f^alpha 2^alpha D^(1-alpha).
    # Both checked against the sampled integral with corners on samples (exact but round-off).
    c, f, db = FERRITE, 50e3, 0.15
    n = 1000
    d = 0.3
    b = np.concatenate([np.linspace(0, db, int(d * n), endpoint=False),
                        np.linspace(db, 0, n - int(d * n), endpoint=False)])
    hand = igse_ki(c) * db ** c.beta * f ** c.alpha * (d ** (1 - c.alpha) + (1 - d) ** (1 - c.alpha))
    assert igse_triangle_loss(c, f, db, d) == pytest.approx(hand, rel=1e-12)
    assert igse_loss_sampled(c, b, 1 / f) == pytest.approx(hand, rel=1e-10)
    d = 0.6  # the voltage on for 60 % of the period
    ramp = int(d * n / 2)
    flat = n // 2 - ramp
    b = np.concatenate([np.linspace(-db / 2, db / 2, ramp, endpoint=False), np.full(flat, db / 2),
                        np.linspace(db / 2, -db / 2, ramp, endpoint=False), np.full(flat, -db / 2)])
    hand = igse_ki(c) * db ** c.beta * f ** c.alpha * 2 ** c.alpha * d ** (1 - c.alpha)
    assert igse_square_voltage_loss(c, f, db, d) == pytest.approx(hand, rel=1e-12)
    assert igse_loss_sampled(c, b, 1 / f) == pytest.approx(hand, rel=1e-10)
    # duty 1: the plain square voltage is the symmetric triangle [derived]
    assert igse_square_voltage_loss(c, f, db, 1.0) == pytest.approx(
        igse_triangle_loss(c, f, db, 0.5), rel=1e-12)


def test_classical_eddy_term_worked_by_hand():
    # Source: Bertotti, "General properties of power losses in soft ferromagnetic materials",
    # IEEE Trans. Magn. 24(1), 1988, classical term sigma d^2 (pi f B)^2 / 6 for sinusoidal flux
    # (docs/references.md section 13) [from memory; standard in electrical steel texts].
    # Worked by hand: sigma = 2e6 S/m, d = 0.35 mm, f = 50 Hz, B_pk = 1.5 T:
    #   sigma d^2 = 2e6 * 1.225e-7 = 0.245; (pi * 50 * 1.5)^2 = pi^2 * 5625 = 55516.525;
    #   0.245 * 55516.525 / 6 = 2266.925 W/m^3; / 7650 kg/m^3 = 0.296330 W/kg.
    # Tolerance 1e-6: the hand figures' rounding (7 significant digits).
    p = classical_eddy_loss(2e6, 0.35e-3, 50.0, 1.5)
    assert p == pytest.approx(2266.925, rel=1e-6)
    steel = LaminationLoss(k_h=120.0, beta_h=1.8, sigma=2e6, thickness=0.35e-3, k_e=0.0,
                           density=7650.0)
    split = lamination_loss(steel, 50.0, 1.5)
    assert split.classical == pytest.approx(2266.925, rel=1e-6)
    assert split.per_mass(steel.density).classical == pytest.approx(0.296330, rel=1e-5)
    # hysteresis k_h f B^beta_h: 120 * 50 * 1.5^1.8, 1.5^1.8 = exp(1.8 ln 1.5) = exp(0.7298372)
    # = 2.0747428, so 6000 * 2.0747428 = 12448.457 W/m^3 [derived by hand; rounding 1e-6]
    assert split.hysteresis == pytest.approx(12448.457, rel=1e-6)
    assert split.excess == 0.0


def test_classical_eddy_term_from_the_sheet_field():
    # Source: derived [exact for a thin sheet, no skin effect]: E(x) = x dB/dt across the sheet,
    # the loss density averaged over the thickness and over a period of B = B_pk sin(wt) is
    # sigma <x^2> <(dB/dt)^2> = sigma (d^2/12) (w B_pk)^2 / 2. Numerical means (midpoint sums,
    # error ~1e-10 at these sample counts).
    sigma, d, f, b_pk = 2.2e6, 0.27e-3, 400.0, 1.1
    x = (np.arange(2000) + 0.5) / 2000 * d - d / 2
    t = (np.arange(2000) + 0.5) / 2000 / f
    dbdt = 2 * math.pi * f * b_pk * np.cos(2 * math.pi * f * t)
    numeric = sigma * float(np.mean(x ** 2)) * float(np.mean(dbdt ** 2))
    assert classical_eddy_loss(sigma, d, f, b_pk) == pytest.approx(numeric, rel=1e-6)


def _table(k=1.8, alpha=1.3, beta=2.1):
    f = np.repeat([50.0, 100.0, 200.0, 400.0], 4)
    b = np.tile([0.5, 0.8, 1.2, 1.5], 4)
    return f, b, k * f ** alpha * b ** beta


def test_fit_recovers_known_coefficients():
    # Source: exact (a table made of k f^alpha B^beta is fitted with zero residual) [exact].
    # Tolerance 1e-9: least squares on 16 well-conditioned points, round-off ~1e-14.
    f, b, p = _table()
    fit = fit_steinmetz(f, b, p, unit="W/kg")
    c = fit.coefficients
    assert c.k == pytest.approx(1.8, rel=1e-9)
    assert c.alpha == pytest.approx(1.3, abs=1e-9)
    assert c.beta == pytest.approx(2.1, abs=1e-9)
    assert c.unit == "W/kg"
    assert fit.rms_log_error < 1e-9 and fit.max_relative_error < 1e-9
    assert (c.f_min, c.f_max, c.b_min, c.b_max) == (50.0, 400.0, 0.5, 1.5)
    assert fit.n_points == 16
    # W/kg -> W/m^3 with the density
    assert c.per_volume(7650.0).k == pytest.approx(1.8 * 7650.0, rel=1e-9)


def test_fit_reports_the_residual_of_a_noisy_table():
    # Source: least squares statistics [exact in expectation]: with log-normal noise of standard
    # deviation s on n points and 3 parameters, the rms log residual is about s sqrt((n-3)/n);
    # the bounds 0.5 s .. 1.2 s allow the sampling spread of one seeded draw of 16 points.
    f, b, p = _table()
    s = 0.05
    noise = np.random.default_rng(32).normal(0.0, s, p.size)
    fit = fit_steinmetz(f, b, p * np.exp(noise), unit="W/kg")
    assert 0.5 * s < fit.rms_log_error < 1.2 * s
    assert fit.max_relative_error >= fit.rms_log_error * 0.9
    # the coefficients still near the truth (alpha over a decade of f: ~s/sqrt(n)/spread)
    assert fit.coefficients.alpha == pytest.approx(1.3, abs=0.1)
    assert fit.coefficients.beta == pytest.approx(2.1, abs=0.2)


def test_fit_refuses_a_table_it_cannot_fit():
    f, b, p = _table()
    with pytest.raises(ValueError, match="two frequencies"):
        fit_steinmetz(np.full(4, 50.0), b[:4], p[:4])
    with pytest.raises(ValueError, match="loss -1"):
        fit_steinmetz(f[:3], b[:3], [1.0, 2.0, -1.0])
    with pytest.raises(ValueError, match="cannot be told apart"):
        fit_steinmetz([50.0, 100.0, 200.0], [0.5, 1.0, 2.0], [1.0, 2.0, 3.0])


def test_out_of_range_flagging():
    f, b, p = _table()
    c = fit_steinmetz(f, b, p).coefficients
    value, notes = checked_steinmetz_loss(c, 100.0, 1.0)
    assert notes == () and value == pytest.approx(steinmetz_loss(c, 100.0, 1.0))
    _, notes = checked_steinmetz_loss(c, 1000.0, 1.0)
    assert [(n.quantity, n.value, n.lo, n.hi) for n in notes] == [("frequency", 1000.0, 50.0, 400.0)]
    assert "1000 Hz outside" in notes[0].message
    _, notes = checked_steinmetz_loss(c, 100.0, 1.8)
    assert [n.quantity for n in notes] == ["flux density"]
    _, notes = checked_steinmetz_loss(c, 20.0, 0.1)
    assert [n.quantity for n in notes] == ["frequency", "flux density"]
    # coefficients without declared ranges flag nothing
    assert FERRITE.outside(1e9, 10.0) == ()
