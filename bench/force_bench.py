"""Benchmark of the force on a body: one evaluation by each method next to
one nonlinear solve, planar and r-z.

Plain script: ``python bench/force_bench.py [--repeat N]``; prints a table
(median of N runs, default 3).  Both cases are invented for the demo and use
a Brauer-type steel-like law (nu(s) = k1 exp(k2 s) + k3, Brauer, IEEE
Trans. Magn. MAG-11, 1975) driven into saturation:

- planar: a U core and armature bar, two 0.5 mm gaps, 200 turns x 15 A,
  stack 20 mm (the selftest case ``planar-armature-force``);
- r-z: a disc magnet (B_r 1.2 T, recoil mu_r 1.05) under a steel keeper
  1 mm away, and a coil of 500 A-turns around it.

Columns: the solve from A = 0 (Newton), the Maxwell stress on the solved
field (one pass over the layer), virtual work (two solves warm-started from
the solution, the body moved -/+ delta), and their ratios to the solve.
"""
from __future__ import annotations

import argparse
import os
import platform
import statistics
import sys
import time

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.dirname(HERE))

MM = 1e-3


def planar_case():
    from magcheck.fem2d.formulation import Planar
    from magcheck.fem2d.materials import AIR, BrauerReluctivity
    from magcheck.fem2d.verification import u_core_armature

    lay, src = u_core_armature(0.5 * MM)
    mats = {"steel": BrauerReluctivity(3.8, 2.17, 396.2), "copper": AIR, "air": AIR}
    return lay, mats, src, {"w": 15.0}, Planar(20 * MM), "armature", (0.0, -1.0)


def rz_case():
    from magcheck.fem2d.formulation import Axisymmetric
    from magcheck.fem2d.layout import AirBox, Layout, MeshSettings, Rect, Region
    from magcheck.fem2d.materials import AIR, BrauerReluctivity
    from magcheck.fem2d.sources import Coil, Magnet, Sources

    regs = (Region("magnet", (Rect(0, 0, 5 * MM, 4 * MM),), "pm", kind="magnet"),
            Region("keeper", (Rect(0, 5 * MM, 8 * MM, 8 * MM),), "steel", kind="core"),
            Region("coil", (Rect(6 * MM, 0, 8 * MM, 4 * MM),), "copper", kind="coil"))
    lay = Layout(regs, air=AirBox("rz-disk", factor=1.5, open=True),
                 mesh=MeshSettings(size=0.25 * MM))
    mats = {"pm": AIR, "steel": BrauerReluctivity(3.8, 2.17, 396.2), "copper": AIR}
    src = Sources(coils=(Coil("c", (("coil", 1),), 500),),
                  magnets=(Magnet("magnet", (0.0, 1.2), 1.05),))
    return lay, mats, src, {"c": 1.0}, Axisymmetric(), "keeper", (0.0, -1.0)


def run(build, repeat: int) -> dict:
    from magcheck.fem2d.force import maxwell_force, virtual_work_force
    from magcheck.fem2d.mesh import build_mesh
    from magcheck.fem2d.solver import solve

    lay, mats, src, currents, form, body, direction = build()
    mesh = build_mesh(lay)
    t = {"solve": [], "stress": [], "vw": []}
    for _ in range(repeat):
        t0 = time.perf_counter()
        sol = solve(mesh, mats, sources=src, currents=currents, formulation=form)
        t1 = time.perf_counter()
        ms = maxwell_force(sol, body).force
        t2 = time.perf_counter()
        vw = virtual_work_force(sol, body, direction)
        t3 = time.perf_counter()
        t["solve"].append(t1 - t0)
        t["stress"].append(t2 - t1)
        t["vw"].append(t3 - t2)
    f_ms = direction[0] * ms[0] + direction[1] * ms[1]
    return {"elements": int(mesh.mesh.t.shape[1]), "ndofs": int(sol.A.size),
            "newton": sol.iterations, "vw_newton": vw.iterations,
            "F_ms": f_ms, "F_vw": vw.force,
            **{k: statistics.median(v) for k, v in t.items()}}


def main(argv=None) -> int:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--repeat", type=int, default=3, help="runs per case (the median is shown)")
    args = p.parse_args(argv)
    print(f"force bench: {platform.processor() or platform.machine()}, "
          f"{os.cpu_count()} cores, Python {platform.python_version()}, median of {args.repeat}")
    head = ("case", "elements", "DOFs", "Newton", "solve s", "stress s", "stress/solve",
            "VW s", "VW/solve", "VW Newton", "F stress N", "F VW N", "rel. diff")
    rows = []
    for name, build in (("planar U core + armature", planar_case),
                        ("r-z magnet + keeper + coil", rz_case)):
        r = run(build, args.repeat)
        rows.append((name, r["elements"], r["ndofs"], r["newton"], f"{r['solve']:.3f}",
                     f"{r['stress']:.4f}", f"{r['stress'] / r['solve']:.3f}", f"{r['vw']:.3f}",
                     f"{r['vw'] / r['solve']:.2f}", "+".join(map(str, r["vw_newton"])),
                     f"{r['F_ms']:.6g}", f"{r['F_vw']:.6g}",
                     f"{abs(r['F_ms'] - r['F_vw']) / abs(r['F_ms']):.1e}"))
    widths = [max(len(str(x)) for x in col) for col in zip(head, *rows)]
    for row in (head, *rows):
        print("  ".join(str(x).rjust(w) for x, w in zip(row, widths)))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
