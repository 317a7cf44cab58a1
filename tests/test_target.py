"""magcheck target (compare.studies.target): one design key solved for targets
by the hand model and the FE, against closed forms of a linear core with an
ideal gap; integer keys; infeasible and non-monotonic cases; bad input."""

from __future__ import annotations

import json
import math
from pathlib import Path

import pytest

import magcheck
from magcheck.compare.errors import CaseError
from magcheck.compare.front.cli import main
from magcheck.compare.reading.variants import case_source
from magcheck.compare.studies.target import (crossings, parse_bracket, parse_target,
                                             solve_targets)

ROOT = Path(__file__).resolve().parents[1]
CHOKE = str(ROOT / "cases" / "demo_choke.toml")
MU0 = 4e-7 * math.pi  # the SI value before 2019, as analytic/ uses (0.6 ppb from today's)

# The demo choke's geometry (cases/demo_choke.toml): a window core 60 x 70 mm,
# limbs 12 mm, depth 20 mm, one gap in the right limb, 80 turns.
N, W, H, LW, DEPTH = 80, 0.060, 0.070, 0.012, 0.020
AREA = LW * DEPTH
PATH = 2 * (W - LW) + 2 * (H - LW)  # mean magnetic path through the core and the gap
MU_R = 2000.0


def _linear_choke(tmp_path: Path) -> str:
    """The demo choke with a linear core (mu_r 2000) and no fringing in the
    hand model: its network is the ideal series circuit of the closed form."""
    text = Path(CHOKE).read_text()
    text = text.replace('core = "demo-sisteel"', f"core = {{ mu_r = {MU_R} }}")
    text = text.replace('fringing = "area"', 'fringing = "none"')
    text += '\n[[margins.inductance]]\nat = "6 A"\nmin = "2.5 mH"\n'
    p = tmp_path / "linear.toml"
    p.write_text(text)
    return str(p)


def _closed_form_gap(L: float) -> float:
    """The gap g with L = mu0 N^2 A / (g + (l_m - g)/mu_r): a series magnetic
    circuit of a linear core (path l_m - g, relative permeability mu_r) and an
    ideal gap g, both of cross-section A."""
    # Source: exact solution of the series magnetic circuit (Ampere's law
    # with a uniform flux in core and gap): R = g/(mu0 A) + (l_m - g)/(mu0 mu_r A), L = N^2/R.
    return (MU0 * N**2 * AREA / L - PATH / MU_R) / (1.0 - 1.0 / MU_R)


def _closed_form_turns(L: float, g: float) -> float:
    """The (real) turns with L = mu0 N^2 A / (g + (l_m - g)/mu_r)."""
    # Source: the same exact series-circuit solution, solved for N.
    return math.sqrt(L * (g + (PATH - g) / MU_R) / (MU0 * AREA))


# --------------------------------------------------------------- grammar
def test_target_grammar_reads_quantity_op_value_and_at():
    t = parse_target("inductance>=3.2mH@6A")
    assert (t.quantity, t.op, t.value, t.at) == ("inductance", ">=", pytest.approx(3.2e-3), 6.0)
    s = parse_target("saturation_current >= 8 A @ 25%")
    assert (s.quantity, s.value, s.at) == ("saturation_current", 8.0, pytest.approx(0.25))
    assert parse_target("saturation_current>=8A").at == pytest.approx(0.20)  # the default drop
    assert parse_target("peak_B<=1.5T").at is None  # the case's own current
    assert parse_target("force>=15N@2mm").at == pytest.approx(2e-3)
    assert parse_target("incremental_inductance=2mH@8A").op == "="


@pytest.mark.parametrize("text, words", [
    ("inductance 3.2mH", "write QUANTITY OP VALUE"),
    ("inductanse>=3.2mH@6A", "did you mean 'inductance'"),
    ("inductance>=3.2T@6A", "value"),
    ("inductance>=3.2mH@6mm", "@6mm"),
    ("saturation_current>=8A@20", "percent"),
    ("saturation_current>=8A@120%", "between 0 and 100"),
])
def test_bad_targets_name_the_text(text, words):
    with pytest.raises(CaseError) as exc:
        parse_target(text)
    assert exc.value.key == "--target" and words in str(exc.value)


@pytest.mark.parametrize("spec, words", [
    ("gaps[0].length=1.2mm:0.3mm", "low end must be below"),
    ("gaps[0].length=0.3mm", "KEY=LO:HI"),
    ("gaps[0].lenght=0.3mm:1mm", "did you mean 'length'"),
    ("winding.turns=60.5:90", "not a whole number"),
    ("case.name=1:2", "cannot vary"),
])
def test_bad_brackets_name_the_spec(spec, words):
    with pytest.raises(CaseError) as exc:
        parse_bracket(spec)
    assert exc.value.key == "--key" and words in str(exc.value)


