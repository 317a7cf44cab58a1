"""Solid conducting core parts in the AC field model ([conducting_parts]):
the hand rod formulas (analytic.eddy), the field model's loss in a permeable
conducting rod against the exact Bessel solution, and the case key through
the compare layer."""
from __future__ import annotations

import copy
import math
import tomllib
from pathlib import Path

import numpy as np
import pytest
from scipy import special
from scipy.constants import mu_0
from scipy.integrate import quad

from magcheck.analytic.eddy import (rod_eddy_loss, rod_eddy_loss_imposed_flux,
                                    rod_eddy_loss_low_frequency)
from magcheck.compare.errors import CaseError
from magcheck.compare.front.cli import main
from magcheck.compare.models.ac import fe_ac, hand_part_loss, part_conductivity
from magcheck.compare.models.fe import run_fe
from magcheck.compare.models.hand import run_hand
from magcheck.compare.reading.variants import case_from_tables
from magcheck.fem2d import harmonic as H
from magcheck.fem2d.formulation import Axisymmetric
from magcheck.fem2d.layout import AirBox, Layout, MeshSettings, Rect, Region
from magcheck.fem2d.materials import AIR, LinearReluctivity
from magcheck.fem2d.mesh import build_mesh
from magcheck.fem2d.sources import Background
from tests.test_new_user import one_line

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "cases" / "demo_plunger_ac_coil.toml"
SIGMA = 1.0e7  # S/m, an iron-like test value


def tables() -> dict:
    with open(DEMO, "rb") as fh:
        return tomllib.load(fh)


def case_of(data: dict):
    return case_from_tables(copy.deepcopy(data))[1]


def bessel_loss_by_integral(sigma, mu_r, f, h0, a, length):
    """The loss of the exact field, integrated: J_phi = H0 k J1(kr)/J0(ka),
    int |J|^2/(2 sigma) 2 pi r L dr (the Poynting form in analytic.eddy is
    derived from the same field; this checks its algebra and sign)."""
    k = np.sqrt(-1j * 2 * math.pi * f * mu_0 * mu_r * sigma)
    j0 = special.jv(0, k * a)
    dens = lambda r: abs(h0 * k * special.jv(1, k * r) / j0) ** 2 / (2 * sigma) * 2 * math.pi * r
    return length * quad(dens, 0, a, epsabs=0, epsrel=1e-12, limit=200)[0]


@pytest.mark.parametrize("a_over_delta", [0.3, 1.0, 3.0, 10.0])
def test_rod_loss_exact_against_the_field_integral(a_over_delta):
    a, mu_r = 5e-3, 300.0
    delta = a / a_over_delta
    f = 2.0 / (delta ** 2 * mu_0 * mu_r * SIGMA) / (2 * math.pi)
    # Source: exact Bessel solution of the long rod in an axial field (derived;
    # Lammeraner and Stafl, Eddy Currents, 1966, from memory); both forms are
    # exact, so they agree to the quadrature's 1e-9
    ref = bessel_loss_by_integral(SIGMA, mu_r, f, 800.0, a, 0.02)
    assert rod_eddy_loss(SIGMA, mu_r, f, 800.0, a, 0.02) == pytest.approx(ref, rel=1e-9)


def test_rod_loss_low_frequency_limit_and_deep_skin():
    a, L, mu_r = 4e-3, 0.03, 50.0
    h0 = 1000.0
    # a/delta = 0.05: the next term of J1/J0 is (ka)^4 relative, ~1e-6
    delta = a / 0.05
    f = 2.0 / (delta ** 2 * mu_0 * mu_r * SIGMA) / (2 * math.pi)
    # Source: low-frequency limit pi sigma w^2 B^2 a^4 L / 16 of the exact
    # solution (derived in analytic.eddy); 1e-3 as the task's exact checks
    low = rod_eddy_loss_low_frequency(SIGMA, f, mu_0 * mu_r * h0, a, L)
    assert rod_eddy_loss(SIGMA, mu_r, f, h0, a, L) == pytest.approx(low, rel=1e-3)
    # Source: deep skin, the surface resistance 1/(sigma delta) with the
    # curvature correction delta/(2a) (asymptotic Bessel, from memory):
    # P/L = pi a H0^2/(sigma delta) (1 - delta/(2a)) to O((delta/a)^2)
    delta = a / 200.0
    f = 2.0 / (delta ** 2 * mu_0 * mu_r * SIGMA) / (2 * math.pi)
    surf = math.pi * a * L * h0 ** 2 / (SIGMA * delta) * (1 - delta / (2 * a))
    assert rod_eddy_loss(SIGMA, mu_r, f, h0, a, L) == pytest.approx(surf, rel=1e-4)


