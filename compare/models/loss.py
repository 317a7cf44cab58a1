"""The loss budget of a case: core loss by hand and in the field, with the windings' loss.

A case with ``[loss]`` (compare.design.case.LossSpec) and the core's loss data
(``Case.core_loss``, analytic.core_loss.MaterialLoss) gets:

hand (the magnetic circuit)
    The flux-density swing of every core segment of the network, one value per segment:
    a current-driven winding (a choke): Delta B = 2 I_r dB/dI, the ripple current's peak
    I_r times the segment's incremental flux density at the DC point (a central difference
    of the network's solution, the incremental inductance's own slope); a voltage-driven
    winding (a transformer): B_pk of each segment where the network's flux linkage reaches
    the drive's peak, lambda_pk = sqrt(2) V / (2 pi f) for a sine (the EMF equation,
    B_pk = V / (4.44 f N A_c) in a uniform limb) and V sqrt(D) / (4 f) for a square voltage of
    rms V and duty D, Delta B = 2 B_pk. The loss density of each segment from its Delta B
    (sine: Steinmetz at B_pk = Delta B / 2; triangle and square: the iGSE closed forms,
    analytic.core_loss; docs/references.md section 13), times the segment's volume (mean-path
    length x area).
field (fem2d)
    The local swing in every quadrature point of the core: a choke, Delta B = 2 I_r |dB/dI|
    from the static tangent solve at the DC point (fem2d.post.coil_incremental_potential; no
    eddy currents in the core: a ferrite's or a thin lamination's); a transformer, the static
    solution at the case's current (the hand's peak magnetizing current) moved along its
    tangent to the drive's lambda_pk, A_pk = A + dA/dI (lambda_pk - lambda) / L_inc (first
    order in the few percent the two models differ by), Delta B = 2 |B_pk|. The loss density
    p(Delta B) integrated over the core with the formulation's weights (planar: the stack
    depth; r-z: 2 pi r). The swing's magnitude only: the rotational flux at T-joints and
    corners, where B turns during the period, and minor loops are left out (the iGSE takes one
    major loop).
flux crowding
    P_uniform = sum over the core's rectangles (limbs, yokes: the family's ``core_rects``, or
    one per core region) of V_leg p(<Delta B>_leg), <.> the FE's volume mean of |Delta B| over
    the leg: the loss the FE's own flux would give spread evenly in each leg. The crowding
    excess is P_FE / P_uniform - 1 (positive: beta > 1 makes a crowded flux lose more than its
    mean); the share of the hand-FE difference it explains is (P_FE - P_uniform) /
    (P_FE - P_hand), the rest being the flux the two models put in each leg.
The FE uncertainty is the three-mesh rule of compare.models.fe; the 3D columns take the
hand's 3D network (depth fringing) and the FE times the hand's 3D / planar ratio.
"""

from __future__ import annotations

import math
import time
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from magcheck.analytic import core_loss as cl

from ..design.case import Case, LossSpec, with_current
from ..design.coremodel import core_model
from ..errors import CaseError

__all__ = ["has_loss", "flux_frequency", "target_linkage", "density_law", "hand_core_loss",
           "fe_core_loss", "CoreLoss", "run_core_loss", "surface_area", "budget_entries",
           "point_budget", "POINT_KEYS", "layout_surface_area"]


def has_loss(case: Case) -> bool:
    """The case asks for a loss budget (``[loss]``)."""
    return getattr(case, "loss", None) is not None and case.core_loss is not None


def _spec(case: Case) -> LossSpec:
    """The case's ``[loss]`` (the callers run only on a case that has one)."""
    if case.loss is None:
        raise ValueError(f"case {case.name!r} has no [loss] table")
    return case.loss


def flux_frequency(case: Case) -> float:
    """The flux's frequency (Hz): ``[loss] frequency``, else [winding.ac]'s, else the drive's."""
    spec = case.loss
    w = case.winding
    if spec is not None and spec.frequency:
        return float(spec.frequency)
    if w.ac is not None:
        return float(w.ac.frequency)
    return float(w.frequency or math.nan)


