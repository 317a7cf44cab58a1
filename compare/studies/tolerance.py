"""Monte Carlo over the tolerances a case declares: spread of the design figures and yield.

Each ``[[tolerances]]`` entry names a case key (gap length, a dimension, the
current, or ``materials.core.scale_H`` / ``scale_B`` for the B-H curve, see
:func:`compare.studies.sweep.scale_law`) and a distribution around the case file's
nominal value:

- uniform: nominal - minus .. nominal + plus;
- normal: standard deviation sigma, truncated at +-limit (default 3 sigma),
  drawn by inverting the truncated normal's CDF.

Deviations may be absolute (with units) or relative ("5 %").

Sampling. All uniform numbers come from one ``numpy.random.default_rng(seed)``
stream in a fixed (sample, tolerance) order, drawn before any work is sent
out, so a seed gives the same samples and results whatever the executor and
the number of workers.

Models. Every sample runs the 3D hand calculation (and its saturation
current by root-finding on its L(I)). The FE runs on the first ``fe_samples``
samples (all by default); as the samples are independent and identically
distributed, the first M are a random subset. For the others each margin
value is estimated from the hand value through the straight line
FE = a + b * hand fitted by least squares over the FE samples (the
hand-vs-FE relation of this design near its nominal point; with fewer than
3 FE samples, or no spread in the hand values, the mean ratio FE/hand).
"""

from __future__ import annotations

import logging
import math
import time
from dataclasses import dataclass, field
from typing import Callable, Mapping, Sequence

import numpy as np

from ..design.case import Case, Tolerance, with_current
from ..errors import CaseError, RunError
from ..judge.margins import MarginResult, design_margins, hand_saturation_current, inductance_of
from ..design.keys import SCALE_KEYS, key_dimension, parse_key, winding_alias
from ..reading.variants import CaseSource, make_case
from ..design.units import UnitError, parse_quantity

__all__ = ["nominal_value", "draw_samples", "SampleResult", "ToleranceResult", "run_tolerance",
           "CLI_OPTIONS", "run_samples", "PERCENTILES", "inductance_figure"]

log = logging.getLogger(__name__)

PERCENTILES = (5.0, 50.0, 95.0)
HAND_CHUNK = 8
"""Hand-only samples per task (fixed, so results do not depend on the worker count)."""


def nominal_value(src: CaseSource, key: str, where: str) -> float:
    """The case file's value of ``key`` in SI (for the B-H scale factors
    the source's own, set by ``Case.with_values``, else 1).

    Raises
    ------
    CaseError
        When the key is not written in the case file.
    """
    if key in SCALE_KEYS:
        return float(dict(src.scales).get(key, 1.0))
    node = src.data
    for part in winding_alias(src.data, parse_key(key)):
        try:
            node = node[part]
        except (KeyError, IndexError, TypeError):
            raise CaseError(where, key, "is not written in the case file; write its nominal "
                                        "value there") from None
    dim = key_dimension(key)
    try:
        return float(parse_quantity(node, "dimensionless" if dim == "integer" else dim))
    except UnitError as exc:
        raise CaseError(where, node, str(exc)) from None


CLI_OPTIONS: dict[str, str] = {"samples": "--samples", "fe_samples": "--fe-samples"}
"""How ``magcheck tolerance`` names :func:`run_tolerance`'s parameters in messages."""


