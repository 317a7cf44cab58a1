"""Sweeps: a case solved over a list or grid of values of its numeric keys.

A sweep varies case-file keys (``winding.current``, ``gaps[0].length``,
``core.limb_width``, ...) given as ``KEY=SPEC``:

- a range ``start:stop:count`` (``winding.current=0:20A:41``), or
- a list ``v1,v2,...`` (``gaps[0].length=0.5mm,0.8mm,1.2mm``).

A unit written on one item applies to the items written without one; plain
numbers are SI. Several specs make a grid (the last one varies fastest).
Every point is re-validated through :func:`compare.casefile.case_from_dict`, so
a swept value is checked exactly like case-file input. Two extra keys scale
the core's B-H curve (factor, nominal 1; see :func:`scale_law`):
``materials.core.scale_H`` and ``materials.core.scale_B``.

Execution. Points that share a mesh (same geometry; only current or
material change) form a chain; a chain is cut into blocks of at most
``block`` consecutive points. A block is one task: it meshes once and solves
its points in order, each Newton solve starting from a prediction made from
the previous point (:data:`PREDICTORS`). The blocks depend on the points
alone, never on the number of workers or the executor, so neither changes
the results (beyond the linear solver's rounding).
"""

from __future__ import annotations

import copy
import dataclasses
import hashlib
import itertools
import logging
import math
import time
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Callable, Sequence

import numpy as np

from analytic.bh import BHDataError, scale_law  # noqa: F401 (scale_law re-exported)

from .case import Case, MaterialSpec

from .casefile import case_from_dict
from .errors import CaseError, RunError
from .hand import HAND_KEYS, run_hand
from .keys import (CURRENT_KEY, SCALE_KEYS, VarySpec, key_dimension, parse_key, parse_vary,
                   resolve_vary, set_key)
from .margins import MarginResult, saturation_from_curve

__all__ = ["VarySpec", "parse_vary", "parse_key", "key_dimension", "resolve_vary",
           "scale_law", "CaseSource", "case_source", "make_case", "PointResult", "SweepResult",
           "plan_sweep", "run_sweep", "run_block", "BlockTask", "PREDICTORS",
           "DEFAULT_BLOCK", "CURRENT_KEY"]

log = logging.getLogger(__name__)

PREDICTORS = ("none", "previous", "secant", "tangent")
"""Newton start for the next point of a block: cold (A = 0); the previous
solution; linear extrapolation from the last two; or the previous solution
plus (I_next - I) dA/dI from a tangent solve (only when nothing but the
current changes; otherwise the previous solution)."""

DEFAULT_BLOCK = 11
"""Points per task. Fixed (not derived from the worker count) so that results
do not depend on it; 41 points make 4 tasks, enough for 2-4 workers."""

# --------------------------------------------------------------------------- materials
# --------------------------------------------------------------------------- cases
@dataclass(frozen=True)
class CaseSource:
    """A case file's parsed TOML, kept to derive varied cases from."""

    data: dict = field(repr=False, compare=False)
    base_dir: Path | None
    source: str
    sha256: str


def case_source(path: str | Path, *, allow_large: bool = False) -> tuple[CaseSource, Case]:
    """Read a case file both as raw TOML (to vary) and validated.

    ``allow_large`` sets ``[fe] allow_large = true`` in both (the
    ``--allow-large`` option); the file's hash stays that of the file.
    """
    from dataclasses import replace

    from .casefile import load_case

    case = load_case(path)  # all errors of a bad file come from here
    path = Path(path)
    raw = path.read_bytes()
    data = tomllib.loads(raw.decode("utf-8"))
    if allow_large:
        fe = data.get("fe")
        data["fe"] = {**(fe if isinstance(fe, dict) else {}), "allow_large": True}
        case = replace(case, fe=replace(case.fe, allow_large=True))
    return CaseSource(data, path.parent, str(path), hashlib.sha256(raw).hexdigest()), case


