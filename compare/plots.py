"""Figures of a check (matplotlib, Agg backend). Each function returns the
figure; :func:`save_figures` writes them and closes every one."""

from __future__ import annotations

from pathlib import Path

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
from matplotlib.patches import Rectangle  # noqa: E402
from matplotlib.tri import Triangulation  # noqa: E402

from fem2d import post  # noqa: E402

from .check import CheckResult  # noqa: E402
from .geometry import Limb  # noqa: E402
from .output import save_figure  # noqa: E402

__all__ = ["save_figures", "FIGURES"]

# magcheck's own palette: slate core, amber gaps, teal/rose coil sides.
REGION_COLOURS = {"core": "#5b6c80", "gap": "#e0a030", "coil+": "#2a9d8f", "coil-": "#c8553d"}
HAND_COLOUR, FE_COLOUR = "#c8553d", "#264653"


def _zoom(ax, res: CheckResult, pad: float = 0.25) -> None:
    x0, y0, x1, y1 = res.fe.solution.mesh.layout.bbox()
    dx, dy = (x1 - x0) * pad, (y1 - y0) * pad
    ax.set_xlim((x0 - dx) * 1e3, (x1 + dx) * 1e3)
    ax.set_ylim((y0 - dy) * 1e3, (y1 + dy) * 1e3)
    ax.set_aspect("equal")
    ax.set_xlabel("x (mm)")
    ax.set_ylabel("y (mm)")


def _outlines(ax, res: CheckResult, lw: float = 1.2) -> None:
    for region in res.fe.solution.mesh.layout.regions:
        colour = REGION_COLOURS.get(region.name, REGION_COLOURS.get(region.kind, "#444444"))
        for s in region.shapes:
            ax.add_patch(Rectangle((s.x0 * 1e3, s.y0 * 1e3), (s.x1 - s.x0) * 1e3,
                                   (s.y1 - s.y0) * 1e3, fill=False, ec=colour, lw=lw))


def _tri(res: CheckResult) -> Triangulation:
    m = res.fe.solution.mesh.mesh
    nv = int(m.t[:3].max()) + 1  # vertices come first; curved meshes add mid-side nodes
    return Triangulation(m.p[0, :nv] * 1e3, m.p[1, :nv] * 1e3, m.t[:3].T)


def fig_geometry(res: CheckResult):
    fig, ax = plt.subplots(figsize=(6.5, 6))
    tri = _tri(res)
    ax.triplot(tri, lw=0.2, color="#9aa5b1")
    _outlines(ax, res, lw=1.6)
    _zoom(ax, res)
    m = res.fe.solution.mesh.mesh
    ax.set_title(f"Regions and mesh ({m.t.shape[1]} elements, P{res.case.fe.order})")
    handles = [Rectangle((0, 0), 1, 1, fill=False, ec=c, lw=2) for c in REGION_COLOURS.values()]
    ax.legend(handles, ["core", "gap", "coil side +", "coil side -"], loc="upper right",
              fontsize=8)
    return fig


def fig_flux(res: CheckResult):
    sol = res.fe.solution
    fig, ax = plt.subplots(figsize=(6.5, 6))
    tri = _tri(res)
    bmag = np.linalg.norm(post.b_elements(sol), axis=0)
    pc = ax.tripcolor(tri, facecolors=bmag, cmap="magma", shading="flat")
    a_vert = sol.A[sol.basis.nodal_dofs[0]][: tri.x.size]
    ax.tricontour(tri, a_vert, levels=24, colors="#d9f0ff", linewidths=0.6)
    _outlines(ax, res, lw=0.8)
    _zoom(ax, res)
    fig.colorbar(pc, ax=ax, label="|B| (T)", shrink=0.85)
    ax.set_title("Flux lines over |B|")
    return fig


def _gap_line(limb: Limb, pos: float, n: int = 400) -> tuple[np.ndarray, np.ndarray, int]:
    """Points across the limb through the gap centre, one limb width beyond each face."""
    t = np.linspace(limb.c0 - limb.width, limb.c1 + limb.width, n)
    if limb.axis == "y":
        return np.vstack([t, np.full(n, pos)]), t, 1
    return np.vstack([np.full(n, pos), t]), t, 0


