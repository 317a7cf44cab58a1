"""``magcheck materials [NAME] [--plot FILE] [--csv FILE]``: the built-in B-H
curves and magnet grades; ``--csv`` writes a curve as a case's ``{csv = ...}`` reads it."""

from __future__ import annotations

import argparse
import difflib

from magcheck.analytic.magnets import MAGNET_GRADES
from magcheck.analytic.materials import (bh_csv_text, builtin, builtin_csv_text, builtin_loss,
                                         builtin_names)

from ...errors import CaseError
from ...outputs.output import (STDOUT, STDOUT_HELP, atomic_write_text, figure_format,
                               render_table, save_figure, text_stream)

OUTPUTS = {"--plot": "file", "--csv": "file"}
"""Output options and what each writes (checked before the run)."""


def input_files(args: argparse.Namespace) -> dict[str, str]:
    """The files the command reads: none (the curves are built in)."""
    return {}


def add_args(p: argparse.ArgumentParser) -> None:
    p.add_argument("name", nargs="?", help="a built-in material or magnet grade")
    p.add_argument("--plot", metavar="FILE", help="draw the B-H curve to FILE (.png, .svg or .pdf)")
    p.add_argument("--csv", metavar="FILE",
                   help="write the B-H curve as CSV, the format a case's {csv = ...} reads "
                        f"({STDOUT_HELP})")


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


def _losses(names: list[str], out) -> None:
    """The core-loss data of the built-in materials that have it (invented for the demo)."""
    rows = []
    for n in names:
        m = builtin_loss(n)
        if m is None:
            continue
        c = m.steinmetz
        lam = (f"{m.thickness * 1e3:.3g} mm, {m.resistivity * 1e8:.3g} uohm cm"
               + (", Bertotti split" if m.lamination is not None else "")
               if m.thickness is not None and m.resistivity is not None else "-")
        rows.append([n, f"{c.k:.4g} {c.unit}", f"{c.alpha:.3g}", f"{c.beta:.3g}",
                     f"{c.f_min:g}-{c.f_max:g}", f"{c.b_min:g}-{c.b_max:g}", f"{m.density:g}",
                     lam])
    if rows:
        out.write("\n")
        render_table("core loss P = k f^alpha B_pk^beta (invented for the demo)",
                     ["name", "k", "alpha", "beta", "f Hz", "B_pk T", "density kg/m^3",
                      "lamination"], rows, out)


def csv_text(name: str) -> str:
    """Built-in material ``name`` as B-H CSV text (`bh_csv_text`): its table
    points in A/m and T, under the packaged file's first comment line (what
    the curve imitates; invented for the demo)."""
    curve = _get(name)
    first = next((line.lstrip("# ").rstrip() for line in builtin_csv_text(name).splitlines()
                  if line.startswith("#")), name)
    return bh_csv_text(curve, [first, f"Written by `magcheck materials {name} --csv`: the "
                                      "built-in table, origin included; read it with "
                                      "[materials] core = {csv = \"FILE\"}."])


def run(args: argparse.Namespace) -> int:
    out = text_stream(args.csv)
    for opt, what in (("--plot", "plot"), ("--csv", "write")):
        path = getattr(args, opt[2:])
        if not path:
            continue
        if opt == "--plot":
            figure_format(path, "--plot")
        if not args.name:
            raise CaseError(opt, path, f"name one material to {what}")
        if args.name in MAGNET_GRADES:
            raise CaseError(opt, path, f"'{args.name}' is a magnet grade, a straight "
                                       f"recoil line: name a B-H material to {what}")
    if args.name in MAGNET_GRADES:
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
    _losses(names, out)
    if not args.name:
        out.write("\n")
        _magnets(list(MAGNET_GRADES), out)
    if args.plot:
        from magcheck.analytic.plotting import bh_figure

        written = save_figure(bh_figure(_get(args.name)), args.plot, option="--plot", dpi=100)
        out.write(f"wrote {written or args.plot}\n")
    if args.csv:
        written = atomic_write_text(args.csv, csv_text(args.name))
        if args.csv != STDOUT:
            out.write(f"wrote {written or args.csv}\n")
    return 0
