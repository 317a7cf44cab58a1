"""The ``magcheck`` command line: a thin layer over the compare API.

Exit codes (a contract): 0 all well (and every limit and margin met);
1 a design margin failed; 2 bad input; 3 a solve failed; 4 the design
margins met but hand and FE disagree beyond an agreement limit (check and
verify; 0 with ``--agreement report``; before the two verdicts this was 1);
130 interrupted (Ctrl-C). A closed standard output ends the run quietly with 0.
"""

from __future__ import annotations

import argparse
import logging
import os
import sys
import warnings
from typing import NoReturn, Sequence

from ..errors import CaseError, RunError

__all__ = ["main", "EXIT_OK", "EXIT_FAIL", "EXIT_INPUT", "EXIT_SOLVE", "EXIT_AGREEMENT",
           "EXIT_INTERRUPT"]

EXIT_OK, EXIT_FAIL, EXIT_INPUT, EXIT_SOLVE, EXIT_AGREEMENT = 0, 1, 2, 3, 4
EXIT_INTERRUPT = 130


# Sub-command -> one-line help. Each lives in compare/front/commands/<name>.py with
# add_args(parser), run(args), OUTPUTS (output option -> "file" or "folder")
# and input_files(args) (input path -> what it is), the last two checked by
# _check_outputs before the run; only the one asked for is imported, so a
# light command (hand, materials) does not pay for the FE stack's imports.
COMMANDS: dict[str, str] = {
    "check": "run the magnetic-circuit model and the FE model (planar or axisymmetric) on one case and "
             "compare them quantity by quantity",
    "hand": "solve a case's magnetic circuit (the hand calculation) and print its operating point",
    "materials": "list the built-in B-H curves, or show, plot or write one as CSV",
    "sweep": "solve a case over values of its keys (a current sweep gives L(I) and the "
             "saturation current); hand and FE at every point",
    "verify": "run every case (and the sweeps it declares) under the given files or folders "
              "and print a pass/fail table of every limit and margin",
    "tolerance": "Monte Carlo over the tolerances a case declares: percentiles of inductance, "
                 "peak core B and saturation current, and the yield (samples meeting every margin)",
    "target": "find the value of one design key (a gap, the turns, a dimension) that meets "
              "targets such as inductance>=3.2mH@6A, by the hand model and by the FE",
    "selftest": "run the field engine on exact-solution cases (planar and axisymmetric) and "
                "print FE value, reference, relative error and tolerance for each",
}


class _Parser(argparse.ArgumentParser):
    """argparse with one-line usage errors: ``magcheck: bad input: --seed:
    invalid int value: 'abc' (magcheck tolerance --help)``, exit 2, instead
    of the usage block (which ``--help`` gives)."""

    def error(self, message: str) -> NoReturn:
        text = " ".join(message.split())  # argparse's text on one line
        if text.startswith("argument "):
            text = text[len("argument "):]
        text = text.replace("argument command: ", "command: ")
        prog = getattr(self, "help_prog", None) or self.prog
        print(f"magcheck: bad input: {_printable(text)} ({prog} --help)", file=sys.stderr)
        raise SystemExit(EXIT_INPUT)


def _printable(text: str) -> str:
    """``text`` without control characters (a newline or escape typed into an
    argument reaches the terminal as its escaped form; `errors.printable`)."""
    from ..errors import printable

    return printable(text)


def build_parser(command: str | None = None) -> argparse.ArgumentParser:
    """The argument parser; the arguments of ``command`` only (all when None,
    none when "")."""
    import importlib

    parser = _Parser(
        prog="magcheck",
        description="Check the magnetic-circuit hand calculation of a magnetic device "
                    "(choke, transformer, relay, solenoid, holding magnet) against a 2D "
                    "field solution.")
    parser.add_argument("-v", "--verbose", action="store_true", help="log progress to stderr")
    parser.add_argument("--version", action="version", version=f"magcheck {_version()}")
    sub = parser.add_subparsers(dest="command", required=True)
    for name, text in COMMANDS.items():
        p = sub.add_parser(name, help=text, description=text)
        # -v after the sub-command too; SUPPRESS keeps a -v given before it
        p.add_argument("-v", "--verbose", action="store_true", default=argparse.SUPPRESS,
                       help="log progress to stderr")
        if command is None or name == command:
            mod = importlib.import_module(f"magcheck.compare.front.commands.{name}")
            mod.add_args(p)
            p.set_defaults(_run=mod.run, _command=mod)
    return parser


def _version() -> str:
    from importlib.metadata import PackageNotFoundError, version

    try:
        return version("magcheck")
    except PackageNotFoundError:  # run from a source tree without installing
        return "unknown"