def fig_gap_line(res: CheckResult):
    """B across the first gap; None for a core without a gap (no figure)."""
    case = res.case
    if not case.gaps:
        return None
    fig, ax = plt.subplots(figsize=(6.5, 4))
    gap = case.gaps[0]
    limb = case.limbs[gap.limb]
    pts, t, comp = _gap_line(limb, gap.position)
    b = post.sample_b(res.fe.solution, pts)[comp]
    sign = np.sign(b[len(b) // 2]) or 1.0
    ax.plot(t * 1e3, sign * b, color=FE_COLOUR, label="FE, B along the limb axis")
    ax.axhline(res.hand_planar.gap_B, color=HAND_COLOUR, ls="--",
               label=f"hand gap B ({res.hand_planar.fringing_model}, planar)")
    for c in (limb.c0, limb.c1):
        ax.axvline(c * 1e3, color="#888888", lw=0.8, ls=":")
    ax.set_xlabel("position across the limb (mm); dotted: pole-face edges")
    ax.set_ylabel("B (T)")
    ax.set_title(f"B across the middle of the gap in the {gap.limb} limb ({gap.length * 1e3:g} mm): "
                 "fringing beyond the faces", fontsize=9)
    ax.legend(fontsize=8)
    return fig


def fig_path_h(res: CheckResult):
    fig, ax = plt.subplots(figsize=(6.5, 4))
    s = res.fe.path
    kept = s.kept
    ax.plot(s.s[kept] * 1e3, s.h[kept], ".", ms=1.5, color=FE_COLOUR, label="FE |H| on the path")
    ax.axhline(res.fe.values["path_H"], color=FE_COLOUR, lw=1, label="FE path mean")
    ax.axhline(res.hand_planar.path_H, color=HAND_COLOUR, ls="--", label="hand path mean")
    h = s.h[kept]
    h = h[np.isfinite(h) & (h > 0)]
    if h.size and h.max() > 10.0 * h.min():
        ax.set_yscale("log")  # over a decade: log, with labelled minor ticks
        from matplotlib.ticker import LogFormatterSciNotation

        ax.yaxis.set_minor_formatter(LogFormatterSciNotation(labelOnlyBase=False,
                                                             minor_thresholds=(2, 0.4)))
    ax.set_xlabel("distance along the mean path (mm); gaps left out")
    ax.set_ylabel("|H| (A/m)")
    ax.set_title("H along the mean path")
    ax.legend(fontsize=8)
    return fig


def fig_bh(res: CheckResult):
    fig, ax = plt.subplots(figsize=(6.5, 4))
    law = res.case.material("core").law
    h_top = max(3 * res.fe.values["path_H"], 3 * res.hand_planar.path_H, 2000.0)
    h = np.linspace(0, h_top, 400)
    ax.plot(h, law.b_of_h(h), color="#5b6c80", label=res.case.material("core").description)
    ax.plot(res.hand_planar.path_H, res.hand_planar.core_B, "o", color=HAND_COLOUR,
            label="hand: path H, core B")
    ax.plot(res.fe.values["path_H"], res.fe.values["core_B"], "s", color=FE_COLOUR,
            label="FE: path-mean H, core-mean B")
    ax.set_xlabel("H (A/m)")
    ax.set_ylabel("B (T)")
    ax.set_title("B-H curve and operating points")
    ax.legend(fontsize=8)
    return fig


FIGURES = {
    "geometry.png": fig_geometry,
    "flux.png": fig_flux,
    "gap_line.png": fig_gap_line,
    "path_h.png": fig_path_h,
    "bh.png": fig_bh,
}


def save_figures(res: CheckResult, folder: str | Path) -> list[Path]:
    """Write every figure as PNG into folder (through compare.output's writer)."""
    folder = Path(folder)
    paths = []
    for name, make in FIGURES.items():
        fig = make(res)
        if fig is None:  # nothing to show (a gapless core has no gap figure)
            continue
        try:
            fig.tight_layout()
            paths.append(save_figure(fig, folder / name, option="--report") or folder / name)
        finally:
            plt.close(fig)
    return paths
