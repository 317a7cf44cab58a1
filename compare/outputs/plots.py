"""Figures of a check (matplotlib, Agg backend). Each function returns the
figure; :func:`save_figures` writes them and closes every one."""

from __future__ import annotations

import math
from pathlib import Path
from typing import Any, Sequence

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
from matplotlib.colors import LinearSegmentedColormap, LogNorm  # noqa: E402
from matplotlib.patches import Rectangle  # noqa: E402
from matplotlib.tri import Triangulation  # noqa: E402

from magcheck.fem2d import post  # noqa: E402

from ..judge.check import CheckResult  # noqa: E402
from ..design.coremodel import comparison_forms  # noqa: E402
from .output import save_figure  # noqa: E402

__all__ = ["save_figures", "FIGURES", "caption", "fig_motion", "flux_levels", "sweep_figures",
           "save_sweep_figures", "tolerance_figure", "tolerance_panels", "save_tolerance_figure"]

# magcheck's own palette: slate core, amber gaps, teal/rose coil sides.
REGION_COLOURS = {"core": "#5b6c80", "gap": "#e0a030", "coil+": "#2a9d8f", "coil-": "#c8553d"}
HAND_COLOUR, FE_COLOUR = "#c8553d", "#264653"


def _mirrored(res: CheckResult) -> bool:
    """An r-z solution: its figures show the section mirrored about the axis."""
    return res.fe.solution.assembler.formulation.name == "axisymmetric"


def _zoom(ax, res: CheckResult, pad: float = 0.25, mirror: bool = False) -> None:
    """Limits round the parts (``mirror``: both halves of an r-z section,
    the axis drawn as a dash-dot line), equal aspect, axis names."""
    x0, y0, x1, y1 = res.fe.solution.mesh.layout.bbox()
    if mirror:
        x0 = -x1
    dx, dy = (x1 - x0) * pad, (y1 - y0) * pad
    ax.set_xlim((x0 - dx) * 1e3, (x1 + dx) * 1e3)
    ax.set_ylim((y0 - dy) * 1e3, (y1 + dy) * 1e3)
    ax.set_aspect("equal")
    rz = res.fe.solution.assembler.formulation.name == "axisymmetric"
    if mirror:
        ax.axvline(0.0, color="0.2", lw=0.9, ls="-.", zorder=5)
    ax.set_xlabel("r (mm), mirrored about the axis" if mirror else "r (mm)" if rz else "x (mm)")
    ax.set_ylabel("z (mm)" if rz else "y (mm)")


def _outlines(ax, res: CheckResult, lw: float = 1.2, sign: float = 1.0) -> None:
    """Every region's outline in its colour (``sign`` -1: mirrored about x = 0)."""
    from matplotlib.patches import Circle
    from matplotlib.patches import Polygon as PolygonPatch

    from ..design.coremodel import core_model

    side = {r: sgn for c in core_model(res.case).coils for r, sgn in c.sides}
    for region in res.fe.solution.mesh.layout.regions:
        if region.name in side:  # every winding's go and return sides alike
            colour = REGION_COLOURS["coil+" if side[region.name] > 0 else "coil-"]
        else:
            colour = REGION_COLOURS.get(region.kind, "#444444")
        for s in region.shapes:
            if hasattr(s, "points"):  # a polygon and its holes
                for loop in (s.points, *s.holes):
                    ax.add_patch(PolygonPatch([(sign * x * 1e3, y * 1e3) for x, y in loop],
                                              closed=True, fill=False, ec=colour, lw=lw))
            elif hasattr(s, "r") and hasattr(s, "cx"):
                ax.add_patch(Circle((sign * s.cx * 1e3, s.cy * 1e3), s.r * 1e3, fill=False,
                                    ec=colour, lw=lw))
            else:
                x0, y0, x1, y1 = s.bbox()
                ax.add_patch(PolygonPatch([(sign * x * 1e3, y * 1e3) for x, y in
                                           ((x0, y0), (x1, y0), (x1, y1), (x0, y1))],
                                          closed=True, fill=False, ec=colour, lw=lw))


def _tri(res: CheckResult) -> Triangulation:
    m = res.fe.solution.mesh.mesh
    nv = int(m.t[:3].max()) + 1  # vertices come first; curved meshes add mid-side nodes
    return Triangulation(m.p[0, :nv] * 1e3, m.p[1, :nv] * 1e3, m.t[:3].T)


#: one colour per winding, in case order (its go and return sides alike; the
#: return side hatched)
WINDING_COLOURS = ("#2a9d8f", "#7b3fa0", "#d68910", "#2471a3", "#a93226")
#: core parts in shades of slate, in region order
CORE_SHADES = ("#5b6c80", "#8796a8", "#3e4a59", "#a7b3c0")
MAGNET_COLOUR = "#c2185b"


def _loops(shape) -> list[list[tuple[float, float]]]:
    """A layout shape as closed loops (m): outline first, then its holes."""
    if hasattr(shape, "points"):
        return [list(shape.points), *[list(h) for h in shape.holes]]
    if hasattr(shape, "r") and hasattr(shape, "cx"):
        t = np.linspace(0.0, 2.0 * math.pi, 73)[:-1]
        return [list(zip(shape.cx + shape.r * np.cos(t), shape.cy + shape.r * np.sin(t)))]
    x0, y0, x1, y1 = shape.bbox()
    return [[(x0, y0), (x1, y0), (x1, y1), (x0, y1)]]


def _region_patch(region, sign: float, **kw):
    """One filled patch of a region's shapes (holes left open), mm."""
    from matplotlib.patches import PathPatch
    from matplotlib.path import Path as MplPath

    verts, codes = [], []
    for shape in region.shapes:
        for i, loop in enumerate(_loops(shape)):
            pts = np.array([(sign * x * 1e3, y * 1e3) for x, y in loop])
            area = 0.5 * np.sum(pts[:, 0] * np.roll(pts[:, 1], -1)
                                - np.roll(pts[:, 0], -1) * pts[:, 1])
            if (area < 0) != (i > 0):  # outlines counter-clockwise, holes clockwise
                pts = pts[::-1]
            verts += [*pts, pts[0]]
            codes += [MplPath.MOVETO] + [MplPath.LINETO] * (len(pts) - 1) + [MplPath.CLOSEPOLY]
    return PathPatch(MplPath(np.array(verts), codes), **kw)


def _dimension(ax, p0, p1, text: str, offset: tuple[float, float]) -> None:
    """A dimension line from p0 to p1 (mm), moved by ``offset``, with its text."""
    (x0, y0), (x1, y1) = p0, p1
    dx, dy = offset
    ax.annotate("", (x1 + dx, y1 + dy), (x0 + dx, y0 + dy),
                arrowprops=dict(arrowstyle="<->", color="0.25", lw=0.8, shrinkA=0, shrinkB=0))
    for x, y in (p0, p1):
        ax.plot([x, x + dx * 1.15], [y, y + dy * 1.15], color="0.55", lw=0.5)
    vertical = abs(x1 - x0) < abs(y1 - y0)
    ax.text((x0 + x1) / 2 + dx * 1.25, (y0 + y1) / 2 + dy * 1.25, text, fontsize=7,
            ha="center", va="center", rotation=90 if vertical else 0, color="0.15",
            bbox=dict(fc="white", ec="none", pad=0.5, alpha=0.8))


def fig_geometry(res: CheckResult):
    """Regions and mesh: parts filled by kind, a legend of the regions
    present (each core part, the gaps, every winding's go and return sides,
    magnets with their direction), the overall dimensions and each gap's
    length, and the hand circuit's mean path; r-z mirrored about the axis."""
    from matplotlib.patches import Patch
    from matplotlib.lines import Line2D

    from ..design.coremodel import core_model

    sol = res.fe.solution
    layout = sol.mesh.layout
    model = core_model(res.case)
    mirror = _mirrored(res)
    x0, y0, x1, y1 = layout.bbox()
    span_x = (2 * x1 if mirror else x1 - x0) * 1.5
    span_y = (y1 - y0) * 1.5
    fig, (ax, lax) = plt.subplots(
        2, 1, figsize=(7.2, min(10.5, max(5.4, 5.6 * span_y / span_x + 2.0))),
        height_ratios=[1.0, 0.16])
    lax.axis("off")  # the legend's own row: below the drawing, never clipped
    tri = _tri(res)
    signs = (1.0, -1.0) if mirror else (1.0,)
    for sgn in signs:
        ax.triplot(Triangulation(tri.x * sgn, tri.y, tri.triangles), lw=0.15, color="#b8c1cc")
    names = [w.name for w in res.case.windings]
    coil_of = {}
    for i, c in enumerate(model.coils):
        for region, sgn in c.sides:
            coil_of[region] = (i, sgn)
    magnets = {m.region: m for m in model.magnets}
    handles: dict[str, Any] = {}
    core_i = 0
    kw: dict[str, Any]
    for region in layout.regions:
        if region.name in coil_of:
            i, sgn = coil_of[region.name]
            colour = WINDING_COLOURS[i % len(WINDING_COLOURS)]
            name = names[i] if i < len(names) else f"winding {i + 1}"
            kw = dict(fc=colour, ec=colour, alpha=0.45, lw=1.2,
                      hatch=None if sgn > 0 else "////")
            side = ("go (+I, +φ)" if mirror else "go (+I out of the page)") if sgn > 0 else \
                "return (−I, into the page)"
            label = f"winding {name}: {side}"
        elif region.name in magnets:
            kw = dict(fc=MAGNET_COLOUR, ec=MAGNET_COLOUR, alpha=0.45, lw=1.2)
            m = magnets[region.name]
            label = ("magnet" if region.name == "magnet" else f"magnet {region.name}") + \
                f" (B_r {float(np.hypot(*m.remanence)):.3g} T, arrow: magnetisation)"
        elif region.kind == "gap":
            kw = dict(fc=REGION_COLOURS["gap"], ec=REGION_COLOURS["gap"], alpha=0.8, lw=1.0)
            label = "air gaps"
        elif region.kind == "core":
            shade = CORE_SHADES[core_i % len(CORE_SHADES)]
            core_i += 1
            kw = dict(fc=shade, ec=shade, alpha=0.3, lw=1.4)
            try:
                mat = res.case.part_material(region.name).description
            except KeyError:
                mat = ""
            label = f"{region.name}" + (f" ({mat})" if mat else "")
        else:
            kw = dict(fc="none", ec="#444444", lw=1.0)
            label = region.name
        for sgn in signs:
            ax.add_patch(_region_patch(region, sgn, **kw))
        handles.setdefault(label, Patch(**kw))
        if region.name in magnets:
            m = magnets[region.name]
            bx0, by0, bx1, by1 = region.shapes[0].bbox()
            d = np.array(m.remanence, dtype=float)
            d = d / (np.hypot(*d) or 1.0) * 0.35 * min(bx1 - bx0, by1 - by0) * 1e3
            for sgn in signs:
                cx, cy = sgn * (bx0 + bx1) / 2 * 1e3, (by0 + by1) / 2 * 1e3
                ax.annotate("", (cx + sgn * d[0], cy + d[1]), (cx - sgn * d[0], cy - d[1]),
                            arrowprops=dict(arrowstyle="-|>", color="black", lw=1.4))
    # the hand circuit's mean path
    if model.mean_path:
        pts = np.array(model.mean_path) * 1e3
        for sgn in signs:
            ax.plot(sgn * pts[:, 0], pts[:, 1], ls="--", color="#1b2631", lw=1.0)
        handles["hand circuit's mean path"] = Line2D([], [], ls="--", color="#1b2631", lw=1.0)
    # dimensions: the parts' overall size, each gap's length
    core = [r for r in layout.regions if r.kind in ("core", "magnet")]
    if core:
        bb = np.array([s.bbox() for r in core for s in r.shapes])
        cx0, cy0 = bb[:, 0].min() * 1e3, bb[:, 1].min() * 1e3
        cx1, cy1 = bb[:, 2].max() * 1e3, bb[:, 3].max() * 1e3
        off = 0.08 * max(cx1 - cx0, cy1 - cy0)
        left = -cx1 if mirror else cx0
        _dimension(ax, (left, cy0), (cx1, cy0),
                   f"{'Ø ' if mirror else ''}{(cx1 - left):.4g} mm", (0.0, -off))
        _dimension(ax, (cx1, cy0), (cx1, cy1), f"{cy1 - cy0:.4g} mm", (off, 0.0))
    for r in layout.regions:
        if r.kind != "gap":
            continue
        gx0, gy0, gx1, gy1 = (v * 1e3 for v in r.shapes[0].bbox())
        g = min(gx1 - gx0, gy1 - gy0)
        ax.annotate(f"{g:.3g} mm", ((gx0 + gx1) / 2, (gy0 + gy1) / 2), xytext=(12, 10),
                    textcoords="offset points", fontsize=7, color="#7a4f00",
                    arrowprops=dict(arrowstyle="-", color="#7a4f00", lw=0.6))
    _zoom(ax, res, mirror=mirror)
    m = sol.mesh.mesh
    ax.set_title(f"Regions and mesh ({m.t.shape[1]} elements, P{res.case.fe.order})", fontsize=9)
    lax.legend(list(handles.values()), list(handles), loc="center", fontsize=7, ncol=2,
               frameon=False)
    return fig


