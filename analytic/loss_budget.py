"""A magnetic component's loss budget by hand: a transformer's voltage regulation and
efficiency, and a temperature-rise estimate from the loss per surface area.

Plain functions, SI units (V, A, ohm, W, m^2, K). Sources in docs/references.md section 15.

- Regulation: the approximate equivalent circuit referred to the secondary (the magnetizing
  branch moved to the primary terminals), V_nl = V_fl + (R + jX) I, I lagging V_fl by phi
  (cos phi the power factor); VR = (V_nl - V_fl) / V_fl (S. J. Chapman, Electric Machinery
  Fundamentals, 4th ed., McGraw-Hill 2005, section 2.7, the regulation definition and the
  phasor diagram of the approximate circuit [from memory]). Solved for V_fl at a given V_nl:
  V_fl = -I (R cos phi + X sin phi) + sqrt(V_nl^2 - I^2 (X cos phi - R sin phi)^2) [derived:
  the magnitude of the phasor sum, a quadratic in V_fl].
- Efficiency: eta = P_out / (P_out + P_core + P_cu) (the definition; Chapman section 2.7).
- Temperature rise: Delta T = 450 psi^0.826 K with psi the loss per outside surface area in
  W/cm^2, an empirical fit for transformers in free air (C. W. T. McLyman, Transformer and
  Inductor Design Handbook, 3rd ed., Marcel Dekker 2004, chapter 6, "Temperature rise"
  [from memory]). An estimate for orientation, not a thermal analysis: it knows nothing of the
  mounting, the air flow, the core's and winding's conduction or the emissivity.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

#: McLyman's temperature-rise fit: Delta T = RISE_K * psi^RISE_EXPONENT, psi in W/cm^2
RISE_K = 450.0
RISE_EXPONENT = 0.826
RISE_SOURCE = ("McLyman, Transformer and Inductor Design Handbook, 3rd ed. 2004, ch. 6: "
               "Delta T = 450 (P/A [W/cm^2])^0.826 [from memory]")


def full_load_voltage(v_nl: float, current: float, r: float, x: float,
                      power_factor: float = 1.0) -> float:
    """The secondary voltage at load (V, rms) when its no-load value is ``v_nl`` (V, rms), the
    load current ``current`` (A, rms) lags by acos(power_factor), through the series R + jX
    (ohm) referred to the secondary (docs/references.md section 15). Raises ValueError when
    the impedance drop is too large for any load voltage."""
    if not 0.0 <= power_factor <= 1.0:
        raise ValueError(f"power_factor {power_factor!r}: expected 0 to 1")
    c = power_factor
    s = math.sqrt(max(0.0, 1.0 - c * c))
    q = v_nl ** 2 - (current * (x * c - r * s)) ** 2
    if q < 0.0:
        raise ValueError("the series impedance drop exceeds the no-load voltage")
    return -current * (r * c + x * s) + math.sqrt(q)


def regulation(v_nl: float, current: float, r: float, x: float,
               power_factor: float = 1.0) -> float:
    """Voltage regulation (V_nl - V_fl) / V_fl, a fraction (docs/references.md section 15)."""
    v_fl = full_load_voltage(v_nl, current, r, x, power_factor)
    return (v_nl - v_fl) / v_fl


def efficiency(p_out: float, p_core: float, p_copper: float) -> float:
    """P_out / (P_out + P_core + P_cu), a fraction (W in; docs/references.md section 15)."""
    return p_out / (p_out + p_core + p_copper)


@dataclass(frozen=True)
class LoadPoint:
    """One load of a transformer (secondary side): the load voltage (V rms), current (A rms),
    output (W), copper loss (W), efficiency and regulation (fractions)."""

    fraction: float
    voltage: float
    current: float
    output: float
    copper_loss: float
    efficiency: float
    regulation: float


def load_point(v_nl: float, i_rated: float, fraction: float, r: float, x: float,
               power_factor: float, p_core: float, r_copper: float | None = None) -> LoadPoint:
    """A transformer at ``fraction`` of its rated secondary current ``i_rated`` (A rms): V_fl
    from the phasor relation, P_out = V_fl I cos phi, P_cu = I^2 r_copper (ohm, referred to the
    secondary; default r), the efficiency with the core loss ``p_core`` (W) and the regulation
    (docs/references.md section 15)."""
    i = fraction * i_rated
    v = full_load_voltage(v_nl, i, r, x, power_factor)
    p_out = v * i * power_factor
    p_cu = i * i * (r if r_copper is None else r_copper)
    return LoadPoint(fraction, v, i, p_out, p_cu, efficiency(p_out, p_core, p_cu),
                     (v_nl - v) / v)


def temperature_rise(loss: float, area: float) -> float:
    """Temperature-rise estimate (K) of a wound part losing ``loss`` (W) through its outside
    surface ``area`` (m^2): 450 (P/A)^0.826 with P/A in W/cm^2 (McLyman 2004, ch. 6 [from
    memory]; docs/references.md section 15). For orientation only."""
    if area <= 0.0:
        raise ValueError(f"area {area!r}: expected a positive surface area")
    psi = max(loss, 0.0) / (area * 1e4)  # W/cm^2
    return RISE_K * psi ** RISE_EXPONENT
