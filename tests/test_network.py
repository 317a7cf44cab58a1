"""Tests of analytic.network, the nonlinear reluctance-network solver."""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from scipy.constants import mu_0
from scipy.optimize import brentq

from magcheck.analytic.bh import BHRangeWarning, LinearMaterial
from magcheck.analytic.materials import builtin
from magcheck.analytic.network import (ConvergenceError, CoreBranch, GapBranch, Network,
                                       NetworkError, Winding, solve_network)

SISTEEL = builtin("demo-sisteel")


def gapped_core(material, current, *, l_c=0.3, l_g=1e-3, area=1e-4, turns=100, gap_area=None):
    """Single loop: core a->b with the winding, gap b->a (invented dimensions)."""
    gap_area = area if gap_area is None else gap_area
    return Network(
        nodes=("a", "b"),
        branches=(
            CoreBranch("core", "a", "b", l_c, area, material),
            GapBranch("gap", "b", "a", l_g, mu_0 * gap_area / l_g, gap_area),
        ),
        windings=(Winding("w", turns, current, "core"),),
    )


# EI-like core (invented dimensions): centre limb (winding + gap) from bottom to top, two equal outer limbs back
AC, AO, LC, LO, LG, NT = 4e-4, 2e-4, 0.05, 0.15, 0.5e-3, 100


def ei_core(current, material=SISTEEL):
    return Network(
        nodes=("top", "bottom", "mid"),
        branches=(
            CoreBranch("centre", "bottom", "mid", LC, AC, material),
            GapBranch("gap", "mid", "top", LG, mu_0 * AC / LG, AC),
            CoreBranch("left", "top", "bottom", LO, AO, material),
            CoreBranch("right", "top", "bottom", LO, AO, material),
        ),
        windings=(Winding("w", NT, current, "centre"),),
    )


def ei_mmf(b_centre, material=SISTEEL):
    """Scalar EI loop equation N I(B_c) = H(B_c) l_c + B_c l_g/mu0 + H(B_c A_c/(2 A_o)) l_o.

    Source: Ampere's law around centre limb + one outer limb, with each outer limb carrying half the
    centre flux by symmetry (docs/references.md section 2, ideal gapped core generalised [derived]).
    """
    h = material.h_of_b
    return float(h(b_centre)) * LC + b_centre * LG / mu_0 + float(h(b_centre * AC / (2 * AO))) * LO


KNEE_B = 1.5  # knee of demo-sisteel (design target of the invented demo data, common practice, no source)
KNEE_CURRENT = ei_mmf(KNEE_B) / NT


# --------------------------------------------------------------------------- linear closed forms


@pytest.mark.parametrize("current", [0.5, 3.0, -2.0])
def test_ideal_gapped_core_finite_mu_r(current):
    mu_r, l_c, l_g, n = 2000.0, 0.3, 1e-3, 100
    res = solve_network(gapped_core(LinearMaterial(mu_r), current)).raise_if_failed()
    # Source: exact solution B = mu0 N I/(l_g + l_c/mu_r) (docs/references.md section 2); tolerance 1e-9 per brief,
    # solver stops at relative residual 1e-10
    b_ref = mu_0 * n * current / (l_g + l_c / mu_r)
    assert res.branch("core").B == pytest.approx(b_ref, rel=1e-9)
    assert res.branch("gap").B == pytest.approx(b_ref, rel=1e-9)
    assert res.branch("gap").H == pytest.approx(b_ref / mu_0, rel=1e-9)


def test_ideal_gapped_core_infinite_mu_r_limit():
    l_g, area, n, current = 1e-3, 1e-4, 100, 2.0
    res = solve_network(gapped_core(LinearMaterial(1e12), current)).raise_if_failed()
    # Source: exact solution for mu_r -> infinity: B_g = mu0 N I/l_g, L = mu0 N^2 A/l_g (docs/references.md section 2);
    # tolerance 1e-9: the neglected l_c/mu_r = 3e-13 m is 3e-10 of l_g
    assert res.branch("gap").B == pytest.approx(mu_0 * n * current / l_g, rel=1e-9)
    assert res.inductance["w"] == pytest.approx(mu_0 * n**2 * area / l_g, rel=1e-9)
    assert res.incremental_inductance["w"] == pytest.approx(mu_0 * n**2 * area / l_g, rel=1e-9)


