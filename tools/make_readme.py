"""Regenerate every number-bearing block of README.md from the code.

    PYTHONPATH=. python3 tools/make_readme.py            # rewrite the quick blocks
    PYTHONPATH=. python3 tools/make_readme.py --slow     # ... and the FE-run blocks
    PYTHONPATH=. python3 tools/make_readme.py --check    # exit 1 and print the diff on drift

A block is the text between ``<!-- generated: NAME -->`` and
``<!-- end generated -->`` (a whole table, a code block, or a few words
inside a sentence); everything outside the markers is left as written.
Each NAME has one function below.  The quick blocks are deterministic and
take about a second: case results come from ``cases/baseline.json`` (which
tests/test_cases_regression.py holds to the code), other figures from hand
model calls, the command reference from the argument parser.  The slow
blocks (marked ``generated (slow)``: a full ``magcheck check`` printout,
force-stroke sweeps, the transformer demo's check, the selftest's force
cases, leakage and open-boundary studies) run field solutions, a few
minutes in all; ``--slow`` regenerates them, ``--check --slow`` compares
them too (measured run times and a converged Newton residual are not
compared).  tests/test_readme.py checks the quick blocks, and each slow
block on its own in the slow tier.
"""

from __future__ import annotations

import argparse
import difflib
import io
import json
import math
import re
import sys
import types
from collections.abc import Callable
from functools import lru_cache
from contextlib import redirect_stdout
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
README = ROOT / "README.md"
BASELINE = ROOT / "cases" / "baseline.json"
# the studies the tests and the README share (tests/study_cases.py)
sys.path.insert(0, str(ROOT / "tests"))

BLOCK = re.compile(r"(<!-- generated(?P<slow> \(slow\))?: (?P<name>[\w-]+) -->)(?P<body>.*?)"
                   r"(<!-- end generated -->)", re.S)
# what varies from run to run inside slow blocks is not compared: measured
# times, and a converged Newton residual at rounding level
TIMING = re.compile(r"run time [0-9.]+ s")
RESIDUAL = re.compile(r"to residual [0-9.]+e[+-]?[0-9]+")


def normalize(text: str) -> str:
    """``text`` with the run-to-run noise of a printout masked."""
    return RESIDUAL.sub("to residual N", TIMING.sub("run time N s", text))


@lru_cache(maxsize=1)
def _baseline() -> dict:
    return json.loads(BASELINE.read_text())


def _case(name: str):
    from magcheck.compare.reading.casefile import load_case

    return load_case(ROOT / "cases" / f"{name}.toml")


def _pct(h: float, f: float) -> float:
    return 100.0 * (h - f) / f


def _sig(x: float, n: int = 4) -> str:
    """n significant digits, trailing zeros kept (11.80, 0.6725)."""
    return f"{x:#.{n}g}".rstrip(".")


def _e(x: float, digits: int = 1) -> str:
    """Scientific notation as the README writes it: 2.2e-5, not 2.2e-05."""
    return re.sub(r"e([+-])0*(\d)", lambda m: "e" + m[1].replace("+", "") + m[2], f"{x:.{digits}e}")


def _signed(x: float, digits: int = 1) -> str:
    """A percent difference as the README writes it (typographic minus)."""
    s = f"{x:+.{digits}f}"
    return s.replace("-", "−")


# ------------------------------------------------------------ quick blocks
def block_commands() -> str:
    """The command reference: every sub-command's usage and options, from
    the argument parser (compare/front/cli.py, compare/front/commands/*)."""
    from magcheck.compare.front.cli import COMMANDS, build_parser

    parser = build_parser()
    subs = next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction))
    out = ["", "Generated from the argument parser (`magcheck COMMAND --help` prints the same).", ""]
    for name in COMMANDS:
        p = subs.choices[name]
        fmt = argparse.HelpFormatter(p.prog, width=10_000, max_help_position=10_000)
        fmt.add_usage(p.usage, p._actions, p._mutually_exclusive_groups, prefix="")
        usage = " ".join(fmt.format_help().split())
        out.append(f"**`magcheck {name}`** — {COMMANDS[name]}.")
        out.append("")
        out.append(f"`{usage}`")
        out.append("")
        # the sub-command's own arguments, positionals first; -h and the global -v left out
        acts = [a for a in p._actions if a.dest not in ("help", "verbose")]
        for a in sorted(acts, key=lambda a: bool(a.option_strings)):
            if a.help == argparse.SUPPRESS:
                continue
            if a.option_strings:
                metavar = fmt._format_args(a, a.dest.upper()) if a.nargs != 0 else ""
                flag = ", ".join(a.option_strings) + (f" {metavar}" if metavar else "")
            else:
                flag = fmt._format_args(a, a.dest)
            text = " ".join(fmt._expand_help(a).split()) if a.help else ""
            out.append(f"- `{flag}`: {text}")
        out.append("")
    return "\n".join(out) + "\n"