#: about this many flux lines span the whole range of A
FLUX_LINES = 60
#: the |B| colour scale spans this many decades below the peak
B_DECADES = 3


def _nice_step(raw: float) -> float:
    """The 1-2-5 number at or above raw (raw > 0)."""
    exp = math.floor(math.log10(raw))
    for m in (1.0, 2.0, 5.0, 10.0):
        if m * 10.0 ** exp >= raw * (1 - 1e-12):
            return m * 10.0 ** exp
    return 10.0 ** (exp + 1)  # pragma: no cover


def flux_levels(res: CheckResult, lines: int = FLUX_LINES) -> tuple[np.ndarray, float]:
    """Contour levels of A for the flux plot and the flux between two
    neighbouring lines (Wb).

    In the planar model the flux (per the stack depth d) between two points
    is d (A2 - A1) (docs/references.md section 5), in the r-z model 2 pi (u2 - u1)
    with u = r A_phi the unknown, so equally spaced levels make
    the number of lines crossing any segment proportional to the flux through
    it, in the window as in the limbs.  The flux per line (the step of A
    times the depth, or times 2 pi) is a 1-2-5 number, chosen on the flux
    itself, and A = 0 (the box boundary) is one of the levels.
    """
    sol = res.fe.solution
    a = sol.A[sol.basis.nodal_dofs[0]]
    lo, hi = float(a.min()), float(a.max())
    if not hi > lo:
        return np.array([]), 0.0
    total = sol.assembler.formulation.total  # depth, or 2 pi round the axis
    per_line = _nice_step((hi - lo) * total / lines)  # a 1-2-5 flux, after the depth or 2 pi
    step = per_line / total
    levels = np.arange(math.floor(lo / step) + 1, math.ceil(hi / step)) * step
    return levels, per_line


def _si(value: float, unit: str) -> str:
    for factor, prefix in ((1.0, ""), (1e-3, "m"), (1e-6, "\u00b5"), (1e-9, "n")):
        if abs(value) >= factor * (1 - 1e-9):
            return f"{value / factor:.3g} {prefix}{unit}"
    return f"{value:.3g} {unit}"


#: the dotted air lines are this many times denser than the solid lines
AIR_LINE_FACTOR = 10


def _fine_levels(levels: np.ndarray) -> np.ndarray:
    if levels.size < 2:
        return np.array([])
    step = (levels[1] - levels[0]) / AIR_LINE_FACTOR
    k = np.arange(math.floor(levels[0] / step) - AIR_LINE_FACTOR,
                  math.ceil(levels[-1] / step) + AIR_LINE_FACTOR + 1)
    return k[k % AIR_LINE_FACTOR != 0] * step


def _iron_mask(res: CheckResult) -> np.ndarray:
    """True for the elements of core and magnet regions (the solid parts: the
    linear |B| scale; the dotted air lines leave them out)."""
    rmesh = res.fe.solution.mesh
    mask = np.zeros(rmesh.nelements, dtype=bool)
    for region in rmesh.layout.regions:
        if region.kind in ("core", "magnet"):
            mask[rmesh.elements_of(region.name)] = True
    return mask


def iron_scale(res: CheckResult) -> float:
    """Top of the linear |B| scale in the iron (T): the largest saturation
    (``b_max``, the B-H data's end) of the case's core materials, rounded up
    to 0.1 T, so cases of one material share a scale; 2 T when none has one."""
    tops = [float(getattr(m.law, "b_max", math.nan)) for m in res.case.materials
            if m.kind != "magnet"]
    tops = [t for t in tops if math.isfinite(t) and t > 0]
    return math.ceil(max(tops) * 10.0 - 1e-9) / 10.0 if tops else 2.0


#: a flux line closer than this to its neighbour (points at the figure's
#: resolution) is thinned: every second, then every fourth line kept there
CROWD_PT = 2.2


def _b_limit(res: CheckResult) -> tuple[float, str]:
    """The |B| contour drawn over the iron: the case's peak-B margin, else
    the core material's knee (where dB/dH has fallen to a tenth)."""
    from ..judge.check import _knee

    if res.case.margins.peak_B is not None:
        return float(res.case.margins.peak_B), "peak-B limit"
    try:
        knee = _knee(res.case.material("core").law)
    except Exception:  # a case without a core material
        return math.nan, ""
    return knee, "knee of the B-H curve"


def flux_caption(res: CheckResult) -> str:
    """What the flux plot shows, with the flux per line."""
    _, per_line = flux_levels(res)
    sol = res.fe.solution
    rz = sol.assembler.formulation.name == "axisymmetric"
    where = "round the axis" if rz else f"through the {sol.mesh.layout.depth * 1e3:g} mm stack"
    limit, what = _b_limit(res)
    contour = (f" The dashed contour is the {what}, {limit:.3g} T."
               if math.isfinite(limit) else "")
    mirror = (" The r-z section is drawn mirrored about the axis (dash-dot)." if rz else "")
    return (f"Flux lines (equally spaced contours of A, solid for both signs: one line per "
            f"{_si(per_line, 'Wb')} of flux {where}; where lines crowd closer than the "
            f"figure can show, only every second or fourth is drawn; in the air, dotted lines "
            f"at one per {_si(per_line / AIR_LINE_FACTOR, 'Wb')} show the leakage and "
            f"fringing flux). |B| in the iron on a linear scale from 0 to "
            f"{iron_scale(res):g} T (the material's saturation, the same for every case of "
            f"that material); |B| in the air on its own logarithmic scale over "
            f"{B_DECADES} decades.{contour}{mirror}")


def _truncated(name: str, lo: float, hi: float, strength: float = 1.0):
    """Part ``lo``..``hi`` of a matplotlib map, blended toward white to
    ``strength`` (1 keeps it; lightness stays monotone)."""
    rgba = plt.get_cmap(name)(np.linspace(lo, hi, 256))
    rgba[:, :3] = 1.0 - strength * (1.0 - rgba[:, :3])
    return LinearSegmentedColormap.from_list(f"magcheck_{name}", rgba)


# perceptually uniform maps whose lightness falls with |B| (also in grey
# print): the iron pale to mid magenta (the black flux lines stay visible at
# saturation), the air a pale cividis (cream to grey-blue), fainter than the iron
_IRON_MAP = _truncated("magma_r", 0.0, 0.62)
_AIR_MAP = _truncated("cividis_r", 0.0, 0.75, strength=0.45)


def _vertex_values(tri: Triangulation, values: np.ndarray, mask: np.ndarray) -> np.ndarray:
    """Element values averaged onto the vertices of the unmasked elements."""
    t = tri.triangles[~mask]
    v = np.repeat(values[~mask], 3)
    total = np.bincount(t.ravel(), weights=v, minlength=tri.x.size)
    count = np.bincount(t.ravel(), minlength=tri.x.size)
    return np.where(count > 0, total / np.maximum(count, 1), 0.0)


def _crowding(tri: Triangulation, a_vert: np.ndarray, step: float, mm_per_pt: float) -> np.ndarray:
    """Per element, the distance between neighbouring flux lines in points
    (step over |grad A| of the linear interpolation on the vertices)."""
    t = tri.triangles
    x, y = tri.x[t], tri.y[t]
    a = a_vert[t]
    det = (x[:, 1] - x[:, 0]) * (y[:, 2] - y[:, 0]) - (x[:, 2] - x[:, 0]) * (y[:, 1] - y[:, 0])
    det = np.where(det == 0, np.inf, det)
    da1, da2 = a[:, 1] - a[:, 0], a[:, 2] - a[:, 0]
    gx = (da1 * (y[:, 2] - y[:, 0]) - da2 * (y[:, 1] - y[:, 0])) / det
    gy = (da2 * (x[:, 1] - x[:, 0]) - da1 * (x[:, 2] - x[:, 0])) / det
    g = np.hypot(gx, gy)
    with np.errstate(divide="ignore"):
        return np.where(g > 0, step / np.where(g > 0, g, 1.0) / mm_per_pt, np.inf)


