"""Signs with a magnet, windings whose fields cancel, and canned notes that
follow the numbers (compare.models.hand.signed, compare.judge.check.build_rows/explain,
compare.outputs.serialize).

Each note test builds the rows it reads with the note's condition true and
false: a note claims a direction, a non-zero field or a current, and must not
appear where the numbers say otherwise.
"""

from __future__ import annotations

import math
import tomllib
from pathlib import Path
from types import SimpleNamespace

import pytest

from magcheck.compare.reading.casefile import case_from_dict, load_case
from magcheck.compare.judge.check import (HAND_KEYS, LABELS, NET_MMF_KEYS, Row, build_rows,
                                          cancelling_windings, explain)
from magcheck.compare.models.fe import FEQuantities, FEResult
from magcheck.compare.models.hand import UNITS, magnet_sense, run_hand, winding_keys
from magcheck.compare.outputs.serialize import breakdown_note, table_cells

ROOT = Path(__file__).resolve().parents[1]
MAGNET = ROOT / "tests" / "data" / "holding_magnet.toml"
COUPLED = ROOT / "cases" / "demo_coupled_inductor.toml"


def _magnet_case(current: float):
    d = tomllib.loads(MAGNET.read_text())
    d["winding"]["current"] = current
    return case_from_dict(d)


def _cancel_case(current_b: float = 2.0):
    """The coupled-inductor demo with equal windings (60 turns, 2 A): on the
    window core's two vertical limbs positive currents oppose round the loop
    (compare.models.hand.winding_signs gives (1, -1))."""
    d = tomllib.loads(COUPLED.read_text())
    a, b = d["windings"]
    a["current"], b["turns"], b["current"] = 2.0, 60, current_b
    return case_from_dict(d)


# ----------------------------------------------------------------- magnets: signs
@pytest.mark.parametrize("current", [-1.0, 0.0, 1.0])
def test_hand_magnet_quantities_point_along_the_magnet(current):
    # Source: definition (compare.models.hand.signed): with a magnet, flux, gap B and
    # flux linkage are positive along the magnet's own direction; a +-1 A
    # release coil moves the demo's 100 A-turns against a magnet MMF of
    # B_r l_m / (mu0 mu_r) = 1.47 kA-turns, far from reversing the flux.
    case = _magnet_case(current)
    h = run_hand(case)
    assert h.gap_B > 0 and h.flux > 0 and h.flux_linkage > 0
    assert h.magnet_values["magnet_B"] > 0  # the same direction as the gap's
    pole = next(s for s in h.segments if s["name"] == "gap-pole")
    assert pole["B"] > 0 and pole["flux"] > 0


def test_the_negative_current_releases_this_holding_magnet():
    # Source: superposition on the hand network (linear gaps and magnet):
    # the current sign that opposes the magnet lowers the gap flux and the
    # holding force; magnet_sense names it (+1: a negative current opposes).
    assert magnet_sense(_magnet_case(0.0)) == 1
    f = {i: run_hand(_magnet_case(i)) for i in (-1.0, 0.0, 1.0)}
    assert f[-1.0].flux < f[0.0].flux < f[1.0].flux
    assert (f[-1.0].force_values["force"] < f[0.0].force_values["force"]
            < f[1.0].force_values["force"])
    # no magnet: the convention is the current's sign, as before
    d = tomllib.loads(COUPLED.read_text())
    assert magnet_sense(case_from_dict(d)) == 0


@pytest.mark.slow
def test_fe_and_rows_with_a_magnet_at_the_release_current():
    # Source: definition (compare.models.hand.signed), both models: at -1 A (the
    # release sign) the gap B, flux and flux linkage are positive in the FE
    # as in the hand column, and lambda/I is info while dlambda/dI is judged.
    from magcheck.compare.judge.check import run_check

    res = run_check(_magnet_case(-1.0), estimate_error=False)
    r = {row.key: row for row in res.rows}
    for k in ("gap_B", "flux", "flux_linkage"):
        assert r[k].hand > 0 and r[k].fe > 0, k
    assert r["inductance"].verdict == "info" and r["inductance"].limit_pct is None
    assert r["incremental_inductance"].limit_pct is not None
    assert r["incremental_inductance"].verdict in ("pass", "FAIL", "within FE noise")
    # lambda/I counts the magnet's linkage: several times the coil's dlambda/dI
    assert r["inductance"].hand > 3 * r["incremental_inductance"].hand
    text = " ".join(res.notes)
    assert "a negative winding current opposes the magnet (releases it), as here" in text
    assert "counts the magnet's own flux linkage" in text


