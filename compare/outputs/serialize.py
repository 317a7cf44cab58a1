"""A check result as JSON, CSV, Markdown and table rows, and a sweep as CSV (no physics here)."""

from __future__ import annotations

import csv
import io
import math
from dataclasses import dataclass
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
           "versions", "verdict_lines", "sweep_csv", "sweep_json", "tolerance_json",
           "sweep_column_unit", "csv_cell", "CSV_DIGITS"]

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
        verdict = f"{row.verdict}, {margin_left_text(row)}"  # room left (or over), % of the limit
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


SWEEP_EXTRA_UNITS = {"hand_planar_peak_B": "T", "fe_peak_B": "T", "fe_seconds": "s",
                     "hand_loss_core_loss": "W", "hand_planar_loss_core_loss": "W",
                     "fe_loss_core_loss": "W"}
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
        if column.startswith(prefix + "loss_"):  # the loss budget's (compare.models.loss)
            from ..models.loss import BUDGET_UNITS

            return BUDGET_UNITS.get(column[len(prefix) + 5:], "")
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
             f"`{res.case.family}`, fringing model `{res.hand_planar.fringing_model}`.", ""]
    for b in verdict_banners(res, agreement):  # the verdicts first
        lines.append(f"> **{b.line()}**" + "".join(
            f"  \n> {markdown_text(d)}" for d in b.details))
        lines.append("")
    lines += ["| " + " | ".join(TABLE_COLUMNS) + " |",
              "|" + "---|" * len(TABLE_COLUMNS)]
    for r in res.rows:
        lines.append("| " + " | ".join(display_cells(r)) + " |")
    lines.append("")
    design = [r for r in res.rows if r.judges == "design"]
    if design:
        lines += ["Design margins (absolute limits):", "",
                  "| " + " | ".join(MARGIN_COLUMNS) + " |", "|" + "---|" * len(MARGIN_COLUMNS)]
        lines += ["| " + " | ".join(markdown_text(c) for c in margin_cells(r)) + " |"
                  for r in design]
        lines.append("")
    if res.measured:
        lines += [markdown_text(MEASURED_TITLE[0].upper() + MEASURED_TITLE[1:]) + ":", "",
                  "| " + " | ".join(MEASURED_COLUMNS) + " |", "|" + "---|" * len(MEASURED_COLUMNS)]
        lines += ["| " + " | ".join(markdown_text(pretty_units(c)) for c in measured_cells(m))
                  + " |" for m in res.measured]
        lines.append("")
    lines += [f"- {markdown_text(pretty_units(n))}" for n in res.notes]
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


# --- the engineer's view: Unicode units, verdict banners, rows by topic -------------------

_UNICODE_SUBS = (
    (r"(?<=[\d\s(])u(?=(Wb|H|T|m|A|J|N|s|V|F)\b)", "µ"),  # the micro prefix of format_si
    (r"\^2\b", "²"), (r"\^3\b", "³"), (r">=", "≥"), (r"<=", "≤"), (r"\+/-", "±"),
    (r" -> ", " → "),
)


def pretty_units(text: str) -> str:
    """Display text with Unicode units: ``uWb`` -> ``µWb``, ``A/mm^2`` ->
    ``A/mm²``, ``>=`` -> ``≥``, ``<=`` -> ``≤``, ``+/-`` -> ``±``. Presentation
    only: the JSON and CSV keep their ASCII units and keys."""
    import re

    for pat, rep in _UNICODE_SUBS:
        text = re.sub(pat, rep, text)
    return text


_ASCII = {"µ": "u", "²": "^2", "³": "^3", "≥": ">=", "≤": "<=", "±": "+/-", "→": "->", "─": "-"}


def ascii_units(text: str) -> str:
    """`pretty_units` undone, for a stream that cannot print Unicode."""
    return "".join(_ASCII.get(ch, ch) for ch in text)


