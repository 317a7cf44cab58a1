"""The ``pot-core`` family (axisymmetric): a pot-core inductor of two halves.

In r-z (r = x, z = y), from the bottom outer face z = 0 (invented for the
demo in its case file)::

    [core]  radius, wall (the outer wall's thickness), post_radius,
            hole_radius (the bore through the post, default 0), base (each
            half's base plate), height (the window's height inside), gap
            (in the centre post, at mid-height)

Two base plates hole_radius < r < radius, the outer wall radius - wall < r
< radius between them, the centre post hole_radius < r < post_radius with
its gap at mid-height; the winding(s) in the annular window beside the post
(``[winding] limb = "post"``, centred on the window's height; several
windings sit concentric, each outside the one before).

Hand model, round the loop post (up, across its gap) - top plate (radially
out) - wall (down) - bottom plate (radially in):

* the post's gap over its face (a disc, or an annulus round the hole) with
  the case's fringing model (analytic.fringing round faces; free faces: the
  post's side up and down from the gap as far as the window's width (the
  tubes' reach across it), room across: the window; the hole's side runs on
  through the base plates to the outer faces, its room the hole's radius,
  since no flux crosses the axis; free height G: the window's height);
* the plates as radial flux tubes between the post's and the wall's mean
  radii (exact reluctance ln(r2/r1) / (2 pi mu t), as in the other r-z
  families);
* the leakage across the window, post to wall, in parallel with the gap:
  the energy-equivalent permeance of families.base.coil_space_leakage
  over the winding's span (P' h / 12 for a winding filling the window and a
  gap at mid-height; less for a shorter winding, which encloses less MMF
  near the plates) [derived; common practice, no source], over the post's
  sides beyond the stretch the gap's fringing takes (the window is counted
  once: on the demo, a window as wide as half its height, the fringing
  takes it all).

The flux row is the gap's (its fringing included); the field model measures
it down the wall at the gap's height, where the window's leakage has closed.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from magcheck.analytic.fringing import GapFace, GapSides
from magcheck.fem2d.layout import Rect, Region

from ..coremodel import (CircuitGap, CircuitSegment, CoilModel, CoreModel, GapLine, HandCircuit,
                         turn_coil)
from ...errors import CaseError
from ..geometry import Limb
from ..casekeys import Key, lengths
from ..reader import TableReader
from .base import INF, Segment, Window, coil_space_leakage, radial_run

__all__ = ["PotCore", "PotCoreDims"]


@dataclass(frozen=True)
class PotCoreDims:
    """A pot core of two halves (m); z from the bottom outer face."""

    radius: float
    wall: float
    post_radius: float
    hole_radius: float
    base: float
    height: float
    gap: float

    @property
    def mid(self) -> float:
        """z of the gap's middle (m)."""
        return self.base + 0.5 * self.height


