"""What a new user hit (issue: ampere-turns taken per turn, empty or
unwritable outputs, over-wide tolerances, one-line errors naming the key):
each refusal is exit 2, one line naming the key or option and the value,
and nothing is written."""

from __future__ import annotations

import tomllib
from pathlib import Path

import pytest

from magcheck.compare.reading.casefile import case_from_dict
from magcheck.compare.front.cli import main
from magcheck.compare.errors import CaseError
from magcheck.compare.design.units import UnitError, parse_quantity

CASES = Path(__file__).resolve().parents[1] / "cases"
CHOKE = str(CASES / "demo_choke.toml")


def demo_dict() -> dict:
    return tomllib.loads((CASES / "demo_choke.toml").read_text())


def one_line(capsys, *words: str, start: str = "magcheck: bad input: ") -> str:
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and err.startswith(start), err
    assert "Traceback" not in err
    for w in words:
        assert w in err, err
    return err


# ------------------------------------------------------------ ampere-turns
@pytest.mark.parametrize("text", ["480 At", "480At", "1.2 kAt", "480 At^1"])
def test_ampere_turns_are_not_a_current_per_turn(text):
    with pytest.raises(UnitError, match="ampere-turns"):
        parse_quantity(text, "current")


def test_ampere_turns_stay_welcome_in_a_field_strength():
    assert parse_quantity("800 At/m", "field strength") == pytest.approx(800.0)
    assert parse_quantity("12 A", "current") == 12.0


def test_a_winding_current_in_ampere_turns_is_refused_naming_the_key(tmp_path, capsys):
    """480 At on 80 turns read as 480 A per turn was 80x the MMF, exit 0."""
    text = Path(CHOKE).read_text()
    assert 'current = "6 A"' in text or "current = 6" in text
    d = demo_dict()
    d["winding"]["current"] = "480 At"
    with pytest.raises(CaseError) as exc:
        case_from_dict(d, base_dir=CASES)
    assert exc.value.key == "winding.current"
    src = tmp_path / "at.toml"
    src.write_text(text.replace('current = "6 A"', 'current = "480 At"'))
    assert main(["hand", str(src), "--json", str(tmp_path / "h.json")]) == 2
    one_line(capsys, "winding.current = '480 At'", "ampere-turns")
    assert not (tmp_path / "h.json").exists()


def test_a_swept_current_in_ampere_turns_is_refused(capsys):
    assert main(["sweep", CHOKE, "--vary", "winding.current=100At:200At:2", "--hand-only"]) == 2
    one_line(capsys, "winding.current", "ampere-turns")


# ------------------------------------------------------------ tolerances
def _margins_dict() -> dict:
    return tomllib.loads((CASES / "demo_choke_margins.toml").read_text())


@pytest.mark.parametrize("index, changes, named", [
    (0, {"minus": "1 mm"}, "tolerances[0].minus = '1 mm'"),          # 0.6 mm gap
    (0, {"minus": "500 %", "plus": "5 %"}, "tolerances[0].minus = '500 %'"),
    (0, {"minus": "100 %", "plus": "5 %"}, "tolerances[0].minus = '100 %'"),
    (2, {"sigma": "5 mm"}, "tolerances[2].sigma = '5 mm'"),            # 12 mm limb, 3 sigma = 15 mm
    (1, {"sigma": "5 %", "limit": "120 %"}, "tolerances[1].limit = '120 %'"),
])
def test_a_tolerance_wider_than_its_nominal_is_refused_at_load(index, changes, named, tmp_path,
                                                               capsys):
    d = _margins_dict()
    d["tolerances"][index].update(changes)
    with pytest.raises(CaseError) as exc:
        case_from_dict(d, base_dir=CASES)
    assert str(exc.value).startswith(named), exc.value
    assert "nominal" in str(exc.value)


def test_a_tolerance_inside_its_nominal_still_loads():
    d = _margins_dict()
    d["tolerances"][0].update({"minus": "0.59 mm"})  # 0.6 mm gap: 10 um left
    case = case_from_dict(d, base_dir=CASES)
    assert case.tolerances[0].minus == pytest.approx(0.59e-3)


def test_the_tolerance_command_refuses_it_before_sampling(tmp_path, capsys):
    text = (CASES / "demo_choke_margins.toml").read_text()
    assert 'minus = "0.05 mm"' in text
    src = tmp_path / "wide.toml"
    src.write_text(text.replace('minus = "0.05 mm"', 'minus = "1 mm"', 1))
    out = tmp_path / "t.json"
    assert main(["tolerance", str(src), "--json", str(out)]) == 2
    one_line(capsys, "tolerances[0].minus = '1 mm'", "0.6 mm", "gaps[0].length")
    assert not out.exists()


