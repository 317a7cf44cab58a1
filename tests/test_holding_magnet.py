"""The holding-magnet family (r-z): a steel cup, a disc magnet under its
centre pole, a keeper at the stroke.

Verifies the hand circuit against its closed-form load line (ideal iron,
ideal gaps), the geometry both models are given, and that the field
solution's two force methods agree on the keeper.
"""

from __future__ import annotations

import math
import tomllib
from pathlib import Path

import pytest

from magcheck.analytic.constants import mu_0
from magcheck.compare.reading.casefile import case_from_dict
from magcheck.compare.design.coremodel import core_model
from magcheck.compare.errors import CaseError
from magcheck.compare.models.hand import run_hand

DATA = Path(__file__).resolve().parent / "data" / "holding_magnet.toml"


def _doc(**core) -> dict:
    d = tomllib.loads(DATA.read_text())
    d["core"].update(core)
    return d


def test_hand_circuit_against_the_closed_form_load_line():
    # Source: exact for the circuit with ideal iron: the magnet (internal
    # permeance P_m = mu0 mu_r A_m / l_m, coercive MMF F_c = B_r l_m/(mu0 mu_r))
    # loaded by the two ideal gaps in series and the cup's leakage in parallel,
    # phi_m = P_m F_c / (1 + P_m / P_ext); the leakage energy-equivalent over
    # the magnet's side (weight h_m/3, test_cup_leakage_is_energy_equivalent)
    d = _doc()
    d["materials"]["core"] = {"mu_r": 1e12}
    h = run_hand(case_from_dict(d))
    rp, rw0, s, hm, hc = 8e-3, 17e-3, 0.3e-3, 5e-3, 12e-3
    a_m = math.pi * rp ** 2
    a_w = math.pi * (20e-3 ** 2 - rw0 ** 2)
    p1, p2 = mu_0 * a_m / s, mu_0 * a_w / s
    p_leak = 2 * math.pi * mu_0 * (hc - hm + hm / 3) / math.log(rw0 / rp)
    p_ext = p1 * p2 / (p1 + p2) + p_leak
    b_r, mu_r = 0.40, 1.08  # demo-hard-ferrite (analytic.magnets)
    p_m = mu_0 * mu_r * a_m / hm
    f_c = b_r * hm / (mu_0 * mu_r)
    phi = p_m * f_c / (1 + p_m / p_ext)
    assert h.magnet_values["magnet_B"] == pytest.approx(phi / a_m, rel=1e-9)
    # the gaps carry the flux that does not leak; their closing force is the pull
    # of ideal faces, phi_g^2 / (2 mu0 A) each (exact for ideal gaps)
    phi_g = phi * (p1 * p2 / (p1 + p2)) / p_ext
    pull = phi_g ** 2 / (2 * mu_0 * a_m) + phi_g ** 2 / (2 * mu_0 * a_w)
    assert h.force_values["force"] == pytest.approx(pull, rel=1e-9)
    assert h.force_values["force_pull"] == pytest.approx(pull, rel=1e-9)


def test_cup_leakage_is_energy_equivalent():
    # Source: exact for radial flux across a coaxial annulus: P' dz =
    # 2 pi mu0 dz / ln(r_wall / r_pole) per height; the pole's side at the
    # full pole-to-wall drop F, the magnet's side at F z / h_m (its potential
    # rising linearly from the base).  The energy (1/2) P' F^2 int w(z)^2 dz
    # over the cup's height is that of P_eq = P' int w(z)^2 dz, done here by
    # quadrature: the magnet's side counts h_m/3, as the coil-space leakage of
    # the other r-z families (families.base.coil_space_leakage), not the
    # flux-equivalent h_m/2.  Tolerance 1e-9: the quadrature.
    from scipy.integrate import quad

    model = core_model(case_from_dict(_doc()))
    leak = {name: perm for name, _a, _b, perm, _l in model.circuit.leakage}
    rp, rw0, hm, hc = 8e-3, 17e-3, 5e-3, 12e-3
    p_side = 2 * math.pi * mu_0 / math.log(rw0 / rp)
    weight, _ = quad(lambda z: (z / hm) ** 2 if z < hm else 1.0, 0.0, hc, points=[hm])
    assert leak["cup-leakage"] + leak["cup-leakage-low"] == pytest.approx(p_side * weight,
                                                                          rel=1e-9)


