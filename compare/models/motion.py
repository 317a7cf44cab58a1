"""A moving armature by both models: the force and flux-linkage maps F(i, s)
and lambda(i, s), the static limits (pull-in, drop-out, the load margin at
rated current) and the motion (operate and release), each model on its own
maps (physics: magcheck.analytic.motion, docs/references.md section 14).

The maps. The strokes ``s`` run from the open stop (0) to the closed stop
(``travel``); the case's stroke key (the working gap) is ``open_gap - s``.
The grid's gaps are spaced geometrically between the open and the closed
gap (the force grows as the gap closes, about as 1/gap^2, so the points
crowd where it is steep); the currents evenly from 0 to ``CURRENT_TOP`` times
the rated current.

- Hand: the magnetic circuit (compare.models.hand.run_hand) at every grid
  point: its flux linkage and its virtual-work force, in the planar form the
  FE solves (the "hand" column) and as the whole 3D circuit ("hand 3D").
- FE: each stroke meshed once on the check's coarsest mesh (the case's
  element size times REFINE), its currents solved in rising order, each
  Newton solve started from the last point's solution scaled by the current
  ratio (exact for a linear circuit, A ~ i; no tangent solve for a
  predictor; with a magnet, from zero current outward, each from its solved
  neighbour's solution as it is), one direct factorisation shared along the stroke
  (fem2d.linsolve.DirectReuse);
  the next stroke is meshed on a helper thread meanwhile (gmsh runs outside
  the GIL). Force: the weighted Maxwell stress along the closing stroke;
  flux linkage: the winding's.  A planar case's "FE 3D" map is the FE map
  times the hand 3D / planar ratio at each grid point (the depth correction
  of the other rows, point by point).
- Interpolation (analytic.motion.GridMap): monotone piecewise cubic in s
  (the force as F g^2, the ideal gap's law divided out), then in i (the
  force in i^2 without a magnet: linear below saturation).  Its error is estimated by leaving out each inner grid line in
  turn (a current, a stroke) and comparing the map without it with the
  solved values there: at twice the grid spacing, so an upper estimate of
  the map's own error (a cubic's error falls as h^3 to h^4).

Left out (the notes say so): eddy currents in solid iron, which slow a real
actuator (they delay the flux behind the coil current); friction; the
switching arc.
"""

from __future__ import annotations

import dataclasses
import math
import time
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass, field
from typing import Any, Optional

import numpy as np

from magcheck.analytic.motion import (GridMap, Motion, MotionError, drop_out_current,
                                      load_margin, operate, pull_in_current, release,
                                      release_current)

from ..design.case import Case, with_current
from ..errors import CaseError, RunError

__all__ = ["CURRENT_TOP", "MODELS", "MotionMaps", "ModelMotion", "MotionResult", "map_strokes",
           "map_currents", "hand_maps", "point_setup", "fe_point", "fe_maps", "leave_one_out_error", "model_motion",
           "run_motion", "case_at", "KEYS", "UNITS", "MAP_TOL", "interpolation_uncertainty"]

CURRENT_TOP = 1.5
"""The map's top current over the rated current: room for the pull-in of a
design that needs more than rated, and for the release's holding current."""

MODELS = ("hand", "hand_3d", "fe", "fe_3d")

KEYS = ("pull_in_current", "pull_in_voltage", "drop_out_current", "drop_out_voltage",
        "load_margin", "operate_time", "current_dip", "impact_speed", "release_time",
        "release_current", "release_voltage")
"""The figures each model gives (ModelMotion.values)."""

UNITS = {"pull_in_current": "A", "pull_in_voltage": "V", "drop_out_current": "A",
         "drop_out_voltage": "V", "load_margin": "N", "operate_time": "s", "current_dip": "A",
         "impact_speed": "m/s", "release_time": "s", "release_current": "A", "release_voltage": "V"}

MAP_TOL = 1e-6
"""The FE map's Newton tolerance (relative residual; the case's when tighter):
it moves the map's F and lambda by about 1e-8 relative on the clapper demo
(measured against 1e-8), far below the map's interpolation error (~1e-2),
for one Newton step less per point."""

RTOL = 1e-8
"""The motion integrator's relative tolerance: far below the maps' own error."""


