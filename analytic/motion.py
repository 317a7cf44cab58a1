"""A moving armature: the mechanical load line, the static pull-in and drop-out
limits, and the coupled electrical-mechanical motion.

Conventions (SI): ``s`` is the closing stroke in m, 0 at the open stop and
``travel`` at the closed stop; the magnetic force F(i, s) (N) is positive
towards closing; the load F_load(s) (N) is positive towards opening (a spring
resisting the closing); the coil current i in A, the flux linkage lambda in
Wb-turns (V s), time in s.

Physics (docs/references.md section 14):

- Load line: each spring pushes ``preload + rate (s - engage)`` for
  ``s >= engage`` and nothing before (a contact spring engaging at a stroke);
  springs in series share one force, so their rate is 1/sum(1/k_j)
  [exact: Hooke's law]; gravity and any constant load (a keeper's) add a
  constant. Piecewise linear in s.
- Pull-in: the lowest current with F(i, s) > F_load(s) at every stroke of the
  travel: the root in i of min_s [F(i, s) - F_load(s)], F rising with i
  [definition].
- Drop-out (release): the highest current at which the load opens the closed
  armature, the root in i of F(i, travel) - F_load(travel) [definition].
- Coil resistance at a temperature R(T) = R_20 (1 + alpha (T - 20)), copper
  alpha = 0.00393 /K (the value in ``winding_loss.COPPER``) [from memory].
- Motion: d lambda/dt = v(t) - R i, m d2s/dt2 = F(i, s) - F_load(s), i from
  lambda(i, s) by a monotone inversion in i; the stops are terminal events of
  scipy's ``solve_ivp``: an inelastic stop (the armature stays until the net
  force pulls it away) unless a restitution coefficient e is given (the speed
  reverses, times e) [Newton's law of restitution, from memory].
- Energy: v i = R i^2 + dW_field/dt + F ds/dt exactly, W_field(lambda, s) =
  int_0^lambda i dlambda' at constant s [exact: the coenergy/virtual-work
  principle, the same as ``analytic.force``]. The motion integrates the three
  energies alongside, for the bookkeeping check.
- Left out: eddy currents in solid iron (they slow a real actuator), friction,
  the arc of an unsuppressed switch-off (the current is taken to zero at once).
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Callable, Optional, Sequence

import numpy as np
from scipy.integrate import solve_ivp
from scipy.interpolate import PchipInterpolator
from scipy.optimize import brentq, minimize_scalar

from .winding_loss import COPPER

__all__ = ["MotionError", "Spring", "series_springs", "Load", "ForceMap", "GridMap", "pchip_slopes", "GapActuator",
           "coil_resistance", "StaticLimit", "Margin", "load_margin", "pull_in_current", "drop_out_current",
           "release_current",
           "limit_voltage", "Motion", "simulate", "operate", "release"]

Surface = Callable[[float, float], float]  # f(i in A, s in m)


class MotionError(ValueError):
    """A load line, force map or motion setting that cannot be used; the
    message names the quantity and its value."""


def _finite(name: str, value: float, positive: bool = False, nonneg: bool = False) -> float:
    v = float(value)
    if not math.isfinite(v) or (positive and v <= 0.0) or (nonneg and v < 0.0):
        need = " > 0" if positive else (" >= 0" if nonneg else "")
        raise MotionError(f"{name} = {value!r} must be finite{need}")
    return v


@dataclass(frozen=True)
class Spring:
    """One spring of the load: force ``preload + rate (s - engage)`` (N) for
    s >= ``engage`` (m), 0 before; ``rate`` in N/m. ``solid`` (m), if given,
    is the stroke where the spring goes solid: beyond it the force is not
    defined, and a load whose travel passes it is refused."""

    rate: float
    preload: float = 0.0
    engage: float = 0.0
    solid: Optional[float] = None

    def __post_init__(self) -> None:
        _finite("spring rate", self.rate, nonneg=True)
        _finite("spring preload", self.preload, nonneg=True)
        _finite("spring engage stroke", self.engage, nonneg=True)
        if self.solid is not None and _finite("spring solid stroke", self.solid) <= self.engage:
            raise MotionError(f"spring solid stroke = {self.solid!r} m is not beyond its "
                              f"engage stroke {self.engage!r} m")

    def force(self, s):
        """Opening force (N) at stroke s (m), scalar or array."""
        s = np.asarray(s, dtype=float)
        return np.where(s >= self.engage, self.preload + self.rate * (s - self.engage), 0.0)


def series_springs(rates: Sequence[float], preload: float = 0.0, engage: float = 0.0) -> Spring:
    """Springs in series as one: rate 1/sum(1/k_j) (N/m) [exact: one force
    through each], the common preload (N) and engage stroke (m)."""
    ks = [_finite("series spring rate", k, positive=True) for k in rates]
    if not ks:
        raise MotionError("series springs: no rate given")
    return Spring(1.0 / sum(1.0 / k for k in ks), preload, engage)


@dataclass(frozen=True)
class Load:
    """The mechanical load line over the travel [0, ``travel``] (m): the
    springs (in parallel: their forces add), a constant ``weight`` (N, the
    gravity component along the stroke, positive opening; a keeper's load),
    and optionally a table ``table_strokes`` (m) / ``table_forces`` (N)
    added by linear interpolation, which must cover the whole travel."""

    travel: float
    springs: tuple[Spring, ...] = ()
    weight: float = 0.0
    table_strokes: tuple[float, ...] = ()
    table_forces: tuple[float, ...] = ()

    def __post_init__(self) -> None:
        t = _finite("travel", self.travel, positive=True)
        _finite("load weight", self.weight)
        for j, sp in enumerate(self.springs):
            if not isinstance(sp, Spring):
                raise MotionError(f"load spring {j} = {sp!r} is not a Spring")
            if sp.engage > t:
                raise MotionError(f"spring {j} engage stroke = {sp.engage!r} m is beyond the "
                                  f"travel {t!r} m: the load line is not defined as intended")
            if sp.solid is not None and sp.solid < t:
                raise MotionError(f"spring {j} goes solid at {sp.solid!r} m, before the end of "
                                  f"the travel {t!r} m: the load line is not defined over the "
                                  "whole travel")
        xs, fs = self.table_strokes, self.table_forces
        if len(xs) != len(fs):
            raise MotionError(f"load table: {len(xs)} strokes but {len(fs)} forces")
        if xs:
            a = np.asarray(xs, dtype=float)
            if a.size < 2 or not np.all(np.isfinite(a)) or np.any(np.diff(a) <= 0):
                raise MotionError(f"load table strokes = {list(xs)!r} must be finite and rising")
            if not np.all(np.isfinite(np.asarray(fs, dtype=float))):
                raise MotionError(f"load table forces = {list(fs)!r} must be finite")
            if a[0] > 0.0 or a[-1] < t:
                raise MotionError(f"load table covers {a[0]!r} to {a[-1]!r} m, not the whole "
                                  f"travel 0 to {t!r} m: the load line is not defined there")
        if not self.springs and not xs and self.weight == 0.0:
            raise MotionError("load: no spring, table or weight given")

    def force(self, s):
        """F_load(s) (N), positive opening; s in m, scalar or array."""
        s = np.asarray(s, dtype=float)
        out = np.full(s.shape, self.weight, dtype=float)
        for sp in self.springs:
            out = out + sp.force(s)
        if self.table_strokes:
            out = out + np.interp(s, self.table_strokes, self.table_forces)
        return out if out.ndim else float(out)

    def breakpoints(self) -> np.ndarray:
        """The strokes (m) where the load line kinks or jumps, with both ends."""
        pts = [0.0, self.travel] + [sp.engage for sp in self.springs]
        pts += [x for x in self.table_strokes if 0.0 <= x <= self.travel]
        return np.unique(np.asarray(pts, dtype=float))


@dataclass(frozen=True)
class ForceMap:
    """F(i, s) (N) and lambda(i, s) (Wb-turns) on a grid of ``currents`` (A,
    rising, >= 0) x ``strokes`` (m, rising): shape-preserving monotone cubic
    interpolation (scipy ``PchipInterpolator``, Fritsch-Carlson) in i along
    each stroke, then in s; refused if lambda does not rise with i."""

    currents: tuple[float, ...]
    strokes: tuple[float, ...]
    forces: tuple[tuple[float, ...], ...]
    linkages: tuple[tuple[float, ...], ...]

    def __post_init__(self) -> None:
        i = np.asarray(self.currents, dtype=float)
        s = np.asarray(self.strokes, dtype=float)
        for name, a in (("currents", i), ("strokes", s)):
            if a.ndim != 1 or a.size < 2 or not np.all(np.isfinite(a)) or np.any(np.diff(a) <= 0):
                raise MotionError(f"force map {name} = {a.tolist()!r} must be >= 2 finite "
                                  "rising values")
        for name, v in (("forces", self.forces), ("linkages", self.linkages)):
            a = np.asarray(v, dtype=float)
            if a.shape != (i.size, s.size) or not np.all(np.isfinite(a)):
                raise MotionError(f"force map {name}: shape {a.shape} must be currents x strokes "
                                  f"{(i.size, s.size)}, all finite")
        if np.any(np.diff(np.asarray(self.linkages, dtype=float), axis=0) <= 0):
            raise MotionError("force map linkages do not rise with the current at every stroke")

    def _eval(self, table, i: float, s: float) -> float:
        col = PchipInterpolator(self.currents, np.asarray(table, dtype=float), axis=0)(i)
        return float(PchipInterpolator(self.strokes, col)(s))

    def force(self, i: float, s: float) -> float:
        """F(i, s) in N."""
        return self._eval(self.forces, i, s)

    def linkage(self, i: float, s: float) -> float:
        """lambda(i, s) in Wb-turns."""
        return self._eval(self.linkages, i, s)


def pchip_slopes(x: np.ndarray, y: np.ndarray) -> np.ndarray:
    """The node slopes of the monotone piecewise cubic Hermite interpolant of
    ``y`` (last axis) on the rising ``x``: Fritsch and Carlson's weighted
    harmonic mean inside (0 where the secants change sign), the one-sided
    three-point formula at the ends limited to keep the shape (F. N. Fritsch,
    R. E. Carlson, SIAM J. Numer. Anal. 17(2), 1980; the rule scipy's
    ``PchipInterpolator`` uses, docs/references.md section 14)."""
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    h = np.diff(x)
    m = np.diff(y, axis=-1) / h
    d = np.zeros_like(y)
    if x.size == 2:
        d[..., 0] = d[..., 1] = m[..., 0]
        return d
    w1 = 2.0 * h[1:] + h[:-1]
    w2 = h[1:] + 2.0 * h[:-1]
    same = (m[..., :-1] * m[..., 1:]) > 0.0
    with np.errstate(divide="ignore", invalid="ignore"):
        hm = (w1 + w2) / (w1 / m[..., :-1] + w2 / m[..., 1:])
    d[..., 1:-1] = np.where(same, hm, 0.0)

    def end(h0, h1, m0, m1):
        e = ((2.0 * h0 + h1) * m0 - h0 * m1) / (h0 + h1)
        e = np.where(np.sign(e) != np.sign(m0), 0.0, e)
        return np.where((np.sign(m0) != np.sign(m1)) & (np.abs(e) > np.abs(3.0 * m0)),
                        3.0 * m0, e)

    d[..., 0] = end(h[0], h[1], m[..., 0], m[..., 1])
    d[..., -1] = end(h[-1], h[-2], m[..., -1], m[..., -2])
    return d


def _slopes_1d(x: Sequence[float], y: Sequence[float]) -> list[float]:
    """:func:`pchip_slopes` of one row, in plain Python (a map's handful of
    points: numpy's per-call cost would dominate the motion's integration)."""
    n = len(x)
    h = [x[k + 1] - x[k] for k in range(n - 1)]
    m = [(y[k + 1] - y[k]) / h[k] for k in range(n - 1)]
    if n == 2:
        return [m[0], m[0]]
    d = [0.0] * n
    for k in range(1, n - 1):
        if m[k - 1] * m[k] > 0.0:
            w1, w2 = 2.0 * h[k] + h[k - 1], h[k] + 2.0 * h[k - 1]
            d[k] = (w1 + w2) / (w1 / m[k - 1] + w2 / m[k])

    def sign(v: float) -> float:
        return (v > 0.0) - (v < 0.0)

    def end(h0: float, h1: float, m0: float, m1: float) -> float:
        e = ((2.0 * h0 + h1) * m0 - h0 * m1) / (h0 + h1)
        if sign(e) != sign(m0):
            return 0.0
        if sign(m0) != sign(m1) and abs(e) > abs(3.0 * m0):
            return 3.0 * m0
        return e

    d[0] = end(h[0], h[1], m[0], m[1])
    d[-1] = end(h[-1], h[-2], m[-1], m[-2])
    return d


class GridMap:
    """F(i, s) (N) and lambda(i, s) (Wb-turns) on a grid of ``currents`` (A,
    rising) x ``strokes`` (m, rising), interpolated monotonically: in s first
    (scipy's ``PchipInterpolator`` along each current's row), then in i by
    the monotone cubic Hermite (:func:`pchip_slopes`) through the values at
    that stroke; beyond the currents, linear with the end slope. The current
    from lambda, :meth:`current`, inverts the same cubic exactly (its piece
    found by bisection and Newton steps), so lambda(current(lam, s), s) = lam.
    Refused (MotionError) where lambda does not rise with i at a grid stroke.
    With ``gap_open`` (m, the working gap at s = 0, closing as g = gap_open -
    s) the force is interpolated in s as F g^2, the ideal gap's law divided
    out (docs/references.md section 14), a far smoother function of s where
    the force grows steeply as the gap closes.  With ``square`` (no magnet:
    F even in i) the force is interpolated in i^2, in which it is linear
    below saturation (F = (i^2/2) dL/ds), where a cubic in i bends the
    parabola near zero current.  Faster than :class:`ForceMap` (no
    interpolant built per call): the motion integrates with it."""

    def __init__(self, currents: "Sequence[float] | np.ndarray",
                 strokes: "Sequence[float] | np.ndarray", forces, linkages,
                 gap_open: Optional[float] = None, square: bool = False):
        i = np.asarray(currents, dtype=float)
        s = np.asarray(strokes, dtype=float)
        for name, a in (("currents", i), ("strokes", s)):
            if a.ndim != 1 or a.size < 2 or not np.all(np.isfinite(a)) or np.any(np.diff(a) <= 0):
                raise MotionError(f"map {name} = {a.tolist()!r} must be >= 2 finite rising values")
        f = np.asarray(forces, dtype=float)
        lam = np.asarray(linkages, dtype=float)
        for name, a in (("forces", f), ("linkages", lam)):
            if a.shape != (i.size, s.size) or not np.all(np.isfinite(a)):
                raise MotionError(f"map {name}: shape {a.shape} must be currents x strokes "
                                  f"{(i.size, s.size)}, all finite")
        if np.any(np.diff(lam, axis=0) <= 0):
            raise MotionError("map linkages do not rise with the current at every stroke")
        self.currents, self.strokes, self.forces, self.linkages = i, s, f, lam
        self.gap_open = gap_open
        self.square = bool(square)
        if square and i[0] < 0.0:
            raise MotionError("map: the force in i^2 needs currents >= 0")
        self._fx = i * i if square else i  # the force's abscissa
        if gap_open is not None:
            if not np.all(gap_open - s > 0.0):
                raise MotionError(f"map gap at the open stop = {gap_open!r} m must exceed "
                                  "every stroke")
            f = f * (gap_open - s) ** 2  # the ideal gap's 1/g^2 divided out
        both = np.concatenate([f, lam], axis=0)  # (2 n_i) x n_s
        self._in_s = PchipInterpolator(s, both, axis=1, extrapolate=True)
        self._n = i.size
        self._last: Optional[tuple[float, tuple]] = None
        self._fxl, self._il = self._fx.tolist(), i.tolist()

    def _at(self, s: float) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        """(F, dF/dx, lambda, dlambda/di) at the grid's currents at stroke s:
        the columns and their monotone-cubic slopes, kept for the last s (the
        motion asks for the current and then the force at one stroke)."""
        key = float(s)
        if self._last is not None and self._last[0] == key:
            return self._last[1]
        f, lam = self._columns(key)
        out = (f, np.array(_slopes_1d(self._fxl, f.tolist())), lam,
               np.array(_slopes_1d(self._il, lam.tolist())))
        self._last = (key, out)
        return out

    def _columns(self, s: float) -> tuple[np.ndarray, np.ndarray]:
        s = min(max(float(s), self.strokes[0]), self.strokes[-1])
        v = self._in_s(s)
        f = v[:self._n]
        if self.gap_open is not None:
            f = f / (self.gap_open - s) ** 2
        return f, v[self._n:]

    def _hermite(self, y: np.ndarray, d: np.ndarray, c: float,
                 x: Optional[np.ndarray] = None) -> tuple[float, float]:
        """The cubic through (x, y) (x the currents by default) with slopes d
        at ``c``: (value, slope)."""
        x = self.currents if x is None else x
        if c <= x[0]:
            return float(y[0] + d[0] * (c - x[0])), float(d[0])
        if c >= x[-1]:
            return float(y[-1] + d[-1] * (c - x[-1])), float(d[-1])
        k = int(np.searchsorted(x, c)) - 1
        h = x[k + 1] - x[k]
        t = (c - x[k]) / h
        t2, t3 = t * t, t * t * t
        val = ((2 * t3 - 3 * t2 + 1) * y[k] + (t3 - 2 * t2 + t) * h * d[k]
               + (-2 * t3 + 3 * t2) * y[k + 1] + (t3 - t2) * h * d[k + 1])
        der = ((6 * t2 - 6 * t) * y[k] / h + (3 * t2 - 4 * t + 1) * d[k]
               + (-6 * t2 + 6 * t) * y[k + 1] / h + (3 * t2 - 2 * t) * d[k + 1])
        return float(val), float(der)

    def force(self, i: float, s: float) -> float:
        """F(i, s) in N."""
        f, df, _, _ = self._at(s)
        c = float(i) * float(i) if self.square else float(i)
        return self._hermite(f, df, c, self._fx)[0]

    def linkage(self, i: float, s: float) -> float:
        """lambda(i, s) in Wb-turns."""
        _, _, lam, dl = self._at(s)
        return self._hermite(lam, dl, float(i))[0]

    def current(self, lam: float, s: float) -> float:
        """i (A) with lambda(i, s) = ``lam``: the monotone cubic inverted."""
        _, _, col, d = self._at(s)
        x = self.currents
        lam = float(lam)
        if lam <= col[0]:
            return float(x[0] + (lam - col[0]) / d[0]) if d[0] > 0 else float(x[0])
        if lam >= col[-1]:
            return float(x[-1] + (lam - col[-1]) / d[-1]) if d[-1] > 0 else float(x[-1])
        k = int(np.searchsorted(col, lam)) - 1
        lo, hi = float(x[k]), float(x[k + 1])
        c = lo + (hi - lo) * (lam - col[k]) / (col[k + 1] - col[k])
        for _ in range(60):
            v, dv = self._hermite(col, d, c)
            if abs(v - lam) <= 1e-14 * max(abs(lam), abs(col[-1])) or hi - lo <= 1e-15 * x[-1]:
                break
            if v > lam:
                hi = c
            else:
                lo = c
            nxt = c - (v - lam) / dv if dv > 0 else math.inf
            c = nxt if lo < nxt < hi else 0.5 * (lo + hi)
        return float(c)


@dataclass(frozen=True)
class GapActuator:
    """A linear ideal-gap actuator (ideal iron, no fringing):
    L(s) = K / (g_closed + travel - s), K = N^2 mu0 A (H m), the gap g in m;
    lambda = L i, F = (1/2) i^2 dL/ds = i^2 K / (2 g^2) (the virtual-work force
    of a linear circuit, docs/references.md section 14)."""

    k: float
    g_closed: float
    travel: float

    def __post_init__(self) -> None:
        _finite("gap constant K", self.k, positive=True)
        _finite("closed gap", self.g_closed, positive=True)
        _finite("travel", self.travel, positive=True)

    def gap(self, s: float) -> float:
        return self.g_closed + self.travel - s

    def inductance(self, s: float) -> float:
        return self.k / self.gap(s)

    def linkage(self, i: float, s: float) -> float:
        return self.inductance(s) * i

    def force(self, i: float, s: float) -> float:
        return 0.5 * i * i * self.k / self.gap(s) ** 2

    def current(self, lam: float, s: float) -> float:
        return lam / self.inductance(s)

    def field_energy(self, lam: float, s: float) -> float:
        return 0.5 * lam * lam / self.inductance(s)


def coil_resistance(r20: float, temperature: float = 20.0, alpha: float = COPPER.alpha) -> float:
    """R(T) = R_20 (1 + alpha (T - 20)) (ohm), T in degC, alpha in 1/K
    (copper 0.00393 /K, from memory; docs/references.md section 14)."""
    r = _finite("coil resistance at 20 degC", r20, positive=True) * (
        1.0 + _finite("alpha", alpha) * (_finite("coil temperature", temperature) - 20.0))
    if r <= 0.0:
        raise MotionError(f"coil temperature = {temperature!r} degC gives resistance {r!r} <= 0")
    return r


@dataclass(frozen=True)
class StaticLimit:
    """A static limit: ``current`` (A) and the ``stroke`` (m) that sets it
    (the tightest point of the margin between force and load)."""

    current: float
    stroke: float


def _min_margin(force: Surface, load: Load, i: float, samples: int) -> tuple[float, float]:
    """(min over the travel of F(i, s) - F_load(s) in N, the stroke in m):
    a grid with the load's breakpoints, refined by a bounded search between
    the best grid point's neighbours."""
    grid = np.unique(np.concatenate([np.linspace(0.0, load.travel, samples), load.breakpoints()]))
    m = np.array([force(i, s) for s in grid]) - load.force(grid)
    j = int(np.argmin(m))
    best_s, best_m = float(grid[j]), float(m[j])
    lo, hi = grid[max(j - 1, 0)], grid[min(j + 1, grid.size - 1)]
    if hi > lo:
        r = minimize_scalar(lambda s: force(i, s) - load.force(s), bounds=(lo, hi),
                            method="bounded", options={"xatol": 1e-12 * load.travel})
        if r.fun < best_m:
            best_s, best_m = float(r.x), float(r.fun)
    return best_m, best_s


@dataclass(frozen=True)
class Margin:
    """The tightest point of the margin between the force curve at one
    current and the load line: ``margin`` = min_s [F(i, s) - F_load(s)] (N),
    at ``stroke`` (m); negative where the load wins."""

    margin: float
    stroke: float


def load_margin(force: Surface, load: Load, current: float, samples: int = 201) -> Margin:
    """The force-load margin at ``current`` (A) over the travel, its tightest
    stroke named (a grid of ``samples`` strokes with the load's breakpoints,
    refined by a bounded search)."""
    m, s = _min_margin(force, load, _finite("current", current), samples)
    return Margin(m, s)


def _bracket_root(fun: Callable[[float], float], i_max: float, what: str) -> float:
    if fun(i_max) <= 0.0:
        raise MotionError(f"{what}: the force does not exceed the load below the largest "
                          f"current {i_max!r} A")
    if fun(0.0) > 0.0:
        return 0.0
    return float(brentq(fun, 0.0, i_max, xtol=1e-13 * i_max, rtol=1e-13))


def pull_in_current(force: Surface, load: Load, i_max: float, samples: int = 201) -> StaticLimit:
    """The pull-in current (A): the lowest i in [0, ``i_max``] with
    F(i, s) > F_load(s) at every stroke of the travel, F rising with i; the
    root of the minimum margin over s (brentq), the tightest stroke named."""
    _finite("largest current", i_max, positive=True)
    i = _bracket_root(lambda c: _min_margin(force, load, c, samples)[0], i_max, "pull-in")
    return StaticLimit(i, _min_margin(force, load, i, samples)[1])


def drop_out_current(force: Surface, load: Load, i_max: float) -> StaticLimit:
    """The drop-out (release) current (A): the highest i at which the load
    opens the closed armature, F(i, travel) = F_load(travel), F rising with i."""
    _finite("largest current", i_max, positive=True)
    s = load.travel
    i = _bracket_root(lambda c: force(c, s) - float(load.force(s)), i_max, "drop-out")
    return StaticLimit(i, s)


def release_current(force: Surface, load: Load, i_min: float, samples: int = 201) -> StaticLimit:
    """A holding magnet's release current (A, negative: the coil opposing
    the magnet): the first current from zero downward at which the holding
    force at the closed stop, F(i, travel), falls to the load there.

    With a magnet F(i) is not even in i: it falls as the reverse current
    cancels the magnet's flux, has its least value where the gap flux is
    zero, and rises again as the coil overpowers the magnet (the flux
    reversed), crossing the load a second time; that second crossing is no
    release (the keeper is held again) and is not returned.  Sampled at
    ``samples`` currents from 0 to ``i_min`` (< 0) for the first sign change of
    F - F_load, then brentq inside it.  Raises MotionError when the load does
    not hold at zero current or no crossing lies above ``i_min``."""
    if not (math.isfinite(i_min) and i_min < 0.0):
        raise MotionError(f"lowest current = {i_min!r} A must be finite and negative")
    s = load.travel
    f_load = float(load.force(s))

    def fun(c: float) -> float:
        return force(c, s) - f_load

    if fun(0.0) <= 0.0:
        raise MotionError("release: the load opens the closed armature at zero current "
                          "(nothing to release)")
    grid = np.linspace(0.0, i_min, samples)
    prev = 0.0
    for c in grid[1:]:
        if fun(float(c)) <= 0.0:
            i = float(brentq(fun, float(c), prev, xtol=1e-13 * abs(i_min), rtol=1e-13))
            return StaticLimit(i, s)
        prev = float(c)
    raise MotionError(f"release: the holding force stays above the load down to {i_min!r} A")


def limit_voltage(limit: StaticLimit, r20: float, temperature: float = 20.0,
                  alpha: float = COPPER.alpha) -> float:
    """The coil voltage (V) of a static limit: I R(T)."""
    return limit.current * coil_resistance(r20, temperature, alpha)


@dataclass(frozen=True)
class Motion:
    """A simulated motion: samples ``t`` (s), ``i`` (A), ``lam`` (Wb-turns),
    ``s`` (m), ``v`` (m/s); the energies from t0 (J): ``e_in`` = int v_coil i
    dt, ``e_copper`` = int R i^2 dt, ``w_mech`` = int F ds; ``closed_time`` /
    ``open_time`` (s) the first arrival at the closed / open stop (None if
    not reached), ``impact_speed`` (m/s) there; ``i_motion_start`` and
    ``i_motion_peak``, ``i_motion_min`` (A): the current when the armature
    starts, its peak while moving and its least value after that peak (the
    dip, the back-EMF signature; sampled at the integrator's steps: pass
    ``max_step`` for a finer trace)."""

    t: np.ndarray = field(repr=False)
    i: np.ndarray = field(repr=False)
    lam: np.ndarray = field(repr=False)
    s: np.ndarray = field(repr=False)
    v: np.ndarray = field(repr=False)
    e_in: float
    e_copper: float
    w_mech: float
    closed_time: Optional[float]
    open_time: Optional[float]
    impact_speed: Optional[float]
    i_motion_start: Optional[float]
    i_motion_peak: Optional[float]
    i_motion_min: Optional[float]


def _inverse(linkage: Surface, i_max: float) -> Callable[[float, float], float]:
    """i(lambda, s) by a bracketed root of the monotone lambda(i, s) - lambda."""
    def current(lam: float, s: float) -> float:
        lo, hi = -i_max, i_max
        flo, fhi = linkage(lo, s) - lam, linkage(hi, s) - lam
        if flo > 0.0 or fhi < 0.0:
            raise MotionError(f"flux linkage {lam!r} Wb at stroke {s!r} m is outside the map's "
                              f"currents +-{i_max!r} A")
        return float(brentq(lambda c: linkage(c, s) - lam, lo, hi, xtol=1e-14 * i_max,
                            rtol=1e-14))
    return current


def simulate(linkage: Surface, force: Surface, load: Load, mass: float, resistance: float,
             voltage, t_end: float, *, s0: float = 0.0, i0: float = 0.0,
             current: Optional[Callable[[float, float], float]] = None, i_max: float = 1e3,
             restitution: float = 0.0, held: bool = False, diode_drop: Optional[float] = None,
             stop_when: Optional[str] = None, rtol: float = 1e-10, atol: float = 1e-14,
             max_step: float = math.inf) -> Motion:
    """Integrate d lambda/dt = v(t) - R i, m d2s/dt2 = F(i, s) - F_load(s) from
    t = 0 to ``t_end`` (s), starting at rest at stroke ``s0`` with current
    ``i0``. ``voltage`` is a constant (V) or a table ((t...), (v...)) linearly
    interpolated; ``resistance`` the circuit's (ohm: coil plus any
    suppression resistor); ``diode_drop`` (V): a suppression diode, the coil
    voltage -diode_drop while i > 0 and the circuit open (i = 0) after.
    ``current`` is i(lambda, s) if known, else a monotone inversion of
    ``linkage`` in [-i_max, i_max]. ``held``: the armature does not move (an
    infinite mass). ``stop_when`` "closed" / "open" ends at that stop.
    Stops at 0 and ``load.travel``: inelastic unless ``restitution`` > 0."""
    m = _finite("mass", mass, positive=True)
    r = _finite("resistance", resistance, nonneg=True)
    _finite("end time", t_end, positive=True)
    e = _finite("restitution", restitution, nonneg=True)
    if e >= 1.0:
        raise MotionError(f"restitution = {restitution!r} must be below 1")
    travel = load.travel
    if not 0.0 <= s0 <= travel:
        raise MotionError(f"start stroke = {s0!r} m is outside the travel 0 to {travel!r} m")
    if stop_when not in (None, "closed", "open"):
        raise MotionError(f"stop_when = {stop_when!r} must be 'closed' or 'open'")
    if isinstance(voltage, (int, float)):
        v0 = _finite("voltage", voltage)

        def volt(t: float) -> float:
            return v0
    else:
        tv, vv = (np.asarray(a, dtype=float) for a in voltage)
        if tv.ndim != 1 or tv.size < 2 or tv.shape != vv.shape or np.any(np.diff(tv) <= 0):
            raise MotionError("voltage table: times must rise, one voltage each")

        def volt(t: float) -> float:
            return float(np.interp(t, tv, vv))
    cur = current if current is not None else _inverse(linkage, _finite("i_max", i_max,
                                                                        positive=True))
    diode = None if diode_drop is None else _finite("diode drop", diode_drop, nonneg=True)

    def net(i: float, s: float) -> float:
        return force(i, s) - float(load.force(s))

    def rhs(mode: str, circuit_open: bool):
        def f(t: float, y: np.ndarray) -> np.ndarray:
            lam, s, vel = y[0], y[1], y[2]
            i = 0.0 if circuit_open else cur(lam, s)
            vc = (-diode if diode is not None else volt(t)) if not circuit_open else 0.0
            dlam = vc - r * i
            if circuit_open:
                dlam = 0.0
            fm = force(i, s)
            if mode == "free":
                ds, dv = vel, (fm - float(load.force(s))) / m
            else:
                ds, dv = 0.0, 0.0
            return np.array([dlam, ds, dv, vc * i, r * i * i, fm * ds])
        return f

    y = np.array([linkage(i0, s0), s0, 0.0, 0.0, 0.0, 0.0])
    t0 = 0.0
    circuit_open = diode is not None and i0 <= 0.0
    ts, ys = [np.array([t0])], [y[:, None]]
    closed_t = open_t = speed = i_start = None

    def mode_at(s: float, i: float) -> str:
        if held:
            return "held"
        if s >= travel and net(i, s) >= 0.0:
            return "stop"
        if s <= 0.0 and net(i, s) <= 0.0:
            return "stop"
        return "free"

    eps_s = 1e-12 * travel  # the stop events' band (m): a start on a stop is not a hit
    eps_f = 1e-12 * max(1.0, abs(float(load.force(travel))))  # N: leaving needs a net pull
    left = False
    for _ in range(10000):
        i_now = 0.0 if circuit_open else cur(y[0], y[1])
        mode = "free" if (left and not held) else mode_at(y[1], i_now)
        left = False
        if mode == "free" and i_start is None:
            i_start = i_now
        events = []
        if mode == "free":
            def hit_closed(t, yy):
                return yy[1] - travel - eps_s
            hit_closed.terminal, hit_closed.direction = True, 1.0  # type: ignore[attr-defined]

            def hit_open(t, yy):
                return yy[1] + eps_s
            hit_open.terminal, hit_open.direction = True, -1.0  # type: ignore[attr-defined]
            events += [hit_closed, hit_open]
        elif mode == "stop":
            at_closed = y[1] >= travel

            def leave(t, yy, at_closed=at_closed):
                ii = 0.0 if circuit_open else cur(yy[0], yy[1])
                return net(ii, yy[1]) * (-1.0 if at_closed else 1.0) - eps_f
            leave.terminal = True  # type: ignore[attr-defined]
            leave.direction = 1.0  # type: ignore[attr-defined]
            events.append(leave)
        if diode is not None and not circuit_open:
            def zero_current(t, yy):
                return cur(yy[0], yy[1])
            zero_current.terminal, zero_current.direction = True, -1.0  # type: ignore[attr-defined]
            events.append(zero_current)
        sol = solve_ivp(rhs("free" if mode == "free" else "stop", circuit_open), (t0, t_end), y,
                        method="DOP853", rtol=rtol, atol=atol, events=events or None,
                        max_step=max_step, dense_output=False)
        if sol.status < 0:
            raise MotionError(f"the motion integration failed: {sol.message}")
        ts.append(sol.t[1:])
        ys.append(sol.y[:, 1:])
        y = sol.y[:, -1].copy()
        t0 = float(sol.t[-1])
        if sol.status == 0:
            break
        names = [ev.__name__ for ev, te in zip(events, sol.t_events) if len(te)]
        left = "leave" in names
        if "zero_current" in names:
            circuit_open = True
            y[0] = linkage(0.0, y[1])
        if "hit_closed" in names:
            y[1] = travel
            if closed_t is None:
                closed_t, speed = t0, float(y[2])
            y[2] = -e * y[2]
            if stop_when == "closed":
                break
        elif "hit_open" in names:
            y[1] = 0.0
            if open_t is None:
                open_t, speed = t0, float(y[2])
            y[2] = -e * y[2]
            if stop_when == "open":
                break
        if t0 >= t_end:
            break
    else:  # pragma: no cover - a chattering stop
        raise MotionError("the motion did not finish in 10000 segments (a chattering stop?)")
    t = np.concatenate(ts)
    yy = np.concatenate(ys, axis=1)
    lam_a, s_a = yy[0], yy[1]
    i_a = np.array([cur(a, b) for a, b in zip(lam_a, s_a)])
    if diode is not None:
        i_a = np.maximum(i_a, 0.0)
    moving = np.flatnonzero(np.abs(yy[2]) > 0.0)
    i_peak = i_min = None
    if moving.size:
        seg = i_a[moving[0]:moving[-1] + 1]
        k = int(np.argmax(seg))
        i_peak, i_min = float(seg[k]), float(np.min(seg[k:]))
    return Motion(t, i_a, lam_a, s_a, yy[2], float(y[3]), float(y[4]), float(y[5]),
                  closed_t, open_t, speed, i_start, i_peak, i_min)


def operate(linkage: Surface, force: Surface, load: Load, mass: float, resistance: float,
            voltage, t_end: float, **kw) -> Motion:
    """Switch-on from the open stop at rest and zero current until closed:
    ``Motion.closed_time`` is the operate time (s)."""
    return simulate(linkage, force, load, mass, resistance, voltage, t_end, s0=0.0, i0=0.0,
                    stop_when="closed", **kw)


def release(linkage: Surface, force: Surface, load: Load, mass: float, resistance: float,
            i_hold: float, t_end: float, suppression: Optional[float] = None,
            diode_drop: Optional[float] = None, **kw) -> Motion:
    """Switch-off from the closed stop at the holding current ``i_hold`` (A)
    until open: ``Motion.open_time`` is the release time (s). With a
    suppression resistor (ohm) across the coil the current decays through
    R + R_s; with a diode (drop in V) through R at -drop until it stops;
    with neither the current is taken to zero at once."""
    if suppression is None and diode_drop is None:
        return simulate(linkage, force, load, mass, 1.0, 0.0, t_end, s0=load.travel, i0=0.0,
                        stop_when="open", **kw)
    rs = 0.0 if suppression is None else _finite("suppression resistor", suppression,
                                                 nonneg=True)
    return simulate(linkage, force, load, mass, resistance + rs, 0.0, t_end, s0=load.travel,
                    i0=i_hold, diode_drop=diode_drop, stop_when="open", **kw)
