"""Outputs never destroy what is at their path; the CLI's edges (pipes, Ctrl-C,
terminal text, -v, --version) behave like a well-mannered command-line tool."""

from __future__ import annotations

import json
import os
import signal
import stat
import subprocess
import sys
import threading
import time
from pathlib import Path

import pytest

from magcheck.compare.front.cli import main
from magcheck.compare.outputs.output import save_figure, write_json, write_output

ROOT = Path(__file__).resolve().parents[1]
CASES = ROOT / "cases"
CHOKE = str(CASES / "demo_choke.toml")


def _env() -> dict[str, str]:
    env = dict(os.environ)
    env["PYTHONPATH"] = str(ROOT) + os.pathsep + env.get("PYTHONPATH", "")
    return env


def _leftover_temp_files(folder: Path) -> list[Path]:
    return [p for p in folder.iterdir() if p.name.startswith(".") and p.name.endswith(".tmp")]


# --------------------------------------------------------------------- the writer
def test_symlink_is_written_through_and_kept(tmp_path):
    target = tmp_path / "real.json"
    target.write_text("old")
    link = tmp_path / "link.json"
    link.symlink_to(target)
    assert main(["hand", CHOKE, "--json", str(link)]) == 0
    assert link.is_symlink() and os.readlink(link) == str(target)
    assert json.loads(target.read_text())["case"]["name"] == "demo-choke"
    assert _leftover_temp_files(tmp_path) == []


def test_fifo_is_written_into_not_replaced(tmp_path):
    fifo = tmp_path / "pipe"
    os.mkfifo(fifo)
    got: list[bytes] = []
    reader = threading.Thread(target=lambda: got.append(fifo.read_bytes()))
    reader.start()
    write_output(fifo, "through the pipe\n")
    reader.join(timeout=10)
    assert got == [b"through the pipe\n"]
    assert stat.S_ISFIFO(os.stat(fifo).st_mode)


def test_dev_null_stays_a_character_device(capsys):
    assert main(["hand", CHOKE, "--json", os.devnull, "--planar"]) == 0
    assert stat.S_ISCHR(os.stat(os.devnull).st_mode)


@pytest.mark.skipif(not os.path.exists("/dev/full"), reason="no /dev/full on this system")
def test_full_device_is_an_error_not_replaced(capsys):
    code = main(["hand", CHOKE, "--json", "/dev/full"])
    assert code == 2  # refused with the other output checks, before the solve
    assert capsys.readouterr().err == ("magcheck: bad input: --json /dev/full: is a device that "
                                       "refuses every write (no space left); give another path\n")
    assert stat.S_ISCHR(os.stat("/dev/full").st_mode)
    with pytest.raises(OSError) as exc:  # the writer still names the path given
        write_output("/dev/full", "x")
    assert exc.value.filename == "/dev/full"


def test_regular_file_replaced_atomically_with_its_mode(tmp_path):
    out = tmp_path / "r.json"
    out.write_text("old")
    os.chmod(out, 0o600)
    write_json(out, {"a": 1.0, "b": float("nan")})
    assert json.loads(out.read_text()) == {"a": 1.0, "b": None}
    assert stat.S_IMODE(os.stat(out).st_mode) == 0o600  # an existing file keeps its mode
    new = tmp_path / "deep" / "er" / "n.txt"
    old_mask = os.umask(0o027)
    try:
        write_output(new, "x")
    finally:
        os.umask(old_mask)
    assert stat.S_IMODE(os.stat(new).st_mode) == 0o640  # a new one follows the umask
    assert _leftover_temp_files(tmp_path) == []


def test_folder_is_an_error(tmp_path, capsys):
    assert main(["hand", CHOKE, "--json", str(tmp_path)]) == 2  # refused before the run
    assert "is a folder, not a file" in capsys.readouterr().err
    with pytest.raises(IsADirectoryError, match="is a folder, not a file"):
        write_output(tmp_path, "x")  # and the writer's own guard stays
    assert tmp_path.is_dir()


def test_dash_is_standard_output(capsys):
    assert main(["hand", CHOKE, "--json", "-"]) == 0
    captured = capsys.readouterr()
    assert json.loads(captured.out)["case"]["name"] == "demo-choke"  # JSON alone
    assert "operating point" in captured.err  # the table went to stderr


def test_vtu_follows_the_umask(tmp_path):
    out = tmp_path / "f.vtu"
    old_mask = os.umask(0o022)
    try:
        assert main(["check", str(CASES / "demo_choke.toml"), "--no-error-estimate",
                     "--vtu", str(out)]) == 0
    finally:
        os.umask(old_mask)
    assert stat.S_IMODE(os.stat(out).st_mode) == 0o644
    import meshio

    m = meshio.read(out)
    assert {"A_z_Wb_per_m"} <= set(m.point_data) and "B_magnitude_T" in m.cell_data


