"""Measurements beside both models: the check's measured column.

A case's ``[[measured]]`` entries (compare.design.measured.Measured) that
meet a check row at the case's own operating point: an inductance at the
case's current, a force at the case's stroke (and current). A single value
counts where its ``at`` is that point; a curve is interpolated there
(linearly between its points, value and uncertainty). Each model's
difference to the measurement is given in units of the combined standard
uncertainty sqrt(u_meas^2 + u_model^2) (JCGM 100:2008, eq. 10;
compare.design.measured.normalised_difference).

The models' values are those of the built (3D) part: the FE column as judged
(depth-corrected where the row has an FE 3D value, with that value's
uncertainty: the FE's own scaled, plus the spread of the depth correction),
the hand model's 3D column. The hand model states no uncertainty of its own
(a magnetic circuit's error is its modelling, not a number it knows): it
counts as zero, so the hand's difference is measured against the
measurement's uncertainty alone, the strict reading.

Measurements at other currents or strokes are the sweep's to show
(its figures draw them with error bars); a note says which were left out.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any, Sequence

from ..design.case import Case
from ..design.measured import interpolate, normalised_difference

__all__ = ["MeasuredRow", "measured_rows", "operating_point"]

_REL = 1e-6
"""Relative tolerance for a single value's ``at`` to be the case's operating
point (a value typed in mm or A, read to double precision)."""


@dataclass(frozen=True)
class MeasuredRow:
    """One measured value beside the check row of the same quantity.

    quantity : the measured quantity, also the check row's key.
    at : the operating point (A for an inductance, m of stroke for a force).
    measured, u_measured : the measured value and its standard uncertainty
        (SI; a curve's interpolated at ``at``).
    hand : the hand model (3D column where it has one; no uncertainty).
    fe, u_fe : the FE as judged (depth-corrected where it has an FE 3D value)
        and its standard uncertainty (SI; NaN: not estimated).
    entry : the index of the ``[[measured]]`` entry.
    hold, within : the entry's verify limit (compare.design.measured.Measured).
    """

    quantity: str
    label: str
    unit: str
    at: float
    at_unit: str
    measured: float
    u_measured: float
    hand: float
    fe: float
    u_fe: float
    fe_judged: str
    entry: int
    curve: bool = False
    source: str = ""
    file: str = ""
    frequency: float | None = None
    hold: str = ""
    within: float = math.nan

    @property
    def hand_sigma(self) -> float:
        """(hand - measured) in combined standard uncertainties (hand's u = 0)."""
        return normalised_difference(self.hand, self.measured, self.u_measured, 0.0)

    @property
    def fe_sigma(self) -> float:
        """(FE - measured) in combined standard uncertainties."""
        return normalised_difference(self.fe, self.measured, self.u_measured, self.u_fe)

    def sigma(self, model: str) -> float:
        return self.fe_sigma if model == "fe" else self.hand_sigma

    def to_dict(self) -> dict:
        return {"quantity": self.quantity, "label": self.label, "unit": self.unit,
                "at": self.at, "at_unit": self.at_unit, "measured": self.measured,
                "measured_uncertainty": self.u_measured, "hand": self.hand,
                "hand_uncertainty": 0.0, "fe": self.fe, "fe_uncertainty": self.u_fe,
                "fe_judged": self.fe_judged,
                "hand_difference_u": self.hand_sigma, "fe_difference_u": self.fe_sigma,
                "entry": self.entry, "curve": self.curve, "source": self.source,
                "file": self.file, "frequency": self.frequency, "hold": self.hold or None,
                "within": self.within if self.hold else None}


def operating_point(case: Case, quantity: str) -> tuple[float, str]:
    """The case's own point of a measured quantity: (current (A), "A") for an
    inductance, (stroke (m), "m") for a force (NaN without a moving part)."""
    if quantity == "force":
        from ..design.coremodel import core_model

        spec = core_model(case).force
        return (spec.stroke if spec is not None else math.nan), "m"
    return case.winding.current, "A"


def _at_text(at: float, unit: str) -> str:
    return f"{at * 1e3:g} mm" if unit == "m" else f"{at:g} A"


def measured_rows(case: Case, rows: Sequence[Any]) -> tuple[tuple[MeasuredRow, ...],
                                                             tuple[str, ...]]:
    """The measured column (one :class:`MeasuredRow` per entry that meets a
    check row at the case's operating point) and notes on the entries left
    out (another current or stroke: the sweep shows them)."""
    by_key = {r.key: r for r in rows}
    out: list[MeasuredRow] = []
    left: list[str] = []
    for i, m in enumerate(case.measured):
        at, at_unit = operating_point(case, m.quantity)
        row = by_key.get(m.quantity)
        where = f"measured[{i}] ({m.quantity.replace('_', ' ')})"
        if row is None or not math.isfinite(at):
            left.append(f"{where}: the check has no {m.quantity.replace('_', ' ')} row")
            continue
        if m.current is not None and not math.isclose(m.current, case.winding.current,
                                                      rel_tol=_REL, abs_tol=1e-12):
            left.append(f"{where}: measured at {m.current:g} A, the case runs at "
                        f"{case.winding.current:g} A")
            continue
        if len(m.points) == 1 and not m.file:
            p = m.points[0]
            if not math.isclose(p.at, at, rel_tol=_REL, abs_tol=1e-12):
                left.append(f"{where}: at {_at_text(p.at, at_unit)}, the case's point is "
                            f"{_at_text(at, at_unit)}")
                continue
            value, u = p.value, p.uncertainty
        else:
            value, u = interpolate(m.points, at)
            if not math.isfinite(value):
                left.append(f"{where}: the curve spans {_at_text(m.points[0].at, at_unit)} to "
                            f"{_at_text(m.points[-1].at, at_unit)}, not the case's "
                            f"{_at_text(at, at_unit)}")
                continue
        judged_3d = math.isfinite(row.fe_3d)
        fe = row.fe_3d if judged_3d else row.fe
        if judged_3d and math.isfinite(row.fe_3d_uncertainty):
            u_fe = row.fe_3d_uncertainty
        elif judged_3d and row.fe:
            u_fe = row.uncertainty * abs(row.fe_3d / row.fe)
        else:
            u_fe = row.uncertainty
        hand = row.hand_3d if math.isfinite(row.hand_3d) else row.hand
        out.append(MeasuredRow(m.quantity, row.label, row.unit, at, at_unit, value, u, hand, fe,
                               u_fe, "fe_depth_corrected" if judged_3d else "fe", i,
                               curve=bool(m.file), source=m.source, file=m.file,
                               frequency=m.frequency, hold=m.hold, within=m.within))
    return tuple(out), tuple(left)


def measured_note(rows: Sequence[MeasuredRow], left: Sequence[str]) -> str:
    """The closing note on the measured section: how the models' values and
    uncertainties were taken, and what was left to the sweep."""
    text = ("Measured: each model against the measurement in combined standard uncertainties "
            "sqrt(u_meas^2 + u_model^2) (GUM eq. 10); the FE as judged (depth-corrected where "
            "it has an FE 3D value, with its uncertainty), the hand model's 3D value with no "
            "uncertainty of its own (counted as 0).") if rows else ""
    if any(r.curve for r in rows):
        text += (" A measured curve is read at the case's point (linear between its points); "
                 "its other points are shown by `magcheck sweep` over the same key, whose "
                 "figures draw them with error bars.")
    if left:
        text += ((" " if text else "Measured: ") + "left to the sweep (measurements at other "
                 "points than the case's are shown by `magcheck sweep`, its figures with error "
                 "bars): " + "; ".join(left) + ".")
    return text
