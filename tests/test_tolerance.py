"""Tolerance studies: sampling against the declared distributions, reproducibility
for a seed whatever the workers, the FE subset and its correction, the CLI."""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pytest
from figures import assert_drawn

from magcheck.compare.design.case import Tolerance

from magcheck.compare.reading.casefile import load_case
from magcheck.compare.judge.check import choose_depth_model, fe_3d_factor
from magcheck.compare.front.cli import main
from magcheck.compare.errors import CaseError
from magcheck.compare.models.fe import run_fe
from magcheck.compare.studies.sweep import case_source, make_case
from magcheck.compare.studies.tolerance import draw_samples, run_tolerance

CASES = Path(__file__).resolve().parents[1] / "cases"
MARGINS = CASES / "demo_choke_margins.toml"


@pytest.fixture(scope="module")
def src():
    return case_source(MARGINS)[0]


def test_uniform_and_normal_samples_follow_their_laws(src):
    tols = [Tolerance("gaps[0].length", "uniform", minus=0.05e-3, plus=0.1e-3),
            Tolerance("winding.current", "normal", sigma=0.02, limit=0.03, relative=True)]
    n = 4000
    s = draw_samples(src, tols, n, seed=7)
    g = np.array([x["gaps[0].length"] for x in s])
    i = np.array([x["winding.current"] for x in s])
    i0 = load_case(MARGINS).winding.current
    assert g.min() >= 0.55e-3 and g.max() <= 0.7e-3
    # Source: exact moments of U(a, b): mean (a+b)/2, sd (b-a)/sqrt(12).
    # Band: 5 standard errors of the sample mean (sd/sqrt(n)): fails by chance
    # with probability < 1e-6, and the seed fixes the draw anyway.
    se = (0.15e-3 / math.sqrt(12)) / math.sqrt(n)
    assert abs(g.mean() - 0.625e-3) < 5 * se
    assert abs(i).max() <= i0 * 1.03 + 1e-12 and i.min() >= i0 * 0.97 - 1e-12
    # Source: scipy.stats.truncnorm (general-purpose reference library): the
    # sd of a normal truncated at +-1.5 sigma is 0.7378 sigma. Band 5 %: the
    # sampling error of a standard deviation over 4000 draws is ~1.1 %.
    from scipy.stats import truncnorm

    sd = truncnorm.std(-1.5, 1.5) * 0.02 * i0  # sigma = 2 % of the nominal current
    assert i.std() == pytest.approx(sd, rel=0.05)
    assert draw_samples(src, tols, 5, seed=7) == s[:5]  # same stream, same order
    assert draw_samples(src, tols, 5, seed=8) != s[:5]


def test_undeclared_key_is_bad_input(src):
    with pytest.raises(CaseError) as exc:
        draw_samples(src, [Tolerance("gaps[0].position", "uniform", 1e-3, 1e-3)], 3, 0)
    assert "tolerances[0].key" in str(exc.value) and "nominal" in str(exc.value)


@pytest.mark.slow
def test_hand_only_reproducible_and_worker_independent(src):
    a = run_tolerance(src, samples=6, seed=3, fe_samples=0, workers=1)
    b = run_tolerance(src, samples=6, seed=3, fe_samples=0, workers=2)
    assert [s.settings for s in a.samples] == [s.settings for s in b.samples]
    for k in a.values:
        # The hand model is deterministic: identical bits from either executor.
        assert np.array_equal(a.values[k], b.values[k], equal_nan=True), k
    assert np.array_equal(a.passed, b.passed)
    c = run_tolerance(src, samples=6, seed=4, fe_samples=0, workers=1)
    assert not np.array_equal(a.values["inductance"], c.values["inductance"])
    # A larger gap lowers the inductance: the sampled gap and inductance are
    # negatively correlated (exact ideal-core trend L ~ 1/(l_g + l_c/mu_r)).
    gap = np.array([s.settings["gaps[0].length"] for s in a.samples])
    assert np.corrcoef(gap, a.values["inductance"])[0, 1] < -0.5