def test_crossings_counts_sign_changes():
    assert crossings([0, 1, 2, 3], [-1, -0.5, 0.5, 1]) == [1]
    assert crossings([0, 1, 2, 3], [-1, 1, 0.5, -1]) == [0, 2]
    assert crossings([0, 1, 2], [1, 2, 3]) == []


# --------------------------------------------------------------- hand, closed form
def test_hand_gap_for_a_target_inductance_matches_the_closed_form(tmp_path):
    src, _ = case_source(_linear_choke(tmp_path))
    for L in (2.0e-3, 3.2e-3, 4.0e-3):
        res = solve_targets(src, parse_bracket("gaps[0].length=0.3mm:1.2mm"),
                            [parse_target(f"inductance>={L * 1e3}mH@6A")], with_fe=False)
        g = res.answers[0].hand.root
        # the hand network of this case is the closed form's circuit exactly:
        # only Brent's tolerance (1e-15 of the bracket) and rounding remain
        assert g == pytest.approx(_closed_form_gap(L), rel=1e-9)
        # L falls as the gap opens, so L >= target holds from the low end up to g
        assert res.answers[0].hand.feasible == (pytest.approx(0.3e-3), pytest.approx(g))
        assert res.feasible["hand"] == res.answers[0].hand.feasible


def test_hand_integer_key_checks_both_neighbours(tmp_path):
    src, _ = case_source(_linear_choke(tmp_path))
    L = 3.2e-3
    res = solve_targets(src, parse_bracket("winding.turns=60:120"),
                        [parse_target(f"inductance>={L * 1e3}mH@6A")], with_fe=False)
    n_exact = _closed_form_turns(L, 0.6e-3)
    ans = res.answers[0].hand
    (n0, q0, m0), (n1, q1, m1) = ans.neighbours
    assert (n0, n1) == (math.floor(n_exact), math.floor(n_exact) + 1)
    assert (m0, m1) == (False, True)  # L rises with N: the upper neighbour meets L >= target
    assert q0 < L <= q1
    # each neighbour's L is the closed form's at that N (L proportional to N^2)
    assert q1 / q0 == pytest.approx((n1 / n0) ** 2, rel=1e-9)
    assert ans.feasible == (n1, 120) and ans.root == n1  # the answer: the neighbour that meets


# --------------------------------------------------------------- FE
def test_fe_gap_meets_the_target_within_its_own_uncertainty(tmp_path):
    src, _ = case_source(_linear_choke(tmp_path))
    L = 2.5e-3
    res = solve_targets(src, parse_bracket("gaps[0].length=0.3mm:1.2mm"),
                        [parse_target(f"inductance={L * 1e3}mH@6A")])
    fe = res.answers[0].fe
    assert fe is not None and math.isfinite(fe.root)
    # the three-mesh value at the FE's answer equals the target within the
    # FE's own uncertainty (discretisation + depth-model spread): the root
    # was found on the case's mesh, the value is the finest mesh's
    assert abs(fe.value - L) <= fe.uncertainty
    assert fe.uncertainty < 0.2 * L  # a real band, not an all-accepting one
    # seeded by the hand answer: few field solves (3 of them the three-mesh check)
    assert fe.solves <= 10
    # the FE holds the fringing the ideal-gap hand model lacks: more L at a
    # gap, so a larger gap for the same L
    assert fe.root > res.answers[0].hand.root
    # judged like the check: the check's inductance margin at the FE's answer
    # (its finest mesh, times its depth correction) is the value reported
    from magcheck.compare.judge.check import run_check
    from magcheck.compare.reading.variants import make_case

    row = run_check(make_case(src, {"gaps[0].length": fe.root}))[
        "margin:inductance_secant@6A:min"]
    # the same mesh and model: only the Newton tolerance (1e-6 relative) differs
    assert row.fe == pytest.approx(fe.value, rel=1e-4)


def test_fe_integer_key_reuses_one_mesh_and_checks_both_neighbours(tmp_path):
    src, _ = case_source(_linear_choke(tmp_path))
    from magcheck.compare.studies import target as tmod

    made = []
    real = tmod._FE.solve

    def counting(self, case, refine=1.0):
        before = len(self.meshes)
        out = real(self, case, refine)
        made.extend([refine] * (len(self.meshes) - before))
        return out

    tmod._FE.solve = counting
    try:
        res = solve_targets(src, parse_bracket("winding.turns=60:120"),
                            [parse_target("inductance>=3.2mH@6A")], uncertainty=False)
    finally:
        tmod._FE.solve = real
    fe = res.answers[0].fe
    assert made == [1.0]  # the turns change no dimension: one mesh for every solve
    (n0, q0, m0), (n1, q1, m1) = fe.neighbours
    assert n1 == n0 + 1 and q0 < 3.2e-3 <= q1 and (m0, m1) == (False, True)
    assert fe.root == n1 and fe.feasible == (n1, 120)
    # linear core: the FE's L is proportional to N^2 on one mesh
    # Source: the field equation is linear in the current density N I / area
    assert q1 / q0 == pytest.approx((n1 / n0) ** 2, rel=1e-6)


