"""The loss budget's rows: hand against FE for the core loss, the copper loss, the total, a
transformer's efficiency and regulation, the temperature-rise estimate, and their margins
(compare.models.loss computes them; compare.judge.check calls :func:`budget_rows` and
:func:`budget_notes` for a case with ``[loss]``)."""

from __future__ import annotations

import math
from typing import Any

from ..design.case import Case

# Default agreement limits, percent of the FE value (common practice, no source). Core loss
# goes as B^beta with beta 2 to 3, so a flux 5 to 8 % apart (the core_B band) is a loss 10 to
# 25 % apart: 25 %. The copper loss of a transformer is the same R in both columns (0 %, never
# judged); of an AC winding it is R_dc's and Dowell's limits. The total follows the larger
# part. The efficiency is a ratio near 1: its percent difference is the loss difference
# times (1 - eta), held to 1 %. Regulation carries the leakage inductance's 25 %. The
# temperature rise goes as the total loss to the power 0.826: 20 %.
DEFAULT_LIMITS: dict[str, float] = {
    "core_loss": 25.0, "copper_loss": 1.0, "winding_loss_ac": 15.0, "total_loss": 25.0,
    "efficiency": 1.0, "efficiency_part": 1.0, "regulation": 25.0, "temperature_rise": 20.0,
}

LABELS = {
    "core_loss": "core loss", "copper_loss": "copper loss (DC)",
    "winding_loss_ac": "winding loss (AC part)", "total_loss": "total loss",
    "efficiency": "efficiency at rated load", "efficiency_part": "efficiency at part load",
    "regulation": "voltage regulation at rated load",
    "temperature_rise": "temperature rise (estimate)",
}

_MARGINS = (("total_loss", "total_loss", "max"), ("core_loss", "core_loss", "max"),
            ("efficiency", "efficiency", "min"), ("regulation", "regulation", "max"),
            ("temperature_rise", "temperature_rise", "max"))


def _label(case: Case, key: str, budget: Any) -> str:
    core = budget.core
    if key == "core_loss":
        return (f"core loss ({core.waveform}, {core.frequency / 1e3:.4g} kHz)"
                if core.frequency >= 1e3 else
                f"core loss ({core.waveform}, {core.frequency:.4g} Hz)")
    if key == "copper_loss" and budget.transformer:
        return "copper loss at rated load (both windings)"
    if key == "efficiency_part" and budget.transformer:
        return f"efficiency at {100 * budget.transformer['fraction']:.3g} % load"
    return LABELS[key]


def budget_rows(case: Case, budget: Any) -> list[dict]:
    """The budget's rows as compare.judge.check.Row fields (hand: planar form; FE: the planar
    FE with its three-mesh uncertainty; the 3D columns beside; an agreement row without
    "verdict" and "diff_pct", which the check gives it) and the margins total_loss, core_loss,
    efficiency (min), regulation and temperature_rise (judged on the FE's 3D value)."""
    from ..models.loss import BUDGET_UNITS

    out = []
    for k, v in budget.entries.items():
        h, f, u = v["hand"], v["fe"], v["uncertainty"]
        lim = case.margins.agreement_limit(k, DEFAULT_LIMITS.get(k))
        s = v["fe_3d"] / f if f else math.nan
        row = dict(key=k, label=_label(case, k, budget), unit=BUDGET_UNITS[k], hand=h, fe=f,
                   uncertainty=u, limit_pct=lim, hand_3d=v["hand_3d"], fe_3d=v["fe_3d"],
                   fe_3d_uncertainty=u * abs(s) if math.isfinite(s) else math.nan)
        if k == "copper_loss" and budget.transformer:  # the same resistances in both columns
            row.update(limit_pct=None, verdict="info",
                       diff_pct=100.0 * (h - f) / abs(f) if f else math.nan)
        out.append(row)
    m = case.margins
    for key, attr, kind in _MARGINS:
        limit = getattr(m, attr)
        if limit is None or key not in budget.entries:
            continue
        if key in ("efficiency", "regulation"):
            limit = 100.0 * limit  # the case model's fraction, the rows' percent
        v = budget.entries[key]
        value = v["fe_3d"]
        ok = value <= limit if kind == "max" else value >= limit
        margin = 100.0 * ((limit - value) if kind == "max" else (value - limit)) / limit
        out.append(dict(key=f"margin:{key}", label=f"{_label(case, key, budget)}, {kind}",
                        unit=BUDGET_UNITS[key], hand=v["hand_3d"], fe=value,
                        uncertainty=math.nan, diff_pct=math.nan, limit_pct=None,
                        verdict="pass" if ok else "FAIL", limit_value=limit, margin_pct=margin,
                        limit_kind=kind))
    return out


