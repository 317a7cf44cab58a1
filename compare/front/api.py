"""magcheck's Python API: the objects the command line prints and writes, for
scripts and notebooks.  ``import magcheck`` gives every name here
(``magcheck.load``, ``magcheck.check``, ...); this module is
``magcheck.compare.front.api``.

>>> import magcheck
>>> case = magcheck.load("cases/demo_choke.toml")         # or a dict of the TOML tables
>>> wider = case.with_values({"gaps[0].length": "0.8 mm"})  # validated like the file
>>> hand = magcheck.hand(wider)                           # HandResult, SI
>>> round(hand["inductance"] * 1e3, 2)                    # H -> mH
2.44

Every entry point takes a case file's path, its parsed tables (a dict) or a
:class:`Case`; the CLI's commands run the same functions.  Bad input raises
:class:`CaseError` naming the key and the value; a solve that does not
converge :class:`RunError`.  Values are SI (m, A, T, H, Wb, J, N); the unit
of each quantity is in ``magcheck.compare.models.hand.UNITS`` and in each
comparison row's ``unit``.  Results are design estimates, to be confirmed by
measurement and by the applicable codes and licensed practice.
"""
from __future__ import annotations

import contextlib
import os
from pathlib import Path
from typing import TYPE_CHECKING, Any, Iterator, Sequence, Union

from ..design.case import Case
from ..errors import CaseError, CaseWarning, RunError

if TYPE_CHECKING:  # the result types, for annotations only (imported lazily below)
    from ..judge.check import CheckResult
    from ..models.fe import FEResult
    from ..models.hand import HandResult
    from ..reading.variants import CaseSource
    from ..studies.sweep import SweepResult
    from ..studies.target import TargetResult
    from ..studies.tolerance import ToleranceResult
    from ..studies.verify import VerifyResult

__all__ = ["load", "hand", "fe", "check", "sweep", "tolerance", "target", "verify", "report",
           "write_vtu", "to_json", "Case", "CaseError", "CaseWarning", "RunError"]

CaseLike = Union[str, Path, dict, Case]
"""What every entry point takes: a case file's path, its parsed tables, or a Case."""


def load(source: CaseLike, *, base_dir: str | Path | None = None) -> Case:
    """A validated :class:`Case` (SI inside) from a TOML case file's path or
    from its parsed tables (a dict as ``tomllib`` gives it; ``base_dir``
    resolves relative B-H CSV and DXF files).  A Case is returned as it is.

    The case supports ``case.with_values({"gaps[0].length": "0.8 mm",
    "winding.current": 7})``: a new case with those keys set (strings with
    units, or SI numbers: 7 is 7 A), validated like a case file.

    Raises
    ------
    CaseError
        For any problem of the file or the tables, naming the key and the value.
    """
    return _read(source, base_dir)[1]


def _read(source: CaseLike, base_dir: str | Path | None = None,
          ) -> tuple["CaseSource | None", Case]:
    """(its tables, the case); tables None for a Case built without the reader."""
    from ..reading.variants import Origin, case_from_tables, case_source

    if isinstance(source, Case):
        origin = source.origin
        if isinstance(origin, Origin) and origin.case == source:
            return origin.source, source
        # built directly, or changed with dataclasses.replace since it was read:
        # its tables (if any) no longer describe it, and nothing validated it
        from ..errors import warn

        how = ("was changed with dataclasses.replace after it was read"
               if origin is not None else "was built directly")
        warn(CaseWarning("case", source.name, f"this Case {how}, so no check "
                         "validated its values: make changes with "
                         "case.with_values({...}), which validates them"))
        return None, source
    if isinstance(source, dict):
        return case_from_tables(source, base_dir)
    if isinstance(source, (str, Path)):
        return case_source(source)
    raise TypeError(f"a case file's path, a dict of its tables or a Case, not "
                    f"{type(source).__name__}")


def _tables(source: CaseLike, what: str) -> tuple["CaseSource", Case]:
    """The tables and the case, for the studies that derive varied cases."""
    src, case = _read(source)
    if src is None:
        how = ("was changed with dataclasses.replace after it was read (its tables no longer "
               "describe it; make every change with case.with_values)"
               if case.origin is not None else "was built directly")
        raise CaseError(what, None, "needs a case read by magcheck.load (its tables give the "
                                    f"varied cases): this Case {how}")
    return src, case