# ----------------------------------------------------------------- synthetic rows for notes
def _rows(case, diffs: dict[str, float], *, secant_hand: float = 1e-3) -> tuple[Row, ...]:
    out = []
    for k in HAND_KEYS:
        d = diffs.get(k, 0.0)
        fe = 1.0
        hand = secant_hand if k == "inductance" else fe * (1 + d / 100)
        out.append(Row(k, LABELS[k], UNITS[k], hand, fe, math.nan, d, 10.0, "pass",
                       hand_3d=hand, fe_3d=fe))
    return tuple(out)


def _fe(peak: float, max_b: float) -> SimpleNamespace:
    return SimpleNamespace(fine=SimpleNamespace(peak_B=peak, max_B=max_b,
                                                peak_B_at=(0.01, 0.02)))


def _notes(case, diffs=None, peak=0.5, max_b=0.9, hand=None, **kw) -> str:
    hand = hand or run_hand(case, planar=True)
    return " ".join(explain(case, _rows(case, diffs or {}, **kw), hand, _fe(peak, max_b)))


def test_corner_crowding_note_only_where_the_fe_h_is_higher():
    case = load_case(ROOT / "cases" / "demo_choke.toml")
    # hand path H below the FE's: the FE's H crowds at the corners
    assert "crowds to the inner corners" in _notes(case, {"path_H": -20.0})
    # hand above the FE: the crowding cannot explain it
    above = _notes(case, {"path_H": 20.0})
    assert "crowds" not in above and "20 % higher by hand" in above
    # the spreading at a lower B is claimed only where the core B row shows it
    assert "lower B" in _notes(case, {"path_H": 20.0, "core_B": 8.0})
    assert "lower B" not in above and "lower B" not in _notes(case, {"path_H": 20.0,
                                                                      "core_B": -8.0})
    assert "Path-averaged H" not in _notes(case, {"path_H": 2.0})


def test_singular_corner_note_needs_a_field():
    case = load_case(ROOT / "cases" / "demo_choke.toml")
    assert "singular" in _notes(case, peak=0.5, max_b=0.9)
    assert "singular" not in _notes(case, peak=0.0, max_b=0.0)  # no field at all


def test_secant_note_follows_the_current_with_a_magnet():
    at0 = _notes(_magnet_case(0.0))
    assert "At zero current lambda/I has no value" in at0
    assert "counts the magnet's own flux linkage" not in at0
    at1 = _notes(_magnet_case(1.0), secant_hand=7.754e-3)
    assert "counts the magnet's own flux linkage" in at1 and "7.754 mH" in at1
    assert "At zero current" not in at1 and "this one aids it" in at1
    assert "releases" in _notes(_magnet_case(-1.0)) and "as here" in _notes(_magnet_case(-1.0))
    # without a magnet there is no magnet note at all
    assert "Signs with a magnet" not in _notes(load_case(ROOT / "cases" / "demo_choke.toml"))


def test_leakage_note_names_the_hand_models_leakage_paths_when_it_has_them():
    choke = load_case(ROOT / "cases" / "demo_choke.toml")
    assert "the hand model has no leakage path" in _notes(choke, {"flux": -10.0})
    # the holding magnet's circuit has the cup's leakage paths
    hm = _notes(_magnet_case(0.0), {"flux": -10.0})
    assert "no leakage path" not in hm and "more leakage than the hand model's" in hm
    # hand with window leakage switched on
    leaky = run_hand(choke, planar=True, leakage=True)
    assert leaky.leakage_permeance > 0
    assert "no leakage path" not in _notes(choke, {"flux": -10.0}, hand=leaky)


