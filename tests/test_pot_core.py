"""The pot-core family (r-z): two halves, a gap in the centre post, the
winding in the annular window.

Verifies the hand circuit against its closed form (ideal iron, ideal gap),
the window-leakage permeance against its defining energy integral, the
geometry the field model is given, and the bad cores.
"""

from __future__ import annotations

import math
import tomllib
from pathlib import Path

import pytest
from scipy.integrate import quad

from magcheck.analytic.constants import mu_0
from magcheck.compare.reading.casefile import case_from_dict
from magcheck.compare.design.coremodel import core_model
from magcheck.compare.errors import CaseError
from magcheck.compare.design.families.base import coil_space_leakage
from magcheck.compare.models.hand import run_hand

CASE = Path(__file__).resolve().parents[1] / "cases" / "demo_pot_core_choke.toml"

# the demo's dimensions (m), typed again here
R, WALL, R1, R0, BASE, H, GAP = 12.5e-3, 1.8e-3, 5.4e-3, 1.5e-3, 2.8e-3, 11e-3, 0.4e-3
N, I = 60, 1.5
LENGTH = 9.6e-3  # the winding's length


def _doc(**core) -> dict:
    d = tomllib.loads(CASE.read_text())
    d["core"].update(core)
    d.pop("sweep", None)
    return d


def _window_leakage(half: float) -> float:
    """The demo's window leakage (Wb/A) under N I, by quadrature of its
    definition (families.base.coil_space_leakage): the winding, LENGTH long
    and centred, spans z1..z2 of the window's height H; f(z) the fraction of
    its turns below z; the post's halves, each ``half`` long, face the wall
    at potential differences N I f and N I (1 - f)."""
    z1, z2 = 0.5 * (H - LENGTH), 0.5 * (H + LENGTH)

    def f(z: float) -> float:
        return min(max((z - z1) / (z2 - z1), 0.0), 1.0)

    below, _ = quad(lambda z: f(z) ** 2, 0.0, half, points=[z1])
    above, _ = quad(lambda z: (1 - f(z)) ** 2, H - half, H, points=[z2])
    return 2 * math.pi * mu_0 / math.log((R - WALL) / R1) * (below + above)


def test_window_leakage_against_its_energy_integral():
    # Source: the definition (families.base.coil_space_leakage): with a
    # winding filling the space the potential across the annulus rises
    # linearly from each plate, N I z / h; the energy (1/2) int P' U(z)^2 dz
    # over the column is (1/2) P_eq (N I)^2.  Integrated here by quadrature
    # with N I = 1.
    r_i, r_o, lo, hi, h = 5e-3, 11e-3, 4e-3, 6.5e-3, 11e-3
    p_side = 2 * math.pi * mu_0 / math.log(r_o / r_i)
    below, _ = quad(lambda z: (z / h) ** 2, 0.0, lo)
    above, _ = quad(lambda z: (z / h) ** 2, 0.0, hi)
    p_eq, dp = coil_space_leakage(r_i, r_o, lo, hi, h)
    assert p_eq == pytest.approx(p_side * (below + above), rel=1e-12)
    ds = 1e-6 * lo
    fd = (coil_space_leakage(r_i, r_o, lo + ds, hi, h)[0]
          - coil_space_leakage(r_i, r_o, lo - ds, hi, h)[0]) / (2 * ds)
    assert dp == pytest.approx(fd, rel=1e-7)


def test_window_leakage_of_short_windings_against_its_energy_integral():
    # Source: the definition (families.base.coil_space_leakage): with ideal
    # iron the potential across the annulus at height z is the MMF the
    # windings enclose between the lower plate and z, N I f(z) below the gap
    # and N I (1 - f(z)) above it (Ampere's law); the energy (1/2) int P'
    # U(z)^2 dz is (1/2) P_eq (N I)^2.  Two windings of 30 and 10 turns, one
    # short of each plate; integrated here by quadrature, f typed again.
    r_i, r_o, lo, hi, h = 5e-3, 11e-3, 4e-3, 6.5e-3, 11e-3
    spans = ((1e-3, 9e-3, 30.0), (2.5e-3, 10.5e-3, 10.0))

    def f(z: float) -> float:
        below = 30 * min(max((z - 1e-3) / 8e-3, 0.0), 1.0)
        below += 10 * min(max((z - 2.5e-3) / 8e-3, 0.0), 1.0)
        return below / 40

    p_side = 2 * math.pi * mu_0 / math.log(r_o / r_i)
    kinks = [1e-3, 2.5e-3, 9e-3, 10.5e-3]
    a, _ = quad(lambda z: f(z) ** 2, 0.0, lo, points=kinks[:2])
    b, _ = quad(lambda z: (1 - f(z)) ** 2, h - hi, h, points=kinks[1:])
    p_eq, dp = coil_space_leakage(r_i, r_o, lo, hi, h, spans)
    assert p_eq == pytest.approx(p_side * (a + b), rel=1e-10)
    # shorter windings enclose less MMF near the plates: less leakage than
    # the filled space's
    assert p_eq < coil_space_leakage(r_i, r_o, lo, hi, h)[0]
    ds = 1e-6 * lo
    fd = (coil_space_leakage(r_i, r_o, lo + ds, hi, h, spans)[0]
          - coil_space_leakage(r_i, r_o, lo - ds, hi, h, spans)[0]) / (2 * ds)
    assert dp == pytest.approx(fd, rel=1e-6)


