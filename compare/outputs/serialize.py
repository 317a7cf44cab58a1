"""A check result as JSON, CSV, Markdown and table rows, and a sweep as CSV (no physics here)."""

from __future__ import annotations

import csv
import io
import math
from typing import TYPE_CHECKING, Any, Sequence

from ..judge.check import CheckResult, Row
from ..judge.document import check_json, versions
from ..models.hand import UNITS
from .output import CAUTION
from ..design.keys import CURRENT_KEY, key_dimension
from ..design.units import SI_UNIT, format_si
from ..errors import CaseError

if TYPE_CHECKING:
    from ..studies.sweep import SweepResult

__all__ = ["check_json", "check_csv", "check_markdown", "table_cells", "TABLE_COLUMNS",
           "versions", "verdict_lines", "sweep_csv", "sweep_column_unit", "csv_cell", "CSV_DIGITS"]

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


CSV_DIGITS = 12
"""Significant digits of a float in the CSV outputs (`csv_cell`).

Twelve: the binary float noise of a decimal step or a unit conversion sits
in the 16th-17th digit (one ulp is 1.1e-16 relative; a few operations add a
few ulps), four orders below; and nothing in a result is resolved that
finely (``[fe] tol`` is at least 1e-10, the FE's uncertainty and the
hand-vs-FE differences are per mille to per cent). The JSON outputs keep
every digit."""


def csv_cell(v: Any) -> Any:
    """One CSV cell: a float rounded to `CSV_DIGITS` significant digits and
    written as the shortest decimal that reads back to that rounded float
    (``repr``: ``0.0004`` where the float is 0.00039999999999999996, ``1.0``,
    ``2.5e-06``); a value that has no noise is written as before, and as the
    JSON writes it. A non-finite float or None is an empty cell; anything
    else (int, bool, str) as it is."""
    if v is None:
        return ""
    if isinstance(v, float):
        if not math.isfinite(v):
            return ""
        return repr(float(f"{v:.{CSV_DIGITS}g}"))
    return v


def _csv_text(header: list[str], rows: list[list[Any]]) -> str:
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(header)
    for r in rows:
        w.writerow([csv_cell(v) for v in r])
    return buf.getvalue()


def check_csv(res: CheckResult) -> str:
    """The comparison rows as CSV: the columns of `Row.to_dict` (units in the
    ``unit`` column), floats as `csv_cell` writes them."""
    keys = list(res.rows[0].to_dict())
    return _csv_text(keys, [list(r.to_dict().values()) for r in res.rows])


SWEEP_EXTRA_UNITS = {"hand_planar_peak_B": "T", "fe_peak_B": "T", "fe_seconds": "s"}
"""Units of the sweep row columns that are not a swept key or a hand quantity."""


def sweep_column_unit(column: str, swept: Sequence[str] = (), family: Any = None) -> str:
    """The SI unit of a sweep row's column (``""`` for a count, a flag or text).

    A swept key (``swept``, and ``winding.current``) takes the SI unit of its
    dimension (compare.design.keys.key_dimension, compare.design.units.SI_UNIT;
    none for a count or a plain number); ``hand_``, ``hand_planar_``, ``fe_``
    and ``fe_3d_`` plus a hand quantity take that quantity's unit
    (compare.models.hand.UNITS); peak B is in T, a solve time in s."""
    if column in swept or column == CURRENT_KEY:
        try:
            dim = key_dimension(column, family)
        except CaseError:
            return ""
        return SI_UNIT.get(dim, "")
    for prefix in ("hand_planar_", "hand_", "fe_3d_", "fe_"):
        if column.startswith(prefix) and column[len(prefix):] in UNITS:
            return UNITS[column[len(prefix):]]
    return SWEEP_EXTRA_UNITS.get(column, "")


def sweep_csv(res: SweepResult) -> str:
    """A sweep (compare.studies.sweep.SweepResult) as CSV, one row per point.

    The columns of compare.studies.sweep.sweep_rows in their order, each
    header with its SI unit in brackets where it has one
    (``winding.current [A]``, ``gaps[0].length [m]``, ``fe_inductance [H]``;
    `sweep_column_unit`); floats as `csv_cell` writes them (12 significant
    digits, no float noise); a non-finite value is an empty cell."""
    from ..studies.sweep import sweep_rows

    rows = sweep_rows(res)
    columns = list(rows[0])
    family = res.case.family_model
    header = [f"{c} [{u}]" if (u := sweep_column_unit(c, res.keys, family)) else c
              for c in columns]
    return _csv_text(header, [[r[c] for c in columns] for r in rows])


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
