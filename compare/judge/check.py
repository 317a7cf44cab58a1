"""The side-by-side check: hand calculation and field solution of one case.

The like-for-like comparison is the hand model in its planar-consistent
form (fringing in the plane only) against the planar FE per stack depth.
Beside it stand the 3D hand value the engineer would use and the FE value
with the depth-direction fringing correction (docs/references.md section 6:
multiply the planar permeance by the model's out-of-plane factor).
"""

from __future__ import annotations

import math
import time
from dataclasses import dataclass, field
from typing import Any

from magcheck.analytic.fringing import FRINGING_MODELS, get_fringing

from ..design.case import Case

from ..reading.casefile import plausibility_issues
from ..models.fe import FEResult, run_fe_checked
from ..models.hand import (FORCE_KEYS, HAND_KEYS, UNITS, HandResult, cancelling_windings,
                           gap_face, run_hand, winding_keys)
from ..design.units import format_si

__all__ = ["Row", "CheckResult", "run_check", "DEFAULT_LIMITS", "LABELS", "rank_fringing",
           "NOISE", "INCONCLUSIVE", "EXIT_DESIGN", "EXIT_AGREEMENT", "AGREEMENT_MODES",
           "cancelling_windings", "NET_MMF_KEYS", "DepthCorrection", "depth_correction"]

# Default agreement limits, percent of the FE value. Engineering judgement
# (common practice, no source): a hand calc within 10 % on the gap and
# inductance is a good one; H along the path is far from uniform, so its
# mean is held to a looser band.
DEFAULT_LIMITS: dict[str, float] = {
    "gap_B": 10.0, "core_B": 10.0, "path_H": 30.0, "flux": 15.0, "flux_linkage": 15.0,
    "inductance": 15.0, "incremental_inductance": 20.0, "energy": 15.0,
    # a moving part's pull: the force goes as the gap's MMF squared and its
    # permeance's derivative, so a hand calc within 20 % is a good one, the
    # pull formula (no fringing in its face) within 30 % (common practice, no source)
    "force": 20.0, "force_pull": 30.0,
    # a voltage drive: the magnetizing current, which the knee makes steep
    # in B (common practice, no source).  B_peak has no default: it sets the
    # EMF equation's uniform limb B beside the FE's 0.5 % area quantile, a
    # local peak where the flux crowds at the inner corners, so it is info
    # unless [margins.agreement] B_peak asks; B_limb_peak compares like with
    # like
    "magnetizing_current_peak": 30.0,
    # the same EMF-equation B against the FE's mean limb B: off by the
    # leakage flux that links the winding outside the limb (common practice,
    # no source)
    "B_limb_peak": 10.0, "magnetizing_current_rms": 30.0,
    "magnetizing_inductance": 30.0,
    # the concentric-winding formula assumes long thin windings and no end
    # fringing (common practice, no source)
    "leakage_inductance": 25.0,
    # a magnet's operating point: B on its recoil line moves little with the
    # load, H much more (common practice, no source)
    "magnet_B": 10.0, "magnet_H": 30.0,
    # an AC winding (compare.models.ac).  R_dc: the same formula on the same
    # drawn turns, so only the mesh's area error may part them; Dowell's 1D
    # layer formula is held to 15 % on R_ac, R_ac/R_dc and the loss, L_ac as
    # the incremental inductance it stands for (common practice, no source)
    "R_dc": 1.0, "R_ac": 15.0, "R_ac_ratio": 15.0, "winding_loss": 15.0, "L_ac": 20.0,
    # a solid part's eddy loss by the low-frequency rod formula with the hand
    # circuit's flux (compare.models.ac.hand_part_loss): the loss goes as B^2,
    # so a 10 % flux error is 20 % (common practice, no source)
    "part_loss": 25.0,
}

LABELS = {
    "gap_B": "gap B", "core_B": "core B", "path_H": "path-averaged H", "flux": "flux",
    "flux_linkage": "flux linkage", "inductance": "inductance (secant)",
    "incremental_inductance": "inductance (incremental)", "energy": "stored energy",
    "peak_B": "peak core B",
    "force": "force (virtual work)", "force_pull": "force (pull formula)",
    "force_virtual_work": "force, FE virtual work",
    "magnet_B": "magnet B (operating point)", "magnet_H": "magnet H (operating point)",
    "magnet_H_min": "magnet H, demagnetising extreme",
    "B_peak": "peak flux density at the drive's peak",
    "B_limb_peak": "winding-limb B (flux / area) at the drive's peak",
    "magnetizing_current_peak": "magnetizing current, peak",
    "magnetizing_current_rms": "magnetizing current, rms",
    "magnetizing_inductance": "magnetizing inductance (fundamental)",
    "leakage_inductance": "leakage inductance",
    "inrush_current_peak": "inrush current, first peak (estimate)",
    "R_dc": "winding R_dc", "R_ac": "winding R_ac", "R_ac_ratio": "R_ac/R_dc",
    "winding_loss": "winding loss (DC + AC)", "L_ac": "AC inductance",
}

# Quantities that scale with the gap permeance, and so take the depth-fringing factor.
_PERMEANCE_LIKE = ("flux", "flux_linkage", "inductance", "incremental_inductance", "energy",
                   "core_B", "path_H")

UNCERTAIN_PCT = 1.0  # FE uncertainty above this (percent) is flagged


@dataclass(frozen=True)
class Row:
    """One line of the comparison table (SI values in ``unit``, percentages).

    hand : the hand calculation in the form the FE solves (planar-consistent
        for a planar FE, the whole circuit for an r-z one).
    fe : the field solution (planar FE: per the case's stack depth).
    uncertainty : the FE's numerical uncertainty of ``fe`` (same unit; NaN
        without the three-mesh estimate).
    diff_pct : (hand - fe) / |fe| in percent.
    limit_pct : the agreement limit (percent; None: not judged).
    verdict : "pass", "within FE noise", "inconclusive", "FAIL", "info", "n/a".
    hand_3d, fe_3d : the 3D hand calculation and the depth-corrected FE.
    """

    key: str
    label: str
    unit: str
    hand: float
    fe: float
    uncertainty: float
    diff_pct: float
    limit_pct: float | None
    verdict: str
    hand_3d: float = math.nan
    fe_3d: float = math.nan
    limit_value: float | None = None  # design margins: the limit itself (SI)
    margin_pct: float = math.nan  # design margins: margin left, percent of the limit
    limit_kind: str = "max"  # design margins: "max" (value <= limit) or "min" (value >= limit)
    fe_3d_uncertainty: float = math.nan
    """Uncertainty of ``fe_3d`` (SI): the FE's own, scaled by the depth
    correction, plus the spread of that correction across the fringing
    models (:class:`DepthCorrection`)."""

    @property
    def judges(self) -> str:
        """What the row's verdict is about: "design" (a design margin: peak B
        and the ``margin:`` rows, judged against the case's own limits) or
        "agreement" (hand calculation against the field solution)."""
        if self.limit_value is not None or self.key == "peak_B" or self.key.startswith("margin:"):
            return "design"
        return "agreement"

    @property
    def uncertainty_pct(self) -> float:
        return 100.0 * self.uncertainty / abs(self.fe) if self.fe else math.nan

    def to_dict(self) -> dict:
        return {"quantity": self.key, "label": self.label, "unit": self.unit,
                "hand": self.hand, "fe": self.fe, "fe_uncertainty": self.uncertainty,
                "fe_uncertainty_pct": self.uncertainty_pct, "difference_pct": self.diff_pct,
                "limit_pct": self.limit_pct, "verdict": self.verdict,
                "hand_3d": self.hand_3d, "fe_depth_corrected": self.fe_3d,
                "limit_value": self.limit_value, "margin_pct": self.margin_pct,
                "limit_kind": self.limit_kind, "judges": self.judges,
                "fe_depth_corrected_uncertainty": self.fe_3d_uncertainty}