def test_linear_energy_and_incremental_equals_secant():
    res = solve_network(gapped_core(LinearMaterial(1500.0), 4.0)).raise_if_failed()
    lsec = res.inductance["w"]
    # Source: linear circuit, incremental = secant inductance (docs/references.md section 5); tolerance: residual 1e-10
    assert res.incremental_inductance["w"] == pytest.approx(lsec, rel=1e-9)
    # Source: W = L I^2/2 for a linear inductor (docs/references.md section 5); W = W' when linear
    assert res.energy == pytest.approx(0.5 * lsec * 4.0**2, rel=1e-9)
    assert res.coenergy == pytest.approx(res.energy, rel=1e-9)


def test_zero_current_gives_zero_flux_and_incremental_inductance():
    mu_r, l_c, l_g, area, n = 1500.0, 0.3, 1e-3, 1e-4, 100
    res = solve_network(gapped_core(LinearMaterial(mu_r), 0.0)).raise_if_failed()
    assert res.iterations == 0 and res.branch("core").flux == 0.0 and res.energy == 0.0
    # Source: exact L = N^2/(R_c + R_g) = N^2 mu0 A/(l_g + l_c/mu_r); at I = 0 the secant value is
    # replaced by the incremental one (documented)
    l_ref = n**2 * mu_0 * area / (l_g + l_c / mu_r)
    assert res.inductance["w"] == pytest.approx(l_ref, rel=1e-12)


def test_ei_linear_closed_form_and_symmetry():
    mu_r, current = 3000.0, 1.5
    res = solve_network(ei_core(current, LinearMaterial(mu_r))).raise_if_failed()
    r_c = LC / (mu_0 * mu_r * AC)
    r_g = LG / (mu_0 * AC)
    r_o = LO / (mu_0 * mu_r * AO)
    # Source: hand-solved closed form, phi_c = N I/(R_c + R_g + R_o/2), each outer limb phi_c/2
    # (series-parallel reluctances, exact for this network); tolerance: residual 1e-10
    phi_c = NT * current / (r_c + r_g + r_o / 2)
    assert res.branch("centre").flux == pytest.approx(phi_c, rel=1e-9)
    assert res.branch("left").flux == pytest.approx(phi_c / 2, rel=1e-9)
    assert res.branch("right").flux == pytest.approx(phi_c / 2, rel=1e-9)
    assert res.inductance["w"] == pytest.approx(NT**2 / (r_c + r_g + r_o / 2), rel=1e-9)


# --------------------------------------------------------------------------- nonlinear


@pytest.mark.parametrize("current", [0.1, 1.0, 5.0, 20.0, 300.0])
def test_nonlinear_thin_core_against_scalar_root(current):
    l_c, l_g, n = 0.3, 1e-3, 100
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", BHRangeWarning)
        res = solve_network(gapped_core(SISTEEL, current)).raise_if_failed()

    # Source: N I = H(B) l_c + B l_g/mu0 (docs/references.md section 2, nonlinear thin core), root by scipy brentq
    def loop(b):
        return float(SISTEEL.h_of_b(b)) * l_c + b * l_g / mu_0 - n * current

    b_ref = brentq(loop, 0.0, 10.0, xtol=1e-15, rtol=1e-14)
    # tolerance 1e-9 per brief; the solve stops at relative residual 1e-10
    assert res.branch("core").B == pytest.approx(b_ref, rel=1e-9)
    assert res.branch("gap").B == pytest.approx(b_ref, rel=1e-9)


@pytest.mark.parametrize("factor", [0.3, 1.0, 3.0])
def test_incremental_inductance_against_finite_difference(factor):
    current = factor * KNEE_CURRENT
    res = solve_network(ei_core(current), rtol=1e-13).raise_if_failed()
    d = 1e-4 * current
    lam_p = solve_network(ei_core(current + d), rtol=1e-13).raise_if_failed().flux_linkage["w"]
    lam_m = solve_network(ei_core(current - d), rtol=1e-13).raise_if_failed().flux_linkage["w"]
    # Source: central finite difference d lambda/dI (test only); tolerance: O(d^2) truncation plus the
    # O(d) error where the C1 B-H interpolant's curvature jumps at a knot, ~1e-7 relative observed
    assert res.incremental_inductance["w"] == pytest.approx((lam_p - lam_m) / (2 * d), rel=1e-6)
    # physics: incremental below secant on a saturating curve
    assert res.incremental_inductance["w"] < res.inductance["w"]


@pytest.mark.parametrize("factor", [0.5, 2.0, 30.0])
def test_nonlinear_energy_coenergy_legendre(factor):
    current = factor * KNEE_CURRENT
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", BHRangeWarning)
        res = solve_network(ei_core(current)).raise_if_failed()
    # Source: Legendre identity W + W' = lambda I (docs/references.md section 5; Tellegen over the branches) [derived];
    # tolerance: residual 1e-10
    assert res.energy + res.coenergy == pytest.approx(res.flux_linkage["w"] * current, rel=1e-9)
    assert res.energy != pytest.approx(res.coenergy, rel=1e-3)  # nonlinear: W differs from W'


