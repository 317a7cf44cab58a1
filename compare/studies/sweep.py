"""Sweeps: a case solved over a list or grid of values of its numeric keys.

A sweep varies case-file keys (``winding.current``, ``gaps[0].length``,
``core.limb_width``, ...) given as ``KEY=SPEC``:

- a range ``start:stop:count`` (``winding.current=0:20A:41``), or
- a list ``v1,v2,...`` (``gaps[0].length=0.5mm,0.8mm,1.2mm``).

A unit written on one item applies to the items written without one; plain
numbers are SI. Several specs make a grid (the last one varies fastest).
Every point is derived and re-validated by :func:`compare.reading.variants.make_case`,
so a swept value is checked exactly like case-file input; two extra keys
scale the core's B-H curve (``materials.core.scale_H``, ``scale_B``).

Execution. Points that share a mesh (same geometry; only current or
material change) form a chain; a chain is cut into blocks of at most
``block`` consecutive points. A block is one task: it meshes once and solves
its points in order, each Newton solve starting from a prediction made from
the previous point (:data:`PREDICTORS`). The blocks depend on the points
alone, never on the number of workers or the executor, so neither changes
the results (beyond the linear solver's rounding).
"""

from __future__ import annotations

import dataclasses
import itertools
import logging
import math
import time
from dataclasses import dataclass, field
from typing import Any, Callable, Mapping, Sequence

import numpy as np

from magcheck.analytic.bh import scale_law  # noqa: F401 (re-exported)

from ..design.case import DEFAULT_DROPS, Case
from ..errors import CaseError, RunError
from ..models.acmesh import AC_KEY_PREFIX, ac_frequency, has_ac, with_ac_frequency
from ..models.hand import FORCE_KEYS, HAND_KEYS, run_hand
from ..design.keys import CURRENT_KEY, VarySpec, key_dimension, parse_key, parse_vary, resolve_vary
from ..reading.variants import CaseSource, case_source, make_case
from ..judge.margins import MarginResult, curve_margins, curve_saturation  # noqa: F401 (re-exported)

__all__ = ["VarySpec", "parse_vary", "parse_key", "key_dimension", "resolve_vary",
           "scale_law", "CaseSource", "case_source", "make_case", "PointResult", "SweepResult",
           "plan_sweep", "run_sweep", "CLI_OPTIONS", "run_block", "BlockTask", "PREDICTORS",
           "DEFAULT_BLOCK", "CURRENT_KEY", "ForceCurve", "run_force_curve", "force_curve_strokes",
           "FORCE_CURVE_POINTS"]

log = logging.getLogger(__name__)

PREDICTORS = ("none", "previous", "secant", "tangent")
"""Newton start for the next point of a block: cold (A = 0); the previous
solution; linear extrapolation from the last two; or the previous solution
plus (I_next - I) dA/dI from a tangent solve (only when nothing but the
current changes; otherwise the previous solution)."""

