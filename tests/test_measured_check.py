"""Measurements beside both models: the check's measured column
(compare.judge.measurement), verify holding a model to a measurement, the
sweep figures' error bars, and the bundled measured demo."""

from __future__ import annotations

import json
import math
from pathlib import Path
from types import SimpleNamespace

import pytest

import magcheck
from magcheck.compare.design.measured import Measured, MeasuredPoint
from magcheck.compare.errors import CaseError
from magcheck.compare.judge.check import Row
from magcheck.compare.judge.measurement import measured_note, measured_rows
from magcheck.compare.studies.verify import measured_items

ROOT = Path(__file__).resolve().parents[1]
CHOKE = ROOT / "cases" / "demo_choke.toml"
DEMO = ROOT / "cases" / "demo_choke_measured.toml"


def _case(tmp_path: Path, *entries: str) -> Path:
    p = tmp_path / "c.toml"
    p.write_text(CHOKE.read_text() + "".join("\n[[measured]]\n" + e + "\n" for e in entries))
    return p


def _row(**kw) -> Row:
    """A secant-inductance row of the demo choke's kind (6 A): planar hand
    2.9 mH, planar FE 3.4 mH +- 3 uH, hand 3D 3.0 mH, FE 3D 3.6 mH +- 0.12 mH."""
    base = dict(key="inductance", label="inductance (secant)", unit="H", hand=2.9e-3,
                fe=3.4e-3, uncertainty=3e-6, diff_pct=-14.7, limit_pct=15.0, verdict="pass",
                hand_3d=3.0e-3, fe_3d=3.6e-3, fe_3d_uncertainty=0.12e-3)
    base.update(kw)
    return Row(**base)


# --------------------------------------------------------------- the measured column
def test_a_value_at_the_case_current_against_both_models(tmp_path):
    case = magcheck.load(_case(tmp_path, 'quantity = "inductance"\nat = "6 A"\n'
                                         'value = "3.5 mH"\nuncertainty = "0.05 mH"'))
    (m,), left = measured_rows(case, (_row(),))
    assert left == ()
    assert (m.measured, m.u_measured, m.at) == (pytest.approx(3.5e-3), pytest.approx(0.05e-3), 6.0)
    # the FE as judged: its 3D value and that value's uncertainty; the hand's 3D value
    assert (m.fe, m.u_fe, m.hand, m.fe_judged) == (3.6e-3, 0.12e-3, 3.0e-3, "fe_depth_corrected")
    # Source: GUM (JCGM 100:2008) eq. 10; a 5-12-13 triangle: combined u = 0.13 mH,
    # so (3.6 - 3.5)/0.13 = 0.769...; the hand (no u of its own): (3.0 - 3.5)/0.05 = -10
    assert m.fe_sigma == pytest.approx(0.1 / 0.13, rel=1e-9)
    assert m.hand_sigma == pytest.approx(-10.0, rel=1e-9)
    d = m.to_dict()
    assert (d["fe_difference_u"], d["hand_difference_u"], d["hand_uncertainty"]) == (
        pytest.approx(0.1 / 0.13, rel=1e-9), pytest.approx(-10.0, rel=1e-9), 0.0)


def test_without_an_fe_3d_value_the_planar_fe_and_its_own_uncertainty(tmp_path):
    case = magcheck.load(_case(tmp_path, 'quantity = "inductance"\nat = "6 A"\n'
                                         'value = "3.5 mH"\nuncertainty = "0.04 mH"'))
    (m,), _ = measured_rows(case, (_row(fe_3d=math.nan, hand_3d=math.nan, fe=3.53e-3,
                                        uncertainty=0.03e-3),))
    assert (m.fe, m.u_fe, m.hand, m.fe_judged) == (3.53e-3, 0.03e-3, 2.9e-3, "fe")
    # 3-4-5: combined 0.05 mH; (3.53 - 3.50)/0.05 = 0.6
    assert m.fe_sigma == pytest.approx(0.6, rel=1e-9)


def test_a_curve_is_read_at_the_case_current_and_other_points_are_left_to_the_sweep(tmp_path):
    (tmp_path / "L.csv").write_text("I [A],L [mH],u [mH]\n4,3.7,0.04\n8,3.3,0.08\n")
    case = magcheck.load(_case(
        tmp_path, 'quantity = "inductance"\ncsv = "L.csv"',
        'quantity = "inductance"\nat = "2 A"\nvalue = "3.8 mH"\nuncertainty = "1%"',
        'quantity = "incremental_inductance"\nat = "6 A"\nvalue = "3 mH"\n'
        'uncertainty = "1%"'))
    rows, left = measured_rows(case, (_row(),))
    (m,) = rows  # the curve only: the 2 A value is another current, no incremental row
    # half way from 4 A to 8 A: 3.5 mH +- 0.06 mH (linear in value and uncertainty)
    assert (m.measured, m.u_measured, m.curve) == (pytest.approx(3.5e-3), pytest.approx(0.06e-3),
                                                   True)
    # Source: GUM eq. 10, combined sqrt(0.06^2 + 0.12^2) mH
    assert m.fe_sigma == pytest.approx(0.1 / math.hypot(0.06, 0.12), rel=1e-9)
    assert left[0].startswith("measured[1]") and "at 2 A, the case's point is 6 A" in left[0]
    assert left[1].startswith("measured[2]") and "no incremental inductance row" in left[1]
    note = measured_note(rows, left)
    assert "magcheck sweep" in note and "counted as 0" in note


