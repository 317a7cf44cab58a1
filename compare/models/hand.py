"""The hand calculation of a case: its reluctance network, solved.

Builds the nonlinear magnetic-circuit model of a case from the family's
mean-path segments, inserting each gap (with the case's fringing model) in
series with the limb it cuts and the winding's MMF in its limb, or from the
circuit the family gives explicitly (compare.design.coremodel.HandCircuit: a drawn
core's own hand model), and reduces the network solution to the quantities
an engineer checks.
"""

from __future__ import annotations

import logging
import math
from dataclasses import dataclass, field, replace
from typing import Any, Optional

from magcheck.analytic.fringing import (GapFace, GapSides, effective_area, gap_permeance,
                                        gap_permeance_derivative, get_fringing)
from magcheck.analytic.constants import mu_0
from magcheck.analytic.network import (CoreBranch, GapBranch, Network, NetworkResult, Winding,
                                       solve_network)

from ..design.case import Case
from ..design.coremodel import HandCircuit, core_model
from ..design.geometry import flux_direction
from ..errors import CaseError, RunError

__all__ = ["HandResult", "build_network", "run_hand", "WINDING_NAME", "HAND_KEYS", "signed",
           "magnet_sense", "sign_reference", "cancelling_windings",
           "FORCE_KEYS", "hand_forces"]

log = logging.getLogger(__name__)

WINDING_NAME = "main"

HAND_KEYS = ("gap_B", "core_B", "path_H", "flux", "flux_linkage", "inductance",
             "incremental_inductance", "energy")
"""Quantity keys of the hand JSON (a contract: later versions and scripts rely on them)."""

FORCE_KEYS = ("force", "force_pull")
"""Hand force keys of a case with a moving part (N, along its closing stroke):
the network's virtual work and the Maxwell pull formula."""

UNITS = {"force": "N", "force_pull": "N", "force_maxwell": "N", "force_virtual_work": "N",
         "gap_B": "T", "core_B": "T", "path_H": "A/m", "flux": "Wb", "flux_linkage": "Wb",
         "inductance": "H", "incremental_inductance": "H", "energy": "J"}


def winding_keys(case: Case) -> tuple[tuple[str, ...], tuple[tuple[str, ...], ...]]:
    """The flat keys of the per-winding quantities of both models:
    ``flux_linkage:NAME`` per winding and ``L:NAME_j,NAME_k`` for the
    incremental inductance matrix entry d lambda_j / d I_k."""
    names = [w.name for w in case.windings]
    return (tuple(f"flux_linkage:{n}" for n in names),
            tuple(tuple(f"L:{a},{b}" for b in names) for a in names))


@dataclass(frozen=True)
class CircuitMap:
    """Which network branches stand for what in the case."""

    path_branches: tuple[str, ...]
    gap_branches: tuple[str, ...]
    winding_branch: str


def hand_circuit(case: Case) -> HandCircuit | None:
    """The hand circuit the case's family gives explicitly (a drawn core's
    ``[circuit]``), or None: the network is then built from the family's
    mean-path segments."""
    if getattr(case.family_model, "core_model", None) is None:
        return None
    return core_model(case).circuit


def winding_signs(case: Case) -> tuple[int, ...]:
    """+1 or -1 per winding: the sense of its MMF in the network relative to
    the first winding's, as the field model places the coils
    (compare.design.geometry.flux_direction) and the family orients its segments
    (Segment.axis_sign).  Two windings with positive currents aid each
    other where this is +1 and oppose where it is -1, in both models.  A
    hand circuit given explicitly carries its own signs."""
    circuit = hand_circuit(case)
    if circuit is not None:
        return tuple(sign * circuit.windings[0][1] for _, sign in circuit.windings)
    segs: dict[str, Any] = {}
    for seg in case.family_model.segments(case.core):
        segs.setdefault(seg.limb, seg)
    limbs = case.limbs
    raw = [flux_direction(limbs[w.limb]) * segs[w.limb].axis_sign for w in case.windings]
    return tuple(r * raw[0] for r in raw)