def block_choke_gap_B() -> str:
    b = _baseline()["demo-choke"]
    return f"{abs(_pct(b['hand_planar']['gap_B'], b['fe']['gap_B'])):.0f} %"


def block_choke_L() -> str:
    b = _baseline()["demo-choke"]
    return f"{abs(_pct(b['hand_planar']['inductance'], b['fe']['inductance'])):.0f} %"


@lru_cache(maxsize=1)
def _choke_breakdown():
    from magcheck.compare.judge.breakdown import BREAKDOWN_KEYS, difference_breakdown
    from magcheck.compare.judge.check import rank_fringing

    case = _case("demo_choke")
    fe = types.SimpleNamespace(values=_baseline()["demo-choke"]["fe"])
    best = rank_fringing(case, fe)[0]["model"]  # type: ignore[arg-type]
    return BREAKDOWN_KEYS, difference_breakdown(case, fe.values, best)


def block_choke_breakdown() -> str:
    """The difference-breakdown table of the demo choke, from the stored FE
    values and the hand model's steps (compare.judge.breakdown)."""
    keys, steps = _choke_breakdown()
    heads = {"gap_B": "gap B", "core_B": "core B", "path_H": "path H", "flux": "flux",
             "inductance": "L", "incremental_inductance": "dL/dI"}
    lines = ["  | step | " + " | ".join(heads[k] for k in keys) + " |",
             "  |---|" + "---|" * len(keys)]
    for s in steps:
        lines.append(f"  | {s.name} | " + " | ".join(_signed(s.diff_pct[k]) for k in keys) + " |")
    return "\n" + "\n".join(lines) + "\n\n  "


def block_choke_fringing_gain() -> str:
    _, steps = _choke_breakdown()
    return f"{abs(steps[1].diff_pct['inductance'] - steps[0].diff_pct['inductance']):.1f} points"


def block_choke_leakage_gain() -> str:
    _, steps = _choke_breakdown()
    leak = next(s for s in steps if s.name == "window leakage")
    prev = steps[steps.index(leak) - 1]
    return f"{abs(leak.diff_pct['inductance'] - prev.diff_pct['inductance']):.1f}"


def block_choke_left() -> str:
    _, steps = _choke_breakdown()
    last = steps[-1]
    return (f"the {abs(last.diff_pct['inductance']):.0f} % left, with core B now "
            f"{abs(last.diff_pct['core_B']):.1f} % {'high' if last.diff_pct['core_B'] > 0 else 'low'}")


def block_pot_core_L() -> str:
    b = _baseline()["demo-pot-core-choke"]
    return (f"L {_sig(b['hand']['inductance'] * 1e3)} mH by hand, "
            f"{_sig(b['fe']['inductance'] * 1e3)} mH by FE")


def block_drawn_L() -> str:
    b = _baseline()
    return (f"{_sig(b['demo-drawn-core']['fe']['inductance'] * 1e3)} mH against the rectangular "
            f"choke's {_sig(b['demo-choke']['fe']['inductance'] * 1e3)} mH")


def block_plunger_force_3mm() -> str:
    b = _baseline()["demo-plunger-solenoid"]
    return f"{_signed(_pct(b['hand']['force'], b['fe']['force']))} %"


def block_ei_leakage() -> str:
    """The demo EI's planar hand inductance against the stored FE value,
    without and with window leakage (the case's conformal fringing)."""
    from magcheck.compare.models.hand import run_hand

    case = _case("demo_ei_inductor")
    fe = _baseline()["demo-ei-inductor"]["fe"]["inductance"]
    off, on = (_pct(run_hand(case, planar=True, leakage=lk).inductance, fe) for lk in (False, True))
    return f"{_signed(off)} % to {_signed(on)} %"


def block_motion_demos() -> str:
    """The moving-armature demos' limits and times, hand (planar form) and FE,
    from the stored results (cases/baseline.json, block ``motion``)."""
    b = _baseline()
    rows = ["| case | model | pull-in | drop-out | operate | release | current dip |",
            "|---|---|---|---|---|---|---|"]
    for name, label in (("demo-clapper-relay", "clapper relay, 24 V"),
                        ("demo-plunger-solenoid", "plunger solenoid, 12 V")):
        mo = b[name]["motion"]
        for key, model in (("hand", "hand"), ("fe", "FE")):
            v = mo[key]
            rows.append(f"| {label} | {model} | {_sig(v['pull_in_voltage'], 3)} V | "
                        f"{_sig(v['drop_out_voltage'], 3)} V | "
                        f"{_sig(v['operate_time'] * 1e3, 3)} ms | "
                        f"{_sig(v['release_time'] * 1e3, 3)} ms | "
                        f"{_sig(v['current_dip'] * 1e3, 3)} mA |")
    return "\n" + "\n".join(rows) + "\n\n"


