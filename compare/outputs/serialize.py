"""A check result as JSON, CSV, Markdown and table rows (no physics here)."""

from __future__ import annotations

import csv
import io
import math
from typing import Any

from ..judge.check import CheckResult, Row
from ..judge.document import check_json, versions
from .output import CAUTION
from ..design.units import format_si

__all__ = ["check_json", "check_csv", "check_markdown", "table_cells", "TABLE_COLUMNS",
           "versions", "verdict_lines"]

TABLE_COLUMNS = ["quantity", "hand", "FE", "FE +/-", "diff %", "limit %", "verdict",
                 "hand 3D", "FE 3D"]


RESIDUE_FLOOR = 1e-12
"""A table value below this fraction of the largest magnitude in its row
prints as 0: float residue of a cancellation (3.4e-159 beside 3.2e-6), not a
result; so does -0."""


def _fmt(v: float, unit: str, scale: float = 0.0) -> str:
    if v is None or not math.isfinite(v):
        return "-"
    if v == 0.0 or abs(v) < RESIDUE_FLOOR * scale:
        v = 0.0  # also turns -0.0 into 0
    return format_si(v, unit)


def _row_scale(row: Row) -> float:
    """The largest finite magnitude among a row's values (the residue floor's reference)."""
    vals = [abs(v) for v in (row.hand, row.fe, row.hand_3d, row.fe_3d) if math.isfinite(v)]
    return max(vals, default=0.0)


def _pct(v: float | None, digits: int = 1) -> str:
    return "-" if v is None or not math.isfinite(v) else f"{v:+.{digits}f}"


def table_cells(row: Row) -> list[str]:
    """The row as display strings, in TABLE_COLUMNS order."""
    if row.limit_value is not None:  # a design margin
        sign = ">=" if row.limit_kind == "min" else "<="
        limit = f"{sign} {format_si(row.limit_value, row.unit)}"
    else:
        limit = "-" if row.limit_pct is None else f"{row.limit_pct:g}"
    # Percent of the FE value; "-" when it has none (no estimate, or FE value zero).
    unc = "-" if not math.isfinite(row.uncertainty_pct) else (
        f"{row.uncertainty_pct:.2g} %")
    verdict = row.verdict
    if row.limit_value is not None and math.isfinite(row.margin_pct):
        verdict = f"{row.verdict}, {row.margin_pct:.0f} % left"  # margin left, % of the limit
    scale = _row_scale(row)
    return [row.label, _fmt(row.hand, row.unit, scale), _fmt(row.fe, row.unit, scale), unc,
            _pct(row.diff_pct), limit, verdict, _fmt(row.hand_3d, row.unit, scale),
            _fmt(row.fe_3d, row.unit, scale)]


def _counts_text(counts: dict[str, int]) -> str:
    order = ("pass", "FAIL", "inconclusive", "info", "n/a")
    parts = [f"{counts[k]} {k}" for k in order if counts.get(k)]
    parts += [f"{v} {k}" for k, v in counts.items() if k not in order]
    return ", ".join(parts) or "no rows"


def verdict_lines(res: CheckResult, agreement: str = "fatal") -> list[str]:
    """The two verdicts in words: the design's margins, and the hand
    calculation's agreement with the field solution (row counts beside)."""
    design = ("PASS: the design meets its margins" if res.design_passed
              else "FAIL: the design misses a margin")
    agree = ("PASS: the hand calculation agrees with the field solution" if res.agreement_passed
             else "FAIL: hand and FE disagree beyond a limit"
             + (" (reported only: --agreement report)" if agreement == "report" else ""))
    inc = res.verdict_counts("agreement").get("inconclusive", 0)
    if res.agreement_passed and inc:
        agree += f" where the mesh can tell ({inc} inconclusive: refine the mesh)"
    return [f"design:    {design} ({_counts_text(res.verdict_counts('design'))})",
            f"agreement: {agree} ({_counts_text(res.verdict_counts('agreement'))})"]


def check_csv(res: CheckResult) -> str:
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    keys = list(res.rows[0].to_dict())
    w.writerow(keys)
    for r in res.rows:
        w.writerow(["" if isinstance(v, float) and not math.isfinite(v) else
                    ("" if v is None else v) for v in r.to_dict().values()])
    return buf.getvalue()