def make_case(src: CaseSource, settings: dict[str, float], *, spec_of: dict[str, str] | None = None) -> Case:
    """The case of ``src`` with ``settings`` (key -> SI value) applied, validated.

    Raises
    ------
    CaseError
        Naming the ``--vary`` spec (when ``spec_of`` maps the key to it) and
        the offending value.
    """
    data = copy.deepcopy(src.data)
    scales = {k: v for k, v in settings.items() if k in SCALE_KEYS}
    for key, value in settings.items():
        if key in SCALE_KEYS:
            continue
        try:
            set_key(data, parse_key(key), value, key)
        except CaseError as exc:
            where = spec_of.get(key, key) if spec_of else key
            raise CaseError(where, value, exc.reason) from None
    try:
        case = case_from_dict(data, base_dir=src.base_dir, source=src.source, sha256=src.sha256)
    except CaseError as exc:
        if spec_of:
            point = ", ".join(f"{k} = {v:g}" for k, v in settings.items())
            raise CaseError(exc.key, exc.value, f"{exc.reason} (at the point {point})") from None
        raise
    for k, v in scales.items():
        if v <= 0:
            where = spec_of.get(k, k) if spec_of else k
            raise CaseError(where, v, "a B-H scale factor must be positive")
    if scales:
        spec = case.material("core")
        try:
            law = scale_law(spec.law, scales.get(SCALE_KEYS[0], 1.0), scales.get(SCALE_KEYS[1], 1.0))
        except BHDataError as exc:
            raise CaseError(SCALE_KEYS[0], scales, str(exc)) from None
        new = MaterialSpec(spec.region, spec.kind, f"{spec.description}, scaled", law)
        case = dataclasses.replace(case, materials=tuple(
            new if m.region == "core" else m for m in case.materials))
    return case


# --------------------------------------------------------------------------- results
@dataclass(frozen=True)
class PointResult:
    """One sweep point: its settings and both models' values (SI).

    hand, hand_planar : the 3D hand calculation and its planar-consistent form.
    hand_peak_B : highest segment B of the planar hand model's core (T).
    fe : FE values keyed like the hand (empty when the FE was not run).
    fe_peak_B : the FE's peak core B (|B| exceeded on 0.5 % of the core area).
    start : Newton start used ("cold", "previous", "secant", "tangent").
    depth_factor : the secant inductance's FE 3D correction, hand 3D L / hand planar L
        (compare.check.depth_corrections).
    first_residual : Newton's relative residual at its start (1 for a cold start):
        how good the prediction was.
    """

    index: int
    settings: dict[str, float]
    current: float
    hand: dict[str, float]
    hand_planar: dict[str, float]
    hand_peak_B: float
    fe: dict[str, float] = field(default_factory=dict)
    fe_peak_B: float = math.nan
    iterations: int = 0
    seconds: float = 0.0
    start: str = "cold"
    converged: bool = True
    message: str = ""
    ndofs: int = 0
    depth_factor: float = 1.0
    first_residual: float = math.nan

    def to_dict(self) -> dict:
        return dataclasses.asdict(self)


@dataclass(frozen=True)
class SweepResult:
    """All points of a sweep, in grid order."""

    case: Case
    specs: tuple[VarySpec, ...]
    points: tuple[PointResult, ...]
    with_fe: bool
    predictor: str
    seconds: float
    workers: int
    executor: str

    @property
    def converged(self) -> bool:
        return all(p.converged for p in self.points)

    @property
    def keys(self) -> tuple[str, ...]:
        return tuple(s.key for s in self.specs)


# --------------------------------------------------------------------------- work
@dataclass(frozen=True)
class BlockTask:
    """Consecutive points of one chain (same mesh), solved in order in one process."""

    indices: tuple[int, ...]
    settings: tuple[dict, ...]
    cases: tuple[Case, ...]
    with_fe: bool = True
    predictor: str = "tangent"


def _block_linear_solver() -> Any:
    """A preconditioner-reusing AMG-CG factory from fem2d, or None (its default)."""
    try:
        from fem2d.linsolve import AmgCgReuse
    except ImportError:  # an fem2d without it: each solve builds its own
        return None
    return AmgCgReuse()


def _hand_peak(hand_res) -> float:
    return max((s["B"] for s in hand_res.segments if s["kind"] == "core"), default=math.nan)


def _only_current_changes(a: dict, b: dict) -> bool:
    return all(a.get(k) == b.get(k) for k in set(a) | set(b) if k != CURRENT_KEY)


