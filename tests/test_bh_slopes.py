"""The B-H interpolant's knot slopes (analytic.bh) against the formula it
implements, on tables with unequal knot spacing (where the two weights of
the harmonic mean differ, so swapping them changes the slope)."""

from __future__ import annotations

import numpy as np
import pytest
from scipy.constants import mu_0
from scipy.interpolate import PchipInterpolator

from magcheck.analytic.bh import BHCurve
from magcheck.analytic.materials import builtin, builtin_names

# Invented for the test: a steel-like table with knot spacings in B from
# 0.02 to 0.5 T (ratios up to 10 between neighbours)
UNEVEN_H = np.array([30.0, 45.0, 120.0, 160.0, 600.0, 900.0, 5000.0, 2.0e4, 8.0e4])
UNEVEN_B = np.array([0.30, 0.35, 0.85, 0.90, 1.40, 1.45, 1.70, 1.85, 1.98])
# a permeability rising with field (tests/test_bh.py's RISING table)
RISING_H = np.array([20.0, 40.0, 60.0, 100.0, 200.0, 500.0, 1000.0, 3000.0, 1.0e4, 3.0e4, 1.0e5])
RISING_B = np.array([0.05, 0.15, 0.40, 0.80, 1.10, 1.35, 1.48, 1.62, 1.75, 1.85, 1.96])


def _curves():
    return ([BHCurve.from_points(UNEVEN_H, UNEVEN_B, name="uneven"),
             BHCurve.from_points(RISING_H, RISING_B, name="rising")]
            + [builtin(n) for n in builtin_names()])


def _fritsch_butland(b, h):
    """Interior knot slopes dH/dB written out from the source, knot by knot.

    Source: F. N. Fritsch and J. Butland, "A method for constructing local
    monotone piecewise cubic interpolants", SIAM J. Sci. Stat. Comput. 5(2),
    1984: at knot k, with spacings h_{k-1} = B_k - B_{k-1}, h_k = B_{k+1} - B_k
    and chord slopes d_{k-1}, d_k (same sign),
        m_k = 3 (h_{k-1} + h_k) / ((2 h_k + h_{k-1}) / d_{k-1} + (h_k + 2 h_{k-1}) / d_k),
    the harmonic mean weighting the chord of the *shorter* neighbouring
    interval more (as in Fritsch & Carlson 1980's monotone framework; the
    form scipy's PchipInterpolator uses too).
    """
    out = []
    for k in range(1, len(b) - 1):
        hm, hp = b[k] - b[k - 1], b[k + 1] - b[k]
        dm, dp = (h[k] - h[k - 1]) / hm, (h[k + 1] - h[k]) / hp
        out.append(3.0 * (hm + hp) / ((2.0 * hp + hm) / dm + (hp + 2.0 * hm) / dp))
    return np.array(out)


@pytest.mark.parametrize("curve", _curves(), ids=lambda c: c.name)
def test_interior_knot_slopes_are_the_fritsch_butland_mean(curve):
    b, h = curve.b_points, curve.h_points  # the table with the origin
    d = np.diff(h) / np.diff(b)
    want = _fritsch_butland(b, h)
    # the module's clamp (2.9 x the smaller neighbouring chord, module doc:
    # keeps each cubic strictly monotone, Fritsch & Carlson 1980) where it binds
    clamp = 2.9 * np.minimum(d[:-1], d[1:])
    want = np.minimum(want, clamp)
    got = curve.dh_db(b[1:-1])  # at a knot: the slope of the segment starting there
    # tolerance 1e-12: the same formula evaluated in another order (rounding)
    np.testing.assert_allclose(got, want, rtol=1e-12)
    # Source: scipy.interpolate.PchipInterpolator (reference library, the same
    # Fritsch-Butland mean) at the knots where the clamp does not bind.
    free = want < clamp
    ref = PchipInterpolator(b, h).derivative()(b[1:-1])
    np.testing.assert_allclose(got[free], ref[free], rtol=1e-12)


def test_the_uneven_table_tells_the_weights_apart():
    # Guard on the test itself: with the weights swapped the uneven table's
    # unclamped slopes move by far more than the tolerance (here > 5 %).
    b = np.concatenate(([0.0], UNEVEN_B))
    h = np.concatenate(([0.0], UNEVEN_H))
    right = _fritsch_butland(b, h)
    swapped = []
    for k in range(1, len(b) - 1):
        hm, hp = b[k] - b[k - 1], b[k + 1] - b[k]
        dm, dp = (h[k] - h[k - 1]) / hm, (h[k + 1] - h[k]) / hp
        swapped.append(3.0 * (hm + hp) / ((hp + 2.0 * hm) / dm + (2.0 * hp + hm) / dp))
    assert np.max(np.abs(np.array(swapped) / right - 1.0)) > 0.05


@pytest.mark.parametrize("curve", _curves(), ids=lambda c: c.name)
def test_end_slopes(curve):
    # Module docstring (the construction, derived there): at the origin
    # m_0 = (3 d_0 - m_1)/2 (no B^2 term in the first cubic); at the last
    # point min(1/mu0, 2.9 d_last) (the join to the mu0 line).
    b, h = curve.b_points, curve.h_points
    d = np.diff(h) / np.diff(b)
    m1 = float(curve.dh_db(b[1]))
    # tolerance 1e-12 at the origin (the same two-term formula); 1e-9 at the
    # last point, read from the last cubic's derivative at its far end
    # (rounding in a2 and a3 times dx^2; measured < 1e-15)
    assert float(curve.dh_db(0.0)) == pytest.approx(0.5 * (3.0 * d[0] - m1), rel=1e-12)
    assert float(curve.dh_db(b[-1])) == pytest.approx(min(1.0 / mu_0, 2.9 * d[-1]), rel=1e-9)