# ------------------------------------------------------------ the command line
@pytest.mark.parametrize("argv, words", [
    (["tolerance", CHOKE, "--seed", "abc"], ["--seed", "'abc'", "(magcheck tolerance --help)"]),
    (["hand", CHOKE, "--bogus"], ["unrecognized arguments: --bogus", "(magcheck hand --help)"]),
    (["sweep", CHOKE, "--inductance", "bogus"], ["--inductance", "'bogus'"]),
    (["hand", CHOKE, "--json"], ["--json: expected one argument"]),
    (["materials", "--plot"], ["--plot: expected one argument"]),
    (["check"], ["required: case", "(magcheck check --help)"]),
    (["bogus"], ["invalid choice: 'bogus'", "(magcheck --help)"]),
    (["hand", CHOKE, "--fringing", "bogus"], ["--fringing = 'bogus'", "must be one of"]),
    (["hand", CHOKE, "--fringing", "aera"], ["--fringing = 'aera'", "did you mean 'area'"]),
    (["hand", str(CASES / "demo_pot_core_choke.toml"), "--planar"],
     ["--planar: ", "axisymmetric"]),
])
def test_a_usage_error_is_one_line_naming_the_option(argv, words, capsys):
    """3-8 lines of usage before; now one line, the option and the value, exit 2."""
    assert main(argv) == 2
    err = one_line(capsys, *words)
    assert "usage:" not in err and ".fringing" not in err


def test_help_still_prints_the_usage(capsys):
    assert main(["hand", "--help"]) == 0
    assert "usage: magcheck hand" in capsys.readouterr().out


# ------------------------------------------------------------ case-file keys
def _refusal(d: dict) -> CaseError:
    with pytest.raises(CaseError) as exc:
        case_from_dict(d, base_dir=CASES)
    return exc.value


def test_a_key_with_a_newline_is_printed_like_a_value_on_one_line(tmp_path, capsys):
    text = Path(CHOKE).read_text().replace("[core]\n", '[core]\n"a\\nb\\u202e" = 1\n', 1)
    src = tmp_path / "k.toml"
    src.write_text(text)
    assert main(["hand", str(src)]) == 2
    err = one_line(capsys, "core.a\\nb\\u202e = 1: unknown key")
    assert "\u202e" not in err


@pytest.mark.parametrize("entry, key, words", [
    ({"H": [0, 100, 1000], "B": [0, 1, 1.5], "H_unit": "Oersted"}, "materials.core.H_unit",
     "must be one of A/m, kA/m, Oe"),
    ({"H": [0, 100, 1000], "B": [0, 1, 1.5], "B_unit": "Tesla"}, "materials.core.B_unit",
     "must be one of T, mT, G, kG"),
    ({"csv": "."}, "materials.core.csv", "is a folder"),
])
def test_bh_input_errors_name_the_case_key(entry, key, words):
    d = demo_dict()
    d["materials"]["core"] = entry
    exc = _refusal(d)
    assert exc.key == key and words in exc.reason, exc
    assert "[" not in exc.reason  # no Python list


def test_a_missing_table_is_not_taken_for_a_misspelt_valid_one():
    d = tomllib.loads((CASES / "demo_choke_margins.toml").read_text())
    assert "margins" in d
    del d["materials"]
    exc = _refusal(d)
    assert str(exc) == "materials: missing key", exc
    d = demo_dict()
    d["materails"] = d.pop("materials")
    assert "misspelling of 'materials'" in str(_refusal(d))


# ------------------------------------------------------------ [fe] tol
@pytest.mark.parametrize("tol", [1e-14, 1e-11, 0.0])
def test_an_fe_tolerance_the_solver_cannot_reach_is_refused(tol):
    """tol = 1e-14 took 50 Newton steps (residual stalled at 4.4e-14) and
    then failed; refused at load, naming fe.tol."""
    d = demo_dict()
    d.setdefault("fe", {})["tol"] = tol
    exc = _refusal(d)
    assert exc.key == "fe.tol", exc


def test_a_reachable_fe_tolerance_loads():
    d = demo_dict()
    d.setdefault("fe", {})["tol"] = 1e-10
    assert case_from_dict(d, base_dir=CASES).fe.tol == 1e-10


