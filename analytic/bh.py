"""Single-valued B-H curves (first-quadrant tables, odd-symmetric use) and linear materials.

A :class:`BHCurve` is built from a measured or invented table of points
(H_i, B_i).  Between the points H(B) is a monotone C1 piecewise cubic Hermite
interpolant (Fritsch & Carlson, "Monotone piecewise cubic interpolation",
SIAM J. Numer. Anal. 17, 1980 [confirmed as cited]); beyond the last point the
curve continues with slope exactly mu0, B = mu0*H + j_s (docs/references.md section 3,
physically required).

Construction, chosen so that every property below holds by design:

* Knot slopes m_i = dH/dB at interior knots are the weighted harmonic mean of
  the two neighbouring chord slopes (Fritsch-Butland form), clamped to
  ``_SLOPE_CLAMP`` (2.9) times the smaller neighbouring chord slope.  With both
  end slopes in (0, 2.9*d] the Hermite cubic of each segment has a strictly
  positive derivative (the Fritsch-Carlson box [0, 3]^2 touches the
  non-monotone region only at its corner (3, 3)), so H(B) is strictly
  increasing and therefore nu + 2 s dnu/ds = dH/dB > 0 everywhere.
* First segment [0, B_1]: the slope at the origin is m_0 = (3 d_0 - m_1)/2,
  which makes the quadratic coefficient of the cubic vanish, so
  H = m_0 B + c_3 B^3 there, i.e. nu(s) = m_0 + c_3 s is a polynomial in
  s = B^2 and dnu/ds = c_3 is finite at zero field.  Since m_1 <= 2.9 d_0,
  m_0 >= 0.05 d_0 > 0.  dnu/ds may be negative (permeability rising with field).
* Last knot: slope min(1/mu0, 2.9 d_last).  When the last chord slope of the
  table is below 2.9*mu0 (true for all built-in curves) this equals 1/mu0 and
  the join to the mu0 extrapolation is C1; otherwise it is C0 only (reported by
  :attr:`BHCurve.c1_at_last_point`).  Inside the last segment the differential
  permeability may dip slightly below mu0; chords never do.
"""

from __future__ import annotations

import logging
import math
import warnings
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike, NDArray
from .constants import mu_0

logger = logging.getLogger(__name__)

#: Unit factors to A/m. 1 Oe = 1000/(4 pi) A/m by definition.
H_UNITS: dict[str, float] = {"A/m": 1.0, "kA/m": 1e3, "Oe": 1000.0 / (4.0 * math.pi)}
#: Unit factors to T. 1 G = 1e-4 T by definition.
B_UNITS: dict[str, float] = {"T": 1.0, "mT": 1e-3, "G": 1e-4, "kG": 0.1}

_MIN_POINTS = 4
_SLOPE_CLAMP = 2.9  # < 3: keeps each Hermite segment strictly monotone (Fritsch & Carlson 1980)
_CHORD_RTOL = 1e-12  # rounding allowance when checking chord slope >= mu0


class BHDataError(ValueError):
    """Bad B-H data or material parameters; the message names the row/key and value."""


class BHRangeWarning(UserWarning):
    """A flux density beyond the last measured point of a B-H curve was used.

    ``material`` names the curve (a caller may say it once per material)."""

    material: str = ""


def _as_float_array(x: ArrayLike) -> NDArray[np.float64]:
    return np.asarray(x, dtype=float)


def _odd(fun, x: ArrayLike) -> NDArray[np.float64]:
    """Evaluate ``fun(|x|) * sign(x)`` (odd extension of a first-quadrant law)."""
    x = _as_float_array(x)
    return np.sign(x) * fun(np.abs(x))


def _even(fun, x: ArrayLike) -> NDArray[np.float64]:
    """Evaluate ``fun(|x|)`` (even extension)."""
    return fun(np.abs(_as_float_array(x)))


# --------------------------------------------------------------------------- validation


