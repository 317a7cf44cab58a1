"""The figures that decide a design: the B-H curve of every material with
each model's operating points on it, the magnet in its second quadrant, the
force along the stroke with the limits drawn at their values; an r-z report
draws without numpy warnings."""

from __future__ import annotations

import math
import warnings
from pathlib import Path

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
import pytest  # noqa: E402
from scipy.constants import mu_0  # noqa: E402

from magcheck.compare.judge.check import run_check  # noqa: E402
from magcheck.compare.outputs import plots  # noqa: E402
from magcheck.compare.outputs.report import write_report  # noqa: E402
from magcheck.compare.reading.casefile import load_case  # noqa: E402
from figures import assert_drawn  # noqa: E402

CASES = Path(__file__).resolve().parents[1] / "cases"


@pytest.fixture(scope="module")
def pot():
    return run_check(load_case(CASES / "demo_pot_core_choke.toml"), estimate_error=False)


@pytest.fixture(scope="module")
def holding():
    return run_check(load_case(CASES / "demo_holding_magnet.toml"), estimate_error=False)


def _save(fig, path: Path) -> Path:
    fig.tight_layout()
    fig.savefig(path, dpi=60)
    plt.close(fig)
    assert_drawn(path)
    return path


def test_rz_report_draws_without_numpy_warnings(pot, tmp_path):
    # the gap line of an r-z case starts on the axis, where B_z = (1/r) du/dr
    # is 0/0: it once printed "divide by zero" after the report
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        page = write_report(pot, tmp_path / "r").read_text()
    assert "flux.png" in page and "bh.png" in page
    # an r-z solution is 3D already: no hand 3D / FE 3D columns repeating the others
    assert "<th>hand 3D</th>" not in page and "FE 3D (depth-corrected)" not in page
    assert "A/mm²" in page  # the current density margin as the case states it
    ax = plots.fig_gap_line(pot).axes[0]
    assert ax.get_xlabel().startswith("r across the gap")
    assert np.all(np.isfinite(ax.lines[0].get_ydata()))


def test_bh_points_lie_on_the_curve_and_the_limit_is_drawn(pot, tmp_path):
    fig = plots.fig_bh(pot)
    ax = fig.axes[0]
    law = pot.case.material("core").law
    fe = [ln for ln in ax.lines if ln.get_marker() == "s"]
    hand = [ln for ln in ax.lines if ln.get_marker() == "o"]
    assert fe and hand
    for ln in fe:  # (H of the region's mean B, that B): on the curve by construction
        h, b = ln.get_xdata()[0], ln.get_ydata()[0]
        assert float(law.b_of_h(h)) == pytest.approx(b, rel=1e-6)
    seg = {s["name"]: s for s in pot.hand_planar.segments}
    assert sorted(ln.get_ydata()[0] for ln in hand) == pytest.approx(
        sorted(abs(seg[p]["B"]) for p in seg if seg[p]["kind"] == "core"))
    horiz = {round(float(ln.get_ydata()[0]), 9) for ln in ax.lines
             if len(set(ln.get_ydata())) == 1 and ln.get_linestyle() == "--"}
    assert round(pot.case.margins.peak_B, 9) in horiz  # the 0.38 T margin, at its value
    _save(fig, tmp_path / "bh.png")


def test_magnet_plot_recoil_line_knee_and_operating_points(holding, tmp_path):
    fig = plots.fig_magnet(holding)
    ax = fig.axes[0]
    recoil = ax.lines[0]
    h, b = recoil.get_xdata() * 1e3, recoil.get_ydata()
    # the demo-hard-ferrite grade: B_r 0.40 T, recoil mu_r 1.08, knee -240 kA/m
    # (the grade's own data, invented for the demo): B = B_r + mu0 mu_r H
    assert b[-1] == pytest.approx(0.40) and h[-1] == 0.0
    inside = b > 0
    assert np.allclose(b[inside], 0.40 + mu_0 * 1.08 * h[inside])
    knee = [ln for ln in ax.lines if ln.get_xdata()[0] == ln.get_xdata()[-1]
            and ln.get_linestyle() == "--"]
    assert knee and knee[0].get_xdata()[0] == pytest.approx(-240.0)
    mv = holding.fe.fine.magnet_values
    pts = [(ln.get_xdata()[0], ln.get_ydata()[0]) for ln in ax.lines if ln.get_marker() == "s"]
    assert pts == [(pytest.approx(mv["magnet_H"] * 1e-3), pytest.approx(mv["magnet_B"]))]
    _save(fig, tmp_path / "magnet.png")


