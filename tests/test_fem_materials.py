"""Material laws: energy densities and derivatives against references."""
from __future__ import annotations

import numpy as np
import pytest
from scipy.constants import mu_0
from scipy.integrate import quad

from magcheck.fem2d.materials import (BrauerReluctivity, LinearReluctivity, MaterialError,
                                      coenergy_density, energy_density)

S = np.array([1e-6, 0.3, 1.0, 2.56, 4.0, 6.0, 9.0])


@pytest.mark.parametrize("vacuum", [False, True])
def test_brauer_energy_and_derivative(vacuum):
    law = BrauerReluctivity(3.8, 2.17, 396.2, vacuum=vacuum)
    for s in S:
        # Source: definition w(s) = (1/2) int_0^s nu ds', evaluated with scipy.integrate.quad
        # (general-purpose reference library). Tolerance 1e-10: quad's own accuracy.
        ref = 0.5 * quad(law.nu, 0.0, s, epsabs=0.0, epsrel=1e-13, limit=200)[0]
        assert float(law.energy(s)) == pytest.approx(ref, rel=1e-10)
    h = 1e-6 * np.maximum(S, 1.0)
    fd = (law.nu(S + h) - law.nu(S - h)) / (2 * h)
    # Source: central finite difference of nu (exact derivative check); tolerance 1e-6
    # covers the O(h^2) truncation for these exponentials.
    np.testing.assert_allclose(law.dnu_ds(S), fd, rtol=1e-6)


def test_brauer_vacuum_tends_to_mu0_and_stays_monotone():
    law = BrauerReluctivity(3.8, 2.17, 396.2, vacuum=True)
    s = np.linspace(0.0, 16.0, 4001)
    b = np.sqrt(s)
    H = law.nu(s) * b
    assert np.all(np.diff(H) > 0)  # H(B) strictly increasing
    # Source: physically required slope mu0 in deep saturation (docs/references.md section 3,
    # [from memory]); 1/nu = 1/nu_B + mu0 gives nu -> 1/mu0. Tolerance 1e-6 at B = 4 T
    # where 1/nu_B ~ 1e-17 H/m.
    assert law.nu(16.0) == pytest.approx(1.0 / mu_0, rel=1e-6)
    # low field: the vacuum part changes nu by mu0 nu_B ~ 5e-4 (derived)
    assert law.nu(0.0) == pytest.approx(1.0 / (1.0 / 400.0 + mu_0), rel=1e-12)


def test_generic_quadrature_energy_is_exact_for_polynomial_law():
    class Poly:
        """nu(s) = a + b s + c s^2 (test-only law without energy())."""

        def nu(self, s):
            return 400.0 + 50.0 * s + 7.0 * s**2

        def dnu_ds(self, s):
            return 50.0 + 14.0 * s

    s = np.array([0.0, 0.5, 2.0, 5.0])
    # Source: exact antiderivative w = (1/2)(a s + b s^2/2 + c s^3/3) (exact solution);
    # 8-point Gauss-Legendre is exact for degree <= 15, tolerance 1e-13 is round-off.
    exact = 0.5 * (400.0 * s + 25.0 * s**2 + 7.0 * s**3 / 3.0)
    np.testing.assert_allclose(energy_density(Poly(), s), exact, rtol=1e-13)
    # Legendre transform: w + w' = nu s = H B
    np.testing.assert_allclose(energy_density(Poly(), s) + coenergy_density(Poly(), s),
                               Poly().nu(s) * s, rtol=1e-13)


def test_law_parameter_errors_name_the_value():
    with pytest.raises(MaterialError, match="k2 = -1"):
        BrauerReluctivity(3.8, -1.0, 396.2)
    with pytest.raises(MaterialError, match="mu_r = 0"):
        LinearReluctivity(0.0)
