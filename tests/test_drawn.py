"""The drawn family: the user's regions and the user's hand circuit.

Verifies that a core drawn as polygons with the circuit a designer writes
for it reproduces the window-core family's case (the same network, so the
hand values agree to round-off; the same geometry meshed differently, so
the FE values agree within the FE's own uncertainty), that the DXF demo
drawing is read as drawn, that an axisymmetric drawn coil's flux matches an
independent reference, and that bad drawings and circuits name their key.
"""

from __future__ import annotations

import copy
import math
import tomllib
import warnings
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from magcheck.compare.reading.casefile import case_from_dict, load_case
from magcheck.compare.design.coremodel import core_model
from magcheck.compare.errors import CaseError
from magcheck.compare.models.fe import case_layout, run_fe, run_fe_checked
from magcheck.compare.models.hand import HAND_KEYS, run_hand

CASES = Path(__file__).resolve().parents[1] / "cases"


def _window_core() -> dict:
    d = tomllib.loads((CASES / "demo_choke.toml").read_text())
    d.pop("margins", None)
    return d


def _drawn(fringing: str = "area", free_height: str | None = None) -> dict:
    """The demo choke (window core 60 x 70 mm, 12 mm limbs, 20 mm deep, a
    0.6 mm gap mid-way up the right limb, 80 turns on the left limb) drawn as
    polygons, with the four-segment circuit a designer writes for it."""
    gap = {"name": "gap0", "length": "0.6 mm", "width": "12 mm", "fringing": fringing}
    if free_height:
        gap["free_height"] = free_height
    seg = [{"name": n, "length": f"{length} mm", "area": "240 mm^2"}
           for n, length in (("left", 58), ("top", 48), ("right", 57.4), ("bottom", 48))]
    return {
        "case": {"name": "drawn-choke", "family": "drawn"},
        "core": {"depth": "20 mm"},
        "shapes": {"units": "mm"},
        "regions": [
            {"name": "core", "kind": "core", "points": [[0, 0], [60, 0], [60, 70], [0, 70]],
             "holes": [[[12, 12], [48, 12], [48, 58], [12, 58]]]},
            {"name": "gap0", "kind": "gap",
             "points": [[48, 34.7], [60, 34.7], [60, 35.3], [48, 35.3]]},
            {"name": "go", "kind": "coil", "winding": "main",
             "points": [[12, 15], [22, 15], [22, 55], [12, 55]]},
            {"name": "back", "kind": "coil", "winding": "main", "side": "return",
             "points": [[-10, 15], [0, 15], [0, 55], [-10, 55]]},
        ],
        "windings": [{"name": "main", "turns": 80, "current": "6 A"}],
        "circuit": {"gap_B": "gap0", "path": [[6, 6], [6, 64], [54, 64], [54, 6], [6, 6]],
                    "flux_line": [[0, 35], [12, 35]], "windings": {"main": "left"},
                    "segments": seg, "gaps": [gap]},
        "materials": {"core": "demo-sisteel"},
        "hand": {"fringing": fringing},
    }


@pytest.mark.parametrize("fringing, free_height", [("area", None), ("none", None),
                                                   ("flux-factor", "46 mm")])
@pytest.mark.parametrize("planar", [True, False])
def test_drawn_hand_reproduces_the_window_core_case(fringing, free_height, planar):
    # the same network either way (four segments and the gap in series, the
    # winding's MMF in the left limb): every hand value to round-off
    ref = _window_core()
    ref["hand"] = {"fringing": fringing}
    a = run_hand(case_from_dict(ref), planar=planar)
    b = run_hand(case_from_dict(_drawn(fringing, free_height)), planar=planar)
    for k in HAND_KEYS:
        assert b.values()[k] == pytest.approx(a.values()[k], rel=1e-9), k


def test_drawn_regions_and_measures_follow_the_drawing():
    case = case_from_dict(_drawn())
    model = core_model(case)
    assert model.symmetry == "planar" and model.depth == pytest.approx(0.02)
    assert model.gap_region == "gap0"
    assert model.gap_direction == (0.0, 1.0)  # across the thin strip: the limb's axis
    assert model.coils[0].sides == (("go", 1), ("back", -1))
    assert model.coils[0].area == pytest.approx(400e-6)
    areas = {r.name: sum(s.area() for s in r.shapes) for r in case_layout(case).regions}
    assert areas["core"] == pytest.approx((60 * 70 - 36 * 46) * 1e-6)
    # gap after the core in the layout (it cuts the core where it lies on it)
    names = [r.name for r in case_layout(case).regions]
    assert names.index("gap0") > names.index("core")


def test_thin_direction_of_a_tilted_gap():
    # a 10 x 0.5 strip turned by 30 degrees: its flux direction is the short
    # side's, (-sin 30, cos 30); exact for the second moments of a rectangle
    from magcheck.compare.design.families.drawn import DrawnRegion, _thin_direction
    from magcheck.fem2d.layout import Polygon

    c, s = math.cos(math.radians(30)), math.sin(math.radians(30))
    pts = [(x * c - y * s, x * s + y * c) for x, y in ((0, 0), (10, 0), (10, 0.5), (0, 0.5))]
    d = _thin_direction(DrawnRegion("g", "gap", (Polygon(tuple(pts)),)))
    assert abs(d[0] * -s + d[1] * c) == pytest.approx(1.0, abs=1e-12)