def test_rod_loss_imposed_flux_limits():
    a, L, mu_r = 4e-3, 0.03, 800.0
    phi = 1e-6
    b = phi / (math.pi * a ** 2)
    delta = a / 0.05
    f = 2.0 / (delta ** 2 * mu_0 * mu_r * SIGMA) / (2 * math.pi)
    # Source: low-frequency limit (derived in analytic.eddy): the flux's
    # uniform B = phi / (pi a^2) in the low-frequency formula; 1e-3
    low = rod_eddy_loss_low_frequency(SIGMA, f, b, a, L)
    assert rod_eddy_loss_imposed_flux(SIGMA, mu_r, f, phi, a, L) == pytest.approx(low, rel=1e-3)
    # Source: exact Bessel solution: the flux of H_z = H0 J0(kr)/J0(ka)
    # integrated over the section by quadrature gives back phi (1e-9)
    delta = a / 4.0
    f = 2.0 / (delta ** 2 * mu_0 * mu_r * SIGMA) / (2 * math.pi)
    k = np.sqrt(-1j * 2 * math.pi * f * mu_0 * mu_r * SIGMA)
    p = rod_eddy_loss_imposed_flux(SIGMA, mu_r, f, phi, a, L)
    # the H0 that gives loss p by rod_eddy_loss (loss ~ H0^2)
    h0 = math.sqrt(p / rod_eddy_loss(SIGMA, mu_r, f, 1.0, a, L))
    j0 = special.jv(0, k * a)
    bz = lambda r, part: getattr(mu_0 * mu_r * h0 * special.jv(0, k * r) / j0, part)
    fl = [quad(lambda r: bz(r, part) * 2 * math.pi * r, 0, a, epsabs=0, epsrel=1e-12,
               limit=200)[0] for part in ("real", "imag")]
    assert math.hypot(*fl) == pytest.approx(phi, rel=1e-9)


def test_rod_loss_bad_input():
    with pytest.raises(ValueError, match="radius"):
        rod_eddy_loss(SIGMA, 1.0, 50.0, 1.0, -1e-3, 1.0)
    with pytest.raises(ValueError, match="frequency"):
        rod_eddy_loss_low_frequency(SIGMA, -5.0, 0.1, 1e-3, 1.0)


@pytest.mark.parametrize("a_over_delta", [0.5, 3.0])
def test_fe_permeable_conducting_rod_against_exact(a_over_delta):
    """A long iron rod (mu_r 100, linear: the operating point's permeability)
    r < a in an axial AC field between ideal-iron end poles (natural boundary
    at top and bottom), the flux pi R^2 B0 imposed at r = R: the field model's
    loss in the passive (closed-ring) rod against analytic.eddy.rod_eddy_loss
    at the surface field H0 of the exact solution."""
    a, R, B0, mu_r = 1e-3, 1.5e-3, 0.01, 100.0
    delta = a / a_over_delta
    f = 2.0 / (delta ** 2 * mu_0 * mu_r * SIGMA) / (2 * math.pi)
    lay = Layout((Region("bore", (Rect(0, -R, R, R),), "air"),
                  Region("rod", (Rect(0, -R, a, R),), "iron")),
                 air=AirBox("rz-box", size=2 * R),
                 mesh=MeshSettings(size=min(delta, a) / 3, air_size_factor=1.0))
    prob = H.HarmonicProblem(build_mesh(lay), {"iron": LinearReluctivity(mu_r), "air": AIR},
                             {"rod": SIGMA}, f, formulation=Axisymmetric(),
                             natural_boundary=lambda r, z: (r > 1e-12) & (r < R * (1 - 1e-9)))
    hs = prob.solve(background=Background((0.0, B0)))
    k = np.sqrt(-1j * 2 * math.pi * f * mu_0 * mu_r * SIGMA)
    j0, j1 = special.jv(0, k * a), special.jv(1, k * a)
    # flux through r < R: mu0 H0 pi (R^2 - a^2) + mu H0 2 pi a J1(ka) / (k J0(ka))
    h0 = math.pi * R ** 2 * B0 / (mu_0 * math.pi * (R ** 2 - a ** 2)
                                  + mu_0 * mu_r * 2 * math.pi * a * j1 / (k * j0))
    # Source: exact Bessel solution (derived; analytic.eddy); tolerance 1e-3
    # (the P2 field at elements delta/3, as the copper rod of test_harmonic)
    ref = rod_eddy_loss(SIGMA, mu_r, f, abs(h0), a, 2 * R)
    assert H.region_loss(hs, "rod") == pytest.approx(ref, rel=1e-3)


