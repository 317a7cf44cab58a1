"""The ``drawn`` family: the user's own core shape and the user's own hand model.

For a shape magcheck has no family for.  The user draws the regions (core
parts, gaps, coil sides) as polygons in the case file or on the layers of a
DXF drawing, and writes the magnetic circuit of the hand calculation they
use in ``[circuit]``: its segments and gaps, where each winding's MMF acts,
and where gap B, core B, the path-averaged H and the winding's flux are
measured in the field solution.  magcheck then checks that hand
calculation against the field solution of the drawn shape, planar (with
its stack depth) or axisymmetric (r-z, the shapes in r >= 0)::

    [core]      symmetry = "planar" | "axisymmetric", depth (planar)
    [shapes]    units = "mm" (the points' unit), dxf = "drawing.dxf" (optional)
    [[regions]] name, kind = "core" | "gap" | "coil" | "magnet",
                points = [[x, y], [x, y, bulge], ...], holes = [[[x, y], ...], ...];
                core: material (a [materials] entry, default "core"); coil: winding
                (its name), side = "go" | "return"; magnet: grade (a built-in,
                analytic.magnets) or remanence, mu_r (recoil, default 1.05) and
                knee_H, and direction (degrees from +x, or [x, y])
    [circuit]   gap_B (a circuit gap drawn as the region of that name),
                path (polyline), flux_line ([[x0, y0], [x1, y1]]), core_B (regions),
                windings = {NAME = "BRANCH" or "-BRANCH"}
    [[circuit.segments]] name, length, area, material, on_path, from, to
    [[circuit.gaps]]     name, length, width, depth, free_height, fringing, from, to;
                         r-z: r_outer and r_inner (default 0) for a round face (a disc
                         or an annulus) instead of width and depth
    [[circuit.magnets]]  name, length, area, remanence, mu_r (default: the magnet
                         region of its name), from, to (magnetised from -> to)
    [force]     body (moving regions), direction (of the closing motion), gaps
                (the circuit gaps it shortens; default all)

A point's optional third number is the bulge of the edge to the next point
(tan of a quarter of the arc's included angle, positive counter-clockwise),
as in DXF polylines; arcs become chords ``compare.design.dxf.ARC_STEP_DEG`` apart.
A region without ``points`` takes its outlines from the DXF layer of its
name.  Gap regions may be drawn over core regions (they cut them); other
regions must not overlap.  Without ``from``/``to`` the circuit's segments
and gaps form one series loop in the order given.
"""

from __future__ import annotations

import difflib
import math
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from magcheck.analytic.fringing import FRINGING_MODELS, GapFace, GapFaceError
from magcheck.analytic.network import MagnetBranch
from magcheck.fem2d.layout import LayoutError, Polygon, Region, crossing_between, point_in_polygon

from magcheck.fem2d.sources import Magnet

from ..coremodel import CircuitGap, CircuitSegment, CoilModel, CoreModel, ForceSpec, HandCircuit
from ...errors import CaseError
from ..casekeys import boolean, listof, number, oneof, quantity, string, table, tables
from ..reader import MISSING, TableReader
from ..units import UnitError, parse_quantity


__all__ = ["DrawnCore", "DrawnCoreDims", "DrawnRegion"]

KINDS = ("core", "gap", "coil", "magnet")
SIDES = ("go", "return")

Point = tuple[float, float]

_POINTS = listof(listof(number()), "points [[x, y], [x, y, bulge], ...] in the shapes' unit")
_NAMES = oneof(string(), listof(string()))
_ANGLE = oneof(number(), listof(number()), doc="degrees from +x, or a vector [x, y]")

CORE_SPEC = {"symmetry": string("planar, or axisymmetric (r-z)", ("planar", "axisymmetric")),
             "depth": quantity("length", "the stack depth of a planar core")}
"""The drawn core's ``[core]`` keys (compare.design.casekeys)."""

TABLE_SPECS = {
    "shapes": table({"units": string("the points' length unit, e.g. \"mm\""),
                     "dxf": string("a DXF drawing whose layers are the regions, relative to "
                                   "the case file")}, "the drawing's unit and DXF file"),
    "regions": tables({
        "name": string("the region's name (a DXF layer's, when drawn there)"),
        "kind": string("", KINDS), "points": _POINTS,
        "holes": listof(_POINTS, "holes, each a point list"),
        "material": string("a core part's [materials] entry (default core)"),
        "winding": string("a coil side's winding"), "side": string("a coil side", SIDES),
        "direction": _ANGLE, "grade": string("a built-in magnet grade"),
        "remanence": quantity("flux density"), "mu_r": number("a magnet's recoil mu_r"),
        "knee_H": quantity("field strength", "a magnet's knee field (negative)")},
        "the drawn regions"),
    "circuit": table({
        "gap_B": string("the circuit gap whose B is measured in the region of its name"),
        "path": _POINTS, "flux_line": _POINTS, "core_B": _NAMES,
        "windings": table({}, "winding name = branch (\"-BRANCH\" against its sense)",
                          extra=string()),
        "segments": tables({"name": string(), "from": string(), "to": string(),
                            "length": quantity("length"), "area": quantity("area"),
                            "material": string(), "on_path": boolean()}),
        "gaps": tables({"name": string(), "from": string(), "to": string(),
                        "length": quantity("length"), "width": quantity("length"),
                        "depth": quantity("length"), "free_height": quantity("length"),
                        "fringing": string("", tuple(FRINGING_MODELS)),
                        "r_outer": quantity("length"), "r_inner": quantity("length")}),
        "magnets": tables({"name": string(), "from": string(), "to": string(),
                           "length": quantity("length"), "area": quantity("area"),
                           "remanence": quantity("flux density"), "mu_r": number()})},
        "the hand model's magnetic circuit"),
    "force": table({"body": _NAMES, "direction": _ANGLE, "gaps": _NAMES},
                   "the moving part"),
}
"""The drawn family's own tables (``case_tables``) and their keys."""

_REGION = table(TABLE_SPECS["regions"].keys)