@dataclass(frozen=True)
class CheckResult:
    """Everything a check produced."""

    case: Case
    hand_3d: HandResult
    hand_planar: HandResult
    fe: FEResult
    rows: tuple[Row, ...]
    depth_factor: float
    notes: tuple[str, ...]
    timings: dict[str, float]
    fringing_ranking: tuple[dict, ...] = ()
    breakdown: tuple = ()
    """compare.judge.breakdown.Step per refinement, in order (the difference breakdown)."""
    drive: Any = None
    """compare.models.drive.DriveResult of a voltage-driven case (None otherwise)."""
    ac: Any = None
    """compare.models.ac.ACResult of a case with an AC winding (None otherwise)."""
    leakage: dict = field(default_factory=dict)
    """Two concentric windings: {"hand": L_s, "fe": L_s} referred to the first (H)."""
    depth: Any = None
    """The :class:`DepthCorrection` behind the FE 3D column (None: not computed)."""
    force_curve: Any = None
    """compare.studies.sweep.ForceCurve: FE force points along the stroke for
    the force-stroke figure (``magcheck check --force-curve``; None: not run)."""
    measured: tuple = ()
    """compare.judge.measurement.MeasuredRow per ``[[measured]]`` entry at the
    case's operating point (the measured column; empty without measurements)."""
    motion: Any = None
    """compare.models.motion.MotionResult of a case with ``[motion]`` (None otherwise)."""
    loss: Any = None
    """compare.models.loss.LossBudget of a case with ``[loss]`` (None otherwise)."""

    @property
    def design_passed(self) -> bool:
        """The design meets its margins: no design row (peak B, ``margin:``) failed."""
        return all(r.verdict != "FAIL" for r in self.rows if r.judges == "design")

    @property
    def agreement_passed(self) -> bool:
        """The hand calculation agrees with the field solution: no agreement
        row failed ("inconclusive" rows are not failures; see ``verdict_counts``)."""
        return all(r.verdict != "FAIL" for r in self.rows if r.judges == "agreement")

    @property
    def passed(self) -> bool:
        """Both verdicts: every design margin met and every agreement limit
        kept (no row FAIL), as before the two verdicts were split."""
        return self.design_passed and self.agreement_passed

    def verdict_counts(self, judges: str) -> dict[str, int]:
        """How many rows of one kind ("design" or "agreement") got each
        verdict; "within FE noise" counts as a pass, "inconclusive" apart."""
        out: dict[str, int] = {}
        for r in self.rows:
            if r.judges == judges:
                v = "pass" if r.verdict == NOISE else r.verdict
                out[v] = out.get(v, 0) + 1
        return out

    def exit_code_for(self, agreement: str = "fatal") -> int:
        """1 a design margin failed; else 4 an agreement limit failed (0 with
        ``agreement="report"``); else 0."""
        if not self.design_passed:
            return EXIT_DESIGN
        if not self.agreement_passed and agreement == "fatal":
            return EXIT_AGREEMENT
        return 0

    @property
    def exit_code(self) -> int:
        return self.exit_code_for("fatal")

    # ------------------------------------------------------------ named access
    def keys(self) -> list[str]:
        """The rows' quantity keys, in table order (``inductance``, ``gap_B``,
        ``margin:peak_B``, ...)."""
        return [r.key for r in self.rows]

    def __getitem__(self, key: str) -> Row:
        """The row of one quantity: ``res["inductance"].fe`` (H), ``.hand``,
        ``.fe_3d``, ``.uncertainty``, ``.diff_pct`` (%), ``.verdict``.

        Raises
        ------
        KeyError
            Naming the key and listing the known ones.
        """
        for r in self.rows:
            if r.key == key:
                return r
        raise KeyError(f"{key!r} is not a row of this check; known: {', '.join(self.keys())}")

    def __contains__(self, key: object) -> bool:
        return any(r.key == key for r in self.rows)

    def to_dict(self, agreement: str = "fatal") -> dict:
        """The document ``magcheck check --json`` writes (standard JSON types:
        a missing value is None), equal to the CLI's file for the same run;
        ``agreement`` as the CLI option (it sets ``exit_code``)."""
        from .document import check_json, json_ready

        return json_ready(check_json(self, agreement))

    def to_dataframe(self) -> Any:
        """The comparison rows as a pandas DataFrame indexed by quantity
        (columns as the JSON's ``comparison`` entries, SI units and percent).

        Raises
        ------
        ImportError
            When pandas is not installed (it is not a dependency of magcheck).
        """
        return dataframe([r.to_dict() for r in self.rows], "quantity")


NOISE = "within FE noise"
"""A passing agreement row whose |hand - FE| is within the FE uncertainty
(the string JSON readers have always seen)."""
INCONCLUSIVE = "inconclusive"
"""An agreement row beyond its limit whose |hand - FE| is within the FE
uncertainty: the mesh cannot tell; neither pass nor FAIL (refine the mesh)."""
EXIT_DESIGN = 1
"""Exit code: a design margin failed."""
EXIT_AGREEMENT = 4
"""Exit code: the design margins are met but hand and FE disagree beyond an
agreement limit (``--agreement report`` makes it 0)."""
AGREEMENT_MODES = ("fatal", "report")


def _verdict(diff_pct: float, hand: float, fe: float, unc: float, limit: float | None) -> str:
    """An agreement row's verdict: the limit first, then the FE noise.

    Within the limit: "pass" ("within FE noise" when |hand - FE| is also
    within the FE uncertainty).  Beyond it: "FAIL", unless |hand - FE| is
    within the uncertainty, when the mesh cannot tell: "inconclusive".
    Without a limit: "info" (or "within FE noise").
    """
    if not (math.isfinite(hand) and math.isfinite(fe) and math.isfinite(diff_pct)):
        return "n/a"  # no value, or no relative difference (FE value zero)
    noise = math.isfinite(unc) and abs(hand - fe) <= unc
    if limit is None:
        return NOISE if noise else "info"
    if abs(diff_pct) <= limit:
        return NOISE if noise else "pass"
    return INCONCLUSIVE if noise else "FAIL"


def _diff_pct(hand: float, fe: float) -> float:
    """(hand - FE) / FE in percent: the same figure for a quantity and its
    sign-reversed counterpart (negative currents, compare.models.hand.signed)."""
    if not (math.isfinite(hand) and math.isfinite(fe)) or fe == 0:
        return math.nan
    return 100.0 * (hand - fe) / fe


def depth_corrections(hand_p: HandResult | dict, hand_3d: HandResult | dict) -> dict[str, float]:
    """Per quantity, the factor taking a planar FE value to its 3D estimate
    (the "FE 3D" column): the hand network's own 3D / planar ratio.

    Depth fringing raises only the gap permeances, each by its k_depth; what
    that does to the circuit depends on the gaps' share of its reluctance.
    For a linear circuit with core reluctance R_c and gap reluctance R_g the
    flux rises by (R_c + R_g) / (R_c + R_g/k_depth), not by k_depth (which
    overstates it by the core's share).  The hand network holds exactly that
    share, with the nonlinear core, several gaps and parallel limbs, so the
    rule is: FE 3D = FE x hand 3D / hand planar, for flux, flux linkage,
    inductances, energy, core B and path H.  Gap B (the field in the middle
    of the gap) is left as it is.  At zero current, where those quantities
    are zero, the secant-inductance ratio (the small-signal one) serves.
    """
    hp = hand_p if isinstance(hand_p, dict) else hand_p.values()
    h3 = hand_3d if isinstance(hand_3d, dict) else hand_3d.values()
    base = h3["inductance"] / hp["inductance"] if hp["inductance"] else 1.0
    out = {}
    for k in HAND_KEYS:
        if k not in _PERMEANCE_LIKE:
            out[k] = 1.0
        elif hp[k] and math.isfinite(hp[k]) and math.isfinite(h3[k]):
            out[k] = h3[k] / hp[k]
        else:
            out[k] = base
    return out


def fe_3d_factor(case: Case, key: str = "inductance", fringing: str | None = None) -> float:
    """`depth_corrections` of one quantity at the case's own operating point
    (solves the hand network in both forms) under the fringing model
    ``fringing`` (default: the case's).  The FE 3D column itself takes the
    model :func:`choose_depth_model` picks."""
    return depth_corrections(run_hand(case, fringing=fringing, planar=True),
                             run_hand(case, fringing=fringing))[key]


DEPTH_MODELS = tuple(name for name in FRINGING_MODELS if name != "none")
"""The fringing models a depth correction may come from: every model that
has a depth-direction fringing ("none" has none, and would be no estimate)."""


@dataclass(frozen=True)
class DepthCorrection:
    """What takes a planar FE value to its 3D estimate (the FE 3D column).

    ``model``: the fringing model whose hand 3D / planar ratio is used, the
    best-ranked of :data:`DEPTH_MODELS` against the planar FE
    (:func:`rank_fringing`; None for an r-z case, whose field solution holds
    all the fringing).  ``hand_planar`` and ``hand_3d`` are that model's
    hand results, ``factors`` its ratios (:func:`depth_corrections`; force
    and per-winding keys included), ``spread`` per key the max - min of the
    ratio over :data:`DEPTH_MODELS`: how far the models disagree about the
    correction, added to the FE 3D column's uncertainty (``fe_3d_uncertainty``).
    """

    model: str | None
    factors: dict[str, float]
    spread: dict[str, float]
    hand_planar: HandResult | None = None
    hand_3d: HandResult | None = None

    def factor(self, key: str) -> float:
        return self.factors.get(key, 1.0)

    def uncertainty(self, key: str, fe: float, unc: float) -> float:
        """The FE 3D value's uncertainty (SI): the FE's own times the
        correction, plus |FE| times the models' spread of the correction."""
        if not math.isfinite(unc):
            return math.nan
        return abs(unc * self.factor(key)) + abs(fe) * self.spread.get(key, 0.0)


def _all_ratios(hp: HandResult, h3: HandResult) -> dict[str, float]:
    """depth_corrections of the table's keys, the force's and the winding keys'."""
    out = dict(depth_corrections(hp, h3))
    for k in hp.force_values:
        a, b = hp.force_values[k], h3.force_values.get(k, math.nan)
        out[k] = b / a if a and math.isfinite(a) and math.isfinite(b) else 1.0
    for k, a in hp.winding_values.items():
        b = h3.winding_values.get(k, math.nan)
        out[k] = b / a if a and math.isfinite(a) and math.isfinite(b) else math.nan
    return out


RANK_KEYS = ("gap_B", "flux", "inductance")
"""The planar values a fringing model is ranked on against the planar FE
(:func:`rank_fringing`, :func:`choose_depth_model`)."""


