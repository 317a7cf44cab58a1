"""A moving armature's rows, margins and notes in the check
(compare.models.motion): pull-in and drop-out, the operate and release
times, hand (planar form) against the FE, each on its own maps; the margins
[margins] pull_in_voltage, drop_out_voltage, operate_time, release_time
judged on the FE 3D column (the FE for an axisymmetric case)."""

from __future__ import annotations

import math
from typing import Any

from ..design.case import Case
from .margins import MarginResult

__all__ = ["MOTION_LIMITS", "MOTION_LABELS", "motion_items", "motion_margins", "motion_notes"]

MOTION_LIMITS: dict[str, float] = {
    # the pull-in and drop-out currents go as the square root of the force
    # at the tightest stroke (F ~ i^2 below saturation), so the force's 20 %
    # is 10 % on the current; the operate time adds the coil's time constant
    # (the flux linkage's 15 %) to the force's, the release time the
    # linkage's at the holding current (common practice, no source)
    "pull_in_current": 10.0, "drop_out_current": 10.0, "operate_time": 20.0,
    "release_time": 20.0,
    # a holding magnet's release current: N i = phi_r (R_m + R_g) - H_c l_m,
    # a difference of two MMFs, so the force's 20 % (10 % on the release
    # flux phi_r) is held to the same 10 % on the current (common practice,
    # no source)
    "release_current": 10.0,
}
"""Default agreement limits (percent), beside compare.judge.check.DEFAULT_LIMITS."""

MOTION_LABELS = {
    "pull_in_current": "pull-in current", "pull_in_voltage": "pull-in voltage",
    "drop_out_current": "drop-out current", "drop_out_voltage": "drop-out voltage",
    "load_margin": "force over the load at rated current, tightest",
    "operate_time": "operate time at rated voltage", "current_dip": "current dip while moving",
    "impact_speed": "impact speed at closing", "release_time": "release time",
    "release_current": "release current (reverse, opposing the magnet)",
    "release_voltage": "release voltage (reverse)",
}

_MARGINS = {"pull_in_voltage": ("max", "pull-in voltage"),
            "drop_out_voltage": ("min", "drop-out voltage"),
            "operate_time": ("max", "operate time"), "release_time": ("max", "release time"),
            "release_current": ("max", "release current (reverse)")}


def motion_items(case: Case, motion: Any) -> list[tuple]:
    """The rows' contents, hand vs FE, as (key, label, unit, hand, fe,
    hand_3d, fe_3d, limit_pct or None): judged the currents and times with a
    limit; info the voltages (I R of the same currents), the margin, dip and
    speed.  compare.judge.check.motion_rows makes them Rows."""
    from ..models.motion import UNITS

    third = "fe_3d" if "fe_3d" in motion.models else "fe"
    out = []
    for k in ("pull_in_current", "pull_in_voltage", "drop_out_current", "drop_out_voltage",
              "load_margin", "operate_time", "current_dip", "impact_speed", "release_time",
              "release_current", "release_voltage"):
        h, f = motion.value("hand", k), motion.value("fe", k)
        if not (math.isfinite(h) or math.isfinite(f)):
            continue
        label = MOTION_LABELS[k]
        if k == "load_margin":
            s = motion.models["fe"].margin_stroke
            label += f" (FE at {case.motion.gap(s) * 1e3:.3g} mm)"
        out.append((f"motion:{k}", label, UNITS[k], h, f, motion.value("hand_3d", k),
                    motion.value(third, k), case.margins.agreement_limit(k, MOTION_LIMITS.get(k))))
    return out


def motion_margins(case: Case, motion: Any) -> list[MarginResult]:
    """The motion's design margins, judged on the FE 3D column (the FE's for
    an axisymmetric case), the hand model's 3D value beside."""
    from ..models.motion import UNITS

    third = "fe_3d" if "fe_3d" in motion.models else "fe"
    out = []
    for key, limit in case.margins.motion:
        kind, label = _MARGINS[key]
        value, hand, note = motion.value(third, key), motion.value("hand_3d", key), ""
        if math.isnan(value):
            # beyond what the model explored (no pull-in on the map, not
            # closed or opened by the end time): a maximum below that bound
            # has failed; judged on the bound, the note saying so
            bound = _beyond(motion, third, key)
            if kind == "max" and math.isfinite(bound) and bound > limit:
                value = bound
                note = (f"beyond the motion's range: more than {bound:.4g} {UNITS[key]} "
                        "(the value shown is that bound)")
        if math.isnan(hand) and kind == "max":
            hb = _beyond(motion, "hand_3d", key)
            hand = hb if math.isfinite(hb) and hb > limit else hand
        out.append(MarginResult(key, label, UNITS[key], kind, limit, value, hand=hand,
                                note=note))
    return out


def _beyond(motion: Any, model: str, key: str) -> float:
    """The bound a model's NaN figure lies beyond (ModelMotion.beyond), NaN if none."""
    m = motion.models.get(model)
    return float(getattr(m, "beyond", {}).get(key, math.nan)) if m is not None else math.nan


def motion_notes(case: Case, motion: Any) -> tuple[str, ...]:
    """The motion's notes: the FE map's grid, solves, wall time and
    interpolation error; what the models leave out; why a value is missing."""
    maps, err = motion.maps, motion.interpolation
    spec = case.motion
    span = (f"to {maps.currents[-1]:.4g} A" if maps.currents[0] >= 0.0 else
            f"from {maps.currents[0]:.4g} A (reverse, opposing the magnet) to 0")
    lines = [
        f"Motion: both models on their own F(i, s) and lambda(i, s) maps, {maps.strokes.size} "
        f"strokes ({spec.open_gap * 1e3:.3g} to {spec.closed_gap * 1e3:.3g} mm) x "
        f"{maps.currents.size - 1} currents {span}; the FE map "
        f"{maps.fe_solves} solves on the coarsest mesh in {maps.fe_seconds:.1f} s. Its "
        f"interpolation error (leaving out each inner grid line, an upper estimate): force "
        f"{100 * err['force']:.2g} %, flux linkage {100 * err['linkage']:.2g} %. Coil "
        f"{motion.resistance:.4g} ohm at {spec.temperature:g} degC, rated "
        f"{motion.rated_current:.4g} A. Eddy currents in solid iron (which slow a real "
        "actuator), friction and the switching arc are left out."]
    if maps.currents[0] < 0.0:
        lines.append("Motion: the release current is the first reverse current from zero "
                     "downward at which the holding force at the closed gap falls to the load; "
                     "further down the force has its least value (the gap flux cancelled) and "
                     "rises again as the coil overpowers the magnet (that second crossing is "
                     "no release).")
    for name in ("hand", "fe"):
        for n in motion.models[name].notes:
            lines.append(f"Motion ({'hand' if name == 'hand' else 'FE'}): {n}.")
    for r in motion_margins(case, motion):
        if r.note:
            lines.append(f"Motion: the margin {r.label}, {r.kind} ({r.limit:.4g} {r.unit}) "
                         f"FAILs {r.note}.")
    return tuple(lines)
