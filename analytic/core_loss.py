"""Core loss by hand: Steinmetz, the iGSE for any periodic flux, laminated steel's loss separation,
and a Steinmetz fit to a loss table.

Plain functions and frozen dataclasses, SI units: f in Hz, B in T (B_pk the peak, Delta B the
peak-to-peak swing), t in s, loss densities in W/m^3 (or W/kg where a coefficient is given per
kilogram: every Steinmetz function returns the unit its k carries; divide W/m^3 by the density in
kg/m^3 for W/kg).

Sources (docs/references.md section 13)
---------------------------------------
- Steinmetz: P_v = k f^alpha B_pk^beta for sinusoidal flux. C. P. Steinmetz, "On the law of
  hysteresis", Trans. AIEE 9, 1892, gave P = eta B^1.6 per cycle; the form with a frequency
  exponent alpha is the usual generalisation used with ferrite and steel data sheets, not
  Steinmetz's own equation [from memory].
- iGSE: K. Venkatachalam, C. R. Sullivan, T. Abdallah, H. Tacca, "Accurate prediction of ferrite
  core loss with nonsinusoidal waveforms using only Steinmetz parameters", IEEE COMPEL 2002
  [from memory]:
      P_v = (1/T) integral_0^T k_i |dB/dt|^alpha (Delta B)^(beta - alpha) dt,
      k_i = k / ((2 pi)^(alpha - 1) integral_0^{2 pi} |cos theta|^alpha 2^(beta - alpha) d theta),
  Delta B the peak-to-peak flux density of the (major) loop; k_i is chosen so that a sinusoid gives
  Steinmetz's value exactly [exact: the definition]. Minor loops (the paper splits the waveform
  into them) are not treated here: Delta B is the waveform's max - min.
  Closed forms [derived from the definition above]: a triangle rising Delta B in D T and falling in
  (1 - D) T gives P_v = k_i Delta B^beta f^alpha (D^(1 - alpha) + (1 - D)^(1 - alpha)); a
  three-level square voltage (+V for D T/2, 0, -V for D T/2, 0; D = 1 the plain square wave) gives
  P_v = k_i Delta B^beta f^alpha 2^alpha D^(1 - alpha).
- Laminated steel, loss separation: G. Bertotti, "General properties of power losses in soft
  ferromagnetic materials", IEEE Trans. Magn. 24(1), 1988 [from memory], for sinusoidal flux:
  hysteresis k_h f B_pk^beta_h, classical eddy sigma d^2 (pi f B_pk)^2 / 6, excess
  k_e (f B_pk)^1.5, each in W/m^3. The classical term is the lamination's 1D eddy current at low
  frequency (no skin effect: d well below the skin depth) [exact for that limit].
- The fit: least squares of ln P = ln k + alpha ln f + beta ln B_pk [common practice, no source].
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any, Sequence

import numpy as np

#: the units a Steinmetz coefficient k (and so its loss) may carry
LOSS_UNITS = ("W/m^3", "W/kg")


@dataclass(frozen=True)
class OutOfRange:
    """One quantity asked outside the range a set of coefficients was fitted or declared on."""

    quantity: str  # "frequency" (Hz) or "flux density" (T)
    value: float
    lo: float
    hi: float

    @property
    def message(self) -> str:
        unit = "Hz" if self.quantity == "frequency" else "T"
        return (f"{self.quantity} {self.value:.6g} {unit} outside the Steinmetz coefficients' "
                f"valid range {self.lo:.6g}-{self.hi:.6g} {unit}")


@dataclass(frozen=True)
class SteinmetzCoefficients:
    """P = k f^alpha B_pk^beta (docs/references.md section 13).

    k in ``unit`` (W/m^3 or W/kg) at f = 1 Hz, B_pk = 1 T; alpha, beta dimensionless. The valid
    ranges (Hz, T; infinite when not known) are those of the data the coefficients came from.
    """

    k: float
    alpha: float
    beta: float
    unit: str = "W/m^3"
    f_min: float = 0.0
    f_max: float = math.inf
    b_min: float = 0.0
    b_max: float = math.inf

    def __post_init__(self) -> None:
        if self.unit not in LOSS_UNITS:
            raise ValueError(f"unit {self.unit!r}: expected one of {LOSS_UNITS}")
        if not (self.k > 0 and math.isfinite(self.k)):
            raise ValueError(f"k {self.k!r}: expected a positive finite number")

    def outside(self, f: float, b_pk: float) -> tuple[OutOfRange, ...]:
        """The quantities (f in Hz, B_pk in T) outside the valid ranges; empty when inside."""
        out = []
        if not self.f_min <= f <= self.f_max:
            out.append(OutOfRange("frequency", f, self.f_min, self.f_max))
        if not self.b_min <= b_pk <= self.b_max:
            out.append(OutOfRange("flux density", b_pk, self.b_min, self.b_max))
        return tuple(out)

    def per_volume(self, density: float) -> SteinmetzCoefficients:
        """The same coefficients in W/m^3 (density in kg/m^3)."""
        if self.unit == "W/m^3":
            return self
        return SteinmetzCoefficients(self.k * density, self.alpha, self.beta, "W/m^3",
                                     self.f_min, self.f_max, self.b_min, self.b_max)


def steinmetz_loss(c: SteinmetzCoefficients, f: float, b_pk: float) -> float:
    """Loss density k f^alpha B_pk^beta for sinusoidal flux of frequency f (Hz) and peak B_pk (T),
    in c.unit (docs/references.md section 13). No range check: see ``checked_steinmetz_loss``."""
    return c.k * f ** c.alpha * abs(b_pk) ** c.beta


def checked_steinmetz_loss(c: SteinmetzCoefficients, f: float,
                           b_pk: float) -> tuple[float, tuple[OutOfRange, ...]]:
    """``steinmetz_loss`` and the quantities asked outside the coefficients' valid ranges."""
    return steinmetz_loss(c, f, b_pk), c.outside(f, b_pk)