def ripple(case: Case) -> float:
    """A current-driven winding's ripple current, peak (A)."""
    spec = case.loss
    if spec is not None and spec.ripple:
        return float(spec.ripple)
    ac = case.winding.ac
    return float(ac.current) if ac is not None else 0.0


def target_linkage(case: Case) -> float:
    """A voltage-driven winding's peak flux linkage (Wb-turns) for the loss budget's waveform:
    sine sqrt(2) V / (2 pi f) (the EMF equation), square V sqrt(D) / (4 f), V rms, D the duty
    [derived: the volt-seconds of half a period]."""
    w = case.winding
    v, f = float(w.voltage or 0.0), flux_frequency(case)
    if case.loss is not None and case.loss.waveform == "square":
        return v * math.sqrt(case.loss.duty) / (4.0 * f)
    return math.sqrt(2.0) * v / (2.0 * math.pi * f)


def density_law(case: Case) -> Any:
    """p(delta_b) -> W/m^3 for the case's waveform and frequency (vectorised over Delta B, T,
    peak to peak)."""
    c = case.core_loss.per_volume()
    spec = _spec(case)
    f = flux_frequency(case)
    # each law is analytic.core_loss's at Delta B = 1 T, scaled by |Delta B|^beta
    if spec.waveform == "triangle":
        factor = cl.igse_triangle_loss(c, f, 1.0, spec.duty)
    elif spec.waveform == "square":
        factor = cl.igse_square_voltage_loss(c, f, 1.0, spec.duty)
    else:  # Steinmetz at B_pk = Delta B / 2
        factor = cl.steinmetz_loss(c, f, 0.5)

    def law(delta_b: Any) -> Any:
        return factor * np.abs(delta_b) ** c.beta

    return law


# ------------------------------------------------------------------ hand
def _segment_swing(case: Case, planar: bool) -> list[dict]:
    """[{name, volume, delta_b}] of the hand network's core segments."""
    from .hand import run_hand

    if case.winding.driven:
        from .drive import hand_current_at

        i_t = hand_current_at(case, target_linkage(case), planar)
        res = run_hand(with_current(case, i_t), planar=planar)
        return [{"name": s["name"], "volume": s["length"] * s["area"],
                 "delta_b": 2.0 * abs(s["B"])} for s in res.segments if s["kind"] == "core"]
    i0, r = case.winding.current, ripple(case)
    h = 1e-4 * max(abs(i0), r)
    lo = run_hand(with_current(case, i0 - h), planar=planar).segments
    hi = run_hand(with_current(case, i0 + h), planar=planar).segments
    return [{"name": a["name"], "volume": a["length"] * a["area"],
             "delta_b": 2.0 * r * abs(b["B"] - a["B"]) / (2.0 * h)}
            for a, b in zip(lo, hi) if a["kind"] == "core"]


def range_notes(case: Case, segments: list[dict]) -> tuple[str, ...]:
    """One line per quantity outside the loss data's valid ranges: the frequency, and the
    segments' peak flux densities (Delta B / 2; their span and how many; the planar and 3D
    networks' segments together when both are given)."""
    c = case.core_loss.steinmetz
    f = flux_frequency(case)
    out = ([] if c.f_min <= f <= c.f_max
           else [cl.OutOfRange("frequency", f, c.f_min, c.f_max).message])
    bs = [0.5 * s["delta_b"] for s in segments]
    bad = [b for b in bs if not c.b_min <= b <= c.b_max]
    if bad:
        span = (f"{min(bad):.3g} T" if f"{min(bad):.3g}" == f"{max(bad):.3g}"
                else f"{min(bad):.3g}-{max(bad):.3g} T")
        out.append(f"flux density {span} (peak, {len(bad)} of {len(bs)} segment values) outside the "
                   f"Steinmetz coefficients' valid range {c.b_min:.6g}-{c.b_max:.6g} T")
    return tuple(out)


