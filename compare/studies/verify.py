"""``verify``: every stored design checked against its limits, margins and baseline.

For each case file under the given paths: the side-by-side check
(:func:`compare.judge.check.run_check`: hand-vs-FE agreement limits and the design
margins), the sweeps the case declares (``[sweep]``, saturation current and
inductance margins read off the FE curves), the target solves it stores
(``[[targets]]``: the FE's answer within a tolerance of the stored one,
:func:`target_item`), and, with a baseline file, drift of the stored results
beyond the tolerances of :mod:`compare.judge.baseline`.

One :class:`Item` per limit, margin or baseline check; an item is one JUnit
test case. Cases run in parallel processes (one case per task).

Two verdicts: the design (margins, sweeps, baseline drift; a failure exits
1) and the agreement of the hand calculation with the field solution
(agreement limits; a failure exits 4, or 0 with ``agreement="report"``).
A case's stored baseline entry (``--baseline``, or else ``baseline.json``
beside the case file, made from the same case file) may record an
agreement row as FAIL: the same FAIL now is a "known disagreement (stored)",
not a failure; a new FAIL, or a stored FAIL that no longer fails, is one.
"""

from __future__ import annotations

import json
import logging
import math
import time
import xml.etree.ElementTree as ET
from dataclasses import dataclass
from pathlib import Path
from typing import Callable, Sequence

from ..errors import CaseError, RunError

__all__ = ["Item", "CaseOutcome", "VerifyResult", "find_cases", "verify_case", "verify_source",
           "run_verify", "verify_cases",
           "junit_xml", "EXIT_OK", "EXIT_FAIL", "EXIT_INPUT", "EXIT_SOLVE", "EXIT_AGREEMENT",
           "KNOWN", "AGREEMENT_GROUPS"]

log = logging.getLogger(__name__)

EXIT_OK, EXIT_FAIL, EXIT_INPUT, EXIT_SOLVE, EXIT_AGREEMENT = 0, 1, 2, 3, 4

KNOWN = "known disagreement (stored)"
"""An agreement FAIL that the case's stored baseline entry records too."""
AGREEMENT_GROUPS = ("limit", "stored")
"""Item groups of the agreement verdict; the others (margin, sweep, baseline) are the design's."""


@dataclass(frozen=True)
class Item:
    """One checked figure of one case.

    group : "limit" (hand vs FE agreement), "stored" (an agreement verdict
        against the stored one), "margin", "sweep", "target" (a stored
        target solve, compare.studies.verify.target_item), "measured" (a
        model held to a measurement, :func:`measured_items`) or "baseline".
    verdict : "pass", "FAIL", "n/a" (could not be judged), "within FE noise",
        "inconclusive" (beyond the limit, within the FE noise) or
        "known disagreement (stored)".
    """

    group: str
    key: str
    label: str
    unit: str
    value: float
    limit: float | None
    limit_kind: str
    margin_pct: float
    verdict: str
    message: str = ""

    @property
    def failed(self) -> bool:
        return self.verdict == "FAIL"

    @property
    def judges(self) -> str:
        """"agreement" (hand vs FE) or "design" (margins, sweeps, baseline drift)."""
        return "agreement" if self.group in AGREEMENT_GROUPS else "design"

    def to_dict(self) -> dict:
        return {"group": self.group, "key": self.key, "label": self.label, "unit": self.unit,
                "value": self.value, "limit": self.limit, "limit_kind": self.limit_kind,
                "margin_pct": self.margin_pct, "verdict": self.verdict, "message": self.message,
                "judges": self.judges}


