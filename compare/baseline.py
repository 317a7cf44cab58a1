"""Stored results of checks, and drift against them.

A baseline file maps a case name to a snapshot of its check: hand values
(3D and planar) and FE values with their uncertainty. Drift tolerances:

- hand values: 1e-6 relative. The magnetic-circuit solve is converged to
  1e-10; the margin is for BLAS and platform rounding.
- FE values: the larger of 0.2 % and twice the stored FE uncertainty. A
  mesh generator update moves nodes, so FE values may change by up to their
  discretisation error; anything beyond that is a real change.
"""

from __future__ import annotations

import json
import math
from dataclasses import dataclass
from pathlib import Path

from .check import CheckResult
from .hand import HAND_KEYS

__all__ = ["snapshot", "Drift", "drift", "load_baseline", "HAND_RTOL", "FE_RTOL_FLOOR"]

HAND_RTOL = 1e-6
FE_RTOL_FLOOR = 2e-3


def snapshot(res: CheckResult) -> dict:
    """The values of a check worth guarding against drift."""
    return {
        "hand": {k: res.hand_3d.values()[k] for k in HAND_KEYS},
        "hand_planar": {k: res.hand_planar.values()[k] for k in HAND_KEYS},
        "fe": {k: res.fe.values[k] for k in HAND_KEYS} | {"peak_B": res.fe.fine.peak_B},
        "fe_uncertainty": {k: res.fe.uncertainty.get(k) for k in (*HAND_KEYS, "peak_B")},
        "case_sha256": res.case.sha256,
    }


@dataclass(frozen=True)
class Drift:
    """One value that moved beyond its tolerance."""

    block: str
    key: str
    stored: float
    current: float
    tolerance: float  # absolute

    @property
    def rel(self) -> float:
        return (self.current - self.stored) / abs(self.stored) if self.stored else math.inf

    def __str__(self) -> str:
        return (f"{self.block}.{self.key}: {self.current:.6g} vs stored {self.stored:.6g} "
                f"({100 * self.rel:+.3f} %, tolerance {self.tolerance:.3g})")


def _close(a: float | None, b: float | None, tol: float) -> bool:
    if a is None or b is None or not (math.isfinite(a) and math.isfinite(b)):
        return (a is None or not math.isfinite(a)) == (b is None or not math.isfinite(b))
    return abs(a - b) <= tol


def drift(current: dict, stored: dict) -> list[Drift]:
    """Values of ``current`` that moved beyond tolerance from ``stored`` (snapshots)."""
    out = []
    for block in ("hand", "hand_planar"):
        for k, s in stored[block].items():
            c = current[block].get(k)
            tol = HAND_RTOL * abs(s) if s is not None else 0.0
            if not _close(c, s, tol):
                out.append(Drift(block, k, s, c, tol))
    unc = stored.get("fe_uncertainty", {})
    for k, s in stored["fe"].items():
        c = current["fe"].get(k)
        u = unc.get(k)
        tol = max(FE_RTOL_FLOOR * abs(s or 0.0), 2.0 * (u if u is not None and math.isfinite(u) else 0.0))
        if not _close(c, s, tol):
            out.append(Drift("fe", k, s, c, tol))
    return out


def load_baseline(path: str | Path) -> dict:
    return json.loads(Path(path).read_text())
