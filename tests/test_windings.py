"""Several windings: [[windings]] in the case file, concentric placement,
the inductance matrix of both models and its checks."""
from __future__ import annotations

import math
import tomllib
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest

from magcheck.compare.reading.casefile import case_from_dict
from magcheck.compare.judge.check import run_check
from magcheck.compare.errors import CaseError
from magcheck.compare.models.fe import (case_layout, coil_name, mesh_case, run_fe, solve_case,
                                        winding_currents)
from magcheck.compare.models.hand import run_hand
from magcheck.compare.design.keys import key_dimension, parse_vary
from magcheck.compare.outputs.serialize import check_json

CASES = Path(__file__).resolve().parents[1] / "cases"


def _doc() -> dict:
    return tomllib.loads((CASES / "demo_coupled_inductor.toml").read_text())


def _case(mutate=None):
    d = _doc()
    if mutate:
        mutate(d)
    return case_from_dict(d)


def test_windings_are_read_in_order_with_their_names():
    case = _case()
    assert [w.name for w in case.windings] == ["A", "B"]
    assert case.winding is case.windings[0]
    assert case.windings[1].current == pytest.approx(-2.0)
    assert case.windings[1].clearance == pytest.approx(0.8e-3, abs=1e-15)


def test_concentric_windings_stack_outward_in_file_order():
    # EI centre limb x in [20, 36] mm (window 12 mm each side); inner coil
    # 0.5 mm off the limb, 3 mm build; outer coil 1 mm further out, 4 mm
    # build: outer coil from 36 + 0.5 + 3 + 1 = 40.5 mm to 44.5 mm (exact)
    d = tomllib.loads((CASES / "demo_ei_inductor.toml").read_text())
    del d["winding"]
    d["windings"] = [
        {"name": "inner", "limb": "centre", "turns": 50, "current": "1 A",
         "thickness": "3 mm", "length": "28 mm", "clearance": "0.5 mm"},
        {"name": "outer", "limb": "centre", "turns": 20, "current": "1 A",
         "thickness": "4 mm", "length": "28 mm", "clearance": "1 mm"}]
    case = case_from_dict(d)
    assert case.windings[1].inner == pytest.approx(3.5e-3, abs=1e-15)
    regions = {r.name: r.shapes[0] for r in case_layout(case).regions}
    assert regions["coil+"].x0 == pytest.approx(36.5e-3, abs=1e-12)
    assert regions["coil1+"].x0 == pytest.approx(40.5e-3, abs=1e-12)
    assert regions["coil1+"].x1 == pytest.approx(44.5e-3, abs=1e-12)
    assert regions["coil1-"].x1 == pytest.approx(20e-3 - 4.5e-3, abs=1e-12)
    # on one limb both coils link the same core flux the same way: the
    # mutual inductance is positive in both models
    h = run_hand(case)
    assert h.inductance_matrix()[0][1] > 0
    # too much: the outer coil no longer fits beside the inner one
    d["windings"][1]["thickness"] = "8 mm"
    with pytest.raises(CaseError, match="window width left beside the windings inside") as e:
        case_from_dict(d)
    assert e.value.key == "windings[1].thickness"


@pytest.mark.parametrize("mutate, key, words", [
    (lambda d: d.update(winding=dict(d["windings"][0])), "windings", "not both"),
    (lambda d: d["windings"][1].update(name="A"), "windings[1].name", "names must differ"),
    (lambda d: d["windings"][1].update(thickness="30 mm"), "windings[1].thickness",
     "overlaps winding 'A'"),
    (lambda d: d["windings"][1].update(turns=0), "windings[1].turns", None),
    (lambda d: d["windings"][1].update(colour="red"), "windings[1].colour", "unknown key"),
    (lambda d: d.update(windings=[]), "windings", "at least one"),
    (lambda d: d.update(hand={"leakage": True}), "hand.leakage", "one winding"),
])
def test_bad_windings_name_the_key(mutate, key, words):
    with pytest.raises(CaseError, match=words) as e:
        _case(mutate)
    assert e.value.key == key


def test_windings_keys_vary():
    assert key_dimension("windings[1].current") == "current"
    assert parse_vary("windings[1].turns=10,20").values == (10.0, 20.0)


def test_hand_matrix_is_symmetric_and_its_first_entry_is_the_one_winding_inductance():
    # exact: the network with the second winding at zero current is the
    # one-winding network (a source of zero MMF adds nothing)
    case = _case(lambda d: d["windings"][1].update(current="0 A"))
    h = run_hand(case)
    L = np.array(h.inductance_matrix())
    assert L == pytest.approx(L.T, rel=1e-9)
    one = replace(case, extra_windings=())
    assert L[0, 0] == pytest.approx(run_hand(one).incremental_inductance, rel=1e-12)
    # one magnetic path, no leakage: the hand model couples perfectly, |k| = 1
    assert abs(L[0, 1]) == pytest.approx(np.sqrt(L[0, 0] * L[1, 1]), rel=1e-9)


