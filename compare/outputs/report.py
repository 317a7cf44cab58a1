"""A self-contained HTML report of a check, with its figures beside it."""

from __future__ import annotations

import html
from pathlib import Path

from ..judge.check import CheckResult
from ..design.coremodel import comparison_forms
from .output import CAUTION, atomic_write_text
from .serialize import (AGREEMENT_COLUMNS, MARGIN_COLUMNS, agreement_cells, grouped_rows,
                        margin_cells, pretty_units, shows_3d, verdict_banners, verdict_lines,
                        versions)

__all__ = ["write_report"]

_STYLE = """
body { font-family: system-ui, sans-serif; max-width: 1100px; margin: 2em auto; padding: 0 1em;
       color: #1d2733; }
h1 { font-size: 1.5em; } h2 { font-size: 1.15em; margin-top: 1.6em; }
table { border-collapse: collapse; font-size: 0.9em; }
td, th { padding: 3px 9px; border-bottom: 1px solid #d5dbe1; text-align: right; }
td:first-child, th:first-child { text-align: left; white-space: normal; }
td, th { white-space: nowrap; } tr.topic td { font-weight: bold; background: #eef2f6; }
.banner { padding: 0.5em 1em; margin: 0.6em 0; border-left: 6px solid; }
.banner b { font-size: 1.1em; } .banner ul { margin: 0.3em 0 0 0; }
.banner.pass { border-color: #1f7a4d; background: #e8f5ee; }
.banner.FAIL { border-color: #b3261e; background: #fbe9e7; }
.FAIL { color: #b3261e; font-weight: bold; } .pass { color: #1f7a4d; }
.inconclusive { color: #8a5a00; }
.caution { background: #fff4e0; border-left: 4px solid #e0a030; padding: 0.6em 1em; }
figure { margin: 1em 0; } figcaption { font-size: 0.85em; color: #55606b; }
img { max-width: 100%; }
"""



def _table(headers, rows, groups=None) -> str:
    """An HTML table; ``groups`` (heading, rows) pairs put a heading row
    above each group instead of ``rows``."""
    out = ["<table><tr>" + "".join(f"<th>{html.escape(pretty_units(h))}</th>" for h in headers)
           + "</tr>"]
    for heading, grows in (groups if groups is not None else [("", rows)]):
        if heading:
            out.append(f"<tr class='topic'><td colspan='{len(headers)}'>{html.escape(heading)}"
                       "</td></tr>")
        out += _table_rows(grows)
    out.append("</table>")
    return "\n".join(out)


def _banners(res: CheckResult, agreement: str) -> str:
    """The two verdicts as banners: what failed, the tightest margin left."""
    out = []
    for b in verdict_banners(res, agreement):
        items = "".join(f"<li>{html.escape(pretty_units(d))}</li>" for d in b.details)
        out.append(f"<div class='banner {'pass' if b.ok else 'FAIL'}'><b>"
                   f"{html.escape(b.line())}</b><ul>{items}</ul></div>")
    return "\n".join(out)


def _table_rows(rows) -> list[str]:
    out = []
    for r in rows:
        cells = []
        for c in r:
            word = str(c).split(",")[0]
            cls = f' class="{word}"' if word in ("FAIL", "pass", "inconclusive") else ""
            cells.append(f"<td{cls}>{html.escape(str(c))}</td>")
        out.append("<tr>" + "".join(cells) + "</tr>")
    return out


def _agreement_table(res: CheckResult) -> str:
    """Hand vs FE by topic; the hand 3D and FE 3D columns only where they
    differ from the like-for-like ones (not in an r-z case)."""
    with_3d = shows_3d(res)
    cols = AGREEMENT_COLUMNS + (["hand 3D", "FE 3D (depth-corrected)"] if with_3d else [])
    groups = [(t, [agreement_cells(r, with_3d) for r in rows])
              for t, rows in grouped_rows(res, "agreement")]
    return _table(cols, None, groups) if groups else ""