# ---------------------------------------------------------------------------------------- iGSE
def cos_power_integral(alpha: float) -> float:
    """integral_0^{2 pi} |cos theta|^alpha d theta = 2 sqrt(pi) Gamma((alpha+1)/2) / Gamma(alpha/2+1)
    [exact: four quarter periods of the Wallis integral]."""
    return 2.0 * math.sqrt(math.pi) * math.gamma((alpha + 1.0) / 2.0) / math.gamma(alpha / 2.0 + 1.0)


def igse_ki(c: SteinmetzCoefficients) -> float:
    """The iGSE coefficient k_i = k / ((2 pi)^(alpha-1) integral_0^{2 pi} |cos|^alpha 2^(beta-alpha)),
    in c.unit / (T^(beta-alpha) (T/s)^alpha) (Venkatachalam et al., COMPEL 2002;
    docs/references.md section 13)."""
    a, b = c.alpha, c.beta
    return c.k / ((2.0 * math.pi) ** (a - 1.0) * cos_power_integral(a) * 2.0 ** (b - a))


def igse_loss_sampled(c: SteinmetzCoefficients, b: Sequence[float] | np.ndarray,
                      period: float) -> float:
    """iGSE loss density (c.unit) of one period of a periodic flux density.

    ``b``: B (T) at N equally spaced instants over one period (s), the last sample one step before
    the period repeats (not a copy of the first). B is taken as piecewise linear between samples
    (the wrap from the last sample to the first included), so |dB/dt|^alpha is integrated exactly
    for a piecewise-linear waveform whose corners fall on samples and to O(N^-2) for a smooth one.
    Delta B is max - min (the major loop; minor loops are not split off).
    """
    arr = np.asarray(b, dtype=float)
    if arr.ndim != 1 or arr.size < 2:
        raise ValueError("b: expected at least two samples of one period")
    if not period > 0:
        raise ValueError(f"period {period!r}: expected a positive number")
    dt = period / arr.size
    slopes = np.diff(np.append(arr, arr[0])) / dt
    delta_b = float(arr.max() - arr.min())
    if delta_b == 0.0:
        return 0.0
    mean_rate = float(np.mean(np.abs(slopes) ** c.alpha))  # (1/T) integral |dB/dt|^alpha dt
    return igse_ki(c) * mean_rate * delta_b ** (c.beta - c.alpha)


