"""analytic.winding_loss: DC resistance and Dowell's AC factor by hand.

The FE side of Dowell's 1D problem (foil stack in an ideal-iron window) is
in tests/test_harmonic.py; here the formulas against their own limits.
"""
from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import quad

from magcheck.analytic import winding_loss as WL


def test_resistivity_temperature():
    # Source: IEC 60028 annealed copper, 1.724e-8 ohm m at 20 degC, 0.00393 /K (from memory)
    assert WL.resistivity(20.0) == pytest.approx(1.724e-8, rel=1e-12)
    assert WL.resistivity(100.0) == pytest.approx(1.724e-8 * (1 + 0.00393 * 80), rel=1e-12)
    with pytest.raises(ValueError, match="temperature"):
        WL.resistivity(float("nan"))


def test_dc_resistance():
    # 10 turns of 1 mm^2 copper, mean turn 50 mm at 20 degC: rho N MLT / A (definition)
    assert WL.dc_resistance(10, 0.05, 1e-6) == pytest.approx(1.724e-8 * 10 * 0.05 / 1e-6, rel=1e-12)
    assert WL.dc_resistance(10, 0.05, 1e-6, parallel=2) == pytest.approx(
        WL.dc_resistance(10, 0.05, 1e-6) / 2, rel=1e-12)
    with pytest.raises(ValueError, match="area"):
        WL.dc_resistance(10, 0.05, 0.0)


def test_skin_depth_copper():
    # Source: delta = sqrt(2 rho/(w mu0)); copper 20 degC at 50 Hz 9.3 mm, at
    # 100 kHz 0.21 mm (docs/references.md section 12 [derived])
    rho = WL.resistivity(20.0)
    assert WL.skin_depth(50.0, rho) == pytest.approx(9.34e-3, rel=2e-3)
    assert WL.skin_depth(1e5, rho) == pytest.approx(0.2089e-3, rel=2e-3)


def test_single_layer_is_fields_formula():
    """m = 1: Dowell reduces to D (sinh 2D + sin 2D)/(cosh 2D - cos 2D) (Field,
    Trans. AIEE 1905, conductor in a deep slot [from memory]; docs/references.md
    section 10)."""
    D = np.array([0.3, 1.0, 2.5])
    field = D * (np.sinh(2 * D) + np.sin(2 * D)) / (np.cosh(2 * D) - np.cos(2 * D))
    assert WL.dowell_factor(D, 1) == pytest.approx(field, rel=1e-12)


def test_layer_factor_from_the_1d_field():
    """The face-field layer factor against a direct quadrature of the exact 1D
    field: H(x) = A cosh(kx) + B sinh(kx) with H(0) = H_a, H(h) = H_b,
    k = (1 + j)/delta, J = dH/dx; loss / DC loss (derived: the 1D diffusion
    equation)."""
    h, delta = 1.0, 0.6
    k = (1 + 1j) / delta
    for Ha, Hb in ((0.0, 1.0), (2.0, 3.0), (1.0, 0.0), (-0.5, 0.5)):
        B = (Hb - Ha * np.cosh(k * h)) / np.sinh(k * h)
        J2 = lambda x: abs(k * (Ha * np.sinh(k * x) + B * np.cosh(k * x))) ** 2
        loss = quad(J2, 0, h, epsabs=0, epsrel=1e-12)[0]
        dc = (Hb - Ha) ** 2 / h
        assert float(WL.layer_factor(h / delta, Ha, Hb)) == pytest.approx(loss / dc, rel=1e-10)


def test_dowell_is_the_mean_of_its_layers():
    for D in (0.2, 1.0, 3.0, 10.0):
        for m in (1, 2, 5, 9):
            assert float(WL.dowell_factor(D, m)) == pytest.approx(
                WL.dowell_layer_factors(D, m).mean(), rel=1e-10)


def test_dowell_limits():
    """Low frequency: F -> 1 + (5 m^2 - 1) D^4 / 45 (Dowell's series, from memory;
    the next term is O(D^8)); high frequency: F -> D (1 + 2 (m^2 - 1)/3) (the
    hyperbolic ratios -> 1: derived from the formula)."""
    for m in (1, 3, 6):
        D = 0.1
        assert float(WL.dowell_factor(D, m)) - 1 == pytest.approx((5 * m * m - 1) * D ** 4 / 45,
                                                                   rel=1e-3)
        D = 40.0
        assert float(WL.dowell_factor(D, m)) == pytest.approx(D * (1 + 2 * (m * m - 1) / 3),
                                                              rel=1e-12)
    assert float(WL.dowell_factor(1000.0, 2)) == pytest.approx(1000.0 * 3.0, rel=1e-12)