def draw_samples(src: CaseSource, tolerances: Sequence[Tolerance], n: int, seed: int
                 ) -> list[dict[str, float]]:
    """``n`` settings dicts (key -> SI value), reproducible for a seed (see module doc)."""
    if n < 1:
        raise CaseError("samples", n, "must be at least 1")
    if not tolerances:
        raise CaseError("tolerances", None, "the case declares no [[tolerances]]")
    from scipy.stats import truncnorm  # here: scipy.stats costs ~1 s to import

    rng = np.random.default_rng(seed)
    u = rng.random((n, len(tolerances)))
    cols = []
    for j, tol in enumerate(tolerances):
        where = f"tolerances[{j}].key"
        nom = nominal_value(src, tol.key, where)
        scale = abs(nom) if tol.relative else 1.0
        if tol.distribution == "uniform":
            lo, hi = nom - tol.minus * scale, nom + tol.plus * scale
            col = lo + u[:, j] * (hi - lo)
        else:
            sigma, lim = tol.sigma * scale, tol.limit * scale
            z = truncnorm.ppf(u[:, j], -lim / sigma, lim / sigma)
            col = nom + sigma * z
        if key_dimension(tol.key) == "integer":
            col = np.round(col)
        cols.append(col)
    out = []
    for i in range(n):
        s = {}
        for j, tol in enumerate(tolerances):
            v = float(cols[j][i])
            s[tol.key] = int(v) if key_dimension(tol.key) == "integer" else v
        out.append(s)
    return out


@dataclass(frozen=True)
class SampleResult:
    """One sample: its settings, hand (and FE) figures and margins.

    inductance : secant inductance at the case current, FE x depth factor
        when the FE ran, else NaN (corrected later).
    margins : evaluated with the FE where it ran; hand values otherwise.
    """

    index: int
    settings: dict[str, float]
    hand_inductance: float
    hand_peak_B: float
    hand_saturation: float
    inductance: float = math.nan
    peak_B: float = math.nan
    with_fe: bool = False
    margins: tuple[MarginResult, ...] = ()
    ok: bool = True
    message: str = ""


@dataclass(frozen=True)
class SampleTask:
    indices: tuple[int, ...]
    settings: tuple[dict, ...]
    cases: tuple[Case, ...]
    with_fe: bool
    drop: float
    nominal_stroke: float = math.nan
    """The nominal case's stroke (m; NaN without a moving part): force limits
    stated at it are judged at each sample's own stroke."""


def _hand_peak(h) -> float:
    return max((s["B"] for s in h.segments if s["kind"] == "core"), default=math.nan)


def run_samples(task: SampleTask) -> tuple[SampleResult, ...]:
    """Evaluate samples (runs in a worker process; failures come back as ok=False)."""
    from magcheck.fem2d.linsolve import one_blas_thread

    from ..judge.check import choose_depth_model
    from ..models.fe import mesh_case, solve_case
    from ..models.hand import run_hand

    out = []
    for idx, settings, case in zip(task.indices, task.settings, task.cases):
        try:
            h = run_hand(case)
            sat = hand_saturation_current(case, task.drop, kind="incremental", rtol=1e-4)
            hp = _hand_peak(h)
            sol, mesh = None, None
            fe_peak, fe_l, fe_at = math.nan, math.nan, None
            fe_force, fe_h_min = math.nan, math.nan
            hand_force = h.force_values.get("force", math.nan)
            if task.with_fe:
                mesh = mesh_case(case)
                with one_blas_thread():  # one BLAS thread per worker (see sweep.run_block)
                    q, sol, _ = solve_case(case, mesh)
                # the depth model ranked against this sample's planar FE, as
                # magcheck check chooses it (compare.judge.check.choose_depth_model)
                depth = choose_depth_model(case, q.values, own=(run_hand(case, planar=True), h))
                fe_peak, fe_l = q.peak_B, q.values["inductance"] * depth.factor("inductance")
                fe_h_min = q.magnet_values.get("magnet_H_min", math.nan)
                fe_force = q.force_values.get("force", math.nan)
                if math.isfinite(fe_force):  # the depth correction of magcheck check
                    fe_force *= depth.factor("force")
                cache = {case.winding.current: q.values}

                def fe_at(current: float, kind: str, case=case, mesh=mesh, cache=cache) -> float:
                    at = with_current(case, current)
                    if current not in cache:
                        with one_blas_thread():
                            cache[current] = solve_case(at, mesh)[0].values
                    key = "inductance" if kind == "secant" else "incremental_inductance"
                    return (inductance_of(cache[current], kind)
                            * choose_depth_model(at, cache[current]).factor(key))

            def saturation(drop: float, kind: str, case=case, sat=sat):
                v = sat if (drop == task.drop and kind == "incremental") else \
                    hand_saturation_current(case, drop, kind=kind, rtol=1e-4)
                v = math.inf if math.isnan(v) else v
                return v, v, "hand", ""

            margins = design_margins(case, fe_peak_B=fe_peak if task.with_fe else hp,
                                     hand_peak_B=hp, fe_at=fe_at, saturation=saturation,
                                     fe_force=fe_force, hand_force=hand_force,
                                     fe_magnet_H_min=fe_h_min,
                                     nominal_stroke=task.nominal_stroke)
            margins += sample_loss_margins(case, sol, mesh, h)
            out.append(SampleResult(idx, settings, h.inductance, hp, sat, fe_l, fe_peak,
                                    task.with_fe, tuple(margins)))
        except RunError as exc:
            out.append(SampleResult(idx, settings, math.nan, math.nan, math.nan, ok=False,
                                    message=str(exc)))
    return tuple(out)


