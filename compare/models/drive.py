"""A voltage-driven winding: its peak flux linkage, the magnetizing current
each model needs, and the peak flux density.

The first winding may be driven by a sinusoidal voltage (``voltage``, rms,
and ``frequency``) instead of a current.  Its resistance is neglected, so
the flux linkage is lambda(t) = lambda_pk sin(wt) with lambda_pk =
sqrt(2) V / (2 pi f) (analytic.magnetizing); a case whose ``[loss]`` says
the voltage is a square wave (``waveform = "square"``, duty D) gets the
trapezoidal flux linkage of that square (a triangle for D = 1) with
lambda_pk = V sqrt(D) / (4 f) (:func:`drive_linkage`; the inrush estimate
keeps the sine's first-cycle bound (2 + r) lambda_pk, which a square's first
pulse also gives, and its damped ODE a sine).  The other windings carry
their stated currents (0 A: open).  Each model gives the magnetizing
current from its own lambda-i curve (analytic.magnetizing.magnetizing_current):

* hand: the network solved along a current grid up to the current at which
  it reaches lambda_pk (root-found);
* FE: a warm-started current sweep on the check's finest mesh at the currents where
  the hand curve passes lambda_pk k/10 (so the points fall about evenly in
  lambda, where the inversion needs them), extended until the FE's own
  curve passes lambda_pk.

The case's ``current`` of a driven winding is set when the case is read
(:func:`resolve_drive`): the hand model's peak magnetizing current, the
operating point of every other row of the check (the top of the cycle).

Peak flux density: the hand's by the EMF equation, lambda_pk / (N A_c) with
A_c the winding limb's area in the network (the transformer EMF equation,
V = 4.44 f N A_c B_pk); the FE's the |B| exceeded on 0.5 % of the core area
(as for peak B) at the current where its own flux linkage is lambda_pk.

Inrush estimate (the driven winding's ``residual_flux`` r given): switched
on at a voltage zero with the residual flux linkage r lambda_pk in the
sense the voltage drives, the flux linkage's first peak is (2 + r)
lambda_pk (analytic.magnetizing.inrush_flux_linkage); the first current
peak is where each model's lambda-i curve reaches it, the FE's continued
past saturation (warm-started tangent steps aimed just past it), where
the winding's own air flux, which the hand network lacks, carries the rise.
With the winding's ``resistance`` R (winding plus source, ohm) the flux
linkage follows d lambda / dt = v - R i(lambda) on each model's curve
(analytic.magnetizing.inrush_peak) and peaks lower and earlier; without
it the estimate is undamped, an upper bound of the first peak.  An
estimate either way: no hysteresis (the residual as given), no eddy
currents, a stiff source.
"""

from __future__ import annotations

import dataclasses
import functools
import math
import warnings
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from scipy.interpolate import PchipInterpolator
from scipy.optimize import brentq

from magcheck.analytic.bh import BHRangeWarning
from magcheck.analytic.magnetizing import (DriveError, InrushPeak, MagnetizingCurrent,
                                           inrush_flux_linkage, inrush_peak, magnetizing_current,
                                           peak_flux_linkage, square_peak_flux_linkage)

from ..errors import RunError

__all__ = ["DriveResult", "resolve_drive", "hand_peak_current", "hand_current_at", "hand_curve",
           "run_drive", "continue_curve", "DRIVE_KEYS"]

HAND_POINTS = 48
"""Hand lambda-i points up to the peak current (ms each)."""
FE_POINTS = 10
"""FE solves along the lambda-i curve up to lambda_pk (warm-started)."""
INRUSH_SOLVES = 30
"""At most this many FE solves past lambda_pk toward the inrush estimate."""
INRUSH_REACH = 1e5
"""How far past the hand's peak magnetizing current the FE curve may climb
toward the inrush estimate's flux linkage (a factor) before giving up."""

JUMP_PREDICTOR = 0.3
"""Fraction of the tangent step that predicts an inrush continuation point
(continue_curve's steps of up to 3x in current past saturation, where the
curve is concave and the full tangent step overshoots the field in the iron).
On the demo transformer the six continuation solves took 34 Newton steps
with the full step, 32 with none, 30 with 0.15, 28 with 0.5, 26 with 0.3;
the converged points are the same to the Newton tolerance either way."""