def gap_face(case: Case, index: int) -> GapFace:
    """The face geometry of gap ``index`` for the fringing models.

    width = the limb width it crosses (in the plane), depth = stack depth,
    free height = the limb's straight length beside the window (the
    winding length the flux-factor model's G stands for), sides = the free
    pole face each side of the gap as the geometry has it
    (:meth:`compare.design.geometry.Limb.face_run`): to the yoke across a window,
    to the outer corner outside the core and on the stack's front and back;
    room across a window side: the window's width, or half of it where a gap
    in the limb across the window sits within that width along the axis
    (the two gaps' edges face each other and share the window).
    """
    gap = case.gaps[index]
    limb = case.limbs[gap.limb]
    start, end = gap.position - 0.5 * gap.length, gap.position + 0.5 * gap.length
    minus, plus, depth = (limb.face_run(s, start, end) for s in ("minus", "plus", "depth"))
    room = [limb.room_minus, limb.room_plus]
    # a gap in the limb across a window, within the window's width along the
    # axis: the two gaps' edges face each other across it and each takes half
    # (their fringing tubes would otherwise fill the same volume)
    for k, other in enumerate(case.gaps):
        far = case.limbs[other.limb]
        if k == index or other.limb == gap.limb or far.axis != limb.axis:
            continue
        for side, across in ((0, limb.c0 - far.c1), (1, far.c0 - limb.c1)):
            w = room[side]
            near = abs(other.position - gap.position) < 0.5 * (gap.length + other.length) + w
            if math.isfinite(w) and math.isclose(across, w, rel_tol=1e-9) and near:
                room[side] = 0.5 * w
    sides = GapSides(minus, plus, depth, room=(room[0], room[1]))
    return GapFace(length=gap.length, width=limb.width, depth=case.depth, free_height=limb.span,
                   sides=sides)


def build_network(case: Case, *, fringing: str | None = None, planar: bool = False,
                  leakage: bool = False, stacking: bool = False,
                  effective: bool = False) -> tuple[Network, CircuitMap]:
    """The reluctance network of a case.

    Parameters
    ----------
    fringing : str, optional
        Fringing model name (default: the case's ``hand.fringing``).
    planar : bool
        True applies only the in-plane part of the fringing correction, the
        form a planar 2D field model can be compared with (docs/references.md
        section 6); False is the full 3D hand calculation.
    leakage : bool
        Add, for each winding window, the yoke-to-yoke path across it in
        parallel with the facing limb (`window_bypass`).
    stacking : bool
        Core segments on the net iron area k_s A (``case.stacking``); gaps
        keep the gross face (the core's flux density on the iron, the gap on
        the full pole face: McLyman, Transformer and Inductor Design
        Handbook, 4th ed., 2011 [from memory]).
    effective : bool
        One core branch of the IEC 60205 effective length and area
        (analytic.effective) instead of the mean-path segments, the gaps in
        series with it (`_effective_network`).
    """
    circuit = hand_circuit(case)
    if circuit is not None:
        return _circuit_network(case, circuit, fringing, planar, stacking)
    model = get_fringing(fringing or case.hand.fringing)
    if effective:
        if case.part_overrides:
            raise CaseError("hand.effective_parameters", True,
                            "the effective core is one material; parts "
                            f"{', '.join(case.part_overrides)} have their own: turn it off")
        return _effective_network(case, model, planar, leakage, stacking)
    material = case.material("core").law
    fam = case.family_model
    branches: list[Any] = []
    nodes: set[str] = set()
    path: list[str] = []
    gap_names: dict[int, str] = {}
    winding_branch = ""
    seg_of_limb: dict[str, Any] = {}
    for seg in fam.segments(case.core):
        nodes.update((seg.node_a, seg.node_b))
        gaps = sorted((i for i, g in enumerate(case.gaps) if g.limb == seg.limb),
                      key=lambda i: case.gaps[i].position)
        core_len = seg.length - sum(case.gaps[i].length for i in gaps)
        a = seg.node_a
        b = f"{seg.name}/core-end" if gaps else seg.node_b
        area = seg.area * (case.stacking if stacking else 1.0)
        law = case.part_material(seg.part or seg.limb).law if case.part_overrides else material
        branches.append(CoreBranch(seg.name, a, b, core_len, area, law))
        if seg.on_path:
            path.append(seg.name)
        if seg.limb == case.winding.limb:
            winding_branch = seg.name
        if seg.limb not in seg_of_limb:
            seg_of_limb[seg.limb] = seg
        for k, i in enumerate(gaps):
            nodes.add(b)
            nxt = seg.node_b if k == len(gaps) - 1 else f"{seg.name}/gap{i}-end"
            face = gap_face(case, i)
            name = f"gap{i}"
            branches.append(GapBranch(name, b, nxt, face.length,
                                      gap_permeance(face, model, planar),
                                      effective_area(face, model, planar),
                                      dpermeance_dlength=gap_permeance_derivative(
                                          face, model, planar)))
            gap_names[i] = name
            b = nxt
    if leakage:
        branches.extend(window_bypass(case))
    sources = tuple(Winding(w.name, sign * w.turns, w.current, seg_of_limb[w.limb].name)
                    for w, sign in zip(case.windings, winding_signs(case)))
    net = Network(nodes=tuple(sorted(nodes)), branches=tuple(branches), windings=sources)
    cmap = CircuitMap(tuple(path), tuple(gap_names[i] for i in range(len(case.gaps))),
                      winding_branch)
    return net, cmap