@dataclass(frozen=True)
class DrawnRegion:
    """One drawn region: its shapes (m), kind, and for a core part its
    ``[materials]`` entry, for a coil side its winding and side (+1 go, -1
    return), for a magnet its remanence vector and recoil permeability."""

    name: str
    kind: str
    shapes: tuple
    material: str = "core"
    winding: str = ""
    side: int = 1
    remanence: tuple[float, float] = (0.0, 0.0)
    """A magnet's remanence B_r (T) as an (x, y) or (r, z) vector."""
    mu_r: float = 1.0
    """A magnet's recoil permeability."""
    direction: tuple[float, float] | None = None
    """A gap's flux direction when given (default: across its thinnest extent)."""
    knee_H: float | None = None
    """A magnet's knee field (A/m, < 0), from its grade or given."""

    @property
    def area(self) -> float:
        return float(sum(s.area() for s in self.shapes))


@dataclass(frozen=True)
class DrawnCoreDims:
    """A drawn core: regions, symmetry, stack depth and the user's circuit.

    ``circuit_windings`` maps winding names to (branch, sign) as given
    (checked against the case's windings once they are read).
    """

    symmetry: str
    depth: float
    regions: tuple[DrawnRegion, ...]
    segments: tuple[CircuitSegment, ...]
    gaps: tuple[CircuitGap, ...]
    circuit_windings: tuple[tuple[str, str, int], ...]
    gap_B: str | None
    path: tuple[Point, ...]
    flux_line: tuple[Point, Point]
    core_B: tuple[str, ...]
    magnets: tuple[MagnetBranch, ...] = ()
    force: ForceSpec | None = None
    """The moving part ([force]), if any."""
    source: str = ""
    """The DXF drawing the outlines came from ("" when drawn in the case file)."""


