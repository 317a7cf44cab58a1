"""The field model of a case: its layout, solved, reduced to quantities.

Turns a case's :class:`~compare.design.coremodel.CoreModel` (core parts, gaps, coil
sides; planar or r-z) into a :class:`fem2d.layout.Layout`, solves it with
fem2d, and measures, where the CoreModel says, the same
quantities the hand calculation gives, keyed alike (see
:data:`compare.models.hand.HAND_KEYS`). The FE's own discretisation error is
estimated from three meshes refined by REFINE = 1.5 in every direction
(:func:`uncertainty_rule`).
"""

from __future__ import annotations

import logging
import math
import time
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np

from magcheck.fem2d import post
from magcheck.fem2d.mesher import estimate_triangles
from magcheck.fem2d.layout import AirBox, Layout, MeshSettings
from magcheck.fem2d.mesh import RegionMesh, build_mesh
from magcheck.fem2d.solver import ConvergenceError, FieldSolution, solve
from magcheck.fem2d.sources import Coil, Sources

from ..design.case import Case
from ..errors import CaseError, RunError
from ..design.coremodel import COIL_MINUS, COIL_PLUS, WINDING, coil_name, coil_regions, core_model
from .hand import HAND_KEYS, sign_reference, signed

__all__ = ["FEQuantities", "FEResult", "case_layout", "mesh_case", "geometry_key", "solve_case",
           "solve_case_full", "FESolve",
           "run_fe", "run_fe_checked", "guard_mesh_size", "MAX_TRIANGLES",
           "COIL_PLUS", "COIL_MINUS", "WINDING", "coil_name", "coil_regions", "core_model"]

log = logging.getLogger(__name__)

def case_layout(case: Case, *, refine: float = 1.0) -> Layout:
    """The layout of a case (planar, or r-z for an axisymmetric core), from
    its :class:`~compare.design.coremodel.CoreModel`.

    Parameters
    ----------
    refine : float
        Mesh refinement factor: element sizes divided by ``refine`` and the
        elements across each gap multiplied by it, rounded up (1 = the case's
        mesh).
    """
    model = core_model(case)
    fe = case.fe
    kind = "rz-disk" if model.axisymmetric else "disk"
    air = (AirBox(kind, factor=fe.air_extent, open=True) if fe.boundary == "open"
           else AirBox("rz-box" if model.axisymmetric else "box", factor=fe.air_extent))
    from .acmesh import default_mesh_size, surface_sizes

    layout = Layout(model.regions, air=air,
                    mesh=MeshSettings(size=default_mesh_size(case),
                                      surface_sizes=surface_sizes(case, refine),
                                      gap_elements=math.ceil(case.fe.gap_elements * refine - 1e-9),
                                      order=case.fe.order),
                    depth=model.depth)
    if refine != 1:
        layout = replace(layout, mesh=replace(layout.mesh, size=layout.core_size() / refine))
    return layout


@dataclass(frozen=True)
class FEQuantities:
    """FE counterparts of the hand quantities (SI), plus FE-only figures."""

    values: dict[str, float]
    peak_B: float
    max_B: float
    peak_B_at: tuple[float, float]
    iterations: int
    residual: float
    ndofs: int
    nelements: int
    element_size: float
    seconds: float
    winding_values: dict[str, float] = field(default_factory=dict)
    """Per winding: flux linkage (Wb) and the incremental inductance matrix
    (H), under the flat keys of compare.models.hand.winding_keys."""
    magnet_values: dict[str, float] = field(default_factory=dict)
    """With a magnet, its first one's operating point along its
    magnetisation: ``magnet_B`` (T) and ``magnet_H`` (A/m) means over it, and
    ``magnet_H_min`` (A/m), the H exceeded downward on MAGNET_AREA_FRACTION
    of its area (the demagnetising extreme, an area quantile as for peak B)."""
    force_values: dict[str, float] = field(default_factory=dict)
    """With a moving part: ``force`` and ``force_maxwell`` (the weighted
    Maxwell stress, N along the closing stroke) and, on the finest mesh of
    a check, ``force_virtual_work`` (fem2d.force, two more solves)."""