def display_cells(row: Row) -> list[str]:
    """`table_cells` with Unicode units (terminal, Markdown cells, HTML)."""
    return [pretty_units(c) for c in table_cells(row)]


TOPICS = ("field and flux", "inductances", "force", "magnet", "drive", "motion", "margins", "other")
"""The groups of the terminal table, in order (`row_topic`)."""


def row_topic(row: Row) -> str:
    """The topic a row belongs to (one of `TOPICS`): a design row (peak B,
    ``margin:``) under margins, the rest by its quantity."""
    k = row.key
    if row.judges == "design":
        return "margins"
    if k.startswith("force"):
        return "force"
    if k.startswith("magnet_"):
        return "magnet"
    if k.startswith("motion:"):
        return "motion"
    if k.startswith(("magnetizing", "inrush", "B_peak", "B_limb_peak")):
        return "drive"
    if k in ("inductance", "incremental_inductance", "energy", "leakage_inductance") \
            or k.startswith(("coupling:", "L:")):
        return "inductances"
    if k in ("gap_B", "core_B", "path_H", "flux") or k.startswith("flux_linkage"):
        return "field and flux"
    return "other"


def _value_limit(row: Row, value: float) -> str:
    sign = ">=" if row.limit_kind == "min" else "<="
    return (f"{format_si(value, row.unit)} {'' if _met(row) else 'not '}{sign} "
            f"{format_si(row.limit_value, row.unit)}")  # type: ignore[arg-type]


def _met(row: Row) -> bool:
    return row.verdict != "FAIL"


def _judged_value(row: Row) -> float:
    """The value a design row is judged on: the FE (depth-corrected where it
    has one), else the hand's."""
    for v in (row.fe_3d, row.fe, row.hand_3d, row.hand):
        if math.isfinite(v):
            return v
    return math.nan


def margin_left_text(row: Row) -> str:
    """A design margin's room in words: ``12 % left`` or ``20 % over``."""
    if not math.isfinite(row.margin_pct):
        return "-"
    if row.margin_pct < 0:
        return f"{-row.margin_pct:.0f} % over"
    return f"{row.margin_pct:.0f} % left"


@dataclass(frozen=True)
class Banner:
    """One verdict as a banner: ``title`` ("design margins" or "hand vs FE"),
    ``status`` ("PASS", "FAIL", or "FAIL (reported only)"), ``ok`` (the
    verdict passed), ``details`` (what failed, the tightest margin left)."""

    title: str
    status: str
    ok: bool
    details: tuple[str, ...]

    def line(self) -> str:
        return f"{self.title.upper()}: {self.status}"


def _agreement_use(row: Row) -> float:
    """How much of its agreement limit a row uses (|diff| / limit)."""
    if row.limit_pct is None or not row.limit_pct or not math.isfinite(row.diff_pct):
        return math.nan
    return abs(row.diff_pct) / row.limit_pct


