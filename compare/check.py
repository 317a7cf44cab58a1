"""The side-by-side check: hand calculation and field solution of one case.

The like-for-like comparison is the hand model in its planar-consistent
form (fringing in the plane only) against the planar FE per stack depth.
Beside it stand the 3D hand value the engineer would use and the FE value
with the depth-direction fringing correction (docs/references.md section 6:
multiply the planar permeance by the model's out-of-plane factor).
"""

from __future__ import annotations

import math
import time
from dataclasses import dataclass, field
from typing import Any

from analytic.fringing import FRINGING_MODELS, get_fringing

from .case import Case

from .casefile import plausibility_issues
from .fe import FEResult, run_fe_checked
from .hand import FORCE_KEYS, HAND_KEYS, UNITS, HandResult, gap_face, run_hand, winding_keys

__all__ = ["Row", "CheckResult", "run_check", "DEFAULT_LIMITS", "LABELS", "rank_fringing"]

# Default agreement limits, percent of the FE value. Engineering judgement
# (common practice, no source): a hand calc within 10 % on the gap and
# inductance is a good one; H along the path is far from uniform, so its
# mean is held to a looser band.
DEFAULT_LIMITS: dict[str, float] = {
    "gap_B": 10.0, "core_B": 10.0, "path_H": 30.0, "flux": 15.0, "flux_linkage": 15.0,
    "inductance": 15.0, "incremental_inductance": 20.0, "energy": 15.0,
    # a moving part's pull: the force goes as the gap's MMF squared and its
    # permeance's derivative, so a hand calc within 20 % is a good one, the
    # pull formula (no fringing in its face) within 30 % (common practice, no source)
    "force": 20.0, "force_pull": 30.0,
    # a voltage drive: the magnetizing current, which the knee makes steep
    # in B (common practice, no source).  B_peak has no default: it sets the
    # EMF equation's uniform limb B beside the FE's 0.5 % area quantile, a
    # local peak where the flux crowds at the inner corners, so it is info
    # unless [margins.agreement] B_peak asks; B_limb_peak compares like with
    # like
    "magnetizing_current_peak": 30.0,
    # the same EMF-equation B against the FE's mean limb B: off by the
    # leakage flux that links the winding outside the limb (common practice,
    # no source)
    "B_limb_peak": 10.0, "magnetizing_current_rms": 30.0,
    "magnetizing_inductance": 30.0,
    # the concentric-winding formula assumes long thin windings and no end
    # fringing (common practice, no source)
    "leakage_inductance": 25.0,
    # a magnet's operating point: B on its recoil line moves little with the
    # load, H much more (common practice, no source)
    "magnet_B": 10.0, "magnet_H": 30.0,
}

LABELS = {
    "gap_B": "gap B", "core_B": "core B", "path_H": "path-averaged H", "flux": "flux",
    "flux_linkage": "flux linkage", "inductance": "inductance (secant)",
    "incremental_inductance": "inductance (incremental)", "energy": "stored energy",
    "peak_B": "peak core B",
    "force": "force (virtual work)", "force_pull": "force (pull formula)",
    "force_virtual_work": "force, FE virtual work",
    "magnet_B": "magnet B (operating point)", "magnet_H": "magnet H (operating point)",
    "magnet_H_min": "magnet H, demagnetising extreme",
    "B_peak": "peak flux density at the drive's peak",
    "B_limb_peak": "winding-limb B (flux / area) at the drive's peak",
    "magnetizing_current_peak": "magnetizing current, peak",
    "magnetizing_current_rms": "magnetizing current, rms",
    "magnetizing_inductance": "magnetizing inductance (fundamental)",
    "leakage_inductance": "leakage inductance",
    "inrush_current_peak": "inrush current, first peak (estimate)",
}

# Quantities that scale with the gap permeance, and so take the depth-fringing factor.
_PERMEANCE_LIKE = ("flux", "flux_linkage", "inductance", "incremental_inductance", "energy",
                   "core_B", "path_H")

UNCERTAIN_PCT = 1.0  # FE uncertainty above this (percent) is flagged