def _validate_table(h: NDArray, b: NDArray) -> tuple[NDArray, NDArray]:
    """Check a first-quadrant table and return it with the origin prepended if absent.

    Row numbers in messages are 1-based data rows of the table as given.
    """
    if h.ndim != 1 or b.ndim != 1:
        raise BHDataError(f"B-H table: H and B must be 1-D sequences, got shapes {h.shape} and {b.shape}")
    if h.size != b.size:
        raise BHDataError(f"B-H table: H has {h.size} values but B has {b.size}")
    for row, (hv, bv) in enumerate(zip(h, b), start=1):
        if not (math.isfinite(hv) and math.isfinite(bv)):
            raise BHDataError(f"B-H table row {row}: H = {hv} A/m, B = {bv} T is not a finite number")
        if hv < 0 or bv < 0:
            raise BHDataError(
                f"B-H table row {row}: H = {hv:g} A/m, B = {bv:g} T is negative "
                "(give the first-quadrant curve; the negative branch is implied by symmetry)"
            )
    offset = 0
    if h.size and h[0] == 0.0 and b[0] == 0.0:
        offset = 1
    elif h.size and (h[0] == 0.0) != (b[0] == 0.0):
        raise BHDataError(
            f"B-H table row 1: H = {h[0]:g} A/m, B = {b[0]:g} T; a single-valued curve "
            "passes through the origin (H = 0 and B = 0 together)"
        )
    if h.size + (1 - offset) < _MIN_POINTS:
        raise BHDataError(
            f"B-H table: {h.size} rows give {h.size + 1 - offset} points including the origin; "
            f"at least {_MIN_POINTS} are needed"
        )
    for i in range(1, h.size):
        row = i + 1
        if not b[i] > b[i - 1]:
            raise BHDataError(
                f"B-H table row {row}: B = {b[i]:g} T is not greater than the previous row's {b[i - 1]:g} T"
            )
        if not h[i] > h[i - 1]:
            raise BHDataError(
                f"B-H table row {row}: H = {h[i]:g} A/m is not greater than the previous row's {h[i - 1]:g} A/m"
            )
    hh = h if offset else np.concatenate(([0.0], h))
    bb = b if offset else np.concatenate(([0.0], b))
    for k in range(1, hh.size):
        chord = (bb[k] - bb[k - 1]) / (hh[k] - hh[k - 1])
        if chord < mu_0 * (1.0 - _CHORD_RTOL):
            row = k + 1 - (1 - offset)
            ratio = chord / mu_0
            shown = f"{ratio:.4g}"
            if float(shown) >= 1.0:  # just below mu0: enough digits to show it is below
                shown = f"{ratio:.12g}"
            raise BHDataError(
                f"B-H table row {row}: H = {hh[k]:g} A/m, B = {bb[k]:g} T; the chord slope dB/dH "
                f"from the previous point is {shown} x mu0, below mu0 (physically impossible)"
            )
    return hh, bb


def _knot_slopes(bk: NDArray, hk: NDArray) -> NDArray:
    """Knot slopes dH/dB (A/(m T)) for the monotone Hermite interpolant, see module doc."""
    dx = np.diff(bk)
    d = np.diff(hk) / dx  # chord slopes dH/dB, > 0
    n = bk.size
    m = np.empty(n)
    # interior: weighted harmonic mean (Fritsch & Carlson 1980, Fritsch-Butland weights)
    w1 = 2.0 * dx[1:] + dx[:-1]
    w2 = dx[1:] + 2.0 * dx[:-1]
    m[1:-1] = (w1 + w2) / (w1 / d[:-1] + w2 / d[1:])
    m[1:-1] = np.minimum(m[1:-1], _SLOPE_CLAMP * np.minimum(d[:-1], d[1:]))
    # last knot: match the mu0 extrapolation when the monotone box allows it
    m[-1] = min(1.0 / mu_0, _SLOPE_CLAMP * d[-1])
    # origin: odd cubic (no B^2 term) so nu(s) is smooth in s = B^2
    m[0] = 0.5 * (3.0 * d[0] - m[1])
    return m


def _hermite_coefficients(bk: NDArray, hk: NDArray, m: NDArray) -> NDArray:
    """Power coefficients (a0, a1, a2, a3) per segment in x = B - B_k; shape (n-1, 4)."""
    dx = np.diff(bk)
    d = np.diff(hk) / dx
    a0 = hk[:-1]
    a1 = m[:-1]
    a2 = (3.0 * d - 2.0 * m[:-1] - m[1:]) / dx
    a3 = (m[:-1] + m[1:] - 2.0 * d) / dx**2
    coef = np.stack([a0, a1, a2, a3], axis=1)
    coef[0, 0] = 0.0
    coef[0, 2] = 0.0  # exactly zero by the choice of m_0; remove rounding
    return coef


# --------------------------------------------------------------------------- BHCurve