def igse_triangle_loss(c: SteinmetzCoefficients, f: float, delta_b: float,
                       duty: float = 0.5) -> float:
    """iGSE loss density (c.unit) of a triangular flux (a choke's ripple): B rises by delta_b (T,
    peak to peak) in duty/f and falls back in (1 - duty)/f. Closed form of the iGSE integral,
    k_i Delta B^beta f^alpha (D^(1-alpha) + (1-D)^(1-alpha)) [derived; docs/references.md
    section 13]."""
    if not 0.0 < duty < 1.0:
        raise ValueError(f"duty {duty!r}: expected 0 < duty < 1")
    d, a = duty, c.alpha
    return igse_ki(c) * abs(delta_b) ** c.beta * f ** a * (d ** (1.0 - a) + (1.0 - d) ** (1.0 - a))


def igse_square_voltage_loss(c: SteinmetzCoefficients, f: float, delta_b: float,
                             duty: float = 1.0) -> float:
    """iGSE loss density (c.unit) of a transformer core under a (three-level) square voltage:
    +V for duty/(2f), zero, -V for duty/(2f), zero; duty = 1 is the plain square wave. The flux
    swings delta_b (T, peak to peak; = V duty / (2 f N A_e)) at a constant rate and rests between.
    Closed form k_i Delta B^beta f^alpha 2^alpha D^(1-alpha) [derived; docs/references.md
    section 13]."""
    if not 0.0 < duty <= 1.0:
        raise ValueError(f"duty {duty!r}: expected 0 < duty <= 1")
    a = c.alpha
    return igse_ki(c) * abs(delta_b) ** c.beta * f ** a * 2.0 ** a * duty ** (1.0 - a)


# ------------------------------------------------------------------- laminated steel separation
@dataclass(frozen=True)
class LaminationLoss:
    """Bertotti's three loss terms of a laminated steel (docs/references.md section 13).

    k_h: hysteresis coefficient, W/m^3 per (Hz T^beta_h); beta_h dimensionless (about 1.6-2);
    sigma: conductivity (S/m); thickness: lamination thickness d (m); k_e: excess coefficient,
    W/m^3 per (Hz T)^1.5 (0 when not given); density kg/m^3 (for W/kg).
    """

    k_h: float
    beta_h: float
    sigma: float
    thickness: float
    k_e: float = 0.0
    density: float = 7650.0


@dataclass(frozen=True)
class LossSplit:
    """Loss densities of the three terms (W/m^3) and their sum."""

    hysteresis: float
    classical: float
    excess: float

    @property
    def total(self) -> float:
        return self.hysteresis + self.classical + self.excess

    def per_mass(self, density: float) -> LossSplit:
        """The same split in W/kg (density in kg/m^3)."""
        return LossSplit(self.hysteresis / density, self.classical / density, self.excess / density)


def hysteresis_loss(k_h: float, beta_h: float, f: float, b_pk: float) -> float:
    """Hysteresis loss density k_h f B_pk^beta_h (W/m^3): a fixed energy per cycle (Steinmetz's
    law; Bertotti 1988; docs/references.md section 13)."""
    return k_h * f * abs(b_pk) ** beta_h


def classical_eddy_loss(sigma: float, thickness: float, f: float, b_pk: float) -> float:
    """Classical eddy-current loss density sigma d^2 (pi f B_pk)^2 / 6 (W/m^3) of a lamination of
    thickness d (m) and conductivity sigma (S/m) under a sinusoidal flux of peak B_pk (T) at f (Hz),
    uniform across the thickness (d well below the skin depth) (Bertotti 1988;
    docs/references.md section 13).

    From the induced field E(x) = x dB/dt across the sheet, the mean of sigma E^2 over
    -d/2..d/2 is sigma d^2 (dB/dt)^2 / 12, and the mean of (dB/dt)^2 over a sinusoid's period is
    (2 pi f B_pk)^2 / 2 [derived].
    """
    return sigma * thickness ** 2 * (math.pi * f * b_pk) ** 2 / 6.0


