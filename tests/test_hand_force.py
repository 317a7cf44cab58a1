"""Hand force formulas (analytic.force) against closed forms."""
import math

import pytest
from scipy.constants import mu_0

from magcheck.analytic.bh import LinearMaterial
from magcheck.analytic.force import gap_closing_force, maxwell_pull, virtual_work_force
from magcheck.analytic.materials import builtin
from magcheck.analytic.network import CoreBranch, GapBranch, Network, Winding, solve_network

AREA, L_CORE, N, I = 4e-4, 0.25, 200, 3.0


def loop(material, gap: float) -> Network:
    """One loop, core and an ideal gap (no fringing), invented dimensions."""
    return Network(nodes=("a", "b"),
                   branches=(CoreBranch("core", "a", "b", L_CORE, AREA, material),
                             GapBranch("gap", "b", "a", gap, mu_0 * AREA / gap, AREA)),
                   windings=(Winding("w", N, I, "core"),))


def test_linear_circuit_force_is_half_i_squared_dl_dx():
    # Source: exact for a linear circuit: W' = L I^2/2, F = (I^2/2) dL/dg with
    # L = N^2 / (l_c/(mu0 mu_r A) + g/(mu0 A)) differentiated by hand
    mat = LinearMaterial(2000.0)
    g = 1e-3
    R = L_CORE / (mu_0 * 2000.0 * AREA) + g / (mu_0 * AREA)
    dL_dg = -N ** 2 / R ** 2 / (mu_0 * AREA)
    vw = virtual_work_force(lambda x: loop(mat, x), g)
    assert vw.force == pytest.approx(0.5 * I ** 2 * dL_dg, rel=1e-6)


def test_closing_force_equals_the_maxwell_pull_in_a_series_loop_even_saturated():
    # Source: for one series loop with an ideal gap, dW'/dg at constant MMF
    # is -Phi^2/(2 mu0 A) whatever the core's B-H curve (the core's
    # co-energy change and the source work cancel), i.e. the Maxwell pull
    # B_g^2 A/(2 mu0) (Roters, Electromagnetic Devices, 1941: the pull formula)
    steel = builtin("demo-sisteel")
    for current in (0.5, 3.0, 20.0):  # linear to deep saturation
        def build(x, c=current):
            net = loop(steel, x)
            return Network(net.nodes, net.branches, (Winding("w", N, c, "core"),))
        g = 0.5e-3
        res = solve_network(build(g)).raise_if_failed()
        b = res.branch("gap").flux / AREA
        pull = maxwell_pull(b, AREA)
        assert gap_closing_force(build, g) == pytest.approx(pull, rel=1e-5), current


def test_maxwell_pull_value_and_bad_input():
    # 1 T on 1 cm^2: 1 / (2 mu0) * 1e-4 = 39.79 N (arithmetic)
    assert maxwell_pull(1.0, 1e-4) == pytest.approx(1e-4 / (2 * mu_0), rel=1e-12)
    assert maxwell_pull(1.0, 1e-4) == pytest.approx(39.789, rel=1e-4)
    with pytest.raises(ValueError, match="area"):
        maxwell_pull(1.0, 0.0)
    with pytest.raises(ValueError, match="delta"):
        virtual_work_force(lambda x: loop(LinearMaterial(100.0), x), 1e-3, delta=2e-3)
    assert math.isfinite(virtual_work_force(lambda x: loop(LinearMaterial(100.0), x), 1e-3).force)


# ---------------------------------------------- gap branches' geometry derivative
def test_the_ideal_gap_derivative_is_minus_p0_over_g():
    # exact: P = mu0 a b / g, dP/dg = -P/g
    from magcheck.analytic.fringing import GapFace, gap_permeance_derivative

    face = GapFace(1e-3, 10e-3, 20e-3, 30e-3)
    d = gap_permeance_derivative(face, "none", planar=False)
    assert d == pytest.approx(-face.ideal_permeance / face.length, rel=1e-10)


@pytest.mark.parametrize("model", ["none", "area", "flux-factor", "conformal", "flux-tube"])
@pytest.mark.parametrize("planar", [True, False])
def test_gap_forces_from_one_solve_equal_the_network_virtual_work(model, planar):
    # For every fringing model: -(1/2) F^2 dP/dg from one solve equals the
    # central difference of the network's co-energy over two solves with the
    # gap at g -/+ 1e-3 g (the same virtual-work principle two ways), in a
    # loop whose steel saturates (1.8 T) so the core's share is not trivial.
    from magcheck.analytic.fringing import (FRINGING_MODELS, GapFace, GapSides, effective_area,
                                            gap_permeance, gap_permeance_derivative)
    from magcheck.analytic.force import gap_forces

    assert set(FRINGING_MODELS) == {"none", "area", "flux-factor", "conformal", "flux-tube"}
    steel = builtin("demo-sisteel")
    sides = GapSides((8e-3, 12e-3), (8e-3, 30e-3), (5e-3, 5e-3), (15e-3, math.inf))

    def build(g):
        face = GapFace(g, 20e-3, 20e-3, 30e-3, sides)
        return Network(nodes=("a", "b"), branches=(
            CoreBranch("core", "a", "b", L_CORE, AREA, steel),
            GapBranch("gap", "b", "a", g, gap_permeance(face, model, planar),
                      effective_area(face, model, planar),
                      dpermeance_dlength=gap_permeance_derivative(face, model, planar))),
            windings=(Winding("w", N, 8.0, "core"),))

    g = 0.8e-3
    net = build(g)
    res = solve_network(net, rtol=1e-12).raise_if_failed()
    assert abs(res.branch("core").B) > 1.5
    one = gap_forces(net, res)["gap"]
    assert one > 0
    assert one == pytest.approx(gap_closing_force(build, g), rel=1e-5)
    if model == "none":  # and the Maxwell pull, exactly (series loop, ideal gap)
        assert one == pytest.approx(maxwell_pull(res.branch("gap").flux / AREA, AREA), rel=1e-9)


def test_a_non_finite_permeance_derivative_is_refused():
    from magcheck.analytic.network import NetworkError

    with pytest.raises(NetworkError, match=r"'g': dpermeance_dlength = nan"):
        GapBranch("g", "a", "b", 1e-3, 1e-7, 1e-4, dpermeance_dlength=float("nan"))
