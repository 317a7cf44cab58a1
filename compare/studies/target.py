"""Solving one design key for targets, by the hand model and by the FE.

The question after a check ("the hand calc is 14 % low") is "what do I
change": which gap length (turns, depth, ...) meets the targets. This module
finds the value of one case key (``--vary`` grammar, :mod:`compare.design.keys`)
inside a bracket that meets one or more targets, by each model.

Targets (:func:`parse_target`) speak the check's margin vocabulary
(compare.judge.margins): ``QUANTITY OP VALUE[@AT]`` with OP one of ``>=``,
``<=``, ``=``:

==========================  ======================  =======================
quantity                    @AT (default)           judged on (FE)
==========================  ======================  =======================
``inductance``              current (case's)        FE x depth correction
``incremental_inductance``  current (case's)        FE x depth correction
``saturation_current``      drop % (20 %)           FE planar L(I) (sweep)
``force``                   stroke (case's)         FE Maxwell x depth corr.
``peak_B``                  current (case's)        FE 0.5 % area quantile
==========================  ======================  =======================

e.g. ``inductance>=3.2mH@6A``, ``saturation_current>=8A@20%``,
``force>=15N@2mm``, ``peak_B<=1.5T``. The hand value is the 3D hand model's
(the check's hand column), peak B the planar hand's highest core segment (as
the sweep). The FE inductance and force take the depth correction the check
applies to them (compare.judge.check.choose_depth_model: the fringing model
ranked against the FE at that point); the saturation current is read off the
planar FE's incremental L(I) by root-finding in the current (a drop is a
ratio, where the depth correction cancels to first order, as ``magcheck
sweep`` reads it); peak B is the planar FE's, as the check judges it.

Method. Hand: the target's value minus its limit sampled at
:data:`HAND_SAMPLES` points of the bracket (ms each); no sign change is a
target outside the reachable range, more than one a non-monotonic response
(both an error naming the target and the values seen); the one change is
refined by Brent's method (scipy.optimize.brentq). FE: the hand answer is the
first guess and the hand slope the second (one Newton step with the hand's
derivative), then the Illinois variant of regula falsi on the bracket so
found, or secant steps outward until one is found; meshes are cached by
geometry (a key that changes no dimension, e.g. the turns or a current,
reuses one mesh and warm-starts from the last solution; a dimension change
re-meshes and starts from the last solution transferred to the new mesh).
At the FE answer one three-mesh evaluation (compare.models.fe.uncertainty_rule)
gives the FE's value and uncertainty. An integer key (``winding.turns``) is
solved on the integers: both neighbours of the crossing are evaluated and
each is judged against the target.
"""

from __future__ import annotations

import math
import time
from dataclasses import dataclass, field
from typing import Any, Callable, Sequence

from ..design.case import Case
from ..design.keys import CURRENT_KEY, display_unit, key_dimension
from ..design.targets import (DEFAULT_DROP, QUANTITIES, KeyBracket, Quantity, Target,  # noqa: F401
                              parse_bracket, parse_target)
from ..design.units import SI_UNIT, format_si
from ..errors import CaseError, RunError
from ..reading.variants import CaseSource, make_case

__all__ = ["Target", "QUANTITIES", "parse_target", "parse_bracket", "KeyBracket",
           "ModelAnswer", "TargetAnswer", "TargetResult", "solve_targets", "hand_value",
           "HAND_SAMPLES", "crossings", "format_key_value"]

HAND_SAMPLES = 21
"""Points of the bracket at which the hand response is sampled before its
root is refined: enough to see a rise-and-fall between them, ms each."""

FE_MAX_SOLVES = 16
"""FE evaluations allowed per target before the search gives up (a RunError)."""

FE_RTOL = 2e-4
"""The FE root is accepted when the target quantity is within this fraction
of the target value: well below the FE's discretisation uncertainty (0.1-2 %
on the bundled cases), so the iteration adds nothing to the error."""

FE_REVERSAL = 0.01
"""A reversal of the FE response larger than this fraction of the target
value, against the hand's direction, is called non-monotonic: smaller ones
are the re-meshing noise of a dimension key (each value its own mesh)."""