@pytest.mark.slow
def test_drawn_fe_reproduces_the_window_core_case_within_its_uncertainty():
    # the same geometry, meshed as one polygon with a hole instead of four
    # rectangles: the FE values agree within the sum of the two uncertainties
    a = run_fe_checked(case_from_dict(_window_core()))
    b = run_fe_checked(case_from_dict(_drawn()))
    for k in HAND_KEYS:
        tol = a.uncertainty[k] + b.uncertainty[k]
        assert abs(b.values[k] - a.values[k]) <= tol, (k, a.values[k], b.values[k], tol)


def test_the_dxf_demo_is_read_as_drawn():
    import sys

    sys.path.insert(0, str(CASES.parent / "tools"))
    import make_demo_dxf

    case = load_case(CASES / "demo_drawn_core.toml")
    regions = {r.name: r for r in case.core.regions}
    # the four rounded corners (radius 4 mm) are read as 2-degree chords: a
    # full circle's worth of 180 chords, short of the arcs by r^2 (pi - 90 sin 2deg)
    # (exact polygon geometry)
    deficit = 4.0 ** 2 * (math.pi - 90 * math.sin(math.radians(2)))
    assert regions["core"].area * 1e6 == pytest.approx(make_demo_dxf.AREAS["core"] - deficit,
                                                       rel=1e-9)
    for name in ("gap0", "coil+", "coil-"):
        assert regions[name].area * 1e6 == pytest.approx(make_demo_dxf.AREAS[name], rel=1e-12)
    # the circuit is the demo choke's: its hand values are that case's
    ref = run_hand(load_case(CASES / "demo_choke.toml"))
    got = run_hand(case)
    for k in HAND_KEYS:
        assert got.values()[k] == pytest.approx(ref.values()[k], rel=1e-9), k


def _rz_air_coil() -> dict:
    """An air coil (inner radius 10 mm, build 5 mm, length 20 mm, 100 turns,
    2 A) drawn in r-z, with a non-magnetic 'core' ring far from it (mu_r 1:
    the flux is the coil's own)."""
    return {
        "case": {"name": "rz-air-coil", "family": "drawn"},
        "core": {"symmetry": "axisymmetric"},
        "shapes": {"units": "mm"},
        "regions": [
            {"name": "ring", "kind": "core", "points": [[40, -5], [45, -5], [45, 5], [40, 5]]},
            {"name": "coil", "kind": "coil", "points": [[10, -10], [15, -10], [15, 10], [10, 10]]},
        ],
        "windings": [{"name": "main", "turns": 100, "current": "2 A"}],
        "circuit": {"path": [[42.5, -5], [42.5, 5]], "flux_line": [[0, 0], [8, 0]],
                    "segments": [{"name": "s", "length": "10 mm", "area": "100 mm^2"},
                                 {"name": "t", "length": "10 mm", "area": "100 mm^2"}]},
        "materials": {"core": {"mu_r": 1.0}},
        "fe": {"mesh_size": "1 mm"},
    }


def test_axisymmetric_drawn_coil_flux_against_current_loops():
    pytest.importorskip("magpylib")
    import magpylib as magpy

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # mu_r 1 is 'hardly magnetic', on purpose
        case = case_from_dict(_rz_air_coil())
    fe, _, _ = run_fe(case)
    # Source: magpylib (Ortner & Coliado Bandeira, SoftwareX 2020), its exact
    # circular current loop (magpylib.current.Circle): the coil's cross-section
    # as 20 x 20 Gauss-Legendre loops carrying N I / area each; the flux
    # through the disk r < 8 mm in the mid-plane (2 mm inside the coil, where
    # the loops' field is smooth), integrated over r with 40 Gauss points
    # (12 x 12 loops give the same flux to 1e-4).
    xg, wg = np.polynomial.legendre.leggauss(20)
    loops = []
    for xr, wr in zip(xg, wg):
        for xz, wz in zip(xg, wg):
            r = 12.5e-3 + 2.5e-3 * xr
            z = 10e-3 * xz
            share = 0.25 * wr * wz  # weights over the square sum to 1
            loops.append(magpy.current.Circle(current=200.0 * share, diameter=2 * r,
                                              position=(0, 0, z)))
    coll = magpy.Collection(*loops)
    xr, wr = np.polynomial.legendre.leggauss(40)
    rho = 4e-3 * (xr + 1.0)
    bz = coll.getB(np.c_[rho, np.zeros_like(rho), np.zeros_like(rho)])[:, 2]
    ref = float(np.sum(bz * 2 * np.pi * rho * wr * 4e-3))
    # 5e-4: the FE's error at 1 mm P2 elements was 1.2e-4, the reference's
    # quadrature under 1e-5
    assert fe.values["flux"] == pytest.approx(ref, rel=5e-4)


