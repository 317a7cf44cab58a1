"""The regression baseline cannot hide a change, and verify does not confuse two
cases: tolerances capped, every stored block guarded, units on drift rows."""

from __future__ import annotations

import copy
import json
from pathlib import Path

import pytest

from magcheck.compare.judge.baseline import FE_RTOL_FLOOR, FE_UNC_CAP, drift
from magcheck.compare.front.cli import main

ROOT = Path(__file__).resolve().parents[1]
CASES = ROOT / "cases"
BASELINE = json.loads((CASES / "baseline.json").read_text())


def _entry(name: str = "demo-choke") -> dict:
    return copy.deepcopy(BASELINE[name])


def test_identical_snapshot_does_not_drift():
    assert drift(_entry(), _entry()) == []


def test_uncertainty_cannot_widen_the_tolerance_beyond_its_cap():
    stored = _entry()
    stored["fe_uncertainty"]["inductance"] = 0.5 * stored["fe"]["inductance"]  # absurdly large
    current = copy.deepcopy(stored)
    current["fe"]["inductance"] *= 1.0 + 1.5 * FE_UNC_CAP  # beyond the cap, inside 2u
    moved = drift(current, stored)
    assert [(d.block, d.key) for d in moved] == [("fe", "inductance")]
    assert moved[0].tolerance == pytest.approx(FE_UNC_CAP * stored["fe"]["inductance"])
    assert " H " in str(moved[0]) or str(moved[0]).endswith(" H)")  # the row carries its unit


@pytest.mark.parametrize("block", ["fe_3d", "margins"])
def test_depth_corrected_values_and_margin_rows_are_guarded(block):
    stored = _entry("demo-choke-margins")  # the case with margin rows
    assert stored[block], f"the baseline stores no {block}"
    key = sorted(stored[block])[0]
    current = copy.deepcopy(stored)
    current[block][key] *= 1.0 + 3 * FE_RTOL_FLOOR + 2 * FE_UNC_CAP
    assert [(d.block, d.key) for d in drift(current, stored)] == [(block, key)]


def test_a_tenfold_uncertainty_is_drift():
    stored = _entry()
    current = copy.deepcopy(stored)
    current["fe_uncertainty"]["flux"] = 10 * max(stored["fe_uncertainty"]["flux"],
                                                 1e-3 * stored["fe"]["flux"])
    assert [(d.block, d.key) for d in drift(current, stored)] == [("fe_uncertainty", "flux")]


def test_duplicate_case_names_are_bad_input(tmp_path, capsys):
    a = tmp_path / "a.toml"
    b = tmp_path / "b.toml"
    a.write_text((CASES / "demo_choke.toml").read_text())
    b.write_text((CASES / "demo_choke.toml").read_text().replace('turns = 80', 'turns = 81'))
    assert main(["verify", str(tmp_path)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and str(a) in err[0] and str(b) in err[0] and "demo-choke" in err[0]


@pytest.mark.slow
def test_modified_copy_is_not_reported_as_drift_of_the_demo(tmp_path, capsys):
    copy_path = tmp_path / "mine.toml"
    copy_path.write_text((CASES / "demo_choke.toml").read_text().replace('turns = 80', 'turns = 70'))
    out = tmp_path / "v.json"
    code = main(["verify", str(copy_path), "--baseline", str(CASES / "baseline.json"),
                 "--json", str(out)])
    assert code == 1
    items = [it for c in json.loads(out.read_text())["cases"] for it in c["items"]
             if it["group"] == "baseline"]
    assert len(items) == 1 and "differs from the one the baseline entry" in items[0]["message"]


def test_update_tool_refuses_without_naming_cases(tmp_path):
    import subprocess
    import sys

    proc = subprocess.run([sys.executable, str(ROOT / "tools" / "update_baseline.py")],
                          cwd=ROOT, capture_output=True, text=True,
                          env={"PYTHONPATH": str(ROOT), "PATH": "/usr/bin:/bin"})
    assert proc.returncode == 2 and "--cases" in proc.stderr


def test_update_tool_diff_lines():
    import importlib.util

    spec = importlib.util.spec_from_file_location("update_baseline",
                                                  ROOT / "tools" / "update_baseline.py")
    assert spec and spec.loader
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    lines = mod.diff_lines("c", {"fe": {"inductance": 2.0, "flux": 1.0}},
                           {"fe": {"inductance": 2.2, "flux": 1.0}})
    assert lines == ["c.fe.inductance: 2.0 -> 2.2 +10.0000 %"]
