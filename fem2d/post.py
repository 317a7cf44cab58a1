"""Post-processing of a :class:`~fem2d.solver.FieldSolution`.

All functions are plain functions of the solution.  B is formed from the
unknown's gradient by the solution's formulation (fem2d.formulation:
planar A_z or axisymmetric u = r A_phi), and per-metre (per-radian)
integrals become totals through its ``total`` (the stack depth, or 2 pi);
volume means use its volume weight.  H = nu(|B|^2) B (A/m).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .layout import LayoutError
from .linsolve import IterativeSolve, one_blas_thread

__all__ = [
    "PostError",
    "b_field",
    "b_elements",
    "h_field",
    "region_mean_b",
    "region_mean_h",
    "peak_b",
    "sample_a",
    "sample_b",
    "transfer",
    "PathSamples",
    "path_mean_h",
    "flux_across",
    "flux_linkage",
    "energy",
    "coenergy",
    "source_work",
    "incremental_flux_linkage",
    "incremental_potential",
    "coil_flux_linkage",
    "InductanceMatrix",
    "inductance_matrix",
]


from .errors import PostError  # noqa: E402  (re-exported)


def _asm(sol):
    return sol.assembler


def _names(regions) -> list[str]:
    return [regions] if isinstance(regions, str) else list(regions)


def _elements(sol, regions) -> np.ndarray:
    try:
        return sol.mesh.elements_of(regions)
    except LayoutError as exc:
        raise PostError(str(exc)) from None


# ------------------------------------------------------------------ fields
def b_field(sol) -> np.ndarray:
    """B at the quadrature points, shape (2, n_elem, n_qp), T."""
    asm = _asm(sol)
    return asm.b_at_qp(asm.grad(sol.A))


def b_elements(sol) -> np.ndarray:
    """Volume-weighted element means of B, shape (2, n_elem), T (in the open
    boundary's "exterior" ring: of the mapped field, not a physical B)."""
    B = b_field(sol)
    dx = _asm(sol).wv_geometric
    return np.sum(B * dx, axis=2) / np.sum(dx, axis=1)


def h_field(sol) -> np.ndarray:
    """H = nu(|B|^2) B (in a magnet nu (B - B_r)) at the quadrature points,
    shape (2, n_elem, n_qp), A/m."""
    B = b_field(sol)
    asm = _asm(sol)
    nu, _ = asm.coefficients(B[0] ** 2 + B[1] ** 2, derivative=False)
    return nu * (B - asm.br)  # br: the magnets' remanence (0 elsewhere)


def region_mean_b(sol, region, direction=None) -> float:
    """Volume-weighted mean of B . direction over a region (or list), T.

    ``direction`` (2,) is normalised; None gives the mean of |B|.
    """
    idx = _elements(sol, region)
    B = b_field(sol)[:, idx]
    dx = _asm(sol).wv[idx]
    if direction is None:
        val = np.sqrt(B[0] ** 2 + B[1] ** 2)
    else:
        d = np.asarray(direction, dtype=float).reshape(2)
        n = np.linalg.norm(d)
        if not (np.isfinite(n) and n > 0):
            raise PostError(f"direction = {direction!r} must be a non-zero finite 2-vector")
        d = d / n
        val = d[0] * B[0] + d[1] * B[1]
    return float(np.sum(val * dx) / np.sum(dx))


def region_mean_h(sol, region, direction) -> float:
    """Volume-weighted mean of H . direction over a region (or list), A/m
    (in a magnet H = nu (B - B_r): its operating point with :func:`region_mean_b`)."""
    idx = _elements(sol, region)
    H = h_field(sol)[:, idx]
    dx = _asm(sol).wv[idx]
    d = np.asarray(direction, dtype=float).reshape(2)
    n = np.linalg.norm(d)
    if not (np.isfinite(n) and n > 0):
        raise PostError(f"direction = {direction!r} must be a non-zero finite 2-vector")
    d = d / n
    return float(np.sum((d[0] * H[0] + d[1] * H[1]) * dx) / np.sum(dx))


def _qp_coords(sol) -> np.ndarray:
    return _asm(sol).xq  # (2, ne, nq)


def peak_b(sol, regions) -> tuple[float, tuple[float, float]]:
    """Peak |B| (T) over the quadrature points of the regions, and its (x, y) (m)."""
    idx = _elements(sol, regions)
    B = b_field(sol)[:, idx]
    mag = np.sqrt(B[0] ** 2 + B[1] ** 2)
    k = np.unravel_index(np.argmax(mag), mag.shape)
    xy = _qp_coords(sol)[:, idx][:, k[0], k[1]]
    return float(mag[k]), (float(xy[0]), float(xy[1]))


# ----------------------------------------------------------- point probes
class _Locator:
    """Point location (k-d tree of element centroids, barycentric test on the
    straight-sided triangles, vectorised) with curved-element inverse mapping."""

    def __init__(self, asm):
        from scipy.spatial import cKDTree

        mesh = asm.rmesh.mesh
        self.elem = asm.basis.elem
        self.nloc = asm.nloc
        self.xk = asm.basis.doflocs[:, asm.dofs]  # (2, nloc, ne) geometry nodes
        self.dofs = asm.dofs
        p, t = mesh.p, mesh.t
        f2t = mesh.f2t
        self.nbr = np.where(f2t[0][mesh.t2f] == np.arange(t.shape[1]), f2t[1][mesh.t2f], f2t[0][mesh.t2f])
        c = p[:, t[:3]]  # (2, 3, ne) corners
        self.centroids = c.mean(axis=1)
        self.v0 = c[:, 0]
        J = np.stack([c[:, 1] - c[:, 0], c[:, 2] - c[:, 0]], axis=1)  # (2, 2, ne)
        self.invJ = np.linalg.inv(J.transpose(2, 0, 1))  # (ne, 2, 2)
        self._tree = cKDTree(self.centroids.T)
        self._memo: dict[tuple, tuple[np.ndarray, np.ndarray]] = {}

    def _find(self, x: np.ndarray) -> np.ndarray:
        """Index of a straight-sided triangle containing each point (2, n), or
        of the nearest centroid's where none does (-1 never returned)."""
        n = x.shape[1]
        out = np.full(n, -1, dtype=np.int64)
        todo = np.arange(n)
        ne = self.centroids.shape[1]
        for k in (8, 48, 256):
            if not len(todo):
                break
            k = min(k, ne)
            _, cand = self._tree.query(x[:, todo].T, k=k)
            cand = cand.reshape(len(todo), k)
            d = x[:, todo][:, :, None] - self.v0[:, cand]  # (2, m, k)
            iJ = self.invJ[cand]  # (m, k, 2, 2)
            lam = np.einsum("mkab,bmk->amk", iJ, d)
            viol = -np.minimum(np.minimum(lam[0], lam[1]), 1.0 - lam[0] - lam[1])  # (m, k)
            j = np.argmin(viol, axis=1)
            ok = viol[np.arange(len(todo)), j] <= 1e-10
            out[todo[ok]] = cand[np.arange(len(todo)), j][ok]
            if k == ne or not np.any(~ok):
                rest = todo[~ok]
                if len(rest):  # outside every straight cell: the nearest one
                    out[rest] = cand[~ok][np.arange(len(rest)), j[~ok]]
                todo = todo[:0]
                break
            todo = todo[~ok]
        if len(todo):
            _, near = self._tree.query(x[:, todo].T)
            out[todo] = near
        return out

    def _ref(self, X):
        phi = np.empty((self.nloc, X.shape[1]))
        dphi = np.empty((self.nloc, 2, X.shape[1]))
        for i in range(self.nloc):
            ph, dph = self.elem.lbasis(X, i)
            phi[i] = ph
            dphi[i] = dph
        return phi, dphi

    def inverse_map(self, x, tind):
        """Reference coordinates of points x (2, n) in elements tind, by Newton."""
        xk = self.xk[:, :, tind]  # (2, nloc, n)
        v = xk[:, :3]
        # affine initial guess from the corners
        J0 = np.stack([v[:, 1] - v[:, 0], v[:, 2] - v[:, 0]], axis=1)  # (2, 2, n)
        X = np.linalg.solve(J0.transpose(2, 0, 1), (x - v[:, 0]).T[..., None])[..., 0].T
        for _ in range(6 if self.nloc == 6 else 0):
            phi, dphi = self._ref(X)
            xx = np.einsum("akn,kn->an", xk, phi)
            J = np.einsum("akn,kbn->nab", xk, dphi)
            dX = np.linalg.solve(J, (x - xx).T[..., None])[..., 0].T
            X = X + dX
            if np.max(np.abs(dX)) < 1e-13:
                break
        return X

    @staticmethod
    def _outside(X, tol=1e-9):
        return -np.minimum(np.minimum(X[0], X[1]), 1.0 - X[0] - X[1]) > tol

    def locate(self, x, strict: bool = True):
        """Element index and reference coordinates of each point; raises if
        outside (``strict=False``: a point just outside a curved boundary
        keeps its nearest element, whose polynomial is extrapolated).

        The last few point sets located are kept (the same path is sampled
        on every solve of a mesh): the same points give the same answer
        without the search."""
        key = (x.shape, bool(strict), x.tobytes())
        hit = self._memo.get(key)
        if hit is not None:
            return hit[0].copy(), hit[1].copy()
        tind, X = self._locate(x, strict)
        if len(self._memo) >= 4:
            self._memo.pop(next(iter(self._memo)))
        self._memo[key] = (tind.copy(), X.copy())
        return tind, X

    def _locate(self, x, strict: bool):
        tind = self._find(x)
        X = self.inverse_map(x, tind)
        out = self._outside(X)
        if np.any(out):
            # curved edges: try the neighbours of the straight-sided guess
            bad = np.nonzero(out)[0]
            best = np.full(len(bad), np.inf)
            for k in range(3):
                nb = self.nbr[k, tind[bad]]
                ok = nb >= 0
                if not np.any(ok):
                    continue
                sel = bad[ok]
                Xn = self.inverse_map(x[:, sel], nb[ok])
                viol = -np.minimum(np.minimum(Xn[0], Xn[1]), 1.0 - Xn[0] - Xn[1])
                better = viol < best[ok]
                upd = sel[better]
                tind[upd] = nb[ok][better]
                X[:, upd] = Xn[:, better]
                tmp = best[ok]
                tmp[better] = viol[better]
                best[ok] = tmp
            still = self._outside(X, tol=1e-6)
            if strict and np.any(still):
                j = int(np.nonzero(still)[0][0])
                raise PostError(f"point ({x[0, j]!r}, {x[1, j]!r}) is outside the mesh")
        return tind, X

    def evaluate(self, A, x, strict: bool = True):
        """A (Wb/m) and grad A (T) at points x (2, n)."""
        tind, X = self.locate(x, strict)
        phi, dphi = self._ref(X)
        xk = self.xk[:, :, tind]
        J = np.einsum("akn,kbn->nab", xk, dphi)  # dx_a/dX_b
        Ak = A[self.dofs[:, tind]]  # (nloc, n)
        a = np.sum(Ak * phi, axis=0)
        dA_ref = np.einsum("kn,kbn->nb", Ak, dphi)
        gradA = np.linalg.solve(J.transpose(0, 2, 1), dA_ref[..., None])[..., 0].T
        return a, gradA, tind


def _locator(sol) -> _Locator:
    """The point locator of the solution's mesh: built once per mesh (it
    depends on the geometry only) and kept in the assembler's per-mesh cache,
    so every solve on that mesh (a sweep's points, a drive curve) shares it."""
    asm = _asm(sol)
    loc = asm.shared.get("_locator")
    if loc is None:
        loc = asm.shared["_locator"] = _Locator(asm)
    return loc


def _points(points) -> np.ndarray:
    x = np.asarray(points, dtype=float)
    if x.ndim == 1 and x.shape[0] == 2:
        x = x[:, None]
    if x.ndim != 2 or x.shape[0] != 2:
        raise PostError(f"points shape {x.shape} must be (2, n)")
    if not np.all(np.isfinite(x)):
        raise PostError("points contain non-finite values")
    return x


def sample_a(sol, points) -> np.ndarray:
    """A_z (Wb/m) at points, shape (2, n) -> (n,)."""
    a, _, _ = _locator(sol).evaluate(sol.A, _points(points))
    return a


def transfer(sol, mesh) -> np.ndarray:
    """A of ``sol`` interpolated onto the DOFs of another mesh of the same layout.

    Used as a warm start for a solve on a refined mesh (``solve(..., A0=...)``);
    every DOF location must lie inside the old mesh's domain.
    """
    from skfem import Basis, ElementTriP1, ElementTriP2

    elem = ElementTriP2() if mesh.order == 2 else ElementTriP1()
    doflocs = Basis(mesh.mesh, elem, intorder=1).doflocs
    # nodes of the new mesh's curved boundary may lie a hair outside the old
    # mesh's: extrapolate there (a warm start needs no more)
    a, _, _ = _locator(sol).evaluate(sol.A, _points(doflocs), strict=False)
    return a


def sample_b(sol, points) -> np.ndarray:
    """B (T) at points, shape (2, n) -> (2, n)."""
    x = _points(points)
    _, g, _ = _locator(sol).evaluate(sol.A, x)
    return _asm(sol).formulation.b(g, x)


@dataclass(frozen=True)
class PathSamples:
    """Samples along a path: mean |H| (A/m) over the kept points, and per point
    arc length s (m), |H| (A/m), |B| (T), region name and whether it was kept."""

    mean_h: float
    s: np.ndarray
    h: np.ndarray
    b: np.ndarray
    region: np.ndarray
    kept: np.ndarray


def path_mean_h(sol, polyline, exclude=(), n: int = 2000, closed: bool = False) -> PathSamples:
    """Mean |H| along a polyline by sampling n evenly spaced points.

    Parameters
    ----------
    polyline : array, shape (2, m)
        Vertices, m; ``closed=True`` joins the last vertex to the first.
    exclude : tuple of str
        Region names whose points are skipped (e.g. gaps).
    n : int
        Number of points (midpoints of n equal arc-length pieces).
    """
    P = _points(polyline)
    if P.shape[1] < 2:
        raise PostError(f"polyline needs >= 2 points, got {P.shape[1]}")
    if closed:
        P = np.hstack([P, P[:, :1]])
    names = set(sol.mesh.region_names)
    for e in _names(exclude):
        if e not in names:
            raise PostError(f"exclude: region {e!r} not in the mesh")
    seg = np.linalg.norm(np.diff(P, axis=1), axis=0)
    cum = np.concatenate([[0.0], np.cumsum(seg)])
    if cum[-1] <= 0:
        raise PostError("polyline has zero length")
    s = (np.arange(n) + 0.5) * cum[-1] / n
    x = np.vstack([np.interp(s, cum, P[0]), np.interp(s, cum, P[1])])
    _, g, tind = _locator(sol).evaluate(sol.A, x)
    bx = _asm(sol).formulation.b(g, x)
    b2 = bx[0] ** 2 + bx[1] ** 2
    reg_ids = sol.mesh.element_region[tind]
    nu = np.empty(n)
    asm = _asm(sol)
    for law, idx in zip(asm.laws, asm.groups):
        m = np.isin(tind, idx)
        nu[m] = law.nu(b2[m])
    b = np.sqrt(b2)
    h = nu * b
    region = np.asarray(sol.mesh.region_names, dtype=object)[reg_ids]
    kept = ~np.isin(region, list(_names(exclude)))
    mean_h = float(np.mean(h[kept])) if np.any(kept) else float("nan")
    return PathSamples(mean_h=mean_h, s=s, h=h, b=b, region=region, kept=kept)


# --------------------------------------------------------- global quantities
def flux_across(sol, p0, p1) -> float:
    """Flux (Wb) through the segment p0 -> p1: total * (A(p1) - A(p0)).

    Planar: depth * (A(p1) - A(p0)), positive along the normal n = (t_y,
    -t_x) (the segment's right-hand side), since B . n = dA/dl.
    Axisymmetric: 2 pi (u(p1) - u(p0)), the flux through the surface the
    segment sweeps round the axis (2 pi u is the flux inside radius r).
    """
    a = sample_a(sol, np.array([p0, p1], dtype=float).T)
    return float(_asm(sol).formulation.total * (a[1] - a[0]))


def _mean_over(sol, vec, regions):
    asm = _asm(sol)
    idx = _elements(sol, regions)
    integral = np.sum(asm.phi_int[:, idx] * vec[asm.dofs[:, idx]])
    return integral / np.sum(asm.dx[idx])


def flux_linkage(sol, turns: float, plus, minus) -> float:
    """Flux linkage lambda = N total (<A>_plus - <A>_minus) (Wb).

    <A> is the cross-section mean of the unknown over the coil-side
    region(s).  Planar: N depth (<A>+ - <A>-) (standard planar formula,
    docs/references.md section 5).  Axisymmetric: (N/S) int 2 pi u dS for a coil
    of cross-section S (``minus`` may be empty).
    """
    minus_mean = _mean_over(sol, sol.A, minus) if _names(minus) else 0.0
    return float(turns * _asm(sol).formulation.total
                 * (_mean_over(sol, sol.A, plus) - minus_mean))


def energy(sol) -> float:
    """Stored energy W = total * int w(|B|^2) dV, w = int_0^B H dB (J).

    With the open boundary the exterior's (air) energy is included.  In a
    magnet (B = mu H + B_r) the density is the recoil line's field energy
    mu |H|^2 / 2 = |B - B_r|^2 / (2 mu), measured from the magnet's own state
    (H = 0), as the magnetic circuit counts it (analytic.network.MagnetBranch).
    """
    asm = _asm(sol)
    g = asm.grad(sol.A)
    s = asm.s_of(g)
    w_dens = asm.energy_density(s)
    if asm.magnets:
        nu, _ = asm.coefficients(s, derivative=False)
        B = asm.b_at_qp(g)
        for m in asm.magnets:
            idx = sol.mesh.subdomains[m.region]
            d = B[:, idx] - asm.br[:, idx]
            w_dens[idx] = 0.5 * nu[idx] * (d[0] ** 2 + d[1] ** 2)
    return float(asm.formulation.total * (np.sum(w_dens * asm.wv) + asm.ext_energy(sol.A)))


def coenergy(sol) -> float:
    """Co-energy W' = total * int (int_0^H B dH) dV = total * int (nu s - w) dV (J).

    The open exterior is air, where co-energy equals energy.  In a magnet
    (B = mu H + B_r) the density is int_0^H B dH = mu |H|^2/2 + B_r . H with
    H = nu (B - B_r), so that dW'/dx at constant currents is the force on a
    moving part with magnets too.
    """
    asm = _asm(sol)
    g = asm.grad(sol.A)
    s = asm.s_of(g)
    nu, _ = asm.coefficients(s, derivative=False)
    dens = nu * s - asm.energy_density(s)
    if asm.magnets:
        B = asm.b_at_qp(g)
        for m in asm.magnets:
            idx = sol.mesh.subdomains[m.region]
            br = asm.br[:, idx]
            H = nu[idx] * (B[:, idx] - br)
            dens[idx] = 0.5 / nu[idx] * (H[0] ** 2 + H[1] ** 2) + br[0] * H[0] + br[1] * H[1]
    return float(asm.formulation.total * (np.sum(dens * asm.wv) + asm.ext_energy(sol.A)))


def source_work(sol) -> float:
    """total * int J A dV (J); equals W + W' at equilibrium with A = 0 on "outer"."""
    return float(_asm(sol).formulation.total * (_asm(sol).b @ sol.A))


def incremental_potential(sol, turns: float, plus, minus) -> np.ndarray:
    """dA/dI (Wb/(m A)) at the converged state by one tangent solve.

    The coil currents are taken as J = +N I / area on ``plus`` and -N I / area
    on ``minus``; K(A*) dA/dI = db/dI with the consistent tangent K at the
    converged A* (no finite differences). Shape (ndofs,), zero on "outer".
    Serves both the incremental inductance and a Newton predictor for the
    next point of a current sweep.
    """
    asm = _asm(sol)
    if not sol.converged:
        raise PostError("incremental_potential needs a converged solution")
    db_loc = np.zeros_like(asm.phi_int)
    for regs, sign in ((plus, 1.0), (minus, -1.0)):
        if not _names(regs):
            continue
        idx = _elements(sol, regs)
        area = float(np.sum(asm.dx[idx]))
        db_loc[:, idx] += sign * turns / area * asm.phi_int[:, idx]
    db = np.bincount(asm.dofs.ravel(), weights=db_loc.ravel(), minlength=asm.ndofs)
    # 1e-9 relative: d lambda/dI to ~1e-9, far below any discretisation
    # error, at about half the CG work of 1e-12.
    return _tangent_solver(sol)(db, 1e-9)


def _tangent_solver(sol):
    """solve(db, rtol) -> dA: the consistent tangent at the converged state,
    assembled and factorised (or preconditioned) once, applied to full-size
    load increments; dA is zero on the Dirichlet DOFs."""
    asm = _asm(sol)
    # One thread for the pip-bundled BLAS, as in the Newton loop: threaded
    # BLAS inside the AMG setup made one solve ~10x slower on 2 cores.
    with one_blas_thread():
        g = asm.grad(sol.A)
        nu, dnu = asm.coefficients(asm.s_of(g))
        K = asm.tangent(g, nu, None if asm.linear else dnu)
        solve_k = sol.linear_solver(K)

    def apply(db: np.ndarray, rtol: float) -> np.ndarray:
        dA = np.zeros(asm.ndofs)
        with one_blas_thread():
            if isinstance(solve_k, IterativeSolve):
                dA[asm.I] = solve_k(db[asm.I], rtol=rtol)
            else:
                dA[asm.I] = solve_k(db[asm.I])
        return dA

    return apply


def incremental_flux_linkage(sol, turns: float, plus, minus, dA: np.ndarray | None = None) -> float:
    """Incremental inductance d lambda / dI (H) by one tangent solve.

    d lambda/dI = N total (<dA/dI>_plus - <dA/dI>_minus), with dA/dI from
    :func:`incremental_potential` (pass ``dA`` if it is already computed).
    """
    if dA is None:
        dA = incremental_potential(sol, turns, plus, minus)
    minus_mean = _mean_over(sol, dA, minus) if _names(minus) else 0.0
    return float(turns * _asm(sol).formulation.total * (_mean_over(sol, dA, plus) - minus_mean))


# ------------------------------------------------------------- several coils
def _coil_linkage(sol, coil, vec: np.ndarray) -> float:
    """N total sum_k sign_k <vec>_region_k for a fem2d.sources.Coil."""
    total = _asm(sol).formulation.total
    return float(coil.turns * total * sum(sign * _mean_over(sol, vec, reg)
                                          for reg, sign in coil.regions))


def _coils(sol, coils):
    if coils is None:
        if sol.sources is None:
            raise PostError("the solution carries no sources: pass coils")
        return tuple(sol.sources.coils)
    return tuple(coils)


def coil_flux_linkage(sol, coil) -> float:
    """Flux linkage (Wb) of a coil (fem2d.sources.Coil or its name):
    N total sum over its regions of sign x the region's mean unknown."""
    if isinstance(coil, str):
        coil = sol.sources.coil(coil)
    return _coil_linkage(sol, coil, sol.A)


@dataclass(frozen=True)
class InductanceMatrix:
    """Flux linkages and inductances of several coils at one operating point.

    Attributes
    ----------
    names : tuple of str
        Coil names, the order of rows and columns.
    flux_linkage : ndarray (C,)
        lambda_j (Wb).
    incremental : ndarray (C, C)
        L_jk = d lambda_j / d I_k (H) at the operating point (one tangent
        solve per coil; symmetric, as the tangent is).
    secant : ndarray (C,)
        lambda_j / I_j (H) for coils that carry current (nan otherwise); the
        self inductance when only coil j is excited.
    coupling : ndarray (C, C)
        k_jk = L_jk / sqrt(L_jj L_kk) from the incremental matrix.
    energy, coenergy : float
        W and W' of the field (J).
    """

    names: tuple
    flux_linkage: np.ndarray
    incremental: np.ndarray
    secant: np.ndarray
    coupling: np.ndarray
    energy: float
    coenergy: float


def inductance_matrix(sol, coils=None) -> InductanceMatrix:
    """The coils' flux linkages and incremental inductance matrix.

    L_jk = d lambda_j / d I_k from K(A*) dA/dI_k = db/dI_k, with the
    consistent Newton tangent K at the converged state (one factorisation
    or preconditioner set-up, one solve per coil).  Default coils: those of
    the solution's sources.
    """
    asm = _asm(sol)
    if not sol.converged:
        raise PostError("inductance_matrix needs a converged solution")
    coils = _coils(sol, coils)
    if not coils:
        raise PostError("inductance_matrix: no coils")
    C = len(coils)
    L = np.zeros((C, C))
    solve_t = _tangent_solver(sol)
    for k, ck in enumerate(coils):
        dA = solve_t(asm.coil_load(ck), 1e-11)  # 1e-11: symmetric to ~1e-10
        for j, cj in enumerate(coils):
            L[j, k] = _coil_linkage(sol, cj, dA)
    lam = np.array([_coil_linkage(sol, c, sol.A) for c in coils])
    cur = sol.currents
    sec = np.array([lam[j] / cur[c.name] if cur.get(c.name, 0.0) != 0.0 else np.nan
                    for j, c in enumerate(coils)])
    d = np.sqrt(np.abs(np.diag(L)))
    kc = L / np.outer(d, d)
    return InductanceMatrix(tuple(c.name for c in coils), lam, L, sec, kc, energy(sol),
                            coenergy(sol))


def coil_incremental_potential(sol, coil) -> tuple[np.ndarray, float]:
    """(dA/dI, d lambda/dI) of one coil (a fem2d.sources.Coil or its name) at the converged
    state: one solve with the consistent tangent K(A*) dA/dI = db/dI (the coil's load at 1 A),
    and the coil's own incremental inductance (H) from it. dA/dI in Wb/(m A) (r-z: the
    unknown's unit per ampere), zero on the Dirichlet DOFs."""
    if isinstance(coil, str):
        coil = sol.sources.coil(coil)
    if not sol.converged:
        raise PostError("coil_incremental_potential needs a converged solution")
    dA = _tangent_solver(sol)(_asm(sol).coil_load(coil), 1e-10)
    return dA, _coil_linkage(sol, coil, dA)


def b_of_potential(sol, vec: np.ndarray) -> np.ndarray:
    """B (T) of any potential vector ``vec`` on the solution's mesh (e.g. dA/dI: dB/dI), at
    the quadrature points, shape (2, n_elem, n_qp)."""
    asm = _asm(sol)
    return asm.b_at_qp(asm.grad(vec))
