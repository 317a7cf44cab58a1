"""Geometry pieces shared by the core families: limbs, gaps, windings.

Coordinates are those of the planar cut (x to the right, y up, metres); the
stack depth is out of plane. A *limb* is a straight part of the core between
two yokes or corners; gaps cut across a limb's full width and coils sit
beside it. Families (window core, EI core, ...) describe their limbs with
:class:`Limb`, so gap and coil placement is written once.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import math

from magcheck.fem2d.layout import Rect

__all__ = ["Limb", "Gap", "WindingSpec", "ConductorSpec", "ACSpec", "Rect", "gap_rect",
           "coil_rects", "flux_direction", "turn_rects"]


@dataclass(frozen=True)
class Limb:
    """A straight limb of a core in the planar cut.

    Attributes
    ----------
    name : str
        Limb name as used in the case file ("left", "centre", ...).
    axis : str
        "x" or "y": the direction the flux runs along the limb.
    lo, hi : float
        Span of the limb's straight part along ``axis`` (m): the part
        beside the window, where gaps and coils may sit.
    c0, c1 : float
        Transverse extent of the limb (m), ``c1 - c0`` is its width.
    room_minus, room_plus : float
        Free room beside the limb on the ``c0`` and ``c1`` sides (m):
        the window width on a window side, ``inf`` outside the core.
    outer_lo, outer_hi : float, optional
        Extent of the core's outer boundary along ``axis`` (m): where a face
        of the limb that looks outside the core, and the stack's flat front
        and back faces, end (the outer corners).  Default: lo and hi.
    """

    name: str
    axis: str
    lo: float
    hi: float
    c0: float
    c1: float
    room_minus: float
    room_plus: float
    outer_lo: float | None = None
    outer_hi: float | None = None

    def face_run(self, side: str, start: float, end: float) -> tuple[float, float]:
        """How far the limb's ``side`` face ("minus", "plus" or "depth") runs
        beyond [start, end] along the axis: (toward lo, toward hi), in m.

        A face across a window ends at the yoke (lo, hi); a face outside the
        core and the stack's front and back faces end at the outer corners.
        """
        room = {"minus": self.room_minus, "plus": self.room_plus, "depth": math.inf}[side]
        lo, hi = self.lo, self.hi
        if math.isinf(room):
            lo = self.lo if self.outer_lo is None else self.outer_lo
            hi = self.hi if self.outer_hi is None else self.outer_hi
        return start - lo, hi - end

    @property
    def width(self) -> float:
        return self.c1 - self.c0

    @property
    def span(self) -> float:
        return self.hi - self.lo

    @property
    def centre(self) -> float:
        """Transverse coordinate of the limb's centre line (m)."""
        return 0.5 * (self.c0 + self.c1)

    def rect(self, a0: float, a1: float, t0: float, t1: float) -> Rect:
        """Rectangle spanning [a0, a1] along the limb and [t0, t1] across it."""
        if self.axis == "y":
            return Rect(t0, a0, t1, a1)
        return Rect(a0, t0, a1, t1)


@dataclass(frozen=True)
class Gap:
    """An air gap cutting across a limb.

    Attributes
    ----------
    limb : str
        Name of the limb it cuts.
    length : float
        Gap length along the flux (m).
    position : float
        Coordinate of the gap centre along the limb's axis (m).
    """

    limb: str
    length: float
    position: float


