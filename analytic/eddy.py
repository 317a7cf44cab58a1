"""Eddy-current loss in a solid conducting part by hand: a long round rod
(a plunger, a solid core post) in an axial AC field.

Plain functions, SI units (m, T, Hz, S/m); amplitudes are peak values and
losses time averages (W).

Sources (docs/references.md section 16)
---------------------------------------
- The long cylinder r < a in a uniform axial field H_0 e^{j w t} at its
  surface (exact, derived from Maxwell's equations; the textbook solution,
  e.g. J. Lammeraner and M. Stafl, *Eddy Currents*, Iliffe 1966, the
  cylinder in a longitudinal field [from memory]): inside,
  H_z(r) = H_0 J0(k r) / J0(k a), k^2 = -j w mu sigma, J_phi = -dH_z/dr =
  H_0 k J1(k r) / J0(k a); the loss per unit length is the inward
  Poynting flux 2 pi a (1/2) Re(E_phi(a) H_0*), E_phi = J_phi / sigma:
      P / L = -pi a |H_0|^2 Re(k J1(k a) / (sigma J0(k a)))   [derived]
  (k = (1 - j) / delta, delta = sqrt(2 / (w mu sigma)); deep in the skin
  J1/J0 -> -j and P / L -> pi a |H_0|^2 / (sigma delta), the surface
  resistance's loss).
- Its low-frequency limit (a << delta: the field inside uniform, B_0 =
  mu H_0): J1(x)/J0(x) = x/2 + x^3/16 + O(x^5) gives
      P = pi sigma w^2 B_0^2 a^4 L / 16,
  the same as integrating the induced E_phi = -j w B_0 r / 2 over the rod,
  int_0^a sigma (w B_0 r / 2)^2 / 2 2 pi r L dr   [derived here].
- The same rod carrying a given AC flux Phi (peak; a rod in a circuit whose
  reluctance is set by an air gap, so that the flux is imposed rather than
  the surface field): the flux through the rod is
  mu H_0 2 pi a J1(k a) / (k J0(k a)) [derived: the integral of the
  exact B_z over the section], so H_0 = Phi k J0(k a) / (2 pi a mu J1(k a))
  and the loss is the first form's with that H_0; at low frequency it is
  the second form with B_0 = Phi / (pi a^2).
What all three leave out: a field that is not uniform along the rod (flux
leaving its side, its ends), the rod's own reaction on the circuit's flux
(the hand field is imposed), hysteresis and the iron's non-linearity
(a linear permeability at the operating point).
"""
from __future__ import annotations

import math

import numpy as np
from scipy import special
from scipy.constants import mu_0

__all__ = ["rod_eddy_loss_low_frequency", "rod_eddy_loss", "rod_eddy_loss_imposed_flux"]


def _positive(name: str, value: float) -> float:
    v = float(value)
    if not (math.isfinite(v) and v > 0):
        raise ValueError(f"{name} = {value!r} must be a finite number > 0")
    return v


def _frequency(value: float) -> float:
    f = float(value)
    if not (math.isfinite(f) and f >= 0):
        raise ValueError(f"frequency = {value!r} must be >= 0")
    return f


def j1_over_j0(x: complex) -> complex:
    """J1(x) / J0(x) for x = k a, k = (1 - j) / delta: the series x/2 + x^3/16 + x^5/96 for
    |x| < 1e-3 [derived from the Bessel series], the deep-skin limit -j when Im x < -600
    (where J0 and J1 overflow), else scipy.special.jv."""
    x = complex(x)
    if abs(x) < 1e-3:
        return x / 2.0 + x ** 3 / 16.0 + x ** 5 / 96.0
    if x.imag < -600:
        return -1j
    return complex(special.jv(1, x) / special.jv(0, x))


def rod_eddy_loss_low_frequency(conductivity: float, frequency: float, b_peak: float,
                                radius: float, length: float) -> float:
    """Time-average eddy loss (W) of a solid round rod (radius m, length m,
    conductivity S/m) in a uniform axial field of peak ``b_peak`` (T) at
    ``frequency`` (Hz), low-frequency limit (radius << skin depth; module
    docstring): pi sigma w^2 B^2 a^4 L / 16."""
    s = _positive("conductivity", conductivity)
    a = _positive("radius", radius)
    L = _positive("length", length)
    f = _frequency(frequency)
    w = 2.0 * math.pi * f
    return math.pi * s * w ** 2 * float(b_peak) ** 2 * a ** 4 * L / 16.0


def rod_eddy_loss(conductivity: float, mu_r: float, frequency: float, h_peak: float,
                  radius: float, length: float) -> float:
    """Time-average eddy loss (W) of a long solid round rod whose surface
    sees the axial field H = ``h_peak`` (A/m, peak) at ``frequency`` (Hz),
    at every frequency (skin effect included; module docstring, exact for
    an infinitely long rod): -pi a L |H_0|^2 Re(k J1(ka) / (sigma J0(ka))),
    k = (1 - j) / delta."""
    s = _positive("conductivity", conductivity)
    mr = _positive("mu_r", mu_r)
    a = _positive("radius", radius)
    L = _positive("length", length)
    f = _frequency(frequency)
    if f == 0.0:
        return 0.0
    w = 2.0 * math.pi * f
    k = np.sqrt(-1j * w * mu_0 * mr * s)
    ratio = j1_over_j0(k * a)
    return float(-math.pi * a * L * abs(h_peak) ** 2 * np.real(k * ratio / s))


def rod_eddy_loss_imposed_flux(conductivity: float, mu_r: float, frequency: float,
                               flux_peak: float, radius: float, length: float) -> float:
    """Time-average eddy loss (W) of a long solid round rod carrying the axial
    AC flux ``flux_peak`` (Wb, peak) at ``frequency`` (Hz), skin effect
    included (module docstring): the surface field H_0 that drives that flux
    through the rod, Phi k J0(ka) / (2 pi a mu J1(ka)), into :func:`rod_eddy_loss`.
    At low frequency it tends to pi sigma w^2 (Phi / pi a^2)^2 a^4 L / 16."""
    s = _positive("conductivity", conductivity)
    mr = _positive("mu_r", mu_r)
    a = _positive("radius", radius)
    _positive("length", length)
    f = _frequency(frequency)
    if f == 0.0:
        return 0.0
    mu = mu_0 * mr
    k = np.sqrt(-1j * 2.0 * math.pi * f * mu * s)
    x = k * a
    g = 2.0 * j1_over_j0(x) / x  # 2 J1(x) / (x J0(x))
    h0 = abs(float(flux_peak)) / (mu * math.pi * a ** 2 * abs(g))
    return rod_eddy_loss(s, mr, f, h0, a, length)
