"""Newton solver properties: quadratic convergence, energy identities,
incremental inductance, non-convergence reporting."""
from __future__ import annotations

import numpy as np
import pytest

from magcheck.fem2d import post
from magcheck.fem2d.layout import AirBox, Layout, MeshSettings, Rect, Region
from magcheck.fem2d.materials import AIR, BrauerReluctivity, LinearReluctivity
from magcheck.fem2d.mesh import build_mesh
from magcheck.fem2d.solver import ConvergenceError, solve

BRAUER = BrauerReluctivity(3.8, 2.17, 396.2)  # test-only law (Brauer, IEEE Trans. Magn. MAG-11, 1975)
N_TURNS = 50


def core_layout(order=1, size=1.5e-3):
    """Window core 60 x 60 mm, 15 mm limbs, 1 mm gap in the right limb (test geometry)."""
    mm = 1e-3
    regions = (
        Region("core", (Rect(0, 0, 60 * mm, 15 * mm), Rect(0, 45 * mm, 60 * mm, 60 * mm),
                        Rect(0, 15 * mm, 15 * mm, 45 * mm), Rect(45 * mm, 15 * mm, 60 * mm, 45 * mm)),
               "steel", kind="core"),
        Region("gap", (Rect(45 * mm, 29.5 * mm, 60 * mm, 30.5 * mm),), "air", kind="gap"),
        Region("cin", (Rect(17 * mm, 17 * mm, 27 * mm, 43 * mm),), "copper", kind="coil"),
        Region("cout", (Rect(-12 * mm, 17 * mm, -2 * mm, 43 * mm),), "copper", kind="coil"),
    )
    return Layout(regions, air=AirBox("box", factor=2.0), mesh=MeshSettings(size=size, order=order),
                  depth=0.02)


@pytest.fixture(scope="module")
def core_mesh():
    return build_mesh(core_layout())


def coil(I):
    return {"cin": N_TURNS * I, "cout": -N_TURNS * I}


def test_linear_energy_identity(core_mesh):
    sol = solve(core_mesh, {"steel": LinearReluctivity(2000.0), "copper": AIR}, currents=coil(2.0))
    assert sol.iterations == 1  # a linear problem takes one solve
    # Source: exact identity of the Galerkin solution with A = 0 on the outer
    # boundary: int nu |B|^2 dx = a(A, A) = int J A dx (= 2 W for a linear law).
    # Tolerance 1e-7: the identity holds up to the solver residual (rtol 1e-8 of the load).
    assert 2.0 * post.energy(sol) == pytest.approx(post.source_work(sol), rel=1e-7)


def test_nonlinear_legendre_identity(core_mesh):
    sol = solve(core_mesh, {"steel": BRAUER, "copper": AIR}, currents=coil(40.0))
    W, Wc, JA = post.energy(sol), post.coenergy(sol), post.source_work(sol)
    # Source: Legendre transform w + w' = H.B pointwise (exact), integrated and
    # combined with the weak form int H.B dx = int J A dx at equilibrium.
    # Tolerance 1e-7: limited by the Newton stopping residual (1e-8).
    assert W + Wc == pytest.approx(JA, rel=1e-7)
    # saturated: the co-energy exceeds the energy (B-H curve bends over)
    assert Wc > 1.05 * W


def test_newton_quadratic_and_from_zero_deep_saturation(core_mesh):
    # 40 A x 50 turns drives the core to ~2 T; 400 A is 10x that.
    for I in (40.0, 400.0):
        sol = solve(core_mesh, {"steel": BRAUER, "copper": AIR}, currents=coil(I), linear_solver="superlu")
        assert sol.converged and sol.residual_history[-1] <= 1e-8
        r = np.array(sol.residual_history)
        # quadratic convergence near the solution: r_{k+1} <= C r_k^2 on the
        # steps that start below 1e-2 and end above the round-off floor (1e-12; measured 1e-13..4e-13).
        # Source: local quadratic convergence of Newton's method for a C^2
        # energy with Lipschitz Hessian (Egger, Engertsberger, Radu, arXiv
        # 2403.18520 [confirmed]); C = 100: measured C up to ~11 in deep saturation,
        # where a linear rate would give r_{k+1} ~ r_k and fail by orders of magnitude.
        pairs = [(a, b) for a, b in zip(r[:-1], r[1:]) if a < 1e-2 and b > 1e-12]
        assert pairs, r
        for a, b in pairs:
            assert b <= 100.0 * a * a, r
        # energy decreases monotonically (line search on the energy)
        e = np.array(sol.energy_history)
        assert np.all(np.diff(e) <= 1e-12 * np.abs(e[:-1]))


