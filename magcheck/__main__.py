"""``python -m magcheck``: the ``magcheck`` command, for where the console
script is not on PATH (a ``pip install --user``, some Windows set-ups)."""
import sys

from magcheck.compare.front.cli import main

if __name__ == "__main__":
    sys.exit(main())