class DrawnCore:
    """``drawn``: regions drawn by the user, the hand circuit written by the user."""

    name: str = "drawn"
    limb_names: tuple[str, ...] = ()
    winding_limbs: tuple[str, ...] = ()
    core_keys: tuple[str, ...] = ()
    """None: the shapes are drawn, so no dimension can be varied consistently
    in both models (the circuit's lengths are the user's own numbers)."""
    parts: tuple[str, ...] = ()
    case_tables: tuple[str, ...] = ("shapes", "regions", "circuit", "force")
    core_spec = CORE_SPEC
    table_specs = TABLE_SPECS

    # ------------------------------------------------------------ reading
    def read_core(self, t: TableReader, *, tables: dict[str, Any] | None = None,
                  base_dir: Path | None = None) -> DrawnCoreDims:
        tables = tables or {}
        symmetry = t.string("symmetry", "planar", choices=("planar", "axisymmetric"))
        if symmetry == "planar":
            depth = t.quantity("depth", "length")
        else:
            if t.has("depth"):
                raise CaseError(t.key("depth"), t.data["depth"],
                                "an axisymmetric core has no stack depth (the model is r-z)")
            depth = 1.0
        shapes_t = TableReader(tables.get("shapes") or {}, "shapes", spec=TABLE_SPECS["shapes"])
        unit = _unit(shapes_t)
        dxf = shapes_t.string("dxf", None)
        shapes_t.finish()
        raw_regions = tables.get("regions")
        if not isinstance(raw_regions, list) or not raw_regions:
            raise CaseError("regions", raw_regions, "give the drawn regions as [[regions]] "
                                                    "tables (name, kind, points)")
        names = []
        for k, r in enumerate(raw_regions):
            if not isinstance(r, dict):
                raise CaseError(f"regions[{k}]", r, "must be a table")
            nm = r.get("name")
            if not isinstance(nm, str) or not nm.strip():
                raise CaseError(f"regions[{k}].name", nm, "must be a non-empty string")
            if nm in names:
                raise CaseError(f"regions[{k}].name", nm, "a region of that name comes before")
            if nm in ("air", "outer", "exterior"):
                raise CaseError(f"regions[{k}].name", nm, "is reserved for the air domain")
            names.append(nm)
        drawn: dict[str, tuple] = {}
        source = ""
        if dxf is not None:
            from ..dxf import read_dxf_regions

            path = Path(dxf)
            if not path.is_absolute() and base_dir is not None:
                path = base_dir / path
            drawn = read_dxf_regions(path, regions=names, units=unit, key="shapes.dxf")
            source = dxf
        regions = tuple(_read_region(TableReader(r, f"regions[{k}]", spec=_REGION), unit, drawn)
                        for k, r in enumerate(raw_regions))
        if symmetry == "axisymmetric":
            for k, reg in enumerate(regions):
                r_min = min(s.bbox()[0] for s in reg.shapes)
                if r_min < -1e-12:
                    raise CaseError(f"regions[{k}].points", reg.name,
                                    f"reaches r = {r_min * 1e3:g} mm: an axisymmetric core is "
                                    "drawn in r >= 0 (x is the radius)")
        _check_overlaps(regions)
        circ = TableReader(tables.get("circuit") if tables.get("circuit") is not None else
                           _missing("circuit"), "circuit", spec=TABLE_SPECS["circuit"])
        segs, gaps, cw, gap_B, path, flux_line, core_B, mags = _read_circuit(
            circ, symmetry, depth, regions, unit)
        force = None
        if tables.get("force") is not None:
            force = _read_force(TableReader(tables["force"], "force", spec=TABLE_SPECS["force"]), symmetry, regions, gaps)
        return DrawnCoreDims(symmetry, depth, regions, segs, gaps, cw, gap_B, path, flux_line,
                             core_B, mags, force, source=source)

    def part_names(self, c: DrawnCoreDims) -> tuple[str, ...]:
        """The core regions' materials beyond ``core`` (each a [materials] entry)."""
        out: list[str] = []
        for m in (*(r.material for r in c.regions if r.kind == "core"),
                  *(s.material for s in c.segments)):
            if m != "core" and m not in out:
                out.append(m)
        return tuple(out)

    def required_parts(self, c: DrawnCoreDims) -> dict[str, str]:
        return {m: f"a drawn region or circuit segment takes material '{m}'; give it here"
                for m in self.part_names(c)}

    def check_case(self, case: Any) -> None:
        """What spans tables: coils name windings, every winding is drawn
        and sits in the circuit, and the hand switches that need a family's
        geometry are off."""
        c: DrawnCoreDims = case.core
        names = [w.name for w in case.windings]
        coils = [r for r in c.regions if r.kind == "coil"]
        for k, r in enumerate(c.regions):
            if r.kind == "coil" and r.winding not in names:
                raise CaseError(f"regions[{k}].winding", r.winding,
                                f"names no winding (windings: {', '.join(names)})"
                                + _hint(r.winding, names))
        for j, w in enumerate(case.windings):
            sides = [r for r in coils if r.winding == w.name]
            if not any(r.side > 0 for r in sides):
                raise CaseError(f"windings[{j}]", w.name, "no coil region has this winding "
                                "with side = \"go\": draw its coil")
            if c.symmetry == "planar" and not any(r.side < 0 for r in sides):
                raise CaseError(f"windings[{j}]", w.name,
                                "a planar coil needs a return side too (a region with side = "
                                "\"return\"): a lone side's current would return at infinity")
            if c.symmetry == "axisymmetric" and any(r.side < 0 for r in sides):
                k = next(i for i, r in enumerate(c.regions) if r in sides and r.side < 0)
                raise CaseError(f"regions[{k}].side", "return",
                                "an axisymmetric coil carries its current round the axis: it "
                                "has no return side (a counter-wound part is a winding of its own)")
        given = {n for n, _, _ in c.circuit_windings}
        for n in given:
            if n not in names:
                raise CaseError(f"circuit.windings.{n}", n, "names no winding"
                                + _hint(n, names))
        _check_circuit_loops(c, names)
        in_circuit = {m.name for m in c.magnets}
        for k, r in enumerate(c.regions):
            if r.kind == "magnet" and r.name not in in_circuit:
                raise CaseError(f"regions[{k}]", r.name,
                                "a drawn magnet needs its [[circuit.magnets]] entry of the same "
                                "name: the hand model would leave out its MMF")
        for key, on in (("hand.leakage", case.hand.leakage),
                        ("hand.effective_parameters", case.hand.effective_parameters)):
            if on:
                raise CaseError(key, True, "needs a core family's limbs and windows; a drawn "
                                           "core's hand model is its [circuit]: set it false")

    # ------------------------------------------------------ both models
    def core_model(self, case: Any) -> CoreModel:
        c: DrawnCoreDims = case.core
        order = {"core": 0, "magnet": 1, "gap": 2, "coil": 3}
        regions, materials = [], []
        for r in sorted(c.regions, key=lambda r: order[r.kind]):
            if r.kind == "coil":
                continue
            mat = "air" if r.kind != "core" else (r.material if r.material == "core"
                                                 else f"core-{r.material}")
            regions.append(Region(r.name, r.shapes, material=mat, kind=r.kind))
            if r.kind == "core" and (mat, r.material) not in materials:
                materials.append((mat, r.material))
        coils = []
        for w in case.windings:
            # each side of a winding is one field region, the union of the
            # drawn regions on that side: its N I is spread over all of them
            # (a side drawn in pieces carries N I once, not once per piece)
            sides, area = [], 0.0
            for sign in (1, -1):
                parts = [r for r in c.regions
                         if r.kind == "coil" and r.winding == w.name and r.side == sign]
                if not parts:
                    continue
                shapes = tuple(sh for r in parts for sh in r.shapes)
                regions.append(Region(parts[0].name, shapes, material="air", kind="coil"))
                sides.append((parts[0].name, sign))
                if sign > 0:
                    area = sum(r.area for r in parts)
            coils.append(CoilModel(tuple(sides), area))
        gaps = tuple(r.name for r in c.regions if r.kind == "gap")
        gap_dir = None
        if c.gap_B is not None:
            reg = next(r for r in c.regions if r.name == c.gap_B)
            gap_dir = reg.direction if reg.direction is not None else _thin_direction(reg)
        by_w = {n: (b, s) for n, b, s in c.circuit_windings}
        first = c.segments[0].name
        windings = tuple(by_w.get(w.name, (first, 1)) for w in case.windings)
        flux_branch = windings[0][0]
        circuit = HandCircuit(c.segments, c.gaps, windings, c.gap_B, flux_branch, c.magnets)
        magnets = tuple(Magnet(r.name, r.remanence, r.mu_r) for r in c.regions
                        if r.kind == "magnet")
        return CoreModel(
            symmetry=c.symmetry, depth=c.depth, regions=tuple(regions),
            materials=tuple(materials), coils=tuple(coils), core_regions=c.core_B,
            gap_regions=gaps, gap_region=c.gap_B, gap_direction=gap_dir,
            mean_path=c.path, flux_line=c.flux_line, gap_line=None, circuit=circuit,
            magnets=magnets, force=c.force,
            magnet_knees=tuple((r.name, r.knee_H) for r in c.regions
                               if r.kind == "magnet" and r.knee_H is not None))

    def describe(self, c: DrawnCoreDims) -> list[tuple[str, str]]:
        rows = [("core.symmetry", c.symmetry)]
        if c.symmetry == "planar":
            rows.append(("core.depth", f"{c.depth * 1e3:g} mm"))
        if c.source:
            rows.append(("shapes.dxf", c.source))
        for r in c.regions:
            what = {"core": f"core part, material {r.material}", "gap": "gap",
                    "coil": f"coil side ({'go' if r.side > 0 else 'return'}) of winding "
                            f"'{r.winding}'",
                    "magnet": f"magnet, B_r = ({r.remanence[0]:.3g}, {r.remanence[1]:.3g}) T, "
                              f"recoil mu_r {r.mu_r:g}"}[r.kind]
            rows.append((f"region {r.name}", f"{what}, area {r.area * 1e6:.4g} mm^2"))
        for s in c.segments:
            rows.append((f"circuit segment {s.name}",
                         f"{s.node_a} -> {s.node_b}, length {s.length * 1e3:g} mm, area "
                         f"{s.area * 1e6:g} mm^2, material {s.material}"))
        for m in c.magnets:
            rows.append((f"circuit magnet {m.name}",
                         f"{m.node_a} -> {m.node_b}, length {m.length * 1e3:g} mm, area "
                         f"{m.area * 1e6:g} mm^2, B_r {m.remanence:g} T, mu_r {m.mu_r:g}"))
        for g in c.gaps:
            f = g.face
            shape = (f"{f.width * 1e3:g} x {f.depth * 1e3:g} mm" if f.radii is None else
                     f"r {f.radii[0] * 1e3:g} to {f.radii[1] * 1e3:g} mm")
            rows.append((f"circuit gap {g.name}",
                         f"{g.node_a} -> {g.node_b}, length {f.length * 1e3:g} mm, face "
                         f"{shape}"
                         + (f", fringing {g.fringing}" if g.fringing else "")))
        return rows

    # ------------------------------------- the limb families' interface
    def limbs(self, c: DrawnCoreDims) -> dict:
        return {}

    def core_rects(self, c: DrawnCoreDims) -> list:
        return []

    def part_rects(self, c: DrawnCoreDims) -> dict:
        return {}

    def segments(self, c: DrawnCoreDims) -> list:
        return []

    def mean_path(self, c: DrawnCoreDims) -> list[Point]:
        return list(c.path)

    def windows(self, c: DrawnCoreDims, limb: str) -> list:
        return []

    def effective_path(self, c: DrawnCoreDims) -> tuple[list, tuple[str, ...]]:
        raise CaseError("hand.effective_parameters", True, "a drawn core has no effective path")