@dataclass(frozen=True)
class Row:
    """One line of the comparison table (SI values, percentages)."""

    key: str
    label: str
    unit: str
    hand: float
    fe: float
    uncertainty: float
    diff_pct: float
    limit_pct: float | None
    verdict: str
    hand_3d: float = math.nan
    fe_3d: float = math.nan
    limit_value: float | None = None  # design margins: the limit itself (SI)
    margin_pct: float = math.nan  # design margins: margin left, percent of the limit
    limit_kind: str = "max"  # design margins: "max" (value <= limit) or "min" (value >= limit)

    @property
    def uncertainty_pct(self) -> float:
        return 100.0 * self.uncertainty / abs(self.fe) if self.fe else math.nan

    def to_dict(self) -> dict:
        return {"quantity": self.key, "label": self.label, "unit": self.unit,
                "hand": self.hand, "fe": self.fe, "fe_uncertainty": self.uncertainty,
                "fe_uncertainty_pct": self.uncertainty_pct, "difference_pct": self.diff_pct,
                "limit_pct": self.limit_pct, "verdict": self.verdict,
                "hand_3d": self.hand_3d, "fe_depth_corrected": self.fe_3d,
                "limit_value": self.limit_value, "margin_pct": self.margin_pct,
                "limit_kind": self.limit_kind}


@dataclass(frozen=True)
class CheckResult:
    """Everything a check produced."""

    case: Case
    hand_3d: HandResult
    hand_planar: HandResult
    fe: FEResult
    rows: tuple[Row, ...]
    depth_factor: float
    notes: tuple[str, ...]
    timings: dict[str, float]
    fringing_ranking: tuple[dict, ...] = ()
    breakdown: tuple = ()
    """compare.breakdown.Step per refinement, in order (the difference breakdown)."""
    drive: Any = None
    """compare.drive.DriveResult of a voltage-driven case (None otherwise)."""
    leakage: dict = field(default_factory=dict)
    """Two concentric windings: {"hand": L_s, "fe": L_s} referred to the first (H)."""

    @property
    def passed(self) -> bool:
        return all(r.verdict != "FAIL" for r in self.rows)

    @property
    def exit_code(self) -> int:
        return 0 if self.passed else 1


def _verdict(diff_pct: float, hand: float, fe: float, unc: float, limit: float | None) -> str:
    if not (math.isfinite(hand) and math.isfinite(fe) and math.isfinite(diff_pct)):
        return "n/a"  # no value, or no relative difference (FE value zero)
    if math.isfinite(unc) and abs(hand - fe) <= unc:
        return "within FE noise"
    if limit is None:
        return "info"
    return "pass" if abs(diff_pct) <= limit else "FAIL"


def _diff_pct(hand: float, fe: float) -> float:
    """(hand - FE) / FE in percent: the same figure for a quantity and its
    sign-reversed counterpart (negative currents, compare.hand.signed)."""
    if not (math.isfinite(hand) and math.isfinite(fe)) or fe == 0:
        return math.nan
    return 100.0 * (hand - fe) / fe


def depth_corrections(hand_p: HandResult | dict, hand_3d: HandResult | dict) -> dict[str, float]:
    """Per quantity, the factor taking a planar FE value to its 3D estimate
    (the "FE 3D" column): the hand network's own 3D / planar ratio.

    Depth fringing raises only the gap permeances, each by its k_depth; what
    that does to the circuit depends on the gaps' share of its reluctance.
    For a linear circuit with core reluctance R_c and gap reluctance R_g the
    flux rises by (R_c + R_g) / (R_c + R_g/k_depth), not by k_depth (which
    overstates it by the core's share).  The hand network holds exactly that
    share, with the nonlinear core, several gaps and parallel limbs, so the
    rule is: FE 3D = FE x hand 3D / hand planar, for flux, flux linkage,
    inductances, energy, core B and path H.  Gap B (the field in the middle
    of the gap) is left as it is.  At zero current, where those quantities
    are zero, the secant-inductance ratio (the small-signal one) serves.
    """
    hp = hand_p if isinstance(hand_p, dict) else hand_p.values()
    h3 = hand_3d if isinstance(hand_3d, dict) else hand_3d.values()
    base = h3["inductance"] / hp["inductance"] if hp["inductance"] else 1.0
    out = {}
    for k in HAND_KEYS:
        if k not in _PERMEANCE_LIKE:
            out[k] = 1.0
        elif hp[k] and math.isfinite(hp[k]) and math.isfinite(h3[k]):
            out[k] = h3[k] / hp[k]
        else:
            out[k] = base
    return out


def fe_3d_factor(case: Case, key: str = "inductance") -> float:
    """`depth_corrections` of one quantity at the case's own operating point
    (solves the hand network in both forms)."""
    return depth_corrections(run_hand(case, planar=True), run_hand(case))[key]


