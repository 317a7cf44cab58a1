"""The AC winding of a case: its resistance and loss by hand and in the field.

A case whose winding gives ``[winding.conductor]`` (drawn turn by turn,
compare.design.geometry.turn_rects) and ``[winding.ac]`` (a sinusoid of peak
amplitude ``ac.current`` at ``ac.frequency`` on top of the DC ``current``)
gets, side by side:

hand (analytic.winding_loss)
    R_dc = rho(T) sum(turn lengths) / a; Dowell's F_R per layer and for the
    winding (one section from zero MMF at the limb's face: the layer MMFs 0, 1,
    ..., m), h/delta with the porosity eta = (copper height of a layer) /
    (window height along the limb) (Dowell 1966's convention; for round wire
    the equal-area square, side sqrt(pi)/2 d); R_ac = sum F_k R_dc,k; winding
    loss I_dc^2 R_dc + (1/2) I_ac^2 R_ac (I_ac peak); L_ac = the incremental
    inductance of the magnetic circuit at the DC current (the small-signal
    inductance; the winding's eddy currents, which lower it a little, are
    not in it).
    Planar form (the hand column): each turn is its two sides in the stack
    depth, 2 x depth long, as the planar field solution sees it; the 3D
    column takes the mean turn length of each layer, 2 (limb width + depth)
    + 2 pi s, s the layer's distance from the limb face (a rectangular turn
    with rounded corners; common practice, no source).
field (fem2d.harmonic)
    The time-harmonic solve on the check's meshes, about the static solution
    of the same mesh (the DC operating point: the tangent reluctivity there),
    each turn side a solid conductor of conductivity 1/rho(T), all in series
    carrying I_ac; R_ac = Re Z, L_ac = Im Z / w (per stack depth), the loss
    per layer from (1/2) int |J|^2 / sigma; R_dc from the drawn turns' areas.
    Elements in a band of acmesh.AC_BAND_DEPTHS skin depths round every turn are
    delta / acmesh.AC_PER_DEPTH (fem2d.harmonic.mesh_settings_for),
    divided by the refine factor on the check's finer meshes; the FE
    uncertainty is the three-mesh rule of compare.models.fe.

What the hand model cannot see: the air gap's fringing field crossing the
winding (its proximity loss near a gap), the 2D ends of layers that do not
fill the window height, the field outside the window (the coil side outside
the core has no iron beyond it), and unequal current sharing between
parallel conductors (not modelled: one conductor per turn).
"""

from __future__ import annotations

import math
import time
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from magcheck.analytic import winding_loss as wl

from ..design.case import Case
from ..design.coremodel import core_model
from .acmesh import default_mesh_size, has_ac, surface_sizes

__all__ = ["AC_KEYS", "ACResult", "has_ac", "hand_ac", "fe_ac", "ac_problem", "ac_windings", "run_ac", "surface_sizes",
           "default_mesh_size", "part_regions", "part_conductivity", "hand_part_loss"]

AC_KEYS = ("R_dc", "R_ac", "R_ac_ratio", "winding_loss", "L_ac")
"""The AC quantities, keyed alike by hand and FE (SI: ohm, ohm, -, W, H)."""

UNITS = {"R_dc": "ohm", "R_ac": "ohm", "R_ac_ratio": "", "winding_loss": "W", "L_ac": "H"}


def _parts(case: Case) -> tuple[Any, Any]:
    """(conductor, ac) of the case's AC winding."""
    w = case.winding
    if w.conductor is None or w.ac is None:
        raise ValueError(f"winding {w.name!r}: no [winding.conductor] and [winding.ac]")
    return w.conductor, w.ac


# ------------------------------------------------------------------ hand
def ac_windings(case: Case) -> list[tuple[int, Any]]:
    """(index, WindingSpec) of the windings drawn turn by turn with an AC
    current, in case order (windings on one limb stack outward in that
    order, so this is also their radial order)."""
    return [(k, w) for k, w in enumerate(case.windings)
            if w.conductor is not None and w.ac is not None]


