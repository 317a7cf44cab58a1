"""FE measurements of a case with a linear core, against physics that holds
whatever the mesh: secant = incremental = 2W/I^2 when B is linear in I, and
the FE inductance bounded below by the magnetic circuit with its in-plane
fringing models."""

from __future__ import annotations

import tomllib
from pathlib import Path

import pytest

from magcheck.compare.reading.casefile import case_from_dict
from magcheck.compare.models.fe import run_fe
from magcheck.compare.models.hand import run_hand

CASES = Path(__file__).resolve().parents[1] / "cases"


def linear_choke(gap_mm: float, mu_r: float, current: float = 1.0):
    d = tomllib.loads((CASES / "demo_choke.toml").read_text())
    d["gaps"][0]["length"] = f"{gap_mm} mm"
    d["materials"]["core"] = {"mu_r": mu_r}
    d["winding"]["current"] = f"{current} A"
    return case_from_dict(d, base_dir=CASES)


# (gap mm, mu_r): a short gap in a high-mu core (gap-dominated) and a long gap
# in a medium-mu core (more fringing, core reluctance not negligible).
LINEAR = [(0.2, 1e4), (1.5, 3000.0)]


@pytest.fixture(scope="module", params=LINEAR, ids=lambda p: f"g{p[0]}mm-mu{p[1]:g}")
def solved(request):
    gap, mu_r = request.param
    case = linear_choke(gap, mu_r)
    q, _, _ = run_fe(case)
    return case, q.values


def test_linear_core_secant_incremental_and_energy_inductance_agree(solved):
    case, v = solved
    I = case.winding.current
    # Physics: with a linear core lambda = L*I, so lambda/I = d lambda/dI and
    # W = L*I^2/2 exactly (docs/references.md section 5: "2W/i^2 equals lambda/i
    # only when linear"). Tolerance 1e-6: all three come from the same field;
    # they differ only by the Newton and linear-solve tolerances (1e-8
    # residual), not by the mesh.
    assert v["incremental_inductance"] == pytest.approx(v["inductance"], rel=1e-6)
    assert 2 * v["energy"] / I**2 == pytest.approx(v["inductance"], rel=1e-6)
    assert v["flux_linkage"] == pytest.approx(v["inductance"] * I, rel=1e-12)


def test_linear_core_fe_scales_with_current():
    case1 = linear_choke(0.6, 5000.0, current=1.0)
    case3 = linear_choke(0.6, 5000.0, current=3.0)
    v1, v3 = run_fe(case1)[0].values, run_fe(case3)[0].values
    # Physics: linear core, same mesh: fields scale with I, energy with I^2,
    # inductances not at all. Tolerance 1e-6: Newton/linear-solve tolerance.
    for key in ("gap_B", "core_B", "flux", "flux_linkage"):
        assert v3[key] == pytest.approx(3 * v1[key], rel=1e-6), key
    assert v3["energy"] == pytest.approx(9 * v1["energy"], rel=1e-6)
    for key in ("inductance", "incremental_inductance"):
        assert v3[key] == pytest.approx(v1[key], rel=1e-6), key


def test_fe_inductance_bounded_by_the_planar_circuit(solved):
    case, v = solved
    L_fe = v["inductance"]
    ideal = run_hand(case, fringing="none", planar=True).inductance
    area = run_hand(case, fringing="area", planar=True).inductance
    conformal = run_hand(case, fringing="conformal", planar=True).inductance
    # Lower bounds. The planar circuit confines the flux to the core and the
    # gap face; the planar field adds, in parallel, the fringing flux around
    # the gap and the window leakage that links the winding and bypasses the
    # gap, so L_FE exceeds every planar circuit value.
    # Source: the 'area' in-plane factor is 1 + g/a (Matsch 1964, ch. 3,
    # [confirmed]); the conformal-map element (Muehlethaler, Kolar, Ecklebe,
    # ICPE-ECCE Asia 2011 [confirmed: approach]; symmetric leg-to-leg form
    # [derived] in docs/references.md section 1) gives 1 + (2g/(pi a))(1 +
    # ln(pi h/(2g))), larger than 1 + g/a whenever h > 1.12 g; the conformal
    # map solves the 2D gap field, so the FE (which has it plus leakage) lies
    # above it.
    assert ideal < area < conformal < L_fe
    # Upper bound: the planar circuit with the conformal-map gap must stay
    # within the project's 15 % inductance agreement limit of the FE on a
    # linear core (README "The check"; engineering judgement, common practice,
    # no source): the excess is window leakage only, a few percent here.
    assert L_fe < 1.15 * conformal