def block_magnet_release() -> str:
    """The holding-magnet demo's release current and voltage, hand and FE,
    from the stored results (cases/baseline.json, block ``motion``)."""
    mo = _baseline()["demo-holding-magnet"]["motion"]
    h, f = mo["hand"], mo["fe"]
    ohm = h["release_voltage"] / h["release_current"]  # the coil at its temperature
    return (f"{_sig(h['release_current'], 3)} A by hand, {_sig(f['release_current'], 3)} A FE "
            f"({_sig(h['release_voltage'], 3)} V and {_sig(f['release_voltage'], 3)} V at "
            f"{ohm:.3g} Ω)")


def block_agreement_limits() -> str:
    """The default agreement limits of the main rows (compare.judge.check.DEFAULT_LIMITS)."""
    from magcheck.compare.judge.check import DEFAULT_LIMITS

    names = (("gap_B", "gap B"), ("core_B", "core B"),
             ("path_H", "path-averaged H"), ("flux", "flux"), ("flux_linkage", "flux linkage"),
             ("inductance", "inductance"), ("incremental_inductance", "incremental inductance"),
             ("energy", "energy"))
    parts = [f"{label} {DEFAULT_LIMITS[k]:g}" + (" (H is far from uniform along a path)"
                                                 if k == "path_H" else "")
             for k, label in names]
    return ", ".join(parts)


def block_magnet_grades() -> str:
    """The built-in magnet grades (analytic.magnets.MAGNET_GRADES)."""
    from magcheck.analytic.magnets import MAGNET_GRADES

    parts = []
    for i, g in enumerate(MAGNET_GRADES.values()):
        vals = (f"{g.remanence:.2f} T", f"{g.mu_r:.2f}", f"{g.knee_H / 1e3:.0f} kA/m".replace("-", "−"))
        if i == 0:
            parts.append(f"`{g.name}`: B_r {vals[0]}, recoil μ_r {vals[1]}, knee {vals[2]}")
        else:
            parts.append(f"`{g.name}`: " + ", ".join(vals))
    return "; ".join(parts)


def block_mesh_ratio() -> str:
    from magcheck.fem2d.mesher import TRIANGLE_ESTIMATE_RATIO

    lo, hi = TRIANGLE_ESTIMATE_RATIO
    return f"{lo:g}-{hi:g}x"


def block_selftest_force_count() -> str:
    from magcheck.fem2d.verification import CASES

    n = sum("force" in name for name in CASES)
    words = {5: "five", 6: "six", 7: "seven", 8: "eight", 9: "nine", 10: "ten"}
    return words.get(n, str(n))


# ------------------------------------------------------------- bench records
BENCH_RESULTS = ROOT / "bench" / "results"


def _bench_text(name: str) -> str:
    """A bench's recorded printout (``python bench/NAME.py ... --record
    bench/results/NAME.txt``), trailing blanks dropped."""
    path = BENCH_RESULTS / f"{name}.txt"
    if not path.exists():
        return f"(not recorded: python bench/{name}.py ... --record bench/results/{name}.txt)"
    return "\n".join(line.rstrip() for line in path.read_text(encoding="utf-8").strip().splitlines())


def _bench_block(name: str) -> str:
    return "\n```text\n" + _bench_text(name) + "\n```\n"


def block_bench_check() -> str:
    """bench/check_bench.py's recorded table (bench/results/check_bench.txt)."""
    return _bench_block("check_bench")


def block_bench_fe() -> str:
    """bench/fe_bench.py's recorded table (bench/results/fe_bench.txt)."""
    return _bench_block("fe_bench")


def block_bench_sweep() -> str:
    """bench/sweep_bench.py's recorded printout (bench/results/sweep_bench.txt)."""
    return _bench_block("sweep_bench")


_CHECK_ROW = re.compile(r"^(?P<label>\S.*?)\s+(?P<tree>\S+)\s+(?P<wall>[0-9.]+) \([0-9.]+-[0-9.]+\)\s+"
                        r"(?P<cpu>[0-9.]+) \(")


def _check_walls() -> dict[str, dict[str, tuple[float, float]]]:
    """tree -> command label -> median (wall, CPU) seconds, from the recorded check bench."""
    out: dict[str, dict[str, tuple[float, float]]] = {}
    for line in _bench_text("check_bench").splitlines()[3:]:
        m = _CHECK_ROW.match(line)
        if m:
            out.setdefault(m["tree"], {})[m["label"]] = (float(m["wall"]), float(m["cpu"]))
    return out


def _recorded(name: str) -> str:
    """'DATE at load L' from a record's header line."""
    m = re.match(r"recorded (\S+) [0-9:]+ UTC, tree \S+, load ([0-9.]+)", _bench_text(name))
    return f"{m[1]} at load {m[2]}" if m else "?"