def verdict_banners(res: CheckResult, agreement: str = "fatal") -> list[Banner]:
    """The two verdicts as banners, design margins first: what failed and
    the tightest margin left (design: the least room, % of its limit;
    agreement: the row that uses most of its limit)."""
    design_rows = [r for r in res.rows if r.judges == "design"]
    judged = [r for r in design_rows if r.limit_value is not None and math.isfinite(r.margin_pct)]
    details: list[str] = []
    for r in design_rows:
        if r.verdict == "FAIL" and r.limit_value is not None:
            details.append(f"failed: {r.label}: {_value_limit(r, _judged_value(r))}, "
                           f"{margin_left_text(r)}")
    passed = [r for r in judged if r.verdict != "FAIL"]
    if passed:
        t = min(passed, key=lambda r: r.margin_pct)
        details.append(f"tightest margin: {t.label}: {_value_limit(t, _judged_value(t))}, "
                       f"{margin_left_text(t)}")
    inc = [r for r in design_rows if r.verdict == "inconclusive"]
    if inc:
        details.append(f"{len(inc)} met by less than the FE's uncertainty (inconclusive)")
    if not judged:
        peak = next((r for r in design_rows if r.key == "peak_B"), None)
        extra = (f"; peak core B {format_si(peak.fe, 'T')} reported"
                 if peak is not None and math.isfinite(peak.fe) else "")
        details.append(f"no margin declared (a [margins] section states them){extra}")
    design = Banner("design margins", "PASS" if res.design_passed else "FAIL",
                    res.design_passed, tuple(details))

    agree_rows = [r for r in res.rows if r.judges == "agreement" and r.limit_pct is not None]
    details = []
    for r in agree_rows:
        if r.verdict == "FAIL":
            details.append(f"failed: {r.label}: hand {_pct(r.diff_pct)} % against the FE "
                           f"(limit ±{r.limit_pct:g} %)")
    ok_rows = [r for r in agree_rows if r.verdict != "FAIL" and math.isfinite(_agreement_use(r))]
    if ok_rows:
        t = max(ok_rows, key=_agreement_use)
        details.append(f"closest to its limit: {t.label}: {_pct(t.diff_pct)} % "
                       f"(limit ±{t.limit_pct:g} %)")
    inc_n = res.verdict_counts("agreement").get("inconclusive", 0)
    if inc_n:
        details.append(f"{inc_n} inconclusive: the FE's uncertainty is wider than the "
                       "difference (refine the mesh)")
    status = "PASS" if res.agreement_passed else (
        "FAIL (reported only)" if agreement == "report" else "FAIL")
    return [design, Banner("hand vs FE", status, res.agreement_passed, tuple(details))]


def _same(a: float, b: float) -> bool:
    return (not math.isfinite(a) and not math.isfinite(b)) or a == b or (
        math.isfinite(a) and math.isfinite(b) and abs(a - b) <= 1e-12 * max(abs(a), abs(b)))


def shows_3d(res: CheckResult) -> bool:
    """The hand 3D and FE 3D columns say something new: some row's 3D value
    differs from its like-for-like one (an r-z case has none: its solution
    is the whole circuit already)."""
    return any(not (_same(r.hand, r.hand_3d) and _same(r.fe, r.fe_3d))
               for r in res.rows if r.judges == "agreement")


def grouped_rows(res: CheckResult, judges: str = "agreement") -> list[tuple[str, list[Row]]]:
    """The rows that judge ``judges`` grouped by `row_topic`, in `TOPICS` order."""
    groups: dict[str, list[Row]] = {}
    for r in res.rows:
        if r.judges == judges:
            groups.setdefault(row_topic(r), []).append(r)
    return [(t, groups[t]) for t in TOPICS if t in groups]


MARGIN_COLUMNS = ["margin", "hand", "FE (judged)", "limit", "room", "verdict"]
"""Columns of the design margins table (terminal, Markdown, HTML)."""


def margin_cells(row: Row) -> list[str]:
    """A design row as display strings, in `MARGIN_COLUMNS` order: the
    absolute limit (with its sign) and the room left or over in words."""
    scale = _row_scale(row)
    fe = row.fe_3d if math.isfinite(row.fe_3d) else row.fe
    if row.limit_value is None:
        limit = "-"
    else:
        sign = ">=" if row.limit_kind == "min" else "<="
        limit = f"{sign} {format_si(row.limit_value, row.unit)}"
    hand = row.hand_3d if math.isfinite(row.hand_3d) else row.hand
    return [pretty_units(c) for c in (row.label, _fmt(hand, row.unit, scale),
                                      _fmt(fe, row.unit, scale), limit, margin_left_text(row),
                                      row.verdict)]


AGREEMENT_COLUMNS = ["quantity", "hand", "FE", "FE +/-", "diff %", "limit %", "verdict"]
"""The like-for-like columns of the terminal's agreement table."""


MEASURED_COLUMNS = ["measured", "at", "measured ± u", "hand", "FE (judged) ± u", "hand Δ/u",
                    "FE Δ/u"]