DRIVE_KEYS = ("B_peak", "magnetizing_current_peak", "magnetizing_current_rms",
              "magnetizing_inductance", "B_limb_peak")


def _lambda(case: Any, current: float, planar: bool, fringing: str | None = None) -> float:
    from ..design.case import with_current

    return _lambda_of(with_current(case, current), planar, fringing)


@functools.lru_cache(maxsize=4096)
def _lambda_of(case: Any, planar: bool, fringing: str | None) -> float:
    """The hand network's flux linkage magnitude (Wb-turns) of a case (a
    frozen value, so equal cases share the answer): a check asks for the
    same points several times (the peak current when the case is read and
    again in the drive; the depth ratios' curves under the case's own
    fringing model), about 20 ms each."""
    from .hand import run_hand

    return abs(run_hand(case, planar=planar, fringing=fringing).flux_linkage)


def drive_waveform(case: Any) -> tuple[str, float]:
    """The drive voltage's shape and duty: ("square", D) when the case's ``[loss]`` says the
    voltage is a square wave (``waveform = "square"``, its ``duty``), else ("sine", 1)."""
    spec = getattr(case, "loss", None)
    if spec is not None and spec.waveform == "square":
        return "square", float(spec.duty)
    return "sine", 1.0


def drive_linkage(case: Any) -> float:
    """The driven winding's peak flux linkage (Wb-turns): sqrt(2) V / (2 pi f) for a sine,
    V sqrt(D) / (4 f) for a square voltage (:func:`drive_waveform`;
    analytic.magnetizing equations (1) and (2))."""
    w = case.winding
    shape, duty = drive_waveform(case)
    if shape == "square":
        return square_peak_flux_linkage(w.voltage, w.frequency, duty)
    return peak_flux_linkage(w.voltage, w.frequency)


def hand_peak_current(case: Any, planar: bool = False, fringing: str | None = None) -> float:
    """The current (A) at which the hand network's flux linkage of the
    driven winding is lambda_pk (``fringing``: a fringing model other than
    the case's)."""
    w = case.winding
    return hand_current_at(case, drive_linkage(case), planar, fringing)


def hand_current_at(case: Any, linkage: float, planar: bool = False,
                    fringing: str | None = None) -> float:
    """The current (A) at which the hand network's flux linkage of the
    driven winding is ``linkage`` (Wb-turns; bracketed by doubling, then
    brentq to 1e-10)."""
    hi = 1e-3
    for _ in range(80):
        if _lambda(case, hi, planar, fringing) >= linkage:
            break
        hi *= 2.0
    else:  # pragma: no cover - a core that never reaches it by 1e21 A
        raise RunError(f"the hand model's flux linkage does not reach {linkage:.6g} Wb-turns "
                       "at any current")
    return float(brentq(lambda i: _lambda(case, i, planar, fringing) - linkage, 0.0, hi,
                        xtol=1e-12 * hi, rtol=1e-10))


def resolve_drive(case: Any) -> Any:
    """The case with its driven winding's current set to the hand model's
    peak magnetizing current (unchanged when no winding is driven)."""
    if not case.winding.driven:
        return case
    i_pk = hand_peak_current(case)
    return dataclasses.replace(case, winding=dataclasses.replace(case.winding, current=i_pk))


def hand_curve(case: Any, planar: bool, i_top: float,
               fringing: str | None = None) -> tuple[np.ndarray, np.ndarray]:
    """The hand lambda-i curve from 0 to ``i_top`` (A), HAND_POINTS + 1 points
    (the flux linkage's magnitude)."""
    i = np.linspace(0.0, i_top, HAND_POINTS + 1)
    return i, np.array([_lambda(case, x, planar, fringing) if x > 0 else 0.0 for x in i])