LOSS_FIGURES = ("total_loss", "core_loss", "efficiency", "regulation", "temperature_rise")
"""The loss budget's margins a sample is judged on (``[margins]``; compare.judge.lossbudget),
each also a figure of the study (W, W, %, %, K)."""


def sample_loss_margins(case: Case, sol: object, mesh: object, h: object) -> list[MarginResult]:
    """A sample's loss margins (those of :data:`LOSS_FIGURES` the case declares; none without
    a loss budget): the loss budget at the sample's operating point
    (compare.models.loss.point_budget) on its own FE solution ``sol`` (None: hand only), the
    value the FE's 3D column (the hand's 3D value without FE), as the check judges it; an AC
    winding's harmonic solve (linear) and a transformer's leakage solve on the sample's mesh
    ``mesh``, only when a loss margin is declared. ``h``: the sample's 3D hand result."""
    from ..judge.lossbudget import LABELS, _MARGINS
    from ..models.loss import BUDGET_UNITS, has_loss, hand_core_loss, point_budget

    m = case.margins
    wanted = [(k, kind, getattr(m, a)) for k, a, kind in _MARGINS if getattr(m, a) is not None]
    if not has_loss(case) or not wanted:
        return []
    from ..models.ac import has_ac
    from ..models.coupling import concentric_pair, fe_leakage, hand_leakage

    ac_hand = ac_fe = leakage = None
    if has_ac(case):
        from ..models.ac import fe_ac, hand_ac
        from ..models.hand import run_hand

        ac_hand = hand_ac(case, run_hand(case, planar=True).values()["incremental_inductance"],
                          h.values()["incremental_inductance"])  # type: ignore[attr-defined]
        if sol is not None:
            ac_fe = fe_ac(case, sol)["values"]
    if concentric_pair(case) is not None:
        leakage = {"hand": hand_leakage(case)}
        if mesh is not None:
            leakage["fe"] = fe_leakage(case, mesh)
    hand_core = (hand_core_loss(case, planar=True)["total"],
                 hand_core_loss(case, planar=False)["total"])
    b = point_budget(case, sol, hand_core=hand_core, ac_hand=ac_hand, ac_fe=ac_fe,
                     leakage=leakage)
    out = []
    for key, kind, limit in wanted:
        if key not in b:
            continue
        if key in ("efficiency", "regulation"):
            limit = 100.0 * limit  # the case model's fraction, the rows' percent
        v = b[key]
        value = v["fe_3d"] if sol is not None else v["hand_3d"]
        out.append(MarginResult(key, f"{LABELS[key]}, {kind}", BUDGET_UNITS[key], kind, limit,
                                value, hand=v["hand_3d"],
                                basis="FE" if sol is not None else "hand"))
    return out


def inductance_figure(margin_key: str) -> str:
    """The figure an inductance margin is judged on, named from its key:
    ``"inductance_secant@6A:min"`` -> ``"inductance_secant@6A"`` (the min
    and max of one window share it)."""
    return margin_key.rsplit(":", 1)[0]


