"""Two concentric windings: their leakage inductance, hand and FE.

When the case's first two windings sit on the same limb, one over the
other, the leakage (short-circuit) inductance referred to the first is

* hand: the classic formula for concentric windings
  (analytic.leakage.concentric_leakage_inductance) with the builds, the
  space between them, the mean winding height and the mean turn at the
  middle of that space: 2 (w + D) + 2 pi e round a rectangular limb w x D
  (turns with rounded corners of radius e, the distance from the limb's
  face to the middle of the space; common practice, no source), 2 pi r
  round the axis in r-z;
* FE: one solve with the ampere-turns balanced, N1 I1 + N2 I2 = 0 (I1 = 1 A),
  L_s = 2 W / I1^2 from the field energy W.  A planar model holds each coil
  side in its cut and gives energy per stack depth D: each side stands for
  half a turn, so the energy per depth is taken along the mean turn,
  L_s = 2 (W/D)(MLT/2) / I1^2, assuming the leakage field per unit length
  along the turn is the same outside the window as inside it (it is lower
  outside a core window: the rule overstates a planar core's L_s there).
  An r-z model needs no rule.
"""

from __future__ import annotations

import dataclasses
import math
from typing import Any

__all__ = ["concentric_pair", "mean_turn", "hand_leakage", "fe_leakage", "coupling_factor",
           "coupling_matrix"]


def coupling_factor(l_jk: float, l_jj: float, l_kk: float) -> float:
    """k = L_jk / sqrt(L_jj L_kk) (dimensionless; the sign of the mutual
    inductance kept), NaN when a self inductance is not positive."""
    den = l_jj * l_kk
    return l_jk / math.sqrt(den) if den > 0 else math.nan


def coupling_matrix(matrix: list[list[float]]) -> list[list[float]]:
    """Every pair's coupling factor from an inductance matrix (H), in the
    matrix's winding order; 1 on the diagonal of positive self inductances."""
    n = len(matrix)
    return [[coupling_factor(matrix[j][k], matrix[j][j], matrix[k][k]) for k in range(n)]
            for j in range(n)]


def concentric_pair(case: Any) -> tuple[Any, Any] | None:
    """(inner, outer) of the first two windings when they share a limb
    (families with limbs), else None."""
    if len(case.windings) < 2 or not case.family_model.winding_limbs:
        return None
    a, b = case.windings[0], case.windings[1]
    if a.limb != b.limb:
        return None
    return (a, b) if a.inner <= b.inner else (b, a)


def mean_turn(case: Any, inner: Any, outer: Any) -> float:
    """Mean length of a turn at the middle of the space between the two (m)."""
    from ..design.coremodel import core_model

    limb = case.limbs[inner.limb]
    e = inner.inner + inner.clearance + inner.thickness + 0.5 * outer.clearance
    if core_model(case).axisymmetric:
        return 2 * math.pi * (limb.c1 + e)
    return 2 * ((limb.c1 - limb.c0) + case.depth) + 2 * math.pi * e


def hand_leakage(case: Any) -> float:
    """The classic formula's L_s referred to the first winding (H), times
    Rogowski's factor with ``[hand] rogowski = true``; NaN without a
    concentric pair."""
    from magcheck.analytic.leakage import concentric_leakage_inductance, rogowski_factor

    pair = concentric_pair(case)
    if pair is None:
        return math.nan
    inner, outer = pair
    h_w = 0.5 * (inner.length + outer.length)
    ls = concentric_leakage_inductance(case.winding.turns, mean_turn(case, inner, outer), h_w,
                                       inner.thickness, outer.thickness, outer.clearance)
    if case.hand.rogowski:
        ls *= rogowski_factor(h_w, inner.thickness, outer.thickness, outer.clearance)
    return ls


def fe_leakage(case: Any, mesh: Any) -> float:
    """L_s referred to the first winding from one FE solve with the ampere-
    turns balanced (H; module doc for the planar rule); NaN without a pair."""
    from ..design.coremodel import core_model
    from .fe import solve_case

    pair = concentric_pair(case)
    if pair is None:
        return math.nan
    w1, w2 = case.windings[0], case.windings[1]
    i1 = 1.0
    i2 = -w1.turns * i1 / w2.turns
    rest = tuple(dataclasses.replace(w, current=0.0) for w in case.extra_windings[1:])
    balanced = dataclasses.replace(
        case, winding=dataclasses.replace(w1, current=i1, voltage=None, frequency=None),
        extra_windings=(dataclasses.replace(w2, current=i2), *rest))
    q, _, _ = solve_case(balanced, mesh)
    w = q.values["energy"]
    if core_model(case).axisymmetric:
        return 2.0 * w / i1 ** 2
    inner, outer = pair
    return 2.0 * (w / case.depth) * (0.5 * mean_turn(case, inner, outer)) / i1 ** 2