def hand_depth_ratios(case: Any, fringing: str | None = None) -> dict[str, float]:
    """The FE 3D column's factor of each DRIVE_KEYS value: the hand
    network's 3D over planar value under the fringing model ``fringing``
    (default the case's; magcheck check passes its chosen depth model,
    compare.judge.check.choose_depth_model), each from that model's own lambda-i
    curves as :func:`run_drive` makes them.  The peak flux densities keep
    1 (the EMF equation's B does not depend on the gaps)."""
    w = case.winding
    lam_pk = drive_linkage(case)
    shape, duty = drive_waveform(case)
    m = {}
    for planar in (True, False):
        i_top = 1.02 * hand_peak_current(case, planar, fringing)
        m[planar] = magnetizing_current(*hand_curve(case, planar, i_top, fringing), lam_pk,
                                        w.frequency, shape=shape, duty=duty)
    out = {"B_peak": 1.0, "B_limb_peak": 1.0}
    for k, attr in (("magnetizing_current_peak", "peak"), ("magnetizing_current_rms", "rms"),
                    ("magnetizing_inductance", "inductance")):
        a, b = getattr(m[True], attr), getattr(m[False], attr)
        out[k] = b / a if a else 1.0
    return out


@dataclass(frozen=True)
class DriveResult:
    """Both models' answers to the voltage drive of the first winding.

    lambda_peak : Wb-turns.  hand, hand_3d, fe : the magnetizing currents
    (hand in the planar form, like for like with a planar FE; 3D hand).
    B_peak : (hand by the EMF equation, FE 0.5 % quantile at its lambda_pk).
    curves : per model (currents A, flux linkages Wb-turns) as sampled;
        with an inrush estimate also "hand_inrush" and "fe_inrush", the
        curves on to lambda_inrush.
    uncertainty : FE uncertainty of each DRIVE_KEYS value: first order from
        the three-mesh uncertainty of the flux linkage at the case's
        current, U_i = U_lambda / L_incremental, plus the inversion's own
        error, half the difference to the waveform from every other FE point
        (``inrush_current_peak``: the same relative U_lambda at the first
        peak's flux linkage over the curve's slope there, plus the same
        estimate on every other FE point's curve).
    lambda_inrush : the inrush estimate's first flux-linkage peak
        (2 + residual) lambda_pk (Wb-turns; NaN without ``residual_flux``).
    inrush : per model ("hand", "hand_3d", "fe") the inrush estimate's
        first current peak (A): at lambda_inrush undamped, by equation (2)
        of analytic.magnetizing.inrush_peak with ``resistance``; {} without
        an estimate.
    """

    lambda_peak: float
    hand: MagnetizingCurrent
    hand_3d: MagnetizingCurrent
    fe: MagnetizingCurrent
    B_peak: tuple[float, float]
    curves: dict[str, tuple[np.ndarray, np.ndarray]] = field(repr=False)
    uncertainty: dict[str, float] = field(default_factory=dict)
    lambda_inrush: float = math.nan
    inrush: dict[str, float] = field(default_factory=dict)
    residual_flux: float = math.nan
    """The inrush estimate's residual flux linkage, a fraction of lambda_pk."""
    B_limb: tuple[float, float] = (math.nan, math.nan)
    """The winding limb's mean B at the drive's peak (T): the flux through
    the limb over its area A_c, hand (= the EMF equation's B_pk) and FE (its
    limb flux where its own flux linkage is lambda_pk: less than lambda_pk /
    N by the leakage flux that links the winding outside the limb).  Like
    for like, where B_peak's FE figure is a local 0.5 % quantile."""
    inrush_linkage: dict[str, float] = field(default_factory=dict)
    """Per model the flux linkage at the inrush estimate's first peak
    (Wb-turns): lambda_inrush undamped, less with ``resistance``."""
    resistance: float = 0.0
    """The inrush estimate's series resistance (ohm; 0: undamped)."""

    def values(self, model: str) -> dict[str, float]:
        """DRIVE_KEYS values of "hand", "hand_3d" or "fe"."""
        m = {"hand": self.hand, "hand_3d": self.hand_3d, "fe": self.fe}[model]
        b = self.B_peak[1] if model == "fe" else self.B_peak[0]
        return {"B_peak": b, "magnetizing_current_peak": m.peak,
                "magnetizing_current_rms": m.rms, "magnetizing_inductance": m.inductance,
                "B_limb_peak": self.B_limb[1] if model == "fe" else self.B_limb[0]}

    def to_dict(self, model: str) -> dict:
        """The JSON section of one model (SI)."""
        m = {"hand": self.hand, "hand_3d": self.hand_3d, "fe": self.fe}[model]
        out: dict[str, Any] = {
            "B_peak": self.values(model)["B_peak"],
            "B_limb_peak": self.values(model)["B_limb_peak"],
            "magnetizing_current": {"peak": m.peak, "rms": m.rms, "fundamental": m.fundamental,
                                    "harmonics_pct": {str(k): v
                                                      for k, v in m.harmonics_pct.items()}},
            "magnetizing_inductance": m.inductance,
            "peak_flux_linkage": self.lambda_peak}
        if self.inrush:  # the estimate's first peak (A) and the flux linkage there
            out["inrush"] = {"current_peak": self.inrush[model],
                             "peak_flux_linkage": self.inrush_linkage[model],
                             "residual_flux": self.residual_flux,
                             "resistance": self.resistance}
        return out