def budget_notes(case: Case, budget: Any) -> tuple[str, ...]:
    """What the loss budget takes and leaves out, the flux crowding's share, the range warnings
    of the loss data and the temperature rise's source."""
    if budget is None:
        return ()
    c = budget.core
    share = c.crowding_share
    if not math.isfinite(share):
        share_txt = "; hand and FE agree within 1 %, so no share is quoted"
    elif share >= 0.0:
        share_txt = (f"; flux crowding explains {100 * share:.3g} % of the hand-FE difference "
                     f"({c.fe:.4g} W against {c.hand:.4g} W by hand), the rest is the flux the "
                     "two models put in each leg")
    else:
        share_txt = (f"; the FE's loss is below the hand's ({c.fe:.4g} W against {c.hand:.4g} W) "
                     "although crowding raises it: the difference is the flux the two models "
                     "put in each leg (in the FE some of the winding's flux linkage is leakage "
                     "outside the core), and crowding explains none of it "
                     f"(share {100 * share:.3g} %)")
    notes = [f"Core loss: {c.source}; the hand takes one flux swing per segment of the magnetic "
             f"circuit, the FE the swing in every element; at each leg's mean FE swing the loss "
             f"would be {c.uniform:.4g} W, so the crowding within the legs adds "
             f"{c.crowding_pct:+.3g} %{share_txt}. Left out: rotational flux (corners, joints), "
             "minor loops, and the core's own eddy currents beyond the loss data."]
    if c.split is not None:
        tot = sum(c.split.values())
        notes.append("Laminated steel (Bertotti's split at the hand's segment B): hysteresis "
                     f"{c.split['hysteresis']:.3g} W, classical eddy {c.split['classical']:.3g} W,"
                     f" excess {c.split['excess']:.3g} W (sum {tot:.3g} W beside the Steinmetz "
                     f"{c.hand_3d:.3g} W).")
    for msg in c.out_of_range:
        notes.append(f"Warning: {msg}: the core loss is extrapolated.")
    if budget.transformer:
        t = budget.transformer
        notes.append(f"Transformer at rated load: {t['load_current']:.4g} A rms in the second "
                     f"winding, power factor {t['power_factor']:.3g}, no-load secondary "
                     f"{t['v_nl']:.4g} V; R = {t['r']:.4g} ohm and X = {t['x_hand']:.4g} ohm "
                     f"(hand) / {t['x_fe']:.4g} ohm (FE) referred to the second winding; the "
                     "regulation is the phasor relation of the approximate equivalent circuit "
                     "(docs/references.md section 15).")
    notes.append(f"Temperature rise: {budget.rise_source}, over {budget.area * 1e4:.4g} cm^2 of "
                 "outside surface: an estimate for orientation, not a thermal analysis.")
    return tuple(notes)


def budget_warnings(budget: Any) -> list[str]:
    """The loss data's range warnings (one line each)."""
    return [f"core loss: {m}" for m in budget.core.out_of_range] if budget is not None else []


def _where(p: Any) -> str:
    return ", ".join(f"{k} = {v:g}" for k, v in p.settings.items()) or f"point {p.index}"


def point_loss_value(p: Any, key: str, with_fe: bool) -> float:
    """A sweep point's (or a sample's) value of a loss figure as the check judges it: the FE's
    3D column (``fe["loss_<key>_3d"]``, compare.models.loss.point_budget), the hand 3D value
    for a hand-only run."""
    if with_fe:
        return float(p.fe.get(f"loss_{key}_3d", math.nan))
    return float(p.hand.get(f"loss_{key}", math.nan))


def sweep_loss_margins(case: Case, points: Any, with_fe: bool) -> list:
    """The loss margins (``[margins]`` total_loss, core_loss, efficiency (min), regulation,
    temperature_rise) judged along a sweep: each on the worst point (the largest value of a
    maximum, the smallest of a minimum; the FE's 3D column, the hand's 3D value for a
    hand-only sweep), its note naming that point and the first point in grid order that
    fails the limit (or that every point meets it). Keys ``<margin>:sweep``. Empty for a case
    without a loss budget."""
    from .margins import MarginResult

    out: list = []
    if case.loss is None or case.core_loss is None:
        return out
    from ..models.loss import BUDGET_UNITS

    m = case.margins
    for key, attr, kind in _MARGINS:
        limit = getattr(m, attr)
        if limit is None:
            continue
        if key in ("efficiency", "regulation"):
            limit = 100.0 * limit
        vals = [(point_loss_value(p, key, with_fe), p) for p in points]
        vals = [(v, p) for v, p in vals if math.isfinite(v)]
        if not vals:
            continue
        pick = max if kind == "max" else min
        worst, at = pick(vals, key=lambda vp: vp[0])
        fails = [p for v, p in vals if (v > limit if kind == "max" else v < limit)]
        first = (f"first fails at {_where(fails[0])}" if fails
                 else f"met at all {len(vals)} points")
        hand = float(at.hand.get(f"loss_{key}", math.nan))
        out.append(MarginResult(f"{key}:sweep", f"{LABELS[key]}, worst over the sweep, {kind}",
                                BUDGET_UNITS[key], kind, limit, worst, hand=hand,
                                basis="FE" if with_fe else "hand",
                                note=f"worst at {_where(at)}; {first}"))
    return out
