"""magcheck's Python API: the same objects the command line prints and
serialises, for scripts and notebooks.

>>> from compare import api
>>> case = api.load("cases/demo_choke.toml")            # or a dict of the TOML tables
>>> hand = api.hand(case)                                # the magnetic circuit (HandResult)
>>> res = api.check(case)                                # both models side by side (CheckResult)
>>> doc = api.to_json(res)                               # = magcheck check --json
>>> sw = api.sweep("cases/demo_choke.toml", "winding.current=1A:6A:6")  # SweepResult

Every function validates its input like the CLI (a :class:`CaseError`
naming the key and the value) and raises :class:`RunError` when a solve
does not converge.  Results are design estimates, to be confirmed by
measurement and by the applicable codes and licensed practice.
"""
from __future__ import annotations

from pathlib import Path
from typing import Any

from ..design.case import Case
from ..errors import CaseError, RunError

__all__ = ["load", "hand", "fe", "check", "sweep", "to_json", "Case", "CaseError", "RunError"]


def load(source: str | Path | dict, *, base_dir: str | Path | None = None) -> Case:
    """A validated case from a TOML file's path or from the parsed tables
    (a dict as ``tomllib`` gives it; ``base_dir`` resolves B-H CSV files)."""
    from ..reading.casefile import case_from_dict, load_case

    if isinstance(source, dict):
        return case_from_dict(source, base_dir=Path(base_dir) if base_dir else None)
    return load_case(source)


def hand(case: Case, **switches: Any):
    """The hand calculation (:class:`compare.models.hand.HandResult`, SI): 3D by
    default; ``planar=True`` for the planar-consistent form; ``fringing``,
    ``leakage``, ``stacking``, ``effective`` override the case's ``[hand]``."""
    from ..models.hand import run_hand

    return run_hand(case, **switches)


def fe(case: Case, *, estimate_error: bool = True):
    """The field solution (:class:`compare.models.fe.FEResult`): values on the
    finest of three meshes and their uncertainty (one mesh, no uncertainty,
    with ``estimate_error=False``)."""
    from ..models.fe import run_fe_checked

    return run_fe_checked(case, estimate_error=estimate_error)


def check(case: Case, *, estimate_error: bool = True):
    """Both models side by side (:class:`compare.judge.check.CheckResult`): rows
    with hand, FE, difference, FE uncertainty and verdict; ``.design_passed``
    (the design meets its margins), ``.agreement_passed`` (the hand
    calculation agrees with the field solution), ``.passed`` (both)."""
    from ..judge.check import run_check

    return run_check(case, estimate_error=estimate_error)


def sweep(source: str | Path | dict, *vary: str, with_fe: bool = True, workers: int = 1,
          base_dir: str | Path | None = None):
    """A sweep (:class:`compare.studies.sweep.SweepResult`) of the case over
    ``KEY=SPEC`` strings as ``--vary`` takes them (several make a grid);
    ``source`` a file path or the parsed tables.  Runs in this process by
    default (``workers=1``); more workers run points in processes."""
    from ..reading.casefile import case_from_dict
    from ..design.keys import parse_vary
    from ..studies.sweep import CaseSource, case_source, run_sweep

    if isinstance(source, dict):
        import copy

        bd = Path(base_dir) if base_dir else None
        case = case_from_dict(source, base_dir=bd)
        src = CaseSource(copy.deepcopy(source), bd, "", "")
    else:
        src, case = case_source(source)
    if not vary:
        raise CaseError("vary", None, "give at least one KEY=SPEC, e.g. winding.current=0:20A:41")
    specs = [parse_vary(v, where="vary", family=case.family_model) for v in vary]
    return run_sweep(src, specs, with_fe=with_fe, workers=workers)


def to_json(result: Any) -> dict:
    """The JSON form of a result, as the CLI writes it: a check's whole
    document (``magcheck check --json``), or a hand result's block (the
    ``hand`` entry of ``magcheck hand --json``)."""
    from ..judge.check import CheckResult
    from ..models.hand import HandResult
    from ..outputs.serialize import check_json

    if isinstance(result, CheckResult):
        return check_json(result)
    if isinstance(result, HandResult):
        return result.to_dict()
    raise TypeError(f"to_json: a CheckResult or HandResult, not {type(result).__name__}")