def _layer_offsets(case: Case, w: Any = None) -> list[float]:
    """Distance of each layer's centre line from the limb face (m), of
    winding ``w`` (default the first)."""
    w = case.winding if w is None else w
    c = w.conductor
    base = w.inner + w.clearance
    return [base + k * (c.layer_build + c.layer_gap) + 0.5 * c.layer_build
            for k in range(c.layers)]


def _hand_layers(case: Case) -> list[dict[str, Any]]:
    """The AC layers of every AC winding in radial order: winding index and
    name, D = sqrt(eta) h / delta, porosity, R_dc (planar: the turns' two
    sides in the stack depth; 3D: the layer's mean turn length), ampere-turns
    (peak, signed), copper side h and the radial faces of its copper (m from
    the limb face)."""
    out = []
    rz = core_model(case).axisymmetric
    for k, w in ac_windings(case):
        c, ac = w.conductor, w.ac
        limb = case.limbs[w.limb]
        rho = c.resistivity
        delta = wl.skin_depth(ac.frequency, rho)
        b = limb.span  # the window height along the limb: the breadth of Dowell's field
        eta = min(1.0, c.turns_per_layer * (c.width if c.kind == "foil" else c.side) / b)
        D = math.sqrt(eta) * c.side / delta
        for j, off in enumerate(_layer_offsets(case, w)):
            if rz:  # a ring round the post's face at radius limb.c1: both columns alike
                mlt = 2.0 * math.pi * (limb.c1 + off)
                r_p = c.turns_per_layer * rho * mlt / c.area
            else:
                mlt = 2.0 * (limb.width + case.depth) + 2.0 * math.pi * off
                r_p = c.turns_per_layer * rho * 2.0 * case.depth / c.area
            out.append(dict(winding=k, name=w.name, layer=j + 1, D=D, eta=eta, delta=delta,
                            r_p=r_p,
                            r_3=c.turns_per_layer * rho * mlt / c.area, mlt=mlt,
                            at=c.turns_per_layer * ac.current, side=c.side,
                            x0=off - 0.5 * c.side, x1=off + 0.5 * c.side, b=b))
    return out


