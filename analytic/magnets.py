"""Permanent-magnet materials on their linear recoil line, and the built-in
demo grades.

A magnet grade here is its remanence B_r (T), its recoil permeability mu_r
(the slope of the recoil line over mu0) and its knee field H_k (A/m,
negative): the field below which the second-quadrant curve leaves the
recoil line and the magnet loses magnetisation for good.  A design's
demagnetisation margin is how far the most negative field in the magnet
stays above H_k.

The built-in grades are invented for the demo (round numbers of the two
common families; no maker's data): a ferrite-like and a rare-earth-like one.
"""

from __future__ import annotations

import difflib
import math
from dataclasses import dataclass

from .constants import mu_0

__all__ = ["MagnetGrade", "MAGNET_GRADES", "magnet_grade", "coercivity"]


@dataclass(frozen=True)
class MagnetGrade:
    """A magnet grade: remanence (T), recoil mu_r, knee field (A/m, < 0)."""

    name: str
    remanence: float
    mu_r: float
    knee_H: float
    description: str = ""

    def __post_init__(self) -> None:
        ok = (math.isfinite(self.remanence) and self.remanence > 0 and math.isfinite(self.mu_r)
              and self.mu_r > 0 and math.isfinite(self.knee_H) and self.knee_H < 0)
        if not ok:
            raise ValueError(f"magnet grade {self.name!r}: remanence = {self.remanence!r} T and "
                             f"mu_r = {self.mu_r!r} must be positive, knee_H = {self.knee_H!r} "
                             "A/m negative")

    @property
    def coercivity(self) -> float:
        """H_c of the recoil line, B_r / (mu0 mu_r) (A/m, positive)."""
        return coercivity(self.remanence, self.mu_r)


def coercivity(remanence: float, mu_r: float) -> float:
    """H_c = B_r / (mu0 mu_r) (A/m): where the linear recoil line B = B_r +
    mu0 mu_r H crosses B = 0."""
    return remanence / (mu_0 * mu_r)


MAGNET_GRADES: dict[str, MagnetGrade] = {
    "demo-hard-ferrite": MagnetGrade("demo-hard-ferrite", 0.40, 1.08, -2.4e5,
                                     "ferrite-like, invented for the demo"),
    "demo-rare-earth": MagnetGrade("demo-rare-earth", 1.20, 1.05, -9.0e5,
                                   "rare-earth-like, invented for the demo"),
}
"""The built-in magnet grades (invented for the demo)."""


def magnet_grade(name: str) -> MagnetGrade:
    """A built-in grade by name; ValueError with a did-you-mean otherwise."""
    try:
        return MAGNET_GRADES[name]
    except KeyError:
        close = difflib.get_close_matches(name, list(MAGNET_GRADES), n=1)
        hint = f"; did you mean '{close[0]}'?" if close else ""
        raise ValueError(f"unknown magnet grade {name!r}; known: {', '.join(MAGNET_GRADES)}"
                         f"{hint}") from None
