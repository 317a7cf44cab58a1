"""Benchmark of the fem2d engine: a planar window core and an r-z pot core.

Plain script: ``python bench/fe_bench.py [--quick] [--against REF] [--repeat N] [--record FILE]``;
prints a table.  "default" is the engine's default linear solver; "NL/dir"
is the nonlinear solve's time (cold, from A = 0) over one direct solve (SuperLU
factorisation and back-substitution) of its final tangent on the same mesh;
"warm/dir" the same for a solve started from the solution on a mesh 1.5x
coarser interpolated onto this one (what a check's two finer meshes do), "it w"
its Newton steps.  ``--against REF`` runs the same cases on the engine of the
git revision REF too (a temporary worktree), row by row beside this tree's
(``--repeat N``: N runs each, the trees alternately, each figure's median),
so that a change is measured side by side in one run.  The cores, coils and
B-H law are invented for the demo (a Brauer-type steel-like law,
nu(s) = k1 exp(k2 s) + k3, Brauer, IEEE Trans. Magn. MAG-11, 1975).  Each
case runs in a fresh subprocess so that its peak memory
(``resource.getrusage`` maxrss) is its own.
"""
from __future__ import annotations

import argparse
import json
import os
import platform
import subprocess
import sys
import time

HERE = os.path.dirname(os.path.abspath(__file__))
# the engine under test: this tree, or the worktree of --against
TREE = os.path.abspath(os.environ.get("FE_BENCH_TREE") or os.path.dirname(HERE))
sys.path.insert(0, TREE)
if not os.path.isdir(os.path.join(TREE, "magcheck")):
    # a revision from before the one package: its engine is the top-level
    # folder fem2d/ (relative imports inside); load it as magcheck.fem2d from
    # there, or an installed magcheck would be measured in its place
    import types

    _root = types.ModuleType("magcheck")
    _root.__path__ = [TREE]
    sys.modules["magcheck"] = _root

# invented for the demo: a steel-like Brauer law (mu_r(0) ~ 2000, ~1.9 T at 20 kA/m)
K1, K2, K3 = 3.8, 2.17, 396.2
DEPTH = 0.02
WARM_REFINE = 1.5  # element-size ratio of the mesh a warm start comes from (compare.models.fe.REFINE)
VACUUM = os.environ.get("FE_BENCH_PURE_BRAUER") is None


def window_core(size: float | None, order: int, gap: float = 1e-3):
    """60 x 60 mm core, 15 mm limbs, gap in the right limb, coil sides in the
    window and outside the left limb (invented for the demo)."""
    from magcheck.fem2d.layout import AirBox, Layout, MeshSettings, Rect, Region

    mm = 1e-3
    g = gap
    regions = (
        Region("core", (Rect(0, 0, 60 * mm, 15 * mm), Rect(0, 45 * mm, 60 * mm, 60 * mm),
                        Rect(0, 15 * mm, 15 * mm, 45 * mm), Rect(45 * mm, 15 * mm, 60 * mm, 45 * mm)),
               "steel", kind="core"),
        Region("gap", (Rect(45 * mm, 30 * mm - g / 2, 60 * mm, 30 * mm + g / 2),), "air", kind="gap"),
        Region("coil_in", (Rect(17 * mm, 17 * mm, 27 * mm, 43 * mm),), "copper", kind="coil"),
        Region("coil_out", (Rect(-12 * mm, 17 * mm, -2 * mm, 43 * mm),), "copper", kind="coil"),
    )
    return Layout(regions, air=AirBox("box", factor=2.0),
                  mesh=MeshSettings(size=size, order=order, threads=2), depth=DEPTH)