def hand_ac(case: Case, L_planar: float = math.nan, L_3d: float = math.nan) -> dict[str, Any]:
    """The hand AC figures: {"planar": {...}, "3d": {...}, "layer_factors": F_k,
    "layer_loss": W per layer (planar, AC part), "layer_loss_3d", "delta",
    "delta_ratio", "porosity"}.  ``L_planar``, ``L_3d``: the hand model's
    incremental inductance at the DC current (H), the L_ac of one winding.

    Several AC windings (a transformer, interleaved or not): each layer's
    factor from the MMFs on its faces (the layers' ampere-turns summed from
    zero at the limb face, analytic.winding_loss.layer_factor); R_dc and
    R_ac referred to the first winding, sum_k (I_k / I_1)^2 R_k, so that
    1/2 I_1^2 R_ac is the whole AC loss; R_ac_ratio their ratio; the loss
    of every winding; L_ac the leakage inductance of the MMF pattern
    referred to the first winding (analytic.winding_loss.mmf_leakage_inductance);
    and per winding ``R_dc:NAME``, ``R_ac:NAME``, ``R_ac_ratio:NAME``."""
    wds = ac_windings(case)
    if not wds:
        _parts(case)  # the error of a case without an AC winding
    layers = _hand_layers(case)
    fm = wl.face_mmfs([ly["at"] for ly in layers])
    F = np.asarray(wl.layer_factor(np.array([ly["D"] for ly in layers]), fm[:-1], fm[1:]),
                   dtype=float)
    r_layer = {"planar": np.array([ly["r_p"] for ly in layers]),
               "3d": np.array([ly["r_3"] for ly in layers])}
    i_ac = {k: w.ac.current for k, w in wds}
    i1 = wds[0][1].ac.current
    wk = np.array([ly["winding"] for ly in layers])
    out: dict[str, Any] = {}
    for form, L in (("planar", L_planar), ("3d", L_3d)):
        r = r_layer[form]
        vals: dict[str, float] = {}
        loss = 0.0
        r_dc_ref = r_ac_ref = 0.0
        for k, w in wds:
            sel = wk == k
            r_dc, r_ac = float(np.sum(r[sel])), float(np.sum(F[sel] * r[sel]))
            loss += w.current ** 2 * r_dc + 0.5 * i_ac[k] ** 2 * r_ac
            ratio2 = (i_ac[k] / i1) ** 2
            r_dc_ref += ratio2 * r_dc
            r_ac_ref += ratio2 * r_ac
            if len(wds) > 1:
                vals.update({f"R_dc:{w.name}": r_dc, f"R_ac:{w.name}": r_ac,
                             f"R_ac_ratio:{w.name}": r_ac / r_dc})
        if len(wds) > 1:
            length = (2.0 * case.depth if form == "planar" and not core_model(case).axisymmetric
                      else float(np.mean([ly["mlt"] for ly in layers])))
            gaps = [max(0.0, layers[j + 1]["x0"] - layers[j]["x1"]) for j in range(len(layers) - 1)]
            L = wl.mmf_leakage_inductance([ly["at"] for ly in layers],
                                          [ly["side"] for ly in layers], gaps,
                                          layers[0]["b"], length, i1)
        out[form] = {"R_dc": r_dc_ref, "R_ac": r_ac_ref, "R_ac_ratio": r_ac_ref / r_dc_ref,
                     "winding_loss": loss, "L_ac": L, **vals}
    i_layer = np.array([i_ac[k] for k in wk])
    out["layer_factors"] = tuple(float(x) for x in F)
    out["layer_loss"] = tuple(float(x) for x in 0.5 * i_layer ** 2 * F * r_layer["planar"])
    out["layer_loss_3d"] = tuple(float(x) for x in 0.5 * i_layer ** 2 * F * r_layer["3d"])
    out["delta"], out["delta_ratio"], out["porosity"] = (layers[0]["delta"], layers[0]["D"],
                                                          layers[0]["eta"])
    out["mean_turn_length"] = float(np.mean([ly["mlt"] for ly in layers]))
    out["layer_windings"] = tuple(ly["name"] for ly in layers)
    return out


# ------------------------------------------------------------------ field
def _solid_windings(case: Case) -> tuple[Any, dict, dict]:
    """(SolidWinding per AC winding, conductivity per turn region, current
    phasor per winding name): one winding is named "winding", several by
    their case names."""
    from magcheck.fem2d.harmonic import SolidWinding

    coils = core_model(case).coils
    wds = ac_windings(case)
    if not wds:
        _parts(case)
    names = ["winding"] if len(wds) == 1 else [w.name for _, w in wds]
    sol_w, cond, cur = [], {}, {}
    for name, (k, w) in zip(names, wds):
        sol_w.append(SolidWinding(name, coils[k].sides))
        cond.update({r: w.conductor.conductivity for r, _ in coils[k].sides})
        cur[name] = w.ac.current
    return tuple(sol_w), cond, cur


def part_regions(case: Case) -> dict[str, tuple[str, ...]]:
    """The field model's regions of each conducting part ([conducting_parts]):
    "core" every core region, a part the region of that name or of its own
    material ("core-PART")."""
    regions = core_model(case).regions
    out = {}
    for part, _ in case.conducting:
        if part == "core":
            regs = tuple(r.name for r in regions if r.kind == "core")
        else:
            regs = tuple(r.name for r in regions
                         if r.kind == "core" and (r.name == part or r.material == f"core-{part}"))
        out[part] = regs
    return out


