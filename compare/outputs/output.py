"""Output at the edge: the one writer of every output file, terminal tables, the caution text."""

from __future__ import annotations

import errno
import io
import json
import math
import os
import stat
import sys
import tempfile
from pathlib import Path
from typing import Any, Callable, Sequence, TextIO

# the caution and the JSON cleaning live with the check's document (the judge
# layer), which CheckResult.to_dict gives without the outputs layer
from ..judge.document import CAUTION, json_ready

__all__ = ["CAUTION", "STDOUT", "STDOUT_HELP", "FIGURE_FORMATS", "write_output",
           "atomic_write_text", "write_produced", "figure_format", "save_figure", "write_json",
           "render_table", "check_outputs", "text_stream"]

STDOUT = "-"
"""The path that means standard output (``--json -``, ``--csv -``, ``--markdown -``)."""

STDOUT_HELP = "- for standard output; the table and notes then go to standard error"
"""The help text of an output option that takes ``-`` (see `text_stream`)."""

FIGURE_FORMATS: tuple[str, ...] = ("png", "svg", "pdf")
"""Figure file suffixes every figure option accepts."""


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def write_output(path: str | Path, data: str | bytes) -> Path | None:
    """Write one output, destroying nothing at ``path`` beyond the file it writes.

    - ``"-"``: standard output (returns None).
    - A symlink is written through to its final target (atomically beside the
      target); the link itself stays.
    - A regular file or a new path: a temporary file beside it, then a rename,
      so the file is complete or absent; missing parent folders are created;
      an existing file keeps its permission bits, a new one follows the umask.
    - Anything else that exists (``/dev/null``, ``/dev/stdout``, a FIFO, a
      character device) is opened and written directly, never replaced.
    - A folder, or a path ending in ``/`` (which names one), is an error
      (``IsADirectoryError``, reported by the CLI).

    Text is written as UTF-8 with the newlines given. Returns the path written
    (the link's target for a symlink).
    """
    try:
        return _write_output(path, data)
    except BrokenPipeError:
        raise
    except OSError as exc:
        # name the path the user gave, never the temporary file beside it
        # (the CLI adds the option: `cli._output_option`)
        raise type(exc)(exc.errno, exc.strerror or str(exc), os.fspath(path)) from None


def _write_output(path: str | Path, data: str | bytes) -> Path | None:
    blob = data.encode("utf-8") if isinstance(data, str) else bytes(data)
    if os.fspath(path) == STDOUT:
        stream = sys.stdout
        stream.flush()
        buffer = getattr(stream, "buffer", None)
        if buffer is not None:
            buffer.write(blob)
            buffer.flush()
        else:  # a text-only stream (tests capture stdout this way)
            stream.write(blob.decode("utf-8"))
            stream.flush()
        return None
    if _names_folder(path):
        raise IsADirectoryError(errno.EISDIR, "ends in a slash, so names a folder, not a file",
                                os.fspath(path))
    try:  # what the path leads to: /dev/stdout on a pipe is a FIFO, whose
        # resolved name (/proc/PID/fd/pipe:[N]) cannot be opened by name
        st_at = os.stat(path)
    except (FileNotFoundError, NotADirectoryError):
        st_at = None
    if st_at is not None and not (stat.S_ISREG(st_at.st_mode) or stat.S_ISDIR(st_at.st_mode)):
        with open(path, "wb") as f:  # device, FIFO, socket: write into it
            f.write(blob)
        return Path(path)
    target = Path(os.path.realpath(path)) if os.path.islink(path) else Path(path)
    try:
        st: os.stat_result | None = os.stat(target)
    except FileNotFoundError:
        st = None
    if st is not None and stat.S_ISDIR(st.st_mode):
        raise IsADirectoryError(errno.EISDIR, "is a folder, not a file", os.fspath(path))
    if st is not None and not stat.S_ISREG(st.st_mode):
        with open(target, "wb") as f:  # device, FIFO, socket: write into it
            f.write(blob)
        return target
    target.parent.mkdir(parents=True, exist_ok=True)
    mode = stat.S_IMODE(st.st_mode) if st is not None else 0o666 & ~_umask()
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=target.parent)
    try:
        with os.fdopen(fd, "wb") as f:
            f.write(blob)
        os.chmod(tmp, mode)
        os.replace(tmp, target)
    except BaseException:
        try:
            os.unlink(tmp)
        except FileNotFoundError:
            pass
        raise
    return target


def _names_folder(path: str | Path) -> bool:
    """True when ``path`` ends in a path separator (``out/``): it names a folder."""
    text = os.fspath(path)
    return text.endswith(os.sep) or bool(os.altsep and text.endswith(os.altsep))