# ----------------------------------------------------------------- helpers
def _missing(name: str) -> dict:
    raise CaseError(name, None, "missing: a drawn core needs its hand model as a [circuit] "
                                "table (segments, gaps, where quantities are measured)")


def _hint(name: str, known: list[str]) -> str:
    close = difflib.get_close_matches(name, known, n=1)
    return f"; did you mean '{close[0]}'?" if close else ""


def _unit(t: TableReader) -> float | None:
    if not t.has("units"):
        return None
    raw = t.raw("units")
    try:
        return parse_quantity(f"1 {raw}", "length") if isinstance(raw, str) else _bad_unit(t, raw)
    except UnitError as exc:
        raise CaseError(t.key("units"), raw, str(exc)) from None


def _bad_unit(t: TableReader, raw: Any) -> float:
    raise CaseError(t.key("units"), raw, "must be a length unit such as \"mm\"")


def _points(raw: Any, key: str, unit: float | None, closed: bool = True) -> list[Point]:
    """A list of [x, y] or [x, y, bulge] in the shapes' unit -> points (m),
    bulge arcs replaced by chords."""
    from ..dxf import _bulge_points

    if unit is None:
        raise CaseError("shapes.units", None, f"{key} gives points: say their unit in "
                                               "[shapes] units = \"mm\"")
    if not isinstance(raw, list) or len(raw) < (3 if closed else 2):
        raise CaseError(key, raw, f"must be a list of at least {3 if closed else 2} points "
                                  "[x, y] (or [x, y, bulge])")
    verts = []
    for i, p in enumerate(raw):
        ok = (isinstance(p, list) and len(p) in (2, 3)
              and all(isinstance(v, (int, float)) and not isinstance(v, bool)
                      and math.isfinite(v) for v in p))
        if not ok:
            raise CaseError(f"{key}[{i}]", p, "must be [x, y] or [x, y, bulge], finite numbers")
        verts.append((float(p[0]) * unit, float(p[1]) * unit, float(p[2]) if len(p) == 3 else 0.0))
    if not closed:
        if any(v[2] for v in verts):
            raise CaseError(key, raw, "a polyline here takes no bulge (third number)")
        return [(x, y) for x, y, _ in verts]
    pts: list[Point] = [verts[0][:2]]
    for k, (x, y, b) in enumerate(verts):
        pts.extend(_bulge_points((x, y), verts[(k + 1) % len(verts)][:2], b))
    return pts[:-1]


def _in_drawing_units(shape: Polygon, unit: float | None, name: str, exc: LayoutError) -> str:
    """The outline check's message with its points in the drawing's units
    (the check runs in metres; the user drew in ``[shapes] units``): the same
    check on the outline scaled back, whose crossing edges are the same."""
    if not unit or unit == 1.0:
        return str(exc)
    back = Polygon(tuple((x / unit, y / unit) for x, y in shape.points),
                   tuple(tuple((x / unit, y / unit) for x, y in h) for h in shape.holes))
    try:
        back.check(f"region {name!r}")
    except LayoutError as again:
        return f"{again} (points in the drawing's units)"
    return str(exc)


def _read_region(t: TableReader, unit: float | None, drawn: dict[str, tuple]) -> DrawnRegion:
    name = t.string("name")
    kind = t.string("kind", choices=KINDS)
    if t.has("points"):
        if name in drawn:
            raise CaseError(t.key("points"), name, "the region is drawn both here and on the "
                                                   "DXF layer of its name: give one")
        outer = _points(t.raw("points"), t.key("points"), unit)
        holes_raw = t.raw("holes", [])
        if not isinstance(holes_raw, list):
            raise CaseError(t.key("holes"), holes_raw, "must be a list of point lists")
        holes = tuple(tuple(_points(h, f"{t.key('holes')}[{k}]", unit))
                      for k, h in enumerate(holes_raw))
        if _signed_area(outer) < 0:  # either orientation may be drawn
            outer = outer[::-1]
        holes = tuple(h if _signed_area(h) > 0 else h[::-1] for h in holes)
        shape = Polygon(tuple(outer), holes)
        try:
            shape.check(f"region {name!r}")
        except LayoutError as exc:
            raise CaseError(t.key("points"), name, _in_drawing_units(shape, unit, name, exc)) \
                from None
        shapes: tuple = (shape,)
    elif name in drawn:
        if t.has("holes"):
            raise CaseError(t.key("holes"), t.raw("holes"), "the region is drawn on the DXF "
                                                            "layer: draw its holes there")
        shapes = drawn[name]
    else:
        raise CaseError(t.key("points"), None, f"missing: region '{name}' is not drawn (give "
                        "points, or draw it on a DXF layer of its name with [shapes] dxf)")
    material, winding, side = "core", "", 1
    remanence, mu_r = (0.0, 0.0), 1.0
    if kind == "core":
        material = t.string("material", "core")
    if kind == "coil":
        winding = t.string("winding", "main")
        side = 1 if t.string("side", "go", choices=SIDES) == "go" else -1
    gap_dir = None
    if kind == "gap" and t.has("direction"):
        angle = _direction(t)
        gap_dir = (math.cos(angle), math.sin(angle))
    knee = None
    if kind == "magnet":
        grade = None
        if t.has("grade"):
            from magcheck.analytic.magnets import magnet_grade

            try:
                grade = magnet_grade(t.string("grade"))
            except ValueError as exc:
                raise CaseError(t.key("grade"), t.raw("grade"), str(exc)) from None
        b_r = t.quantity("remanence", "flux density", grade.remanence if grade else MISSING)
        if b_r <= 0:
            raise CaseError(t.key("remanence"), t.raw("remanence"), "must be positive")
        mu_r = t.number("mu_r", grade.mu_r if grade else 1.05, lo=0.5, hi=20.0)
        knee = t.quantity("knee_H", "field strength", grade.knee_H if grade else None,
                          positive=False)
        if knee is not None and not knee < 0:
            raise CaseError(t.key("knee_H"), t.raw("knee_H"), "the knee field is negative "
                                                             "(second quadrant), e.g. \"-900 kA/m\"")
        angle = _direction(t)
        remanence = (b_r * math.cos(angle), b_r * math.sin(angle))
        remanence = tuple(0.0 if abs(c) < 1e-15 * b_r else c for c in remanence)  # type: ignore[assignment]
    t.finish()
    reg = DrawnRegion(name, kind, shapes, material, winding, side, remanence, mu_r, gap_dir,
                      knee)
    if kind == "gap" and gap_dir is None and _thinness(reg) > 0.25:
        raise CaseError(t.key("direction"), None,
                        f"missing: gap '{name}' is not clearly thinner one way than the other "
                        "(its flux direction is not evident): give direction (degrees from "
                        "+x, or [x, y])")
    return reg