def part_conductivity(case: Case) -> dict[str, float]:
    """sigma (S/m) per field region of the case's conducting parts (a part
    listed later overrides "core" on its own regions)."""
    regs = part_regions(case)
    out: dict[str, float] = {}
    for part, sigma in sorted(case.conducting, key=lambda ps: ps[0] != "core"):
        out.update({r: sigma for r in regs[part]})
    return out


def hand_part_loss(case: Case, hand_3d: Any = None) -> dict[str, float]:
    """The hand estimate of each conducting part's eddy loss (W, time
    average) where the family gives one in closed form (a round part in an
    axial field: ``family.eddy_rod(case, part)`` -> (radius, length) or
    None), else NaN (the row is then FE only).

    The rod's peak AC flux is the hand model's: the incremental inductance
    times the peak AC current over the turns gives the flux per turn, of
    which the working gap's share (flux x N / flux linkage: the leakage
    across the coil space not counted) runs the part.  The flux is taken as
    imposed (the circuit's reluctance is the air gap's), and the loss is
    the long rod's exact Bessel form for that flux (skin effect included;
    analytic.eddy.rod_eddy_loss_imposed_flux, docs/references.md section 16)
    at the part's differential permeability at the hand's DC flux density
    (its B-H law: the operating point's linear permeability).  It misses a
    field that is not uniform along the rod (flux leaving its side, the
    ends) and the rod's own reaction on the circuit."""
    from magcheck.analytic.eddy import rod_eddy_loss_imposed_flux
    from scipy.constants import mu_0

    from ..design.families import get_family

    fam = get_family(case.family)
    _, ac = _parts(case)
    laws = {m.region: m.law for m in case.materials}
    out = {}
    for part, sigma in case.conducting:
        rod = getattr(fam, "eddy_rod", None)
        geo = rod(case, part) if rod is not None else None
        if geo is None or hand_3d is None:
            out[part] = math.nan
            continue
        radius, length = geo
        v = hand_3d.values()
        n = case.winding.turns
        share = (v["flux"] * n / v["flux_linkage"]
                 if v["flux_linkage"] and math.isfinite(v["flux"] * n / v["flux_linkage"]) else 1.0)
        phi_ac = v["incremental_inductance"] * abs(ac.current) / n * share
        law = laws.get(part, laws["core"])
        s_dc = (v["flux"] / (math.pi * radius ** 2)) ** 2
        nu_d = float(law.nu(s_dc)) + 2.0 * s_dc * float(law.dnu_ds(s_dc))
        mu_r = 1.0 / (mu_0 * nu_d)
        out[part] = (rod_eddy_loss_imposed_flux(sigma, mu_r, ac.frequency, phi_ac, radius, length)
                     if math.isfinite(phi_ac) and phi_ac > 0 and mu_r > 0 else math.nan)
    return out


def ac_problem(case: Case, sol: Any, reuse: Any = None) -> Any:
    """The fem2d.harmonic.HarmonicProblem of the case's AC windings about the
    static solution ``sol`` (the DC operating point, on its mesh), at the
    case's frequency.  ``reuse``: a problem made by this function on the same
    solution and conductivity (a frequency sweep's previous point): its
    operators are kept and only the factorisation is new
    (HarmonicProblem.at_frequency), or it is returned as it is at the same
    frequency."""
    from magcheck.fem2d.harmonic import HarmonicProblem

    _, ac = _parts(case)
    windings, conductivity, _ = _solid_windings(case)
    conductivity = {**part_conductivity(case), **conductivity}
    if (reuse is not None and reuse.operating_point is sol
            and dict(reuse.conductivity) == conductivity and tuple(reuse.windings) == windings):
        return reuse if reuse.frequency == ac.frequency else reuse.at_frequency(ac.frequency)
    return HarmonicProblem(sol.mesh, {}, conductivity, ac.frequency, windings=windings,
                           operating_point=sol)


