"""``magcheck check CASE``: hand calculation and field solution side by side."""

from __future__ import annotations

import argparse

from ...reading.casefile import load_case
from ...judge.check import AGREEMENT_MODES, CheckResult, run_check
from ...outputs.output import (CAUTION, STDOUT_HELP, atomic_write_text, can_print, terminal_width,
                               text_stream, wrap_text, write_json, write_lines)
from ...outputs.serialize import check_csv, check_json, check_lines, check_markdown

OUTPUTS = {"--json": "file", "--csv": "file", "--markdown": "file", "--report": "folder",
           "--vtu": "file", "--dxf": "file", "--ac-vtu": "file"}
"""Output options and what each writes (checked before the run)."""


def input_files(args: argparse.Namespace) -> dict[str, str]:
    """The files the command reads (path -> what it is); no output may be one."""
    from ...reading.casefile import referenced_files

    return {args.case: "the input case file", **referenced_files(args.case)}


def add_args(p: argparse.ArgumentParser) -> None:
    p.add_argument("case", help="TOML case file")
    p.add_argument("--json", metavar="FILE", help=f"write the full result as JSON ({STDOUT_HELP})")
    p.add_argument("--csv", metavar="FILE", help=f"write the comparison table as CSV ({STDOUT_HELP})")
    p.add_argument("--markdown", metavar="FILE", help=f"write the comparison as Markdown ({STDOUT_HELP})")
    p.add_argument("--report", metavar="DIR", help="write an HTML report with figures to DIR")
    p.add_argument("--vtu", metavar="FILE", help=f"write the FE fields as VTU ({STDOUT_HELP})")
    p.add_argument("--ac-vtu", metavar="FILE",
                   help="an AC winding's case: write the time-harmonic fields of the finest mesh "
                        "as VTU (|J| peak, loss density, |B| peak, Re/Im of the potential; "
                        f"{STDOUT_HELP})")
    p.add_argument("--dxf", metavar="FILE",
                   help="write the built geometry as a DXF drawing before solving: every region "
                        "of the FE model (core parts, gaps, coil sides, magnets) as closed "
                        "outlines on a layer of its name, in mm, which a family = \"drawn\" "
                        f"case reads back ({STDOUT_HELP})")
    p.add_argument("--geometry-only", action="store_true",
                   help="write the --dxf drawing and stop: no mesh, no solve, no table")
    p.add_argument("--all-fringing", action="store_true",
                   help="rank every fringing model by its difference to the FE")
    p.add_argument("--allow-large", action="store_true",
                   help="mesh even when the element estimate exceeds the limit "
                        "(as [fe] allow_large = true)")
    p.add_argument("--no-error-estimate", action="store_true",
                   help="solve on the case's mesh only, not on the three meshes of the FE "
                        "error estimate (no FE uncertainty; faster)")
    p.add_argument("--wide", action="store_true",
                   help="print every column (hand 3D and FE 3D too) and the full breakdown, "
                        "however wide; by default the output fits the terminal, at most 100 "
                        "columns")
    p.add_argument("--breakdown", action="store_true",
                   help="print the difference breakdown as a full table (by default one line)")
    p.add_argument("--force-curve", action="store_true",
                   help="with --report, a case with a moving part: FE force points along the "
                        "stroke on the force-stroke figure (the case's declared stroke sweep, "
                        "else 4 strokes over the figure's range; one nonlinear solve on the "
                        "case's mesh per stroke, ~1-2 s each)")
    add_agreement_arg(p)


def add_agreement_arg(p: argparse.ArgumentParser) -> None:
    """``--agreement {fatal,report}`` (check and verify)."""
    p.add_argument("--agreement", choices=AGREEMENT_MODES, default="fatal",
                   help="a hand-vs-FE disagreement beyond an agreement limit, the design "
                        "margins met: 'fatal' (default) exits 4, 'report' prints it and exits 0 "
                        "(a failed design margin exits 1 either way)")


