"""The built geometry of a case as a DXF drawing: one layer per field region.

``magcheck check CASE --dxf FILE`` writes the regions the field model
meshes (core parts, gaps, coil sides, magnets; :func:`~compare.design.coremodel.core_model`)
as closed polylines and circles, each region on the layer of its name, in
millimetres (``$INSUNITS`` 4), x and y as the model has them (x = r in an
r-z case).  It is the drawing that ``family = "drawn"`` reads back
(:mod:`compare.design.dxf`): a drawn case whose ``[[regions]]`` name these
layers (and give their kind, material and winding) has the same regions.

What is written is what is meshed.  When every shape is a rectangle (every
built-in family), the regions are laid on one grid of their edges and each
cell goes to the last region that covers it, as in the mesh (a later
region cuts the earlier ones: a gap cuts the limb it lies on); each region
is then the union of its cells, traced into outlines with holes.  So no two
layers overlap, touching parts of one region are one outline, and each
layer's area is the region's area in the mesh, to round-off.  Other shapes
(a drawn case's polygons, bulge arcs, circles) are written as drawn, the
rectangles of one region joined; their overlaps are those the drawn family
accepts (a gap over a core part), so the drawing reads back as the case
drew it.

This module sits in the outputs layer because it writes a file through
:func:`~compare.outputs.output.write_output` (the one writer of every
output); the reader stays in the design layer, which may not import it.
"""

from __future__ import annotations

import io
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Sequence

from magcheck.fem2d.layout import Annulus, Disk, HalfDisk, Polygon, Rect, Region

from ..design.coremodel import core_model
from ..design.dxf import INSUNITS
from .output import write_output

__all__ = ["DXF_UNIT", "DXF_UNITS_CODE", "LAYER_COLOURS", "RegionOutline", "region_outlines",
           "outlines_of", "dxf_text", "drawing_text", "write_dxf"]

DXF_UNITS_CODE = 4
"""The written DXF's ``$INSUNITS`` code: millimetres."""

DXF_UNIT = INSUNITS[DXF_UNITS_CODE]
"""Metres per drawing unit of the written DXF (the reader's table)."""

LAYER_COLOURS = {"core": 5, "gap": 1, "coil": 3, "magnet": 6}
"""The DXF colour index of each region kind's layer (blue, red, green, magenta;
7, white or black, for any other kind)."""

Vertex = tuple[float, float, float]
"""(x, y, bulge): a polyline vertex (m) and the bulge of the edge after it
(tan of a quarter of its included angle, + counter-clockwise; 0 straight)."""


@dataclass(frozen=True)
class RegionOutline:
    """One region as it is drawn: closed loops (outlines and holes; the
    reader takes a loop inside another as a hole) and circles (cx, cy, r), m."""

    name: str
    kind: str
    loops: tuple[tuple[Vertex, ...], ...]
    circles: tuple[tuple[float, float, float], ...] = ()


# ------------------------------------------------------------------ the grid
def _snap(values: list[float], tol: float) -> tuple[list[float], dict[float, int]]:
    """Sorted distinct coordinates, those within ``tol`` taken as one (the
    first): a family's edges computed two ways may differ by round-off."""
    grid: list[float] = []
    index: dict[float, int] = {}
    for v in sorted(set(values)):
        if not grid or v - grid[-1] > tol:
            grid.append(v)
        index[v] = len(grid) - 1
    return grid, index


def _rect_cells(rect_sets: Sequence[Sequence[Rect]]) -> list[list[tuple[tuple[float, float], ...]]]:
    """Each set's cells of a common grid, the later set winning a cell, traced
    into loops of (x, y) points (outlines counter-clockwise, holes clockwise)."""
    rects = [r for rs in rect_sets for r in rs]
    extent = max(max(r.x1 for r in rects) - min(r.x0 for r in rects),
                 max(r.y1 for r in rects) - min(r.y0 for r in rects))
    tol = 1e-9 * extent
    xs, xi = _snap([v for r in rects for v in (r.x0, r.x1)], tol)
    ys, yi = _snap([v for r in rects for v in (r.y0, r.y1)], tol)
    owner: dict[tuple[int, int], int] = {}
    for k, rs in enumerate(rect_sets):
        for r in rs:
            for i in range(xi[r.x0], xi[r.x1]):
                for j in range(yi[r.y0], yi[r.y1]):
                    owner[(i, j)] = k
    out = []
    for k in range(len(rect_sets)):
        cells = {c for c, o in owner.items() if o == k}
        out.append([tuple((xs[i], ys[j]) for i, j in loop) for loop in _trace(cells)])
    return out


_TURN = {(1, 0): 0, (0, 1): 1, (-1, 0): 2, (0, -1): 3}


