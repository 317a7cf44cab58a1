"""Nonlinear planar magnetostatic A_z solver (Newton with energy line search).

Strong form: -div(nu(|grad A|^2) grad A) = J in the domain, A = A_D on
"outer"; B = curl(A e_z) = (dA/dy, -dA/dx).  A minimises the convex energy
W(A) = int w(|grad A|^2) dx - int J A dx, w(s) = 1/2 int_0^s nu(s') ds'
for a monotone B-H curve (Egger, Engertsberger, Radu, arXiv 2403.18520);
Newton steps use the consistent tangent nu I + 2 dnu/ds B B^T and an Armijo
backtracking line search on W.
"""
from __future__ import annotations

import logging
import time
from dataclasses import dataclass, field
from typing import Any, Callable

import numpy as np

from .assembly import Assembler
from .errors import ConvergenceError, SolverInputError
from .sources import Sources
from .linsolve import IterativeSolve, LinearSolverError, get_linear_solver, one_blas_thread
from .mesh import RegionMesh

__all__ = ["FieldSolution", "ConvergenceError", "SolverInputError", "solve", "dirichlet_values",
           "background_potential"]

logger = logging.getLogger(__name__)




@dataclass(frozen=True)
class FieldSolution:
    """Result of :func:`solve`.

    Attributes
    ----------
    A : ndarray, shape (ndofs,)
        Vector potential A_z at the DOFs, Wb/m (T m).
    basis : skfem.Basis
    mesh : RegionMesh
    converged : bool
    iterations : int
        Newton steps taken (linear solves).
    residual_history : tuple of float
        Relative residual ||r|| / ||b|| before each step and at the end.
    energy_history : tuple of float
        W(A) in J/m at each iterate.
    message : str
    materials : dict[str, Reluctivity]
    currents : dict[str, float]
        Current per coil (A per turn; with the default sources, per region).
    sources : fem2d.sources.Sources
    timings : dict
        Seconds: "mesh", "setup", "assemble", "linear", "total".
    ndofs : int
    """

    A: np.ndarray
    basis: Any
    mesh: RegionMesh
    converged: bool
    iterations: int
    residual_history: tuple
    energy_history: tuple
    message: str
    materials: dict
    currents: dict
    timings: dict
    ndofs: int
    assembler: Any = field(repr=False, compare=False, default=None)
    linear_solver: object = field(repr=False, compare=False, default=None)
    sources: Any = field(repr=False, compare=False, default=None)

    def raise_if_failed(self) -> "FieldSolution":
        """Raise :class:`ConvergenceError` with the message if not converged."""
        if not self.converged:
            raise ConvergenceError(self.message)
        return self


def dirichlet_values(basis, dofs: np.ndarray, boundary_potential: Callable | None) -> np.ndarray:
    """Values of A on the Dirichlet DOFs (the one place for the outer boundary condition).

    ``boundary_potential(x, y) -> A`` (Wb/m), vectorised over arrays; None
    gives A = 0 (flux-tight outer boundary).  An open-boundary treatment
    would replace this function.
    """
    if boundary_potential is None:
        return np.zeros(len(dofs))
    xy = basis.doflocs[:, dofs]
    vals = np.asarray(boundary_potential(xy[0], xy[1]), dtype=float)
    if vals.shape != (len(dofs),) or not np.all(np.isfinite(vals)):
        raise SolverInputError(f"boundary_potential returned shape {vals.shape} or non-finite values")
    return vals


