"""Core B compared like with like, mirrored cases, and the FE 3D column.

- Core B is the mean |B| along the mean path in both models: the hand's
  length-weighted mean over the path's branches, the FE's arc-length mean
  over the path's points in the core (compare.models.fe.path_mean_core_b).
- A case and its mirror image give the same table.
- The FE 3D column is the best-ranked depth model's hand 3D / planar ratio,
  its uncertainty widened by the models' spread (compare.judge.check.depth_correction).
- A stack depth shorter than the gap is flagged (compare.reading.casefile._depth_issues).
"""

from __future__ import annotations

import math
import tomllib
from pathlib import Path

import numpy as np
import pytest

from magcheck.compare.reading.casefile import case_from_dict, plausibility_issues
from magcheck.compare.judge.check import DEPTH_MODELS, depth_correction, run_check
from magcheck.compare.design.coremodel import core_model
from magcheck.compare.models.hand import run_hand

CASES = Path(__file__).resolve().parents[1] / "cases"


def _doc(name: str) -> dict:
    return tomllib.loads((CASES / name).read_text())


def _case(doc: dict):
    doc.pop("sweep", None)
    return case_from_dict(doc, base_dir=CASES)


# ------------------------------------------------------------------ core B, r-z
def _inside(rects, x: np.ndarray, y: np.ndarray) -> np.ndarray:
    m = np.zeros(x.shape, dtype=bool)
    for r in rects:
        m |= (x > r.x0) & (x < r.x1) & (y > r.y0) & (y < r.y1)
    return m


@pytest.mark.slow
def test_rz_core_b_is_the_line_mean_of_b_along_the_mean_path():
    # Independent of compare.models.fe: Gauss-Legendre quadrature of |B| along each
    # leg of the pot core's mean path (B from the solution's own evaluation,
    # fem2d.post.sample_b), core membership from the core's rectangles (not
    # the mesh's element regions), divided by the length in the core.
    # Tolerance 0.3 %: the reported mean samples 2000 midpoints, so a gap
    # edge costs at most one sample (path 43.9 mm / 2000 = 0.022 mm, 5e-4 of
    # the path) and the quadrature here resolves the edges to 1e-4 of a leg.
    from magcheck.compare.models.fe import run_fe
    from magcheck.fem2d import post

    case = _case(_doc("demo_pot_core_choke.toml"))
    model = core_model(case)
    q, sol, _ = run_fe(case)
    cores = [r for reg in model.regions if reg.name in model.core_regions for r in reg.shapes]
    others = [r for reg in model.regions if reg.name not in model.core_regions
              for r in reg.shapes]
    path = np.array(model.mean_path, dtype=float)
    t, w = np.polynomial.legendre.leggauss(40)
    total_b, total_l = 0.0, 0.0
    for p0, p1 in zip(path[:-1], path[1:]):
        length = float(np.hypot(*(p1 - p0)))
        # 250 sub-intervals of 40 Gauss points each along the leg
        edges = np.linspace(0.0, 1.0, 251)
        a, b = edges[:-1, None], edges[1:, None]
        s = (0.5 * (a + b) + 0.5 * (b - a) * t[None, :]).ravel()
        ws = (0.5 * (b - a) * w[None, :]).ravel() * length
        x = p0[0] + s * (p1[0] - p0[0])
        y = p0[1] + s * (p1[1] - p0[1])
        keep = _inside(cores, x, y) & ~_inside(others, x, y)
        bx = post.sample_b(sol, np.vstack([x[keep], y[keep]]))
        total_b += float(np.sum(ws[keep] * np.hypot(bx[0], bx[1])))
        total_l += float(np.sum(ws[keep]))
    want = total_b / total_l
    assert q.values["core_B"] == pytest.approx(want, rel=3e-3)
    # the old definition, the volume mean over the core, is another quantity
    # (most of the ferrite at large radius, where B is low): it fails this test
    old = post.region_mean_b(sol, list(model.core_regions))
    assert abs(old / want - 1.0) > 0.05


# --------------------------------------------------------- mirrored EI cores
def _ei(side: str) -> dict:
    d = _doc("demo_ei_inductor.toml")
    d["gaps"] = [{"limb": side, "length": "0.5 mm"}]
    return d


def test_ei_gap_in_either_outer_limb_gives_the_same_hand_table():
    # A mirror image: the hand values (planar and 3D, every key) agree to
    # 1e-9 (the networks are solved to 1e-10); core B and path H average the
    # same set of branches, each once.
    left, right = _case(_ei("left")), _case(_ei("right"))
    for planar in (True, False):
        a, b = run_hand(left, planar=planar).values(), run_hand(right, planar=planar).values()
        for k in a:
            if math.isfinite(a[k]):
                assert b[k] == pytest.approx(a[k], rel=1e-9), (k, planar)
    # and the path covers both outer limbs
    xs = {round(p[0], 9) for p in core_model(left).mean_path}
    assert len(xs) == 3


def test_window_core_mirrored_gives_the_same_hand_table():
    # The window core's winding and gap moved to the facing limbs, with the
    # limb widths swapped: the same core seen from behind.  Tolerance 1e-9.
    d = _doc("demo_choke.toml")
    m = _doc("demo_choke.toml")
    core = m["core"]
    if "left" in core and "right" in core:
        core["left"], core["right"] = core["right"], core["left"]
    mirror = {"left": "right", "right": "left"}
    for g in m.get("gaps", []):
        g["limb"] = mirror.get(g["limb"], g["limb"])
    m["winding"]["limb"] = mirror.get(m["winding"]["limb"], m["winding"]["limb"])
    a, b = run_hand(_case(d)).values(), run_hand(_case(m)).values()
    for k in a:
        if math.isfinite(a[k]):
            assert b[k] == pytest.approx(a[k], rel=1e-9), k