def force_rows(case: Case, hand_p: HandResult, hand_3d: HandResult,
               fe: FEResult) -> list[Row]:
    """With a moving part: the hand force by the network's virtual work and
    by the pull formula, each against the FE's Maxwell stress, and the FE's
    virtual work (the independent second method) beside them, N along the
    closing stroke.  The 3D columns scale the FE by the hand model's 3D over
    planar force (as the other rows)."""
    if not hand_p.force_values:
        return []
    fv = fe.fine.force_values
    f = fv.get("force", math.nan)
    u = fe.uncertainty.get("force", math.nan)
    out = []
    # one depth correction for the FE force: the hand network's 3D over planar
    # force (the pull formula is one of the estimates compared, not a model
    # of the depth fringing)
    hp_f, h3_f = hand_p.force_values["force"], hand_3d.force_values["force"]
    k3 = h3_f / hp_f if hp_f and math.isfinite(h3_f) else 1.0
    for k in FORCE_KEYS:
        h, h3 = hand_p.force_values[k], hand_3d.force_values[k]
        d = _diff_pct(h, f)
        lim = case.margins.agreement_limit(k, DEFAULT_LIMITS.get(k))
        out.append(Row(k, LABELS[k], "N", h, f, u, d, lim, _verdict(d, h, f, u, lim),
                       hand_3d=h3, fe_3d=f * k3))
    vw = fv.get("force_virtual_work", math.nan)
    if math.isfinite(vw):
        out.append(Row("force_virtual_work", LABELS["force_virtual_work"], "N", math.nan, vw,
                       fe.uncertainty.get("force_virtual_work", math.nan), math.nan, None,
                       "info", fe_3d=vw * k3))
    return out


def magnet_rows(case: Case, hand_p: HandResult, hand_3d: HandResult,
                fe: FEResult) -> list[Row]:
    """With a magnet: the first magnet's mean B and H along its magnetisation,
    hand (its circuit branch, when the circuit has one of its name) against
    the FE's means over it, and the FE's demagnetising extreme (the H
    exceeded downward on 0.5 % of the magnet's area)."""
    mv = fe.fine.magnet_values
    if not mv:
        return []
    out = []
    for k, unit in (("magnet_B", "T"), ("magnet_H", "A/m")):
        h = hand_p.magnet_values.get(k, math.nan)
        f, u = mv[k], fe.uncertainty.get(k, math.nan)
        d = _diff_pct(h, f)
        lim = DEFAULT_LIMITS[k]
        out.append(Row(k, LABELS[k], unit, h, f, u, d, lim,
                       _verdict(d, h, f, u, lim) if math.isfinite(h) else "info",
                       hand_3d=hand_3d.magnet_values.get(k, math.nan), fe_3d=f))
    out.append(Row("magnet_H_min", LABELS["magnet_H_min"], "A/m", math.nan, mv["magnet_H_min"],
                   fe.uncertainty.get("magnet_H_min", math.nan), math.nan, None, "info",
                   fe_3d=mv["magnet_H_min"]))
    return out


def leakage_values(case: Case, fe: FEResult) -> dict:
    """The leakage inductance of the first two windings when concentric
    (compare.coupling), hand and FE on the finest mesh; {} otherwise."""
    from .coupling import concentric_pair, fe_leakage, hand_leakage

    if concentric_pair(case) is None:
        return {}
    return {"hand": hand_leakage(case), "fe": fe_leakage(case, fe.solution.mesh)}


def leakage_row(case: Case, leakage: dict) -> Row:
    """The leakage-inductance row: the classic formula against the FE's
    balanced-ampere-turn energy (one mesh: no uncertainty)."""
    k = "leakage_inductance"
    h, f = leakage["hand"], leakage["fe"]
    d = _diff_pct(h, f)
    lim = case.margins.agreement_limit(k, DEFAULT_LIMITS[k])
    how = ", Rogowski factor" if case.hand.rogowski else ""
    return Row(k, f"{LABELS[k]} (referred to {case.winding.name}{how})", "H", h, f, math.nan, d, lim,
               _verdict(d, h, f, math.nan, lim), hand_3d=h, fe_3d=f)


