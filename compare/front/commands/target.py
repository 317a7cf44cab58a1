"""``magcheck target CASE --key KEY=LO:HI --target QUANTITY OP VALUE[@AT]``:
the value of one design key that meets targets, by the hand model and the FE
(compare.studies.target)."""

from __future__ import annotations

import argparse
import math

from ...design.units import format_si
from ...errors import CaseError
from ...outputs.output import (CAUTION, STDOUT_HELP, figure_format, render_table, text_stream,
                               write_json)
from ...studies.target import (QUANTITIES, TargetAnswer, TargetResult, format_key_value,
                               parse_bracket, parse_target, solve_targets)

OUTPUTS = {"--json": "file", "--plot": "file"}
"""Output options and what each writes (checked before the run)."""


def input_files(args: argparse.Namespace) -> dict[str, str]:
    """The files the command reads (path -> what it is); no output may be one."""
    from ...reading.casefile import referenced_files

    return {args.case: "the input case file", **referenced_files(args.case)}


def add_args(p: argparse.ArgumentParser) -> None:
    p.add_argument("case", help="TOML case file")
    p.add_argument("--key", required=True, metavar="KEY=LO:HI",
                   help="the design key to solve and its bracket, in the --vary key grammar: "
                        "gaps[0].length=0.3mm:1.2mm, winding.turns=60:120, core.depth=10mm:40mm")
    p.add_argument("--target", action="append", default=[], metavar="Q OP VALUE[@AT]",
                   help="a target, OP one of >=, <=, =: inductance>=3.2mH@6A, "
                        "incremental_inductance>=2mH@8A, saturation_current>=8A@20%%, "
                        "force>=15N@2mm, peak_B<=1.5T; repeat for several (the key's range "
                        f"meeting all); quantities: {', '.join(QUANTITIES)}")
    p.add_argument("--hand-only", action="store_true", help="skip the FE model (fast)")
    p.add_argument("--no-uncertainty", action="store_true",
                   help="skip the three-mesh check at the FE answer")
    p.add_argument("--allow-large", action="store_true",
                   help="mesh even when the element estimate exceeds the limit "
                        "(as [fe] allow_large = true)")
    p.add_argument("--json", metavar="FILE",
                   help=f"write the answers, feasible ranges and points as JSON ({STDOUT_HELP})")
    p.add_argument("--plot", metavar="FILE",
                   help="write the figure: each target quantity against the key, hand curve, "
                        "FE points, target line (.png, .svg or .pdf)")


def _q(v: float, unit: str) -> str:
    return "-" if v is None or not math.isfinite(v) else format_si(v, unit)


def _range(key: str, r) -> str:
    if r is None:
        return "none"
    if r[0] == r[1]:
        return format_key_value(key, r[0])
    return f"{format_key_value(key, r[0])} .. {format_key_value(key, r[1])}"


def _difference(key: str, a: float, b: float) -> str:
    """FE minus hand in the key's unit, and in percent of the hand's."""
    from ...design.keys import display_unit, key_dimension

    if not (math.isfinite(a) and math.isfinite(b)):
        return "-"
    scale, unit = display_unit(key)
    d = b - a
    pct = f" ({100 * d / a:+.1f} %)" if a else ""
    if key_dimension(key) == "integer":
        return f"{d:+.3g}{pct}"
    if unit in ("", "mm"):
        return f"{d * scale:+.4g} {unit}".rstrip() + pct
    return ("+" if d >= 0 else "") + format_si(d, unit) + pct