def map_strokes(spec: Any) -> np.ndarray:
    """The grid's strokes (m from the open stop), rising: gaps spaced
    geometrically from the open to the closed gap."""
    n = spec.map_strokes
    gaps = spec.open_gap * (spec.closed_gap / spec.open_gap) ** (np.arange(n) / (n - 1))
    s = spec.open_gap - gaps
    s[0], s[-1] = 0.0, spec.travel
    return s


def map_currents(spec: Any, magnets: bool = False) -> np.ndarray:
    """The grid's currents (A): 0 and ``map_currents`` evenly to CURRENT_TOP x rated;
    with a magnet from -CURRENT_TOP x rated to 0 instead (the reverse current
    that releases a holding magnet, the rated current the release supply's:
    the force is not even in i, so the reverse side is solved itself)."""
    top = CURRENT_TOP * spec.rated_current
    n = spec.map_currents
    k = np.arange(-n, 1) if magnets else np.arange(n + 1)
    return top * k / n


def case_at(case: Case, gap: float) -> Case:
    """The case with its stroke key at ``gap`` (m), validated like the file;
    a gap the geometry refuses names the motion's key."""
    spec = case.motion
    if case.origin is None and spec.stroke_key.startswith("core."):  # a Case built directly
        name = spec.stroke_key.split(".", 1)[1]
        return dataclasses.replace(case, core=dataclasses.replace(case.core, **{name: gap}))
    try:
        return case.with_values({spec.stroke_key: gap, "motion.open_gap": spec.open_gap})
    except CaseError as exc:
        key = "motion.closed_gap" if gap < spec.open_gap else "motion.open_gap"
        raise CaseError(key, f"{gap * 1e3:g} mm", f"the geometry refuses {spec.stroke_key} "
                        f"there: {exc.reason}") from None


@dataclass(frozen=True)
class MotionMaps:
    """F (N) and lambda (Wb-turns) of each model on the grid: ``tables[model]``
    = (forces, linkages), each currents x strokes."""

    strokes: np.ndarray
    currents: np.ndarray
    tables: dict[str, tuple[np.ndarray, np.ndarray]]
    fe_solves: int = 0
    fe_seconds: float = 0.0
    hand_seconds: float = 0.0
    gap_open: Optional[float] = None
    """The working gap at the open stop (m): the force is interpolated in s as F g^2."""
    square: bool = False
    """No magnet: the force is interpolated in i^2 (GridMap)."""

    def grid_map(self, model: str) -> GridMap:
        f, lam = self.tables[model]
        return GridMap(self.currents, self.strokes, f, lam, gap_open=self.gap_open,
                       square=self.square)


def hand_maps(case: Case, strokes: np.ndarray, currents: np.ndarray,
              cases: Optional[list[Case]] = None) -> dict[str, tuple[np.ndarray, np.ndarray]]:
    """The hand model's maps, planar form ("hand") and 3D ("hand_3d")."""
    from .hand import run_hand

    spec = case.motion
    cases = cases or [case_at(case, spec.gap(s)) for s in strokes]
    out = {}
    for name, planar in (("hand", True), ("hand_3d", False)):
        f = np.empty((currents.size, strokes.size))
        lam = np.empty_like(f)
        for j, cs in enumerate(cases):
            for k, i in enumerate(currents):
                h = run_hand(with_current(cs, float(i)), planar=planar)
                f[k, j] = h.force_values["force"]
                lam[k, j] = h.values()["flux_linkage"]
        out[name] = (f, lam)
    return out


def point_setup(case: Case) -> tuple[Any, Any, Any, Any, int]:
    """What the map's points at one stroke share, whatever their current:
    (materials, sources, the first coil, the force spec, the magnets' sense;
    compare.models.fe, compare.models.hand.magnet_sense)."""
    from ..design.coremodel import core_model
    from .fe import _materials, winding_sources
    from .hand import magnet_sense

    model = core_model(case)
    spec = model.force
    assert spec is not None  # a [motion] case has a moving part (compare.reading.motion)
    return _materials(case), winding_sources(case), model.coils[0], spec, magnet_sense(case)