def _rank_rms(hand_values: dict, fe_values: dict) -> tuple[float, dict[str, float]]:
    """RMS of the percent differences of :data:`RANK_KEYS`, hand against FE
    (NaN when none is finite), and the differences."""
    diffs = {k: _diff_pct(hand_values[k], fe_values.get(k, math.nan)) for k in RANK_KEYS}
    finite = [d for d in diffs.values() if math.isfinite(d)]
    return (math.sqrt(sum(d * d for d in finite) / len(finite)) if finite else math.nan), diffs


def _rank_order(entries: list[dict]) -> list[dict]:
    """Best first by ``rms_difference_pct`` (NaN last; ties keep their order)."""
    return sorted(entries, key=lambda d: (not math.isfinite(d["rms_difference_pct"]),
                                          d["rms_difference_pct"]))


@dataclass(frozen=True)
class DepthChoice:
    """The depth model chosen for one operating point, and its hand pair.

    ``model``: a name of :data:`DEPTH_MODELS` (or the case's own model);
    ``basis``: "FE" when ranked against that point's planar FE values (as
    ``magcheck check`` ranks), "case" when no FE value exists there and the
    case's own fringing model is kept, "r-z" for an axisymmetric case (its
    field solution is 3D: the case's model, ratio 1).  ``hand_planar``, ``hand_3d``: that
    model's hand solves at the point; :meth:`factor` their 3D / planar ratio
    (:func:`depth_corrections`; force keys as the check's force rows)."""

    model: str
    basis: str
    hand_planar: HandResult
    hand_3d: HandResult

    @property
    def factors(self) -> dict[str, float]:
        return _all_ratios(self.hand_planar, self.hand_3d)

    def factor(self, key: str) -> float:
        return self.factors.get(key, 1.0)


def _best_ranked(ranking: tuple[dict, ...]) -> str | None:
    """The best :data:`DEPTH_MODELS` entry of a ranking (best first), if any."""
    return next((d["model"] for d in ranking if d["model"] in DEPTH_MODELS), None)


def choose_depth_model(case: Case, fe_values: dict | None = None, *,
                       own: tuple[HandResult, HandResult] | None = None) -> DepthChoice:
    """The one rule that picks the FE 3D column's depth model at a point.

    With planar FE values ``fe_values`` holding :data:`RANK_KEYS`: each
    depth model's planar hand solve at the point ranked against them as
    :func:`rank_fringing` ranks (RMS of the percent differences), the best
    taken, which is the model :func:`depth_correction` takes from the
    check's own ranking.  Else (a hand-only point) the case's own model,
    ``basis`` "case" (as the hand column; "none" gives no depth
    correction).  Used by the sweep, the tolerance study and the margins at
    other currents, so that one margin is judged on one number.

    ``own``: the case's (planar, 3D) hand results at the point when already
    solved; reused when the case's model is chosen.  Cost: one planar hand
    solve per depth model not the case's, and one 3D solve when the chosen
    model is not the case's."""
    own_name = case.hand.fringing
    planar: dict[str, HandResult] = {}
    # the other models start Newton from the case's model's branch fluxes
    # (same network, other gap permeances: about half the time of a cold
    # start; each converges to its own tolerance whatever the start)
    start: tuple[Any, Any] = (None, None)
    if own is not None:
        planar[own_name] = own[0]
        start = tuple({b.name: b.flux for b in h.network.branches}  # type: ignore[assignment]
                      for h in own)

    def hand_p(m: str) -> HandResult:
        if m not in planar:
            planar[m] = run_hand(case, fringing=m, planar=True, flux0=start[0])
        return planar[m]

    from ..design.coremodel import core_model

    basis = "FE"
    if core_model(case).axisymmetric:  # the field solution holds all the fringing: nothing
        chosen, basis = own_name, "r-z"  # to choose (the two hand forms are the same)
    elif fe_values and any(math.isfinite(fe_values.get(k, math.nan)) for k in RANK_KEYS):
        entries = [{"model": m, "rms_difference_pct": _rank_rms(hand_p(m).values(), fe_values)[0]}
                   for m in DEPTH_MODELS]
        chosen = _rank_order(entries)[0]["model"]
    else:
        chosen, basis = own_name, "case"
    if own is not None and chosen == own_name:
        h3 = own[1]
    else:
        h3 = run_hand(case, fringing=chosen, flux0=start[1])
    return DepthChoice(chosen, basis, hand_p(chosen), h3)


def depth_correction(case: Case, ranking: tuple[dict, ...] = ()) -> DepthCorrection:
    """The FE 3D column's correction: the best-ranked depth model's hand 3D
    / planar ratios (``ranking`` best first, as :func:`rank_fringing`; without
    it the case's own model), and their spread over every model of
    :data:`DEPTH_MODELS` (max - min per key).

    The case's model is only the hand column's choice; the planar FE tells
    which model describes this gap's in-plane fringing best, and the same
    model's depth fringing is the defensible estimate of the third
    dimension (in-plane and depth fringing are one physics on two edges).
    The spread states what that choice leaves open."""
    from ..design.coremodel import core_model

    if core_model(case).axisymmetric:
        return DepthCorrection(None, {}, {})
    pairs = {m: (run_hand(case, fringing=m, planar=True), run_hand(case, fringing=m))
             for m in DEPTH_MODELS}
    # the rule of choose_depth_model without its solves (every pair is here)
    chosen = _best_ranked(ranking) or case.hand.fringing
    if chosen not in DEPTH_MODELS:  # "none" has no depth fringing: the first model stands in
        chosen = DEPTH_MODELS[0]
    ratios = {m: _all_ratios(*pairs[m]) for m in DEPTH_MODELS}
    keys = set().union(*(r.keys() for r in ratios.values()))
    spread = {}
    for k in keys:
        vals = [r[k] for r in ratios.values() if math.isfinite(r.get(k, math.nan))]
        spread[k] = max(vals) - min(vals) if vals else 0.0
    return DepthCorrection(chosen, ratios[chosen], spread, *pairs[chosen])


def force_rows(case: Case, hand_p: HandResult, hand_3d: HandResult,
               fe: FEResult, depth: DepthCorrection | None = None) -> list[Row]:
    """With a moving part: the hand force by the network's virtual work and
    by the pull formula, each against the FE's Maxwell stress, and the FE's
    virtual work (the independent second method) beside them, N along the
    closing stroke.  The 3D columns scale the FE by the hand model's 3D over
    planar force (as the other rows)."""
    if not hand_p.force_values:
        return []
    fv = fe.fine.force_values
    f = fv.get("force", math.nan)
    u = fe.uncertainty.get("force", math.nan)
    out = []
    # one depth correction for the FE force: the hand network's 3D over planar
    # force (the pull formula is one of the estimates compared, not a model
    # of the depth fringing)
    if depth is None:
        hp_f, h3_f = hand_p.force_values["force"], hand_3d.force_values["force"]
        k3 = h3_f / hp_f if hp_f and math.isfinite(h3_f) else 1.0
        depth = DepthCorrection(case.hand.fringing, {"force": k3}, {})
    k3 = depth.factor("force")
    u3 = depth.uncertainty("force", f, u)
    for k in FORCE_KEYS:
        h, h3 = hand_p.force_values[k], hand_3d.force_values[k]
        d = _diff_pct(h, f)
        lim = case.margins.agreement_limit(k, DEFAULT_LIMITS.get(k))
        out.append(Row(k, LABELS[k], "N", h, f, u, d, lim, _verdict(d, h, f, u, lim),
                       hand_3d=h3, fe_3d=f * k3, fe_3d_uncertainty=u3))
    vw = fv.get("force_virtual_work", math.nan)
    if math.isfinite(vw):
        uv = fe.uncertainty.get("force_virtual_work", math.nan)
        out.append(Row("force_virtual_work", LABELS["force_virtual_work"], "N", math.nan, vw,
                       uv, math.nan, None, "info", fe_3d=vw * k3,
                       fe_3d_uncertainty=depth.uncertainty("force", vw, uv)))
    return out


def magnet_rows(case: Case, hand_p: HandResult, hand_3d: HandResult,
                fe: FEResult) -> list[Row]:
    """With a magnet: the first magnet's mean B and H along its magnetisation,
    hand (its circuit branch, when the circuit has one of its name) against
    the FE's means over it, and the FE's demagnetising extreme (the H
    exceeded downward on 0.5 % of the magnet's area)."""
    mv = fe.fine.magnet_values
    if not mv:
        return []
    out = []
    for k, unit in (("magnet_B", "T"), ("magnet_H", "A/m")):
        h = hand_p.magnet_values.get(k, math.nan)
        f, u = mv[k], fe.uncertainty.get(k, math.nan)
        d = _diff_pct(h, f)
        lim = DEFAULT_LIMITS[k]
        out.append(Row(k, LABELS[k], unit, h, f, u, d, lim,
                       _verdict(d, h, f, u, lim) if math.isfinite(h) else "info",
                       hand_3d=hand_3d.magnet_values.get(k, math.nan), fe_3d=f))
    out.append(Row("magnet_H_min", LABELS["magnet_H_min"], "A/m", math.nan, mv["magnet_H_min"],
                   fe.uncertainty.get("magnet_H_min", math.nan), math.nan, None, "info",
                   fe_3d=mv["magnet_H_min"]))
    return out


