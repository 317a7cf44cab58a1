"""The check's JSON document (``magcheck check --json``; ``CheckResult.to_dict``)
and the caution every output carries.

It lives in the judge layer, below the outputs, so that the result object
itself can give its document (``CheckResult.to_dict``, the Python API) and
the CLI's writer writes the same one (``compare.outputs.serialize`` re-exports
:func:`check_json`, ``compare.outputs.output`` :data:`CAUTION`).  Imports
only the standard library at import time: the CLI's writer imports it.
"""

from __future__ import annotations

import math
import platform
from importlib import metadata
from typing import Any

__all__ = ["CAUTION", "check_json", "json_ready", "versions"]

CAUTION = (
    "Caution: magcheck's results are design estimates. Confirm them by measurement "
    "on a prototype and against the applicable codes and licensed engineering practice; "
    "magcheck does not check insulation, and its temperature rise is a rough estimate, not a "
    "thermal analysis."
)


def json_ready(obj: Any) -> Any:
    """``obj`` as standard JSON holds it: non-finite floats as None, tuples
    as lists, numpy scalars as Python numbers (what ``write_json`` writes)."""
    if isinstance(obj, float):
        return obj if math.isfinite(obj) else None
    if isinstance(obj, dict):
        return {k: json_ready(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [json_ready(v) for v in obj]
    if hasattr(obj, "item") and callable(obj.item):  # numpy scalar
        return json_ready(obj.item())
    return obj


def versions() -> dict[str, str]:
    out = {"python": platform.python_version()}
    for dist in ("magcheck", "numpy", "scipy", "scikit-fem", "gmsh", "meshio", "matplotlib",
                 "pyamg"):
        try:
            out[dist] = metadata.version(dist)
        except metadata.PackageNotFoundError:
            out[dist] = "not installed"
    return out


def check_json(res: Any, agreement: str = "fatal") -> dict:
    """The JSON document of a check.

    ``hand`` holds the hand calculation exactly as ``magcheck hand`` gives it
    (3D, the case's fringing model); ``hand_planar`` its planar-consistent
    form; ``fe`` the FE values under the same keys plus ``uncertainty``;
    ``comparison`` one entry per table row.  ``res`` a
    :class:`compare.judge.check.CheckResult` (not imported here: the check
    module imports this one); Python floats, NaN where a value is missing
    (:func:`json_ready` makes it standard JSON).
    """
    from ..models.coupling import coupling_matrix
    from ..models.hand import HAND_KEYS, UNITS, winding_keys

    fe = res.fe
    fe_block: dict[str, Any] = {k: fe.values[k] for k in HAND_KEYS}
    fe_block.update({
        "uncertainty": {k: fe.uncertainty.get(k) for k in (*HAND_KEYS, "peak_B")},
        "peak_B": fe.fine.peak_B,
        "peak_B_definition": "|B| exceeded on 0.5 % of the core area",
        "max_B": fe.fine.max_B,
        "max_B_at": list(fe.fine.peak_B_at),
        "depth_fringing_factor": res.depth_factor,
        "depth_corrected": {r.key: r.fe_3d for r in res.rows if r.key in HAND_KEYS},
        "depth_corrected_uncertainty": {r.key: r.fe_3d_uncertainty for r in res.rows
                                        if r.key in HAND_KEYS},
        "depth_correction_model": res.depth.model if res.depth is not None else None,
        "newton_iterations": fe.fine.iterations,
        "residual": fe.fine.residual,
        "elements": fe.fine.nelements,
        "dofs": fe.fine.ndofs,
        "element_order": res.case.fe.order,
        "units": dict(UNITS, peak_B="T"),
    })
    # per winding (H and Wb, planar FE per stack depth like every FE value;
    # winding order as in the case): the flux linkages and the incremental
    # inductance matrix, and their uncertainties
    lam_keys, l_keys = winding_keys(res.case)
    wv = fe.fine.winding_values
    fe_block["windings"] = [w.name for w in res.case.windings]
    fe_block["flux_linkages"] = [wv[k] for k in lam_keys]
    fe_block["inductance_matrix"] = [[wv[k] for k in row] for row in l_keys]
    fe_block["uncertainty"]["flux_linkages"] = [fe.uncertainty.get(k) for k in lam_keys]
    fe_block["uncertainty"]["inductance_matrix"] = [[fe.uncertainty.get(k) for k in row]
                                                    for row in l_keys]
    # a moving part's force (N along its closing stroke; null without one):
    # fe.force is the Maxwell stress's, fe.force_virtual_work the second method
    fv = fe.fine.force_values
    for k in ("force", "force_maxwell", "force_virtual_work"):
        fe_block[k] = fv.get(k)
    fe_block["uncertainty"]["force"] = fe.uncertainty.get("force")
    mv = fe.fine.magnet_values
    if mv:  # the first magnet's operating point along its magnetisation (T, A/m)
        from ..design.coremodel import core_model

        model = core_model(res.case)
        knees = dict(model.magnet_knees)
        first = model.magnets[0].region
        fe_block["magnet"] = {"region": first, "B": mv["magnet_B"], "H": mv["magnet_H"],
                              "H_min": mv["magnet_H_min"], "knee_H": knees.get(first),
                              "uncertainty": {k[7:]: fe.uncertainty.get(k) for k in mv}}
    case = res.case
    hand_block, planar_block = res.hand_3d.to_dict(), res.hand_planar.to_dict()
    if res.drive is not None:  # a voltage drive (compare.models.drive): per model, SI
        hand_block.update(res.drive.to_dict("hand_3d"))
        planar_block.update(res.drive.to_dict("hand"))
        fe_block.update(res.drive.to_dict("fe"))
        fe_block["uncertainty"].update({k: v for k, v in res.drive.uncertainty.items()})
    if getattr(res, "ac", None) is not None:  # an AC winding (compare.models.ac): hand.ac, fe.ac
        hand_block.update(res.ac.to_dict("hand"))
        planar_block.update(res.ac.to_dict("hand_planar"))
        fe_block.update(res.ac.to_dict("fe"))
    if getattr(res, "loss", None) is not None:  # the loss budget (compare.models.loss)
        hand_block["loss"] = res.loss.to_dict("hand")
        fe_block["loss"] = res.loss.to_dict("fe")
    for block in (hand_block, planar_block, fe_block):  # k_jk = L_jk / sqrt(L_jj L_kk)
        lm = [[math.nan if v is None else v for v in row] for row in block["inductance_matrix"]]
        block["coupling"] = [[v if math.isfinite(v) else None for v in row]
                             for row in coupling_matrix(lm)]
    if res.leakage:  # two concentric windings: L_s referred to the first (H)
        hand_block["leakage_inductance"] = res.leakage["hand"]
        planar_block["leakage_inductance"] = res.leakage["hand"]
        fe_block["leakage_inductance"] = res.leakage["fe"]
    return {
        "case": {"name": case.name, "family": case.family, "file": case.source,
                 "sha256": case.sha256},
        "hand": hand_block,
        "hand_planar": planar_block,
        "fe": fe_block,
        "comparison": [r.to_dict() for r in res.rows],
        "fringing_ranking": list(res.fringing_ranking),
        "difference_breakdown": [st.to_dict() for st in res.breakdown],
        "notes": list(res.notes),
        "passed": res.passed,  # both verdicts: design_passed and agreement_passed
        "design_passed": res.design_passed,
        "agreement_passed": res.agreement_passed,
        "verdict_counts": {"design": res.verdict_counts("design"),
                           "agreement": res.verdict_counts("agreement")},
        "exit_code": res.exit_code_for(agreement),
        **({"measured": [m.to_dict() for m in res.measured]} if res.measured else {}),
        **({"motion": res.motion.to_dict()} if getattr(res, "motion", None) is not None else {}),
        "timings_s": res.timings,
        "versions": versions(),
        "caution": CAUTION,
    }