def _circuit_network(case: Case, circuit: HandCircuit, fringing: str | None, planar: bool,
                     stacking: bool) -> tuple[Network, CircuitMap]:
    """The network of a circuit the family gives explicitly (a drawn core's
    ``[circuit]``): its segments and gaps as branches, each winding's MMF in
    the branch it names.  ``planar`` applies only where the field model is
    planar (an axisymmetric model is a 3D one); a gap's own fringing model
    wins over the case's unless ``fringing`` is given (the breakdown's
    switch)."""
    planar = planar and core_model(case).symmetry == "planar"
    branches: list[Any] = []
    nodes: set[str] = set()
    k_s = case.stacking if stacking else 1.0  # the net iron area (build_network)
    for seg in circuit.segments:
        nodes.update((seg.node_a, seg.node_b))
        branches.append(CoreBranch(seg.name, seg.node_a, seg.node_b, seg.length, seg.area * k_s,
                                   case.part_material(seg.material).law))
    for gap in circuit.gaps:
        nodes.update((gap.node_a, gap.node_b))
        model = get_fringing(fringing or gap.fringing or case.hand.fringing)
        if gap.stroke_faces is None:
            rate = gap_permeance_derivative(gap.face, model, planar)
        else:  # the free sides move with the stroke too
            p0, p1, p2, p3 = (gap_permeance(f, model, planar) for f in gap.stroke_faces)
            step = 0.5 * (gap.stroke_faces[2].length - gap.stroke_faces[1].length)
            rate = (8.0 * (p2 - p1) - (p3 - p0)) / (12.0 * step)
        branches.append(GapBranch(gap.name, gap.node_a, gap.node_b, gap.face.length,
                                  gap_permeance(gap.face, model, planar),
                                  effective_area(gap.face, model, planar),
                                  dpermeance_dlength=rate))
    rates = dict(circuit.leakage_rates)
    for name, a, b, perm, length in circuit.leakage:
        nodes.update((a, b))
        branches.append(GapBranch(name, a, b, length, perm, perm * length / mu_0,
                                  kind="leakage", dpermeance_dlength=rates.get(name)))
    for m in circuit.magnets:
        nodes.update((m.node_a, m.node_b))
        branches.append(m)
    sources = tuple(Winding(w.name, sign * w.turns, w.current, branch)
                    for w, (branch, sign) in zip(case.windings, circuit.windings))
    ground = circuit.segments[0].node_a  # the first node is the network's reference
    net = Network(nodes=(ground, *sorted(nodes - {ground})), branches=tuple(branches),
                  windings=sources)
    path = tuple(seg.name for seg in circuit.segments if seg.on_path)
    gaps = (circuit.gap_B,) if circuit.gap_B is not None else ()
    return net, CircuitMap(path, gaps, circuit.flux_branch)


def _effective_network(case: Case, model, planar: bool, leakage: bool,
                       stacking: bool) -> tuple[Network, CircuitMap]:
    """The single loop: the core as branches of area A_e (times k_s with
    ``stacking``) and total length l_e (the iron's IEC 60205 parameters),
    the winding on the first, every gap in series and, with ``leakage``, the
    window bypass across the facing limb's part and its gaps."""
    from magcheck.analytic.effective import effective_parameters

    parts, loop_limbs = case.family_model.effective_path(case.core)
    off = [i for i, g in enumerate(case.gaps) if g.limb not in loop_limbs]
    if off:
        g = case.gaps[off[0]]
        raise CaseError(f"gaps[{off[0]}].limb", g.limb,
                        "hand.effective_parameters needs every gap on the winding's single "
                        f"loop ({', '.join(loop_limbs)}); turn it off for this core")
    # the iron only: each gap's length comes off the part it cuts, so that
    # l_e/A_e is the core's own C1 (exact against the segments for a linear core)
    iron = [(length - sum(g.length for g in case.gaps if g.limb == limb), area)
            for limb, length, area in parts]
    eff = effective_parameters(iron)
    area = eff.area * (case.stacking if stacking else 1.0)
    law = case.material("core").law
    # The loop, in order: the winding side of the core, the gaps elsewhere,
    # the facing limb's share of the effective core, the facing limb's gaps.
    # The window bypass spans the last two, as it spans the facing limb in
    # the segment model (so a uniform core gives the same circuit either way).
    windows = case.family_model.windows(case.core, case.winding.limb)
    facing = windows[0].facing if windows else None
    total_iron = sum(length for length, _ in iron)
    share = sum(length for (limb, _, _), (length, _) in zip(parts, iron) if limb == facing)
    frac = share / total_iron if total_iron > 0 else 0.0
    near = [i for i, g in enumerate(case.gaps) if g.limb != facing]
    far = [i for i, g in enumerate(case.gaps) if g.limb == facing]
    chain: list[tuple[str, Any]] = [("core", eff.length * (1.0 - frac))]
    chain += [(f"gap{i}", i) for i in near]
    if frac > 0:
        chain.append(("core/facing", eff.length * frac))
    chain += [(f"gap{i}", i) for i in far]
    if len(chain) == 1:  # no gap, no facing part: close the loop with a second half
        chain = [("core", 0.5 * eff.length), ("core/return", 0.5 * eff.length)]
    branches: list[Any] = []
    names = [f"e{k}" for k in range(len(chain))]
    bypass_from = None
    for k, (name, what) in enumerate(chain):
        a, b = names[k], names[(k + 1) % len(chain)]
        if name.startswith("gap"):
            face = gap_face(case, what)
            branches.append(GapBranch(name, a, b, face.length, gap_permeance(face, model, planar),
                                      effective_area(face, model, planar),
                                      dpermeance_dlength=gap_permeance_derivative(
                                          face, model, planar)))
        else:
            branches.append(CoreBranch(name, a, b, what, area, law))
            if name == "core/facing":
                bypass_from = a
    nodes = set(names)
    path = [n for n, _ in chain if n.startswith("core")]
    if leakage and case.gaps:
        start = bypass_from or names[1]
        branches.extend(replace(br, node_a=start, node_b="e0") for br in window_bypass(case))
    sources = tuple(Winding(w.name, sign * w.turns, w.current, "core")
                    for w, sign in zip(case.windings, winding_signs(case)))
    net = Network(nodes=tuple(sorted(nodes)), branches=tuple(branches), windings=sources)
    return net, CircuitMap(tuple(path), tuple(f"gap{i}" for i in range(len(case.gaps))), "core")