def fig_flux(res: CheckResult):
    """Flux lines over |B|: the iron on a linear scale (0 to `iron_scale`)
    with the `_b_limit` contour, the air on its own log scale; an r-z section
    mirrored about its axis."""
    sol = res.fe.solution
    mirror = _mirrored(res)
    x0, y0, x1, y1 = sol.mesh.layout.bbox()
    span_x = (2 * x1 if mirror else x1 - x0) * 1.5
    span_y = (y1 - y0) * 1.5
    width = 7.2
    height = min(9.0, max(4.2, width * 0.78 * span_y / span_x + 0.9))
    fig, ax = plt.subplots(figsize=(width, height))
    tri = _tri(res)
    bmag = np.linalg.norm(post.b_elements(sol), axis=0)
    iron = _iron_mask(res)
    top = iron_scale(res)
    air_b = bmag[~iron]
    air_top = float(air_b.max()) if air_b.size and air_b.max() > 0 else 1.0
    air_floor = air_top * 10.0 ** -B_DECADES
    air_norm = LogNorm(vmin=air_floor, vmax=air_top, clip=True)
    from matplotlib.colors import Normalize

    iron_norm = Normalize(vmin=0.0, vmax=top, clip=True)
    levels, per_line = flux_levels(res)
    a_vert = sol.A[sol.basis.nodal_dofs[0]][: tri.x.size]
    step = float(levels[1] - levels[0]) if levels.size > 1 else 0.0
    # figure resolution: the axes' width in points over the span in mm
    mm_per_pt = span_x * 1e3 / (width * 0.7 * 72.0)
    spacing = (_crowding(tri, a_vert, step, mm_per_pt) if step > 0
               else np.full(tri.triangles.shape[0], np.inf))
    limit, limit_what = _b_limit(res)
    b_vert = _vertex_values(tri, bmag, ~iron)
    pc_iron = pc_air = None
    for sgn in ((1.0, -1.0) if mirror else (1.0,)):
        xs = tri.x * sgn
        t_iron = Triangulation(xs, tri.y, tri.triangles, mask=~iron)
        t_air = Triangulation(xs, tri.y, tri.triangles, mask=iron)
        if air_b.size:
            pc_air = ax.tripcolor(t_air, facecolors=np.maximum(bmag, air_floor),
                                  cmap=_AIR_MAP, norm=air_norm, shading="flat")
        if iron.any():
            pc_iron = ax.tripcolor(t_iron, facecolors=bmag, cmap=_IRON_MAP, norm=iron_norm,
                                   shading="flat")
        if levels.size:
            k = np.rint(levels / step).astype(int)
            for keep, lo, hi in ((1, CROWD_PT, np.inf), (2, CROWD_PT / 2, CROWD_PT),
                                 (4, 0.0, CROWD_PT / 2)):
                sel = levels[k % keep == 0]
                hidden = ~((spacing >= lo) & (spacing < hi))
                tier = Triangulation(xs, tri.y, tri.triangles, mask=hidden)
                if sel.size and not hidden.all():
                    ax.tricontour(tier, a_vert, levels=sel, colors="#101820", linewidths=0.5,
                                  linestyles="solid", negative_linestyles="solid")
            # outside the iron, dotted lines at a tenth of the step show the
            # leakage and fringing flux that is smaller than one solid line
            fine = _fine_levels(levels)
            if fine.size and air_b.size:
                ax.tricontour(t_air, a_vert, levels=fine, colors="#1f4e79", linewidths=0.35,
                              linestyles=":", negative_linestyles=":")
        if math.isfinite(limit) and iron.any() and 0 < limit < float(bmag[iron].max()):
            ax.tricontour(t_iron, b_vert, levels=[limit], colors="#00a6a6", linewidths=1.6,
                          linestyles="--")
        _outlines(ax, res, lw=0.8, sign=sgn)
    _zoom(ax, res, mirror=mirror)
    if pc_iron is not None:
        cb = fig.colorbar(pc_iron, ax=ax, shrink=0.85, pad=0.02,
                          label="|B| in iron and magnets (T), linear")
        if math.isfinite(limit) and 0 < limit < top:
            cb.ax.axhline(limit, color="#00a6a6", lw=2.0, ls="--")
    if pc_air is not None:
        fig.colorbar(pc_air, ax=ax, shrink=0.85, pad=0.02, label="|B| in the air (T), log")
    ax.set_title(f"Flux lines: one per {_si(per_line, 'Wb')} (solid, both signs); "
                 f"dotted in air one per {_si(per_line / AIR_LINE_FACTOR, 'Wb')}"
                 + (f"\ndashed: {limit_what} {limit:.3g} T" if math.isfinite(limit) else ""),
                 fontsize=8.5)
    return fig