def format_key_value(key: str, v: float) -> str:
    """A key's value as the sweep shows it: a length in mm, a count as is,
    the rest in SI with a prefix."""
    scale, unit = display_unit(key)
    if not math.isfinite(v):
        return "-"
    if unit == "mm":
        return f"{v * scale:.4g} mm"
    if unit == "":
        return f"{v:.6g}" if key_dimension(key) != "integer" else f"{int(round(v))}"
    return format_si(v, unit)


def _show(t: Target, q: float) -> str:
    return format_si(q, t.unit) if math.isfinite(q) else str(q)


# --------------------------------------------------------------------------- models
def _settings(bracket: KeyBracket, x: float, t: Target, case: Case) -> dict[str, float]:
    """The case settings for key value ``x`` under target ``t``."""
    s: dict[str, float] = {bracket.key: int(round(x)) if bracket.integer else x}
    qty = QUANTITIES[t.quantity]
    if t.at is not None and qty.at == "current":
        s[CURRENT_KEY] = t.at
    if t.at is not None and qty.at == "stroke":
        s[_stroke_key(case, t)] = t.at
    return s


def _stroke_key(case: Case, t: Target) -> str:
    from ..design.coremodel import core_model

    spec = core_model(case).force
    if spec is None or spec.stroke_key is None:
        raise CaseError("--target", t.text, "the case has no moving part with a stroke")
    return spec.stroke_key


def check_target(case: Case, bracket: KeyBracket, t: Target) -> None:
    """Refuse a target that fixes the key being solved (bad input)."""
    qty = QUANTITIES[t.quantity]
    if t.quantity == "force":
        from ..design.coremodel import core_model

        if core_model(case).force is None:
            raise CaseError("--target", t.text, "the case has no moving part (no force)")
    fixes = None
    if t.at is not None and qty.at == "current":
        fixes = CURRENT_KEY
    elif t.at is not None and qty.at == "stroke":
        fixes = _stroke_key(case, t)
    if fixes is not None and fixes == bracket.key:
        raise CaseError("--target", t.text, f"its @ sets {fixes}, the key being solved; "
                                            "leave the @ out")
    if t.quantity == "saturation_current" and bracket.key == CURRENT_KEY:
        raise CaseError("--target", t.text, "a saturation current cannot be solved for over "
                                            "the current itself")


def hand_value(case: Case, t: Target) -> float:
    """The hand model's value of ``t``'s quantity for ``case`` (its settings
    already applied, :func:`_settings`): the 3D hand model's inductance,
    saturation current (compare.judge.margins.hand_saturation_current; inf
    when it never falls that far) and force; the planar hand's peak core B."""
    from ..judge.margins import hand_saturation_current, inductance_of
    from ..models.hand import run_hand

    if t.quantity in ("inductance", "incremental_inductance"):
        return inductance_of(run_hand(case).values(),
                             "secant" if t.quantity == "inductance" else "incremental")
    if t.quantity == "saturation_current":
        v = hand_saturation_current(case, t.at or DEFAULT_DROP, kind="incremental")
        return v if math.isfinite(v) else math.inf
    if t.quantity == "force":
        return run_hand(case).force_values.get("force", math.nan)
    hp = run_hand(case, planar=True)
    return max((s["B"] for s in hp.segments if s["kind"] == "core"), default=math.nan)


