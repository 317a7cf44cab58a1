"""Design margins of a case: values against the limits of its ``[margins]`` section.

A margin compares one design figure with a limit the engineer states in the
case file and says how much room is left, in percent of the limit:

- a maximum (peak core B, current density, inductance at most):
  margin = (limit - value) / limit;
- a minimum (inductance at least, saturation current at least):
  margin = (value - limit) / limit.

A negative margin is a failed margin. The figures themselves:

- current density J = N |I| / (k_cu * S) in the conductor (A/m^2), with
  S the coil side's cross-section (coil build x coil length beside a limb,
  the drawn region's area for a drawn coil) and
  k_cu the copper fill of the case's ``margins.copper_fill`` (default 1: J over
  the whole coil cross-section). Definition, no source needed.
- saturation current at a drop d: the current at which the inductance has
  fallen to (1 - d) times its low-current value (the way makers quote it;
  common practice, no source, docs/references.md section 6). The low-current value
  is the inductance at I = 0 (the initial inductance) when available.
"""

from __future__ import annotations

import logging
import math
from dataclasses import dataclass
from typing import Any, Callable, Sequence

import numpy as np

from ..design.case import DEFAULT_DROPS, Case, with_current
from ..models.hand import HandResult, run_hand

__all__ = ["MarginResult", "current_density", "inductance_of", "ac_margins",
           "saturation_from_curve", "hand_saturation_current", "DEFAULT_DROPS",
           "curve_saturation", "curve_margins", "stroke_margins", "sweep_demagnetisation"]

log = logging.getLogger(__name__)

"""Inductance drops at which the saturation current is reported (fractions)."""


@dataclass(frozen=True)
class MarginResult:
    """One design margin evaluated.

    Attributes
    ----------
    key : str
        Stable identifier, e.g. ``"saturation_current@20%"``.
    label, unit : str
        Human label and SI unit of value and limit.
    kind : str
        ``"max"`` (value must not exceed the limit) or ``"min"``.
    limit, value : float
        SI; value is NaN when it could not be evaluated (then verdict "n/a").
    hand : float
        The hand calculation's value of the same figure (NaN if none).
    basis : str
        What the value comes from: ``"FE"``, ``"hand"`` or ``"case"``.
    note : str
        Why the value is what it is (e.g. "not reached in the swept range").
    """

    key: str
    label: str
    unit: str
    kind: str
    limit: float
    value: float
    hand: float = math.nan
    basis: str = "FE"
    note: str = ""

    @property
    def margin_pct(self) -> float:
        """Margin left, percent of the limit (negative: failed)."""
        if math.isnan(self.value) or self.limit == 0:
            return math.nan
        if self.kind == "max":
            return 100.0 * (self.limit - self.value) / abs(self.limit)
        return 100.0 * (self.value - self.limit) / abs(self.limit)

    @property
    def passed(self) -> bool | None:
        """True/False, or None when the value is unknown (NaN)."""
        if math.isnan(self.value):
            return None
        return self.value <= self.limit if self.kind == "max" else self.value >= self.limit

    @property
    def verdict(self) -> str:
        p = self.passed
        return "n/a" if p is None else ("pass" if p else "FAIL")

    def to_dict(self) -> dict:
        return {"key": self.key, "label": self.label, "unit": self.unit, "kind": self.kind,
                "limit": self.limit, "value": self.value, "hand": self.hand,
                "basis": self.basis, "margin_pct": self.margin_pct, "verdict": self.verdict,
                "note": self.note}


# --------------------------------------------------------------------------- figures
def current_density(case: Case) -> float:
    """Winding current density J = N |I| / (k_cu S) (A/m^2), the largest
    over the windings (every winding must meet the limit).

    S = the cross-section of one coil side (m^2; build x length for a coil
    on a limb, the drawn region's area for a drawn coil,
    compare.design.coremodel.CoilModel.area), k_cu = ``case.margins.copper_fill``.
    """
    from ..design.coremodel import core_model

    coils = core_model(case).coils
    return max(abs(w.turns * w.current) / (case.margins.copper_fill * c.area)
               for w, c in zip(case.windings, coils))