def test_geometry_is_axisymmetric_with_the_keeper_moving():
    model = core_model(case_from_dict(_doc()))
    assert model.axisymmetric and model.force.body == ("keeper",)
    assert model.force.direction == (0.0, -1.0)
    assert model.magnets[0].remanence == (0.0, 0.40)
    assert dict(model.magnet_knees) == {"magnet": -2.4e5}
    assert model.coils[0].sides == (("coil", 1),)  # an r-z coil: one go side


@pytest.mark.parametrize("core, key, words", [
    ({"pole_radius": "18 mm"}, "core.pole_radius", "fills the cup"),
    ({"magnet_height": "12 mm"}, "core.magnet_height", "leaves no pole"),
    ({"keeper_radius": "10 mm"}, "core.keeper_radius", "cover the wall"),
    ({"stroke": "3 mm"}, "core.stroke", "not shorter"),
    ({"magnet": "demo-ferite"}, "core.magnet", "did you mean"),
])
def test_bad_cores_name_the_key(core, key, words):
    with pytest.raises(CaseError) as info:
        case_from_dict(_doc(**core))
    assert info.value.key == key and words in str(info.value)


@pytest.mark.slow
def test_both_fe_force_methods_agree_on_the_keeper():
    from magcheck.compare.judge.check import run_check

    res = run_check(case_from_dict(_doc()))
    fv = res.fe.fine.force_values
    assert fv["force"] > 0  # the keeper is held
    # two independent FE methods (fem2d.force), within 1e-3 as the selftest holds them
    assert fv["force_virtual_work"] == pytest.approx(fv["force_maxwell"], rel=1e-3)
    # the magnet works on its recoil line, far from its knee
    assert 0 < -res.fe.fine.magnet_values["magnet_H_min"] < 2.4e5


@pytest.mark.slow
def test_fe_magnet_nearly_shorted_sits_at_the_load_line_intersection():
    # Source: exact for ideal iron: the magnet (P_m = mu0 mu_r A_m / l_m,
    # F_c = B_r l_m / (mu0 mu_r)) loaded by the two gaps in series with the
    # cup's leakage in parallel gives B_m = B_r / (1 + P_m / P_ext); with the
    # keeper 20 um away and iron of mu_r 1e5 the field solution must sit
    # there (the iron's own reluctance and the gaps' fringing are below
    # 1e-3 of it at this stroke: the gap is 1/400 of the pole's radius)
    from magcheck.compare.models.fe import run_fe

    d = _doc(stroke="0.02 mm")
    d["materials"]["core"] = {"mu_r": 1e5}
    d["margins"] = {}
    q, _, _ = run_fe(case_from_dict(d))
    rp, rw0, s, hm, hc = 8e-3, 17e-3, 0.02e-3, 5e-3, 12e-3
    a_m = math.pi * rp ** 2
    a_w = math.pi * (20e-3 ** 2 - rw0 ** 2)
    p1, p2 = mu_0 * a_m / s, mu_0 * a_w / s
    p_leak = 2 * math.pi * mu_0 * (hc - hm + hm / 3) / math.log(rw0 / rp)
    p_ext = p1 * p2 / (p1 + p2) + p_leak
    b_r, mu_r = 0.40, 1.08
    p_m = mu_0 * mu_r * a_m / hm
    b_m = b_r / (1 + p_m / p_ext)
    assert q.magnet_values["magnet_B"] == pytest.approx(b_m, rel=1e-3)  # 1.9e-4 found
    assert b_r - q.magnet_values["magnet_B"] < 0.01 * b_r  # the magnet all but shorted