@dataclass(frozen=True)
class HandResult:
    """The hand calculation's operating point (SI units, see :data:`UNITS`)."""

    case_name: str
    fringing_model: str
    planar: bool
    gap_B: float
    core_B: float
    path_H: float
    flux: float
    flux_linkage: float
    inductance: float
    incremental_inductance: float
    energy: float
    iterations: int
    residual: float
    segments: tuple[dict, ...]
    network: NetworkResult = field(repr=False, compare=False)
    leakage_permeance: float = 0.0
    refinements: tuple[str, ...] = ()
    winding_names: tuple[str, ...] = ()
    winding_values: dict[str, float] = field(default_factory=dict)
    """Per winding: flux linkage (Wb) and the incremental inductance matrix
    (H), under the flat keys of :func:`winding_keys`."""
    magnet_values: dict[str, float] = field(default_factory=dict)
    """With a magnet in the circuit named like the case's first magnet region:
    its ``magnet_B`` (T) and ``magnet_H`` (A/m) along its magnetisation."""
    force_values: dict[str, float] = field(default_factory=dict)
    """With a moving part (compare.design.coremodel.ForceSpec): the force on it
    along its closing stroke (N), ``force`` by the network's virtual work,
    ``force_pull`` by the Maxwell pull formula (:func:`hand_forces`)."""

    def values(self) -> dict[str, float]:
        """The quantities of :data:`HAND_KEYS` (SI, units in :data:`UNITS`)."""
        return {k: getattr(self, k) for k in HAND_KEYS}

    def keys(self) -> list[str]:
        """The names ``hand[...]`` takes: :data:`HAND_KEYS`, the force keys
        of a moving part, the per-winding keys (``flux_linkage:NAME``,
        ``L:A,B``) and a magnet's ``magnet_B``/``magnet_H``."""
        return [*HAND_KEYS, *self.force_values, *self.winding_values, *self.magnet_values]

    def __getitem__(self, key: str) -> float:
        """One quantity by name, SI (``hand["inductance"]`` in H; units in :data:`UNITS`).

        Raises
        ------
        KeyError
            Naming the key and listing the known ones.
        """
        if key in HAND_KEYS:
            return float(getattr(self, key))
        for d in (self.force_values, self.winding_values, self.magnet_values):
            if key in d:
                return float(d[key])
        raise KeyError(f"{key!r} is not a hand quantity; known: {', '.join(self.keys())}")

    def flux_linkages(self) -> list[float]:
        """lambda_j (Wb), in winding order."""
        return [self.winding_values[f"flux_linkage:{n}"] for n in self.winding_names]

    def inductance_matrix(self) -> list[list[float]]:
        """L_jk = d lambda_j / d I_k (H), rows and columns in winding order."""
        return [[self.winding_values[f"L:{a},{b}"] for b in self.winding_names]
                for a in self.winding_names]

    def to_dict(self) -> dict:
        """JSON-ready dict; keys of :data:`HAND_KEYS` are a stable contract."""
        out: dict[str, Any] = {k: _json_float(getattr(self, k)) for k in HAND_KEYS}
        out["fringing_model"] = self.fringing_model
        out["planar"] = self.planar
        out["segments"] = [dict(s) for s in self.segments]
        out["converged"] = True
        out["iterations"] = self.iterations
        out["residual"] = self.residual
        out["units"] = dict(UNITS)
        out["leakage_permeance"] = self.leakage_permeance
        out["refinements"] = list(self.refinements)
        out["windings"] = list(self.winding_names)
        out["flux_linkages"] = [_json_float(v) for v in self.flux_linkages()]
        out["inductance_matrix"] = [[_json_float(v) for v in row]
                                    for row in self.inductance_matrix()]
        for k in FORCE_KEYS:  # N along the stroke, positive closing; null without a moving part
            out[k] = _json_float(self.force_values.get(k, math.nan))
        if self.magnet_values:
            out["magnet"] = {k[7:]: _json_float(v) for k, v in self.magnet_values.items()}
        return out


