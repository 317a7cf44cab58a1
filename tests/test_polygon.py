"""Polygons with holes and the simple-outline check (fem2d.layout.Polygon)."""
import numpy as np
import pytest

from magcheck.fem2d.layout import AirBox, Layout, LayoutError, MeshSettings, Polygon, Region
from magcheck.fem2d.mesh import build_mesh

FRAME = ((0.0, 0.0), (0.06, 0.0), (0.06, 0.07), (0.0, 0.07))
WINDOW = ((0.012, 0.012), (0.048, 0.012), (0.048, 0.058), (0.012, 0.058))


def _area(mesh, region):
    # exact for straight-sided triangles: the sum of the element areas
    rm = mesh
    p, t = rm.mesh.p, rm.mesh.t[:3, rm.subdomains[region]]
    a = p[:, t[1]] - p[:, t[0]]
    b = p[:, t[2]] - p[:, t[0]]
    return float(np.sum(0.5 * np.abs(a[0] * b[1] - a[1] * b[0])))


def test_a_frame_drawn_as_outline_and_hole_meshes_to_its_exact_area():
    # exact: 60 x 70 mm less the 36 x 46 mm window
    lay = Layout((Region("core", (Polygon(FRAME, (WINDOW,)),), "iron", kind="core"),),
                 air=AirBox("box", factor=1.5), mesh=MeshSettings(size=3e-3, order=1))
    m = build_mesh(lay)
    assert _area(m, "core") == pytest.approx(0.06 * 0.07 - 0.036 * 0.046, rel=1e-12)
    assert Polygon(FRAME, (WINDOW,)).area() == pytest.approx(0.06 * 0.07 - 0.036 * 0.046)
    # the window is air: its area is in the air region
    assert _area(m, "air") > 0.036 * 0.046


@pytest.mark.parametrize("poly, words", [
    (Polygon(((0, 0), (1, 1), (1, 0), (0, 1))), "edges 0 and 2 cross"),  # a bow tie
    (Polygon(((0, 0), (2, 0), (2, 1), (1, 1), (1, 0.0), (0, 1))), "cross"),
    (Polygon(FRAME, (((0.05, 0.01), (0.07, 0.01), (0.07, 0.02)),)), "hole 0 is not inside"),
    (Polygon(FRAME, (WINDOW, WINDOW)), "hole 0 crosses hole 1"),
    (Polygon(FRAME, (((0.01, 0.01), (0.01, 0.01), (0.02, 0.02)),)), "area"),
])
def test_bad_outlines_are_refused_naming_what_is_wrong(poly, words):
    with pytest.raises(LayoutError, match=words):
        poly.check("region 'x'")


def test_a_simple_polygon_with_many_points_passes():
    th = np.linspace(0, 2 * np.pi, 400, endpoint=False)
    ring = tuple(zip(np.cos(th), np.sin(th)))
    hole = tuple(zip(0.5 * np.cos(th), 0.5 * np.sin(th)))
    Polygon(ring, (hole,)).check("r")