def test_fe_subset_values_and_correction(tmp_path):
    text = MARGINS.read_text().replace("[fe]\n", '[fe]\nmesh_size = "3 mm"\ngap_elements = 2\n')
    # A linear core: the test is about the FE subset and its correction, and
    # a linear solve cannot stall whatever the sampled geometry.
    text = text.replace('core = "demo-sisteel"', "core = { mu_r = 3000 }")
    p = tmp_path / "t.toml"
    p.write_text(text)
    src = case_source(p)[0]
    res = run_tolerance(src, samples=5, seed=1, fe_samples=2, workers=1)
    s0 = res.samples[0]
    case0 = make_case(src, s0.settings)
    q, _, _ = run_fe(case0)
    # The FE samples carry the FE inductance with the depth correction
    # (as `magcheck check` judges it: the depth model ranked against the
    # sample's planar FE); same mesh and solve, so to the Newton
    # tolerance (1e-8 residual -> ~1e-6 relative in the quantities).
    depth = choose_depth_model(case0, q.values)
    assert depth.basis == "FE"
    assert res.values["inductance"][0] == pytest.approx(q.values["inductance"]
                                                        * depth.factor("inductance"), rel=1e-6)
    assert res.values["peak_B"][0] == pytest.approx(q.peak_B, rel=1e-6)
    # The other samples: FE estimated from the hand value by the mean ratio
    # (2 FE samples < 3): the ratio is the FE samples' own.
    r = np.mean([res.values["inductance"][i] / res.samples[i].hand_inductance for i in (0, 1)])
    for i in (2, 3, 4):
        assert res.values["inductance"][i] == pytest.approx(r * res.samples[i].hand_inductance,
                                                            rel=1e-12)
    assert 0.0 <= res.yield_fraction <= 1.0
    # The yield, recomputed from the margins by the documented rule: the
    # FE-based peak-B margin of the hand-only samples is corrected by the mean
    # FE/hand ratio of the 2 FE samples; the other margins hold in every
    # sample (a linear core never saturates, the current density is a case
    # figure, L ~ 3-3.6 mH lies inside 2.5..4.5 mH).
    j = next(k for k, m in enumerate(s0.margins) if m.key == "peak_B")
    fe_v = np.array([res.samples[i].margins[j].value for i in (0, 1)])
    fe_h = np.array([res.samples[i].margins[j].hand for i in (0, 1)])
    ratio = np.mean(fe_v / fe_h)
    peak = np.array([s.margins[j].value if s.with_fe else ratio * s.margins[j].hand
                     for s in res.samples])
    assert all(m.passed is not False for s in res.samples for m in s.margins if m.key != "peak_B")
    assert res.passed.tolist() == (peak <= 1.7).tolist()
    assert res.yield_fraction == pytest.approx(np.mean(peak <= 1.7), abs=1e-12)


@pytest.mark.slow
def test_tolerance_cli(tmp_path):
    # The saturation-current limit set near the middle of its spread (about
    # 6-7 A for these tolerances), so some samples meet it and some do not.
    p = tmp_path / "t.toml"
    p.write_text(MARGINS.read_text().replace('min = "5 A"', 'min = "6.5 A"'))
    out = tmp_path / "t.json"
    args = ["tolerance", str(p), "--samples", "6", "--seed", "2", "--fe-samples", "0",
            "--workers", "1"]
    code = main(args + ["--json", str(out), "--plot", str(tmp_path / "h.png")])
    assert code == 0
    data = json.loads(out.read_text())
    assert data["seed"] == 2 and len(data["passed"]) == 6
    p5, p50, p95 = data["percentiles"]["saturation_current"]
    assert p5 < 6.5 < p95
    # The yield is the fraction of samples whose saturation current meets 6.5 A
    # (the other margins hold with room in every sample of this study).
    sat = np.array(data["values"]["saturation_current"])
    assert data["yield"] == pytest.approx(np.mean(sat >= 6.5))
    assert (tmp_path / "h.png").read_bytes()[:4] == b"\x89PNG"
    assert_drawn(tmp_path / "h.png")
    assert main(args + ["--min-yield", "100"]) == 1
    assert main(["tolerance", str(CASES / "demo_choke.toml"), "--samples", "3"]) == 2