def _fit(hand: np.ndarray, fe: np.ndarray) -> tuple[Callable[[np.ndarray], np.ndarray], str]:
    """FE ~ a + b hand by least squares (mean ratio with < 3 points or no spread).

    Returns the estimator and a sentence saying which of the two was done
    (printed by ``magcheck tolerance``, so it must match the branch taken).
    """
    ok = np.isfinite(hand) & np.isfinite(fe)
    hand, fe = hand[ok], fe[ok]
    n = int(hand.size)
    plural = "" if n == 1 else "s"
    if n == 0:
        return (lambda x: np.full_like(np.asarray(x, dtype=float), np.nan),
                "no finite FE sample, no estimate")
    if n < 3 or np.ptp(hand) <= 1e-12 * max(np.abs(hand).max(), 1e-300):
        r = float(np.mean(fe / hand))
        why = "fewer than 3 FE samples" if n < 3 else "no spread in the hand values"
        return (lambda x: r * np.asarray(x, dtype=float),
                f"FE = r hand, r = {r:.4g} the mean FE/hand ratio of {n} FE sample{plural} "
                f"({why}: no straight-line fit)")
    b, a = np.polyfit(hand, fe, 1)
    return (lambda x: a + b * np.asarray(x, dtype=float),
            f"FE = a + b hand, fitted on {n} FE samples (least squares)")


@dataclass(frozen=True)
class ToleranceResult:
    """A Monte Carlo study.

    values : per figure ("inductance", "peak_B", "saturation_current") an
        array of shape (n,) over the samples: FE where it ran, corrected
        hand values elsewhere (saturation current: hand model).
        "inductance" is the secant L at the case's current; each inductance
        window of ``[[margins.inductance]]`` adds its own figure,
        ``"inductance_<secant|incremental>@<I>A"`` (e.g.
        ``"inductance_secant@6A"``): the value that window is judged on, at
        its own current, FE x the depth factor chosen there
        (compare.judge.check.choose_depth_model), corrected as the margin is
        on the hand-only samples.
    passed : shape (n,) bool, every margin met (n/a counts as met).
    """

    case: Case
    samples: tuple[SampleResult, ...]
    values: dict[str, np.ndarray] = field(repr=False)
    passed: np.ndarray = field(repr=False)
    fe_samples: int
    seed: int
    drop: float
    seconds: float
    fits: dict[str, str] = field(default_factory=dict)

    @property
    def yield_fraction(self) -> float:
        return float(np.mean(self.passed)) if self.passed.size else math.nan

    def percentiles(self, q: Sequence[float] = PERCENTILES) -> dict[str, list[float]]:
        return {k: [float(x) for x in np.nanpercentile(v, q)] if np.isfinite(v).any()
                else [math.nan] * len(q) for k, v in self.values.items()}

    @property
    def failures(self) -> tuple[SampleResult, ...]:
        return tuple(s for s in self.samples if not s.ok)

    def keys(self) -> list[str]:
        """The figures ``result[...]`` takes (``inductance``, one
        ``inductance_<kind>@<I>A`` per inductance window, ``peak_B``,
        ``saturation_current``)."""
        return list(self.values)

    def __getitem__(self, figure: str) -> np.ndarray:
        """One figure over the samples, SI (inductance and inductance_... H,
        peak_B T, saturation_current A): FE where it ran, corrected hand values elsewhere.

        Raises
        ------
        KeyError
            Naming the figure and listing the known ones.
        """
        if figure not in self.values:
            raise KeyError(f"{figure!r} is not a figure of this study; known: "
                           f"{', '.join(self.values)}")
        return self.values[figure]


