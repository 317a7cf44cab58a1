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

from magcheck.fem2d.layout import Rect

__all__ = ["Limb", "Gap", "WindingSpec", "Rect", "gap_rect", "coil_rects", "flux_direction"]


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
