"""Core families: how a case's ``[core]`` table becomes limbs, shapes and a path.

A family is a small object registered in :data:`FAMILIES` by name. It reads
its dimensions, and describes the core to both models: the limbs (for gaps
and coils), the core's rectangles (for the field model) and the mean-path
skeleton of segments (for the magnetic-circuit model). New families
(axisymmetric pot cores, plunger actuators) add an entry here; nothing else
switches on the family name.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any, Protocol

from .errors import CaseError
from .geometry import Limb, Rect
from .reader import TableReader

__all__ = ["Segment", "Window", "Family", "FAMILIES", "WindowCore", "EICore", "get_family"]

INF = math.inf


@dataclass(frozen=True)
class Segment:
    """One stretch of the core's mean path, between two network nodes.

    Attributes
    ----------
    name : str
        Branch name in the network and in reports.
    node_a, node_b : str
        End nodes; flux is counted positive from a to b.
    length : float
        Mean-path length (m), including any gap in it.
    area : float
        Core cross-section (m^2), limb width times stack depth.
    limb : str
        Case-file limb name this segment runs along (gaps and windings on
        that limb are placed in this segment).
    on_path : bool
        True when the segment belongs to the closed mean path through the
        winding that path-averaged quantities use.
    """

    name: str
    node_a: str
    node_b: str
    length: float
    area: float
    limb: str
    on_path: bool = True


@dataclass(frozen=True)
class Window:
    """A winding window beside a limb, for the leakage across it.

    width : from the limb's face to the facing limb's face (m).
    facing : the limb across the window.
    lo_side : limbs (yokes) the return loop of the leakage runs along at the
        lo end of the winding limb: their gaps are always crossed.
    lo_segments : the network segments of that return (their iron's MMF
        drop is always crossed); default: the lo_side limbs' segments.
    """

    width: float
    facing: str
    lo_side: tuple[str, ...] = ()
    lo_segments: tuple[str, ...] | None = None


class Family(Protocol):
    """What a core family provides. Lengths in m, areas in m^2."""

    name: str
    limb_names: tuple[str, ...]
    winding_limbs: tuple[str, ...]

    def read_core(self, t: TableReader) -> Any: ...

    def limbs(self, core: Any) -> dict[str, Limb]: ...

    def core_rects(self, core: Any) -> list[Rect]: ...

    def segments(self, core: Any) -> list[Segment]: ...

    def mean_path(self, core: Any) -> list[tuple[float, float]]: ...

    def windows(self, core: Any, limb: str) -> list[Window]: ...

    def effective_path(self, core: Any) -> tuple[list[tuple[str, float, float]], tuple[str, ...]]: ...


# ---------------------------------------------------------------------------
@dataclass(frozen=True)
class WindowCoreDims:
    """A rectangular core with one rectangular window.

    The outer rectangle is [0, outer_width] x [0, outer_height]; the limbs
    have widths ``left``, ``right``, ``top``, ``bottom``; ``depth`` is the
    stack depth out of the plane. All in metres.
    """

    outer_width: float
    outer_height: float
    left: float
    right: float
    top: float
    bottom: float
    depth: float

    @property
    def window_width(self) -> float:
        return self.outer_width - self.left - self.right

    @property
    def window_height(self) -> float:
        return self.outer_height - self.top - self.bottom


class WindowCore:
    """``window-core``: rectangular frame, one window, four limbs."""

    name: str = "window-core"
    limb_names: tuple[str, ...] = ("left", "right", "top", "bottom")
    winding_limbs: tuple[str, ...] = limb_names

    def read_core(self, t: TableReader) -> WindowCoreDims:
        ow = t.quantity("outer_width", "length")
        oh = t.quantity("outer_height", "length")
        depth = t.quantity("depth", "length")
        raw = t.raw("limb_width")
        if isinstance(raw, dict):
            lt = TableReader(raw, t.key("limb_width"))
            widths = {n: lt.quantity(n, "length") for n in self.limb_names}
            lt.finish()
        else:
            w = t.quantity("limb_width", "length")
            widths = dict.fromkeys(self.limb_names, w)
        dims = WindowCoreDims(ow, oh, widths["left"], widths["right"], widths["top"],
                              widths["bottom"], depth)
        if dims.window_width <= 0:
            raise CaseError(t.key("limb_width"), raw,
                            f"left + right limbs ({(dims.left + dims.right) * 1e3:g} mm) leave no "
                            f"window in outer_width {ow * 1e3:g} mm")
        if dims.window_height <= 0:
            raise CaseError(t.key("limb_width"), raw,
                            f"top + bottom limbs ({(dims.top + dims.bottom) * 1e3:g} mm) leave no "
                            f"window in outer_height {oh * 1e3:g} mm")
        return dims

    def limbs(self, c: WindowCoreDims) -> dict[str, Limb]:
        ww, wh = c.window_width, c.window_height
        y_lo, y_hi = c.bottom, c.outer_height - c.top
        x_lo, x_hi = c.left, c.outer_width - c.right
        W, H = c.outer_width, c.outer_height
        return {
            "left": Limb("left", "y", y_lo, y_hi, 0.0, c.left, INF, ww, 0.0, H),
            "right": Limb("right", "y", y_lo, y_hi, x_hi, W, ww, INF, 0.0, H),
            "bottom": Limb("bottom", "x", x_lo, x_hi, 0.0, c.bottom, INF, wh, 0.0, W),
            "top": Limb("top", "x", x_lo, x_hi, y_hi, H, wh, INF, 0.0, W),
        }

    def core_rects(self, c: WindowCoreDims) -> list[Rect]:
        W, H = c.outer_width, c.outer_height
        return [
            (0.0, 0.0, c.left, H),
            (W - c.right, 0.0, W, H),
            (c.left, 0.0, W - c.right, c.bottom),
            (c.left, H - c.top, W - c.right, H),
        ]

    def _corners(self, c: WindowCoreDims) -> tuple[float, float, float, float]:
        return (0.5 * c.left, c.outer_width - 0.5 * c.right,
                0.5 * c.bottom, c.outer_height - 0.5 * c.top)

    def segments(self, c: WindowCoreDims) -> list[Segment]:
        xl, xr, yb, yt = self._corners(c)
        d = c.depth
        # Mean path through the limb centre lines; each limb runs corner to
        # corner (common practice, no source: the corner squares are shared
        # by the two limbs meeting there, half each).
        return [
            Segment("left", "bl", "tl", yt - yb, c.left * d, "left"),
            Segment("top", "tl", "tr", xr - xl, c.top * d, "top"),
            Segment("right", "tr", "br", yt - yb, c.right * d, "right"),
            Segment("bottom", "br", "bl", xr - xl, c.bottom * d, "bottom"),
        ]

    def mean_path(self, c: WindowCoreDims) -> list[tuple[float, float]]:
        xl, xr, yb, yt = self._corners(c)
        return [(xl, yb), (xl, yt), (xr, yt), (xr, yb), (xl, yb)]

    def effective_path(self, c: WindowCoreDims) -> tuple[list[tuple[str, float, float]], tuple[str, ...]]:
        """The four segments in series as IEC 60205 parts (limb, length incl.
        gaps, area) and the limbs whose gaps lie on that one loop: all four."""
        return [(s.limb, s.length, s.area) for s in self.segments(c)], self.limb_names

    def windows(self, c: WindowCoreDims, limb: str) -> list[Window]:
        """The one window, seen from ``limb``: across it the opposite limb;
        the return loop runs along the bottom (vertical limbs) or the left
        limb (horizontal ones). The coil's outer side is outside the core."""
        return [{"left": Window(c.window_width, "right", ("bottom",)),
                 "right": Window(c.window_width, "left", ("bottom",)),
                 "bottom": Window(c.window_height, "top", ("left",)),
                 "top": Window(c.window_height, "bottom", ("left",))}[limb]]


