"""Sinusoidal voltage drive: the peak flux linkage and the magnetizing
current waveform from a winding's flux-linkage-current (lambda-i) curve.

A winding driven by v(t) = sqrt(2) V cos(wt), its resistance neglected,
carries the flux linkage lambda(t) = lambda_pk sin(wt) with

    lambda_pk = sqrt(2) V / (2 pi f)                              (1)

(Faraday's law integrated over a half period; with lambda = N B A_c this is
the transformer EMF equation V = 4.44 f N A_c B_pk, e.g. Kulkarni and
Khaparde, Transformer Engineering, 2004, ch. 1).  A square voltage of rms V
and duty D (+-V/sqrt(D) for a fraction D of each half period, zero between)
drives a trapezoidal flux linkage (a triangle for D = 1) of peak

    lambda_pk = V sqrt(D) / (4 f)                                 (2)

[derived: the volt-seconds (V/sqrt(D)) D / (2 f) of one pulse swing lambda
from -lambda_pk to +lambda_pk; for D = 1 the square-wave form V = 4 f N A_c
B_pk of the same equation].  The magnetizing current
is i(t) = i(lambda(t)), the lambda-i curve inverted at each instant; the
knee of the B-H curve makes it peaked, rich in odd harmonics.  No
hysteresis and no eddy currents: the curve is single-valued.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from scipy.interpolate import PchipInterpolator

__all__ = ["peak_flux_linkage", "square_peak_flux_linkage", "flux_linkage_wave",
           "MagnetizingCurrent", "magnetizing_current",
           "DriveError", "SAMPLES", "inrush_flux_linkage", "InrushPeak",
           "inrush_peak"]

SAMPLES = 256
"""Time samples per period of the waveform (the 7th harmonic has 36 per cycle)."""


class DriveError(ValueError):
    """A drive or a lambda-i curve that cannot give a waveform; the message says why."""


def peak_flux_linkage(voltage_rms: float, frequency: float) -> float:
    """lambda_pk = sqrt(2) V / (2 pi f) (Wb-turns), equation (1)."""
    if not (math.isfinite(voltage_rms) and voltage_rms > 0):
        raise DriveError(f"voltage = {voltage_rms!r} V must be a finite positive rms value")
    if not (math.isfinite(frequency) and frequency > 0):
        raise DriveError(f"frequency = {frequency!r} Hz must be finite and positive")
    return math.sqrt(2.0) * voltage_rms / (2.0 * math.pi * frequency)


def square_peak_flux_linkage(voltage_rms: float, frequency: float, duty: float = 1.0) -> float:
    """lambda_pk = V sqrt(D) / (4 f) (Wb-turns) of a square voltage of rms V and duty D,
    equation (2)."""
    peak_flux_linkage(voltage_rms, frequency)  # the same input checks
    if not (math.isfinite(duty) and 0.0 < duty <= 1.0):
        raise DriveError(f"duty = {duty!r} must lie in (0, 1]")
    return voltage_rms * math.sqrt(duty) / (4.0 * frequency)


def flux_linkage_wave(lambda_peak: float, phase: np.ndarray, shape: str = "sine",
                      duty: float = 1.0) -> np.ndarray:
    """The flux linkage (Wb-turns) at ``phase`` = f t (cycles) of a sine, lambda_pk
    sin(2 pi f t), or of a square voltage of duty D (``shape`` "square"): rising linearly
    from -lambda_pk to lambda_pk over the pulse centred on t = 0 (|f t| <= D/4), flat between
    the pulses, falling over the pulse centred on half a period; odd about t = 0 and about
    a quarter period like the sine [derived: Faraday's law over the pulses of equation
    (2)]."""
    s = np.asarray(phase, dtype=float)
    if shape == "sine":
        return lambda_peak * np.sin(2.0 * np.pi * s)
    if shape != "square":
        raise DriveError(f"waveform {shape!r}: expected 'sine' or 'square'")
    tri = 0.25 - np.abs(np.mod(s + 0.25, 1.0) - 0.5)  # a triangle of +-1/4, slope 1
    return lambda_peak * np.clip(tri * 4.0 / duty, -1.0, 1.0)


@dataclass(frozen=True)
class MagnetizingCurrent:
    """One period of the magnetizing current.

    t : sample times over one period, s (SAMPLES of them, t = k T / SAMPLES).
    i : the current at those times, A.
    peak, rms : A.
    fundamental : the fundamental's amplitude (A, peak).
    harmonics_pct : {3: ..., 5: ..., 7: ...}: each odd harmonic's amplitude in
        % of the fundamental.
    inductance : lambda_pk / fundamental: the magnetizing inductance the
        fundamental sees (H), what a measurement at the drive voltage gives.
    """

    t: np.ndarray = field(repr=False)
    i: np.ndarray = field(repr=False)
    lambda_peak: float
    peak: float
    rms: float
    fundamental: float
    harmonics_pct: dict[int, float]
    inductance: float


def _inverse(currents: np.ndarray, linkages: np.ndarray):
    """i(lambda) from samples of a lambda-i curve with lambda rising in i,
    odd about the origin when it holds only i >= 0 (no magnet): a shape-
    preserving (monotone) cubic through the points."""
    i = np.asarray(currents, dtype=float)
    lam = np.asarray(linkages, dtype=float)
    if i.ndim != 1 or i.size < 3 or i.size != lam.size:
        raise DriveError("the lambda-i curve needs at least three (i, lambda) points")
    if not (np.all(np.isfinite(i)) and np.all(np.isfinite(lam))):
        raise DriveError("the lambda-i curve holds a NaN or an infinite value")
    order = np.argsort(i)
    i, lam = i[order], lam[order]
    if i[0] >= 0.0:  # one half: mirror it (a single-valued curve without a magnet is odd)
        if i[0] == 0.0 and abs(lam[0]) > 1e-9 * np.max(np.abs(lam)):
            raise DriveError("the flux linkage at zero current is not zero (a magnet?): give "
                             "the lambda-i curve for negative currents too")
        pos = i > 0.0
        i = np.concatenate([-i[pos][::-1], [0.0], i[pos]])
        lam = np.concatenate([-lam[pos][::-1], [0.0], lam[pos]])
    if np.any(np.diff(lam) <= 0.0):
        raise DriveError("the flux linkage does not rise with the current: the lambda-i curve "
                         "cannot be inverted")
    return PchipInterpolator(lam, i, extrapolate=False), float(lam[0]), float(lam[-1])


def magnetizing_current(currents, linkages, lambda_peak: float, frequency: float,
                        samples: int = SAMPLES, shape: str = "sine",
                        duty: float = 1.0) -> MagnetizingCurrent:
    """The magnetizing current for lambda(t) = lambda_pk sin(2 pi f t), or for the
    trapezoidal flux linkage of a square voltage of duty ``duty`` (``shape`` "square",
    :func:`flux_linkage_wave`).

    ``currents``, ``linkages``: samples of the winding's lambda-i curve (A,
    Wb-turns), lambda rising with i; only i >= 0 may be given (the curve is
    then taken as odd).  They must reach +-lambda_pk.  Harmonics by the
    discrete Fourier transform of the samples (exact for harmonics below
    samples/2 of a band-limited waveform).

    Raises DriveError when the curve does not reach lambda_pk.
    """
    inv, lo, hi = _inverse(np.asarray(currents, dtype=float), np.asarray(linkages, dtype=float))
    if not (lo <= -lambda_peak and lambda_peak <= hi):
        raise DriveError(f"the lambda-i curve reaches {hi:.6g} Wb-turns, below the drive's peak "
                         f"flux linkage {lambda_peak:.6g} Wb-turns: extend it to a higher current")
    period = 1.0 / frequency
    t = np.arange(samples) * period / samples
    lam_t = flux_linkage_wave(lambda_peak, frequency * t, shape, duty)
    lam_t = np.clip(lam_t, -lambda_peak, lambda_peak)
    i_t = np.asarray(inv(lam_t), dtype=float)
    spec = np.fft.rfft(i_t) * 2.0 / samples
    amp = np.abs(spec)
    fund = float(amp[1])
    harm = {h: (100.0 * float(amp[h]) / fund if fund > 0 else math.nan) for h in (3, 5, 7)}
    return MagnetizingCurrent(
        t=t, i=i_t, lambda_peak=float(lambda_peak), peak=float(np.max(np.abs(i_t))),
        rms=float(np.sqrt(np.mean(i_t ** 2))), fundamental=fund, harmonics_pct=harm,
        inductance=float(lambda_peak / fund) if fund > 0 else math.nan)


def inrush_flux_linkage(lambda_peak: float, residual: float) -> float:
    """The first peak of the flux linkage (Wb-turns) when the winding is
    switched on at a voltage zero with a residual flux linkage residual *
    lambda_pk in the sense the voltage then drives:

        lambda_max = (2 + residual) lambda_pk.

    From Faraday's law with v = sqrt(2) V sin(wt) from t = 0 and the
    resistance neglected, lambda(t) = lambda_r + lambda_pk (1 - cos wt),
    largest at wt = pi: the doubling effect behind transformer inrush
    current.  The winding's and the source's resistance damp it (see
    :func:`inrush_peak`), so this bounds the first peak from above.
    """
    if not (math.isfinite(lambda_peak) and lambda_peak > 0):
        raise DriveError(f"lambda_peak = {lambda_peak!r} Wb-turns must be finite and positive")
    if not (math.isfinite(residual) and 0.0 <= residual <= 1.0):
        raise DriveError(f"residual = {residual!r} must be a fraction of lambda_pk in [0, 1]")
    return (2.0 + residual) * lambda_peak


@dataclass(frozen=True)
class InrushPeak:
    """The first peak after switch-on at a voltage zero.

    current : A, the inrush current's first peak.
    linkage : Wb-turns, the flux linkage there (its first maximum).
    time : s after switch-on.
    """

    current: float
    linkage: float
    time: float


def inrush_peak(currents, linkages, voltage_rms: float, frequency: float, residual: float,
                resistance: float) -> InrushPeak:
    """The first current peak of a winding switched on at a voltage zero,
    v = sqrt(2) V sin(wt) from t = 0, with the flux linkage starting at
    residual * lambda_pk and the series resistance R (ohm, winding plus
    source):

        d lambda / dt = v(t) - R i(lambda),   lambda(0) = residual lambda_pk  (2)

    (Faraday's law with the resistive drop; i(lambda) the lambda-i curve
    inverted as for :func:`magnetizing_current`, so the current at the
    residual is the single-valued curve's small magnetizing current, not
    the zero of a hysteretic core).  i rises with lambda, so the current's
    first peak is at lambda's first maximum, where v = R i.  With R = 0 it
    is :func:`inrush_flux_linkage`'s (2 + residual) lambda_pk at wt = pi.
    Integrated by an explicit Runge-Kutta pair (scipy's RK45, rtol 1e-9) to
    the first downward zero of d lambda / dt within one period.

    The curve must reach the peak's flux linkage (extend it to
    (2 + residual) lambda_pk, the undamped bound); raises DriveError
    otherwise or on bad input.
    """
    from scipy.integrate import solve_ivp

    lam_pk = peak_flux_linkage(voltage_rms, frequency)
    lam_max = inrush_flux_linkage(lam_pk, residual)
    if not (math.isfinite(resistance) and resistance >= 0.0):
        raise DriveError(f"resistance = {resistance!r} ohm must be finite and not negative")
    inv, lo, hi = _inverse(np.asarray(currents, dtype=float), np.asarray(linkages, dtype=float))
    w = 2.0 * math.pi * frequency
    v_pk = math.sqrt(2.0) * voltage_rms
    if resistance == 0.0:
        if hi < lam_max:
            raise DriveError(f"the lambda-i curve ends at {hi:.6g} Wb-turns, short of the "
                             f"first peak's {lam_max:.6g} Wb-turns: extend it")
        return InrushPeak(float(inv(lam_max)), lam_max, math.pi / w)

    def current(lam: float) -> float:
        if not (lo <= lam <= hi):
            raise DriveError(f"the flux linkage {lam:.6g} Wb-turns left the lambda-i curve "
                             f"({lo:.6g} .. {hi:.6g} Wb-turns): extend it")
        return float(inv(lam))

    def rate(t: float, y: np.ndarray) -> list[float]:
        return [v_pk * math.sin(w * t) - resistance * current(float(y[0]))]

    def top(t: float, y: np.ndarray) -> float:
        return rate(t, y)[0]

    top.terminal = True  # type: ignore[attr-defined]
    top.direction = -1.0  # type: ignore[attr-defined]
    period = 2.0 * math.pi / w
    sol = solve_ivp(rate, (0.0, period), [residual * lam_pk], method="RK45", rtol=1e-9,
                    atol=1e-12 * lam_pk, max_step=period / 200, events=top, dense_output=True)
    if sol.status == -1:
        raise DriveError(f"the inrush integration failed: {sol.message}")
    if sol.t_events[0].size:
        t_pk = float(sol.t_events[0][0])
        lam = float(sol.y_events[0][0][0])
    else:  # no interior maximum within the period (a huge R): the largest sample
        k = int(np.argmax(sol.y[0]))
        t_pk, lam = float(sol.t[k]), float(sol.y[0][k])
    return InrushPeak(current(lam), lam, t_pk)