def pot_core(size: float | None, order: int, gap: float = 1e-3):
    """Axisymmetric pot core (invented for the demo): centre post radius 8 mm,
    window 8-18 mm, wall 18-22 mm, plates 4 mm, window height 16 mm, a gap
    in the centre post; the coil fills the window with clearance."""
    from magcheck.fem2d.layout import AirBox, Layout, MeshSettings, Rect, Region

    mm = 1e-3
    g = gap
    regions = (
        Region("core", (Rect(0, -12 * mm, 22 * mm, -8 * mm), Rect(0, 8 * mm, 22 * mm, 12 * mm),
                        Rect(0, -8 * mm, 8 * mm, -g / 2), Rect(0, g / 2, 8 * mm, 8 * mm),
                        Rect(18 * mm, -8 * mm, 22 * mm, 8 * mm)), "steel", kind="core"),
        Region("gap", (Rect(0, -g / 2, 8 * mm, g / 2),), "air", kind="gap"),
        Region("coil_in", (Rect(9 * mm, -7 * mm, 17 * mm, 7 * mm),), "copper", kind="coil"),
    )
    return Layout(regions, air=AirBox("rz-box", factor=2.0),
                  mesh=MeshSettings(size=size, order=order, threads=2))


def materials():
    from magcheck.fem2d.materials import AIR, BrauerReluctivity

    return {"steel": BrauerReluctivity(K1, K2, K3, vacuum=VACUUM), "copper": AIR}


def run_case(size, order, solver, NI_low, NI_high, geometry="planar"):
    """One bench case in this process; returns a dict of measurements."""
    import resource

    import numpy as np

    from magcheck.fem2d import post
    from magcheck.fem2d.mesh import build_mesh
    from magcheck.fem2d.solver import solve

    engine = os.path.abspath(post.__file__)
    if not engine.startswith(os.path.join(TREE, "")):
        raise SystemExit(f"fe_bench: the engine imported is {engine}, not the one under {TREE}")
    t0 = time.perf_counter()
    rz = geometry == "rz"
    rm = build_mesh(pot_core(size, order) if rz else window_core(size, order))
    t_mesh = time.perf_counter() - t0
    mats = materials()
    out = {"size_mm": size * 1e3, "order": order, "solver": solver, "ntri": int(rm.nelements)}
    # one linear solve with the initial reluctivity (first Newton step) for the ratio
    for tag, NI in (("low", NI_low), ("high", NI_high)):
        cur = {"coil_in": NI} if rz else {"coil_in": NI, "coil_out": -NI}
        t1 = time.perf_counter()
        sol = solve(rm, mats, currents=cur, linear_solver=None if solver == "default" else solver,
                    check=False)
        bg = post.region_mean_b(sol, "gap", direction=(0.0, 1.0))
        t2 = time.perf_counter()
        out[f"it_{tag}"] = sol.iterations
        out[f"conv_{tag}"] = sol.converged
        out[f"t_nl_{tag}"] = t2 - t1
        out[f"bgap_{tag}"] = bg
        out[f"t_asm_{tag}"] = sol.timings["assemble"] / max(sol.iterations, 1)
        out[f"t_lin_step_{tag}"] = sol.timings["linear"] / max(sol.iterations, 1)
        out["ndofs"] = int(sol.ndofs)
    # one direct solve (SuperLU factorisation + back-substitution) of the final
    # tangent of the high solve: the unit of "nonlinear solve / one direct solve"
    from magcheck.fem2d.linsolve import superlu
    from threadpoolctl import threadpool_limits

    from magcheck.fem2d import linsolve

    # the unit is a whole factorisation, its ordering included: a revision
    # that keeps orderings per sparsity pattern (linsolve._ORDERINGS) forgets them here
    getattr(linsolve, "_ORDERINGS", {}).clear()
    asm = sol.assembler
    with threadpool_limits(limits=1):
        g = asm.grad(sol.A)
        nu, dnu = asm.coefficients(asm.s_of(g))
        K = asm.tangent(g, nu, dnu)
        rhs = asm.b[asm.I]
        t1 = time.perf_counter()
        superlu(K)(rhs)
        out["t_direct"] = time.perf_counter() - t1
    out["ratio_direct"] = out["t_nl_high"] / out["t_direct"]
    # the check's sequence: the high solve on a mesh coarser by WARM_REFINE,
    # interpolated onto this mesh (post.transfer) as the Newton start; the
    # ratio of that warm solve to the same direct solve
    if hasattr(post, "transfer"):
        layout = pot_core(size * WARM_REFINE, order) if rz else window_core(size * WARM_REFINE, order)
        cur = {"coil_in": NI_high} if rz else {"coil_in": NI_high, "coil_out": -NI_high}
        solver_arg = None if solver == "default" else solver
        coarse = solve(build_mesh(layout), mats, currents=cur, linear_solver=solver_arg)
        A0 = post.transfer(coarse, rm)
        t1 = time.perf_counter()
        warm = solve(rm, mats, currents=cur, linear_solver=solver_arg, A0=A0)
        out["t_nl_warm"] = time.perf_counter() - t1
        out["it_warm"] = warm.iterations
        out["ratio_warm"] = out["t_nl_warm"] / out["t_direct"]
    # a linear reference solve: same mesh and solver, linear material (mu_r(0))
    from magcheck.fem2d.materials import AIR, LinearReluctivity

    lin = {"steel": LinearReluctivity(1.0 / (4e-7 * np.pi * (K1 + K3))), "copper": AIR}
    t1 = time.perf_counter()
    solve(rm, lin, currents={"coil_in": NI_low} if rz else {"coil_in": NI_low, "coil_out": -NI_low},
          linear_solver=None if solver == "default" else solver)
    out["t_linear_solve"] = time.perf_counter() - t1
    out["t_mesh"] = t_mesh
    out["t_total_high"] = t_mesh + out["t_nl_high"]
    out["ratio_high"] = out["t_nl_high"] / out["t_linear_solve"]
    out["ratio_low"] = out["t_nl_low"] / out["t_linear_solve"]
    out["maxrss_MiB"] = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
    out["us_per_dof_it"] = 1e6 * out["t_nl_high"] / max(out["it_high"], 1) / out["ndofs"]
    return out