def test_fe_rod_filling_the_bore_imposed_flux():
    """The iron rod (mu_r 100) fills the bore r < R between ideal-iron end
    poles; the flux pi R^2 B0 imposed at r = R: the field model's loss against
    analytic.eddy.rod_eddy_loss_imposed_flux (the hand plunger estimate's form)."""
    R, B0, mu_r = 1e-3, 0.01, 100.0
    delta = R / 3.0
    f = 2.0 / (delta ** 2 * mu_0 * mu_r * SIGMA) / (2 * math.pi)
    lay = Layout((Region("rod", (Rect(0, -R, R, R),), "iron"),),
                 air=AirBox("rz-box", size=2 * R),
                 mesh=MeshSettings(size=delta / 3, air_size_factor=1.0))
    prob = H.HarmonicProblem(build_mesh(lay), {"iron": LinearReluctivity(mu_r), "air": AIR},
                             {"rod": SIGMA}, f, formulation=Axisymmetric(),
                             natural_boundary=lambda r, z: (r > 1e-12) & (r < R * (1 - 1e-9)))
    hs = prob.solve(background=Background((0.0, B0)))
    # Source: exact Bessel solution with the flux imposed (derived;
    # analytic.eddy); tolerance 1e-3 (P2 at delta/3, as above)
    ref = rod_eddy_loss_imposed_flux(SIGMA, mu_r, f, math.pi * R ** 2 * B0, R, 2 * R)
    assert H.region_loss(hs, "rod") == pytest.approx(ref, rel=1e-3)


# ------------------------------------------------------------- the case key
def test_conducting_parts_key_maps_regions():
    case = case_of(tables())
    assert case.conducting == (("plunger", pytest.approx(1e7)),)
    assert part_conductivity(case) == {"plunger": pytest.approx(1e7)}
    d = tables()
    d["conducting_parts"] = {"core": "0.5 uohm*m", "plunger": "0.1 uohm*m"}
    sig = part_conductivity(case_of(d))
    assert sig["plunger"] == pytest.approx(1e7) and sig["core"] == pytest.approx(2e6)


@pytest.mark.parametrize("value, what", [({"bolt": "1 uohm*m"}, "bolt"),
                                          ({"plunger": "5 ohm*m"}, "resistivity"),
                                          ({"plunger": "3 mm"}, "plunger")])
def test_conducting_parts_bad_input(value, what):
    d = tables()
    d["conducting_parts"] = value
    with pytest.raises(CaseError, match=what):
        case_of(d)


def test_conducting_parts_bad_input_cli_exit_2(tmp_path, capsys):
    text = DEMO.read_text().replace('plunger = "0.1 uohm*m"', 'plunger = "0 uohm*m"')
    p = tmp_path / "bad.toml"
    p.write_text(text)
    assert main(["check", str(p)]) == 2
    one_line(capsys, "conducting_parts.plunger")