def fig_gap_line(res: CheckResult, n: int = 400):
    """B across the first gap; None for a core without a gap line (no figure)."""
    from ..design.coremodel import core_model

    line = core_model(res.case).gap_line
    if line is None:
        return None
    fig, ax = plt.subplots(figsize=(6.5, 4))
    (x0, y0), (x1, y1) = line.start, line.end
    u = np.linspace(0.0, 1.0, n)
    pts = np.vstack([x0 + u * (x1 - x0), y0 + u * (y1 - y0)])
    t = line.offset + u * math.hypot(x1 - x0, y1 - y0)
    if _mirrored(res):
        # a point on the axis has B_z = (1/r) du/dr = 0/0 in the r-z form: sample
        # a hair off it (1e-6 of the line), where the field is the axis's
        pts[0] = np.maximum(pts[0], 1e-6 * math.hypot(x1 - x0, y1 - y0))
    b = post.sample_b(res.fe.solution, pts)[line.component]
    sign = np.sign(b[len(b) // 2]) or 1.0
    ax.plot(t * 1e3, sign * b, color=FE_COLOUR, label="FE, B along the gap's flux")
    ax.axhline(res.hand_planar.gap_B, color=HAND_COLOUR, ls="--",
               label=f"hand gap B ({res.hand_planar.fringing_model}, "
                     f"{comparison_forms(res.case)[0]})")
    for c in line.faces:
        ax.axvline(c * 1e3, color="#888888", lw=0.8, ls=":")
    rz = _mirrored(res)
    across = "r" if rz and abs(x1 - x0) >= abs(y1 - y0) else "z" if rz else (
        "x" if abs(x1 - x0) >= abs(y1 - y0) else "y")
    ax.set_xlabel(f"{across} across the gap (mm); dotted: pole-face edges")
    ax.set_ylabel("B (T)")
    import textwrap

    ax.set_title("\n".join(textwrap.wrap(f"B across the middle of the gap in {line.label}: "
                                         "fringing beyond the faces", 80)), fontsize=9)
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


def _region_means(res: CheckResult) -> dict[str, float]:
    """The FE's area-mean |B| (T) of every core region (the finest mesh)."""
    sol = res.fe.solution
    rmesh = sol.mesh
    bmag = np.linalg.norm(post.b_elements(sol), axis=0)
    tri = _tri(res)
    t = tri.triangles
    x, y = tri.x[t], tri.y[t]
    area = 0.5 * np.abs((x[:, 1] - x[:, 0]) * (y[:, 2] - y[:, 0])
                        - (x[:, 2] - x[:, 0]) * (y[:, 1] - y[:, 0]))
    out = {}
    for region in rmesh.layout.regions:
        if region.kind == "core":
            idx = rmesh.elements_of(region.name)
            if len(idx) and area[idx].sum() > 0:
                out[region.name] = float(np.average(bmag[idx], weights=area[idx]))
    return out


def _materials_present(res: CheckResult) -> list[tuple[str, Any, list[str]]]:
    """(description, law, core regions and hand segments of it) for every
    soft material of the case, in case order."""
    case = res.case
    names = [r.name for r in res.fe.solution.mesh.layout.regions if r.kind == "core"]
    names += [seg["name"] for seg in res.hand_planar.segments if seg.get("kind") == "core"]
    out: dict[str, tuple[str, Any, list[str]]] = {}
    for n in dict.fromkeys(names):
        try:
            m = case.part_material(n)
        except KeyError:
            continue
        if m.kind == "magnet" or not hasattr(m.law, "b_of_h"):
            continue
        out.setdefault(m.description, (m.description, m.law, []))[2].append(n)
    return list(out.values())


def fig_bh(res: CheckResult):
    """The B-H curve of every soft material present, with each model's
    operating points on it: the hand network's per segment (its B and H),
    the FE's per core region (area-mean |B|, and the H the curve gives it, so
    on the curve by construction); the FE peak B (0.5 % area quantile) and
    the peak-B limit as horizontal lines."""
    mats = _materials_present(res)
    if not mats:
        return None
    fig, axes = plt.subplots(1, len(mats), figsize=(6.5 * min(len(mats), 2), 4.2), squeeze=False)
    fe_means = _region_means(res)
    segs = {seg["name"]: seg for seg in res.hand_planar.segments if seg.get("kind") == "core"}
    peak = res.fe.fine.peak_B
    limit = res.case.margins.peak_B
    for ax, (desc, law, parts) in zip(axes[0], mats):
        h_pts = [abs(segs[p]["H"]) for p in parts if p in segs]
        b_all = [abs(segs[p]["B"]) for p in parts if p in segs] + [
            fe_means[p] for p in parts if p in fe_means] + [peak]
        h_top = max([3.0 * max(h_pts, default=0.0), float(law.h_of_b(max(b_all) * 1.05))
                     if b_all else 0.0, 1000.0])
        h = np.linspace(0, h_top, 400)
        ax.plot(h, law.b_of_h(h), color="#5b6c80", lw=1.6, label=desc)
        first = True
        for p in parts:
            if p in segs:
                ax.plot(abs(segs[p]["H"]), abs(segs[p]["B"]), "o", mfc="none", ms=7,
                        color=HAND_COLOUR, label="hand, per segment" if first else None)
                ax.annotate(p, (abs(segs[p]["H"]), abs(segs[p]["B"])), fontsize=6,
                            xytext=(4, -9), textcoords="offset points", color=HAND_COLOUR)
                first = False
        first = True
        for p in parts:
            if p in fe_means:
                b = fe_means[p]
                ax.plot(float(law.h_of_b(b)), b, "s", ms=5, color=FE_COLOUR,
                        label="FE, area-mean |B| per region" if first else None)
                ax.annotate(p, (float(law.h_of_b(b)), b), fontsize=6, xytext=(4, 3),
                            textcoords="offset points", color=FE_COLOUR)
                first = False
        if math.isfinite(peak):
            ax.axhline(peak, color=FE_COLOUR, lw=0.9, ls=":",
                       label=f"FE peak B (0.5 % of the core area) {peak:.3g} T")
        if limit is not None:
            ax.axhline(limit, color="#00a6a6", lw=1.4, ls="--", label=f"peak-B limit {limit:.3g} T")
        ax.set_xlim(0, h_top)
        ax.set_ylim(0, max(float(law.b_of_h(h_top)), limit or 0.0, peak if math.isfinite(peak)
                           else 0.0) * 1.1)
        ax.set_xlabel("H (A/m)")
        ax.set_ylabel("B (T)")
        ax.set_title(f"{desc}: {', '.join(parts)}", fontsize=9)
        ax.grid(alpha=0.3)
        ax.legend(fontsize=7, loc="lower right")
    return fig


def fig_magnet(res: CheckResult):
    """The first magnet in the second quadrant: its recoil line from B_r to
    H_c, the knee field, the load line through each model's operating point
    (B/H of that point, through the origin), both operating points and the
    FE's demagnetising extreme; None without a magnet."""
    from ..design.coremodel import core_model

    model = core_model(res.case)
    mv = res.fe.fine.magnet_values
    if not model.magnets or not mv:
        return None
    mag = model.magnets[0]
    from scipy.constants import mu_0

    br = float(np.hypot(*mag.remanence))
    mu = mu_0 * mag.mu_r
    hc = -br / mu
    knee = dict(model.magnet_knees).get(mag.region)
    fig, ax = plt.subplots(figsize=(6.5, 4.4))
    h_lo = min(hc, knee if knee is not None else hc) * 1.1
    h = np.linspace(h_lo, 0.0, 200)
    ax.plot(h * 1e-3, np.maximum(br + mu * h, 0.0), color="#5b6c80", lw=1.6,
            label=f"recoil line: B_r {br:.3g} T, µ_r {mag.mu_r:g}, H_c {hc * 1e-3:.4g} kA/m")
    if knee is not None:
        ax.axvline(knee * 1e-3, color=HAND_COLOUR, lw=1.2, ls="--",
                   label=f"knee {knee * 1e-3:.4g} kA/m (demagnetisation below)")
        ax.axvspan(h_lo * 1e-3, knee * 1e-3, color=HAND_COLOUR, alpha=0.08)
    for who, vals, marker, colour in (("hand", res.hand_planar.magnet_values, "o", HAND_COLOUR),
                                      ("FE", mv, "s", FE_COLOUR)):
        b0, h0 = vals.get("magnet_B", math.nan), vals.get("magnet_H", math.nan)
        if not (math.isfinite(b0) and math.isfinite(h0)):
            continue
        ax.plot(h0 * 1e-3, b0, marker, ms=7, mfc="none" if who == "hand" else colour,
                color=colour, label=f"{who} operating point: {b0:.3g} T, {h0 * 1e-3:.4g} kA/m",
                zorder=4)
        if h0 < 0:
            slope = b0 / h0  # the load line through the origin
            hh = np.array([h_lo, 0.0])
            ax.plot(hh * 1e-3, slope * hh, ls=":" if who == "hand" else "-.", color=colour,
                    lw=1.0, label=f"{who} load line, B/µ0H = {slope / mu_0:.3g}")
    hmin = mv.get("magnet_H_min", math.nan)
    if math.isfinite(hmin):
        ax.plot(hmin * 1e-3, max(br + mu * hmin, 0.0), "x", color=FE_COLOUR, ms=8,
                label=f"FE demagnetising extreme (0.5 % area) {hmin * 1e-3:.4g} kA/m")
    ax.set_xlim(h_lo * 1e-3, 0.0)
    ax.set_ylim(0.0, br * 1.15)
    ax.set_xlabel("H along the magnetisation (kA/m)")
    ax.set_ylabel("B along the magnetisation (T)")
    name = "the magnet" if mag.region == "magnet" else f"magnet '{mag.region}'"
    ax.set_title(f"{name[0].upper()}{name[1:]} in the second quadrant", fontsize=9)
    ax.grid(alpha=0.3)
    ax.legend(fontsize=7, loc="upper left")
    return fig


def force_strokes(res: CheckResult, n: int = 12) -> np.ndarray:
    """The strokes (m) of the force-stroke figure, hand model only (cheap):
    0.2 to 2 times the case's stroke (on to 1.1 times the farthest force
    limit's stroke), the case's stroke and every limit's stroke added."""
    from ..design.coremodel import core_model

    spec = core_model(res.case).force
    if spec is None:
        return np.array([])
    s0 = spec.stroke
    lims = [lim.stroke for lim in res.case.margins.force]
    hi = max([2.0 * s0, *(1.1 * s for s in lims)])
    pts = np.linspace(0.2 * s0, hi, n)
    return np.unique(np.concatenate([pts, [s0], lims]))


def fig_force_stroke(res: CheckResult):
    """Force on the moving part against the stroke: the hand network's
    virtual work and the pull formula (the engineer's 3D form, solved at each
    stroke), both FE methods at the case's stroke (depth-corrected as the
    table's FE 3D column) and, when ``res.force_curve`` holds them
    (``magcheck check --force-curve``), along the stroke (each point
    depth-corrected by its own factor), the force limits drawn at their
    strokes and the minimum force at the case's stroke; None without a
    moving part."""
    from ..design.coremodel import core_model
    from ..errors import CaseError
    from ..models.hand import run_hand

    spec = core_model(res.case).force
    if spec is None or spec.stroke_key is None or not res.hand_3d.force_values:
        return None
    import dataclasses

    key: str = spec.stroke_key

    def at_stroke(st: float):
        try:
            return res.case.with_values({key: st})
        except CaseError:  # a case built in code, without its tables: the core's own field
            table, _, name = key.partition(".")
            if table != "core" or not hasattr(res.case.core, name):
                raise
            return dataclasses.replace(res.case,
                                       core=dataclasses.replace(res.case.core, **{name: st}))

    strokes, vw, pull = [], [], []
    for st in force_strokes(res):
        try:
            h = run_hand(at_stroke(float(st)))
        except (CaseError, ValueError, ArithmeticError):
            continue  # a stroke the geometry does not take
        strokes.append(st * 1e3)
        vw.append(h.force_values.get("force", math.nan))
        pull.append(h.force_values.get("force_pull", math.nan))
    fig, ax = plt.subplots(figsize=(6.5, 4.2))
    ax.plot(strokes, vw, "o-", color=HAND_COLOUR, mfc="none", ms=4, lw=1.2,
            label="hand, network virtual work")
    ax.plot(strokes, pull, "s--", color=HAND_COLOUR, mfc="none", ms=4, lw=1.0,
            label="hand, pull formula")
    rows = {r.key: r for r in res.rows}
    s0 = spec.stroke * 1e3
    for key, marker, what in (("force", "D", "FE, Maxwell stress"),
                              ("force_virtual_work", "X", "FE, virtual work")):
        r = rows.get(key)
        if r is not None and math.isfinite(r.fe_3d):
            err = r.fe_3d_uncertainty if math.isfinite(r.fe_3d_uncertainty) else None
            ax.errorbar([s0], [r.fe_3d], yerr=err, fmt=marker, color=FE_COLOUR, ms=7,
                        capsize=3, label=f"{what} at {s0:g} mm: {r.fe_3d:.3g} N", zorder=4)
    curve = getattr(res, "force_curve", None)
    if curve is not None and curve.strokes:  # FE along the stroke (check --force-curve)
        xs = np.asarray(curve.strokes) * 1e3
        where = "sweep strokes" if curve.source == "declared" else f"{len(xs)} strokes"
        ax.plot(xs, curve.maxwell_3d, "D-", color=FE_COLOUR, ms=5, lw=1.2, gid="fe_curve_maxwell",
                label=f"FE, Maxwell stress along the stroke ({where}, middle mesh, "
                      f"{curve.seconds:.0f} s)")
        ax.plot(xs, curve.virtual_work_3d, "x:", color=FE_COLOUR, ms=6, lw=1.0,
                gid="fe_curve_virtual_work", label="FE, virtual work along the stroke")
    m = res.case.margins
    if m.force_min is not None:
        ax.plot([s0], [m.force_min], "^", color="#00a6a6", ms=10,
                label=f"limit: at least {m.force_min:g} N at {s0:g} mm")
    for lim in m.force:
        for v, mk, word in ((lim.min, "^", "at least"), (lim.max, "v", "at most")):
            if v is not None:
                ax.plot([lim.stroke * 1e3], [v], mk, color="#00a6a6", ms=10,
                        label=f"limit: {word} {v:g} N at {lim.stroke * 1e3:g} mm")
                ax.hlines(v, lim.stroke * 1e3 - 0.15 * s0, lim.stroke * 1e3 + 0.15 * s0,
                          color="#00a6a6", lw=2.0)
    ax.set_xlabel(f"stroke ({spec.stroke_key}, mm)")
    ax.set_ylabel("force on the moving part (N), closing")
    fe_where = ("FE along the stroke" if curve is not None and curve.strokes
                else "FE at the case's stroke")
    ax.set_title(f"{res.case.name}: force along the stroke at {res.case.winding.current:g} A "
                 f"(hand 3D form; {fe_where})", fontsize=9)
    ax.grid(alpha=0.3)
    ax.legend(fontsize=7)
    return fig


def fig_breakdown(res: CheckResult):
    """The difference breakdown: each quantity's hand-vs-FE difference after
    each step; None without steps."""
    from ..judge.breakdown import BREAKDOWN_KEYS

    if not res.breakdown:
        return None
    fig, ax = plt.subplots(figsize=(6.5, 4))
    x = np.arange(len(res.breakdown))
    markers = "osD^vP"
    for k, m in zip(BREAKDOWN_KEYS, markers):
        y = [st.diff_pct[k] for st in res.breakdown]
        ax.plot(x, y, marker=m, lw=1.2, label=k.replace("_", " "))
    ax.axhline(0.0, color="#444444", lw=0.8)
    ax.set_xticks(x, [st.name for st in res.breakdown], rotation=15, fontsize=8)
    ax.set_ylabel("(hand - FE) / FE (%)")
    ax.set_title("Where the difference comes from: hand refinements one at a time", fontsize=9)
    ax.grid(alpha=0.3)
    ax.legend(fontsize=7)
    return fig


def fig_magnetizing(res: CheckResult):
    """A voltage-driven winding: the magnetizing current over one period
    (hand and FE) and the lambda-i curves each model inverted, with the
    operating range +-lambda_pk marked; None without a drive."""
    d = res.drive
    if d is None:
        return None
    fig, (ax1, ax2) = plt.subplots(1, 2, figsize=(9.0, 3.8))
    f = res.case.winding.frequency
    for m, label, colour, line in ((d.hand, "hand", HAND_COLOUR, "--"),
                                   (d.fe, "FE", FE_COLOUR, "-")):
        t = np.append(m.t, 1.0 / float(f or 1.0)) * 1e3
        ax1.plot(t, np.append(m.i, m.i[0]), line, color=colour, lw=1.3,
                 label=f"{label}: peak {m.peak:.4g} A, rms {m.rms:.4g} A, "
                       f"3rd {m.harmonics_pct[3]:.1f} %")
    ax1.set_xlabel("time (ms)")
    ax1.set_ylabel("magnetizing current (A)")
    ax1.set_title(f"one period at {f:g} Hz", fontsize=9)
    ax1.grid(alpha=0.3)
    ax1.legend(fontsize=7)
    for key, label, colour, style in (("hand", "hand", HAND_COLOUR, "o--"),
                                      ("fe", "FE", FE_COLOUR, "s-")):
        i, lam = d.curves[key]
        ax2.plot(np.concatenate([-i[::-1], i]), np.concatenate([-lam[::-1], lam]), style,
                 color=colour, ms=3, mfc="none", lw=1.1, label=label)
    for s in (-1, 1):
        ax2.axhline(s * d.lambda_peak, color="0.4", lw=0.8, ls=":")
    ax2.axhspan(-d.lambda_peak, d.lambda_peak, color="0.85", alpha=0.4,
                label=f"operating range +-{d.lambda_peak:.4g} Wb-turns")
    ax2.set_xlabel("current (A)")
    ax2.set_ylabel("flux linkage (Wb-turns)")
    ax2.set_title("lambda-i curve of the driven winding (no hysteresis)", fontsize=9)
    ax2.grid(alpha=0.3)
    ax2.legend(fontsize=7)
    return fig


def fig_inrush(res: CheckResult):
    """The inrush estimate: both models' lambda-i curves on to the undamped
    first flux-linkage peak (2 + r) lambda_pk, and each model's first peak
    (current, flux linkage: lower with a resistance); None without one."""
    d = res.drive
    if d is None or not d.inrush:
        return None
    fig, ax = plt.subplots(figsize=(6.4, 4.0))
    for key, model, label, colour, style in (("hand_inrush", "hand", "hand", HAND_COLOUR, "--"),
                                             ("fe_inrush", "fe", "FE", FE_COLOUR, "s-")):
        i, lam = d.curves[key]
        pos = i > 0  # a log current axis
        ax.plot(i[pos], lam[pos], style, color=colour, ms=3, mfc="none", lw=1.1,
                label=f"{label}: {d.inrush[model]:.4g} A at the first peak")
        ax.plot([d.inrush[model]], [d.inrush_linkage[model]], "o", color=colour, ms=6)
    ax.axhline(d.lambda_peak, color="0.4", lw=0.8, ls=":",
               label=f"steady peak {d.lambda_peak:.4g} Wb-turns")
    ax.axhline(d.lambda_inrush, color="0.2", lw=0.8, ls="-.",
               label=f"undamped first peak (2 + {d.residual_flux:g}) x steady = "
                     f"{d.lambda_inrush:.4g} Wb-turns")
    ax.set_xscale("log")
    ax.set_xlabel("current (A)")
    ax.set_ylabel("flux linkage (Wb-turns)")
    damping = (f"series resistance {d.resistance:.4g} ohm" if d.resistance > 0
               else "no resistance (upper bound)")
    ax.set_title(f"inrush estimate: switched on at a voltage zero, {damping}", fontsize=9)
    ax.grid(alpha=0.3)
    ax.legend(fontsize=7)
    return fig


def fig_motion(res: CheckResult):
    """A moving armature (compare.models.motion): the coil current i(t) and
    the stroke x(t) from switch-on at rated voltage to closed, the release's
    stroke from switch-off, and the operate's trajectory on the
    flux-linkage-current plane over each model's lambda(i) at the open and
    closed stops; hand (planar form) and FE, each on its own maps.  None
    without ``[motion]``, or with its static limits only (no mass, a magnet's
    release current: no motion simulated)."""
    mo = getattr(res, "motion", None)
    if mo is None or all(m.operate is None and m.release is None for m in mo.models.values()):
        return None
    spec = res.case.motion
    fig, (ax1, ax2, ax3) = plt.subplots(1, 3, figsize=(11.5, 3.8))
    models = (("hand", "hand", HAND_COLOUR, "--"), ("fe", "FE", FE_COLOUR, "-"))
    for key, label, colour, line in models:
        m = mo.models[key]
        op, rl = m.operate, m.release
        if op is not None:
            t_op = m.values["operate_time"]
            ax1.plot(op.t * 1e3, op.i, line, color=colour, lw=1.3,
                     label=f"{label}: operate {t_op * 1e3:.3g} ms" if t_op == t_op
                     else f"{label}: does not close")
            ax2.plot(op.t * 1e3, op.s * 1e3, line, color=colour, lw=1.3,
                     label=f"{label}, switch-on")
            ax3.plot(op.i, op.lam, line, color=colour, lw=1.3, label=f"{label}, operate")
        if rl is not None:
            t_rl = m.values["release_time"]
            ax2.plot(rl.t * 1e3, rl.s * 1e3, ":", color=colour, lw=1.3,
                     label=f"{label}, switch-off: release {t_rl * 1e3:.3g} ms"
                     if t_rl == t_rl else f"{label}, switch-off")
        gm = mo.maps.grid_map(key)
        ii = np.linspace(0.0, float(mo.maps.currents[-1]), 60)
        for s, dash in ((0.0, (1, 2)), (spec.travel, (4, 2))):
            ax3.plot(ii, [gm.linkage(c, s) for c in ii], color=colour, lw=0.7, alpha=0.6,
                     dashes=dash)
    ax1.axhline(mo.rated_current, color="0.4", lw=0.8, ls=":",
                label=f"rated {mo.rated_current:.4g} A")
    ax1.set_xlabel("time from switch-on (ms)")
    ax1.set_ylabel("coil current (A)")
    ax1.set_title("i(t): the dip is the armature moving", fontsize=9)
    ax2.set_xlabel("time from switch-on / switch-off (ms)")
    ax2.set_ylabel("stroke from the open stop (mm)")
    ax2.axhline(spec.travel * 1e3, color="0.4", lw=0.8, ls=":")
    ax2.set_title("x(t): operate and release", fontsize=9)
    ax3.set_xlabel("coil current (A)")
    ax3.set_ylabel("flux linkage (Wb-turns)")
    ax3.set_title("lambda-i path; thin: open (dotted), closed stop", fontsize=9)
    for ax in (ax1, ax2, ax3):
        ax.grid(alpha=0.3)
        ax.legend(fontsize=7)
    return fig


def fig_loss_density(res: CheckResult):
    """The core-loss density of the FE (W/m^3, log colour scale) on the finer mesh's core
    elements, with the hand's uniform density per segment in the title; None without a loss
    budget."""
    b = getattr(res, "loss", None)
    if b is None or b.core.map_triangles is None:
        return None
    from matplotlib.collections import PolyCollection

    c = b.core
    tri = np.asarray(c.map_triangles) * 1e3
    dens = np.asarray(c.map_density, dtype=float)
    pos = dens[dens > 0]
    fig, ax = plt.subplots(figsize=(6.4, 5.0))
    if pos.size:
        norm = LogNorm(vmin=max(float(pos.min()), float(pos.max()) * 1e-3), vmax=float(pos.max()))
        coll = PolyCollection(list(tri), array=np.clip(dens, norm.vmin, None), cmap="inferno",
                              norm=norm, edgecolors="none")
        ax.add_collection(coll)
        fig.colorbar(coll, ax=ax, label="core-loss density (W/m³)")
    ax.set_xlim(tri[..., 0].min(), tri[..., 0].max())
    ax.set_ylim(tri[..., 1].min(), tri[..., 1].max())
    ax.set_aspect("equal")
    _section_labels(ax, res)
    hand = ", ".join(f"{s['name']} {s['density'] / 1e3:.3g}" for s in c.hand_segments[:4])
    ax.set_title(f"FE core-loss density ({c.waveform}, {c.frequency:g} Hz): {c.fe:.4g} W; "
                 f"hand {c.hand:.4g} W\nhand per segment (kW/m³): {hand}", fontsize=8)
    return fig


def _section_labels(ax, res: CheckResult) -> None:
    """Axis names of a drawing of the section: r, z for an r-z solution, else x, y."""
    rz = _mirrored(res)
    ax.set_xlabel("r (mm)" if rz else "x (mm)")
    ax.set_ylabel("z (mm)" if rz else "y (mm)")


def fig_loss_budget(res: CheckResult):
    """The loss budget as bars, hand (3D) beside FE (3D, with its uncertainty): core, copper,
    AC winding loss and the total; None without a loss budget."""
    b = getattr(res, "loss", None)
    if b is None:
        return None
    keys = [k for k in ("core_loss", "copper_loss", "winding_loss_ac", "total_loss")
            if k in b.entries]
    labels = {"core_loss": "core", "copper_loss": "copper (DC)" if not b.transformer
              else "copper (rated load)", "winding_loss_ac": "winding (AC part)",
              "total_loss": "total"}
    x = np.arange(len(keys))
    h = [b.entries[k]["hand_3d"] for k in keys]
    f = [b.entries[k]["fe_3d"] for k in keys]
    u = [b.entries[k]["uncertainty"] * (b.entries[k]["fe_3d"] / b.entries[k]["fe"]
                                        if b.entries[k]["fe"] else 1.0) for k in keys]
    u = [v if math.isfinite(v) else 0.0 for v in u]
    fig, ax = plt.subplots(figsize=(6.4, 4.0))
    ax.bar(x - 0.2, h, 0.4, color=HAND_COLOUR, label="hand (3D)")
    ax.bar(x + 0.2, f, 0.4, color=FE_COLOUR, yerr=u, capsize=3, label="FE (depth-corrected)")
    limit = res.case.margins.total_loss
    if limit is not None:
        ax.axhline(limit, color=MARGIN_COLOUR, ls="--", lw=1.0, label=f"total loss max {limit:g} W")
    ax.set_xticks(x, [labels[k] for k in keys])
    ax.set_ylabel("loss (W)")
    extra = ""
    if "efficiency" in b.entries:
        e = b.entries["efficiency"]
        extra = f"; efficiency {e['hand_3d']:.2f} % (hand), {e['fe_3d']:.2f} % (FE)"
    rise = b.entries["temperature_rise"]
    ax.set_title(f"loss budget: rise {rise['hand_3d']:.3g} K (hand), {rise['fe_3d']:.3g} K (FE), "
                 f"estimate{extra}", fontsize=8)
    ax.grid(alpha=0.3, axis="y")
    ax.legend(fontsize=7)
    return fig


def fig_ac_loss(res: CheckResult):
    """The AC loss density (W/m^3, time average, log scale over 3 decades)
    in the turns of the AC windings on the finest mesh, the core in grey and
    the gaps outlined: where the winding loses (next to a gap, the layers
    at the boundary of primary and secondary); None without AC."""
    ac = getattr(res, "ac", None)
    if ac is None:
        return None
    hs = getattr(ac, "solution", None)
    if hs is None or hs.problem.mesh is not res.fe.solution.mesh:
        return None
    from magcheck.fem2d.harmonic import loss_density

    rmesh = hs.problem.mesh
    asm = hs.problem.asm
    q = loss_density(hs)
    w = asm.wv_geometric
    qe = np.sum(q * w, axis=1) / np.sum(w, axis=1)  # element means
    cond = hs.problem.sigma > 0
    tri = _tri(res)
    fig, ax = plt.subplots(figsize=(7.2, 5.6))
    iron = _iron_mask(res)
    ax.tripcolor(tri, facecolors=np.where(iron, 1.0, 0.0), cmap="Greys", vmin=0, vmax=4,
                 edgecolors="none")
    top = float(qe[cond].max()) if np.any(cond) and qe[cond].max() > 0 else 1.0
    norm = LogNorm(vmin=top * 1e-3, vmax=top, clip=True)
    tri_c = Triangulation(tri.x, tri.y, tri.triangles, mask=~cond)  # the conductors only
    pc = ax.tripcolor(tri_c, facecolors=np.maximum(qe, top * 1e-3), norm=norm, cmap="inferno",
                      edgecolors="none")
    fig.colorbar(pc, ax=ax, label="AC loss density (W/m³, time average)")
    for region in rmesh.layout.regions:
        if region.kind == "gap":
            for shape in region.shapes:
                for loop in _loops(shape):
                    xs, ys = zip(*loop)
                    ax.plot(np.array(xs + xs[:1]) * 1e3, np.array(ys + ys[:1]) * 1e3,
                            color=MARGIN_COLOUR, lw=1.0)
    idx = np.nonzero(cond)[0]
    pts = rmesh.mesh.p[:, rmesh.mesh.t[:3, idx].ravel()] * 1e3
    pad = 0.25 * max(float(np.ptp(pts[0])), float(np.ptp(pts[1])))
    ax.set_xlim(pts[0].min() - pad, pts[0].max() + pad)
    ax.set_ylim(pts[1].min() - pad, pts[1].max() + pad)
    ax.set_aspect("equal")
    _section_labels(ax, res)
    ax.set_title(f"{res.case.name}: AC loss density at {ac.frequency / 1e3:.4g} kHz "
                 f"(finest mesh, gaps outlined)", fontsize=9)
    return fig


FIGURES = {
    "geometry.png": fig_geometry,
    "flux.png": fig_flux,
    "gap_line.png": fig_gap_line,
    "path_h.png": fig_path_h,
    "bh.png": fig_bh,
    "magnet.png": fig_magnet,
    "force_stroke.png": fig_force_stroke,
    "breakdown.png": fig_breakdown,
    "magnetizing.png": fig_magnetizing,
    "inrush.png": fig_inrush,
    "motion.png": fig_motion,
    "loss_density.png": fig_loss_density,
    "loss_budget.png": fig_loss_budget,
    "ac_loss.png": fig_ac_loss,
}


_CAPTIONS = {
    "loss_density.png": "The FE's core-loss density (log scale) from each element's flux-density "
                        "swing, where flux crowding at inner corners and round the gap puts the "
                        "loss; the hand model takes one uniform density per segment (title). "
                        "Rotational flux and minor loops left out.",
    "loss_budget.png": "The loss budget, hand beside FE (3D values, the FE with its three-mesh "
                       "uncertainty): core, copper and AC winding loss and the total; the "
                       "temperature rise is an estimate from the loss per surface area "
                       "(docs/references.md section 15), not a thermal analysis.",
    "geometry.png": "Regions and the finer mesh: each core part with its material, the gaps "
                    "with their lengths, every winding in its own colour (return sides "
                    "hatched), magnets with their magnetisation, the parts' overall dimensions "
                    "and the hand circuit's mean path (dashed); an r-z section mirrored about "
                    "its axis.",
    "gap_line.png": "B along a line across the middle of the first gap, beyond both pole faces.",
    "path_h.png": "|H| along the core's mean path (gaps left out), with the hand value.",
    "bh.png": "The B-H curve of every soft material present, with the hand network's operating "
              "point per segment (open circles: its B and H) and the FE's per core region "
              "(squares: area-mean |B| and the H the curve gives it); the FE peak B (0.5 % of "
              "the core area) and the peak-B limit as horizontal lines.",
    "magnet.png": "The first magnet in the second quadrant: its recoil line, the knee field "
                  "(demagnetisation beyond it), each model's operating point and load line, and "
                  "the FE's demagnetising extreme (the H exceeded on 0.5 % of the magnet's area).",
    "force_stroke.png": "Force on the moving part along the stroke at the case's current: the "
                        "hand network's virtual work and the pull formula solved at each stroke "
                        "(3D form), both FE methods at the case's stroke (depth-corrected, with "
                        "their uncertainty; along the stroke too with magcheck check "
                        "--force-curve), and the force limits at their strokes.",
    "ac_loss.png": "The AC windings' loss density (time average, log scale over three decades "
                   "below its peak) on the finest mesh: the turns beside an air gap (outlined) "
                   "lose most where the gap's fringing field crosses them, which Dowell's 1D "
                   "layer formula cannot see; the core in grey.",
    "breakdown.png": "The hand-vs-FE difference of each quantity after each refinement of the "
                     "hand model (planar forms), in the order of the table above.",
    "magnetizing.png": "The magnetizing current of the voltage-driven winding over one period, "
                       "each model's from its own lambda-i curve (right; the operating range "
                       "shaded), resistance, hysteresis and eddy currents neglected.",
    "inrush.png": "The inrush estimate: each model's lambda-i curve continued past saturation to "
                  "the first flux-linkage peak after switch-on at a voltage zero with the given "
                  "residual flux, and each model's first current peak (with the winding's "
                  "resistance, d lambda/dt = v - R i; without it an upper bound); the hand "
                  "network has no air flux beside the saturated core.",
    "motion.png": "The moving armature at rated voltage, each model on its own force and "
                  "flux-linkage maps: the coil current and the stroke from switch-on to "
                  "closed, the stroke from switch-off to open (dotted), and the operate's path "
                  "on the flux-linkage-current plane between the open and closed stops' "
                  "curves; eddy currents in solid iron and friction left out.",
}


def caption(name: str, res: CheckResult) -> str:
    """The caption of figure ``name`` of a check."""
    if name == "flux.png":
        return flux_caption(res)
    return _CAPTIONS.get(name, "")


def save_figures(res: CheckResult, folder: str | Path) -> list[Path]:
    """Write every figure as PNG into folder (through compare.outputs.output's writer)."""
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


# ----------------------------------------------------------------- sweeps
#: line style of each model: colour, marker and marker fill.  Hand markers are
#: open and larger and drawn on top, so an FE curve under a hand curve still
#: shows (and the other way round); the second series of a panel is dashed
#: with its own marker.
_SWEEP_STYLE: dict[tuple[str, int], dict[str, Any]] = {
    ("hand", 0): dict(color=HAND_COLOUR, marker="o", mfc="none", ms=5, zorder=3),
    ("hand", 1): dict(color=HAND_COLOUR, marker="^", mfc="none", ms=5, zorder=3),
    ("FE", 0): dict(color=FE_COLOUR, marker="s", ms=3, zorder=2),
    ("FE", 1): dict(color=FE_COLOUR, marker="D", ms=3, zorder=2),
}
_SERIES_LINE = ("-", "--")
_GROUP_SHADES = (1.0, 0.65, 0.4, 0.25)

SWEEP_PANELS = (
    ("sweep_inductance.png", "inductance (mH)", 1e3,
     (("inductance", "secant"), ("incremental_inductance", "incremental"))),
    ("sweep_flux_linkage.png", "flux linkage (mWb)", 1e3, (("flux_linkage", ""),)),
    ("sweep_core_B.png", "core B (T)", 1.0, (("core_B", "mean"), ("peak_B", "peak"))),
)


def _shade(colour: str, amount: float) -> tuple:
    """colour blended toward white: 1 keeps it, 0 is white."""
    from matplotlib.colors import to_rgb

    r, g, b = to_rgb(colour)
    return (1 - amount + amount * r, 1 - amount + amount * g, 1 - amount + amount * b)


def _saturation_marks(ax, sat_rows, tag: str, shade: float) -> None:
    """Vertical dotted lines at the saturation currents of one curve (FE and
    the planar hand form, the two drawn on these axes)."""
    for row in sat_rows:
        if row.get("curve", "") != tag or row["model"] not in ("fe", "hand_planar"):
            continue
        colour = FE_COLOUR if row["model"] == "fe" else HAND_COLOUR
        who = "FE" if row["model"] == "fe" else "hand"
        for label, current in row.items():
            if not label.endswith("%") or not math.isfinite(current):
                continue
            ax.axvline(current, color=_shade(colour, shade), ls=":", lw=1.0, zorder=1,
                       label=f"{who}: {row['inductance']} L -{label} at {current:.3g} A")


MARGIN_COLOUR = "#00a6a6"
"""The colour of every design limit drawn on a figure (and of the judged FE 3D curve)."""

_DEPTH_CORRECTED = ("inductance", "incremental_inductance", "flux_linkage", "core_B")


def _depth_factor(p, key: str) -> float:
    """A sweep point's depth correction of ``key`` as the margins take it
    (its ``depth_factors``; else the hand 3D over planar ratio)."""
    factors = getattr(p, "depth_factors", None) or {}
    if key in factors:
        return factors[key]
    h3, hp = p.hand.get(key, math.nan), p.hand_planar.get(key, math.nan)
    return h3 / hp if hp and math.isfinite(hp) and math.isfinite(h3) else 1.0


def _sweep_margin_marks(ax, case, panel: str, scale: float) -> None:
    """The case's design limits on a sweep panel against the current: each
    inductance window at its current (a bar from min to max, arrows for an
    open side), the minimum saturation currents, the peak-B limit."""
    m = case.margins
    if panel == "sweep_inductance.png":
        for lim in m.inductance:
            lo = lim.min * scale if lim.min is not None else None
            hi = lim.max * scale if lim.max is not None else None
            text = " to ".join(f"{w} {v:.4g} mH" for w, v in (("min", lo), ("max", hi))
                               if v is not None)
            if lo is not None and hi is not None:
                ax.plot([lim.at, lim.at], [lo, hi], color=MARGIN_COLOUR, lw=3.0,
                        solid_capstyle="butt", label=f"{lim.kind} L window at {lim.at:g} A: {text}")
            for v, mk in ((lo, "^"), (hi, "v")):
                if v is not None:
                    ax.plot([lim.at], [v], mk, color=MARGIN_COLOUR, ms=8,
                            label=None if (lo is not None and hi is not None)
                            else f"{lim.kind} L at {lim.at:g} A: {text}")
        for sat in m.saturation:
            ax.axvline(sat.min, color=MARGIN_COLOUR, lw=1.4, ls="--",
                       label=f"saturation current ({sat.kind} L -{sat.drop * 100:g} %) "
                             f"at least {sat.min:g} A")
    if panel == "sweep_core_B.png" and m.peak_B is not None:
        ax.axhline(m.peak_B * scale, color=MARGIN_COLOUR, lw=1.4, ls="--",
                   label=f"peak-B limit {m.peak_B:.3g} T")


MEASURED_COLOUR = "#222222"
"""The colour of measured points (compare.design.measured) on a figure."""


def measured_marks(ax, case, quantities: Sequence[str], x_scale: float, y_scale: float) -> int:
    """The case's measurements of ``quantities`` (``[[measured]]``) as points
    with error bars of one standard uncertainty (k = 1) over the model
    curves: x = the measurement's current or stroke (SI) times ``x_scale``, y
    = its value times ``y_scale``. Returns the number of points drawn."""
    n = 0
    for i, m in enumerate(case.measured):
        if m.quantity not in quantities or not m.points:
            continue
        what = m.quantity.replace("_", " ")
        at = f" at {m.current:g} A" if m.current is not None else ""
        src = f" ({m.source[:40]}{'...' if len(m.source) > 40 else ''})" if m.source else ""
        ax.errorbar([p.at * x_scale for p in m.points], [p.value * y_scale for p in m.points],
                    yerr=[p.uncertainty * y_scale for p in m.points], fmt="o" if i % 2 == 0
                    else "D", ms=4, color=MEASURED_COLOUR, mfc="white", capsize=3, lw=1.0,
                    zorder=4, label=f"measured {what}{at} ± u{src}")
        n += len(m.points)
    return n


def sweep_figures(res, saturation: Sequence[dict] = ()) -> list[tuple[str, Any]]:
    """The figures of a sweep as (file name, figure): inductance (secant and
    incremental), flux linkage and core B (mean and peak) against the swept
    key; one curve per combination of the other swept keys.  When the current
    is swept, the inductance panel marks the saturation currents of
    ``saturation`` (rows of `compare.studies.sweep.sweep_margins`)."""
    from ..studies.sweep import CURRENT_KEY, curves

    x_key = CURRENT_KEY if CURRENT_KEY in res.keys else res.keys[0]
    from ..design.keys import display_unit

    x_scale, x_unit = (1.0, "") if x_key == CURRENT_KEY else display_unit(x_key)
    x_label = ("winding current I (A)" if x_key == CURRENT_KEY
               else f"{x_key} ({x_unit})" if x_unit else x_key)

    def x_of(p):
        return abs(p.current) if x_key == CURRENT_KEY else p.settings[x_key] * x_scale

    groups = curves(res) if x_key == CURRENT_KEY else [({}, list(res.points))]
    out = []
    for name, ylabel, scale, series in SWEEP_PANELS:
        fig, ax = plt.subplots(figsize=(6.5, 4.2))
        for g, (fixed, pts) in enumerate(groups):
            shade = _GROUP_SHADES[min(g, len(_GROUP_SHADES) - 1)]
            tag = ", ".join(f"{k} = {v:g}" for k, v in fixed.items())
            suffix = f" ({tag})" if tag else ""
            x = [x_of(p) for p in pts]
            for s, (key, what) in enumerate(series):
                if key == "peak_B":
                    by_model = {"hand": [p.hand_peak_B for p in pts], "FE": [p.fe_peak_B for p in pts]}
                else:
                    by_model = {"hand": [p.hand_planar.get(key, math.nan) for p in pts],
                                "FE": [p.fe.get(key, math.nan) for p in pts]}
                for model, ys in by_model.items():
                    if model == "FE" and not res.with_fe:
                        continue
                    style: dict[str, Any] = dict(_SWEEP_STYLE[(model, s)])
                    style["color"] = _shade(style["color"], shade)
                    ax.plot(x, [v * scale for v in ys], _SERIES_LINE[s], lw=1.2,
                            label=" ".join(w for w in (model, what) if w) + suffix, **style)
                if res.with_fe and key in _DEPTH_CORRECTED:
                    # the value the margins are judged on: the FE, depth-corrected
                    ys3 = [p.fe.get(key, math.nan) * _depth_factor(p, key) for p in pts]
                    if not all(math.isclose(a, b, rel_tol=1e-9) for a, b in zip(
                            ys3, [p.fe.get(key, math.nan) for p in pts]) if math.isfinite(a)):
                        ax.plot(x, [v * scale for v in ys3], "-.", lw=1.6,
                                color=_shade(MARGIN_COLOUR, shade), marker="s" if s == 0
                                else "D", ms=3, zorder=2,
                                label=f"FE 3D {what} (depth-corrected, judged){suffix}".replace(
                                    "  ", " "))
            if name == "sweep_inductance.png" and x_key == CURRENT_KEY:
                _saturation_marks(ax, saturation, tag, shade)
        if x_key == CURRENT_KEY:
            _sweep_margin_marks(ax, res.case, name, scale)
            if name == "sweep_inductance.png":
                measured_marks(ax, res.case, [k for k, _ in series], 1.0, scale)
        ax.set_xlabel(x_label)
        ax.set_ylabel(ylabel)
        ax.grid(alpha=0.3)
        ax.legend(fontsize=7)
        hand_form, fe_form = comparison_forms(res.case)
        ax.set_title(f"{res.case.name}: hand ({hand_form}) and {fe_form}")
        out.append((name, fig))
    if res.points and "force" in res.points[0].hand_planar:
        out.append(("sweep_force.png", fig_sweep_force(res, groups, x_of, x_label)))
    if res.points and "ac_R_ac_ratio" in res.points[0].hand_planar:
        out.append(("sweep_ac.png", fig_sweep_ac(res, x_key, x_of, x_label)))
    if res.points and "loss_total_loss" in res.points[0].hand:
        out.append(("sweep_loss.png", fig_sweep_loss(res, x_key, x_of, x_label)))
    return out


_LOSS_UNIT = {"core_loss": "W", "total_loss": "W", "temperature_rise": "K", "efficiency": "%"}


def _loss_value(p, key: str, model: str) -> float:
    """A sweep point's loss-budget figure as the check's 3D columns give it: the hand's 3D
    value, the FE's 3D column (compare.models.loss.point_budget)."""
    if model == "hand":
        return p.hand.get(f"loss_{key}", math.nan)
    return p.fe.get(f"loss_{key}_3d", math.nan)


def _log_frequency(x_key: str, x) -> bool:
    """A swept frequency (every value positive) is drawn on a log axis."""
    return x_key.endswith("frequency") and all(v > 0 for v in x)


def _sweep_axes(ax, x_label: str, ylabel: str, log_x: bool) -> None:
    """A sweep panel's axes: labels, the log frequency axis, grid and legend."""
    if log_x:
        ax.set_xscale("log")
    ax.set_xlabel(x_label)
    ax.set_ylabel(ylabel)
    ax.grid(alpha=0.3, which="both")
    ax.legend(fontsize=7)


def fig_sweep_loss(res, x_key: str, x_of, x_label: str):
    """The loss budget along a sweep (compare.models.loss.point_budget): core and total loss
    (W), the temperature-rise estimate (K) and a transformer's efficiency at rated load (%),
    hand and FE side by side (both 3D, the values the margins are judged on), each limit of
    ``[margins]`` drawn; log axes when a frequency is swept."""
    from ..judge.lossbudget import sweep_loss_margins

    pts = sorted(res.points, key=x_of)
    x = [x_of(p) for p in pts]
    m = res.case.margins
    panels = [("loss (W)", (("core_loss", "core loss", m.core_loss, 1.0),
                            ("total_loss", "total loss", m.total_loss, 1.0))),
              ("temperature rise, estimate (K)",
               (("temperature_rise", "temperature rise", m.temperature_rise, 1.0),))]
    if "loss_efficiency" in pts[0].hand:
        panels.append(("efficiency at rated load (%)",
                       (("efficiency", "efficiency", m.efficiency, 100.0),)))
    models = ("hand", "FE") if res.with_fe else ("hand",)
    fig, axes = plt.subplots(1, len(panels), figsize=(5.2 * len(panels), 4.2), squeeze=False)
    log_x = _log_frequency(x_key, x)
    for ax, (ylabel, series) in zip(axes[0], panels):
        for s, (key, what, limit, scale) in enumerate(series):
            for model in models:
                style: dict[str, Any] = dict(_SWEEP_STYLE[(model, s)])
                ax.plot(x, [_loss_value(p, key, model.lower()) for p in pts], _SERIES_LINE[s],
                        lw=1.2, label=f"{model} {what}" + (" (3D, judged)" if model == "FE"
                                                           else " (3D)"), **style)
            if limit is not None:
                ax.axhline(scale * limit, color=MARGIN_COLOUR, lw=1.4, ls="--" if s == 0 else ":",
                           label=f"{what} limit {scale * limit:.4g} {_LOSS_UNIT[key]}")
        _sweep_axes(ax, x_label, ylabel, log_x)
    failed = [r for r in sweep_loss_margins(res.case, res.points, res.with_fe)
              if r.margin_pct < 0]
    fig.suptitle(f"{res.case.name}: loss budget along the sweep, hand and FE (3D)"
                 + (f"; {len(failed)} loss margin(s) missed" if failed else ""), fontsize=10)
    fig.tight_layout()
    return fig


def fig_sweep_ac(res, x_key: str, x_of, x_label: str):
    """An AC winding along a sweep (compare.models.ac): R_ac/R_dc (Dowell's
    1D layer formula and the FE) and L_ac (the hand's incremental inductance
    at the DC current and the FE's Im Z / w), both planar; log axes when the
    AC frequency is swept."""
    pts = sorted(res.points, key=x_of)
    x = [x_of(p) for p in pts]
    fig, (a1, a2) = plt.subplots(1, 2, figsize=(10, 4.2))
    for model, get in (("hand", lambda p: p.hand_planar), ("FE", lambda p: p.fe)):
        if model == "FE" and not res.with_fe:
            continue
        style = dict(_SWEEP_STYLE[(model, 0)])
        a1.plot(x, [get(p).get("ac_R_ac_ratio", math.nan) for p in pts], "-", lw=1.2,
                label=f"{model} R_ac/R_dc" + (" (Dowell 1D)" if model == "hand" else ""),
                **style)
        a2.plot(x, [get(p).get("ac_L_ac", math.nan) * 1e6 for p in pts], "-", lw=1.2,
                label=f"{model} L_ac" + (" (incremental, DC point)" if model == "hand" else
                                         " (Im Z / w)"), **style)
    lim = res.case.margins.resistance_ratio
    if lim is not None:
        a1.axhline(lim, color=MARGIN_COLOUR, lw=1.4, ls="--", label=f"R_ac/R_dc limit {lim:g}")
    log_x = _log_frequency(x_key, x)
    for ax, ylabel in ((a1, "R_ac / R_dc"), (a2, "L_ac (uH)")):
        _sweep_axes(ax, x_label, ylabel, log_x)
    if log_x:
        a1.set_yscale("log")
    hand_form, fe_form = comparison_forms(res.case)
    fig.suptitle(f"{res.case.name}: AC winding, hand ({hand_form}) and {fe_form}", fontsize=10)
    fig.tight_layout()
    return fig


def fig_sweep_force(res, groups, x_of, x_label):
    """Force on the moving part against the swept key: the hand network's
    virtual work and the pull formula (planar form), the FE's Maxwell stress
    and virtual work."""
    fig, ax = plt.subplots(figsize=(6.5, 4.2))
    series = (("hand", "force", "hand, virtual work", HAND_COLOUR, "o-", "none"),
              ("hand", "force_pull", "hand, pull formula", HAND_COLOUR, "s--", "none"),
              ("fe", "force_maxwell", "FE, Maxwell stress", FE_COLOUR, "-", None),
              ("fe", "force_virtual_work", "FE, virtual work", FE_COLOUR, "x:", None))
    for g, (fixed, pts) in enumerate(groups):
        shade = _GROUP_SHADES[min(g, len(_GROUP_SHADES) - 1)]
        tag = ", ".join(f"{k} = {v:g}" for k, v in fixed.items())
        suffix = f" ({tag})" if tag else ""
        order = sorted(range(len(pts)), key=lambda i: x_of(pts[i]))
        x = [x_of(pts[i]) for i in order]
        for model, key, what, colour, line, face in series:
            if model == "fe" and not res.with_fe:
                continue
            block = (lambda p: p.hand_planar) if model == "hand" else (lambda p: p.fe)
            ys = [block(pts[i]).get(key, math.nan) for i in order]
            kw: dict[str, Any] = {"color": _shade(colour, shade)}
            if face is not None:
                kw["markerfacecolor"] = face
            ax.plot(x, ys, line, lw=1.2, label=what + suffix, **kw)
    from ..design.coremodel import core_model

    spec = core_model(res.case).force
    if spec is not None and spec.stroke_key in res.keys and res.with_fe:
        for fixed, pts in groups:  # the FE force as the margins judge it: depth-corrected
            order = sorted(range(len(pts)), key=lambda i: x_of(pts[i]))
            ys = [pts[i].fe.get("force_maxwell", math.nan) * _depth_factor(pts[i], "force")
                  for i in order]
            if any(math.isfinite(v) and not math.isclose(v, pts[i].fe.get("force_maxwell", v))
                   for v, i in zip(ys, order)):
                ax.plot([x_of(pts[i]) for i in order], ys, "-.", color=MARGIN_COLOUR, lw=1.4,
                        label="FE 3D, Maxwell stress (depth-corrected, judged)")
    if spec is not None and spec.stroke_key in res.keys:
        from ..design.keys import display_unit

        k = display_unit(spec.stroke_key)[0]
        for lim in res.case.margins.force:
            for v, mk, word in ((lim.min, "^", "at least"), (lim.max, "v", "at most")):
                if v is not None:
                    ax.plot([lim.stroke * k], [v], mk, color=MARGIN_COLOUR, ms=9,
                            label=f"limit: {word} {v:g} N at {lim.stroke * 1e3:g} mm")
        measured_marks(ax, res.case, ("force",), k, 1.0)
    ax.set_xlabel(x_label)
    ax.set_ylabel("force on the moving part (N), closing")
    ax.grid(alpha=0.3)
    ax.legend(fontsize=7)
    hand_form, fe_form = comparison_forms(res.case)
    ax.set_title(f"{res.case.name}: force along the stroke, hand ({hand_form}) and {fe_form}",
                 fontsize=9)
    return fig


def save_sweep_figures(res, folder: str | Path, saturation: Sequence[dict] = ()) -> list[Path]:
    """Write `sweep_figures` as PNG into folder; every figure closed."""
    folder = Path(folder)
    paths = []
    figures = sweep_figures(res, saturation)
    try:
        for name, fig in figures:
            fig.tight_layout()
            paths.append(save_figure(fig, folder / name, option="--plots") or folder / name)
    finally:
        for _, fig in figures:
            plt.close(fig)
    return paths


# ----------------------------------------------------------------- tolerance
def _tolerance_limits(res) -> dict[str, list[tuple[str, float]]]:
    """The design's limits on each histogram's figure, as (label, value (SI)):
    an inductance window on its own figure (``inductance_<kind>@<I>A``, the
    L it is judged on at its current; a secant window at the case's own
    current also on ``inductance``), the peak-B maximum, and the minimum
    saturation current at the study's drop (incremental L)."""
    m = res.case.margins
    at = res.case.winding.current
    out: dict[str, list[tuple[str, float]]] = {k: [] for k in res.values}
    for k in ("inductance", "peak_B", "saturation_current"):
        out.setdefault(k, [])
    for ind in m.inductance:
        window = [(f"{k} {v * 1e3:.4g} mH", v) for k, v in (("min", ind.min), ("max", ind.max))
                  if v is not None]
        out.setdefault(f"inductance_{ind.kind}@{ind.at:g}A", []).extend(window)
        if ind.kind == "secant" and math.isclose(ind.at, at, rel_tol=1e-9, abs_tol=1e-12):
            out["inductance"] += window
    if m.peak_B is not None:
        out["peak_B"].append((f"max {m.peak_B:.4g} T", m.peak_B))
    for lim in m.saturation:
        if lim.kind == "incremental" and math.isclose(lim.drop, res.drop):
            out["saturation_current"].append((f"min {lim.min:.4g} A", lim.min))
    for k, kind, scale in _LOSS_LIMITS:  # the loss budget's margins (percent from fractions)
        limit = getattr(m, k, None)
        if k in res.values and limit is not None:
            unit = _TOLERANCE_UNITS[k][1]
            out[k].append((f"{kind} {scale * limit:.4g} {unit}", scale * limit))
    return out


_LOSS_LIMITS = (("total_loss", "max", 1.0), ("core_loss", "max", 1.0),
                ("efficiency", "min", 100.0), ("regulation", "max", 100.0),
                ("temperature_rise", "max", 1.0))
_TOLERANCE_UNITS = {"inductance": (1e3, "mH"), "peak_B": (1.0, "T"),
                    "saturation_current": (1.0, "A"), "total_loss": (1.0, "W"),
                    "core_loss": (1.0, "W"), "efficiency": (1.0, "%"),
                    "regulation": (1.0, "%"), "temperature_rise": (1.0, "K")}


def tolerance_panels(res) -> list[str]:
    """The figures the tolerance figure draws, one panel each: the
    inductance as each window judges it (``inductance_<kind>@<I>A``, at the
    window's own current) or, with no window, the L at the case's current;
    then peak B, the saturation current and the loss margins' figures (total and core loss,
    efficiency, regulation, temperature rise, as judged)."""
    windows = [k for k in res.values if k.startswith("inductance_")]
    return (windows or ["inductance"]) + [k for k in ("peak_B", "saturation_current")
                                          if k in res.values] + [
        k for k, _, _ in _LOSS_LIMITS if k in res.values]  # the loss margins' figures


def tolerance_figure(res, labels: dict[str, str]):
    """Histograms of the tolerance study's figures (`tolerance_panels`, each
    axes' gid its figure's key), counts on an integer axis, the design's
    limits drawn as vertical lines (`_tolerance_limits`): each inductance
    window on the L it is judged on, at its own current."""
    from matplotlib.ticker import MaxNLocator

    limits = _tolerance_limits(res)
    panels = tolerance_panels(res)
    fig, axes = plt.subplots(1, len(panels), figsize=(4 * len(panels), 3.8), squeeze=False)
    for ax, k in zip(axes[0], panels):
        v = res.values[k]
        scale, unit = _TOLERANCE_UNITS["inductance" if k.startswith("inductance") else k]
        x = v[np.isfinite(v)] * scale
        ax.set_gid(k)
        ax.hist(x, bins=max(5, min(30, int(len(x) ** 0.5) + 1)), color=FE_COLOUR, alpha=0.85)
        for label, value in limits.get(k, []):
            ax.axvline(value * scale, color=HAND_COLOUR, lw=1.5, ls="--", label=f"limit: {label}")
        if limits.get(k):
            ax.legend(fontsize=7)
        ax.yaxis.set_major_locator(MaxNLocator(integer=True))
        ax.set_xlabel(f"{labels[k]} ({unit})", fontsize=8)
        ax.grid(alpha=0.3)
    axes[0][0].set_ylabel("samples")
    fig.suptitle(f"{res.case.name}: {len(res.samples)} samples, seed {res.seed}, "
                 f"yield {100 * res.yield_fraction:.1f} %")
    return fig


def save_tolerance_figure(res, labels: dict[str, str], path: str | Path) -> Path:
    """Write `tolerance_figure` (format from the suffix); the figure is closed."""
    fig = tolerance_figure(res, labels)
    try:
        fig.tight_layout()
        written = save_figure(fig, path, option="--plot")
    finally:
        plt.close(fig)
    return written or Path(path)


# --------------------------------------------------------------------------- target
_TARGET_SCALE = {"H": (1e3, "mH"), "A": (1.0, "A"), "N": (1.0, "N"), "T": (1.0, "T")}


def target_figure(res):
    """One panel per target of a compare.studies.target.TargetResult: the
    target quantity against the key, the hand curve (its samples), the FE's
    evaluated points, the FE's three-mesh value at its answer with its
    uncertainty, the target line and both answers."""
    from ..design.keys import display_unit

    key = res.bracket.key
    kscale, kunit = display_unit(key)
    n = len(res.answers)
    fig, axes = plt.subplots(1, n, figsize=(5.2 * n, 3.8), squeeze=False)
    for ax, a in zip(axes[0], res.answers):
        t = a.target
        qs, qu = _TARGET_SCALE.get(t.unit, (1.0, t.unit))
        pts = sorted(p for p in a.hand.points if math.isfinite(p[1]))
        ax.plot([x * kscale for x, _ in pts], [q * qs for _, q in pts], "-", color=HAND_COLOUR,
                lw=1.5, label="hand")
        if a.fe is not None and a.fe.points:
            fp = sorted(a.fe.points)
            ax.plot([x * kscale for x, _ in fp], [q * qs for _, q in fp], "o", color=FE_COLOUR,
                    ms=5, label="FE (evaluated)")
            if math.isfinite(a.fe.value):
                at = a.fe.root if not a.fe.neighbours else next(
                    (nb[0] for nb in reversed(a.fe.neighbours) if nb[2]), a.fe.root)
                ax.errorbar([at * kscale], [a.fe.value * qs],
                            yerr=[a.fe.uncertainty * qs if math.isfinite(a.fe.uncertainty)
                                  else 0.0], fmt="s", color=FE_COLOUR, mfc="white", capsize=4,
                            label="FE at its answer, 3 meshes")
        ax.axhline(t.value * qs, color="0.3", ls="--", lw=1.0, label=f"target {t.op} "
                   f"{t.value * qs:.4g} {qu}")
        for m, colour in ((a.hand, HAND_COLOUR), (a.fe, FE_COLOUR)):
            if m is not None and math.isfinite(m.root):
                ax.axvline(m.root * kscale, color=colour, ls=":", lw=1.0)
        ax.set_xlabel(f"{key} ({kunit})" if kunit else key, fontsize=8)
        ax.set_ylabel(f"{t.quantity} ({qu})", fontsize=8)
        ax.set_title(t.text, fontsize=9)
        ax.grid(alpha=0.3)
        ax.legend(fontsize=7)
    fig.suptitle(f"{res.case.name}: {key} for the target" + ("s" if n > 1 else ""))
    return fig


def save_target_figure(res, path: str | Path) -> Path:
    """Write `target_figure` (format from the suffix); the figure is closed."""
    fig = target_figure(res)
    try:
        fig.tight_layout()
        written = save_figure(fig, path, option="--plot")
    finally:
        plt.close(fig)
    return written or Path(path)
