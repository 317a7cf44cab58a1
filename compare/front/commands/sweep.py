"""``magcheck sweep CASE --vary KEY=SPEC``: a case over a range or grid of values."""

from __future__ import annotations

import argparse
import math
import sys

from ...studies.executor import Progress
from ...errors import CaseError
from ...outputs.output import (CAUTION, STDOUT_HELP, atomic_write_text, render_table, text_stream,
                               write_json)
from ...outputs.serialize import sweep_csv, sweep_json
from ...studies.sweep import (CLI_OPTIONS, CURRENT_KEY, DEFAULT_BLOCK, PREDICTORS, SweepResult,
                              case_source, parse_vary, run_sweep, sweep_margins)
from ...design.case import DEFAULT_DROPS
from ...design.units import format_si

OUTPUTS = {"--csv": "file", "--json": "file", "--plots": "folder"}
"""Output options and what each writes (checked before the run)."""


def input_files(args: argparse.Namespace) -> dict[str, str]:
    """The files the command reads (path -> what it is); no output may be one."""
    from ...reading.casefile import referenced_files

    return {args.case: "the input case file", **referenced_files(args.case)}


def add_args(p: argparse.ArgumentParser) -> None:
    p.add_argument("case", help="TOML case file")
    p.add_argument("--vary", action="append", metavar="KEY=SPEC", default=[],
                   help="key and values: a range start:stop:count (winding.current=0:20A:41) "
                        "or a list (gaps[0].length=0.5mm,0.8mm); a moving part's stroke gives "
                        "a force-stroke curve (core.stroke=0.2mm:5mm:13); repeat for a grid "
                        "(stroke and current: a family of curves); default: the case's [sweep]")
    p.add_argument("--drops", metavar="PCT,...",
                   help="inductance drops (percent) for the saturation current; default 10,20,30")
    p.add_argument("--inductance", choices=("incremental", "secant"),
                   help="which inductance the drop is read from (default incremental)")
    p.add_argument("--hand-only", action="store_true", help="skip the FE model (fast)")
    p.add_argument("--predictor", choices=PREDICTORS, default="tangent",
                   help="Newton start at each next point (default tangent: dA/dI)")
    p.add_argument("--block", type=int, default=DEFAULT_BLOCK,
                   help=f"points per task (default {DEFAULT_BLOCK}); results do not depend "
                        "on the number of workers")
    p.add_argument("--allow-large", action="store_true",
                   help="mesh even when the element estimate exceeds the limit "
                        "(as [fe] allow_large = true)")
    p.add_argument("--workers", type=int, help="worker processes (default: one per core, one for fewer than 4 tasks)")
    p.add_argument("--scheduler", metavar="ADDRESS",
                   help="dask.distributed scheduler (default $DASK_SCHEDULER_ADDRESS)")
    p.add_argument("--csv", metavar="FILE", help=f"write one row per point as CSV ({STDOUT_HELP})")
    p.add_argument("--json", metavar="FILE", help="write points, saturation currents and margins as JSON "
                                                     f"({STDOUT_HELP})")
    p.add_argument("--plots", metavar="DIR", help="write the figures (PNG) to DIR")


def _drops(text: str | None, default) -> tuple[float, ...]:
    if text is None:
        return tuple(default)
    try:
        vals = tuple(float(x) / 100.0 for x in text.split(","))
    except ValueError:
        raise CaseError("--drops", text, "write percentages, e.g. 10,20,30") from None
    if not vals or not all(0 < v < 1 for v in vals):
        raise CaseError("--drops", text, "percentages must lie in (0, 100)")
    return vals


def _fmt_key(key: str, v: float) -> str:
    """A swept key's value as compare.design.keys.display_unit shows it: a count as
    is, a length (stroke, gap) in mm, the rest in SI with a prefix."""
    from ...design.keys import display_unit

    scale, unit = display_unit(key)
    if unit in ("", "mm"):
        return f"{v * scale:.4g} {unit}".rstrip()
    return _fmt(v, unit)


def _fmt(v: float, unit: str) -> str:
    return "-" if v is None or not math.isfinite(v) else format_si(v, unit)