def _line_search(asm, A, g, W, r, dA, c, exact=True):
    """Step length on phi(a) = W(A + a dA).

    grad(A + a dA) = g + a grad(dA) is linear in a, so each trial costs only
    pointwise law evaluations and quadrature sums: phi(a) = int w(s_a) dx -
    b.(A + a dA), phi'(a) = int nu(s_a) grad(A + a dA).grad(dA) dx - b.dA.
    The full Newton step is taken if it passes the Armijo test on the energy
    (and, when ``exact``, |phi'(1)| <= 0.5 |phi'(0)|); otherwise a safeguarded
    regula-falsi (Illinois) search for the minimiser of the convex phi ends
    when Armijo holds and |phi'| <= 0.5 |phi'(0)| (strong Wolfe-type test).

    Returns (ok, alpha, A_new, grad A_new, W_new).
    """
    I = asm.I
    wv, wk = asm.wv, asm.wk
    slope = float(r @ dA)  # phi'(0) < 0 for a descent direction
    dAf = np.zeros_like(A)
    dAf[I] = dA
    gd = asm.grad(dAf)
    bA, bd = float(asm.b @ A), float(asm.b @ dAf)
    # the open exterior's energy is quadratic in a: e0 + a e1 + a^2 e2
    e0, e1, e2 = asm.ext_quadratic(A, dAf)

    def state(a):
        ga = g + a * gd
        s = asm.s_of(ga)
        Wa = float(np.sum(asm.energy_density(s) * wv)) - bA - a * bd + e0 + a * e1 + a * a * e2
        return ga, s, Wa

    def dphi(a, ga, s):
        nu, _ = asm.coefficients(s, derivative=False)
        d = (float(np.sum(nu * (ga[0] * gd[0] + ga[1] * gd[1]) * wk)) - bd
             + e1 + 2.0 * a * e2)
        return d if np.isfinite(d) else np.inf

    def result(a, ga, Wa):
        An = A.copy()
        An[I] += a * dA
        return True, a, An, ga, Wa

    ga, sa, Wn = state(1.0)
    if asm.linear:
        return result(1.0, ga, Wn)
    scale = 1e-12 * (abs(W) + abs(bA) + 1e-300)
    if not slope < 0.0:
        # not a descent direction (round-off near the solution): accept if W does not rise
        ok = bool(np.isfinite(Wn) and Wn <= W + scale)
        return result(1.0, ga, Wn) if ok else (False, 0.0, A, g, W)
    full_ok = bool(np.isfinite(Wn) and Wn <= W + c * slope + scale)
    if full_ok and not exact:
        return result(1.0, ga, Wn)
    lo, d_lo = 0.0, slope
    hi, d_hi = 1.0, dphi(1.0, ga, sa) if np.isfinite(Wn) else np.inf
    if full_ok and abs(d_hi) <= 0.5 * abs(slope):
        return result(1.0, ga, Wn)
    best = (1.0, ga, Wn) if full_ok else None
    if full_ok and d_hi < 0:
        # the minimiser lies beyond the full step: extrapolate (at most 4x)
        a = 1.0
        while d_hi < 0 and a < 4.0:
            lo, d_lo = a, d_hi
            a *= 2.0
            ga2, sa2, W2 = state(a)
            if not (np.isfinite(W2) and W2 < best[2]):
                hi, d_hi = a, np.inf if not np.isfinite(W2) else dphi(a, ga2, sa2)
                break
            best = (a, ga2, W2)
            hi, d_hi = a, dphi(a, ga2, sa2)
        if d_hi < 0 or abs(d_hi) <= 0.5 * abs(slope):
            return result(*best)
    side = 0
    for _ in range(60):
        if np.isfinite(d_hi) and d_hi > 0:
            a = lo + (hi - lo) * d_lo / (d_lo - d_hi)  # regula falsi on phi'
            a = min(max(a, lo + 0.02 * (hi - lo)), hi - 0.02 * (hi - lo))
        else:
            a = lo + 0.1 * (hi - lo)  # phi' unknown (overflow): shrink quickly
        ga, sa, Wa = state(a)
        if not np.isfinite(Wa):
            hi, d_hi = a, np.inf
            continue
        d = dphi(a, ga, sa)
        armijo_ok = Wa <= W + c * a * slope + scale
        if armijo_ok and (best is None or Wa < best[2]):
            best = (a, ga, Wa)
        if armijo_ok and abs(d) <= 0.5 * abs(slope):
            return result(a, ga, Wa)
        if d < 0:
            lo, d_lo = a, d
            if side == -1:  # Illinois modification against one-sided stalls
                d_hi *= 0.5
            side = -1
        else:
            hi, d_hi = a, d
            if side == 1:
                d_lo *= 0.5
            side = 1
        if hi - lo < 1e-12:
            break
    if best is not None:
        return result(*best)
    return False, 0.0, A, g, W


def _residual_norm(asm, g, A) -> float:
    nu, _ = asm.coefficients(asm.s_of(g), derivative=False)
    return float(np.linalg.norm(asm.residual(g, nu, A)[asm.I]))