def fe_point(case: Case, mesh: Any, A0: Any, linear: Any,
             setup: Optional[tuple] = None) -> tuple[float, float, Any]:
    """One map point: the field solved (the check's solver, materials and
    sources: compare.models.fe) and only what the map needs measured, the
    closing force by the weighted Maxwell stress (N) and the winding's flux
    linkage (Wb-turns, signed as the check's), with the solution.  ``setup``:
    :func:`point_setup` of the same stroke (made here when not given).  Raises
    RunError when it does not converge."""
    from magcheck.fem2d import post
    from magcheck.fem2d.force import maxwell_force
    from magcheck.fem2d.solver import ConvergenceError, solve

    from .fe import winding_currents
    from .hand import sign_reference, signed

    materials, sources, coil, spec, sense = setup or point_setup(case)
    try:
        sol = solve(mesh, materials, sources=sources, currents=winding_currents(case),
                    tol=case.fe.tol, A0=A0, linear_solver=linear)
    except ConvergenceError as exc:
        raise RunError(f"field solve did not converge: {exc}") from None
    lam = post.flux_linkage(sol, case.winding.turns, coil.go, coil.back)
    fx, fy = maxwell_force(sol, spec.body).force
    dx, dy = spec.direction
    return fx * dx + fy * dy, signed(lam, sign_reference(case, lam, sense)), sol


def fe_maps(case: Case, strokes: np.ndarray, currents: np.ndarray,
            cases: Optional[list[Case]] = None) -> tuple[np.ndarray, np.ndarray, int, float]:
    """The FE's maps (forces, linkages), the number of solves and the wall time (s)."""
    from magcheck.fem2d.linsolve import DirectReuse

    from .fe import REFINE, mesh_case

    t0 = time.perf_counter()
    spec = case.motion
    cases = cases or [case_at(case, spec.gap(s)) for s in strokes]
    f = np.empty((currents.size, strokes.size))
    lam = np.empty_like(f)
    solves = 0
    from ..design.coremodel import core_model

    magnets = bool(core_model(case).magnets)
    solved: dict[int, Any] = {}
    with ThreadPoolExecutor(max_workers=1) as pool:
        meshes = [pool.submit(mesh_case, cs, refine=1.0 / REFINE) for cs in cases]
        for j, cs in enumerate(cases):
            mesh = meshes[j].result()
            cs = dataclasses.replace(cs, fe=dataclasses.replace(cs.fe,
                                                                tol=max(cs.fe.tol, MAP_TOL)))
            linear = DirectReuse()
            setup = point_setup(cs)  # the same at every current of this stroke
            solved.clear()  # this stroke's solutions (its own mesh)
            A: Any = None
            prev = 0.0
            for k in _solve_order(currents, magnets):
                i = currents[k]
                if i == 0.0 and not magnets:  # no source: A = 0, F = 0, lambda = 0 exactly
                    f[k, j] = lam[k, j] = 0.0
                    continue
                if magnets:
                    # with a magnet A is not ~ i: the nearest solved point as it
                    # is (the zero-current solution for each first step out)
                    A0: Any = None if A is None else solved[_nearest_solved(k, solved)]
                else:
                    # the last solution scaled by the current: exact for a linear
                    # circuit (A ~ i), close below saturation; costs no tangent solve
                    A0 = None if A is None else A * (float(i) / prev)
                try:
                    f[k, j], lam[k, j], sol = fe_point(with_current(cs, float(i)), mesh, A0,
                                                       linear, setup)
                except RunError as exc:
                    raise RunError(f"motion map at {spec.stroke_key} = {spec.gap(strokes[j]):.6g} "
                                   f"m, {float(i):.6g} A: {exc}") from None
                solves += 1
                A, prev = sol.A, float(i)
                solved[k] = sol.A
    return f, lam, solves, time.perf_counter() - t0


def _solve_order(currents: np.ndarray, magnets: bool) -> list[int]:
    """The order a stroke's currents are solved in: rising; with a magnet
    from zero current outward, downward first, then upward (each point
    started from its solved neighbour toward zero)."""
    if not magnets:
        return list(range(currents.size))
    k0 = int(np.argmin(np.abs(currents)))
    return [k0] + list(range(k0 - 1, -1, -1)) + list(range(k0 + 1, currents.size))


def _nearest_solved(k: int, solved: dict[int, Any]) -> int:
    return min(solved, key=lambda m: abs(m - k))