def leakage_values(case: Case, fe: FEResult) -> dict:
    """The leakage inductance of the first two windings when concentric
    (compare.models.coupling), hand and FE on the finest mesh; {} otherwise."""
    from ..models.coupling import concentric_pair, fe_leakage, hand_leakage

    if concentric_pair(case) is None:
        return {}
    return {"hand": hand_leakage(case), "fe": fe_leakage(case, fe.solution.mesh)}


def leakage_row(case: Case, leakage: dict) -> Row:
    """The leakage-inductance row: the classic formula against the FE's
    balanced-ampere-turn energy (one mesh: no uncertainty)."""
    k = "leakage_inductance"
    h, f = leakage["hand"], leakage["fe"]
    d = _diff_pct(h, f)
    lim = case.margins.agreement_limit(k, DEFAULT_LIMITS[k])
    how = ", Rogowski factor" if case.hand.rogowski else ""
    return Row(k, f"{LABELS[k]} (referred to {case.winding.name}{how})", "H", h, f, math.nan, d, lim,
               _verdict(d, h, f, math.nan, lim), hand_3d=h, fe_3d=f)


def drive_rows(case: Case, drive: Any, depth: DepthCorrection | None = None) -> list[Row]:
    """A voltage-driven winding: the peak flux density, the magnetizing
    current (peak, rms), the magnetizing inductance the fundamental sees
    (lambda_pk over the fundamental's amplitude), hand (planar form) against
    FE with the first-order FE uncertainty (compare.models.drive), the FE 3D
    column by the hand's 3D / planar ratio under ``depth``'s model (the
    model ranked against the planar FE at the case's operating point,
    :func:`choose_depth_model`, as every other FE 3D value; the case's own
    model without ``depth``: compare.models.drive.hand_depth_ratios); the 3rd, 5th and 7th
    harmonics (info); with ``residual_flux`` the inrush estimate's first
    current peak (info unless ``[margins.agreement] inrush_current_peak``
    sets a limit: the hand network has no air flux beside the saturated
    core, so it is expected far off); and the margins ``B_peak``,
    ``magnetizing_current_peak``, ``magnetizing_current_rms`` and
    ``inrush_current_peak`` (maxima, judged on the FE's 3D value)."""
    hv, h3, fv = drive.values("hand"), drive.values("hand_3d"), drive.values("fe")
    ratios: dict[str, float] = {}
    if depth is not None and depth.model and depth.model != case.hand.fringing:
        from ..models.drive import hand_depth_ratios

        ratios = hand_depth_ratios(case, depth.model)
    out = []
    for k in ("B_peak", "B_limb_peak", "magnetizing_current_peak", "magnetizing_current_rms",
              "magnetizing_inductance"):
        unit = {"B_peak": "T", "B_limb_peak": "T", "magnetizing_inductance": "H"}.get(k, "A")
        ratio = h3[k] / hv[k] if k not in ("B_peak", "B_limb_peak") and hv[k] else 1.0
        ratio = ratios.get(k, ratio)
        d = _diff_pct(hv[k], fv[k])
        lim = case.margins.agreement_limit(k, DEFAULT_LIMITS.get(k))
        u = drive.uncertainty.get(k, math.nan)
        out.append(Row(k, LABELS[k], unit, hv[k], fv[k], u, d, lim,
                       _verdict(d, hv[k], fv[k], u, lim), hand_3d=h3[k], fe_3d=fv[k] * ratio))
    for n in (3, 5, 7):
        h, f = drive.hand.harmonics_pct[n], drive.fe.harmonics_pct[n]
        out.append(Row(f"magnetizing_harmonic_{n}", f"magnetizing current, harmonic {n} (% of "
                       "the fundamental)", "%", h, f, math.nan, math.nan, None, "info",
                       hand_3d=drive.hand_3d.harmonics_pct[n], fe_3d=f))
    if drive.inrush:
        k = "inrush_current_peak"
        h, h3i, f = drive.inrush["hand"], drive.inrush["hand_3d"], drive.inrush["fe"]
        d = _diff_pct(h, f)
        lim = case.margins.agreement_limit(k, None)
        u = drive.uncertainty.get(k, math.nan)
        r = case.winding.residual_flux
        damp = f", {drive.resistance:.4g} ohm" if drive.resistance > 0 else ", undamped"
        # the FE 3D column is the planar FE itself: the hand's 3D / planar
        # ratio (depth fringing of the gaps) means nothing deep in saturation,
        # where the current is carried by the winding's air flux
        out.append(Row(k, f"{LABELS[k][:-1]}, residual {r:g}{damp})", "A",
                       h, f, u, d, lim, _verdict(d, h, f, u, lim), hand_3d=h3i, fe_3d=f))
    m = case.margins
    for key, limit in (("B_peak", m.B_peak), ("magnetizing_current_peak", m.magnetizing_current_peak),
                       ("magnetizing_current_rms", m.magnetizing_current_rms),
                       ("inrush_current_peak", m.inrush_current_peak)):
        if limit is None:
            continue
        row = next(r for r in out if r.key == key)
        value = row.fe_3d
        margin = 100.0 * (limit - value) / limit
        out.append(Row(f"margin:{key}", f"{LABELS[key]}, max", row.unit, row.hand_3d, value,
                       math.nan, math.nan, None, "pass" if value <= limit else "FAIL",
                       limit_value=limit, margin_pct=margin, limit_kind="max"))
    return out


def ac_rows(case: Case, ac: Any) -> list[Row]:
    """An AC winding (compare.models.ac): R_dc, R_ac, R_ac/R_dc, winding loss
    (DC + AC) and L_ac, hand (planar form: the turns' sides in the stack
    depth) against the planar FE with its three-mesh uncertainty; the 3D
    columns with the mean turn lengths (hand) and the FE times the hand's
    3D / planar ratio; the AC loss per layer (info); and the margins
    winding_loss and resistance_ratio (maxima, judged on the FE 3D value;
    R_ac/R_dc on the FE's)."""
    from ..models.ac import AC_KEYS, UNITS as AC_UNITS
    from .margins import ac_margins

    out = []
    f_khz = ac.frequency / 1e3
    several = len(getattr(ac, "windings", ())) > 1
    # several windings: the set referred to the first winding, then each winding's own
    per_winding = [k for k in ac.hand if ":" in k and k in ac.fe]
    for k in (*AC_KEYS, *per_winding):
        base, _, who = k.partition(":")
        h, f, u = ac.hand[k], ac.fe[k], ac.uncertainty.get(k, math.nan)
        d = _diff_pct(h, f)
        lim = case.margins.agreement_limit(base, DEFAULT_LIMITS.get(base))
        scale = ac.fe_3d[k] / f if f else math.nan
        if who:
            label = f"{LABELS[base]}, {who}"
        elif several and base == "L_ac":
            label = f"{LABELS[base]} (leakage, to the first)"
        elif several and base in ("R_dc", "R_ac", "R_ac_ratio"):
            label = f"{LABELS[base]} (all windings)"
        else:
            label = LABELS[base]
        label += "" if base == "R_dc" else f" at {f_khz:.4g} kHz"
        out.append(Row(k, label, AC_UNITS[base], h, f, u, d, lim, _verdict(d, h, f, u, lim),
                       hand_3d=ac.hand_3d[k], fe_3d=ac.fe_3d[k],
                       fe_3d_uncertainty=u * abs(scale) if math.isfinite(scale) else math.nan))
    for j, (h, f) in enumerate(zip(ac.hand_layers, ac.fe_layers), start=1):
        u = ac.fe_layers_uncertainty[j - 1]
        d = _diff_pct(h, f)
        where = " (next to the limb)" if j == 1 else ""
        if several and len(ac.layer_windings) >= j:
            where += f" ({ac.layer_windings[j - 1]})"
        out.append(Row(f"layer_loss:{j}", f"AC loss, layer {j}{where}", "W", h, f,
                       u, d, None, _verdict(d, h, f, u, None)))
    for part, f in getattr(ac, "part_loss_fe", {}).items():
        h = ac.part_loss_hand.get(part, math.nan)
        u = ac.part_loss_uncertainty.get(part, math.nan)
        both = math.isfinite(h)
        d = _diff_pct(h, f) if both else math.nan
        lim = case.margins.agreement_limit("part_loss", DEFAULT_LIMITS["part_loss"]) if both else None
        label = (f"conducting-part loss, {part} at {f_khz:.4g} kHz"
                 + ("" if both else " (FE only: no closed form)"))
        out.append(Row(f"part_loss:{part}", label, "W", h, f, u, d, lim,
                       _verdict(d, h, f, u, lim) if both else "info", hand_3d=h, fe_3d=f))
    fe3 = {**ac.fe_3d, "R_ac_ratio": ac.fe["R_ac_ratio"]}
    h3 = {**ac.hand_3d, "R_ac_ratio": ac.hand["R_ac_ratio"]}
    for r in ac_margins(case, fe3, h3):
        out.append(Row(f"margin:{r.key}", f"{r.label}, max", r.unit, r.hand, r.value, math.nan,
                       math.nan, None, r.verdict, limit_value=r.limit,
                       margin_pct=r.margin_pct, limit_kind=r.kind))
    return out


