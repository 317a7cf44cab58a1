"""The Python API (``import magcheck``, magcheck.compare.front.api): the README's
script runs as written, every entry point takes a path, tables or a Case,
``Case.with_values`` validates like a case file, results have named access,
and the API gives the command line's own results."""
import dataclasses
import warnings
import json
import math
import re
import subprocess
import sys
import tomllib
from pathlib import Path

import pytest

import magcheck
from magcheck.compare.design.case import Case
from magcheck.compare.front import api
from magcheck.compare.front.cli import main

ROOT = Path(__file__).resolve().parents[1]
CHOKE = ROOT / "cases/demo_choke.toml"


def _readme_example() -> str:
    text = (ROOT / "README.md").read_text()
    section = text[text.index("## Python API"):]
    return re.search(r"```python\n(.*?)```", section, re.S).group(1)


def test_the_readme_script_runs(monkeypatch, capsys):
    code = _readme_example()
    assert len(code.strip().splitlines()) <= 16  # the short user script the README promises
    monkeypatch.chdir(ROOT)
    exec(compile(code, "README.md", "exec"), {})
    out = capsys.readouterr().out.strip().splitlines()
    gaps = [ln for ln in out if ln.startswith("gap ")]
    assert [ln.split(":")[0] for ln in gaps] == ["gap 0.6 mm", "gap 0.8 mm"]
    # a wider gap, a smaller inductance (both models)
    hand = [float(re.search(r"hand ([\d.]+) mH", ln).group(1)) for ln in gaps]
    fe = [float(re.search(r"FE ([\d.]+) mH", ln).group(1)) for ln in gaps]
    assert hand[1] < hand[0] and fe[1] < fe[0]
    # the sweep line: four incremental inductances in mH, falling with current
    values = json.loads(out[-1])
    assert len(values) == 4 and values == sorted(values, reverse=True)


def test_import_magcheck_is_lazy_and_lists_the_api():
    code = ("import sys, magcheck; assert not [m for m in sys.modules if 'compare' in m]; "
            "names = dir(magcheck); assert {'load', 'check', 'with_values'} - set(names) == "
            "{'with_values'}; assert magcheck.check is magcheck.compare.front.api.check; "
            "print(magcheck.__version__)")
    out = subprocess.run([sys.executable, "-c", code], check=True, cwd=ROOT,
                         capture_output=True, text=True).stdout
    assert re.fullmatch(r"\d+\.\d+\.\d+\S*\n", out)
    assert set(magcheck.__all__) == {"__version__", *api.__all__}
    with pytest.raises(AttributeError, match="no attribute 'nonesuch'"):
        magcheck.nonesuch  # noqa: B018


# ----------------------------------------------------------------- with_values
def test_with_values_sets_keys_like_the_case_file_and_chains():
    case = magcheck.load(CHOKE)
    c2 = case.with_values({"gaps[0].length": "0.8 mm", "winding.current": 7})
    assert c2.gaps[0].length == pytest.approx(0.8e-3) and c2.winding.current == 7.0
    assert case.gaps[0].length == pytest.approx(0.6e-3)  # the original is unchanged
    assert c2.sha256 == "" and c2.source == case.source  # not the file's content any more
    # a case with_values made supports with_values: the earlier change is kept
    c3 = c2.with_values({"winding.turns": 60, "hand.fringing": "flux-tube",
                         "materials.core.scale_H": 1.2})
    assert (c3.gaps[0].length, c3.winding.current, c3.winding.turns) == (c2.gaps[0].length, 7.0, 60)
    assert c3.hand.fringing == "flux-tube" and "scaled" in c3.material("core").description
    from magcheck.analytic.bh import scale_law

    law0, law3 = case.material("core").law, c3.material("core").law  # scaled as sweeps scale it
    assert law3.h_of_b(1.2) == pytest.approx(scale_law(law0, 1.2, 1.0).h_of_b(1.2), rel=1e-12)
    assert law3.h_of_b(1.2) > law0.h_of_b(1.2)  # harder: more H for the same B
    # a key whose table the file leaves out is created, then validated
    assert case.with_values({"fe.mesh_size": "1.5 mm"}).fe.mesh_size == pytest.approx(1.5e-3)
    # the same value given as a string with a unit or in SI gives the same case
    assert case.with_values({"gaps[0].length": 8e-4}) == case.with_values(
        {"gaps[0].length": "0.8 mm"})


