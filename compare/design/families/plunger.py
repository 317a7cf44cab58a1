"""The ``plunger`` family (axisymmetric): an iron-clad solenoid with a fixed
stop and a moving plunger.

In r-z (r = x, z = y), from the bottom outer face z = 0 (invented for the
demo in its case file)::

    [core]  radius, shell (the shell's wall), plate (both end plates),
            length (outer face to outer face), plunger_radius, sliding_gap
            (radial, plunger to bore), stop_length (the stop below the top
            plate), plunger_length, stroke (the working gap)

The shell R - shell < r < R between the plates; the top plate r < R at the
top; the stop r < plunger_radius hanging stop_length from it; the bottom
plate from the bore (plunger_radius + sliding_gap) to R; the plunger
r < plunger_radius with its flat face ``stroke`` below the stop's, running
down through the bore and out of the bottom plate.  The winding
(``[winding] limb = "plunger"``) sits in the annulus between the bore and
the shell, centred between the plates (an r-z coil has one go side).

Hand model, round the loop plunger (up) - working gap - stop - top plate
(radially out) - shell (down) - bottom plate (radially in) - sliding gap:

* the working gap over the plunger's disc face with the case's fringing
  model (analytic.fringing round faces; free faces: the plunger's side below
  the gap and the stop's above, as far as the coil space's radial room (the
  tubes' reach across it), room across: the coil space; free height G: the
  coil space's height);
* the sliding gap as the coaxial annulus over the plate's thickness t,
  P = 2 pi mu0 t / ln(r_bore / r_plunger) (exact for the radial field of a
  coaxial annulus; its end fringing neglected);
* the plates as radial flux tubes between mean radii (exact reluctance
  ln(r2/r1) / (2 pi mu t), as in the holding-magnet family);
* the leakage across the coil space, plunger side and stop side to the
  shell, in parallel with the working gap: with ideal iron the plunger and
  the stop sit at the potentials of the plates they touch, so the potential
  difference across the coil space at height z is the MMF the winding
  encloses between that plate and z, N I f(z) beside the plunger and
  N I (1 - f(z)) beside the stop, f(z) the fraction of the turns below z.
  A coaxial annulus of length dz has permeance P' dz, P' = 2 pi mu0 /
  ln(r_shell / r_plunger); its energy over the plunger's side l_p and the
  stop's l_s, less the stretch t beside the gap that the gap's fringing
  takes (the coil space counted once), gives the energy-equivalent
  permeance under N I of
  families.base.coil_space_leakage (P' (l_p^3 + l_s^3) / (3 h^2) for a
  winding filling the coil space's height h) [derived here; common
  practice, no source].  The stroke shortens l_p one for one, so its
  dP/dstroke (-P' f(l_p - t)^2 while t is the room) enters the network's
  virtual-work force beside the working gap's, whose own rate follows its
  whole face: the gap longer and the plunger's free side shorter
  (``CircuitGap.stroke_faces``), and beside the plunger's segment, which
  lengthens one for one (``HandCircuit.segment_rates``).

The flux row is the working gap's (its fringing included): the field model
measures it down the shell at the gap's height, where the leakage paths
(plunger side to shell below, shell to stop side above) have closed.

The moving body is the plunger; the force is reported along its closing
motion (+z).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from magcheck.analytic.constants import mu_0
from magcheck.analytic.fringing import GapFace, GapSides
from magcheck.fem2d.layout import Rect, Region

from ..coremodel import (CircuitGap, CircuitSegment, CoilModel, CoreModel, ForceSpec, GapLine,
                         HandCircuit, turn_coil)
from ...errors import CaseError
from ..geometry import Limb
from ..casekeys import Key, lengths
from ..reader import TableReader
from .base import INF, Segment, Window, check_stroke_case, coil_space_leakage, radial_run

__all__ = ["Plunger", "PlungerDims"]


@dataclass(frozen=True)
class PlungerDims:
    """An iron-clad plunger solenoid (m); z from the bottom outer face."""

    radius: float
    shell: float
    plate: float
    length: float
    plunger_radius: float
    sliding_gap: float
    stop_length: float
    plunger_length: float
    stroke: float

    @property
    def bore(self) -> float:
        """The bottom plate's bore radius (m)."""
        return self.plunger_radius + self.sliding_gap

    @property
    def stop_face(self) -> float:
        """z of the stop's face (m)."""
        return self.length - self.plate - self.stop_length

    @property
    def plunger_top(self) -> float:
        """z of the plunger's face (m)."""
        return self.stop_face - self.stroke

    @property
    def plunger_bottom(self) -> float:
        return self.plunger_top - self.plunger_length