def inductance_of(values: dict[str, float], kind: str) -> float:
    """The secant (``"secant"``) or incremental (``"incremental"``) inductance (H)."""
    return values["inductance" if kind == "secant" else "incremental_inductance"]


def saturation_from_curve(current: Sequence[float], inductance: Sequence[float],
                          drops: Sequence[float] = DEFAULT_DROPS) -> dict[float, float]:
    """Saturation currents read off a sampled L(I) curve.

    Parameters
    ----------
    current, inductance : sequences of float, shape (n,)
        Sampled curve (A, H), any order; |I| is used.
    drops : fractions d in (0, 1)

    Returns
    -------
    dict drop -> current (A)
        The first |I| at which L falls below (1 - d) L0, with L0 the value at
        the smallest |I|, by linear interpolation between the two samples that
        bracket the crossing; NaN when the curve never falls that far.
    """
    i = np.abs(np.asarray(current, dtype=float))
    lv = np.asarray(inductance, dtype=float)
    ok = np.isfinite(lv)
    i, lv = i[ok], lv[ok]
    order = np.argsort(i, kind="stable")
    i, lv = i[order], lv[order]
    out: dict[float, float] = {}
    if i.size < 2:
        return {d: math.nan for d in drops}
    l0 = lv[0]
    for d in drops:
        target = (1.0 - d) * l0
        below = np.nonzero(lv < target)[0]
        if below.size == 0 or below[0] == 0:
            out[d] = math.nan
            continue
        k = int(below[0])
        # Linear interpolation between samples k-1 (above) and k (below).
        f = (lv[k - 1] - target) / (lv[k - 1] - lv[k])
        out[d] = float(i[k - 1] + f * (i[k] - i[k - 1]))
    return out


def hand_saturation_current(case: Case, drop: float, *, kind: str = "incremental",
                            planar: bool = False, rtol: float = 1e-6,
                            hand: Callable[[Case], HandResult] | None = None) -> float:
    """Saturation current of the hand model by root-finding on its L(I).

    Solves L(I) = (1 - drop) L(0) for I > 0 with Brent's method, the bracket
    grown by doubling from the case's current. L(0) is the initial inductance
    of the magnetic circuit (its incremental value at zero current).

    Returns
    -------
    float
        Current (A), NaN when L never falls that far below 2^30 times the
        case's current (a core that does not saturate, e.g. a linear one).
    """
    from scipy.optimize import brentq  # here: scipy.optimize is slow to import

    run = hand or (lambda c: run_hand(c, planar=planar))

    def L(current: float) -> float:
        return inductance_of(run(with_current(case, current)).values(), kind)

    l0 = run(with_current(case, 0.0)).incremental_inductance
    target = (1.0 - drop) * l0

    def f(current: float) -> float:
        return L(current) - target

    lo = 0.0
    hi = max(abs(case.winding.current), 1e-3)
    for _ in range(30):
        if f(hi) < 0:
            break
        lo, hi = hi, 2.0 * hi
    else:
        return math.nan
    # Brent's method on the bracket [lo, hi] where f changes sign.
    return float(brentq(f, lo, hi, rtol=rtol, xtol=1e-9 * hi))


# --------------------------------------------------------------------------- evaluation
def _label_current(i: float) -> str:
    return f"{i:g} A"