def hand_forces(case: Case, net: Network, res: NetworkResult) -> dict[str, float]:
    """The hand forces on the case's moving part (N, along the closing
    stroke), {} without one.

    force : the network's virtual work, the sum over the working gaps (and
        the leakage paths the stroke changes, ``HandCircuit.leakage_rates``)
        of -(1/2) F^2 dP/dg (analytic.force.gap_forces: dW'/dx at constant
        current, exact for the network, every fringing model; a gap whose
        free sides move with the stroke, ``CircuitGap.stroke_faces``, takes
        the derivative of its whole face), and the iron segments the stroke
        lengthens (``HandCircuit.segment_rates``): (W_seg / L_seg) dL/dstroke,
        the explicit derivative of a core branch's co-energy at a fixed MMF
        drop, -A w(B) per metre [derived here].
    force_pull : the Maxwell pull formula, the sum over the working gaps
        of phi^2 / (2 mu0 A) with phi the gap's flux and A its pole face
        (width x depth): the uniform-field stress B^2/(2 mu0) on the face
        (analytic.force.maxwell_pull).
    """
    from magcheck.analytic.force import gap_forces, maxwell_pull

    circuit = hand_circuit(case)
    spec = core_model(case).force if circuit is not None else None
    if spec is None or circuit is None:
        return {}
    faces = {g.name: g.face for g in circuit.gaps}
    vw = gap_forces(net, res)
    pull = 0.0
    for name in spec.gaps:
        face = faces[name]
        area = face.width * face.depth
        pull += maxwell_pull(res.branch(name).flux / area, area)
    moving = (*spec.gaps, *(n for n, _ in circuit.leakage_rates))
    # an iron segment the stroke lengthens or shortens: -dW'/dstroke of its
    # co-energy at a fixed MMF drop is (W_seg / L_seg) dL/dstroke (HandCircuit.segment_rates)
    iron = sum(res.branch(n).energy / res.branch(n).length * rate
               for n, rate in circuit.segment_rates)
    return {"force": float(sum(vw[n] for n in moving) + iron), "force_pull": float(pull)}


def hand_magnet(case: Case, res: NetworkResult) -> dict[str, float]:
    """The operating point of the circuit's magnet that stands for the case's
    first magnet region (same name): B (T) and H (A/m) along its
    magnetisation (a -> b); {} when there is none."""
    circuit = hand_circuit(case)
    model = core_model(case) if circuit is not None else None
    if model is None or circuit is None or not model.magnets:
        return {}
    name = model.magnets[0].region
    if name not in {m.name for m in circuit.magnets}:
        return {}
    br = res.branch(name)
    return {"magnet_B": float(br.B), "magnet_H": float(br.H)}


def magnet_sense(case: Case) -> int:
    """+1 or -1: the sense of the flux linkage the case's magnets alone give
    its first winding, in that winding's own frame (the sense a positive
    current drives); 0 for a case without magnets, or whose magnets link the
    first winding with no flux.

    The hand network solved with every winding current at zero (linear in the
    magnet's MMF, one solve): a geometric fact of the case (the magnet's
    orientation against the winding's), which both models take as their sign
    reference (:func:`signed`).  A winding current of the opposite sign,
    -magnet_sense, opposes the magnet: it releases a holding magnet.
    """
    model = core_model(case) if hand_circuit(case) is not None else None
    if model is None or not model.magnets:
        return 0
    off = replace(case, winding=replace(case.winding, current=0.0),
                  extra_windings=tuple(replace(w, current=0.0) for w in case.extra_windings))
    net, _ = build_network(off)
    res = solve_network(net)
    lam = float(res.flux_linkage[case.winding.name]) if res.converged else 0.0
    return 0 if lam == 0.0 or not math.isfinite(lam) else (1 if lam > 0 else -1)


CANCEL_FLOOR = 1e-9
"""Relative floor of :func:`cancelling_windings`: a winding's flux linkage
below this fraction of what its own and the other windings' currents drive
through it (sum over j of |L_kj I_j|) is float residue of a cancellation."""


