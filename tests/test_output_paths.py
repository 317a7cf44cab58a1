"""Output paths are checked right after parsing, before any solve: no output
may be an input, two outputs may not share a path, a file or folder output
must fit what is at its path; with ``-`` the text goes to standard error."""

from __future__ import annotations

import csv
import importlib
import io
import json
import os
import shutil
from pathlib import Path

import pytest

from magcheck.compare.front.cli import COMMANDS, main
from magcheck.compare.outputs.output import write_output

CASES = Path(__file__).resolve().parents[1] / "cases"
CHOKE = str(CASES / "demo_choke.toml")


def _must_not_run(args):
    raise AssertionError("the command ran although its outputs clash")


@pytest.fixture
def no_run(monkeypatch):
    """Every command's run() fails the test: a refusal must come before it."""
    for name in COMMANDS:
        monkeypatch.setattr(importlib.import_module(f"magcheck.compare.front.commands.{name}"), "run",
                            _must_not_run)


@pytest.fixture
def folder(tmp_path, monkeypatch):
    """A working folder with case.toml (a copy of the demo choke), link.toml (a
    symlink to it), hard.toml (a hard link to it), a file f and a folder d."""
    shutil.copy(CHOKE, tmp_path / "case.toml")
    (tmp_path / "link.toml").symlink_to(tmp_path / "case.toml")
    os.link(tmp_path / "case.toml", tmp_path / "hard.toml")
    (tmp_path / "f").write_text("keep me\n")
    (tmp_path / "d").mkdir()
    (tmp_path / "base.json").write_text("{}\n")
    monkeypatch.chdir(tmp_path)
    return tmp_path


def _snapshot(folder: Path) -> dict[str, bytes | None]:
    return {str(p.relative_to(folder)): (p.read_bytes() if p.is_file() else None)
            for p in sorted(folder.rglob("*"))}


def _refused(capsys, *words: str) -> str:
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and err.startswith("magcheck: bad input: "), err
    assert "Traceback" not in err
    for w in words:
        assert w in err, err
    return err


# ------------------------------------------------------------ input clashes
def test_hand_json_onto_its_case_file_is_refused(folder, capsys):
    before = (folder / "case.toml").read_bytes()
    assert main(["hand", "case.toml", "--json", "case.toml"]) == 2
    _refused(capsys, "--json case.toml: is the input case file; give another path")
    assert (folder / "case.toml").read_bytes() == before


@pytest.mark.parametrize("argv, words", [
    (["sweep", "case.toml", "--vary", "core.stroke=0.5mm:1mm:2", "--hand-only", "--csv",
      "case.toml"], "--csv case.toml: is the input case file"),
    (["sweep", "case.toml", "--vary", "winding.current=1A:2A:2", "--plots", "case.toml"],
     "--plots case.toml: is the input case file"),
    (["check", "case.toml", "--markdown", "link.toml"], "--markdown link.toml: is the input"),
    (["check", "case.toml", "--report", "case.toml"], "--report case.toml: is the input"),
    (["check", "case.toml", "--vtu", "hard.toml"], "--vtu hard.toml: is the input"),
    (["check", "case.toml", "--dxf", "link.toml", "--geometry-only"],
     "--dxf link.toml: is the input"),
    (["hand", "link.toml", "--json", "./case.toml"], "--json ./case.toml: is the input"),
    (["tolerance", "case.toml", "--json", "case.toml"], "--json case.toml: is the input"),
    (["tolerance", "case.toml", "--plot", "link.toml"], "--plot link.toml: is the input"),
    (["verify", "case.toml", "--json", "case.toml"], "--json case.toml: is an input case file"),
    (["verify", ".", "--junit", "hard.toml"], "--junit hard.toml: is an input case file"),
    (["verify", "case.toml", "--baseline", "base.json", "--json", "base.json"],
     "--json base.json: is the --baseline file"),
])
def test_an_output_may_not_be_an_input(argv, words, folder, capsys, no_run):
    before = _snapshot(folder)
    assert main(argv) == 2
    _refused(capsys, words)
    assert _snapshot(folder) == before


