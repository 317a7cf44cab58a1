"""Rewrite cases/baseline.json from the current code: run after a deliberate
change of results, and say in the commit why the values moved.

    PYTHONPATH=. python tools/update_baseline.py [cases/]
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

from compare.baseline import snapshot
from compare.case import load_case
from compare.check import run_check


def main(folder: str = "cases") -> None:
    out = {}
    for path in sorted(Path(folder).glob("*.toml")):
        case = load_case(path)
        res = run_check(case)
        out[case.name] = snapshot(res)
        print(f"{case.name}: {res.timings['total']:.1f} s")
    target = Path(folder) / "baseline.json"
    target.write_text(json.dumps(out, indent=2, sort_keys=True) + "\n")
    print(f"wrote {target}")


if __name__ == "__main__":
    main(*sys.argv[1:])