def _fe_ratios() -> dict[str, dict[str, list[float]]]:
    """tree -> {"cold": [NL/dir ...], "warm_p1": [warm/dir ...], "warm_p2": [...]}
    of the default solver's rows of the recorded FE bench."""
    out: dict[str, dict[str, list[float]]] = {}
    for line in _bench_text("fe_bench").splitlines():
        f = line.split()
        if len(f) < 19 or f[4] != "default" or not f[2].isdigit():
            continue
        d = out.setdefault(f[0], {"cold": [], "warm_p1": [], "warm_p2": []})
        d["cold"].append(float(f[16]))
        d["warm_p2" if f[3] == "2" else "warm_p1"].append(float(f[18]))
    return out


def _sweep_ratios() -> dict[str, str]:
    """tree -> the sweep / linear-reference ratio of the recorded sweep bench
    (``--quick --against REV``: a row per tree, the ratio last)."""
    out = {}
    for line in _bench_text("sweep_bench").splitlines():
        f = line.split()
        if len(f) == 8 and f[1].isdigit():
            out[f[0]] = f[7]
    return out


def _span(xs: list[float], digits: int = 1) -> str:
    lo, hi = min(xs), max(xs)
    return f"{lo:.{digits}f}" if f"{lo:.{digits}f}" == f"{hi:.{digits}f}" else \
        f"{lo:.{digits}f}-{hi:.{digits}f}"


def block_bench_goals() -> str:
    """The speed goals beside the recorded benches: this tree and the
    revision each bench ran against, side by side."""
    walls = _check_walls()
    fe = _fe_ratios()
    if not walls or not fe:
        return "\n(not recorded: run bench/check_bench.py and bench/fe_bench.py with --record)\n"
    trees = list(walls)
    this, other = trees[0], trees[1] if len(trees) > 1 else None
    fe_trees = list(fe)
    fe_other = fe_trees[1] if len(fe_trees) > 1 else None

    def cw(tree: str | None, label: str) -> str:
        if not tree or label not in walls.get(tree, {}):
            return "-"
        w, c = walls[tree][label]
        return f"{w:.2f} ({c:.2f})"

    def others(tree: str | None) -> str:
        if tree is None:
            return "-"
        xs = [v for k, v in walls[tree].items() if k.startswith("check ")
              and k not in ("check demo_choke", "check demo_ei_transformer")]
        return f"{_span([w for w, _ in xs])} ({_span([c for _, c in xs])})" if xs else "-"

    def ratio(tree: str | None, key: str) -> str:
        return _span(fe[tree][key]) if tree and fe.get(tree, {}).get(key) else "-"

    sweep = _sweep_ratios()
    rows = [("`magcheck --help`, wall (CPU) s", "<= 0.5", cw(other, "--help"), cw(this, "--help")),
            ("`magcheck hand` demo choke, wall (CPU) s", "<= 1", cw(other, "hand demo_choke"),
             cw(this, "hand demo_choke")),
            ("`check` demo choke, wall (CPU) s", "<= 2.5", cw(other, "check demo_choke"),
             cw(this, "check demo_choke")),
            ("`check` demo EI transformer, wall (CPU) s", "<= 20", cw(other, "check demo_ei_transformer"),
             cw(this, "check demo_ei_transformer")),
            ("`check` every other bundled case, wall (CPU) s", "<= 10 each", others(other), others(this)),
            ("nonlinear solve / one direct solve, cold start (fe_bench NL/dir)", "<= 4",
             ratio(fe_other, "cold"), ratio(fe_trees[0], "cold")),
            ("the same, warm start from the next coarser mesh, P2 (fe_bench warm/dir)", "<= 4",
             ratio(fe_other, "warm_p2"), ratio(fe_trees[0], "warm_p2")),
            ("the same, warm start, P1 (small meshes)", "<= 4",
             ratio(fe_other, "warm_p1"), ratio(fe_trees[0], "warm_p1")),
            ("41-point current sweep of the demo choke / (meshing + 41 linear solves)", "<= 2",
             sweep.get(other or "", "-"), sweep.get(this, "-"))]
    lines = [f"| figure | goal | {other or '-'} | {this} |", "|---|---|---|---|"]
    lines += [f"| {a} | {b} | {c} | {d} |" for a, b, c, d in rows]
    lines += ["", f"Recorded: check bench {_recorded('check_bench')}, FE bench "
              f"{_recorded('fe_bench')}, sweep bench {_recorded('sweep_bench')} (2 cores; "
              "the wall-time goals are for an idle machine, where wall is about CPU)."]
    return "\n" + "\n".join(lines) + "\n"


# ------------------------------------------------------------- slow blocks
def block_choke_check() -> str:
    """The printout of ``magcheck check cases/demo_choke.toml`` (FE run)."""
    from magcheck.compare.front.cli import main

    buf = io.StringIO()
    with redirect_stdout(buf):
        main(["check", str(ROOT / "cases" / "demo_choke.toml")])
    text = "\n".join(line.rstrip() for line in buf.getvalue().strip().splitlines())
    return "\n```\n" + text + "\n```\n"


