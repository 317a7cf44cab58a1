"""Benchmark of a current sweep on the demo choke (invented for the demo).

Prints: a 41-point current sweep, total time against 41 cold single-point
runs (mesh + solve from A = 0 + quantities, each point alone), the Newton
iterations per point with each warm start, and the speed-up from 2 worker
processes. Target on a 2-core machine: the warm-started sweep costs at most
35 % of the cold points' total on one process.  The linear reference: one
meshing of the case plus one linear solve per point (assembly of the case's
tangent, SuperLU factorisation with its ordering, back-substitution; the
median of 3 times the points); target: the tangent-predicted sweep at most
2x that.  ``--quick``: only the tangent sweep and the linear reference.

    python bench/sweep_bench.py [--case cases/demo_choke.toml] [--points 41] [--max 20] [--quick]
    python bench/sweep_bench.py --quick --against REV [--repeat N] [--record FILE]
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

import os  # noqa: E402

HERE = Path(__file__).resolve().parent
# the code under test: this tree, or the worktree of --against (set for the child)
ROOT = Path(os.environ.get("SWEEP_BENCH_TREE") or HERE.parent)
sys.path.insert(0, str(ROOT))

from magcheck.compare.judge.margins import hand_saturation_current  # noqa: E402
from magcheck.compare.studies.sweep import case_source, parse_vary, run_sweep, sweep_margins  # noqa: E402


def linear_reference(case, points: int) -> dict:
    """Seconds of one meshing of ``case`` and of one linear solve on that mesh
    (tangent assembly at the case's solution, SuperLU factorisation with its
    ordering, one back-substitution; median of 3)."""
    import statistics

    from threadpoolctl import threadpool_limits

    from magcheck.compare.models.fe import mesh_case, solve_case_full
    from magcheck.fem2d import linsolve

    t0 = time.perf_counter()
    mesh = mesh_case(case)
    t_mesh = time.perf_counter() - t0
    sol = solve_case_full(case, mesh).solution
    asm = sol.assembler
    times = []
    with threadpool_limits(limits=1):
        for _ in range(3):
            getattr(linsolve, "_ORDERINGS", {}).clear()
            t1 = time.perf_counter()
            g = asm.grad(sol.A)
            nu, dnu = asm.coefficients(asm.s_of(g))
            K = asm.tangent(g, nu, dnu)
            linsolve.superlu(K)(asm.b[asm.I])
            times.append(time.perf_counter() - t1)
    t_lin = statistics.median(times)
    return {"mesh": t_mesh, "linear": t_lin, "total": t_mesh + points * t_lin,
            "ndofs": int(sol.ndofs)}


def _print_reference(ref: dict, points: int, seconds: float, newton: int) -> None:
    print(f"linear reference: meshing {ref['mesh']:.2f} s + {points} x one linear solve "
          f"{ref['linear']:.3f} s ({ref['ndofs']} DOFs) = {ref['total']:.1f} s")
    print(f"tangent-predicted sweep {seconds:.1f} s ({newton} Newton steps in all) = "
          f"{seconds / ref['total']:.2f}x the linear reference (goal <= 2x)")


def _against(args) -> int:
    """The quick figures of this tree and of ``args.against`` (a temporary
    worktree), each run in a child process, the trees alternately; medians."""
    import json
    import statistics
    import subprocess

    sys.path.insert(0, str(HERE))
    from worktree import temporary_worktree  # bench/worktree.py, beside this script

    trees = [("this", None), (args.against[:10], temporary_worktree(args.against, "sweep-bench-"))]
    runs: dict[str, list[dict]] = {t: [] for t, _ in trees}
    for _ in range(args.repeat):
        for tag, tree in trees:
            env = dict(os.environ)
            env.pop("SWEEP_BENCH_TREE", None)
            if tree is not None:
                env["SWEEP_BENCH_TREE"] = tree
            env["PYTHONPATH"] = tree or str(HERE.parent)
            cmd = [sys.executable, str(Path(__file__).resolve()), "--json", "--case", args.case,
                   "--points", str(args.points), "--max", str(args.max)]
            res = subprocess.run(cmd, capture_output=True, text=True, env=env, check=True)
            runs[tag].append(json.loads(res.stdout.strip().splitlines()[-1]))
    print(f"{Path(args.case).stem}: {args.points}-point current sweep 0-{args.max:g} A, one process, "
          f"tangent predictor; {args.repeat} runs per tree, alternating, medians")
    print(f"{'tree':>10} {'DOFs':>6} {'sweep s':>8} {'Newton':>7} {'mesh s':>7} {'lin s':>6} "
          f"{'ref s':>6} {'sweep/ref':>9}")
    for tag, _ in trees:
        rs = runs[tag]

        def med(k: str) -> float:
            return statistics.median(r[k] for r in rs)

        ratio = statistics.median(r["sweep"] / r["reference"] for r in rs)
        print(f"{tag:>10} {int(med('ndofs')):>6} {med('sweep'):>8.2f} {int(med('newton')):>7} "
              f"{med('mesh'):>7.2f} {med('linear'):>6.3f} {med('reference'):>6.2f} {ratio:>9.2f}")
    print(f"sweep/ref: the tangent-predicted sweep over the linear reference (meshing + "
          f"{args.points} linear solves); goal <= 2")
    return 0


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--case", default=str(HERE.parent / "cases" / "demo_choke.toml"))
    ap.add_argument("--points", type=int, default=41)
    ap.add_argument("--max", type=float, default=20.0, help="highest current (A)")
    ap.add_argument("--block", type=int, default=None,
                    help="points per task (default: all points in one block on one process)")
    ap.add_argument("--quick", action="store_true",
                    help="only the tangent-predicted sweep and the linear reference")
    ap.add_argument("--record", metavar="FILE",
                   help="write the printout to FILE too (bench/results/ feeds README.md)")
    ap.add_argument("--against", metavar="REV",
                    help="with --quick: also run git revision REV's code, alternately, medians")
    ap.add_argument("--repeat", type=int, default=1, help="with --against: runs per tree")
    ap.add_argument("--json", action="store_true", help=argparse.SUPPRESS)
    args = ap.parse_args(argv)
    if args.against:
        _record(args.record, argv)
        return _against(args)
    if not args.json:
        _record(args.record, argv)
    src, case = case_source(args.case)
    spec = [parse_vary(f"winding.current=0:{args.max:g}A:{args.points}")]
    block = args.block or args.points
    ref = linear_reference(case, args.points)
    if args.json:  # one quick run for --against's parent
        import json

        sw = run_sweep(src, spec, predictor="tangent", block=block, workers=1)
        print(json.dumps({"sweep": sw.seconds, "reference": ref["total"], "linear": ref["linear"],
                          "mesh": ref["mesh"], "ndofs": ref["ndofs"],
                          "newton": sum(p.iterations for p in sw.points)}))
        return 0
    if args.quick:
        sw = run_sweep(src, spec, predictor="tangent", block=block, workers=1)
        it = sum(p.iterations for p in sw.points)
        print(f"{case.name}: {args.points}-point current sweep 0-{args.max:g} A, "
              f"{sw.points[-1].ndofs} DOFs, P{case.fe.order}")
        _print_reference(ref, args.points, sw.seconds, it)
        return 0
    runs = {}
    t = time.perf_counter()
    runs["cold points"] = run_sweep(src, spec, predictor="none", block=1, workers=1)
    for pred in ("previous", "secant", "tangent"):
        runs[f"sweep, {pred}"] = run_sweep(src, spec, predictor=pred, block=block, workers=1)
    par_block = -(-args.points // 2)  # two blocks: one per worker
    one = run_sweep(src, spec, predictor="tangent", block=par_block, workers=1)
    two = run_sweep(src, spec, predictor="tangent", block=par_block, workers=2)
    cold = runs["cold points"]
    print(f"{case.name}: {args.points}-point current sweep 0-{args.max:g} A, "
          f"{cold.points[-1].ndofs} DOFs, P{case.fe.order}")
    print(f"{'run':<22}{'wall s':>9}{'% of cold':>11}{'Newton total':>14}{'failed':>8}")
    for name, r in runs.items():
        it = sum(p.iterations for p in r.points)
        bad = sum(not p.converged for p in r.points)
        print(f"{name:<22}{r.seconds:>9.1f}{100 * r.seconds / cold.seconds:>10.0f}%{it:>14d}{bad:>8d}")
    print()
    print("Newton iterations per point (cold / previous / secant / tangent):")
    cols = [runs[k].points for k in runs]
    print(f"{'I (A)':>7}" + "".join(f"{k.split(', ')[-1]:>10}" for k in runs))
    for i in range(args.points):
        print(f"{cols[0][i].current:>7.2f}" + "".join(
            f"{(str(c[i].iterations) if c[i].converged else 'FAIL'):>10}" for c in cols))
    print()
    print(f"2 worker processes, tangent predictor, 2 blocks of {par_block} points: "
          f"{one.seconds:.1f} s on 1 process, {two.seconds:.1f} s on 2 "
          f"(speed-up {one.seconds / two.seconds:.2f}x, process start included)")
    print()
    _, table = sweep_margins(runs["sweep, tangent"], (0.1, 0.2, 0.3))
    print("saturation current (incremental inductance down by 10 / 20 / 30 %):")
    names = {"fe": "FE (planar)", "hand": "hand 3D", "hand_planar": "hand planar"}
    for row in table:
        print(f"  {names[row['model']]:<26}" + "".join(
            f"{row[k]:>9.2f} A" for k in ("10%", "20%", "30%")))
    roots = [hand_saturation_current(case, d) for d in (0.1, 0.2, 0.3)]
    print(f"  {'hand 3D, root-find':<26}" + "".join(f"{v:>9.2f} A" for v in roots))
    _print_reference(ref, args.points, runs["sweep, tangent"].seconds,
                     sum(p.iterations for p in runs["sweep, tangent"].points))
    print(f"total bench time {time.perf_counter() - t:.0f} s")
    return 0


def _record(path, argv) -> None:
    from worktree import record_output  # bench/worktree.py, beside this script

    record_output(path, "sweep_bench.py", argv)


if __name__ == "__main__":
    sys.exit(main())
