"""Sweep and tolerance figures: what a reviewer reads off them is there
(saturation currents marked, every legend entry distinguishable, integer
counts, the design's limits drawn)."""

from __future__ import annotations

from pathlib import Path

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
import pytest  # noqa: E402
from matplotlib.colors import to_rgb  # noqa: E402

from magcheck.compare.outputs.plots import sweep_figures, tolerance_figure  # noqa: E402
from magcheck.compare.studies.sweep import case_source, parse_vary, run_sweep, sweep_margins  # noqa: E402

CASES = Path(__file__).resolve().parents[1] / "cases"
MARGINS = CASES / "demo_choke_margins.toml"


def _style(line) -> tuple:
    return (tuple(np.round(to_rgb(line.get_color()), 3)), line.get_linestyle(), line.get_marker(),
            line.get_markerfacecolor() == "none")


@pytest.fixture(scope="module")
def fe_sweep():
    src, _ = case_source(MARGINS)
    res = run_sweep(src, [parse_vary("winding.current=1:13A:4")], workers=1)
    _, sat = sweep_margins(res, (0.10, 0.20, 0.30), "incremental")
    return res, sat


def test_every_sweep_legend_entry_has_its_own_style(fe_sweep):
    res, sat = fe_sweep
    for name, fig in sweep_figures(res, sat):
        ax = fig.axes[0]
        curves = [ln for ln in ax.get_lines() if len(ln.get_xdata()) > 1 and ln.get_marker() != "None"]
        styles = [_style(ln) for ln in curves]
        assert len(set(styles)) == len(styles), (name, styles)
        # hand curves over FE curves, open markers: an FE curve under a hand
        # curve still shows through
        for ln in curves:
            if ln.get_label().startswith("hand"):
                assert ln.get_markerfacecolor() == "none" and ln.get_zorder() > 2
        plt.close(fig)


def test_sweep_inductance_panel_marks_the_saturation_currents(fe_sweep):
    res, sat = fe_sweep
    figures = dict(sweep_figures(res, sat))
    ax = figures["sweep_inductance.png"].axes[0]
    marked = sorted(ln.get_xdata()[0] for ln in ax.get_lines() if ln.get_linestyle() == ":")
    want = sorted(v for row in sat if row["model"] in ("fe", "hand_planar")
                  for k, v in row.items() if k.endswith("%") and np.isfinite(v))
    assert want and marked == pytest.approx(want)
    labels = [ln.get_label() for ln in ax.get_lines() if ln.get_linestyle() == ":"]
    assert any(lbl.startswith("FE: incremental L -20%") for lbl in labels)
    for fig in figures.values():
        plt.close(fig)


def test_sweep_draws_the_judged_values_and_every_margin_at_its_value(fe_sweep):
    # the margins are judged on the depth-corrected FE (the sweep rows'
    # fe_3d_inductance): that curve is drawn, and every declared limit at its value
    from magcheck.compare.studies.sweep import sweep_rows

    res, sat = fe_sweep
    figures = dict(sweep_figures(res, sat))
    ax = figures["sweep_inductance.png"].axes[0]
    lines = {ln.get_label(): ln for ln in ax.get_lines()}
    judged = lines["FE 3D secant (depth-corrected, judged)"]
    rows = sorted(sweep_rows(res), key=lambda r: abs(r["winding.current"]))
    assert judged.get_ydata() == pytest.approx([r["fe_3d_inductance"] * 1e3 for r in rows])
    m = res.case.margins
    for lim in m.inductance:  # the L window at its own current (6 A), in mH
        bar = next(ln for lbl, ln in lines.items() if lbl.startswith(f"{lim.kind} L window at"))
        assert list(bar.get_xdata()) == [lim.at, lim.at]
        assert list(bar.get_ydata()) == pytest.approx([lim.min * 1e3, lim.max * 1e3])
    sat_lines = [ln for lbl, ln in lines.items() if lbl.startswith("saturation current")]
    assert [ln.get_xdata()[0] for ln in sat_lines] == pytest.approx([s.min for s in m.saturation])
    b_ax = figures["sweep_core_B.png"].axes[0]
    assert any(ln.get_label().startswith("peak-B limit") and ln.get_ydata()[0] == m.peak_B
               for ln in b_ax.get_lines())
    for fig in figures.values():
        plt.close(fig)


def test_tolerance_histograms_count_in_integers_and_draw_the_limits():
    from magcheck.compare.front.commands.tolerance import _labels, print_tolerance
    from magcheck.compare.studies.tolerance import run_tolerance

    src, case = case_source(MARGINS)
    res = run_tolerance(src, samples=25, seed=3, fe_samples=0)
    fig = tolerance_figure(res, _labels(res))
    by_key = {ax.get_gid(): ax for ax in fig.axes}
    assert list(by_key) == ["inductance_secant@6A", "peak_B", "saturation_current"]
    for ax in fig.axes:
        ticks = ax.get_yticks()
        assert np.allclose(ticks, np.round(ticks))
    lim_peak = [ln.get_xdata()[0] for ln in by_key["peak_B"].get_lines()]
    assert lim_peak == pytest.approx([case.margins.peak_B])  # 1.7 T
    lim_sat = [ln.get_xdata()[0] for ln in by_key["saturation_current"].get_lines()]
    assert lim_sat == pytest.approx([case.margins.saturation[0].min])  # 5 A
    # The inductance window is stated at 6 A (the case runs at 7 A): the
    # histogram is the L each sample's window is judged on, at 6 A, and the
    # window is drawn on it at its limits (mH).
    (ind,) = case.margins.inductance
    ax = by_key["inductance_secant@6A"]
    assert sorted(ln.get_xdata()[0] for ln in ax.get_lines()) == pytest.approx(
        [ind.min * 1e3, ind.max * 1e3])  # 2.5 and 4.5 mH
    assert "at 6 A" in ax.get_xlabel()
    judged = np.array([next(m.value for m in s.margins if m.key == "inductance_secant@6A:min")
                       for s in res.samples])
    assert np.array_equal(res["inductance_secant@6A"], judged)
    counts = sum(p.get_height() for p in ax.patches)
    assert counts == len(res.samples)
    # drawn from the 6 A values: the bars span their range, not the 7 A one
    # (the L at 7 A lies below the L at 6 A in every sample: saturation)
    lo = min(p.get_x() for p in ax.patches)
    hi = max(p.get_x() + p.get_width() for p in ax.patches)
    assert lo == pytest.approx(judged.min() * 1e3) and hi == pytest.approx(judged.max() * 1e3)
    assert (res["inductance"] < judged).all()
    plt.close(fig)
    # the printed table names it too, in H
    import io

    buf = io.StringIO()
    print_tolerance(res, buf)
    assert "L (secant) at 6 A, as judged" in buf.getvalue()
