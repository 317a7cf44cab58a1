"""Write cases/demo_drawn_core.dxf, the drawing of an invented core.

Invented for the demo: a window core 60 x 70 mm with 12 mm limbs, its
outer corners rounded with 4 mm radii (bulge arcs), the window as a second
closed polyline on the same layer (a hole), a 0.6 mm gap across the right
limb on its own layer, and the two coil sides beside the left limb on
layers "coil+" and "coil-" (the coil's outer side drawn with LINE and ARC
entities joined end to end).  Units: millimetres ($INSUNITS = 4).  The
script is the drawing's source: run it to regenerate the file,
``python tools/make_demo_dxf.py [OUT]``.

The exact areas (mm^2) of the drawn regions are in AREAS (the reader's
chords fall short of the rounded corners by their known deficit,
tests/test_dxf.py).
"""
from __future__ import annotations

import math
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
R = 4.0  # outer corner radius, mm
GAP = 0.6
# the core outline with the gap cut out of the right limb at mid-height:
# drawn as the frame (outer outline with rounded corners, window as hole)
# and the gap as its own region on top of it (later regions win in fem2d)
AREAS = {
    "core": 60 * 70 - (4 - math.pi) * R ** 2 - 36 * 46,
    "gap0": 12 * GAP,
    "coil+": 10 * 40,
    "coil-": 10 * 40,
}
"""Exact areas (mm^2) of the regions as drawn (arcs exact)."""


def write(out: Path) -> Path:
    import ezdxf

    doc = ezdxf.new("R2010")
    doc.header["$INSUNITS"] = 4
    msp = doc.modelspace()
    for name in AREAS:
        doc.layers.add(name)
    b = math.tan(math.radians(90) / 4)  # a quarter circle, counter-clockwise
    outer = [(R, 0, 0), (60 - R, 0, b), (60, R, 0), (60, 70 - R, b), (60 - R, 70, 0),
             (R, 70, b), (0, 70 - R, 0), (0, R, b)]
    msp.add_lwpolyline(outer, format="xyb", close=True, dxfattribs={"layer": "core"})
    msp.add_lwpolyline([(12, 12), (48, 12), (48, 58), (12, 58)], close=True,
                       dxfattribs={"layer": "core"})
    y0 = 35 - GAP / 2
    msp.add_lwpolyline([(48, y0), (60, y0), (60, y0 + GAP), (48, y0 + GAP)], close=True,
                       dxfattribs={"layer": "gap0"})
    msp.add_lwpolyline([(12, 15), (22, 15), (22, 55), (12, 55)], close=True,
                       dxfattribs={"layer": "coil+"})
    # the outer coil side from four LINEs, in a scrambled order and direction
    # (the reader joins them end to end)
    for a, c in (((-10, 15), (0, 15)), ((0, 55), (0, 15)), ((-10, 55), (-10, 15)),
                 ((0, 55), (-10, 55))):
        msp.add_line(a, c, dxfattribs={"layer": "coil-"})
    doc.saveas(out)
    return out


if __name__ == "__main__":
    target = Path(sys.argv[1]) if len(sys.argv) > 1 else ROOT / "cases" / "demo_drawn_core.dxf"
    print(write(target))