def test_ei_nonlinear_against_scalar_root_and_symmetry():
    current = 2.0 * KNEE_CURRENT
    res = solve_network(ei_core(current)).raise_if_failed()
    # Source: scalar loop equation (ei_mmf docstring) solved by scipy brentq; tolerance 1e-9 per brief
    b_ref = brentq(lambda b: ei_mmf(b) - NT * current, 0.0, 5.0, xtol=1e-15, rtol=1e-14)
    assert res.branch("centre").B == pytest.approx(b_ref, rel=1e-9)
    # Source: symmetry, each outer limb carries half the centre flux (exact)
    assert res.branch("left").flux == pytest.approx(res.branch("centre").flux / 2, rel=1e-9)
    assert res.branch("right").flux == pytest.approx(res.branch("left").flux, rel=1e-9)


def test_deep_saturation_from_zero_start():
    current = 100 * KNEE_CURRENT
    with pytest.warns(BHRangeWarning) as rec:
        res = solve_network(ei_core(current))
    assert any("core branch 'centre'" in str(w.message) for w in rec)
    assert res.converged and res.residual_history[-1] <= 1e-10
    assert res.iterations == len(res.residual_history) - 1 and 1 <= res.iterations <= 30
    assert res.residual_history[0] > 1e-3  # the zero start is far from the solution
    b_ref = brentq(lambda b: ei_mmf(b) - NT * current, 0.0, 20.0, xtol=1e-15, rtol=1e-14)
    # Source: scalar loop equation solved by scipy brentq; tolerance 1e-9 per brief
    assert res.branch("centre").B == pytest.approx(b_ref, rel=1e-9)


def test_forced_failure_reports_and_raises():
    with warnings.catch_warnings():
        warnings.simplefilter("error", BHRangeWarning)  # no range check on an unconverged result
        res = solve_network(ei_core(100 * KNEE_CURRENT), max_iter=1)
    assert not res.converged and res.iterations == 1
    assert "NOT converged" in res.message and "1 iterations" in res.message
    with pytest.raises(ConvergenceError, match="NOT converged"):
        res.raise_if_failed()


def test_node_potentials_reproduce_branch_drops():
    current = 2.0 * KNEE_CURRENT
    res = solve_network(ei_core(current)).raise_if_failed()
    u = res.node_potentials
    assert u["top"] == 0.0  # first node grounded
    # Source: definition (1) F = u_a - u_b + N I of each branch, exact; tolerance: rounding relative to N I
    for br in ei_core(current).branches:
        src = NT * current if br.name == "centre" else 0.0
        drop = res.branch(br.name).mmf_drop
        assert drop == pytest.approx(u[br.node_a] - u[br.node_b] + src, abs=1e-12 * NT * current)


def test_initial_flux_guess_from_a_solution_converges_at_once():
    current = 2.0 * KNEE_CURRENT
    first = solve_network(ei_core(current)).raise_if_failed()
    guess = {b.name: b.flux for b in first.branches}
    again = solve_network(ei_core(current), flux0=guess).raise_if_failed()
    assert again.iterations <= 1
    with pytest.raises(NetworkError, match="flux0: 2 values given for 4 branches"):
        solve_network(ei_core(current), flux0=[0.0, 1.0])
    with pytest.raises(NetworkError, match="unknown branch"):
        solve_network(ei_core(current), flux0={"nope": 1e-4})


# --------------------------------------------------------------------------- worked examples


def test_worked_example_a():
    l_c, l_g, area, mu_r, n = 0.40, 0.05e-2, 12e-4, 4000.0, 400
    gap_area = 1.05 * area
    # Source: docs/references.md section 4 (a), i = 0.602 A [derived from the data; data from memory]; recomputed here:
    # flux = B_gap A_gap, core H = flux/(A mu0 mu_r), N i = H_c l_c + B_gap l_g/mu0
    b_gap = 0.5
    flux = b_gap * gap_area
    i_ref = (flux / (area * mu_0 * mu_r) * l_c + b_gap * l_g / mu_0) / n
    assert round(i_ref, 3) == 0.602
    res = solve_network(
        gapped_core(LinearMaterial(mu_r), i_ref, l_c=l_c, l_g=l_g, area=area, turns=n, gap_area=gap_area)
    ).raise_if_failed()
    assert res.branch("gap").B == pytest.approx(b_gap, rel=1e-9)  # tolerance: residual 1e-10
    res3 = solve_network(
        gapped_core(LinearMaterial(mu_r), 0.602, l_c=l_c, l_g=l_g, area=area, turns=n, gap_area=gap_area)
    ).raise_if_failed()
    assert round(res3.branch("gap").B, 3) == 0.500  # 3 significant figures of the quoted current