def design_margins(case: Case, *, fe_peak_B: float = math.nan, hand_peak_B: float = math.nan,
                   fe_force: float = math.nan, fe_magnet_H_min: float = math.nan,
                   hand_force: float = math.nan,
                   fe_at: Callable[[float, str], float] | None = None,
                   hand_at: Callable[[float, str], float] | None = None,
                   saturation: Callable[[float, str], tuple[float, float, str, str]] | None = None,
                   nominal_stroke: float = math.nan,
                   ) -> list[MarginResult]:
    """Every margin of ``case.margins`` evaluated.

    Parameters
    ----------
    fe_peak_B, hand_peak_B : peak core B (T) at the case's current.
    fe_force : the FE force on the moving part (N, closing), for ``force_min``
        (without it the hand network's virtual work is judged).
    fe_magnet_H_min : the FE's demagnetising extreme of the first magnet (A/m),
        judged against its grade's knee field.
    hand_force : the 3D hand force (N) when already solved (default: solved here).
    fe_at : callable (current A, kind) -> FE inductance (H), optional
        The field model's inductance at a stated current (NaN if unknown).
    hand_at : callable (current A, kind) -> hand inductance (H), optional
        Default: the 3D hand calculation at that current.
    saturation : callable (drop, kind) -> (value A, hand value A, basis, note), optional
        Default: the 3D hand model's root-find (:func:`hand_saturation_current`),
        basis "hand".
    nominal_stroke : the stroke (m) the case's force limits call "the case's
        own" (default: this case's).  A tolerance sample whose stroke varies
        passes its nominal case's, so that a limit stated at the nominal stroke
        is judged at the sample's own stroke instead of left unjudged.
    """
    m = case.margins
    out: list[MarginResult] = []
    if m.peak_B is not None:
        out.append(MarginResult("peak_B", "peak core B", "T", "max", m.peak_B, fe_peak_B,
                                hand=hand_peak_B, basis="FE"))
    if m.force_min is not None:
        hand_f = (hand_force if math.isfinite(hand_force)
                  else run_hand(case).force_values.get("force", math.nan))
        value, basis = (fe_force, "FE") if math.isfinite(fe_force) else (hand_f, "hand")
        out.append(MarginResult("force_min", "force on the moving part, min", "N", "min",
                                m.force_min, value, hand=hand_f, basis=basis,
                                note="" if math.isfinite(value) else "the case has no moving part"))
    from ..design.coremodel import core_model

    model = core_model(case)
    for flim in m.force:
        own = nominal_stroke if math.isfinite(nominal_stroke) else (
            model.force.stroke if model.force is not None else math.nan)
        at_case = model.force is not None and math.isclose(flim.stroke, own, rel_tol=1e-9)
        if at_case:
            hand_f = (hand_force if math.isfinite(hand_force)
                      else run_hand(case).force_values.get("force", math.nan))
            value, basis = (fe_force, "FE") if math.isfinite(fe_force) else (hand_f, "hand")
            note = ""
        else:
            value = hand_f = math.nan
            basis = "FE"
            note = (f"at another stroke than the case's: judged along a sweep of "
                    f"{model.force.stroke_key if model.force else 'the stroke'}")
        out.extend(_force_limit_results(flim, value, hand_f, basis, note, ""))
    knees = dict(model.magnet_knees)
    if model.magnets and model.magnets[0].region in knees:
        knee = knees[model.magnets[0].region]
        # on magnitudes: the demagnetising field |H| must stay below |H_k|
        out.append(MarginResult(
            "demagnetisation", f"demagnetising field in {_magnet_label(model.magnets[0].region)} "
                               "(0.5 % area), max", "A/m", "max", -knee, -fe_magnet_H_min,
            hand=math.nan, basis="FE",
            note="" if math.isfinite(fe_magnet_H_min) else "needs the field solution"))
    if m.current_density is not None:
        j = current_density(case)
        where = "conductor" if m.copper_fill < 1 else "coil cross-section"
        out.append(MarginResult("current_density", f"current density ({where})", "A/m^2",
                                "max", m.current_density, j, hand=j, basis="case"))

    def hand_default(current: float, kind: str) -> float:
        return inductance_of(run_hand(with_current(case, current)).values(), kind)

    hand_at = hand_at or hand_default
    for lim in m.inductance:
        h = hand_at(lim.at, lim.kind)
        f = fe_at(lim.at, lim.kind) if fe_at else math.nan
        value, basis = (f, "FE") if math.isfinite(f) else (h, "hand")
        label = f"inductance ({lim.kind}) at {_label_current(lim.at)}"
        for kind, limit in (("min", lim.min), ("max", lim.max)):
            if limit is not None:
                out.append(MarginResult(f"inductance_{lim.kind}@{lim.at:g}A:{kind}",
                                        f"{label}, {kind}", "H", kind, limit, value, hand=h,
                                        basis=basis))
    for sat in m.saturation:
        if saturation is not None:
            value, h, basis, note = saturation(sat.drop, sat.kind)
        else:
            value = h = hand_saturation_current(case, sat.drop, kind=sat.kind)
            basis, note = "hand", ""
            if not math.isfinite(value):
                value = h = math.inf
                note = "the hand model's inductance never falls that far"
        out.append(MarginResult(f"saturation_current@{100 * sat.drop:g}%",
                                f"saturation current ({sat.kind} L -{100 * sat.drop:g} %)",
                                "A", "min", sat.min, value, hand=h, basis=basis, note=note))
    return out