@dataclass(frozen=True)
class CaseOutcome:
    """Everything verify found for one case file.

    status : "ok" (ran), "input" (bad case file: exit 2) or "solve" (a solve failed: exit 3).
    """

    file: str
    name: str
    items: tuple[Item, ...]
    status: str = "ok"
    error: str = ""
    seconds: float = 0.0
    saturation: tuple[dict, ...] = ()

    @property
    def failed(self) -> bool:
        return any(i.failed for i in self.items)

    @property
    def design_passed(self) -> bool:
        return not any(i.failed for i in self.items if i.judges == "design")

    @property
    def agreement_passed(self) -> bool:
        return not any(i.failed for i in self.items if i.judges == "agreement")

    @property
    def known_disagreements(self) -> int:
        return sum(i.verdict == KNOWN for i in self.items)

    def keys(self) -> list[str]:
        """The items' keys (``agreement:inductance``, ``peak_B``, ``sweep:...``)."""
        return [i.key for i in self.items]

    def __getitem__(self, key: str) -> Item:
        """One item by key; KeyError lists the known keys."""
        for i in self.items:
            if i.key == key:
                return i
        raise KeyError(f"{key!r} is not an item of case {self.name!r}; known: "
                       f"{', '.join(self.keys())}")

    def to_dict(self) -> dict:
        """The case's entry of ``magcheck verify --json``."""
        return {"file": self.file, "name": self.name, "status": self.status, "error": self.error,
                "seconds": self.seconds, "items": [i.to_dict() for i in self.items],
                "saturation_current": list(self.saturation),
                "design_passed": self.design_passed,
                "agreement_passed": self.agreement_passed,
                "known_disagreements": self.known_disagreements}


@dataclass(frozen=True)
class VerifyResult:
    outcomes: tuple[CaseOutcome, ...]
    seconds: float
    baseline: str = ""
    agreement: str = "fatal"
    """"fatal": an agreement failure exits 4; "report": it is printed, exit 0."""

    @property
    def design_passed(self) -> bool:
        return all(o.design_passed for o in self.outcomes)

    @property
    def agreement_passed(self) -> bool:
        return all(o.agreement_passed for o in self.outcomes)

    def keys(self) -> list[str]:
        """The cases' names, in order."""
        return [o.name for o in self.outcomes]

    def __getitem__(self, name: str) -> CaseOutcome:
        """One case's outcome by its ``[case] name``; KeyError lists the known names."""
        for o in self.outcomes:
            if o.name == name:
                return o
        raise KeyError(f"{name!r} is not a verified case; known: {', '.join(self.keys())}")

    def to_dict(self) -> dict:
        """The document ``magcheck verify --json`` writes (before the JSON
        writer turns non-finite floats into null)."""
        from ..judge.document import CAUTION

        return {"cases": [o.to_dict() for o in self.outcomes],
                "design_passed": self.design_passed, "agreement_passed": self.agreement_passed,
                "exit_code": self.exit_code, "caution": CAUTION}

    @property
    def exit_code(self) -> int:
        if any(o.status == "input" for o in self.outcomes):
            return EXIT_INPUT
        if any(o.status == "solve" for o in self.outcomes):
            return EXIT_SOLVE
        if not self.design_passed:
            return EXIT_FAIL
        if not self.agreement_passed and self.agreement == "fatal":
            return EXIT_AGREEMENT
        return EXIT_OK


def find_cases(paths: Sequence[str | Path]) -> list[Path]:
    """Case files (``*.toml``) under the given files and folders, sorted, no repeats.

    Raises
    ------
    CaseError
        A path that does not exist, or no case file found at all.
    """
    out: list[Path] = []
    for p in paths:
        path = Path(p)
        if path.is_dir():
            out.extend(sorted(path.rglob("*.toml")))
        elif path.is_file():
            out.append(path)
        else:
            raise CaseError("PATH", str(p), "no such file or folder")
    seen, unique = set(), []
    for p in out:
        r = p.resolve()
        if r not in seen:
            seen.add(r)
            unique.append(p)
    if not unique:
        raise CaseError("PATH", ", ".join(map(str, paths)), "no case files (*.toml) found")
    return unique