# --------------------------------------------------------------------- figures
@pytest.mark.parametrize("argv", [
    ["materials", "demo-ferrite", "--plot", "x.txt"],
    ["materials", "demo-ferrite", "--plot", "x/noext"],
    ["tolerance", str(CASES / "demo_choke_margins.toml"), "--samples", "4", "--plot", "h.txt"],
])
def test_bad_figure_suffix_is_bad_input_before_the_run(argv, tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    t0 = time.perf_counter()
    assert main(argv) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "--plot" in err[0] and ".png, .svg, .pdf" in err[0]
    assert time.perf_counter() - t0 < 5.0  # refused before any solve (generous: shared CI)
    assert list(tmp_path.iterdir()) == []


def test_materials_plot_creates_its_folder(tmp_path, capsys):
    out = tmp_path / "nodir" / "m.svg"
    assert main(["materials", "demo-ferrite", "--plot", str(out)]) == 0
    assert out.read_text().lstrip().startswith("<?xml")
    assert f"wrote {out}" in capsys.readouterr().out


def test_save_figure_formats(tmp_path):
    from matplotlib.figure import Figure

    fig = Figure()
    fig.add_subplot().plot([0, 1], [0, 1])
    save_figure(fig, tmp_path / "a.png")
    save_figure(fig, tmp_path / "a.pdf")
    assert (tmp_path / "a.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert (tmp_path / "a.pdf").read_bytes()[:5] == b"%PDF-"


# --------------------------------------------------------------------- pipes, signals
def test_closed_stdout_ends_quietly_with_exit_0():
    proc = subprocess.Popen([sys.executable, "-m", "magcheck.compare.front.cli", "hand", CHOKE],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, cwd=ROOT, env=_env())
    assert proc.stdout is not None and proc.stderr is not None
    proc.stdout.readline()
    proc.stdout.close()  # like `| head -1`
    err = proc.stderr.read()
    assert proc.wait(timeout=60) == 0
    assert err == b""


def _sigint_default() -> None:
    """preexec_fn: the child starts with SIGINT at its default action. A test
    run started as a background job (``pytest &`` in a script, many CI
    runners) has SIGINT ignored, children inherit that, and Python then
    installs no KeyboardInterrupt handler: the run would ignore Ctrl-C
    entirely (the 1.3-million-triangle mesh left running after the test)."""
    signal.signal(signal.SIGINT, signal.SIG_DFL)


def _reap(proc: subprocess.Popen) -> None:
    """Kill ``proc`` and its process group if still running (every path out of
    a test that started it, a failed assertion or a timeout included)."""
    if proc.poll() is None:
        try:
            os.killpg(proc.pid, signal.SIGKILL)
        except (ProcessLookupError, PermissionError):
            proc.kill()
    try:
        proc.communicate(timeout=30)
    except (subprocess.TimeoutExpired, ValueError):
        pass


def test_a_child_started_from_a_background_job_still_takes_ctrl_c():
    """The Ctrl-C tests' children honour SIGINT even when the test run itself
    ignores it (started with ``&``): _sigint_default resets the inherited SIG_IGN."""
    code = "import signal; print(signal.getsignal(signal.SIGINT) is signal.default_int_handler)"
    previous = signal.signal(signal.SIGINT, signal.SIG_IGN)  # as under `pytest &`
    try:
        ignored = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                                 timeout=60)
        reset = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                               timeout=60, preexec_fn=_sigint_default)
    finally:
        signal.signal(signal.SIGINT, previous)
    assert ignored.stdout.strip() == "False"  # what made the interrupt look unreliable
    assert reset.stdout.strip() == "True"


def _children(pid: int) -> list[int]:
    out = []
    for entry in Path("/proc").iterdir():
        if entry.name.isdigit():
            try:
                fields = (entry / "stat").read_text().rsplit(")", 1)[1].split()
            except OSError:
                continue
            if int(fields[1]) == pid:
                out.append(int(entry.name))
    return out


@pytest.mark.slow
@pytest.mark.skipif(not Path("/proc").is_dir(), reason="needs /proc to find child processes")
def test_ctrl_c_exits_130_with_one_line_and_no_orphans(tmp_path):
    out = tmp_path / "sweep.json"
    proc = subprocess.Popen(
        [sys.executable, "-m", "magcheck.compare.front.cli", "sweep", CHOKE, "--vary",
         "winding.current=1:12A:24", "--workers", "2", "--json", str(out)],
        stdout=subprocess.PIPE, stderr=subprocess.PIPE, cwd=ROOT, env=_env(),
        preexec_fn=_sigint_default, start_new_session=True)
    try:
        kids: list[int] = []
        deadline = time.monotonic() + 60
        while time.monotonic() < deadline and len(kids) < 2:
            time.sleep(0.5)
            kids = [k for k in _children(proc.pid)]
        assert kids, "the sweep started no worker processes"
        time.sleep(2.0)  # the workers are solving now
        proc.send_signal(signal.SIGINT)
        _, err = proc.communicate(timeout=60)
    finally:
        _reap(proc)
    assert proc.returncode == 130
    lines = err.decode().strip().splitlines()
    assert lines[-1] == "magcheck: interrupted" and "Traceback" not in err.decode()
    time.sleep(0.5)
    alive = [k for k in kids if Path(f"/proc/{k}").exists()
             and "Z" not in (Path(f"/proc/{k}/stat").read_text().rsplit(")", 1)[1].split()[0])]
    assert alive == []
    assert not out.exists() and _leftover_temp_files(tmp_path) == []


