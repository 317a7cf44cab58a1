"""Force on a body: the weighted (volume) Maxwell stress over a layer of air.

A body is a set of regions.  With w the piecewise-linear function equal to 1
at the body's mesh vertices and 0 at every other vertex, the force on the
body is

    F = -int_layer T . grad w dV,   T = (B B^T - |B|^2 I / 2) / mu0,

over the one layer of elements that touch the body from outside (where
grad w != 0), which must be air or another non-magnetic, current-free
region.  This is the surface-stress integral spread over a volume, so it
does not depend on where a contour is drawn (Coulomb, "A methodology for
the determination of global electromechanical quantities from a finite
element analysis and its application to the evaluation of magnetic forces,
torques and stiffness", IEEE Trans. Magn. 19(6), 1983, pp. 2514-2519; in
the form of a weighted stress: e.g. Henrotte, Deliége, Hameyer, "The
eggshell method for the computation of electromagnetic forces on rigid
bodies in 2D and 3D", CEFC 2002 [from memory]).  Planar: the in-plane force
(N) for the stack depth; r-z: the axial force F_z (N).

Virtual work, the independent second method: the body is moved rigidly by
-/+ delta along a direction by moving every mesh node by delta w(x) (only
the layer's elements deform; topology and DOF numbering stay), the problem
is solved again at the same currents, and F = (W'(+) - W'(-)) / (2 delta),
W' the co-energy (Coulomb 1983: the virtual work principle, here as a
central difference).  W' is stationary at the solution, so the Newton
tolerance enters only to second order.  delta = 1e-3 x the mean size of
the layer's elements: the deformed elements keep their shape to 0.1 %, the
central difference's truncation error is ~1e-6 relative, and the co-energy
difference (~1e-5 of W') stays far above its round-off (~1e-14 of W').
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.constants import mu_0

from .errors import PostError

__all__ = ["BodyForce", "maxwell_force", "VirtualWorkForce", "virtual_work_force",
           "moved_mesh"]


@dataclass(frozen=True)
class BodyForce:
    """The force on a body (N): (F_x, F_y) planar, (0, F_z) r-z, and its layer."""

    body: tuple
    force: tuple
    layer_elements: int
    layer_regions: tuple


def _layer(sol, body: tuple):
    rm = sol.mesh
    t = rm.mesh.t[:3]
    names = rm.region_names
    for b in body:
        if b not in rm.subdomains or b in ("air", "exterior"):
            raise PostError(f"body: region {b!r} not in the layout")
    in_body = np.zeros(t.shape[1], dtype=bool)
    for b in body:
        in_body[rm.subdomains[b]] = True
    w = np.zeros(int(t.max()) + 1)  # vertices come first (curved meshes add edge nodes)
    w[np.unique(t[:, in_body])] = 1.0
    touched = (w[t].sum(axis=0) > 0) & ~in_body
    idx = np.nonzero(touched)[0]
    regions = tuple(sorted({names[i] for i in rm.element_region[idx]}))
    asm = sol.assembler
    for reg in regions:
        if reg == "exterior":
            raise PostError(f"body {list(body)}: it touches the open boundary's ring; enlarge "
                            "the air domain")
        law = _law_of(asm, rm, reg)
        nu0 = float(np.asarray(law.nu(np.zeros(1)))[0])
        if abs(nu0 * mu_0 - 1.0) > 1e-9 or reg in {m.region for m in asm.magnets}:
            raise PostError(f"body {list(body)}: region {reg!r} next to it is magnetic "
                            f"(mu_r = {1.0 / (nu0 * mu_0):.4g}); the stress layer must be air: "
                            "put the body's neighbours in the body, or leave air between them")

    for reg in regions:
        if reg in _carrying(sol):
            raise PostError(f"body {list(body)}: region {reg!r} next to it carries current; "
                            "the stress layer must be current-free air")
    return w, idx, regions


def _carrying(sol) -> set:
    """Regions of the coils that carry current in this solution."""
    out: set[str] = set()
    if sol.sources is not None:
        for c in sol.sources.coils:
            if sol.currents.get(c.name, 0.0) != 0.0:
                out.update(r for r, _ in c.regions)
    return out


def _law_of(asm, rm, region: str):
    el = rm.subdomains[region][0]
    for law, grp in zip(asm.laws, asm.groups):
        k = np.searchsorted(grp, el)
        if k < len(grp) and grp[k] == el:
            return law
    raise PostError(f"region {region!r}: no material law")  # pragma: no cover


def maxwell_force(sol, body) -> BodyForce:
    """The force (N) on ``body`` (a region name or names) by the weighted
    Maxwell stress over the air layer around it (module docstring)."""
    from skfem import Basis, ElementTriP1

    body = (body,) if isinstance(body, str) else tuple(body)
    asm = sol.assembler
    w, idx, regions = _layer(sol, body)
    if not len(idx):
        raise PostError(f"body {list(body)}: no layer of elements around it")
    rm = sol.mesh
    # the P1 function w at the assembler's quadrature points (same mesh map
    # and rule, so the points coincide)
    b1 = Basis(rm.mesh, ElementTriP1(), intorder=_intorder(asm), elements=idx)
    if not np.allclose(np.asarray(b1.global_coordinates()), asm.xq[:, idx], rtol=0,
                       atol=1e-12 * float(np.max(np.abs(asm.xq)))):  # pragma: no cover
        raise PostError("force: quadrature points of the weight and the field differ")
    gw = np.asarray(b1.interpolate(w).grad)  # (2, n, nq)
    g = asm.grad(sol.A)[:, idx]
    xq = asm.xq[:, idx]
    B = asm.formulation.b(g, xq)
    f = asm.formulation.stress_force_density(B, gw, xq)
    wv = asm.wv[idx]
    F = asm.formulation.total * np.sum(f * wv[None], axis=(1, 2))
    return BodyForce(body, (float(F[0]), float(F[1])), int(len(idx)), regions)


def _intorder(asm) -> int:
    from .assembly import _INTORDER

    return _INTORDER[asm.rmesh.order]


def moved_mesh(rmesh, w_vertices: np.ndarray, shift: tuple[float, float]):
    """The RegionMesh with every node moved by w(x) * shift (m): w given at
    the vertices, linear along the edges (edge nodes take their ends' mean)."""
    from dataclasses import replace

    m = rmesh.mesh
    t = m.t[:3]
    nv = int(t.max()) + 1
    wn = np.zeros(m.doflocs.shape[1])
    wn[:nv] = w_vertices[:nv]
    if m.doflocs.shape[1] > nv:  # quadratic geometry: the edge nodes
        from skfem import Basis, ElementTriP2

        dofs = np.asarray(Basis(m, ElementTriP2(), intorder=1).element_dofs)
        for k, (i, j) in enumerate(((0, 1), (1, 2), (0, 2))):
            wn[dofs[3 + k]] = 0.5 * (w_vertices[t[i]] + w_vertices[t[j]])
    moved = m.doflocs + wn[None, :] * np.asarray(shift, dtype=float)[:, None]
    return replace(rmesh, mesh=replace(m, doflocs=moved))


@dataclass(frozen=True)
class VirtualWorkForce:
    """dW'/dx (N) along ``direction`` by moving the body -/+ ``delta`` (m)."""

    body: tuple
    direction: tuple
    delta: float
    force: float
    coenergy_minus: float
    coenergy_plus: float
    iterations: tuple


def virtual_work_force(sol, body, direction=(0.0, 1.0), delta: float | None = None,
                       tol: float = 1e-11) -> VirtualWorkForce:
    """The force (N) on ``body`` along ``direction`` by virtual work (module
    docstring), from two solves with the body moved by -/+ delta, warm-started
    from ``sol`` (same materials, sources and currents).  In r-z the direction
    must be the axis, (0, 1) or (0, -1)."""
    from .solver import solve

    body = (body,) if isinstance(body, str) else tuple(body)
    w, idx, _ = _layer(sol, body)
    d = np.asarray(direction, dtype=float).reshape(2)
    n = float(np.linalg.norm(d))
    if not (np.isfinite(n) and n > 0):
        raise PostError(f"direction = {direction!r} must be a non-zero finite 2-vector")
    d = d / n
    asm = sol.assembler
    if asm.formulation.name == "axisymmetric" and abs(d[0]) > 0.0:
        raise PostError(f"direction = {direction!r}: an r-z body moves along the axis only")
    if delta is None:
        delta = 1e-3 * float(np.sqrt(np.mean(np.sum(asm.dx[idx], axis=1))))
    out, its = [], []
    for sign in (-1.0, 1.0):
        rm = moved_mesh(sol.mesh, w, (sign * delta * d[0], sign * delta * d[1]))
        s2 = solve(rm, sol.materials, sources=sol.sources, currents=sol.currents,
                   A0=sol.A, tol=tol, formulation=asm.formulation)
        from .post import coenergy

        out.append(coenergy(s2))
        its.append(s2.iterations)
    return VirtualWorkForce(body, (float(d[0]), float(d[1])), float(delta),
                            (out[1] - out[0]) / (2.0 * delta), out[0], out[1], tuple(its))