def _check_items(res, stored: dict[str, str] | None = None) -> list[Item]:
    """The check's margin and agreement items; ``stored`` the agreement
    verdicts of the case's baseline entry (None: none stored)."""
    from ..judge.baseline import stored_verdict_changes

    changed = stored_verdict_changes({r.key: r.verdict for r in res.rows
                                      if r.judges == "agreement" and r.limit_pct is not None},
                                     stored) if stored is not None else {}
    items = []
    for r in res.rows:
        if r.limit_value is not None:  # design margin
            judged = r.fe if math.isfinite(r.fe) else r.hand  # hand-based margins have no FE value
            items.append(Item("margin", r.key.removeprefix("margin:"), r.label, r.unit, judged,
                              r.limit_value, r.limit_kind, r.margin_pct, r.verdict))
        elif r.limit_pct is not None:  # hand-vs-FE agreement limit, percent
            verdict = r.verdict
            message = f"hand {r.hand:.6g} {r.unit}, FE {r.fe:.6g} {r.unit}"
            if verdict == "FAIL" and stored is not None and stored.get(r.key) == "FAIL":
                verdict = KNOWN
                message += "; the baseline entry stores this FAIL (the hand model's known miss)"
            items.append(Item("limit", f"agreement:{r.key}", f"hand vs FE: {r.label}", "%",
                              r.diff_pct, r.limit_pct, "abs", r.limit_pct - abs(r.diff_pct)
                              if math.isfinite(r.diff_pct) else math.nan, verdict, message))
            if r.key in changed and r.verdict != "FAIL":
                items.append(Item("stored", f"stored:agreement:{r.key}",
                                  f"stored verdict: {r.label}", "", math.nan, None, "", math.nan,
                                  "FAIL", f"now {r.verdict}, stored FAIL: the disagreement is "
                                          "gone; regenerate the baseline entry "
                                          "(tools/update_baseline.py)"))
    return items


def measured_items(res) -> list[Item]:
    """The measurements a case holds a model to (``[[measured]]`` ``hold`` and
    ``within``): |model - measured| within ``within`` combined standard
    uncertainties at the case's operating point (compare.judge.measurement).

    A design item (group "measured"): it ties the stored design to the part
    that was built, so a case edited away from the hardware, or a model
    change that moves the answer off the bench, fails the design as a drift
    of the stored results does; hand against FE is the agreement verdict's
    business. An entry that holds a model but has no value at the case's
    point (another current or stroke, a curve that does not reach it) fails:
    the stated check cannot be made."""
    from ..judge.measurement import measured_rows

    rows = {m.entry: m for m in res.measured}
    items = []
    for i, m in enumerate(res.case.measured):
        if not m.hold:
            continue
        what = m.quantity.replace("_", " ")
        for model in (("fe", "hand") if m.hold == "both" else (m.hold,)):
            who = "FE" if model == "fe" else "hand"
            key = f"measured:{i}:{m.quantity}:{model}"
            label = f"measured: {who} against the measured {what}"
            r = rows.get(i)
            if r is None:
                left = measured_rows(res.case, res.rows)[1]
                why = next((t for t in left if t.startswith(f"measured[{i}]")), "")
                items.append(Item("measured", key, label, "u", math.nan, m.within, "abs",
                                  math.nan, "FAIL", f"no measured value at the case's point ({why})"))
                continue
            d = r.sigma(model)
            ok = math.isfinite(d) and abs(d) <= m.within
            value = r.fe if model == "fe" else r.hand
            u_model = f" ± {r.u_fe:.4g}" if model == "fe" and math.isfinite(r.u_fe) else ""
            items.append(Item(
                "measured", key, label, "u", d, m.within, "abs",
                100.0 * (m.within - abs(d)) / m.within if math.isfinite(d) else math.nan,
                "pass" if ok else "FAIL",
                f"{who} {value:.4g}{u_model} {r.unit}, measured {r.measured:.4g} ± "
                f"{r.u_measured:.4g} {r.unit} at {r.at:g} {r.at_unit}: "
                f"{d:+.2f} combined standard uncertainties, limit ±{m.within:g}"))
    return items


