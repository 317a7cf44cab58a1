"""What both models are told about a case's core: the :class:`CoreModel`.

The field model (compare/models/fe.py) reads only this: the regions it meshes (core
parts, gaps, coil sides), the materials they take, the coils of the
windings, and where it measures each hand quantity (the gap region, the
core regions, the mean path, the line across the winding's limb).  The
hand model reads the core's magnetic circuit from it when the family
gives one explicitly (:class:`HandCircuit`, a core the user draws and
whose hand calculation the user writes); otherwise it builds the network
from the family's mean-path segments (compare/models/hand.py).

A family either builds its CoreModel itself (an optional method
``core_model(case)``) or describes limbs, segments and part rectangles,
from which :func:`core_model` builds it here (the rectangular families).
No module names a family.  ``case`` arguments are compare.design.case.Case, typed
Any: the families import this module and compare.design.case imports the families.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache
from typing import Any

from magcheck.analytic.fringing import GapFace
from magcheck.analytic.network import MagnetBranch
from magcheck.fem2d.layout import Region
from magcheck.fem2d.sources import Magnet

from .geometry import Limb, coil_rects, gap_rect, turn_rects


__all__ = ["CoreModel", "CoilModel", "GapLine", "HandCircuit", "CircuitSegment", "CircuitGap",
           "ForceSpec",
           "core_model", "comparison_forms", "coil_name", "coil_regions", "turn_coil", "WINDING", "COIL_PLUS", "COIL_MINUS"]

Point = tuple[float, float]

WINDING = "winding"
"""Name of the case's (first) winding as a fem2d coil."""

COIL_PLUS, COIL_MINUS = "coil+", "coil-"


def turn_coil(limb: Limb, winding: Any, sides: tuple[tuple[str, int], ...],
              regions: list) -> "CoilModel":
    """A winding drawn turn by turn as solid conductors in series: one region
    per turn appended to ``regions`` (named ``<side>L<layer>T<turn>``), the
    j-th of ``sides`` = (name, sign) taking the j-th side of
    compare.design.geometry.turn_rects (a planar family its two coil sides,
    an r-z family one ring side); the winding's CoilModel."""
    turn_sides, layers = [], []
    for (side_name, sign), turns in zip(sides, turn_rects(limb, winding)):
        for layer, turn, rect in turns:
            name = f"{side_name}L{layer}T{turn}"
            regions.append(Region(name, (rect,), material="air", kind="coil"))
            turn_sides.append((name, sign))
            layers.append((name, layer))
    return CoilModel(tuple(turn_sides), winding.turns * winding.conductor.area,
                     turn_regions=True, layers=tuple(layers))


def coil_name(k: int) -> str:
    """The fem2d coil of winding ``k``: "winding", then "winding1", ..."""
    return WINDING if k == 0 else f"{WINDING}{k}"


def coil_regions(k: int) -> tuple[str, str]:
    """The (go, return) coil-side regions of winding ``k`` in a limb
    family: "coil+"/"coil-" for the first, "coil1+"/"coil1-", ... after it."""
    return (COIL_PLUS, COIL_MINUS) if k == 0 else (f"coil{k}+", f"coil{k}-")


@dataclass(frozen=True)
class CoilModel:
    """A winding as the field model's coil.

    sides : (region, +1 or -1) pairs: +1 carries +N I out of the plane (+z;
        +phi in r-z), -1 the return.
    area : the cross-section of one go side (m^2), for the current density.
    """

    sides: tuple[tuple[str, int], ...]
    area: float
    turn_regions: bool = False
    """True when each side region is one turn (a winding drawn turn by turn,
    ``[winding.conductor]``): each carries the current once, not N times;
    ``area`` is then the copper of the go turns."""
    layers: tuple[tuple[str, int], ...] = ()
    """With ``turn_regions``: (region, layer number, 1 next to the limb)."""

    @property
    def go(self) -> tuple[str, ...]:
        return tuple(r for r, s in self.sides if s > 0)

    @property
    def back(self) -> tuple[str, ...]:
        return tuple(r for r, s in self.sides if s < 0)


@dataclass(frozen=True)
class GapLine:
    """A line across the first gap, for the figure of B across it.

    start, end : points (m); the line runs start -> end.
    component : 0 or 1: the B component along the gap's flux.
    faces : positions of the pole-face edges in the line's coordinate
        (``offset`` + the distance from its start, m).
    label : what the line crosses, for the title.
    offset : the coordinate of the start (m; a limb's transverse coordinate).
    """

    start: Point
    end: Point
    component: int
    faces: tuple[float, ...]
    label: str
    offset: float = 0.0