@pytest.mark.slow
def test_a_solve_that_does_not_converge_says_so_in_one_line(tmp_path):
    """Without -v: one line 'magcheck: solve failed: ...' (was a logging line
    and the error), exit 3, nothing written."""
    import os
    import subprocess
    import sys

    out = tmp_path / "c.json"
    code = ("import functools, sys, magcheck.fem2d.solver as s, magcheck.compare.models.fe as fe; "
            "fe.solve = functools.partial(s.solve, max_iter=1); "
            "from magcheck.compare.front.cli import main; "
            f"sys.exit(main(['check', {CHOKE!r}, '--no-error-estimate', '--json', {str(out)!r}]))")
    root = str(Path(__file__).resolve().parents[1])
    env = dict(os.environ, PYTHONPATH=root + os.pathsep + os.environ.get("PYTHONPATH", ""))
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          timeout=300, cwd=root, env=env)
    assert proc.returncode == 3, proc.stderr
    assert proc.stderr.count("\n") == 1, proc.stderr
    assert proc.stderr.startswith("magcheck: solve failed: ") and "not converged" in proc.stderr
    assert not out.exists()


# ------------------------------------------------------------ plausibility
def _warnings_of(d: dict) -> list[str]:
    import warnings

    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        case_from_dict(d, base_dir=CASES)
    return [str(w.message) for w in caught]


def test_every_core_dimension_is_checked_for_plausibility_in_the_users_units():
    relay = tomllib.loads((CASES / "demo_clapper_relay.toml").read_text())
    relay["core"]["armature_thickness"] = "0.001 mm"
    msgs = _warnings_of(relay)
    assert any(m.startswith("core.armature_thickness = '0.001 mm': outside the plausible")
               for m in msgs), msgs
    d = demo_dict()
    d["core"]["limb_width"] = "12 mm"  # plausible: no warning
    assert _warnings_of(d) == []
    d["core"]["outer_width"] = "60 km"
    msgs = _warnings_of(d)
    assert any(m.startswith("core.outer_width = '60 km'") for m in msgs), msgs
    d = demo_dict()
    d["winding"]["thickness"] = "0.001 mm"
    assert [m.split(":")[0] for m in _warnings_of(d)] == ["winding.thickness = '0.001 mm'"]
    for f in sorted(CASES.glob("*.toml")):  # the bundled cases are all plausible
        assert _warnings_of(tomllib.loads(f.read_text())) == [], f


def test_the_mesh_guard_names_what_drives_the_count(tmp_path, capsys):
    """An armature of 0.001 mm was blamed on 'fe.mesh_size (default)' with a
    count in the billions and nothing else: the line now names the region
    whose side sets the default element size, and the warning the key."""
    text = (CASES / "demo_clapper_relay.toml").read_text()
    assert 'armature_thickness = "5 mm"' in text
    src = tmp_path / "thin.toml"
    src.write_text(text.replace('armature_thickness = "5 mm"', 'armature_thickness = "0.001 mm"'))
    assert main(["check", str(src), "--json", str(tmp_path / "c.json")]) == 2
    err = capsys.readouterr().err.splitlines()
    assert len(err) == 2 and "Traceback" not in "".join(err), err
    assert err[0].startswith("magcheck: warning: core.armature_thickness = '0.001 mm'")
    assert err[1].startswith("magcheck: bad input: fe.mesh_size (default): ")
    assert "region 'armature''s smallest side (0.001 mm)" in err[1], err[1]
    assert not (tmp_path / "c.json").exists()


@pytest.mark.parametrize("turns, words", [(1e30, "must be at most 1,000,000"),
                                          (80.5, "must be a whole number"),
                                          (0, "must be at least 1"),
                                          ("80", "must be a whole number")])
def test_turns_are_a_whole_number_in_a_plausible_range(turns, words):
    d = demo_dict()
    d["winding"]["turns"] = turns
    exc = _refusal(d)
    assert exc.key == "winding.turns" and words in exc.reason, exc


def test_a_bh_range_warning_is_said_once_per_material(capsys):
    """A hand-only current sweep of the pot core drives the ferrite past its
    last measured point at many currents and branches: 62 warning lines
    before, one now (per material)."""
    argv = ["sweep", str(CASES / "demo_pot_core_choke.toml"), "--hand-only",
            "--vary", "winding.current=0.5A:40A:40"]
    assert main(argv) in (0, 1)
    err = [line for line in capsys.readouterr().err.splitlines()
           if "exceeds the last measured point" in line]
    assert len(err) == 1, err
    assert "material 'demo-ferrite'" in err[0] and "once per material" in err[0]
    assert main(argv) in (0, 1)  # a second run in the same process says it again
    assert sum("last measured" in line for line in capsys.readouterr().err.splitlines()) == 1


