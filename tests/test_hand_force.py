"""Hand force formulas (analytic.force) against closed forms."""
import math

import pytest
from scipy.constants import mu_0

from analytic.bh import LinearMaterial
from analytic.force import gap_closing_force, maxwell_pull, virtual_work_force
from analytic.materials import builtin
from analytic.network import CoreBranch, GapBranch, Network, Winding, solve_network

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