def _same_path(a: str, b: str) -> bool:
    """True when ``a`` and ``b`` name one file: equal after resolving symlinks,
    or the same existing file (`os.path.samefile`, so hard links too)."""
    if STDOUT in (a, b):
        return a == b
    if os.path.realpath(a) == os.path.realpath(b):
        return True
    try:
        return os.path.samefile(a, b)
    except OSError:  # one of them does not exist (yet)
        return False


def check_outputs(outputs: Sequence[tuple[str, str | None, str]],
                  inputs: dict[str, str] | None = None) -> None:
    """Refuse, before any work, output paths that would clash or cannot be written.

    ``outputs`` holds (option, path, kind), kind ``"file"`` or ``"folder"``; an
    empty or None path (option not given) is skipped. ``inputs`` maps each
    input path the command reads to what it is ("the input case file").
    Refused: an output that is an input (after resolving symlinks, or the same
    file by `os.path.samefile`); two outputs naming the same path (or both
    ``-``); a file output that ends in ``/`` or is an existing folder; a folder
    output that is ``-`` or an existing non-folder; a path whose nearest
    existing parent is not a folder. `write_output` still guards each write.

    Raises `CaseError` (CLI exit 2), one line naming the option and the path.
    """
    from ..errors import CaseError

    for opt, path, _ in outputs:
        if path is not None and not os.fspath(path).strip():
            raise CaseError(opt, os.fspath(path), "is an empty path; give a file or folder "
                                                  "(- for standard output), or leave the "
                                                  "option out")
    given = [(opt, os.fspath(path), kind) for opt, path, kind in outputs if path]
    for opt, path, _ in given:
        for source, what in (inputs or {}).items():
            if _same_path(path, source):
                raise CaseError(f"{opt} {path}", None, f"is {what}; give another path")
    for i, (opt, path, _) in enumerate(given):
        for opt2, path2, _ in given[:i]:
            if _same_path(path, path2):
                reason = ("both write to standard output; send one to a file" if path == STDOUT
                          else "name the same path; give each output its own")
                raise CaseError(f"{opt2} {path2} and {opt} {path}", None, reason)
    for opt, path, kind in given:
        where = f"{opt} {path}"
        if path == STDOUT:
            if kind == "folder":
                raise CaseError(where, None, "writes a folder of files, which cannot go to "
                                             "standard output; give a folder")
            continue
        if kind == "file" and _names_folder(path):
            raise CaseError(where, None, "ends in a slash, so names a folder; give a file path")
        target = Path(os.path.realpath(path))
        try:  # the path followed (/dev/stdout on a pipe), then its resolved name
            st: os.stat_result | None = os.stat(path)
        except (FileNotFoundError, NotADirectoryError):
            st = None
        if st is not None and not (stat.S_ISREG(st.st_mode) or stat.S_ISDIR(st.st_mode)):
            if kind == "folder":
                raise CaseError(where, None, "is a file, not a folder; give a folder")
            _probe_device(where, Path(path), st)
            continue
        if st is not None:
            if kind == "file" and stat.S_ISDIR(st.st_mode):
                raise CaseError(where, None, "is a folder, not a file; give a file path")
            if kind == "folder" and not stat.S_ISDIR(st.st_mode):
                raise CaseError(where, None, "is a file, not a folder; give a folder")
            if stat.S_ISDIR(st.st_mode):
                _probe_folder(where, target)
            elif stat.S_ISREG(st.st_mode):
                _probe_folder(where, target.parent)
            else:
                _probe_device(where, target, st)
            continue
        parent = next(p for p in target.parents if os.path.exists(p))
        if not parent.is_dir():
            raise CaseError(where, None, f"{parent} is a file, not a folder; give another path")
        _probe_folder(where, parent)


def _probe_folder(where: str, folder: Path) -> None:
    """Refuse (CaseError naming ``where``) a folder in which no file can be
    created: the writer makes a temporary file there, then renames it. A file
    is created and removed at once, so root's permission bypass, read-only
    mounts and /proc are all seen as the write would see them."""
    from ..errors import CaseError

    try:
        fd, tmp = tempfile.mkstemp(prefix=".magcheck-probe.", dir=folder)
    except OSError as exc:
        reason = exc.strerror or str(exc)
        raise CaseError(where, None, f"cannot be written ({folder}: {reason})") from None
    os.close(fd)
    try:
        os.unlink(tmp)
    except OSError:
        pass


# (major, minor) of Linux's /dev/full, which fails every write with ENOSPC.
_FULL_DEVICE = (1, 7)