def test_breakdown_note_blames_saturation_only_past_the_knee():
    case = load_case(ROOT / "cases" / "demo_choke.toml")

    def note(peak: float) -> str:
        return breakdown_note(SimpleNamespace(case=case, fe=_fe(peak, peak)))

    assert "local saturation" not in note(0.2)  # demo-sisteel's knee is far above 0.2 T
    assert "local saturation" in note(5.0)


# ----------------------------------------------------------------- windings whose fields cancel
def _fe_result(case) -> FEResult:
    """An FE result standing for the leakage field round the coils (values
    of the planar FE of the cancelling case, rounded: flux 3.2 uWb, each
    linkage 0.17 mWb, self inductance 2.37 mH, mutual -2.28 mH)."""
    vals = {k: 1e-3 for k in HAND_KEYS}
    vals.update(flux=3.2e-6, flux_linkage=1.7e-4, inductance=8.5e-5,
                incremental_inductance=2.367e-3, energy=3.5e-4, gap_B=1e-5)
    lam_keys, l_keys = winding_keys(case)
    wv = {lam_keys[0]: 1.7e-4, lam_keys[1]: 1.786e-4, l_keys[0][0]: 2.367e-3,
          l_keys[0][1]: -2.282e-3, l_keys[1][1]: 2.372e-3}
    q = FEQuantities(values=vals, peak_B=0.014, max_B=0.03, peak_B_at=(0.0, 0.0), iterations=1,
                     residual=0.0, ndofs=1, nelements=1, element_size=1e-3, seconds=0.0,
                     winding_values=wv)
    return FEResult(q, None, {}, None)


def test_cancelling_windings_are_detected_and_their_rows_are_na():
    case = _cancel_case()
    hp, h3 = run_hand(case, planar=True), run_hand(case)
    assert cancelling_windings(case, hp) == ("A", "B")
    rows = {r.key: r for r in build_rows(case, hp, h3, _fe_result(case))}
    lam_keys, _ = winding_keys(case)
    for k in (*NET_MMF_KEYS, *lam_keys):
        assert rows[k].verdict == "n/a" and rows[k].hand == 0.0 and math.isnan(rows[k].fe_3d), k
    assert rows["incremental_inductance"].verdict == "pass"  # -4.9 %, still compared
    cells = [c for r in rows.values() for c in table_cells(r)]
    assert not any("e-" in c or c.startswith("-0 ") for c in cells), cells
    notes = explain(case, tuple(rows.values()), hp, _fe_result(case))
    one = [n for n in notes if "fields cancel" in n]
    assert len(one) == 1 and "A 120 A-turns, B 120 A-turns" in one[0]
    # and no note blames the fringing or the leakage for a -100 % it no longer shows
    assert not any("fringing model" in n or "more flux" in n for n in notes)


def test_windings_that_do_not_cancel_are_compared():
    case = _cancel_case(current_b=1.0)  # net 60 A-turns round the loop
    hp = run_hand(case, planar=True)
    assert cancelling_windings(case, hp) == ()
    assert abs(hp.flux) > 0
    # one winding alone, and the coupled demo as written (60x4 A against 30x-2 A)
    assert cancelling_windings(load_case(COUPLED), run_hand(load_case(COUPLED), planar=True)) == ()


def test_residue_below_the_row_floor_prints_as_zero():
    def row(hand: float, fe: float) -> Row:
        return Row("flux", "flux", "Wb", hand, fe, math.nan, math.nan, None, "n/a",
                   hand_3d=hand, fe_3d=fe)

    assert table_cells(row(3.4e-159, 3.2e-6))[1] == "0 Wb"
    assert table_cells(row(-0.0, 3.2e-6))[1] == "0 Wb"
    assert table_cells(row(2e-9, 3.2e-6))[1] == "2 nWb"  # small but a value: kept
    assert table_cells(row(-3.2e-6, 3.1e-6))[1] == "-3.2 uWb"
    assert table_cells(row(math.nan, 1e-6))[1] == "-"