@dataclass(frozen=True)
class CircuitSegment:
    """A core branch of a hand circuit: mean length (m), area (m^2), and the
    ``[materials]`` entry it takes; ``on_path`` when core B and path H average it."""

    name: str
    node_a: str
    node_b: str
    length: float
    area: float
    material: str = "core"
    on_path: bool = True


@dataclass(frozen=True)
class CircuitGap:
    """A gap branch of a hand circuit: its face for the fringing model
    (``fringing`` None = the case's ``[hand] fringing``)."""

    name: str
    node_a: str
    node_b: str
    face: GapFace
    fringing: str | None = None
    stroke_faces: tuple[GapFace, GapFace, GapFace, GapFace] | None = None
    """The face at the stroke plus (-2, -1, 1, 2) small steps, when the
    stroke moves more than the gap's length (a plunger's side shrinks as its
    face withdraws): the network's dP/dstroke is then the fourth-order
    central difference of the faces' permeances, free sides included, not
    dP/dg at fixed sides."""


@dataclass(frozen=True)
class HandCircuit:
    """A magnetic circuit given explicitly (the user's own hand model).

    windings : per winding in case order, (segment or gap name, +1 or -1):
        where its MMF acts and whether along the branch's a -> b sense.
    gap_B : the gap whose B is reported as gap B (None: no gap B).
    flux_branch : the branch whose flux is reported as the winding's flux.
    """

    segments: tuple[CircuitSegment, ...]
    gaps: tuple[CircuitGap, ...]
    windings: tuple[tuple[str, int], ...]
    gap_B: str | None
    flux_branch: str
    magnets: tuple[MagnetBranch, ...] = ()
    """The circuit's magnets, as the network takes them (magnetised a -> b)."""
    leakage: tuple[tuple[str, str, str, float, float], ...] = ()
    """Linear paths of a fixed permeance: leakage, a sliding gap (name, node
    a, node b, permeance Wb/A, length m)."""
    leakage_rates: tuple[tuple[str, float], ...] = ()
    """(leakage path, dP/dstroke in Wb/A per m) for the linear paths that the
    moving part's stroke changes: their -(1/2) F^2 dP/dstroke adds to the
    network's virtual-work force."""
    segment_rates: tuple[tuple[str, float], ...] = ()
    """(core segment, dlength/dstroke, dimensionless) for the iron segments
    whose length the stroke changes (a plunger that lengthens in the circuit
    as its gap closes): at constant current a core branch's co-energy
    A L w'(F/L) changes with its length, at a fixed MMF drop F, by -A w(B)
    per metre (w the energy density), so each adds (W_seg / L_seg) x rate
    to the closing force (compare.models.hand.hand_forces)."""


@dataclass(frozen=True)
class ForceSpec:
    """A moving part: the force on it along its stroke.

    body : the regions that move together (core parts, magnets).
    direction : unit vector of the motion that closes its working gaps; the
        force is reported along it (positive: it pulls the gaps shut).
    gaps : the hand circuit's gaps that this motion shortens one for one.
    """

    body: tuple[str, ...]
    direction: Point
    gaps: tuple[str, ...]
    stroke_key: str | None = None
    """The case key of the stroke (a sweep's ``--vary`` key, e.g. "core.stroke";
    None when the geometry has none to vary)."""
    stroke: float = float("nan")
    """The case's stroke (m)."""


@dataclass(frozen=True)
class CoreModel:
    """A case's core as the field model meshes and measures it.

    Attributes
    ----------
    symmetry : "planar" (a stack of ``depth``) or "axisymmetric" (r-z, x = r).
    depth : stack depth (m); 1 for axisymmetric.
    regions : fem2d regions (core parts, gaps, coil sides), in priority order.
    materials : (fem2d material key, ``[materials]`` entry) for every
        region material that is not air.
    coils : per winding, in case order.
    core_regions : the regions peak B is taken over, and core B (the mean
        |B| along ``mean_path`` over its points in them; without a path the
        mean over their area).
    gap_regions : regions left out of the path-averaged H (the gaps).
    gap_region, gap_direction : where gap B is measured, and the direction
        of the component taken (None: no gap B).
    mean_path : the polyline of the path-averaged H (None: not measured).
    flux_line : a segment across the winding's limb, the flux through it
        (None: not measured).
    gap_line : for the figure of B across the first gap (None: no figure).
    circuit : the hand circuit, when the family gives it explicitly.
    magnets : permanent magnets (fem2d sources), by region.
    force : the moving part, when the case has one.
    """

    symmetry: str
    depth: float
    regions: tuple[Region, ...]
    materials: tuple[tuple[str, str], ...]
    coils: tuple[CoilModel, ...]
    core_regions: tuple[str, ...]
    gap_regions: tuple[str, ...] = ()
    gap_region: str | None = None
    gap_direction: Point | None = None
    mean_path: tuple[Point, ...] | None = None
    flux_line: tuple[Point, Point] | None = None
    gap_line: GapLine | None = None
    circuit: HandCircuit | None = None
    magnets: tuple[Magnet, ...] = ()
    force: ForceSpec | None = None
    magnet_knees: tuple[tuple[str, float], ...] = ()
    """(magnet region, knee field H_k in A/m, < 0) where the grade gives one."""

    @property
    def sourceless_at_zero_current(self) -> bool:
        """True when every field vanishes with the winding currents (no magnet)."""
        return not self.magnets

    @property
    def axisymmetric(self) -> bool:
        return self.symmetry == "axisymmetric"


