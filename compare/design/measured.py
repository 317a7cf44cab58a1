"""Measured values of a built part, as data: what a prototype gave on the bench.

A case may hold measurements (``[[measured]]``) to set beside both models:
one value (an inductance at a current, a force at a stroke) or a measured
curve from a CSV file (L against I, force against stroke), each with its
measurement uncertainty and a free-text source (instrument, date).

The CSV of a curve has a header naming its columns with units in brackets or
parentheses, as a B-H file (analytic.materials): the abscissa first (``I [A]``
for an inductance, ``stroke [mm]`` for a force), then the value (``L [mH]``,
``F [N]``), then optionally its uncertainty (``u [mH]``, or ``u [%]`` of each
value). Separator ``,``, ``;`` or tab (read off the header), ``#`` comments, a
UTF-8 byte-order mark skipped; a decimal comma is refused naming the line.

Uncertainties are standard uncertainties (one standard deviation, k = 1).
Measured and model values are compared through the combined uncertainty of
the two (:func:`combined_uncertainty`, :func:`normalised_difference`).
"""

from __future__ import annotations

import csv
import math
import re
from dataclasses import dataclass
from typing import Sequence

from ..errors import CaseError
from .units import SI_UNIT, UnitError, parse_quantity

__all__ = ["MEASURED_QUANTITIES", "MeasuredPoint", "Measured", "parse_measured_csv",
           "combined_uncertainty", "normalised_difference"]

MEASURED_QUANTITIES: dict[str, tuple[str, str, tuple[str, ...], tuple[str, ...]]] = {
    "inductance": ("inductance", "current", ("L",), ("I",)),
    "incremental_inductance": ("inductance", "current", ("L", "dL"), ("I",)),
    "force": ("force", "length", ("F",), ("stroke", "s", "x")),
}
"""Quantity -> (its dimension, the abscissa's dimension, value column names,
abscissa column names) of a measurement."""

_HEAD_RE = re.compile(r"^\s*(?P<name>[A-Za-z_]+)\s*(?:\[\s*(?P<b>[^\]]*?)\s*\]|"
                      r"\(\s*(?P<p>[^)]*?)\s*\))?\s*$")
_SEPARATORS = {",": "a comma", ";": "a semicolon", "\t": "a tab"}


@dataclass(frozen=True)
class MeasuredPoint:
    """One measured value (SI) at ``at`` (A for an inductance, m of stroke
    for a force), with its standard uncertainty (SI, absolute)."""

    at: float
    value: float
    uncertainty: float


@dataclass(frozen=True)
class Measured:
    """A measurement of the case's part: one point or a curve.

    quantity : a key of :data:`MEASURED_QUANTITIES`.
    points : sorted by ``at``.
    current : for a force, the winding current it was measured at (A;
        None = the case's).
    frequency : the measuring frequency (Hz; None = not stated): the models
        are magnetostatic, so a value taken at a frequency where eddy
        currents matter is not theirs to match.
    hold, within : the verify limit (``hold`` the model, ``within`` the
        number of combined standard uncertainties).
    source : free text (instrument, date, who).
    file : the CSV the points came from ("" for a single value).
    """

    quantity: str
    points: tuple[MeasuredPoint, ...]
    source: str = ""
    current: float | None = None
    frequency: float | None = None
    file: str = ""
    hold: str = ""
    """Which model ``magcheck verify`` holds to this measurement: "fe",
    "hand" or "both" ("" = none: shown, not judged)."""
    within: float = math.nan
    """The largest |model - measured| verify accepts, in combined standard
    uncertainties (:func:`normalised_difference`); NaN without ``hold``."""

    @property
    def unit(self) -> str:
        return SI_UNIT[MEASURED_QUANTITIES[self.quantity][0]]


def combined_uncertainty(u_measured: float, u_model: float) -> float:
    """The standard uncertainty of (model - measured) for independent errors:
    sqrt(u_measured^2 + u_model^2) (SI). A model uncertainty that is not
    known (NaN; the hand model states none) counts as zero."""
    # Source: JCGM 100:2008 (GUM), eq. (10), the law of propagation of
    # uncertainty for uncorrelated inputs, with unit sensitivities for a difference.
    um = 0.0 if not math.isfinite(u_model) else abs(u_model)
    return math.hypot(abs(u_measured), um)


def normalised_difference(model: float, measured: float, u_measured: float,
                          u_model: float = math.nan) -> float:
    """(model - measured) in units of their combined standard uncertainty
    (:func:`combined_uncertainty`): |d| <= 1 agrees within one combined
    standard uncertainty, |d| <= 2 within two. NaN when a value is missing
    or the combined uncertainty is zero."""
    u = combined_uncertainty(u_measured, u_model)
    if not (math.isfinite(model) and math.isfinite(measured)) or u == 0.0 or not math.isfinite(u):
        return math.nan
    return (model - measured) / u


def _split(line: str, sep: str) -> list[str]:
    cells = [c.strip() for c in next(csv.reader([line], delimiter=sep), [])]
    while cells and not cells[-1]:
        cells.pop()
    return cells


