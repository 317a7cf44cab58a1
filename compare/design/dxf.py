"""Region outlines from a DXF drawing: one layer per region.

A DXF file (the open exchange format of drawing programs) is read with
ezdxf; on each layer the closed outlines become the region's shapes, in
metres:

- closed LWPOLYLINE and 2D POLYLINE (straight segments and bulge arcs),
- CIRCLE (an exact disk when it stands alone on its layer),
- LINE and ARC entities joined end to end into closed loops.

Arcs are replaced by chords at most ``ARC_STEP_DEG`` apart (2 degrees: the
area of a full circle is then low by 2.0e-4 relative, the chord's sagitta
1.5e-4 of the radius).  An outline nested inside another on the same layer
is a hole in it (a core with its window drawn as two closed polylines); one
inside a hole is an island again.  Annotations (TEXT, MTEXT, DIMENSION,
POINT, HATCH) are skipped.

Units: the case's ``units`` if given, otherwise the drawing's ``$INSUNITS``
header; a unitless drawing without the case's ``units`` is refused.

Every problem is a :class:`~compare.errors.CaseError` naming the case key,
and in its reason the layer and the entity (type and handle): an
unreadable file, an open contour (with the end that does not close), a
self-crossing outline, an entity type that is not geometry magcheck reads,
a layer that names no region of the case.
"""
from __future__ import annotations

import difflib
import math
from collections import defaultdict
from pathlib import Path
from typing import Any, Iterable, Sequence

from magcheck.fem2d.layout import Disk, LayoutError, Polygon, crossing_between, point_in_polygon

from ..errors import CaseError

__all__ = ["ARC_STEP_DEG", "INSUNITS", "read_dxf_regions"]

ARC_STEP_DEG = 2.0
"""Largest angle (degrees) between the chords that replace an arc."""

INSUNITS = {1: 0.0254, 2: 0.3048, 4: 1e-3, 5: 1e-2, 6: 1.0, 8: 2.54e-8, 9: 2.54e-5,
            10: 0.9144, 13: 1e-6, 14: 0.1}
"""Metres per drawing unit for the DXF header's ``$INSUNITS`` codes
(1 inch, 2 foot, 4 mm, 5 cm, 6 m, 8 microinch, 9 mil, 10 yard, 13 micron,
14 dm; 0 means unitless)."""

_SKIP = {"TEXT", "MTEXT", "DIMENSION", "POINT", "HATCH", "LEADER", "MLEADER", "ATTDEF"}
_READ = {"LWPOLYLINE", "POLYLINE", "CIRCLE", "LINE", "ARC"}


def _what(e: Any) -> str:
    return f"{e.dxftype()} #{e.dxf.handle}"


def _arc_points(cx: float, cy: float, r: float, a0: float, sweep: float) -> list[tuple]:
    """Points after the start of an arc (radians, sweep signed), end included."""
    n = max(1, math.ceil(abs(sweep) / math.radians(ARC_STEP_DEG) - 1e-9))
    return [(cx + r * math.cos(a0 + sweep * k / n), cy + r * math.sin(a0 + sweep * k / n))
            for k in range(1, n + 1)]


def _bulge_points(p0: tuple, p1: tuple, bulge: float) -> list[tuple]:
    """The points after p0 up to p1 along a polyline segment with ``bulge``
    (tan of a quarter of the included angle, positive counter-clockwise)."""
    if bulge == 0.0:
        return [p1]
    theta = 4.0 * math.atan(bulge)
    cx_, cy_ = p1[0] - p0[0], p1[1] - p0[1]
    L = math.hypot(cx_, cy_)
    if L == 0.0:
        return [p1]
    d = 0.5 * L / math.tan(0.5 * theta)
    mx, my = 0.5 * (p0[0] + p1[0]), 0.5 * (p0[1] + p1[1])
    cx, cy = mx - cy_ / L * d, my + cx_ / L * d
    r = math.hypot(p0[0] - cx, p0[1] - cy)
    pts = _arc_points(cx, cy, r, math.atan2(p0[1] - cy, p0[0] - cx), theta)
    pts[-1] = p1
    return pts