def print_sweep(res: SweepResult, margins, sat_table, out) -> None:
    keys = list(res.keys) + ([] if CURRENT_KEY in res.keys else [CURRENT_KEY])
    cols = keys + ["hand L", "hand dL/dI"]
    force = bool(res.points) and "force" in res.points[0].hand_planar  # a moving part
    if force:
        cols += ["hand F", "pull F"]
    ac = bool(res.points) and "ac_R_ac_ratio" in res.points[0].hand_planar  # an AC winding
    if ac:
        cols += ["hand R_ac/R_dc"] + (["FE R_ac/R_dc", "FE L_ac"] if res.with_fe else [])
    if res.with_fe:
        cols += ["FE L", "FE dL/dI"] + (["FE F", "FE F (VW)"] if force else []) + [
            "FE peak B", "Newton", "start"]
    rows = []
    for p in res.points:
        vals = dict(p.settings, **{CURRENT_KEY: p.current})
        r = [_fmt_key(k, vals[k]) for k in keys]
        r += [_fmt(p.hand_planar.get("inductance", math.nan), "H"),
              _fmt(p.hand_planar.get("incremental_inductance", math.nan), "H")]
        if force:
            r += [_fmt(p.hand_planar.get("force", math.nan), "N"),
                  _fmt(p.hand_planar.get("force_pull", math.nan), "N")]
        if ac:
            r += [f"{p.hand_planar.get('ac_R_ac_ratio', math.nan):.4g}"]
            if res.with_fe:
                r += [f"{p.fe.get('ac_R_ac_ratio', math.nan):.4g}",
                      _fmt(p.fe.get("ac_L_ac", math.nan), "H")]
        if res.with_fe:
            r += [_fmt(p.fe.get("inductance", math.nan), "H"),
                  _fmt(p.fe.get("incremental_inductance", math.nan), "H")]
            if force:
                r += [_fmt(p.fe.get("force_maxwell", math.nan), "N"),
                      _fmt(p.fe.get("force_virtual_work", math.nan), "N")]
            r += [_fmt(p.fe_peak_B, "T"), str(p.iterations) if p.converged else "FAILED", p.start]
        rows.append(r)
    notes = [f"{len(res.points)} points in {res.seconds:.1f} s ({res.executor}, "
             f"{res.workers} worker(s)); " + _hand_columns(res.case)]
    render_table(f"{res.case.name}: sweep of {', '.join(res.keys)}", cols, rows, out, notes=notes)
    if sat_table:
        drop_cols = [k for k in sat_table[0] if k.endswith("%")]
        render_table("saturation current: where the inductance has fallen by ...",
                     ["curve", "model", "L"] + drop_cols,
                     [[r["curve"] or "-", {"fe": "FE", "hand": "hand 3D",
                                           "hand_planar": "hand planar"}[r["model"]],
                       r["inductance"]] + [_fmt(r[c], "A") for c in drop_cols]
                      for r in sat_table], out,
                     notes=["'-' = not reached in the swept range. Read off each curve, "
                            "linear between the swept currents: finer steps move it, and "
                            "`magcheck check` finds the hand value by root-finding."])
    if margins:
        render_table("design margins along the sweep",
                     ["margin", "value", "limit", "margin left", "verdict", "basis", "note"],
                     [[m.label, _fmt(m.value, m.unit),
                       ("<= " if m.kind == "max" else ">= ") + _fmt(m.limit, m.unit),
                       "-" if not math.isfinite(m.margin_pct) else f"{m.margin_pct:+.1f} %",
                       m.verdict, m.basis, m.note] for m in margins], out)
        failed = any(m.verdict == "FAIL" for m in margins)
        out.write("design:    " + ("FAIL: a margin along the sweep is missed" if failed else
                                   "PASS: the design meets its margins along the sweep")
                  + " (hand-vs-FE agreement is judged by check and verify)\n")
    out.write(CAUTION + "\n")


def run(args: argparse.Namespace) -> int:
    src, case = case_source(args.case, allow_large=args.allow_large)
    specs_text = args.vary or (list(case.sweeps[0].vary) if case.sweeps else [])
    if not specs_text:
        raise CaseError("--vary", None, "give at least one --vary KEY=SPEC (the case declares "
                                        "no [sweep])")
    specs = [parse_vary(s, family=case.family_model) for s in specs_text]
    decl = case.sweeps[0] if (case.sweeps and not args.vary) else None
    drops = _drops(args.drops, decl.drops if decl else DEFAULT_DROPS)
    kind = args.inductance or (decl.inductance if decl else "incremental")
    if args.workers is not None and args.workers < 1:
        raise CaseError("--workers", args.workers, "must be at least 1")
    if not args.hand_only:
        from ...models.fe import guard_mesh_size

        guard_mesh_size(case)  # a mesh far too fine is bad input before the run, not n failures
    with Progress("sweep") as bar:
        res = run_sweep(src, specs, with_fe=not args.hand_only, predictor=args.predictor,
                        block=args.block, workers=args.workers, scheduler=args.scheduler,
                        on_done=bar,
                        names=CLI_OPTIONS if args.vary else {**CLI_OPTIONS, "vary": "sweep.vary"})
    margins, sat_table = sweep_margins(res, drops, kind)
    out = text_stream(args.csv, args.json)
    print_sweep(res, margins, sat_table, out)
    if args.csv:
        atomic_write_text(args.csv, sweep_csv(res))
    if args.json:
        write_json(args.json, sweep_json(res, margins, sat_table))
    if args.plots:
        from ...outputs.plots import save_sweep_figures

        for p in save_sweep_figures(res, args.plots, sat_table):
            out.write(f"figure: {p}\n")
    failed = [pt for pt in res.points if not pt.converged]
    if failed:
        for pt in failed:
            print(f"magcheck: point {pt.index} ({', '.join(f'{k} = {v:g}' for k, v in pt.settings.items())}) "
                  f"failed: {pt.message}", file=sys.stderr)
        return 3
    return 1 if any(m.verdict == "FAIL" for m in margins) else 0


def _hand_columns(case) -> str:
    from ...design.coremodel import core_model

    if core_model(case).axisymmetric:
        return "hand columns: the whole circuit (an r-z FE is a 3D solution)."
    return "hand columns: planar-consistent form (like for like with the planar FE)."