# ------------------------------------------------------------ notation
def test_key_paths_are_written_with_brackets_and_values_in_the_users_units(capsys):
    assert main(["sweep", CHOKE, "--hand-only", "--vary", "gaps[3].length=1mm:2mm:2"]) == 2
    err = one_line(capsys, "--vary gaps[3].length=1mm:2mm:2: 'gaps[3]' is not in the case file")
    assert "gaps.3" not in err and "0.001" not in err
    assert main(["sweep", CHOKE, "--hand-only", "--vary", "gaps[0].length=0.1mm:20mm:2"]) == 2
    err = one_line(capsys, "gaps[0].length = '20 mm'", "(at the point gaps[0].length = 20 mm)")
    assert "0.02" not in err


def test_a_chord_slope_just_below_mu0_is_not_printed_as_1_mu0():
    from magcheck.analytic.bh import BHDataError, mu_0
    from magcheck.analytic.materials import bh_from_table

    with pytest.raises(BHDataError) as exc:
        bh_from_table([0, 1000, 2000, 3000], [0, 1.0, 1.2, 1.2 + 1000 * mu_0 * 0.9999999])
    assert "0.9999999 x mu0, below mu0" in str(exc.value), exc.value


# ------------------------------------------------------------ case names in outputs
HOSTILE = "<script>alert(1)</script> \u202echoke\x1b[31m *B* [x](y) | a\nb"


def test_control_and_bidi_characters_are_dropped_from_the_case_name():
    d = demo_dict()
    d["case"]["name"] = HOSTILE
    d["case"]["description"] = "rev \u202eB\u200f\x07"
    case = case_from_dict(d, base_dir=CASES)
    assert "\u202e" not in case.name and "\x1b" not in case.name and "\n" not in case.name
    assert case.name == "<script>alert(1)</script> choke[31m *B* [x](y) | a b"
    assert case.description == "rev B"


def test_a_case_name_is_literal_markdown():
    from magcheck.compare.outputs.serialize import markdown_text

    text = markdown_text("<script>alert(1)</script> *B* [x](y) | `c` # h")
    assert "<script>" not in text and "*B*" not in text and "[x](y)" not in text
    assert "|" not in text.replace("\\|", "")
    # only escapes added: Markdown shows each escaped character as itself
    assert text.replace("\\", "") == "<script>alert(1)</script> *B* [x](y) | `c` # h"


# ------------------------------------------------------------ one margin, two methods
def test_a_swept_saturation_current_says_how_it_was_found(tmp_path, capsys):
    """check root-finds the hand saturation current, a sweep reads it off the
    curve between its points: the sweep's row says so, and its value differs
    from the root by no more than the linear interpolation's error."""
    import json

    from magcheck.compare.reading.casefile import load_case
    from magcheck.compare.judge.margins import SWEPT_SATURATION_NOTE, hand_saturation_current

    src = CASES / "demo_choke_margins.toml"
    out = tmp_path / "s.json"
    assert main(["sweep", str(src), "--hand-only", "--vary", "winding.current=1A:12A:12",
                 "--json", str(out)]) in (0, 1)
    assert "finds the hand value by root-finding" in capsys.readouterr().out
    rows = [m for m in json.loads(out.read_text())["margins"]
            if m["key"].startswith("saturation_current@")]
    assert rows and all(m["note"] == SWEPT_SATURATION_NOTE for m in rows), rows
    case = load_case(src)
    for m in rows:
        drop = float(m["key"].split("@")[1].rstrip("%")) / 100.0
        root = hand_saturation_current(case, drop, kind="incremental")
        # 1 A steps on a curve bending over a few A: the chord misses the root
        # by well under half a step (0.5 A): common practice, no source
        assert abs(m["value"] - root) < 0.5, (m["value"], root)


