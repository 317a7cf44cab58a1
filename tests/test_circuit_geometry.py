"""The magnetic circuit built from a case's geometry, against the circuit
written out by hand from the dimensions below.

The window core has four different limb widths and two gaps on different
limbs with different faces, so a segment that took another limb's width, or
a gap that took another gap's face, changes a number asserted here (every
bundled window case has equal limbs and one gap).
"""

from __future__ import annotations

import pytest
from scipy.constants import mu_0

from magcheck.compare.reading.casefile import case_from_dict
from magcheck.compare.models.hand import build_network, gap_face, run_hand

MM = 1e-3

# Invented dimensions (mm): outer 80 x 90, limbs left 10, right 14, top 8,
# bottom 12, stack depth 25; gap0 0.5 mm on the right limb, gap1 1.0 mm on
# the top limb; 100 turns at 2 A on the left limb.
OW, OH, LEFT, RIGHT, TOP, BOTTOM, DEPTH = 80, 90, 10, 14, 8, 12, 25
G0, G1 = 0.5, 1.0
N, I = 100, 2.0

# Written out by hand. Mean path through the limb centre lines, each limb
# corner to corner: corners at x = LEFT/2 and OW - RIGHT/2, y = BOTTOM/2 and
# OH - TOP/2.
XL, XR, YB, YT = LEFT / 2, OW - RIGHT / 2, BOTTOM / 2, OH - TOP / 2
SEG = {  # name: (length mm, area mm^2)
    "left": (YT - YB, LEFT * DEPTH),     # 80 mm, 250 mm^2
    "top": (XR - XL, TOP * DEPTH),       # 68 mm, 200 mm^2
    "right": (YT - YB, RIGHT * DEPTH),   # 80 mm, 350 mm^2
    "bottom": (XR - XL, BOTTOM * DEPTH),  # 68 mm, 300 mm^2
}
WINDOW_W, WINDOW_H = OW - LEFT - RIGHT, OH - TOP - BOTTOM  # 56 mm, 70 mm
# Gap faces: (length g, width a = the limb width it crosses, free height = the
# limb's straight length beside the window).
FACE = {0: (G0, RIGHT, WINDOW_H), 1: (G1, TOP, WINDOW_W)}
GAP_LIMB = {0: "right", 1: "top"}


def case_dict(mu_r: float, fringing: str) -> dict:
    return {
        "case": {"name": "four-widths", "family": "window-core"},
        "core": {"outer_width": f"{OW} mm", "outer_height": f"{OH} mm",
                 "limb_width": {"left": f"{LEFT} mm", "right": f"{RIGHT} mm",
                                "top": f"{TOP} mm", "bottom": f"{BOTTOM} mm"},
                 "depth": f"{DEPTH} mm"},
        "gaps": [{"limb": "right", "length": f"{G0} mm"},
                 {"limb": "top", "length": f"{G1} mm"}],
        "winding": {"limb": "left", "turns": N, "current": f"{I} A",
                    "thickness": "8 mm", "length": "50 mm"},
        "materials": {"core": {"mu_r": mu_r}},
        "hand": {"fringing": fringing},
    }


def make(mu_r: float = 2000.0, fringing: str = "none"):
    return case_from_dict(case_dict(mu_r, fringing))


def test_segments_of_a_window_core_with_four_limb_widths():
    case = make()
    segs = {s.name: s for s in case.family_model.segments(case.core)}
    assert set(segs) == set(SEG)
    for name, (length, area) in SEG.items():
        # Exact arithmetic on the dimensions above; 1e-12 is float rounding.
        assert segs[name].length == pytest.approx(length * MM, rel=1e-12), name
        assert segs[name].area == pytest.approx(area * MM**2, rel=1e-12), name
        assert segs[name].limb == name
    # The four segments close one loop: bl -> tl -> tr -> br -> bl.
    assert [(segs[n].node_a, segs[n].node_b) for n in ("left", "top", "right", "bottom")] == [
        ("bl", "tl"), ("tl", "tr"), ("tr", "br"), ("br", "bl")]


def test_gap_faces_are_each_gaps_own():
    case = make()
    for i, (g, a, h) in FACE.items():
        f = gap_face(case, i)
        assert (f.length, f.width, f.depth, f.free_height) == pytest.approx(
            (g * MM, a * MM, DEPTH * MM, h * MM), rel=1e-12), i


def test_network_branches_from_the_geometry():
    case = make()
    net, cmap = build_network(case, fringing="none", planar=True)
    br = {b.name: b for b in net.branches}
    assert set(br) == {"left", "top", "right", "bottom", "gap0", "gap1"}
    # Core branches: the segment length less the gaps cut into that limb.
    core_len = {"left": SEG["left"][0], "bottom": SEG["bottom"][0],
                "right": SEG["right"][0] - G0, "top": SEG["top"][0] - G1}
    for name, length in core_len.items():
        assert br[name].length == pytest.approx(length * MM, rel=1e-12), name
        assert br[name].area == pytest.approx(SEG[name][1] * MM**2, rel=1e-12), name
    for i, (g, a, _) in FACE.items():
        b = br[f"gap{i}"]
        assert b.length == pytest.approx(g * MM, rel=1e-12)
        # Source: ideal gap permeance mu0*a*b/g (docs/references.md section 1, no fringing).
        assert b.permeance == pytest.approx(mu_0 * a * DEPTH * MM / g, rel=1e-12), i
    assert cmap.winding_branch == "left"
    assert cmap.gap_branches == ("gap0", "gap1")
    assert set(cmap.path_branches) == set(SEG)


