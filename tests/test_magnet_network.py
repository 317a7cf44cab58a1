"""Permanent magnets in the magnetic-circuit network (analytic.network.MagnetBranch).

Verifies the magnet's operating point against the load-line intersection
solved independently: in closed form for a linear circuit, by scalar root
finding for a saturating core and with a winding's MMF added.
"""

from __future__ import annotations

import math

import pytest
from scipy.optimize import brentq

from magcheck.analytic.bh import LinearMaterial
from magcheck.analytic.constants import mu_0
from magcheck.analytic.materials import builtin
from magcheck.analytic.network import (CoreBranch, GapBranch, MagnetBranch, Network, NetworkError,
                                       Winding, solve_network)

L_M, A_M, B_R, MU_R = 4e-3, 100e-6, 1.2, 1.05  # magnet: 4 mm long, 100 mm^2, 1.2 T, recoil 1.05
G, A_G = 1e-3, 150e-6                           # gap 1 mm, face 150 mm^2
L_C, A_C = 60e-3, 120e-6                        # core path 60 mm, 120 mm^2


def _loop(core, ni: float = 0.0) -> Network:
    branches = (MagnetBranch("magnet", "a", "b", L_M, A_M, B_R, MU_R),
                CoreBranch("core", "b", "c", L_C, A_C, core),
                GapBranch("gap", "c", "a", G, mu_0 * A_G / G, A_G))
    windings = (Winding("coil", 100, ni / 100, "core"),) if ni else ()
    return Network(("a", "b", "c"), branches, windings)


def _b_m(res) -> tuple[float, float]:
    m = res.branch("magnet")
    return m.B, m.H


def test_linear_circuit_matches_the_load_line_closed_form():
    # Source: exact solution of the series circuit. Ampere round the loop
    # with no current, H_m l_m + H_c l_c + H_g g = 0, flux continuity
    # B_m A_m = B_c A_c = B_g A_g, the recoil line B_m = B_r + mu0 mu_r H_m:
    # B_m = B_r / (1 + mu_r A_m (g/A_g + l_c/(mu_c A_c)) / l_m)
    mu_c = 1e4
    res = solve_network(_loop(LinearMaterial(mu_c))).raise_if_failed()
    b_m, h_m = _b_m(res)
    ref = B_R / (1.0 + MU_R * A_M * (G / A_G + L_C / (mu_c * A_C)) / L_M)
    assert b_m == pytest.approx(ref, rel=1e-10)
    assert h_m == pytest.approx((ref - B_R) / (mu_0 * MU_R), rel=1e-9)  # on the recoil line
    assert h_m < 0  # H opposes B inside a working magnet


def _root_operating_point(ni: float) -> float:
    """B_m from the load line with the saturating core, by brentq on B_m alone."""
    steel = builtin("demo-sisteel")

    def mmf(b_m: float) -> float:
        h_m = (b_m - B_R) / (mu_0 * MU_R)
        phi = b_m * A_M
        return h_m * L_M + float(steel.h_of_b(phi / A_C)) * L_C + phi / A_G / mu_0 * G - ni

    return brentq(mmf, -B_R, 3 * B_R, xtol=1e-15, rtol=1e-14)


@pytest.mark.parametrize("ni", [0.0, 800.0, -800.0])
def test_saturating_circuit_matches_an_independent_root(ni):
    # Source: the same loop equation solved independently by bracketing
    # root finding on the magnet's B (scipy.optimize.brentq), the core's H
    # from the same B-H curve
    res = solve_network(_loop(builtin("demo-sisteel"), ni), rtol=1e-13).raise_if_failed()
    assert _b_m(res)[0] == pytest.approx(_root_operating_point(ni), rel=1e-9)


def test_magnet_energy_and_coenergy_follow_the_recoil_law():
    res = solve_network(_loop(LinearMaterial(1e4))).raise_if_failed()
    m = res.branch("magnet")
    vol = A_M * L_M
    mu = mu_0 * MU_R
    assert m.energy == pytest.approx(0.5 * mu * m.H ** 2 * vol, rel=1e-12)
    assert m.coenergy == pytest.approx((0.5 * mu * m.H ** 2 + B_R * m.H) * vol, rel=1e-12)
    assert m.kind == "magnet"


def test_reversed_magnet_reverses_the_flux():
    net = _loop(LinearMaterial(1e4))
    flipped = Network(net.nodes, (MagnetBranch("magnet", "b", "a", L_M, A_M, B_R, MU_R),
                                  *net.branches[1:]))
    a = solve_network(net).branch("gap").flux
    b = solve_network(flipped).branch("gap").flux
    assert b == pytest.approx(-a, rel=1e-12)


@pytest.mark.parametrize("key, value", [("remanence", 0.0), ("mu_r", -1.0), ("length", math.nan)])
def test_bad_magnet_is_refused(key, value):
    kw = dict(length=L_M, area=A_M, remanence=B_R, mu_r=MU_R)
    kw[key] = value
    with pytest.raises(NetworkError, match=key):
        MagnetBranch("m", "a", "b", **kw)
