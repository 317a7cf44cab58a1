"""The ``magcheck`` command line: a thin layer over the compare API.

Exit codes (a contract): 0 all well (and every limit and margin met);
1 a limit or margin failed; 2 bad input; 3 a solve failed.
"""

from __future__ import annotations

import argparse
import logging
import sys
import warnings
from typing import Sequence

from .errors import CaseError, RunError

__all__ = ["main", "EXIT_OK", "EXIT_FAIL", "EXIT_INPUT", "EXIT_SOLVE"]

EXIT_OK, EXIT_FAIL, EXIT_INPUT, EXIT_SOLVE = 0, 1, 2, 3


def _commands():
    # Imported here so `magcheck --help` stays quick and each sub-command
    # lives in its own module with add_args(parser) and run(args).
    from .commands import check, hand, materials, sweep, tolerance, verify

    return {"check": check, "hand": hand, "materials": materials, "sweep": sweep,
            "verify": verify, "tolerance": tolerance}


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="magcheck",
        description="Check a magnetic-circuit hand calculation of a gapped core "
                    "against a 2D field solution.")
    parser.add_argument("-v", "--verbose", action="store_true", help="log progress to stderr")
    sub = parser.add_subparsers(dest="command", required=True)
    for name, mod in _commands().items():
        p = sub.add_parser(name, help=mod.HELP, description=mod.HELP)
        mod.add_args(p)
        p.set_defaults(_run=mod.run)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Run magcheck; returns the exit code (see module docstring)."""
    parser = build_parser()
    try:
        args = parser.parse_args(argv)
    except SystemExit as exc:  # argparse: --help (0) or usage error (2)
        return int(exc.code or 0)
    logging.basicConfig(level=logging.INFO if args.verbose else logging.WARNING,
                        format="%(levelname)s %(name)s: %(message)s")
    with warnings.catch_warnings():
        warnings.simplefilter("default")
        warnings.showwarning = _show_warning
        try:
            return int(args._run(args))
        except CaseError as exc:
            print(f"magcheck: bad input: {exc}", file=sys.stderr)
            return EXIT_INPUT
        except RunError as exc:
            print(f"magcheck: solve failed: {exc}", file=sys.stderr)
            return EXIT_SOLVE
        except OSError as exc:
            print(f"magcheck: cannot write output: {exc.filename or ''}: {exc.strerror or exc}",
                  file=sys.stderr)
            return EXIT_INPUT


def _show_warning(message, category, filename, lineno, file=None, line=None) -> None:
    print(f"magcheck: warning: {message}", file=sys.stderr)


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