def cancelling_windings(case: Case, hand: HandResult) -> tuple[str, ...]:
    """The windings whose fields cancel in the hand network, or ().

    Two or more windings with current, no magnet, and every winding's flux
    linkage (Wb) at float residue: below CANCEL_FLOOR of the sum over j of
    |L_kj I_j| (the incremental inductance matrix times the currents: what
    each winding's own MMF drives through winding k).  The net MMF around
    the core's loop is then zero: the hand network carries no flux at all,
    and the field solution only the leakage round the coils, so flux, gap
    B, core B, path H, flux linkage, lambda/I and energy have nothing to
    compare.  Returns the names of the windings with current.
    """
    active = [w for w in case.windings if w.current != 0.0]
    if len(active) < 2 or core_model(case).magnets:
        return ()
    lam_keys, l_keys = winding_keys(case)
    v = hand.winding_values
    for k, lk in enumerate(lam_keys):
        scale = sum(abs(v[l_keys[min(k, j)][max(k, j)]] * w.current)
                    for j, w in enumerate(case.windings))
        if not (scale > 0 and abs(v[lk]) <= CANCEL_FLOOR * scale):
            return ()
    return tuple(w.name for w in active)


def sign_reference(case: Case, lam_raw: float, sense: Optional[int] = None) -> float:
    """The reference whose sign the signed quantities take (:func:`signed`):
    with magnets the first winding's raw flux linkage (own frame, Wb) times
    :func:`magnet_sense` (``sense``, when the caller has it: a geometric fact,
    the same at every current of one geometry), so that values point along the
    magnet's own direction; with several windings that raw linkage; with one
    winding its current (A)."""
    s_m = magnet_sense(case) if sense is None else sense
    if s_m:
        return s_m * lam_raw
    return lam_raw if len(case.windings) > 1 else case.winding.current


def signed(magnitude: float, current: float) -> float:
    """The sign convention of both models' reported quantities, in one place.

    With magnets (a holding magnet, a drawn magnet region) the reference is
    the magnet's own direction (:func:`sign_reference`): flux, gap B and
    flux linkage are positive when the winding's linked flux points the way
    the magnet alone drives it (a magnet alone gives positive values, at any
    current that does not reverse the flux); a winding current of sign
    -magnet_sense(case) opposes the magnet (releases a holding magnet), the
    other sign aids it.  The secant lambda/I then counts the magnet's own
    flux linkage and is no inductance of the coil (compare.judge.check reports it
    for information; the incremental inductance is judged).

    With several windings the reference is not the first winding's current
    but its flux linkage (a second winding may drive the core the other
    way): flux, gap B and flux linkage then take the sign of that winding's
    own linkage, and its secant inductance is lambda/I with its sign (negative
    when the other windings reverse its flux).  The rest of this docstring
    is the one-winding case, where the two references agree.

    Flux (Wb), flux linkage (Wb), gap B (T, the component along the limb) and
    each segment's B, H, flux and MMF drop are reported with the sign of the
    winding current: positive for a positive current, the negative of the
    same magnitude for the reversed current. This is exact, not a choice of
    branch: the magnetostatic problem with an isotropic B-H law, H(-B) =
    -H(B), is odd in the source, so reversing I reverses every field vector
    and keeps every magnitude. Magnitudes (core B as mean |B|, path H as mean
    |H|, peak B, energy) and inductances (secant lambda/I and incremental)
    stay positive. ``magnitude`` is taken as |magnitude|; NaN passes through.
    """
    m = abs(magnitude)
    return -m if current < 0 else m


def _json_float(v: float) -> float | None:
    return v if math.isfinite(v) else None


def window_bypass(case: Case) -> list[GapBranch]:
    """The window's yoke-to-yoke leakage paths, as linear branches across the
    facing limb's end nodes (in parallel with that limb and its gaps).

    Across the window, between the two yokes, the potential difference is
    the MMF drop of the facing limb (its gap): a vertical line at x beyond
    the coil encloses no current.  With straight field lines (length the
    window's height h along the limb) the path's permeance is
    mu0 d (w - c - t + t/3) / h: the window's free width w - c - t, and the
    coil's build t weighted by 1/3, since a line through the coil encloses
    the part of the coil side beyond it (linear, so u^2 averages to 1/3 for a
    gap taking all of N I); a line in the clearance c between limb and coil
    encloses the whole coil side and sees no MMF (weight 0) [derived here; straight-line flux tubes as in Roters,
    Electromagnetic Devices, 1941 [from memory]].  A facing limb without a
    gap carries almost no MMF across it, so the branch then carries almost
    no flux (the network finds that by itself).
    """
    w = case.winding
    limb = case.limbs[w.limb]
    segs = {seg.limb: seg for seg in case.family_model.segments(case.core)}
    out = []
    for k, win in enumerate(case.family_model.windows(case.core, w.limb)):
        if win.facing not in segs:
            continue
        seg = segs[win.facing]
        c = min(w.clearance, win.width)
        t = min(w.thickness, win.width - c)
        # lines between the limb and the coil (the clearance) enclose the
        # whole coil side, so with the gap taking N I they see no MMF
        width = win.width - c - t + t / 3.0
        height = limb.span
        p = mu_0 * case.depth * width / height
        out.append(GapBranch(f"window{k}-bypass", seg.node_a, seg.node_b, height, p,
                             width * case.depth, kind="leakage"))
    return out