class PotCore:
    """``pot-core``: two pot-core halves, a gap in the centre post."""

    name: str = "pot-core"
    limb_names: tuple[str, ...] = ("post",)
    winding_limbs: tuple[str, ...] = ("post",)
    no_gaps: str = ("a pot core's gap is [core] gap (in the centre post); "
                    "it takes no [[gaps]]")
    """Why the family takes no ``[[gaps]]`` (the reader refuses them with it; the
    schema too)."""
    core_keys: tuple[str, ...] = ("radius", "wall", "post_radius", "hole_radius", "base",
                                  "height", "gap")
    turn_by_turn: bool = True
    """A winding may be drawn turn by turn ([winding.conductor]): each turn a
    ring region of its own beside the post (compare.design.geometry.turn_rects,
    the go side only: an r-z turn is the whole ring)."""
    parts: tuple[str, ...] = ()
    core_spec: dict[str, Key] = lengths(core_keys)
    """The ``[core]`` keys (compare.design.casekeys): the dimensions."""

    def read_core(self, t: TableReader) -> PotCoreDims:
        R = t.quantity("radius", "length")
        wall = t.quantity("wall", "length")
        r1 = t.quantity("post_radius", "length")
        r0 = t.quantity("hole_radius", "length", 0.0, positive=False)
        base = t.quantity("base", "length")
        height = t.quantity("height", "length")
        gap = t.quantity("gap", "length")
        if wall >= R:
            raise CaseError(t.key("wall"), t.raw("wall"),
                            f"the wall is as thick as the {R * 1e3:g} mm radius")
        if r1 >= R - wall:
            raise CaseError(t.key("post_radius"), t.raw("post_radius"),
                            f"the post fills the pot: it must be smaller than the wall's inner "
                            f"radius {(R - wall) * 1e3:g} mm")
        if r0 < 0 or r0 >= r1:
            raise CaseError(t.key("hole_radius"), t.raw("hole_radius"),
                            f"must be >= 0 and smaller than the {r1 * 1e3:g} mm post radius")
        if gap >= height:
            raise CaseError(t.key("gap"), t.raw("gap"),
                            f"the gap is not shorter than the {height * 1e3:g} mm window height")
        if gap >= r1 - r0:
            raise CaseError(t.key("gap"), t.raw("gap"),
                            f"the gap is not shorter than the post's {(r1 - r0) * 1e3:g} mm "
                            "face width: the fringing models do not hold")
        return PotCoreDims(R, wall, r1, r0, base, height, gap)

    def check_case(self, case: Any) -> None:
        for key, on in (("hand.leakage", case.hand.leakage),
                        ("hand.effective_parameters", case.hand.effective_parameters)):
            if on:
                raise CaseError(key, True, "not modelled for a pot core (its window leakage "
                                           "is always in its hand circuit): set it false")

    # ------------------------------------------------------------ geometry
    def limbs(self, c: PotCoreDims) -> dict[str, Limb]:
        top = c.base + c.height
        return {"post": Limb("post", "y", c.base, top, c.hole_radius, c.post_radius, INF,
                             c.radius - c.wall - c.post_radius, 0.0, top + c.base)}

    def core_rects(self, c: PotCoreDims) -> list[Rect]:
        R, r0, r1, b, h = c.radius, c.hole_radius, c.post_radius, c.base, c.height
        lo, hi = c.mid - 0.5 * c.gap, c.mid + 0.5 * c.gap
        return [Rect(r0, 0.0, R, b), Rect(r0, b + h, R, 2 * b + h), Rect(R - c.wall, b, R, b + h),
                Rect(r0, b, r1, lo), Rect(r0, hi, r1, b + h)]

    def part_rects(self, c: PotCoreDims) -> dict[str, list[Rect]]:
        return {}

    def mean_path(self, c: PotCoreDims) -> list[tuple[float, float]]:
        rp, rw = 0.5 * (c.hole_radius + c.post_radius), c.radius - 0.5 * c.wall
        zb, zt = 0.5 * c.base, 1.5 * c.base + c.height
        return [(rp, zb), (rp, zt), (rw, zt), (rw, zb), (rp, zb)]

    def segments(self, c: PotCoreDims) -> list[Segment]:
        return []

    def windows(self, c: PotCoreDims, limb: str) -> list[Window]:
        return []

    def effective_path(self, c: PotCoreDims) -> tuple[list, tuple[str, ...]]:
        raise CaseError("hand.effective_parameters", True, "not modelled for a pot core")

    # ------------------------------------------------------------ both models
    def core_model(self, case: Any) -> CoreModel:
        c: PotCoreDims = case.core
        r0, r1, b, h, g = c.hole_radius, c.post_radius, c.base, c.height, c.gap
        rw0 = c.radius - c.wall
        lo, hi = c.mid - 0.5 * g, c.mid + 0.5 * g
        regions = [Region("core", tuple(self.core_rects(c)), "core", kind="core"),
                   Region("gap", (Rect(r0, lo, r1, hi),), "air", kind="gap")]
        coils = []
        limb = self.limbs(c)["post"]
        for k, w in enumerate(case.windings):
            x0 = r1 + w.inner + w.clearance
            name = "coil" if k == 0 else f"coil{k}"
            if w.conductor is not None:  # the turns one by one: solid rings in series
                coils.append(turn_coil(limb, w, ((name, 1),), regions))
                continue
            regions.append(Region(name, (Rect(x0, c.mid - 0.5 * w.length, x0 + w.thickness,
                                              c.mid + 0.5 * w.length),), "air", kind="coil"))
            coils.append(CoilModel(((name, 1),), w.thickness * w.length))
        # the hand circuit; a positive current (+phi) drives flux up the post
        a_post = math.pi * (r1 ** 2 - r0 ** 2)
        a_wall = math.pi * (c.radius ** 2 - rw0 ** 2)
        r_post, r_wall = 0.5 * (r0 + r1), c.radius - 0.5 * c.wall
        half = 0.5 * (h - g)
        plate = radial_run(r_post, r_wall, b)
        segs = (CircuitSegment("post-lower", "pb", "g1", half + 0.5 * b, a_post),
                CircuitSegment("post-upper", "g2", "pt", half + 0.5 * b, a_post),
                CircuitSegment("top-plate", "pt", "wt", *plate),
                CircuitSegment("wall", "wt", "wb", h + b, a_wall),
                CircuitSegment("bottom-plate", "wb", "pb", *plate))
        window = rw0 - r1
        # the hole's side: its face runs on through the base plates to the outer
        # faces, and its room is the hole's radius (no flux crosses the axis)
        hole = half + b
        inner_room = r0 if r0 > 0 else INF
        # the post's side beside the gap that the gap's fringing takes: as far
        # as its tubes reach across the window, at most the side's length;
        # the window leakage takes the rest (the window counted once)
        reach = min(window, half)
        # free height G: the window's height (analytic.fringing.GapFace)
        face = GapFace.round(g, r0, r1, h,
                             GapSides((hole, hole), (reach, reach), (reach, reach),
                                      (inner_room, window)))
        gaps = (CircuitGap("gap", "g1", "g2", face),)
        spans = tuple((c.mid - 0.5 * w.length - b, c.mid + 0.5 * w.length - b, float(w.turns))
                      for w in case.windings)
        p_leak, _ = coil_space_leakage(r1, rw0, half - reach, half - reach, h, spans)
        windings = tuple(("post-lower", 1) for _ in case.windings)
        # (no branch when the fringing takes the whole window)
        leak = (("window-leakage", "g1", "g2", p_leak, window),) if p_leak > 0.0 else ()
        circuit = HandCircuit(segs, gaps, windings, "gap", "gap", leakage=leak)
        gap_line = GapLine((0.0, c.mid), (r1 + 0.5 * window, c.mid), 1, (r0, r1),
                           f"the post's gap ({g * 1e3:g} mm)")
        return CoreModel(
            symmetry="axisymmetric", depth=1.0, regions=tuple(regions),
            materials=(("core", "core"),), coils=tuple(coils), core_regions=("core",),
            gap_regions=("gap",), gap_region="gap", gap_direction=(0.0, 1.0),
            mean_path=tuple(self.mean_path(c)),
            flux_line=((rw0, c.mid), (c.radius, c.mid)),
            gap_line=gap_line, circuit=circuit)