def _limb_area(case: Any) -> float:
    """A_c (m^2): the network branch the driven winding's MMF acts in."""
    from .hand import build_network

    net, _ = build_network(case)
    branch = net.windings[0].branch
    for b in net.branches:
        if b.name == branch:
            return float(getattr(b, "area", math.nan))
    return math.nan


def run_drive(case: Any, fe_result: Any) -> DriveResult:
    """Both models' magnetizing currents and peak flux densities; the FE
    curve is solved on the check's finest mesh, warm-started point to point.

    Raises RunError when a solve does not converge, when the FE's flux
    linkage does not reach lambda_pk within 16 times the hand's peak
    current, or (with ``residual_flux``) when the FE curve cannot be
    continued to the inrush estimate's lambda_inrush (continue_curve) or
    the estimate fails (analytic.magnetizing.DriveError)."""
    from .fe import solve_case_full
    from ..design.case import with_current

    w = case.winding
    lam_pk = drive_linkage(case)
    shape, duty = drive_waveform(case)
    wave: dict[str, Any] = {"shape": shape, "duty": duty}
    i3 = hand_peak_current(case)
    ip = hand_peak_current(case, planar=True)
    # 2 % past the peak current, so the curve's top is not the peak itself to rounding
    curves = {"hand": hand_curve(case, True, 1.02 * ip),
              "hand_3d": hand_curve(case, False, 1.02 * i3)}
    f = w.frequency
    hand_p = magnetizing_current(*curves["hand"], lam_pk, f, **wave)
    hand_3 = magnetizing_current(*curves["hand_3d"], lam_pk, f, **wave)
    # FE currents where the (planar) hand curve passes lambda_pk k / FE_POINTS, and 5 % past it
    inv = PchipInterpolator(curves["hand"][1], curves["hand"][0])
    targets = [float(inv(lam_pk * k / FE_POINTS)) for k in range(1, FE_POINTS)] + [ip, 1.05 * ip]
    mesh = fe_result.solution.mesh  # the finest, whose values the check reports
    # one direct factorisation shared along the curve: each point's Newton steps
    # and its dA/dI are CG solves preconditioned by an earlier point's tangent
    # (the curve is warm-started, so the tangents are close), refactorised
    # only when CG slows down; every solve to its own tolerance as before
    from magcheck.fem2d.linsolve import DirectReuse

    linear = DirectReuse()
    states: list[tuple[float, Any, Any]] = []  # (current, A, dA/dI) of every solved point
    i_fe, lam_fe, peak_fe, l_fe, flux_fe = [0.0], [0.0], [0.0], [math.nan], [0.0]

    def solve(current: float, jump: bool = False) -> None:
        # the tangent predictor from the solved point nearest in current (the
        # previous one along the curve; for the damped inrush peak, solved
        # last, the neighbour it falls beside, not the curve's far top)
        A0 = None
        if states:
            near = min(states, key=lambda st: abs(st[0] - current))
            i0, A_near, slope = near
            A0 = A_near + slope * (current - i0)
            if jump:  # past the knee the curve is concave: the full tangent step overshoots
                A0 = A_near + JUMP_PREDICTOR * slope * (current - i0)
            if jump or near is not states[-1]:
                # a jump (the inrush continuation's steps of up to 3x, or back
                # down the curve): the last factorisation preconditions this
                # tangent poorly (CG ran into its budget), so factorise it at once
                linear.stale = True
        # the curve needs the driven winding's linkage and slope only: no inductance matrix
        fs = solve_case_full(with_current(case, current), mesh, A0=A0, linear_solver=linear,
                             windings=False)
        q = fs.quantities
        states.append((current, fs.solution.A, fs.dA_dI))
        i_fe.append(current)
        lam_fe.append(abs(q.values["flux_linkage"]))
        peak_fe.append(q.peak_B)
        l_fe.append(abs(q.values["incremental_inductance"]))
        flux_fe.append(abs(q.values.get("flux", math.nan)))

    for x in targets:
        solve(x)
    top = targets[-1]
    while lam_fe[-1] < lam_pk:
        top *= 1.25
        if top > 16 * ip:
            raise RunError(f"the FE flux linkage reaches {lam_fe[-1]:.6g} Wb-turns at "
                           f"{i_fe[-1]:.6g} A, short of the drive's {lam_pk:.6g} Wb-turns")
        solve(top)
    curves["fe"] = (np.array(i_fe), np.array(lam_fe))
    try:
        fe_m = magnetizing_current(*curves["fe"], lam_pk, f, **wave)
        # the inversion's own error, bounded by the same waveform from every
        # other point (twice the spacing; the last point, past lambda_pk, kept)
        keep = sorted(set(range(0, len(i_fe), 2)) | {len(i_fe) - 1})
        fe_half = magnetizing_current(np.array(i_fe)[keep], np.array(lam_fe)[keep], lam_pk, f,
                                      **wave)
    except DriveError as exc:
        raise RunError(f"FE magnetizing current: {exc}") from None
    i_at = float(PchipInterpolator(curves["fe"][1], curves["fe"][0])(lam_pk))
    b_fe = float(PchipInterpolator(np.array(i_fe), np.array(peak_fe))(i_at))
    a_c = _limb_area(case)
    b_hand = lam_pk / (w.turns * a_c)
    b_limb_fe = float(PchipInterpolator(np.array(i_fe), np.array(flux_fe))(i_at)) / a_c
    u_lam = fe_result.uncertainty.get("flux_linkage", math.nan)
    l_inc = abs(fe_result.values.get("incremental_inductance", math.nan))
    u_i = u_lam / l_inc if l_inc > 0 else math.nan
    rel = u_i / fe_m.peak if fe_m.peak else math.nan
    # the inversion's error: half the difference to the half set (on the
    # demo transformer's hand curve the error fell 3-fold when the points doubled)
    unc = {"magnetizing_current_peak": u_i + 0.5 * abs(fe_half.peak - fe_m.peak),
           "magnetizing_current_rms": rel * fe_m.rms + 0.5 * abs(fe_half.rms - fe_m.rms),
           "magnetizing_inductance": (rel * fe_m.inductance
                                      + 0.5 * abs(fe_half.inductance - fe_m.inductance)),
           "B_peak": fe_result.uncertainty.get("peak_B", math.nan),
           # the limb flux's own three-mesh uncertainty, relative
           "B_limb_peak": b_limb_fe * fe_result.uncertainty.get("flux", math.nan)
           / abs(fe_result.values.get("flux", math.nan))}
    lam_in, inrush, linkage = math.nan, {}, {}
    if w.residual_flux is not None:
        # past the B-H data the core's slope is mu0 (full saturation): expected here, not
        # worth a warning per solve
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", BHRangeWarning)
            lam_in = inrush_flux_linkage(lam_pk, w.residual_flux)
            tops = {"hand": hand_current_at(case, lam_in, planar=True),
                    "hand_3d": hand_current_at(case, lam_in, planar=False)}
            # each hand curve on from the magnetizing range, evenly in log(current)
            for key, planar, i_mag in (("hand", True, ip), ("hand_3d", False, i3)):
                more = np.geomspace(1.05 * i_mag, 1.02 * tops[key], HAND_POINTS)
                curves[key + "_inrush"] = (
                    np.concatenate([curves[key][0], more]),
                    np.concatenate([curves[key][1], [_lambda(case, x, planar) for x in more]]))
            # on up the FE curve past saturation by tangent steps
            continue_curve(lambda x: solve(x, jump=True), i_fe, lam_fe, l_fe, lam_in, INRUSH_REACH * ip, INRUSH_SOLVES)
            try:
                if w.resistance:
                    # one more solve at the damped first peak, which falls between
                    # the tangent steps' widely spaced points (on the demo 10 and 30 A)
                    first = _first_peak(case, np.array(i_fe), np.array(lam_fe)).current
                    if np.min(np.abs(np.array(i_fe) - first)) > 0.02 * first:
                        solve(first)
                order = np.argsort(i_fe)
                i_all, lam_all = np.array(i_fe)[order], np.array(lam_fe)[order]
                curves["fe_inrush"] = (i_all, lam_all)
                keep = sorted(set(range(0, len(i_all), 2)) | {len(i_all) - 1})
                for key in ("hand", "hand_3d", "fe"):
                    pk = _first_peak(case, *curves[key + "_inrush"])
                    inrush[key], linkage[key] = pk.current, pk.linkage
                half = _first_peak(case, i_all[keep], lam_all[keep]).current
            except DriveError as exc:
                raise RunError(f"inrush estimate: {exc}") from None
            # first order: the flux linkage's relative uncertainty over the
            # curve's slope where it brackets the peak, plus the inversion's
            k = max(1, min(int(np.searchsorted(lam_all, linkage["fe"])), len(i_all) - 1))
            slope = (lam_all[k] - lam_all[k - 1]) / (i_all[k] - i_all[k - 1])
            u_rel = u_lam / abs(fe_result.values.get("flux_linkage", math.nan))
            unc["inrush_current_peak"] = (u_rel * linkage["fe"] / slope
                                          + 0.5 * abs(half - inrush["fe"]))
    return DriveResult(lam_pk, hand_p, hand_3, fe_m, (b_hand, b_fe), curves, unc,
                       lam_in, inrush, w.residual_flux if inrush else math.nan,
                       inrush_linkage=linkage,
                       resistance=w.resistance if inrush and w.resistance is not None else 0.0,
                       B_limb=(b_hand, b_limb_fe))


