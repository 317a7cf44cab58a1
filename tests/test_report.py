"""The HTML report states its inputs: the operating point can be read from it alone."""

from __future__ import annotations

import hashlib
import html
import tomllib
from pathlib import Path

import pytest

from magcheck.compare.reading.casefile import case_from_dict, load_case
from magcheck.compare.judge.check import run_check
from magcheck.compare.outputs.report import write_report

CASES = Path(__file__).resolve().parents[1] / "cases"


@pytest.fixture(scope="module")
def report(tmp_path_factory):
    src = (CASES / "demo_choke.toml").read_text().replace(
        'name = "demo-choke"', 'name = "choke <script>alert(1)</script>"')
    folder = tmp_path_factory.mktemp("rep")
    case_path = folder / "c.toml"
    case_path.write_text(src)
    res = run_check(load_case(case_path), estimate_error=False)
    page = write_report(res, folder / "out").read_text()
    return page, src, case_path, res


def test_report_shows_every_input(report):
    page, src, case_path, res = report
    case = res.case
    assert f"N = {case.winding.turns}, I = {case.winding.current:g} A" in page
    for key, mm in [("outer_width", "60 mm"), ("outer_height", "70 mm"), ("depth", "20 mm")]:
        assert f"core.{key}" in page and mm in page
    assert "length 0.6 mm" in page  # the gap
    assert "thickness 10 mm, length 40 mm" in page  # the coil build
    assert hashlib.sha256(src.encode()).hexdigest() in page
    assert str(case_path.resolve()) in page
    assert "demo-sisteel" in page and "area" in page


def test_report_escapes_case_text(report):
    page, src, _, _ = report
    assert "<script>" not in page
    assert html.escape(src) in page  # the whole case file, escaped, in a <pre>


def test_gap_figure_uses_the_case_names_and_is_left_out_without_a_gap(tmp_path):
    from magcheck.compare.outputs.plots import fig_gap_line

    data = tomllib.loads((CASES / "demo_choke.toml").read_text())
    res = run_check(case_from_dict(data, base_dir=CASES), estimate_error=False)
    fig = fig_gap_line(res)
    assert "right limb" in fig.axes[0].get_title() and "gap0" not in fig.axes[0].get_title()
    data.pop("gaps")
    gapless = run_check(case_from_dict(data, base_dir=CASES), estimate_error=False)
    assert fig_gap_line(gapless) is None
    page = write_report(gapless, tmp_path / "r").read_text()
    assert "gap_line.png" not in page and not (tmp_path / "r" / "gap_line.png").exists()


def test_path_h_axis_is_linear_within_a_decade(report):
    # The demo choke's |H| along the path spans less than a decade: a linear
    # axis with its default ticks, not a log axis with two labels.
    from magcheck.compare.outputs.plots import fig_path_h

    _, _, _, res = report
    ax = fig_path_h(res).axes[0]
    assert ax.get_yscale() == "linear"
    assert len([t for t in ax.get_yticklabels() if t.get_text()]) >= 4


def test_flux_lines_count_the_flux_between_them(report):
    # Equal-flux contours: the number of lines crossing a segment is the flux
    # through it over the flux per line (planar model: flux = d (A2 - A1),
    # docs/references.md section 5), to one line.
    import numpy as np
    from matplotlib.colors import LogNorm

    from magcheck.compare.outputs.plots import fig_flux, flux_caption, flux_levels
    from magcheck.fem2d import post

    _, _, _, res = report
    sol = res.fe.solution
    levels, per_line = flux_levels(res)
    step = np.diff(levels)
    assert np.allclose(step, step[0], rtol=1e-9)
    assert per_line == pytest.approx(step[0] * res.case.depth, rel=1e-12)
    assert np.min(np.abs(levels)) < 1e-9 * step[0]  # A = 0 (the box) is a line
    # across the left limb at mid-height: every line of the limb's flux
    p0, p1 = (-0.001, 0.035), (0.013, 0.035)
    flux = abs(post.flux_across(sol, p0, p1))
    a0, a1 = sorted(post.sample_a(sol, np.array([p0, p1]).T))
    crossing = np.count_nonzero((levels > a0) & (levels < a1))
    assert abs(crossing - flux / per_line) <= 1.0
    assert 20 <= crossing <= 80  # dense enough to read, sparse enough to see
    # the flux per line is the 1-2-5 number, chosen on the flux (after the depth)
    assert "one line per 5 µWb" in flux_caption(res)  # 20 mm stack, ~0.3 mWb over 60 lines


def test_flux_figure_scales_and_line_styles(report):
    # |B| in the iron on a linear scale from 0 to the material's saturation
    # (demo-sisteel: its B-H data end at 2.04 T, rounded up to 2.1 T), the
    # air on a log scale over 3 decades; every flux line solid, whatever its
    # sign; the knee (no peak-B margin on the demo) drawn as a contour at its B.
    import numpy as np
    from matplotlib.colors import LogNorm, Normalize
    from matplotlib.contour import ContourSet

    from magcheck.compare.judge.check import _knee
    from magcheck.compare.outputs.plots import fig_flux, flux_levels, iron_scale

    _, _, _, res = report
    assert iron_scale(res) == pytest.approx(2.1)
    fig = fig_flux(res)
    ax = fig.axes[0]
    maps = [c for c in ax.collections if hasattr(c, "norm") and not isinstance(c, ContourSet)
            and c.get_array() is not None]
    logs = [m for m in maps if isinstance(m.norm, LogNorm)]
    lins = [m for m in maps if not isinstance(m.norm, LogNorm)
            and isinstance(m.norm, Normalize)]
    assert logs and logs[0].norm.vmax / logs[0].norm.vmin == pytest.approx(1e3)
    assert lins and (lins[0].norm.vmin, lins[0].norm.vmax) == (0.0, pytest.approx(2.1))
    contours = [c for c in ax.collections if isinstance(c, ContourSet)]
    levels, _ = flux_levels(res)
    flux_sets = [c for c in contours if c.levels.size and np.isin(c.levels, levels).all()]
    assert flux_sets and (levels < 0).any() and (levels > 0).any()
    for c in flux_sets:  # solid for both signs: no dashed negative levels
        for style in c.get_linestyles():
            assert style[1] is None or len(style[1]) == 0, style
    knee = _knee(res.case.material("core").law)
    assert any(c.levels.size == 1 and c.levels[0] == pytest.approx(knee) for c in contours)


def test_report_captions_the_flux_plot_with_its_flux_per_line(report):
    page, _, _, _ = report
    assert "one line per" in page and "Wb" in page and "logarithmic" in page
    assert "linear scale from 0 to 2.1 T" in page


def test_report_leads_with_the_verdicts_and_keeps_margins_apart(report):
    # the two banners before the tables; the hand-vs-FE table grouped by
    # topic with the planar case's 3D columns; the margins in their own table
    # with the absolute limit; values never wrap inside a cell
    page, _, _, res = report
    design = page.index("DESIGN MARGINS: PASS")
    assert design < page.index("HAND VS FE: PASS") < page.index("<table>")
    assert "<tr class='topic'><td colspan='9'>field and flux</td></tr>" in page
    assert "<th>FE 3D (depth-corrected)</th>" in page
    assert "<h2>Design margins</h2>" in page and "<th>limit</th>" in page
    assert "white-space: nowrap" in page
    assert "µWb" in page and "uWb" not in page