def fe_ac(case: Case, sol: Any, problem: Any = None) -> dict[str, Any]:
    """The FE AC figures on one static solution ``sol`` (the DC operating
    point, on its mesh): {"values": {...AC_KEYS}, "layer_loss": W per layer
    (AC part, planar), "side_loss": {"window": W, "outside": W} (the go and
    return coil sides), "ndofs", "seconds", "size_over_delta"}.  ``problem``:
    the :func:`ac_problem` to solve (default: made here).  Several AC
    windings: each carries its own current phasor; R_ac:NAME = 2 P_k / I_k^2
    from its loss, R_ac = 2 P / I_1^2 and L_ac = 2 Q / (w I_1^2) from the
    whole loss P and reactive power Q = 1/2 Im sum V_k I_k* (the leakage
    inductance referred to the first winding when the ampere-turns balance)."""
    from magcheck.fem2d.harmonic import region_loss, winding_impedance, winding_loss

    wds = ac_windings(case)
    coils = core_model(case).coils
    t0 = time.perf_counter()
    prob = problem if problem is not None else ac_problem(case, sol)
    windings, _, cur = _solid_windings(case)
    hs = prob.solve(cur)
    asm = prob.asm
    if core_model(case).axisymmetric:
        # a solid ring: its filaments 2 pi r long in parallel, R = 2 pi rho / int dA / r
        def ring(r: str) -> float:
            idx = asm.rmesh.subdomains[r]
            return 2.0 * math.pi / float(np.sum(asm.dx[idx] / asm.xq[0][idx]))
        r_dc = {w.name: float(sum(w.conductor.resistivity * ring(r) for r, _ in coils[k].sides))
                for k, w in wds}
    else:
        areas = asm.areas
        r_dc = {w.name: float(sum(w.conductor.resistivity * case.depth / areas[r]
                                  for r, _ in coils[k].sides)) for k, w in wds}
    layer_loss = []
    for k, w in wds:
        for j in range(1, w.conductor.layers + 1):
            regs = [r for r, lay in coils[k].layers if lay == j]
            layer_loss.append(region_loss(hs, regs))
    back = [r for k, _ in wds for r in coils[k].back]  # none in r-z: a turn is a whole ring
    side = {"window": region_loss(hs, [r for k, _ in wds for r in coils[k].go]),
            "outside": region_loss(hs, back) if back else 0.0}
    part_loss = {part: region_loss(hs, list(regs)) for part, regs in part_regions(case).items()}
    secs = time.perf_counter() - t0
    if len(wds) == 1:
        w = wds[0][1]
        z = winding_impedance(hs, "winding")
        rd = r_dc[w.name]
        # R_ac is the copper's: with conducting parts the terminal Re(Z) also
        # holds their eddy loss, reflected (2 P_part / I^2), which is the
        # part-loss row's; without them the two are the same (Poynting)
        r_ac = (2.0 * winding_loss(hs, "winding") / abs(w.ac.current) ** 2 if part_loss
                else z.R)
        vals = {"R_dc": rd, "R_ac": r_ac, "R_ac_ratio": r_ac / rd,
                "winding_loss": w.current ** 2 * rd + 0.5 * w.ac.current ** 2 * r_ac, "L_ac": z.L}
    else:
        i1 = wds[0][1].ac.current
        vals = {}
        loss = q = r_dc_ref = r_ac_ref = 0.0
        for (k, w), sw in zip(wds, windings):
            p_k = winding_loss(hs, sw.name)
            r_ac = 2.0 * p_k / w.ac.current ** 2
            v_k = winding_impedance(hs, sw.name).Z * w.ac.current
            q += 0.5 * float(np.imag(v_k * np.conj(w.ac.current)))
            loss += w.current ** 2 * r_dc[w.name] + p_k
            r_dc_ref += (w.ac.current / i1) ** 2 * r_dc[w.name]
            r_ac_ref += 2.0 * p_k / i1 ** 2
            vals.update({f"R_dc:{w.name}": r_dc[w.name], f"R_ac:{w.name}": r_ac,
                         f"R_ac_ratio:{w.name}": r_ac / r_dc[w.name]})
        w_ = prob.omega
        vals = {"R_dc": r_dc_ref, "R_ac": r_ac_ref, "R_ac_ratio": r_ac_ref / r_dc_ref,
                "winding_loss": loss, "L_ac": 2.0 * q / (w_ * i1 ** 2) if w_ > 0 else math.nan,
                **vals}
    return {"values": vals, "layer_loss": tuple(layer_loss), "side_loss": side,
            "part_loss": part_loss, "ndofs": int(prob.nunknowns), "seconds": secs,
            "size_over_delta": float(prob.size_over_delta), "solution": hs}