def _direction(t: TableReader) -> float:
    """A magnet's direction of magnetisation: degrees from +x (+r), counter-
    clockwise (``direction = 90`` is +y or +z), or a vector [x, y]."""
    raw = t.raw("direction")
    if isinstance(raw, bool):
        raise CaseError(t.key("direction"), raw, "must be an angle in degrees or a vector [x, y]")
    if isinstance(raw, (int, float)):
        if not math.isfinite(raw):
            raise CaseError(t.key("direction"), raw, "must be finite")
        return math.radians(float(raw))
    ok = (isinstance(raw, list) and len(raw) == 2
          and all(isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v)
                  for v in raw) and math.hypot(*raw) > 0)
    if not ok:
        raise CaseError(t.key("direction"), raw, "must be an angle in degrees or a non-zero "
                                                 "vector [x, y]")
    return math.atan2(float(raw[1]), float(raw[0]))


def _signed_area(pts: Any) -> float:
    x = np.array([p[0] for p in pts])
    y = np.array([p[1] for p in pts])
    return 0.5 * float(np.dot(x, np.roll(y, -1)) - np.dot(y, np.roll(x, -1)))


def _loops(shape: Any) -> list[list[Point]]:
    if hasattr(shape, "points"):
        return [list(shape.points)]
    if hasattr(shape, "r") and hasattr(shape, "cx"):
        n = 90
        return [[(shape.cx + shape.r * math.cos(2 * math.pi * k / n),
                  shape.cy + shape.r * math.sin(2 * math.pi * k / n)) for k in range(n)]]
    x0, y0, x1, y1 = shape.bbox()
    return [[(x0, y0), (x1, y0), (x1, y1), (x0, y1)]]


def _inside(pt: Point, shape: Any) -> bool:
    """pt strictly inside the shape's material (inside the outline, not in a hole)."""
    outer = _loops(shape)[0]
    if not point_in_polygon(pt, outer):
        return False
    return not any(point_in_polygon(pt, h) for h in getattr(shape, "holes", ()))


def _check_overlaps(regions: tuple[DrawnRegion, ...]) -> None:
    """No two regions overlap, except a gap drawn over a core part (it cuts it)."""
    for i, a in enumerate(regions):
        for j in range(i):
            b = regions[j]
            if {a.kind, b.kind} == {"gap", "core"}:
                gap, core = (a, b) if a.kind == "gap" else (b, a)
                _check_gap_on_core(gap, core, i if gap is a else j)
                continue
            for sa in a.shapes:
                for sb in b.shapes:
                    if _shapes_overlap(sa, sb):
                        raise CaseError(f"regions[{i}]", a.name,
                                        f"overlaps region '{b.name}': drawn regions must not "
                                        "overlap (only a gap may be drawn over a core part)")


def _check_gap_on_core(gap: DrawnRegion, core: DrawnRegion, k: int) -> None:
    """A gap drawn over a core part lies wholly within it (it cuts the part
    across); one beside the core touches it at most.  A gap sticking out of
    the part it cuts is refused: its field is not the gap's."""
    for sg in gap.shapes:
        on = [sc for sc in core.shapes if _shapes_overlap(sg, sc)]
        if not on:
            continue
        probes = _probe_points(_loops(sg)[0])
        if not all(any(_inside(p, sc) for sc in core.shapes) for p in probes):
            raise CaseError(f"regions[{k}].points", gap.name,
                            f"the gap lies partly on core region '{core.name}' and partly off "
                            "it: draw it within the part it cuts (across its full width), or "
                            "between two parts")


def _shapes_overlap(sa: Any, sb: Any) -> bool:
    ax0, ay0, ax1, ay1 = sa.bbox()
    bx0, by0, bx1, by1 = sb.bbox()
    if min(ax1, bx1) <= max(ax0, bx0) or min(ay1, by1) <= max(ay0, by0):
        return False
    la, lb = _loops(sa)[0], _loops(sb)[0]
    # shared edges are touching, not overlapping: test the edges' midpoints
    # nudged inward, and vertices, strictly inside the other's material
    for p in (*_probe_points(la), *_probe_points(lb)):
        if _inside(p, sa) and _inside(p, sb):
            return True
    if _proper_crossing(la, lb):  # two edges cross at a point inside both: the areas overlap
        return True
    return crossing_between(la, lb) and _interior_cross(la, lb, sa, sb)


def _proper_crossing(la: list[Point], lb: list[Point]) -> bool:
    """Some edge of one loop crosses an edge of the other at a point interior
    to both edges (not a touch at a vertex, not collinear)."""
    a0 = np.asarray(la, dtype=float)
    a1 = np.roll(a0, -1, axis=0)
    b0 = np.asarray(lb, dtype=float)
    b1 = np.roll(b0, -1, axis=0)

    def orient(p, q, r):  # sign of (q - p) x (r - p), broadcast over edge pairs
        return ((q[..., 0] - p[..., 0]) * (r[..., 1] - p[..., 1])
                - (q[..., 1] - p[..., 1]) * (r[..., 0] - p[..., 0]))

    A0, A1 = a0[:, None, :], a1[:, None, :]
    B0, B1 = b0[None, :, :], b1[None, :, :]
    scale = max(float(np.ptp(np.vstack([a0, b0]))), 1e-300) ** 2 * 1e-12
    o1, o2 = orient(A0, A1, B0), orient(A0, A1, B1)
    o3, o4 = orient(B0, B1, A0), orient(B0, B1, A1)
    return bool(np.any((o1 * o2 < -scale ** 2) & (o3 * o4 < -scale ** 2)))


