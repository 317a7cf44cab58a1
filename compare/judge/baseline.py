"""Stored results of checks, and drift against them.

A baseline file maps a case name to a snapshot of its check: hand values
(3D and planar) and FE values with their uncertainty. Drift tolerances:

- hand values: 1e-6 relative. The magnetic-circuit solve is converged to
  1e-10; the margin is for BLAS and platform rounding.
- FE values: the larger of 0.2 % and twice the stored FE uncertainty, the
  uncertainty term capped at 1 % of the value. A mesh generator update moves
  nodes, so FE values may change by up to their discretisation error; the
  cap keeps a case whose own uncertainty is large (a coarse mesh, a corner
  value) from hiding a real change behind it.
- Depth-corrected FE values (``fe_3d``) and margin rows (``margins``): as FE
  values.
- FE uncertainties: within a factor 3 of the stored value, or below 0.1 % of
  the quantity. They are differences of two meshes' values, so they move
  more than the values do; a tenfold change (a wrong estimate) is caught.

``agreement`` stores each agreement row's verdict (older baselines have
none and stay readable): `magcheck verify` reports a FAIL stored there as a
known disagreement instead of failing (compare.studies.verify).

The stored ``case_sha256`` ties each entry to the case file it was made from
(tests/test_cases_regression.py fails when a case file changed without its
entry being regenerated).
"""

from __future__ import annotations

import json
import math
from dataclasses import dataclass
from pathlib import Path

from .check import CheckResult
from ..models.hand import HAND_KEYS

__all__ = ["snapshot", "Drift", "drift", "load_baseline", "agreement_verdicts",
           "stored_verdict_changes", "HAND_RTOL", "FE_RTOL_FLOOR",
           "FE_UNC_CAP", "UNITS"]

UNITS = {"gap_B": "T", "core_B": "T", "path_H": "A/m", "flux": "Wb", "flux_linkage": "Wb",
         "inductance": "H", "incremental_inductance": "H", "energy": "J", "peak_B": "T"}

HAND_RTOL = 1e-6
FE_RTOL_FLOOR = 2e-3
FE_UNC_CAP = 1e-2
"""Largest relative widening of an FE tolerance by the stored uncertainty."""
UNC_FACTOR = 3.0
UNC_FLOOR = 1e-3


def snapshot(res: CheckResult) -> dict:
    """The values of a check worth guarding against drift."""
    # with several windings, each one's flux linkage and the inductance
    # matrix too (compare.models.hand.winding_keys); one winding has them already
    # as flux_linkage and incremental_inductance
    many = len(res.case.windings) > 1
    hw = res.hand_3d.winding_values if many else {}
    hpw = res.hand_planar.winding_values if many else {}
    fw = res.fe.fine.winding_values if many else {}
    # with a moving part, its forces (N): hand force and force_pull, FE force,
    # force_maxwell and force_virtual_work
    fv = res.fe.fine.force_values
    ac = getattr(res, "ac", None)
    # an AC winding (compare.models.ac): its hand (planar form) and FE values
    extra = ({"ac": {"hand_planar": dict(ac.hand), "hand": dict(ac.hand_3d), "fe": dict(ac.fe),
                     "fe_uncertainty": dict(ac.uncertainty)}} if ac is not None else {})
    mo = getattr(res, "motion", None)
    if mo is not None:  # a moving armature (compare.models.motion): each model's figures
        extra["motion"] = {name: dict(m.values) for name, m in mo.models.items()}
    loss = getattr(res, "loss", None)
    if loss is not None:  # the loss budget (compare.models.loss): hand planar, hand 3D, FE
        extra["loss"] = {"hand_planar": {k: v["hand"] for k, v in loss.entries.items()},
                         "hand": {k: v["hand_3d"] for k, v in loss.entries.items()},
                         "fe": {k: v["fe"] for k, v in loss.entries.items()},
                         "fe_uncertainty": {k: v["uncertainty"] for k, v in loss.entries.items()}}
    return extra | {
        "hand": {k: res.hand_3d.values()[k] for k in HAND_KEYS} | hw | res.hand_3d.force_values,
        "hand_planar": ({k: res.hand_planar.values()[k] for k in HAND_KEYS} | hpw
                        | res.hand_planar.force_values),
        "fe": ({k: res.fe.values[k] for k in HAND_KEYS} | {"peak_B": res.fe.fine.peak_B} | fw
               | fv),
        "fe_uncertainty": {k: res.fe.uncertainty.get(k)
                           for k in (*HAND_KEYS, "peak_B", *fw, *fv)},
        "fe_3d": {r.key: r.fe_3d for r in res.rows if r.key in HAND_KEYS},
        "margins": {r.key: r.fe if r.fe == r.fe else r.hand for r in res.rows
                    if r.limit_value is not None},
        # the agreement rows' verdicts (not drift-checked: `magcheck verify`
        # reports a FAIL stored here as a known disagreement)
        "agreement": agreement_verdicts(res),
        "case_sha256": res.case.sha256,
    }