def block_measured_demo() -> str:
    """The measured column of cases/demo_choke_measured.toml (FE run)."""
    from magcheck.compare.judge.check import run_check
    from magcheck.compare.reading.casefile import load_case

    (m,) = run_check(load_case(ROOT / "cases" / "demo_choke_measured.toml")).measured
    mh = 1e3
    return (f"at {m.at:g} A measured {m.measured * mh:.3g} ± {m.u_measured * mh:.2g} mH, "
            f"hand 3D {m.hand * mh:.4g} mH (Δ/u {m.hand_sigma:+.1f}), FE 3D {m.fe * mh:.4g} ± "
            f"{m.u_fe * mh:.3g} mH (Δ/u {m.fe_sigma:+.1f})").replace("-", "\u2212")


@lru_cache(maxsize=None)
def _force_sweep(case: str, strokes: tuple[str, ...]) -> dict[str, dict]:
    """stroke -> {hand, hand_pull, fe, fe_vw, fe_peak_B}: a sweep of the
    stroke with both models (N, T; hand in the planar form like the sweep
    table)."""
    from magcheck.compare.front import api

    sw = api.sweep(str(ROOT / "cases" / f"{case}.toml"), "core.stroke=" + ",".join(strokes))
    return {s: {"hand": p.hand_planar["force"], "hand_pull": p.hand_planar["force_pull"],
                "fe": p.fe["force_maxwell"], "fe_vw": p.fe["force_virtual_work"],
                "fe_peak_B": p.fe_peak_B}
            for s, p in zip(strokes, sw.points)}


def _force_rows(case: str, strokes: tuple[str, ...], label: str = "") -> list[str]:
    rows = []
    for s, v in _force_sweep(case, strokes).items():
        vals = (v["hand"], v["hand_pull"], v["fe"], v["fe_vw"])
        rows.append(f"| {label}{s.replace('mm', ' mm')} | "
                    + " | ".join(f"{_sig(x)} N" for x in vals) + " |")
    return rows


CLAPPER = ("0.2mm", "0.8mm", "1.2mm")
PLUNGER = ("1mm", "3mm")
HOLDING = ("0.1mm", "1mm")


def block_clapper_forces() -> str:
    head = ["", "| stroke | hand, virtual work | hand, pull formula | FE, Maxwell stress | FE, virtual work |",
            "|---|---|---|---|---|"]
    return "\n".join(head + _force_rows("demo_clapper_relay", CLAPPER)) + "\n\n"


def block_plunger_holding_forces() -> str:
    head = ["", "| case, stroke | hand, virtual work | hand, pull formula | FE, Maxwell stress | "
                "FE, virtual work |", "|---|---|---|---|---|"]
    rows = (_force_rows("demo_plunger_solenoid", PLUNGER, "plunger, ")
            + _force_rows("demo_holding_magnet", HOLDING, "holding magnet, "))
    return "\n".join(head + rows) + "\n\n"


def block_clapper_pull() -> str:
    f = _force_sweep("demo_clapper_relay", CLAPPER)
    a, b = (_pct(f[s]["hand_pull"], f[s]["fe"]) for s in (CLAPPER[0], CLAPPER[-1]))
    return (f"{a:.0f} % at {CLAPPER[0].replace('mm', ' mm')} and {b:.0f} % at "
            f"{CLAPPER[-1].replace('mm', ' mm')}")


def block_clapper_vw() -> str:
    f = _force_sweep("demo_clapper_relay", CLAPPER)
    d = {s: -_pct(v["hand"], v["fe"]) for s, v in f.items()}
    lo, hi = min(d.values()), max(d.values())
    where = max(d, key=lambda s: d[s])
    word = "below" if lo > 0 else "from"
    return (f"{lo:.0f}-{hi:.0f} % {word} the FE along the stroke ({hi:.0f} % at "
            f"{where.replace('mm', ' mm')})")


@lru_cache(maxsize=1)
def _transformer() -> dict:
    """The voltage-driven EI transformer demo's check (about 90 s): drive,
    inrush and leakage-inductance figures of both models."""
    from dataclasses import replace

    from magcheck.analytic.magnetizing import inrush_peak
    from magcheck.compare.judge.check import run_check
    from magcheck.compare.models.coupling import hand_leakage

    case = _case("demo_ei_transformer")
    res = run_check(case)
    d, w = res.drive, case.winding
    undamped = {}
    for m in ("hand", "fe"):
        cur, lam = d.curves[f"{m}_inrush"]
        undamped[m] = inrush_peak(cur, lam, w.voltage, w.frequency, d.residual_flux, 0.0).current
    plain = replace(case, hand=replace(case.hand, rogowski=False))
    with_kr = replace(case, hand=replace(case.hand, rogowski=True))
    return {"drive": d, "leakage": res.leakage, "undamped": undamped,
            "ls_plain": hand_leakage(plain), "ls_kr": hand_leakage(with_kr)}