def leave_one_out_error(strokes: np.ndarray, currents: np.ndarray, f: np.ndarray,
                        lam: np.ndarray, gap_open: Optional[float] = None,
                        square: bool = False) -> dict[str, float]:
    """The map's interpolation error estimated by leaving out each inner grid
    line (a current, then a stroke) and interpolating the rest there: the
    largest |error| relative to the solved value's scale (the force over its
    row's largest, the linkage over its own), as fractions, under
    ``force_current``, ``force_stroke``, ``linkage_current``, ``linkage_stroke``
    and ``force``/``linkage`` (the larger of the two directions)."""
    tables = {"force": f, "linkage": lam}
    worst = {(what, d): 0.0 for what in tables for d in ("current", "stroke")}
    for k in range(1, currents.size - 1):  # each left-out map built once, both quantities on it
        keep = np.arange(currents.size) != k
        g = GridMap(currents[keep], strokes, f[keep], lam[keep], gap_open, square)
        for what, table in tables.items():
            at = g.force if what == "force" else g.linkage
            for j, s in enumerate(strokes):
                scale = abs(table[:, j]).max() if what == "force" else abs(table[k, j])
                if scale > 0:
                    worst[what, "current"] = max(worst[what, "current"],
                                                 abs(at(currents[k], s) - table[k, j]) / scale)
    for j in range(1, strokes.size - 1):
        keep = np.arange(strokes.size) != j
        g = GridMap(currents, strokes[keep], f[:, keep], lam[:, keep], gap_open, square)
        for what, table in tables.items():
            at = g.force if what == "force" else g.linkage
            for k, i in enumerate(currents):
                scale = abs(table[k, j])
                if i == 0.0 or not scale > 0:
                    continue
                worst[what, "stroke"] = max(worst[what, "stroke"],
                                            abs(at(i, strokes[j]) - table[k, j]) / scale)
    out: dict[str, float] = {}
    for what in tables:
        out[f"{what}_current"], out[f"{what}_stroke"] = worst[what, "current"], worst[what, "stroke"]
        out[what] = max(worst[what, "current"], worst[what, "stroke"])
    return out


@dataclass(frozen=True)
class ModelMotion:
    """One model's limits and motion (SI; NaN where not reached).

    values : KEYS -> value; pull_in_stroke, margin_stroke, drop_out_stroke (m
    from the open stop): the tightest strokes; operate, release: the motions
    (analytic.motion.Motion: t, i, lam, s) or None; notes: why a value is NaN;
    beyond: for a value NaN because it lies beyond what the model explored,
    the bound it exceeds (pull_in_voltage: the map's top current times R, no
    pull-in below it; operate_time, release_time: the integration's end time,
    not closed or not opened by then), so a maximum below the bound is
    judged failed rather than not judged.
    """

    model: str
    values: dict[str, float]
    pull_in_stroke: float = math.nan
    margin_stroke: float = math.nan
    operate: Optional[Motion] = field(default=None, repr=False)
    release: Optional[Motion] = field(default=None, repr=False)
    notes: tuple[str, ...] = ()
    beyond: dict[str, float] = field(default_factory=dict)


SATURATING_STEP = 0.25
"""The change of F/i^2 between the map's first two nonzero currents beyond
which a limit interpolated below the first is flagged (a soft iron's F/i^2
moves by some percent with its initial permeability; saturation by tens;
common practice, no source)."""


def _time_scales(gm: GridMap, spec: Any) -> float:
    """A generous end time (s): 50 electrical time constants at the open stop
    and 20 mechanical ones (the time to cross the travel under the open
    load's force), so a motion that closes has closed."""
    i_r = spec.rated_current
    tau = gm.linkage(i_r, 0.0) / max(i_r, 1e-30) / spec.coil_resistance
    f0 = max(abs(float(spec.load.force(0.0))), 1e-9)
    t_m = math.sqrt(2.0 * spec.mass * spec.travel / f0)
    return 50.0 * abs(tau) + 20.0 * t_m