def gap_reluctance(i: int, fringing: str, planar: bool) -> float:
    """1/permeance of gap i (1/H), written out from the face dimensions."""
    g, a, _ = (v * MM for v in FACE[i])
    b = DEPTH * MM
    if fringing == "none":
        # Source: ideal gap, P = mu0*a*b/g (docs/references.md section 1).
        return g / (mu_0 * a * b)
    # Source: area enlargement A_g = (a+g)(b+g), Matsch 1964 ch. 3 [confirmed,
    # docs/references.md section 1]; its planar form keeps (a+g)*b only.
    return g / (mu_0 * (a + g) * (b if planar else b + g))


@pytest.mark.parametrize("fringing,planar", [("none", True), ("area", True), ("area", False)])
@pytest.mark.parametrize("mu_r", [300.0, 5000.0])
def test_series_circuit_closed_form(mu_r, fringing, planar):
    case = make(mu_r, fringing)
    h = run_hand(case, fringing=fringing, planar=planar)
    # Source: exact solution of a single-loop linear magnetic circuit
    # (docs/references.md section 2, ideal gapped core with finite mu_r, in series
    # form): flux = N I / sum R, R_core = l/(mu0 mu_r A), R_gap = 1/P_gap.
    r_core = {"left": SEG["left"][0] * MM, "bottom": SEG["bottom"][0] * MM,
              "right": (SEG["right"][0] - G0) * MM, "top": (SEG["top"][0] - G1) * MM}
    r_core = {k: v / (mu_0 * mu_r * SEG[k][1] * MM**2) for k, v in r_core.items()}
    r_gap = [gap_reluctance(i, fringing, planar) for i in (0, 1)]
    total = sum(r_core.values()) + sum(r_gap)
    flux = N * I / total
    L = N**2 / total
    # Tolerance 1e-9: the network is linear here, so its Newton solve is exact
    # to the solver's residual (far below 1e-9); only float rounding remains.
    assert h.flux == pytest.approx(flux, rel=1e-9)
    assert h.flux_linkage == pytest.approx(N * flux, rel=1e-9)
    assert h.inductance == pytest.approx(L, rel=1e-9)
    assert h.incremental_inductance == pytest.approx(L, rel=1e-9)  # linear: secant = incremental
    assert h.energy == pytest.approx(0.5 * L * I**2, rel=1e-9)  # linear: W = L I^2 / 2
    seg = {s["name"]: s for s in h.segments}
    for name in SEG:
        # Every segment carries the same flux in series; B = flux / its own area.
        assert seg[name]["B"] == pytest.approx(flux / (SEG[name][1] * MM**2), rel=1e-9), name
        assert seg[name]["mmf_drop"] == pytest.approx(flux * r_core[name], rel=1e-9), name
    for i in (0, 1):
        # Gap B = flux over the gap's effective area g*P/mu0 (compare.models.hand).
        a_eff = FACE[i][0] * MM / (mu_0 * r_gap[i])
        assert seg[f"gap{i}"]["B"] == pytest.approx(flux / a_eff, rel=1e-9), i
        assert seg[f"gap{i}"]["mmf_drop"] == pytest.approx(flux * r_gap[i], rel=1e-9), i
    assert h.gap_B == pytest.approx(flux / (FACE[0][0] * MM / (mu_0 * r_gap[0])), rel=1e-9)
    # Path averages, length-weighted over the four core segments (compare.models.hand).
    lengths = {k: case_len for k, case_len in
               ((n, seg[n]["length"]) for n in SEG)}
    tot = sum(lengths.values())
    assert h.core_B == pytest.approx(
        sum(flux / (SEG[n][1] * MM**2) * lengths[n] for n in SEG) / tot, rel=1e-9)


def test_high_permeability_limit_is_the_gaps_alone():
    mu_r = 1e9
    h = run_hand(make(mu_r, "none"), fringing="none", planar=True)
    # Source: ideal gapped core, mu_r -> infinity (docs/references.md section 2):
    # the MMF drops across the gaps only, flux = N I / sum(g/(mu0 a b)).
    # Tolerance 1e-5: the core's share of the reluctance at mu_r = 1e9 is
    # ~ (l_c/A_c)/(mu_r g/A_g) ~ 1e-6.
    flux = N * I / (gap_reluctance(0, "none", True) + gap_reluctance(1, "none", True))
    assert h.flux == pytest.approx(flux, rel=1e-5)
    seg = {s["name"]: s for s in h.segments}
    # Each gap's B: flux over its own face a*b (different faces, different B).
    assert seg["gap0"]["B"] == pytest.approx(flux / (RIGHT * DEPTH * MM**2), rel=1e-5)
    assert seg["gap1"]["B"] == pytest.approx(flux / (TOP * DEPTH * MM**2), rel=1e-5)
    # MMF split between the gaps in proportion to their reluctances g/a.
    share0 = (G0 / RIGHT) / (G0 / RIGHT + G1 / TOP)
    assert seg["gap0"]["mmf_drop"] == pytest.approx(share0 * N * I, rel=1e-5)


