"""Region outlines from DXF drawings (compare.design.dxf) on good and bad files."""
from __future__ import annotations

import math
import sys
from pathlib import Path

import ezdxf
import pytest

from magcheck.compare.design.dxf import ARC_STEP_DEG, read_dxf_regions
from magcheck.compare.errors import CaseError
from magcheck.fem2d.layout import AirBox, Disk, Layout, MeshSettings, Region
from magcheck.fem2d.mesh import build_mesh

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "tools"))
from make_demo_dxf import AREAS, R, write  # noqa: E402

# the deficit of a circle drawn by chords 2 degrees apart (exact polygon area)
DEFICIT = 1 - math.sin(math.radians(ARC_STEP_DEG)) / math.radians(ARC_STEP_DEG)


def test_the_demo_drawing_gives_each_layers_exact_area(tmp_path):
    # exact areas from the generating script; the four rounded corners make a
    # full circle of radius R short by its chord deficit
    shapes = read_dxf_regions(write(tmp_path / "d.dxf"))
    assert set(shapes) == set(AREAS)
    for layer, want in AREAS.items():
        got = sum(s.area() for s in shapes[layer]) * 1e6
        short = math.pi * R ** 2 * DEFICIT if layer == "core" else 0.0
        assert got == pytest.approx(want - short, rel=1e-12, abs=1e-9), layer
    (core,) = shapes["core"]
    assert len(core.holes) == 1  # the window, drawn as a second polyline


def test_the_committed_demo_drawing_is_the_scripts(tmp_path):
    # reproducible: the file in cases/ reads to the same shapes as a fresh one
    fresh = read_dxf_regions(write(tmp_path / "d.dxf"))
    stored = read_dxf_regions(ROOT / "cases" / "demo_drawn_core.dxf")
    assert stored == fresh


def test_the_demo_drawing_meshes(tmp_path):
    shapes = read_dxf_regions(write(tmp_path / "d.dxf"))
    regions = [Region(n, shapes[n], "air" if n == "gap0" else "m",
                      kind={"core": "core", "gap0": "gap"}.get(n, "coil"))
               for n in ("core", "gap0", "coil+", "coil-")]
    lay = Layout(tuple(regions), air=AirBox("box", factor=1.5), mesh=MeshSettings(size=3e-3),
                 depth=0.02)
    m = build_mesh(lay)
    assert {"core", "gap0", "coil+", "coil-"} <= set(m.subdomains)


def _doc(units: int = 4):
    doc = ezdxf.new("R2010")
    doc.header["$INSUNITS"] = units
    return doc, doc.modelspace()


def test_lines_and_arcs_join_into_a_stadium_and_a_lone_circle_stays_exact(tmp_path):
    # a 20 x 10 mm stadium: two lines and two semicircles of radius 5 mm,
    # area 20 x 10 + pi 5^2 less the chord deficit (exact polygon)
    doc, msp = _doc()
    msp.add_line((0, 0), (20, 0), dxfattribs={"layer": "s"})
    msp.add_arc((20, 5), 5, -90, 90, dxfattribs={"layer": "s"})
    msp.add_line((0, 10), (20, 10), dxfattribs={"layer": "s"})  # reversed w.r.t. the loop
    msp.add_arc((0, 5), 5, 90, 270, dxfattribs={"layer": "s"})
    msp.add_circle((50, 5), 3, dxfattribs={"layer": "wire"})
    msp.add_text("note", dxfattribs={"layer": "s"})  # annotations are skipped
    doc.saveas(tmp_path / "s.dxf")
    shapes = read_dxf_regions(tmp_path / "s.dxf")
    area = shapes["s"][0].area() * 1e6
    assert area == pytest.approx(200 + 25 * math.pi * (1 - DEFICIT), rel=1e-12)
    assert shapes["wire"] == (Disk(0.05, 0.005, 0.003),)


def test_units_come_from_the_case_or_the_header(tmp_path):
    doc, msp = _doc(units=0)
    msp.add_lwpolyline([(0, 0), (1, 0), (1, 1)], close=True, dxfattribs={"layer": "a"})
    doc.saveas(tmp_path / "u.dxf")
    with pytest.raises(CaseError, match=r"no length unit \(\$INSUNITS = 0\)"):
        read_dxf_regions(tmp_path / "u.dxf")
    inch = read_dxf_regions(tmp_path / "u.dxf", units=0.0254)
    assert inch["a"][0].area() == pytest.approx(0.5 * 0.0254 ** 2)


def _bad(tmp_path, build, **kw):
    doc, msp = _doc()
    build(msp)
    doc.saveas(tmp_path / "b.dxf")
    return lambda: read_dxf_regions(tmp_path / "b.dxf", **kw)


@pytest.mark.parametrize("build, kw, words", [
    (lambda m: m.add_lwpolyline([(0, 0), (5, 0), (5, 5)], dxfattribs={"layer": "core"}), {},
     r"layer 'core': LWPOLYLINE #\w+ is not closed \(open end at x = 5, y = 5"),
    (lambda m: m.add_lwpolyline([(0, 0), (5, 5), (5, 0), (0, 5)], close=True,
                                dxfattribs={"layer": "core"}), {}, "cross or touch"),
    (lambda m: m.add_lwpolyline([(0, 0), (5, 0), (5, 5)], close=True,
                                dxfattribs={"layer": "cor"}), {"regions": ("core", "gap0")},
     "layer 'cor' .* names no region of the case .* did you mean 'core'"),
    (lambda m: m.add_spline([(0, 0), (1, 2), (3, 1), (4, 0)], dxfattribs={"layer": "core"}), {},
     r"SPLINE #\w+ is not geometry magcheck reads"),
    (lambda m: (m.add_line((0, 0), (5, 0), dxfattribs={"layer": "core"}),
                m.add_line((5, 0), (5, 5), dxfattribs={"layer": "core"})), {},
     r"layer 'core': LINE #\w+ is not closed: .* end at x = 5, y = 5"),
    (lambda m: (m.add_lwpolyline([(0, 0), (5, 0), (5, 5), (0, 5)], close=True,
                                 dxfattribs={"layer": "core"}),
                m.add_lwpolyline([(3, 3), (8, 3), (8, 8), (3, 8)], close=True,
                                 dxfattribs={"layer": "core"})), {}, "cross each other"),
    (lambda m: None, {}, "holds no outlines"),
])
def test_bad_drawings_name_the_layer_and_the_entity(tmp_path, build, kw, words):
    with pytest.raises(CaseError, match=words) as e:
        _bad(tmp_path, build, **kw)()
    assert e.value.key == "shapes.dxf"


def test_a_file_that_is_not_a_drawing(tmp_path):
    (tmp_path / "x.dxf").write_text("hello\n")
    with pytest.raises(CaseError, match="not a readable DXF"):
        read_dxf_regions(tmp_path / "x.dxf")
    with pytest.raises(CaseError, match="cannot read"):
        read_dxf_regions(tmp_path / "missing.dxf")
