"""``magcheck verify PATH...``: every stored design against its limits, margins and baseline."""

from __future__ import annotations

import argparse
import math
import sys

from ...errors import CaseError
from ...studies.executor import Progress
from ...outputs.output import (CAUTION, STDOUT_HELP, atomic_write_text, render_table, text_stream,
                               write_json)
from ...design.units import format_si
from ...studies.verify import KNOWN, VerifyResult, find_cases, item_text, junit_xml, run_verify
from .check import add_agreement_arg

OUTPUTS = {"--junit": "file", "--json": "file"}
"""Output options and what each writes (checked before the run)."""


def input_files(args: argparse.Namespace) -> dict[str, str]:
    """The files the command reads (path -> what it is); no output may be one."""
    from ...reading.casefile import referenced_files

    files = {}
    for f in find_cases(args.paths):
        files[str(f)] = "an input case file"
        files.update(referenced_files(f))
    if args.baseline:
        files[args.baseline] = "the --baseline file"
    return files


def add_args(p: argparse.ArgumentParser) -> None:
    p.add_argument("paths", nargs="+", metavar="PATH", help="case files or folders of them")
    p.add_argument("--junit", metavar="FILE", help="write JUnit XML (one test case per margin; "
                                                      f"{STDOUT_HELP})")
    p.add_argument("--baseline", metavar="FILE",
                   help="stored results (e.g. cases/baseline.json): flag drift beyond tolerance")
    p.add_argument("--json", metavar="FILE", help=f"write every item as JSON ({STDOUT_HELP})")
    p.add_argument("--no-error-estimate", action="store_true",
                   help="one FE mesh per case (faster; no FE uncertainty, so no baseline)")
    p.add_argument("--workers", type=int, help="worker processes (default: one per core)")
    p.add_argument("--scheduler", metavar="ADDRESS",
                   help="dask.distributed scheduler (default $DASK_SCHEDULER_ADDRESS)")
    add_agreement_arg(p)
    p.add_argument("--no-stored-verdicts", action="store_true",
                   help="judge every agreement row afresh: no 'known disagreement (stored)' from "
                        "the baseline.json beside the case files (or --baseline)")


def _value(v: float, unit: str) -> str:
    if v is None or not math.isfinite(v):
        return "-" if v is None or math.isnan(v) else str(v)
    if unit == "%":
        return f"{v:+.1f} %"
    return format_si(v, unit) if unit else f"{v:.4g}"


def print_verify(res: VerifyResult, out) -> None:
    rows = []
    for o in res.outcomes:
        for it in o.items:
            if it.limit is None:
                limit = "-"
            elif it.limit_kind == "abs":
                limit = f"+-{it.limit:g} %" if it.unit == "%" else _value(it.limit, it.unit)
            else:
                limit = ("<= " if it.limit_kind == "max" else ">= ") + _value(it.limit, it.unit)
            margin = "-" if not math.isfinite(it.margin_pct) else f"{it.margin_pct:+.1f} %"
            rows.append([o.name, it.label, _value(it.value, it.unit), limit, margin, it.verdict])
        if o.status != "ok":
            rows.append([o.name, "bad input" if o.status == "input" else "solve", "-", "-", "-",
                         "ERROR"])
    notes = [f"{len(res.outcomes)} case(s) in {res.seconds:.1f} s. Agreement limits: hand vs "
             "FE difference in % of the FE value ('margin left' in points of %); design "
             "margins: margin left in % of the limit."]
    for o in res.outcomes:
        if o.status != "ok":
            notes.append(f"{o.file}: {o.error}")
        for it in o.items:
            if it.failed:
                notes.append(f"FAIL {o.name}: {item_text(it)}")
            elif it.verdict == KNOWN:
                notes.append(f"{KNOWN} {o.name}: {item_text(it)}")
    render_table("magcheck verify", ["case", "check", "value", "limit", "margin left", "verdict"],
                 rows, out, notes=notes)
    for line in verify_verdict_lines(res):
        out.write(line + "\n")
    code = res.exit_code
    out.write({0: "PASS: every limit and margin met" if res.agreement_passed
               else "PASS: every design margin met (agreement FAIL reported only)",
               1: "FAIL: a design margin is not met",
               2: "ERROR: bad input", 3: "ERROR: a solve failed",
               4: "FAIL: hand and FE disagree beyond a limit (the design margins are met)"}[code]
              + "\n")
    out.write(CAUTION + "\n")


def verify_verdict_lines(res: VerifyResult) -> list[str]:
    """The two verdicts over every case (design; hand-vs-FE agreement)."""
    bad_d = [o.name for o in res.outcomes if not o.design_passed]
    bad_a = [o.name for o in res.outcomes if not o.agreement_passed]
    known = sum(o.known_disagreements for o in res.outcomes)
    design = ("PASS: every design meets its margins" if not bad_d
              else f"FAIL: a margin missed in {', '.join(bad_d)}")
    agree = ("PASS: the hand calculations agree with the field solutions" if not bad_a
             else f"FAIL: hand and FE disagree beyond a limit in {', '.join(bad_a)}")
    if known:
        agree += f"; {known} known disagreement(s) (stored in the baseline entries)"
    return [f"design:    {design}", f"agreement: {agree}"]


def run(args: argparse.Namespace) -> int:
    if args.workers is not None and args.workers < 1:
        raise CaseError("--workers", args.workers, "must be at least 1")
    if args.baseline and args.no_error_estimate:
        raise CaseError("--no-error-estimate", True, "the baseline stores values of the checked "
                                                     "(three-mesh) FE; drop one of the options")
    with Progress("verify") as bar:
        res = run_verify(args.paths, baseline=args.baseline, workers=args.workers,
                         scheduler=args.scheduler, estimate_error=not args.no_error_estimate,
                         on_done=bar, agreement=args.agreement,
                         stored_verdicts=not args.no_stored_verdicts)
    print_verify(res, text_stream(args.json, args.junit))
    for o in res.outcomes:
        if o.status != "ok":
            print(f"magcheck: {'bad input' if o.status == 'input' else 'solve failed'}: "
                  f"{o.error}", file=sys.stderr)
    if args.junit:
        atomic_write_text(args.junit, junit_xml(res))
    if args.json:
        write_json(args.json, res.to_dict())
    return res.exit_code