def hand_core_loss(case: Case, planar: bool = True) -> dict[str, Any]:
    """The hand core loss: {"total": W, "segments": [{name, volume m^3, delta_b T, density
    W/m^3, loss W}], "split": Bertotti's terms in W (sine, laminated steel given) or None,
    "out_of_range": messages}."""
    law = density_law(case)
    segs = _segment_swing(case, planar)
    for s in segs:
        s["density"] = float(law(s["delta_b"]))
        s["loss"] = s["density"] * s["volume"]
    total = float(sum(s["loss"] for s in segs))
    f = flux_frequency(case)
    m = case.core_loss
    notes = range_notes(case, segs)
    split = None
    if m.lamination is not None and _spec(case).waveform == "sine":
        parts = [cl.lamination_loss(m.lamination, f, 0.5 * s["delta_b"]) for s in segs]
        split = {k: float(sum(getattr(p, k) * s["volume"] for p, s in zip(parts, segs)))
                 for k in ("hysteresis", "classical", "excess")}
    return {"total": total, "segments": segs, "split": split, "out_of_range": tuple(notes)}


# ------------------------------------------------------------------ field
def _core_elements(case: Case, sol: Any) -> np.ndarray:
    subs = sol.mesh.subdomains
    return np.concatenate([np.asarray(subs[r]) for r in core_model(case).core_regions
                           if r in subs])


def _legs(case: Case) -> list[tuple[str, Any]]:
    """The core's rectangles (limbs and yokes) with names (a part's when the rectangle is a
    part's only one), or [] when the family draws no rectangles."""
    fam = case.family_model
    try:
        rects = list(fam.core_rects(case.core))
    except Exception:  # a drawn or r-z family without plain rectangles: one leg per region
        return []
    names: dict[Any, str] = {}
    try:
        for part, prs in fam.part_rects(case.core).items():
            if len(prs) == 1:
                names[prs[0]] = part
    except Exception:
        pass
    def auto(r: Any) -> str:
        kind = "limb" if r.y1 - r.y0 >= r.x1 - r.x0 else "yoke"
        where = (0.5 * (r.x0 + r.x1)) if kind == "limb" else (0.5 * (r.y0 + r.y1))
        return f"{kind} at {'x' if kind == 'limb' else 'y'} = {1e3 * where:.4g} mm"

    return [(names.get(r) or auto(r), r) for r in rects]


def winding_sources_of(case: Case) -> Any:
    """The first winding's fem2d coil (compare.models.fe.winding_sources)."""
    from .fe import winding_sources

    return winding_sources(case).coils[0]


def fe_swing(case: Case, sol: Any) -> tuple[np.ndarray, np.ndarray]:
    """(Delta B at the core's quadrature points (T, shape (n_core_elem, n_qp)), the core
    element indices) on one static solution."""
    from magcheck.fem2d import post

    coil = winding_sources_of(case)
    dA, L = post.coil_incremental_potential(sol, coil)
    idx = _core_elements(case, sol)
    if case.winding.driven:
        lam = post.coil_flux_linkage(sol, coil)
        a_pk = sol.A + dA * (target_linkage(case) - lam) / L
        B = post.b_of_potential(sol, a_pk)[:, idx]
        return 2.0 * np.hypot(B[0], B[1]), idx
    dB = post.b_of_potential(sol, dA)[:, idx]
    return 2.0 * ripple(case) * np.hypot(dB[0], dB[1]), idx


def loss_integral(sol: Any, idx: np.ndarray, delta_b: np.ndarray, law: Any) -> tuple[float, float]:
    """(integral of p(Delta B) dV in W, the volume in m^3) over the elements ``idx`` of a
    solution's mesh: ``delta_b`` the swing (T) at their quadrature points (shape (len(idx),
    n_qp)), ``law`` the loss density (W/m^3) of a swing; the formulation's weights (planar:
    times the stack depth; r-z: 2 pi r dr dz)."""
    from magcheck.fem2d import post

    asm = post._asm(sol)
    w = asm.wv[idx]
    total = asm.formulation.total
    return float(total * np.sum(law(delta_b) * w)), float(total * np.sum(w))


