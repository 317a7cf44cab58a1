"""Plot of a B-H curve (matplotlib, Agg backend; the only module here importing matplotlib)."""

from __future__ import annotations

from pathlib import Path
from typing import Iterable

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure


def plot_bh(curve, path: str | Path, operating_points: Iterable[tuple[float, float]] | None = None) -> Path:
    """Save `bh_figure` of ``curve`` to ``path`` (format from the suffix); returns the path.

    For scripts; the magcheck CLI writes figures through its own output writer.
    """
    path = Path(path)
    bh_figure(curve, operating_points).savefig(path, dpi=100)
    return path


def bh_figure(curve, operating_points: Iterable[tuple[float, float]] | None = None) -> Figure:
    """B over log-scaled H of ``curve``: the interpolant, its extrapolation to
    2*h_max (slope mu0) and the table points.

    Parameters
    ----------
    curve : BHCurve
        Curve to draw.
    operating_points : iterable of (H, B), optional
        Points (A/m, T) to mark, e.g. branch solutions.

    Notes
    -----
    A standalone :class:`~matplotlib.figure.Figure` with an Agg canvas, so no
    global pyplot state is touched and nothing needs closing.
    """
    h_pts = np.asarray(curve.h_points)
    b_pts = np.asarray(curve.b_points)
    h_lo = h_pts[1] / 10
    h = np.geomspace(h_lo, 2 * h_pts[-1], 400)
    fig = Figure(figsize=(6, 4))
    FigureCanvasAgg(fig)
    ax = fig.add_subplot()
    ax.semilogx(h, curve.b_of_h(h), "-", label="interpolated / extrapolated (slope mu0)")
    ax.semilogx(h_pts[1:], b_pts[1:], "o", ms=3, label="table points")
    if operating_points is not None:
        pts = np.asarray(list(operating_points), dtype=float).reshape(-1, 2)
        ax.semilogx(np.abs(pts[:, 0]), np.abs(pts[:, 1]), "x", ms=8, label="operating points")
    ax.axvline(h_pts[-1], color="0.6", lw=0.8, ls="--")
    ax.set_xlabel("H (A/m)")
    ax.set_ylabel("B (T)")
    ax.set_title(curve.name or "B-H curve")
    ax.grid(True, which="both", alpha=0.3)
    ax.legend(loc="lower right", fontsize=8)
    return fig
