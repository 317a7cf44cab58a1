"""Leakage across a winding window, for the magnetic-circuit hand model.

A winding on a limb drives flux not only round the core through the gaps
but also straight across the window to the facing limb.  With the iron
ideal and the field lines across the window straight (the window's width w
small against the length they cross), the magnetic potential difference
across the window at a point t along the limb is, by Ampere's law round
the loop limb - window - facing limb - yoke,

    U(t) = N I u(t),   u(t) = s(t) - sum of the MMF drops the loop crosses / N I,

s(t) the fraction of the winding's ampere-turns on the loop's side of t
(rising linearly along the coil).  The flux crossing the window between t
and t + dt is mu0 d U(t) dt / w, and it links the fraction |u(t)| of the
turns, so the leakage adds the flux linkage N^2 I P_leak with

    P_leak = (mu0 d / w) * integral of u(t)^2 dt        (Wb/A),

and the energy (1/2) N^2 P_leak I^2.  A coil along the whole window with
the gap at one end (u = s, linear from 0 to 1) gives 1/3 of the window's
permeance mu0 d h / w: the classic result for an MMF rising linearly across
a leakage path (Roters, Electromagnetic Devices, Wiley 1941, ch. on leakage
permeance [from memory]); a gap in the facing limb opposite the coil's
middle gives 1/12, since the potential then swings from +1/2 to -1/2.

The other window path, from yoke to yoke across the window in parallel
with the facing limb's gap, is a linear branch of the network itself
(compare.models.hand.window_bypass), since the MMF it sees is the gap's.

The drops are the gaps' and the iron's, from the solved network: a gap's
as a step where the loop crosses it, the yoke's at the lo end as a constant,
the two limbs' spread evenly along them (``slope``).

Assumptions (stated in the report): straight field lines across the window
(no bulging; a wide or short window leaks more by its ends); the iron's
drop spread evenly along each limb; no leakage outside the core
or round the end turns (a planar model has none either).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Sequence

from .constants import mu_0

__all__ = ["WindowLeakage", "window_leakage", "concentric_leakage_inductance", "rogowski_factor"]


class LeakageError(ValueError):
    """Invalid leakage geometry; the message names the value."""


@dataclass(frozen=True)
class WindowLeakage:
    """The leakage across one window.

    permeance : P_leak (Wb/A), the linkage-weighted window permeance:
        flux linkage N^2 I P_leak, energy N^2 P_leak I^2 / 2.
    middle_flux : flux through the limb at ``middle`` per ampere-turn
        (Wb/A): leakage that leaves the limb beyond the middle, or enters it
        before, passes the middle.
    """

    permeance: float
    middle_flux: float


def _u(t: float, coil: tuple[float, float], steps: Sequence[tuple[float, float]],
       offset: float, slope: float, lo: float) -> float:
    c0, c1 = coil
    s = 0.0 if t <= c0 else 1.0 if t >= c1 else (t - c0) / (c1 - c0)
    return s - offset - slope * (t - lo) - sum(share for pos, share in steps if pos < t)


def window_leakage(width: float, depth: float, span: tuple[float, float],
                   coil: tuple[float, float], steps: Sequence[tuple[float, float]] = (),
                   offset: float = 0.0, middle: float | None = None,
                   slope: float = 0.0) -> WindowLeakage:
    """Leakage permeance across a window (module docstring).

    Parameters
    ----------
    width : window width w, limb face to facing limb face (m).
    depth : stack depth d (m).
    span : (lo, hi), the window's extent along the limb (m).
    coil : (lo, hi), the coil's extent along the limb (m), within span.
    steps : (position, share) of each gap the loop crosses beyond that
        position along the limb (gaps in the winding limb and in the facing
        limb), share = its MMF drop over N I.
    offset : the summed shares of gaps the loop always crosses (in the yoke
        at the span's lo end).
    middle : where the limb's flux is measured (default: the span's middle).
    slope : the iron's MMF drop per metre over N I (1/m) along the two limbs
        the loop runs on (winding limb and facing limb, together): with a
        saturating core the potential across the window falls by it.

    The integral is exact: u is piecewise linear, integrated piece by piece
    with Simpson's rule (exact for the quadratic u^2).
    """
    for key, v in (("width", width), ("depth", depth)):
        if not (math.isfinite(v) and v > 0):
            raise LeakageError(f"window leakage: {key} = {v!r} m must be finite and > 0")
    lo, hi = span
    c0, c1 = max(coil[0], lo), min(coil[1], hi)
    if not hi > lo or not c1 > c0:
        raise LeakageError(f"window leakage: coil {coil!r} m does not lie in the window {span!r} m")
    m = 0.5 * (lo + hi) if middle is None else middle
    knots = sorted({lo, hi, c0, c1, m, *(p for p, _ in steps if lo < p < hi)})
    eps = 1e-12 * (hi - lo)
    p_int = 0.0
    flux = 0.0
    for a, b in zip(knots[:-1], knots[1:]):
        if b - a <= eps:
            continue
        ua = _u(a + eps, (c0, c1), steps, offset, slope, lo)
        ub = _u(b - eps, (c0, c1), steps, offset, slope, lo)
        um = 0.5 * (ua + ub)  # u is linear on the piece
        p_int += (b - a) * (ua * ua + 4 * um * um + ub * ub) / 6.0
        # flux passing the middle: leaving beyond it (u > 0), entering before it (u < 0)
        part = (b - a) * _positive_part_mean(ua, ub, sign=1.0 if a >= m else -1.0)
        flux += part
    scale = mu_0 * depth / width
    return WindowLeakage(permeance=scale * p_int, middle_flux=scale * flux)


def _positive_part_mean(ua: float, ub: float, sign: float) -> float:
    """Mean over a piece of max(sign*u, 0) for u linear from ua to ub."""
    a, b = sign * ua, sign * ub
    if a >= 0 and b >= 0:
        return 0.5 * (a + b)
    if a <= 0 and b <= 0:
        return 0.0
    top = max(a, b)
    frac = top / (abs(a) + abs(b))  # the share of the piece where the part is positive
    return 0.5 * top * frac


def concentric_leakage_inductance(turns: float, mean_turn: float, height: float,
                                  inner_build: float, outer_build: float, spacing: float) -> float:
    """Leakage (short-circuit) inductance of two concentric windings,
    referred to the winding of ``turns`` (H):

        L_s = mu0 N^2 (MLT / h_w) (a1/3 + a2/3 + d)

    with a1, a2 the two windings' builds, d the radial space between them,
    h_w the winding height and MLT the mean length of a turn of the pair (m).
    The field between the windings is axial and uniform over h_w, falling
    linearly across each winding (ampere-turns balanced; the classic
    transformer formula, e.g. Kulkarni and Khaparde, Transformer Engineering,
    2004, ch. 3 [from memory]); the end fringing that the Rogowski factor
    corrects is left out, so the formula holds for long, thin windings.
    """
    for name, v in (("turns", turns), ("mean_turn", mean_turn), ("height", height)):
        if not (math.isfinite(v) and v > 0):
            raise ValueError(f"{name} = {v!r} must be finite and positive")
    for name, v in (("inner_build", inner_build), ("outer_build", outer_build),
                    ("spacing", spacing)):
        if not (math.isfinite(v) and v >= 0):
            raise ValueError(f"{name} = {v!r} must be finite and >= 0")
    return (mu_0 * turns ** 2 * mean_turn / height
            * (inner_build / 3.0 + outer_build / 3.0 + spacing))


def rogowski_factor(height: float, inner_build: float, outer_build: float,
                    spacing: float) -> float:
    """Rogowski's factor K_R (dimensionless, < 1) for the end fringing of the
    leakage field of two concentric windings of height h_w:

        K_R = 1 - (1 - exp(-pi h_w / s)) s / (pi h_w),   s = a1 + a2 + d,

    the classic formula's h_w replaced by the equivalent height h_w / K_R
    (the field's return spreads beyond the windings' ends), so that
    L_s = K_R mu0 N^2 (MLT / h_w)(a1/3 + a2/3 + d) (W. Rogowski, 1908, as
    quoted in transformer texts, e.g. Kulkarni and Khaparde, Transformer
    Engineering, 2004, ch. 3 [from memory]).  It assumes windings in open
    space with no iron near their ends; yokes close to the ends straighten
    the field back toward K_R = 1.
    """
    for name, v in (("height", height), ("inner_build", inner_build),
                    ("outer_build", outer_build), ("spacing", spacing)):
        if not (math.isfinite(v) and v >= 0):
            raise ValueError(f"{name} = {v!r} must be finite and >= 0")
    s = inner_build + outer_build + spacing
    if not height > 0:
        raise ValueError(f"height = {height!r} must be positive")
    if s == 0:
        return 1.0
    x = math.pi * height / s
    return 1.0 - (1.0 - math.exp(-x)) / x