"""The measured section's columns: Δ/u is (model - measured) over the
combined standard uncertainty (compare.judge.measurement)."""
MEASURED_TITLE = ("measured (the built part; Δ/u = model - measured in combined standard "
                  "uncertainties, k = 1)")


def _sigma(v: float) -> str:
    return "-" if not math.isfinite(v) else f"{v:+.2f}"


def measured_cells(m: Any) -> list[str]:
    """A compare.judge.measurement.MeasuredRow as display strings, in
    `MEASURED_COLUMNS` order."""
    at = f"{m.at * 1e3:g} mm" if m.at_unit == "m" else f"{m.at:g} A"
    label = m.label + (", curve" if m.curve else "")
    fe_u = f" ± {_fmt(m.u_fe, m.unit)}" if math.isfinite(m.u_fe) else ""
    return [label, at, f"{_fmt(m.measured, m.unit)} ± {_fmt(m.u_measured, m.unit)}",
            _fmt(m.hand, m.unit), _fmt(m.fe, m.unit) + fe_u, _sigma(m.hand_sigma),
            _sigma(m.fe_sigma)]


def agreement_cells(row: Row, with_3d: bool) -> list[str]:
    cells = display_cells(row)
    return cells[:7] + (cells[7:] if with_3d else [])


def breakdown_compact(res: CheckResult) -> str:
    """The difference breakdown in one line: the inductance difference after
    each hand refinement (the full table: ``--breakdown`` or ``--wide``)."""
    key = "inductance"
    steps = [f"{st.name} {_pct(st.diff_pct.get(key))}" for st in res.breakdown]
    return ("where the L difference (%) comes from, hand refinements one at a time: "
            + " -> ".join(steps) + " (the full table: --breakdown)")


