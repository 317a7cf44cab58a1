"""Regenerate the figures under docs/ from the current code, so they cannot
drift from what magcheck computes.

    PYTHONPATH=. python tools/make_docs_figures.py            # rewrite docs/*.png
    PYTHONPATH=. python tools/make_docs_figures.py --check    # exit 1 if a figure is stale

Each PNG carries a stamp in its text fields: the case file's SHA-256 and the
figure's defining values (peak |B| of the colour scale, flux per line) at
four significant digits.  ``--check`` (and tests/test_docs_figures.py)
recompute the stamp and compare; pixels are not compared, since they change
with the matplotlib version.
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]

#: docs figure -> (case file, figure function name in compare.outputs.plots)
DOCS_FIGURES = {
    "docs/demo_choke_flux.png": ("cases/demo_choke.toml", "fig_flux"),
}
STAMP_KEY = "magcheck-stamp"


def stamp(res) -> str:
    """The values that define a flux figure, as one line of text."""
    import numpy as np

    from magcheck.compare.outputs.plots import flux_levels
    from magcheck.fem2d import post

    bmax = float(np.linalg.norm(post.b_elements(res.fe.solution), axis=0).max())
    _, per_line = flux_levels(res)
    return (f"case_sha256={res.case.sha256}; peak_abs_B_T={bmax:.4g}; "
            f"flux_per_line_Wb={per_line:.4g}")


def _result(case_file: str):
    from magcheck.compare.reading.casefile import load_case
    from magcheck.compare.judge.check import run_check

    return run_check(load_case(ROOT / case_file), estimate_error=False)


def stored_stamp(png: Path) -> str | None:
    """The stamp in a written PNG, or None."""
    from PIL import Image

    with Image.open(png) as img:
        return img.info.get(STAMP_KEY)


def make(name: str) -> Path:
    import matplotlib.pyplot as plt

    from magcheck.compare.outputs import plots
    from magcheck.compare.outputs.output import save_figure

    case_file, fig_name = DOCS_FIGURES[name]
    res = _result(case_file)
    fig = getattr(plots, fig_name)(res)
    try:
        fig.tight_layout()
        save_figure(fig, ROOT / name, option="docs", metadata={STAMP_KEY: stamp(res)})
    finally:
        plt.close(fig)
    return ROOT / name


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--check", action="store_true", help="compare stamps only; exit 1 if stale")
    args = ap.parse_args(argv)
    stale = 0
    for name, (case_file, _) in DOCS_FIGURES.items():
        if args.check:
            want = stamp(_result(case_file))
            have = stored_stamp(ROOT / name) if (ROOT / name).exists() else None
            if have != want:
                stale += 1
                print(f"{name}: stale\n  stored:  {have}\n  current: {want}")
            else:
                print(f"{name}: current")
        else:
            print(f"wrote {make(name)}")
    return 1 if stale else 0


if __name__ == "__main__":
    sys.exit(main())