def motion_rows(case: Case, motion: Any) -> list[Row]:
    """A moving armature (compare.models.motion, compare.judge.motionrows):
    pull-in, drop-out, operate and release hand (planar form) against FE,
    each on its own maps; the uncertainty column the FE map's interpolation
    error carried to each figure (compare.models.motion.interpolation_uncertainty),
    judged as the three-mesh uncertainty is (_verdict: beyond the limit but
    within it "inconclusive"); the FE 3D's scaled by FE 3D / FE; a value one
    model lacks fails a judged row; then the motion's margins."""
    from .motionrows import motion_items, motion_margins

    out = []
    for key, label, unit, h, f, h3, f3, lim in motion_items(case, motion):
        d = _diff_pct(h, f)
        u = getattr(motion, "uncertainty", {}).get(key.split(":", 1)[1], math.nan)
        u3 = u * abs(f3 / f) if math.isfinite(f3) and f != 0 else math.nan
        both = math.isfinite(h) and math.isfinite(f)
        verdict = (_verdict(d, h, f, u, lim) if both
                   else ("FAIL" if lim is not None else "info"))
        out.append(Row(key, label, unit, h, f, u, d, lim, verdict, hand_3d=h3, fe_3d=f3,
                       fe_3d_uncertainty=u3))
    third = "fe_3d" if "fe_3d" in motion.models else "fe"
    for r in motion_margins(case, motion):
        # the judged value's band: the map's interpolation uncertainty, scaled
        # to the judged column as the rows' FE 3D; a margin met by less than
        # it is inconclusive, as the three-mesh band makes the other margins
        u = getattr(motion, "uncertainty", {}).get(r.key, math.nan)
        f, f3 = motion.value("fe", r.key), motion.value(third, r.key)
        band = u * abs(f3 / f) if math.isfinite(f3) and f else math.nan
        verdict = r.verdict
        if verdict == "pass" and abs(r.value - r.limit) <= band:  # False for a NaN band
            verdict = INCONCLUSIVE
        out.append(Row(f"margin:{r.key}", f"{r.label}, {r.kind}", r.unit, r.hand, r.value,
                       math.nan, math.nan, None, verdict, limit_value=r.limit,
                       margin_pct=r.margin_pct, limit_kind=r.kind, fe_3d_uncertainty=band))
    return out


def ac_notes(case: Case, ac: Any) -> tuple[str, ...]:
    """What the hand AC model cannot see, and how far the FE's loss lies above it;
    then the conducting parts' note."""
    return _ac_winding_notes(case, ac) + _part_notes(case, ac)


def _part_notes(case: Case, ac: Any) -> tuple[str, ...]:
    """One note on the conducting parts ([conducting_parts]), if any."""
    parts = getattr(ac, "part_loss_fe", None) if ac is not None else None
    if not parts:
        return ()
    i_ac = abs(ac.current_ac)
    each = ", ".join(f"{p} {1e3 * v:.4g} mW (adds {2.0 * v / i_ac ** 2:.4g} ohm to the "
                     "terminal resistance)" for p, v in parts.items())
    closed = [p for p, v in ac.part_loss_hand.items() if math.isfinite(v)]
    how = ("the hand estimate is the long rod's exact Bessel loss for the hand circuit's AC "
           "flux at the part's differential permeability (analytic.eddy), blind to a flux "
           "that is not uniform along the part" if closed else
           "no hand estimate in closed form for this family's parts (FE only)")
    return (f"Conducting parts, eddy loss at {ac.frequency / 1e3:.4g} kHz (FE): {each}; the "
            "winding's R_ac rows are its copper's own (2 P_copper / I^2); " + how + ".",)


def _ac_winding_notes(case: Case, ac: Any) -> tuple[str, ...]:
    if ac is None:
        return ()
    c = case.winding.conductor
    if c is None:
        return ()
    names = getattr(ac, "windings", ())
    if len(names) > 1:
        order = " / ".join(names)
        notes_multi = [
            f"AC windings: {order} (from the limb outward) at {ac.frequency / 1e3:.4g} kHz, each "
            "with its own peak current phasor; the hand R_ac is Dowell's 1D layer formula with "
            "the MMF pattern of the layers (each layer's factor from the MMFs on its faces, "
            "zero at the limb face), the hand L_ac the leakage inductance of the same 1D window "
            "field; R_dc, R_ac and R_ac/R_dc of the set are referred to the first winding (1/2 "
            "I_1^2 R_ac is the whole AC loss), the rows ', NAME' are each winding's own (2 P / "
            "I^2). The 1D model cannot see the coil side outside the window (no iron beyond "
            "it), the 2D ends of layers short of the window height, or a gap's fringing field."]
        return tuple(notes_multi) + tuple(_loss_excess_notes(case, ac))
    from ..design.coremodel import core_model as _core_model

    if _core_model(case).axisymmetric:
        notes = [f"AC winding: {c.layers} layers of {c.kind} at {ac.frequency / 1e3:.4g} kHz, "
                 f"skin depth {ac.skin_depth * 1e3:.3g} mm at {c.temperature:g} degC, h/delta "
                 f"{ac.delta_ratio:.3g} with porosity {ac.porosity:.3g}; the hand R_ac is "
                 "Dowell's 1D layer formula (zero MMF at the post's face), which cannot see "
                 "the post gap's fringing field crossing the winding or the 2D ends of layers "
                 "short of the window height; the axisymmetric FE solves every turn as a ring "
                 "about the DC operating point (small ripple, no hysteresis), the hand takes each "
                 "layer's turns at its mean radius."]
        return tuple(notes) + tuple(_loss_excess_notes(case, ac))
    notes = [f"AC winding: {c.layers} layers of {c.kind} at {ac.frequency / 1e3:.4g} kHz, skin "
             f"depth {ac.skin_depth * 1e3:.3g} mm at {c.temperature:g} degC, h/delta "
             f"{ac.delta_ratio:.3g} with porosity {ac.porosity:.3g}; the hand R_ac is Dowell's "
             "1D layer formula (zero MMF at the limb face), which cannot see the gap's fringing "
             "field crossing the winding, the 2D ends of layers short of the window height, or "
             "the coil side outside the window (no iron beyond it); the FE solves the turns one "
             "by one about the DC operating point (small ripple, no hysteresis). Hand and FE "
             "are per stack depth; the 3D columns add the end turns at the mean turn length "
             "with the same R_ac/R_dc."]
    return tuple(notes) + tuple(_loss_excess_notes(case, ac))


def _loss_excess_notes(case: Case, ac: Any) -> list[str]:
    """Where the FE's AC loss is well above Dowell's: how much and where."""
    notes = []
    dl = [f - h for h, f in zip(ac.hand_layers, ac.fe_layers)]
    if dl and ac.fe["R_ac"] > 1.15 * ac.hand["R_ac"]:
        j = max(range(len(dl)), key=dl.__getitem__)
        extra = 0.5 * ac.current_ac ** 2 * (ac.fe["R_ac"] - ac.hand["R_ac"])
        from ..design.coremodel import core_model as _core_model

        rz = _core_model(case).axisymmetric
        form = "" if rz else " (planar)"
        beside_gap = rz or (case.gaps and any(g.limb == case.winding.limb for g in case.gaps))
        notes.append(f"The FE's AC loss is {ac.fe['R_ac'] / ac.hand['R_ac']:.3g} x Dowell's: "
                     f"{extra:.3g} W{form} the hand model misses, most in layer {j + 1} "
                     f"({ac.fe_layers[j]:.3g} W against {ac.hand_layers[j]:.3g} W by hand)"
                     + (": the gap's fringing field crosses the winding beside it."
                        if beside_gap else "."))
    return notes


def depth_factor(case: Case) -> float:
    """Out-of-plane fringing factor of the first gap under the case's model (1 if none)."""
    from ..models.hand import hand_circuit

    from ..design.coremodel import core_model

    if core_model(case).axisymmetric:  # an r-z solution has the depth fringing in it
        return 1.0
    circuit = hand_circuit(case)
    if circuit is not None:  # the circuit's measured gap, under its own model
        gap = next((g for g in circuit.gaps if g.name == circuit.gap_B), None)
        if gap is None:
            return 1.0
        _, k_depth = get_fringing(gap.fringing or case.hand.fringing).factors(gap.face)
        return float(k_depth)
    if not case.gaps:
        return 1.0
    _, k_depth = get_fringing(case.hand.fringing).factors(gap_face(case, 0))
    return float(k_depth)


ZERO_AT_ZERO_CURRENT = ("gap_B", "core_B", "path_H", "flux", "flux_linkage", "energy")
"""Quantities that are exactly zero at zero winding current: no difference, verdict n/a.

The secant inductance there is its small-signal limit, the incremental
inductance at zero current, in both models."""


NET_MMF_KEYS = (*ZERO_AT_ZERO_CURRENT, "inductance")
"""The rows that follow the net MMF around the core: n/a when the windings'
fields cancel (:func:`cancelling_windings`)."""


