"""The ``u-armature`` family: a U (C) core and a straight armature bar across
both pole faces, the two working gaps equal to the stroke (planar).

The clapper relay and the lifting magnet.  The U's legs stand on its yoke;
the armature lies across the legs' pole faces at ``stroke`` above them and
moves down to close both working gaps together.  A winding sits on one leg
or on both ([[windings]], limb = "left" | "right")::

    [core]  leg_width, window_width, window_height (the legs' length inside
            the U), yoke_width (default leg_width), armature_thickness
            (default leg_width), depth, stroke

Hand model: the mean path through the centre lines (legs from the yoke's
centre line to the pole face, the armature between the legs' centre lines
plus half its thickness at each end, the yoke between the legs' centre
lines: common practice, no source), the two working gaps with the case's
fringing model (face = leg width x depth; the free faces at each edge
as the parts have them, ``UArmature.gap_sides``; free height G = the
window's height, the flux-factor model's winding length),
each winding's MMF in its leg.  The moving body is the armature; the force
is reported along its closing motion (-y).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from magcheck.analytic.fringing import GapFace, GapSides
from magcheck.fem2d.layout import Rect, Region

from ..coremodel import (CircuitGap, CircuitSegment, CoilModel, CoreModel, ForceSpec, GapLine,
                         HandCircuit, coil_regions)
from ...errors import CaseError
from ..geometry import Limb, coil_rects, flux_direction
from ..casekeys import Key, lengths
from ..reader import TableReader
from .base import INF, Segment, Window, check_stroke_case

__all__ = ["UArmature", "UArmatureDims"]


@dataclass(frozen=True)
class UArmatureDims:
    """A U core and its armature (m).  x from the left leg's outer face, y
    from the yoke's underside; the pole faces at y = yoke_width + window_height."""

    leg_width: float
    window_width: float
    window_height: float
    yoke_width: float
    armature_thickness: float
    depth: float
    stroke: float

    @property
    def width(self) -> float:
        return 2 * self.leg_width + self.window_width

    @property
    def pole_face(self) -> float:
        """y of the legs' pole faces (m)."""
        return self.yoke_width + self.window_height