def _drops(case: Case, res: NetworkResult, cmap: CircuitMap) -> dict[str, float]:
    """Each branch's MMF drop over the winding's N I (magnitudes); at zero
    current those of the network at 1 A (its small-signal split)."""
    ni = abs(case.winding.mmf)
    if ni == 0.0:
        one = replace(case, winding=replace(case.winding, current=1.0))
        net, cm = build_network(one)
        return _drops(one, solve_network(net), cm)
    return {b.name: abs(b.mmf_drop) / ni for b in res.branches}


def window_leakage_of(case: Case, drops: dict[str, float]) -> tuple[float, float]:
    """Leakage permeance (Wb/A) across the winding's windows and the leakage
    flux through the winding limb's middle per ampere-turn (Wb/A), summed
    over the windows the family reports (analytic.leakage.window_leakage),
    with the MMF drops (over N I) of the segment model's branches."""
    from magcheck.analytic.leakage import window_leakage

    w = case.winding
    limb = case.limbs[w.limb]
    mid = 0.5 * (limb.lo + limb.hi)
    coil = (mid - 0.5 * w.length, mid + 0.5 * w.length)
    segs = {s.name: s for s in case.family_model.segments(case.core)}
    by_limb = {s.limb: s for s in segs.values() if s.limb in case.limbs}
    total_p, total_flux = 0.0, 0.0
    for win in case.family_model.windows(case.core, w.limb):
        steps, offset = [], 0.0
        for i, gap in enumerate(case.gaps):
            share = drops.get(f"gap{i}", 0.0)
            if gap.limb in (w.limb, win.facing):
                steps.append((gap.position, share))
            elif gap.limb in win.lo_side:
                offset += share
        # the iron: the lo-end yoke's whole drop, the two limbs' drops spread
        # along their segments (corner to corner), so the part below lo too
        lo_segs = win.lo_segments if win.lo_segments is not None else tuple(
            by_limb[n].name for n in win.lo_side if n in by_limb)
        offset += sum(drops.get(n, 0.0) for n in lo_segs)
        slope = 0.0
        for seg in (by_limb.get(w.limb), by_limb.get(win.facing)):
            if seg is None:
                continue
            per_m = drops.get(seg.name, 0.0) / seg.length
            slope += per_m
            offset += per_m * 0.5 * (seg.length - limb.span)
        lk = window_leakage(win.width, case.depth, (limb.lo, limb.hi), coil, steps, offset, mid,
                            slope=slope)
        total_p += lk.permeance
        total_flux += lk.middle_flux
    return total_p, total_flux


def _segment_solution(case: Case, fringing: str | None, planar: bool,
                      stacking: bool) -> tuple[NetworkResult, CircuitMap]:
    net, cmap = build_network(case, fringing=fringing, planar=planar, leakage=True,
                              stacking=stacking)
    res = solve_network(net)
    if not res.converged:
        raise RunError(f"magnetic-circuit solve did not converge: {res.message}")
    return res, cmap


def check_hand_options(case: Case, fringing: str | None = None, planar: bool = False, *,
                       names: tuple[str, str] = ("fringing", "planar")) -> None:
    """Bad input of :func:`run_hand`'s overrides as a CaseError naming the
    option (``names``: the CLI's ``--fringing``/``--planar``, the API's
    ``fringing``/``planar``): an unknown fringing model; ``planar`` on an
    axisymmetric case, which has no planar form."""
    if fringing is not None:
        from magcheck.analytic.fringing import FRINGING_MODELS

        from ..design.reader import _choice_text

        if fringing not in FRINGING_MODELS:
            raise CaseError(names[0], fringing, _choice_text(fringing, tuple(FRINGING_MODELS)))
    if planar and core_model(case).axisymmetric:
        raise CaseError(names[1], None, "this case's field model is axisymmetric (r-z), a "
                                        "3D one whose gaps fringe all round: there is no "
                                        "planar form to compare with; leave "
                                        f"{names[1]} out")