def run_block(task: BlockTask) -> tuple[PointResult, ...]:
    """Solve the points of one block in order (runs in a worker process).

    BLAS is held to one thread per process during each solve and its
    post-processing (scoped: threadpoolctl restores it): with one worker per
    core, more threads only compete; and the AMG setup of the incremental-
    inductance solve ran ~10x slower with the default thread pool here.

    Never raises for a failed solve: the point comes back with
    ``converged=False`` and the message, and the next point starts cold.
    """
    from threadpoolctl import threadpool_limits

    from .check import depth_corrections
    from .fe import mesh_case, solve_case_full

    mesh = None
    # One AMG-CG factory for the whole block: the preconditioner built for
    # one tangent serves the next points too (same mesh, same sparsity) until
    # CG slows down; the CG operator is always the current tangent, so the
    # accuracy of every solve is unchanged.
    linear = _block_linear_solver() if task.with_fe else None
    history: list[tuple[dict, float, np.ndarray]] = []  # (settings, I, A) of solved points
    slope: np.ndarray | None = None
    hand_start: tuple = (None, None)
    out = []
    n = len(task.cases)
    for j, (idx, settings, case) in enumerate(zip(task.indices, task.settings, task.cases)):
        current = case.winding.current
        try:
            # The magnetic circuit starts from the previous point's branch
            # fluxes (its Newton converges to rtol 1e-10 from any start).
            h3 = run_hand(case, flux0=hand_start[0])
            hp = run_hand(case, planar=True, flux0=hand_start[1])
        except RunError as exc:
            out.append(PointResult(idx, settings, current, {}, {}, math.nan, converged=False,
                                   message=str(exc)))
            history, slope, hand_start = [], None, (None, None)
            continue
        hand_start = tuple({b.name: b.flux for b in h.network.branches} for h in (h3, hp))
        base: dict[str, Any] = dict(index=idx, settings=settings, current=current, hand=h3.values(),
                    hand_planar=hp.values(), hand_peak_B=_hand_peak(hp),
                    depth_factor=depth_corrections(hp, h3)["inductance"])
        if not task.with_fe:
            out.append(PointResult(**base))
            continue
        t0 = time.perf_counter()
        A0, start = None, "cold"
        if history and task.predictor != "none":
            s_prev, i_prev, a_prev = history[-1]
            A0, start = a_prev, "previous"
            same = _only_current_changes(s_prev, settings)
            if task.predictor == "tangent" and same and slope is not None:
                A0, start = a_prev + (current - i_prev) * slope, "tangent"
            elif (task.predictor == "secant" and same and len(history) >= 2
                  and _only_current_changes(history[-2][0], settings)
                  and history[-2][1] != i_prev):
                s2, i2, a2 = history[-2]
                A0 = a_prev + (current - i_prev) / (i_prev - i2) * (a_prev - a2)
                start = "secant"
        try:
            if mesh is None:
                mesh = mesh_case(case)
            try:
                with threadpool_limits(limits=1):
                    fs = solve_case_full(case, mesh, A0=A0, linear_solver=linear)
            except RunError:
                if A0 is None:
                    raise
                # A warm start that fails is retried cold: the point then
                # equals a single-point run.
                log.info("point %d: %s start failed, retrying cold", idx, start)
                start = f"cold (after {start})"
                with threadpool_limits(limits=1):
                    fs = solve_case_full(case, mesh, linear_solver=linear)
        except Exception as exc:  # a meshing or solve failure ends this point only
            if not isinstance(exc, RunError):
                log.warning("point %d failed: %s", idx, exc)
            out.append(PointResult(**base, seconds=time.perf_counter() - t0, start=start,
                                   converged=False, message=str(exc)))
            history, slope = [], None
            continue
        q, sol = fs.quantities, fs.solution
        history = (history + [(settings, current, sol.A.copy())])[-2:]
        slope = None
        if (task.predictor == "tangent" and j + 1 < n
                and _only_current_changes(settings, task.settings[j + 1])):
            # dA/dI from the incremental-inductance tangent solve: no extra solve.
            slope = fs.dA_dI
        out.append(PointResult(**base, fe=dict(q.values), fe_peak_B=q.peak_B,
                               iterations=q.iterations, seconds=time.perf_counter() - t0,
                               start=start, ndofs=q.ndofs,
                               first_residual=float(sol.residual_history[0])))
    return tuple(out)


