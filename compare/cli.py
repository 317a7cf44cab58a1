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


# Sub-command -> one-line help. Each lives in compare/commands/<name>.py with
# add_args(parser) and run(args); only the one asked for is imported, so a
# light command (hand, materials) does not pay for the FE stack's imports.
COMMANDS: dict[str, str] = {
    "check": "run the magnetic-circuit model and the planar FE model on one case and "
             "compare them quantity by quantity",
    "hand": "solve a case's magnetic circuit (the hand calculation) and print its operating point",
    "materials": "list the built-in B-H curves, or show and plot one",
    "sweep": "solve a case over values of its keys (a current sweep gives L(I) and the "
             "saturation current); hand and FE at every point",
    "verify": "run every case (and the sweeps it declares) under the given files or folders "
              "and print a pass/fail table of every limit and margin",
    "tolerance": "Monte Carlo over the tolerances a case declares: percentiles of inductance, "
                 "peak core B and saturation current, and the yield (samples meeting every margin)",
}


def build_parser(command: str | None = None) -> argparse.ArgumentParser:
    """The argument parser; the arguments of ``command`` only (all when None)."""
    import importlib

    parser = argparse.ArgumentParser(
        prog="magcheck",
        description="Check a magnetic-circuit hand calculation of a gapped core "
                    "against a 2D field solution.")
    parser.add_argument("-v", "--verbose", action="store_true", help="log progress to stderr")
    sub = parser.add_subparsers(dest="command", required=True)
    for name, text in COMMANDS.items():
        p = sub.add_parser(name, help=text, description=text)
        if command is None or name == command:
            mod = importlib.import_module(f"compare.commands.{name}")
            mod.add_args(p)
            p.set_defaults(_run=mod.run)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Run magcheck; returns the exit code (see module docstring)."""
    argv = list(sys.argv[1:] if argv is None else argv)
    chosen = next((a for a in argv if a in COMMANDS), None)
    parser = build_parser(chosen if chosen is not None and "-h" not in argv[:1] else None)
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