def _margin_item(group: str, m) -> Item:
    """A sweep margin: key and label say "sweep" (check has items of the same name)."""
    return Item(group, f"{group}:{m.key}", f"{group}: {m.label}", m.unit, m.value, m.limit,
                m.kind, m.margin_pct, m.verdict, m.note)


def target_item(src, case, decl, k: int) -> Item:
    """A stored target solve (``[[targets]]``, compare.design.case.TargetDecl)
    run by ``magcheck target`` (no three-mesh check: the answer's value is
    not judged here) and judged: with ``fe``, the FE answer within
    ``tolerance`` of it; without, a value of the key meeting every target by
    the FE.  A design item (group "target")."""
    from ..design.targets import parse_bracket, parse_target
    from ..design.units import SI_UNIT
    from .target import format_key_value, solve_targets

    b = parse_bracket(decl.key, family=case.family_model, where=f"targets[{k}].key")
    ts = [parse_target(t, where=f"targets[{k}].target") for t in decl.targets]
    res = solve_targets(src, b, ts, uncertainty=False)
    unit = "" if b.integer else SI_UNIT[b.dimension]
    label = f"target: {b.key} for {' and '.join(decl.targets)} (FE)"
    key = f"target:{decl.key}:{';'.join(decl.targets)}"
    feasible = res.feasible.get("FE")
    if decl.fe is None:
        text = (f"{format_key_value(b.key, feasible[0])} .. {format_key_value(b.key, feasible[1])}"
                " meets every target" if feasible else "no value of the key meets every target")
        return Item("target", key, label, unit, math.nan, None, "", math.nan,
                    "pass" if feasible else "FAIL", text)
    fe = res.answers[0].fe
    root = fe.root if fe is not None else math.nan
    allowed = (decl.tolerance or 0.0) * (abs(decl.fe) if decl.relative else 1.0)
    dev = abs(root - decl.fe)
    ok = math.isfinite(root) and dev <= allowed
    margin = 100.0 * (allowed - dev) / allowed if allowed > 0 and math.isfinite(dev) else math.nan
    text = (f"FE {format_key_value(b.key, root)}, stored {format_key_value(b.key, decl.fe)} "
            f"+- {format_key_value(b.key, allowed)}; hand {format_key_value(b.key, res.answers[0].hand.root)}"
            if math.isfinite(root) else f"the FE finds no answer: {fe.note if fe else ''}")
    return Item("target", key, label, unit, root, decl.fe, "abs", margin,
                "pass" if ok else "FAIL", text)


def verify_case(path: str, stored: dict | None = None, *, use_baseline: bool = False,
                estimate_error: bool = True) -> CaseOutcome:
    """Check one case file (runs in a worker process; never raises for bad input
    or failed solves: they come back as the outcome's status).

    ``stored`` the case's baseline entry: its agreement verdicts mark known
    disagreements (when made from the same case file); with ``use_baseline``
    its values are also checked for drift."""
    from .sweep import case_source

    t0 = time.perf_counter()
    try:
        src, case = case_source(path)
    except CaseError as exc:
        return CaseOutcome(str(path), Path(path).stem, (), "input", str(exc),
                           time.perf_counter() - t0)
    return verify_source(src, case, stored, use_baseline=use_baseline,
                         estimate_error=estimate_error, file=str(path), t0=t0)