def _probe_points(loop: list[Point]) -> list[Point]:
    """Points just inside a counter-clockwise loop: each edge's midpoint
    moved inward by 1e-6 of the edge's length, and the centroid."""
    out = []
    n = len(loop)
    for k in range(n):
        (x0, y0), (x1, y1) = loop[k], loop[(k + 1) % n]
        mx, my = 0.5 * (x0 + x1), 0.5 * (y0 + y1)
        dx, dy = x1 - x0, y1 - y0
        out.append((mx - 1e-6 * dy, my + 1e-6 * dx))
    cx = sum(p[0] for p in loop) / n
    cy = sum(p[1] for p in loop) / n
    out.append((cx, cy))
    return out


def _interior_cross(la: list[Point], lb: list[Point], sa: Any, sb: Any) -> bool:
    """Edges cross (not only touch): some point along an edge of one, moved
    just inside it (1e-6 of the edge), lies inside the other (a point on a
    shared edge, moved so, does not)."""
    for loop, other in ((la, sb), (lb, sa)):
        n = len(loop)
        for k in range(n):
            (x0, y0), (x1, y1) = loop[k], loop[(k + 1) % n]
            for u in (0.125, 0.25, 0.5, 0.75, 0.875):
                px = x0 + u * (x1 - x0) - 1e-6 * (y1 - y0)
                py = y0 + u * (y1 - y0) + 1e-6 * (x1 - x0)
                if _inside((px, py), other):
                    return True
    return False


def _thinness(region: DrawnRegion) -> float:
    """The ratio of the least to the largest second moment of the region's
    area: (b/a)^2 for an a x b rectangle (0.01 for a 10:1 strip, 1 for a square);
    above 0.25 (a rectangle under 2:1) a gap's flux direction is not evident."""
    vals = _moments(region)[0]
    return float(vals[0] / vals[1]) if vals[1] > 0 else 1.0


def _thin_direction(region: DrawnRegion) -> Point:
    """The direction across which a region is thinnest: the principal axis
    of least second moment of its area about its centroid (a gap drawn as a
    thin strip: along its length g, the direction of the flux crossing it)."""
    return _direction_of(_moments(region)[1])


def _moments(region: DrawnRegion) -> Any:
    """Eigenvalues (ascending) and eigenvectors of the second moment of the
    region's area about its centroid; polygon moments by the shoelace sums
    (exact for straight edges)."""
    area, first, second = 0.0, np.zeros(2), np.zeros((2, 2))
    for s in region.shapes:
        for loop, sign in ((_loops(s)[0], 1.0), *((h, -1.0) for h in getattr(s, "holes", ()))):
            p = np.asarray(loop, dtype=float)
            q = np.roll(p, -1, axis=0)
            cr = p[:, 0] * q[:, 1] - q[:, 0] * p[:, 1]
            sg = sign * math.copysign(1.0, cr.sum())  # outline adds, hole takes away
            x0, y0, x1, y1 = p[:, 0], p[:, 1], q[:, 0], q[:, 1]
            area += sg * 0.5 * cr.sum()
            first += sg * np.array([np.sum((x0 + x1) * cr), np.sum((y0 + y1) * cr)]) / 6.0
            ixx = np.sum(cr * (x0 * x0 + x0 * x1 + x1 * x1)) / 12.0  # int x^2 dA
            iyy = np.sum(cr * (y0 * y0 + y0 * y1 + y1 * y1)) / 12.0  # int y^2 dA
            ixy = np.sum(cr * (x0 * y1 + 2 * x0 * y0 + 2 * x1 * y1 + x1 * y0)) / 24.0
            second += sg * np.array([[ixx, ixy], [ixy, iyy]])
    c = first / area
    return np.linalg.eigh(second - area * np.outer(c, c))


def _direction_of(vecs: Any) -> Point:
    v = vecs[:, 0]
    if v[int(np.argmax(np.abs(v)))] < 0:
        v = -v
    return (float(v[0]) if abs(v[0]) > 1e-12 else 0.0, float(v[1]) if abs(v[1]) > 1e-12 else 0.0)


def _check_circuit_loops(c: DrawnCoreDims, windings: list[str]) -> None:
    """The circuit is one connected network, and each winding's branch lies
    on a closed loop (a branch on no loop carries no flux)."""
    every: list[Any] = [*c.segments, *c.gaps, *c.magnets]
    branches = [(b.name, b.node_a, b.node_b) for b in every]

    def connected(edges: list[tuple[str, str, str]]) -> dict[str, int]:
        comp: dict[str, int] = {}
        adj: dict[str, list[str]] = {}
        for _, a, b in edges:
            adj.setdefault(a, []).append(b)
            adj.setdefault(b, []).append(a)
        for start in adj:
            if start in comp:
                continue
            comp[start] = len(set(comp.values()))
            stack = [start]
            while stack:
                for nb in adj[stack.pop()]:
                    if nb not in comp:
                        comp[nb] = comp[start]
                        stack.append(nb)
        return comp

    comp = connected(branches)
    if len(set(comp.values())) > 1:
        lone = next(n for n, k in comp.items() if k != comp[branches[0][1]])
        raise CaseError("circuit.segments", lone,
                        "the circuit falls apart: this node is not connected to the first "
                        "segment's (check the from/to nodes)")
    by_w = {n: b for n, b, _ in c.circuit_windings}
    for w in windings:
        name = by_w.get(w, c.segments[0].name)
        _, a, b = next(br for br in branches if br[0] == name)
        rest = connected([br for br in branches if br[0] != name])
        if a not in rest or b not in rest or rest[a] != rest[b]:
            raise CaseError("circuit.windings", f"{w} = {name}",
                            f"branch '{name}' lies on no closed loop of the circuit: its "
                            "flux has no way back (check the from/to nodes)")