@pytest.mark.slow
def test_ei_mirrored_case_gives_the_same_check_table():
    # Every row: the hand to 1e-9, the FE within the two meshes' stated
    # uncertainties (the mirrored mesh is another mesh), the verdict alike.
    a = run_check(_case(_ei("left")))
    b = run_check(_case(_ei("right")))
    rb = {r.key: r for r in b.rows}
    for ra in a.rows:
        r2 = rb[ra.key]
        if math.isfinite(ra.hand):
            assert r2.hand == pytest.approx(ra.hand, rel=1e-9), ra.key
        if math.isfinite(ra.fe) and math.isfinite(ra.uncertainty):
            assert abs(r2.fe - ra.fe) <= ra.uncertainty + r2.uncertainty, ra.key
        assert r2.verdict == ra.verdict, ra.key


# ------------------------------------------------------------ FE 3D column
def test_depth_correction_is_the_chosen_models_ratio_and_its_spread():
    case = _case(_doc("demo_choke.toml"))
    # the four depth models, written out
    assert set(DEPTH_MODELS) == {"area", "flux-factor", "conformal", "flux-tube"}
    ratio = {}
    for m in ("area", "flux-factor", "conformal", "flux-tube"):
        hp, h3 = run_hand(case, fringing=m, planar=True), run_hand(case, fringing=m)
        ratio[m] = h3.inductance / hp.inductance
    spread = max(ratio.values()) - min(ratio.values())
    assert spread > 0.01  # the models disagree by percents here, or this proves nothing
    for chosen in ("conformal", "area"):
        # the ranking's best (a "none" ahead of it is no depth model and skipped)
        dc = depth_correction(case, ({"model": "none"}, {"model": chosen}, {"model": "area"}))
        assert dc.model == chosen
        # Tolerance 1e-12: the same hand solves, one division.
        assert dc.factor("inductance") == pytest.approx(ratio[chosen], rel=1e-12)
        assert dc.spread["inductance"] == pytest.approx(spread, rel=1e-12)
        # uncertainty: the FE's own times the correction, plus |FE| times the spread
        fe, u = 3.4e-3, 1e-5
        assert dc.uncertainty("inductance", fe, u) == pytest.approx(
            u * ratio[chosen] + fe * spread, rel=1e-12)


@pytest.mark.slow
def test_check_uses_the_best_ranked_depth_model_and_judges_margins_in_its_band():
    d = _doc("demo_choke.toml")
    res = run_check(_case(d))
    best = next(r["model"] for r in res.fringing_ranking or _ranking(res) if r["model"] != "none")
    assert res.depth.model == best
    rows = {r.key: r for r in res.rows}
    hp = run_hand(res.case, fringing=best, planar=True)
    h3 = run_hand(res.case, fringing=best)
    ind = rows["inductance"]
    # Tolerance 1e-12: one multiplication.
    assert ind.fe_3d == pytest.approx(ind.fe * h3.inductance / hp.inductance, rel=1e-12)
    band = ind.fe_3d_uncertainty
    assert band > ind.uncertainty  # the spread widens it
    from magcheck.compare.outputs.serialize import check_json

    doc = check_json(res)
    assert doc["fe"]["depth_correction_model"] == best
    assert doc["fe"]["depth_corrected_uncertainty"]["inductance"] == band
    row = next(r for r in doc["comparison"] if r["quantity"] == "inductance")
    assert row["fe_depth_corrected_uncertainty"] == band
    # a minimum met by less than the band is not a clean pass; by more, it is
    d["margins"] = {"inductance": [{"at": "6 A", "min": f"{(ind.fe_3d - 0.5 * band) * 1e3} mH"},
                                   {"at": "6 A", "min": f"{(ind.fe_3d - 2 * band) * 1e3} mH"}]}
    res2 = run_check(_case(d))
    verdicts = [r.verdict for r in res2.rows if r.key.startswith("margin:inductance")]
    assert verdicts == ["inconclusive", "pass"]


def _ranking(res):
    from magcheck.compare.judge.check import rank_fringing

    return rank_fringing(res.case, res.fe)


# ------------------------------------------------------ depth below the gap
def _depth_warnings(case) -> list:
    return [w for w in plausibility_issues(case)
            if w.key == "core.depth" and "gap" in w.reason]


@pytest.mark.parametrize("depth, flagged", [("0.5 mm", True), ("0.59 mm", True),
                                            ("0.61 mm", False), ("20 mm", False)])
def test_a_depth_shorter_than_the_gap_is_flagged(depth, flagged):
    # The demo choke's gap is 0.6 mm: the threshold is depth = gap length
    # (compare.reading.casefile.DEPTH_PER_GAP_MIN).
    d = _doc("demo_choke.toml")
    d["core"]["depth"] = depth
    ws = _depth_warnings(_case(d))
    assert bool(ws) == flagged
    if flagged:
        assert "core.depth" in str(ws[0]) and "0.6 mm gap" in str(ws[0])


def test_an_rz_case_has_no_depth_warning():
    assert not _depth_warnings(_case(_doc("demo_pot_core_choke.toml")))
