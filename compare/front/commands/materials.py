"""``magcheck materials [NAME] [--plot FILE]``: the built-in B-H curves and
magnet grades."""

from __future__ import annotations

import argparse
import difflib
import sys

from magcheck.analytic.magnets import MAGNET_GRADES
from magcheck.analytic.materials import builtin, builtin_names

from ...errors import CaseError
from ...outputs.output import figure_format, render_table, save_figure

OUTPUTS = {"--plot": "file"}
"""Output options and what each writes (checked before the run)."""


def input_files(args: argparse.Namespace) -> dict[str, str]:
    """The files the command reads: none (the curves are built in)."""
    return {}


def add_args(p: argparse.ArgumentParser) -> None:
    p.add_argument("name", nargs="?", help="a built-in material or magnet grade")
    p.add_argument("--plot", metavar="FILE", help="draw the B-H curve to FILE (.png, .svg or .pdf)")


def _get(name: str):
    if name not in builtin_names():
        known = [*builtin_names(), *MAGNET_GRADES]
        close = difflib.get_close_matches(name, known, n=1)
        hint = f"; did you mean '{close[0]}'?" if close else ""
        raise CaseError("material", name, f"unknown built-in material; known: "
                                          f"{', '.join(builtin_names())}; magnet grades: "
                                          f"{', '.join(MAGNET_GRADES)}{hint}")
    return builtin(name)


def _magnets(names: list[str], out) -> None:
    rows = [[g.name, f"{g.remanence:.3f}", f"{g.mu_r:.3g}", f"{g.coercivity / 1e3:.0f}",
             f"{g.knee_H / 1e3:.0f}", g.description]
            for g in (MAGNET_GRADES[n] for n in names)]
    render_table("built-in magnet grades (linear recoil; invented for the demo)",
                 ["name", "B_r T", "recoil mu_r", "H_c kA/m", "knee H kA/m", "origin"], rows,
                 out)


def run(args: argparse.Namespace) -> int:
    out = sys.stdout
    if args.plot:
        figure_format(args.plot, "--plot")
        if not args.name:
            raise CaseError("--plot", args.plot, "name one material to plot")
    if args.name in MAGNET_GRADES:
        if args.plot:
            raise CaseError("--plot", args.plot, f"'{args.name}' is a magnet grade, a straight "
                                                 "recoil line: name a B-H material to plot")
        _magnets([args.name], out)
        return 0
    names = [args.name] if args.name else builtin_names()
    rows = []
    for n in names:
        c = _get(n)
        rows.append([n, f"{c.mu_r_initial:.0f}", f"{float(c.b_of_h(1000.0)):.3f}",
                     f"{float(c.b_of_h(10000.0)):.3f}", f"{c.b_max:.3f}", f"{c.h_max:.4g}",
                     c.source])
    render_table("built-in B-H curves (invented for the demo)",
                 ["name", "initial mu_r", "B at 1 kA/m T", "B at 10 kA/m T",
                  "last B T", "last H A/m", "origin"], rows, out)
    if not args.name:
        out.write("\n")
        _magnets(list(MAGNET_GRADES), out)
    if args.plot:
        from magcheck.analytic.plotting import bh_figure

        written = save_figure(bh_figure(_get(args.name)), args.plot, option="--plot", dpi=100)
        out.write(f"wrote {written or args.plot}\n")
    return 0