@dataclass(frozen=True)
class ACResult:
    """Hand and FE AC figures of a case (SI; planar per stack depth, and 3D).

    hand, hand_3d : the hand model's planar form and 3D (mean turn lengths).
    fe, fe_3d : the finest mesh's values and the FE scaled by the hand's
        3D / planar ratio per key.
    uncertainty : the three-mesh FE uncertainty per key (NaN without it).
    hand_layers, fe_layers : AC loss per layer (W, planar), layer 1 at the limb.
    """

    frequency: float
    current_ac: float
    current_dc: float
    hand: dict
    hand_3d: dict
    fe: dict
    fe_3d: dict
    uncertainty: dict
    hand_layers: tuple
    fe_layers: tuple
    fe_layers_uncertainty: tuple
    side_loss: dict
    skin_depth: float
    delta_ratio: float
    porosity: float
    ndofs: int
    seconds: float
    size_over_delta: float
    layer_factors: tuple = field(default=())
    solution: Any = field(default=None, repr=False, compare=False)
    """The finest mesh's fem2d.harmonic.HarmonicSolution (its factorisation
    released): the loss-density figure (ac_loss.png) and the AC VTU."""
    windings: tuple = field(default=())
    """Names of the AC windings (several: a transformer; per-winding keys
    ``R_dc:NAME``, ``R_ac:NAME``, ``R_ac_ratio:NAME`` in hand, fe, ...)."""
    layer_windings: tuple = field(default=())
    """The winding of each layer of hand_layers/fe_layers (radial order)."""
    part_loss_hand: dict = field(default_factory=dict)
    """Eddy loss per conducting part ([conducting_parts]; W, 3D): the hand
    estimate (hand_part_loss; NaN where no closed form: FE only)."""
    part_loss_fe: dict = field(default_factory=dict)
    """The same from the field solution (W; planar: in the stack depth)."""
    part_loss_uncertainty: dict = field(default_factory=dict)

    def to_dict(self, which: str) -> dict:
        """The JSON block of one column: "hand" (3D), "hand_planar", "fe"."""
        if which == "hand":
            return {"ac": {**self.hand_3d, "frequency": self.frequency,
                           "current_ac_peak": self.current_ac, "skin_depth": self.skin_depth,
                           "delta_ratio": self.delta_ratio, "porosity": self.porosity,
                           "layer_factors": list(self.layer_factors),
                           **({"windings": list(self.windings),
                               "layer_windings": list(self.layer_windings)}
                              if len(self.windings) > 1 else {}),
                           **({"part_loss": dict(self.part_loss_hand)}
                              if self.part_loss_hand else {})}}
        if which == "hand_planar":
            return {"ac": {**self.hand, "layer_loss": list(self.hand_layers)}}
        return {"ac": {**self.fe, "layer_loss": list(self.fe_layers),
                       "layer_loss_uncertainty": list(self.fe_layers_uncertainty),
                       "side_loss": dict(self.side_loss), "depth_corrected": dict(self.fe_3d),
                       "uncertainty": dict(self.uncertainty), "ndofs": self.ndofs,
                       "seconds": self.seconds, "size_over_delta": self.size_over_delta,
                       **({"part_loss": dict(self.part_loss_fe),
                           "part_loss_uncertainty": dict(self.part_loss_uncertainty)}
                          if self.part_loss_fe else {})}}


