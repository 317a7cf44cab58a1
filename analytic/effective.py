"""Effective magnetic parameters of a core (IEC 60205).

IEC 60205, Calculation of the effective parameters of magnetic piece parts,
sums over the core's parts in series along the magnetic path (length l_i,
cross-section A_i; parallel parts carrying equal shares combined into one
with their summed area):

    C1 = sum l_i / A_i     (1/m),       C2 = sum l_i / A_i^2     (1/m^3),
    l_e = C1^2 / C2,      A_e = C1 / C2,      V_e = l_e A_e = C1^3 / C2^2.

A uniform core of length l_e and area A_e has the same reluctance as the
real core for any constant permeability (l_e/A_e = C1) and the same
hysteresis-relevant volume; the magnetic-circuit model then carries one
flux density B = flux / A_e.  The standard also gives formulas for the
corner pieces of particular core shapes; magcheck's families use their own
mean-path segments, each piece of iron counted once.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Sequence

__all__ = ["EffectiveParameters", "effective_parameters"]


class EffectiveParametersError(ValueError):
    """Invalid parts; the message names the value."""


@dataclass(frozen=True)
class EffectiveParameters:
    """C1 (1/m), C2 (1/m^3), l_e (m), A_e (m^2), V_e (m^3)."""

    c1: float
    c2: float

    @property
    def length(self) -> float:
        return self.c1 ** 2 / self.c2

    @property
    def area(self) -> float:
        return self.c1 / self.c2

    @property
    def volume(self) -> float:
        return self.c1 ** 3 / self.c2 ** 2


def effective_parameters(parts: Sequence[tuple[float, float]]) -> EffectiveParameters:
    """IEC 60205 effective parameters of parts in series, each (length m, area m^2)."""
    if not parts:
        raise EffectiveParametersError("effective parameters: no parts")
    c1 = c2 = 0.0
    for length, area in parts:
        if not (math.isfinite(length) and length > 0 and math.isfinite(area) and area > 0):
            raise EffectiveParametersError(
                f"effective parameters: part (length {length!r} m, area {area!r} m^2) "
                "must have finite positive length and area")
        c1 += length / area
        c2 += length / area ** 2
    return EffectiveParameters(c1, c2)