# ------------------------------------------------------------ drive keys
def test_a_voltage_driven_windings_voltage_and_frequency_are_sweep_keys(tmp_path):
    """Magnetizing current against voltage, a transformer designer's first
    plot (--vary windings[0].voltage=100V,230V exited 2). Each point's hand
    flux linkage is the drive's peak, and the current rises with the voltage
    and falls with the frequency."""
    import json
    import math

    from magcheck.compare.design.keys import key_dimension

    assert key_dimension("windings[0].voltage") == "voltage"
    assert key_dimension("winding.frequency") == "frequency"
    src = str(CASES / "demo_ei_transformer.toml")
    runs = {}
    for spec in ("windings[0].voltage=100V,230V", "windings[0].frequency=50Hz,60Hz"):
        out = tmp_path / "s.json"
        assert main(["sweep", src, "--hand-only", "--vary", spec, "--json", str(out)]) in (0, 1)
        runs[spec.split("=")[0]] = json.loads(out.read_text())["points"]
    volts = runs["windings[0].voltage"]
    freqs = runs["windings[0].frequency"]
    assert [p["windings[0].voltage"] for p in volts] == [100.0, 230.0]
    assert volts[0]["winding.current"] < volts[1]["winding.current"]
    assert freqs[0]["winding.current"] > freqs[1]["winding.current"]
    d = tomllib.loads(Path(src).read_text())
    v0, f0 = (parse_quantity(d["windings"][0][k], dim) for k, dim in
              (("voltage", "voltage"), ("frequency", "frequency")))
    for p, v, f in ((volts[0], 100.0, f0), (volts[1], 230.0, f0), (freqs[0], v0, 50.0),
                    (freqs[1], v0, 60.0)):
        # Source: Faraday's law for a sinusoidal drive, lambda_pk = sqrt(2) V_rms / (2 pi f)
        # (winding resistance neglected, as the drive does). Tolerance 1e-4: the
        # drive's brentq inversion stops at rtol 1e-10 in current; the JSON
        # holds the hand solve at that current (Newton to its own tolerance).
        assert p["hand_flux_linkage"] == pytest.approx(math.sqrt(2) * v / (2 * math.pi * f),
                                                       rel=1e-4)


def test_a_drawn_outlines_crossing_is_given_in_the_drawings_units():
    """The drawing is in mm; the crossing edges' points were printed in metres."""
    import sys

    sys.path.insert(0, str(Path(__file__).parent))
    from test_drawn import _drawn

    d = _drawn()
    assert d["shapes"]["units"] == "mm"
    d["regions"][0]["points"] = [[0, 0], [60, 70], [60, 0], [0, 70]]
    exc = _refusal(d)
    assert exc.key == "regions[0].points"
    assert "(0.0, 0.0) and (60.0, 0.0)" in str(exc) and "drawing's units" in str(exc), exc
    assert "0.06" not in str(exc)


def test_a_current_density_is_shown_in_a_per_mm2():
    """The case says "3 A/mm^2"; tables and JUnit said 3 MA/m^2."""
    from magcheck.compare.design.units import format_si

    assert format_si(parse_quantity("3.2 A/mm^2", "current density"), "A/m^2") == "3.2 A/mm^2"
    assert format_si(2.4e6, "A/m^2") == "2.4 A/mm^2"


@pytest.mark.slow
def test_a_worker_process_warning_is_said_once_in_one_line(tmp_path):
    """With --workers 2 each worker printed Python's two-line warning (source
    path and line) for every solve past the B-H data; now the parent says it
    in its own form, once per material."""
    import os
    import subprocess
    import sys

    root = str(Path(__file__).resolve().parents[1])
    env = dict(os.environ, PYTHONPATH=root + os.pathsep + os.environ.get("PYTHONPATH", ""))
    proc = subprocess.run(
        [sys.executable, "-m", "magcheck.compare.front.cli", "sweep", str(CASES / "demo_pot_core_choke.toml"),
         "--hand-only", "--vary", "winding.current=0.5A:40A:40", "--workers", "2"],
        capture_output=True, text=True, timeout=300, cwd=root, env=env)
    assert proc.returncode in (0, 1), proc.stderr
    lines = proc.stderr.splitlines()
    assert len(lines) == 1 and lines[0].startswith("magcheck: warning: "), lines
    assert "material 'demo-ferrite'" in lines[0] and ".py:" not in lines[0]


def test_a_drive_key_on_a_current_driven_winding_says_so(capsys):
    assert main(["sweep", CHOKE, "--hand-only", "--vary", "winding.voltage=100V,230V"]) == 2
    one_line(capsys, "--vary winding.voltage=100V,230V: this winding is driven by its current")


def test_dev_stdout_on_a_pipe_is_written_into(tmp_path):
    """/dev/stdout on a pipe resolves to /proc/PID/fd/pipe:[N], a name that
    cannot be opened: the early check must not refuse it, the writer writes
    into the pipe."""
    import json
    import os
    import subprocess
    import sys

    if not os.path.exists("/dev/stdout"):
        pytest.skip("no /dev/stdout")
    root = str(Path(__file__).resolve().parents[1])
    env = dict(os.environ, PYTHONPATH=root + os.pathsep + os.environ.get("PYTHONPATH", ""))
    proc = subprocess.run([sys.executable, "-m", "magcheck.compare.front.cli", "hand", CHOKE, "--json",
                           "/dev/stdout"], capture_output=True, text=True, timeout=120, env=env)
    assert proc.returncode == 0, proc.stderr
    start = proc.stdout.index("{\n")
    assert json.loads(proc.stdout[start:])["case"]["name"] == "demo-choke"