def plan_sweep(src: CaseSource, specs: Sequence[VarySpec], *, with_fe: bool = True,
               predictor: str = "tangent", block: int = DEFAULT_BLOCK) -> list[BlockTask]:
    """Validate every point and cut the grid into blocks (see module doc).

    Raises
    ------
    CaseError
        For a bad spec or a swept value the case file would reject.
    """
    if predictor not in PREDICTORS:
        raise CaseError("--predictor", predictor, f"must be one of {', '.join(PREDICTORS)}")
    if block < 1:
        raise CaseError("--block", block, "must be at least 1")
    keys = [s.key for s in specs]
    if len(set(keys)) != len(keys):
        raise CaseError("--vary", ", ".join(keys), "a key is varied twice")
    spec_of = {s.key: f"--vary {s.spec}" for s in specs}
    points = []
    for idx, combo in enumerate(itertools.product(*(s.values for s in specs))):
        settings = dict(zip(keys, combo))
        points.append((idx, settings, make_case(src, settings, spec_of=spec_of)))
    chains: dict[str, list] = {}
    if with_fe:
        from .fe import geometry_key

        for p in points:
            chains.setdefault(repr(geometry_key(p[2])), []).append(p)
    else:
        chains["hand"] = points
    tasks = []
    for chain in chains.values():
        for k in range(0, len(chain), block):
            part = chain[k:k + block]
            tasks.append(BlockTask(tuple(p[0] for p in part), tuple(p[1] for p in part),
                                   tuple(p[2] for p in part), with_fe, predictor))
    return tasks


def run_sweep(src: CaseSource, specs: Sequence[VarySpec], *, with_fe: bool = True,
              predictor: str = "tangent", block: int = DEFAULT_BLOCK,
              workers: int | None = None, scheduler: str | None = None,
              on_done: Callable[[int, int], None] | None = None) -> SweepResult:
    """Run a sweep (see module doc); points come back in grid order.

    Parameters
    ----------
    workers : int, optional
        Worker processes (default: one per core; 1 = in this process).
    scheduler : str, optional
        Address of a dask.distributed scheduler to run the blocks on instead.
    on_done : callable (done, total), optional
        Called as blocks finish (progress display).
    """
    from .executor import run_tasks

    t0 = time.perf_counter()
    tasks = plan_sweep(src, specs, with_fe=with_fe, predictor=predictor, block=block)
    base = make_case(src, {})
    if not with_fe and scheduler is None and workers is None:
        workers = 1  # the hand model is ms per point: processes would only cost
    results, info = run_tasks(run_block, tasks, workers=workers, scheduler=scheduler,
                              on_done=on_done)
    pts = sorted((p for r in results for p in r), key=lambda p: p.index)
    return SweepResult(base, tuple(specs), tuple(pts), with_fe, predictor,
                       time.perf_counter() - t0, info.workers, info.kind)


# --------------------------------------------------------------------------- curves
def curves(res: SweepResult) -> list[tuple[dict, list[PointResult]]]:
    """Points grouped by everything but the current, each sorted by |I|.

    Returns a list of (fixed settings, points) pairs, one per L(I) curve.
    """
    groups: dict[tuple, tuple[dict, list]] = {}
    for p in res.points:
        fixed = {k: v for k, v in p.settings.items() if k != CURRENT_KEY}
        groups.setdefault(tuple(sorted(fixed.items())), (fixed, []))[1].append(p)
    return [(fixed, sorted(pts, key=lambda p: abs(p.current))) for fixed, pts in groups.values()]


def sweep_rows(res: SweepResult) -> list[dict]:
    """One flat dict per point (CSV/JSON rows): settings, hand, hand planar, FE."""
    rows = []
    for p in res.points:
        r: dict[str, Any] = {"index": p.index, **p.settings}
        if CURRENT_KEY not in p.settings:
            r[CURRENT_KEY] = p.current
        r.update({f"hand_{k}": p.hand.get(k, math.nan) for k in HAND_KEYS})
        r.update({f"hand_planar_{k}": p.hand_planar.get(k, math.nan) for k in HAND_KEYS})
        r["hand_planar_peak_B"] = p.hand_peak_B
        if res.with_fe:
            r.update({f"fe_{k}": p.fe.get(k, math.nan) for k in HAND_KEYS})
            r["fe_peak_B"] = p.fe_peak_B
            r["fe_newton_iterations"] = p.iterations
            r["fe_start"] = p.start
            r["fe_seconds"] = p.seconds
        r["converged"] = p.converged
        r["message"] = p.message
        rows.append(r)
    return rows


def _interp(points: list[PointResult], current: float, get: Callable[[PointResult], float]) -> float:
    """Linear interpolation of a point quantity at |I| = current along a curve
    (NaN outside the swept range)."""
    i = np.array([abs(p.current) for p in points])
    v = np.array([get(p) for p in points], dtype=float)
    ok = np.isfinite(v)
    i, v = i[ok], v[ok]
    if i.size == 0 or not (i.min() - 1e-12 <= abs(current) <= i.max() + 1e-12):
        return math.nan
    if i.size == 1:
        return float(v[0])
    return float(np.interp(abs(current), i, v))