def excess_loss(k_e: float, f: float, b_pk: float) -> float:
    """Excess (anomalous) loss density k_e (f B_pk)^1.5 (W/m^3) for sinusoidal flux (Bertotti
    1988; docs/references.md section 13)."""
    return k_e * (f * abs(b_pk)) ** 1.5


def lamination_loss(m: LaminationLoss, f: float, b_pk: float) -> LossSplit:
    """The three terms (W/m^3) at f (Hz) and B_pk (T), sinusoidal flux; ``.per_mass(m.density)``
    for W/kg."""
    return LossSplit(hysteresis_loss(m.k_h, m.beta_h, f, b_pk),
                     classical_eddy_loss(m.sigma, m.thickness, f, b_pk),
                     excess_loss(m.k_e, f, b_pk))


# ----------------------------------------------------------------------------- fit to a table
@dataclass(frozen=True)
class SteinmetzFit:
    """Steinmetz coefficients fitted to a loss table, with the fit's residual.

    rms_log_error: root mean square of ln(P_fit / P_table) (dimensionless; about the rms relative
    error when small); max_relative_error: max |P_fit / P_table - 1|. The coefficients carry the
    table's frequency and flux ranges as their valid ranges.
    """

    coefficients: SteinmetzCoefficients
    rms_log_error: float
    max_relative_error: float
    n_points: int


def fit_steinmetz(f: Sequence[float] | np.ndarray, b_pk: Sequence[float] | np.ndarray,
                  loss: Sequence[float] | np.ndarray, unit: str = "W/kg") -> SteinmetzFit:
    """Fit P = k f^alpha B_pk^beta to a table of losses (``unit``, W/kg or W/m^3) measured at
    frequencies f (Hz) and peak flux densities b_pk (T), sinusoidal flux, by linear least squares
    in log space (ln P = ln k + alpha ln f + beta ln B_pk) [common practice, no source;
    docs/references.md section 13]. Needs at least three points spanning two frequencies and two
    flux densities, all values positive.
    """
    fa, ba, pa = (np.asarray(x, dtype=float).ravel() for x in (f, b_pk, loss))
    if not fa.size == ba.size == pa.size:
        raise ValueError(f"loss table: columns of unequal length ({fa.size}, {ba.size}, {pa.size})")
    for name, col in (("frequency", fa), ("flux density", ba), ("loss", pa)):
        bad = col[~(np.isfinite(col) & (col > 0))]
        if bad.size:
            raise ValueError(f"loss table: {name} {float(bad[0]):g}: expected positive finite values")
    if fa.size < 3 or np.unique(fa).size < 2 or np.unique(ba).size < 2:
        raise ValueError("loss table: need at least three points at two frequencies and two flux "
                         "densities to fit k, alpha and beta")
    a = np.column_stack([np.ones_like(fa), np.log(fa), np.log(ba)])
    y = np.log(pa)
    sol, _res, rank, _sv = np.linalg.lstsq(a, y, rcond=None)
    if rank < 3:
        raise ValueError("loss table: frequency and flux density vary together; alpha and beta "
                         "cannot be told apart")
    log_err = a @ sol - y
    coeffs = SteinmetzCoefficients(float(math.exp(sol[0])), float(sol[1]), float(sol[2]), unit,
                                   float(fa.min()), float(fa.max()), float(ba.min()),
                                   float(ba.max()))
    return SteinmetzFit(coeffs, float(np.sqrt(np.mean(log_err ** 2))),
                        float(np.max(np.abs(np.expm1(log_err)))), int(fa.size))


# ------------------------------------------------------------------- a material's loss data
@dataclass(frozen=True)
class MaterialLoss:
    """A core material's loss data: Steinmetz coefficients (with their valid ranges), the
    density (kg/m^3, for W/kg), and for a laminated steel the lamination thickness (m), the
    resistivity (ohm m) and Bertotti's coefficients (``lamination``, None when not all given).
    ``fit`` is the Steinmetz fit when the coefficients came from a loss table; ``source`` says
    where the data came from (a built-in invented for the demo, the case, a table file)."""

    steinmetz: SteinmetzCoefficients
    density: float
    thickness: float | None = None
    resistivity: float | None = None
    lamination: LaminationLoss | None = None
    fit: SteinmetzFit | None = None
    source: str = ""

    def per_volume(self) -> SteinmetzCoefficients:
        """The Steinmetz coefficients in W/m^3."""
        return self.steinmetz.per_volume(self.density)