def hand(case: CaseLike, *, fringing: str | None = None, planar: bool = False,
         leakage: bool | None = None, stacking: bool | None = None,
         effective: bool | None = None) -> "HandResult":
    """The magnetic-circuit calculation (``magcheck hand``):
    :class:`~magcheck.compare.models.hand.HandResult`, SI.

    3D by default (every fringing side); ``planar=True`` gives the
    planar-consistent form (in-plane fringing only, as a planar FE sees it;
    refused for an axisymmetric case).  ``fringing`` (a model name),
    ``leakage``, ``stacking``, ``effective`` override the case's ``[hand]``.
    Named access: ``hand["inductance"]`` (H), ``hand["gap_B"]`` (T),
    ``hand["flux_linkage"]`` (Wb), ``hand["energy"]`` (J), ...; ``hand.keys()``
    lists them; ``hand.to_dict()`` is the ``hand`` block of ``magcheck hand --json``.
    """
    from ..models.hand import check_hand_options, run_hand

    c = load(case)
    check_hand_options(c, fringing, planar)
    return run_hand(c, fringing=fringing, planar=planar, leakage=leakage, stacking=stacking,
                    effective=effective)


def fe(case: CaseLike, *, estimate_error: bool = True) -> "FEResult":
    """The field solution (:class:`~magcheck.compare.models.fe.FEResult`):
    ``.values`` on the finest of three meshes (SI, the hand keys; planar:
    per the case's stack depth), ``.uncertainty`` (same units) and the
    fem2d ``.solution``; one mesh and no uncertainty with
    ``estimate_error=False`` (as ``--no-error-estimate``, about 3x faster)."""
    from ..models.fe import run_fe_checked

    return run_fe_checked(load(case), estimate_error=estimate_error)


def check(case: CaseLike, *, estimate_error: bool = True,
          all_fringing: bool = False) -> "CheckResult":
    """Both models side by side (``magcheck check``):
    :class:`~magcheck.compare.judge.check.CheckResult`.

    ``res["inductance"]`` is a row: ``.hand``, ``.fe`` (H), ``.fe_3d`` (the
    depth-corrected FE), ``.uncertainty`` (the FE's, H), ``.diff_pct`` (%),
    ``.verdict``; ``res.keys()`` lists the rows.  ``res.design_passed`` (the
    design meets its margins), ``res.agreement_passed`` (hand agrees with FE),
    ``res.passed`` (both); ``res.to_dict()`` is the document of ``magcheck
    check --json``, ``res.to_dataframe()`` the rows (pandas, if installed).
    ``estimate_error=False`` as ``--no-error-estimate`` (one mesh, no FE
    uncertainty, faster); ``all_fringing`` as ``--all-fringing``.  A mesh
    above the size limit needs ``case.with_values({"fe.allow_large": True})``.
    """
    from ..judge.check import run_check

    return run_check(load(case), all_fringing=all_fringing, estimate_error=estimate_error)


def sweep(case: CaseLike, *vary: str, with_fe: bool = True, workers: int = 1,
          predictor: str = "tangent", base_dir: str | Path | None = None) -> "SweepResult":
    """A sweep (``magcheck sweep``):
    :class:`~magcheck.compare.studies.sweep.SweepResult`, one point per value.

    ``vary`` are ``KEY=SPEC`` strings as ``--vary`` takes them
    (``"winding.current=0:20A:41"``, ``"gaps[0].length=0.5mm,0.8mm"``;
    several make a grid); none: the case's own ``[sweep]``.  ``with_fe=False``
    as ``--hand-only``.  Runs in this process (``workers=1``); more workers
    run blocks of points in processes.  ``sw["fe_inductance"]`` is a column
    over the points (SI; ``sw.columns()`` lists them), ``sw.margins(drops)``
    the margins and saturation table ``magcheck sweep`` prints.
    """
    from ..design.keys import parse_vary
    from ..studies.sweep import run_sweep

    if isinstance(case, dict):
        src, c = _read(case, base_dir)
        assert src is not None
    else:
        src, c = _tables(case, "sweep")
    specs_text = list(vary) or (list(c.sweeps[0].vary) if c.sweeps else [])
    if not specs_text:
        raise CaseError("vary", None, "give at least one KEY=SPEC, e.g. winding.current=0:20A:41 "
                                      "(the case declares no [sweep])")
    if workers < 1:
        raise CaseError("workers", workers, "must be at least 1")
    specs = [parse_vary(v, where="vary", family=c.family_model) for v in specs_text]
    if with_fe:
        from ..models.fe import guard_mesh_size

        guard_mesh_size(c)
    return run_sweep(src, specs, with_fe=with_fe, predictor=predictor, workers=workers)