def test_hand_circuit_against_the_closed_form():
    # Source: exact for the circuit with ideal iron: the ideal gap
    # mu0 pi (r1^2 - r0^2) / g in parallel with the window leakage under the
    # whole MMF N I: L = N^2 (P_g + P_l), the gap carrying N I P_g
    d = _doc()
    d["materials"]["core"] = {"mu_r": 1e12}
    d["hand"]["fringing"] = "none"
    h = run_hand(case_from_dict(d))
    a = math.pi * (R1 ** 2 - R0 ** 2)
    p_g = mu_0 * a / GAP
    half = 0.5 * (H - GAP)
    # the leakage over the post's sides beyond the window's width beside the
    # gap, the stretch the gap's fringing takes (here none is left)
    p_l = _window_leakage(half - min(R - WALL - R1, half))
    assert h.inductance == pytest.approx(N ** 2 * (p_g + p_l), rel=1e-9)
    assert h.flux == pytest.approx(N * I * p_g, rel=1e-9)
    assert h.gap_B == pytest.approx(N * I * p_g / a, rel=1e-9)
    assert h.energy == pytest.approx(0.5 * N ** 2 * (p_g + p_l) * I ** 2, rel=1e-9)


def test_the_hole_makes_the_gap_an_annulus():
    model = core_model(case_from_dict(_doc()))
    assert model.axisymmetric and model.force is None
    regions = {r.name: r for r in model.regions}
    (gap,) = regions["gap"].shapes
    mid = BASE + H / 2
    assert (gap.x0, gap.x1, gap.y0, gap.y1) == pytest.approx(
        (R0, R1, mid - GAP / 2, mid + GAP / 2))
    (coil,) = regions["coil"].shapes
    assert coil.x0 == pytest.approx(R1 + 0.6e-3) and coil.x1 == pytest.approx(R1 + 4.8e-3)
    face = model.circuit.gaps[0].face
    assert face.radii == pytest.approx((R0, R1))
    # a solid post (no hole) has a disc face
    solid = core_model(case_from_dict(_doc(hole_radius="0 mm")))
    assert solid.circuit.gaps[0].face.radii == (0.0, pytest.approx(R1))


def test_two_concentric_windings_sit_one_outside_the_other():
    d = _doc()
    w = d.pop("winding")
    w1 = dict(w, name="primary", thickness="2 mm")
    w2 = dict(w, name="secondary", thickness="1.5 mm", clearance="0.2 mm")
    d["windings"] = [w1, w2]
    d.pop("margins")
    model = core_model(case_from_dict(d))
    regions = {r.name: r for r in model.regions}
    (c0,), (c1,) = regions["coil"].shapes, regions["coil1"].shapes
    assert c0.x1 == pytest.approx(R1 + 0.6e-3 + 2e-3)
    assert c1.x0 == pytest.approx(c0.x1 + 0.2e-3)


@pytest.mark.parametrize("core, key, words", [
    ({"wall": "13 mm"}, "core.wall", "as thick as"),
    ({"post_radius": "11 mm"}, "core.post_radius", "fills the pot"),
    ({"hole_radius": "6 mm"}, "core.hole_radius", "smaller than the"),
    ({"gap": "4 mm"}, "core.gap", "face width"),
    ({"gap": "12 mm", "post_radius": "10 mm", "hole_radius": "0 mm"}, "core.gap",
     "window height"),
])
def test_bad_cores_name_the_key(core, key, words):
    with pytest.raises(CaseError) as info:
        case_from_dict(_doc(**core))
    assert info.value.key == key and words in str(info.value)


def test_gaps_table_and_window_leakage_switch_are_refused():
    d = _doc()
    d["gaps"] = [{"limb": "post", "length": "1 mm"}]
    with pytest.raises(CaseError) as info:
        case_from_dict(d)
    assert info.value.key == "gaps[0].limb"
    d = _doc()
    d["hand"]["leakage"] = True
    with pytest.raises(CaseError) as info:
        case_from_dict(d)
    assert info.value.key == "hand.leakage"


def test_hand_circuit_with_a_linear_core_against_its_reluctances():
    # Source: the series circuit of the family's docstring, typed again: the
    # post's two halves (each half the window less half the gap, plus half a
    # plate), the plates as radial flux tubes ln(r_wall/r_post)/(2 pi mu t)
    # between the post's and the wall's mean radii, the wall (window height
    # plus a plate); the gap with the window leakage in parallel.  Exact for
    # that circuit with a linear core.
    d = _doc()
    mu_r = 800.0
    d["materials"]["core"] = {"mu_r": mu_r}
    d["hand"]["fringing"] = "none"
    h = run_hand(case_from_dict(d))
    mu = mu_r * mu_0
    a_post = math.pi * (R1 ** 2 - R0 ** 2)
    a_wall = math.pi * (R ** 2 - (R - WALL) ** 2)
    half = 0.5 * (H - GAP)
    r_post, r_wall = 0.5 * (R0 + R1), R - 0.5 * WALL
    rel = (2 * (half + 0.5 * BASE) / (mu * a_post)
           + 2 * math.log(r_wall / r_post) / (2 * math.pi * mu * BASE)
           + (H + BASE) / (mu * a_wall))
    p_g = mu_0 * a_post / GAP
    p_l = _window_leakage(half - min(R - WALL - R1, half))
    assert h.inductance == pytest.approx(N ** 2 / (rel + 1 / (p_g + p_l)), rel=1e-9)