DEFAULT_BLOCK = 11
"""Points per task. Fixed (not derived from the worker count) so that results
do not depend on it; 41 points make 4 tasks, enough for 2-4 workers."""

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
        (compare.judge.check.depth_corrections) under the point's ``depth_model``.
    depth_model : the fringing model whose hand 3D / planar ratio makes the FE 3D
        values (compare.judge.check.choose_depth_model, the rule of ``magcheck check``):
        ranked against the point's planar FE; the case's own model at a point
        without FE values (``depth_basis`` "case" instead of "FE").
    depth_factors : that model's ratio per key (hand keys and force keys).
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
    depth_model: str = ""
    depth_basis: str = ""
    depth_factors: dict[str, float] = field(default_factory=dict)

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
        """The swept keys, in ``--vary`` order."""
        return tuple(s.key for s in self.specs)

    def columns(self) -> list[str]:
        """The names ``sweep[...]`` takes: the columns of :func:`sweep_rows`
        (the swept keys, ``winding.current``, ``hand_inductance``,
        ``hand_planar_...``, ``fe_inductance``, ``fe_peak_B``, ...)."""
        rows = sweep_rows(self)
        return list(rows[0]) if rows else list(self.keys)

    def __getitem__(self, name: str) -> list:
        """One column over the points, in grid order, SI (H, T, A, m, N):
        ``sweep["fe_incremental_inductance"]``, ``sweep["winding.current"]``.

        Raises
        ------
        KeyError
            Naming the column and listing the known ones.
        """
        rows = sweep_rows(self)
        if not rows or name not in rows[0]:
            raise KeyError(f"{name!r} is not a column of this sweep; known: "
                           f"{', '.join(self.columns())}")
        return [r[name] for r in rows]

    def margins(self, drops: Sequence[float] | None = None, kind: str | None = None
                ) -> tuple[list[MarginResult], list[dict]]:
        """The margins judged along the sweep and the saturation table at
        ``drops`` (fractions of the low-current inductance) of the ``kind``
        of inductance, as ``magcheck sweep`` prints them
        (:func:`sweep_margins`).  Left out, they are the case's ``[sweep]``
        ones when this is the case's own declared sweep, else
        :data:`DEFAULT_DROPS` of the incremental inductance."""
        decl = self.case.sweeps[0] if self.case.sweeps else None
        own = decl is not None and list(decl.vary) == [s.spec for s in self.specs]
        if drops is None:
            drops = decl.drops if own and decl is not None else DEFAULT_DROPS
        if kind is None:
            kind = decl.inductance if own and decl is not None else "incremental"
        return sweep_margins(self, drops, kind)

    def to_dataframe(self) -> Any:
        """The points as a pandas DataFrame (the columns of :func:`sweep_rows`).

        Raises
        ------
        ImportError
            When pandas is not installed (it is not a dependency of magcheck).
        """
        from ..judge.check import dataframe

        return dataframe(sweep_rows(self))


# --------------------------------------------------------------------------- work
@dataclass(frozen=True)
class BlockTask:
    """Consecutive points of one chain (same mesh), solved in order in one process."""

    indices: tuple[int, ...]
    settings: tuple[dict, ...]
    cases: tuple[Case, ...]
    with_fe: bool = True
    predictor: str = "tangent"
    mesh_case: Case | None = None
    """The case the block's mesh is made from (None: its first point's): an
    AC chain's point at its highest frequency (models.acmesh.with_ac_frequency)."""


def _block_linear_solver() -> Any:
    """A factory from fem2d that reuses its work across a block's points:
    one direct factorisation as CG preconditioner up to its size bound (the
    AMG hierarchy above it), or None (fem2d's default)."""
    try:
        from magcheck.fem2d.linsolve import AmgCgReuse, Auto
    except ImportError:  # an fem2d without it: each solve builds its own
        return None
    return Auto(large=AmgCgReuse())


def _hand_peak(hand_res) -> float:
    return max((s["B"] for s in hand_res.segments if s["kind"] == "core"), default=math.nan)


def _only_current_changes(a: dict, b: dict) -> bool:
    return all(a.get(k) == b.get(k) for k in set(a) | set(b) if k != CURRENT_KEY)


def _only_ac_changes(a: dict, b: dict) -> bool:
    """Only ``winding.ac.*`` keys differ: the DC operating point is the same."""
    return all(a.get(k) == b.get(k) for k in set(a) | set(b) if not k.startswith(AC_KEY_PREFIX))