def build_rows(case: Case, hand_p: HandResult, hand_3d: HandResult, fe: FEResult,
               depth: DepthCorrection | None = None) -> tuple[Row, ...]:
    """The comparison rows.  ``depth``: the FE 3D column's correction
    (:func:`depth_correction`; default: the case's own model's ratios, no
    spread).

    With a magnet the secant row (lambda/I, the magnet's own flux linkage
    counted in) is info: the incremental inductance is the coil's and is
    judged.  When the windings' fields cancel (:func:`cancelling_windings`)
    the rows of NET_MMF_KEYS and each winding's flux linkage are n/a, their
    hand values exactly 0 (no float residue) and no FE 3D value."""
    rows = []
    if depth is None:
        depth = DepthCorrection(case.hand.fringing, _all_ratios(hand_p, hand_3d), {})
    k3 = depth.factors
    from ..design.coremodel import core_model

    zero = (all(w.current == 0.0 for w in case.windings)
            and core_model(case).sourceless_at_zero_current)
    magnets = bool(core_model(case).magnets)
    cancel = bool(cancelling_windings(case, hand_p))
    for k in HAND_KEYS:
        h, f, u = hand_p.values()[k], fe.values[k], fe.uncertainty.get(k, math.nan)
        h3 = hand_3d.values()[k]
        f3 = f * depth.factor(k)
        u3 = depth.uncertainty(k, f, u)
        if cancel and k in NET_MMF_KEYS:
            h, h3, f3, u3 = 0.0, 0.0, math.nan, math.nan
        d = (math.nan if (zero and k in ZERO_AT_ZERO_CURRENT) or (cancel and k in NET_MMF_KEYS)
             else _diff_pct(h, f))
        lim = case.margins.agreement_limit(k, DEFAULT_LIMITS.get(k))
        if magnets and k == "inductance":  # lambda/I counts the magnet's own flux: info
            rows.append(Row(k, LABELS[k], UNITS[k], h, f, u, d, None, "info",
                            hand_3d=h3, fe_3d=f3, fe_3d_uncertainty=u3))
            continue
        rows.append(Row(k, LABELS[k], UNITS[k], h, f, u, d, lim, _verdict(d, h, f, u, lim),
                        hand_3d=h3, fe_3d=f3, fe_3d_uncertainty=u3))
    if len(case.windings) > 1:
        rows.extend(winding_rows(case, hand_p, hand_3d, fe, depth, cancel=cancel))
    rows.extend(force_rows(case, hand_p, hand_3d, fe, depth))
    rows.extend(magnet_rows(case, hand_p, hand_3d, fe))
    peak, limit = fe.fine.peak_B, case.margins.peak_B
    if limit is None:
        verdict, margin = "info", math.nan
    else:
        verdict, margin = ("pass" if peak <= limit else "FAIL"), 100.0 * (limit - peak) / limit
    rows.append(Row("peak_B", LABELS["peak_B"], "T", math.nan, peak,
                    fe.uncertainty.get("peak_B", math.nan), math.nan, None, verdict,
                    fe_3d=peak, limit_value=limit, margin_pct=margin))
    rows.extend(margin_rows(case, fe, hand_p, hand_3d, depth))
    return tuple(rows)


def winding_rows(case: Case, hand_p: HandResult, hand_3d: HandResult,
                 fe: FEResult, depth: DepthCorrection | None = None, *,
                 cancel: bool = False) -> list[Row]:
    """With several windings: each winding's flux linkage, the incremental
    inductance matrix (diagonal and the entries above it; it is symmetric)
    and each pair's coupling factor k = L_jk / sqrt(L_jj L_kk), hand
    (planar-consistent) against FE, with the FE uncertainty and the FE 3D
    column by the hand network's own 3D / planar ratio per entry (as
    :func:`depth_corrections`).  Agreement limits: those of flux linkage and
    incremental inductance.  ``cancel``: the windings' fields cancel
    (:func:`cancelling_windings`), the flux-linkage rows are n/a with hand 0."""
    lam_keys, l_keys = winding_keys(case)
    names = [w.name for w in case.windings]
    hp, h3, fv = hand_p.winding_values, hand_3d.winding_values, fe.fine.winding_values

    def row(key: str, label: str, unit: str, h: float, f: float, h3v: float, f3: float,
            u: float, limit_key: str) -> Row:
        d = _diff_pct(h, f)
        lim = case.margins.agreement_limit(limit_key, DEFAULT_LIMITS.get(limit_key))
        u3 = depth.uncertainty(key, f, u) if depth is not None else math.nan
        return Row(key, label, unit, h, f, u, d, lim, _verdict(d, h, f, u, lim),
                   hand_3d=h3v, fe_3d=f3, fe_3d_uncertainty=u3)

    def ratio(k: str) -> float:
        if depth is not None and k in depth.factors:
            return depth.factors[k]
        return h3[k] / hp[k] if hp[k] != 0 and math.isfinite(hp[k]) else math.nan

    out = []
    for j, lk in enumerate(lam_keys):
        if cancel:  # nothing to compare: the hand linkage is float residue of 0
            out.append(Row(lk, f"flux linkage, {names[j]}", "Wb", 0.0, fv[lk],
                           fe.uncertainty.get(lk, math.nan), math.nan,
                           case.margins.agreement_limit("flux_linkage",
                                                        DEFAULT_LIMITS["flux_linkage"]),
                           "n/a", hand_3d=0.0, fe_3d=math.nan))
            continue
        out.append(row(lk, f"flux linkage, {names[j]}", "Wb", hp[lk], fv[lk], h3[lk],
                       fv[lk] * ratio(lk), fe.uncertainty.get(lk, math.nan), "flux_linkage"))
    n = len(names)
    for j in range(n):
        for k in range(j, n):
            key = l_keys[j][k]
            what = "self" if j == k else "mutual"
            out.append(row(key, f"inductance {names[j]},{names[k]} ({what}, incremental)", "H",
                           hp[key], fv[key], h3[key], fv[key] * ratio(key),
                           fe.uncertainty.get(key, math.nan), "incremental_inductance"))

    from ..models.coupling import coupling_factor

    def coupling(v: dict[str, float], j: int, k: int) -> float:
        return coupling_factor(v[l_keys[j][k]], v[l_keys[j][j]], v[l_keys[k][k]])

    # The coupling factor is shown, not judged.  Near 1 a percent difference
    # of k says nothing about leakage (hand 1 against FE 0.9984 is +0.2 %;
    # any k from 0.8 to 1 kept a 20 % limit), and 1 - k, the leakage share,
    # is zero in a network without a leakage path between the windings, so
    # its difference would be -100 % whatever the design: a verdict that
    # cannot pass.  What k is made of is judged instead: the self and mutual
    # inductance rows above and, for a concentric pair, the leakage-
    # inductance row (README, "Several windings").
    for j in range(n):
        for k in range(j + 1, n):
            fk = coupling(fv, j, k)
            hk = coupling(hp, j, k)
            f3 = {kk: fv[kk] * ratio(kk) for kk in (l_keys[j][j], l_keys[k][k], l_keys[j][k])}
            d = _diff_pct(hk, fk)
            out.append(Row(f"coupling:{names[j]},{names[k]}",
                           f"coupling factor {names[j]},{names[k]}", "", hk, fk, math.nan, d,
                           None, _verdict(d, hk, fk, math.nan, None),
                           hand_3d=coupling(h3, j, k), fe_3d=coupling(f3, j, k)))
    return out


def margin_rows(case: Case, fe: FEResult, hand_p: HandResult | None = None,
                hand_3d: HandResult | None = None,
                depth: DepthCorrection | None = None) -> list[Row]:
    """Rows for the design margins other than peak B (see compare.judge.margins).

    Inductance at a stated current and the minimum force are judged on the
    FE value with the depth correction (the "FE 3D" column: the force with
    ``depth``'s model, the inductance with the model ranked against the FE
    at that current, :func:`choose_depth_model`), the inductance solved on the FE result's mesh at that current;
    saturation current on the 3D hand model's L(I) (a field solution needs
    a sweep: ``magcheck sweep`` or a declared ``[sweep]`` under ``magcheck
    verify``).

    Such a value carries the FE 3D column's uncertainty
    (``fe_3d_uncertainty``: the FE's own, relative as at the case's current,
    plus the depth models' spread of the correction at that current); a
    margin met by less than that band is "inconclusive", not a pass (a
    missed one stays FAIL).
    """
    from ..models.fe import solve_case
    from ..design.case import with_current
    from .margins import design_margins, inductance_of

    m = case.margins
    from ..design.coremodel import core_model

    if (m.current_density is None and not m.inductance and not m.saturation
            and m.force_min is None and not m.force and not core_model(case).magnet_knees):
        return []
    cache: dict[float, dict] = {case.winding.current: fe.values}
    model = depth.model if depth is not None else None
    bands: dict[str, float] = {}

    def fe_at(current: float, kind: str) -> float:
        at = with_current(case, current)
        if current not in cache:
            q, _, _ = solve_case(at, fe.solution.mesh)
            cache[current] = q.values
        key = "inductance" if kind == "secant" else "incremental_inductance"
        f = inductance_of(cache[current], kind)
        if depth is None:
            return f * choose_depth_model(at, cache[current]).factor(key)
        # the depth model ranked against the FE at this current (the rule of
        # the sweep and the tolerance study: choose_depth_model)
        ranked = ({"model": choose_depth_model(at, cache[current]).model},) if model else ()
        d_at = depth_correction(at, ranked)
        rel = fe.uncertainty.get(key, math.nan) / abs(fe.values[key]) if fe.values[key] else 0.0
        bands[f"inductance_{kind}@{current:g}A"] = d_at.uncertainty(key, f, rel * f)
        return f * d_at.factor(key)

    out = []
    fe_force = fe.fine.force_values.get("force", math.nan)
    h3 = math.nan
    if math.isfinite(fe_force):  # with the depth correction, as the inductance above
        hand_p = hand_p or run_hand(case, planar=True)
        hand_3d = hand_3d or run_hand(case)
        hp = hand_p.force_values.get("force", math.nan)
        h3 = hand_3d.force_values.get("force", math.nan)
        if depth is None:
            fe_force *= h3 / hp if hp and math.isfinite(h3) else 1.0
        else:
            bands["force"] = depth.uncertainty("force", fe_force,
                                               fe.uncertainty.get("force", math.nan))
            fe_force *= depth.factor("force")
    for r in design_margins(case, fe_at=fe_at, fe_force=fe_force, hand_force=h3,
                            fe_magnet_H_min=fe.fine.magnet_values.get("magnet_H_min", math.nan)):
        if r.key == "peak_B":
            continue
        fe_value = math.nan if r.basis == "hand" else r.value  # judged on the hand model
        band = math.nan
        if r.basis == "FE":
            band = bands.get("force" if r.key.startswith("force") else r.key.split(":")[0],
                             math.nan)
        verdict = r.verdict
        if verdict == "pass" and math.isfinite(band) and abs(r.value - r.limit) <= band:
            verdict = "inconclusive"  # met by less than the FE 3D column's uncertainty
        out.append(Row(f"margin:{r.key}", r.label + (" (hand)" if r.basis == "hand" else ""),
                       r.unit, r.hand, fe_value, math.nan, math.nan, None, verdict,
                       limit_value=r.limit, margin_pct=r.margin_pct, limit_kind=r.kind,
                       fe_3d_uncertainty=band))
    return out