def _margin_table(res: CheckResult) -> str:
    """The design margins in a table of their own, with absolute limits."""
    rows = [margin_cells(r) for r in res.rows if r.judges == "design"]
    if not rows:
        return ""
    return "<h2>Design margins</h2>\n" + _table(MARGIN_COLUMNS, rows)


def _measured_table(res: CheckResult) -> str:
    """The measured column (compare.judge.measurement) in a table of its own."""
    from .serialize import MEASURED_COLUMNS, MEASURED_TITLE, measured_cells

    if not res.measured:
        return ""
    return (f"<h2>{html.escape(pretty_units(MEASURED_TITLE[0].upper() + MEASURED_TITLE[1:]))}"
            "</h2>\n" + _table(MEASURED_COLUMNS, [measured_cells(m) for m in res.measured]))


def _mm(v: float) -> str:
    return f"{v * 1e3:.4g} mm"


def input_rows(res: CheckResult) -> list[list[str]]:
    """The case as solved, one row per input: enough to read the operating
    point from the report alone (SI values shown in engineering units)."""
    import dataclasses
    import os

    case = res.case
    rows = [["case file (as given)", case.source],
            ["case file (absolute)", os.path.abspath(case.source) if case.source else ""],
            ["case sha256", case.sha256], ["family", case.family]]
    core = case.core
    describe = getattr(case.family_model, "describe", None)
    fields = [] if describe is not None else dataclasses.fields(core)
    if describe is not None:  # a family with shapes of its own says what to show
        rows += [[k, v] for k, v in describe(core)]
    for f in fields:
        v = getattr(core, f.name)
        if isinstance(v, float):
            rows.append([f"core.{f.name}", _mm(v)])
        elif dataclasses.is_dataclass(v):
            for sub in dataclasses.fields(v):
                w = getattr(v, sub.name)
                rows.append([f"core.{f.name}.{sub.name}", _mm(w) if isinstance(w, float) else str(w)])
        else:
            rows.append([f"core.{f.name}", str(v)])
    for i, gap in enumerate(case.gaps):
        rows.append([f"gaps[{i}]", f"{gap.limb} limb, length {_mm(gap.length)}, "
                                   f"centre {_mm(gap.position)} from the limb's start"])
    if not case.gaps and case.family_model.limb_names:  # a drawn core lists its own
        rows.append(["gaps", "none"])
    from ..design.units import format_si

    for w in case.windings:
        label = "winding" if len(case.windings) == 1 else f"winding {w.name}"
        where = f"on the {w.limb} limb" if w.limb else "drawn coil"
        if w.driven:
            drive = (f"driven at {w.voltage:g} V rms, {w.frequency:g} Hz; operating current "
                     f"(the hand model's peak magnetizing current) {format_si(w.current, 'A')}")
            if w.residual_flux is not None:
                drive += f"; inrush: residual flux {w.residual_flux:g} of the peak"
            if w.resistance is not None:
                drive += f", series resistance {w.resistance:g} ohm"
            rows.append([label, f"{where}, N = {w.turns}, {drive}"])
        else:
            rows.append([label, f"{where}, N = {w.turns}, I = {w.current:g} A, "
                                f"NI = {w.mmf:g} A"])
        if w.limb:
            rows.append([f"coil build ({w.name})" if len(case.windings) > 1 else "coil build",
                         f"thickness {_mm(w.thickness)}, length {_mm(w.length)}, "
                         f"clearance to the limb {_mm(w.clearance)}"])
    for m in case.materials:
        rows.append([f"material of {m.region}", f"{m.description} ({m.kind})"])
    rows.append(["fringing model (hand)", case.hand.fringing])
    fe, fine = case.fe, res.fe.fine
    air = (f"open boundary, air disk {fe.air_extent:g}x" if fe.boundary == "open"
           else f"closed air box {fe.air_extent:g}x")
    rows += [["FE settings", f"order {fe.order}, {fe.gap_elements} elements across each gap, "
                             f"mesh size {'auto' if fe.mesh_size is None else _mm(fe.mesh_size)}, "
                             f"{air}, Newton tol {fe.tol:g}"],
             ["FE mesh (finer)", f"{fine.nelements} elements, {fine.ndofs} DOFs, core element "
                                 f"size {_mm(fine.element_size)}"]]
    return rows


