"""Material laws as reluctivity functions of s = |B|^2.

Any object with vectorised ``nu(s)`` (m/H) and ``dnu_ds(s)`` (m/(H T^2))
works as a law; an optional ``energy(s)`` returns the energy density
w(s) = (1/2) int_0^s nu(s') ds' (J/m^3) (or ``energy_density(b)``, the same
as a function of |B|), otherwise it is computed by Gauss-Legendre quadrature
of ``nu`` in s.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Protocol, runtime_checkable

import numpy as np
from scipy.constants import mu_0

__all__ = [
    "Reluctivity",
    "LinearReluctivity",
    "BrauerReluctivity",
    "AIR",
    "MaterialError",
    "energy_density",
    "coenergy_density",
]


_GL_X, _GL_W = np.polynomial.legendre.leggauss(8)
_GL_X = 0.5 * (_GL_X + 1.0)
_GL_W = 0.5 * _GL_W


from .errors import MaterialError  # noqa: E402  (re-exported)


@runtime_checkable
class Reluctivity(Protocol):
    """Reluctivity law nu(s), s = |B|^2 in T^2."""

    def nu(self, s: np.ndarray) -> np.ndarray:
        """Reluctivity nu = H/B (m/H), same shape as ``s``."""

    def dnu_ds(self, s: np.ndarray) -> np.ndarray:
        """Derivative d nu / d s (m/(H T^2)), same shape as ``s``."""


@dataclass(frozen=True)
class LinearReluctivity:
    """Linear material, nu = 1/(mu_0 mu_r)."""

    mu_r: float

    def __post_init__(self) -> None:
        if not (np.isfinite(self.mu_r) and self.mu_r > 0):
            raise MaterialError(f"LinearReluctivity: mu_r = {self.mu_r!r} must be finite and > 0")

    def nu(self, s):
        return np.full(np.shape(s), 1.0 / (mu_0 * self.mu_r))

    def dnu_ds(self, s):
        return np.zeros(np.shape(s))

    def energy(self, s):
        """w(s) = nu s / 2 (J/m^3)."""
        return 0.5 * np.asarray(s) / (mu_0 * self.mu_r)


@dataclass(frozen=True)
class BrauerReluctivity:
    """Brauer law nu_B(s) = k1 exp(k2 s) + k3, optionally with a vacuum part.

    Source: J. R. Brauer, "Simple equations for the magnetization and
    reluctivity curves of steel", IEEE Trans. Magn. MAG-11, 1975:
    H = (k1 exp(k2 B^2) + k3) B.  With k1, k2, k3 > 0, H(B) is strictly
    increasing (dH/dB = nu + 2 s dnu/ds > 0).

    The pure law lets mu_r = 1/(mu_0 nu) fall below 1 in deep saturation
    (about 2.3 T for steel-like constants), which no material does.  With
    ``vacuum=True`` the permeabilities add, 1/nu = 1/nu_B + mu_0 (i.e.
    B = mu_0 H + the Brauer material part), so nu -> 1/mu_0 and the B-H
    slope tends to mu_0 as docs/references.md section 3 requires.  The relative
    change of nu is mu_0 nu_B/(1 + mu_0 nu_B): 0.05 % up to 1 T, 0.6 % at
    1.8 T, 3 % at 2 T for k1, k2, k3 = 3.8, 2.17, 396.2.

    Parameters
    ----------
    k1 : float  (m/H)
    k2 : float  (1/T^2)
    k3 : float  (m/H)
    vacuum : bool
    """

    k1: float
    k2: float
    k3: float
    vacuum: bool = False

    def __post_init__(self) -> None:
        for k in ("k1", "k2", "k3"):
            v = getattr(self, k)
            if not (np.isfinite(v) and v > 0):
                raise MaterialError(f"BrauerReluctivity: {k} = {v!r} must be finite and > 0")

    def _exp(self, s):
        x = self.k2 * np.asarray(s)
        # with the vacuum part nu is 1/mu_0 to machine precision long before
        # exp overflows; clip so that no overflow warning is raised
        return np.exp(np.minimum(x, 600.0) if self.vacuum else x)

    def _nu_b(self, s):
        return self.k1 * self._exp(s) + self.k3

    def nu(self, s):
        nb = self._nu_b(s)
        if not self.vacuum:
            return nb
        return 1.0 / (1.0 / nb + mu_0)

    def dnu_ds(self, s):
        d = self.k1 * self.k2 * self._exp(s)
        if not self.vacuum:
            return d
        # d/ds [nb/(1 + mu0 nb)] = nb' / (1 + mu0 nb)^2
        return d / (1.0 + mu_0 * self._nu_b(s)) ** 2

    def energy(self, s):
        """w(s) = (1/2) int_0^s nu(s') ds' (J/m^3), closed form.

        Pure law: (1/2) [k1 (exp(k2 s) - 1)/k2 + k3 s].  With the vacuum part,
        u = exp(k2 s), c = 1 + mu_0 k3, d = mu_0 k1 and partial fractions:
        w = (1/(2 k2)) [(k3/c) k2 s + (beta/d) ln((c + d u)/(c + d))],
        beta = k1 - k3 d / c  (derived here from nu = nu_B/(1 + mu_0 nu_B)).
        """
        s = np.asarray(s, dtype=float)
        if not self.vacuum:
            return 0.5 * (self.k1 * np.expm1(self.k2 * s) / self.k2 + self.k3 * s)
        c = 1.0 + mu_0 * self.k3
        d = mu_0 * self.k1
        beta = self.k1 - self.k3 * d / c
        x = self.k2 * s
        xs = np.minimum(x, 50.0)
        log_term = np.where(x < 50.0, np.log1p(d * np.expm1(xs) / (c + d)),
                            np.logaddexp(np.log(c), np.log(d) + x) - np.log(c + d))
        return 0.5 / self.k2 * (self.k3 / c * x + beta / d * log_term)


#: Air (and any non-magnetic material), mu_r = 1.
AIR = LinearReluctivity(1.0)



def energy_density(law, s) -> np.ndarray:
    """Energy density w(s) = (1/2) int_0^s nu(s') ds' = int_0^B H dB (J/m^3).

    Uses ``law.energy(s)`` if present, else ``law.energy_density(b)`` (the
    same quantity as a function of |B| = sqrt(s)) if present, else 8-point
    Gauss-Legendre quadrature in s (exact for nu polynomial of degree <= 15
    in s; only approximate for piecewise curves, which the solver's line
    search tolerates near the solution).
    """
    s = np.asarray(s, dtype=float)
    if hasattr(law, "energy"):
        return np.asarray(law.energy(s), dtype=float)
    if hasattr(law, "energy_density"):
        return np.asarray(law.energy_density(np.sqrt(np.maximum(s, 0.0))), dtype=float)
    acc = np.zeros_like(s)
    for x, w in zip(_GL_X, _GL_W):
        acc += w * law.nu(x * s)
    return 0.5 * s * acc


def coenergy_density(law, s) -> np.ndarray:
    """Co-energy density w'(s) = H B - w = nu s - w(s) (J/m^3) (Legendre transform)."""
    s = np.asarray(s, dtype=float)
    return law.nu(s) * s - energy_density(law, s)