def verify_source(src, case, stored: dict | None = None, *, use_baseline: bool = False,
                  estimate_error: bool = True, file: str = "",
                  t0: float | None = None) -> CaseOutcome:
    """:func:`verify_case` on a case already read (``src`` its
    ``compare.reading.variants.CaseSource``, for the declared sweeps): the
    check, the sweeps, the stored verdicts and drift of ``stored`` (when the
    case's sha256 is the entry's); never raises for bad input or failed
    solves.  ``file`` names the case in the outcome (default its source)."""
    from ..judge.baseline import drift, snapshot
    from ..judge.check import run_check
    from .sweep import parse_vary, run_sweep, sweep_margins

    t0 = time.perf_counter() if t0 is None else t0
    path = file or case.source or case.name
    name = case.name
    items: list[Item] = []
    sat: list[dict] = []
    try:
        specs_per_sweep = [[parse_vary(v, where="sweep.vary", family=case.family_model)
                            for v in decl.vary] for decl in case.sweeps]
        res = run_check(case, estimate_error=estimate_error)
        same = stored is not None and stored.get("case_sha256") in (None, "", case.sha256)
        items += _check_items(res, stored.get("agreement") if same and stored else None)
        items += measured_items(res)
        for decl, specs in zip(case.sweeps, specs_per_sweep):
            sw = run_sweep(src, specs, workers=1, names={"vary": "sweep.vary"})
            if not sw.converged:
                bad = [p for p in sw.points if not p.converged]
                raise RunError(f"sweep {', '.join(decl.vary)}: {len(bad)} point(s) failed; "
                               f"first: {bad[0].message}")
            margins, table = sweep_margins(sw, decl.drops, decl.inductance)
            items += [_margin_item("sweep", m) for m in margins]
            sat += [dict(row, sweep=" ".join(decl.vary)) for row in table]
        for k, tdecl in enumerate(case.targets):
            items.append(target_item(src, case, tdecl, k))
        if use_baseline:
            if stored is None:
                items.append(Item("baseline", "baseline", "stored results", "", math.nan, None,
                                  "", math.nan, "n/a", "no stored results for this case"))
            elif stored.get("case_sha256") not in (None, "", case.sha256):
                items.append(Item("baseline", "baseline", "stored results", "", math.nan, None,
                                  "", math.nan, "FAIL",
                                  f"the case file differs from the one the baseline entry "
                                  f"'{name}' was made from (sha256 {case.sha256[:12]}... vs "
                                  f"{str(stored['case_sha256'])[:12]}...): its values are not "
                                  "comparable; regenerate the entry or rename the case"))
            else:
                moved = drift(snapshot(res), stored)
                if moved:
                    for d in moved:
                        items.append(Item("baseline", f"baseline:{d.block}.{d.key}",
                                          f"drift of {d.block}.{d.key}", d.unit,
                                          math.nan if d.current is None else d.current, d.stored,
                                          "abs", math.nan, "FAIL", str(d)))
                else:
                    items.append(Item("baseline", "baseline", "stored results", "", math.nan,
                                      None, "", math.nan, "pass",
                                      "every stored value within its drift tolerance"))
    except CaseError as exc:
        return CaseOutcome(str(path), name, tuple(items), "input", str(exc),
                           time.perf_counter() - t0)
    except RunError as exc:
        return CaseOutcome(str(path), name, tuple(items), "solve", str(exc),
                           time.perf_counter() - t0)
    return CaseOutcome(str(path), name, tuple(items), "ok", "", time.perf_counter() - t0,
                       tuple(sat))


@dataclass(frozen=True)
class _Task:
    path: str
    stored: dict | None
    use_baseline: bool
    estimate_error: bool


def _run_task(t: _Task) -> CaseOutcome:
    return verify_case(t.path, t.stored, use_baseline=t.use_baseline,
                       estimate_error=t.estimate_error)