def test_force_stroke_hand_curve_and_limits(holding, tmp_path):
    fig = plots.fig_force_stroke(holding)
    ax = fig.axes[0]
    vw = next(ln for ln in ax.lines if ln.get_label() == "hand, network virtual work")
    s0 = holding.case.core.stroke * 1e3
    x, y = vw.get_xdata(), vw.get_ydata()
    i = int(np.argmin(np.abs(x - s0)))
    # the curve passes through the check's own hand value at the case's stroke
    assert x[i] == pytest.approx(s0) and y[i] == pytest.approx(
        holding.hand_3d.force_values["force"], rel=1e-9)
    assert np.all(np.diff(y[np.argsort(x)]) < 0)  # the pull falls as the stroke opens
    marks = {(round(float(ln.get_xdata()[0]), 6), round(float(ln.get_ydata()[0]), 6))
             for ln in ax.lines if ln.get_marker() in ("^", "v")}
    for lim in holding.case.margins.force:
        for v in (lim.min, lim.max):
            if v is not None:
                assert (round(lim.stroke * 1e3, 6), round(v, 6)) in marks
    if holding.case.margins.force_min is not None:
        assert (round(s0, 6), round(holding.case.margins.force_min, 6)) in marks
    _save(fig, tmp_path / "force.png")
    assert plots.fig_force_stroke(
        run_check(load_case(CASES / "demo_choke.toml"), estimate_error=False)) is None


def test_geometry_legend_from_the_regions_present_and_dimensions(pot, holding, tmp_path):
    def labels(res):
        fig = plots.fig_geometry(res)
        ax = fig.axes[0]
        texts = [t.get_text() for a in fig.axes if a.get_legend() is not None
                 for t in a.get_legend().get_texts()]
        dims = [t.get_text() for t in ax.texts]
        _save(fig, tmp_path / f"{res.case.name}.png")
        return texts, dims

    texts, dims = labels(holding)
    assert any(t.startswith("magnet (B_r 0.4 T") for t in texts)
    assert "keeper (built-in demo-softiron)" in texts and "air gaps" in texts
    assert not any("return" in t for t in texts)  # an r-z coil has go sides only
    assert "hand circuit's mean path" in texts
    # the holding magnet's outer radius 20 mm: a 40 mm diameter, mirrored
    assert "Ø 40 mm" in dims
    texts, dims = labels(pot)
    assert not any(t.startswith("magnet") for t in texts)
    assert any(t.startswith("winding") for t in texts)
    gap = pot.case.core.gap * 1e3
    assert f"{gap:.3g} mm" in dims  # the centre post's gap length


def test_holding_magnet_has_its_gap_figure(holding):
    # B_z across the working gap over the pole: flat under the face, at the
    # FE's gap B (the mean over the gap region over the pole; within 3 %: the
    # field dips only toward the face's edge), falling off beyond the edge
    fig = plots.fig_gap_line(holding)
    ax = fig.axes[0]
    r, b = ax.lines[0].get_xdata(), ax.lines[0].get_ydata()
    pole = holding.case.core.pole_radius * 1e3
    gap_b = holding.fe.values["gap_B"]
    assert np.all(np.abs(b[r < 0.5 * pole] / gap_b - 1.0) < 0.03)
    assert b[-1] < 0.2 * gap_b
    assert ax.get_xlabel().startswith("r across the gap")
    plt.close(fig)


def test_flux_lines_thinned_where_they_crowd_and_rz_mirrored(holding):
    # the holding magnet's thin cup walls crowd the lines: there only every
    # second or fourth level is drawn (each a subset of the full set, so a
    # kept line runs on unbroken); the r-z section is drawn on both sides
    from matplotlib.contour import ContourSet

    levels, _ = plots.flux_levels(holding)
    step = levels[1] - levels[0]
    fig = plots.fig_flux(holding)
    ax = fig.axes[0]
    k = np.rint(levels / step).astype(int)
    sets = [c for c in ax.collections if isinstance(c, ContourSet) and c.levels.size > 1]
    keeps = set()
    for c in sets:
        ck = np.rint(c.levels / step).astype(int)
        if set(ck) <= set(k):
            keeps.add(max(q for q in (1, 2, 4) if np.all(ck % q == 0)))
    assert {1, 2, 4} <= keeps  # every tier: full, every second, every fourth line
    x0, x1 = ax.get_xlim()
    assert x0 == pytest.approx(-x1)  # mirrored about the axis
    plt.close(fig)