def model_motion(name: str, gm: GridMap, spec: Any, *, rtol: float = RTOL,
                 magnets: bool = False) -> ModelMotion:
    """Pull-in, drop-out, the load margin at rated current, the operate and
    release motions of one model's map ``gm`` under ``spec`` (ActuatorSpec).

    With a magnet (``magnets``: a holding magnet, the map spanning reverse
    currents): the release current only, instead of the pull-in, drop-out,
    load margin and motion: the first reverse current from zero
    downward at which the closed stop's holding force falls to the load
    (analytic.motion.release_current; beyond the force's least value the coil
    overpowers the magnet and the force rises again: that second crossing is
    not a release), reported as its magnitude, with its voltage |i| R.
    Without ``spec.mass`` the static limits only (no operate or release
    motion)."""
    if magnets:
        return _magnet_limits(name, gm, spec)
    load, r = spec.load, spec.coil_resistance
    i_top = float(gm.currents[-1])
    v: dict[str, float] = {k: math.nan for k in KEYS}
    beyond: dict[str, float] = {}
    notes = []
    pull_s = margin_s = math.nan
    try:
        p = pull_in_current(gm.force, load, i_top, samples=81)
        v["pull_in_current"], v["pull_in_voltage"], pull_s = p.current, p.current * r, p.stroke
    except MotionError:
        notes.append(f"no pull-in below {i_top:.4g} A ({CURRENT_TOP:g} x rated)")
        beyond["pull_in_current"], beyond["pull_in_voltage"] = i_top, i_top * r
    try:
        d = drop_out_current(gm.force, load, i_top)
        v["drop_out_current"], v["drop_out_voltage"] = d.current, d.current * r
    except MotionError:
        notes.append("the closed armature does not hold below the map's top current")
    # below the map's first current step the force is interpolated from zero:
    # right while F ~ i^2 holds up to there; not when the map already
    # saturates by its first steps (a rated voltage far above pull-in)
    i1, i2 = float(gm.currents[1]), float(gm.currents[2])
    low = []
    for lbl, k, s_at in (("pull-in", "pull_in_current", pull_s),
                         ("drop-out", "drop_out_current", spec.travel)):
        if 0.0 < v[k] < i1 and math.isfinite(s_at):
            k1, k2 = gm.force(i1, s_at) / i1 ** 2, gm.force(i2, s_at) / i2 ** 2
            if k1 > 0.0 and abs(k2 / k1 - 1.0) > SATURATING_STEP:
                low.append(f"{lbl} ({100 * (k2 / k1 - 1.0):+.0f} %)")
    if low:
        notes.append(f"the {' and '.join(low)} current{'s lie' if len(low) > 1 else ' lies'} "
                     f"below the map's first current step "
                     f"({i1:.4g} A), interpolated from zero, where F/i^2 already changes by "
                     f"the percent given from that step to the next: the map saturates by its "
                     "first steps, so that limit is unreliable (a rated voltage far above "
                     "pull-in spreads the map's currents thin: raise map_currents)")
    m = load_margin(gm.force, load, spec.rated_current, samples=81)
    v["load_margin"], margin_s = m.margin, m.stroke
    if spec.mass is None:
        return ModelMotion(name, v, pull_s, margin_s, None, None,
                           tuple(notes) + ("no moving mass given: the static limits only",),
                           beyond)
    t_end = _time_scales(gm, spec)
    volt = spec.voltage_table if spec.voltage_table is not None else spec.voltage
    # max_step: the traces (and the current dip read off them) sampled finely enough
    kw = dict(current=gm.current, restitution=spec.restitution, rtol=rtol, atol=1e-12,
              max_step=t_end / 1000.0)
    op = operate(gm.linkage, gm.force, load, spec.mass, r, volt, t_end, **kw)
    if op.closed_time is not None:
        v["operate_time"] = op.closed_time
        v["impact_speed"] = abs(op.impact_speed) if op.impact_speed is not None else math.nan
        if op.i_motion_peak is not None and op.i_motion_min is not None:
            v["current_dip"] = op.i_motion_peak - op.i_motion_min
    else:
        notes.append(f"does not close within {t_end * 1e3:.3g} ms at the drive")
        beyond["operate_time"] = t_end
    i_hold = spec.rated_current
    rel_kw: dict[str, Any] = {}
    if spec.suppression == "resistor":
        rel_kw["suppression"] = spec.suppression_resistance
    elif spec.suppression == "diode":
        rel_kw["diode_drop"] = spec.diode_drop
    rl = None
    held = float(gm.force(i_hold, spec.travel)) > float(load.force(spec.travel))
    if not held:
        # the release starts from the armature held closed at rated current;
        # a load the coil cannot hold there has no release time
        notes.append("not held closed at rated current (the load beats the force at the "
                     "closed stop): no release time")
    elif math.isnan(v["drop_out_current"]) or v["drop_out_current"] > 0.0:
        rl = release(gm.linkage, gm.force, load, spec.mass, r, i_hold, t_end, **rel_kw, **kw)
        if rl.open_time is not None:
            v["release_time"] = rl.open_time
        else:
            notes.append(f"does not open within {t_end * 1e3:.3g} ms of switch-off")
            beyond["release_time"] = t_end
    else:
        notes.append("held closed at zero current (the load does not open it)")
        beyond["release_time"] = t_end
    return ModelMotion(name, v, pull_s, margin_s, op, rl, tuple(notes), beyond)