def run_hand(case: Case, *, fringing: str | None = None, planar: bool = False,
             flux0: Any = None, leakage: bool | None = None,
             stacking: bool | None = None, effective: bool | None = None) -> HandResult:
    """Solve the case's magnetic circuit.

    ``fringing``, ``leakage``, ``stacking`` and ``effective`` override the case's ``[hand]`` settings
    (the difference breakdown switches refinements on one at a time).
    Window leakage is modelled for one winding: with several it is left out
    (and not listed in ``refinements``).  With leakage, the window leakage
    (compare.models.hand.window_leakage_of) adds
    N^2 P_leak to both inductances, N^2 P_leak I to the flux linkage,
    N^2 P_leak I^2/2 to the energy and its share to the winding limb's
    flux; gap B, core B and path H are the gapped path's.

    Raises
    ------
    RunError
        When the Newton solve of the network does not converge.
    """
    if planar and hand_circuit(case) is not None and core_model(case).axisymmetric:
        planar = False  # an r-z field model is a 3D one: its hand model is the whole circuit
    with_leakage = (case.hand.leakage if leakage is None else leakage) and len(case.windings) == 1
    with_stacking = (case.hand.stacking if stacking is None else stacking) and case.stacking != 1.0
    with_effective = case.hand.effective_parameters if effective is None else effective
    if hand_circuit(case) is not None:
        for key, on in (("hand.leakage", with_leakage), ("hand.effective_parameters",
                                                         with_effective)):
            if on:
                raise CaseError(key, True, "needs a core family's limbs and windows; this "
                                           "core's hand model is its own circuit")
    net, cmap = build_network(case, fringing=fringing, planar=planar, leakage=with_leakage,
                              stacking=with_stacking, effective=with_effective)
    res = solve_network(net, flux0=flux0)
    if not res.converged:
        raise RunError(f"magnetic-circuit solve did not converge: {res.message}")
    p_leak, flux_leak = (0.0, 0.0)
    if with_leakage:
        # the drops of the segment model (the effective-parameter loop has
        # no limbs to spread them on)
        seg_res, seg_map = (res, cmap) if not with_effective else _segment_solution(
            case, fringing, planar, with_stacking)
        p_leak, flux_leak = window_leakage_of(case, _drops(case, seg_res, seg_map))
    by_name = {b.name: b for b in res.branches}
    path = [by_name[n] for n in cmap.path_branches]
    total = sum(b.length for b in path)
    core_B = sum(abs(b.B) * b.length for b in path) / total
    path_H = sum(abs(b.H) * b.length for b in path) / total
    n = case.winding.turns
    name0 = case.winding.name
    many = len(case.windings) > 1
    # the sign reference (compare.models.hand.sign_reference): the winding current
    # with one winding; with several, the first winding's own flux linkage,
    # which is the current's sign whenever that winding's MMF dominates; with
    # magnets, that linkage along the magnet's own direction
    ref = sign_reference(case, float(res.flux_linkage[name0]))
    i = case.winding.current
    gap_B = signed(by_name[cmap.gap_branches[0]].B, ref) if cmap.gap_branches else math.nan
    flux = signed(abs(by_name[cmap.winding_branch].flux) + n * abs(i) * flux_leak, ref)
    lam0 = signed(abs(res.flux_linkage[name0]) + n * n * abs(i) * p_leak, ref)
    l00 = res.incremental_inductance[name0] + n * n * p_leak
    i0 = case.winding.current
    secant = (abs(res.inductance[name0]) + n * n * p_leak if not many
              else (lam0 / i0 if i0 != 0 else l00))
    lam_keys, l_keys = winding_keys(case)
    if len(case.windings) == 1:
        wvals = {lam_keys[0]: lam0, l_keys[0][0]: l00}
    else:  # no leakage with several windings (refused when the case is read)
        wvals = {lam_keys[j]: float(res.flux_linkage[w.name])
                 for j, w in enumerate(case.windings)}
        m = res.incremental_inductance_matrix  # the network's windings are in case order
        n_w = len(case.windings)
        wvals.update({l_keys[j][k]: float(m[j, k]) for j in range(n_w) for k in range(n_w)})
    segments = tuple(
        {"name": b.name, "kind": b.kind, "length": b.length, "area": b.area,
         "flux": signed(b.flux, ref), "B": signed(b.B, ref), "H": signed(b.H, ref),
         "mmf_drop": signed(b.mmf_drop, ref), "energy": b.energy}
        for b in res.branches)
    return HandResult(
        force_values=hand_forces(case, net, res),
        magnet_values=hand_magnet(case, res),
        case_name=case.name,
        fringing_model=get_fringing(fringing or case.hand.fringing).name,
        planar=planar,
        gap_B=gap_B, core_B=core_B, path_H=path_H, flux=flux,
        flux_linkage=lam0,
        inductance=secant,
        incremental_inductance=l00,
        energy=float(res.energy) + 0.5 * n * n * p_leak * i * i,
        iterations=res.iterations,
        residual=float(res.residual_history[-1]) if res.residual_history else 0.0,
        segments=segments,
        network=res,
        leakage_permeance=p_leak,
        refinements=tuple(name for name, on in (("window leakage", with_leakage),
                                                ("stacking factor", with_stacking),
                                                ("effective parameters", with_effective)) if on),
        winding_names=tuple(w.name for w in case.windings),
        winding_values=wvals,
    )
