"""The Newton line search (fem2d.solver._line_search) keeps its contract on
a convex energy where a small slope alone does not mean a lower energy.

The FE's energies are convex along a Newton direction, and near their
minimiser a small derivative usually goes with a lower energy; the search
must still check the decrease itself.  Here a one-unknown "assembler"
(a field B = a along the step, a material law whose H jumps at a knee)
makes phi(a) = W(a dA) fall steeply to a = 0.01, then rise at a slope
0.4 |phi'(0)| for ever: every step past a ~ 0.035 has |phi'| <= 0.5 |phi'(0)|
yet raises the energy."""

from __future__ import annotations

from types import SimpleNamespace

import numpy as np

from magcheck.fem2d.solver import _line_search

B_KNEE, H_JUMP, H_SLOPE = 0.01, 1.4, 0.01  # invented for the test (A/m, T units dropped)
LOAD = 1.0  # b: phi(a) = w(a) - LOAD a, phi'(0) = H(0) - LOAD = -1


def _h(b):
    return np.where(b < B_KNEE, b, H_JUMP + H_SLOPE * (b - B_KNEE))


def _w(b):  # w(B) = integral of H dB, convex (H increasing)
    over = np.maximum(b - B_KNEE, 0.0)
    return np.where(b < B_KNEE, 0.5 * b * b,
                    0.5 * B_KNEE**2 + H_JUMP * over + 0.5 * H_SLOPE * over**2)


def _one_unknown():
    def grad(A):
        return np.stack([np.full((1, 1), A[0]), np.zeros((1, 1))])

    def coefficients(s, derivative=True):
        b = np.sqrt(s)
        return np.where(b > 0, _h(b) / np.where(b > 0, b, 1.0), 1.0), np.zeros_like(s)

    return SimpleNamespace(
        I=np.array([0]), wv=np.ones((1, 1)), wk=np.ones((1, 1)), b=np.array([LOAD]),
        linear=False, grad=grad, s_of=lambda g: g[0] ** 2 + g[1] ** 2,
        energy_density=lambda s: _w(np.sqrt(s)), coefficients=coefficients,
        ext_quadratic=lambda A, dA: (0.0, 0.0, 0.0))


def test_line_search_step_lowers_the_energy_by_the_armijo_condition():
    asm = _one_unknown()
    A = np.zeros(1)
    slope = -LOAD  # phi'(0) = r . dA with r = H(0) - LOAD
    c = 1e-4
    ok, a, _, _, w_new = _line_search(asm, A, asm.grad(A), 0.0, np.array([slope]),
                                      np.array([1.0]), c)
    # Source: the Armijo (sufficient decrease) condition,
    # phi(a) <= phi(0) + c a phi'(0) (Nocedal & Wright, Numerical
    # Optimization, 2nd ed. 2006, eq. 3.4 [from memory]); the full step
    # (phi(1) = +0.41) fails it.  Exact comparison: the function's own test.
    assert ok
    assert w_new <= 0.0 + c * a * slope
    # the energy returned is phi at the step returned (to rounding)
    assert abs(w_new - (float(_w(np.array(a))) - LOAD * a)) <= 1e-12
    # and the step lands where phi is low: past the knee's steep fall (a >= 0.01),
    # before the rise cancels it (phi(a) < 0 for a < ~0.035)
    assert B_KNEE * 0.9 <= a <= 0.035