def tolerance(case: CaseLike, *, samples: int = 50, seed: int = 0,
              fe_samples: int | None = None, workers: int = 1) -> "ToleranceResult":
    """The Monte Carlo study over the case's ``[[tolerances]]`` (``magcheck
    tolerance``): :class:`~magcheck.compare.studies.tolerance.ToleranceResult`.

    ``res["inductance"]`` (H), ``res["peak_B"]`` (T),
    ``res["saturation_current"]`` (A) are arrays over the samples, and
    per inductance window ``res["inductance_secant@6A"]`` (H; its kind and
    current) the value that window is judged on, at its own current;
    ``res.percentiles()`` their P5/P50/P95, ``res.yield_fraction`` the share
    of samples meeting every design margin.  ``fe_samples`` runs the FE on
    the first M samples only (the rest corrected through the fitted
    hand-vs-FE relation).
    """
    from ..studies.tolerance import run_tolerance

    if samples < 1:
        raise CaseError("samples", samples, "must be at least 1")
    if workers < 1:
        raise CaseError("workers", workers, "must be at least 1")
    src, _ = _tables(case, "tolerance")
    return run_tolerance(src, samples=samples, seed=seed, fe_samples=fe_samples, workers=workers)


def target(case: CaseLike, key: str, bracket: Sequence[Any] | None = None,
           targets: str | Sequence[str] = (), *, with_fe: bool = True,
           uncertainty: bool = True) -> "TargetResult":
    """The value of one design key meeting targets (``magcheck target``):
    :class:`~magcheck.compare.studies.target.TargetResult`.

    ``key`` in the ``--vary`` grammar (``"gaps[0].length"``,
    ``"winding.turns"``); ``bracket`` its (low, high) ends as the case file
    writes them (``("0.3 mm", "1.2 mm")``, SI numbers, integers for the
    turns), or None with the bracket in ``key`` (``"gaps[0].length=0.3mm:1.2mm"``);
    ``targets`` one or more ``QUANTITY OP VALUE[@AT]`` strings
    (``"inductance>=3.2mH@6A"``, ``"saturation_current>=8A@20%"``).
    ``res.answers[k].hand.root`` / ``.fe.root`` are each model's value of
    the key (SI), ``res.feasible`` per model the range meeting every target
    (None: none does).  ``with_fe=False`` as ``--hand-only``;
    ``uncertainty=False`` skips the three-mesh check at the FE answer.
    """
    from ..studies.target import parse_bracket, parse_target, solve_targets

    src, c = _tables(case, "target")
    if bracket is None:
        spec = key
    else:
        if isinstance(bracket, (str, bytes)) or len(bracket) != 2:
            raise CaseError("bracket", bracket, "give (low, high), e.g. ('0.3 mm', '1.2 mm')")
        spec = f"{key}=" + ":".join(str(v).replace(" ", "") for v in bracket)
    b = parse_bracket(spec, family=c.family_model, where="key")
    texts = [targets] if isinstance(targets, str) else list(targets)
    ts = [parse_target(t, where="targets") for t in texts]
    if not ts:
        raise CaseError("targets", None, "give at least one, e.g. 'inductance>=3.2mH@6A'")
    if with_fe:
        from ..models.fe import guard_mesh_size

        guard_mesh_size(c)
    return solve_targets(src, b, ts, with_fe=with_fe, uncertainty=uncertainty)


def verify(cases: CaseLike | Sequence[CaseLike], *, baseline: str | Path | None = None,
           estimate_error: bool = True, agreement: str = "fatal",
           stored_verdicts: bool = True, workers: int = 1) -> "VerifyResult":
    """Every case against its limits, margins, declared sweeps and stored
    results (``magcheck verify``):
    :class:`~magcheck.compare.studies.verify.VerifyResult`.

    ``cases`` one or several case files, folders of them, dicts or Cases.
    Paths run as the CLI runs them (``workers`` processes); dicts and Cases
    in this process.  ``res["demo-choke"]`` is one case's outcome and
    ``res["demo-choke"]["agreement:inductance"]`` one item; ``res.exit_code``
    the CLI's exit code, ``res.to_dict()`` the document of ``--json``.
    The outcomes list the paths' cases first, then the others.  A case
    changed with ``with_values`` is not the stored one: no stored verdict
    applies to it, and with ``baseline`` its drift item fails as for an
    edited case file.
    """
    from ..judge.check import AGREEMENT_MODES
    from ..studies.verify import VerifyResult, run_verify, verify_cases

    if agreement not in AGREEMENT_MODES:
        raise CaseError("agreement", agreement, f"one of {', '.join(AGREEMENT_MODES)}")
    items: list[CaseLike] = ([cases] if isinstance(cases, (str, Path, dict, Case))
                             else list(cases))
    if not items:
        raise CaseError("cases", None, "give at least one case")
    if baseline is not None and not estimate_error:
        raise CaseError("estimate_error", False, "the baseline stores values of the checked "
                                                 "(three-mesh) FE; drop one of the options")
    paths = [c for c in items if isinstance(c, (str, Path))]
    loaded = [_tables(c, "verify") for c in items if not isinstance(c, (str, Path))]
    outcomes: list = []
    seconds = 0.0
    if paths:
        r = run_verify(paths, baseline=baseline, workers=workers, estimate_error=estimate_error,
                       agreement=agreement, stored_verdicts=stored_verdicts)
        outcomes += r.outcomes
        seconds += r.seconds
    if loaded:
        r = verify_cases(loaded, baseline=baseline, estimate_error=estimate_error,
                         agreement=agreement, stored_verdicts=stored_verdicts)
        outcomes += r.outcomes
        seconds += r.seconds
    return VerifyResult(tuple(outcomes), seconds, str(baseline) if baseline else "", agreement)