def test_force_curve_strokes_declared_sweep_else_the_figure_range():
    import dataclasses

    from magcheck.compare.studies.sweep import FORCE_CURVE_POINTS, force_curve_strokes

    case = load_case(CASES / "demo_holding_magnet.toml")
    spec, source = force_curve_strokes(case)  # its [sweep] vary = core.stroke=0.1mm:1.3mm:5
    assert source == "declared" and spec.key == "core.stroke"
    assert spec.values == pytest.approx([1e-4, 4e-4, 7e-4, 1e-3, 1.3e-3])
    spec, source = force_curve_strokes(dataclasses.replace(case, sweeps=()))
    # 0.2 x the 0.3 mm stroke to 1.1 x the 1 mm force limit's stroke (beyond 2 x 0.3 mm)
    assert source == "range" and len(spec.values) == FORCE_CURVE_POINTS
    assert spec.values[0] == pytest.approx(0.06e-3) and spec.values[-1] == pytest.approx(1.1e-3)


def test_force_curve_on_the_figure_meets_the_check_at_its_stroke(holding, tmp_path):
    """The FE points along the stroke (check --force-curve) are sweep points
    on the case's own mesh: at the case's stroke the curve's Maxwell force is
    the check's own FE 3D force (estimate_error=False: the same mesh), and the
    figure draws the curve at the points' strokes and values."""
    import dataclasses

    from magcheck.compare.studies.sweep import case_source, run_force_curve

    text = (CASES / "demo_holding_magnet.toml").read_text()
    p = tmp_path / "h.toml"
    p.write_text(text.replace('vary = ["core.stroke=0.1mm:1.3mm:5"]',
                              'vary = ["core.stroke=0.3mm,1mm"]'))
    curve = run_force_curve(case_source(p)[0])
    assert curve.source == "declared" and curve.strokes == pytest.approx([3e-4, 1e-3])
    row = next(r for r in holding.rows if r.key == "force")
    # same mesh, same Newton tolerance: the two solves agree to its residual
    assert curve.maxwell_3d[0] == pytest.approx(row.fe_3d, rel=1e-5)
    vw = next(r for r in holding.rows if r.key == "force_virtual_work")
    assert curve.virtual_work_3d[0] == pytest.approx(vw.fe_3d, rel=1e-5)
    assert curve.maxwell_3d[1] < curve.maxwell_3d[0]  # the pull falls as the film opens
    fig = plots.fig_force_stroke(dataclasses.replace(holding, force_curve=curve))
    ax = fig.axes[0]
    (line,) = [ln for ln in ax.lines if ln.get_gid() == "fe_curve_maxwell"]
    assert line.get_xdata() == pytest.approx([0.3, 1.0])  # mm
    assert line.get_ydata() == pytest.approx(curve.maxwell_3d)
    assert "FE along the stroke" in ax.get_title()
    _save(fig, tmp_path / "force_curve.png")
    # without the curve: no FE line along the stroke
    fig = plots.fig_force_stroke(holding)
    assert not [ln for ln in fig.axes[0].lines if ln.get_gid() == "fe_curve_maxwell"]
    plt.close(fig)


def test_force_curve_option_is_bad_input_without_report_or_moving_part(tmp_path, capsys):
    from magcheck.compare.front.cli import main

    assert main(["check", str(CASES / "demo_holding_magnet.toml"), "--force-curve"]) == 2
    assert "--force-curve" in capsys.readouterr().err
    assert main(["check", str(CASES / "demo_choke.toml"), "--force-curve",
                 "--report", str(tmp_path / "r")]) == 2
    assert "no moving part" in capsys.readouterr().err


def test_force_curve_point_is_depth_corrected_as_the_check(tmp_path):
    """A planar case (the clapper relay): the curve's point at the case's
    stroke carries the check's depth correction of the force (the model
    ranked against the planar FE there), so it is the check's FE 3D force."""
    from magcheck.compare.studies.sweep import case_source, run_force_curve

    text = (CASES / "demo_clapper_relay.toml").read_text()
    p = tmp_path / "r.toml"
    p.write_text(text.replace('vary = ["core.stroke=0.1mm:0.8mm:8"]', 'vary = ["core.stroke=0.1mm,0.8mm"]'))
    relay = run_check(load_case(p), estimate_error=False)
    curve = run_force_curve(case_source(p)[0])
    row = next(r for r in relay.rows if r.key == "force")
    # a depth correction to tell apart (0.7 % here, against the 1e-5 match below)
    assert abs(row.fe_3d / row.fe - 1) > 1e-3
    # same mesh, same Newton tolerance, same depth rule: equal to the residual
    assert curve.maxwell_3d[1] == pytest.approx(row.fe_3d, rel=1e-5)
