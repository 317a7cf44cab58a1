"""A temporary git worktree of another revision, for the benches' --against."""
from __future__ import annotations

import atexit
import os
import shutil
import subprocess
import tempfile

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))


def temporary_worktree(ref: str, prefix: str = "bench-") -> str:
    """A detached git worktree of ``ref`` in a temporary folder, removed at exit."""
    path = tempfile.mkdtemp(prefix=prefix)
    os.rmdir(path)
    subprocess.run(["git", "-C", ROOT, "worktree", "add", "--detach", "-q", path, ref], check=True)

    def cleanup() -> None:
        subprocess.run(["git", "-C", ROOT, "worktree", "remove", "--force", path],
                       capture_output=True)
        shutil.rmtree(path, ignore_errors=True)

    atexit.register(cleanup)
    return path


class _Tee:
    """Writes to the terminal and to a record file at once."""

    def __init__(self, *streams):
        self.streams = streams

    def write(self, text: str) -> int:
        for s in self.streams:
            s.write(text)
        return len(text)

    def flush(self) -> None:
        for s in self.streams:
            s.flush()


def record_output(path: str | None, script: str, argv: list[str] | None = None) -> None:
    """From now on, what the bench prints goes to ``path`` too, after a
    header line: the UTC date, this tree's revision (``+`` when its code has
    uncommitted changes), the load average and the command (``python
    bench/<script>`` with ``argv``, else this process's arguments).  README.md's
    speed tables are these files (tools/make_readme.py, blocks ``bench-*``)."""
    import sys
    import time

    if not path:
        return
    command = f"python bench/{script} " + " ".join(sys.argv[1:] if argv is None else argv)
    rev = subprocess.run(["git", "-C", ROOT, "rev-parse", "--short", "HEAD"],
                         capture_output=True, text=True).stdout.strip() or "?"
    # uncommitted changes to the code (not to the records or the docs)
    dirty = subprocess.run(["git", "-C", ROOT, "status", "--porcelain", "--untracked-files=no",
                            "--", ".", ":!bench/results", ":!*.md"],
                           capture_output=True, text=True).stdout.strip()
    load = os.getloadavg()[0] if hasattr(os, "getloadavg") else float("nan")
    fh = open(path, "w", encoding="utf-8")
    fh.write(f"recorded {time.strftime('%Y-%m-%d %H:%M', time.gmtime())} UTC, tree {rev}"
             f"{'+' if dirty else ''}, load {load:.1f}: {command}\n")
    terminal = sys.stdout

    def close() -> None:
        sys.stdout = terminal
        fh.close()

    atexit.register(close)
    sys.stdout = _Tee(terminal, fh)