@dataclass(frozen=True, eq=False)
class BHCurve:
    """Immutable, monotone, C1 B-H curve with mu0 extrapolation; odd in sign.

    Build with :meth:`from_points`.  All methods accept numpy arrays of any
    shape and return arrays of the same shape (SI units: H in A/m, B in T).

    Attributes
    ----------
    name, source : str
        Material name and where the data came from.
    h_points, b_points : ndarray, shape (n,)
        The table including the origin (A/m, T); read-only.
    """

    name: str
    source: str
    h_points: NDArray[np.float64]
    b_points: NDArray[np.float64]
    _coef: NDArray[np.float64] = field(repr=False)
    _w_knots: NDArray[np.float64] = field(repr=False)

    # ---------------------------------------------------------------- construction
    @classmethod
    def from_points(cls, H: ArrayLike, B: ArrayLike, name: str = "", source: str = "") -> "BHCurve":
        """Build a curve from first-quadrant points H (A/m) and B (T).

        Raises
        ------
        BHDataError
            Non-finite or negative values, fewer than 4 points including the
            origin, H or B not strictly increasing, or a chord slope below mu0;
            the message names the 1-based data row and its value.
        """
        try:
            h = np.array(H, dtype=float)
            b = np.array(B, dtype=float)
        except (TypeError, ValueError) as exc:
            raise BHDataError(f"B-H table: values must be numbers ({exc})") from None
        hk, bk = _validate_table(h, b)
        m = _knot_slopes(bk, hk)
        coef = _hermite_coefficients(bk, hk, m)
        dx = np.diff(bk)
        seg_int = coef[:, 0] * dx + coef[:, 1] * dx**2 / 2 + coef[:, 2] * dx**3 / 3 + coef[:, 3] * dx**4 / 4
        w_knots = np.concatenate(([0.0], np.cumsum(seg_int)))
        for arr in (hk, bk, coef, w_knots):
            arr.setflags(write=False)
        curve = cls(str(name), str(source), hk, bk, coef, w_knots)
        if not curve.c1_at_last_point:
            logger.debug("B-H curve %r: last chord slope > %.1f mu0, join to mu0 line is C0 only", name, _SLOPE_CLAMP)
        return curve

    # ---------------------------------------------------------------- properties
    @property
    def b_max(self) -> float:
        """Flux density of the last table point (T)."""
        return float(self.b_points[-1])

    @property
    def h_max(self) -> float:
        """Field strength of the last table point (A/m)."""
        return float(self.h_points[-1])

    @property
    def j_s(self) -> float:
        """Extrapolation offset j_s = B_last - mu0*H_last (T); B = mu0*H + j_s beyond the data."""
        return self.b_max - mu_0 * self.h_max

    @property
    def mu_r_initial(self) -> float:
        """Initial relative permeability 1/(mu0*nu(0)) (dimensionless)."""
        return 1.0 / (mu_0 * float(self._coef[0, 1]))

    @property
    def c1_at_last_point(self) -> bool:
        """True when the join to the mu0 extrapolation is C1 (slope 1/mu0 on both sides)."""
        last = self._coef[-1]
        dx = self.b_points[-1] - self.b_points[-2]
        slope = last[1] + 2 * last[2] * dx + 3 * last[3] * dx**2
        return bool(abs(slope * mu_0 - 1.0) < 1e-9)

    # ---------------------------------------------------------------- first-quadrant kernels
    def _segment(self, b: NDArray) -> tuple[NDArray, NDArray]:
        idx = np.clip(np.searchsorted(self.b_points, b, side="right") - 1, 0, self.b_points.size - 2)
        return idx, b - self.b_points[idx]

    def _h_pos(self, b: NDArray) -> NDArray:
        idx, x = self._segment(b)
        c = self._coef[idx]
        h = c[..., 0] + x * (c[..., 1] + x * (c[..., 2] + x * c[..., 3]))
        beyond = b > self.b_max
        return np.where(beyond, (b - self.j_s) / mu_0, h)

    def _dhdb_pos(self, b: NDArray) -> NDArray:
        idx, x = self._segment(b)
        c = self._coef[idx]
        dh = c[..., 1] + x * (2 * c[..., 2] + 3 * x * c[..., 3])
        return np.where(b > self.b_max, 1.0 / mu_0, dh)

    def _w_pos(self, b: NDArray) -> NDArray:
        idx, x = self._segment(b)
        c = self._coef[idx]
        w = self._w_knots[idx] + x * (c[..., 0] + x * (c[..., 1] / 2 + x * (c[..., 2] / 3 + x * c[..., 3] / 4)))
        bm = self.b_max
        w_beyond = self._w_knots[-1] + (b**2 - bm**2) / (2 * mu_0) - self.j_s * (b - bm) / mu_0
        return np.where(b > bm, w_beyond, w)

    def _b_pos(self, h: NDArray) -> NDArray:
        """Invert H(B) on h >= 0 by a bracketed Newton iteration per segment (monotone cubic)."""
        hk, bk = self.h_points, self.b_points
        idx = np.clip(np.searchsorted(hk, h, side="right") - 1, 0, hk.size - 2)
        c = self._coef[idx]
        width = bk[idx + 1] - bk[idx]
        lo = np.zeros_like(h)
        hi = width.copy()
        x = width * np.clip((h - hk[idx]) / (hk[idx + 1] - hk[idx]), 0.0, 1.0)
        for _ in range(100):
            f = c[..., 0] + x * (c[..., 1] + x * (c[..., 2] + x * c[..., 3])) - h
            fp = c[..., 1] + x * (2 * c[..., 2] + 3 * x * c[..., 3])
            lo = np.where(f < 0, x, lo)
            hi = np.where(f > 0, x, hi)
            with np.errstate(divide="ignore", invalid="ignore"):
                x_new = x - f / fp
            bad = ~np.isfinite(x_new) | (x_new < lo) | (x_new > hi)
            x_new = np.where(bad, 0.5 * (lo + hi), x_new)
            step = np.abs(x_new - x)
            x = x_new
            if not np.any(step > 4 * np.finfo(float).eps * (bk[idx] + width)):
                break
        b = bk[idx] + x
        return np.where(h > self.h_max, mu_0 * h + self.j_s, b)

    # ---------------------------------------------------------------- public laws
    def h_of_b(self, b: ArrayLike) -> NDArray[np.float64]:
        """Field strength H(B) (A/m) for flux density b (T), any shape; odd in b."""
        return _odd(self._h_pos, b)

    def b_of_h(self, h: ArrayLike) -> NDArray[np.float64]:
        """Flux density B(H) (T) for field strength h (A/m), inverse of :meth:`h_of_b`; odd."""
        return _odd(self._b_pos, h)

    def dh_db(self, b: ArrayLike) -> NDArray[np.float64]:
        """Differential reluctivity dH/dB (A/(m T)) at b (T); even in b, always > 0."""
        return _even(self._dhdb_pos, b)

    def db_dh(self, h: ArrayLike) -> NDArray[np.float64]:
        """Differential permeability dB/dH (H/m) at h (A/m); even in h."""
        return 1.0 / self.dh_db(self.b_of_h(h))

    def nu(self, s: ArrayLike) -> NDArray[np.float64]:
        """Secant reluctivity nu = H/B (m/H) as a function of s = B^2 (T^2), any shape.

        On the first segment nu = m_0 + c_3 s exactly (see module doc), so the
        value at s = 0 is the initial reluctivity.
        """
        s = np.maximum(_as_float_array(s), 0.0)
        b = np.sqrt(s)
        c0 = self._coef[0]
        first = c0[1] + c0[3] * s
        with np.errstate(divide="ignore", invalid="ignore"):
            general = self._h_pos(b) / b
        return np.where(b <= self.b_points[1], first, general)

    def dnu_ds(self, s: ArrayLike) -> NDArray[np.float64]:
        """Derivative d nu / d s (m/(H T^2)) with s = B^2; finite at s = 0.

        Uses dnu/ds = (dH/dB - nu)/(2 B^2) away from zero field and the exact
        value c_3 of the odd first segment near it.
        """
        s = np.maximum(_as_float_array(s), 0.0)
        b = np.sqrt(s)
        first = np.full_like(s, self._coef[0, 3])
        with np.errstate(divide="ignore", invalid="ignore"):
            general = (self._dhdb_pos(b) - self._h_pos(b) / b) / (2.0 * s)
        return np.where(b <= self.b_points[1], first, general)

    def energy_density(self, b: ArrayLike) -> NDArray[np.float64]:
        """Stored energy density w(B) = integral_0^B H dB' (J/m^3); even in b."""
        return _even(self._w_pos, b)

    def coenergy_density(self, h: ArrayLike) -> NDArray[np.float64]:
        """Co-energy density w'(H) = integral_0^H B dH' = H B - w(B) (J/m^3); even in h."""
        h = _as_float_array(h)
        b = self.b_of_h(h)
        return h * b - self.energy_density(b)

    def check_range(self, b: ArrayLike, where: str = "") -> None:
        """Warn (:class:`BHRangeWarning`) when any |b| (T) exceeds the last measured point."""
        b = np.abs(_as_float_array(b))
        if b.size and np.nanmax(b) > self.b_max:
            prefix = f"{where}: " if where else ""
            w = BHRangeWarning(
                f"{prefix}B = {float(np.nanmax(b)):.4g} T exceeds the last measured point of "
                f"material '{self.name}' (B = {self.b_max:.4g} T, H = {self.h_max:.4g} A/m); "
                "values beyond it are extrapolated with slope mu0")
            w.material = self.name
            warnings.warn(w, stacklevel=2)