def _refused(d: dict, key: str, words: str = "") -> None:
    """Loading ``d`` raises a CaseError naming ``key``, its text holding ``words``."""
    with pytest.raises(CaseError) as info:
        case_from_dict(d)
    assert info.value.key == key
    assert words in str(info.value)


def _with(mutate):
    d = _drawn()
    mutate(d)
    return d


def _set(path, value):
    def m(d):
        node = d
        keys = path.split(".")
        for k in keys[:-1]:
            node = node[int(k)] if isinstance(node, list) else node[k]
        last = keys[-1]
        if value is KeyError:
            del node[int(last) if isinstance(node, list) else last]
        else:
            node[int(last) if isinstance(node, list) else last] = value
    return m


@pytest.mark.parametrize("mutate, key, words", [
    (_set("regions.2.points", [[50, 20], [58, 20], [58, 30], [50, 30]]), "regions[2]",
     "overlaps region 'core'"),
    (_set("regions.3.side", KeyError), "windings[0]", "return side"),
    (_set("regions.2.winding", "mian"), "regions[2].winding", "did you mean 'main'"),
    (_set("circuit", KeyError), "circuit", "missing"),
    (_set("circuit.gap_B", "gap9"), "circuit.gap_B", "names no circuit gap"),
    (_set("circuit.windings", {"main": "lfet"}), "circuit.windings.main", "did you mean"),
    (_set("circuit.flux_line", [[0, 35], [0, 35]]), "circuit.flux_line", "two different"),
    (_set("circuit.gaps.0.length", "13 mm"), "circuit.gaps[0].length", "not shorter"),
    (_set("circuit.gaps.0.fringing", "areas"), "circuit.gaps[0].fringing", "did you mean"),
    (_set("circuit.segments.0.area", "-2 mm^2"), "circuit.segments[0].area", "positive"),
    (_set("circuit.core_B", ["gap0"]), "circuit.core_B", "names no core region"),
    (_set("shapes.units", KeyError), "shapes.units", "unit"),
    (_set("regions.0.points", [[0, 0], [60, 70], [60, 0], [0, 70]]), "regions[0].points",
     "cross"),
    (_set("regions.1.name", "core"), "regions[1].name", "comes before"),
    (_set("regions.1.kind", "plate"), "regions[1].kind", "core, gap"),
    (_set("core.symmetry", "axisymmetric"), "core.depth", "no stack depth"),
    (_set("materials.core", KeyError), "materials.core", "missing"),
    (_set("regions.0.material", "yoke"), "materials.yoke", "missing"),
    (_set("hand.leakage", True), "hand.leakage", "circuit"),
    (_set("regions.0.points", [[0, 0], [60, 0], [60, 70, "x"], [0, 70]]),
     "regions[0].points[2]", "finite numbers"),
])
def test_bad_drawings_name_the_key(mutate, key, words):
    _refused(_with(mutate), key, words)


def test_axisymmetric_regions_stay_in_r_ge_0():
    d = _rz_air_coil()
    d["regions"][1]["points"] = [[-1, -10], [5, -10], [5, 10], [-1, 10]]
    _refused(d, "regions[1].points", "r >= 0")


def test_a_part_material_and_a_segment_material_are_read():
    d = _drawn()
    d["regions"][0]["material"] = "yoke"
    d["circuit"]["segments"][1]["material"] = "yoke"
    d["materials"]["yoke"] = {"mu_r": 3000}
    case = case_from_dict(d)
    assert case.part_overrides == ("yoke",)
    model = core_model(case)
    assert model.materials == (("core-yoke", "yoke"),)
    assert model.core_regions == ("core",)
    top = next(b for b in run_hand(case).network.branches if b.name == "top")
    assert top.B == pytest.approx(top.H * 3000 * 4e-7 * math.pi, rel=1e-6)


# -- property-based: any mutation of a drawn case gives a Case or a CaseError ---
_scalars = st.one_of(
    st.none(), st.booleans(), st.integers(-10**3, 10**3),
    st.floats(allow_nan=True, allow_infinity=True),
    st.sampled_from(["12 mm", "0 mm", "-1 mm", "240 mm^2", "core", "gap", "coil", "go",
                     "return", "main", "left", "-left", "gap0", "mm", "axisymmetric", "area"]),
    st.text(max_size=8),
)
_values = st.recursive(_scalars, lambda inner: st.one_of(
    st.lists(inner, max_size=4), st.dictionaries(st.text(max_size=6), inner, max_size=3)),
    max_leaves=8)
_paths = st.sampled_from([
    "core.symmetry", "core.depth", "shapes", "shapes.units", "regions", "regions.0",
    "regions.0.points", "regions.0.holes", "regions.1.points", "regions.1.kind",
    "regions.2.winding", "regions.3.side", "regions.2.points.1", "circuit", "circuit.gap_B",
    "circuit.path", "circuit.flux_line", "circuit.core_B", "circuit.windings",
    "circuit.segments", "circuit.segments.0", "circuit.segments.0.length",
    "circuit.segments.1.area", "circuit.segments.0.from", "circuit.gaps", "circuit.gaps.0.width",
    "circuit.gaps.0.depth", "circuit.gaps.0.free_height", "windings.0.turns", "windings.0.name",
])


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(st.tuples(_paths, st.one_of(_values, st.just(KeyError))), min_size=1,
                max_size=4))