def drive_rows(case: Case, drive: Any) -> list[Row]:
    """A voltage-driven winding: the peak flux density, the magnetizing
    current (peak, rms), the magnetizing inductance the fundamental sees
    (lambda_pk over the fundamental's amplitude), hand (planar form) against
    FE with the first-order FE uncertainty (compare.drive), the FE 3D
    column by the hand's own 3D / planar ratio; the 3rd, 5th and 7th
    harmonics (info); with ``residual_flux`` the inrush estimate's first
    current peak (info unless ``[margins.agreement] inrush_current_peak``
    sets a limit: the hand network has no air flux beside the saturated
    core, so it is expected far off); and the margins ``B_peak``,
    ``magnetizing_current_peak``, ``magnetizing_current_rms`` and
    ``inrush_current_peak`` (maxima, judged on the FE's 3D value)."""
    hv, h3, fv = drive.values("hand"), drive.values("hand_3d"), drive.values("fe")
    out = []
    for k in ("B_peak", "B_limb_peak", "magnetizing_current_peak", "magnetizing_current_rms",
              "magnetizing_inductance"):
        unit = {"B_peak": "T", "B_limb_peak": "T", "magnetizing_inductance": "H"}.get(k, "A")
        ratio = h3[k] / hv[k] if k not in ("B_peak", "B_limb_peak") and hv[k] else 1.0
        d = _diff_pct(hv[k], fv[k])
        lim = case.margins.agreement_limit(k, DEFAULT_LIMITS.get(k))
        u = drive.uncertainty.get(k, math.nan)
        out.append(Row(k, LABELS[k], unit, hv[k], fv[k], u, d, lim,
                       _verdict(d, hv[k], fv[k], u, lim), hand_3d=h3[k], fe_3d=fv[k] * ratio))
    for n in (3, 5, 7):
        h, f = drive.hand.harmonics_pct[n], drive.fe.harmonics_pct[n]
        out.append(Row(f"magnetizing_harmonic_{n}", f"magnetizing current, harmonic {n} (% of "
                       "the fundamental)", "%", h, f, math.nan, math.nan, None, "info",
                       hand_3d=drive.hand_3d.harmonics_pct[n], fe_3d=f))
    if drive.inrush:
        k = "inrush_current_peak"
        h, h3i, f = drive.inrush["hand"], drive.inrush["hand_3d"], drive.inrush["fe"]
        d = _diff_pct(h, f)
        lim = case.margins.agreement_limit(k, None)
        u = drive.uncertainty.get(k, math.nan)
        r = case.winding.residual_flux
        damp = f", {drive.resistance:.4g} ohm" if drive.resistance > 0 else ", undamped"
        # the FE 3D column is the planar FE itself: the hand's 3D / planar
        # ratio (depth fringing of the gaps) means nothing deep in saturation,
        # where the current is carried by the winding's air flux
        out.append(Row(k, f"{LABELS[k][:-1]}, residual {r:g}{damp})", "A",
                       h, f, u, d, lim, _verdict(d, h, f, u, lim), hand_3d=h3i, fe_3d=f))
    m = case.margins
    for key, limit in (("B_peak", m.B_peak), ("magnetizing_current_peak", m.magnetizing_current_peak),
                       ("magnetizing_current_rms", m.magnetizing_current_rms),
                       ("inrush_current_peak", m.inrush_current_peak)):
        if limit is None:
            continue
        row = next(r for r in out if r.key == key)
        value = row.fe_3d
        margin = 100.0 * (limit - value) / limit
        out.append(Row(f"margin:{key}", f"{LABELS[key]}, max", row.unit, row.hand_3d, value,
                       math.nan, math.nan, None, "pass" if value <= limit else "FAIL",
                       limit_value=limit, margin_pct=margin, limit_kind="max"))
    return out


def depth_factor(case: Case) -> float:
    """Out-of-plane fringing factor of the first gap under the case's model (1 if none)."""
    from .hand import hand_circuit

    from .coremodel import core_model

    if core_model(case).axisymmetric:  # an r-z solution has the depth fringing in it
        return 1.0
    circuit = hand_circuit(case)
    if circuit is not None:  # the circuit's measured gap, under its own model
        gap = next((g for g in circuit.gaps if g.name == circuit.gap_B), None)
        if gap is None:
            return 1.0
        _, k_depth = get_fringing(gap.fringing or case.hand.fringing).factors(gap.face)
        return float(k_depth)
    if not case.gaps:
        return 1.0
    _, k_depth = get_fringing(case.hand.fringing).factors(gap_face(case, 0))
    return float(k_depth)