# ---------------------------------------------------------------------------
@dataclass(frozen=True)
class EICoreDims:
    """An E core closed by an I (or a second E): three limbs, two windows.

    x: left outer limb [0, o], left window, centre limb (width ``centre``),
    right window, right outer limb; y: bottom yoke, window, top yoke.
    All in metres.
    """

    centre: float
    outer: float
    window_width: float
    window_height: float
    yoke: float
    depth: float

    @property
    def outer_width(self) -> float:
        return 2 * self.outer + 2 * self.window_width + self.centre

    @property
    def outer_height(self) -> float:
        return self.window_height + 2 * self.yoke


class EICore:
    """``ei-core``: centre limb with the winding, flux splitting into two outer limbs."""

    name: str = "ei-core"
    limb_names: tuple[str, ...] = ("centre", "left", "right")
    winding_limbs: tuple[str, ...] = ("centre",)

    def read_core(self, t: TableReader) -> EICoreDims:
        centre = t.quantity("centre_width", "length")
        # Defaults: outer limbs and yokes half the centre width, so that they
        # carry half the centre flux at the same B (common practice, no source).
        outer = t.quantity("outer_width", "length", 0.5 * centre)
        yoke = t.quantity("yoke_width", "length", 0.5 * centre)
        ww = t.quantity("window_width", "length")
        wh = t.quantity("window_height", "length")
        depth = t.quantity("depth", "length")
        return EICoreDims(centre, outer, ww, wh, yoke, depth)

    def limbs(self, c: EICoreDims) -> dict[str, Limb]:
        y_lo, y_hi = c.yoke, c.yoke + c.window_height
        xc0 = c.outer + c.window_width
        H = c.outer_height
        return {
            "left": Limb("left", "y", y_lo, y_hi, 0.0, c.outer, INF, c.window_width, 0.0, H),
            "centre": Limb("centre", "y", y_lo, y_hi, xc0, xc0 + c.centre,
                           c.window_width, c.window_width, 0.0, H),
            "right": Limb("right", "y", y_lo, y_hi, c.outer_width - c.outer, c.outer_width,
                          c.window_width, INF, 0.0, H),
        }

    def core_rects(self, c: EICoreDims) -> list[Rect]:
        W, H = c.outer_width, c.outer_height
        xc0 = c.outer + c.window_width
        return [
            (0.0, 0.0, c.outer, H),
            (W - c.outer, 0.0, W, H),
            (xc0, c.yoke, xc0 + c.centre, H - c.yoke),
            (c.outer, 0.0, W - c.outer, c.yoke),
            (c.outer, H - c.yoke, W - c.outer, H),
        ]

    def _lines(self, c: EICoreDims) -> tuple[float, float, float, float, float]:
        xl = 0.5 * c.outer
        xc = c.outer + c.window_width + 0.5 * c.centre
        xr = c.outer_width - 0.5 * c.outer
        yb, yt = 0.5 * c.yoke, c.outer_height - 0.5 * c.yoke
        return xl, xc, xr, yb, yt

    def segments(self, c: EICoreDims) -> list[Segment]:
        """Mean-path segments, each piece of iron counted once.

        Outer corners as in the window core: each limb runs to the other's
        centre line, so a corner square is half in each (common practice,
        no source).  A T-junction (c x yoke, where the centre limb meets the
        two yokes) is two such corners: each half of the centre limb (width
        c/2, half the flux) turns into one yoke.  By the same rule the centre
        limb runs to the yokes' centre line (its length claims c x yoke/2 of
        the junction) and each yoke runs to the half-limb's centre line, c/4
        from the centre line (claiming c/4 x yoke each): c x yoke in all,
        counted once [derived here; the plain centre-line rule counts it
        1.5 times].
        """
        xl, xc, xr, yb, yt = self._lines(c)
        d = c.depth
        q = 0.25 * c.centre  # the yokes stop at the half-limbs' centre lines
        return [
            Segment("centre", "bc", "tc", yt - yb, c.centre * d, "centre"),
            Segment("top-left", "tc", "tl", xc - xl - q, c.yoke * d, "yoke"),
            Segment("left", "tl", "bl", yt - yb, c.outer * d, "left"),
            Segment("bottom-left", "bl", "bc", xc - xl - q, c.yoke * d, "yoke"),
            Segment("top-right", "tc", "tr", xr - xc - q, c.yoke * d, "yoke", on_path=False),
            Segment("right", "tr", "br", yt - yb, c.outer * d, "right", on_path=False),
            Segment("bottom-right", "br", "bc", xr - xc - q, c.yoke * d, "yoke", on_path=False),
        ]

    def mean_path(self, c: EICoreDims) -> list[tuple[float, float]]:
        xl, xc, _, yb, yt = self._lines(c)
        return [(xc, yb), (xc, yt), (xl, yt), (xl, yb), (xc, yb)]

    def effective_path(self, c: EICoreDims) -> tuple[list[tuple[str, float, float]], tuple[str, ...]]:
        """IEC 60205 parts of the symmetric EI core: the centre limb, and
        the two outer paths in parallel as one with twice the area (yoke,
        outer limb, yoke); only centre-limb gaps lie on that single loop."""
        segs = {s.name: s for s in self.segments(c)}
        parts = [("centre", segs["centre"].length, segs["centre"].area)]
        parts += [(segs[n].limb, segs[n].length, 2.0 * segs[n].area)
                  for n in ("top-left", "left", "bottom-left")]
        return parts, ("centre",)

    def windows(self, c: EICoreDims, limb: str) -> list[Window]:
        """Both windows beside the centre limb (the yokes carry no gaps)."""
        if limb != "centre":
            return []
        return [Window(c.window_width, "left", lo_segments=("bottom-left",)),
                Window(c.window_width, "right", lo_segments=("bottom-right",))]


FAMILIES: dict[str, Family] = {f.name: f for f in (WindowCore(), EICore())}


def get_family(name: str, key: str = "case.family") -> Family:
    """The registered family of that name, or a CaseError listing the choices."""
    try:
        return FAMILIES[name]
    except KeyError:
        import difflib

        close = difflib.get_close_matches(name, list(FAMILIES), n=1)
        hint = f"; did you mean '{close[0]}'?" if close else ""
        raise CaseError(key, name, f"unknown core family; known: {', '.join(FAMILIES)}{hint}") from None