def _magnet_label(region: str) -> str:
    return "the magnet" if region == "magnet" else f"magnet {region}"


def _force_limit_results(lim: Any, value: float, hand: float, basis: str, note: str,
                         suffix: str) -> list[MarginResult]:
    """The min and max of a [[margins.force]] entry as margin results."""
    out = []
    for kind, limit in (("min", lim.min), ("max", lim.max)):
        if limit is not None:
            out.append(MarginResult(
                f"force@{lim.stroke * 1e3:g}mm:{kind}{suffix}",
                f"force on the moving part at {lim.stroke * 1e3:g} mm stroke, {kind}{suffix}",
                "N", kind, limit, value, hand=hand, basis=basis, note=note))
    return out


def _force_3d(p: Any) -> float:
    """A sweep point's depth correction of the FE force, as ``magcheck
    check`` applies it: the hand network's 3D force over its planar one
    under the point's depth model (``depth_factors``, compare.judge.check.
    choose_depth_model; else the case's model; 1 for an r-z case, whose two
    hand forms are the same)."""
    factors = getattr(p, "depth_factors", None) or {}
    if "force" in factors:
        return factors["force"]
    h3, hp = p.hand.get("force", math.nan), p.hand_planar.get("force", math.nan)
    return h3 / hp if hp and math.isfinite(hp) and math.isfinite(h3) else 1.0


def sweep_demagnetisation(case: Case, points: Sequence[Any], with_fe: bool
                          ) -> list[MarginResult]:
    """The demagnetisation margin of the case's first magnet at the sweep's
    worst point: the largest demagnetising |H| (the FE's 0.5 % area extreme,
    as ``magcheck check`` judges it) over every point, against the grade's
    knee field; the note names the point.  A release coil's reverse current
    or a wide-open keeper is where a magnet is lost, so the whole sweep
    counts, not the case's own point.  Empty without a magnet with a knee
    field or without the field model."""
    from ..design.coremodel import core_model

    model = core_model(case)
    knees = dict(model.magnet_knees)
    if not with_fe or not model.magnets or model.magnets[0].region not in knees:
        return []
    region = model.magnets[0].region
    vals = [(-p.fe.get("magnet_H_min", math.nan), p) for p in points]
    vals = [(v, p) for v, p in vals if math.isfinite(v)]
    if not vals:
        return []
    worst, at = max(vals, key=lambda vp: vp[0])
    where = ", ".join(f"{k} = {v:g}" for k, v in at.settings.items())
    return [MarginResult("demagnetisation:sweep",
                         f"demagnetising field in {_magnet_label(region)} (0.5 % area), worst "
                         "over the sweep, max", "A/m", "max", -knees[region], worst,
                         hand=math.nan, basis="FE", note=f"at {where}")]