def test_fuzz_mutated_drawn_cases(mutations):
    d = _drawn()
    for path, value in mutations:
        try:
            _set(path, copy.deepcopy(value))(d)
        except (KeyError, IndexError, TypeError, ValueError):
            continue
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            case = case_from_dict(d)
    except CaseError:
        return
    model = core_model(case)
    assert model.coils and all(c.area > 0 for c in model.coils)
    assert all(s.length > 0 and s.area > 0 for s in model.circuit.segments)


def _rz_pot() -> dict:
    """A pot core drawn in r-z (post r < 5 mm with a 1 mm gap, wall 12..14 mm,
    plates 3 mm), linear mu_r 2000, 50 turns at 1 A; invented for the test."""
    post = 5 * 5 * math.pi
    return {
        "case": {"name": "rz-pot", "family": "drawn"},
        "core": {"symmetry": "axisymmetric"},
        "shapes": {"units": "mm"},
        "regions": [
            {"name": "core", "kind": "core",
             "points": [[0, 0], [14, 0], [14, 20], [0, 20], [0, 10.5], [5, 10.5], [5, 17],
                        [12, 17], [12, 3], [5, 3], [5, 9.5], [0, 9.5]]},
            {"name": "gap", "kind": "gap", "points": [[0, 9.5], [5, 9.5], [5, 10.5], [0, 10.5]]},
            {"name": "coil", "kind": "coil", "points": [[6, 4], [11, 4], [11, 16], [6, 16]]},
        ],
        "windings": [{"name": "main", "turns": 50, "current": "1 A"}],
        "circuit": {"path": [[2.5, 1.5], [13, 1.5], [13, 18.5], [2.5, 18.5], [2.5, 1.5]],
                    "flux_line": [[0, 6], [5, 6]],
                    "segments": [{"name": "post", "length": "16 mm", "area": f"{post} mm^2"},
                                 {"name": "rest", "length": "40 mm", "area": "160 mm^2"}],
                    "gaps": [{"name": "gap", "length": "1 mm", "width": f"{math.sqrt(post)} mm",
                              "depth": f"{math.sqrt(post)} mm"}]},
        "materials": {"core": {"mu_r": 2000}},
        "hand": {"fringing": "flux-factor"},
    }


def test_axisymmetric_hand_applies_the_whole_fringing():
    # an r-z field solution is a 3D one: the hand model compared with it is
    # the full circuit, so its 'planar' form is the same network
    case = case_from_dict(_rz_pot())
    a, b = run_hand(case, planar=True), run_hand(case)
    for k in HAND_KEYS:
        assert a.values()[k] == pytest.approx(b.values()[k], rel=1e-12), k
    # the ideal hand value with fringing 'none': N^2 / (R_post + R_rest + R_gap)
    d = _rz_pot()
    d["hand"]["fringing"] = "none"
    mu0 = 4e-7 * math.pi
    area = 25e-6 * math.pi
    r_total = (16e-3 / (2000 * mu0 * area) + 40e-3 / (2000 * mu0 * 160e-6) + 1e-3 / (mu0 * area))
    assert run_hand(case_from_dict(d)).inductance == pytest.approx(2500 / r_total, rel=1e-9)


@pytest.mark.slow
def test_axisymmetric_check_runs_and_is_consistent():
    from magcheck.compare.judge.check import run_check

    res = run_check(case_from_dict(_rz_pot()))
    fe = res.fe.values
    # a linear core: secant = incremental, and W = L I^2 / 2 (to the tangent
    # solve's 1e-9 tolerance)
    assert fe["inductance"] == pytest.approx(fe["incremental_inductance"], rel=1e-7)
    assert fe["energy"] == pytest.approx(0.5 * fe["inductance"], rel=1e-7)
    # the flux through the post (a disk of radius 5 mm swept round the axis)
    # times N is most of the flux linkage (the rest is the window's leakage)
    assert 0.5 * fe["flux_linkage"] < 50 * fe["flux"] <= fe["flux_linkage"] * (1 + 1e-6)
    assert res.notes[0].startswith("The FE is an axisymmetric")