class _FE:
    """FE evaluations with mesh reuse and warm starts (module doc)."""

    def __init__(self) -> None:
        self.meshes: dict[str, Any] = {}
        self.last: dict[float, Any] = {}  # refine -> last FieldSolution on that refinement
        self.solves = 0

    def solve(self, case: Case, refine: float = 1.0) -> Any:
        from magcheck.fem2d import post

        from ..models.fe import geometry_key, mesh_case, solve_case_full

        gk = repr(geometry_key(case, refine))
        mesh = self.meshes.get(gk)
        if mesh is None:
            mesh = self.meshes[gk] = mesh_case(case, refine=refine)
        prev = self.last.get(refine)
        A0 = None
        if prev is not None:
            A0 = prev.A.copy() if prev.mesh is mesh else post.transfer(prev, mesh)
        try:
            fs = solve_case_full(case, mesh, A0=A0)
        except RunError:
            if A0 is None:
                raise
            fs = solve_case_full(case, mesh)  # a warm start that fails is retried cold
        self.solves += 1
        self.last[refine] = fs.solution
        return fs

    def value(self, case: Case, t: Target, refine: float = 1.0,
              hand_guess: float = math.nan, spread: bool = False) -> tuple[float, str, float]:
        """(value, basis, spread) of ``t``'s quantity by the FE; ``spread``:
        also the depth models' spread of the correction (relative,
        compare.judge.check.depth_correction), else 0."""
        from ..judge.check import choose_depth_model, depth_correction
        from ..judge.margins import inductance_of

        if t.quantity == "saturation_current":
            return (self._saturation(case, t, refine, hand_guess),
                    "FE planar incremental L(I), as the sweep reads it", 0.0)
        q = self.solve(case, refine).quantities
        if t.quantity == "peak_B":
            return q.peak_B, "FE peak B (0.5 % area), as the check judges it", 0.0
        if t.quantity == "force":
            key = "force"
            f = q.force_values.get("force", math.nan)  # the Maxwell stress
        else:
            key = "inductance" if t.quantity == "inductance" else "incremental_inductance"
            f = inductance_of(q.values, "secant" if key == "inductance" else "incremental")
        choice = choose_depth_model(case, q.values)
        if choice.basis == "r-z":
            return f, "FE (r-z: a 3D solution, no depth correction)", 0.0
        s = 0.0
        if spread:
            s = depth_correction(case, ({"model": choice.model},)).spread.get(key, 0.0)
        return f * choice.factor(key), (f"FE x depth correction ({choice.model} model, as the "
                                        "check's FE 3D column)"), s

    def _saturation(self, case: Case, t: Target, refine: float, guess: float) -> float:
        """The current at which the planar FE's incremental inductance has
        fallen by the target's drop: Illinois on the current, from the hand's
        saturation current; the mesh is shared and each solve warm-starts."""
        from ..design.case import with_current

        drop = t.at or DEFAULT_DROP
        l0 = self.solve(with_current(case, 0.0), refine).quantities.values[
            "incremental_inductance"]
        goal = (1.0 - drop) * l0

        def g(i: float) -> float:
            return self.solve(with_current(case, i), refine).quantities.values[
                "incremental_inductance"] - goal

        i0 = guess if math.isfinite(guess) and guess > 0 else max(abs(case.winding.current), 1.0)
        a, fa = i0, g(i0)
        b = a * (1.15 if fa > 0 else 0.87)
        fb = g(b)
        n = 0
        while fa * fb > 0:
            n += 1
            if n > 12 or b > 1e6 * i0:
                return math.inf if fb > 0 else 0.0
            a, fa = b, fb
            b = b * (1.5 if fb > 0 else 0.67)
            fb = g(b)
        root, _ = _illinois(g, a, fa, b, fb, xtol=1e-4 * abs(a), ftol=FE_RTOL * abs(goal),
                            limit=FE_MAX_SOLVES)
        return root


def _illinois(f: Callable[[float], float], a: float, fa: float, b: float, fb: float, *,
              xtol: float, ftol: float, limit: int) -> tuple[float, int]:
    """A root of ``f`` on [a, b] (fa fb < 0) by the Illinois variant of regula
    falsi (Dowell and Jarratt, BIT 11, 1971: superlinear, order ~1.44, and it
    never leaves the bracket). Returns (root, evaluations)."""
    side = 0
    for k in range(1, limit + 1):
        c = (a * fb - b * fa) / (fb - fa)
        fc = f(c)
        if abs(fc) <= ftol or abs(b - a) <= xtol:
            return c, k
        if fc * fb < 0:
            a, fa = b, fb
            side_new = 0
        else:
            fa = fa / 2.0 if side == 1 else fa
            side_new = 1
        b, fb = c, fc
        side = side_new
    raise RunError(f"the FE root search did not settle in {limit} evaluations")


