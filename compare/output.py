"""Output at the edge: atomic file writes, terminal tables, the caution text."""

from __future__ import annotations

import json
import math
import os
import tempfile
from pathlib import Path
from typing import Any, Sequence, TextIO

__all__ = ["CAUTION", "atomic_write_text", "write_json", "render_table"]

CAUTION = (
    "Caution: magcheck's results are design estimates. Confirm them by measurement "
    "on a prototype and against the applicable codes and licensed engineering practice; "
    "magcheck checks neither insulation nor temperature rise."
)


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def atomic_write_text(path: str | Path, text: str) -> None:
    """Write a text file completely or not at all (temp file + rename)."""
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="") as f:
            f.write(text)
        os.chmod(tmp, 0o666 & ~_umask())
        os.replace(tmp, path)
    except BaseException:
        try:
            os.unlink(tmp)
        except FileNotFoundError:
            pass
        raise


def _clean(obj: Any) -> Any:
    """Replace non-finite floats by None so the JSON is standard."""
    if isinstance(obj, float):
        return obj if math.isfinite(obj) else None
    if isinstance(obj, dict):
        return {k: _clean(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_clean(v) for v in obj]
    if hasattr(obj, "item") and callable(obj.item):  # numpy scalar
        return _clean(obj.item())
    return obj


def write_json(path: str | Path, data: dict) -> None:
    atomic_write_text(path, json.dumps(_clean(data), indent=2, allow_nan=False) + "\n")


def render_table(title: str, columns: Sequence[str], rows: Sequence[Sequence[str]],
                 stream: TextIO, *, notes: Sequence[str] = (),
                 align: Sequence[str] | None = None) -> None:
    """Print a table: rich on a terminal, fixed-width plain text otherwise."""
    align = list(align or ["left"] + ["right"] * (len(columns) - 1))
    if getattr(stream, "isatty", lambda: False)():
        from rich.console import Console
        from rich.table import Table

        table = Table(title=title, title_justify="left")
        for c, a in zip(columns, align):
            table.add_column(c, justify="left" if a == "left" else "right")
        for r in rows:
            table.add_row(*r)
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