def check_lines(res: CheckResult, agreement: str = "fatal", *, width: int = 100,
                wide: bool = False, breakdown: bool = False,
                unicode: bool = True) -> list[tuple[str, str]]:
    """The check's terminal output as (text, kind) lines (kinds: see
    compare.outputs.output.STYLES): the title, the two verdicts first, the
    hand-vs-FE table grouped by topic, the design margins in a table of their
    own, the notes wrapped to ``width``, the breakdown compact unless
    ``breakdown`` or ``wide``. ``wide``: every column, however wide."""
    from .output import fit_table, wrap_text
    from ..design.coremodel import core_model

    c = res.case
    w = c.winding
    out: list[tuple[str, str]] = []
    txt = pretty_units if unicode else (lambda s: ascii_units(pretty_units(s)))
    rule = "─" if unicode else "-"

    def para(text: str, kind: str = "", indent: str = "") -> None:
        for ln in wrap_text(txt(text), width - len(indent), "  "):
            out.append((indent + ln, kind))

    form = "axisymmetric" if core_model(c).axisymmetric else "planar"
    drive = (f"{w.voltage:g} V rms, {w.frequency:g} Hz (I = {format_si(w.current, 'A')} peak "
             "magnetizing)" if w.driven else f"I = {w.current:g} A")
    para(f"{c.name}: hand calc vs {form} FE, N = {w.turns}, {drive} "
         f"(fringing model '{res.hand_planar.fringing_model}')", "title")
    for line, banner in zip(verdict_lines(res, agreement), verdict_banners(res, agreement)):
        para(line, "pass" if banner.ok else "FAIL")
        for d in banner.details:
            para(d, "", " " * 11)
    out.append(("", ""))
    with_3d = wide or shows_3d(res)
    cols = AGREEMENT_COLUMNS + (["hand 3D", "FE 3D"] if with_3d else [])
    groups = [(t, [[txt(c) for c in agreement_cells(r, with_3d)] for r in rows])
              for t, rows in grouped_rows(res, "agreement")]
    limit = 10 ** 6 if wide else width
    if groups:
        out += [(ln, "table") for ln in fit_table([txt(h) for h in cols], groups, limit, rule=rule)]
    design = [[txt(c) for c in margin_cells(r)] for r in res.rows if r.judges == "design"]
    if design:
        out.append(("", ""))
        out.append(("design margins (the FE value, depth-corrected where it has one, "
                    "against the case's limits)" if width >= 90 else "design margins", "title"))
        out += [(ln, "table")
                for ln in fit_table(MARGIN_COLUMNS, [("", design)], limit, rule=rule)]
    if res.measured:
        out.append(("", ""))
        out.append((txt(MEASURED_TITLE) if width >= 90 else "measured", "title"))
        out += [(ln, "table") for ln in fit_table(
            [txt(h) for h in MEASURED_COLUMNS],
            [("", [[txt(c) for c in measured_cells(m)] for m in res.measured])], limit, rule=rule)]
    out.append(("", ""))
    fe = res.fe.fine
    notes = list(res.notes) + [
        f"FE: {fe.nelements} elements, P{c.fe.order}, {fe.ndofs} DOFs, {fe.iterations} Newton "
        f"steps to residual {fe.residual:.1e}; run time {res.timings['total']:.1f} s."]
    for n in notes:
        para("- " + n)
    if res.fringing_ranking:
        out.append(("", ""))
        out.append(("fringing models vs FE (planar form), best first", "title"))
        rk = [[d["model"], f"{d['gap_B_difference_pct']:+.1f}", f"{d['flux_difference_pct']:+.1f}",
               f"{d['inductance_difference_pct']:+.1f}", f"{d['rms_difference_pct']:.1f}"]
              for d in res.fringing_ranking]
        out += [(ln, "table") for ln in fit_table(
            ["model", "gap B diff %", "flux diff %", "inductance diff %", "RMS %"],
            [("", rk)], limit, rule=rule)]
    if res.breakdown:
        out.append(("", ""))
        if breakdown or wide:
            columns, brows = breakdown_rows(res)
            out.append(("where the difference comes from: hand refinements one at a time",
                        "title"))
            out += [(ln, "table") for ln in fit_table(columns, [("", brows)], limit, rule=rule)]
            para(breakdown_note(res))
        else:
            para(breakdown_compact(res))
    if not unicode:
        out = [(ascii_units(t), k) for t, k in out]
    return out


def sweep_json(res: "SweepResult", margins: Any = None, sat_table: Any = None) -> dict:
    """The document of ``magcheck sweep --json`` (and ``magcheck.to_json``):
    the points, and the margins and saturation table given (by default
    :meth:`SweepResult.margins` with the case's own drops)."""
    if margins is None or sat_table is None:
        margins, sat_table = res.margins()
    from ..studies.sweep import sweep_rows

    c = res.case
    return {"case": {"name": c.name, "file": c.source, "sha256": c.sha256},
            "vary": [{"spec": s.spec, "key": s.key, "values": list(s.values)} for s in res.specs],
            "units": dict(UNITS, peak_B="T"),
            "points": sweep_rows(res),
            "saturation_current": sat_table,
            "margins": [m.to_dict() for m in margins],
            "predictor": res.predictor, "executor": res.executor, "workers": res.workers,
            "seconds": res.seconds, "converged": res.converged, "caution": CAUTION}


def tolerance_json(res: Any) -> dict:
    """The document of ``magcheck tolerance --json`` (and ``magcheck.to_json``)."""
    from ..studies.tolerance import PERCENTILES

    case = res.case
    return {"case": {"name": case.name, "file": case.source, "sha256": case.sha256},
            "samples": len(res.samples), "seed": res.seed, "fe_samples": res.fe_samples,
            "percentiles": {"q": list(PERCENTILES), **res.percentiles()},
            "yield": res.yield_fraction, "fits": res.fits,
            "values": {k: v.tolist() for k, v in res.values.items()},
            "passed": res.passed.tolist(),
            "settings": [s.settings for s in res.samples], "caution": CAUTION}