@pytest.mark.parametrize("values, key, shown", [
    ({"gaps[0].length": "-1 mm"}, "gaps[0].length", "-1 mm"),
    ({"gaps[0].length": "0.8 A"}, "gaps[0].length", "0.8 A"),
    ({"gaps[4].length": "1 mm"}, "gaps[4].length", "1 mm"),
    ({"winding.curent": 3}, "winding.curent", "3"),
    ({"winding.turns": 2.5}, "winding.turns", "2.5"),
    ({"fe.mesh_sise": "1 mm"}, "fe.mesh_sise", "1 mm"),
    ({"materials.core.scale_B": -1}, "materials.core.scale_B", "-1"),
    ({"gaps length": 1}, "gaps length", "1"),
])
def test_with_values_refuses_what_the_case_file_refuses(values, key, shown):
    case = magcheck.load(CHOKE)
    with pytest.raises(magcheck.CaseError) as err:
        case.with_values(values)
    assert err.value.key == key and shown in str(err.value)


def test_with_values_needs_the_reader_s_tables():
    case = magcheck.load(CHOKE)
    with pytest.raises(magcheck.CaseError, match="changed .*dataclasses.replace"):
        dataclasses.replace(case, name="other").with_values({"winding.current": 2})
    bare = dataclasses.replace(case, origin=None)
    with pytest.raises(magcheck.CaseError, match="not read from a case file"):
        bare.with_values({"winding.current": 2})
    with pytest.raises(magcheck.CaseError, match="needs a case read by magcheck.load"):
        magcheck.sweep(bare, "winding.current=1A,2A", with_fe=False)


def test_studies_refuse_a_case_changed_by_replace():
    # the studies derive their cases from the tables the case was read from;
    # a case changed with dataclasses.replace since is no longer described by
    # them: sweeping it silently swept the file's 0.6 mm gap instead of 2 mm
    case = magcheck.load(CHOKE)
    gaps = (dataclasses.replace(case.gaps[0], length=2e-3),)
    changed = dataclasses.replace(case, gaps=gaps)
    for study in (lambda c: magcheck.sweep(c, "winding.current=1A,2A", with_fe=False),
                  lambda c: magcheck.tolerance(c, samples=2, fe_samples=0),
                  lambda c: magcheck.verify(c, estimate_error=False)):
        with pytest.raises(magcheck.CaseError, match="changed with dataclasses.replace"), \
                pytest.warns(magcheck.CaseWarning):
            study(changed)


def test_a_case_changed_by_replace_is_used_with_a_warning():
    # hand, fe and check take the Case as it is, but say that nothing validated it
    # (turns = -3 would otherwise give a result without a word)
    case = magcheck.load(CHOKE)
    changed = dataclasses.replace(case, winding=dataclasses.replace(case.winding, turns=-3))
    with pytest.warns(magcheck.CaseWarning, match="no check validated its values"):
        magcheck.hand(changed)
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # a case as read, or from with_values: no warning
        magcheck.hand(case)
        magcheck.hand(case.with_values({"winding.turns": 40}))