def _case_text(res: CheckResult) -> str:
    try:
        return Path(res.case.source).read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError):
        return ""


def write_report(res: CheckResult, folder: str | Path, agreement: str = "fatal") -> Path:
    """Write ``index.html`` and its PNG figures into folder; returns the HTML path."""
    from .plots import caption, save_figures

    folder = Path(folder)
    figures = save_figures(res, folder)
    case = res.case
    fe = res.fe.fine
    parts = [
        "<!doctype html><html><head><meta charset='utf-8'>",
        f"<title>magcheck: {html.escape(case.name)}</title><style>{_STYLE}</style></head><body>",
        f"<h1>magcheck: {html.escape(case.name)}</h1>",
        _banners(res, agreement),
        f"<p>{html.escape(case.description)}</p>",
        f"<p class='caution'>{html.escape(CAUTION)}</p>",
        f"<h2>Hand calculation vs {comparison_forms(case)[1]}</h2>",
        "<ul class='verdicts'>" + "".join(
            f"<li class='{'pass' if ok else 'FAIL'}'>{html.escape(line)}</li>"
            for ok, line in zip((res.design_passed, res.agreement_passed),
                                verdict_lines(res, agreement))) + "</ul>",
        _agreement_table(res),
        _margin_table(res),
        _measured_table(res),
        "<ul>" + "".join(f"<li>{html.escape(pretty_units(n))}</li>" for n in res.notes) + "</ul>",
        "<h2>Inputs</h2>",
        _table(["input", "value"], input_rows(res)),
    ]
    text = _case_text(res)
    if text:
        parts.append(f"<h2>Case file</h2><p>{html.escape(res.case.source)}, sha256 "
                     f"{html.escape(res.case.sha256)}</p><pre>{html.escape(text)}</pre>")
    if res.fringing_ranking:
        parts.append(f"<h2>Fringing models against the FE ({comparison_forms(case)[0]}), "
                     "best first</h2>")
        parts.append(_table(["model", "gap B diff %", "flux diff %", "inductance diff %", "RMS %"],
                            [[d["model"], f"{d['gap_B_difference_pct']:+.1f}",
                              f"{d['flux_difference_pct']:+.1f}",
                              f"{d['inductance_difference_pct']:+.1f}",
                              f"{d['rms_difference_pct']:.1f}"] for d in res.fringing_ranking]))
    if res.breakdown:
        from .serialize import breakdown_note, breakdown_rows

        columns, brows = breakdown_rows(res)
        parts.append("<h2>Where the difference comes from</h2>")
        parts.append(_table(columns, brows))
        parts.append(f"<p>{html.escape(breakdown_note(res))}</p>")
    parts.append("<h2>Figures</h2>")
    for p in figures:
        parts.append(f"<figure><img src='{p.name}' alt='{p.stem}'>"
                     f"<figcaption>{html.escape(caption(p.name, res))}</figcaption></figure>")
    meta = [
        ["case file", case.source], ["case sha256", case.sha256],
        ["family", case.family], ["fringing model", res.hand_planar.fringing_model],
        ["element order", f"P{case.fe.order}"], ["elements (finer mesh)", str(fe.nelements)],
        ["DOFs (finer mesh)", str(fe.ndofs)],
        ["element size in the core", f"{fe.element_size * 1e3:.3g} mm"],
        ["Newton iterations (finer mesh)", str(fe.iterations)],
        ["final relative residual", f"{fe.residual:.2e}"],
        ["hand-model Newton iterations", str(res.hand_planar.iterations)],
        *[[f"time: {k}", f"{v:.2f} s"] for k, v in res.timings.items()],
        *[[f"version: {k}", v] for k, v in versions().items()],
    ]
    parts.append("<h2>Run</h2>")
    parts.append(_table(["item", "value"], meta))
    parts.append("</body></html>")
    path = folder / "index.html"
    atomic_write_text(path, "\n".join(parts))
    return path