# --------------------------------------------------------------- infeasible, non-monotonic
def test_a_target_out_of_reach_names_the_target_and_the_values_seen():
    src, _ = case_source(CHOKE)
    with pytest.raises(CaseError) as exc:
        solve_targets(src, parse_bracket("gaps[0].length=0.3mm:1.2mm"),
                      [parse_target("inductance>=10mH@6A")], with_fe=False)
    text = str(exc.value)
    assert "inductance>=10mH@6A" in text and "outside the reachable range" in text
    assert "at 0.3 mm" in text and "at 1.2 mm" in text and "mH" in text


def test_two_targets_that_cannot_both_be_met_give_no_range():
    src, _ = case_source(CHOKE)
    res = solve_targets(src, parse_bracket("gaps[0].length=0.3mm:1.2mm"),
                        [parse_target("inductance>=3.2mH@6A"),
                         parse_target("saturation_current>=8A@20%")], with_fe=False)
    lo_gap = res.answers[0].hand.feasible
    hi_gap = res.answers[1].hand.feasible
    assert lo_gap[0] == pytest.approx(0.3e-3) and hi_gap[1] == pytest.approx(1.2e-3)
    assert lo_gap[1] < hi_gap[0]  # L wants a small gap, the saturation current a large one
    assert res.feasible["hand"] is None and not res.met
    # peak B falls as the gap opens: at most 1.2 T from some gap up
    both = solve_targets(src, parse_bracket("gaps[0].length=0.3mm:1.2mm"),
                         [parse_target("inductance>=2.6mH@6A"), parse_target("peak_B<=1.2T")],
                         with_fe=False)
    r = both.feasible["hand"]
    assert r == (pytest.approx(both.answers[1].hand.root), pytest.approx(both.answers[0].hand.root))
    assert r[0] < r[1]


def test_a_non_monotonic_response_is_refused(tmp_path):
    # a core whose permeability rises before it saturates, almost closed: the
    # incremental L rises and falls with the current, crossing 20 mH twice
    text = Path(CHOKE).read_text().replace(
        'core = "demo-sisteel"',
        "core = { H = [0, 20, 40, 80, 150, 400, 2000, 20000], "
        "B = [0, 0.02, 0.1, 0.5, 1.0, 1.3, 1.6, 1.9] }").replace('"0.6 mm"', '"0.02 mm"')
    p = tmp_path / "rising.toml"
    p.write_text(text)
    src, _ = case_source(str(p))
    with pytest.raises(CaseError) as exc:
        solve_targets(src, parse_bracket("winding.current=0.02A:3.2A"),
                      [parse_target("incremental_inductance>=20mH")], with_fe=False)
    assert "not monotonic" in str(exc.value) and "crosses the target 2 times" in str(exc.value)


def test_a_target_fixing_the_key_and_a_bracket_end_the_case_rejects_are_refused():
    src, _ = case_source(CHOKE)
    with pytest.raises(CaseError, match="the key being solved"):
        solve_targets(src, parse_bracket("winding.current=1A:8A"),
                      [parse_target("inductance>=3mH@6A")], with_fe=False)
    with pytest.raises(CaseError) as exc:
        solve_targets(src, parse_bracket("gaps[0].length=-0.1mm:1mm"),
                      [parse_target("inductance>=3mH@6A")], with_fe=False)
    assert exc.value.key == "--key" and "positive" in str(exc.value)


# --------------------------------------------------------------- CLI and API
def test_cli_exit_codes_and_one_line_errors(tmp_path, capsys):
    base = ["target", CHOKE, "--hand-only", "--key", "gaps[0].length=0.3mm:1.2mm"]
    out = tmp_path / "t.json"
    assert main(base + ["--target", "inductance>=3.2mH@6A", "--json", str(out)]) == 0
    doc = json.loads(out.read_text())
    assert doc["key"] == "gaps[0].length" and doc["met"] is True
    assert doc["targets"][0]["hand"]["root"] == pytest.approx(0.5533e-3, rel=1e-3)
    capsys.readouterr()
    for argv, words in [
        (base + ["--target", "inductance>=10mH@6A"], "outside the reachable range"),
        (base + ["--target", "inductanse>=3mH"], "unknown quantity"),
        (["target", CHOKE, "--hand-only", "--key", "gaps[0].length=1mm:0.3mm", "--target",
          "inductance>=3mH"], "low end must be below"),
        (["target", CHOKE, "--hand-only", "--key", "gaps[0].length=0.3mm:1mm"],
         "give at least one --target"),
        (["target", CHOKE, "--key", "gaps[0].length=0.3mm:1mm", "--target", "inductance>=3mH",
          "--plot", str(tmp_path / "t.txt")], "figure suffix .txt"),
        (["target", CHOKE, "--key", "gaps[0].length=0.3mm:1mm", "--target", "force>=3N"],
         "no moving part"),
    ]:
        assert main(argv) == 2, argv
        err = capsys.readouterr().err
        assert err.count("\n") == 1 and err.startswith("magcheck: bad input: ") and words in err
    assert main(base + ["--target", "inductance>=3.2mH@6A", "--target",
                        "inductance<=2.5mH@6A"]) == 1
    assert "no value of the key meets every target" in capsys.readouterr().out