# -------------------------------------------------------- path, tables or Case
def test_every_entry_point_takes_a_path_tables_or_a_case():
    data = tomllib.loads(CHOKE.read_text())
    case = magcheck.load(CHOKE)
    ref = magcheck.hand(CHOKE).values()
    for source in (str(CHOKE), data, case, magcheck.load(data)):
        assert magcheck.hand(source).values() == ref
    assert magcheck.load(case) is case
    a = magcheck.sweep(case, "winding.current=1A,4A", with_fe=False)
    b = magcheck.sweep(CHOKE, "winding.current=1A,4A", with_fe=False)
    c = magcheck.sweep(data, "winding.current=1A,4A", with_fe=False)
    assert a["hand_inductance"] == b["hand_inductance"] == c["hand_inductance"]
    assert a["winding.current"] == [1.0, 4.0]
    # a varied case sweeps from its own tables
    wide = magcheck.sweep(case.with_values({"gaps[0].length": "0.8 mm"}), "winding.current=1A,4A",
                          with_fe=False)
    assert wide["hand_inductance"][0] < a["hand_inductance"][0]
    with pytest.raises(TypeError):
        magcheck.load(42)


def test_bad_input_raises_case_error_naming_the_option():
    data = tomllib.loads(CHOKE.read_text())
    data["winding"]["turns"] = 0
    with pytest.raises(magcheck.CaseError, match="winding.turns"):
        magcheck.load(data)
    with pytest.raises(magcheck.CaseError, match="^vary: "):
        magcheck.sweep(CHOKE)  # no --vary and no [sweep] in the case
    with pytest.raises(magcheck.CaseError, match="^fringing = 'flux_tube'.*flux-tube"):
        magcheck.hand(CHOKE, fringing="flux_tube")
    with pytest.raises(magcheck.CaseError, match="^planar: .*axisymmetric"):
        magcheck.hand(ROOT / "cases/demo_pot_core_choke.toml", planar=True)
    with pytest.raises(magcheck.CaseError, match="^samples = 0"):
        magcheck.tolerance(CHOKE, samples=0)
    with pytest.raises(TypeError):
        magcheck.to_json(42)
    with pytest.raises(TypeError, match="a hand result has no field"):
        magcheck.write_vtu(magcheck.hand(CHOKE), "x.vtu")


def test_study_errors_name_the_parameters_as_the_api_calls_them():
    # the API's messages name its own parameters, not the command line's options
    case = magcheck.load(CHOKE)
    with pytest.raises(magcheck.CaseError, match="^predictor = 'bogus': must be one of") as err:
        magcheck.sweep(case, "winding.current=1A,2A", with_fe=False, predictor="bogus")
    assert "--" not in str(err.value)
    with pytest.raises(magcheck.CaseError, match="^vary = .*a key is varied twice"):
        magcheck.sweep(case, "winding.current=1A,2A", "winding.current=3A", with_fe=False)
    with pytest.raises(magcheck.CaseError,
                       match=r"^vary gaps\[9\].length=1mm,2mm: 'gaps\[9\]' is not in the case"):
        magcheck.sweep(case, "gaps[9].length=1mm,2mm", with_fe=False)
    with pytest.raises(magcheck.CaseError, match=r"^fe_samples = 5: must lie in \[0, 2\]"):
        magcheck.tolerance(ROOT / "cases/demo_choke_margins.toml", samples=2, fe_samples=5)


def test_study_errors_name_the_options_on_the_command_line(capsys):
    assert main(["sweep", str(CHOKE), "--vary", "winding.current=1A,2A", "--vary",
                 "winding.current=3A", "--hand-only"]) == 2
    err = capsys.readouterr().err
    assert err.startswith("magcheck: bad input: --vary = ") and "varied twice" in err
    assert main(["sweep", str(CHOKE), "--vary", "winding.current=1A,2A", "--block", "0",
                 "--hand-only"]) == 2
    assert capsys.readouterr().err.startswith("magcheck: bad input: --block = 0: ")