def test_worked_example_b():
    area, l_g, l_c, n, mu_r, b = 9e-4, 0.05e-2, 0.30, 500, 70000.0, 1.0
    # Source: docs/references.md section 4 (b), i = 0.80 A [derived; data from memory]; recomputed: N i = B (l_c/mu_r + l_g)/mu0
    i_ref = b * (l_c / mu_r + l_g) / mu_0 / n
    assert round(i_ref, 2) == 0.80
    res = solve_network(
        gapped_core(LinearMaterial(mu_r), i_ref, l_c=l_c, l_g=l_g, area=area, turns=n)
    ).raise_if_failed()
    assert res.branch("core").B == pytest.approx(b, rel=1e-9)  # tolerance: residual 1e-10


# --------------------------------------------------------------------------- several windings


def test_two_windings_mutual_inductance():
    mu_r = 2000.0
    net = Network(
        nodes=("a", "b"),
        branches=(
            CoreBranch("core", "a", "b", 0.3, 1e-4, LinearMaterial(mu_r)),
            GapBranch("gap", "b", "a", 1e-3, mu_0 * 1e-4 / 1e-3, 1e-4),
        ),
        windings=(Winding("p", 100, 1.0, "core"), Winding("s", 40, 0.5, "gap")),
    )
    res = solve_network(net).raise_if_failed()
    r_tot = 0.3 / (mu_0 * mu_r * 1e-4) + 1e-3 / (mu_0 * 1e-4)
    m = res.incremental_inductance_matrix
    # Source: linear single-loop circuit, L_ij = N_i N_j/R_total (exact); tolerance: rounding of one solve
    np.testing.assert_allclose(m, np.outer([100, 40], [100, 40]) / r_tot, rtol=1e-9)
    assert res.flux_linkage["p"] == pytest.approx(100 * (100 * 1.0 + 40 * 0.5) / r_tot, rel=1e-9)


def test_incremental_matrix_symmetric_nonlinear():
    net = Network(
        nodes=("top", "bottom", "mid"),
        branches=(
            CoreBranch("centre", "bottom", "mid", LC, AC, SISTEEL),
            GapBranch("gap", "mid", "top", LG, mu_0 * AC / LG, AC),
            CoreBranch("left", "top", "bottom", LO, AO, SISTEEL),
            CoreBranch("right", "top", "bottom", LO, AO, SISTEEL),
        ),
        windings=(Winding("p", NT, KNEE_CURRENT, "centre"), Winding("s", 30, 1.0, "left")),
    )
    m = solve_network(net).raise_if_failed().incremental_inductance_matrix
    # Source: the inductance matrix is the Hessian of the co-energy in the currents, hence symmetric [derived];
    # tolerance: rounding in the dense solves
    assert m[0, 1] == pytest.approx(m[1, 0], rel=1e-10)


# --------------------------------------------------------------------------- validation


def _branches():
    return (
        CoreBranch("core", "a", "b", 0.3, 1e-4, SISTEEL),
        GapBranch("gap", "b", "a", 1e-3, 1e-7, 1e-4),
    )


@pytest.mark.parametrize(
    "build, pattern",
    [
        (lambda: CoreBranch("c1", "a", "b", -0.3, 1e-4, SISTEEL), r"core branch 'c1': length = -0\.3"),
        (lambda: CoreBranch("c1", "a", "b", 0.3, 0.0, SISTEEL), r"core branch 'c1': area = 0\.0"),
        (lambda: CoreBranch("c1", "a", "b", 0.3, 1e-4, object()), r"core branch 'c1': material .* lacks"),
        (lambda: GapBranch("g1", "a", "b", 1e-3, float("nan"), 1e-4), r"gap branch 'g1': permeance = nan"),
        (lambda: Winding("w1", 0, 1.0, "core"), r"winding 'w1': turns = 0"),
        (lambda: Winding("w1", 10, float("inf"), "core"), r"winding 'w1': current = inf"),
        (lambda: Network(("a", "b"), _branches() + (_branches()[0],)), r"duplicate branch name 'core'"),
        (lambda: Network(("a", "b", "a"), _branches()), r"duplicate node name 'a'"),
        (lambda: Network(("a", "c"), _branches()), r"branch 'core': node_b = 'b' is not a node"),
        (lambda: Network(("a", "b"), _branches(), (Winding("w", 10, 1.0, "yoke"),)), r"branch = 'yoke'"),
        (lambda: Network(("a", "b", "c"), _branches()), r"node 'c' has no branches"),
        (
            lambda: Network(
                ("a", "b", "c", "d"), _branches() + (GapBranch("g2", "c", "d", 1e-3, 1e-7, 1e-4),)
            ),
            r"disconnected: node\(s\) \['c', 'd'\]",
        ),
        (lambda: Network(("a", "b"), (CoreBranch("c", "a", "a", 0.3, 1e-4, SISTEEL),)), r"node_a = node_b"),
    ],
)
def test_invalid_networks_rejected(build, pattern):
    with pytest.raises(NetworkError, match=pattern):
        build()
    assert issubclass(NetworkError, ValueError)