# --------------------------------------------------------------------------- LinearMaterial


@dataclass(frozen=True)
class LinearMaterial:
    """Linear material B = mu0*mu_r*H with the same interface as :class:`BHCurve`.

    Parameters
    ----------
    mu_r : float
        Relative permeability, finite and >= 1.
    name : str
        Label used in messages.
    """

    mu_r: float
    name: str = ""

    def __post_init__(self) -> None:
        try:
            mu_r = float(self.mu_r)
        except (TypeError, ValueError):
            raise BHDataError(f"material '{self.name}': mu_r = {self.mu_r!r} is not a number") from None
        if not math.isfinite(mu_r) or mu_r < 1.0:
            raise BHDataError(f"material '{self.name}': mu_r = {self.mu_r!r} must be finite and >= 1")
        object.__setattr__(self, "mu_r", mu_r)

    @property
    def mu(self) -> float:
        """Absolute permeability mu0*mu_r (H/m)."""
        return mu_0 * self.mu_r

    b_max = math.inf
    source = "linear"

    @property
    def mu_r_initial(self) -> float:
        """Initial relative permeability (= mu_r)."""
        return self.mu_r

    def h_of_b(self, b: ArrayLike) -> NDArray[np.float64]:
        """H = B/(mu0 mu_r) (A/m)."""
        return _as_float_array(b) / self.mu

    def b_of_h(self, h: ArrayLike) -> NDArray[np.float64]:
        """B = mu0 mu_r H (T)."""
        return _as_float_array(h) * self.mu

    def dh_db(self, b: ArrayLike) -> NDArray[np.float64]:
        """dH/dB = 1/(mu0 mu_r) (A/(m T)), same shape as b."""
        return np.full_like(_as_float_array(b), 1.0 / self.mu)

    def db_dh(self, h: ArrayLike) -> NDArray[np.float64]:
        """dB/dH = mu0 mu_r (H/m), same shape as h."""
        return np.full_like(_as_float_array(h), self.mu)

    def nu(self, s: ArrayLike) -> NDArray[np.float64]:
        """Reluctivity 1/(mu0 mu_r) (m/H) for s = B^2, same shape as s."""
        return np.full_like(_as_float_array(s), 1.0 / self.mu)

    def dnu_ds(self, s: ArrayLike) -> NDArray[np.float64]:
        """Zero, same shape as s."""
        return np.zeros_like(_as_float_array(s))

    def energy_density(self, b: ArrayLike) -> NDArray[np.float64]:
        """w = B^2/(2 mu0 mu_r) (J/m^3)."""
        b = _as_float_array(b)
        return 0.5 * b * b / self.mu

    def coenergy_density(self, h: ArrayLike) -> NDArray[np.float64]:
        """w' = mu0 mu_r H^2/2 (J/m^3)."""
        h = _as_float_array(h)
        return 0.5 * self.mu * h * h

    def check_range(self, b: ArrayLike, where: str = "") -> None:
        """No-op: a linear material has no measured limit."""
        return None