def _polyline_loop(e: Any) -> list[tuple]:
    if e.dxftype() == "LWPOLYLINE":
        verts = [(float(x), float(y), float(b)) for x, y, b in e.get_points("xyb")]
        closed = bool(e.closed)
    else:
        if e.is_3d_polyline or e.is_polygon_mesh or e.is_poly_face_mesh:
            raise ValueError("a 3D polyline or mesh; draw the outline as a 2D polyline")
        verts = [(float(v.dxf.location.x), float(v.dxf.location.y), float(v.dxf.bulge))
                 for v in e.vertices]
        closed = bool(e.is_closed)
    if len(verts) >= 2 and math.dist(verts[0][:2], verts[-1][:2]) == 0.0:
        verts = verts[:-1]
        closed = True
    if not closed:
        end = verts[-1][:2] if verts else (math.nan, math.nan)
        raise ValueError(f"is not closed (open end at x = {end[0]:g}, y = {end[1]:g} drawing "
                         "units): close the polyline")
    pts: list[tuple] = [verts[0][:2]]
    for k, (x, y, b) in enumerate(verts):
        nxt = verts[(k + 1) % len(verts)][:2]
        pts.extend(_bulge_points((x, y), nxt, b))
    return pts[:-1]  # the last point is the first again


def _chain_loops(pieces: list[tuple[Any, list[tuple]]], tol: float) -> list[tuple[Any, list]]:
    """Join LINE/ARC point runs end to end into closed loops."""
    left = list(pieces)
    loops = []
    while left:
        first, run = left.pop(0)
        pts = list(run)
        while math.dist(pts[0], pts[-1]) > tol:
            for k, (_, other) in enumerate(left):
                if math.dist(other[0], pts[-1]) <= tol:
                    pts.extend(other[1:])
                elif math.dist(other[-1], pts[-1]) <= tol:
                    pts.extend(list(reversed(other))[1:])
                else:
                    continue
                left.pop(k)
                break
            else:
                x, y = pts[-1]
                raise CaseError("", _what(first), f"is not closed: the lines and arcs joined to "
                                f"it end at x = {x:g}, y = {y:g} drawing units with nothing "
                                "to join")
        loops.append((first, pts[:-1]))
    return loops


def _nest(loops: list[tuple[Any, list]]) -> list[Polygon]:
    """Outlines with their holes by nesting depth (even: outline, odd: hole)."""
    def inside(a: list, b: list) -> bool:
        return point_in_polygon(a[0], b)

    depth = [sum(inside(a, b) for j, (_, b) in enumerate(loops) if j != i)
             for i, (_, a) in enumerate(loops)]
    out = []
    for i, (_, outer) in enumerate(loops):
        if depth[i] % 2:
            continue
        holes = tuple(tuple(h) for j, (_, h) in enumerate(loops)
                      if depth[j] == depth[i] + 1 and inside(h, outer))
        out.append(Polygon(tuple(outer), holes))
    return out


def read_dxf_regions(path: str | Path, *, regions: Sequence[str] | None = None,
                     units: float | None = None, key: str = "shapes.dxf") -> dict[str, tuple]:
    """Each layer's closed outlines as fem2d shapes (m), by layer name.

    ``regions``: the region names the case expects (a layer with geometry
    that names none of them is refused, with a did-you-mean); ``units``:
    metres per drawing unit from the case, overriding the header.
    """
    try:
        import ezdxf
    except ImportError:  # pragma: no cover - ezdxf is a dependency
        raise CaseError(key, str(path), "reading DXF needs the ezdxf package "
                                        "(pip install ezdxf)") from None
    if not Path(path).is_file():
        raise CaseError(key, str(path), "cannot read the DXF file (no such file)")
    try:
        doc = ezdxf.readfile(str(path))
    except Exception as exc:  # unreadable, not a DXF, or a broken one (ezdxf's errors)
        raise CaseError(key, str(path), f"not a readable DXF drawing ({exc})") from None
    scale = units
    if scale is None:
        code = int(doc.header.get("$INSUNITS", 0) or 0)
        if code not in INSUNITS:
            raise CaseError(key, str(path), f"the drawing gives no length unit ($INSUNITS = "
                                            f"{code}): give the case's units, e.g. units = \"mm\"")
        scale = INSUNITS[code]
    by_layer: dict[str, list[Any]] = defaultdict(list)
    for e in doc.modelspace():
        t = e.dxftype()
        if t in _SKIP:
            continue
        layer = str(e.dxf.layer)
        if t not in _READ:
            raise CaseError(key, str(path), f"layer '{layer}': {_what(e)} is not geometry "
                                            "magcheck reads (closed polylines, circles, lines and "
                                            "arcs; explode blocks, convert splines)")
        if regions is not None and layer not in regions:
            close = difflib.get_close_matches(layer, list(regions), n=1)
            hint = f"; did you mean '{close[0]}'?" if close else ""
            raise CaseError(key, str(path), f"layer '{layer}' ({_what(e)}) names no region of "
                                            f"the case (regions: {', '.join(regions)}){hint}")
        by_layer[layer].append(e)
    if not by_layer:
        raise CaseError(key, str(path), "the drawing holds no outlines")
    return {layer: _layer_shapes(layer, ents, scale, key, str(path))
            for layer, ents in by_layer.items()}