def curve_saturation(points: list[PointResult], drops: Sequence[float], kind: str,
                     model: str) -> dict[float, float]:
    """Saturation currents of one curve for ``model`` "fe", "hand" or "hand_planar"."""
    block = {"fe": lambda p: p.fe, "hand": lambda p: p.hand,
             "hand_planar": lambda p: p.hand_planar}[model]
    vals = [block(p).get("inductance" if kind == "secant" else "incremental_inductance",
                         math.nan) for p in points]
    return saturation_from_curve([p.current for p in points], vals, drops)


def _fe_3d(p: PointResult, key: str) -> float:
    """The point's depth correction of ``key`` (compare.check.depth_corrections):
    hand 3D over hand planar."""
    from .check import depth_corrections

    return depth_corrections(p.hand_planar, p.hand)[key]


def sweep_margins(res: SweepResult, drops: Sequence[float] = (), kind: str = "incremental"
                  ) -> tuple[list[MarginResult], list[dict]]:
    """Margins judged along each L(I) curve of a sweep, and the saturation table.

    - saturation current (``case.margins`` saturation limits): read off the
      FE curve (the hand 3D curve for a hand-only sweep); when the curve does
      not fall that far the saturation current is at least the highest swept
      current, which passes when that is above the limit and is "n/a" otherwise;
    - inductance at a stated current: FE (times the depth-fringing factor,
      as ``magcheck check``) interpolated linearly along the curve;
    - peak core B at the case's own current, interpolated along the curve.

    Returns (margins, saturation rows: one dict per curve and model with the
    current at each drop of ``drops`` and of the limits).
    """
    case = res.case
    m = case.margins
    drops_all = sorted(set(drops) | {lim.drop for lim in m.saturation})
    margins: list[MarginResult] = []
    table: list[dict] = []
    cs = curves(res)
    fe_model = "fe" if res.with_fe else "hand"
    for fixed, pts in cs:
        tag = ", ".join(f"{k} = {v:g}" for k, v in fixed.items())
        suffix = f" [{tag}]" if tag else ""
        if len(pts) < 2:
            continue
        imax = max(abs(p.current) for p in pts)
        sat = {}
        for model in (("fe", "hand", "hand_planar") if res.with_fe else ("hand", "hand_planar")):
            sat[model] = curve_saturation(pts, drops_all, kind, model)
            table.append({"curve": tag, "model": model, "inductance": kind,
                          **{f"{100 * d:g}%": sat[model][d] for d in drops_all}})
        for lim in m.saturation:
            s_main = curve_saturation(pts, [lim.drop], lim.kind, fe_model)[lim.drop]
            s_hand = curve_saturation(pts, [lim.drop], lim.kind, "hand")[lim.drop]
            note = ""
            if not math.isfinite(s_main):
                note = f"not reached up to {imax:g} A"
                s_main = imax if imax >= lim.min else math.nan
            margins.append(MarginResult(
                f"saturation_current@{100 * lim.drop:g}%{suffix}",
                f"saturation current ({lim.kind} L -{100 * lim.drop:g} %){suffix}", "A", "min",
                lim.min, s_main, hand=s_hand, basis="FE" if res.with_fe else "hand", note=note))
        for ind in m.inductance:
            key = "inductance" if ind.kind == "secant" else "incremental_inductance"
            if res.with_fe:
                value = _interp(pts, ind.at, lambda p: p.fe.get(key, math.nan) * _fe_3d(p, key))
            else:
                value = _interp(pts, ind.at, lambda p: p.hand.get(key, math.nan))
            h = _interp(pts, ind.at, lambda p: p.hand.get(key, math.nan))
            for kind_, limit in (("min", ind.min), ("max", ind.max)):
                if limit is not None:
                    margins.append(MarginResult(
                        f"inductance_{ind.kind}@{ind.at:g}A:{kind_}{suffix}",
                        f"inductance ({ind.kind}) at {ind.at:g} A, {kind_}{suffix}", "H", kind_,
                        limit, value, hand=h, basis="FE" if res.with_fe else "hand",
                        note="" if math.isfinite(value) else "current outside the swept range"))
        if m.peak_B is not None and res.with_fe:
            value = _interp(pts, case.winding.current, lambda p: p.fe_peak_B)
            h = _interp(pts, case.winding.current, lambda p: p.hand_peak_B)
            margins.append(MarginResult(
                f"peak_B{suffix}", f"peak core B at {case.winding.current:g} A{suffix}", "T",
                "max", m.peak_B, value, hand=h, basis="FE",
                note="" if math.isfinite(value) else "case current outside the swept range"))
    return margins, table
