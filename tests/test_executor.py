"""Executors: results in task order and equal whatever runs them (this process,
worker processes, a dask cluster on loopback); progress only on a terminal."""

from __future__ import annotations

import io
from pathlib import Path

import pytest

from magcheck.compare.studies.executor import Progress, run_tasks, scheduler_address
from magcheck.compare.studies.sweep import case_source, parse_vary, run_sweep

CASES = Path(__file__).resolve().parents[1] / "cases"


def _square(x: int) -> tuple[int, int]:
    import os

    return x * x, os.getpid()


def test_processes_keep_task_order():
    calls = []
    res, info = run_tasks(_square, list(range(7)), workers=2,
                          on_done=lambda d, t: calls.append((d, t)))
    assert [r[0] for r in res] == [x * x for x in range(7)]
    assert info.kind == "processes" and info.workers == 2
    assert calls[-1] == (7, 7) and len(calls) == 7
    serial, info1 = run_tasks(_square, list(range(7)), workers=1)
    assert info1.kind == "serial" and [r[0] for r in serial] == [r[0] for r in res]


def test_scheduler_from_environment(monkeypatch):
    monkeypatch.setenv("DASK_SCHEDULER_ADDRESS", "tcp://127.0.0.1:1")
    assert scheduler_address(None) == "tcp://127.0.0.1:1"
    assert scheduler_address("tcp://127.0.0.1:2") == "tcp://127.0.0.1:2"
    monkeypatch.delenv("DASK_SCHEDULER_ADDRESS")
    assert scheduler_address(None) is None


def test_progress_silent_when_not_a_terminal():
    buf = io.StringIO()
    with Progress("x", delay=0.0, stream=buf) as p:
        for i in range(5):
            p(i + 1, 5)
    assert buf.getvalue() == ""


def test_unreachable_scheduler_is_bad_input(capsys):
    from magcheck.compare.front.cli import main

    code = main(["sweep", str(CASES / "demo_choke.toml"), "--hand-only",
                 "--vary", "winding.current=1A,2A", "--scheduler", "tcp://127.0.0.1:9"])
    assert code == 2
    assert "--scheduler" in capsys.readouterr().err


@pytest.mark.slow
def test_dask_local_cluster_equals_serial(tmp_path):
    distributed = pytest.importorskip("distributed")
    # A linear core: this test is about the executor (order, one gmsh session
    # per worker process, equal values), and a linear solve cannot stall.
    text = (CASES / "demo_choke.toml").read_text().replace(
        "[fe]\n", '[fe]\nmesh_size = "3 mm"\ngap_elements = 2\n').replace(
        'core = "demo-sisteel"', "core = { mu_r = 3000 }")
    p = tmp_path / "c.toml"
    p.write_text(text)
    src, _ = case_source(p)
    # Two geometries: each worker process meshes (one gmsh session) and solves one.
    specs = [parse_vary("winding.current=8A"), parse_vary("gaps[0].length=0.5mm,0.7mm")]
    serial = run_sweep(src, specs, workers=1, block=1)
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  host="127.0.0.1", dashboard_address=None) as cluster:
        remote = run_sweep(src, specs, scheduler=cluster.scheduler_address, block=1)
    assert remote.executor == "dask" and remote.workers == 2
    assert [q.index for q in remote.points] == [q.index for q in serial.points]
    for a, b in zip(serial.points, remote.points):
        assert a.settings == b.settings and b.converged
        for k in ("inductance", "incremental_inductance", "energy", "gap_B"):
            # Each point is one solve (block=1) on the same mesh in both runs;
            # only the AMG setup's random start vector differs, and the linear
            # solve stops at relative residual 1e-8 (-> ~1e-6 in the quantities).
            assert b.fe[k] == pytest.approx(a.fe[k], rel=1e-6), k
        assert b.hand == a.hand  # the hand model is deterministic: identical


class _Tty(io.StringIO):
    def isatty(self) -> bool:
        return True


def test_progress_on_a_terminal_only_for_long_runs(monkeypatch):
    import magcheck.compare.studies.executor as ex

    clock = iter([0.0, 0.0, 1.0, 5.0, 6.0])  # enter, then one reading per call
    monkeypatch.setattr(ex.time, "perf_counter", lambda: next(clock))
    buf = _Tty()
    with Progress("sweep", delay=3.0, stream=buf) as p:
        p(1, 4)  # 1 s in: silent
        assert buf.getvalue() == ""
        p(2, 4)  # 5 s in: the bar appears
        p(3, 4)
    assert "sweep" in buf.getvalue()


def test_scheduler_address_probe():
    import socket

    from magcheck.compare.errors import CaseError
    from magcheck.compare.studies.executor import _probe_address

    # A closed loopback port refuses at once: bad input naming the option and value.
    with pytest.raises(CaseError) as exc:
        _probe_address("tcp://127.0.0.1:9")
    assert exc.value.key == "--scheduler" and exc.value.value == "tcp://127.0.0.1:9"
    # A listening port passes the probe (dask then does the real handshake).
    with socket.socket() as srv:
        srv.bind(("127.0.0.1", 0))
        srv.listen(1)
        port = srv.getsockname()[1]
        assert _probe_address(f"tcp://127.0.0.1:{port}") is None
        assert _probe_address(f"127.0.0.1:{port}") is None
    # Schemes other than plain TCP are left to dask.
    assert _probe_address("inproc://whatever") is None


def test_default_workers_follow_the_task_count():
    # Few tasks run in this process: worker start-up (~2 s of imports) outweighs
    # the gain (measured in compare.studies.executor.MIN_TASKS_FOR_PROCESSES's docstring).
    from magcheck.compare.studies.executor import MIN_TASKS_FOR_PROCESSES, default_workers

    assert default_workers(1) == 1
    assert default_workers(MIN_TASKS_FOR_PROCESSES - 1) == 1
    assert default_workers(MIN_TASKS_FOR_PROCESSES) == default_workers()
    assert default_workers() >= 1