def run_block(task: BlockTask) -> tuple[PointResult, ...]:
    """Solve the points of one block in order (runs in a worker process).

    BLAS is held to one thread per process during each solve and its
    post-processing (scoped: threadpoolctl restores it): with one worker per
    core, more threads only compete; and the AMG setup of the incremental-
    inductance solve ran ~10x slower with the default thread pool here.

    Never raises for a failed solve: the point comes back with
    ``converged=False`` and the message, and the next point starts cold.
    """
    from magcheck.fem2d.linsolve import one_blas_thread

    from ..judge.check import choose_depth_model
    from ..models.fe import _with_virtual_work, mesh_case, solve_case_full

    mesh = None
    ac_state: tuple = ()  # (settings, FESolve, HarmonicProblem) of the last AC point
    leak_cache: dict = {}  # a transformer's FE leakage inductance per mesh and geometry
    # One linear-solver factory for the whole block: the factorisation (or
    # AMG hierarchy) built for one tangent preconditions the next points' too
    # (same mesh, same sparsity) until CG slows down; the CG operator is
    # always the current tangent, so the accuracy of every solve is unchanged.
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
        ac_h: dict[str, dict] = {"planar": {}, "3d": {}}
        if has_ac(case):  # Dowell's R_ac at this point (compare.models.ac)
            from ..models.ac import hand_ac

            hh = hand_ac(case, hp.values()["incremental_inductance"],
                         h3.values()["incremental_inductance"])
            ac_h = {form: {f"ac_{k}": v for k, v in hh[form].items()} for form in ac_h}
        budget_args: dict[str, Any] = {}
        if case.loss is not None and case.core_loss is not None:  # the loss budget (models.loss)
            budget_args = _hand_budget(case, hh if has_ac(case) else None, ac_h)
        base: dict[str, Any] = dict(index=idx, settings=settings, current=current,
                    hand=h3.values() | h3.force_values | ac_h["3d"],
                    hand_planar=hp.values() | hp.force_values | ac_h["planar"],
                    hand_peak_B=_hand_peak(hp),
                    **_depth(choose_depth_model(case, own=(hp, h3))))
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
                mesh = mesh_case(task.mesh_case or case)
            if ac_state and _only_ac_changes(ac_state[0], settings):
                # the same DC state (only the AC frequency or ripple moved)
                fs, start = ac_state[1], "same DC state"
            else:
                fs = None
            try:
                if fs is None:
                    with one_blas_thread():
                        fs = solve_case_full(case, mesh, A0=A0, linear_solver=linear)
            except RunError:
                if A0 is None:
                    raise
                # A warm start that fails is retried cold: the point then
                # equals a single-point run.
                log.info("point %d: %s start failed, retrying cold", idx, start)
                start = f"cold (after {start})"
                with one_blas_thread():
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
        q = _with_virtual_work(case, q, sol)  # a moving part: the second force method
        try:  # the depth model ranked against this point's planar FE (as magcheck check)
            base.update(_depth(choose_depth_model(case, q.values, own=(hp, h3))))
        except RunError as exc:  # another model's hand solve failed: the case's model stays
            log.info("point %d: depth-model ranking failed (%s); case's model kept", idx, exc)
        if has_ac(case):  # an AC winding: its harmonic solve on this point's mesh and DC state
            from ..models.ac import ac_problem, fe_ac

            prob = ac_problem(case, sol, reuse=ac_state[2] if ac_state else None)
            ac_state = (settings, fs, prob)
            with one_blas_thread():
                acv = fe_ac(case, sol, problem=prob)["values"]
            q = dataclasses.replace(q, values={**q.values, **{f"ac_{k}": v for k, v in acv.items()}})
        if budget_args:  # the loss budget on this point's solution (no further nonlinear solve)
            loss_fe = _fe_budget(case, sol, mesh, settings, budget_args, ac_h,
                                 acv if has_ac(case) else None, leak_cache)
            q = dataclasses.replace(q, values={**q.values, **loss_fe})
            base["hand"] = {**base["hand"], **ac_h["3d"]}
            base["hand_planar"] = {**base["hand_planar"], **ac_h["planar"]}
        out.append(PointResult(**base, fe=dict(q.values) | q.force_values | q.magnet_values,
                               fe_peak_B=q.peak_B,
                               iterations=q.iterations, seconds=time.perf_counter() - t0,
                               start=start, ndofs=q.ndofs,
                               first_residual=float(sol.residual_history[0])))
    return tuple(out)


def _hand_budget(case: Case, hh: dict | None, ac_h: dict) -> dict[str, Any]:
    """Add the hand loss budget of a point (compare.models.loss.point_budget, hand only) to
    ``ac_h`` as ``loss_<key>`` (planar and 3D forms); returns what the FE stage reuses."""
    from ..models.coupling import concentric_pair, hand_leakage
    from ..models.loss import hand_core_loss, point_budget

    hand_core = (hand_core_loss(case, planar=True)["total"],
                 hand_core_loss(case, planar=False)["total"])
    leakage = {"hand": hand_leakage(case)} if concentric_pair(case) is not None else None
    args: dict[str, Any] = {"hand_core": hand_core, "ac_hand": hh, "leakage": leakage}
    for key, v in point_budget(case, **args).items():
        ac_h["planar"][f"loss_{key}"] = v["hand"]
        ac_h["3d"][f"loss_{key}"] = v["hand_3d"]
    return args