def fe_core_loss(case: Case, sol: Any) -> dict[str, Any]:
    """The FE core loss on one static solution: {"total": W, "uniform": W (the loss at each
    leg's mean swing), "legs": [{name, volume, delta_b mean, loss, uniform}], "map": (triangles
    (m, 3, 2) m, element loss density (m,) W/m^3), "peak_density": W/m^3}."""
    from magcheck.fem2d import post

    asm = post._asm(sol)
    law = density_law(case)
    dB, idx = fe_swing(case, sol)
    w = asm.wv[idx]  # (n, nq) volume weights per unit of ``total``
    total = asm.formulation.total
    p = law(dB)
    loss, _ = loss_integral(sol, idx, dB, law)
    xq = asm.xq[:, idx]  # (2, n, nq)
    cx, cy = xq[0].mean(axis=1), xq[1].mean(axis=1)
    rects = _legs(case)
    legs = []
    assigned = np.zeros(idx.size, dtype=bool)
    groups: list[tuple[str, np.ndarray]] = []
    for name, r in rects:
        inside = (~assigned) & (cx >= r.x0) & (cx <= r.x1) & (cy >= r.y0) & (cy <= r.y1)
        assigned |= inside
        groups.append((name, inside))
    if (~assigned).any():
        groups.append(("rest", ~assigned))
    uniform = 0.0
    for name, sel in groups:
        if not sel.any():
            continue
        vol = float(total * np.sum(w[sel]))
        mean = float(np.sum(dB[sel] * w[sel]) / np.sum(w[sel]))
        leg_loss = float(total * np.sum(p[sel] * w[sel]))
        u = float(law(mean)) * vol
        uniform += u
        legs.append({"name": name, "volume": vol, "delta_b": mean, "loss": leg_loss,
                     "uniform": u})
    dens = np.sum(p * w, axis=1) / np.sum(w, axis=1)
    mesh = sol.mesh.mesh
    tri = mesh.p[:, mesh.t[:3, idx]].transpose(2, 1, 0)  # (m, 3, 2)
    return {"total": loss, "uniform": uniform, "legs": legs, "map": (tri, dens),
            "peak_density": float(np.max(p)), "volume": float(total * np.sum(w))}


@dataclass(frozen=True)
class CoreLoss:
    """The core loss of a case, hand and FE (W; planar per stack depth and 3D).

    hand : the planar-form network's total; hand_3d the 3D network's.
    fe : the finest mesh's; fe_3d = fe x hand_3d / hand; uncertainty the three-mesh rule.
    uniform : the finest mesh's P_uniform (see the module docstring); crowding_pct
        = 100 (fe / uniform - 1); crowding_share = (fe - uniform) / (fe - hand) (NaN when hand
        and FE agree within 1 %).
    """

    frequency: float
    waveform: str
    duty: float
    hand: float
    hand_3d: float
    fe: float
    fe_3d: float
    uncertainty: float
    uniform: float
    hand_segments: tuple
    fe_legs: tuple
    split: dict | None
    out_of_range: tuple
    map_triangles: Any = field(repr=False, compare=False, default=None)
    map_density: Any = field(repr=False, compare=False, default=None)
    source: str = ""
    volume: float = math.nan
    seconds: float = 0.0

    @property
    def crowding_pct(self) -> float:
        return 100.0 * (self.fe / self.uniform - 1.0) if self.uniform > 0 else math.nan

    @property
    def crowding_share(self) -> float:
        d = self.fe - self.hand
        if not self.fe or abs(d) < 0.01 * abs(self.fe):
            return math.nan
        return (self.fe - self.uniform) / d

    def to_dict(self) -> dict:
        return {"frequency": self.frequency, "waveform": self.waveform, "duty": self.duty,
                "hand": self.hand, "hand_3d": self.hand_3d, "fe": self.fe, "fe_3d": self.fe_3d,
                "fe_uncertainty": self.uncertainty, "fe_uniform": self.uniform,
                "crowding_pct": self.crowding_pct, "crowding_share": self.crowding_share,
                "hand_segments": [dict(s) for s in self.hand_segments],
                "fe_legs": [dict(s) for s in self.fe_legs],
                "lamination_split": self.split, "out_of_range": list(self.out_of_range),
                "material": self.source, "fe_core_volume": self.volume,
                "seconds": self.seconds}