def _reversed_ring(current: float) -> dict:
    """tests/test_drawn.py's magnet ring (B_r 1.2 T up its right limb) with
    the coil's go and return sides swapped and its circuit branch reversed
    (windings = {main = "-iron"}): a positive current now drives the flux
    against the magnet's, so here a positive current releases."""
    import sys

    sys.path.insert(0, str(ROOT / "tests"))
    from test_drawn import _magnet_ring

    d = _magnet_ring()
    d["fe"]["mesh_size"] = "2 mm"
    d["regions"][2]["side"] = "return"
    del d["regions"][3]["side"]
    d["circuit"]["windings"] = {"main": "-iron"}
    d["windings"][0]["current"] = current
    return d


@pytest.mark.slow
def test_a_magnet_against_the_coil_signs_positive_in_both_models():
    # Source: definition (compare.models.hand.signed): values along the magnet's own
    # direction, whichever way the coil is wound.  Closed ring, iron mu_r 1e5:
    # 500 A-turns against the magnet's B_r l_m/(mu0 mu_r) = 1.82 kA-turns
    # moves the magnet's B by 0.33 T on the load line without reversing it.
    from magcheck.compare.models.fe import run_fe

    seen = {}
    for i in (-500.0, 0.0, 500.0):
        case = case_from_dict(_reversed_ring(i))
        assert magnet_sense(case) == -1
        h = run_hand(case)
        q, _, _ = run_fe(case)
        for name, v in (("hand", h.values()), ("FE", q.values)):
            assert v["flux"] > 0 and v["flux_linkage"] > 0, (i, name)
        seen[i] = (h.magnet_values["magnet_B"], q.magnet_values["magnet_B"])
    # the positive current opposes this magnet in both models
    for k in (0, 1):
        assert seen[500.0][k] < seen[0.0][k] < seen[-500.0][k]


def test_coupling_note_says_k_1_only_when_the_hand_k_is_1():
    case = load_case(ROOT / "cases" / "demo_ei_transformer.toml")
    a, b = (w.name for w in case.windings)
    hand = SimpleNamespace(fringing_model="area", leakage_permeance=0.0)

    def notes(k_hand: float) -> str:
        extra = (Row("leakage_inductance", "leakage", "H", 1e-5, 1.1e-5, math.nan, -9.0, 25.0,
                     "pass", hand_3d=1e-5, fe_3d=1.1e-5),
                 Row(f"coupling:{a},{b}", "k", "", k_hand, 0.998, math.nan, 0.1, 20.0, "pass",
                     hand_3d=k_hand, fe_3d=0.998),
                 Row(f"L:{a},{a}", "L", "H", 1e-2, 1e-2, math.nan, 0.0, 20.0, "pass",
                     hand_3d=1e-2, fe_3d=1e-2))
        return " ".join(explain(case, _rows(case, {}) + extra, hand, _fe(0.5, 0.9)))

    assert "no leakage path: k = 1" in notes(1.0)
    low = notes(0.98)
    assert "k = 1" not in low and "k = 0.98000 with its leakage paths" in low


def test_gap_note_blames_a_fringing_model_only_when_there_is_one():
    case = load_case(ROOT / "cases" / "demo_choke.toml")
    with_model = _notes(case, {"gap_B": -8.0})
    assert "The fringing model understates the gap B by 8 %" in with_model
    bare = _notes(case, {"gap_B": -8.0}, hand=run_hand(case, planar=True, fringing="none"))
    assert "fringing model" not in bare and "The ideal gap (no fringing) understates" in bare
    assert "gap B by" not in _notes(case, {"gap_B": 1.0})


def test_hand_command_prints_a_cancellation_as_zeros_and_says_so():
    import io

    from magcheck.compare.front.commands.hand import print_hand

    case = _cancel_case()
    from magcheck.compare.design.units import format_si

    out = io.StringIO()
    h = run_hand(case)
    print_hand(case, h, out)
    text = out.getvalue()
    assert "e-1" not in text and "-0 " not in text, text
    assert "The windings' fields cancel (A, B" in text
    assert h.incremental_inductance > 0  # the incremental inductance is still printed
    assert format_si(h.incremental_inductance, "H") in text
    out = io.StringIO()
    print_hand(_cancel_case(1.0), run_hand(_cancel_case(1.0)), out)
    assert "cancel" not in out.getvalue()