_DRIVE_SUFFIXES = (".current", ".voltage", ".frequency")


def _leakage_key(settings: dict) -> tuple:
    """The settings an FE leakage inductance depends on: all but the drive (currents,
    voltages, frequencies, ``winding.ac.*``, ``loss.*``): its solve has its own balanced
    ampere-turns."""
    return tuple(sorted((k, v) for k, v in settings.items()
                        if not (k.endswith(_DRIVE_SUFFIXES) or ".ac." in k
                                or k.startswith("loss."))))


def _fe_budget(case: Case, sol: Any, mesh: Any, settings: dict, args: dict, ac_h: dict,
               acv: dict | None, leak_cache: dict) -> dict[str, float]:
    """The FE loss budget of a point on its solution ``sol``: ``loss_<key>`` (planar FE) and
    ``loss_<key>_3d`` (the FE's 3D column, as the check's); the hand columns in ``ac_h``
    refreshed from the same call (the surface area from the mesh, as the check's)."""
    from ..models.loss import point_budget

    args = dict(args)
    if args.get("leakage") is not None:  # a transformer's FE leakage (one linear-range solve)
        from ..models.coupling import fe_leakage

        key = (id(mesh), _leakage_key(settings))
        if key not in leak_cache:
            leak_cache[key] = fe_leakage(case, mesh)
        args["leakage"] = {**args["leakage"], "fe": leak_cache[key]}
    out: dict[str, float] = {}
    for k, v in point_budget(case, sol, ac_fe=acv, **args).items():
        ac_h["planar"][f"loss_{k}"] = v["hand"]
        ac_h["3d"][f"loss_{k}"] = v["hand_3d"]
        out[f"loss_{k}"] = v["fe"]
        out[f"loss_{k}_3d"] = v["fe_3d"]
    return out


CLI_OPTIONS: dict[str, str] = {"vary": "--vary", "predictor": "--predictor", "block": "--block"}
"""How ``magcheck sweep`` names the parameters of :func:`run_sweep` in its
messages (``names``); the Python API's messages use the parameters' names."""


def plan_sweep(src: CaseSource, specs: Sequence[VarySpec], *, with_fe: bool = True,
               predictor: str = "tangent", block: int = DEFAULT_BLOCK,
               names: Mapping[str, str] | None = None) -> list[BlockTask]:
    """Validate every point and cut the grid into blocks (see module doc).
    ``names``: how the caller calls ``vary``, ``predictor`` and ``block`` in a
    message (:data:`CLI_OPTIONS` for the command line; default those names).

    Raises
    ------
    CaseError
        For a bad spec or a swept value the case file would reject.
    """
    name = {"vary": "vary", "predictor": "predictor", "block": "block", **(names or {})}
    if predictor not in PREDICTORS:
        raise CaseError(name["predictor"], predictor, f"must be one of {', '.join(PREDICTORS)}")
    if block < 1:
        raise CaseError(name["block"], block, "must be at least 1")
    keys = [s.key for s in specs]
    if len(set(keys)) != len(keys):
        raise CaseError(name["vary"], ", ".join(keys), "a key is varied twice")
    spec_of = {s.key: f"{name['vary']} {s.spec}" for s in specs}
    points = []
    for idx, combo in enumerate(itertools.product(*(s.values for s in specs))):
        settings = dict(zip(keys, combo))
        points.append((idx, settings, make_case(src, settings, spec_of=spec_of)))
    chains: dict[str, list] = {}
    if with_fe:
        from ..models.fe import geometry_key

        for p in points:
            # an AC case's mesh key is taken without its skin-depth band: the
            # points of a frequency sweep share the chain's mesh, made at its
            # highest frequency
            key = with_ac_frequency(p[2], 0.0) if has_ac(p[2]) else p[2]
            chains.setdefault(repr(geometry_key(key)), []).append(p)
    else:
        chains["hand"] = points
    tasks = []
    for chain in chains.values():
        top = max(chain, key=lambda p: ac_frequency(p[2]))[2]
        mesh_from = top if with_fe and has_ac(top) else None
        for k in range(0, len(chain), block):
            part = chain[k:k + block]
            tasks.append(BlockTask(tuple(p[0] for p in part), tuple(p[1] for p in part),
                                   tuple(p[2] for p in part), with_fe, predictor,
                                   mesh_case=mesh_from))
    return tasks