def print_check(res: CheckResult, out, agreement: str = "fatal", *, wide: bool = False,
                breakdown: bool = False) -> None:
    """The check on the terminal: the verdicts first, the table by topic within
    the terminal's width (at most 100 columns unless ``wide``), the notes
    wrapped; coloured on a terminal, plain text otherwise."""
    width = terminal_width(out, wide)
    unicode = can_print(out)
    lines = check_lines(res, agreement, width=width, wide=wide, breakdown=breakdown,
                        unicode=unicode)
    ok = res.design_passed and res.agreement_passed
    last = ("verdict: " + ("PASS" if ok else "FAIL") + " (design "
            + ("PASS" if res.design_passed else "FAIL") + ", hand vs FE "
            + ("PASS" if res.agreement_passed else "FAIL") + "; details at the top)")
    lines += [(ln, "pass" if ok else "FAIL") for ln in wrap_text(last, width)]
    lines += [(ln, "dim") for ln in wrap_text(CAUTION, width)]
    write_lines(lines, out, width)


def run(args: argparse.Namespace) -> int:
    case = load_case(args.case)
    if _write_geometry(args, case):
        return 0
    if args.allow_large:
        from dataclasses import replace

        case = replace(case, fe=replace(case.fe, allow_large=True))
    if args.ac_vtu and (case.winding.ac is None or case.winding.conductor is None):
        from ...errors import CaseError

        raise CaseError("--ac-vtu", args.ac_vtu, "the case has no AC winding "
                        "([winding.conductor] and [winding.ac])")
    if args.force_curve and not args.report:
        from ...errors import CaseError

        raise CaseError("--force-curve", None, "draws on the --report figure: give --report DIR")
    curve = None
    if args.force_curve:  # before the check: a case without a moving part is bad input
        from ...studies.sweep import case_source, force_curve_strokes, run_force_curve

        force_curve_strokes(case)
        curve = run_force_curve(case_source(args.case, allow_large=args.allow_large)[0])
    res = run_check(case, all_fringing=args.all_fringing,
                    estimate_error=not args.no_error_estimate)
    if curve is not None:
        from dataclasses import replace as _replace

        res = _replace(res, force_curve=curve)
    out = text_stream(args.json, args.csv, args.markdown, args.vtu, args.dxf, args.ac_vtu)
    print_check(res, out, args.agreement, wide=args.wide, breakdown=args.breakdown)
    if args.json:
        write_json(args.json, check_json(res, args.agreement))
    if args.csv:
        atomic_write_text(args.csv, check_csv(res))
    if args.markdown:
        atomic_write_text(args.markdown, check_markdown(res, args.agreement))
    if args.vtu:
        from ...outputs.vtu import write_vtu

        write_vtu(res, args.vtu)
    if args.ac_vtu:
        from ...outputs.vtu import write_ac_vtu

        write_ac_vtu(res, args.ac_vtu)
    if args.report:
        from ...outputs.report import write_report

        path = write_report(res, args.report, args.agreement)
        out.write(f"report: {path}\n")
    return res.exit_code_for(args.agreement)


def _write_geometry(args: argparse.Namespace, case) -> bool:
    """``--dxf``: the built geometry, written before any solve (geometry only);
    True when ``--geometry-only`` ends the command there."""
    if args.geometry_only:
        from ...errors import CaseError

        if not args.dxf:
            raise CaseError("--geometry-only", None, "writes the --dxf drawing: give --dxf FILE")
        other = [o for o in OUTPUTS if o != "--dxf" and getattr(args, o[2:].replace("-", "_"))]
        if other:
            raise CaseError("--geometry-only", None, f"solves nothing, so {other[0]} has "
                                                     "nothing to write: drop one of them")
    if args.dxf:
        from ...outputs.drawing import write_dxf

        write_dxf(case, args.dxf)
    return bool(args.geometry_only)