def comparison_forms(case: Any) -> tuple[str, str]:
    """How the case's two models are labelled side by side: (hand form, FE
    form), ("planar form", "planar FE") or, for an r-z case, whose hand
    model is the whole 3D circuit, ("whole circuit", "axisymmetric FE")."""
    if core_model(case).axisymmetric:
        return "whole circuit", "axisymmetric FE"
    return "planar form", "planar FE"


def core_model(case: Any) -> CoreModel:
    """The case's CoreModel: the family's own (``family.core_model``) or the
    one built from its limbs and part rectangles.

    Both models, the check and the margins ask for it many times per case;
    it is built once per (equal) case and shared (it is immutable, and it
    depends on the case's fields only, not on its materials' laws)."""
    return _core_model(case)


@lru_cache(maxsize=64)
def _core_model(case: Any) -> CoreModel:
    own = getattr(case.family_model, "core_model", None)
    if own is not None:
        return own(case)
    return _limb_model(case)


def _limb_flux_line(limb: Limb) -> tuple[Point, Point]:
    """A segment across a limb at the middle of its straight part."""
    mid = 0.5 * (limb.lo + limb.hi)
    if limb.axis == "y":
        return (limb.c0, mid), (limb.c1, mid)
    return (mid, limb.c0), (mid, limb.c1)


def _limb_model(case: Any) -> CoreModel:
    fam = case.family_model
    limbs = case.limbs
    overrides = case.part_overrides
    if overrides:  # parts of their own material: regions core-PART
        parts = fam.part_rects(case.core)
        rest = [r for p, rects in parts.items() if p not in overrides for r in rects]
        regions = [Region("core", tuple(rest), material="core", kind="core")] if rest else []
        regions += [Region(f"core-{p}", tuple(parts[p]), material=f"core-{p}", kind="core")
                    for p in overrides]
    else:
        regions = [Region("core", tuple(fam.core_rects(case.core)), material="core", kind="core")]
    cores = tuple(r.name for r in regions)
    materials = tuple((r.material, "core" if r.material == "core" else r.material[5:])
                      for r in regions)
    gap_names = []
    for i, gap in enumerate(case.gaps):
        regions.append(Region(f"gap{i}", (gap_rect(limbs[gap.limb], gap),), material="air",
                              kind="gap"))
        gap_names.append(f"gap{i}")
    coils = []
    for k, w in enumerate(case.windings):
        p_name, m_name = coil_regions(k)
        if w.conductor is not None:  # the turns one by one: solid conductors in series
            coils.append(turn_coil(limbs[w.limb], w, ((p_name, 1), (m_name, -1)), regions))
            continue
        plus, minus = coil_rects(limbs[w.limb], w)
        regions.append(Region(p_name, (plus,), material="air", kind="coil"))
        regions.append(Region(m_name, (minus,), material="air", kind="coil"))
        coils.append(CoilModel(((p_name, 1), (m_name, -1)), w.thickness * w.length))
    gap_dir, gap_line = None, None
    if case.gaps:
        g0 = case.gaps[0]
        limb = limbs[g0.limb]
        gap_dir = (0.0, 1.0) if limb.axis == "y" else (1.0, 0.0)
        t0, t1 = limb.c0 - limb.width, limb.c1 + limb.width
        if limb.axis == "y":
            start, end, comp = (t0, g0.position), (t1, g0.position), 1
        else:
            start, end, comp = (g0.position, t0), (g0.position, t1), 0
        gap_line = GapLine(start, end, comp, (limb.c0, limb.c1),
                           f"the {g0.limb} limb ({g0.length * 1e3:g} mm)", offset=t0)
    path = tuple((float(x), float(y)) for x, y in fam.mean_path(case.core))
    return CoreModel(
        symmetry="planar", depth=case.depth, regions=tuple(regions), materials=materials,
        coils=tuple(coils), core_regions=cores, gap_regions=tuple(gap_names),
        gap_region=gap_names[0] if gap_names else None, gap_direction=gap_dir,
        mean_path=path, flux_line=_limb_flux_line(limbs[case.winding.limb]), gap_line=gap_line)