@pytest.mark.slow
def test_fe_matrix_symmetric_first_entry_as_one_winding_and_equal_to_finite_differences():
    case = _case(lambda d: d["windings"][1].update(current="0 A"))
    q, sol, _ = run_fe(case)
    wv = q.winding_values
    L = np.array([[wv["L:A,A"], wv["L:A,B"]], [wv["L:B,A"], wv["L:B,B"]]])
    assert L[0, 1] == pytest.approx(L[1, 0], rel=1e-8)
    # the second coil's region is air either way, so only the mesh differs:
    # within the one-winding case's FE uncertainty
    one = replace(case, extra_windings=())
    res = run_check(one)
    assert abs(L[0, 0] - res.fe.values["incremental_inductance"]) \
        <= res.fe.uncertainty["incremental_inductance"]
    # the matrix from the tangent solves against central differences of
    # the flux linkages in the other winding's current (1e-4, on one mesh)
    from magcheck.fem2d import post

    mesh = mesh_case(case)
    d = 0.01
    lam = []
    for ib in (-d, d):
        c2 = replace(case, extra_windings=(replace(case.windings[1], current=ib),))
        _, s2, _ = solve_case(c2, mesh)
        lam.append(post.coil_flux_linkage(s2, coil_name(0)))
    assert (lam[1] - lam[0]) / (2 * d) == pytest.approx(L[0, 1], rel=1e-4)
    assert set(winding_currents(case)) == {"winding", "winding1"}


@pytest.mark.slow
def test_check_reports_the_matrix_rows_and_json(tmp_path):
    res = run_check(_case())
    keys = [r.key for r in res.rows]
    for k in ("flux_linkage:A", "flux_linkage:B", "L:A,A", "L:A,B", "L:B,B", "coupling:A,B"):
        assert k in keys
    rows = {r.key: r for r in res.rows}
    # the windings sit on opposite limbs with the coils' senses opposed
    # around the loop: the mutual inductance is negative in both models
    assert rows["L:A,B"].hand < 0 and rows["L:A,B"].fe < 0
    assert -1.0 <= rows["coupling:A,B"].fe < -0.9
    doc = check_json(res)
    for block in ("hand", "hand_planar", "fe"):
        assert np.shape(doc[block]["inductance_matrix"]) == (2, 2)
        assert len(doc[block]["flux_linkages"]) == 2
    assert doc["fe"]["inductance_matrix"][0][1] == pytest.approx(rows["L:A,B"].fe)
    # the coupling matrix: k = L_AB / sqrt(L_AA L_BB), the check's row, 1 on the diagonal
    lm = doc["fe"]["inductance_matrix"]
    assert doc["fe"]["coupling"][0][1] == pytest.approx(lm[0][1] / math.sqrt(lm[0][0] * lm[1][1]),
                                                        rel=1e-12)
    assert doc["fe"]["coupling"][1][0] == pytest.approx(rows["coupling:A,B"].fe, rel=1e-9)
    assert doc["hand_planar"]["coupling"][0][1] == pytest.approx(rows["coupling:A,B"].hand,
                                                                 rel=1e-9)
    assert doc["hand"]["coupling"][0][0] == pytest.approx(1.0)
    assert doc["fe"]["uncertainty"]["inductance_matrix"][0][1] == pytest.approx(
        rows["L:A,B"].uncertainty)


def test_one_winding_json_keeps_its_keys_and_adds_a_one_by_one_matrix():
    from magcheck.compare.reading.casefile import load_case

    h = run_hand(load_case(CASES / "demo_choke.toml")).to_dict()
    assert h["windings"] == ["main"]
    assert h["inductance_matrix"] == [[h["incremental_inductance"]]]
    assert h["flux_linkages"] == [h["flux_linkage"]]


def _dominated(current_a: str):
    # winding A (10 turns) on the left, B (60 turns at 4 A) on the right: B
    # drives the core against A's own sense
    def mutate(d):
        d["windings"][0].update(turns=10, current=current_a)
        d["windings"][1].update(turns=60, current="4 A")
    return _case(mutate)


def test_the_first_windings_rows_keep_their_signs_when_another_winding_dominates():
    # exact in the hand network: with several windings the reported flux
    # linkage is the first winding's own (signed) linkage, the secant
    # inductance lambda/I with its sign; at zero current in the first winding
    # its secant value is the incremental L_AA, and the flux is not zero
    h = run_hand(_dominated("1 A"))
    lam = h.winding_values["flux_linkage:A"]
    assert lam < 0
    assert h.flux_linkage == lam
    assert h.inductance == pytest.approx(lam / 1.0, rel=1e-12)
    assert h.flux < 0 and h.gap_B < 0  # with lambda's sign
    h0 = run_hand(_dominated("0 A"))
    assert h0.inductance == pytest.approx(h0.winding_values["L:A,A"], rel=1e-12)
    assert h0.flux_linkage == h0.winding_values["flux_linkage:A"] != 0


@pytest.mark.slow
def test_the_fe_signs_follow_the_same_rule():
    q = run_fe(_dominated("1 A"))[0]
    lam = q.winding_values["flux_linkage:A"]
    assert lam < 0 and q.values["flux_linkage"] == pytest.approx(lam, rel=1e-12)
    assert q.values["inductance"] == pytest.approx(lam, rel=1e-12)
    assert q.values["flux"] < 0 and q.values["gap_B"] < 0


def test_the_first_windings_keys_work_in_either_form_of_the_file():
    from magcheck.compare.front.api import sweep

    sw = sweep(_doc(), "winding.current=1A,2A", with_fe=False)
    assert [p.current for p in sw.points] == [1.0, 2.0]
    d = tomllib.loads((CASES / "demo_choke.toml").read_text())
    sw = sweep(d, "windings[0].turns=40,80", with_fe=False)
    assert sw.points[1].hand["inductance"] == pytest.approx(
        4 * sw.points[0].hand["inductance"], rel=0.2)  # ~N^2 (the core saturates a little)