# --------------------------------------------------------------------------- EI core
# Invented dimensions (mm): centre limb 20, outer limbs 7 (not the default half
# of the centre), yokes 9, windows 11 x 28, stack 15; a 0.4 mm centre gap;
# 60 turns at 1.5 A on the centre limb.
EC, EO, EY, EWW, EWH, ED = 20, 7, 9, 11, 28, 15
EG, EN, EI_ = 0.4, 60, 1.5
# Written out by hand: each limb runs between the yoke centre lines; each yoke
# from the outer limb's centre line to the centre line of its half of the
# centre limb (c/4 from the centre), so a T-junction square is counted once
# (compare.design.families.EICore.segments).
E_XL, E_XC = EO / 2, EO + EWW + EC / 2
E_YB, E_YT = EY / 2, EWH + 2 * EY - EY / 2
E_YOKE = E_XC - E_XL - EC / 4                 # 19.5 mm
E_SEG = {  # name: (length mm, area mm^2)
    "centre": (E_YT - E_YB, EC * ED),        # 37 mm, 300 mm^2
    "left": (E_YT - E_YB, EO * ED),          # 37 mm, 105 mm^2
    "right": (E_YT - E_YB, EO * ED),
    "top-left": (E_YOKE, EY * ED),           # 19.5 mm, 135 mm^2
    "bottom-left": (E_YOKE, EY * ED),
    "top-right": (E_YOKE, EY * ED),
    "bottom-right": (E_YOKE, EY * ED),
}


def test_ei_segments_count_the_iron_once():
    # The segments' volume (length x area) equals the real core's: outer
    # rectangle minus the two windows (exact arithmetic on the dimensions).
    case = ei_case(2000.0)
    volume = sum(s.length * s.area for s in case.family_model.segments(case.core))
    width, height = 2 * EO + 2 * EWW + EC, EWH + 2 * EY
    assert volume == pytest.approx((width * height - 2 * EWW * EWH) * ED * MM**3, rel=1e-12)


def ei_case(mu_r: float):
    return case_from_dict({
        "case": {"name": "ei-unequal", "family": "ei-core"},
        "core": {"centre_width": f"{EC} mm", "outer_width": f"{EO} mm",
                 "yoke_width": f"{EY} mm", "window_width": f"{EWW} mm",
                 "window_height": f"{EWH} mm", "depth": f"{ED} mm"},
        "gaps": [{"limb": "centre", "length": f"{EG} mm"}],
        "winding": {"limb": "centre", "turns": EN, "current": f"{EI_} A",
                    "thickness": "6 mm", "length": "20 mm"},
        "materials": {"core": {"mu_r": mu_r}},
        "hand": {"fringing": "none"},
    })


def test_segments_of_an_ei_core_with_unequal_limbs():
    case = ei_case(2000.0)
    segs = {s.name: s for s in case.family_model.segments(case.core)}
    assert set(segs) == set(E_SEG)
    for name, (length, area) in E_SEG.items():
        # Exact arithmetic on the dimensions above; 1e-12 is float rounding.
        assert segs[name].length == pytest.approx(length * MM, rel=1e-12), name
        assert segs[name].area == pytest.approx(area * MM**2, rel=1e-12), name


@pytest.mark.parametrize("mu_r", [500.0, 5000.0])
def test_ei_series_parallel_circuit_closed_form(mu_r):
    # Source: exact solution of the linear magnetic circuit (Kirchhoff's laws
    # for MMF and flux): the centre limb and its gap in series with the two
    # outer branches (outer limb + its two yokes) in parallel.
    def rel(name):
        length, area = E_SEG[name]
        return length * MM / (mu_0 * mu_r * area * MM**2)

    gap_len = EG * MM
    r_centre = rel("centre") * (E_SEG["centre"][0] * MM - gap_len) / (E_SEG["centre"][0] * MM)
    r_gap = gap_len / (mu_0 * EC * MM * ED * MM)
    r_side = rel("left") + rel("top-left") + rel("bottom-left")
    r_total = r_centre + r_gap + r_side / 2
    flux = EN * EI_ / r_total
    res = run_hand(ei_case(mu_r))
    # Tolerance 1e-9: linear network solved to 1e-10 relative.
    assert res.flux == pytest.approx(flux, rel=1e-9)
    assert res.inductance == pytest.approx(EN**2 / r_total, rel=1e-9)


def test_ei_high_permeability_limit_is_the_gap_alone():
    # Source: ideal gapped core (docs/references.md section 2 [exact]): mu_r -> inf,
    # B_g = mu0 N I / g. Tolerance 1e-5: the core's reluctance at mu_r = 1e9.
    res = run_hand(ei_case(1e9))
    assert res.gap_B == pytest.approx(mu_0 * EN * EI_ / (EG * MM), rel=1e-5)
