"""The ``holding-magnet`` family (axisymmetric): a steel cup with an axially
magnetised disc magnet under its centre pole, and a keeper plate at a
distance (the stroke).

In r-z (r = x, z = y; invented for the demo in its case file): the base
plate r < radius, 0 < z < base; the outer wall radius - wall < r < radius
up to z = base + height; the magnet disc r < pole_radius on the base, of
magnet_height, magnetised +z; the centre pole on it up to the same face
height; the keeper r < keeper_radius (default radius), keeper_thickness
thick, ``stroke`` above the faces.  An optional release winding sits in the
annulus between the pole and the wall (``[winding] limb = "pole"``, one go
side: an r-z coil carries its current round the axis; current 0 for none).

Hand model: the magnet (MMF H_c l_m behind its recoil reluctance), the pole,
the working gap over the pole's disc face, the keeper's radial run, the
working gap over the wall's annular face, the wall and the base's radial
run, in series, and the leakage across the cup from pole to wall, lumped
at the pole's face and foot (common practice, no source); the gaps
over the pole's disc and the wall's annulus under the case's fringing model
(analytic.fringing's round faces: each edge's fringing round its
circumference).
Radial runs between mean radii r1 < r2 through a plate of thickness t take
the exact reluctance ln(r2/r1) / (2 pi mu t) (a radial flux tube), entered as
a segment of length r2 - r1 and the equivalent area 2 pi t (r2 - r1) / ln(r2/r1).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from magcheck.analytic.constants import mu_0
from magcheck.analytic.fringing import GapFace, GapSides
from magcheck.analytic.magnets import MAGNET_GRADES
from magcheck.analytic.network import MagnetBranch
from magcheck.fem2d.layout import Rect, Region
from magcheck.fem2d.sources import Magnet

from ..coremodel import (CircuitGap, CircuitSegment, CoilModel, CoreModel, ForceSpec, GapLine,
                         HandCircuit)
from ...errors import CaseError
from ..geometry import Limb
from ..casekeys import Key, lengths, string
from ..reader import TableReader
from .base import INF, Segment, Window, check_stroke_case, radial_run

__all__ = ["HoldingMagnet", "HoldingMagnetDims"]


@dataclass(frozen=True)
class HoldingMagnetDims:
    """A holding magnet's cup, magnet and keeper (m); the magnet's grade."""

    radius: float
    wall: float
    base: float
    height: float
    pole_radius: float
    magnet_height: float
    keeper_thickness: float
    keeper_radius: float
    stroke: float
    remanence: float
    mu_r: float
    knee_H: float | None

    @property
    def face(self) -> float:
        """z of the pole and wall faces (m)."""
        return self.base + self.height


class HoldingMagnet:
    """``holding-magnet``: steel cup, disc magnet under a centre pole, keeper at the stroke."""

    name: str = "holding-magnet"
    limb_names: tuple[str, ...] = ("pole",)
    winding_limbs: tuple[str, ...] = ("pole",)
    no_gaps: str = ("a holding magnet's working gaps are its stroke ([core] stroke); "
                    "it takes no [[gaps]]")
    """Why the family takes no ``[[gaps]]`` (the reader refuses them with it; the
    schema too)."""
    core_keys: tuple[str, ...] = ("radius", "wall", "base", "height", "pole_radius",
                                  "magnet_height", "keeper_thickness", "keeper_radius", "stroke")
    parts: tuple[str, ...] = ("keeper",)
    core_spec: dict[str, Key] = {
        **lengths(core_keys),
        "magnet": string("the magnet's built-in grade", tuple(MAGNET_GRADES))}
    """The ``[core]`` keys (compare.design.casekeys): the dimensions and the grade."""

    def read_core(self, t: TableReader) -> HoldingMagnetDims:
        from magcheck.analytic.magnets import magnet_grade

        R = t.quantity("radius", "length")
        wall = t.quantity("wall", "length")
        base = t.quantity("base", "length")
        height = t.quantity("height", "length")
        rp = t.quantity("pole_radius", "length")
        hm = t.quantity("magnet_height", "length")
        tk = t.quantity("keeper_thickness", "length", base)
        rk = t.quantity("keeper_radius", "length", R)
        stroke = t.quantity("stroke", "length")
        if wall >= R:
            raise CaseError(t.key("wall"), t.raw("wall"),
                            f"the wall is as thick as the cup's {R * 1e3:g} mm radius")
        if rp >= R - wall:
            raise CaseError(t.key("pole_radius"), t.raw("pole_radius"),
                            f"the pole fills the cup: it must be smaller than the wall's inner "
                            f"radius {(R - wall) * 1e3:g} mm")
        if hm >= height:
            raise CaseError(t.key("magnet_height"), t.raw("magnet_height"),
                            f"the magnet leaves no pole: it must be lower than the cup's "
                            f"{height * 1e3:g} mm")
        if rk < R:
            raise CaseError(t.key("keeper_radius"), t.raw("keeper_radius"),
                            "the keeper must cover the wall's face (keeper_radius >= radius)")
        if stroke >= min(rp, wall):
            raise CaseError(t.key("stroke"), t.raw("stroke"),
                            "the working gap is not shorter than the faces it crosses (the pole "
                            "radius, the wall): the fringing models do not hold")
        raw = t.raw("magnet")
        try:
            grade = magnet_grade(raw) if isinstance(raw, str) else None
        except ValueError as exc:
            raise CaseError(t.key("magnet"), raw, str(exc)) from None
        if grade is None:
            raise CaseError(t.key("magnet"), raw, "give a built-in magnet grade name "
                                                  "(analytic.magnets), e.g. \"demo-hard-ferrite\"")
        return HoldingMagnetDims(R, wall, base, height, rp, hm, tk, rk, stroke,
                                 grade.remanence, grade.mu_r, grade.knee_H)

    def check_case(self, case: Any) -> None:
        check_stroke_case(case, "holding magnet")
        if len(case.windings) > 1:
            raise CaseError("windings", len(case.windings), "a holding magnet takes one "
                                                            "(release) winding")

    # ------------------------------------------------------------ geometry
    def limbs(self, c: HoldingMagnetDims) -> dict[str, Limb]:
        # the release coil's room: the annulus between the pole and the wall
        return {"pole": Limb("pole", "y", c.base, c.face, 0.0, c.pole_radius, INF,
                             c.radius - c.wall - c.pole_radius, c.base, c.face)}

    def _rects(self, c: HoldingMagnetDims) -> dict[str, list[Rect]]:
        R, f = c.radius, c.face
        k0 = f + c.stroke
        return {
            "cup": [Rect(0.0, 0.0, R, c.base), Rect(R - c.wall, c.base, R, f),
                    Rect(0.0, c.base + c.magnet_height, c.pole_radius, f)],
            "magnet": [Rect(0.0, c.base, c.pole_radius, c.base + c.magnet_height)],
            "keeper": [Rect(0.0, k0, c.keeper_radius, k0 + c.keeper_thickness)],
        }

    def core_rects(self, c: HoldingMagnetDims) -> list[Rect]:
        r = self._rects(c)
        return [*r["cup"], *r["keeper"]]

    def part_rects(self, c: HoldingMagnetDims) -> dict[str, list[Rect]]:
        return {"keeper": self._rects(c)["keeper"]}

    def mean_path(self, c: HoldingMagnetDims) -> list[tuple[float, float]]:
        rp, rw = 0.5 * c.pole_radius, c.radius - 0.5 * c.wall
        zb, zk = 0.5 * c.base, c.face + c.stroke + 0.5 * c.keeper_thickness
        return [(rp, zb), (rp, zk), (rw, zk), (rw, zb), (rp, zb)]

    def segments(self, c: HoldingMagnetDims) -> list[Segment]:
        return []

    def windows(self, c: HoldingMagnetDims, limb: str) -> list[Window]:
        return []

    def effective_path(self, c: HoldingMagnetDims) -> tuple[list, tuple[str, ...]]:
        raise CaseError("hand.effective_parameters", True, "not modelled for a holding magnet")

    # ------------------------------------------------------------ both models
    def core_model(self, case: Any) -> CoreModel:
        c: HoldingMagnetDims = case.core
        own = "keeper" in case.part_overrides
        rects = self._rects(c)
        f, s = c.face, c.stroke
        rw0 = c.radius - c.wall
        regions = [Region("core", tuple(rects["cup"]), "core", kind="core"),
                   Region("keeper", tuple(rects["keeper"]), "core-keeper" if own else "core",
                          kind="core"),
                   Region("magnet", tuple(rects["magnet"]), "air", kind="magnet"),
                   Region("gap-pole", (Rect(0.0, f, c.pole_radius, f + s),), "air", kind="gap"),
                   Region("gap-wall", (Rect(rw0, f, c.radius, f + s),), "air", kind="gap")]
        materials = [("core", "core")] + ([("core-keeper", "keeper")] if own else [])
        w = case.winding
        limb = self.limbs(c)["pole"]
        mid = 0.5 * (limb.lo + limb.hi)
        r0 = c.pole_radius + w.clearance
        coil = Rect(r0, mid - 0.5 * w.length, r0 + w.thickness, mid + 0.5 * w.length)
        regions.append(Region("coil", (coil,), "air", kind="coil"))
        coils = (CoilModel((("coil", 1),), w.thickness * w.length),)
        # the hand circuit, magnetised up the pole, over the gap, out the keeper,
        # down the wall and back through the base
        a_pole = math.pi * c.pole_radius ** 2
        a_wall = math.pi * (c.radius ** 2 - rw0 ** 2)
        rp, rw = 0.5 * c.pole_radius, c.radius - 0.5 * c.wall
        keeper = radial_run(rp, rw, c.keeper_thickness)
        base = radial_run(rp, rw, c.base)
        segs = (CircuitSegment("pole", "m", "p", c.height - c.magnet_height + 0.5 * c.base,
                               a_pole),
                CircuitSegment("keeper", "k1", "k2", *keeper,
                               material="keeper" if own else "core"),
                CircuitSegment("wall", "w", "b", c.height + 0.5 * c.base, a_wall),
                CircuitSegment("base", "b", "m0", *base))
        # the faces' free sides (analytic.fringing round faces): below the
        # pole's face its steel side down to the magnet, below the wall's its
        # inner and outer sides; above both the keeper's underside, across the
        # cup's annulus inside (half of it to each: the pole's outer edge and
        # the wall's inner edge face each other across it, as a u-armature's
        # inner edges), and its outer edge outside
        window = rw0 - c.pole_radius
        h_pole = c.height - c.magnet_height
        k_out = c.keeper_thickness + (c.keeper_radius - c.radius)
        # free height G of both faces: the cup's height, the window beside
        # the pole (analytic.fringing.GapFace)
        pole_face = GapFace.round(s, 0.0, c.pole_radius, c.height,
                                  GapSides((h_pole, 0.5 * window), (h_pole, 0.5 * window),
                                           (h_pole, 0.5 * window), (INF, window)))
        wall_face = GapFace.round(s, rw0, c.radius, c.height,
                                  GapSides((c.height, 0.5 * window), (c.height + c.base, k_out),
                                           (c.height, 0.5 * window), (window, INF)))
        gaps = (CircuitGap("gap-pole", "p", "k1", pole_face),
                CircuitGap("gap-wall", "k2", "w", wall_face))
        mags = (MagnetBranch("magnet", "m0", "m", c.magnet_height, a_pole, c.remanence,
                              c.mu_r),)
        # a positive release current: +phi round the axis drives flux up the pole (+z), with the magnet
        # leakage inside the cup, pole to wall across the annulus: both irons are
        # near equipotentials, so the full pole-to-wall drop acts over the pole's
        # height and, rising linearly up the magnet's side, a third of the
        # magnet's (the energy-equivalent weight, int_0^h_m (z/h_m)^2 dz, the
        # rule of families.base.coil_space_leakage for the other r-z
        # families): P = 2 pi mu0 (h_pole + h_m/3) / ln(r_wall / r_pole)
        # (radial flux tubes of a coaxial annulus, exact for straight radial
        # lines; the energy weighting derived here; common practice, no source).  It is lumped at the pole's two ends,
        # the upper half of the pole's share at its face, the rest at its foot
        # (so a release coil's own flux can close round it without crossing
        # the magnet: the incremental L was 36 % under the FE's with all of it
        # at the face); with ideal iron the two are in parallel, one P.
        p_side = 2 * math.pi * mu_0 / math.log(rw0 / c.pole_radius)
        p_up = p_side * 0.5 * h_pole
        p_low = p_side * (0.5 * h_pole + c.magnet_height / 3.0)
        circuit = HandCircuit(segs, gaps, (("pole", 1),), "gap-pole", "pole", mags,
                              leakage=(("cup-leakage", "p", "w", p_up, rw0 - c.pole_radius),
                                       ("cup-leakage-low", "m", "b", p_low, rw0 - c.pole_radius)))
        return CoreModel(
            symmetry="axisymmetric", depth=1.0, regions=tuple(regions),
            materials=tuple(materials), coils=coils, core_regions=("core", "keeper"),
            gap_regions=("gap-pole", "gap-wall"), gap_region="gap-pole", gap_direction=(0.0, 1.0),
            mean_path=tuple(self.mean_path(c)),
            flux_line=((0.0, c.base + c.magnet_height + 0.5 * (c.height - c.magnet_height)),
                       (c.pole_radius, c.base + c.magnet_height
                        + 0.5 * (c.height - c.magnet_height))),
            circuit=circuit,
            # for the figure: B_z across the working gap over the pole, from the
            # axis out past the pole's edge (its midpoint under the pole)
            gap_line=GapLine((0.0, f + 0.5 * s), (1.5 * c.pole_radius, f + 0.5 * s), 1,
                             (c.pole_radius,),
                             f"the working gap over the pole ({s * 1e3:g} mm)"),
            magnets=(Magnet("magnet", (0.0, c.remanence), c.mu_r),),
            force=ForceSpec(("keeper",), (0.0, -1.0), ("gap-pole", "gap-wall"),
                            stroke_key="core.stroke", stroke=c.stroke),
            magnet_knees=(("magnet", c.knee_H),) if c.knee_H is not None else ())