def run_verify(paths: Sequence[str | Path], *, baseline: str | Path | None = None,
               workers: int | None = None, scheduler: str | None = None,
               estimate_error: bool = True,
               on_done: Callable[[int, int], None] | None = None,
               agreement: str = "fatal", stored_verdicts: bool = True) -> VerifyResult:
    """Verify every case under ``paths`` (see module doc).

    Without ``baseline`` the stored agreement verdicts come from a
    ``baseline.json`` beside each case file, when there is one
    (``stored_verdicts=False``: none); no drift is checked then.

    Raises
    ------
    CaseError
        For a missing path or an unreadable baseline file.
    """
    from .executor import run_tasks

    t0 = time.perf_counter()
    files = find_cases(paths)
    stored_all: dict = _read_baseline(baseline) if baseline is not None else {}
    tasks = []
    beside: dict[Path, dict] = {}
    first_file: dict[str, Path] = {}
    for f in files:
        name = _case_name(f)
        if name is not None and name in first_file:
            raise CaseError("case.name", name, f"used by two case files, {first_file[name]} and "
                                               f"{f}: give each case its own name")
        if name is not None:
            first_file[name] = f
        if baseline is not None:
            entry = stored_all.get(name)
        elif stored_verdicts and name is not None:
            entry = _beside(f, beside).get(name)
        else:
            entry = None
        tasks.append(_Task(str(f), entry, baseline is not None, estimate_error))
    outcomes, _ = run_tasks(_run_task, tasks, workers=workers, scheduler=scheduler,
                            on_done=on_done)
    return VerifyResult(tuple(outcomes), time.perf_counter() - t0,
                        str(baseline) if baseline else "", agreement)


def verify_cases(sources: Sequence[tuple], *, baseline: str | Path | None = None,
                 estimate_error: bool = True, agreement: str = "fatal",
                 stored_verdicts: bool = True) -> VerifyResult:
    """:func:`run_verify` on cases already read, in this process:
    ``sources`` pairs of (``CaseSource``, ``Case``).  A case's stored entry
    (``baseline``, else the ``baseline.json`` beside its file) counts only
    when its sha256 is the entry's: a case changed with ``with_values`` has
    none, so its agreement rows are judged afresh, and with ``baseline`` its
    drift item fails as for an edited case file (not the stored case).

    Raises
    ------
    CaseError
        For an unreadable baseline file.
    """
    t0 = time.perf_counter()
    stored_all = _read_baseline(baseline) if baseline is not None else {}
    beside: dict[Path, dict] = {}
    outcomes = []
    for src, case in sources:
        if baseline is not None:
            entry = stored_all.get(case.name)
        elif stored_verdicts and case.source:
            entry = _beside(Path(case.source), beside).get(case.name)
        else:
            entry = None
        outcomes.append(verify_source(src, case, entry, use_baseline=baseline is not None,
                                      estimate_error=estimate_error))
    return VerifyResult(tuple(outcomes), time.perf_counter() - t0,
                        str(baseline) if baseline else "", agreement)


def _beside(case_file: Path, cache: dict[Path, dict]) -> dict:
    """The ``baseline.json`` in a case file's folder ({} when there is none
    or it is not a JSON object of entries; read once per folder and run)."""
    folder = case_file.resolve().parent
    if folder not in cache:
        data: dict = {}
        try:
            loaded = json.loads((folder / "baseline.json").read_text())
            data = loaded if isinstance(loaded, dict) else {}
        except FileNotFoundError:
            pass
        except (OSError, ValueError) as exc:
            log.warning("%s: not read for stored verdicts (%s)", folder / "baseline.json", exc)
        cache[folder] = {k: v for k, v in data.items() if isinstance(v, dict)}
    return cache[folder]


def _read_baseline(baseline: str | Path) -> dict:
    """The stored results of a ``--baseline`` file (case name -> entry)."""
    try:
        stored_all = json.loads(Path(baseline).read_text())
    except OSError as exc:
        raise CaseError("--baseline", str(baseline), f"cannot read ({exc.strerror})") from None
    except json.JSONDecodeError as exc:
        raise CaseError("--baseline", str(baseline), f"not JSON ({exc})") from None
    if not isinstance(stored_all, dict):
        raise CaseError("--baseline", str(baseline), "must map case names to results")
    return stored_all


def _case_name(path: Path) -> str | None:
    """The [case] name of a file, cheaply (for the baseline lookup); None if unreadable."""
    import tomllib

    try:
        return tomllib.loads(path.read_text(encoding="utf-8")).get("case", {}).get("name", "unnamed")
    except (OSError, UnicodeDecodeError, tomllib.TOMLDecodeError, AttributeError):
        return None