# ---------------------------------------------------------------------------
# Every branch of the FE correction against an answer known in closed form.

def linear_tolerance_source(tmp_path):
    """The margins demo with a linear core, no fringing and only the gap
    tolerance: its hand inductance is the series circuit in closed form."""
    text = MARGINS.read_text()
    text = text.replace('core = "demo-sisteel"', "core = { mu_r = 3000 }")
    text = text.replace('fringing = "area"', 'fringing = "none"')
    text = text[:text.index("[[tolerances]]")] + (
        '[[tolerances]]\nkey = "gaps[0].length"\ndistribution = "uniform"\n'
        'minus = "0.2 mm"\nplus = "0.3 mm"\n')
    p = tmp_path / "lin.toml"
    p.write_text(text)
    return case_source(p)[0]


def closed_form_inductance(gap: float) -> float:
    # Source: ideal gapped core with finite mu_r (docs/references.md section 2):
    # L = N^2 / (l_g/(mu0 A) + l_c/(mu0 mu_r A)); window 60 x 70 mm, 12 mm
    # limbs: mean path 2 (48 + 58) mm, A = 12 mm x 20 mm, N = 80.
    from scipy.constants import mu_0

    area, l_path = 12e-3 * 20e-3, 2 * (0.048 + 0.058)
    return 80**2 / (gap / (mu_0 * area) + (l_path - gap) / (mu_0 * 3000 * area))


# The stand-in field model: FE = a + b * hand, exactly, for the inductance and
# the peak core B (an affine relation the straight-line fit must recover).
A_L, B_L = 0.2e-3, 1.1
A_P, B_P = 0.05, 0.9


@pytest.fixture
def affine_fe(monkeypatch):
    """Replace the FE solve by an exact affine function of the 3D hand values."""
    import types

    from magcheck.compare.models import fe as fe_mod
    from magcheck.compare.models.hand import run_hand
    from magcheck.compare.studies.tolerance import _hand_peak

    calls = []

    def solve_case(case, mesh, **kw):
        calls.append(case.gaps[0].length)
        h = run_hand(case)
        k = fe_3d_factor(case)
        vals = dict(h.values())
        # the FE 3D inductance is the planar one times the ratio of the depth
        # model ranked against these values (choose_depth_model): iterate to
        # the model that the stand-in's own values choose
        for _ in range(4):
            for key in ("inductance", "incremental_inductance"):
                vals[key] = (A_L + B_L * h.values()[key]) / k
            k_next = choose_depth_model(case, vals).factor("inductance")
            if k_next == k:
                break
            k = k_next
        else:
            raise AssertionError("stand-in FE: the depth model does not settle")
        q = types.SimpleNamespace(values=vals, peak_B=A_P + B_P * _hand_peak(h), force_values={},
                                  magnet_values={})
        return q, None, None

    monkeypatch.setattr(fe_mod, "mesh_case", lambda case, **kw: None)
    monkeypatch.setattr(fe_mod, "solve_case", solve_case)
    return calls


def test_hand_only_branch_is_the_closed_form(tmp_path):
    src = linear_tolerance_source(tmp_path)
    res = run_tolerance(src, samples=6, seed=5, fe_samples=0, workers=1)
    assert res.fits == {"all": "hand model only (no FE)"}
    gaps = [s.settings["gaps[0].length"] for s in res.samples]
    assert len(set(gaps)) == 6 and min(gaps) >= 0.4e-3 and max(gaps) <= 0.9e-3
    # Tolerance 1e-9: linear network, exact to float rounding (see
    # tests/test_circuit_geometry.py).
    for g, L in zip(gaps, res.values["inductance"]):
        assert L == pytest.approx(closed_form_inductance(g), rel=1e-9)