def test_bad_solver_options():
    net = gapped_core(SISTEEL, 1.0)
    with pytest.raises(NetworkError, match=r"rtol = -1"):
        solve_network(net, rtol=-1)
    with pytest.raises(NetworkError, match=r"max_iter = 2\.5"):
        solve_network(net, max_iter=2.5)
    assert math.isfinite(solve_network(net).energy)
    # The default options solve it: the energy against the scalar loop
    # equation N I = H(B) l_c + B l_g/mu0 (Ampere's law on the single loop,
    # docs/references.md section 2, nonlinear thin core) and W = A l_c int_0^B H db
    # + (B A)^2 l_g/(2 mu0 A). Tolerances: brentq to 1e-14 T and quad to 1e-12
    # relative; the network's Newton stops at 1e-10 relative residual, and W is
    # stationary at the solution, so 1e-8 holds with room.
    from scipy.integrate import quad

    l_c, l_g, area, turns = 0.3, 1e-3, 1e-4, 100
    b = brentq(lambda x: float(SISTEEL.h_of_b(x)) * l_c + x * l_g / mu_0 - turns * 1.0,
               0.0, 2.0, xtol=1e-14)
    w_core = quad(lambda x: float(SISTEEL.h_of_b(x)), 0.0, b, epsabs=0, epsrel=1e-12)[0]
    energy = area * l_c * w_core + (b * area) ** 2 * l_g / (2 * mu_0 * area)
    assert solve_network(net).energy == pytest.approx(energy, rel=1e-8)


# --------------------------------------------------------------------------- vectorised branch law


def test_vectorised_flux_law_matches_scalar_branch_law():
    """The network's all-branches law (one b_of_h call per material, quadrature points on a
    leading axis) against the one-branch-at-a-time law it replaced, on a network with two
    materials, a linear core, a gap and a magnet, drops from deep negative to deep saturation.
    Tolerance 1e-12 relative: the same formulas; the B-H inversion may take one more Newton
    step on an array than on a scalar (a change of a few ulp)."""
    from magcheck.analytic.network import MagnetBranch, _branch_flux, _FluxLaw

    ferrite = builtin("demo-ferrite")
    net = Network(
        nodes=("a", "b", "c"),
        branches=(
            CoreBranch("c1", "a", "b", 0.1, 1e-4, SISTEEL),
            GapBranch("g", "b", "c", 1e-3, mu_0 * 1e-4 / 1e-3, 1e-4),
            CoreBranch("c2", "c", "a", 0.2, 2e-4, SISTEEL),
            CoreBranch("c3", "a", "c", 0.05, 3e-4, ferrite),
            CoreBranch("c4", "b", "a", 0.07, 1e-4, LinearMaterial(500.0)),
            MagnetBranch("m", "c", "b", 2e-3, 1e-4, 1.2),
        ),
        windings=(Winding("w", 100, 1.0, "c1"),),
    )
    law = _FluxLaw.of(net)
    rng = np.random.default_rng(7)
    f = rng.standard_normal((5, len(net.branches))) * np.logspace(-3, 5, 5)[:, None]
    phi, g = law(f)
    for row in range(f.shape[0]):
        phi1, g1 = law(f[row])
        for k, br in enumerate(net.branches):
            ref_phi, ref_g = _branch_flux(br, float(f[row, k]))
            for got in (phi[row, k], phi1[k]):
                assert got == pytest.approx(ref_phi, rel=1e-12, abs=1e-300)
            for got in (g[row, k], g1[k]):
                assert got == pytest.approx(ref_g, rel=1e-12)

