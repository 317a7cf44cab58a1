"""The ``ei-core`` family: an E closed by an I, three limbs, two windows."""

from __future__ import annotations

from dataclasses import dataclass

from ..geometry import Limb, Rect
from ..casekeys import Key, lengths
from ..reader import TableReader
from .base import INF, Segment, Window

__all__ = ["EICoreDims", "EICore"]


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
    core_keys: tuple[str, ...] = ("centre_width", "outer_width", "yoke_width", "window_width",
                                  "window_height", "depth")
    parts: tuple[str, ...] = ("E", "I")
    core_spec: dict[str, Key] = lengths(core_keys)
    """The ``[core]`` keys (compare.design.casekeys): the dimensions."""

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
            Rect(0.0, 0.0, c.outer, H),
            Rect(W - c.outer, 0.0, W, H),
            Rect(xc0, c.yoke, xc0 + c.centre, H - c.yoke),
            Rect(c.outer, 0.0, W - c.outer, c.yoke),
            Rect(c.outer, H - c.yoke, W - c.outer, H),
        ]

    def part_rects(self, c: EICoreDims) -> dict[str, list[Rect]]:
        """The E (outer and centre limbs and the bottom yoke) and the I (the
        top yoke across the whole width, the outer limbs ending below it)."""
        W, H = c.outer_width, c.outer_height
        xc0 = c.outer + c.window_width
        e = [Rect(0.0, 0.0, c.outer, H - c.yoke), Rect(W - c.outer, 0.0, W, H - c.yoke),
             Rect(xc0, c.yoke, xc0 + c.centre, H - c.yoke), Rect(c.outer, 0.0, W - c.outer, c.yoke)]
        return {"E": e, "I": [Rect(0.0, H - c.yoke, W, H)]}

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
            Segment("centre", "bc", "tc", yt - yb, c.centre * d, "centre", part="E"),
            Segment("top-left", "tc", "tl", xc - xl - q, c.yoke * d, "yoke", axis_sign=-1,
                    part="I"),
            Segment("left", "tl", "bl", yt - yb, c.outer * d, "left", axis_sign=-1, part="E"),
            Segment("bottom-left", "bl", "bc", xc - xl - q, c.yoke * d, "yoke", part="E"),
            Segment("top-right", "tc", "tr", xr - xc - q, c.yoke * d, "yoke", part="I"),
            Segment("right", "tr", "br", yt - yb, c.outer * d, "right", axis_sign=-1, part="E"),
            Segment("bottom-right", "br", "bc", xr - xc - q, c.yoke * d, "yoke", axis_sign=-1,
                    part="E"),
        ]

    def mean_path(self, c: EICoreDims) -> list[tuple[float, float]]:
        """Every branch once (core B and path H average them all, as the
        hand's segments, all on the path): the centre limb, the left loop,
        then the right one, ending where the centre limb began (an open
        figure of eight: bc, tc, left loop, bc, right loop, tc).  Averaging
        one loop only would make a case and its mirror image differ when
        a gap sits in one outer limb."""
        xl, xc, xr, yb, yt = self._lines(c)
        return [(xc, yb), (xc, yt), (xl, yt), (xl, yb), (xc, yb), (xr, yb), (xr, yt), (xc, yt)]

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