class Plunger:
    """``plunger``: iron-clad solenoid, fixed stop, plunger through a bore."""

    name: str = "plunger"
    limb_names: tuple[str, ...] = ("plunger",)
    winding_limbs: tuple[str, ...] = ("plunger",)
    no_gaps: str = ("a plunger solenoid's working gaps are its stroke ([core] stroke); "
                    "it takes no [[gaps]]")
    """Why the family takes no ``[[gaps]]`` (the reader refuses them with it; the
    schema too)."""
    core_keys: tuple[str, ...] = ("radius", "shell", "plate", "length", "plunger_radius",
                                  "sliding_gap", "stop_length", "plunger_length", "stroke")
    parts: tuple[str, ...] = ("plunger",)
    turn_by_turn: bool = True
    """A winding may be drawn turn by turn ([winding.conductor]): each turn a
    ring region of its own in the bobbin (compare.design.geometry.turn_rects,
    the go side only: an r-z turn is the whole ring)."""
    core_spec: dict[str, Key] = lengths(core_keys)
    """The ``[core]`` keys (compare.design.casekeys): the dimensions."""

    def read_core(self, t: TableReader) -> PlungerDims:
        R = t.quantity("radius", "length")
        shell = t.quantity("shell", "length")
        plate = t.quantity("plate", "length")
        length = t.quantity("length", "length")
        rp = t.quantity("plunger_radius", "length")
        slide = t.quantity("sliding_gap", "length")
        stop = t.quantity("stop_length", "length")
        lp = t.quantity("plunger_length", "length")
        stroke = t.quantity("stroke", "length")
        if shell >= R:
            raise CaseError(t.key("shell"), t.raw("shell"),
                            f"the shell is as thick as the {R * 1e3:g} mm radius")
        if rp + slide >= R - shell:
            raise CaseError(t.key("plunger_radius"), t.raw("plunger_radius"),
                            f"the plunger and its sliding gap fill the shell: their "
                            f"{(rp + slide) * 1e3:g} mm must be less than the shell's inner "
                            f"radius {(R - shell) * 1e3:g} mm")
        if slide >= rp:
            raise CaseError(t.key("sliding_gap"), t.raw("sliding_gap"),
                            "the sliding gap must be smaller than the plunger's radius")
        if 2 * plate >= length:
            raise CaseError(t.key("plate"), t.raw("plate"),
                            f"two end plates fill the {length * 1e3:g} mm length")
        dims = PlungerDims(R, shell, plate, length, rp, slide, stop, lp, stroke)
        room = length - 2 * plate
        if stop >= room:
            raise CaseError(t.key("stop_length"), t.raw("stop_length"),
                            f"the stop reaches the bottom plate: it must be shorter than the "
                            f"{room * 1e3:g} mm between the plates")
        if stroke >= rp:
            raise CaseError(t.key("stroke"), t.raw("stroke"),
                            f"the working gap is not shorter than the plunger's "
                            f"{rp * 1e3:g} mm radius: the fringing models do not hold")
        if dims.plunger_top <= plate:
            raise CaseError(t.key("stroke"), t.raw("stroke"),
                            f"the plunger's face would sink into the bottom plate: the stroke "
                            f"must be less than {(dims.stop_face - plate) * 1e3:g} mm")
        if dims.plunger_bottom > 0.0:
            raise CaseError(t.key("plunger_length"), t.raw("plunger_length"),
                            f"the plunger must run through the bottom plate: at this stroke "
                            f"it needs at least {dims.plunger_top * 1e3:g} mm")
        return dims

    def check_case(self, case: Any) -> None:
        check_stroke_case(case, "plunger solenoid")

    # ------------------------------------------------------------ geometry
    def limbs(self, c: PlungerDims) -> dict[str, Limb]:
        # the coil's room: from the bore to the shell, between the plates
        return {"plunger": Limb("plunger", "y", c.plate, c.length - c.plate, 0.0, c.bore, INF,
                                c.radius - c.shell - c.bore, 0.0, c.length)}

    def _rects(self, c: PlungerDims) -> dict[str, list[Rect]]:
        R, H, t = c.radius, c.length, c.plate
        return {
            "frame": [Rect(c.bore, 0.0, R, t), Rect(R - c.shell, t, R, H - t),
                      Rect(0.0, H - t, R, H), Rect(0.0, c.stop_face, c.plunger_radius, H - t)],
            "plunger": [Rect(0.0, c.plunger_bottom, c.plunger_radius, c.plunger_top)],
        }

    def core_rects(self, c: PlungerDims) -> list[Rect]:
        r = self._rects(c)
        return [*r["frame"], *r["plunger"]]

    def part_rects(self, c: PlungerDims) -> dict[str, list[Rect]]:
        return {"plunger": self._rects(c)["plunger"]}

    def mean_path(self, c: PlungerDims) -> list[tuple[float, float]]:
        rp, rs = 0.5 * c.plunger_radius, c.radius - 0.5 * c.shell
        zb, zt = 0.5 * c.plate, c.length - 0.5 * c.plate
        return [(rp, zb), (rp, zt), (rs, zt), (rs, zb), (rp, zb)]

    def segments(self, c: PlungerDims) -> list[Segment]:
        return []

    def windows(self, c: PlungerDims, limb: str) -> list[Window]:
        return []

    def eddy_rod(self, case: Any, part: str) -> tuple[float, float] | None:
        """(radius, length) (m) of the plunger as a round rod in an axial
        field, for the hand estimate of its eddy loss
        (compare.models.ac.hand_part_loss): the flux runs the plunger from
        its face down to the bottom plate, where it leaves radially across
        the sliding gap over the plate's thickness, so the length is face to
        the plate's mid-thickness (the part below carries none); None for a
        part that is not the plunger alone ("core": the frame's parts are
        not rods)."""
        if part != "plunger":
            return None
        c: PlungerDims = case.core
        return c.plunger_radius, c.plunger_top - max(c.plunger_bottom, 0.5 * c.plate)

    def effective_path(self, c: PlungerDims) -> tuple[list, tuple[str, ...]]:
        raise CaseError("hand.effective_parameters", True, "not modelled for a plunger solenoid")

    # ------------------------------------------------------------ both models
    def core_model(self, case: Any) -> CoreModel:
        c: PlungerDims = case.core
        own = "plunger" in case.part_overrides
        rects = self._rects(c)
        rp, t, H = c.plunger_radius, c.plate, c.length
        regions = [Region("core", tuple(rects["frame"]), "core", kind="core"),
                   Region("plunger", tuple(rects["plunger"]), "core-plunger" if own else "core",
                          kind="core"),
                   Region("gap", (Rect(0.0, c.plunger_top, rp, c.stop_face),), "air", kind="gap"),
                   Region("gap-slide", (Rect(rp, 0.0, c.bore, t),), "air", kind="gap")]
        materials = [("core", "core")] + ([("core-plunger", "plunger")] if own else [])
        limb = self.limbs(c)["plunger"]
        mid = 0.5 * (limb.lo + limb.hi)
        coils = []
        for k, w in enumerate(case.windings):
            r0 = c.bore + w.inner + w.clearance
            name = "coil" if k == 0 else f"coil{k}"
            if w.conductor is not None:  # the turns one by one: solid rings in series
                coils.append(turn_coil(limb, w, ((name, 1),), regions))
                continue
            regions.append(Region(name, (Rect(r0, mid - 0.5 * w.length, r0 + w.thickness,
                                              mid + 0.5 * w.length),), "air", kind="coil"))
            coils.append(CoilModel(((name, 1),), w.thickness * w.length))
        # the hand circuit; a positive current (+phi) drives flux up the plunger
        # and down the shell, where every winding's MMF is put
        rs_in = c.radius - c.shell
        a_core = math.pi * rp ** 2
        a_shell = math.pi * (c.radius ** 2 - rs_in ** 2)
        r_mid = c.radius - 0.5 * c.shell
        segs = (CircuitSegment("plunger", "pb", "pf", c.plunger_top - 0.5 * t, a_core,
                               material="plunger" if own else "core"),
                CircuitSegment("stop", "sf", "tp", c.stop_length + 0.5 * t, a_core),
                CircuitSegment("top-plate", "tp", "ts", *radial_run(0.5 * rp, r_mid, t)),
                CircuitSegment("shell", "ts", "bs", H - t, a_shell),
                CircuitSegment("bottom-plate", "bs", "bb", *radial_run(c.bore, r_mid, t)))
        l_p, l_s = c.plunger_top - t, c.stop_length  # side faces facing the coil space
        room = rs_in - rp

        spans = tuple((mid - 0.5 * w.length - t, mid + 0.5 * w.length - t, float(w.turns))
                      for w in case.windings)

        def reach(lp: float) -> float:
            # the sides' stretch beside the gap that its fringing takes: as far
            # as the tubes reach across the coil space (its radial room), at
            # most the shorter side; the coil-space leakage takes the rest
            return min(room, lp, l_s)

        def face_at(stroke: float) -> GapFace:
            # the plunger's side shrinks one for one as its face withdraws
            lp = l_p + c.stroke - stroke
            r = reach(lp)
            # free height G: the coil space's height (analytic.fringing.GapFace)
            return GapFace.round(stroke, 0.0, rp, H - 2 * t,
                                 GapSides((r, r), (r, r), (r, r), (INF, room)))

        def leak_at(stroke: float) -> float:
            lp = l_p + c.stroke - stroke
            r = reach(lp)
            return coil_space_leakage(rp, rs_in, lp - r, l_s - r, H - 2 * t, spans)[0]

        step = 1e-3 * c.stroke  # as analytic.fringing.gap_permeance_derivative's
        f0, f1, f2, f3 = (face_at(c.stroke + k * step) for k in (-2, -1, 1, 2))
        gaps = (CircuitGap("gap", "pf", "sf", face_at(c.stroke), stroke_faces=(f0, f1, f2, f3)),)
        p_slide = 2 * math.pi * mu_0 * t / math.log(c.bore / rp)
        p_leak = leak_at(c.stroke)
        # its rate with the stroke, by the same fourth-order difference as the gap's
        l0, l1, l2, l3 = (leak_at(c.stroke + k * step) for k in (-2, -1, 1, 2))
        dp_leak = (8.0 * (l2 - l1) - (l3 - l0)) / (12.0 * step)
        windings = tuple(("shell", 1) for _ in case.windings)
        # (no coil-space branch when the gap's fringing takes the whole space)
        leak = (("coil-space-leakage", "pf", "sf", p_leak, room),) if p_leak > 0.0 else ()
        circuit = HandCircuit(segs, gaps, windings, "gap", "gap",
                              leakage=(("sliding-gap", "bb", "pb", p_slide, c.sliding_gap),
                                       *leak),
                              leakage_rates=(("coil-space-leakage", dp_leak),) if leak else (),
                              # the plunger's segment runs to its face: it lengthens one for
                              # one as the gap closes
                              segment_rates=(("plunger", -1.0),))
        y_gap = c.plunger_top + 0.5 * c.stroke
        gap_line = GapLine((0.0, y_gap), (2 * rp, y_gap), 1, (rp,),
                           f"the working gap ({c.stroke * 1e3:g} mm)")
        return CoreModel(
            symmetry="axisymmetric", depth=1.0, regions=tuple(regions),
            materials=tuple(materials), coils=tuple(coils), core_regions=("core", "plunger"),
            gap_regions=("gap", "gap-slide"), gap_region="gap", gap_direction=(0.0, 1.0),
            mean_path=tuple(self.mean_path(c)),
            flux_line=((rs_in, y_gap), (c.radius, y_gap)),
            gap_line=gap_line, circuit=circuit,
            force=ForceSpec(("plunger",), (0.0, 1.0), ("gap",),
                            stroke_key="core.stroke", stroke=c.stroke))

