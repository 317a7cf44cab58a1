"""Tolerance studies: sampling against the declared distributions, reproducibility
for a seed whatever the workers, the FE subset and its correction, the CLI."""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pytest

from compare.case import Tolerance
from compare.check import depth_factor
from compare.cli import main
from compare.errors import CaseError
from compare.fe import run_fe
from compare.sweep import case_source, make_case
from compare.tolerance import draw_samples, run_tolerance

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
    assert g.min() >= 0.55e-3 and g.max() <= 0.7e-3
    # Source: exact moments of U(a, b): mean (a+b)/2, sd (b-a)/sqrt(12).
    # Band: 5 standard errors of the sample mean (sd/sqrt(n)): fails by chance
    # with probability < 1e-6, and the seed fixes the draw anyway.
    se = (0.15e-3 / math.sqrt(12)) / math.sqrt(n)
    assert abs(g.mean() - 0.625e-3) < 5 * se
    assert abs(i).max() <= 6.0 * 1.03 + 1e-12 and i.min() >= 6.0 * 0.97 - 1e-12
    # Source: scipy.stats.truncnorm (general-purpose reference library): the
    # sd of a normal truncated at +-1.5 sigma is 0.7378 sigma. Band 5 %: the
    # sampling error of a standard deviation over 4000 draws is ~1.1 %.
    from scipy.stats import truncnorm

    sd = truncnorm.std(-1.5, 1.5) * 0.12
    assert i.std() == pytest.approx(sd, rel=0.05)
    assert draw_samples(src, tols, 5, seed=7) == s[:5]  # same stream, same order
    assert draw_samples(src, tols, 5, seed=8) != s[:5]


def test_undeclared_key_is_bad_input(src):
    with pytest.raises(CaseError) as exc:
        draw_samples(src, [Tolerance("gaps[0].position", "uniform", 1e-3, 1e-3)], 3, 0)
    assert "tolerances[0].key" in str(exc.value) and "nominal" in str(exc.value)


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
    # The FE samples carry the FE inductance with the depth-fringing factor
    # (as `magcheck check` judges it); same mesh and solve, so to the Newton
    # tolerance (1e-8 residual -> ~1e-6 relative in the quantities).
    assert res.values["inductance"][0] == pytest.approx(q.values["inductance"]
                                                        * depth_factor(case0), rel=1e-6)
    assert res.values["peak_B"][0] == pytest.approx(q.peak_B, rel=1e-6)
    # The other samples: FE estimated from the hand value by the mean ratio
    # (2 FE samples < 3): the ratio is the FE samples' own.
    r = np.mean([res.values["inductance"][i] / res.samples[i].hand_inductance for i in (0, 1)])
    for i in (2, 3, 4):
        assert res.values["inductance"][i] == pytest.approx(r * res.samples[i].hand_inductance,
                                                            rel=1e-12)
    assert 0.0 <= res.yield_fraction <= 1.0


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
    assert main(args + ["--min-yield", "100"]) == 1
    assert main(["tolerance", str(CASES / "demo_choke.toml"), "--samples", "3"]) == 2