def _probe_device(where: str, target: Path, st: os.stat_result) -> None:
    """Refuse a device, FIFO or socket that cannot be opened for writing
    (without blocking, without writing a byte), and the always-full device."""
    from ..errors import CaseError

    if stat.S_ISCHR(st.st_mode) and (os.major(st.st_rdev), os.minor(st.st_rdev)) == _FULL_DEVICE:
        raise CaseError(where, None, "is a device that refuses every write "
                                     "(no space left); give another path")
    if stat.S_ISFIFO(st.st_mode) or stat.S_ISSOCK(st.st_mode):
        return  # opening a FIFO would wait for its reader; the write itself is guarded
    try:
        fd = os.open(target, os.O_WRONLY | os.O_NONBLOCK)
    except OSError as exc:
        raise CaseError(where, None, f"cannot be written ({exc.strerror or exc})") from None
    os.close(fd)


def text_stream(*paths: str | None) -> TextIO:
    """Where a command prints its table and notes: standard error when one of
    its outputs ``paths`` is ``-`` (so standard output carries that output
    alone, e.g. JSON for a pipe), standard output otherwise."""
    return sys.stderr if STDOUT in paths else sys.stdout


def atomic_write_text(path: str | Path, text: str) -> Path | None:
    """Write a text output (see `write_output`)."""
    return write_output(path, text)


def write_produced(path: str | Path, produce: Callable[[str], object], suffix: str) -> Path | None:
    """Write an output that a third-party writer can only make as a named file.

    ``produce(tmp_path)`` writes the file into a private temporary folder; its
    bytes then go through `write_output`, so the same rules hold (VTU via meshio).
    """
    with tempfile.TemporaryDirectory(prefix="magcheck-") as folder:
        tmp = os.path.join(folder, "out" + suffix)
        produce(tmp)
        with open(tmp, "rb") as f:
            blob = f.read()
    return write_output(path, blob)


def figure_format(path: str | Path, option: str) -> str:
    """The figure format of ``path`` from its suffix; bad input names the option.

    Raises `CaseError` (CLI exit 2) for a missing or unsupported suffix.
    """
    from ..errors import CaseError

    suffix = Path(os.fspath(path)).suffix.lower().lstrip(".")
    works = ", ".join("." + f for f in FIGURE_FORMATS)
    if not suffix:
        raise CaseError(option, os.fspath(path), f"has no figure suffix; use one of {works}")
    if suffix not in FIGURE_FORMATS:
        raise CaseError(option, os.fspath(path),
                        f"figure suffix .{suffix} is not supported; use one of {works}")
    return suffix


def save_figure(fig: Any, path: str | Path, *, option: str = "--plot", dpi: int = 110,
                metadata: dict[str, str] | None = None) -> Path | None:
    """Render a matplotlib figure and write it with `write_output` (format from
    the suffix); ``metadata`` goes into the file's text fields (PNG tEXt)."""
    fmt = figure_format(path, option)
    buf = io.BytesIO()
    fig.savefig(buf, format=fmt, dpi=dpi, metadata=metadata)
    return write_output(path, buf.getvalue())


_clean = json_ready
"""Non-finite floats as None, numpy scalars as numbers (the JSON writer's cleaning)."""


def write_json(path: str | Path, data: dict) -> Path | None:
    """Write standard JSON (non-finite floats as null) with `write_output`."""
    return write_output(path, json.dumps(_clean(data), indent=2, allow_nan=False) + "\n")


def render_table(title: str, columns: Sequence[str], rows: Sequence[Sequence[str]],
                 stream: TextIO, *, notes: Sequence[str] = (),
                 align: Sequence[str] | None = None) -> None:
    """Print a table: rich on a terminal, fixed-width plain text otherwise."""
    align = list(align or ["left"] + ["right"] * (len(columns) - 1))
    if getattr(stream, "isatty", lambda: False)():
        from rich.console import Console
        from rich.table import Table
        from rich.text import Text

        # Text objects: a case name like "choke [rev B] [/]" is printed literally,
        # never read as terminal markup.
        table = Table(title=Text(title), title_justify="left")
        for c, a in zip(columns, align):
            table.add_column(Text(str(c)), justify="left" if a == "left" else "right")
        for r in rows:
            table.add_row(*(Text(str(cell)) for cell in r))
        console = Console(file=stream)
        console.print(table)
        for n in notes:
            console.print(n, markup=False, highlight=False)
        return
    widths = [max(len(str(c)), *(len(str(r[i])) for r in rows)) if rows else len(str(c))
              for i, c in enumerate(columns)]

    def line(cells: Sequence[str]) -> str:
        out = []
        for cell, w, a in zip(cells, widths, align):
            out.append(str(cell).ljust(w) if a == "left" else str(cell).rjust(w))
        return "  ".join(out).rstrip()

    stream.write(title + "\n")
    stream.write(line(columns) + "\n")
    stream.write("  ".join("-" * w for w in widths) + "\n")
    for r in rows:
        stream.write(line(r) + "\n")
    for n in notes:
        stream.write(n + "\n")