def _number(cell: str, where: str) -> float:
    try:
        v = float(cell)
    except ValueError:
        fixed = cell.replace(",", ".")
        if cell.count(",") == 1:
            try:
                float(fixed)
            except ValueError:
                pass
            else:
                raise CaseError(where, cell, f"written with a decimal comma; write {fixed}") \
                    from None
        raise CaseError(where, cell, "is not a number") from None
    if not math.isfinite(v):
        raise CaseError(where, cell, "is not finite")
    return v


def _factor(unit: str, dim: str, where: str, cell: str) -> float:
    try:
        return parse_quantity(f"1 {unit}" if unit else 1.0, dim)
    except UnitError as exc:
        raise CaseError(where, cell, str(exc)) from None


def parse_measured_csv(text: str, quantity: str, label: str, *,
                       uncertainty: float | None = None, relative: bool = False
                       ) -> tuple[MeasuredPoint, ...]:
    """The points of a measured-curve CSV (module doc), sorted by abscissa.

    ``uncertainty``: for a file without a ``u`` column, each point's
    standard uncertainty (SI, or a fraction of each value when
    ``relative``). Errors name ``label`` (the file), the line and the cell.

    Raises
    ------
    CaseError
        A bad header (names, units, column count), a cell that is not a
        number or is written with a decimal comma, a negative uncertainty, a
        repeated abscissa, no data row, no uncertainty at all.
    """
    dim, adim, vnames, anames = MEASURED_QUANTITIES[quantity]
    text = text.removeprefix("\ufeff")
    header: list[tuple[str, float, bool]] | None = None
    sep = ","
    pts: list[MeasuredPoint] = []
    for lineno, line in enumerate(text.splitlines(), start=1):
        if not line.strip(" \t,;") or line.lstrip().startswith("#"):
            continue
        where = f"{label}, line {lineno}"
        if header is None:
            sep = next((s for s in _SEPARATORS if len(_split(line, s)) >= 2), ",")
            cells = _split(line, sep)
            if len(cells) not in (2, 3):
                raise CaseError(where, line.strip(), f"the header names 2 or 3 columns: "
                                                     f"{anames[0]}, {vnames[0]} and optionally u")
            header = []
            for k, cell in enumerate(cells):
                m = _HEAD_RE.match(cell)
                want = (anames, vnames, ("u",))[k]
                if not m or m.group("name") not in want:
                    raise CaseError(where, cell, f"column {k + 1} must be "
                                                 f"{' or '.join(repr(n + ' [unit]') for n in want)}")
                unit = m.group("b") or m.group("p") or ""
                if k == 2 and unit == "%":
                    header.append(("u", 0.01, True))
                    continue
                header.append((m.group("name"), _factor(unit, (adim, dim, dim)[k], where, cell),
                               False))
            if len(header) == 2 and uncertainty is None:
                raise CaseError(where, line.strip(), "no u column and no uncertainty given: "
                                                     "state the measurement's uncertainty")
            continue
        cells = _split(line, sep)
        if len(cells) != len(header):
            raise CaseError(where, line.strip(), f"expected {len(header)} columns (as the "
                                                 f"header, separated by {_SEPARATORS[sep]}), got "
                                                 f"{len(cells)}")
        at = _number(cells[0], where) * header[0][1]
        value = _number(cells[1], where) * header[1][1]
        if len(header) == 3:
            u = _number(cells[2], where)
            u = u * header[2][1] * (abs(value) if header[2][2] else 1.0)
        else:
            assert uncertainty is not None
            u = uncertainty * (abs(value) if relative else 1.0)
        if u < 0:
            raise CaseError(where, cells[2] if len(cells) > 2 else uncertainty,
                            "an uncertainty must not be negative")
        pts.append(MeasuredPoint(at, value, u))
    if header is None or not pts:
        raise CaseError(label, None, f"no data rows (expected a header such as "
                                     f"'{anames[0]} [unit],{vnames[0]} [unit]' and rows)")
    pts.sort(key=lambda p: p.at)
    for a, b in zip(pts, pts[1:]):
        if a.at == b.at:
            raise CaseError(label, b.at, f"two rows at the same {anames[0]}")
    return tuple(pts)


def interpolate(points: Sequence[MeasuredPoint], at: float) -> tuple[float, float]:
    """The measured value and uncertainty at ``at``, linear between the
    points (NaN outside them): a model curve's points then have a measured
    counterpart."""
    xs = [p.at for p in points]
    if not points or not (xs[0] - 1e-12 <= at <= xs[-1] + 1e-12):
        return math.nan, math.nan
    for a, b in zip(points, points[1:]):
        if a.at <= at <= b.at:
            f = (at - a.at) / (b.at - a.at) if b.at != a.at else 0.0
            return (a.value + f * (b.value - a.value),
                    a.uncertainty + f * (b.uncertainty - a.uncertainty))
    return points[0].value, points[0].uncertainty