#: units a loss table's columns may carry: factor to Hz, T and W/kg or W/m^3
LOSS_TABLE_UNITS: dict[str, dict[str, Any]] = {
    "f": {"Hz": 1.0, "kHz": 1e3, "MHz": 1e6},
    "B": {"T": 1.0, "mT": 1e-3, "G": 1e-4, "kG": 0.1},
    "P": {"W/kg": (1.0, "W/kg"), "mW/g": (1.0, "W/kg"), "W/m^3": (1.0, "W/m^3"),
          "W/m3": (1.0, "W/m^3"), "kW/m^3": (1e3, "W/m^3"), "kW/m3": (1e3, "W/m^3"),
          "mW/cm^3": (1e3, "W/m^3"), "mW/cm3": (1e3, "W/m^3")},
}


def parse_loss_table(text: str, label: str) -> tuple[np.ndarray, np.ndarray, np.ndarray, str]:
    """A loss table (CSV text): comment lines ``#``, a header naming the columns ``f [unit]``,
    ``B [unit]`` (the peak flux density of a sinusoid) and ``P [unit]`` (units in
    :data:`LOSS_TABLE_UNITS`; a comma, semicolon or tab between them), then one row per point.
    Returns f (Hz), B_pk (T), P (in the returned unit, W/kg or W/m^3). Raises ValueError with
    ``label`` and the line on a bad header, unit, cell or column count."""
    import re

    text = text.removeprefix("\ufeff")
    cols: list[tuple[str, Any]] | None = None
    sep = ","
    rows: list[list[float]] = []
    for lineno, line in enumerate(text.splitlines(), start=1):
        s = line.strip()
        if not s or s.startswith("#"):
            continue
        where = f"{label}, line {lineno}"
        if cols is None:
            sep = next((c for c in (",", ";", "\t") if c in s), ",")
            cols = []
            for cell in (c.strip() for c in s.split(sep)):
                m = re.fullmatch(r"([fFbBpP])\s*[\[(]\s*([^\])]*?)\s*[\])]", cell)
                if not m:
                    raise ValueError(f"{where}: header cell {cell!r} is not 'f [Hz]', 'B [T]' "
                                     "or 'P [W/kg]'")
                q, unit = m.group(1).upper() if m.group(1) in "bBpP" else "f", m.group(2)
                table: dict[str, Any] = LOSS_TABLE_UNITS[q]
                if unit not in table:
                    raise ValueError(f"{where}: unknown {q} unit {unit!r}; choose one of "
                                     f"{', '.join(table)}")
                cols.append((q, table[unit]))
            if sorted(q for q, _ in cols) != ["B", "P", "f"]:
                raise ValueError(f"{where}: the header must name the columns f, B and P once each")
            continue
        cells = [c.strip() for c in s.split(sep)]
        if len(cells) != 3:
            raise ValueError(f"{where}: expected 3 columns (f, B, P), got {len(cells)}")
        try:
            rows.append([float(c) for c in cells])
        except ValueError:
            raise ValueError(f"{where}: {s!r} holds a cell that is not a number") from None
        if not all(math.isfinite(x) and x > 0.0 for x in rows[-1]):
            raise ValueError(f"{where}: {s!r}: f, B and P must be positive and finite")
    if cols is None or not rows:
        raise ValueError(f"{label}: no header row and data (expected e.g. 'f [Hz],B [T],P [W/kg]')")
    data = np.array(rows)
    out: dict[str, np.ndarray] = {}
    unit = "W/kg"
    for j, (q, fac) in enumerate(cols):
        if q == "P":
            factor, unit = fac
            out[q] = data[:, j] * factor
        else:
            out[q] = data[:, j] * float(fac)
    return out["f"], out["B"], out["P"], unit