def scale_law(law, k_h: float = 1.0, k_b: float = 1.0):
    """A B-H law scaled in H and/or B.

    Scaling acts on the polarisation J(H) = B - mu0 H, so the result is a
    valid curve (slope >= mu0, same mu0 tail) for any factors > 0:
    J_new(H) = k_b J(H / k_h), B_new = mu0 H + J_new. k_h > 1: a magnetically
    harder material (needs k_h times the H for the same polarisation);
    k_b > 1: k_b times the polarisation (saturation) at the same H. A linear
    law becomes mu_r_new = 1 + k_b (mu_r - 1) / k_h.

    Raises
    ------
    BHDataError
        When the scaled table is not a valid curve.
    """
    if k_h == 1.0 and k_b == 1.0:
        return law
    if isinstance(law, LinearMaterial):
        return LinearMaterial(1.0 + k_b * (law.mu_r - 1.0) / k_h,
                              name=f"{law.name} scaled")
    h = np.asarray(law.h_points, dtype=float)
    b = np.asarray(law.b_points, dtype=float)
    j = b - mu_0 * h
    h_new = k_h * h
    return BHCurve.from_points(h_new, mu_0 * h_new + k_b * j,
                               name=f"{law.name} (H x {k_h:g}, J x {k_b:g})",
                               source=law.source)