def test_with_values_on_a_built_in_material_says_what_to_write(capsys):
    # demo_choke's core is the built-in curve 'demo-sisteel': it has no mu_r to set
    case = magcheck.load(CHOKE)
    with pytest.raises(magcheck.CaseError) as err:
        case.with_values({"materials.core.mu_r": 2000})
    text = str(err.value)
    assert err.value.key == "materials.core.mu_r"
    assert "materials.core is the built-in 'demo-sisteel'" in text
    assert "materials.core = {mu_r = ...}" in text and "scale_H" in text
    assert "parent is not a table" not in text
    # what it says to do works: the table form takes mu_r, and then it varies
    linear = case.with_values({"materials.core": {"mu_r": 2000}})
    assert linear.with_values({"materials.core.mu_r": 1000}).material("core").kind == "mu_r"
    # a curve given as a table (H, B) has no mu_r either: same advice, not "unknown key H"
    data = tomllib.loads(CHOKE.read_text())
    data["materials"]["core"] = {"H": [0, 100, 1000, 5000], "B": [0, 1.0, 1.5, 1.7]}
    with pytest.raises(magcheck.CaseError, match=r"materials.core is a B-H curve \(H, B\), which "
                                                 r"has no mu_r: give materials.core = \{mu_r"):
        magcheck.load(data, base_dir=CHOKE.parent).with_values({"materials.core.mu_r": 2000})
    assert main(["sweep", str(CHOKE), "--vary", "materials.core.mu_r=1000,2000",
                 "--hand-only"]) == 2
    err_line = capsys.readouterr().err
    assert err_line.count("\n") == 1 and "materials.core is the built-in 'demo-sisteel'" in err_line


@pytest.mark.parametrize("values, key", [
    ({"gaps[0].length": 0.8}, "gaps[0].length"),      # 0.8 m: longer than the 46 mm limb
    ({"gaps[0].position": 2}, "gaps[0].position"),    # 2 m along a 46 mm limb
    ({"winding.thickness": 12}, "winding.thickness"),  # a 12 m coil build
])
def test_a_bare_length_that_fails_says_a_bare_number_is_metres(values, key):
    case = magcheck.load(CHOKE)
    with pytest.raises(magcheck.CaseError) as err:
        case.with_values(values)
    assert err.value.key == key
    v = next(iter(values.values()))
    assert f'a bare number is metres: write "{v:g} mm"' in str(err.value)
    # with a unit, the same error has no such hint
    with pytest.raises(magcheck.CaseError) as err:
        case.with_values({key: f"{v} m"})
    assert "bare number" not in str(err.value)


def test_a_sweep_spec_with_units_gets_no_bare_number_hint(capsys):
    assert main(["sweep", str(CHOKE), "--vary", "gaps[0].length=500mm,800mm",
                 "--hand-only"]) == 2
    err = capsys.readouterr().err
    assert "gap not shorter than its limb" in err and "bare number" not in err
    assert main(["sweep", str(CHOKE), "--vary", "gaps[0].length=0.5,0.8", "--hand-only"]) == 2
    assert 'a bare number is metres: write "0.5 mm"' in capsys.readouterr().err


def test_api_warnings_point_at_the_user_s_line():
    # a warning is attributed to the line that called magcheck, not to one inside it
    data = tomllib.loads(CHOKE.read_text())
    data["core"]["depth"] = 20  # a bare number: 20 m, implausible
    case = magcheck.load(CHOKE)
    changed = dataclasses.replace(case, name="other")
    with warnings.catch_warnings(record=True) as rec:
        warnings.simplefilter("always")
        magcheck.load(data, base_dir=CHOKE.parent)
        case.with_values({"core.depth": 20})
        magcheck.hand(changed)
    assert len(rec) == 3, [str(w.message) for w in rec]
    assert {Path(w.filename).resolve() for w in rec} == {Path(__file__).resolve()}
    assert "core.depth" in str(rec[0].message) and "dataclasses.replace" in str(rec[2].message)


