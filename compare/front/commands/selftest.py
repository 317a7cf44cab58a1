"""``magcheck selftest [--quick] [--json FILE]``: the engine's verification suite.

Runs fem2d.verification's exact-solution cases and prints one row per case:
name, formulation, quantity, FE value, reference, relative error,
tolerance, source, pass.  Exit 0 when every case passes, 1 otherwise.
JSON: {"cases": [{"name", "formulation", "quantity", "fe", "reference",
"rel_error", "tolerance", "source", "passed", "methods", "methods_rel_diff",
"methods_tolerance"}], "seconds", "passed"}.  Force cases (names containing
"force") give both methods in "methods" ({"maxwell_stress", "virtual_work"},
N), their relative difference and its tolerance; "fe" is the stress value,
"rel_error" the worse method's; the other cases give null there.
"""

from __future__ import annotations

import argparse
import time

from ...outputs.output import CAUTION, STDOUT_HELP, render_table, text_stream, write_json

OUTPUTS = {"--json": "file"}
"""Output options and what each writes (checked before the run)."""


def input_files(args: argparse.Namespace) -> dict[str, str]:
    """The files the command reads: none (the cases are built in)."""
    return {}


def add_args(p: argparse.ArgumentParser) -> None:
    p.add_argument("--quick", action="store_true",
                   help="the quick meshes (seconds); without it finer meshes too")
    p.add_argument("--json", metavar="FILE", help=f"write the results as JSON ({STDOUT_HELP})")


def run(args: argparse.Namespace) -> int:
    from magcheck.fem2d.verification import run_cases

    t0 = time.perf_counter()
    results = run_cases(quick=args.quick)
    seconds = time.perf_counter() - t0
    rows = [[r.name.split(":")[0], r.formulation, r.quantity, f"{r.fe:.6g}", f"{r.reference:.6g}",
             f"{r.rel_error:.1e}", f"{r.tolerance:.0e}",
             "" if r.methods_rel_diff is None else f"{r.methods_rel_diff:.1e}",
             "pass" if r.passed else "FAIL"]
            for r in results]
    notes = [f"{r.name.split(':')[0]}: {r.name.split(':', 1)[1].strip()}. Reference: {r.source}."
             for r in results]
    notes.append("stress vs VW: for the force cases, the relative difference between the "
                 "weighted Maxwell stress (the FE column) and virtual work (co-energy "
                 "difference of two solves with the body moved -/+ delta); required <= "
                 "1e-3, and both methods within the tolerance of the reference.")
    notes.append(f"{len(results)} cases ({'quick' if args.quick else 'full'} meshes) in "
                 f"{seconds:.1f} s.")
    out = text_stream(args.json)
    render_table("magcheck selftest: the field engine against exact solutions",
                 ["case", "formulation", "quantity", "FE", "reference", "rel. error",
                  "tolerance", "stress vs VW", "verdict"], rows, out, notes=notes)
    passed = all(r.passed for r in results)
    out.write(("PASS: every case within its tolerance" if passed
               else "FAIL: a case is outside its tolerance") + "\n")
    out.write(CAUTION + "\n")
    if args.json:
        write_json(args.json, {"cases": [{k: v for k, v in r.to_dict().items() if k != "seconds"}
                                         for r in results],
                               "seconds": seconds, "passed": passed})
    return 0 if passed else 1