def test_mean_ratio_branch_with_two_fe_samples(tmp_path, affine_fe):
    src = linear_tolerance_source(tmp_path)
    res = run_tolerance(src, samples=5, seed=5, fe_samples=2, workers=1)
    hand = np.array([s.hand_inductance for s in res.samples])
    fe = A_L + B_L * hand[:2]
    # Closed form of the branch (compare/studies/tolerance.py): with fewer than 3 FE
    # samples the correction is the mean of FE/hand over them.
    r = np.mean(fe / hand[:2])
    assert res.values["inductance"][:2] == pytest.approx(fe, rel=1e-12)
    assert res.values["inductance"][2:] == pytest.approx(r * hand[2:], rel=1e-12)
    # The hand values are the closed form, so the whole chain is independent.
    for s, L in zip(res.samples, hand):
        assert L == pytest.approx(closed_form_inductance(s.settings["gaps[0].length"]), rel=1e-9)


def test_straight_line_branch_recovers_intercept_and_slope(tmp_path, affine_fe):
    src = linear_tolerance_source(tmp_path)
    res = run_tolerance(src, samples=9, seed=5, fe_samples=4, workers=1)
    assert res.fits["inductance"].startswith("FE = a + b hand, fitted on 4")
    hand_l = np.array([s.hand_inductance for s in res.samples])
    hand_p = np.array([s.hand_peak_B for s in res.samples])
    assert np.ptp(hand_l) > 0.2 * hand_l.mean()  # the gap spread gives the fit a lever
    # The FE samples ran the stand-in model (its calls include the margin
    # evaluations at other currents, but every FE sample's gap is there).
    assert {s.settings["gaps[0].length"] for s in res.samples[:4]} <= set(affine_fe)
    # Exact data on a line: least squares returns that line; 1e-9 allows for
    # the rounding of a 4-point fit with values of order 1e-3.
    assert res.values["inductance"] == pytest.approx(A_L + B_L * hand_l, rel=1e-9)
    assert res.values["peak_B"] == pytest.approx(A_P + B_P * hand_p, rel=1e-9)
    # The FE-based margins are corrected the same way: the peak-B margin value
    # of every sample is the line through the FE samples' values.
    j = next(k for k, m in enumerate(res.samples[0].margins) if m.key == "peak_B")
    vals = np.array([s.margins[j].value for s in res.samples])
    assert vals[:4] == pytest.approx(A_P + B_P * hand_p[:4], rel=1e-12)
    # Pass/fail of peak B (limit 1.7 T) follows the corrected values.
    assert np.all(res.passed <= (A_P + B_P * hand_p <= 1.7))
    # The inductance window's own figure (at 6 A, where it is judged): the
    # stand-in's FE 3D value on the FE samples, the fitted line on the rest;
    # a linear core's hand L is the closed form at any current.
    gaps = np.array([s.settings["gaps[0].length"] for s in res.samples])
    want = A_L + B_L * np.array([closed_form_inductance(g) for g in gaps])
    assert res["inductance_secant@6A"] == pytest.approx(want, rel=1e-9)
    assert res.fits["inductance_secant@6A"].startswith("FE = a + b hand, fitted on 4")


def _printed(res) -> str:
    import io

    from magcheck.compare.front.commands.tolerance import print_tolerance
    buf = io.StringIO()
    print_tolerance(res, buf)
    return buf.getvalue()


@pytest.mark.parametrize("m", [1, 2])
def test_printed_text_names_the_mean_ratio_below_three_fe_samples(tmp_path, affine_fe, m):
    # The estimator with fewer than 3 FE samples is the mean FE/hand ratio
    # (compare/studies/tolerance.py): the printed text must say so, not "a + b hand".
    src = linear_tolerance_source(tmp_path)
    res = run_tolerance(src, samples=4, seed=5, fe_samples=m, workers=1)
    text = " ".join(_printed(res).split())
    assert "a + b hand" not in text
    s = "" if m == 1 else "s"
    assert f"mean FE/hand ratio of {m} FE sample{s} (fewer than 3 FE samples" in text
    hand = np.array([x.hand_inductance for x in res.samples[:m]])
    r = np.mean((A_L + B_L * hand) / hand)
    assert f"r = {r:.4g}" in text