def test_write_vtu_and_report_refuse_an_unwritable_path_before_solving(tmp_path, monkeypatch):
    blocker = tmp_path / "file.txt"
    blocker.write_text("a file, not a folder")

    def no_solve(*a, **k):
        raise AssertionError("solved before the output path was checked")

    monkeypatch.setattr(api, "fe", no_solve)
    monkeypatch.setattr(api, "check", no_solve)
    with pytest.raises(magcheck.CaseError) as err:
        magcheck.write_vtu(CHOKE, blocker / "x.vtu")
    assert str(err.value).startswith(f"path {blocker / 'x.vtu'}: ")
    assert "is a file, not a folder" in str(err.value) and "\n" not in str(err.value)
    with pytest.raises(magcheck.CaseError, match=f"^folder {re.escape(str(blocker))}: "
                                                 "is a file, not a folder"):
        magcheck.report(CHOKE, blocker)
    if Path("/proc/self").is_dir():  # a folder no file can be made in (even as root)
        with pytest.raises(magcheck.CaseError, match="^path /proc/x.vtu: cannot be written"):
            magcheck.write_vtu(CHOKE, "/proc/x.vtu")
        with pytest.raises(magcheck.CaseError, match="^folder /proc/r: cannot be written"):
            magcheck.report(CHOKE, "/proc/r")


def test_hand_named_access():
    h = magcheck.hand(CHOKE)
    assert h["inductance"] == h.inductance and h["gap_B"] == h.gap_B
    assert h["flux_linkage:main"] == h.flux_linkage  # the one winding's, by name
    assert magcheck.to_json(h)["inductance"] == h.inductance
    with pytest.raises(KeyError, match="'L' is not a hand quantity; known: gap_B, .*inductance"):
        h["L"]


def test_tolerance_takes_a_case_and_names_its_figures():
    case = magcheck.load(ROOT / "cases/demo_choke_margins.toml")
    res = magcheck.tolerance(case, samples=8, seed=1, fe_samples=0)
    # the case's own figures, then one per inductance window at its own current
    assert res.keys() == ["inductance", "inductance_secant@6A", "peak_B", "saturation_current"]
    assert res["inductance"].shape == (8,) and (res["inductance"] > 0).all()
    # the gap's tolerance spreads the inductance: a wider gap, a smaller L
    gaps = [s.settings["gaps[0].length"] for s in res.samples]
    assert len(set(gaps)) == 8
    with pytest.raises(KeyError, match="known: inductance, inductance_secant@6A, peak_B, "
                                      "saturation_current"):
        res["L"]
    # a case whose curve with_values scaled: the scale tolerance (sigma 5 %) is drawn
    # round its own nominal 1.2, not round the file's 1
    hard = magcheck.tolerance(case.with_values({"materials.core.scale_H": 1.2}), samples=8,
                              seed=1, fe_samples=0)
    drawn = [s.settings["materials.core.scale_H"] for s in hard.samples]
    assert 1.1 < sum(drawn) / 8 < 1.3
    assert (hard["inductance"] < res["inductance"]).mean() > 0.5  # harder core, less L mostly


# ----------------------------------------------------------- one check, twice
@pytest.fixture(scope="module")
def cli_run(tmp_path_factory):
    """One ``magcheck check --json --vtu`` run, and the CheckResult it printed."""
    import magcheck.compare.front.commands.check as cmd

    out = tmp_path_factory.mktemp("cli")
    seen = []
    real = cmd.run_check

    def spy(*a, **k):
        seen.append(real(*a, **k))
        return seen[-1]

    cmd.run_check = spy
    try:
        code = main(["check", str(CHOKE), "--no-error-estimate", "--json", str(out / "c.json"),
                     "--vtu", str(out / "c.vtu")])
    finally:
        cmd.run_check = real
    assert code == 0 and len(seen) == 1
    return seen[0], out


def test_to_dict_is_the_cli_json(cli_run):
    res, out = cli_run
    cli = json.loads((out / "c.json").read_text())
    assert res.to_dict() == cli  # the same run: the whole document, key for key
    assert magcheck.to_json(res) == cli


