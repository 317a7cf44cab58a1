"""The working gaps' faces as every family builds them: one definition of the
flux-factor model's free height G (the window's height beside the gapped
limb), evaluated against the published formula with each demo's dimensions
typed again here.
"""

from __future__ import annotations

import math
from pathlib import Path

import pytest

from magcheck.analytic.constants import mu_0

from magcheck.analytic.fringing import flux_factor, gap_permeance
from magcheck.compare.front import api
from magcheck.compare.reading.casefile import case_from_dict
from magcheck.compare.design.coremodel import core_model
from magcheck.compare.models.hand import gap_face

CASES = Path(__file__).resolve().parents[1] / "cases"


def _mclyman(g: float, area: float, window: float) -> float:
    # Source: McLyman, Transformer and Inductor Design Handbook, 4th ed., 2011
    # [secondary, via Liao & Chen, J. Eng. 2022, eq. 20]:
    # F = 1 + (g / sqrt(A_c)) ln(2 G / g), G the winding window's height
    return 1.0 + g / math.sqrt(area) * math.log(2.0 * window / g)


# (demo, gap, gap length, face area, the window's height beside the gapped
# limb), typed from the case files (m)
ROUND = [
    # pot core: 0.4 mm gap in the post (r 1.5-5.4 mm), window 11 mm high:
    # F = 1.1743 (with half the window, as before, 1.1426)
    ("demo_pot_core_choke", "gap", 0.4e-3, math.pi * (5.4e-3 ** 2 - 1.5e-3 ** 2), 11e-3),
    # plunger: 3 mm over the 6 mm plunger's disc; the coil space between the
    # 3 mm plates of the 40 mm length, 34 mm
    ("demo_plunger_solenoid", "gap", 3e-3, math.pi * 6e-3 ** 2, 34e-3),
    # holding magnet: 0.3 mm over the 8 mm pole and the 17-20 mm wall; the
    # cup's 12 mm height beside the pole (magnet included)
    ("demo_holding_magnet", "gap-pole", 0.3e-3, math.pi * 8e-3 ** 2, 12e-3),
    ("demo_holding_magnet", "gap-wall", 0.3e-3, math.pi * (20e-3 ** 2 - 17e-3 ** 2), 12e-3),
    # clapper: 0.8 mm under the 8 x 12 mm pole faces, the U's 22 mm window
    ("demo_clapper_relay", "gapL", 0.8e-3, 8e-3 * 12e-3, 22e-3),
]


@pytest.mark.parametrize("demo, gap, g, area, window", ROUND)
def test_flux_factor_takes_the_window_height_in_every_family(demo, gap, g, area, window):
    # one definition: G = the window's height beside the gapped limb,
    # whatever the gap's place along it.  Tolerance 1e-12: rounding.
    faces = {c.name: c.face for c in core_model(api.load(CASES / f"{demo}.toml")).circuit.gaps}
    assert flux_factor(faces[gap]) == pytest.approx(_mclyman(g, area, window), rel=1e-12)


def test_flux_factor_of_the_window_core_takes_its_window_height():
    # demo choke: 60 x 70 mm frame, 12 mm limbs, 20 mm deep: window 46 mm high
    face = gap_face(api.load(CASES / "demo_choke.toml"), 0)
    assert flux_factor(face) == pytest.approx(_mclyman(0.6e-3, 12e-3 * 20e-3, 46e-3), rel=1e-12)


def test_facing_edges_split_the_window_they_share():
    # The edges that face each other across a window (a u-armature's two
    # inner edges, a holding magnet's pole and wall) each take half of the
    # armature's or keeper's underside across it, so that their fringing
    # tubes do not fill the same volume; the outer and depth edges of the
    # u-armature have the armature's 5 mm thickness
    clapper = core_model(api.load(CASES / "demo_clapper_relay.toml")).circuit.gaps[0].face
    assert clapper.sides is not None
    assert clapper.sides.plus[1] == pytest.approx(0.5 * 14e-3)
    assert (clapper.sides.minus[1], clapper.sides.depth[1]) == pytest.approx((5e-3, 5e-3))
    faces = {c.name: c.face for c in
             core_model(api.load(CASES / "demo_holding_magnet.toml")).circuit.gaps}
    pole, wall = faces["gap-pole"].sides, faces["gap-wall"].sides
    assert pole is not None and wall is not None
    window = 17e-3 - 8e-3
    assert pole.plus[1] + wall.minus[1] == pytest.approx(window)
    assert pole.plus[1] == pytest.approx(wall.minus[1])


def _choke(gaps: list[dict]):
    import tomllib

    d = tomllib.loads((CASES / "demo_choke.toml").read_text())
    d["gaps"] = gaps
    d["hand"]["fringing"] = "flux-tube"
    return case_from_dict(d)


def test_gaps_facing_each_other_across_a_window_share_it():
    # demo choke: 60 x 70 mm frame, 12 mm limbs, 20 mm deep, window 36 x 46 mm.
    # A 0.6 mm gap mid-height in each vertical limb: their window-side edges
    # face each other across the 36 mm window and each tube may take 18 mm;
    # alone, a gap's tube may cross the whole window.  Mirror images alike.
    both = _choke([{"limb": "left", "length": "0.6 mm"}, {"limb": "right", "length": "0.6 mm"}])
    left, right = gap_face(both, 0), gap_face(both, 1)
    assert left.sides is not None and right.sides is not None
    assert left.sides.room == pytest.approx((math.inf, 18e-3))
    assert right.sides.room == pytest.approx((18e-3, math.inf))
    for planar in (True, False):
        assert gap_permeance(left, "flux-tube", planar) == pytest.approx(
            gap_permeance(right, "flux-tube", planar), rel=1e-12)
    alone = gap_face(_choke([{"limb": "left", "length": "0.6 mm"}]), 0)
    assert alone.sides is not None and alone.sides.room == pytest.approx((math.inf, 36e-3))
    # far apart along the limbs (more than the window's width), they do not
    # share it
    apart = _choke([{"limb": "left", "length": "0.6 mm", "position": "2 mm"},
                    {"limb": "right", "length": "0.6 mm", "position": "44 mm"}])
    assert gap_face(apart, 0).sides.room == pytest.approx((math.inf, 36e-3))
    # Source: Roters 1941 flux tubes (tests/test_u_armature.py's edge term),
    # evaluated by hand: outer edge t = 34.7 mm (to the frame's corners),
    # window edge t = min(22.7 mm to the yokes, 18 mm); tolerance: rounding
    g, a = 0.6e-3, 12e-3

    def edge(t: float) -> float:
        return 0.26 + math.log(1 + 2 * t / g) / math.pi

    k_plane = 1 + g / a * (edge(34.7e-3) + edge(18e-3))
    assert gap_permeance(left, "flux-tube", True) == pytest.approx(
        mu_0 * a * 20e-3 / g * k_plane, rel=1e-12)