def run_core_loss(case: Case, fe: Any) -> CoreLoss:
    """Hand and FE core loss; ``fe`` a compare.models.fe.FEResult (its three static solutions
    for the uncertainty when kept, else the finest only)."""
    from .fe import uncertainty_rule

    t0 = time.perf_counter()
    hp = hand_core_loss(case, planar=True)
    h3 = hand_core_loss(case, planar=False)
    sols = tuple(getattr(fe, "solutions", ())) or (fe.solution,)
    runs = [fe_core_loss(case, s) for s in sols]
    fine = runs[-1]
    unc = (uncertainty_rule(*(r["total"] for r in runs)) if len(runs) == 3 else math.nan)
    ratio = h3["total"] / hp["total"] if hp["total"] > 0 else 1.0
    tri, dens = fine["map"]
    from ..errors import CaseWarning, warn

    notes = range_notes(case, hp["segments"] + h3["segments"])
    for msg in notes:
        warn(CaseWarning("materials.core_loss", case.core_loss.source, msg))
    spec = _spec(case)
    return CoreLoss(flux_frequency(case), spec.waveform, spec.duty, hp["total"],
                    h3["total"], fine["total"], fine["total"] * ratio, unc, fine["uniform"],
                    tuple(hp["segments"]), tuple(fine["legs"]), h3["split"],
                    notes, tri, dens, case.core_loss.source, fine["volume"],
                    time.perf_counter() - t0)


def surface_area(case: Case, sol: Any) -> float:
    """The wound part's outside surface (m^2): ``[loss] surface_area``, else the box round the
    core and the coils as meshed (every region but the air): planar, its bounding rectangle
    W x H in the drawing and the stack depth plus twice the thickest coil build (the end turns
    stick out of the stack), all six faces; r-z, the cylinder round it (common practice, no
    source)."""
    if case.loss is not None and case.loss.surface_area:
        return float(case.loss.surface_area)
    subs = sol.mesh.subdomains
    idx = np.concatenate([np.asarray(v) for k, v in subs.items()
                          if k not in ("air", "exterior") and len(v)])
    mesh = sol.mesh.mesh
    pts = mesh.p[:, np.unique(mesh.t[:3, idx])]
    x0, y0 = pts.min(axis=1)
    x1, y1 = pts.max(axis=1)
    return _box_surface(case, float(x0), float(y0), float(x1), float(y1))


# ------------------------------------------------------------------ the budget
BUDGET_UNITS = {"core_loss": "W", "copper_loss": "W", "winding_loss_ac": "W", "total_loss": "W",
                "efficiency": "%", "efficiency_part": "%", "regulation": "%",
                "temperature_rise": "K"}


@dataclass(frozen=True)
class LossBudget:
    """A case's loss budget, hand and FE (compare.judge.lossbudget makes the rows).

    core : the :class:`CoreLoss`.
    entries : key -> {"hand", "fe", "uncertainty", "hand_3d", "fe_3d"} (W, K; efficiency
        and regulation in percent), keys of :data:`BUDGET_UNITS` the case has.
    area : the outside surface the temperature rise takes (m^2).
    transformer : {"v_nl", "load_current", "fraction", "power_factor", "r", "x_hand", "x_fe"}
        of a transformer's load (secondary side), or {}.
    """

    core: CoreLoss
    entries: dict
    area: float
    transformer: dict = field(default_factory=dict)
    rise_source: str = ""

    def to_dict(self, which: str) -> dict:
        """The JSON block of one column, "hand" or "fe" (3D values; planar beside)."""
        out: dict[str, Any] = {k: v[f"{which}_3d"] for k, v in self.entries.items()}
        out["planar"] = {k: v[which] for k, v in self.entries.items()}
        if which == "fe":
            out["uncertainty"] = {k: v["uncertainty"] for k, v in self.entries.items()}
            out["core"] = self.core.to_dict()
        out["surface_area"] = self.area
        out["temperature_rise_source"] = self.rise_source
        if self.transformer:
            out["load"] = dict(self.transformer)
        return out