# --------------------------------------------------------------------------- results
@dataclass(frozen=True)
class ModelAnswer:
    """One model's answer for one target.

    root : the key's value where the quantity equals the target (SI; for an
        integer key the neighbour of the crossing that meets the target, for
        ``=`` the nearer one); NaN when the target is met everywhere or
        nowhere in the bracket.
    feasible : (lo, hi) of the bracket's part meeting the target (``=``:
        the root alone); None when no value meets it.
    value : the quantity at the root (the FE's three-mesh value at its answer).
    uncertainty : the FE's uncertainty of ``value`` (NaN for the hand).
    neighbours : for an integer key, ((n, q(n), meets), (n+1, q(n+1), meets)).
    points : the (key value, quantity) pairs evaluated.
    """

    model: str
    root: float
    feasible: tuple[float, float] | None
    value: float = math.nan
    uncertainty: float = math.nan
    basis: str = ""
    evaluations: int = 0
    solves: int = 0
    seconds: float = 0.0
    neighbours: tuple = ()
    points: tuple[tuple[float, float], ...] = ()
    note: str = ""

    def to_dict(self) -> dict:
        return {"model": self.model, "root": self.root,
                "feasible": list(self.feasible) if self.feasible else None,
                "value": self.value, "uncertainty": self.uncertainty, "basis": self.basis,
                "evaluations": self.evaluations, "solves": self.solves,
                "seconds": self.seconds,
                "neighbours": [{"value": n, "quantity": q, "meets": m}
                               for n, q, m in self.neighbours],
                "points": [[x, q] for x, q in self.points], "note": self.note}


@dataclass(frozen=True)
class TargetAnswer:
    """Both models' answers for one target."""

    target: Target
    hand: ModelAnswer
    fe: ModelAnswer | None

    def to_dict(self) -> dict:
        t = self.target
        return {"target": t.text, "quantity": t.quantity, "op": t.op, "value": t.value,
                "unit": t.unit, "at": t.at, "hand": self.hand.to_dict(),
                "fe": self.fe.to_dict() if self.fe else None}


@dataclass(frozen=True)
class TargetResult:
    """The key solved for every target; ``feasible``: per model the part of
    the bracket meeting all of them (None: no value meets them all)."""

    case: Case
    bracket: KeyBracket
    answers: tuple[TargetAnswer, ...]
    feasible: dict[str, tuple[float, float] | None]
    seconds: float
    curve: tuple[tuple[float, tuple[float, ...]], ...] = field(default=())
    """The hand samples: (key value, quantity per target)."""

    @property
    def with_fe(self) -> bool:
        return all(a.fe is not None for a in self.answers)

    @property
    def met(self) -> bool:
        """True when every model run has a value of the key meeting every target."""
        return all(v is not None for v in self.feasible.values())

    def to_dict(self) -> dict:
        b = self.bracket
        return {"case": {"name": self.case.name, "file": self.case.source,
                         "sha256": self.case.sha256},
                "key": b.key, "bracket": [b.lo, b.hi], "key_unit": SI_UNIT.get(
                    "dimensionless" if b.integer else b.dimension, ""),
                "targets": [a.to_dict() for a in self.answers],
                "feasible": {m: list(v) if v else None for m, v in self.feasible.items()},
                "hand_curve": [[x, *qs] for x, qs in self.curve],
                "seconds": self.seconds, "met": self.met}


# --------------------------------------------------------------------------- solving
def crossings(xs: Sequence[float], gs: Sequence[float]) -> list[int]:
    """Indices i where g changes sign between samples i and i+1; a sample
    where g is zero counts once, on the interval it starts (the last
    sample's on the last interval)."""
    out: list[int] = []
    for i in range(len(xs) - 1):
        a, b = gs[i], gs[i + 1]
        if (a < 0 < b) or (a > 0 > b) or (a == 0.0) or (b == 0.0 and i == len(xs) - 2):
            out.append(i)
    return out


def _samples(b: KeyBracket) -> list[float]:
    if b.integer:
        n = int(b.hi - b.lo) + 1
        if n <= HAND_SAMPLES:
            return [float(v) for v in range(int(b.lo), int(b.hi) + 1)]
        return sorted({float(round(b.lo + (b.hi - b.lo) * k / (HAND_SAMPLES - 1)))
                       for k in range(HAND_SAMPLES)})
    return [b.lo + (b.hi - b.lo) * k / (HAND_SAMPLES - 1) for k in range(HAND_SAMPLES)]


