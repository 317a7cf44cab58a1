"""The difference breakdown of `magcheck check`: the hand refinements one at
a time against the same FE solution."""

from __future__ import annotations

import json
import tomllib
from pathlib import Path

import pytest

from magcheck.compare.judge.breakdown import BREAKDOWN_KEYS, difference_breakdown
from magcheck.compare.reading.casefile import case_from_dict, load_case
from magcheck.compare.judge.check import run_check
from magcheck.compare.front.cli import main
from magcheck.compare.models.hand import run_hand

CASES = Path(__file__).resolve().parents[1] / "cases"


@pytest.fixture(scope="module")
def choke():
    return run_check(load_case(CASES / "demo_choke.toml"), estimate_error=False)


def test_first_step_is_the_case_as_written_and_matches_the_check(choke):
    first = choke.breakdown[0]
    assert first.name == "as written"
    hp = choke.hand_planar.values()
    fe = choke.fe.values
    for k in BREAKDOWN_KEYS:
        assert first.hand[k] == hp[k]  # the same solve: no drift between the tables
        assert first.diff_pct[k] == pytest.approx(100 * (hp[k] - fe[k]) / fe[k], rel=1e-12)


def test_steps_in_order_and_the_last_has_every_refinement_on(choke):
    names = [st.name for st in choke.breakdown]
    best = [d for d in run_check(choke.case, estimate_error=False,
                                 all_fringing=True).fringing_ranking][0]["model"]
    assert names == ["as written", f"fringing: {best}", "window leakage", "effective parameters"]
    last = choke.breakdown[-1]
    h = run_hand(choke.case, planar=True, fringing=best, leakage=True, effective=True).values()
    for k in BREAKDOWN_KEYS:
        assert last.hand[k] == pytest.approx(h[k], rel=1e-12)
    # and each step changes what it says: leakage raises the inductance
    by = {st.name: st for st in choke.breakdown}
    assert by["window leakage"].hand["inductance"] > by[f"fringing: {best}"].hand["inductance"]


def test_leakage_brings_the_inductance_closer_on_both_demo_cases(choke):
    ei = run_check(load_case(CASES / "demo_ei_inductor.toml"), estimate_error=False)
    for res in (choke, ei):
        by = {st.name: st for st in res.breakdown}
        before = res.breakdown[[st.name for st in res.breakdown].index("window leakage") - 1]
        assert abs(by["window leakage"].diff_pct["inductance"]) < abs(
            before.diff_pct["inductance"]), res.case.name


def test_refinements_already_on_are_not_steps():
    data = tomllib.loads((CASES / "demo_choke.toml").read_text())
    data["hand"] = {"fringing": "flux-tube", "leakage": True}
    data["core"]["stacking"] = 0.95
    case = case_from_dict(data, base_dir=CASES)
    fe = {k: 1.0 for k in BREAKDOWN_KEYS}
    steps = difference_breakdown(case, fe, "flux-tube")
    assert [st.name for st in steps] == ["as written", "stacking factor 0.95",
                                         "effective parameters"]


def test_json_carries_the_breakdown(tmp_path):
    out = tmp_path / "c.json"
    assert main(["check", str(CASES / "demo_choke.toml"), "--no-error-estimate",
                 "--json", str(out)]) == 0
    data = json.loads(out.read_text())["difference_breakdown"]
    assert data[0]["step"] == "as written"
    assert set(data[0]["quantities"]) == set(BREAKDOWN_KEYS)
    assert set(data[0]["quantities"]["inductance"]) == {"hand", "diff_pct"}