@dataclass(frozen=True)
class FEResult:
    """The FE run of a case: values on the finer mesh and their uncertainty."""

    fine: FEQuantities
    coarse: FEQuantities | None
    uncertainty: dict[str, float]
    solution: FieldSolution = field(repr=False, compare=False)
    path: Any = field(repr=False, compare=False, default=None)
    solutions: tuple = field(repr=False, compare=False, default=())
    """An AC case (compare.models.ac): the static solutions of the three
    meshes, coarsest first (the operating points of its harmonic solves)."""

    @property
    def values(self) -> dict[str, float]:
        return self.fine.values


def _materials(case: Case) -> dict[str, Any]:
    """The FE's materials: a laminated core ([core] stacking = k_s < 1) as
    the equivalent homogeneous one, its polarisation scaled by k_s
    (B = mu0 H + k_s J(H): the iron's flux on k_s of the area, air between
    the sheets; exact for flux along the laminations)."""
    from magcheck.analytic.bh import scale_law

    def homogenised(law: Any) -> Any:
        return scale_law(law, k_b=case.stacking) if case.stacking != 1.0 else law

    return {key: homogenised(case.part_material(entry).law)
            for key, entry in core_model(case).materials}


PEAK_AREA_FRACTION = 0.005
"""Peak core B is the |B| exceeded on this fraction of the core's area."""


def core_b_quantile(sol: FieldSolution, fraction: float,
                    region: str | list[str] = "core") -> float:
    """The |B| (T) exceeded on ``fraction`` of the region's area.

    Used as the FE's peak core B: the pointwise maximum sits at a sharp inner
    corner, where the field of a planar model is singular and the maximum
    keeps growing as the mesh is refined; an area quantile converges and is
    what a designer means by the highest flux density in the core.
    """
    B = post.b_field(sol)
    idx = sol.mesh.elements_of(region)
    mag = np.sqrt(B[0][idx] ** 2 + B[1][idx] ** 2).ravel()
    w = np.asarray(sol.assembler.dx)[idx].ravel()
    order = np.argsort(mag)[::-1]
    cum = np.cumsum(w[order])
    k = int(np.searchsorted(cum, fraction * cum[-1]))
    return float(mag[order][min(k, len(order) - 1)])


def path_mean_core_b(samples: Any, cores: Any) -> float:
    """Core B as the hand model defines it: the mean |B| (T) along the mean
    path over its points in the core regions (arc-length mean: the path's
    samples are evenly spaced), the FE's counterpart of the hand's
    length-weighted mean of |B| over the path's branches (compare.models.hand.run_hand).

    A volume mean over the core would weigh each part by its volume (in r-z
    by its radius), a different quantity from the branch mean: an r-z core's
    outer parts, at large radius and low B, would pull it down.  NaN when
    the path meets no core region."""
    keep = np.isin(samples.region, list(cores))
    return float(np.mean(samples.b[keep])) if np.any(keep) else math.nan