ZERO_AT_ZERO_CURRENT = ("gap_B", "core_B", "path_H", "flux", "flux_linkage", "energy")
"""Quantities that are exactly zero at zero winding current: no difference, verdict n/a.

The secant inductance there is its small-signal limit, the incremental
inductance at zero current, in both models."""


def build_rows(case: Case, hand_p: HandResult, hand_3d: HandResult, fe: FEResult) -> tuple[Row, ...]:
    """The comparison rows."""
    rows = []
    k3 = depth_corrections(hand_p, hand_3d)
    from .coremodel import core_model

    zero = (all(w.current == 0.0 for w in case.windings)
            and core_model(case).sourceless_at_zero_current)
    for k in HAND_KEYS:
        h, f, u = hand_p.values()[k], fe.values[k], fe.uncertainty.get(k, math.nan)
        d = math.nan if (zero and k in ZERO_AT_ZERO_CURRENT) else _diff_pct(h, f)
        lim = case.margins.agreement_limit(k, DEFAULT_LIMITS.get(k))
        f3 = f * k3[k]
        rows.append(Row(k, LABELS[k], UNITS[k], h, f, u, d, lim, _verdict(d, h, f, u, lim),
                        hand_3d=hand_3d.values()[k], fe_3d=f3))
    if len(case.windings) > 1:
        rows.extend(winding_rows(case, hand_p, hand_3d, fe))
    rows.extend(force_rows(case, hand_p, hand_3d, fe))
    rows.extend(magnet_rows(case, hand_p, hand_3d, fe))
    peak, limit = fe.fine.peak_B, case.margins.peak_B
    if limit is None:
        verdict, margin = "info", math.nan
    else:
        verdict, margin = ("pass" if peak <= limit else "FAIL"), 100.0 * (limit - peak) / limit
    rows.append(Row("peak_B", LABELS["peak_B"], "T", math.nan, peak,
                    fe.uncertainty.get("peak_B", math.nan), math.nan, None, verdict,
                    fe_3d=peak, limit_value=limit, margin_pct=margin))
    rows.extend(margin_rows(case, fe, hand_p, hand_3d))
    return tuple(rows)


def winding_rows(case: Case, hand_p: HandResult, hand_3d: HandResult,
                 fe: FEResult) -> list[Row]:
    """With several windings: each winding's flux linkage, the incremental
    inductance matrix (diagonal and the entries above it; it is symmetric)
    and each pair's coupling factor k = L_jk / sqrt(L_jj L_kk), hand
    (planar-consistent) against FE, with the FE uncertainty and the FE 3D
    column by the hand network's own 3D / planar ratio per entry (as
    :func:`depth_corrections`).  Agreement limits: those of flux linkage and
    incremental inductance."""
    lam_keys, l_keys = winding_keys(case)
    names = [w.name for w in case.windings]
    hp, h3, fv = hand_p.winding_values, hand_3d.winding_values, fe.fine.winding_values

    def row(key: str, label: str, unit: str, h: float, f: float, h3v: float, f3: float,
            u: float, limit_key: str) -> Row:
        d = _diff_pct(h, f)
        lim = case.margins.agreement_limit(limit_key, DEFAULT_LIMITS.get(limit_key))
        return Row(key, label, unit, h, f, u, d, lim, _verdict(d, h, f, u, lim),
                   hand_3d=h3v, fe_3d=f3)

    def ratio(k: str) -> float:
        return h3[k] / hp[k] if hp[k] != 0 and math.isfinite(hp[k]) else math.nan

    out = []
    for j, lk in enumerate(lam_keys):
        out.append(row(lk, f"flux linkage, {names[j]}", "Wb", hp[lk], fv[lk], h3[lk],
                       fv[lk] * ratio(lk), fe.uncertainty.get(lk, math.nan), "flux_linkage"))
    n = len(names)
    for j in range(n):
        for k in range(j, n):
            key = l_keys[j][k]
            what = "self" if j == k else "mutual"
            out.append(row(key, f"inductance {names[j]},{names[k]} ({what}, incremental)", "H",
                           hp[key], fv[key], h3[key], fv[key] * ratio(key),
                           fe.uncertainty.get(key, math.nan), "incremental_inductance"))

    from .coupling import coupling_factor

    def coupling(v: dict[str, float], j: int, k: int) -> float:
        return coupling_factor(v[l_keys[j][k]], v[l_keys[j][j]], v[l_keys[k][k]])

    for j in range(n):
        for k in range(j + 1, n):
            fk = coupling(fv, j, k)
            f3 = {kk: fv[kk] * ratio(kk) for kk in (l_keys[j][j], l_keys[k][k], l_keys[j][k])}
            out.append(row(f"coupling:{names[j]},{names[k]}",
                           f"coupling factor {names[j]},{names[k]}", "", coupling(hp, j, k), fk,
                           coupling(h3, j, k), coupling(f3, j, k), math.nan,
                           "incremental_inductance"))
    return out