def _entry(hand: float, fe: float, unc: float, hand_3d: float, fe_3d: float) -> dict:
    return {"hand": hand, "fe": fe, "uncertainty": unc, "hand_3d": hand_3d, "fe_3d": fe_3d}


def run_budget(case: Case, fe: Any, ac: Any = None, leakage: dict | None = None) -> LossBudget:
    """The loss budget: core loss (:func:`run_core_loss`), the windings' copper loss (a
    choke's AC winding: I_dc^2 R_dc and (1/2) I_ac^2 R_ac from compare.models.ac's result
    ``ac``; else ``[loss] resistances`` with the ripple's rms), the total, a transformer's
    efficiency at rated load and at ``load_fraction`` and its regulation (R of both windings
    and the leakage reactance ``leakage`` {"hand", "fe"} (H, referred to the first winding),
    referred to the second; analytic.loss_budget), and the temperature-rise estimate
    (:func:`budget_entries` assembles them)."""
    from magcheck.analytic import loss_budget as lb

    core = run_core_loss(case, fe)
    area = surface_area(case, fe.solution)
    e, tr = budget_entries(case, _entry(core.hand, core.fe, core.uncertainty, core.hand_3d,
                                        core.fe_3d), ac, leakage, area)
    return LossBudget(core, e, area, tr, lb.RISE_SOURCE)