def measure(case: Case, sol: FieldSolution, seconds: float,
            windings: bool = True) -> tuple[FEQuantities, Any, np.ndarray]:
    """Reduce a field solution to the hand quantities.

    Signs follow :func:`compare.models.hand.signed` (flux, flux linkage and gap B
    take the sign of the winding current, or with magnets point along the
    magnet's own direction; magnitudes and inductances are positive), the
    same convention as the hand model.

    Returns the quantities, the mean-path samples and dA/dI (the tangent
    solve of the incremental inductance, reused as a sweep predictor).
    ``windings=False`` skips the per-winding values of several windings (the
    inductance matrix: a tangent solve per winding); ``winding_values`` is
    then empty.
    """
    model = core_model(case)
    w = case.winding
    go, back = model.coils[0].go, model.coils[0].back
    vals: dict[str, float] = {}
    lam = post.flux_linkage(sol, w.turns, go, back)
    many = len(case.windings) > 1
    ref = sign_reference(case, lam)  # the sign reference (compare.models.hand.signed)
    if model.gap_region is not None:
        vals["gap_B"] = signed(post.region_mean_b(sol, model.gap_region,
                                                  direction=model.gap_direction), ref)
    else:
        vals["gap_B"] = math.nan
    cores = list(model.core_regions)
    samples = None
    if model.mean_path is not None:
        path = np.array(model.mean_path, dtype=float).T
        # the gaps' H and a magnet's own H are not the core's (the hand's path H is the iron's)
        samples = post.path_mean_h(sol, path, exclude=(*model.gap_regions,
                                                       *(m.region for m in model.magnets)))
        vals["path_H"] = samples.mean_h
        vals["core_B"] = path_mean_core_b(samples, cores)
    else:
        vals["path_H"] = math.nan
        vals["core_B"] = post.region_mean_b(sol, cores)
    if model.flux_line is not None:
        vals["flux"] = signed(post.flux_across(sol, *model.flux_line), ref)
    else:
        vals["flux"] = math.nan
    vals["flux_linkage"] = signed(lam, ref)
    if w.current == 0:
        vals["inductance"] = math.nan
    else:
        vals["inductance"] = lam / w.current if many else abs(lam / w.current)
    dA_dI = post.incremental_potential(sol, w.turns, go, back)
    vals["incremental_inductance"] = post.incremental_flux_linkage(sol, w.turns, go, back,
                                                                   dA=dA_dI)
    if w.current == 0:
        vals["inductance"] = vals["incremental_inductance"]
    vals["energy"] = post.energy(sol)
    wv = _winding_values(case, sol, vals) if windings else {}
    mv = _magnet_values(sol, model)
    fv = {}
    if model.force is not None:
        from magcheck.fem2d.force import maxwell_force

        from magcheck.fem2d.errors import PostError

        try:
            fx, fy = maxwell_force(sol, model.force.body).force
        except PostError as exc:  # the layer round the body is not free air
            raise CaseError("force.body", list(model.force.body),
                            f"{exc}: the moving part needs air all round it (its working "
                            "gaps, or air) to take the force on it") from None
        dx, dy = model.force.direction
        fv = {"force": fx * dx + fy * dy}
        fv["force_maxwell"] = fv["force"]
    peak, at = post.peak_b(sol, cores)
    # A laminated core is solved homogenised (_materials): its B is the
    # flux over the gross area. Core B and peak B are reported in the iron,
    # B / k_s (to within mu0 H (1 - k_s)/k_s, under 1e-3 T below 1 kA/m).
    k_s = case.stacking
    vals["core_B"] /= k_s
    q = FEQuantities(values=vals, peak_B=core_b_quantile(sol, PEAK_AREA_FRACTION, cores) / k_s,
                     max_B=float(peak) / k_s, peak_B_at=(float(at[0]), float(at[1])),
                     iterations=sol.iterations, residual=float(sol.residual_history[-1]),
                     ndofs=sol.ndofs, nelements=int(sol.mesh.mesh.t.shape[1]),
                     element_size=sol.mesh.layout.core_size(), seconds=seconds,
                     winding_values=wv, force_values=fv, magnet_values=mv)
    return q, samples, dA_dI


MAGNET_AREA_FRACTION = 0.005
"""The demagnetising extreme of a magnet is the H exceeded (downward) on this
fraction of its area: its pointwise minimum sits at a sharp corner, where
the 2D field is singular (as for peak B)."""


def _magnet_values(sol: FieldSolution, model: Any) -> dict[str, float]:
    """The first magnet's mean B and H along its magnetisation and its
    demagnetising extreme (FEQuantities.magnet_values); {} without magnets."""
    if not model.magnets:
        return {}
    m = model.magnets[0]
    d = np.asarray(m.remanence, dtype=float)
    d = d / np.linalg.norm(d)
    H = post.h_field(sol)
    idx = sol.mesh.elements_of(m.region)
    h = (d[0] * H[0][idx] + d[1] * H[1][idx]).ravel()
    w = np.asarray(sol.assembler.dx)[idx].ravel()
    order = np.argsort(h)
    cum = np.cumsum(w[order])
    k = int(np.searchsorted(cum, MAGNET_AREA_FRACTION * cum[-1]))
    return {"magnet_B": post.region_mean_b(sol, m.region, direction=tuple(d)),
            "magnet_H": post.region_mean_h(sol, m.region, tuple(d)),
            "magnet_H_min": float(h[order][min(k, len(order) - 1)])}