# ------------------------------------------------------------ output clashes
@pytest.mark.parametrize("argv, words", [
    (["check", CHOKE, "--json", "x", "--csv", "x"], "--json x and --csv x: name the same path"),
    (["check", CHOKE, "--json", "-", "--markdown", "-"],
     "--json - and --markdown -: both write to standard output"),
    (["check", CHOKE, "--report", "r", "--vtu", "r/"], "--report r and --vtu r/"),
    (["check", CHOKE, "--vtu", "g", "--dxf", "./g"], "--vtu g and --dxf ./g: name the same path"),
    (["check", CHOKE, "--dxf", "-", "--json", "-"],
     "--json - and --dxf -: both write to standard output"),
    (["sweep", CHOKE, "--csv", "out/a.csv", "--json", "./out/a.csv"],
     "--csv out/a.csv and --json ./out/a.csv"),
    (["verify", CHOKE, "--junit", "new.xml", "--json", "to_new.xml"],
     "--junit new.xml and --json to_new.xml"),  # a symlink to a file still to be made
])
def test_two_outputs_may_not_share_a_path(argv, words, folder, capsys, no_run):
    (folder / "to_new.xml").symlink_to(folder / "new.xml")
    before = _snapshot(folder)
    assert main(argv) == 2
    _refused(capsys, words)
    assert _snapshot(folder) == before


# ------------------------------------------------- what is at the path
@pytest.mark.parametrize("argv, words", [
    (["hand", CHOKE, "--json", "d"], "--json d: is a folder, not a file"),
    (["check", CHOKE, "--csv", "d"], "--csv d: is a folder, not a file"),
    (["check", CHOKE, "--report", "f"], "--report f: is a file, not a folder"),
    (["sweep", CHOKE, "--vary", "winding.current=1A:2A:2", "--plots", "f"],
     "--plots f: is a file, not a folder"),
    (["check", CHOKE, "--json", "f/x.json"], "is a file, not a folder"),
    (["check", CHOKE, "--report", "f/sub/deeper"], "is a file, not a folder"),
    (["hand", CHOKE, "--json", "newdir/"], "--json newdir/: ends in a slash"),
    (["verify", CHOKE, "--junit", "d/new/"], "--junit d/new/: ends in a slash"),
    (["check", CHOKE, "--report", "-"], "--report -: writes a folder of files"),
    (["materials", "demo-ferrite", "--plot", "f/m.png"], "is a file, not a folder"),
    (["selftest", "--json", "d"], "--json d: is a folder, not a file"),
])
def test_an_output_that_cannot_fit_is_refused_before_the_run(argv, words, folder, capsys, no_run):
    before = _snapshot(folder)
    assert main(argv) == 2
    _refused(capsys, words)
    assert _snapshot(folder) == before


@pytest.mark.parametrize("argv, option", [
    (["hand", CHOKE, "--json", ""], "--json"),
    (["check", CHOKE, "--csv", ""], "--csv"),
    (["check", CHOKE, "--report", " "], "--report"),
    (["sweep", CHOKE, "--vary", "winding.current=1A:2A:2", "--plots", ""], "--plots"),
    (["tolerance", CHOKE, "--plot", ""], "--plot"),
    (["verify", CHOKE, "--junit", ""], "--junit"),
])
def test_an_empty_output_path_is_refused(argv, option, folder, capsys, no_run):
    """A CI script with an unset variable (``--json "$OUT"``) must not lose its
    result silently: an empty path is bad input, exit 2, one line naming the option."""
    before = _snapshot(folder)
    assert main(argv) == 2
    err = _refused(capsys, f"{option} = ", "is an empty path")
    assert err.startswith(f"magcheck: bad input: {option} ="), err
    assert _snapshot(folder) == before


@pytest.mark.parametrize("argv, words", [
    (["hand", CHOKE, "--json", "/dev/full"], "--json /dev/full: is a device that refuses"),
    (["check", CHOKE, "--json", "/proc/self/x.json"], "--json /proc/self/x.json: cannot be written"),
    (["check", CHOKE, "--report", "/proc/self/rep"], "--report /proc/self/rep: cannot be written"),
    (["sweep", CHOKE, "--vary", "winding.current=1A:2A:2", "--csv", "/proc/x/y.csv"],
     "--csv /proc/x/y.csv: cannot be written"),
    (["materials", "demo-ferrite", "--plot", "/proc/self/m.png"], "--plot /proc/self/m.png"),
])
def test_an_unwritable_output_is_refused_before_the_run(argv, words, folder, capsys, no_run):
    """Writability is checked with the other output checks, before any solve:
    a full device, a folder where no file can be created (/proc, even for root)."""
    if not os.path.exists("/dev/full") or not os.path.isdir("/proc/self"):
        pytest.skip("needs Linux's /dev/full and /proc")
    before = _snapshot(folder)
    assert main(argv) == 2
    _refused(capsys, words)
    assert _snapshot(folder) == before


