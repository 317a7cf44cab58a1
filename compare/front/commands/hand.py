"""``magcheck hand CASE``: the magnetic-circuit operating point of a case."""

from __future__ import annotations

import argparse
import math

from ...reading.casefile import load_case
from ...models.hand import UNITS, HandResult, cancelling_windings, check_hand_options, run_hand
from ...outputs.output import CAUTION, STDOUT_HELP, render_table, text_stream, write_json
from ...design.units import format_si

OUTPUTS = {"--json": "file"}
"""Output options and what each writes (checked before the run)."""


def input_files(args: argparse.Namespace) -> dict[str, str]:
    """The files the command reads (path -> what it is); no output may be one."""
    from ...reading.casefile import referenced_files

    return {args.case: "the input case file", **referenced_files(args.case)}


def add_args(p: argparse.ArgumentParser) -> None:
    p.add_argument("case", help="TOML case file")
    p.add_argument("--json", metavar="FILE", help=f"also write the result as JSON ({STDOUT_HELP})")
    p.add_argument("--fringing", metavar="MODEL", help="override the case's fringing model")
    p.add_argument("--planar", action="store_true",
                   help="in-plane fringing only (the form a planar field model sees)")


def hand_json(case, result: HandResult) -> dict:
    return {"case": {"name": case.name, "family": case.family, "file": case.source,
                     "sha256": case.sha256},
            "hand": result.to_dict(),
            "caution": CAUTION}


def run(args: argparse.Namespace) -> int:
    case = load_case(args.case)
    check_hand_options(case, args.fringing, args.planar, names=("--fringing", "--planar"))
    res = run_hand(case, fringing=args.fringing, planar=args.planar)
    print_hand(case, res, text_stream(args.json))
    if args.json:
        write_json(args.json, hand_json(case, res))
    return 0


def print_hand(case, res: HandResult, out) -> None:
    w = case.winding
    form = "planar (in-plane fringing only)" if res.planar else "3D"
    cancel = cancelling_windings(case, res)

    def val(v: float) -> float:  # the float residue of a cancellation prints as 0
        return 0.0 if cancel or v == 0.0 else v

    rows = [[s["name"], s["kind"], f"{s['length'] * 1e3:.3f}", f"{s['area'] * 1e6:.2f}",
             f"{val(s['B']):.4f}", f"{val(s['H']):.4g}", f"{val(s['mmf_drop']):.4g}"]
            for s in res.segments]
    render_table(f"{case.name}: magnetic circuit, N = {w.turns}, I = {w.current:g} A, "
                 f"NI = {w.mmf:g} A; fringing model '{res.fringing_model}', {form}",
                 ["segment", "kind", "length mm", "area mm^2", "B T", "H A/m", "MMF drop A"],
                 rows, out)
    labels = {
        "flux": "flux (winding limb)", "gap_B": "gap B (flux / effective gap area)",
        "core_B": "core B (length-weighted mean over the path)",
        "path_H": "path-averaged H (core segments)", "flux_linkage": "flux linkage N*flux",
        "inductance": "inductance, secant lambda/I",
        "incremental_inductance": "inductance, incremental d lambda/dI",
        "energy": "stored energy (integral of H dB)",
    }
    # a quantity the case does not have (gap B of a core without a gap) prints as "-"
    net = ("flux", "gap_B", "core_B", "path_H", "flux_linkage", "inductance", "energy")

    def shown(k: str) -> float:
        return val(getattr(res, k)) if k in net else getattr(res, k)

    rows2 = [[labels[k], format_si(shown(k), UNITS[k])
              if math.isfinite(getattr(res, k)) else "-"] for k in labels]
    notes = [f"Newton: {res.iterations} iterations, relative residual {res.residual:.1e}"]
    if cancel:
        notes.insert(0, f"The windings' fields cancel ({', '.join(cancel)}: equal ampere-turns "
                        "in opposite senses): no net MMF round the core, so its flux and every "
                        "value that follows it are 0; the incremental inductance stands.")
    render_table("operating point", ["quantity", "value"], rows2, out, notes=[*notes, CAUTION])
