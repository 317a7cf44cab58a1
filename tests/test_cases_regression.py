"""Every bundled case runs and matches its stored results (cases/baseline.json).

Tolerances and their reasons are in compare/judge/baseline.py: hand values 1e-6
relative, FE values max(0.2 %, 2 x stored FE uncertainty). A deliberate
change of results regenerates the file with tools/update_baseline.py.
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from magcheck.compare.judge.baseline import drift, snapshot, stored_verdict_changes
from magcheck.compare.reading.casefile import load_case
from magcheck.compare.judge.check import run_check

CASES = Path(__file__).resolve().parents[1] / "cases"
BASELINE = json.loads((CASES / "baseline.json").read_text())
CASE_FILES = sorted(CASES.glob("*.toml"))


def test_every_case_has_a_baseline():
    names = {load_case(p).name for p in CASE_FILES}
    assert names == set(BASELINE)


def test_every_baseline_entry_stores_its_agreement_verdicts():
    # `magcheck verify cases/` (CI) reads them to tell a known disagreement
    # from a new one (compare.studies.verify); values are verdict strings
    for name, entry in BASELINE.items():
        verdicts = entry.get("agreement")
        # a case with a magnet shows lambda/I for information only (not
        # stored); its incremental inductance is judged and stored
        assert verdicts and ("inductance" in verdicts or "incremental_inductance" in verdicts), name
        assert set(verdicts.values()) <= {"pass", "within FE noise", "FAIL", "inconclusive",
                                          "n/a", "info"}, name


@pytest.mark.parametrize("path", CASE_FILES, ids=[p.stem for p in CASE_FILES])
def test_baseline_entry_was_made_from_this_case_file(path):
    # A case edited without regenerating its entry would compare new physics
    # against old numbers (or hide a change): the stored hash must match.
    case = load_case(path)
    assert BASELINE[case.name]["case_sha256"] == case.sha256, (
        f"{path.name} changed since its baseline entry was made: run "
        f"PYTHONPATH=. python tools/update_baseline.py --cases {case.name} and say why in the commit")


@pytest.mark.slow
@pytest.mark.parametrize("path", CASE_FILES, ids=[p.stem for p in CASE_FILES])
def test_case_matches_baseline(path):
    case = load_case(path)
    res = run_check(case)
    stored = BASELINE[case.name]
    current = snapshot(res)
    moved = drift(current, stored)
    assert not moved, "\n".join(str(d) for d in moved)
    # the stored agreement verdicts (the known disagreements `magcheck
    # verify` accepts) are this code's: a FAIL gained or lost is a stale entry
    changed = stored_verdict_changes(current["agreement"], stored.get("agreement", {}))
    assert not changed, f"agreement verdicts changed from the stored ones: {changed}"
    # Every demo case is invented and says so.
    assert "invented for the demo" in path.read_text().lower()