def _magnet_ring(mu_c: float = 1e5) -> dict:
    """A square iron ring 40 x 40 mm (10 mm limbs, 10 mm deep) whose right
    limb has a 2 mm magnet (B_r 1.2 T along +y, recoil 1.05) in place of its
    iron; an idle winding (0 A). Invented for the test."""
    return {
        "case": {"name": "magnet-ring", "family": "drawn"},
        "core": {"depth": "10 mm"},
        "shapes": {"units": "mm"},
        "regions": [
            {"name": "core", "kind": "core",
             "points": [[0, 0], [40, 0], [40, 19], [30, 19], [30, 10], [10, 10], [10, 30],
                        [30, 30], [30, 21], [40, 21], [40, 40], [0, 40]]},
            {"name": "pm", "kind": "magnet", "remanence": "1.2 T", "direction": 90,
             "points": [[30, 19], [40, 19], [40, 21], [30, 21]]},
            {"name": "go", "kind": "coil", "points": [[12, 12], [18, 12], [18, 28], [12, 28]]},
            {"name": "back", "kind": "coil", "side": "return",
             "points": [[-8, 12], [-2, 12], [-2, 28], [-8, 28]]},
        ],
        "windings": [{"name": "main", "turns": 1, "current": "0 A"}],
        "circuit": {"path": [[5, 5], [5, 35], [35, 35], [35, 21], [35, 19], [35, 5], [5, 5]],
                    "flux_line": [[0, 20], [10, 20]],
                    "segments": [{"name": "iron", "length": "118 mm", "area": "100 mm^2"}],
                    "magnets": [{"name": "pm", "length": "2 mm", "area": "100 mm^2"}]},
        "materials": {"core": {"mu_r": mu_c}},
        "fe": {"mesh_size": "1 mm"},
    }


def test_a_magnet_in_a_closed_ring_sits_on_its_recoil_line_in_both_models():
    from magcheck.fem2d import post

    case = case_from_dict(_magnet_ring())
    # Source: exact for the series circuit (load line of a magnet closed by
    # iron of reluctance l_c/(mu_c A)): B_m = B_r / (1 + mu_r l_c / (mu_c l_m))
    ref = 1.2 / (1 + 1.05 * 118 / (1e5 * 2))
    hand = run_hand(case).network.branch("pm")
    assert hand.B == pytest.approx(ref, rel=1e-10) and hand.kind == "magnet"
    _, sol, _ = run_fe(case)
    # the iron's H is ~B/(mu0 mu_c) everywhere, so almost no MMF drives
    # leakage round the magnet: the mean B in it is the circuit's to the
    # corners' share of the iron reluctance (6e-4 of B_r in all, 2e-4 allowed)
    fe_b = post.region_mean_b(sol, "pm", direction=(0.0, 1.0))
    assert fe_b == pytest.approx(ref, rel=2e-4)
    # and the magnet's flux goes round the iron: the same flux across the left limb
    assert abs(post.flux_across(sol, (0.0, 20e-3), (10e-3, 20e-3))) == pytest.approx(
        fe_b * 100e-6, rel=2e-3)


@pytest.mark.parametrize("mutate, key, words", [
    (_set("regions.1.remanence", "-1 T"), "regions[1].remanence", "positive"),
    (_set("regions.1.direction", [0, 0]), "regions[1].direction", "non-zero"),
    (_set("regions.1.direction", KeyError), "regions[1].direction", "missing"),
    (_set("circuit.magnets.0.name", "pm2"), "circuit.magnets[0].remanence", "magnet region"),
])
def test_bad_magnets_name_the_key(mutate, key, words):
    d = _magnet_ring()
    mutate(d)
    _refused(d, key, words)


def _clapper(gap_mm: float = 0.5, fringing: str = "area") -> dict:
    """A U core (40 x 30 mm, 10 mm legs, 20 mm deep) and an armature bar
    8 mm thick across both legs at ``gap_mm``, 200 turns on the left leg,
    2 A: a clapper relay drawn by hand; invented for the test."""
    g = gap_mm
    top = 30 + g
    u = [[0, 0], [40, 0], [40, 30], [30, 30], [30, 10], [10, 10], [10, 30], [0, 30]]
    return {
        "case": {"name": "clapper", "family": "drawn"},
        "core": {"depth": "20 mm"},
        "shapes": {"units": "mm"},
        "regions": [
            {"name": "u", "kind": "core", "points": u},
            {"name": "armature", "kind": "core",
             "points": [[0, top], [40, top], [40, top + 8], [0, top + 8]]},
            {"name": "gapL", "kind": "gap", "points": [[0, 30], [10, 30], [10, top], [0, top]]},
            {"name": "gapR", "kind": "gap",
             "points": [[30, 30], [40, 30], [40, top], [30, top]]},
            {"name": "c+", "kind": "coil", "points": [[12, 12], [18, 12], [18, 26], [12, 26]]},
            {"name": "c-", "kind": "coil", "side": "return",
             "points": [[-8, 12], [-2, 12], [-2, 26], [-8, 26]]},
        ],
        "windings": [{"name": "main", "turns": 200, "current": "2 A"}],
        "circuit": {
            "path": [[5, 5], [5, top + 4], [35, top + 4], [35, 5], [5, 5]],
            "flux_line": [[0, 20], [10, 20]],
            "windings": {"main": "left"},
            "segments": [{"name": "left", "length": "25 mm", "area": "200 mm^2"},
                         {"name": "armature", "length": "38 mm", "area": "160 mm^2"},
                         {"name": "right", "length": "25 mm", "area": "200 mm^2"},
                         {"name": "yoke", "length": "30 mm", "area": "200 mm^2"}],
            "gaps": [{"name": "gapL", "length": f"{g} mm", "width": "10 mm"},
                     {"name": "gapR", "length": f"{g} mm", "width": "10 mm"}]},
        "force": {"body": ["armature"], "direction": -90},
        "materials": {"core": "demo-sisteel"},
        "hand": {"fringing": fringing},
    }