def _seen(bracket: KeyBracket, t: Target, xs: Sequence[float], qs: Sequence[float]) -> str:
    return ", ".join(f"{_show(t, q)} at {format_key_value(bracket.key, x)}"
                     for x, q in zip(xs, qs))


def _feasible_side(t: Target, root: float, rising: bool, b: KeyBracket
                   ) -> tuple[float, float]:
    """The part of the bracket meeting ``t`` given its crossing and direction."""
    if t.op == "=":
        return (root, root)
    up = (t.op == ">=") == rising  # met above the root
    return (root, b.hi) if up else (b.lo, root)


def _solve_hand(src: CaseSource, case: Case, b: KeyBracket, t: Target, *, single: bool
                ) -> tuple[ModelAnswer, list[tuple[float, float]], float]:
    """The hand answer, its samples and its slope dq/dx at the root."""
    from scipy.optimize import brentq

    t0 = time.perf_counter()
    count = [0]

    def q(x: float) -> float:
        count[0] += 1
        return hand_value(make_case(src, _settings(b, x, t, case)), t)

    xs = _samples(b)
    qs = [q(x) for x in xs]
    if any(math.isnan(v) for v in qs):
        bad = next(x for x, v in zip(xs, qs) if math.isnan(v))
        raise RunError(f"target {t.text}: the hand model gives no value at {b.key} = "
                       f"{format_key_value(b.key, bad)}")
    gs = [v - t.value for v in qs]
    cross = crossings(xs, gs)
    rising = qs[-1] > qs[0]
    ends = _seen(b, t, (xs[0], xs[-1]), (qs[0], qs[-1]))
    if len(cross) > 1:
        at = ", ".join(format_key_value(b.key, xs[i]) for i in cross)
        raise CaseError("--target", t.text,
                        f"the hand response is not monotonic across {b.key} = "
                        f"{format_key_value(b.key, b.lo)}..{format_key_value(b.key, b.hi)}: it "
                        f"crosses the target {len(cross)} times (near {at}; values seen: "
                        f"{_seen(b, t, xs[::max(1, len(xs) // 5)], qs[::max(1, len(xs) // 5)])});"
                        " narrow the bracket")
    samples = list(zip(xs, qs))
    if not cross:
        all_met = t.op != "=" and t.met(qs[0]) and t.met(qs[-1])
        if single or t.op == "=":
            why = ("every value meets it" if all_met else "no value reaches it")
            raise CaseError("--target", t.text, f"outside the reachable range of {b.key} "
                                                f"across the bracket ({why}; hand {ends})")
        slope = (qs[-1] - qs[0]) / (xs[-1] - xs[0])
        return (ModelAnswer("hand", math.nan, (b.lo, b.hi) if all_met else None,
                            evaluations=count[0], seconds=time.perf_counter() - t0,
                            points=tuple(samples),
                            note="met across the whole bracket" if all_met else
                            f"met nowhere in the bracket (hand {ends})"), samples, slope)
    i = cross[0]
    if b.integer:
        n0, n1 = int(xs[i]), int(xs[i + 1])
        while n1 - n0 > 1:  # integer bisection between sparse samples
            m = (n0 + n1) // 2
            gm = q(m) - t.value
            if (gm > 0) == (gs[i] > 0) and gm != 0:
                n0 = m
            else:
                n1 = m
        q0, q1 = q(n0), q(n1)
        samples += [(n0, q0), (n1, q1)]
        nb = ((n0, q0, _meets(t, q0, q1, True)), (n1, q1, _meets(t, q0, q1, False)))
        root = float(n1 if nb[1][2] else n0)  # the neighbour meeting the target (=: nearer)
        feas = _int_feasible(t, nb, rising, b)
        ans = ModelAnswer("hand", root, feas, value=q1 if nb[1][2] else q0, basis="hand 3D",
                          evaluations=count[0], seconds=time.perf_counter() - t0,
                          neighbours=nb, points=tuple(sorted(samples)))
        return ans, samples, q1 - q0
    lo, hi = xs[i], xs[i + 1]
    if gs[i] == 0.0:
        root = lo
    elif gs[i + 1] == 0.0:
        root = hi
    else:
        root = float(brentq(lambda x: q(x) - t.value, lo, hi, xtol=1e-15 * max(abs(lo), abs(hi)),
                            rtol=4.5e-15, maxiter=200))
    h = 1e-4 * (b.hi - b.lo)
    x1, x2 = max(b.lo, root - h), min(b.hi, root + h)
    slope = (q(x2) - q(x1)) / (x2 - x1)
    value = q(root)
    ans = ModelAnswer("hand", root, _feasible_side(t, root, rising, b), value=value,
                      basis=_hand_basis(t), evaluations=count[0],
                      seconds=time.perf_counter() - t0, points=tuple(sorted(samples)))
    return ans, samples, slope