def budget_entries(case: Case, core: dict, ac: Any = None, leakage: dict | None = None,
                   area: float = math.nan) -> tuple[dict, dict]:
    """The budget's entries (key -> {"hand", "fe", "uncertainty", "hand_3d", "fe_3d"}) and a
    transformer's load figures from the core loss ``core`` (such an entry, W), the AC
    winding's figures ``ac`` (an object with ``hand``, ``fe``, ``hand_3d``, ``fe_3d``,
    ``uncertainty`` dicts holding R_dc and R_ac, and ``current_ac``; compare.models.ac's
    ACResult), the leakage inductance ``leakage`` {"hand", "fe"} (H) and the outside
    surface ``area`` (m^2). The one assembly of the check (:func:`run_budget`) and of a sweep
    point (:func:`point_budget`)."""
    from magcheck.analytic import loss_budget as lb

    spec = _spec(case)
    e: dict[str, dict] = {"core_loss": dict(core)}
    c_h, c_f, c_h3, c_f3 = core["hand"], core["fe"], core["hand_3d"], core["fe_3d"]
    u_core = core["uncertainty"]
    w = case.winding
    tr: dict[str, Any] = {}
    if spec.load_current is not None and case.extra_windings:
        w2 = case.extra_windings[0]
        n = w2.turns / w.turns
        r = spec.resistances[1] + spec.resistances[0] * n * n
        v_nl = float(w.voltage or 0.0) * n
        i2 = float(spec.load_current)
        omega = 2.0 * math.pi * flux_frequency(case)
        leak = leakage or {}
        xs = {m: omega * leak.get(m, math.nan) * n * n for m in ("hand", "fe")}
        tr = {"v_nl": v_nl, "load_current": i2, "fraction": spec.load_fraction,
              "power_factor": spec.power_factor, "r": r, "x_hand": xs["hand"], "x_fe": xs["fe"]}
        pts = {}
        for m, p_core, p_core3 in (("hand", c_h, c_h3), ("fe", c_f, c_f3)):
            x = xs[m] if math.isfinite(xs[m]) else 0.0
            try:
                pts[m] = (lb.load_point(v_nl, i2, 1.0, r, x, spec.power_factor, p_core),
                          lb.load_point(v_nl, i2, spec.load_fraction, r, x,
                                        spec.power_factor, p_core),
                          lb.load_point(v_nl, i2, 1.0, r, x, spec.power_factor, p_core3),
                          lb.load_point(v_nl, i2, spec.load_fraction, r, x, spec.power_factor,
                                        p_core3))
            except ValueError:
                z = math.hypot(r, x)
                raise CaseError("loss.load_current", f"{i2:g} A",
                                f"the load's drop through the series impedance ({z:.4g} ohm "
                                f"by the {m} model: R {r:.4g} ohm, X {x:.4g} ohm, referred "
                                f"to the secondary) exceeds the no-load voltage "
                                f"{v_nl:.4g} V: no load voltage (check loss.resistances, "
                                "the turns and the load)") from None
        cu_val = pts["hand"][0].copper_loss
        e["copper_loss"] = _entry(cu_val, cu_val, 0.0, cu_val, cu_val)
        u = u_core
        for key, j in (("efficiency", 0), ("efficiency_part", 1)):
            fe_pt = pts["fe"][j]
            loss_fe = fe_pt.output * (1.0 / fe_pt.efficiency - 1.0)
            e[key] = _entry(100 * pts["hand"][j].efficiency, 100 * fe_pt.efficiency,
                            100 * u * fe_pt.output / (fe_pt.output + loss_fe) ** 2,
                            100 * pts["hand"][j + 2].efficiency, 100 * pts["fe"][j + 2].efficiency)
        e["regulation"] = _entry(100 * pts["hand"][0].regulation, 100 * pts["fe"][0].regulation,
                                 math.nan, 100 * pts["hand"][0].regulation,
                                 100 * pts["fe"][0].regulation)
    elif ac is not None:
        i_dc = w.current
        e["copper_loss"] = _entry(i_dc ** 2 * ac.hand["R_dc"], i_dc ** 2 * ac.fe["R_dc"],
                                  i_dc ** 2 * ac.uncertainty.get("R_dc", math.nan),
                                  i_dc ** 2 * ac.hand_3d["R_dc"], i_dc ** 2 * ac.fe_3d["R_dc"])
        q = 0.5 * ac.current_ac ** 2
        e["winding_loss_ac"] = _entry(q * ac.hand["R_ac"], q * ac.fe["R_ac"],
                                      q * ac.uncertainty.get("R_ac", math.nan),
                                      q * ac.hand_3d["R_ac"], q * ac.fe_3d["R_ac"])
    elif spec.resistances:
        rms2 = w.current ** 2 + (ripple(case) ** 2 / (3.0 if spec.waveform == "triangle" else 2.0)
                                 if not w.driven else 0.0)
        r1 = spec.resistances[0]
        e["copper_loss"] = _entry(rms2 * r1, rms2 * r1, 0.0, rms2 * r1, rms2 * r1)
    total: dict[str, float] = {}
    for col in ("hand", "fe", "hand_3d", "fe_3d"):
        total[col] = sum(v[col] for k, v in e.items()
                         if k in ("core_loss", "copper_loss", "winding_loss_ac"))
    unc = sum(v["uncertainty"] for k, v in e.items()
              if k in ("core_loss", "copper_loss", "winding_loss_ac")
              and math.isfinite(v["uncertainty"]))
    e["total_loss"] = _entry(total["hand"], total["fe"], unc, total["hand_3d"], total["fe_3d"])
    rise = {col: lb.temperature_rise(total[col], area) for col in total}
    e["temperature_rise"] = _entry(rise["hand"], rise["fe"],
                                   lb.RISE_EXPONENT * rise["fe"] * unc / total["fe"]
                                   if total["fe"] > 0 else math.nan,
                                   rise["hand_3d"], rise["fe_3d"])
    return e, tr


# ------------------------------------------------------------------ one operating point
POINT_KEYS = ("core_loss", "copper_loss", "winding_loss_ac", "total_loss", "efficiency",
              "efficiency_part", "regulation", "temperature_rise")
"""The budget's keys a sweep point or a tolerance sample carries (``loss_<key>``; those the
case has)."""


