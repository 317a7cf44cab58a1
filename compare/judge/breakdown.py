"""Where the hand-vs-FE difference comes from: the hand model's refinements
switched on one at a time, each step compared with the same FE solution.

Order (fixed): the case as written; the best-ranked fringing model (the
planar-consistent forms ranked against the FE, `compare.judge.check.rank_fringing`);
window leakage; the stacking factor (only with ``[core] stacking`` < 1);
IEC 60205 effective parameters (only where the family defines them for the
case's gaps).  A step already on in the case, or not applicable, is left
out.  Every step is the planar-consistent hand form, like for like with the
planar FE.  What is left after the last step is what only a field solution
sees: non-uniform flux in the limbs and corners, local saturation, the
winding's effect on the gap's fringing, leakage outside the core.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from ..design.case import Case
from ..errors import CaseError
from ..models.hand import run_hand

__all__ = ["BREAKDOWN_KEYS", "Step", "difference_breakdown"]

BREAKDOWN_KEYS = ("gap_B", "core_B", "path_H", "flux", "inductance", "incremental_inductance")
"""The quantities of each step (keys of the hand contract)."""


@dataclass(frozen=True)
class Step:
    """One step: its name, the hand values (SI) and their differences to
    the FE, (hand - FE)/FE in percent."""

    name: str
    hand: dict[str, float]
    diff_pct: dict[str, float]
    settings: dict[str, Any]

    def to_dict(self) -> dict:
        return {"step": self.name,
                "quantities": {k: {"hand": self.hand[k], "diff_pct": self.diff_pct[k]}
                               for k in BREAKDOWN_KEYS}}


def _diff(h: float, f: float) -> float:
    if not (math.isfinite(h) and math.isfinite(f)) or f == 0:
        return math.nan
    return 100.0 * (h - f) / f


def difference_breakdown(case: Case, fe_values: dict[str, float],
                         best_fringing: str | None,
                         na_keys: tuple[str, ...] = ()) -> tuple[Step, ...]:
    """The steps (module docstring) against the FE values ``fe_values``.

    ``na_keys``: quantities with nothing to compare (the windings' fields
    cancel, compare.judge.check.cancelling_windings): hand 0, difference NaN."""
    settings: dict[str, Any] = {"fringing": case.hand.fringing, "leakage": case.hand.leakage,
                                "stacking": case.hand.stacking,
                                "effective": case.hand.effective_parameters}

    def step(name: str) -> Step:
        h = run_hand(case, planar=True, **settings).values()
        h = {k: 0.0 if k in na_keys else h[k] for k in BREAKDOWN_KEYS}
        return Step(name, h, {k: math.nan if k in na_keys else _diff(h[k], fe_values[k])
                              for k in BREAKDOWN_KEYS}, dict(settings))

    steps = [step("as written")]
    if best_fringing and best_fringing != settings["fringing"]:
        settings["fringing"] = best_fringing
        steps.append(step(f"fringing: {best_fringing}"))
    if not settings["leakage"] and len(case.windings) == 1:  # modelled for one winding
        settings["leakage"] = True
        try:
            steps.append(step("window leakage"))
        except CaseError:  # the core has no winding windows (a drawn core's own circuit)
            settings["leakage"] = False
    if case.stacking != 1.0 and not settings["stacking"]:
        settings["stacking"] = True
        steps.append(step(f"stacking factor {case.stacking:g}"))
    if not settings["effective"]:
        settings["effective"] = True
        try:
            steps.append(step("effective parameters"))
        except CaseError:  # the family has no single loop for these gaps
            settings["effective"] = False
    return tuple(steps)