def margin_rows(case: Case, fe: FEResult, hand_p: HandResult | None = None,
                hand_3d: HandResult | None = None) -> list[Row]:
    """Rows for the design margins other than peak B (see compare.margins).

    Inductance at a stated current and the minimum force are judged on the
    FE value with the depth correction (the "FE 3D" column), the inductance solved on the FE
    result's mesh at that current; saturation current on the 3D hand model's
    L(I) (a field solution needs a sweep: ``magcheck sweep`` or a declared
    ``[sweep]`` under ``magcheck verify``).
    """
    from .fe import solve_case
    from .margins import design_margins, inductance_of, with_current

    m = case.margins
    from .coremodel import core_model

    if (m.current_density is None and not m.inductance and not m.saturation
            and m.force_min is None and not m.force and not core_model(case).magnet_knees):
        return []
    cache: dict[float, dict] = {case.winding.current: fe.values}

    def fe_at(current: float, kind: str) -> float:
        at = with_current(case, current)
        if current not in cache:
            q, _, _ = solve_case(at, fe.solution.mesh)
            cache[current] = q.values
        key = "inductance" if kind == "secant" else "incremental_inductance"
        return inductance_of(cache[current], kind) * fe_3d_factor(at, key)

    out = []
    fe_force = fe.fine.force_values.get("force", math.nan)
    h3 = math.nan
    if math.isfinite(fe_force):  # with the depth correction, as the inductance above
        hand_p = hand_p or run_hand(case, planar=True)
        hand_3d = hand_3d or run_hand(case)
        hp = hand_p.force_values.get("force", math.nan)
        h3 = hand_3d.force_values.get("force", math.nan)
        fe_force *= h3 / hp if hp and math.isfinite(h3) else 1.0
    for r in design_margins(case, fe_at=fe_at, fe_force=fe_force, hand_force=h3,
                            fe_magnet_H_min=fe.fine.magnet_values.get("magnet_H_min", math.nan)):
        if r.key == "peak_B":
            continue
        fe_value = math.nan if r.basis == "hand" else r.value  # judged on the hand model
        out.append(Row(f"margin:{r.key}", r.label + (" (hand)" if r.basis == "hand" else ""),
                       r.unit, r.hand, fe_value, math.nan, math.nan, None, r.verdict,
                       limit_value=r.limit, margin_pct=r.margin_pct, limit_kind=r.kind))
    return out