def block_transformer_summary() -> str:
    t = _transformer()
    d, lk, un = t["drive"], t["leakage"], t["undamped"]
    h3, f3 = d.hand.harmonics_pct[3], d.fe.harmonics_pct[3]
    third = (f"3rd harmonic {h3:.1f} % in both" if f"{h3:.1f}" == f"{f3:.1f}"
             else f"3rd harmonic {h3:.1f} % by hand, {f3:.1f} % FE")
    return (f"B_pk {d.B_peak[0]:.2f} T by hand, {d.B_peak[1]:.2f} T FE; magnetizing current "
            f"{d.hand.peak * 1e3:.1f} mA peak / {d.hand.rms * 1e3:.1f} mA rms by hand, "
            f"{d.fe.peak * 1e3:.1f} / {d.fe.rms * 1e3:.1f} mA FE, {third}; leakage inductance "
            f"{lk['hand'] * 1e3:.1f} mH by hand, {lk['fe'] * 1e3:.1f} mH FE; inrush first peak "
            f"(residual {d.residual_flux:g}, {_transformer_ohm()}) {d.inrush['hand']:.1f} A by hand, "
            f"{d.inrush['fe']:.1f} A FE (undamped, the bound: {un['hand']:.1f} A by hand, "
            f"{un['fe']:.1f} A FE")


def _transformer_ohm() -> str:
    return f"{_case('demo_ei_transformer').winding.resistance:g} Ω"


def block_transformer_rogowski() -> str:
    t = _transformer()
    fe = t["leakage"]["fe"]
    return f"{_signed(_pct(t['ls_plain'], fe))} % into {_signed(_pct(t['ls_kr'], fe))} %"


def block_transformer_inrush() -> str:
    d = _transformer()["drive"]
    u = d.uncertainty.get("inrush_current_peak", float("nan"))
    return (f"{d.inrush['hand']:.2f} A by hand and {d.inrush['fe']:.2f} A by FE "
            f"(±{100 * u / d.inrush['fe']:.2f} %)")


def block_transformer_undamped() -> str:
    un = _transformer()["undamped"]
    return f"{un['hand']:.1f} A and {un['fe']:.1f} A"


def block_plunger_small_stroke() -> str:
    v = _force_sweep("demo_plunger_solenoid", ("0.2mm",))["0.2mm"]
    pull, vw = _pct(v["hand_pull"], v["fe"]), _pct(v["hand"], v["fe"])
    return (f"FE peak B {v['fe_peak_B']:.2f} T at 0.2 mm, where the pull formula comes within "
            f"{abs(pull):.0f} % of the FE and the network's virtual work is {abs(vw):.0f} % "
            f"{'under' if vw < 0 else 'over'} it")


SELFTEST_FORCES = (  # README row label -> selftest cases (fem2d.verification.CASES)
    ("two round wires, ±10 A, 6 mm apart (planar)", "μ0 I1 I2/(2π d), exact",
     ("planar-wire-pair-force",)),
    ("wire beside a permeable cylinder, μr 10 (planar)", "images, exact",
     ("planar-wire-cylinder-force",)),
    ("two coaxial coils (r-z)", "I1 I2 dM/dz, Maxwell's formula", ("rz-coaxial-coil-force",)),
    ("two cylinder magnets, faces 1 / 2.5 / 5 mm apart (r-z)",
     "sheet currents with Maxwell's formula (= magpylib, tests/test_force_references.py)",
     ("rz-magnet-pair-force-1mm", "rz-magnet-pair-force-2.5mm", "rz-magnet-pair-force-5mm")),
    ("U core and armature, saturating steel, two 0.5 mm gaps (planar)", "the other method",
     ("planar-armature-force",)),
)


def block_selftest_forces() -> str:
    """The selftest's force cases on the quick meshes (fem2d.verification)."""
    from magcheck.fem2d.verification import run_cases

    names = tuple(n for *_, group in SELFTEST_FORCES for n in group)
    res = {r.name.split(":")[0]: r for r in run_cases(quick=True, names=names)}  # "NAME: title"
    lines = ["", "| case | reference | error (stress) | stress vs virtual work |", "|---|---|---|---|"]
    for label, ref, group in SELFTEST_FORCES:
        rs = [res[n] for n in group]
        if label.startswith("U core"):  # its reference is the other method
            err = "—"
        else:
            err = " / ".join(
                _e(abs((r.methods or {})["maxwell_stress"] - r.reference) / abs(r.reference))
                for r in rs)
        # far below the methods' tolerance the two methods' difference moves
        # from run to run with the solvers' rounding (7.4e-12 and 1.1e-11 on
        # the coaxial coils in two runs): below 1e-6 it is shown as a bound
        spread = max(float(r.methods_rel_diff or 0.0) for r in rs)
        vw = "< 1e-6" if spread < 1e-6 else _e(spread)
        lines.append(f"| {label} | {ref} | {err} | {vw} |")
    return "\n".join(lines) + "\n\n"