def test_pull_formula_equals_the_network_virtual_work_for_ideal_gaps():
    # Source: exact. For P = mu0 A/g, -(1/2) F^2 dP/dg = (1/2) F^2 P/g =
    # phi^2 / (2 mu0 A): the pull formula is the virtual work of ideal gaps
    h = run_hand(case_from_dict(_clapper(fringing="none")))
    assert h.force_values["force"] > 0  # the armature is pulled shut
    assert h.force_values["force_pull"] == pytest.approx(h.force_values["force"], rel=1e-10)


@pytest.mark.parametrize("fringing", ["area", "flux-factor"])
def test_hand_force_is_minus_the_coenergy_derivative_along_the_stroke(fringing):
    # the closing force at constant current is -dW'/dg with both gaps
    # changed together (the armature's stroke): a central difference of two
    # network solves at g -/+ 1e-3 g (truncation ~1e-6)
    h = run_hand(case_from_dict(_clapper(0.5, fringing)))
    wm = run_hand(case_from_dict(_clapper(0.5 - 5e-4, fringing))).network.coenergy
    wp = run_hand(case_from_dict(_clapper(0.5 + 5e-4, fringing))).network.coenergy
    assert h.force_values["force"] == pytest.approx(-(wp - wm) / 1e-6, rel=1e-5)  # dg = 2 x 0.5 um


@pytest.mark.slow
def test_clapper_check_gives_force_rows_and_both_fe_methods_agree(tmp_path):
    from magcheck.compare.judge.check import run_check
    from magcheck.compare.outputs.serialize import check_json

    res = run_check(case_from_dict(_clapper()))
    rows = {r.key: r for r in res.rows}
    fe = res.fe.fine.force_values
    assert fe["force"] > 0 and rows["force"].fe == fe["force_maxwell"]
    # two independent FE methods (fem2d.force): within 1e-3, as the selftest holds them
    assert fe["force_virtual_work"] == pytest.approx(fe["force_maxwell"], rel=1e-3)
    assert rows["force_pull"].hand == res.hand_planar.force_values["force_pull"]
    assert rows["force"].uncertainty_pct < 5
    doc = check_json(res)
    assert doc["fe"]["force"] == fe["force"] and doc["hand"]["force"] > 0
    assert doc["fe"]["force_virtual_work"] == fe["force_virtual_work"]


@pytest.mark.parametrize("mutate, key, words", [
    (_set("force.body", ["armtaure"]), "force.body", "did you mean 'armature'"),
    (_set("force.body", ["u", "armature"]), "force.body", "every core part moves"),
    (_set("force.gaps", ["gapX"]), "force.gaps", "names no circuit gap"),
    (_set("force.gaps", []), "force.gaps", "no working gap"),
    (_set("force.direction", [0, 0]), "force.direction", "non-zero"),
])
def test_bad_force_tables_name_the_key(mutate, key, words):
    d = _clapper()
    mutate(d)
    _refused(d, key, words)


# -- review findings: each a bad input named, or a model that stays right ------
def _nodes_loop(d, ends):
    for item, (a, b) in zip([*d["circuit"]["segments"], *d["circuit"]["gaps"]], ends):
        item["from"], item["to"] = a, b


@pytest.mark.parametrize("mutate, key, words", [
    # a coil crossing the core like a plus sign (no vertex of either inside the other)
    (_set("regions.2.points", [[-20, 40], [80, 40], [80, 42], [-20, 42]]), "regions[2]",
     "overlaps region 'core'"),
    (_set("regions.1.points", [[40, 34.7], [68, 34.7], [68, 35.3], [40, 35.3]]),
     "regions[1].points", "partly on core region 'core'"),
    (_set("regions.1.points", [[48, 29], [60, 29], [60, 41], [48, 41]]), "regions[1].direction",
     "not clearly thinner"),
    (_set("circuit.windings", {"main": "+-left"}), "circuit.windings.main", "names no circuit"),
    (_set("circuit.path", [[6, 6], [6, 6]]), "circuit.path", "no length"),
    (_set("circuit.flux_line", [[0, 35], [120, 35]]), "circuit.flux_line[1]", "outside"),
    (lambda d: _nodes_loop(d, [("a", "b"), ("b", "a"), ("c", "d"), ("d", "c"), ("a", "b")]),
     "circuit.segments", "falls apart"),
    (lambda d: _nodes_loop(d, [("a", "b"), ("b", "c"), ("c", "d"), ("d", "e"), ("e", "f")]),
     "circuit.windings", "no closed loop"),
    (_set("windings.0.limb", "left"), "windings[0].limb", "drawn as regions"),
    (lambda d: d.update(gaps=[{"limb": "right", "length": "1 mm"}]), "gaps[0].limb",
     "has no limbs"),
])
def test_bad_drawn_inputs_found_in_review_name_the_key(mutate, key, words):
    _refused(_with(mutate), key, words)