def _first_peak(case: Any, currents: np.ndarray, linkages: np.ndarray) -> InrushPeak:
    """The inrush estimate's first peak on one model's lambda-i curve
    (analytic.magnetizing.inrush_peak; undamped without ``resistance``)."""
    w = case.winding
    return inrush_peak(currents, linkages, w.voltage, w.frequency, w.residual_flux,
                       w.resistance or 0.0)


def continue_curve(solve: Any, currents: list[float], linkages: list[float],
                   slopes: list[float], target: float, max_current: float,
                   max_solves: int) -> None:
    """Extend a sampled lambda-i curve (lists, appended in place) until its
    flux linkage passes ``target`` (Wb-turns): each step aims the tangent
    (the last incremental inductance ``slopes[-1]``, H) 1 % past it, at most
    3 times the current per step (the curve is concave past saturation, so
    a step lands short of where its tangent aims, never past a point the
    interpolation needs).  ``solve(i)`` solves at i and appends i, lambda
    and dlambda/di to the three lists (as run_drive's warm-started solve
    does for its own bookkeeping).

    Raises RunError when the curve stops short: past ``max_current`` (A),
    after ``max_solves`` solves, or on a slope that is not finite and
    positive (then the step is the 3x cap)."""
    n = 0
    while linkages[-1] < target:
        if currents[-1] > max_current or n >= max_solves:
            raise RunError(f"the FE flux linkage reaches {linkages[-1]:.6g} Wb-turns at "
                           f"{currents[-1]:.6g} A after {n} solves, short of the inrush "
                           f"estimate's {target:.6g} Wb-turns")
        cap = 3.0 * currents[-1]
        l_last = slopes[-1]
        step = ((1.01 * target - linkages[-1]) / l_last if math.isfinite(l_last) and l_last > 0
                else math.inf)
        solve(min(currents[-1] + step, cap))
        n += 1