def test_mmf_pattern_interleaving_helps():
    """Two layers of one winding (MMF 0, 1, 2) against interleaved primary and
    secondary layers (0, 1, 0): the interleaved layers each see Field's one-layer
    factor (derived), below the non-interleaved mean."""
    D = 2.0
    F, mean = WL.mmf_pattern_factors(D, [0, 1, 2])
    assert mean == pytest.approx(float(WL.dowell_factor(D, 2)), rel=1e-12)
    Fi, mean_i = WL.mmf_pattern_factors(D, [0, 1, 0])
    assert Fi == pytest.approx([float(WL.dowell_factor(D, 1))] * 2, rel=1e-12)
    assert mean_i < mean
    # half-interleaved: faces at -1/2, +1/2 (symmetric): the lowest loss of a layer
    Fh, _ = WL.mmf_pattern_factors(D, [-0.5, 0.5])
    assert Fh[0] < Fi[0]
    with pytest.raises(ValueError, match="no current"):
        WL.layer_factor(1.0, 1.0, 1.0)


def test_round_wire_equivalent_foil():
    # Dowell's equivalent square conductor: side sqrt(pi)/2 d (equal area, exact)
    h, eta = WL.round_wire_equivalent_foil(1e-3, 10, 10e-3)
    assert h * h == pytest.approx(math.pi * (1e-3) ** 2 / 4, rel=1e-12)
    assert eta == pytest.approx(10 * h / 10e-3, rel=1e-12)
    D = WL.round_wire_delta_ratio(1e-3, 10, 10e-3, 1e5, WL.resistivity(20.0))
    assert D == pytest.approx(math.sqrt(eta) * h / WL.skin_depth(1e5, WL.resistivity(20.0)),
                              rel=1e-12)
    with pytest.raises(ValueError, match="porosity"):
        WL.round_wire_equivalent_foil(1e-3, 20, 10e-3)


def test_mmf_leakage_is_the_classic_two_winding_formula():
    from magcheck.analytic.leakage import concentric_leakage_inductance

    # two windings as one layer each (N I = 12 A, builds a1, a2, spacing d):
    # Source: the classic concentric-winding leakage formula
    # mu0 N^2 MLT / h (a1/3 + a2/3 + d) (docs/references.md section 9),
    # exact for the 1D window field; tolerance 1e-12 (rounding)
    N, I, a1, a2, d, h, mlt = 6, 2.0, 1.45e-3, 1.3e-3, 0.2e-3, 18e-3, 0.07
    L = WL.mmf_leakage_inductance([N * I, -N * I], [a1, a2], [d], h, mlt, I)
    assert L == pytest.approx(concentric_leakage_inductance(N, mlt, h, a1, a2, d), rel=1e-12)
    # the same windings split into layers with no space between them: the MMF
    # is still linear across each build, the integral unchanged (exact)
    L6 = WL.mmf_leakage_inductance([I] * 6 + [-2 * I] * 3, [a1 / 6] * 6 + [a2 / 3] * 3,
                                   [0.0] * 5 + [d] + [0.0] * 2, h, mlt, I)
    assert L6 == pytest.approx(L, rel=1e-12)


def test_mmf_leakage_interleaving_quarters_it():
    # P/2 - S - P/2 against P - S with equal builds per ampere-turn and no
    # spaces: the peak MMF halves and the field region of each section is
    # half as wide: the energy, and L, are a quarter of the unsplit one
    # Source: exact integral of the piecewise-linear MMF (derived; the 1D
    # window field of Dowell 1966's model); tolerance 1e-12 (rounding)
    t, I, h, mlt = 0.1e-3, 1.0, 18e-3, 0.07
    plain = WL.mmf_leakage_inductance([I] * 4 + [-I] * 4, [t] * 8, [0.0] * 7, h, mlt, I)
    inter = WL.mmf_leakage_inductance([I] * 2 + [-I] * 4 + [I] * 2, [t] * 8, [0.0] * 7, h, mlt, I)
    assert inter == pytest.approx(plain / 4.0, rel=1e-12)
    assert list(WL.face_mmfs([2.0, 2.0, -4.0])) == [0.0, 2.0, 4.0, 0.0]
    with pytest.raises(ValueError):
        WL.mmf_leakage_inductance([I, -I], [t], [], h, mlt, I)  # one thickness for two layers