def _hand_basis(t: Target) -> str:
    return "hand planar" if t.quantity == "peak_B" else "hand 3D"


def _meets(t: Target, q0: float, q1: float, first: bool) -> bool:
    """Whether an integer neighbour meets the target; for ``=`` the nearer one."""
    mine, other = (q0, q1) if first else (q1, q0)
    if t.op == "=":
        return abs(mine - t.value) <= abs(other - t.value)
    return t.met(mine)


def _int_feasible(t: Target, nb: tuple, rising: bool, b: KeyBracket
                  ) -> tuple[float, float] | None:
    (n0, _, m0), (n1, _, m1) = nb
    if t.op == "=":
        n = n0 if m0 else n1
        return (n, n)
    if m1 and not m0:
        return (n1, b.hi)
    if m0 and not m1:
        return (b.lo, n0)
    return (b.lo, b.hi) if m0 else None


def _solve_fe(src: CaseSource, case: Case, b: KeyBracket, t: Target, hand: ModelAnswer,
              slope: float, fe: _FE, *, uncertainty: bool = True) -> ModelAnswer:
    """The FE answer, seeded by the hand's (module doc)."""
    t0 = time.perf_counter()
    solves0 = fe.solves
    pts: dict[float, float] = {}
    basis = [""]
    hand_at: dict[float, float] = dict(hand.points)

    def qf(x: float) -> float:
        if b.integer:
            x = float(int(round(x)))
        if x not in pts:
            c = make_case(src, _settings(b, x, t, case))
            guess = math.nan
            if t.quantity == "saturation_current":
                guess = hand_at.get(x, math.nan)
                if not math.isfinite(guess):
                    guess = hand_value(c, t)
            pts[x], basis[0], _ = fe.value(c, t, hand_guess=guess)
            if len(pts) > FE_MAX_SOLVES:
                raise RunError(f"target {t.text}: the FE search did not settle in "
                               f"{FE_MAX_SOLVES} evaluations")
        return pts[x]

    def g(x: float) -> float:
        return qf(x) - t.value

    rising = slope > 0
    if math.isfinite(hand.root):
        x0 = hand.root
    else:  # met everywhere or nowhere by the hand: start at the end nearest to failing
        worst = min(hand.points, key=lambda p: (p[1] - t.value) * (1 if t.op == ">=" else -1))
        x0 = worst[0]
    x0 = min(max(x0, b.lo), b.hi)
    ftol = FE_RTOL * abs(t.value)
    root: float
    if b.integer:
        root, nb = _fe_integer(g, b, x0, slope)
        q0, q1 = qf(nb[0]), qf(nb[1])
        if nb[0] == nb[1]:  # no crossing in the bracket
            root = math.nan
            neighbours: tuple = ()
        else:
            neighbours = ((nb[0], q0, _meets(t, q0, q1, True)), (nb[1], q1, _meets(t, q0, q1,
                                                                                  False)))
    else:
        root = _fe_continuous(g, b, x0, slope, ftol)
        neighbours = ()
    xs = sorted(pts)
    _check_fe_monotonic(b, t, xs, [pts[x] for x in xs], rising)
    if not math.isfinite(root):
        ends = _seen(b, t, xs, [pts[x] for x in xs])
        met_all = t.op != "=" and all(t.met(pts[x]) for x in xs)
        return ModelAnswer("FE", math.nan, (b.lo, b.hi) if met_all else None, basis=basis[0],
                           evaluations=len(pts), solves=fe.solves - solves0,
                           seconds=time.perf_counter() - t0, points=tuple((x, pts[x]) for x in xs),
                           note=("met across the whole bracket" if met_all else
                                 f"no value in the bracket reaches it (FE {ends})"))
    if b.integer:
        feas = _int_feasible(t, neighbours, rising, b)
        at = root = float(neighbours[1][0] if neighbours[1][2] else neighbours[0][0])
    else:
        feas = _feasible_side(t, root, rising, b)
        at = root
    value, unc = math.nan, math.nan
    if uncertainty:
        value, unc = _three_mesh(src, case, b, t, at, fe, hand_at)
    return ModelAnswer("FE", root, feas, value=value, uncertainty=unc, basis=basis[0],
                       evaluations=len(pts), solves=fe.solves - solves0,
                       seconds=time.perf_counter() - t0, neighbours=neighbours,
                       points=tuple((x, pts[x]) for x in xs))