def report(result: "CheckResult | CaseLike", folder: str | Path,
           agreement: str = "fatal") -> Path:
    """Write the HTML report with its figures into ``folder`` (``magcheck
    check --report``); ``result`` a check's result, or a case (checked
    first, on three meshes).  Returns the path of ``index.html``."""
    from ..judge.check import CheckResult
    from ..outputs.report import write_report

    _writable("folder", folder, "folder")  # before the check's three solves
    res = result if isinstance(result, CheckResult) else check(result)
    with _write_error("folder", folder):
        return Path(write_report(res, folder, agreement))


def write_vtu(result: Any, path: str | Path) -> Path | None:
    """Write the FE field as VTU (``magcheck check --vtu``) and return the path.

    ``result`` a check's or an FE run's result (the finest mesh), or a case
    (solved on its own mesh, one solve).  Arrays named with their units:
    point data ``A_z_Wb_per_m`` (planar) or ``rA_phi_Wb_per_rad`` and
    ``A_phi_Wb_per_m`` (r-z); cell data ``B_T``, ``B_magnitude_T``,
    ``H_A_per_m``, ``mu_r``, ``region`` (the field data maps each region
    name to ``[id, 2]``).  ``path`` ``-`` writes to standard output.
    """
    from ..outputs.vtu import write_vtu as _write

    _writable("path", path, "file")  # before a case's solve
    if isinstance(result, (str, Path, dict, Case)):
        result = fe(result, estimate_error=False)
    with _write_error("path", path):
        return _write(result, path)


def _writable(name: str, path: str | Path, kind: str) -> None:
    """A CaseError (one line naming the parameter and the path) for an output
    path that cannot be written, before any work (as the command line's
    options are checked: compare.outputs.output.check_outputs)."""
    from ..outputs.output import check_outputs

    check_outputs([(name, os.fspath(path), kind)])


@contextlib.contextmanager
def _write_error(name: str, path: str | Path) -> Iterator[None]:
    """An OSError while writing as a CaseError naming the parameter and the path."""
    try:
        yield
    except OSError as exc:
        where = exc.filename if exc.filename is not None else path
        raise CaseError(f"{name} {os.fspath(path)}", None,
                        f"cannot be written ({where}: {exc.strerror or exc})") from None


def to_json(result: Any) -> dict:
    """The JSON form of a result as the CLI writes it (standard JSON types, a
    missing value None): a check's document (``magcheck check --json``,
    ``CheckResult.to_dict``), a hand result's block (the ``hand`` entry of
    ``magcheck hand --json``), a verify run's document (``magcheck verify --json``),
    a sweep's (``magcheck sweep --json``: the margins and saturation currents
    at the case's ``[sweep]`` drops when the sweep is the case's own, else at
    10/20/30 % of the incremental inductance), a tolerance study's
    (``magcheck tolerance --json``) or a target solve's (``magcheck target --json``)."""
    from ..judge.check import CheckResult
    from ..judge.document import json_ready
    from ..outputs.serialize import sweep_json, tolerance_json
    from ..models.hand import HandResult
    from ..studies.sweep import SweepResult
    from ..studies.target import TargetResult
    from ..studies.tolerance import ToleranceResult
    from ..studies.verify import VerifyResult

    if isinstance(result, CheckResult):
        return result.to_dict()
    if isinstance(result, (HandResult, VerifyResult, TargetResult)):
        return json_ready(result.to_dict())
    if isinstance(result, SweepResult):
        return json_ready(sweep_json(result))
    if isinstance(result, ToleranceResult):
        return json_ready(tolerance_json(result))
    raise TypeError(f"to_json: a CheckResult, HandResult, VerifyResult, SweepResult, "
                    f"ToleranceResult or TargetResult, not {type(result).__name__}")