def _read_force(t: TableReader, symmetry: str, regions: tuple[DrawnRegion, ...],
                gaps: tuple[CircuitGap, ...]) -> ForceSpec:
    """``[force]``: body (the moving regions), direction (of the closing
    motion: degrees from +x, or [x, y]; in r-z along the axis), gaps (the
    circuit gaps the motion shortens; default every circuit gap)."""
    movable = [r.name for r in regions if r.kind in ("core", "magnet")]
    raw = t.raw("body")
    body = [raw] if isinstance(raw, str) else raw
    if not isinstance(body, list) or not body or not all(isinstance(b, str) for b in body):
        raise CaseError(t.key("body"), raw, "must be a region name or a list of them")
    for b in body:
        if b not in movable:
            raise CaseError(t.key("body"), b, "names no core or magnet region"
                            + _hint(b, movable))
    if not set(movable) - set(body):
        raise CaseError(t.key("body"), raw, "every core part moves: name the moving part only "
                                            "(the force is on it, against the fixed core)")
    angle = _direction(t)
    d = (math.cos(angle), math.sin(angle))
    d = (0.0 if abs(d[0]) < 1e-12 else d[0], 0.0 if abs(d[1]) < 1e-12 else d[1])
    if symmetry == "axisymmetric" and d[0] != 0.0:
        raise CaseError(t.key("direction"), t.raw("direction"),
                        "an axisymmetric part moves along the axis: 90 or -90 (or [0, 1], [0, -1])")
    names = [g.name for g in gaps]
    raw_g = t.raw("gaps", names)
    work = [raw_g] if isinstance(raw_g, str) else raw_g
    if not isinstance(work, list) or not all(isinstance(g, str) for g in work):
        raise CaseError(t.key("gaps"), raw_g, "must be a list of circuit gap names")
    if not work:
        raise CaseError(t.key("gaps"), raw_g, "no working gap: the hand force needs the circuit "
                                              "gaps the motion shortens")
    for g in work:
        if g not in names:
            raise CaseError(t.key("gaps"), g, "names no circuit gap" + _hint(g, names))
    drawn = {r.name: r for r in regions}
    moving = [sh for r in regions if r.name in body for sh in r.shapes]
    bc = _centroid(moving)
    for g in work:
        if g not in drawn:
            continue
        gc = _centroid(list(drawn[g].shapes))
        across = drawn[g].direction or _thin_direction(drawn[g])
        along = abs(across[0] * d[0] + across[1] * d[1])
        toward = (gc[0] - bc[0]) * d[0] + (gc[1] - bc[1]) * d[1]
        if along < 0.9 or toward <= 0:
            raise CaseError(t.key("direction"), t.raw("direction"),
                            f"the motion does not close gap '{g}': give the direction in which "
                            "the moving part travels to shut its working gaps (toward them, "
                            "across them)")
    t.finish()
    return ForceSpec(tuple(body), d, tuple(work))


def _centroid(shapes: list[Any]) -> Point:
    """Area centroid of shapes (their outlines; m)."""
    a = cx = cy = 0.0
    for sh in shapes:
        p = np.asarray(_loops(sh)[0], dtype=float)
        q = np.roll(p, -1, axis=0)
        cr = p[:, 0] * q[:, 1] - q[:, 0] * p[:, 1]
        a += 0.5 * cr.sum()
        cx += float(np.sum((p[:, 0] + q[:, 0]) * cr)) / 6.0
        cy += float(np.sum((p[:, 1] + q[:, 1]) * cr)) / 6.0
    return (cx / a, cy / a)


def _nodes(t: TableReader) -> tuple[str, str] | None:
    if not (t.has("from") or t.has("to")):
        return None
    return t.string("from"), t.string("to")