def block_selftest_count() -> str:
    from magcheck.fem2d.verification import CASES

    return f"{len(CASES)} exact-solution cases"


def block_open_boundary() -> str:
    """The demo choke's open boundary against the limit of ever larger closed
    boxes (Richardson over factors 6, 12, 24), as tests/test_open_boundary_case.py."""
    from dataclasses import replace

    from magcheck.compare.models.fe import run_fe

    case = _case("demo_choke")

    def values(boundary: str, factor: float) -> tuple[float, float]:
        c = replace(case, fe=replace(case.fe, boundary=boundary, air_factor=factor))
        q, _, _ = run_fe(c)
        return q.values["inductance"], q.values["gap_B"]

    closed = [values("closed", f) for f in (6.0, 12.0, 24.0)]
    opened, old = values("open", 1.5), values("closed", 3.0)
    lim = []
    for k in (0, 1):
        q1, q2, q3 = (c[k] for c in closed)
        p = min(max(math.log(abs((q1 - q2) / (q2 - q3))) / math.log(2.0), 1.0), 4.0)
        lim.append(q3 + (q3 - q2) / (2.0 ** p - 1.0))
    e_l, e_b = (abs(opened[k] - lim[k]) / abs(lim[k]) for k in (0, 1))
    low = 100 * (lim[0] - old[0]) / lim[0]
    return (f"within {_e(e_l)} in L and {_e(e_b)} in gap B, where the former 3x closed box was "
            f"{abs(low):.2f} % {'low' if low > 0 else 'high'} in L")


def block_leakage_windows() -> str:
    from study_cases import ideal_window_core
    from magcheck.compare.models.fe import run_fe
    from magcheck.compare.models.hand import run_hand

    off, on = [], []
    for ow, oh in ((40, 100), (60, 60), (100, 40)):
        q, _, _ = run_fe(ideal_window_core(ow, oh, "conformal", False))
        fe = q.values["inductance"]
        for out, leak in ((off, False), (on, True)):
            hand = run_hand(ideal_window_core(ow, oh, "conformal", leak), planar=True)
            out.append(_pct(hand.inductance, fe))
    return "/".join(_signed(x) for x in off) + " % to " + "/".join(_signed(x) for x in on) + " %"


def _pot_leakage(heights: tuple[float, ...], end_mm: float) -> list[tuple[float, float, float, float]]:
    """(h_w mm, hand H, FE H, K_R) per winding height."""
    from study_cases import pot_pair
    from magcheck.analytic.leakage import rogowski_factor
    from magcheck.compare.models.coupling import fe_leakage, hand_leakage
    from magcheck.compare.models.fe import mesh_case

    rows = []
    for h in heights:
        case = pot_pair(h, end_mm)
        rows.append((h, hand_leakage(case), fe_leakage(case, mesh_case(case)),
                     rogowski_factor(h * 1e-3, 1.5e-3, 1.5e-3, 0.5e-3)))
    return rows


def block_leakage_hw_table() -> str:
    lines = ["", "| h_w | hand | FE | FE/hand | K_R | FE/(K_R·hand) |", "|---|---|---|---|---|---|"]
    for h, hand, fe, k in _pot_leakage((6.0, 12.0, 24.0, 48.0), 1.0):
        lines.append(f"| {h:g} mm | {_sig(hand * 1e6)} µH | {_sig(fe * 1e6)} µH | "
                     f"{fe / hand:.3f} | {k:.3f} | {fe / (k * hand):.3f} |")
    return "\n".join(lines) + "\n\n"


def block_leakage_hw_3mm() -> str:
    rows = _pot_leakage((3.0, 6.0, 12.0, 24.0, 48.0), 3.0)
    return (", ".join(f"{fe / (k * hand):.3f}" for _, hand, fe, k in rows) + " over h_w = "
            + ", ".join(f"{h:g}" for h, *_ in rows) + " mm")


def block_loss_budget() -> str:
    """The three loss-budget demos' stored results (cases/baseline.json's loss blocks): hand
    (planar form) against FE with its uncertainty."""
    base = _baseline()
    lines = ["| case | core loss, hand / FE | total loss, hand / FE | efficiency (rated), hand / FE "
             "| regulation, hand / FE | temperature rise, hand / FE |",
             "|---|---|---|---|---|---|"]
    for name in ("demo-foil-choke", "demo-ei-transformer", "demo-ferrite-transformer"):
        lb = base[name]["loss"]
        h, f, u = lb["hand_planar"], lb["fe"], lb["fe_uncertainty"]

        def w(k: str) -> str:
            return f"{_sig(h[k], 3)} / {_sig(f[k], 3)} ± {u[k]:.1g} W"

        def pct(k: str) -> str:
            return f"{h[k]:.2f} / {f[k]:.2f} %" if k in h else "-"

        lines.append(f"| `{name}` | {w('core_loss')} | {w('total_loss')} | {pct('efficiency')} | "
                     f"{pct('regulation')} | {h['temperature_rise']:.1f} / "
                     f"{f['temperature_rise']:.1f} K |")
    return "\n" + "\n".join(lines) + "\n"