@dataclass(frozen=True)
class ConductorSpec:
    """The conductor of a winding drawn turn by turn (``[winding.conductor]``).

    kind : "foil" (one turn per layer, a strip ``thickness`` thick across the
        build and ``width`` along the limb) or "round" (wire of bare
        ``diameter``, enamel ``insulation`` build per side, ``turns_per_layer``
        along the limb).
    layers : layers across the coil build, the first on the limb side.
    layer_gap : insulation between successive layers (m).
    rho_ref, alpha, t_ref : resistivity (ohm m) and its temperature
        coefficient (1/K) at the reference temperature t_ref (degC);
        temperature : the operating temperature (degC).
    """

    kind: str
    layers: int
    turns_per_layer: int
    thickness: float = 0.0
    width: float = 0.0
    diameter: float = 0.0
    insulation: float = 0.0
    layer_gap: float = 0.0
    material: str = "copper"
    rho_ref: float = 1.724e-8
    alpha: float = 0.00393
    t_ref: float = 20.0
    temperature: float = 20.0

    @property
    def turns(self) -> int:
        return self.layers * self.turns_per_layer

    @property
    def side(self) -> float:
        """Side of the drawn square of one round turn (m): the equal-area square
        sqrt(pi)/2 d (Dowell's equivalent conductor); a foil's thickness."""
        return self.thickness if self.kind == "foil" else math.sqrt(math.pi) / 2.0 * self.diameter

    @property
    def area(self) -> float:
        """Copper cross-section of one turn (m^2)."""
        if self.kind == "foil":
            return self.thickness * self.width
        return math.pi / 4.0 * self.diameter ** 2

    @property
    def layer_build(self) -> float:
        """One layer's build across the coil (m): the foil, or the insulated wire."""
        return self.thickness if self.kind == "foil" else self.diameter + 2.0 * self.insulation

    @property
    def pitch(self) -> float:
        """Turn pitch along the limb (m): the insulated wire's diameter (foil: its width)."""
        return self.width if self.kind == "foil" else self.diameter + 2.0 * self.insulation

    @property
    def build(self) -> float:
        """The layers' total build across the coil space (m)."""
        return self.layers * self.layer_build + (self.layers - 1) * self.layer_gap

    @property
    def height(self) -> float:
        """The layers' extent along the limb (m)."""
        return self.width if self.kind == "foil" else self.turns_per_layer * self.pitch

    @property
    def resistivity(self) -> float:
        """rho(T) = rho_ref (1 + alpha (T - t_ref)) (ohm m; the linear law of
        IEC 60028 for copper, from memory)."""
        return self.rho_ref * (1.0 + self.alpha * (self.temperature - self.t_ref))

    @property
    def conductivity(self) -> float:
        return 1.0 / self.resistivity


@dataclass(frozen=True)
class ACSpec:
    """A sinusoidal current on a winding (``[winding.ac]``), on top of its DC
    ``current`` (the operating point).

    frequency : Hz.  current : the sinusoid's amplitude, peak (A).
    """

    frequency: float
    current: float


@dataclass(frozen=True)
class WindingSpec:
    """A winding around one limb, as the case gives it (the network's MMF
    source is :class:`analytic.network.Winding`, the field model's
    :class:`fem2d.sources.Coil`).

    Attributes
    ----------
    limb : str
        Limb it is wound on.
    turns : int
        Number of turns N (> 0).
    current : float
        Terminal current I (A); N*I is the MMF in ampere-turns.
    thickness : float
        Coil build across the limb (m), the same on both sides.
    length : float
        Coil length along the limb (m), centred on the limb's straight part.
    clearance : float
        Free space between the coil and what lies inside it (m): the limb's
        face, or the winding below it on the same limb; the bobbin wall and
        any air, the same on both sides (default 0: the coil on the limb).
    name : str
        The winding's name in reports ("main" for the one-winding shorthand).
    inner : float
        Build of the windings inside this one on the same limb, each with its
        clearance (m): concentric windings stack outward in case-file order.
    """

    limb: str
    turns: int
    current: float
    thickness: float
    length: float
    clearance: float = 0.0
    name: str = "main"
    inner: float = 0.0
    voltage: float | None = None
    """Sinusoidal drive, rms volts (None: driven by ``current``).  The
    winding's ``current`` is then the hand model's peak magnetizing current
    (compare.models.drive), the operating point of the check's other rows."""
    frequency: float | None = None
    """Of the voltage drive (Hz)."""
    residual_flux: float | None = None
    """Inrush estimate of a voltage-driven winding: the residual flux linkage
    at switch-on as a fraction of lambda_pk (None: no estimate)."""
    resistance: float | None = None
    """Series resistance of the driven winding and its source (ohm): damps the
    inrush estimate (None: undamped, an upper bound).  The magnetizing
    current neglects it."""
    conductor: ConductorSpec | None = None
    """The conductor drawn turn by turn (None: the coil is a uniform block)."""
    ac: ACSpec | None = None
    """A sinusoidal current on top of ``current`` (None: DC only)."""

    @property
    def driven(self) -> bool:
        """True when the winding is voltage-driven."""
        return self.voltage is not None

    @property
    def mmf(self) -> float:
        """Ampere-turns N*I (A)."""
        return self.turns * self.current