def run_sweep(src: CaseSource, specs: Sequence[VarySpec], *, with_fe: bool = True,
              predictor: str = "tangent", block: int = DEFAULT_BLOCK,
              workers: int | None = None, scheduler: str | None = None,
              on_done: Callable[[int, int], None] | None = None,
              names: Mapping[str, str] | None = None) -> SweepResult:
    """Run a sweep (see module doc); points come back in grid order.

    Parameters
    ----------
    names : mapping, optional
        How the caller's messages name ``vary``, ``predictor`` and ``block``
        (:data:`CLI_OPTIONS` for the command line; default those names).
    workers : int, optional
        Worker processes (default: one per core; 1 = in this process).
    scheduler : str, optional
        Address of a dask.distributed scheduler to run the blocks on instead.
    on_done : callable (done, total), optional
        Called as blocks finish (progress display).
    """
    from .executor import run_tasks

    t0 = time.perf_counter()
    tasks = plan_sweep(src, specs, with_fe=with_fe, predictor=predictor, block=block,
                       names=names)
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
    """One flat dict per point (CSV/JSON rows): settings, hand, hand planar,
    the depth model, FE (and the FE 3D inductance, as ``magcheck check``)."""
    rows = []
    for p in res.points:
        r: dict[str, Any] = {"index": p.index, **p.settings}
        if CURRENT_KEY not in p.settings:
            r[CURRENT_KEY] = p.current
        forces = [k for k in FORCE_KEYS if k in p.hand]  # a moving part's (N)
        # an AC winding's (ohm, W, H) and a loss budget's core loss (W)
        ac = [k for k in p.hand_planar if k.startswith(("ac_", "loss_"))]
        r.update({f"hand_{k}": p.hand.get(k, math.nan) for k in (*HAND_KEYS, *forces, *ac)})
        r.update({f"hand_planar_{k}": p.hand_planar.get(k, math.nan)
                  for k in (*HAND_KEYS, *forces, *ac)})
        r["hand_planar_peak_B"] = p.hand_peak_B
        # the FE 3D column's depth model (compare.judge.check.choose_depth_model):
        # basis "FE" = ranked against this point's planar FE, "case" = the
        # case's own model (no FE value at the point)
        r["depth_model"] = p.depth_model
        r["depth_basis"] = p.depth_basis
        if res.with_fe:
            r.update({f"fe_{k}": p.fe.get(k, math.nan) for k in (*HAND_KEYS, *ac)})
            r["fe_3d_inductance"] = p.fe.get("inductance", math.nan) * _fe_3d(p, "inductance")
            # the loss budget's FE 3D column (compare.models.loss.point_budget, as the check's)
            r.update({f"fe_3d_{k}": p.fe.get(f"{k}_3d", math.nan)
                      for k in ac if k.startswith("loss_")})
            r.update({f"fe_{k}": p.fe.get(k, math.nan)
                      for k in ("force_maxwell", "force_virtual_work") if forces})
            r["fe_peak_B"] = p.fe_peak_B
            r["fe_newton_iterations"] = p.iterations
            r["fe_start"] = p.start
            r["fe_seconds"] = p.seconds
        r["converged"] = p.converged
        r["message"] = p.message
        rows.append(r)
    return rows


def _depth(choice: Any) -> dict[str, Any]:
    """A point's depth-correction fields from a compare.judge.check.DepthChoice."""
    factors = choice.factors
    return dict(depth_factor=factors["inductance"], depth_model=choice.model,
                depth_basis=choice.basis, depth_factors=factors)


def _fe_3d(p: PointResult, key: str) -> float:
    """The point's depth correction of ``key``: its ``depth_model``'s hand 3D
    over hand planar (compare.judge.check.choose_depth_model); for a point made
    without one, the case's own model's (compare.judge.check.depth_corrections)."""
    if key in p.depth_factors:
        return p.depth_factors[key]
    from ..judge.check import depth_corrections

    return depth_corrections(p.hand_planar, p.hand)[key]