def test_check_named_access(cli_run):
    res, _ = cli_run
    row = res["inductance"]
    assert row is next(r for r in res.rows if r.key == "inductance")
    doc = res.to_dict()
    entry = next(e for e in doc["comparison"] if e["quantity"] == "inductance")
    assert (row.hand, row.fe, row.diff_pct, row.verdict) == (
        entry["hand"], entry["fe"], entry["difference_pct"], entry["verdict"])
    assert row.fe_3d == entry["fe_depth_corrected"]
    assert math.isnan(row.uncertainty) and entry["fe_uncertainty"] is None  # one mesh
    assert row.diff_pct == pytest.approx(100 * (row.hand - row.fe) / abs(row.fe))
    assert (res.design_passed, res.agreement_passed) == (doc["design_passed"],
                                                        doc["agreement_passed"])
    assert "gap_B" in res and res.keys() == [r.key for r in res.rows]
    with pytest.raises(KeyError, match="'L' is not a row of this check; known: gap_B, .*inductance"):
        res["L"]


def test_to_dataframe_needs_pandas(cli_run, monkeypatch):
    res, _ = cli_run
    try:
        import pandas  # noqa: F401
    except ImportError:
        pass
    else:
        df = res.to_dataframe()
        assert df.loc["inductance", "fe"] == res["inductance"].fe
    monkeypatch.setitem(sys.modules, "pandas", None)  # as if not installed
    with pytest.raises(ImportError, match="pip install pandas"):
        res.to_dataframe()


def test_write_vtu_and_report_from_the_result(cli_run, tmp_path):
    res, out = cli_run
    assert magcheck.write_vtu(res, tmp_path / "a.vtu") == tmp_path / "a.vtu"
    # the API writes the file the CLI wrote for the same result
    assert (tmp_path / "a.vtu").read_bytes() == (out / "c.vtu").read_bytes()
    page = magcheck.report(res, tmp_path / "rep")
    assert page == tmp_path / "rep" / "index.html"
    assert "demo-choke" in page.read_text() and (tmp_path / "rep" / "flux.png").is_file()


def test_verify_takes_a_case(tmp_path):
    case = magcheck.load(CHOKE).with_values({"fe.order": 1})
    res = magcheck.verify(case, estimate_error=False)
    out = res["demo-choke"]
    assert out.status == "ok" and out["agreement:inductance"].unit == "%"
    assert res.exit_code == 0 and magcheck.to_json(res)["cases"][0]["name"] == "demo-choke"
    with pytest.raises(KeyError, match="known: demo-choke"):
        res["other"]


def test_to_json_of_a_sweep_and_a_tolerance_study_is_the_cli_json(tmp_path):
    # the documents of `magcheck sweep --json` and `magcheck tolerance --json`
    # (run time and executor aside: they describe the run, not the result)
    def same(doc):
        return {k: v for k, v in doc.items() if k not in ("seconds", "executor", "workers")}

    margins = ROOT / "cases/demo_choke_margins.toml"
    assert main(["sweep", str(margins), "--hand-only", "--json", str(tmp_path / "s.json")]) in (0, 1)
    cli = json.loads((tmp_path / "s.json").read_text())
    sw = magcheck.sweep(str(margins), with_fe=False)   # the case's own [sweep] and its drops
    assert same(magcheck.to_json(sw)) == same(cli)
    assert cli["saturation_current"]  # the saturation table is in both
    assert main(["tolerance", str(margins), "--samples", "4", "--seed", "3", "--fe-samples", "0",
                 "--json", str(tmp_path / "t.json")]) == 0
    cli = json.loads((tmp_path / "t.json").read_text())
    tol = magcheck.tolerance(str(margins), samples=4, seed=3, fe_samples=0)
    assert same(magcheck.to_json(tol)) == same(cli)
    assert cli["samples"] == 4 and len(cli["passed"]) == 4


def test_python_m_magcheck_is_the_command():
    run = subprocess.run([sys.executable, "-m", "magcheck", "hand", str(CHOKE)], cwd=ROOT,
                         capture_output=True, text=True)
    assert run.returncode == 0 and "demo-choke" in run.stdout
    bad = subprocess.run([sys.executable, "-m", "magcheck", "hand", "nope.toml"], cwd=ROOT,
                         capture_output=True, text=True)
    assert bad.returncode == 2 and bad.stderr.count("\n") == 1 and "nope.toml" in bad.stderr