def explain(case: Case, rows: tuple[Row, ...], hand_p: HandResult, fe: FEResult,
            depth: DepthCorrection | None = None) -> tuple[str, ...]:
    """Short notes, in the trade's words, on where the differences come from."""
    r = {row.key: row for row in rows}
    from ..design.coremodel import core_model

    rz = core_model(case).axisymmetric
    if rz:
        notes = ["The FE is an axisymmetric (r-z) field solution, a full 3D one for a part "
                 "round about its axis: the hand column is the whole magnetic circuit, its gap "
                 "fringing included, and the '3D' columns would repeat the others (the "
                 "table and the report leave them out; --wide and the JSON keep them)."]
    else:
        notes = ["Like for like: the hand column is the magnetic circuit with in-plane fringing "
                 "only, the FE column the planar field solution for the stack depth; the "
                 f"hand 3D column adds the depth-direction fringing of the "
                 f"'{hand_p.fringing_model}' model. A planar model sees no end-turn leakage."]
        if depth is not None and depth.model is not None:
            sl = depth.spread.get("inductance", 0.0) / depth.factor("inductance")
            notes.append(f"FE 3D column: the planar FE times the '{depth.model}' model's hand "
                         "3D / planar ratio (the depth model ranked best against the planar "
                         "FE); its uncertainty adds the spread of that ratio over the fringing "
                         f"models ({100 * sl:.1f} % on the inductance), and a margin met by "
                         "less is inconclusive.")
    for w in plausibility_issues(case):
        notes.append(f"Check the input: {w}.")
    if all(w.current == 0.0 for w in case.windings) and not core_model(case).magnets:
        notes.append("At zero current the flux, flux linkage, gap B, core B, path-averaged H and "
                     "stored energy are zero in both models: no difference, verdict n/a. The "
                     "secant inductance is given as its small-signal limit, the incremental "
                     "inductance at zero current, in both models.")
    model = core_model(case)
    cancel = cancelling_windings(case, hand_p)
    if cancel:
        mmf = ", ".join(f"{w.name} {abs(w.turns * w.current):.4g} A-turns" for w in case.windings
                        if w.name in cancel)
        notes.append(f"The windings' fields cancel ({mmf}, in opposite senses): the net MMF "
                     "round the core is 0, so neither model has a core flux to compare (the "
                     "FE's is the leakage round the coils); flux, gap B, core B, path H, flux "
                     "linkage, lambda/I and energy are n/a, the incremental inductances compare.")
    if model.magnets:
        notes.append(_magnet_note(case, r["inductance"]))
    fl = r["flux"]
    if math.isfinite(fl.diff_pct) and fl.diff_pct < -3:
        bypass = ("bypasses the gap" if model.gap_regions
                  else "does not follow the core's mean path")
        from ..models.hand import hand_circuit

        circuit = hand_circuit(case)
        has_leak = bool(hand_p.leakage_permeance) or bool(circuit is not None
                                                           and circuit.leakage)
        what = ("more leakage than the hand model's leakage paths carry" if has_leak
                else "and the hand model has no leakage path")
        notes.append(f"The FE carries {-fl.diff_pct:.0f} % more flux in the winding limb than the "
                     "hand model: leakage flux (across the window, round the coil) links the "
                     f"winding but {bypass}, {what}.")
    elif math.isfinite(fl.diff_pct) and fl.diff_pct > 3:
        notes.append(f"The hand model carries {fl.diff_pct:.0f} % more flux in the winding limb "
                     "than the FE: its gap permeance (the fringing model) or its core "
                     "permeance is larger than the field solution's.")
    g = r["gap_B"]
    if math.isfinite(g.diff_pct) and abs(g.diff_pct) > 3:
        side = "over" if g.diff_pct > 0 else "under"
        if hand_p.fringing_model == "none":
            notes.append(f"The ideal gap (no fringing) {side}states the gap B by "
                         f"{abs(g.diff_pct):.0f} %: the field spreads beyond the pole faces, "
                         "which the hand model's bare face area leaves out.")
        else:
            notes.append(f"The fringing model {side}states the gap B by {abs(g.diff_pct):.0f} %: "
                         "the field spreads beyond the pole faces differently from the model's "
                         "assumed fringing area.")
    ph = r["path_H"]
    if math.isfinite(ph.diff_pct) and ph.diff_pct < -5:
        notes.append(f"Path-averaged H is {-ph.diff_pct:.0f} % higher in the FE than by hand: H is "
                     "not uniform along the mean path; the flux crowds to the inner corners of "
                     "the core, where H rises far above the limb average.")
    elif math.isfinite(ph.diff_pct) and ph.diff_pct > 5:
        cb = r["core_B"].diff_pct
        why = ("the hand model carries each branch's flux at a uniform B over its section "
               f"(core B {cb:+.0f} %), where the field solution's flux spreads (round corners, "
               "into wider parts) at a lower B along the mean path."
               if math.isfinite(cb) and cb > 0 else
               "the hand model's iron takes more MMF than the field solution's along the "
               "mean path.")
        notes.append(f"Path-averaged H is {ph.diff_pct:.0f} % higher by hand than in the FE: "
                     + why)
    law = case.material("core").law
    peak = fe.fine.peak_B
    knee = _knee(law)
    x, y = fe.fine.peak_B_at
    if math.isfinite(knee) and peak > knee:
        notes.append(f"Part of the core is past the knee of the B-H curve (~{knee:.2f} T): 0.5 % of "
                     f"the core area is above {peak:.2f} T, so the hand model's uniform-B "
                     "assumption does not hold there" + _inductance_direction(r["inductance"]))
    if math.isfinite(fe.fine.max_B) and fe.fine.max_B > max(peak, 0.0) > 0.0:
        notes.append(f"Peak core B is the |B| exceeded on 0.5 % of the core area. The pointwise "
                     f"maximum, {fe.fine.max_B:.2f} T at {'r' if rz else 'x'} = {x * 1e3:.1f} mm, "
                     f"{'z' if rz else 'y'} = {y * 1e3:.1f} mm, "
                     "sits at a sharp corner where a 2D model's field is singular; it grows as "
                     "the mesh is refined and is not a design figure.")
    if any(k.startswith("margin:") for k in r):
        notes.append("Margin rows (', max', ', min') show the values they are judged on: the "
                     "FE's" + ("" if rz else " 3D (depth-corrected)") + " value, which sets the "
                     "verdict unless the label says (hand), and the hand model's"
                     + ("" if rz else " 3D") + " value beside it for comparison.")
    ls = r.get("leakage_inductance")
    wn = [w.name for w in case.windings]
    kr = r.get(f"coupling:{wn[0]},{wn[1]}") if len(wn) > 1 else None
    l11 = r.get(f"L:{wn[0]},{wn[0]}")
    if ls is not None and kr is not None and l11 is not None:
        def k_of(leak: float, self_l: float) -> float:
            x = 1.0 - leak / self_l if self_l else math.nan
            return math.sqrt(x) if x >= 0 else math.nan

        # the hand network couples perfectly unless its circuit has leakage paths
        hand_k = ("no leakage path: k = 1" if abs(abs(kr.hand) - 1.0) < 1e-9
                  else f"k = {kr.hand:.5f} with its leakage paths")
        notes.append(f"The coupling factor rows are the magnetic circuit's ({hand_k}) "
                     f"and the field solution's {'' if rz else 'in-plane '}inductance "
                     "matrix" + ("" if rz else " (per stack depth: no end turns)") + "; the "
                     "leakage-inductance row has the classic formula and the FE's balanced "
                     "ampere-turns" + ("" if rz else " along the mean turn") + "; the coupling "
                     "factor is shown, not judged (near 1 its percent difference hides the "
                     "leakage): the inductance rows and the leakage-inductance row judge it. The "
                     "coupling that leakage implies, k = sqrt(1 - L_s/L_11): "
                     f"{k_of(ls.hand, l11.hand_3d):.5f} by hand, "
                     f"{k_of(ls.fe, l11.fe_3d):.5f} FE, a lower bound on |k| (L_s at the "
                     "turns ratio N1/N2 is L_11 - 2(N1/N2)M + (N1/N2)^2 L_22, least, "
                     "L_11(1 - k^2), when N1/N2 = M/L_22; equal only then).")
        if not rz:
            notes.append("The FE leakage inductance takes its planar energy per depth along the "
                         "hand formula's own mean turn, so the end turns (outside the window) "
                         "are tested by neither column: both assume the window's leakage field "
                         "all round the turn.")
    inr = r.get("inrush_current_peak")
    if inr is not None and math.isfinite(inr.diff_pct) and inr.diff_pct > 20:
        notes.append(f"The hand inrush peak is {inr.diff_pct:.0f} % above the FE's: deep in "
                     "saturation the winding's flux runs through air beside the core (the "
                     "window, the coil's own space), which the hand network has no path for, so "
                     "its current must rise further to reach the same flux linkage. The FE "
                     "figure is the better estimate; both assume the worst switching instant "
                     "and no hysteresis" + ("." if any(w.resistance for w in case.windings)
                                            else ", and without the winding's resistance "
                                            "they are undamped, an upper bound (give "
                                            "resistance to damp them)."))
    notes.extend(verdict_notes(rows))
    unc = [row for row in rows if row.key != "peak_B" and row.uncertainty_pct > UNCERTAIN_PCT]
    if unc:
        labels = ", ".join(row.label for row in unc)
        notes.append(f"FE uncertainty above {UNCERTAIN_PCT:g} % for {labels}: refine the mesh "
                     "([fe] mesh_size smaller, gap_elements larger).")
    return tuple(notes)