def _magnet_limits(name: str, gm: GridMap, spec: Any) -> ModelMotion:
    """A magnet's static limit (model_motion): the release current
    (magnitude, the coil opposing) and its voltage.  No pull-in: a holding
    magnet's keeper is set on it, and the map spans the reverse currents."""
    load, r = spec.load, spec.coil_resistance
    i_low = float(gm.currents[0])
    v: dict[str, float] = {k: math.nan for k in KEYS}
    notes = []
    pull_s = math.nan
    try:
        rc = release_current(gm.force, load, i_low, samples=401)
        v["release_current"], v["release_voltage"] = abs(rc.current), abs(rc.current) * r
    except MotionError as exc:
        notes.append(f"no release current above {i_low:.4g} A: {exc}")
    if spec.mass is not None:
        notes.append("a magnet: the static limits only (no operate or release motion)")
    return ModelMotion(name, v, pull_s, math.nan, None, None, tuple(notes))


def interpolation_uncertainty(gm: GridMap, spec: Any, mm: ModelMotion,
                              err: dict[str, float]) -> dict[str, float]:
    """The map's interpolation error as an uncertainty (SI, the unit of each
    value) on a model's figures ``mm`` from its map ``gm``; ``err`` the
    fractions of :func:`leave_one_out_error` (e_F = ``err["force"]``, e_L =
    ``err["linkage"]``, each the larger of its two directions; e_Fi, e_Fs
    the force's along the current and the stroke).

    The rule, first order in the map's error:
    - a static current (pull-in, drop-out, release) sits where F(i, s*) meets
      the load F_load(s*); the force there is uncertain by dF = max(e_Fi
      max_k |F(i_k, s*)|, e_Fs F_load(s*)) (each fraction on the scale it was
      measured against: the current's over the stroke's largest force on the
      grid, the stroke's over the value), which moves the crossing by
      u_i = dF / |dF/di| (the slope from the map, a central difference at the
      limit; s* the pull-in's tightest stroke, the closed stop for drop-out
      and release); its voltage by u_i R;
    - the load margin: e_F F(i_rated, s_margin);
    - the operate and release times, the current dip and the impact speed:
      (e_L + e_F / 2) |value| (the electrical delay scales with lambda, the
      flight time as F^(-1/2));
    NaN where the value is."""
    e_f, e_l = err.get("force", math.nan), err.get("linkage", math.nan)
    v, r, load = mm.values, spec.coil_resistance, spec.load
    out = {k: math.nan for k in KEYS}
    di = 1e-4 * max(abs(float(gm.currents[0])), abs(float(gm.currents[-1])))

    e_fi, e_fs = err.get("force_current", e_f), err.get("force_stroke", e_f)

    def through_slope(i: float, s: float) -> float:
        slope = (gm.force(i + di, s) - gm.force(i - di, s)) / (2.0 * di)
        row = max(abs(gm.force(float(c), s)) for c in gm.currents)
        d_f = max(e_fi * row, e_fs * abs(float(load.force(s))))
        return d_f / abs(slope) if slope != 0.0 else math.nan

    for cur, volt, sign, s in (("pull_in_current", "pull_in_voltage", 1.0, mm.pull_in_stroke),
                               ("drop_out_current", "drop_out_voltage", 1.0, spec.travel),
                               ("release_current", "release_voltage", -1.0, spec.travel)):
        if math.isfinite(v[cur]) and math.isfinite(s):
            out[cur] = through_slope(sign * v[cur], s)
            out[volt] = out[cur] * r
    if math.isfinite(v["load_margin"]) and math.isfinite(mm.margin_stroke):
        out["load_margin"] = e_f * abs(gm.force(spec.rated_current, mm.margin_stroke))
    for k in ("operate_time", "release_time", "current_dip", "impact_speed"):
        out[k] = (e_l + 0.5 * e_f) * abs(v[k])
    return out


