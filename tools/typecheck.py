"""Type-check the package under its installed names (the CI's mypy step).

    python3 tools/typecheck.py [mypy options]

The repository keeps fem2d/, analytic/ and compare/ beside magcheck/ and
pyproject.toml's package-dir maps them under magcheck when installed; mypy
cannot follow that mapping.  This stages the installed layout as symbolic
links in a temporary folder (magcheck/ with the three parts inside), runs
``mypy -p magcheck`` on it with the repository's configuration, and prints
mypy's report with the paths as they are in the repository.  Exit status is
mypy's.
"""
from __future__ import annotations

import os
import re
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
PARTS = ("fem2d", "analytic", "compare")


def main(argv: list[str]) -> int:
    with tempfile.TemporaryDirectory(prefix="magcheck-types-") as tmp:
        pkg = Path(tmp) / "magcheck"
        pkg.mkdir()
        for f in (ROOT / "magcheck").iterdir():
            if f.name != "__pycache__":
                os.symlink(f, pkg / f.name)
        for part in PARTS:
            os.symlink(ROOT / part, pkg / part)
        env = dict(os.environ, MYPYPATH=tmp)
        env.pop("PYTHONPATH", None)  # the staged tree, not the checkout's path trick
        proc = subprocess.run([sys.executable, "-m", "mypy", "--config-file",
                               str(ROOT / "pyproject.toml"), "-p", "magcheck", *argv],
                              cwd=tmp, env=env, capture_output=True, text=True)
    # magcheck/fem2d/x.py -> fem2d/x.py (the file as it is in the repository)
    text = re.sub(r"\bmagcheck/(%s)/" % "|".join(PARTS), r"\1/", proc.stdout + proc.stderr)
    sys.stdout.write(text)
    return proc.returncode


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