def sweep_margins(res: SweepResult, drops: Sequence[float] = (), kind: str = "incremental"
                  ) -> tuple[list[MarginResult], list[dict]]:
    """Margins judged along each L(I) curve of a sweep, and the saturation
    table (:func:`compare.judge.margins.curve_margins`, with each point's depth
    correction of the FE values as ``magcheck check`` applies it)."""
    from ..judge.lossbudget import sweep_loss_margins
    from ..judge.margins import stroke_margins, sweep_demagnetisation

    margins, table = curve_margins(res.case, curves(res), res.with_fe, drops, kind, fe_3d=_fe_3d)
    return (margins + stroke_margins(res.case, res.points, res.with_fe)
            + sweep_demagnetisation(res.case, res.points, res.with_fe)
            + sweep_loss_margins(res.case, res.points, res.with_fe)), table


# --------------------------------------------------------------------------- force curve
FORCE_CURVE_POINTS = 4
"""FE strokes of the check's force-stroke figure when the case declares no
stroke sweep (``magcheck check --report DIR --force-curve``)."""


@dataclass(frozen=True)
class ForceCurve:
    """FE force points along the stroke for the force-stroke figure.

    strokes : m.  maxwell_3d, virtual_work_3d : N, the FE's Maxwell-stress and
    virtual-work force times each point's depth correction of the force (its
    ``depth_factors["force"]``, chosen as magcheck check chooses it), so they
    sit on the check's FE 3D column.  source : "declared" (the case's own
    stroke sweep's strokes) or "range" (:data:`FORCE_CURVE_POINTS` over the
    figure's range).  seconds : wall time of the solves."""

    strokes: tuple[float, ...]
    maxwell_3d: tuple[float, ...]
    virtual_work_3d: tuple[float, ...]
    source: str
    seconds: float

    def to_dict(self) -> dict:
        return dataclasses.asdict(self)


def force_curve_strokes(case: Case, points: int = FORCE_CURVE_POINTS) -> tuple[VarySpec, str]:
    """The strokes the force curve solves: the case's declared stroke sweep
    (the first ``[sweep]`` vary on its stroke key) when it has one, else
    ``points`` strokes evenly over the force-stroke figure's range (0.2 to 2
    times the case's stroke, on to 1.1 times the farthest force limit's)."""
    from ..design.coremodel import core_model

    spec = core_model(case).force
    if spec is None or spec.stroke_key is None:
        raise CaseError("--force-curve", None, "the case has no moving part (no stroke)")
    for decl in case.sweeps:
        for text in decl.vary:
            v = parse_vary(text, where="sweep.vary", family=case.family_model)
            if v.key == spec.stroke_key:
                return v, "declared"
    s0 = spec.stroke
    hi = max([2.0 * s0, *(1.1 * lim.stroke for lim in case.margins.force)])
    values = tuple(float(x) for x in np.linspace(0.2 * s0, hi, points))
    return VarySpec(f"{spec.stroke_key}=" + ",".join(f"{x:.6g}" for x in values),
                    spec.stroke_key, values), "range"


def run_force_curve(src: CaseSource, *, points: int = FORCE_CURVE_POINTS,
                    workers: int | None = 1) -> ForceCurve:
    """FE force along the stroke, one sweep point per stroke
    (:func:`force_curve_strokes`; each a nonlinear solve on the case's own
    mesh, as ``magcheck sweep``): the force-stroke figure's FE points beside
    the check's own stroke.  Points that did not converge give NaN."""
    t0 = time.perf_counter()
    base = make_case(src, {})
    spec, source = force_curve_strokes(base, points)
    res = run_sweep(src, [spec], workers=workers)
    mx, vw = [], []
    for p in res.points:
        k = _fe_3d(p, "force") if p.converged else math.nan
        mx.append(p.fe.get("force_maxwell", p.fe.get("force", math.nan)) * k)
        vw.append(p.fe.get("force_virtual_work", math.nan) * k)
    return ForceCurve(tuple(float(p.settings[spec.key]) for p in res.points), tuple(mx),
                      tuple(vw), source, time.perf_counter() - t0)