def _fe_continuous(g: Callable[[float], float], b: KeyBracket, x0: float, slope: float,
                   ftol: float) -> float:
    """A root of the FE's g on the bracket from the hand's x0 and slope; NaN
    when secant steps reach the bracket's end without a sign change."""
    g0 = g(x0)
    if abs(g0) <= ftol:
        return x0
    step = -g0 / slope if slope and math.isfinite(slope) else 0.05 * (b.hi - b.lo)
    step = math.copysign(max(abs(step), 1e-6 * (b.hi - b.lo)), step)
    x1 = min(max(x0 + step * 1.05, b.lo), b.hi)  # 5 % past the hand-slope step: a bracket
    if x1 == x0:
        return math.nan
    g1 = g(x1)
    if abs(g1) <= ftol:
        return x1
    tries = 0
    while g0 * g1 > 0:  # no bracket yet: secant step outward, at least doubled
        tries += 1
        if tries > 8 or (x1 == b.lo and x1 < x0) or (x1 == b.hi and x1 > x0):
            return math.nan  # the bracket's end reached without a sign change
        # the secant's step from x1, 10 % past it (a bracket when the
        # response bends the usual way), doubled when the secant points back
        sec = -g1 * (x1 - x0) / (g1 - g0) if g1 != g0 else 2 * (x1 - x0)
        if (x1 - x0) * sec <= 0:
            sec = 2 * (x1 - x0)
        x0, g0 = x1, g1
        x1 = min(max(x1 + sec * 1.1, b.lo), b.hi)
        if x1 == x0:
            return math.nan
        g1 = g(x1)
        if abs(g1) <= ftol:
            return x1
    root, _ = _illinois(g, x0, g0, x1, g1, xtol=1e-5 * (b.hi - b.lo), ftol=ftol,
                        limit=FE_MAX_SOLVES)
    return root


def _fe_integer(g: Callable[[float], float], b: KeyBracket, x0: float, slope: float
                ) -> tuple[float, tuple[int, int]]:
    """Adjacent integers (n, n+1) where the FE's g changes sign, from the
    hand's crossing; (n, n) when none is in the bracket. Returns the
    interpolated crossing and the pair."""
    lo, hi = int(b.lo), int(b.hi)
    n = min(max(int(math.floor(x0)), lo), hi - 1)
    seen: dict[int, float] = {}

    def gv(k: int) -> float:
        if k not in seen:
            seen[k] = g(float(k))
        return seen[k]

    a, c = n, n + 1
    for _ in range(FE_MAX_SOLVES):
        ga, gc = gv(a), gv(c)
        if ga == 0 or ga * gc < 0 or gc == 0:
            if c - a == 1:
                root = a + ga / (ga - gc) if ga != gc else float(a)
                return root, (a, c)
            m = int(round(a + ga / (ga - gc) * (c - a)))  # regula falsi, kept inside
            m = min(max(m, a + 1), c - 1)
            if gv(m) * ga > 0:
                a = m
            else:
                c = m
            continue
        # same sign: move outward toward the crossing (secant on the pair)
        est = a - ga * (c - a) / (gc - ga) if gc != ga else (c + (c - a) if slope else c)
        if est > c:
            new_a, new_c = c, min(hi, max(c + 1, int(math.ceil(est))))
        else:
            new_a, new_c = max(lo, min(a - 1, int(math.floor(est)))), a
        if (new_a, new_c) == (a, c) or new_a == new_c:
            return math.nan, (a, a)
        a, c = new_a, new_c
    raise RunError("the FE integer search did not settle")


