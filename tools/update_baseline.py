"""Rewrite entries of cases/baseline.json from the current code: run after a
deliberate change of results, and say in the commit why the values moved.

    PYTHONPATH=. python tools/update_baseline.py --cases demo-choke,demo-ei-inductor
    PYTHONPATH=. python tools/update_baseline.py --all [--folder cases]

It refuses to run without naming the cases (or --all), prints every value it
changes (old, new, relative change) and writes the file atomically. Each
entry stores the agreement rows' verdicts too (``agreement``): a FAIL stored
there is what `magcheck verify` reports as a known disagreement, so a demo
whose hand model misses something stays visible without failing CI; name
in the commit why a verdict is stored as FAIL.
"""

from __future__ import annotations

import argparse
import json
import math
import sys
from pathlib import Path

from magcheck.compare.judge.baseline import snapshot
from magcheck.compare.reading.casefile import load_case
from magcheck.compare.judge.check import run_check
from magcheck.compare.outputs.output import write_output


def _flat(d: dict, prefix: str = "") -> dict:
    out = {}
    for k, v in d.items():
        if isinstance(v, dict):
            out.update(_flat(v, f"{prefix}{k}."))
        else:
            out[f"{prefix}{k}"] = v
    return out


def diff_lines(name: str, old: dict | None, new: dict) -> list[str]:
    """One line per value that changed: key, old, new, relative change."""
    a, b = _flat(old or {}), _flat(new)
    lines = []
    for k in sorted(set(a) | set(b)):
        x, y = a.get(k), b.get(k)
        if x == y:
            continue
        if isinstance(x, (int, float)) and isinstance(y, (int, float)) and x and math.isfinite(x):
            rel = f"{100 * (y - x) / abs(x):+.4f} %"
        else:
            rel = ""
        lines.append(f"{name}.{k}: {x!r} -> {y!r} {rel}".rstrip())
    return lines


def main(argv: list[str] | None = None) -> int:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    g = p.add_mutually_exclusive_group(required=True)
    g.add_argument("--cases", help="comma-separated case names to regenerate")
    g.add_argument("--all", action="store_true", help="regenerate every case")
    p.add_argument("--folder", default="cases")
    args = p.parse_args(argv)
    folder = Path(args.folder)
    target = folder / "baseline.json"
    stored = json.loads(target.read_text()) if target.exists() else {}
    cases = {}
    for path in sorted(folder.glob("*.toml")):
        case = load_case(path)
        cases[case.name] = case
    wanted = set(cases) if args.all else {n.strip() for n in args.cases.split(",") if n.strip()}
    unknown = wanted - set(cases)
    if unknown:
        print(f"update_baseline: unknown case(s): {', '.join(sorted(unknown))}; "
              f"known: {', '.join(sorted(cases))}", file=sys.stderr)
        return 2
    out = {k: v for k, v in stored.items() if k in cases}
    for name in sorted(wanted):
        res = run_check(cases[name])
        new = snapshot(res)
        for line in diff_lines(name, stored.get(name), new) or [f"{name}: unchanged"]:
            print(line)
        out[name] = new
    write_output(target, json.dumps(out, indent=2, sort_keys=True) + "\n")
    print(f"wrote {target}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