def _winding_values(case: Case, sol: FieldSolution, vals: dict[str, float]) -> dict[str, float]:
    """Per-winding flux linkages and the incremental inductance matrix, as
    flat keys (compare.models.hand.winding_keys); with one winding, its flux linkage
    and incremental inductance (no further solve)."""
    from .hand import winding_keys

    ws = case.windings
    lam_keys, l_keys = winding_keys(case)
    if len(ws) == 1:
        return {lam_keys[0]: vals["flux_linkage"], l_keys[0][0]: vals["incremental_inductance"]}
    im = post.inductance_matrix(sol)  # the coils in winding order (winding_sources)
    out = {lam_keys[j]: float(im.flux_linkage[j]) for j in range(len(ws))}
    out.update({l_keys[j][k]: float(im.incremental[j, k]) for j in range(len(ws))
                for k in range(len(ws))})
    return out


MAX_TRIANGLES = 2_000_000
"""Largest mesh meshed without ``allow_large``. At 300k P1 triangles the
engine took 28 s and 965 MiB on a 2-core machine (bench/fe_bench.py); 2
million is minutes and several GiB per solve, and the check solves a second
mesh with 2.25x the elements: almost always a unit slip in mesh_size."""


def guard_mesh_size(case: Case, *, refine: float = 1.0) -> int:
    """The estimated triangle count of the case's mesh; refuses a huge one.

    Raises
    ------
    CaseError
        Naming ``fe.gap_elements`` or ``fe.mesh_size`` (whichever drives the
        estimate), the estimate and the override, when the estimate exceeds
        MAX_TRIANGLES and ``case.fe.allow_large`` is off.
    """
    layout = case_layout(case, refine=refine)
    n = estimate_triangles(layout)
    log.info("mesh: core element size %.4g mm, %d elements across each gap, ~%d triangles "
             "estimated (refine %g)", layout.core_size() * 1e3, layout.mesh.gap_elements, n, refine)
    if n > MAX_TRIANGLES and not case.fe.allow_large:
        no_gap = replace(layout, mesh=replace(layout.mesh, gap_elements=1))
        gap_driven = estimate_triangles(no_gap) < 0.5 * n
        value: object
        if gap_driven:
            key, value = "fe.gap_elements", case.fe.gap_elements
        elif case.fe.mesh_size is not None:
            key, value = "fe.mesh_size", f"{case.fe.mesh_size * 1e3:.4g} mm"
        else:  # the default size: a quarter of the smallest part's smallest side
            key, value = "fe.mesh_size (default)", None
        driver = ""
        if not gap_driven:  # what the count scales with: (extent / element size)^2
            parts = [r for r in layout.regions if r.kind != "gap"] or list(layout.regions)
            small = min(parts, key=lambda r: r.feature())
            boxes = [r.bbox() for r in layout.regions]
            extent = max(max(b[2] for b in boxes) - min(b[0] for b in boxes),
                         max(b[3] for b in boxes) - min(b[1] for b in boxes))
            size = (f"the default element size {layout.core_size() * 1e3:.4g} mm is a quarter "
                    f"of region '{small.name}''s smallest side ({small.feature() * 1e3:.4g} mm)"
                    if case.fe.mesh_size is None else "")
            span = f"{extent:.4g} m" if extent >= 1.0 else f"{extent * 1e3:.4g} mm"
            driver = (f" (the parts span {span}" + (f"; {size}" if size else "")
                      + ": check those dimensions)")
        what = "the refined mesh of the uncertainty estimate" if refine != 1 else "the mesh"
        raise CaseError(key, value, f"{what} would have about {n:,} triangles (limit "
                                    f"{MAX_TRIANGLES:,}){driver}; coarsen it, or set [fe] "
                                    "allow_large = true (or --allow-large) to mesh it anyway")
    return n