def _answer_lines(res: TargetResult, a: TargetAnswer) -> list[str]:
    key, t = res.bracket.key, a.target
    lines = []
    for m in (a.hand, a.fe):
        if m is None:
            continue
        if math.isfinite(m.root):
            text = f"{m.model}: {format_key_value(key, m.root)}"
            if m.neighbours:
                text += " (" + "; ".join(
                    f"{format_key_value(key, n)}: {_q(q, t.unit)} "
                    f"{'meets' if ok else 'misses'}" for n, q, ok in m.neighbours) + ")"
        else:
            text = f"{m.model}: {m.note}"
        lines.append(text)
    if a.fe is not None and math.isfinite(a.hand.root) and math.isfinite(a.fe.root):
        lines.append(f"hand {format_key_value(key, a.hand.root)}, FE "
                     f"{format_key_value(key, a.fe.root)}: FE - hand = "
                     f"{_difference(key, a.hand.root, a.fe.root)}")
    if a.fe is not None:
        f = a.fe
        at_hand = dict(f.points).get(a.hand.root, math.nan) if math.isfinite(a.hand.root) else \
            math.nan
        if math.isfinite(at_hand):
            lines.append(f"FE at the hand's answer {format_key_value(key, a.hand.root)}: "
                         f"{_q(at_hand, t.unit)} (case mesh)")
        if math.isfinite(f.value):
            lines.append(f"FE at its answer (finest of three meshes): {_q(f.value, t.unit)} "
                         f"+/- {_q(f.uncertainty, t.unit)}")
        lines.append(f"FE: {f.evaluations} evaluations, {f.solves} field solves, "
                     f"{f.seconds:.1f} s; judged on {f.basis}")
    lines.append(f"hand: {a.hand.evaluations} evaluations, {a.hand.seconds:.2f} s; judged on "
                 f"{a.hand.basis or 'hand 3D'}")
    return lines


def print_result(res: TargetResult, out) -> None:
    key = res.bracket.key
    rows = []
    for a in res.answers:
        t = a.target
        row = [t.text, format_key_value(key, a.hand.root), _range(key, a.hand.feasible)]
        if res.with_fe and a.fe is not None:
            row += [format_key_value(key, a.fe.root), _range(key, a.fe.feasible),
                    _difference(key, a.hand.root, a.fe.root),
                    f"{_q(a.fe.value, t.unit)} +/- {_q(a.fe.uncertainty, t.unit)}",
                    str(a.fe.solves)]
        rows.append(row)
    cols = ["target", "hand", "hand meets"]
    if res.with_fe:
        cols += ["FE", "FE meets", "FE - hand", "FE at its answer", "FE solves"]
    notes = []
    for a in res.answers:
        notes += [f"{a.target.text}: {line}" for line in _answer_lines(res, a)]
    render_table(f"{res.case.name}: {key} in {format_key_value(key, res.bracket.lo)} .. "
                 f"{format_key_value(key, res.bracket.hi)}", cols, rows, out, notes=notes)
    if len(res.answers) > 1:
        for model, r in res.feasible.items():
            out.write(f"{model}: " + (f"{key} = {_range(key, r)} meets every target"
                                      if r else "no value of the key meets every target (the ranges above do not overlap)")
                      + "\n")
    out.write(f"wall time {res.seconds:.1f} s\n")
    out.write(CAUTION + "\n")


def run(args: argparse.Namespace) -> int:
    from ...reading.variants import case_source

    if args.plot:
        figure_format(args.plot, "--plot")  # bad input before the solves
    src, case = case_source(args.case, allow_large=args.allow_large)
    bracket = parse_bracket(args.key, family=case.family_model)
    if not args.target:
        raise CaseError("--target", None, "give at least one --target, e.g. "
                                          "inductance>=3.2mH@6A")
    targets = [parse_target(t) for t in args.target]
    if not args.hand_only:
        from ...models.fe import guard_mesh_size

        guard_mesh_size(case)
    res = solve_targets(src, bracket, targets, with_fe=not args.hand_only,
                        uncertainty=not args.no_uncertainty)
    out = text_stream(args.json)
    print_result(res, out)
    if args.json:
        write_json(args.json, res.to_dict())
    if args.plot:
        from ...outputs.plots import save_target_figure

        p = save_target_figure(res, args.plot)
        out.write(f"figure: {p}\n")
    return 0 if res.met else 1