DEFAULT_WIDTH = 100
"""The terminal width the check's output fits by default (``--wide``: no limit)."""


def terminal_width(stream: TextIO, wide: bool = False) -> int:
    """The width to fit: the terminal's (or ``COLUMNS``), at most
    `DEFAULT_WIDTH` unless ``wide``; `DEFAULT_WIDTH` when neither is known."""
    import shutil

    cols = 0
    if os.environ.get("COLUMNS", "").isdigit():
        cols = int(os.environ["COLUMNS"])
    elif getattr(stream, "isatty", lambda: False)():
        cols = shutil.get_terminal_size((DEFAULT_WIDTH, 24)).columns
    cols = cols or DEFAULT_WIDTH
    return max(cols, 40) if wide else max(40, min(cols, DEFAULT_WIDTH))


def can_print(stream: TextIO, text: str = "µ≥≤²±─") -> bool:
    """The stream's encoding can write ``text`` (Unicode units and rules)."""
    enc = getattr(stream, "encoding", None) or "ascii"
    try:
        text.encode(enc)
    except (UnicodeEncodeError, LookupError):
        return False
    return True


def wrap_text(text: str, width: int, indent: str = "") -> list[str]:
    """``text`` wrapped to ``width`` columns (continuation lines indented)."""
    import textwrap

    return textwrap.wrap(text, width=width, subsequent_indent=indent,
                         break_long_words=False, break_on_hyphens=False) or [""]


def fit_table(columns: Sequence[str], groups: Sequence[tuple[str, Sequence[Sequence[str]]]],
              width: int, *, rule: str = "-") -> list[str]:
    """A fixed-width table within ``width`` columns: first column left and
    wrapped on words to what the others leave (at least 12), the others
    right-aligned and never wrapped; ``groups`` are (heading, rows), a heading
    printed as its own line above its rows ("" for none)."""
    rows = [r for _, g in groups for r in g]
    n = len(columns)
    widths = [max([len(str(columns[i]))] + [len(str(r[i])) for r in rows]) for i in range(n)]
    sep = 2 if sum(widths[1:]) + 2 * (n - 1) + 12 <= width else 1
    first = max(12, min(widths[0], width - sum(widths[1:]) - sep * (n - 1)))
    widths[0] = first

    def lines_of(cells: Sequence[str]) -> list[str]:
        label = wrap_text(str(cells[0]), first, "  ")
        rest = (" " * sep).join(str(c).rjust(w) for c, w in zip(cells[1:], widths[1:]))
        out = [(label[0].ljust(first) + " " * sep + rest).rstrip()]
        out += [lab.rstrip() for lab in label[1:]]
        return out

    out = lines_of(list(columns))
    out.append((" " * sep).join(rule * w for w in widths))
    for heading, grows in groups:
        if heading:
            out.append(f"{rule * 2} {heading} {rule * 2}")
        for r in grows:
            out += lines_of(list(r))
    return out


STYLES = {"pass": "bold white on green", "FAIL": "bold white on red",
          "title": "bold", "heading": "bold cyan", "dim": "dim"}
"""Terminal styles (rich) of the line kinds `write_lines` colours."""


def write_lines(lines: Sequence[tuple[str, str]], stream: TextIO, width: int) -> None:
    """Print (text, kind) lines: coloured with rich on a terminal (kind a key
    of `STYLES`, "" plain; the words pass, FAIL and inconclusive in a table
    coloured), plain text otherwise."""
    if not getattr(stream, "isatty", lambda: False)():
        for text, _ in lines:
            stream.write(text + "\n")
        return
    from rich.console import Console
    from rich.text import Text

    console = Console(file=stream, width=width, highlight=False, soft_wrap=True)
    for text, kind in lines:
        t = Text(text, style=STYLES.get(kind, ""))
        if kind in ("", "table"):
            t.highlight_regex(r"\bFAIL\b", "bold red")
            t.highlight_regex(r"\bpass\b", "green")
            t.highlight_regex(r"\binconclusive\b", "yellow")
        console.print(t)