def _median_run(runs: list[dict]) -> dict:
    """Each numeric figure's median over repeated runs of one case (counts
    and the mesh's figures too: the mesher may differ by a few elements)."""
    import statistics

    out = dict(runs[0])
    for k, v in runs[0].items():
        if isinstance(v, (int, float)) and not isinstance(v, bool):
            m = statistics.median(r[k] for r in runs if k in r)
            out[k] = int(round(m)) if isinstance(v, int) else m
    return out


def _worktree(ref: str) -> str:
    """A temporary git worktree of ``ref`` (removed at exit)."""
    from worktree import temporary_worktree  # bench/worktree.py, beside this script

    return temporary_worktree(ref, prefix="fe-bench-")


def main(argv=None):
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--quick", action="store_true", help="small meshes only")
    p.add_argument("--against", metavar="REF",
                   help="also run the engine of git revision REF, side by side")
    p.add_argument("--repeat", type=int, default=1,
                   help="runs per case and tree, alternating; the median of each figure")
    p.add_argument("--case", help=argparse.SUPPRESS)
    p.add_argument("--record", metavar="FILE",
                   help="write the printout to FILE too (bench/results/ feeds README.md)")
    args = p.parse_args(argv)
    if not args.case:
        _record(args.record, argv)
    NI_low, NI_high = 250.0, 2000.0
    if args.case:
        spec = json.loads(args.case)
        size, order, solver = spec[:3]
        geometry = spec[3] if len(spec) > 3 else "planar"
        print(json.dumps(run_case(size, order, solver, NI_low, NI_high, geometry), default=float))
        return 0
    import numpy as np
    import scipy
    import skfem

    print(f"machine: {os.cpu_count()} cpus, {platform.processor() or platform.machine()}, "
          f"python {platform.python_version()}, numpy {np.__version__}, scipy {scipy.__version__}, "
          f"scikit-fem {skfem.__version__}")
    print(f"planar: window core 60x60 mm, limb 15 mm, gap 1 mm, depth {DEPTH * 1e3:.0f} mm; "
          f"r-z: pot core 22 mm radius, 1 mm gap; NI low {NI_low:.0f} A, high {NI_high:.0f} A")
    trees = [("this", None)]
    if args.against:
        trees.append((args.against[:10], _worktree(args.against)))
    cases = []
    sizes = {5: 1.85e-3, 20: 0.77e-3, 80: 0.36e-3, 300: 0.18e-3}
    keys = (5, 20) if args.quick else (5, 20, 80, 300)
    for k in keys:
        for order in (1, 2):
            if k == 300 and order == 2:
                continue
            cases.append((sizes[k], order, "default", "planar"))
    # r-z beside planar at similar element counts (the pot core is smaller)
    rz_sizes = {5: 0.55e-3, 20: 0.26e-3, 80: 0.125e-3}
    for k in ((5, 20) if args.quick else (5, 20, 80)):
        cases.append((rz_sizes[k], 2, "default", "rz"))
    for k in ((20,) if args.quick else (20, 80)):
        for solver in ("amg-cg", "superlu"):
            cases.append((sizes[k], 2, solver, "planar"))
    hdr = (f"{'engine':>10} {'geom':>6} {'ntri':>7} {'P':>2} {'solver':>8} {'ndofs':>7} "
           f"{'mesh s':>7} {'asm/it s':>8} {'lin/it s':>8} {'it lo':>5} {'it hi':>5} "
           f"{'NL hi s':>8} {'us/dof/it':>9} {'lin s':>6} {'ratio':>6} {'dir s':>6} {'NL/dir':>6} "
           f"{'it w':>4} {'warm/dir':>8} "
           f"{'total s':>8} {'MiB':>6} "
           f"{'Bgap hi':>8}")
    print(hdr)
    for size, order, solver, geometry in cases:
        runs: dict[str, list[dict]] = {label: [] for label, _ in trees}
        failed: dict[str, str] = {}
        for _ in range(args.repeat):  # the trees alternately, so both see the same load
            for label, tree in trees:
                env = dict(os.environ)
                if tree is not None:
                    env["FE_BENCH_TREE"] = tree
                cmd = [sys.executable, os.path.abspath(__file__), "--case",
                       json.dumps([size, order, solver, geometry])]
                res = subprocess.run(cmd, capture_output=True, text=True, env=env)
                if res.returncode != 0:
                    failed[label] = res.stderr.strip().splitlines()[-1] if res.stderr.strip() else "?"
                    continue
                runs[label].append(json.loads(res.stdout.strip().splitlines()[-1]))
        for label, _ in trees:
            if not runs[label]:
                print(f"{label:>10} {geometry:>6} case {size} {order} {solver} failed: "
                      f"{failed.get(label, '?')}")
                continue
            r = _median_run(runs[label])
            print(f"{label:>10} {geometry:>6} {r['ntri']:>7} {order:>2} {solver:>8} {r['ndofs']:>7} "
                  f"{r['t_mesh']:>7.2f} {r['t_asm_high']:>8.3f} {r['t_lin_step_high']:>8.3f} "
                  f"{r['it_low']:>5} {r['it_high']:>5} {r['t_nl_high']:>8.2f} "
                  f"{r['us_per_dof_it']:>9.2f} {r['t_linear_solve']:>6.2f} {r['ratio_high']:>6.1f} "
                  f"{r['t_direct']:>6.3f} {r['ratio_direct']:>6.1f} "
                  f"{r.get('it_warm', '-'):>4} {r.get('ratio_warm', float('nan')):>8.1f} "
                  f"{r['t_total_high']:>8.2f} {r['maxrss_MiB']:>6.0f} {r['bgap_high']:>8.3f}")
            sys.stdout.flush()
    return 0


def _record(path, argv) -> None:
    from worktree import record_output  # bench/worktree.py, beside this script

    record_output(path, "fe_bench.py", argv)


if __name__ == "__main__":
    sys.exit(main())