def mesh_case(case: Case, *, refine: float = 1.0) -> RegionMesh:
    """Mesh a case's layout (gmsh), after `guard_mesh_size`. The mesh does not
    depend on the current, so sweeps over current reuse it (see :func:`geometry_key`)."""
    guard_mesh_size(case, refine=refine)
    mesh = build_mesh(case_layout(case, refine=refine))
    log.info("mesh: %d triangles", len(mesh.element_region))
    return mesh


def geometry_key(case: Case, refine: float = 1.0) -> Layout:
    """A hashable key equal for two cases whose meshes are the same: the
    layout itself (it holds no currents; the winding is a source)."""
    return case_layout(case, refine=refine)


def winding_sources(case: Case) -> Sources:
    """The case's windings as fem2d coils (CoreModel.coils, in winding order),
    and its permanent magnets."""
    model = core_model(case)
    # a winding drawn turn by turn: each region is one turn (turns=1 per region)
    return Sources(coils=tuple(Coil(coil_name(k), c.sides, turns=1 if c.turn_regions else w.turns)
                               for k, (w, c) in enumerate(zip(case.windings, model.coils))),
                   magnets=model.magnets)


def winding_currents(case: Case) -> dict[str, float]:
    """The coils' currents (A), by fem2d coil name."""
    return {coil_name(k): w.current for k, w in enumerate(case.windings)}


@dataclass(frozen=True)
class FESolve:
    """One FE solve of a case: quantities, field, path samples and dA/dI."""

    quantities: FEQuantities
    solution: FieldSolution
    path: Any
    dA_dI: np.ndarray


def solve_case_full(case: Case, mesh: RegionMesh, *, A0: np.ndarray | None = None,
                    linear_solver: Any = None, windings: bool = True) -> FESolve:
    """Solve a case on a ready mesh and measure it.

    The coil currents are taken from the case, not from the mesh's layout.
    ``linear_solver``: a fem2d.linsolve name or factory (a stateful one, such
    as fem2d.linsolve.DirectReuse, shared by solves on one mesh reuses its
    factorisation); ``windings``: see :func:`measure`.

    Raises
    ------
    RunError
        When the Newton solve does not converge (the message says how far it got).
    """
    t0 = time.perf_counter()
    try:
        sol = solve(mesh, _materials(case), sources=winding_sources(case),
                    currents=winding_currents(case), tol=case.fe.tol, A0=A0,
                    linear_solver=linear_solver)
    except ConvergenceError as exc:
        raise RunError(f"field solve did not converge: {exc}") from None
    q, samples, dA_dI = measure(case, sol, 0.0, windings=windings)
    q = replace(q, seconds=time.perf_counter() - t0 + mesh.timings.get("mesh", 0.0))
    log.info("FE solve: %d elements, %d DOFs, %d Newton steps, %.2f s",
             q.nelements, q.ndofs, q.iterations, q.seconds)
    return FESolve(q, sol, samples, dA_dI)


def solve_case(case: Case, mesh: RegionMesh, *, A0: np.ndarray | None = None,
               linear_solver: Any = None) -> tuple[FEQuantities, FieldSolution, Any]:
    """:func:`solve_case_full` as (quantities, solution, path samples)."""
    r = solve_case_full(case, mesh, A0=A0, linear_solver=linear_solver)
    return r.quantities, r.solution, r.path


def run_fe(case: Case, *, refine: float = 1.0, A0: np.ndarray | None = None,
           linear_solver: Any = None) -> tuple[FEQuantities, FieldSolution, Any]:
    """Mesh and solve a case once; returns (quantities, solution, path samples)."""
    return solve_case(case, mesh_case(case, refine=refine), A0=A0, linear_solver=linear_solver)


REFINE = 1.5
"""Element-size ratio between successive meshes of a check."""

SAFETY = 1.5
"""Factor of safety on the three-mesh uncertainty (see run_fe_checked)."""


