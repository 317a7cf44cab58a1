"""Verdicts that can fail, for the right reason: the agreement limit before
the FE noise band ("inconclusive" apart from pass and FAIL), the coupling
factor shown but not judged, and two verdicts everywhere: the design's
margins and the hand calculation's agreement with the field solution
(CheckResult, JSON, terminal, Markdown, HTML, exit codes 1 / 4, verify and
its JUnit, known disagreements stored in the baseline entry)."""

from __future__ import annotations

import json
import math
import tomllib
import xml.etree.ElementTree as ET
from pathlib import Path
from types import SimpleNamespace

import pytest

from magcheck.compare.reading.casefile import case_from_dict, load_case
from magcheck.compare.judge.check import (INCONCLUSIVE, NOISE, CheckResult, Row, _diff_pct,
                                          _verdict, winding_rows)
from magcheck.compare.front.cli import main

CASES = Path(__file__).resolve().parents[1] / "cases"


# ----------------------------------------------------------------- the noise band
def _v(hand: float, unc: float, limit: float | None = 10.0, fe: float = 1.0) -> str:
    return _verdict(_diff_pct(hand, fe), hand, fe, unc, limit)


def test_beyond_the_limit_the_noise_band_gives_inconclusive_not_pass():
    # hand 1.2 against FE 1.0: +20 % beyond a 10 % limit.  An FE uncertainty
    # of 0.5 (wider than the limit) made it "within FE noise" before the
    # limit was looked at: a difference beyond the limit that never failed.
    assert _v(1.2, 0.5) == INCONCLUSIVE
    # the band's edges, precisely: |hand - FE| = 0.2 at 1.25x the
    # uncertainty is FAIL, at 0.8x it is inconclusive (a band twice as wide
    # would make the first inconclusive too)
    assert _v(1.2, 0.2 / 1.25) == "FAIL"
    assert _v(1.2, 0.2 / 0.8) == INCONCLUSIVE
    assert _v(0.8, 0.2 / 1.25) == "FAIL"  # the same below the FE
    assert _v(0.8, 0.2 / 0.8) == INCONCLUSIVE
    # no uncertainty (one mesh): the limit alone
    assert _v(1.2, math.nan) == "FAIL"


def test_inside_the_limit_a_row_passes_whatever_the_uncertainty():
    for unc in (0.0, 1e-6, 0.049, 0.05, 0.5, 50.0, math.nan):
        v = _v(1.05, unc)  # +5 % inside a 10 % limit
        assert v in ("pass", NOISE), (unc, v)
    # "within FE noise" (the string JSON readers know) only where |hand - FE|
    # is within the uncertainty, and then it is a pass
    assert _v(1.05, 0.05 / 0.8) == NOISE
    assert _v(1.05, 0.05 / 1.25) == "pass"


def _row(key: str, verdict: str, *, limit_pct: float | None = 10.0,
         limit_value: float | None = None) -> Row:
    return Row(key, key, "", 1.0, 1.0, math.nan, 0.0, limit_pct, verdict,
               limit_value=limit_value)


def _result(*rows: Row) -> CheckResult:
    return CheckResult(case=None, hand_3d=None, hand_planar=None, fe=None,  # type: ignore[arg-type]
                       rows=rows, depth_factor=1.0, notes=(), timings={})


def test_two_verdicts_from_the_rows_and_their_exit_codes():
    peak_ok = _row("peak_B", "pass", limit_pct=None, limit_value=1.7)
    margin_bad = _row("margin:current_density", "FAIL", limit_pct=None, limit_value=3e6)
    l_bad = _row("inductance", "FAIL")
    inc = _row("flux", INCONCLUSIVE)
    noise = _row("gap_B", NOISE)
    assert peak_ok.judges == margin_bad.judges == "design"
    assert l_bad.judges == inc.judges == "agreement"
    # agreement FAIL only: the design passes, exit 4 (0 when only reported)
    r = _result(peak_ok, l_bad, inc, noise)
    assert r.design_passed and not r.agreement_passed and not r.passed
    assert r.exit_code == 4 and r.exit_code_for("report") == 0
    # inconclusive is counted apart and fails neither verdict
    r = _result(peak_ok, inc, noise)
    assert r.passed and r.exit_code == 0
    assert r.verdict_counts("agreement") == {INCONCLUSIVE: 1, "pass": 1}
    # a failed margin exits 1 whatever the agreement and the option
    r = _result(margin_bad, l_bad)
    assert not r.design_passed and r.exit_code == 1 and r.exit_code_for("report") == 1
    assert l_bad.to_dict()["judges"] == "agreement"


