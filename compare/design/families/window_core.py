"""The ``window-core`` family: a rectangular frame, one window, four limbs."""

from __future__ import annotations

from dataclasses import dataclass

from ...errors import CaseError
from ..geometry import Limb, Rect
from ..casekeys import Key, lengths, oneof, quantity, table
from ..reader import TableReader
from .base import INF, Segment, Window

__all__ = ["WindowCoreDims", "WindowCore"]


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
    core_keys: tuple[str, ...] = ("outer_width", "outer_height", "limb_width", "depth",
                                  "left", "right", "top", "bottom")
    parts: tuple[str, ...] = limb_names
    turn_by_turn: bool = True
    """A winding may give ``[winding.conductor]``: its turns are drawn one by
    one (compare.design.geometry.turn_rects) as solid conductors."""
    core_spec: dict[str, Key] = {
        **lengths(("outer_width", "outer_height", "depth")),
        "limb_width": oneof(quantity("length"), table(lengths(limb_names)),
                            doc="every limb's width, or one per limb {left, right, top, bottom}")}
    """The ``[core]`` keys (compare.design.casekeys)."""

    def read_core(self, t: TableReader) -> WindowCoreDims:
        ow = t.quantity("outer_width", "length")
        oh = t.quantity("outer_height", "length")
        depth = t.quantity("depth", "length")
        raw = t.raw("limb_width")
        if isinstance(raw, dict):
            lt = TableReader(raw, t.key("limb_width"), spec=t.sub_spec("limb_width"))
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
            Rect(0.0, 0.0, c.left, H),
            Rect(W - c.right, 0.0, W, H),
            Rect(c.left, 0.0, W - c.right, c.bottom),
            Rect(c.left, H - c.top, W - c.right, H),
        ]

    def part_rects(self, c: WindowCoreDims) -> dict[str, list[Rect]]:
        """Each limb is a part; the corner squares go with the vertical limbs."""
        return dict(zip(("left", "right", "bottom", "top"), ([r] for r in self.core_rects(c))))

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
            Segment("right", "tr", "br", yt - yb, c.right * d, "right", axis_sign=-1),
            Segment("bottom", "br", "bl", xr - xl, c.bottom * d, "bottom", axis_sign=-1),
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