def stroke_margins(case: Case, points: Sequence[Any], with_fe: bool) -> list[MarginResult]:
    """The ``[[margins.force]]`` limits judged along the sweep's stroke curves.

    The points are grouped by every setting but the stroke, each curve
    sorted by the stroke; of a current-and-stroke grid only the curve at the
    case's own current is judged (a force limit is stated at the rated
    current; the other currents' curves are for the figures and the
    saturation current per stroke); the force at a limit's stroke is the FE's Maxwell stress (with
    the depth correction of ``magcheck check``, :func:`_force_3d`; the
    hand network's virtual work for a hand-only sweep) interpolated
    linearly.  A stroke outside the swept range gives "n/a".  Empty when the
    case has no force limits or the sweep does not vary the stroke.
    """
    from ..design.coremodel import core_model

    spec = core_model(case).force
    if not case.margins.force or spec is None or spec.stroke_key is None:
        return []
    key = spec.stroke_key
    pts = [p for p in points if key in p.settings]
    if not pts:
        return []
    groups: dict[tuple, tuple[dict, list]] = {}
    for p in pts:
        fixed = {k: v for k, v in p.settings.items() if k != key}
        groups.setdefault(tuple(sorted(fixed.items())), (fixed, []))[1].append(p)
    from ..design.keys import CURRENT_KEY

    i0 = case.winding.current
    chosen = [(f, c) for f, c in groups.values()
              if CURRENT_KEY not in f or math.isclose(f[CURRENT_KEY], i0, rel_tol=1e-9,
                                                     abs_tol=1e-12)]
    out: list[MarginResult] = []
    if not chosen:
        for lim in case.margins.force:
            out.extend(_force_limit_results(lim, math.nan, math.nan, "FE" if with_fe else "hand",
                                            f"the case's current {i0:g} A is not among the "
                                            "swept currents", ""))
        return out
    for fixed, curve in chosen:
        fixed = {k: v for k, v in fixed.items() if k != CURRENT_KEY}
        curve.sort(key=lambda p: p.settings[key])
        tag = ", ".join(f"{k} = {v:g}" for k, v in fixed.items())
        suffix = f" [{tag}]" if tag else ""
        s = np.array([p.settings[key] for p in curve])

        def along(get: Callable[[Any], float], at: float) -> float:
            v = np.array([get(p) for p in curve], dtype=float)
            ok = np.isfinite(v)
            if not ok.any() or not (s[ok].min() - 1e-12 <= at <= s[ok].max() + 1e-12):
                return math.nan
            return float(np.interp(at, s[ok], v[ok]))

        for lim in case.margins.force:
            hand = along(lambda p: p.hand.get("force", math.nan), lim.stroke)
            if with_fe:
                value = along(lambda p: p.fe.get("force_maxwell", math.nan) * _force_3d(p),
                              lim.stroke)
            else:
                value = hand
            note = "" if math.isfinite(value) else "stroke outside the swept range"
            out.extend(_force_limit_results(lim, value, hand, "FE" if with_fe else "hand", note,
                                            suffix))
    return out


# --------------------------------------------------------------- along a sweep
def _interp(points: list[Any], current: float, get: Callable[[Any], float]) -> float:
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


def curve_saturation(points: list[Any], drops: Sequence[float], kind: str,
                     model: str) -> dict[float, float]:
    """Saturation currents of one curve for ``model`` "fe", "hand" or "hand_planar"."""
    block = {"fe": lambda p: p.fe, "hand": lambda p: p.hand,
             "hand_planar": lambda p: p.hand_planar}[model]
    vals = [block(p).get("inductance" if kind == "secant" else "incremental_inductance",
                         math.nan) for p in points]
    return saturation_from_curve([p.current for p in points], vals, drops)


SWEPT_SATURATION_NOTE = "between swept points (linear); check root-finds the hand value"
"""How a sweep's saturation current is found, said beside it: read off the
curve, linear between the swept currents, where ``magcheck check`` finds
the hand model's by root-finding (the demo choke at -20 %: 6.535 A from
1 A steps, 6.565 A by root-finding)."""