def flux_direction(limb: Limb) -> int:
    """+1 or -1: the direction along the limb's axis of the flux a positive
    current of a winding placed by :func:`coil_rects` drives in it."""
    return -1 if limb.axis == "y" else 1


def gap_rect(limb: Limb, gap: Gap) -> Rect:
    """Rectangle of a gap: across the limb's full width."""
    half = 0.5 * gap.length
    return limb.rect(gap.position - half, gap.position + half, limb.c0, limb.c1)


def coil_rects(limb: Limb, winding: WindingSpec) -> tuple[Rect, Rect]:
    """The two coil sides of a winding: (plus side, minus side).

    The plus side lies on the limb's ``c1`` side and carries +N*I out of the
    plane (+z); the minus side on the ``c0`` side carries -N*I.  Each starts
    ``inner + clearance`` away from the limb's face.  A positive current
    drives flux along -y in a limb along y and along +x in a limb along x
    (the right-hand rule with the plus side at the larger coordinate;
    :func:`flux_direction`).
    """
    mid = 0.5 * (limb.lo + limb.hi)
    a0, a1 = mid - 0.5 * winding.length, mid + 0.5 * winding.length
    c, t = winding.inner + winding.clearance, winding.thickness
    plus = limb.rect(a0, a1, limb.c1 + c, limb.c1 + c + t)
    minus = limb.rect(a0, a1, limb.c0 - c - t, limb.c0 - c)
    return plus, minus


def turn_rects(limb: Limb, winding: WindingSpec) -> tuple[tuple[tuple[int, int, Rect], ...],
                                                          tuple[tuple[int, int, Rect], ...]]:
    """The turns of a winding with a :class:`ConductorSpec`, on both coil
    sides: (plus side, minus side), each a tuple of (layer, turn, rect), layer
    1 next to the limb, turn 1 at the limb's ``lo`` end.

    Layers stack outward from ``inner + clearance`` off the limb's face,
    ``layer_gap`` apart; along the limb the layer is centred on the limb's
    straight part (as the coil of :func:`coil_rects`).  A foil layer is one
    rect ``thickness`` x ``width``; a round wire is drawn as its equal-area
    square (side sqrt(pi)/2 d, Dowell's equivalent conductor) centred in its
    insulated pitch: the field solution then tests the hand model's field
    assumptions (the gap's fringing field, the 2D ends) on the conductor
    the hand model itself uses, and straight edges mesh a skin-depth band
    far more cheaply than circles.
    """
    c = winding.conductor
    if c is None:
        raise ValueError("turn_rects: the winding has no conductor")
    mid = 0.5 * (limb.lo + limb.hi)
    start = mid - 0.5 * c.height
    base = winding.inner + winding.clearance
    plus, minus = [], []
    for i in range(c.layers):
        t0 = base + i * (c.layer_build + c.layer_gap) + 0.5 * (c.layer_build - c.side)
        t1 = t0 + c.side
        for j in range(c.turns_per_layer):
            if c.kind == "foil":
                a0, a1 = start, start + c.width
            else:
                centre = start + (j + 0.5) * c.pitch
                a0, a1 = centre - 0.5 * c.side, centre + 0.5 * c.side
            plus.append((i + 1, j + 1, limb.rect(a0, a1, limb.c1 + t0, limb.c1 + t1)))
            minus.append((i + 1, j + 1, limb.rect(a0, a1, limb.c0 - t1, limb.c0 - t0)))
    return tuple(plus), tuple(minus)