def explain(case: Case, rows: tuple[Row, ...], hand_p: HandResult, fe: FEResult) -> tuple[str, ...]:
    """Short notes, in the trade's words, on where the differences come from."""
    r = {row.key: row for row in rows}
    from .coremodel import core_model

    rz = core_model(case).axisymmetric
    if rz:
        notes = ["The FE is an axisymmetric (r-z) field solution, a full 3D one for a part "
                 "round about its axis: the hand column is the whole magnetic circuit, its gap "
                 "fringing included, and the '3D' columns repeat the others."]
    else:
        notes = ["Like for like: the hand column is the magnetic circuit with in-plane fringing "
                 "only, the FE column the planar field solution for the stack depth; '3D' "
                 f"columns add the depth-direction fringing of the '{hand_p.fringing_model}' "
                 "model. A planar model sees no end-turn leakage."]
    for w in plausibility_issues(case):
        notes.append(f"Check the input: {w}.")
    if all(w.current == 0.0 for w in case.windings) and not core_model(case).magnets:
        notes.append("At zero current the flux, flux linkage, gap B, core B, path-averaged H and "
                     "stored energy are zero in both models: no difference, verdict n/a. The "
                     "secant inductance is given as its small-signal limit, the incremental "
                     "inductance at zero current, in both models.")
    fl = r["flux"]
    if math.isfinite(fl.diff_pct) and fl.diff_pct < -3:
        bypass = ("bypasses the gap" if core_model(case).gap_regions
                  else "does not follow the core's mean path")
        notes.append(f"The FE carries {-fl.diff_pct:.0f} % more flux in the winding limb than the "
                     "hand model: leakage flux (across the window, round the coil) links the "
                     f"winding but {bypass}, and the hand model has no leakage path.")
    elif math.isfinite(fl.diff_pct) and fl.diff_pct > 3:
        notes.append(f"The hand model carries {fl.diff_pct:.0f} % more flux in the winding limb "
                     "than the FE: its gap permeance (the fringing model) or its core "
                     "permeance is larger than the field solution's.")
    g = r["gap_B"]
    if math.isfinite(g.diff_pct) and abs(g.diff_pct) > 3:
        side = "over" if g.diff_pct > 0 else "under"
        notes.append(f"The fringing model {side}states the gap B by {abs(g.diff_pct):.0f} %: the "
                     "field spreads beyond the pole faces differently from the model's assumed "
                     "fringing area.")
    ph = r["path_H"]
    if math.isfinite(ph.diff_pct) and abs(ph.diff_pct) > 5:
        notes.append(f"Path-averaged H differs by {abs(ph.diff_pct):.0f} %: H is not uniform along "
                     "the mean path; the flux crowds to the inner corners of the core, where H "
                     "rises far above the limb average.")
    law = case.material("core").law
    peak = fe.fine.peak_B
    knee = _knee(law)
    x, y = fe.fine.peak_B_at
    if math.isfinite(knee) and peak > knee:
        notes.append(f"Part of the core is past the knee of the B-H curve (~{knee:.2f} T): 0.5 % of "
                     f"the core area is above {peak:.2f} T, so the hand model's uniform-B "
                     "assumption does not hold there" + _inductance_direction(r["inductance"]))
    notes.append(f"Peak core B is the |B| exceeded on 0.5 % of the core area. The pointwise "
                 f"maximum, {fe.fine.max_B:.2f} T at {'r' if rz else 'x'} = {x * 1e3:.1f} mm, "
                 f"{'z' if rz else 'y'} = {y * 1e3:.1f} mm, "
                 "sits at a sharp corner where a 2D model's field is singular; it grows as "
                 "the mesh is refined and is not a design figure.")
    if any(k.startswith("margin:") for k in r):
        notes.append("Margin rows (', max', ', min') show the values they are judged on: the "
                     "FE's" + ("" if rz else " 3D (depth-corrected)") + " value, which sets the "
                     "verdict unless the label says (hand), and the hand model's"
                     + ("" if rz else " 3D") + " value beside it for comparison.")
    ls = r.get("leakage_inductance")
    wn = [w.name for w in case.windings]
    kr = r.get(f"coupling:{wn[0]},{wn[1]}") if len(wn) > 1 else None
    l11 = r.get(f"L:{wn[0]},{wn[0]}")
    if ls is not None and kr is not None and l11 is not None:
        def k_of(leak: float, self_l: float) -> float:
            x = 1.0 - leak / self_l if self_l else math.nan
            return math.sqrt(x) if x >= 0 else math.nan

        notes.append(f"The coupling factor rows are the magnetic circuit's (no leakage path: "
                     f"k = 1) and the field solution's {'' if rz else 'in-plane '}inductance "
                     "matrix" + ("" if rz else " (per stack depth: no end turns)") + "; the "
                     "leakage-inductance row has the classic formula and the FE's balanced "
                     "ampere-turns" + ("" if rz else " along the mean turn") + ". The coupling "
                     "that leakage implies, k = sqrt(1 - L_s/L_11): "
                     f"{k_of(ls.hand, l11.hand_3d):.5f} by hand, "
                     f"{k_of(ls.fe, l11.fe_3d):.5f} FE.")
    inr = r.get("inrush_current_peak")
    if inr is not None and math.isfinite(inr.diff_pct) and inr.diff_pct > 20:
        notes.append(f"The hand inrush peak is {inr.diff_pct:.0f} % above the FE's: deep in "
                     "saturation the winding's flux runs through air beside the core (the "
                     "window, the coil's own space), which the hand network has no path for, so "
                     "its current must rise further to reach the same flux linkage. The FE "
                     "figure is the better estimate; both assume the worst switching instant "
                     "and no hysteresis" + ("." if any(w.resistance for w in case.windings)
                                            else ", and without the winding's resistance "
                                            "they are undamped, an upper bound (give "
                                            "resistance to damp them)."))
    unc = [row for row in rows if row.key != "peak_B" and row.uncertainty_pct > UNCERTAIN_PCT]
    if unc:
        labels = ", ".join(row.label for row in unc)
        notes.append(f"FE uncertainty above {UNCERTAIN_PCT:g} % for {labels}: refine the mesh "
                     "([fe] mesh_size smaller, gap_elements larger).")
    return tuple(notes)