def agreement_verdicts(res: CheckResult) -> dict[str, str]:
    """Each agreement row's verdict (rows with an agreement limit), by key."""
    return {r.key: r.verdict for r in res.rows
            if r.judges == "agreement" and r.limit_pct is not None}


def stored_verdict_changes(current: dict[str, str], stored: dict[str, str]) -> dict[str, str]:
    """Agreement rows whose FAIL-ness differs from the stored verdict:
    key -> the stored verdict ("" when the row was not stored).  A change
    between "pass", "within FE noise" and "inconclusive" is mesh noise, not
    a change of verdict."""
    out = {}
    for k, v in current.items():
        s = stored.get(k, "")
        if (v == "FAIL") != (s == "FAIL"):
            out[k] = s
    return out


@dataclass(frozen=True)
class Drift:
    """One value that moved beyond its tolerance."""

    block: str
    key: str
    stored: float
    current: float | None
    tolerance: float  # absolute (a factor for fe_uncertainty)

    @property
    def rel(self) -> float:
        if self.current is None or not self.stored:
            return math.inf
        return (self.current - self.stored) / abs(self.stored)

    @property
    def unit(self) -> str:
        return UNITS.get(self.key, "")

    def __str__(self) -> str:
        u = f" {self.unit}" if self.unit else ""
        cur = "missing" if self.current is None else f"{self.current:.6g}{u}"
        tol = (f"factor {self.tolerance:g}" if self.block == "fe_uncertainty"
               else f"tolerance {self.tolerance:.3g}{u}")
        return (f"{self.block}.{self.key}: {cur} vs stored {self.stored:.6g}{u} "
                f"({100 * self.rel:+.3f} %, {tol})")


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

    def fe_tol(k: str, s: float | None) -> float:
        u = unc.get(k)
        u = u if u is not None and math.isfinite(u) else 0.0
        mag = abs(s or 0.0)
        return max(FE_RTOL_FLOOR * mag, min(2.0 * u, FE_UNC_CAP * mag))

    for block in ("fe", "fe_3d", "margins"):
        for k, s in stored.get(block, {}).items():
            c = current.get(block, {}).get(k)
            tol = fe_tol(k if block != "margins" else "", s)
            if not _close(c, s, tol):
                out.append(Drift(block, k, s, c, tol))
    out += _block_drift("ac", stored, current)  # an AC winding
    smo, cmo = stored.get("motion"), current.get("motion") or {}
    if smo is not None:  # a moving armature: the hand's to 1e-6, the FE's maps' to 0.2 %
        for name, vals in smo.items():
            rt = HAND_RTOL if name.startswith("hand") else FE_RTOL_FLOOR
            for k, s in vals.items():
                c = cmo.get(name, {}).get(k)
                if not _close(c, s, rt * abs(s) if s is not None else 0.0):
                    out.append(Drift(f"motion.{name}", k, s, c, rt))
    out += _block_drift("loss", stored, current)
    ref = stored.get("fe", {})
    for k, s in unc.items():
        c = current.get("fe_uncertainty", {}).get(k)
        if s is None or c is None or not (math.isfinite(s) and math.isfinite(c)):
            continue
        floor = UNC_FLOOR * abs(ref.get(k) or 0.0)
        if max(c, floor) > UNC_FACTOR * max(s, floor) or max(s, floor) > UNC_FACTOR * max(c, floor):
            out.append(Drift("fe_uncertainty", k, s, c, UNC_FACTOR))
    return out


def _block_drift(name: str, stored: dict, current: dict) -> list[Drift]:
    """A block of hand_planar / hand / fe / fe_uncertainty values (an AC winding, the loss
    budget): hand as the hand blocks, FE within its uncertainty."""
    sb, cb = stored.get(name), current.get(name) or {}
    out: list[Drift] = []
    if sb is None:
        return out
    for block in ("hand_planar", "hand"):
        for k, s in sb[block].items():
            c = cb.get(block, {}).get(k)
            if not _close(c, s, HAND_RTOL * abs(s) if s is not None else 0.0):
                out.append(Drift(f"{name}.{block}", k, s, c, HAND_RTOL))
    for k, s in sb["fe"].items():
        u = sb.get("fe_uncertainty", {}).get(k)
        u = u if u is not None and math.isfinite(u) else 0.0
        mag = abs(s or 0.0)
        tol = max(FE_RTOL_FLOOR * mag, min(2.0 * u, FE_UNC_CAP * mag))
        c = cb.get("fe", {}).get(k)
        if not _close(c, s, tol):
            out.append(Drift(f"{name}.fe", k, s, c, tol))
    return out


def load_baseline(path: str | Path) -> dict:
    return json.loads(Path(path).read_text())