# ----------------------------------------------------------------- the coupling factor
def test_the_coupling_factor_row_is_info_the_inductance_rows_judge():
    # hand k = 1 (no leakage path) against FE k = 0.85: +17.6 %, inside the
    # incremental-inductance limit of 20 % the row used to borrow, so any k
    # from 0.8 to 1 passed.  The row is shown, not judged.
    case = load_case(CASES / "demo_coupled_inductor.toml")
    la, lb, m_h = 2e-3, 1e-3, -math.sqrt(2e-3 * 1e-3)  # |k| = 1 by hand
    m_fe = 0.85 * m_h
    hv = {"flux_linkage:A": 8e-3, "flux_linkage:B": -4e-3, "L:A,A": la, "L:B,B": lb,
          "L:A,B": m_h}
    fv = dict(hv, **{"L:A,B": m_fe})
    hand = SimpleNamespace(winding_values=hv)
    fe = SimpleNamespace(fine=SimpleNamespace(winding_values=fv), uncertainty={})
    rows = {r.key: r for r in winding_rows(case, hand, hand, fe)}  # type: ignore[arg-type]
    k = rows["coupling:A,B"]
    assert k.hand == pytest.approx(-1.0) and k.fe == pytest.approx(-0.85)
    assert k.limit_pct is None and k.verdict == "info"
    # what k is made of is judged: the mutual inductance, 15 % off
    assert rows["L:A,B"].limit_pct == 20.0 and rows["L:A,B"].verdict == "pass"
    assert rows["L:A,B"].diff_pct == pytest.approx(100 * (1 / 0.85 - 1))


def test_coupling_and_leakage_notes_say_what_they_bound():
    # two concentric windings on the demo transformer, driven by current
    # (coarse, one mesh: the test is about the notes, not the FE)
    d = tomllib.loads((CASES / "demo_ei_transformer.toml").read_text())
    p = d["windings"][0]
    for k in ("voltage", "frequency", "residual_flux", "resistance"):
        p.pop(k)
    p["current"] = "50 mA"
    d.pop("margins")
    d.pop("loss")  # the loss budget needs the voltage drive's frequency
    d["fe"] = {"mesh_size": "3 mm", "gap_elements": 2}
    from magcheck.compare.judge.check import run_check

    res = run_check(case_from_dict(d), estimate_error=False)
    rows = {r.key: r for r in res.rows}
    assert rows["coupling:primary,secondary"].verdict == "info"
    assert rows["leakage_inductance"].limit_pct == 25.0
    note = next(n for n in res.notes if "coupling that leakage implies" in n)
    # Source: exact algebra, L_s(a) = L11 - 2aM + a^2 L22 at a = N1/N2 is
    # least, L11 (1 - k^2), at a = M / L22: sqrt(1 - L_s/L11) <= |k|
    assert "lower bound on |k|" in note and "N1/N2 = M/L_22" in note
    # the FE's own values obey the bound it states
    l11, l22, m = (rows[k].fe for k in ("L:primary,primary", "L:secondary,secondary",
                                        "L:primary,secondary"))
    a = 1000 / 110
    ls_at_ratio = l11 - 2 * a * m + a * a * l22
    assert ls_at_ratio >= l11 * (1 - (m * m) / (l11 * l22)) * (1 - 1e-12)
    assert any("end turns" in n and "mean turn" in n and "neither column" in n
               for n in res.notes)


# ----------------------------------------------------------------- check: two verdicts
COARSE = '[fe]\nmesh_size = "3 mm"\ngap_elements = 2\n'


def _gap_text(gap_mm: float, peak: str = "1.7 T") -> str:
    """The demo choke with a wider gap: hand and FE L differ by ~17 %
    (past the 15 % limit), peak B far below its margin."""
    t = (CASES / "demo_choke.toml").read_text()
    t = t.replace('length = "0.6 mm"', f'length = "{gap_mm} mm"').replace("[fe]\n", COARSE)
    return t.replace("[margins]\n", f'[margins]\npeak_B = "{peak}"\n')


@pytest.fixture(scope="module")
def wide_gap(tmp_path_factory):
    d = tmp_path_factory.mktemp("verdicts")
    path = d / "wide_gap.toml"
    path.write_text(_gap_text(0.8).replace('name = "demo-choke"', 'name = "wide-gap"'))
    code = main(["check", str(path), "--no-error-estimate", "--json", str(d / "r.json"),
                 "--markdown", str(d / "r.md"), "--report", str(d / "rep")])
    return path, d, code


def test_disagreement_with_margins_met_exits_4_design_passed(wide_gap, capsys):
    path, d, code = wide_gap
    assert code == 4
    doc = json.loads((d / "r.json").read_text())
    rows = {r["quantity"]: r for r in doc["comparison"]}
    # the measured disagreement: L about 17 % below the FE, past 15 %
    assert -19.0 < rows["inductance"]["difference_pct"] < -15.0
    assert rows["inductance"]["verdict"] == "FAIL" and rows["inductance"]["judges"] == "agreement"
    assert rows["peak_B"]["verdict"] == "pass" and rows["peak_B"]["judges"] == "design"
    assert doc["design_passed"] is True and doc["agreement_passed"] is False
    assert doc["passed"] is False and doc["exit_code"] == 4
    md = (d / "r.md").read_text()
    assert "design:    PASS" in md and "agreement: FAIL" in md
    html = (d / "rep" / "index.html").read_text()
    assert "the design meets its margins" in html and "disagree beyond a limit" in html