QUICK: dict[str, Callable[[], str]] = {
    "loss-budget": block_loss_budget,
    "bench-goals": block_bench_goals,
    "bench-check": block_bench_check,
    "bench-fe": block_bench_fe,
    "bench-sweep": block_bench_sweep,
    "commands": block_commands,
    "motion-demos": block_motion_demos,
    "magnet-release": block_magnet_release,
    "choke-gap-B": block_choke_gap_B,
    "choke-L": block_choke_L,
    "choke-breakdown": block_choke_breakdown,
    "choke-fringing-gain": block_choke_fringing_gain,
    "choke-leakage-gain": block_choke_leakage_gain,
    "choke-left": block_choke_left,
    "pot-core-L": block_pot_core_L,
    "drawn-L": block_drawn_L,
    "plunger-force-3mm": block_plunger_force_3mm,
    "ei-leakage": block_ei_leakage,
    "selftest-count": block_selftest_count,
    "selftest-force-count": block_selftest_force_count,
    "agreement-limits": block_agreement_limits,
    "magnet-grades": block_magnet_grades,
    "mesh-ratio": block_mesh_ratio,
}
SLOW: dict[str, Callable[[], str]] = {
    "choke-check": block_choke_check,
    "clapper-forces": block_clapper_forces,
    "plunger-holding-forces": block_plunger_holding_forces,
    "clapper-pull": block_clapper_pull,
    "clapper-vw": block_clapper_vw,
    "plunger-small-stroke": block_plunger_small_stroke,
    "transformer-summary": block_transformer_summary,
    "transformer-rogowski": block_transformer_rogowski,
    "transformer-inrush": block_transformer_inrush,
    "transformer-undamped": block_transformer_undamped,
    "selftest-forces": block_selftest_forces,
    "open-boundary": block_open_boundary,
    "leakage-windows": block_leakage_windows,
    "leakage-hw-table": block_leakage_hw_table,
    "leakage-hw-3mm": block_leakage_hw_3mm,
    "measured-demo": block_measured_demo,
}


def render(text: str, slow: bool) -> str:
    """README text with its blocks regenerated (slow ones only with ``slow``).

    Raises ValueError for a block of unknown name, a block marked quick or
    slow against its generator's kind, or a generator without its block.
    """
    seen = set()

    def sub(m: re.Match) -> str:
        name, is_slow = m["name"], bool(m["slow"])
        table = SLOW if is_slow else QUICK
        if name not in table:
            kind = "slow" if name in SLOW else "quick" if name in QUICK else None
            raise ValueError(f"README block {name!r}: " + (f"it is a {kind} block, mark it so"
                                                          if kind else "no generator of that name"))
        seen.add(name)
        if is_slow and not slow:
            return m.group(0)
        try:
            body = table[name]()
        except Exception as exc:  # name the block; the cause's traceback follows
            raise RuntimeError(f"README block {name!r}: its generator failed: {exc}") from exc
        return m.group(1) + body + m.group(5)

    out = BLOCK.sub(sub, text)
    missing = (set(QUICK) | set(SLOW)) - seen
    if missing:
        raise ValueError(f"README.md has no block for {', '.join(sorted(missing))}")
    return out


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--check", action="store_true",
                    help="write nothing; exit 1 and print the diff when README.md differs")
    ap.add_argument("--slow", action="store_true", help="also the blocks that need FE runs")
    args = ap.parse_args(argv)
    old = README.read_text(encoding="utf-8")
    try:
        new = render(old, args.slow)
    except ValueError as exc:
        print(f"make_readme: {exc}", file=sys.stderr)
        return 2
    if args.check:
        a, b = normalize(old), normalize(new)
        if a == b:
            print("README.md is up to date" + (" (quick and slow blocks)" if args.slow else ""))
            return 0
        sys.stdout.writelines(difflib.unified_diff(
            a.splitlines(keepends=True), b.splitlines(keepends=True),
            "README.md", "README.md as tools/make_readme.py writes it"))
        print("\nREADME.md is stale: run PYTHONPATH=. python3 tools/make_readme.py"
              + (" --slow" if args.slow else ""))
        return 1
    if new != old:
        from magcheck.compare.outputs.output import write_output

        write_output(README, new)
        print("wrote README.md")
    else:
        print("README.md unchanged")
    return 0


if __name__ == "__main__":
    sys.exit(main())
