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
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.constants import mu_0

from .errors import PostError

__all__ = ["BodyForce", "maxwell_force"]


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