def test_api_matches_the_solver_and_writes_json():
    res = magcheck.target(CHOKE, "gaps[0].length", ("0.3 mm", "1.2 mm"),
                          "inductance>=3.2mH@6A", with_fe=False)
    again = magcheck.target(CHOKE, "gaps[0].length=0.3mm:1.2mm",
                            targets=["inductance>=3.2mH@6A"], with_fe=False)
    assert res.answers[0].hand.root == again.answers[0].hand.root
    doc = magcheck.to_json(res)
    assert doc["targets"][0]["target"] == "inductance>=3.2mH@6A"
    json.dumps(doc, allow_nan=False)
    with pytest.raises(CaseError, match="bracket"):
        magcheck.target(CHOKE, "gaps[0].length", "0.3mm", "inductance>=3mH")


def test_plot_is_written(tmp_path):
    import matplotlib

    matplotlib.use("Agg")
    from magcheck.compare.outputs.plots import save_target_figure

    res = magcheck.target(CHOKE, "gaps[0].length", ("0.3 mm", "1.2 mm"),
                          ["inductance>=3.2mH@6A", "peak_B<=1.4T"], with_fe=False)
    p = save_target_figure(res, tmp_path / "t.png")
    assert p.read_bytes()[:4] == b"\x89PNG"


# --------------------------------------------------------------- verify: a stored target
def test_verify_holds_the_fe_answer_of_a_stored_target(tmp_path):
    from magcheck.compare.studies.verify import item_text

    text = Path(_linear_choke(tmp_path)).read_text()
    # the FE's gap for 2.5 mH is 1.138 mm on this case (test above): one entry
    # stores it within 2 %, one a stale answer, one asks only for a range
    text += """
[[targets]]
key = "gaps[0].length=0.3mm:1.2mm"
target = "inductance=2.5mH@6A"
fe = "1.14 mm"
tolerance = "2%"

[[targets]]
key = "gaps[0].length=0.3mm:1.2mm"
target = "inductance=2.5mH@6A"
fe = "0.9 mm"
tolerance = "0.01 mm"

[[targets]]
key = "winding.turns=60:120"
target = ["inductance>=2mH@6A", "peak_B<=2T"]
"""
    p = tmp_path / "stored.toml"
    p.write_text(text)
    res = magcheck.verify(str(p), estimate_error=False)
    items = [it for it in res.outcomes[0].items if it.group == "target"]
    assert [it.verdict for it in items] == ["pass", "FAIL", "pass"]
    assert items[0].value == pytest.approx(1.138e-3, rel=0.02)
    assert "stored 0.9 mm" in item_text(items[1]) and items[1].judges == "design"
    # the FE's peak B (0.5 % area, the corners' crowding) reaches 2 T near 92
    # turns, where the hand's mean segment B stays below it up to 120
    assert "meets every target" in items[2].message and items[2].message.startswith("60 .. ")
    assert res.exit_code == 1  # a design item failed


def test_a_stored_target_is_read_like_the_command_line(tmp_path):
    base = Path(CHOKE).read_text()
    for entry, words in [
        ('key = "gaps[0].length=1mm:0.3mm"\ntarget = "inductance>=3mH"', "low end"),
        ('key = "gaps[0].length=0.3mm:1mm"\ntarget = "inductanse>=3mH"', "unknown quantity"),
        ('key = "gaps[0].length=0.3mm:1mm"\ntarget = "inductance>=3mH"\nfe = "1 mm"',
         "needs a tolerance"),
        ('key = "gaps[0].length=0.3mm:1mm"\ntarget = ["inductance>=3mH", "peak_B<=1T"]\n'
         'fe = "1 mm"\ntolerance = "1%"', "holds one target's FE answer"),
    ]:
        p = tmp_path / "bad.toml"
        p.write_text(base + "\n[[targets]]\n" + entry + "\n")
        with pytest.raises(CaseError) as exc:
            magcheck.load(str(p))
        assert str(exc.value).startswith("targets[0].") and words in str(exc.value)
