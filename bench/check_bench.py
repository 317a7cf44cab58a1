"""Wall and CPU time of `magcheck` commands: this tree beside a git revision.

Plain script: ``python bench/check_bench.py [--against REV] [--repeat N] [--record FILE]
[--cases NAME,...] [--quick]``; prints a table.  Each row is one command:
``magcheck --help``, ``magcheck hand`` and ``magcheck check`` of every
bundled case (``--quick``: all but the voltage-driven transformer).  With
``--against REV`` the revision is checked out into a temporary git worktree
and each command runs alternately on both trees (A B A B ...), so that both
see the same machine load; the figures are medians over ``--repeat`` runs,
with min and max.  The check's own breakdown (hand, FE three-mesh solve,
compare incl. drive and leakage, seconds of the last run) comes from its
JSON ``timings_s``.  Speed targets live here as printed figures, not as
timed tests.
"""
from __future__ import annotations

import argparse
import json
import os
import platform
import resource
import statistics
import subprocess
import sys
import tempfile
import time

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
TRANSFORMER = "demo_ei_transformer"


def _worktree(ref: str) -> str:
    """A temporary git worktree of ``ref`` (removed at exit)."""
    from worktree import temporary_worktree  # bench/worktree.py, beside this script

    return temporary_worktree(ref, prefix="check-bench-")


def run_once(tree: str, args: list[str], json_out: str | None) -> tuple[float, float, dict]:
    """(wall s, CPU s of the child, JSON timings) of one `magcheck ARGS` run
    with ``tree`` first on the import path (its own code, its own cases)."""
    env = dict(os.environ, PYTHONPATH=tree)
    cmd = [sys.executable, "-m", "magcheck.compare.front.cli", *args]
    if json_out:
        cmd += ["--json", json_out]
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    t0 = time.perf_counter()
    res = subprocess.run(cmd, cwd=tree, env=env, capture_output=True, text=True)
    wall = time.perf_counter() - t0
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
    if res.returncode not in (0, 1, 4):  # 1 margins, 4 agreement failed: the check still ran
        raise RuntimeError(f"{' '.join(args)} in {tree}: exit {res.returncode}: "
                           f"{res.stderr.strip().splitlines()[-1:]}")
    timings = {}
    if json_out and os.path.exists(json_out):
        with open(json_out) as fh:
            timings = json.load(fh).get("timings_s", {})
    return wall, cpu, timings


def _stat(xs: list[float]) -> str:
    return f"{statistics.median(xs):7.2f} ({min(xs):.2f}-{max(xs):.2f})"


def main(argv=None) -> int:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--against", metavar="REV", help="also time git revision REV, alternately")
    p.add_argument("--repeat", type=int, default=3, help="runs per command and tree (default 3)")
    p.add_argument("--cases", help="comma-separated case file stems (default: every bundled case)")
    p.add_argument("--quick", action="store_true", help="leave out the voltage-driven transformer")
    p.add_argument("--record", metavar="FILE",
                   help="write the printout to FILE too (bench/results/ feeds README.md)")
    args = p.parse_args(argv)
    _record(args.record, argv)
    stems = sorted(f[:-5] for f in os.listdir(os.path.join(ROOT, "cases")) if f.endswith(".toml"))
    if args.cases:
        stems = [s for s in args.cases.split(",") if s]
    elif args.quick:
        stems = [s for s in stems if s != TRANSFORMER]
    trees = [("this", ROOT)]
    if args.against:
        trees.append((args.against[:10], _worktree(args.against)))
    rows: list[tuple[str, list[str], bool]] = [("--help", ["--help"], False),
                                                ("hand demo_choke", ["hand", "cases/demo_choke.toml"],
                                                 False)]
    rows += [(f"check {s}", ["check", f"cases/{s}.toml"], True) for s in stems]
    print(f"machine: {os.cpu_count()} cpus, {platform.machine()}, python "
          f"{platform.python_version()}; {args.repeat} runs per command and tree, alternating; "
          "median (min-max) seconds")
    print(f"{'command':<36} {'tree':>10} {'wall s':>19} {'cpu s':>19} "
          f"{'hand':>6} {'fe':>6} {'compare':>7}  {'wall ratio':>10}")
    tmp = tempfile.mkdtemp(prefix="check-bench-json-")
    for label, cmd, is_check in rows:
        walls: dict[str, list[float]] = {t: [] for t, _ in trees}
        cpus: dict[str, list[float]] = {t: [] for t, _ in trees}
        last: dict[str, dict] = {}
        # a case added since the revision compared against: this tree only
        here = [(tag, tree) for tag, tree in trees
                if not is_check or os.path.exists(os.path.join(tree, cmd[1]))]
        try:
            for _ in range(args.repeat):
                for tag, tree in here:
                    out = os.path.join(tmp, f"{tag}.json") if is_check else None
                    w, c, tm = run_once(tree, cmd, out)
                    walls[tag].append(w)
                    cpus[tag].append(c)
                    last[tag] = tm
        except RuntimeError as exc:
            print(f"{label:<36} failed: {exc}")
            continue
        base = statistics.median(walls[trees[0][0]])
        for tag, tree in trees:
            if (tag, tree) not in here:
                print(f"{label:<36} {tag:>10} {'(no such case in this revision)':>39}")
                continue
            tm = last.get(tag, {})
            brk = (f"{tm.get('hand', float('nan')):6.2f} {tm.get('fe', float('nan')):6.2f} "
                   f"{tm.get('compare', float('nan')):7.2f}" if tm else f"{'':6} {'':6} {'':7}")
            ratio = "" if tag == trees[0][0] else f"{base / statistics.median(walls[tag]):10.2f}"
            print(f"{label:<36} {tag:>10} {_stat(walls[tag]):>19} {_stat(cpus[tag]):>19} "
                  f"{brk}  {ratio}")
        sys.stdout.flush()
    return 0


def _record(path, argv) -> None:
    from worktree import record_output  # bench/worktree.py, beside this script

    record_output(path, "check_bench.py", argv)


if __name__ == "__main__":
    sys.exit(main())
