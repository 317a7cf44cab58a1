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