def _check_fe_monotonic(b: KeyBracket, t: Target, xs: list[float], qs: list[float],
                        rising: bool) -> None:
    """Refuse an FE response that turns against the hand's direction by more
    than :data:`FE_REVERSAL` of the target value (module doc)."""
    tol = FE_REVERSAL * abs(t.value)
    for i in range(len(xs) - 1):
        d = qs[i + 1] - qs[i]
        if (d < -tol if rising else d > tol):
            raise CaseError("--target", t.text,
                            f"the FE response is not monotonic in {b.key} where the hand's is "
                            f"(FE {_seen(b, t, xs, qs)}); narrow the bracket")


def _three_mesh(src: CaseSource, case: Case, b: KeyBracket, t: Target, x: float, fe: _FE,
                hand_at: dict[float, float]) -> tuple[float, float]:
    """The FE value at ``x`` on the finest of three meshes (refined by
    compare.models.fe.REFINE) and its uncertainty (compare.models.fe.
    uncertainty_rule, plus |value| x the depth models' spread of the
    correction, as the check's FE 3D column)."""
    from ..models.fe import REFINE, guard_mesh_size, uncertainty_rule

    c = make_case(src, _settings(b, x, t, case))
    guard_mesh_size(c, refine=REFINE)
    guess = hand_value(c, t) if t.quantity == "saturation_current" else math.nan
    vals, spread = [], 0.0
    for r in (1.0 / REFINE, 1.0, REFINE):
        v, _, s = fe.value(c, t, refine=r, hand_guess=guess, spread=r == REFINE)
        vals.append(v)
        spread = s
    unc = uncertainty_rule(*vals) + abs(vals[-1]) * spread
    return vals[-1], unc


def solve_targets(src: CaseSource, bracket: KeyBracket, targets: Sequence[Target], *,
                  with_fe: bool = True, uncertainty: bool = True) -> TargetResult:
    """Solve ``bracket.key`` for every target by the hand model and (with
    ``with_fe``) by the FE (module doc).

    Raises
    ------
    CaseError
        A bracket end the case file would reject, a target fixing the key,
        a target out of the reachable range (one target, or any ``=``
        target), a non-monotonic response: naming the target and the values.
    RunError
        A solve that fails, or an FE search that does not settle.
    """
    t0 = time.perf_counter()
    if not targets:
        raise CaseError("--target", None, "give at least one target, e.g. inductance>=3.2mH@6A")
    case = make_case(src, {})
    for end in (bracket.lo, bracket.hi):  # both ends validated like case-file input
        try:
            make_case(src, {bracket.key: int(end) if bracket.integer else end})
        except CaseError as exc:
            raise CaseError("--key", bracket.spec, f"{exc.reason}") from None
    for t in targets:
        check_target(case, bracket, t)
    single = len(targets) == 1
    answers = []
    curves: dict[float, list[float]] = {}
    fe = _FE() if with_fe else None
    for k, t in enumerate(targets):
        hand, samples, slope = _solve_hand(src, case, bracket, t, single=single)
        for x, q in samples:
            curves.setdefault(x, [math.nan] * len(targets))[k] = q
        fe_ans = (_solve_fe(src, case, bracket, t, hand, slope, fe, uncertainty=uncertainty)
                  if fe is not None else None)
        answers.append(TargetAnswer(t, hand, fe_ans))
    feasible: dict[str, tuple[float, float] | None] = {"hand": _intersect(
        [a.hand.feasible for a in answers])}
    if with_fe:
        feasible["FE"] = _intersect([a.fe.feasible if a.fe else None for a in answers])
    curve = tuple((x, tuple(v)) for x, v in sorted(curves.items()))
    return TargetResult(case, bracket, tuple(answers), feasible, time.perf_counter() - t0,
                        curve)


def _intersect(ranges: Sequence[tuple[float, float] | None]) -> tuple[float, float] | None:
    if any(r is None for r in ranges) or not ranges:
        return None
    lo = max(r[0] for r in ranges if r)
    hi = min(r[1] for r in ranges if r)
    return (lo, hi) if lo <= hi else None
