"""Materials by core part: [materials] keys name the family's parts (a
window core's limbs, an EI core's E and I), each overriding ``core``."""
from __future__ import annotations

import tomllib
from pathlib import Path

import pytest
from scipy.constants import mu_0

from magcheck.compare.reading.casefile import case_from_dict
from magcheck.compare.errors import CaseError
from magcheck.compare.models.fe import case_layout, run_fe
from magcheck.compare.models.hand import run_hand

CASES = Path(__file__).resolve().parents[1] / "cases"


def _window(materials: dict, **hand) -> dict:
    # 60 x 60 mm frame of 10 mm limbs, 20 mm stack, one 0.5 mm gap in the
    # right limb, 100 turns at 1 A (invented for the test)
    return {
        "case": {"name": "parts", "family": "window-core"},
        "core": {"outer_width": "60 mm", "outer_height": "60 mm", "limb_width": "10 mm",
                 "depth": "20 mm"},
        "gaps": [{"limb": "right", "length": "0.5 mm"}],
        "winding": {"limb": "left", "turns": 100, "current": "1 A", "thickness": "6 mm",
                    "length": "38 mm"},
        "materials": materials,
        "hand": {"fringing": "none", **hand},
    }


def test_a_linear_part_adds_its_reluctance_in_series():
    # Source: exact for the linear series loop (Hopkinson's law): four limbs
    # corner to corner, each 50 mm of mean path on 10 x 20 mm, the top limb
    # of mu_r 100 and the rest mu_r 2000, the gap 0.5 mm ideal (fringing
    # "none"); L = N^2 / sum R
    case = case_from_dict(_window({"core": {"mu_r": 2000}, "top": {"mu_r": 100}}))
    h = run_hand(case, planar=True)
    A = 10e-3 * 20e-3
    R = (3 * 50e-3 - 0.5e-3) / (mu_0 * 2000 * A) + 50e-3 / (mu_0 * 100 * A) \
        + 0.5e-3 / (mu_0 * A)
    # (the gap's 0.5 mm comes off the right limb's iron)
    assert h.inductance == pytest.approx(100 ** 2 / R, rel=1e-9)


def test_a_part_of_the_cores_own_material_changes_nothing():
    # the window core's parts are its own rectangles, so the mesh is the same:
    # identical FE values (to the solver's rounding) and identical hand values
    base = case_from_dict(_window({"core": "demo-sisteel"}))
    same = case_from_dict(_window({"core": "demo-sisteel", "top": "demo-sisteel"}))
    assert run_hand(same).values() == run_hand(base).values()
    names = {r.name for r in case_layout(same).regions}
    assert {"core", "core-top"} <= names
    qa, qb = run_fe(base)[0], run_fe(same)[0]
    for k in ("inductance", "gap_B", "core_B", "flux"):
        assert qb.values[k] == pytest.approx(qa.values[k], rel=1e-9), k
    assert qb.peak_B == pytest.approx(qa.peak_B, rel=1e-9)


def test_an_ei_cores_i_bar_is_its_own_region_across_the_width():
    d = tomllib.loads((CASES / "demo_ei_choke_ibar.toml").read_text())
    case = case_from_dict(d)
    assert case.part_overrides == ("I",)
    regions = {r.name: r for r in case_layout(case).regions}
    (bar,) = regions["core-I"].shapes
    assert (bar.x0, bar.x1) == (0.0, pytest.approx(case.core.outer_width))
    assert bar.y1 - bar.y0 == pytest.approx(8e-3)
    # a softer I-bar (mu_r 50) lowers the inductance in both models
    d["materials"]["I"] = {"mu_r": 50}
    soft = case_from_dict(d)
    assert run_hand(soft).inductance < run_hand(case).inductance


@pytest.mark.parametrize("materials, key, words", [
    ({"core": "demo-sisteel", "leftt": "demo-sisteel"}, "materials.leftt", "did you mean 'left'"),
    ({"core": "demo-sisteel", "I": "demo-sisteel"}, "materials.I", "valid keys: core, left"),
    ({"core": "demo-sisteel", "top": {"mu_r": -3}}, "materials.top", None),
])
def test_bad_part_materials_name_the_key(materials, key, words):
    with pytest.raises(CaseError, match=words) as e:
        case_from_dict(_window(materials))
    assert e.value.key.startswith(key)


def test_effective_parameters_refuse_parts_of_several_materials():
    case = case_from_dict(_window({"core": "demo-sisteel", "top": {"mu_r": 100}},
                                  effective_parameters=True))
    with pytest.raises(CaseError, match="hand.effective_parameters"):
        run_hand(case)
