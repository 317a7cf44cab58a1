"""Benchmark of a current sweep on the demo choke (invented for the demo).

Prints: a 41-point current sweep, total time against 41 cold single-point
runs (mesh + solve from A = 0 + quantities, each point alone), the Newton
iterations per point with each warm start, and the speed-up from 2 worker
processes. Target on a 2-core machine: the warm-started sweep costs at most
35 % of the cold points' total on one process.

    python bench/sweep_bench.py [--case cases/demo_choke.toml] [--points 41] [--max 20]
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from magcheck.compare.judge.margins import hand_saturation_current  # noqa: E402
from magcheck.compare.studies.sweep import case_source, parse_vary, run_sweep, sweep_margins  # noqa: E402


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--case", default=str(ROOT / "cases" / "demo_choke.toml"))
    ap.add_argument("--points", type=int, default=41)
    ap.add_argument("--max", type=float, default=20.0, help="highest current (A)")
    ap.add_argument("--block", type=int, default=None,
                    help="points per task (default: all points in one block on one process)")
    args = ap.parse_args(argv)
    src, case = case_source(args.case)
    spec = [parse_vary(f"winding.current=0:{args.max:g}A:{args.points}")]
    block = args.block or args.points
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
    print(f"total bench time {time.perf_counter() - t:.0f} s")
    return 0


if __name__ == "__main__":
    sys.exit(main())