# --------------------------------------------------------------------------- JUnit
def _num(v: float | None, unit: str) -> str:
    from ..design.units import format_si

    if v is None or not math.isfinite(v):
        return "-" if v is None or math.isnan(v) else str(v)
    return format_si(v, unit) if unit and unit != "%" else f"{v:.4g}{' %' if unit == '%' else ''}"


def item_text(it: Item) -> str:
    """One line: value, limit and margin left (used in tables and JUnit messages)."""
    if it.group == "limit":
        return (f"{it.label}: difference {_num(it.value, '%')} against a limit of "
                f"+-{_num(it.limit, '%')}; {it.message}")
    if it.group == "baseline":
        return it.message
    if it.group in ("target", "measured"):
        return f"{it.label}: {it.message}"
    sign = "<=" if it.limit_kind == "max" else ">="
    text = (f"{it.label}: value {_num(it.value, it.unit)}, limit {sign} "
            f"{_num(it.limit, it.unit)}, margin {it.margin_pct:+.1f} % of the limit")
    return text + (f" ({it.message})" if it.message else "")


def junit_xml(res: VerifyResult) -> str:
    """JUnit XML: one <testsuite> per case, one <testcase> per item.

    A failed item carries value, limit and margin in both the ``message``
    attribute and the text of its <failure>; "n/a" items are <skipped>; a
    case that could not run is one <error> test case.
    """
    suites = ET.Element("testsuites", name="magcheck verify", time=f"{res.seconds:.3f}")
    for o in res.outcomes:
        cases = list(o.items)
        suite = ET.SubElement(suites, "testsuite", name=o.name, file=o.file,
                              time=f"{o.seconds:.3f}")
        props = ET.SubElement(suite, "properties")
        for pname, pvalue in (("design_passed", o.design_passed),
                              ("agreement_passed", o.agreement_passed),
                              ("known_disagreements", o.known_disagreements)):
            ET.SubElement(props, "property", name=pname,
                          value=str(pvalue).lower() if isinstance(pvalue, bool) else str(pvalue))
        nfail = nerr = nskip = 0
        for it in cases:
            tc = ET.SubElement(suite, "testcase", classname=f"magcheck.{o.name}", name=it.key,
                               file=o.file, time="0")
            text = item_text(it)
            if it.failed:
                nfail += 1
                f = ET.SubElement(tc, "failure", message=text, type=it.group)
                f.text = text
            elif it.verdict in ("n/a", "inconclusive"):
                nskip += 1
                ET.SubElement(tc, "skipped", message=f"{it.verdict}: {text}")
            else:
                out = ET.SubElement(tc, "system-out")
                out.text = f"{KNOWN}: {text}" if it.verdict == KNOWN else text
        if o.status != "ok":
            nerr += 1
            tc = ET.SubElement(suite, "testcase", classname=f"magcheck.{o.name}",
                               name="bad input" if o.status == "input" else "solve",
                               file=o.file, time=f"{o.seconds:.3f}")
            e = ET.SubElement(tc, "error", message=o.error,
                              type="bad input" if o.status == "input" else "solve failed")
            e.text = o.error
        suite.set("tests", str(len(cases) + (o.status != "ok")))
        suite.set("failures", str(nfail))
        suite.set("errors", str(nerr))
        suite.set("skipped", str(nskip))
    total = sum(int(s.get("tests", "0")) for s in suites)
    suites.set("tests", str(total))
    suites.set("failures", str(sum(int(s.get("failures", "0")) for s in suites)))
    suites.set("errors", str(sum(int(s.get("errors", "0")) for s in suites)))
    ET.indent(suites)
    return '<?xml version="1.0" encoding="UTF-8"?>\n' + ET.tostring(suites, encoding="unicode") + "\n"