# --------------------------------------------------------------- verify
def _res(case, rows):
    meas, _ = measured_rows(case, rows)
    return SimpleNamespace(case=case, rows=rows, measured=meas)


def test_verify_holds_the_fe_or_the_hand_model_within_the_stated_limit(tmp_path):
    case = magcheck.load(_case(tmp_path, 'quantity = "inductance"\nat = "6 A"\n'
                                         'value = "3.5 mH"\nuncertainty = "0.05 mH"\n'
                                         'hold = "both"\nwithin = 1'))
    fe, hand = measured_items(_res(case, (_row(),)))
    # FE 0.77 combined uncertainties off: within 1; the hand 10 off: FAIL
    assert (fe.group, fe.verdict, fe.judges) == ("measured", "pass", "design")
    assert fe.value == pytest.approx(0.1 / 0.13, rel=1e-9) and fe.limit == 1.0
    assert fe.margin_pct == pytest.approx(100 * (1 - 0.1 / 0.13), rel=1e-9)
    assert (hand.verdict, hand.value) == ("FAIL", pytest.approx(-10.0))
    # the FE just beyond the limit: 3.5 + 1.01 x 0.13 mH
    (fe,) = measured_items(_res(magcheck.load(_case(
        tmp_path, 'quantity = "inductance"\nat = "6 A"\nvalue = "3.5 mH"\n'
                  'uncertainty = "0.05 mH"\nwithin = 1')), (_row(fe_3d=3.5e-3 + 1.01 * 0.13e-3),)))
    assert fe.verdict == "FAIL" and fe.key == "measured:0:inductance:fe"  # hold defaults to fe
    # a held measurement with no value at the case's current cannot be judged: FAIL, saying why
    (fe,) = measured_items(_res(magcheck.load(_case(
        tmp_path, 'quantity = "inductance"\nat = "2 A"\nvalue = "3.5 mH"\n'
                  'uncertainty = "0.05 mH"\nwithin = 1')), (_row(),)))
    assert fe.verdict == "FAIL" and "at 2 A, the case's point is 6 A" in fe.message


@pytest.mark.parametrize("entry, words", [
    ('hold = "fe"', "measured[0].within: missing"),
    ('within = 0', "measured[0].within = 0: must be a number > 0"),
    ('hold = "model"\nwithin = 2', "measured[0].hold"),
])
def test_bad_verify_keys_name_the_key(tmp_path, entry, words):
    with pytest.raises(CaseError) as exc:
        magcheck.load(_case(tmp_path, 'quantity = "inductance"\nat = "6 A"\nvalue = "3.5 mH"\n'
                                      'uncertainty = "1%"\n' + entry))
    assert words in str(exc.value)


# --------------------------------------------------------------- figures
def test_measured_points_are_drawn_with_one_uncertainty_error_bars():
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    from magcheck.compare.outputs.plots import measured_marks

    pts = (MeasuredPoint(2.0, 3.7e-3, 0.05e-3), MeasuredPoint(6.0, 3.4e-3, 0.1e-3))
    case = SimpleNamespace(measured=(Measured("inductance", pts, "bench"),
                                     Measured("force", (MeasuredPoint(1e-3, 5.0, 0.2),))))
    fig, ax = plt.subplots()
    try:
        assert measured_marks(ax, case, ("inductance",), 1.0, 1e3) == 2  # mH on the axis
        (cont,) = ax.containers
        x, y = cont.lines[0].get_data()
        assert list(x) == [2.0, 6.0] and list(y) == pytest.approx([3.7, 3.4])
        segs = cont.lines[2][0].get_segments()
        # each bar spans value +- u: 3.65..3.75 mH at 2 A, 3.3..3.5 mH at 6 A
        assert [(s[0][0], s[0][1], s[1][1]) for s in segs] == [
            (2.0, pytest.approx(3.65), pytest.approx(3.75)),
            (6.0, pytest.approx(3.3), pytest.approx(3.5))]
        assert measured_marks(ax, case, ("force",), 1e3, 1.0) == 1  # stroke in mm
        x, _ = ax.containers[1].lines[0].get_data()
        assert list(x) == [pytest.approx(1.0)]
    finally:
        plt.close(fig)