BREAKDOWN_LABELS = {"gap_B": "gap B", "core_B": "core B", "path_H": "path H", "flux": "flux",
                    "inductance": "L", "incremental_inductance": "dL/dI"}
BREAKDOWN_NOTE = ("Each row switches one more refinement on in the hand model (its planar form "
                  "against a planar FE) and gives its difference to the same FE, (hand - FE)/FE in %. What is left in the "
                  "last row is what only a field solution sees: non-uniform flux, local saturation, "
                  "corners, the winding's effect on fringing.")


def breakdown_note(res: CheckResult) -> str:
    """BREAKDOWN_NOTE in the case's form: an r-z case compares the whole
    hand circuit with an axisymmetric FE, no planar form."""
    from ..judge.check import _knee
    from ..design.coremodel import core_model

    note = BREAKDOWN_NOTE
    if not res.fe.fine.peak_B > _knee(res.case.material("core").law):
        # no part of the core past its knee: no local saturation to blame
        note = note.replace("non-uniform flux, local saturation, corners",
                            "non-uniform flux, corners")
    if not core_model(res.case).axisymmetric:
        return note
    return note.replace("(its planar form against a planar FE)",
                        "(the whole circuit against the axisymmetric FE)")


def breakdown_rows(res: CheckResult) -> tuple[list[str], list[list[str]]]:
    """Columns and rows of the difference breakdown table (differences in %)."""
    from ..judge.breakdown import BREAKDOWN_KEYS

    columns = ["step"] + [f"{BREAKDOWN_LABELS[k]} diff %" for k in BREAKDOWN_KEYS]
    rows = [[st.name] + [_pct(st.diff_pct[k]) for k in BREAKDOWN_KEYS] for st in res.breakdown]
    return columns, rows


_MD_SPECIAL = set("\\`*_{}[]<>()#+!|&~")


def markdown_text(text: str) -> str:
    """Case text (a name, a note) as literal Markdown: every character Markdown
    or inline HTML could read as markup is backslash-escaped (``<script>``
    stays text), line breaks become spaces."""
    text = " ".join(str(text).splitlines())
    return "".join("\\" + c if c in _MD_SPECIAL else c for c in text)


def check_markdown(res: CheckResult, agreement: str = "fatal") -> str:
    lines = [f"# magcheck: {markdown_text(res.case.name)}", "",
             f"Case file `{res.case.source}` (sha256 `{res.case.sha256[:12]}`), family "
             f"`{res.case.family}`, fringing model `{res.hand_planar.fringing_model}`.", "",
             "| " + " | ".join(TABLE_COLUMNS) + " |",
             "|" + "---|" * len(TABLE_COLUMNS)]
    for r in res.rows:
        lines.append("| " + " | ".join(table_cells(r)) + " |")
    lines.append("")
    lines += [f"- {markdown_text(n)}" for n in res.notes]
    if res.fringing_ranking:
        lines += ["", "Fringing models against the FE (planar form), best first:", "",
                  "| model | gap B diff % | flux diff % | inductance diff % | RMS % |",
                  "|---|---|---|---|---|"]
        for d in res.fringing_ranking:
            lines.append(f"| {d['model']} | {_pct(d['gap_B_difference_pct'])} | "
                         f"{_pct(d['flux_difference_pct'])} | "
                         f"{_pct(d['inductance_difference_pct'])} | "
                         f"{d['rms_difference_pct']:.1f} |")
    if res.breakdown:
        columns, rows = breakdown_rows(res)
        lines += ["", "Where the difference comes from (hand refinements one at a time):", "",
                  "| " + " | ".join(columns) + " |", "|" + "---|" * len(columns)]
        lines += ["| " + " | ".join(r) + " |" for r in rows]
        lines += ["", breakdown_note(res)]
    lines += ["", f"Verdict: {'all limits and margins met' if res.passed else 'FAILED'}.", ""]
    lines += [f"- {v}" for v in verdict_lines(res, agreement)]
    lines += ["", f"*{CAUTION}*", ""]
    return "\n".join(lines)