def _box_surface(case: Case, x0: float, y0: float, x1: float, y1: float) -> float:
    """The outside surface (m^2) of the box round the drawing's extent x0..x1, y0..y1 (m), as
    :func:`surface_area` describes it."""
    if core_model(case).axisymmetric:
        radius, height = x1, y1 - y0
        return 2.0 * math.pi * radius ** 2 + 2.0 * math.pi * radius * height
    build = max((w.inner + w.clearance + w.thickness for w in case.windings), default=0.0)
    d = case.depth + 2.0 * build
    w_, h_ = x1 - x0, y1 - y0
    return 2.0 * (w_ * h_ + w_ * d + h_ * d)


def layout_surface_area(case: Case) -> float:
    """:func:`surface_area` without a mesh (a hand-only sweep point): the same box round the
    layout's regions (their bounding boxes; equal to the mesh's for straight-sided regions,
    a curved outline's polygon lies within it)."""
    if case.loss is not None and case.loss.surface_area:
        return float(case.loss.surface_area)
    from .fe import case_layout

    boxes = np.array([r.bbox() for r in case_layout(case).regions
                      if r.name not in ("air", "exterior")])
    x0, y0 = boxes[:, 0].min(), boxes[:, 1].min()
    x1, y1 = boxes[:, 2].max(), boxes[:, 3].max()
    return _box_surface(case, float(x0), float(y0), float(x1), float(y1))


def point_budget(case: Case, sol: Any = None, *, hand_core: tuple[float, float] | None = None,
                 ac_hand: dict | None = None, ac_fe: dict | None = None,
                 leakage: dict | None = None) -> dict[str, dict]:
    """The loss budget at one operating point (a sweep point, a tolerance sample) from the
    point's own static solution ``sol`` (None: hand only, the FE columns NaN): no solve of its
    own beyond the linear tangent solve of the core's swing. The same assembly as the check
    (:func:`budget_entries`), so at the case's own operating point on the check's finest mesh
    it gives the check's values; no three-mesh uncertainty.

    hand_core : the planar and 3D hand core loss (W) when already computed, else computed.
    ac_hand : compare.models.ac.hand_ac's {"planar": {...}, "3d": {...}} (an AC winding).
    ac_fe : compare.models.ac.fe_ac's "values" (planar FE) on ``sol``.
    leakage : {"hand", "fe"} leakage inductance (H) of a transformer's concentric pair.
    Returns key -> {"hand", "hand_3d", "fe", "fe_3d"} for the keys of :data:`POINT_KEYS` the
    case has (W, K; efficiency and regulation in percent)."""
    from types import SimpleNamespace

    if hand_core is None:
        hand_core = (hand_core_loss(case, planar=True)["total"],
                     hand_core_loss(case, planar=False)["total"])
    hp, h3 = hand_core
    ratio = h3 / hp if hp > 0 else 1.0
    fe = fe_core_loss(case, sol)["total"] if sol is not None else math.nan
    core = _entry(hp, fe, math.nan, h3, fe * ratio)
    ac = None
    if ac_hand is not None and case.winding.ac is not None:
        hand, hand3 = ac_hand["planar"], ac_hand["3d"]
        fev = ac_fe if ac_fe is not None else {k: math.nan for k in hand}
        r3 = {k: (hand3[k] / hand[k] if hand.get(k) and math.isfinite(hand3[k] / hand[k])
                  else 1.0) for k in ("R_dc", "R_ac")}  # compare.models.ac.run_ac's 3D ratio
        ac = SimpleNamespace(hand=hand, hand_3d=hand3, fe=fev, uncertainty={},
                             fe_3d={k: fev[k] * r3[k] for k in ("R_dc", "R_ac")},
                             current_ac=float(case.winding.ac.current))
    area = surface_area(case, sol) if sol is not None else layout_surface_area(case)
    entries, _ = budget_entries(case, core, ac, leakage, area)
    return {k: {c: float(v[c]) for c in ("hand", "hand_3d", "fe", "fe_3d")}
            for k, v in entries.items()}