def test_the_sweep_inductance_figure_carries_the_demo_curve():
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    from magcheck.compare.outputs.plots import sweep_figures
    from magcheck.compare.studies.sweep import case_source, parse_vary, run_sweep

    src, case = case_source(str(DEMO))
    sw = run_sweep(src, [parse_vary("winding.current=1A:9A:5")], with_fe=False, workers=1)
    figs = dict(sweep_figures(sw))
    try:
        (cont,) = figs["sweep_inductance.png"].axes[0].containers
        x, y = cont.lines[0].get_data()
        # the CSV's currents and values (mH), as written in cases/demo_choke_measured_L.csv
        assert list(x) == [1, 3, 5, 6, 7, 9]
        assert list(y) == pytest.approx([3.70, 3.62, 3.50, 3.42, 3.32, 3.08])
        assert not figs["sweep_core_B.png"].axes[0].containers
    finally:
        for f in figs.values():
            plt.close(f)


# --------------------------------------------------------------- the bundled demo
@pytest.fixture(scope="module")
def demo_check():
    from magcheck.compare.judge.check import run_check
    from magcheck.compare.reading.casefile import load_case

    return run_check(load_case(DEMO))


@pytest.mark.slow
def test_the_demo_measurement_lies_between_hand_and_fe_and_is_shown(demo_check, tmp_path):
    from magcheck.compare.outputs.report import write_report
    from magcheck.compare.outputs.serialize import check_lines, check_markdown

    res = demo_check
    (m,) = res.measured
    row = res["inductance"]
    assert m.hand == row.hand_3d and m.fe == row.fe_3d and m.u_fe == row.fe_3d_uncertainty
    assert m.hand < m.measured < m.fe  # the invented values lie between the models
    assert m.measured == pytest.approx(3.42e-3)  # the CSV's 6 A row
    assert abs(m.fe_sigma) <= 2.0 < abs(m.hand_sigma)  # what the case's verify holds
    doc = json.loads(json.dumps(res.to_dict()))
    (d,) = doc["measured"]
    assert d["measured"] == pytest.approx(3.42e-3) and d["hold"] == "fe" and d["within"] == 2
    assert d["fe_difference_u"] == pytest.approx(m.fe_sigma)
    lines = [t for t, _ in check_lines(res)]
    assert all(len(t) <= 100 for t in lines)
    at = next(i for i, t in enumerate(lines) if t.startswith("measured (the built part"))
    assert lines[at + 3].startswith("inductance (secant), curve") and \
        f"{m.fe_sigma:+.2f}" in lines[at + 3]
    md = check_markdown(res)
    assert r"| inductance \(secant\), curve | 6 A | 3.42 mH ± 68.4 µH |" in md  # escaped text
    page = Path(write_report(res, tmp_path)).read_text()
    assert "<h2>Measured (the built part" in page and "<td>3.42 mH ± 68.4 uH</td>" in page


@pytest.mark.slow
def test_the_demo_passes_verify_and_a_tighter_limit_fails(tmp_path):
    from magcheck.compare.studies.verify import verify_case

    out = verify_case(str(DEMO))
    item = out["measured:0:inductance:fe"]
    assert out.status == "ok" and item.verdict == "pass" and not out.failed
    (tmp_path / "demo_choke_measured_L.csv").write_text(
        (DEMO.parent / "demo_choke_measured_L.csv").read_text())
    tight = tmp_path / "tight.toml"
    tight.write_text(DEMO.read_text().replace("within = 2", "within = 1"))
    out = verify_case(str(tight), estimate_error=True)
    assert out["measured:0:inductance:fe"].verdict == "FAIL" and not out.design_passed
    assert out.agreement_passed  # a measurement is the design's verdict, not hand vs FE


def test_a_force_is_read_at_the_case_stroke_and_current(tmp_path):
    clapper = ROOT / "cases" / "demo_clapper_relay.toml"
    p = tmp_path / "c.toml"
    (tmp_path / "F.csv").write_text("stroke [mm],F [N],u [N]\n0.4,9,0.3\n1.2,3,0.1\n")
    p.write_text(clapper.read_text() + '\n[[measured]]\nquantity = "force"\ncsv = "F.csv"\n'
                 '\n[[measured]]\nquantity = "force"\nat = "0.8 mm"\nvalue = "5 N"\n'
                 'uncertainty = "0.2 N"\ncurrent = "0.3 A"\n')
    case = magcheck.load(p)
    row = Row("force", "force", "N", 5.5, 5.8, 0.01, -5.2, 15.0, "pass", hand_3d=6.0, fe_3d=6.2,
              fe_3d_uncertainty=0.2)
    (m,), left = measured_rows(case, (row,))
    # the case's stroke 0.8 mm is half way along 0.4..1.2 mm: 6 N +- 0.2 N
    assert (m.at, m.at_unit) == (pytest.approx(0.8e-3), "m")
    assert (m.measured, m.u_measured) == (pytest.approx(6.0), pytest.approx(0.2))
    # Source: GUM eq. 10, combined sqrt(0.2^2 + 0.2^2) N
    assert m.fe_sigma == pytest.approx(0.2 / math.hypot(0.2, 0.2), rel=1e-9)
    assert m.hand_sigma == pytest.approx(0.0, abs=1e-9)
    assert "measured at 0.3 A, the case runs at 0.15 A" in left[0]