def _inductance_direction(row: Row) -> str:
    """The end of the saturation note: which way the hand inductance is off.

    Optimistic (hand above the FE) and pessimistic (below) follow the sign
    of the difference, never the mere presence of saturation.
    """
    d = row.diff_pct
    if not math.isfinite(d) or abs(d) < 0.5:
        return "; the hand inductance still agrees with the FE within 0.5 %."
    if d > 0:
        return (f"; the hand inductance is {d:.1f} % above the FE: optimistic, the local "
                "saturation lowers the field model's inductance.")
    return (f"; the hand inductance is {-d:.1f} % below the FE: pessimistic here, what the hand "
            "model leaves out (leakage, fringing) outweighs the local saturation it misses.")


def _knee(law: Any) -> float:
    """B where the differential permeability has fallen to 1/10 of its maximum."""
    import numpy as np

    b_max = getattr(law, "b_max", math.inf)
    if not math.isfinite(b_max):
        return math.inf
    b = np.linspace(0.01, 1.5 * b_max, 600)
    dbdh = 1.0 / np.asarray(law.dh_db(b))
    i = int(np.argmax(dbdh))
    below = np.nonzero(dbdh[i:] < 0.1 * dbdh[i])[0]
    return float(b[i + below[0]]) if below.size else math.inf


def rank_fringing(case: Case, fe: FEResult) -> tuple[dict, ...]:
    """Every fringing model's planar hand values against the FE, best first.

    Ranked by the RMS of the percent differences of gap B, flux and
    inductance (the figures a fringing model is meant to get right).
    """
    out: list[dict[str, Any]] = []
    for name in FRINGING_MODELS:
        h = run_hand(case, fringing=name, planar=True)
        diffs = {k: _diff_pct(h.values()[k], fe.values[k])
                 for k in ("gap_B", "flux", "inductance")}
        finite = [d for d in diffs.values() if math.isfinite(d)]
        rms = math.sqrt(sum(d * d for d in finite) / len(finite)) if finite else math.nan
        out.append({"model": name, "title": get_fringing(name).title, "rms_difference_pct": rms,
                    **{f"{k}_difference_pct": v for k, v in diffs.items()}})
    out.sort(key=lambda d: (not math.isfinite(d["rms_difference_pct"]), d["rms_difference_pct"]))
    return tuple(out)


def run_check(case: Case, *, all_fringing: bool = False, estimate_error: bool = True) -> CheckResult:
    """Run both models on a case and compare them.

    Raises
    ------
    compare.errors.RunError
        When either nonlinear solve does not converge.
    """
    t0 = time.perf_counter()
    hand_3d = run_hand(case)
    hand_p = run_hand(case, planar=True)
    t1 = time.perf_counter()
    fe = run_fe_checked(case, estimate_error=estimate_error)
    t2 = time.perf_counter()
    k_depth = depth_factor(case)
    rows = build_rows(case, hand_p, hand_3d, fe)
    drive = None
    if case.winding.driven:
        from .drive import run_drive

        drive = run_drive(case, fe)
        rows = rows + tuple(drive_rows(case, drive))
    leakage = leakage_values(case, fe)
    if leakage:
        rows = rows + (leakage_row(case, leakage),)
    notes = explain(case, rows, hand_p, fe)
    full_ranking = rank_fringing(case, fe)
    ranking = full_ranking if all_fringing else ()
    from .breakdown import difference_breakdown

    breakdown = difference_breakdown(case, fe.values, full_ranking[0]["model"] if full_ranking
                                     else None)
    t3 = time.perf_counter()
    return CheckResult(case=case, hand_3d=hand_3d, hand_planar=hand_p, fe=fe, rows=rows,
                       depth_factor=k_depth, notes=notes,
                       timings={"hand": t1 - t0, "fe": t2 - t1, "compare": t3 - t2,
                                "total": t3 - t0},
                       fringing_ranking=ranking, breakdown=breakdown, drive=drive,
                       leakage=leakage)
