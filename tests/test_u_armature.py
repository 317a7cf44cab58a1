"""The u-armature family: a U core and an armature across its pole faces.

Verifies the hand model against its closed form (ideal gaps, an ideal
core), the geometry both models are given, the force in the check (the two
FE methods agree, the FE converges), and that bad cores name their key.
"""

from __future__ import annotations

import math
import tomllib
from pathlib import Path

import pytest

from magcheck.analytic.constants import mu_0
from magcheck.compare.reading.casefile import case_from_dict
from magcheck.compare.design.coremodel import core_model
from magcheck.compare.errors import CaseError
from magcheck.compare.models.fe import case_layout
from magcheck.compare.models.hand import run_hand

CASES = Path(__file__).resolve().parents[1] / "cases"


def _doc(**core) -> dict:
    d = tomllib.loads((CASES / "demo_clapper_relay.toml").read_text())
    d["core"].update(core)
    return d


def test_hand_model_against_the_ideal_closed_form():
    # Source: exact for ideal gaps (P = mu0 A/g, no fringing) and an ideal
    # core: two gaps in series, L = N^2 mu0 A / (2 g); each gap takes N I / 2,
    # so the pull on the armature is 2 x (1/2)(N I/2)^2 mu0 A / g^2
    d = _doc(stroke="0.8 mm")
    d["materials"]["core"] = {"mu_r": 1e12}
    d["hand"]["fringing"] = "none"
    h = run_hand(case_from_dict(d))
    n, i, a, g = 1200, 0.15, 8e-3 * 12e-3, 0.8e-3
    assert h.inductance == pytest.approx(n * n * mu_0 * a / (2 * g), rel=1e-9)
    assert h.force_values["force"] == pytest.approx((n * i) ** 2 * mu_0 * a / (4 * g * g),
                                                    rel=1e-9)
    assert h.force_values["force_pull"] == pytest.approx(h.force_values["force"], rel=1e-9)
    assert h.gap_B == pytest.approx(mu_0 * n * i / (2 * g), rel=1e-9)


@pytest.mark.parametrize("planar", [True, False])
def test_armature_limited_faces_against_the_flux_tube_closed_form(planar):
    # Source: Roters, Electromagnetic Devices, Wiley 1941 (docs: the
    # flux-tube model's edge term), evaluated here by hand: per edge a half
    # solid cylinder 0.26 mu0 L and a half hollow cylinder
    # (mu0 L / pi) ln(1 + 2 t/g), t the shorter free face of the two sides.
    # The armature (5 mm thick) offers 5 mm at the outer and the two depth
    # edges; at the inner edge its underside runs across the 14 mm window,
    # 7 mm to each leg; the legs' faces are longer (22-30 mm).  Ideal iron,
    # two equal gaps in series: L = N^2 P / 2 (exact for the network).
    # Tolerance 1e-9: the network's solve.
    d = _doc(stroke="0.8 mm")
    d["materials"]["core"] = {"mu_r": 1e12}
    h = run_hand(case_from_dict(d), planar=planar)
    n, a, b, g = 1200, 8e-3, 12e-3, 0.8e-3

    def edge(t: float) -> float:
        return 0.26 + math.log(1 + 2 * t / g) / math.pi

    k_plane = 1 + g / a * (edge(5e-3) + edge(7e-3))
    k_depth = 1 + g / b * 2 * edge(5e-3)
    p = mu_0 * a * b / g * k_plane * (1.0 if planar else k_depth)
    assert h.inductance == pytest.approx(n * n * p / 2, rel=1e-9)