def _layer_shapes(layer: str, ents: Iterable[Any], scale: float, key: str, path: str) -> tuple:
    loops: list[tuple[Any, list]] = []
    pieces: list[tuple[Any, list]] = []
    circles: list[Any] = []
    for e in ents:
        t = e.dxftype()
        try:
            if t in ("LWPOLYLINE", "POLYLINE"):
                loops.append((e, _polyline_loop(e)))
            elif t == "CIRCLE":
                circles.append(e)
            elif t == "LINE":
                s, f = e.dxf.start, e.dxf.end
                pieces.append((e, [(float(s.x), float(s.y)), (float(f.x), float(f.y))]))
            else:  # ARC: counter-clockwise from start to end angle (degrees)
                c, r = e.dxf.center, float(e.dxf.radius)
                a0, a1 = math.radians(e.dxf.start_angle), math.radians(e.dxf.end_angle)
                sweep = (a1 - a0) % (2 * math.pi) or 2 * math.pi
                start = (float(c.x) + r * math.cos(a0), float(c.y) + r * math.sin(a0))
                pieces.append((e, [start, *_arc_points(float(c.x), float(c.y), r, a0, sweep)]))
        except ValueError as exc:
            raise CaseError(key, path, f"layer '{layer}': {_what(e)} {exc}") from None
    if pieces:
        ext = max(abs(v) for _, run in pieces for p in run for v in p) or 1.0
        try:
            loops += _chain_loops(pieces, 1e-9 * ext)
        except CaseError as exc:
            raise CaseError(key, path, f"layer '{layer}': {exc.value} {exc.reason}") from None
    alone = []
    for c in circles:
        cx, cy, r = float(c.dxf.center.x), float(c.dxf.center.y), float(c.dxf.radius)
        if loops or len(circles) > 1:  # nested with others: as an outline like the rest
            loops.append((c, [(cx + r * math.cos(a), cy + r * math.sin(a)) for a in
                              [2 * math.pi * k / math.ceil(360 / ARC_STEP_DEG)
                               for k in range(math.ceil(360 / ARC_STEP_DEG))]]))
        else:
            alone.append(Disk(cx * scale, cy * scale, r * scale))
    for a, (ea, pa) in enumerate(loops):
        for eb, pb in loops[a + 1:]:
            if crossing_between(pa, pb):
                raise CaseError(key, path, f"layer '{layer}': {_what(ea)} and {_what(eb)} "
                                           "cross each other")
    shapes: list[Any] = list(alone)
    for poly in _nest(loops):
        scaled = Polygon(tuple((x * scale, y * scale) for x, y in poly.points),
                         tuple(tuple((x * scale, y * scale) for x, y in h) for h in poly.holes))
        try:
            scaled.check(f"layer '{layer}'")
        except LayoutError as exc:
            owner = next((e for e, pts in loops if tuple(pts) == poly.points), None)
            who = f" ({_what(owner)})" if owner is not None else ""
            raise CaseError(key, path, f"{exc}{who}") from None
        shapes.append(scaled)
    return tuple(shapes)