def test_printed_text_names_the_straight_line_fit_from_three_fe_samples(tmp_path, affine_fe):
    src = linear_tolerance_source(tmp_path)
    res = run_tolerance(src, samples=5, seed=5, fe_samples=3, workers=1)
    text = " ".join(_printed(res).split())
    assert "inductance: FE = a + b hand, fitted on 3 FE samples (least squares)" in text
    assert "mean FE/hand ratio" not in text


@pytest.mark.slow
def test_fe_samples_judge_force_and_demagnetisation_on_the_field_solution(tmp_path):
    # the margins of an FE sample are those magcheck check judges: the FE
    # force (Maxwell stress) and the FE demagnetising extreme, not the hand's
    case_file = Path(__file__).resolve().parents[1] / "cases" / "demo_holding_magnet.toml"
    text = case_file.read_text()  # (its [sweep] of the stroke: the 1 mm limit needs it)
    text += ('\n[[tolerances]]\nkey = "core.stroke"\ndistribution = "uniform"\n'
             'minus = "0.1 mm"\nplus = "0.1 mm"\n')
    p = tmp_path / "hm.toml"
    p.write_text(text)
    src = case_source(p)[0]
    res = run_tolerance(src, samples=2, seed=3, fe_samples=1, workers=1)
    fe_sample, hand_sample = res.samples
    q, _, _ = run_fe(make_case(src, fe_sample.settings))
    m = {r.key: r for r in fe_sample.margins}
    assert m["force_min"].basis == "FE"
    assert m["force_min"].value == pytest.approx(q.force_values["force"], rel=1e-6)
    assert m["demagnetisation"].value == pytest.approx(-q.magnet_values["magnet_H_min"], rel=1e-6)
    h = {r.key: r for r in hand_sample.margins}
    assert h["force_min"].basis == "hand" and h["demagnetisation"].verdict == "n/a"


def test_fe_sample_margin_at_another_current_ranks_the_depth_model_there(tmp_path, monkeypatch):
    """An FE sample's inductance margin at a current other than the case's
    is judged on the FE 3D value with the depth model ranked against the FE
    at that current (compare.judge.check.choose_depth_model), as `magcheck check`
    and the sweep do.  Stand-in FE: the "flux-tube" model's planar hand
    values, so the ranking picks it over the case's "area" model."""
    import types

    from magcheck.compare.models import fe as fe_mod
    from magcheck.compare.models.hand import run_hand
    from magcheck.compare.design.case import with_current

    text = MARGINS.read_text().replace('at = "6 A"', 'at = "3 A"')
    p = tmp_path / "m.toml"
    p.write_text(text)
    src = case_source(p)[0]

    def solve_case(case, mesh, **kw):
        vals = dict(run_hand(case, fringing="flux-tube", planar=True).values())
        return types.SimpleNamespace(values=vals, peak_B=1.0, force_values={},
                                     magnet_values={}), None, None

    monkeypatch.setattr(fe_mod, "mesh_case", lambda case, **kw: None)
    monkeypatch.setattr(fe_mod, "solve_case", solve_case)
    res = run_tolerance(src, samples=1, seed=3, fe_samples=1, workers=1)
    s0 = res.samples[0]
    (m,) = [m for m in s0.margins if m.key.startswith("inductance") and m.kind == "min"]
    at = with_current(make_case(src, s0.settings), 3.0)
    assert at.hand.fringing == "area"
    fe_l = run_hand(at, fringing="flux-tube", planar=True).inductance
    depth = choose_depth_model(at, solve_case(at, None)[0].values)
    assert depth.model == "flux-tube"
    # the same hand solves as the sample's: to Newton's tolerance
    assert m.value == pytest.approx(fe_l * depth.factor("inductance"), rel=1e-9)
    # the study's figure for that window is this judged value, at 3 A (its
    # histogram's data), not the L at the case's 7 A
    assert res["inductance_secant@3A"][0] == m.value
    assert res["inductance"][0] != pytest.approx(m.value, rel=1e-3)
    own = run_hand(at).inductance / run_hand(at, planar=True).inductance
    assert abs(depth.factor("inductance") / own - 1) > 1e-3  # what the test tells apart
