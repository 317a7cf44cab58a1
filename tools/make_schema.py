"""Write the JSON Schema of case files, docs/case.schema.json, from the reader's key declarations.

    PYTHONPATH=. python3 tools/make_schema.py            # rewrite docs/case.schema.json
    PYTHONPATH=. python3 tools/make_schema.py --check    # exit 1 and print the diff on drift

The schema comes from compare/design/casekeys.py and the built-in
families' ``core_spec``/``table_specs`` (compare.design.schema.case_schema),
the same declarations the case reader checks its reads against; run this
after declaring a key.  tests/test_schema.py fails when the committed file
differs from what this writes.
"""

from __future__ import annotations

import argparse
import difflib
import json
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent


def schema_text() -> str:
    """The schema as it is committed: 2-space JSON, keys in declared order."""
    from magcheck.compare.design.schema import case_schema

    return json.dumps(case_schema(), indent=2, ensure_ascii=False) + "\n"


def main(argv: list[str] | None = None) -> int:
    from magcheck.compare.design.schema import SCHEMA_PATH

    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--check", action="store_true",
                   help="write nothing; exit 1 and print the diff when the file is stale")
    args = p.parse_args(argv)
    path = ROOT / SCHEMA_PATH
    new = schema_text()
    old = path.read_text(encoding="utf-8") if path.is_file() else ""
    if args.check:
        if old == new:
            return 0
        sys.stdout.writelines(difflib.unified_diff(old.splitlines(True), new.splitlines(True),
                                                   str(path), "generated"))
        return 1
    if old != new:
        path.write_text(new, encoding="utf-8")
        print(f"wrote {path.relative_to(ROOT)}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