@dataclass(frozen=True)
class MotionResult:
    """Both models' limits and motions on their maps, and the FE map's cost
    and interpolation error (``interpolation``: leave_one_out_error's
    fractions)."""

    maps: MotionMaps
    models: dict[str, ModelMotion]
    interpolation: dict[str, float]
    rated_current: float
    resistance: float
    seconds: float
    uncertainty: dict[str, float] = field(default_factory=dict)
    """The FE's figures' uncertainty from its map's interpolation error (SI,
    :func:`interpolation_uncertainty`), the rows' uncertainty column."""

    def value(self, model: str, key: str) -> float:
        m = self.models.get(model)
        return m.values[key] if m is not None else math.nan

    def to_dict(self) -> dict:
        """The JSON block (SI): per model its values and tightest strokes; the
        map's grid, solves, wall time and interpolation error."""
        return {
            "rated_current": self.rated_current, "coil_resistance": self.resistance,
            "models": {n: {**m.values, "pull_in_stroke": m.pull_in_stroke,
                           "margin_stroke": m.margin_stroke, "notes": list(m.notes)}
                       for n, m in self.models.items()},
            "map": {"strokes": self.maps.strokes.tolist(), "currents": self.maps.currents.tolist(),
                    "fe_solves": self.maps.fe_solves, "fe_seconds": self.maps.fe_seconds,
                    "hand_seconds": self.maps.hand_seconds,
                    "interpolation_error": dict(self.interpolation),
                    "interpolation_uncertainty": dict(self.uncertainty)},
            "seconds": self.seconds,
        }


def run_motion(case: Case, axisymmetric: bool) -> MotionResult:
    """Both models' maps, limits and motions for a case with ``[motion]``.

    Raises RunError when an FE solve of the map does not converge, CaseError
    when the geometry refuses a stroke of the travel."""
    t0 = time.perf_counter()
    spec = case.motion
    from ..design.coremodel import core_model

    magnets = bool(core_model(case).magnets)
    if magnets:
        from .hand import magnet_sense

        if magnet_sense(case) < 0:  # the map's lambda would fall with i (GridMap refuses)
            raise CaseError("motion", "[motion]", "the case's magnet drives its flux against "
                            "a positive winding current; the motion's map takes the release "
                            "(reverse) current negative: not supported yet for this "
                            "orientation")
    strokes, currents = map_strokes(spec), map_currents(spec, magnets)
    cases = [case_at(case, spec.gap(s)) for s in strokes]
    th = time.perf_counter()
    tables = hand_maps(case, strokes, currents, cases)
    th = time.perf_counter() - th
    f, lam, solves, secs = fe_maps(case, strokes, currents, cases)
    tables["fe"] = (f, lam)
    if not axisymmetric:
        hf, hl = tables["hand"]
        h3f, h3l = tables["hand_3d"]
        with np.errstate(divide="ignore", invalid="ignore"):
            kf = np.where(hf != 0, h3f / hf, 1.0)
            kl = np.where(hl != 0, h3l / hl, 1.0)
        tables["fe_3d"] = (f * kf, lam * kl)
    square = not magnets
    maps = MotionMaps(strokes, currents, tables, solves, secs, th, spec.open_gap, square)
    models = {}
    for name in tables:
        try:
            models[name] = model_motion(name, maps.grid_map(name), spec, magnets=magnets)
        except MotionError as exc:
            raise RunError(f"motion ({name} map): {exc}") from None
    err = leave_one_out_error(strokes, currents, f, lam, spec.open_gap, square)
    unc = interpolation_uncertainty(maps.grid_map("fe"), spec, models["fe"], err)
    return MotionResult(maps, models, err, spec.rated_current, spec.coil_resistance,
                        time.perf_counter() - t0, unc)