def curve_margins(case: Case, cs: Sequence[tuple[dict, list[Any]]], with_fe: bool,
                  drops: Sequence[float] = (), kind: str = "incremental", *,
                  fe_3d: Callable[[Any, str], float] = lambda p, key: 1.0
                  ) -> tuple[list[MarginResult], list[dict]]:
    """Margins judged along L(I) curves, and the saturation table.

    ``cs``: (fixed settings, points sorted by |I|) per curve, each point with
    ``current``, ``fe``/``hand``/``hand_planar`` (quantity dicts),
    ``fe_peak_B`` and ``hand_peak_B`` (compare.studies.sweep.PointResult);
    ``fe_3d(point, key)``: the depth correction of an FE value.

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
    m = case.margins
    drops_all = sorted(set(drops) | {lim.drop for lim in m.saturation})
    margins: list[MarginResult] = []
    table: list[dict] = []
    fe_model = "fe" if with_fe else "hand"
    for fixed, pts in cs:
        tag = ", ".join(f"{k} = {v:g}" for k, v in fixed.items())
        suffix = f" [{tag}]" if tag else ""
        if len(pts) < 2:
            continue
        imax = max(abs(p.current) for p in pts)
        sat = {}
        for model in (("fe", "hand", "hand_planar") if with_fe else ("hand", "hand_planar")):
            sat[model] = curve_saturation(pts, drops_all, kind, model)
            table.append({"curve": tag, "model": model, "inductance": kind,
                          **{f"{100 * d:g}%": sat[model][d] for d in drops_all}})
        for lim in m.saturation:
            s_main = curve_saturation(pts, [lim.drop], lim.kind, fe_model)[lim.drop]
            s_hand = curve_saturation(pts, [lim.drop], lim.kind, "hand")[lim.drop]
            note = SWEPT_SATURATION_NOTE
            if not math.isfinite(s_main):
                note = f"not reached up to {imax:g} A"
                s_main = imax if imax >= lim.min else math.nan
            margins.append(MarginResult(
                f"saturation_current@{100 * lim.drop:g}%{suffix}",
                f"saturation current ({lim.kind} L -{100 * lim.drop:g} %){suffix}", "A", "min",
                lim.min, s_main, hand=s_hand, basis="FE" if with_fe else "hand", note=note))
        for ind in m.inductance:
            key = "inductance" if ind.kind == "secant" else "incremental_inductance"
            if with_fe:
                value = _interp(pts, ind.at, lambda p: p.fe.get(key, math.nan) * fe_3d(p, key))
            else:
                value = _interp(pts, ind.at, lambda p: p.hand.get(key, math.nan))
            h = _interp(pts, ind.at, lambda p: p.hand.get(key, math.nan))
            for kind_, limit in (("min", ind.min), ("max", ind.max)):
                if limit is not None:
                    margins.append(MarginResult(
                        f"inductance_{ind.kind}@{ind.at:g}A:{kind_}{suffix}",
                        f"inductance ({ind.kind}) at {ind.at:g} A, {kind_}{suffix}", "H", kind_,
                        limit, value, hand=h, basis="FE" if with_fe else "hand",
                        note="" if math.isfinite(value) else "current outside the swept range"))
        if m.peak_B is not None and with_fe:
            value = _interp(pts, case.winding.current, lambda p: p.fe_peak_B)
            h = _interp(pts, case.winding.current, lambda p: p.hand_peak_B)
            margins.append(MarginResult(
                f"peak_B{suffix}", f"peak core B at {case.winding.current:g} A{suffix}", "T",
                "max", m.peak_B, value, hand=h, basis="FE",
                note="" if math.isfinite(value) else "case current outside the swept range"))
    return margins, table


def ac_margins(case: Case, fe_values: dict, hand_values: dict) -> list[MarginResult]:
    """The AC winding's margins (``[margins] winding_loss``, W, DC + AC; and
    ``resistance_ratio``, R_ac/R_dc), maxima judged on the FE's values
    (compare.models.ac: the depth-corrected ones for the loss), the hand
    model's beside them."""
    m = case.margins
    out = []
    if m.winding_loss is not None:
        out.append(MarginResult("winding_loss", "winding loss (DC + AC)", "W", "max",
                                m.winding_loss, fe_values.get("winding_loss", math.nan),
                                hand=hand_values.get("winding_loss", math.nan)))
    if m.resistance_ratio is not None:
        out.append(MarginResult("R_ac_ratio", "R_ac/R_dc", "", "max", m.resistance_ratio,
                                fe_values.get("R_ac_ratio", math.nan),
                                hand=hand_values.get("R_ac_ratio", math.nan)))
    return out