def test_plunger_loss_through_compare_low_frequency_scaling():
    """Through the compare layer (the plunger case's static solution, its
    passive ring): at a/delta << 1 the plunger loss goes as f^2 and its hand
    estimate is the low-frequency rod formula."""
    d = tables()
    case = case_of(d)
    _, sol, _ = run_fe(case)
    losses = []
    for f in (0.01, 0.02):
        d["winding"]["ac"]["frequency"] = f"{f} Hz"
        c = case_of(d)
        losses.append(fe_ac(c, sol)["part_loss"]["plunger"])
    # Source: low-frequency expansion of the eddy current, J = -j w sigma A
    # (derived): P ~ w^2; the first correction is (a/delta)^4 relative,
    # a/delta ~ 0.2 at 0.02 Hz with the operating point's mu_r (a few 1e-4 here)
    assert losses[1] / losses[0] == pytest.approx(4.0, rel=3e-3)
    # at the case's 50 Hz: the winding's R_ac is its copper's; its terminal
    # resistance adds the plunger's loss reflected, 2 P / I^2
    r = fe_ac(case, sol)
    z = H.winding_impedance(r["solution"], "winding")
    # Source: Poynting's theorem (complex power balance, exact for the discrete
    # problem: test_harmonic's ring power balance); 1e-6 for the sums' roundoff
    assert r["values"]["R_ac"] + 2 * r["part_loss"]["plunger"] / 2.0 ** 2 == pytest.approx(
        z.R, rel=1e-6)
    assert r["part_loss"]["plunger"] > 0.05 * 0.5 * 2.0 ** 2 * r["values"]["R_ac"]
    assert math.isnan(hand_part_loss(case, None)["plunger"])  # no hand circuit: no estimate
    # the hand estimate at 0.02 Hz is the low-frequency rod formula on the
    # hand's AC gap flux over the plunger's face to the bottom plate's middle
    hr = run_hand(c)
    v = hr.values()
    n = c.winding.turns
    phi = v["incremental_inductance"] * 2.0 / n * v["flux"] * n / v["flux_linkage"]
    length = c.core.plunger_top - 0.5 * c.core.plate
    # Source: low-frequency limit (derived, analytic.eddy); 1e-3: a/delta ~ 0.2
    low = rod_eddy_loss_low_frequency(1e7, 0.02, phi / (math.pi * 0.006 ** 2), 0.006, length)
    assert hand_part_loss(c, hr)["plunger"] == pytest.approx(low, rel=1e-3)


def test_planar_conducting_core_row_is_fe_only(tmp_path):
    """A planar window core given a conductivity (a ferrite's ~1 ohm m): its
    regions become passive bars, the row is FE only (no closed form) and info,
    and the winding's R_ac is its copper's (the core's loss reflected at the
    terminals is the row's, not the winding's)."""
    from magcheck.compare.front.api import check

    text = (ROOT / "cases" / "demo_foil_choke.toml").read_text()
    text = text.replace("[materials]", '[conducting_parts]\ncore = "1 ohm*m"\n\n[materials]', 1)
    p = tmp_path / "foil.toml"
    p.write_text(text)
    for f in (ROOT / "cases").glob("*.csv"):
        (tmp_path / f.name).write_text(f.read_text())
    res = check(p)
    row = res["part_loss:core"]
    assert row.verdict == "info" and "FE only" in row.label and math.isnan(row.hand)
    assert row.fe > 0
    ac = res.ac
    z = H.winding_impedance(ac.solution, "winding")
    # Source: Poynting's theorem (complex power balance of the discrete
    # problem); 1e-6 for the sums' roundoff
    assert ac.fe["R_ac"] + 2 * ac.part_loss_fe["core"] / ac.current_ac ** 2 == pytest.approx(
        z.R, rel=1e-6)


@pytest.mark.parametrize("x", [5e-4 * (1 - 1j), 9e-4 * (1 - 1j), 2e-3 * (1 - 1j), 3.0 * (1 - 1j)])
def test_j1_over_j0_branches_are_scipys(x):
    # Source: scipy.special.jv (a general-purpose reference library); the small-x series
    # x/2 + x^3/16 + x^5/96 of J1/J0 is derived from the Bessel series and is exact to
    # O(x^7): at |x| < 1e-3 the two agree to 1e-13 (a sign slip in the x^3 term would
    # show as x^2/8 ~ 1e-7)
    from magcheck.analytic.eddy import j1_over_j0

    ref = special.jv(1, x) / special.jv(0, x)
    assert abs(j1_over_j0(x) - ref) <= 1e-13 * abs(ref)