class UArmature:
    """``u-armature``: U core, armature bar, two working gaps equal to the stroke."""

    name: str = "u-armature"
    limb_names: tuple[str, ...] = ("left", "right")
    winding_limbs: tuple[str, ...] = ("left", "right")
    no_gaps: str = ("a u-armature core's working gaps are its stroke ([core] stroke); "
                    "it takes no [[gaps]]")
    """Why the family takes no ``[[gaps]]`` (the reader refuses them with it; the
    schema too)."""
    core_keys: tuple[str, ...] = ("leg_width", "window_width", "window_height", "yoke_width",
                                  "armature_thickness", "depth", "stroke")
    parts: tuple[str, ...] = ("armature",)
    core_spec: dict[str, Key] = lengths(core_keys)
    """The ``[core]`` keys (compare.design.casekeys): the dimensions."""

    def read_core(self, t: TableReader) -> UArmatureDims:
        w = t.quantity("leg_width", "length")
        ww = t.quantity("window_width", "length")
        wh = t.quantity("window_height", "length")
        yoke = t.quantity("yoke_width", "length", w)
        arm = t.quantity("armature_thickness", "length", w)
        depth = t.quantity("depth", "length")
        stroke = t.quantity("stroke", "length")
        if stroke >= w:
            raise CaseError(t.key("stroke"), t.raw("stroke"),
                            f"the working gap is not shorter than the pole face it crosses "
                            f"({w * 1e3:g} mm leg width): the fringing models do not hold")
        return UArmatureDims(w, ww, wh, yoke, arm, depth, stroke)

    def check_case(self, case: Any) -> None:
        check_stroke_case(case, "u-armature core")

    # ------------------------------------------------------------ geometry
    def limbs(self, c: UArmatureDims) -> dict[str, Limb]:
        lo, hi = c.yoke_width, c.pole_face
        w, x1 = c.leg_width, c.leg_width + c.window_width
        return {"left": Limb("left", "y", lo, hi, 0.0, w, INF, c.window_width, 0.0, hi),
                "right": Limb("right", "y", lo, hi, x1, x1 + w, c.window_width, INF, 0.0, hi)}

    def u_rects(self, c: UArmatureDims) -> list[Rect]:
        w, x1, top = c.leg_width, c.leg_width + c.window_width, c.pole_face
        return [Rect(0.0, 0.0, c.width, c.yoke_width), Rect(0.0, c.yoke_width, w, top),
                Rect(x1, c.yoke_width, x1 + w, top)]

    def armature_rect(self, c: UArmatureDims) -> Rect:
        y0 = c.pole_face + c.stroke
        return Rect(0.0, y0, c.width, y0 + c.armature_thickness)

    def core_rects(self, c: UArmatureDims) -> list[Rect]:
        return [*self.u_rects(c), self.armature_rect(c)]

    def part_rects(self, c: UArmatureDims) -> dict[str, list[Rect]]:
        return {"armature": [self.armature_rect(c)]}

    def mean_path(self, c: UArmatureDims) -> list[tuple[float, float]]:
        xl, xr = 0.5 * c.leg_width, c.width - 0.5 * c.leg_width
        yb = 0.5 * c.yoke_width
        ya = c.pole_face + c.stroke + 0.5 * c.armature_thickness
        return [(xl, yb), (xl, ya), (xr, ya), (xr, yb), (xl, yb)]

    def segments(self, c: UArmatureDims) -> list[Segment]:
        """The four core branches of the mean path (the gaps come from the stroke)."""
        d = c.depth
        leg = c.pole_face - 0.5 * c.yoke_width
        span = c.leg_width + c.window_width
        return [Segment("left", "yl", "fl", leg, c.leg_width * d, "left"),
                Segment("armature", "al", "ar", span + c.armature_thickness,
                        c.armature_thickness * d, "armature", part="armature"),
                Segment("right", "fr", "yr", leg, c.leg_width * d, "right", axis_sign=-1),
                Segment("yoke", "yr", "yl", span, c.yoke_width * d, "yoke", axis_sign=-1)]

    def windows(self, c: UArmatureDims, limb: str) -> list[Window]:
        return []

    def effective_path(self, c: UArmatureDims) -> tuple[list, tuple[str, ...]]:
        raise CaseError("hand.effective_parameters", True, "not modelled for a u-armature core")

    def gap_sides(self, c: UArmatureDims) -> GapSides:
        """The free faces at a working gap's edges (analytic.fringing.GapSides),
        the same for both legs (mirror images): toward lo the leg's side
        faces, toward hi the armature's.  Outer edge (``minus``): the leg's
        outer face down to the yoke's underside, the armature's end face (its
        thickness).  Inner edge (``plus``): the leg's window face down to the
        yoke, the armature's underside across the window to its middle, where
        the other leg's inner edge takes the rest; room across: the window.
        Depth edges: the leg's front face down to the yoke's underside, the
        armature's front face (its thickness)."""
        down = c.window_height + c.yoke_width
        arm = c.armature_thickness
        return GapSides((down, arm), (c.window_height, 0.5 * c.window_width), (down, arm),
                        room=(INF, c.window_width))

    # ------------------------------------------------------------ both models
    def core_model(self, case: Any) -> CoreModel:
        c: UArmatureDims = case.core
        own = "armature" in case.part_overrides
        regions = [Region("core", tuple(self.u_rects(c)), material="core", kind="core"),
                   Region("armature", (self.armature_rect(c),),
                          material="core-armature" if own else "core", kind="core")]
        materials = [("core", "core")] + ([("core-armature", "armature")] if own else [])
        top = c.pole_face
        gl = Region("gapL", (Rect(0.0, top, c.leg_width, top + c.stroke),), "air", kind="gap")
        x1 = c.leg_width + c.window_width
        gr = Region("gapR", (Rect(x1, top, x1 + c.leg_width, top + c.stroke),), "air",
                    kind="gap")
        regions += [gl, gr]
        limbs = self.limbs(c)
        coils = []
        for k, w in enumerate(case.windings):
            plus, minus = coil_rects(limbs[w.limb], w)
            p_name, m_name = coil_regions(k)
            regions += [Region(p_name, (plus,), "air", kind="coil"),
                        Region(m_name, (minus,), "air", kind="coil")]
            coils.append(CoilModel(((p_name, 1), (m_name, -1)), w.thickness * w.length))
        # the hand circuit: the loop left leg (up), gap, armature, gap, right leg (down), yoke
        seg = {s.name: s for s in self.segments(c)}
        face = GapFace(length=c.stroke, width=c.leg_width, depth=c.depth,
                       free_height=c.window_height, sides=self.gap_sides(c))
        segments = tuple(CircuitSegment(s.name, s.node_a, s.node_b, s.length, s.area,
                                        "armature" if s.part == "armature" and own else "core")
                         for s in seg.values())
        gaps = (CircuitGap("gapL", "fl", "al", face), CircuitGap("gapR", "ar", "fr", face))
        signs = tuple((w.limb, flux_direction(limbs[w.limb]) * seg[w.limb].axis_sign)
                      for w in case.windings)
        circuit = HandCircuit(segments, gaps, signs, "gapL", case.winding.limb)
        mid = 0.5 * (limbs[case.winding.limb].lo + limbs[case.winding.limb].hi)
        wl = limbs[case.winding.limb]
        y_gap = top + 0.5 * c.stroke
        gap_line = GapLine((-c.leg_width, y_gap), (2 * c.leg_width, y_gap), 1,
                           (0.0, c.leg_width), f"the left pole face ({c.stroke * 1e3:g} mm)",
                           offset=-c.leg_width)
        return CoreModel(
            symmetry="planar", depth=c.depth, regions=tuple(regions), materials=tuple(materials),
            coils=tuple(coils), core_regions=("core", "armature"), gap_regions=("gapL", "gapR"),
            gap_region="gapL", gap_direction=(0.0, 1.0),
            mean_path=tuple(self.mean_path(c)), flux_line=((wl.c0, mid), (wl.c1, mid)),
            gap_line=gap_line, circuit=circuit,
            force=ForceSpec(("armature",), (0.0, -1.0), ("gapL", "gapR"),
                            stroke_key="core.stroke", stroke=c.stroke))