def verdict_notes(rows: tuple[Row, ...]) -> list[str]:
    """The note on inconclusive rows: beyond the limit, within the FE noise."""
    inc = [row.label for row in rows if row.verdict == INCONCLUSIVE]
    if not inc:
        return []
    return [f"Inconclusive: {', '.join(inc)}: the difference exceeds the agreement limit but "
            "lies within the FE uncertainty, so the mesh cannot tell pass from FAIL; refine "
            "the mesh ([fe] mesh_size smaller, gap_elements larger). Counted neither as pass "
            "nor as FAIL."]


def _magnet_note(case: Case, secant: Row) -> str:
    """The note of a case with a magnet: the sign convention (which current
    sign releases it) and why the secant row is info."""
    from ..models.hand import magnet_sense

    s_m = magnet_sense(case)
    i = case.winding.current
    if s_m:
        release = "negative" if s_m > 0 else "positive"
        signs = ("Signs with a magnet: flux, gap B and flux linkage are positive along the "
                 f"magnet's own direction; a {release} winding current opposes the magnet (releases "
                 "it)")
        if i != 0:
            signs += (", as here" if (i > 0) == (s_m < 0) else "; this one aids it")
    else:
        signs = ("Signs: the magnet links no flux with the first winding, so flux, gap B and "
                 "flux linkage take the sign of the winding current")
    if i == 0:
        return (signs + ". At zero current lambda/I has no value (the magnet's flux linkage over "
                "0 A): the secant row repeats the incremental inductance, for information only.")
    return (signs + f". lambda/I ({format_si(secant.hand, 'H')} by hand) counts the magnet's own flux "
            "linkage, so it is no inductance of the coil and moves with the current: the "
            "secant row is for information; the incremental inductance dlambda/dI is the "
            "coil's and is judged.")


def _inductance_direction(row: Row) -> str:
    """The end of the saturation note: which way the hand inductance is off.

    Optimistic (hand above the FE) and pessimistic (below) follow the sign
    of the difference, never the mere presence of saturation.
    """
    d = row.diff_pct
    if not math.isfinite(d) or abs(d) < 0.5:
        return "; the hand inductance still agrees with the FE within 0.5 %."
    if d > 0:
        return (f"; the hand inductance is {d:.1f} % above the FE: optimistic, the local "
                "saturation lowers the field model's inductance.")
    return (f"; the hand inductance is {-d:.1f} % below the FE: pessimistic here, what the hand "
            "model leaves out (leakage, fringing) outweighs the local saturation it misses.")


def _knee(law: Any) -> float:
    """B where the differential permeability has fallen to 1/10 of its maximum."""
    import numpy as np

    b_max = getattr(law, "b_max", math.inf)
    if not math.isfinite(b_max):
        return math.inf
    b = np.linspace(0.01, 1.5 * b_max, 600)
    dbdh = 1.0 / np.asarray(law.dh_db(b))
    i = int(np.argmax(dbdh))
    below = np.nonzero(dbdh[i:] < 0.1 * dbdh[i])[0]
    return float(b[i + below[0]]) if below.size else math.inf


def rank_fringing(case: Case, fe: FEResult) -> tuple[dict, ...]:
    """Every fringing model's planar hand values against the FE, best first.

    Ranked by the RMS of the percent differences of gap B, flux and
    inductance (the figures a fringing model is meant to get right).
    """
    out: list[dict[str, Any]] = []
    for name in FRINGING_MODELS:
        h = run_hand(case, fringing=name, planar=True)
        rms, diffs = _rank_rms(h.values(), fe.values)
        out.append({"model": name, "title": get_fringing(name).title, "rms_difference_pct": rms,
                    **{f"{k}_difference_pct": v for k, v in diffs.items()}})
    return tuple(_rank_order(out))


def run_check(case: Case, *, all_fringing: bool = False, estimate_error: bool = True) -> CheckResult:
    """Run both models on a case and compare them.

    Raises
    ------
    compare.errors.RunError
        When either nonlinear solve does not converge.
    """
    t0 = time.perf_counter()
    hand_3d = run_hand(case)
    hand_p = run_hand(case, planar=True)
    t1 = time.perf_counter()
    fe = run_fe_checked(case, estimate_error=estimate_error)
    t2 = time.perf_counter()
    k_depth = depth_factor(case)
    full_ranking = rank_fringing(case, fe)
    depth = depth_correction(case, full_ranking)
    rows = build_rows(case, hand_p, hand_3d, fe, depth)
    drive = None
    if case.winding.driven:
        from ..models.drive import run_drive

        drive = run_drive(case, fe)
        rows = rows + tuple(drive_rows(case, drive, depth))
    leakage = leakage_values(case, fe)
    if leakage:
        rows = rows + (leakage_row(case, leakage),)
    ac = None
    from ..models.ac import has_ac

    if has_ac(case):
        from ..models.ac import run_ac

        ac = run_ac(case, fe, hand_p, hand_3d)
        rows = rows + tuple(ac_rows(case, ac))
    notes = explain(case, rows, hand_p, fe, depth) + ac_notes(case, ac)
    motion = None
    if case.motion is not None:  # a moving armature: compare.models.motion
        from ..design.coremodel import core_model
        from ..models.motion import run_motion
        from .motionrows import motion_notes

        motion = run_motion(case, core_model(case).axisymmetric)
        rows = rows + tuple(motion_rows(case, motion))
        notes = notes + motion_notes(case, motion)
    loss = None
    from ..models.loss import has_loss

    if has_loss(case):  # the loss budget (compare.models.loss, compare.judge.lossbudget)
        from ..models.loss import run_budget
        from .lossbudget import budget_notes, budget_rows

        loss = run_budget(case, fe, ac, leakage)
        for spec in budget_rows(case, loss):  # Row fields; the agreement verdicts made here
            if "verdict" not in spec:
                spec["diff_pct"] = _diff_pct(spec["hand"], spec["fe"])
                spec["verdict"] = _verdict(spec["diff_pct"], spec["hand"], spec["fe"],
                                           spec["uncertainty"], spec["limit_pct"])
            rows = rows + (Row(**spec),)
        notes = notes + budget_notes(case, loss)
    measured: tuple = ()
    if case.measured:
        from .measurement import measured_note, measured_rows

        measured, left = measured_rows(case, rows)
        notes = notes + (measured_note(measured, left),)
    ranking = full_ranking if all_fringing else ()
    from .breakdown import difference_breakdown

    breakdown = difference_breakdown(case, fe.values, full_ranking[0]["model"] if full_ranking
                                     else None,
                                     NET_MMF_KEYS if cancelling_windings(case, hand_p) else ())
    t3 = time.perf_counter()
    return CheckResult(case=case, hand_3d=hand_3d, hand_planar=hand_p, fe=fe, rows=rows,
                       depth_factor=k_depth, notes=notes,
                       timings={"hand": t1 - t0, "fe": t2 - t1, "compare": t3 - t2,
                                "total": t3 - t0,
                                **({"motion": motion.seconds} if motion is not None else {})},
                       fringing_ranking=ranking, breakdown=breakdown, drive=drive,
                       leakage=leakage, depth=depth, ac=ac, measured=measured, motion=motion, loss=loss)


def dataframe(records: list[dict], index: str | None = None) -> Any:
    """``records`` as a pandas DataFrame (indexed by the column ``index``)
    for the results' ``to_dataframe``.

    Raises
    ------
    ImportError
        When pandas is not installed (it is not a dependency of magcheck).
    """
    try:
        import pandas as pd
    except ImportError:
        raise ImportError("to_dataframe needs pandas, which magcheck does not install: "
                          "pip install pandas (or use magcheck.to_json(result))") from None
    frame = pd.DataFrame(records)
    return frame.set_index(index) if index is not None else frame
