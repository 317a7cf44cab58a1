"""A moving part's mechanics and its coil's drive (``[motion]``), as data.

Read by :mod:`compare.reading.motion`; solved by :mod:`compare.models.motion`
on the physics of :mod:`magcheck.analytic.motion` (docs/references.md
section 14).  Strokes: ``s`` from the open stop (0) to the closed stop
(``travel``); the case's stroke key (the working gap, e.g. ``core.stroke``)
is ``open_gap - s``.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING, Optional

if TYPE_CHECKING:  # analytic.motion (scipy's integrators) and winding_loss (scipy.constants)
    # load slowly: imported where used, so a case without [motion] reads fast
    from magcheck.analytic.motion import Load, Spring

__all__ = ["ActuatorSpec", "STANDARD_GRAVITY", "DEFAULT_DIODE_DROP"]

STANDARD_GRAVITY = 9.80665
"""m/s^2, the standard acceleration of gravity (a definition: CGPM 1901)."""

DEFAULT_DIODE_DROP = 0.7
"""V, a silicon suppression diode's forward drop at its current (common practice,
no source)."""


@dataclass(frozen=True)
class ActuatorSpec:
    """``[motion]``: SI values.

    stroke_key : the case key the motion moves (the working gap, e.g. "core.stroke").
    open_gap, closed_gap : that key's value at the open and closed stops (m).
    mass : the moving mass (kg); None: the static limits only (no motion simulated).
    springs : analytic.motion.Spring, strokes from the open stop, in parallel.
    constant_load : a constant opening load (N): a keeper's, a contact pressure.
    gravity : "none", "opening" or "closing": the weight m g along the stroke.
    restitution : the stops' coefficient of restitution (0: inelastic).
    resistance, resistance_temperature, temperature : the coil's resistance
        (ohm) at its temperature (degC), and the operating temperature (degC).
    voltage : the rated coil voltage (V): a step at switch-on.
    voltage_table : ((t...), (v...)) in s and V instead of the step, or None.
    suppression : "none", "diode" or "resistor" across the coil at switch-off.
    suppression_resistance : ohm (a resistor); diode_drop : V (a diode).
    map_strokes, map_currents : the F(i, s) and lambda(i, s) map's grid.
    """

    stroke_key: str
    open_gap: float
    closed_gap: float
    mass: Optional[float]
    springs: "tuple[Spring, ...]" = ()
    constant_load: float = 0.0
    gravity: str = "none"
    restitution: float = 0.0
    resistance: float = 1.0
    resistance_temperature: float = 20.0
    temperature: float = 20.0
    voltage: float = 0.0
    voltage_table: Optional[tuple[tuple[float, ...], tuple[float, ...]]] = None
    suppression: str = "none"
    suppression_resistance: float = 0.0
    diode_drop: float = DEFAULT_DIODE_DROP
    map_strokes: int = 5
    map_currents: int = 5

    @property
    def travel(self) -> float:
        """The stroke from the open to the closed stop (m)."""
        return self.open_gap - self.closed_gap

    @property
    def weight(self) -> float:
        """The constant opening load (N): the keeper's or contact load and
        the weight along the stroke (m g, positive opening)."""
        g = {"none": 0.0, "opening": 1.0, "closing": -1.0}[self.gravity]
        if g == 0.0 or self.mass is None:  # no mass: gravity refused at reading
            return self.constant_load
        return self.constant_load + g * self.mass * STANDARD_GRAVITY

    @property
    def load(self) -> "Load":
        """The load line over the travel (analytic.motion.Load)."""
        from magcheck.analytic.motion import Load

        return Load(self.travel, self.springs, weight=self.weight)

    @property
    def coil_resistance(self) -> float:
        """The coil's resistance at ``temperature`` (ohm): R(T) = R_T0 (1 + alpha (T - T0)),
        copper alpha (analytic.motion.coil_resistance, docs/references.md section 14)."""
        from magcheck.analytic.motion import coil_resistance
        from magcheck.analytic.winding_loss import COPPER

        r20 = self.resistance / (1.0 + COPPER.alpha * (self.resistance_temperature - 20.0))
        return coil_resistance(r20, self.temperature)

    @property
    def rated_current(self) -> float:
        """The coil's steady current at rated voltage, V / R(T) (A)."""
        return self.voltage / self.coil_resistance

    def gap(self, s: float) -> float:
        """The stroke key's value (m) at stroke ``s`` (m from the open stop)."""
        return self.open_gap - s