def test_a_write_failure_after_the_run_names_the_option_and_the_path(folder, capsys, monkeypatch):
    """Should a write still fail late (a disk filling during the solve), the one
    line names the option and the path given, never a temporary file."""
    import magcheck.compare.outputs.output as output

    def full(path, data):
        raise OSError(28, "No space left on device", f"{folder}/.h.json.abc.tmp")

    monkeypatch.setattr(output, "_write_output", full)
    assert main(["hand", "case.toml", "--json", "h.json"]) == 2
    err = capsys.readouterr().err
    assert err == "magcheck: cannot write output: --json h.json: No space left on device\n", err


def test_the_writer_refuses_a_trailing_slash(tmp_path):
    with pytest.raises(IsADirectoryError, match="names a folder"):
        write_output(str(tmp_path / "newdir") + "/", "x")
    assert list(tmp_path.iterdir()) == []


def test_valid_outputs_pass_the_early_check(folder, capsys):
    """New paths in new folders, a symlink to a new file and /dev/null are fine."""
    (folder / "out.json").symlink_to(folder / "real.json")
    assert main(["hand", "case.toml", "--json", "sub/new/h.json"]) == 0
    assert main(["hand", "case.toml", "--json", "out.json"]) == 0
    assert main(["hand", "case.toml", "--json", os.devnull]) == 0
    assert json.loads((folder / "sub/new/h.json").read_text())["case"]["name"] == "demo-choke"
    assert json.loads((folder / "real.json").read_text())["case"]["name"] == "demo-choke"


# ------------------------------------------------- "-": standard output alone
def test_text_stream():
    import sys

    from magcheck.compare.outputs.output import text_stream

    assert text_stream(None, "a.json") is sys.stdout
    assert text_stream(None, "-") is sys.stderr


def test_check_json_to_stdout_is_json_alone(capsys):
    code = main(["check", CHOKE, "--no-error-estimate", "--json", "-"])
    captured = capsys.readouterr()
    data = json.loads(captured.out)  # nothing but the JSON on stdout
    assert data["case"]["name"] == "demo-choke"
    assert code in (0, 1)  # exit code unchanged: pass/fail of the limits
    assert "hand calc vs" in captured.err and "Caution" in captured.err


def test_sweep_csv_to_stdout_is_csv_alone(capsys):
    assert main(["sweep", CHOKE, "--vary", "winding.current=1A:2A:2", "--hand-only",
                 "--csv", "-"]) == 0
    captured = capsys.readouterr()
    rows = list(csv.DictReader(io.StringIO(captured.out)))
    assert [float(r["winding.current [A]"]) for r in rows] == [1.0, 2.0]
    assert "sweep of winding.current" in captured.err


def test_verify_json_to_stdout_is_json_alone(capsys):
    code = main(["verify", CHOKE, "--no-error-estimate", "--workers", "1", "--json", "-"])
    captured = capsys.readouterr()
    assert json.loads(captured.out)["exit_code"] == code
    assert "magcheck verify" in captured.err


# ------------------------------------------------------------ help text
def _help(capsys, argv: list[str]) -> str:
    assert main(argv) == 0
    return " ".join(capsys.readouterr().out.split())  # argparse wraps lines


def test_help_wording(capsys):
    top = _help(capsys, ["-h"])
    assert "gapped core" not in top
    assert "choke, transformer, relay, solenoid, holding magnet" in top
    check = _help(capsys, ["check", "-h"])
    assert "second FE solve" not in check and "three meshes" in check
    assert "table and notes then go to standard error" in check
    hand = _help(capsys, ["hand", "-h"])
    assert "- for standard output" in hand


@pytest.mark.parametrize("command", ["check", "hand", "verify"])
def test_an_output_may_not_be_a_file_the_case_reads(command, folder, capsys, no_run):
    # a case whose core reads a B-H table beside it: that table is an input too
    (folder / "steel.csv").write_text("H [A/m],B [T]\n0,0\n100,0.5\n1000,1.2\n10000,1.6\n")
    text = (folder / "case.toml").read_text()
    (folder / "case.toml").unlink()  # its links keep the old text
    (folder / "case.toml").write_text(text.replace('core = "demo-sisteel"',
                                                   'core = { csv = "steel.csv" }'))
    assert 'csv = "steel.csv"' in (folder / "case.toml").read_text()
    before = _snapshot(folder)
    assert main([command, "case.toml", "--json", "steel.csv"]) == 2
    _refused(capsys, "--json steel.csv: is read by the case (materials.core.csv in case.toml)")
    assert _snapshot(folder) == before