def uncertainty_rule(q_coarse: float, q_mid: float, q_fine: float) -> float:
    """The FE uncertainty of ``q_fine`` from three meshes refined by REFINE.

    U = SAFETY x max(|Q_f - Q_m|, |Q_m - Q_c|) / (r - 1), r = REFINE: the
    Richardson estimate with the order taken as 1, on the larger of the two
    successive differences, with a factor of safety (between the 1.25 and 3
    of the grid convergence index for three and two grids; Roache,
    Verification and Validation in Computational Science and Engineering,
    1998, ch. 5 [from memory]).  The meshes are not nested, so a single
    difference can vanish by chance while the error does not (the demo
    choke's gap B: 20x under-estimated by the two-mesh rule); the larger of
    two differences and the factor 1.5 bounded the error on every quantity of
    five cases at two mesh levels each (tests/test_check.py).
    """
    vals = (q_coarse, q_mid, q_fine)
    if not all(math.isfinite(v) for v in vals):
        return math.nan
    return SAFETY * max(abs(q_fine - q_mid), abs(q_mid - q_coarse)) / (REFINE - 1.0)


def run_fe_checked(case: Case, *, estimate_error: bool = True) -> FEResult:
    """Solve on three meshes, the case's refined by 1/REFINE, 1 and REFINE,
    and report the finest with :func:`uncertainty_rule` as its uncertainty.

    The coarsest mesh costs 1/REFINE^2 = 0.44 of the case's; each solve is
    warm-started from the one before (the same answer to the Newton
    tolerance in fewer steps).
    """
    if not estimate_error:
        q, sol, samples = run_fe(case)
        q = _with_virtual_work(case, q, sol)
        return FEResult(q, None, {k: math.nan for k in (*HAND_KEYS, *q.winding_values,
                                                        *q.force_values, *q.magnet_values)},
                        sol, samples)
    guard_mesh_size(case, refine=REFINE)  # the finest mesh checked before any is made
    coarsest_mesh = mesh_case(case, refine=1.0 / REFINE)
    # the two finer meshes are made on the second core while the coarsest is
    # solved (gmsh runs outside the GIL; the meshes do not depend on the solve)
    with ThreadPoolExecutor(max_workers=1) as pool:
        later = pool.submit(lambda: (mesh_case(case), mesh_case(case, refine=REFINE)))
        coarsest, sol0, _ = solve_case(case, coarsest_mesh)
        mid_mesh, fine_mesh = later.result()
    coarse, coarse_sol, _ = solve_case(case, mid_mesh, A0=post.transfer(sol0, mid_mesh))
    fine, sol, samples = solve_case(case, fine_mesh, A0=post.transfer(coarse_sol, fine_mesh))
    unc = {k: uncertainty_rule(coarsest.values[k], coarse.values[k], fine.values[k])
           for k in HAND_KEYS}
    unc["peak_B"] = uncertainty_rule(coarsest.peak_B, coarse.peak_B, fine.peak_B)
    unc.update({k: uncertainty_rule(coarsest.winding_values[k], coarse.winding_values[k], v)
                for k, v in fine.winding_values.items()})
    unc.update({k: uncertainty_rule(coarsest.force_values[k], coarse.force_values[k], v)
                for k, v in fine.force_values.items()})
    unc.update({k: uncertainty_rule(coarsest.magnet_values[k], coarse.magnet_values[k], v)
                for k, v in fine.magnet_values.items()})
    fine = _with_virtual_work(case, fine, sol)
    unc["force_virtual_work"] = unc.get("force", math.nan)
    from .acmesh import has_ac

    # an AC winding or a loss budget (compare.models.loss) reads all three solutions
    keep = has_ac(case) or (case.loss is not None and case.core_loss is not None)
    return FEResult(fine, coarse, unc, sol, samples,
                    solutions=(sol0, coarse_sol, sol) if keep else ())


def _with_virtual_work(case: Case, q: FEQuantities, sol: FieldSolution) -> FEQuantities:
    """The quantities with the moving part's force by virtual work
    (fem2d.force.virtual_work_force: the independent second method, two
    solves with the body moved by -/+ delta); unchanged without one.  Its
    uncertainty is taken as the Maxwell stress's (the two agree to 1e-3 or
    better on the selftest's cases; the discretisation error is the mesh's)."""
    spec = core_model(case).force
    if spec is None:
        return q
    from magcheck.fem2d.force import virtual_work_force

    vw = virtual_work_force(sol, spec.body, spec.direction)
    return replace(q, force_values={**q.force_values, "force_virtual_work": float(vw.force)})