def run_ac(case: Case, fe: Any, hand_p: Any = None, hand_3d: Any = None) -> ACResult:
    """Hand and FE AC figures; ``fe`` a compare.models.fe.FEResult (its
    ``solutions``: the three meshes' static solutions, coarsest first, for
    the uncertainty; else its one solution, no uncertainty)."""
    from .fe import uncertainty_rule

    Lp = hand_p.values()["incremental_inductance"] if hand_p is not None else math.nan
    L3 = hand_3d.values()["incremental_inductance"] if hand_3d is not None else math.nan
    h = hand_ac(case, Lp, L3)
    from magcheck.fem2d.errors import SolverInputError

    from ..errors import RunError

    sols = tuple(fe.solutions) or (fe.solution,)
    runs = []
    try:
        for s in sols:
            runs.append(fe_ac(case, s))
            # keep each mesh's field (the finest for the figure), not its factors: one
            # factorisation in memory at a time
            runs[-1]["solution"].problem.release_factorisation()
    except SolverInputError as exc:  # the factorisation's memory guard
        raise RunError(f"AC solve of {case.name}: {exc}") from None
    fine = runs[-1]
    keys = tuple(fine["values"])  # AC_KEYS, and per winding with several
    if len(runs) == 3:
        unc = {k: uncertainty_rule(*(r["values"][k] for r in runs)) for k in keys}
        # R_dc is the drawn rectangles' exact areas: what the three meshes give
        # apart is the rounding of the element areas' sums (~1e-15), not a
        # discretisation error; it made the R_dc verdict flip on roundoff
        unc = {k: 0.0 if u <= 1e-12 * abs(fine["values"][k]) else u for k, u in unc.items()}
        lunc = tuple(uncertainty_rule(*(r["layer_loss"][j] for r in runs))
                     for j in range(len(fine["layer_loss"])))
        punc = {p: uncertainty_rule(*(r["part_loss"][p] for r in runs)) for p in fine["part_loss"]}
    else:
        punc = {p: math.nan for p in fine["part_loss"]}
        unc = {k: math.nan for k in keys}
        lunc = tuple(math.nan for _ in fine["layer_loss"])
    hp, h3 = h["planar"], h["3d"]
    ratio = {k: (h3[k] / hp[k] if hp[k] and math.isfinite(h3[k] / hp[k]) else 1.0)
             for k in keys}
    fv = fine["values"]
    fe3 = {k: fv[k] * ratio[k] for k in keys}
    # the loss's 3D column from the 3D resistances (not one ratio of the total)
    _, ac = _parts(case)
    wds = ac_windings(case)
    if len(wds) == 1:
        fe3["winding_loss"] = (case.winding.current ** 2 * fe3["R_dc"]
                               + 0.5 * ac.current ** 2 * fe3["R_ac"])
    else:
        fe3["winding_loss"] = sum(w.current ** 2 * fe3[f"R_dc:{w.name}"]
                                  + 0.5 * w.ac.current ** 2 * fe3[f"R_ac:{w.name}"]
                                  for _, w in wds)
    return ACResult(ac.frequency, ac.current, case.winding.current,
                    hand=hp, hand_3d=h3, fe=dict(fv), fe_3d=fe3, uncertainty=unc,
                    hand_layers=h["layer_loss"], fe_layers=fine["layer_loss"],
                    fe_layers_uncertainty=lunc, side_loss=fine["side_loss"],
                    skin_depth=h["delta"], delta_ratio=h["delta_ratio"], porosity=h["porosity"],
                    ndofs=fine["ndofs"], seconds=fine["seconds"],
                    size_over_delta=fine["size_over_delta"], layer_factors=h["layer_factors"],
                    solution=fine["solution"], windings=tuple(w.name for _, w in wds),
                    layer_windings=h["layer_windings"],
                    part_loss_hand=hand_part_loss(case, hand_3d), part_loss_fe=fine["part_loss"],
                    part_loss_uncertainty=punc)