def run_tolerance(src: CaseSource, *, samples: int, seed: int, fe_samples: int | None = None,
                  workers: int | None = None, scheduler: str | None = None,
                  on_done: Callable[[int, int], None] | None = None,
                  names: Mapping[str, str] | None = None) -> ToleranceResult:
    """Run the Monte Carlo study of a case (see module doc).  ``names``: how
    the caller's messages name ``fe_samples`` (:data:`CLI_OPTIONS` for the
    command line; default that name).

    Raises
    ------
    CaseError
        Bad tolerance declarations or a sampled value the case file rejects.
    RunError
        When any sample's solve failed (the message names the first).
    """
    from .executor import run_tasks

    t0 = time.perf_counter()
    base = make_case(src, {})
    if fe_samples is None:
        fe_samples = samples
    if not 0 <= fe_samples <= samples:
        raise CaseError((names or {}).get("fe_samples", "fe_samples"), fe_samples,
                        f"must lie in [0, {samples}]")
    settings = draw_samples(src, base.tolerances, samples, seed)
    spec_of = {t.key: f"tolerances[{j}]" for j, t in enumerate(base.tolerances)}
    cases = [make_case(src, s, spec_of=spec_of) for s in settings]
    drop = base.margins.saturation[0].drop if base.margins.saturation else 0.20
    from ..design.coremodel import core_model

    spec = core_model(base).force
    stroke0 = spec.stroke if spec is not None else math.nan
    tasks = [SampleTask((i,), (settings[i],), (cases[i],), True, drop, stroke0)
             for i in range(fe_samples)]
    for k in range(fe_samples, samples, HAND_CHUNK):
        idx = tuple(range(k, min(k + HAND_CHUNK, samples)))
        tasks.append(SampleTask(idx, tuple(settings[i] for i in idx),
                                tuple(cases[i] for i in idx), False, drop, stroke0))
    workers_eff = workers if (workers is not None or fe_samples or scheduler) else 1
    results, _ = run_tasks(run_samples, tasks, workers=workers_eff, scheduler=scheduler,
                           on_done=on_done)
    res = sorted((r for block in results for r in block), key=lambda r: r.index)
    bad = [r for r in res if not r.ok]
    if bad:
        raise RunError(f"{len(bad)} of {samples} samples failed; sample {bad[0].index}: "
                       f"{bad[0].message}")
    fe_mask = np.array([r.with_fe for r in res])
    hand_l = np.array([r.hand_inductance for r in res])
    hand_p = np.array([r.hand_peak_B for r in res])
    fe_l = np.array([r.inductance for r in res])
    fe_p = np.array([r.peak_B for r in res])
    fits = {}
    if fe_mask.all() or not fe_mask.any():
        ind, peak = (fe_l, fe_p) if fe_mask.all() else (hand_l, hand_p)
        fits["all"] = "FE on every sample" if fe_mask.all() else "hand model only (no FE)"
    else:
        (f_l, fits["inductance"]), (f_p, fits["peak_B"]) = (
            _fit(hand_l[fe_mask], fe_l[fe_mask]), _fit(hand_p[fe_mask], fe_p[fe_mask]))
        ind = np.where(fe_mask, fe_l, f_l(hand_l))
        peak = np.where(fe_mask, fe_p, f_p(hand_p))
    # Margins: FE samples as evaluated; others corrected per margin key.
    keys = [m.key for m in res[0].margins]
    passed = np.ones(len(res), dtype=bool)
    judged: dict[str, np.ndarray] = {}
    for j, key in enumerate(keys):
        val = np.array([r.margins[j].value for r in res])
        hv = np.array([r.margins[j].hand for r in res])
        m0 = res[0].margins[j]
        fit_text = ""
        if m0.basis == "FE" and fe_mask.any() and not fe_mask.all():
            fit, fit_text = _fit(hv[fe_mask], val[fe_mask])
            val = np.where(fe_mask, val, fit(hv))
        if key.startswith("inductance_") and inductance_figure(key) not in judged:
            judged[inductance_figure(key)] = val  # the L a window is judged on, at its current
            if fit_text:
                fits[inductance_figure(key)] = fit_text
        if key in LOSS_FIGURES:  # a loss margin: its figure as judged (FE 3D, or corrected hand)
            judged[key] = val
            if fit_text:
                fits[key] = fit_text
        with np.errstate(invalid="ignore"):
            ok = val <= m0.limit if m0.kind == "max" else val >= m0.limit
        passed &= ok | ~np.isfinite(val)
    values = {"inductance": ind, **judged, "peak_B": peak,
              "saturation_current": np.array([r.hand_saturation for r in res])}
    return ToleranceResult(base, tuple(res), values, passed, fe_samples, seed, drop,
                           time.perf_counter() - t0, fits)