@pytest.mark.slow
def test_ctrl_c_while_gmsh_meshes_exits_at_once(tmp_path):
    """A mesh of about 1.3 million triangles takes gmsh over 30 s in one C
    call; SIGINT two seconds into it must end the run within a few seconds
    with one line and exit 130, writing nothing."""
    case = tmp_path / "fine.toml"
    text = (CASES / "demo_choke.toml").read_text()
    case.write_text(text.replace("[fe]\n", '[fe]\nmesh_size = "0.1 mm"\nallow_large = true\n'))
    out = tmp_path / "fine.json"
    proc = subprocess.Popen([sys.executable, "-m", "magcheck.compare.front.cli", "check", str(case), "-v",
                             "--json", str(out)],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, cwd=ROOT, env=_env(),
                            preexec_fn=_sigint_default, start_new_session=True)
    assert proc.stderr is not None
    try:
        seen = []
        # The first estimate is the finest mesh's guard, before any mesh; the
        # second is logged by mesh_case just before gmsh meshes the coarsest.
        for raw in proc.stderr:
            seen.append(raw.decode())
            if sum("triangles estimated" in line for line in seen) == 2:
                break
        else:
            pytest.fail("no mesh estimate logged: " + "".join(seen))
        time.sleep(2.0)
        assert proc.poll() is None, "the run ended before the interrupt: " + "".join(seen)
        proc.send_signal(signal.SIGINT)
        t0 = time.monotonic()
        _, rest = proc.communicate(timeout=60)
        waited = time.monotonic() - t0
    finally:
        _reap(proc)  # never leave a 2 GB mesher running behind a failed test
    err = "".join(seen) + rest.decode()
    assert proc.returncode == 130, err
    assert waited < 5.0, f"the run went on for {waited:.1f} s after Ctrl-C"
    assert err.strip().splitlines()[-1] == "magcheck: interrupted" and "Traceback" not in err
    assert not out.exists() and _leftover_temp_files(tmp_path) == []


# --------------------------------------------------------------------- terminal text
def _on_a_terminal(args: list[str], cwd: Path) -> tuple[int, str]:
    """Run the CLI under a pseudo-terminal (stdout is a tty, so rich is used)."""
    import pty

    code = (f"import sys; sys.path.insert(0, {str(ROOT)!r}); from magcheck.compare.front.cli import main; "
            f"sys.exit(main({args!r}))")
    master, slave = pty.openpty()
    proc = subprocess.Popen([sys.executable, "-c", code], stdin=slave, stdout=slave,
                            stderr=subprocess.PIPE, cwd=cwd, env=_env(), close_fds=True)
    os.close(slave)
    chunks = []
    while True:
        try:
            data = os.read(master, 65536)
        except OSError:
            break
        if not data:
            break
        chunks.append(data)
    os.close(master)
    proc.wait(timeout=120)
    return proc.returncode, b"".join(chunks).decode("utf-8", "replace")


@pytest.mark.parametrize("name", ["choke [rev B] [/]", "choke [bold red]x[/bold red] [/]"])
def test_case_text_is_printed_literally_on_a_terminal(name, tmp_path):
    text = (CASES / "demo_choke.toml").read_text().replace('name = "demo-choke"',
                                                            f'name = "{name}"')
    (tmp_path / "c.toml").write_text(text)
    code, screen = _on_a_terminal(["hand", "c.toml"], tmp_path)
    assert code == 0
    flat = " ".join(screen.split())
    assert name in flat  # the brackets survive, nothing is read as markup
    assert "\x1b[1;31m" not in screen  # [bold red] did not recolour the terminal


# --------------------------------------------------------------------- options
def test_verbose_after_the_sub_command(capsys):
    assert main(["hand", CHOKE, "-v"]) == 0
    assert main(["-v", "hand", CHOKE]) == 0


def test_version(capsys):
    with pytest.raises(SystemExit) as exc:
        from magcheck.compare.front.cli import build_parser

        build_parser().parse_args(["--version"])
    assert exc.value.code == 0
    out = capsys.readouterr().out.strip()
    assert out.startswith("magcheck ") and len(out.split()) == 2
    assert main(["--version"]) == 0