def _trace(cells: set[tuple[int, int]]) -> list[list[tuple[int, int]]]:
    """The boundary loops of a set of unit grid cells, material on the left
    (outlines counter-clockwise, holes clockwise), corners only (collinear
    points dropped).  Where two cells of the set meet only at a corner, the
    loop turns left there, so each keeps its own outline."""
    edges: dict[tuple[int, int], list[tuple[int, int]]] = {}

    def add(a: tuple[int, int], b: tuple[int, int]) -> None:
        edges.setdefault(a, []).append(b)

    for i, j in cells:
        if (i, j - 1) not in cells:
            add((i, j), (i + 1, j))
        if (i + 1, j) not in cells:
            add((i + 1, j), (i + 1, j + 1))
        if (i, j + 1) not in cells:
            add((i + 1, j + 1), (i, j + 1))
        if (i - 1, j) not in cells:
            add((i, j + 1), (i, j))
    loops = []
    while edges:
        start = min(edges)
        path = [start]
        here, there = start, edges[start][0]
        while True:
            edges[here].remove(there)
            if not edges[here]:
                del edges[here]
            if there == start:
                break
            d_in = (there[0] - here[0], there[1] - here[1])
            outs = edges[there]
            # the left-most turn first (left, straight, right)
            nxt = min(outs, key=lambda p: (1 + _TURN[d_in]
                                           - _TURN[(p[0] - there[0], p[1] - there[1])]) % 4)
            path.append(there)
            here, there = there, nxt
        corners = [p for k, p in enumerate(path)
                   if (p[0] - path[k - 1][0]) * (path[(k + 1) % len(path)][1] - p[1])
                   != (p[1] - path[k - 1][1]) * (path[(k + 1) % len(path)][0] - p[0])]
        loops.append(corners)
    return loops


# ------------------------------------------------------------------ shapes
def _shape_outline(s: Any) -> tuple[list[tuple[Vertex, ...]], list[tuple[float, float, float]]]:
    """Loops and circles of one fem2d shape, as drawn (m)."""
    if isinstance(s, Rect):
        return [((s.x0, s.y0, 0.0), (s.x1, s.y0, 0.0), (s.x1, s.y1, 0.0),
                 (s.x0, s.y1, 0.0))], []
    if isinstance(s, Polygon):
        return [tuple((x, y, 0.0) for x, y in loop) for loop in (s.points, *s.holes)], []
    if isinstance(s, Disk):
        return [], [(s.cx, s.cy, s.r)]
    if isinstance(s, Annulus):
        return [], [(s.cx, s.cy, s.r_out), (s.cx, s.cy, s.r_in)]
    if isinstance(s, HalfDisk):  # the half x >= cx: a half-circle arc (bulge 1) and its chord
        return [((s.cx, s.cy - s.r, 1.0), (s.cx, s.cy + s.r, 0.0))], []
    raise TypeError(f"no DXF outline for the shape {s!r}")  # pragma: no cover - fem2d's five


def region_outlines(case: Any) -> tuple[RegionOutline, ...]:
    """The outlines of every region of the case's field model (m), in its order."""
    return outlines_of(core_model(case).regions)


def outlines_of(regions: Sequence[Region]) -> tuple[RegionOutline, ...]:
    """The outlines of fem2d regions (m) in priority order (see the module)."""
    if all(isinstance(s, Rect) for r in regions for s in r.shapes):
        traced = _rect_cells([r.shapes for r in regions])
        return tuple(RegionOutline(r.name, r.kind, tuple(tuple((x, y, 0.0) for x, y in loop)
                                                         for loop in loops))
                     for r, loops in zip(regions, traced) if loops)
    out = []
    for r in regions:
        rects = [s for s in r.shapes if isinstance(s, Rect)]
        loops: list[tuple[Vertex, ...]] = []
        circles: list[tuple[float, float, float]] = []
        if len(rects) > 1:  # touching rectangles of one region: one outline
            loops += [tuple((x, y, 0.0) for x, y in loop) for loop in _rect_cells([rects])[0]]
        for s in r.shapes:
            if len(rects) > 1 and isinstance(s, Rect):
                continue
            ls, cs = _shape_outline(s)
            loops += ls
            circles += cs
        out.append(RegionOutline(r.name, r.kind, tuple(loops), tuple(circles)))
    return tuple(out)


# ------------------------------------------------------------------ DXF
def dxf_text(case: Any) -> str:
    """The case's built geometry as DXF text (R2010, millimetres): one layer
    per region, named after it, closed LWPOLYLINEs (bulges for arcs) and
    CIRCLEs."""
    return drawing_text(region_outlines(case))


def drawing_text(outlines: Sequence[RegionOutline]) -> str:
    """Region outlines as DXF text (see :func:`dxf_text`)."""
    import ezdxf

    doc = ezdxf.new("R2010")
    doc.header["$INSUNITS"] = DXF_UNITS_CODE
    doc.header["$MEASUREMENT"] = 1  # metric
    msp = doc.modelspace()
    k = 1.0 / DXF_UNIT
    for reg in outlines:
        doc.layers.add(reg.name, color=LAYER_COLOURS.get(reg.kind, 7))
        attribs = {"layer": reg.name}
        for loop in reg.loops:
            msp.add_lwpolyline([(x * k, y * k, 0.0, 0.0, b) for x, y, b in loop],
                               format="xyseb", close=True, dxfattribs=attribs)
        for cx, cy, r in reg.circles:
            msp.add_circle((cx * k, cy * k), r * k, dxfattribs=attribs)
    from ezdxf import bbox

    ext = bbox.extents(msp)
    if ext.has_data:  # the extents and the opening view: the whole drawing
        msp.dxf.extmin, msp.dxf.extmax = ext.extmin, ext.extmax  # the header's on writing
        doc.set_modelspace_vport(height=1.1 * max(ext.size.x, ext.size.y), center=ext.center)
    buf = io.StringIO()
    doc.write(buf)
    return buf.getvalue()


def write_dxf(case: Any, path: str | Path) -> Path | None:
    """Write the case's built geometry as DXF (see :func:`dxf_text`) with
    :func:`~compare.outputs.output.write_output` (``-``: standard output).
    Geometry only: nothing is meshed or solved."""
    return write_output(path, dxf_text(case))