def test_incremental_inductance_matches_finite_difference(core_mesh):
    mats = {"steel": BRAUER, "copper": AIR}
    I0, dI = 40.0, 0.04
    sol = solve(core_mesh, mats, currents=coil(I0))
    Linc = post.incremental_flux_linkage(sol, N_TURNS, "cin", "cout")
    lam = []
    for I in (I0 - dI, I0 + dI):
        s = solve(core_mesh, mats, currents=coil(I), A0=sol.A, tol=1e-11, linear_solver="superlu")
        lam.append(post.flux_linkage(s, N_TURNS, "cin", "cout"))
    L_fd = (lam[1] - lam[0]) / (2 * dI)
    # Source: definition of the incremental inductance d lambda/dI, evaluated by
    # a central difference (test only). Tolerance 1e-4: central-difference
    # truncation O(dI^2) with dI/I = 1e-3 is ~1e-6, plus Newton residual 1e-11 / dI.
    assert Linc == pytest.approx(L_fd, rel=1e-4)
    # saturating: incremental below secant inductance
    L_sec = post.flux_linkage(sol, N_TURNS, "cin", "cout") / I0
    assert Linc < L_sec


def test_linear_incremental_equals_secant_inductance(core_mesh):
    sol = solve(core_mesh, {"steel": LinearReluctivity(2000.0), "copper": AIR}, currents=coil(1.0))
    L_sec = post.flux_linkage(sol, N_TURNS, "cin", "cout") / 1.0
    # Source: for a linear law lambda = L i, so d lambda/di = lambda/i = 2 W/i^2 (exact).
    # Tolerance 1e-7: solver residual.
    assert post.incremental_flux_linkage(sol, N_TURNS, "cin", "cout") == pytest.approx(L_sec, rel=1e-7)
    assert 2 * post.energy(sol) / 1.0 == pytest.approx(L_sec, rel=1e-7)


def test_nonconvergence_is_reported(core_mesh):
    mats = {"steel": BRAUER, "copper": AIR}
    sol = solve(core_mesh, mats, currents=coil(40.0), max_iter=2, check=False)
    assert not sol.converged
    assert "not converged" in sol.message and "max_iter" in sol.message
    with pytest.raises(ConvergenceError, match="not converged"):
        sol.raise_if_failed()
    with pytest.raises(ConvergenceError):
        solve(core_mesh, mats, currents=coil(40.0), max_iter=2)


def test_warm_start_from_converged_solution_takes_no_step(core_mesh):
    mats = {"steel": BRAUER, "copper": AIR}
    sol = solve(core_mesh, mats, currents=coil(20.0))
    again = solve(core_mesh, mats, currents=coil(20.0), A0=sol.A)
    assert again.iterations == 0 and again.converged


def test_failed_linear_solve_is_reported(core_mesh):
    def broken(K):
        return lambda rhs: np.full_like(rhs, np.nan)

    sol = solve(core_mesh, {"steel": BRAUER, "copper": AIR}, currents=coil(40.0), linear_solver=broken,
                check=False)
    assert not sol.converged and "linear solve" in sol.message
    with pytest.raises(ConvergenceError, match="linear solve"):
        solve(core_mesh, {"steel": BRAUER, "copper": AIR}, currents=coil(40.0), linear_solver=broken)


class KneeLaw:
    """Test-only C1 law without energy(): nu = k3 + k1 max(s - s0, 0)^2 (m/H).

    H(B) = nu B is strictly increasing; the kink of d2nu/ds2 at s0 makes the
    8-point Gauss-Legendre energy quadrature inexact, as for a tabulated curve.
    """

    k1, k3, s0 = 2.0e4, 400.0, 1.5

    def nu(self, s):
        return self.k3 + self.k1 * np.maximum(np.asarray(s) - self.s0, 0.0) ** 2

    def dnu_ds(self, s):
        return 2.0 * self.k1 * np.maximum(np.asarray(s) - self.s0, 0.0)


def test_law_without_exact_energy_converges(core_mesh):
    sol = solve(core_mesh, {"steel": KneeLaw(), "copper": AIR}, currents=coil(40.0))
    assert sol.converged and sol.residual_history[-1] <= 1e-8
    # saturated: the knee law is past its knee somewhere in the core
    assert post.peak_b(sol, "core")[0] ** 2 > KneeLaw.s0
    # Source: Legendre identity W + W' = int J A (exact; see test_nonlinear_legendre_identity);
    # tolerance 1e-6: the energy of this law is integrated numerically (inexact at the knee).
    assert post.energy(sol) + post.coenergy(sol) == pytest.approx(post.source_work(sol), rel=1e-6)
