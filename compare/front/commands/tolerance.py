"""``magcheck tolerance CASE --samples N --seed S``: Monte Carlo over the case's tolerances."""

from __future__ import annotations

import argparse
import math

from ...errors import CaseError
from ...studies.executor import Progress
from ...outputs.output import (CAUTION, STDOUT_HELP, figure_format, render_table, text_stream,
                               write_json)
from ...design.units import format_si

PERCENTILES = (5.0, 50.0, 95.0)  # as compare.studies.tolerance.PERCENTILES (not imported: start-up time)

_UNITS = {"inductance": "H", "peak_B": "T", "saturation_current": "A",
          # the loss budget's margins as judged (compare.studies.tolerance.LOSS_FIGURES)
          "total_loss": "W", "core_loss": "W", "efficiency": "%", "regulation": "%",
          "temperature_rise": "K"}
_LOSS_LABELS = {"total_loss": "total loss", "core_loss": "core loss",
                "efficiency": "efficiency at rated load",
                "regulation": "voltage regulation at rated load",
                "temperature_rise": "temperature rise (estimate)"}

OUTPUTS = {"--json": "file", "--plot": "file"}
"""Output options and what each writes (checked before the run)."""


def input_files(args: argparse.Namespace) -> dict[str, str]:
    """The files the command reads (path -> what it is); no output may be one."""
    from ...reading.casefile import referenced_files

    return {args.case: "the input case file", **referenced_files(args.case)}


def add_args(p: argparse.ArgumentParser) -> None:
    p.add_argument("case", help="TOML case file with [[tolerances]]")
    p.add_argument("--samples", type=int, default=50, help="number of samples (default 50)")
    p.add_argument("--seed", type=int, default=0, help="random seed (default 0)")
    p.add_argument("--fe-samples", type=int, metavar="M",
                   help="run the FE on the first M samples only and correct the rest through "
                        "the fitted hand-vs-FE relation (default: all)")
    p.add_argument("--allow-large", action="store_true",
                   help="mesh even when the element estimate exceeds the limit "
                        "(as [fe] allow_large = true)")
    p.add_argument("--workers", type=int, help="worker processes (default: one per core, one for fewer than 4 tasks)")
    p.add_argument("--scheduler", metavar="ADDRESS",
                   help="dask.distributed scheduler (default $DASK_SCHEDULER_ADDRESS)")
    p.add_argument("--min-yield", type=float, metavar="PCT",
                   help="exit 1 when fewer than PCT %% of the samples meet every margin")
    p.add_argument("--json", metavar="FILE", help=f"write samples and statistics as JSON ({STDOUT_HELP})")
    p.add_argument("--plot", metavar="FILE", help="write the histograms (.png, .svg or .pdf)")


def _labels(res) -> dict[str, str]:
    """A label per figure of ``res.values``; an inductance window's figure
    (``inductance_<kind>@<I>A``) reads "L (<kind>) at <I> A, as judged"."""
    out = {"inductance": f"inductance (secant) at {res.case.winding.current:g} A",
           "peak_B": "peak core B",
           "saturation_current": f"saturation current (hand, L -{100 * res.drop:g} %)"}
    for k in res.values:
        if k in _LOSS_LABELS:
            out[k] = f"{_LOSS_LABELS[k]}, as judged"
        if k.startswith("inductance_"):
            kind, at = k[len("inductance_"):].split("@", 1)
            out[k] = f"L ({kind}) at {at[:-1]} A, as judged"
    return out


def _unit(figure: str) -> str:
    return "H" if figure.startswith("inductance") else _UNITS[figure]


def print_tolerance(res, out) -> None:
    pct = res.percentiles(PERCENTILES)
    labels = _labels(res)
    rows = [[labels[k]] + [format_si(v, _unit(k)) if math.isfinite(v) else "-" for v in vals]
            for k, vals in pct.items()]
    notes = [f"{len(res.samples)} samples, seed {res.seed}; FE on {res.fe_samples}. "
             + "; ".join(f"{k}: {v}" for k, v in res.fits.items()),
             f"Yield (every design margin met; hand-vs-FE agreement is not part of it): "
             f"{100 * res.yield_fraction:.1f} % "
             f"({int(res.passed.sum())} of {res.passed.size}). Run time {res.seconds:.1f} s."]
    render_table(f"{res.case.name}: tolerance study", ["figure"] + [f"P{q:g}" for q in PERCENTILES],
                 rows, out, notes=notes)
    out.write(CAUTION + "\n")


def run(args: argparse.Namespace) -> int:
    if args.min_yield is not None and not 0.0 <= args.min_yield <= 100.0:
        raise CaseError("--min-yield", args.min_yield, "must lie in [0, 100]")
    if args.plot:
        figure_format(args.plot, "--plot")  # bad input before the long run
    if args.samples < 1:
        raise CaseError("--samples", args.samples, "must be at least 1")
    if args.workers is not None and args.workers < 1:
        raise CaseError("--workers", args.workers, "must be at least 1")
    from ...studies.sweep import case_source
    from ...studies.tolerance import CLI_OPTIONS, run_tolerance

    src, case = case_source(args.case, allow_large=args.allow_large)
    with Progress("tolerance") as bar:
        res = run_tolerance(src, samples=args.samples, seed=args.seed, fe_samples=args.fe_samples,
                            workers=args.workers, scheduler=args.scheduler, on_done=bar,
                            names=CLI_OPTIONS)
    out = text_stream(args.json)
    print_tolerance(res, out)
    if args.json:
        from ...outputs.serialize import tolerance_json

        write_json(args.json, tolerance_json(res))
    if args.plot:
        from ...outputs.plots import save_tolerance_figure

        out.write(f"figure: {save_tolerance_figure(res, _labels(res), args.plot)}\n")
    # The nominal design's own margins are judged by check/verify; a tolerance
    # study fails (exit 1) only against a stated yield.
    if args.min_yield is not None and 100.0 * res.yield_fraction < args.min_yield:
        out.write(f"FAIL: yield {100 * res.yield_fraction:.1f} % is below "
                         f"{args.min_yield:g} %\n")
        return 1
    return 0