def test_a_square_gap_takes_its_direction_from_the_case():
    d = _drawn()
    d["regions"][1]["points"] = [[48, 29], [60, 29], [60, 41], [48, 41]]
    d["regions"][1]["direction"] = 90
    model = core_model(case_from_dict(d))
    assert model.gap_direction == pytest.approx((0.0, 1.0), abs=1e-15)


def test_an_axisymmetric_coil_has_no_return_side():
    d = _rz_air_coil()
    d["regions"][1]["side"] = "return"
    d["regions"].append({"name": "coil2", "kind": "coil",
                         "points": [[16, -10], [18, -10], [18, 10], [16, 10]]})
    _refused(d, "regions[1].side")


def test_a_coil_side_drawn_in_pieces_carries_n_i_once():
    # the go side split in two regions is one field region of both shapes:
    # the same ampere-turns, the same area for the current density
    d = _drawn()
    go = d["regions"][2]
    go["points"] = [[12, 15], [22, 15], [22, 35], [12, 35]]
    d["regions"].insert(3, {"name": "go2", "kind": "coil", "winding": "main",
                            "points": [[12, 35], [22, 35], [22, 55], [12, 55]]})
    case = case_from_dict(d)
    model = core_model(case)
    assert model.coils[0].sides == (("go", 1), ("back", -1))
    assert model.coils[0].area == pytest.approx(400e-6)
    go_region = next(r for r in case_layout(case).regions if r.name == "go")
    assert len(go_region.shapes) == 2
    from magcheck.compare.judge.margins import current_density

    assert current_density(case) == pytest.approx(80 * 6 / 400e-6)


def test_overlap_check_agrees_with_exact_rectangle_overlap():
    # Source: exact. Two axis-aligned rectangles overlap iff their x and y
    # ranges both overlap with positive length; 3000 random pairs on a grid
    # (so that edges often coincide, touch or cross)
    from magcheck.compare.design.families.drawn import _shapes_overlap
    from magcheck.fem2d.layout import Polygon

    rng = np.random.default_rng(7)
    for _ in range(3000):
        a = np.sort(rng.integers(0, 12, size=(2, 2)), axis=1)
        b = np.sort(rng.integers(0, 12, size=(2, 2)), axis=1)
        if np.any(a[:, 1] == a[:, 0]) or np.any(b[:, 1] == b[:, 0]):
            continue
        pa = Polygon(((a[0, 0], a[1, 0]), (a[0, 1], a[1, 0]), (a[0, 1], a[1, 1]), (a[0, 0], a[1, 1])))
        pb = Polygon(((b[0, 0], b[1, 0]), (b[0, 1], b[1, 0]), (b[0, 1], b[1, 1]), (b[0, 0], b[1, 1])))
        exact = (min(a[0, 1], b[0, 1]) > max(a[0, 0], b[0, 0])
                 and min(a[1, 1], b[1, 1]) > max(a[1, 0], b[1, 0]))
        assert _shapes_overlap(pa, pb) == exact, (a.tolist(), b.tolist())


def test_a_drawing_in_the_wrong_unit_warns():
    d = _drawn()
    d["shapes"]["units"] = "m"
    d["core"]["depth"] = "20 mm"
    with pytest.warns(Warning, match="shapes.units"):
        case_from_dict(d)  # a 60 m x 70 m core: valid, implausible


@pytest.mark.slow
def test_magnet_rows_json_and_demagnetisation_margin():
    from magcheck.compare.judge.check import run_check
    from magcheck.compare.outputs.serialize import check_json

    d = _magnet_ring()
    pm = d["regions"][1]
    del pm["remanence"]
    pm["grade"] = "demo-rare-earth"  # B_r 1.2 T, recoil 1.05, knee -900 kA/m (analytic.magnets)
    res = run_check(case_from_dict(d))
    rows = {r.key: r for r in res.rows}
    ref = 1.2 / (1 + 1.05 * 118 / (1e5 * 2))  # the closed ring's load line (exact, as above)
    assert rows["magnet_B"].hand == pytest.approx(ref, rel=1e-10)
    assert rows["magnet_B"].fe == pytest.approx(ref, rel=2e-4)
    # the ring barely loads the magnet: its field is far from the knee
    demag = rows["margin:demagnetisation"]
    assert demag.verdict == "pass" and demag.limit_value == pytest.approx(9e5)
    assert 0 < demag.fe < 0.1 * 9e5
    doc = check_json(res)
    assert doc["fe"]["magnet"]["knee_H"] == -9e5 and doc["fe"]["magnet"]["region"] == "pm"
    assert doc["hand"]["magnet"]["B"] == rows["magnet_B"].hand
    # no moving part: the force keys are there and null
    assert doc["fe"]["force"] is None and doc["hand"]["force"] is None


def test_an_unknown_magnet_grade_gets_a_did_you_mean():
    d = _magnet_ring()
    d["regions"][1]["grade"] = "demo-rare-erth"
    del d["regions"][1]["remanence"]
    _refused(d, "regions[1].grade", "did you mean 'demo-rare-earth'")