def main(argv: Sequence[str] | None = None) -> int:
    """Run magcheck; returns the exit code (see module docstring).

    A closed standard output (``magcheck hand CASE | head -1``) ends the run
    quietly with exit 0, the usual convention of command-line tools; Ctrl-C
    ends it with one line and exit 130 (128 + SIGINT).
    """
    try:
        code = _main(argv)
        sys.stdout.flush()  # a closed pipe shows here, not at interpreter exit
        return code
    except BrokenPipeError:
        # Quiet the interpreter's final flush of the dead pipe.
        try:
            devnull = os.open(os.devnull, os.O_WRONLY)
            os.dup2(devnull, sys.stdout.fileno())
        except (OSError, ValueError):
            pass
        return EXIT_OK
    except KeyboardInterrupt:
        print("magcheck: interrupted", file=sys.stderr)
        from magcheck.fem2d.mesher import meshing_in_progress

        if meshing_in_progress():
            # gmsh is still working in the abandoned helper thread: end the
            # process now rather than let interpreter shutdown race its C code
            sys.stdout.flush()
            sys.stderr.flush()
            os._exit(EXIT_INTERRUPT)
        return EXIT_INTERRUPT


def _main(argv: Sequence[str] | None) -> int:
    argv = list(sys.argv[1:] if argv is None else argv)
    chosen = next((a for a in argv if a in COMMANDS), None)
    # the top-level help, --version and a usage error need no command's
    # arguments: "" imports none of the command modules (0.3 s instead of 0.8 s)
    top = chosen is None or argv[:1] in (["-h"], ["--help"])
    parser = build_parser("" if top else chosen)
    if chosen is not None:  # unknown options are reported by the top parser
        setattr(parser, "help_prog", f"magcheck {chosen}")
    try:
        args = parser.parse_args(argv)
    except SystemExit as exc:  # argparse: --help (0) or usage error (2)
        return int(exc.code or 0)
    logging.basicConfig(level=logging.INFO if args.verbose else logging.WARNING,
                        format="%(levelname)s %(name)s: %(message)s")
    _SAID.clear()
    with warnings.catch_warnings():
        warnings.simplefilter("default")
        warnings.showwarning = _show_warning
        try:
            _check_outputs(args)
            return int(args._run(args))
        except CaseError as exc:
            print(f"magcheck: bad input: {_printable(str(exc))}", file=sys.stderr)
            return EXIT_INPUT
        except RunError as exc:
            print(f"magcheck: solve failed: {_printable(str(exc))}", file=sys.stderr)
            return EXIT_SOLVE
        except BrokenPipeError:
            raise
        except OSError as exc:
            where = _output_option(args, exc.filename)
            print(f"magcheck: cannot write output: {_printable(where)}: {exc.strerror or exc}",
                  file=sys.stderr)
            return EXIT_INPUT


def _output_option(args: argparse.Namespace, path: object) -> str:
    """``--json PATH`` for a failed write of PATH: the option that named it,
    or the path alone (a file inside a --report folder)."""
    text = os.fspath(path) if isinstance(path, (str, os.PathLike)) else ""
    mod = getattr(args, "_command", None)
    for opt in getattr(mod, "OUTPUTS", {}):
        value = getattr(args, opt.lstrip("-").replace("-", "_"), None)
        if value and text and (value == text or text.startswith(os.path.join(value, ""))):
            return f"{opt} {value}" if value == text else f"{opt} {value} ({text})"
    return text or "(unknown path)"


def _check_outputs(args: argparse.Namespace) -> None:
    """Refuse clashing or unwritable output paths right after parsing, before
    any solve (`compare.outputs.output.check_outputs`; bad input, exit 2)."""
    from ..outputs.output import check_outputs

    mod = args._command
    outputs = [(opt, getattr(args, opt.lstrip("-").replace("-", "_")), kind)
               for opt, kind in mod.OUTPUTS.items()]
    check_outputs(outputs, mod.input_files(args))


_SAID: set[tuple[str, str]] = set()
"""(warning kind, material) of the B-H range warnings said in this run."""


def _show_warning(message, category, filename, lineno, file=None, line=None) -> None:
    """Print a warning in one line; a B-H curve's range warning once per
    material (a sweep or a saturation search solves the hand model many
    times, each solve past the curve's last point would repeat it)."""
    material = getattr(message, "material", None)
    text = _printable(str(message))
    if material is not None:
        key = (category.__name__, str(material))
        if key in _SAID:
            return
        _SAID.add(key)
        text += " (said once per material; other solves may go further)"
    print(f"magcheck: warning: {text}", file=sys.stderr)


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