def test_geometry_of_both_models():
    case = case_from_dict(_doc())
    model = core_model(case)
    regions = {r.name: r for r in case_layout(case).regions}
    arm = regions["armature"].shapes[0]
    assert (arm.y0 - 30e-3, arm.y1 - arm.y0, arm.x1 - arm.x0) == pytest.approx((0.8e-3, 5e-3,
                                                                                 30e-3))
    gl = regions["gapL"].shapes[0]
    assert (gl.x1 - gl.x0, gl.y1 - gl.y0) == pytest.approx((8e-3, 0.8e-3))
    assert model.force.body == ("armature",) and model.force.direction == (0.0, -1.0)
    # mean path: legs 26 mm (yoke centre line to the pole face), armature 27 mm
    # (22 mm between the legs' centre lines + 5 mm), yoke 22 mm
    lengths = {s.name: s.length for s in model.circuit.segments}
    assert lengths == pytest.approx({"left": 26e-3, "armature": 27e-3, "right": 26e-3,
                                     "yoke": 22e-3})


def test_two_windings_on_both_legs_add_with_the_legs_sense():
    # the same N I split over both legs drives the same flux (ideal core) when
    # the right leg's current is reversed: coils placed alike on the two legs
    # drive each leg's flux the same way (down), which is opposite senses round
    # the loop, as in both models (compare.design.geometry.flux_direction)
    one = _doc()
    one["materials"]["core"] = {"mu_r": 1e9}
    two = _doc()
    two["materials"]["core"] = {"mu_r": 1e9}
    del two["winding"]
    w = dict(one["winding"], turns=600)
    two["windings"] = [dict(w, name="a"), dict(w, name="b", limb="right", current="-0.15 A")]
    a = run_hand(case_from_dict(one))
    b = run_hand(case_from_dict(two))
    assert abs(b.gap_B) == pytest.approx(a.gap_B, rel=1e-6)
    assert b.force_values["force"] == pytest.approx(a.force_values["force"], rel=1e-6)


@pytest.mark.parametrize("core, key, words", [
    ({"stroke": "9 mm"}, "core.stroke", "not shorter"),
    ({"stroke": "0 mm"}, "core.stroke", "positive"),
    ({"leg_width": "-8 mm"}, "core.leg_width", "positive"),
])
def test_bad_cores_name_the_key(core, key, words):
    with pytest.raises(CaseError) as info:
        case_from_dict(_doc(**core))
    assert info.value.key == key and words in str(info.value)


def test_gaps_table_is_refused():
    d = _doc()
    d["gaps"] = [{"limb": "left", "length": "0.5 mm"}]
    with pytest.raises(CaseError) as info:
        case_from_dict(d)
    assert "stroke" in str(info.value)


@pytest.mark.slow
def test_check_force_methods_agree_and_converge():
    from magcheck.compare.judge.check import run_check

    res = run_check(case_from_dict(_doc()))
    fv = res.fe.fine.force_values
    # two independent FE methods within 1e-3 (fem2d.force; as the selftest holds them)
    assert fv["force_virtual_work"] == pytest.approx(fv["force_maxwell"], rel=1e-3)
    # the three-mesh uncertainty of the force is small at the case's mesh
    assert res.fe.uncertainty["force"] / fv["force"] < 0.02
    rows = {r.key: r for r in res.rows}
    assert rows["margin:force_min"].verdict == "pass"


@pytest.mark.slow
def test_force_stroke_sweep(tmp_path):
    from magcheck.compare.design.keys import parse_vary
    from magcheck.compare.outputs.plots import sweep_figures
    from magcheck.compare.studies.sweep import case_source, run_sweep, sweep_rows

    src, case = case_source(CASES / "demo_clapper_relay.toml")
    res = run_sweep(src, [parse_vary("core.stroke=0.3mm,0.6mm,1.2mm", family=case.family_model)],
                    workers=1)
    f = [p.fe["force_maxwell"] for p in res.points]
    assert f[0] > f[1] > f[2] > 0  # the pull falls with the stroke
    for p in res.points:  # both FE methods at every stroke (fem2d.force; 1e-3 as the selftest)
        assert p.fe["force_virtual_work"] == pytest.approx(p.fe["force_maxwell"], rel=1e-3)
        # the hand forces at every stroke too
        assert p.hand_planar["force"] > 0 and p.hand_planar["force_pull"] > 0
    assert "fe_force_virtual_work" in sweep_rows(res)[0]
    names = [n for n, _ in sweep_figures(res)]
    assert "sweep_force.png" in names