def _read_circuit(t: TableReader, symmetry: str, depth: float,
                  regions: tuple[DrawnRegion, ...], unit: float | None) -> tuple[Any, ...]:
    seg_ts = t.tables("segments")
    gap_ts = t.tables("gaps")
    if not seg_ts:
        raise CaseError("circuit.segments", None, "missing: give the circuit's core segments "
                                                  "as [[circuit.segments]] (name, length, area)")
    items: list[tuple[str, TableReader, tuple[str, str] | None]] = []
    names: list[str] = []
    mag_ts = t.tables("magnets")
    for kind, ts in (("segment", seg_ts), ("gap", gap_ts), ("magnet", mag_ts)):
        for k, st in enumerate(ts):
            nm = st.string("name", f"{kind}{k}")
            if nm in names:
                raise CaseError(st.key("name"), nm, "a segment or gap of that name comes before")
            names.append(nm)
            items.append((kind, st, _nodes(st)))
    given = [n is not None for _, _, n in items]
    if any(given) and not all(given):
        k = given.index(False)
        raise CaseError(items[k][1].key("from"), None,
                        "missing: some segments or gaps give from/to nodes, so every one must")
    ends: list[tuple[str, str]] = (
        [n for _, _, n in items if n is not None] if all(given)
        else [(f"n{k}", f"n{(k + 1) % len(items)}") for k in range(len(items))])
    segments, gaps, magnets = [], [], []
    drawn_magnets = {r.name: r for r in regions if r.kind == "magnet"}
    for (kind, st, _), nm, (a, b) in zip(items, names, ends):
        if a == b:
            raise CaseError(st.key("to"), b, "a branch must join two different nodes")
        if kind == "magnet":
            # B_r and mu_r default to the drawn magnet region of the same name
            reg = drawn_magnets.get(nm)
            if reg is None and not (st.has("remanence") and st.has("mu_r")):
                raise CaseError(st.key("remanence"), None,
                                f"missing: give remanence and mu_r, or draw a magnet region "
                                f"named '{nm}' to take them from")
            b_r0 = math.hypot(*reg.remanence) if reg is not None else None
            b_r = st.quantity("remanence", "flux density", b_r0)
            if not b_r > 0:
                raise CaseError(st.key("remanence"), st.raw("remanence", None), "must be positive")
            mu_r = st.number("mu_r", reg.mu_r if reg is not None else None, lo=0.5, hi=20.0)
            magnets.append(MagnetBranch(nm, a, b, st.quantity("length", "length"),
                                         st.quantity("area", "area"), b_r, mu_r))
            st.finish()
            continue
        if kind == "segment":
            segments.append(CircuitSegment(
                nm, a, b, st.quantity("length", "length"), st.quantity("area", "area"),
                st.string("material", "core"), _boolean(st, "on_path", True)))
        else:
            g = st.quantity("length", "length")
            model = st.string("fringing", None)
            if model is not None and model not in FRINGING_MODELS:
                raise CaseError(st.key("fringing"), model, "unknown fringing model; known: "
                                + ", ".join(FRINGING_MODELS) + _hint(model, list(FRINGING_MODELS)))
            if "r_outer" in st.data or "r_inner" in st.data:
                face = _round_face(st, g, symmetry)
            else:
                w = st.quantity("width", "length")
                if symmetry == "planar":
                    d = st.quantity("depth", "length", depth)
                else:
                    d = st.quantity("depth", "length")
                h = st.quantity("free_height", "length", w)
                if g >= min(w, d):
                    raise CaseError(st.key("length"), st.data["length"],
                                    f"gap not shorter than its face ({min(w, d) * 1e3:g} mm): "
                                    "the fringing models do not hold")
                try:
                    face = GapFace(length=g, width=w, depth=d, free_height=h)
                except GapFaceError as exc:  # pragma: no cover - the quantities are checked above
                    raise CaseError(st.key("length"), g, str(exc)) from None
            gaps.append(CircuitGap(nm, a, b, face, model))
        st.finish()
    if not any(s.on_path for s in segments):
        raise CaseError("circuit.segments", None, "no segment has on_path = true: core B and "
                                                  "path H average those")
    gap_names = [g.name for g in gaps]
    drawn_gaps = [r.name for r in regions if r.kind == "gap"]
    measured = [n for n in gap_names if n in drawn_gaps]
    gap_B = t.string("gap_B", measured[0] if measured else None)
    if gap_B is not None:
        if gap_B not in gap_names:
            raise CaseError(t.key("gap_B"), gap_B, "names no circuit gap"
                            + _hint(gap_B, gap_names))
        if gap_B not in drawn_gaps:
            raise CaseError(t.key("gap_B"), gap_B, "names no drawn gap region: the field "
                            "model measures gap B in the region of the gap's name")
    path = tuple(_points(t.raw("path"), t.key("path"), unit, closed=False))
    if sum(math.dist(p, q) for p, q in zip(path, path[1:])) <= 0:
        raise CaseError(t.key("path"), t.raw("path"), "the path has no length")
    fl = _points(t.raw("flux_line"), t.key("flux_line"), unit, closed=False)
    if len(fl) != 2 or fl[0] == fl[1]:
        raise CaseError(t.key("flux_line"), t.raw("flux_line"),
                        "must be two different points [[x0, y0], [x1, y1]]: the segment across "
                        "the winding's limb the flux is taken through")
    boxes = [s.bbox() for r in regions for s in r.shapes]
    x0, y0 = min(b[0] for b in boxes), min(b[1] for b in boxes)
    if symmetry == "axisymmetric":
        x0 = 0.0  # the axis is in the model
    x1, y1 = max(b[2] for b in boxes), max(b[3] for b in boxes)
    tol = 1e-9 * max(x1 - x0, y1 - y0)
    for key, pts in (("path", path), ("flux_line", fl)):
        for k, (x, y) in enumerate(pts):
            if not (x0 - tol <= x <= x1 + tol and y0 - tol <= y <= y1 + tol):
                raise CaseError(f"{t.key(key)}[{k}]", t.raw(key)[k],
                                "lies outside the drawing (the regions' bounding box, and the "
                                "axis in r-z): the field is measured where the parts are")
    cores = [r.name for r in regions if r.kind == "core"]
    if not cores:
        raise CaseError("regions", None, "no region has kind = \"core\"")
    core_B = t.raw("core_B", cores)
    if isinstance(core_B, str):
        core_B = [core_B]
    if not isinstance(core_B, list) or not core_B:
        raise CaseError(t.key("core_B"), core_B, "must be a list of core region names")
    for n in core_B:
        if n not in cores:
            raise CaseError(t.key("core_B"), n, "names no core region" + _hint(str(n), cores))
    windings = []
    wt = TableReader(t.raw("windings", {}), t.key("windings"), spec=t.sub_spec("windings"))
    for wname in list(wt.data):
        spec = wt.string(wname)
        sign = -1 if spec.startswith("-") else 1
        branch = spec[1:] if spec[:1] in "+-" and spec else spec
        if branch not in names:
            raise CaseError(wt.key(wname), spec, "names no circuit segment or gap"
                            + _hint(branch, names))
        windings.append((wname, branch, sign))
    wt.finish()
    t.finish()
    return (tuple(segments), tuple(gaps), tuple(windings), gap_B, path, (fl[0], fl[1]),
            tuple(core_B), tuple(magnets))


def _boolean(t: TableReader, name: str, default: bool) -> bool:
    raw = t.raw(name, default)
    if not isinstance(raw, bool):
        raise CaseError(t.key(name), raw, "must be true or false")
    return raw



def _round_face(st: TableReader, g: float, symmetry: str) -> GapFace:
    """A circuit gap's round face (r-z): r_outer, r_inner (default 0),
    free_height (default the face's radial width)."""
    if symmetry == "planar":
        raise CaseError(st.key("r_outer"), st.raw("r_outer", st.raw("r_inner", None)),
                        "a round face is for an r-z core: give width and depth for a planar one")
    for key in ("width", "depth"):
        if key in st.data:
            raise CaseError(st.key(key), st.data[key], "give either r_outer (and r_inner) "
                                                       "for a round face, or width and depth")
    r_o = st.quantity("r_outer", "length")
    r_i = st.quantity("r_inner", "length", 0.0, positive=False)
    if not 0.0 <= r_i < r_o:
        raise CaseError(st.key("r_inner"), st.raw("r_inner"),
                        f"must be >= 0 and less than r_outer = {r_o * 1e3:g} mm")
    h = st.quantity("free_height", "length", r_o - r_i)
    if g >= r_o - r_i:
        raise CaseError(st.key("length"), st.data["length"],
                        f"gap not shorter than its face's radial width ({(r_o - r_i) * 1e3:g} "
                        "mm): the fringing models do not hold")
    return GapFace.round(g, r_i, r_o, h)