@pytest.mark.slow
def test_agreement_report_exits_0_and_a_failed_margin_exits_1(wide_gap, tmp_path, capsys):
    path, _, _ = wide_gap
    capsys.readouterr()
    assert main(["check", str(path), "--no-error-estimate", "--agreement", "report",
                 "--json", str(tmp_path / "r.json")]) == 0
    out = capsys.readouterr().out
    assert "design:    PASS" in out and "agreement: FAIL" in out and "reported only" in out
    assert json.loads((tmp_path / "r.json").read_text())["exit_code"] == 0
    tight = tmp_path / "tight.toml"
    tight.write_text(_gap_text(0.8, peak="0.5 T"))
    for mode in ("fatal", "report"):
        assert main(["check", str(tight), "--no-error-estimate", "--agreement", mode]) == 1
    out = capsys.readouterr().out
    assert "design:    FAIL" in out
    assert main(["check", str(tight), "--agreement", "lenient"]) == 2
    err = capsys.readouterr().err
    assert "--agreement" in err and "lenient" in err and "Traceback" not in err


# ----------------------------------------------------------------- verify
@pytest.mark.slow
def test_verify_two_verdicts_junit_and_known_disagreements(wide_gap, tmp_path, capsys):
    path, _, _ = wide_gap
    folder = tmp_path / "cases"
    folder.mkdir()
    case = folder / "wide_gap.toml"
    case.write_text(path.read_text())
    out = tmp_path / "out"
    args = ["verify", str(folder), "--workers", "1", "--no-error-estimate"]
    # no baseline beside the case: a new disagreement, exit 4
    assert main(args + ["--junit", str(out / "a.xml"), "--json", str(out / "a.json")]) == 4
    text = capsys.readouterr().out
    assert "design:    PASS" in text and "agreement: FAIL" in text
    data = json.loads((out / "a.json").read_text())
    assert data["design_passed"] is True and data["agreement_passed"] is False
    root = ET.parse(out / "a.xml").getroot()
    props = {p.get("name"): p.get("value") for p in root.iter("property")}
    assert props["design_passed"] == "true" and props["agreement_passed"] == "false"
    fails = list(root.iter("failure"))
    assert fails and all(f.get("type") == "limit" for f in fails)
    assert main(args + ["--agreement", "report"]) == 0
    capsys.readouterr()
    # the baseline entry beside the case stores the same FAIL: known, exit 0
    from magcheck.compare.judge.baseline import snapshot
    from magcheck.compare.judge.check import run_check

    res = run_check(load_case(case), estimate_error=False)
    entry = snapshot(res)
    assert entry["agreement"]["inductance"] == "FAIL"
    (folder / "baseline.json").write_text(json.dumps({"wide-gap": entry}))
    assert main(args + ["--junit", str(out / "b.xml")]) == 0
    text = capsys.readouterr().out
    assert "known disagreement (stored)" in text
    root = ET.parse(out / "b.xml").getroot()
    assert root.get("failures") == "0"
    props = {p.get("name"): p.get("value") for p in root.iter("property")}
    assert props["agreement_passed"] == "true" and int(props["known_disagreements"]) >= 1
    # ... unless asked to judge afresh
    assert main(args + ["--no-stored-verdicts"]) == 4
    # a row whose stored verdict was pass and now fails is a new disagreement
    stored = dict(entry, agreement=dict(entry["agreement"], inductance="pass"))
    (folder / "baseline.json").write_text(json.dumps({"wide-gap": stored}))
    assert main(args) == 4
    # a stored FAIL that now passes is a changed verdict too (stale entry)
    stored = dict(entry, agreement=dict(entry["agreement"], gap_B="FAIL"))
    (folder / "baseline.json").write_text(json.dumps({"wide-gap": stored}))
    assert main(args + ["--json", str(out / "c.json")]) == 4
    items = json.loads((out / "c.json").read_text())["cases"][0]["items"]
    assert [i["key"] for i in items if i["verdict"] == "FAIL"] == ["stored:agreement:gap_B"]
    # an entry made from another case file stores nothing for this one
    stored = dict(entry, case_sha256="0" * 64)
    (folder / "baseline.json").write_text(json.dumps({"wide-gap": stored}))
    assert main(args) == 4
    # an old baseline entry without verdicts is read as before (no known ones)
    old = {k: v for k, v in entry.items() if k != "agreement"}
    (folder / "baseline.json").write_text(json.dumps({"wide-gap": old}))
    assert main(args) == 4