def test_review_refusals_for_moving_parts_and_magnets():
    # an opening direction does not close the working gaps
    d = _clapper()
    d["force"]["direction"] = 90
    _refused(d, "force.direction", "does not close gap")
    # a drawn magnet the circuit leaves out
    d = _magnet_ring()
    del d["circuit"]["magnets"]
    d["circuit"]["segments"].append({"name": "iron2", "length": "1 mm", "area": "100 mm^2"})
    _refused(d, "regions[1]", "[[circuit.magnets]]")
    # a force margin without a moving part
    d = _drawn()
    d["margins"] = {"force_min": "1 N"}
    _refused(d, "margins.force_min")


def test_a_moving_part_resting_on_iron_is_named():
    # a hinged armature lying on the right leg: no air layer round it there
    d = _clapper()
    d["regions"] = [r for r in d["regions"] if r["name"] != "gapR"]
    d["regions"][1]["points"] = [[0, 30.5], [40, 30.5], [40, 38.5], [0, 38.5]]
    d["regions"][0]["points"] = [[0, 0], [40, 0], [40, 30.5], [30, 30.5], [30, 10], [10, 10],
                                 [10, 30], [0, 30]]
    d["circuit"]["gaps"] = d["circuit"]["gaps"][:1]
    d["force"]["gaps"] = ["gapL"]
    case = case_from_dict(d)
    with pytest.raises(CaseError) as info:
        run_fe(case)
    assert info.value.key == "force.body" and "air all round it" in str(info.value)


def test_magnet_energy_is_the_recoil_field_energy():
    # Source: exact. Without currents the field's H is curl-free and B
    # divergence-free, so int H.B dV = 0 over all space (and, for the
    # discrete solution, the weak form tested with A itself); with the
    # magnet's energy mu H^2/2 (from its own state) and B^2/(2 mu) elsewhere
    # the stored energy is then W = -(1/2) int_magnet H.B_r dV
    from magcheck.fem2d import post

    d = _magnet_ring(mu_c=100.0)
    fe, sol, _ = run_fe(case_from_dict(d))
    h_mean = post.region_mean_h(sol, "pm", (0.0, 1.0))
    w_ref = -0.5 * 1.2 * h_mean * (10e-3 * 2e-3) * 10e-3
    assert fe.values["energy"] == pytest.approx(w_ref, rel=1e-6)
    # the hand circuit counts it alike: its energy is -(1/2) B_r H_m V_m too
    h = run_hand(case_from_dict(d))
    m = h.network.branch("pm")
    assert h.energy == pytest.approx(-0.5 * 1.2 * m.H * 100e-6 * 2e-3, rel=1e-9)


def test_axisymmetric_circuit_gap_takes_a_round_face():
    # a round face (r_outer, r_inner) is the disc's: its flux-tube fringing
    # round the circumference 2 pi r (analytic.fringing round faces), not the
    # equal-area square's round 4 sqrt(A)
    from magcheck.analytic.fringing import gap_permeance

    d = _rz_pot()
    d["circuit"]["gaps"] = [{"name": "gap", "length": "1 mm", "r_outer": "5 mm",
                             "free_height": "6 mm"}]
    d["hand"]["fringing"] = "flux-tube"
    case = case_from_dict(d)
    face = core_model(case).circuit.gaps[0].face
    assert face.radii == pytest.approx((0.0, 5e-3))
    # Source: Roters 1941 flux tubes round the disc's edge [secondary, docs/references.md section 1],
    # the hollow cylinder bent round it (a half torus, each shell's reluctance
    # integral by nested quadrature, as tests/test_fringing.py); 1e-6: quadrature
    from scipy.integrate import quad

    g, r, t = 1e-3, 5e-3, 6e-3
    mu0_ = 4e-7 * math.pi

    def shell(rho: float) -> float:
        inv, _ = quad(lambda th: rho / (2 * math.pi * (r + rho * math.sin(th))), 0.0, math.pi)
        return 1.0 / inv

    torus, _ = quad(shell, g / 2, g / 2 + t)
    p = mu0_ * math.pi * r ** 2 / g + mu0_ * (2 * math.pi * r * 0.26 + torus)
    assert gap_permeance(face, "flux-tube", False) == pytest.approx(p, rel=1e-6)
    assert any("r 0 to 5 mm" in v for _, v in case.family_model.describe(case.core))


@pytest.mark.parametrize("change, key, words", [
    ({"width": "5 mm"}, "circuit.gaps[0].width", "either r_outer"),
    ({"r_inner": "6 mm"}, "circuit.gaps[0].r_inner", "less than r_outer"),
    ({"length": "5 mm"}, "circuit.gaps[0].length", "radial width"),
])
def test_bad_round_faces_name_the_key(change, key, words):
    d = _rz_pot()
    d["circuit"]["gaps"] = [dict({"name": "gap", "length": "1 mm", "r_outer": "5 mm"}, **change)]
    with pytest.raises(CaseError) as info:
        case_from_dict(d)
    assert info.value.key == key and words in str(info.value)
