"""Lamination stacking factor: [core] stacking (FE homogenised core) and
[hand] stacking (hand model on the net iron area)."""

from __future__ import annotations

import tomllib
from pathlib import Path

import pytest
from scipy.constants import mu_0

from magcheck.compare.reading.casefile import case_from_dict
from magcheck.compare.errors import CaseError
from magcheck.compare.models.hand import build_network, run_hand

CASES = Path(__file__).resolve().parents[1] / "cases"


def _case(k_s: float, hand_stacking: bool, mu_r: float | None = None):
    data = tomllib.loads((CASES / "demo_choke.toml").read_text())
    data["core"]["stacking"] = k_s
    data["hand"] = {"fringing": "none", "stacking": hand_stacking}
    if mu_r is not None:
        data["materials"] = {"core": {"mu_r": mu_r}}
    return case_from_dict(data, base_dir=CASES)


def test_hand_core_on_net_area_gap_on_gross_face():
    case = _case(0.9, True)
    net, _ = build_network(case, stacking=True)
    gross, _ = build_network(case)
    for a, b in zip(net.branches, gross.branches):
        if hasattr(a, "area"):
            assert a.area == pytest.approx(0.9 * b.area, rel=1e-15), a.name
        else:
            assert a.permeance == b.permeance  # the gap keeps its full face
    assert run_hand(case).refinements == ("stacking factor",)
    assert run_hand(_case(0.9, False)).refinements == ()


def test_linear_core_reluctance_rises_by_one_over_k_s():
    # Source: exact solution of the linear series circuit (Kirchhoff):
    # flux = N I / (R_gap + R_core / k_s) with R_core = sum l / (mu0 mu_r A).
    case = _case(0.8, True, mu_r=300.0)
    r_gap = case.gaps[0].length / (mu_0 * 12e-3 * 20e-3)
    r_core = sum((s.length - (case.gaps[0].length if s.limb == "right" else 0.0))
                 / (mu_0 * 300.0 * s.area) for s in case.family_model.segments(case.core))
    h = run_hand(case, planar=True)
    assert h.flux == pytest.approx(case.winding.mmf / (r_gap + r_core / 0.8), rel=1e-9)


def test_fe_solves_the_homogenised_core():
    # B = mu0 H + k_s J(H): a linear core becomes mu_r,eff = 1 + k_s (mu_r - 1) (exact).
    from magcheck.compare.models.fe import _materials

    law = _materials(_case(0.8, False, mu_r=300.0))["core"]
    assert law.mu_r == pytest.approx(1 + 0.8 * 299.0, rel=1e-15)


@pytest.mark.parametrize("value", [0.0, 1.2, "x"])
def test_bad_stacking_names_the_key(value):
    data = tomllib.loads((CASES / "demo_choke.toml").read_text())
    data["core"]["stacking"] = value
    with pytest.raises(CaseError) as exc:
        case_from_dict(data, base_dir=CASES)
    assert exc.value.key == "core.stacking"