def background_potential(background, formulation) -> Callable:
    """Boundary potential of a uniform background field (fem2d.sources.Background)."""
    bx, by = background.b
    if formulation.name == "axisymmetric":
        if bx != 0.0:
            raise SolverInputError(f"background: B_r = {bx!r} T must be 0 in r-z "
                                   "(a uniform radial field is not axisymmetric)")
        return lambda r, z: 0.5 * by * r * r
    return lambda x, y: bx * y - by * x


def _load(asm, sources, cur: dict) -> np.ndarray:
    b = np.zeros(asm.ndofs)
    for c in sources.coils:
        if cur[c.name] != 0.0:
            b += cur[c.name] * asm.coil_load(c)
    return b


def solve(mesh: RegionMesh, materials: dict, *, currents: dict | None = None, tol: float = 1e-8,
          max_iter: int = 50, A0: np.ndarray | None = None, linear_solver=None,
          boundary_potential: Callable | None = None, check: bool = True,
          armijo: float = 1e-4, formulation=None, sources=None) -> FieldSolution:
    """Solve the nonlinear magnetostatic problem (planar or r-z) by damped Newton.

    Parameters
    ----------
    mesh : RegionMesh
    materials : dict[str, Reluctivity]
        Law per region ``material`` name; "air" defaults to mu_r = 1.
    sources : fem2d.sources.Sources, optional
        Coils, magnets and a background field.  Default: one one-turn coil
        per layout region, named after it, carrying the region's ``current``
        (``Sources.from_layout``).
    currents : dict[str, float], optional
        Current per coil name (A per turn); coils not named carry their
        default (0 for explicit coils).
    tol : float
        Stop when ||r_I|| / ||b_ref|| <= tol (r_I: residual on interior DOFs;
        b_ref: the load, or the boundary-driven residual at A_I = 0 if larger).
    max_iter : int
        Maximum Newton steps.
    A0 : ndarray, shape (ndofs,), optional
        Warm start on the same mesh (Dirichlet values are overwritten).
    linear_solver : str or callable, optional
        Registry name in :data:`fem2d.linsolve.SOLVERS` or a factory
        ``K_csr -> solve(rhs)``; default "auto" (fem2d.linsolve.Auto).
    boundary_potential : callable (x, y) -> A, optional
        Dirichlet data on "outer" (Wb/m); default A = 0.
    check : bool
        Raise :class:`ConvergenceError` if not converged (default); False
        returns the result with ``converged=False``.
    armijo : float
        Sufficient-decrease constant c in W(A + a dA) <= W(A) + c a r.dA.
    formulation : fem2d.formulation.Planar or Axisymmetric, optional
        Default: axisymmetric for an "rz-box" air domain, else planar with
        the layout's depth (fem2d.formulation.formulation_for).

    Returns
    -------
    FieldSolution
    """
    t_start = time.perf_counter()
    if not (tol > 0 and np.isfinite(tol)):
        raise SolverInputError(f"tol = {tol!r} must be finite and > 0")
    if not (isinstance(max_iter, int) and max_iter >= 1):
        raise SolverInputError(f"max_iter = {max_iter!r} must be an int >= 1")
    factory = get_linear_solver(linear_solver)
    if sources is None:
        sources = Sources.from_layout(mesh.layout)
    elif not isinstance(sources, Sources):
        raise SolverInputError(f"sources = {sources!r} must be a magcheck.fem2d.sources.Sources")
    cur = sources.currents(currents)
    asm = Assembler(mesh, materials, None, formulation, magnets=sources.magnets)
    asm.set_load(_load(asm, sources, cur))
    if sources.background is not None:
        if boundary_potential is not None:
            raise SolverInputError("background and boundary_potential are both given: pass one")
        if mesh.layout.air.open:
            raise SolverInputError("background: needs a closed air domain (air open = False); "
                                   "the open exterior has no field at infinity")
        boundary_potential = background_potential(sources.background, asm.formulation)
    t_setup = time.perf_counter() - t_start
    I, D = asm.I, asm.D
    A = np.zeros(asm.ndofs)
    if A0 is not None:
        A0 = np.asarray(A0, dtype=float)
        if A0.shape != (asm.ndofs,):
            raise SolverInputError(f"A0 shape {A0.shape} != ({asm.ndofs},) (same mesh needed)")
        A[:] = A0
    A[D] = dirichlet_values(asm.basis, D, boundary_potential)

    t_asm = t_lin = 0.0
    res_hist: list[float] = []
    en_hist: list[float] = []
    converged = False
    message = ""
    it = 0
    lin_solve = None
    with one_blas_thread(), np.errstate(over="ignore", invalid="ignore"):
        # reference norm: the load, or the boundary drive at A_I = 0
        Az = A.copy()
        Az[I] = 0.0
        gz = asm.grad(Az)
        nuz, _ = asm.coefficients(asm.s_of(gz), derivative=False)
        ref = max(float(np.linalg.norm(asm.b[I])), float(np.linalg.norm(asm.residual(gz, nuz, Az)[I])))
        if ref == 0.0:
            ref = 1.0
        g = asm.grad(A)
        W = asm.energy(g, A)
        while True:
            ta = time.perf_counter()
            s = asm.s_of(g)
            nu, dnu = asm.coefficients(s)
            r = asm.residual(g, nu, A)[I]
            t_asm += time.perf_counter() - ta
            rel = float(np.linalg.norm(r) / ref)
            res_hist.append(rel)
            en_hist.append(W)
            if not np.isfinite(rel):
                message = f"non-finite residual at iteration {it}"
                break
            if rel <= tol:
                converged = True
                message = f"converged: relative residual {rel:.3e} <= tol {tol:.1e} after {it} Newton steps"
                break
            if it >= max_iter:
                message = f"not converged: relative residual {rel:.3e} > tol {tol:.1e} after {it} Newton steps (max_iter)"
                break
            ta = time.perf_counter()
            K = asm.tangent(g, nu, None if asm.linear else dnu)
            t_asm += time.perf_counter() - ta
            tl = time.perf_counter()
            try:
                lin_solve = factory(K)
                if isinstance(lin_solve, IterativeSolve):
                    # inexact Newton: forcing term ~ current residual, floor at the solver's rtol;
                    # no tighter than needed to land under tol: the step leaves a linear
                    # residual of at most eta * rel = 0.3 tol (plus the quadratic remainder)
                    eta = min(1e-2, max(0.1 * rel, 0.3 * tol / rel)) if not asm.linear else None
                    dA = -lin_solve(r, rtol=eta)
                else:
                    dA = -np.asarray(lin_solve(r))
            except (LinearSolverError, RuntimeError, ArithmeticError) as exc:
                message = f"not converged: linear solve failed at Newton step {it + 1}: {exc}"
                break
            finally:
                t_lin += time.perf_counter() - tl
            if dA.shape != r.shape or not np.all(np.isfinite(dA)):
                message = f"not converged: linear solve returned shape {dA.shape} or non-finite values at Newton step {it + 1}"
                break
            it += 1
            ta = time.perf_counter()
            ok, alpha, An, gn, Wn = _line_search(asm, A, g, W, r, dA, armijo, exact=rel > 1e-3)
            if not ok and rel < 1e-2:
                # Near the solution the energy change of a Newton step can drop
                # below what the energy quadrature resolves (a law without an
                # exact energy(s) is integrated numerically); there the full
                # step is taken if it reduces the residual norm.
                An = A.copy()
                An[I] += dA
                gn = asm.grad(An)
                if _residual_norm(asm, gn, An) < float(np.linalg.norm(r)):
                    ok, alpha, Wn = True, 1.0, asm.energy(gn, An)
                    logger.debug("Newton %d: energy test unresolved, full step taken on residual decrease", it)
            t_asm += time.perf_counter() - ta
            if not ok:
                message = f"not converged: line search failed at Newton step {it} (relative residual {rel:.3e})"
                break
            logger.debug("Newton %d: rel. residual %.3e, step %.3g, W %.6e", it, rel, alpha, Wn)
            A, g, W = An, gn, Wn
    total = time.perf_counter() - t_start
    timings = {"mesh": mesh.timings.get("mesh", 0.0), "setup": t_setup, "assemble": t_asm,
               "linear": t_lin, "total": total}
    sol = FieldSolution(A=A, basis=asm.basis, mesh=mesh, converged=converged, iterations=it,
                        residual_history=tuple(res_hist), energy_history=tuple(en_hist),
                        message=message, materials=asm.materials, currents=cur, timings=timings,
                        ndofs=asm.ndofs, assembler=asm, linear_solver=factory,
                        sources=sources)
    if not converged:
        if check:  # the error carries the message: logged only at -v, not a second line
            logger.info(message)
            raise ConvergenceError(message)
        logger.warning(message)
    return sol
