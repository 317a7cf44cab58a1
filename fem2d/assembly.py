"""Fast assembly of the magnetostatic problem into a fixed sparsity pattern.

Local element matrices come from one batched matrix product of basis
gradients weighted at the quadrature points; they are scattered into the
CSR data array of the interior-DOF matrix through a precomputed index
(``np.bincount``), so each Newton step reuses the same pattern.

Weak form (planar magnetostatics, A = A_z, B = (dA/dy, -dA/dx), |B| = |grad A|):
residual    r_i(A) = int nu(|grad A|^2) grad A . grad phi_i dx - int J phi_i dx
tangent     K_ij   = int grad phi_i . (nu I + 2 dnu/ds grad A grad A^T) grad phi_j dx
(Egger, Engertsberger, Radu, arXiv 2403.18520, the Newton linearisation of
the energy W(A) = int w(|grad A|^2) dx - int J A dx, w(s) = 1/2 int_0^s nu).
The axisymmetric form differs only in the weights (fem2d.formulation).

Magnets (linear recoil, H = nu (B - B_r)) add the constant load
int nu B_r . B(phi_i) dV to J's, so the energy stays convex with the same
Newton tangent.  The open exterior (fem2d.exterior) adds a constant matrix
on the ring's elements: its residual K A, its energy (1/2) A.K A.
"""
from __future__ import annotations

import weakref

import numpy as np
import scipy.sparse as sp
from skfem import Basis, ElementTriP1, ElementTriP2

from .errors import SolverInputError
from .materials import AIR, LinearReluctivity, MaterialError, energy_density
from .mesh import RegionMesh

__all__ = ["Assembler"]

#: quadrature degree per element order (see Assembler)
_INTORDER = {1: 1, 2: 4}

#: id(mesh) -> (weak reference to the mesh, {formulation: geometry}) (Assembler._geometry)
_GEOMETRY: dict[int, tuple[weakref.ref, dict]] = {}


class Assembler:
    """Precomputed quadrature data, materials and sparsity for one mesh.

    Parameters
    ----------
    rmesh : RegionMesh
    materials : dict[str, Reluctivity]
        Law per material name; "air" defaults to :data:`~fem2d.materials.AIR`.
    currents : dict[str, float], optional
        Total current per region name, A (ampere-turns): sets the load
        :attr:`b` (solve sets it from its coils with :meth:`set_load`).
    formulation : Planar or Axisymmetric, optional
    magnets : tuple of fem2d.sources.Magnet
        Their regions take the recoil law; their load is :attr:`b_magnets`.
    """

    def __init__(self, rmesh: RegionMesh, materials: dict, currents: dict | None = None,
                 formulation=None, magnets: tuple = ()):
        from .formulation import formulation_for

        self.rmesh = rmesh
        self.formulation = form = formulation if formulation is not None \
            else formulation_for(rmesh.layout)
        form.check(rmesh.layout)
        mesh_key = id(rmesh)
        cached = _GEOMETRY.get(mesh_key)
        if cached is None or cached[0]() is not rmesh:  # a new mesh (or a reused id)
            cached = (weakref.ref(rmesh, lambda _r: _GEOMETRY.pop(mesh_key, None)), {})
            _GEOMETRY[mesh_key] = cached
        geom = cached[1].get(form)
        if geom is None:
            geom = cached[1][form] = self._geometry(rmesh, form)
        self.__dict__.update(geom)
        self.shared = geom  # the mesh's cache: what a post-processor keeps per mesh goes here too
        G, nloc, ne, nq = self.G, self.nloc, self.ne, self.nq
        lay = rmesh.layout
        mat_of_region = {"air": "air"}
        if "exterior" in rmesh.subdomains:
            mat_of_region["exterior"] = "air"
        for r in lay.regions:
            mat_of_region[r.name] = r.material
        self.materials = dict(materials)
        self.materials.setdefault("air", AIR)
        for m in magnets:
            if m.region not in rmesh.subdomains or m.region in ("air", "exterior"):
                raise SolverInputError(f"magnet {m.region!r}: no such region "
                                       f"(have {[r.name for r in lay.regions]})")
            key = f"magnet:{m.region}"
            mat_of_region[m.region] = key
            self.materials[key] = LinearReluctivity(m.mu_r)
        laws, groups = [], []
        for mname in dict.fromkeys(mat_of_region.values()):
            if mname not in self.materials:
                regs = [r for r, m in mat_of_region.items() if m == mname]
                raise MaterialError(f"region {regs[0]!r}: material {mname!r} not in materials "
                                    f"(have {sorted(self.materials)})")
            idx = np.concatenate([rmesh.subdomains[r] for r, m in mat_of_region.items() if m == mname])
            laws.append(self.materials[mname])
            groups.append(np.sort(idx))
        self.laws, self.groups = laws, groups
        self.linear = all(self._is_linear(law) for law in laws)
        # magnets: remanence at the quadrature points and their constant load
        self.magnets = tuple(magnets)
        self.br = np.zeros((2, ne, nq))
        b_mag = np.zeros(self.ndofs)
        for m in self.magnets:
            idx = rmesh.subdomains[m.region]
            self.br[0, idx] = m.remanence[0]
            self.br[1, idx] = m.remanence[1]
            nu_m = float(self.materials[f"magnet:{m.region}"].nu(np.zeros(1))[0])
            xq = self.xq[:, idx]
            br = self.br[:, idx]
            loc = np.empty((nloc, len(idx)))
            for i in range(nloc):
                Bi = form.b(np.stack([G[idx, i, 0, :], G[idx, i, 1, :]]), xq)
                loc[i] = np.sum(nu_m * (br[0] * Bi[0] + br[1] * Bi[1]) * self.wv[idx], axis=1)
            b_mag += np.bincount(self.dofs[:, idx].ravel(), weights=loc.ravel(),
                                 minlength=self.ndofs)
        self.b_magnets = b_mag
        self.set_load(self.region_load(currents or {}))

    def _geometry(self, rmesh: RegionMesh, form) -> dict:
        """Everything that depends on the mesh and the formulation only (basis,
        quadrature, sparsity pattern, the exterior's matrices): computed once per
        mesh and formulation and shared, read-only, by every Assembler of that
        mesh (a curve of solves on one mesh set this up once per point before)."""
        keys0 = set(self.__dict__)
        lay = rmesh.layout
        elem = ElementTriP2() if rmesh.order == 2 else ElementTriP1()
        # quadrature: P1 gradients are constant per element, so one point is
        # exact for nu(|B|^2) grad.grad; P2 uses degree 4 (6 points): degree 2
        # keeps the O(h^2) rate too, but its errors vary less regularly under
        # refinement on curved cells (mesh-convergence estimates suffered)
        self.basis = basis = Basis(rmesh.mesh, elem, intorder=_INTORDER[rmesh.order])
        self.nloc = nloc = elem.refdom.nnodes if rmesh.order == 1 else 6
        self.ndofs = basis.N
        self.dofs = np.asarray(basis.element_dofs, dtype=np.int64)  # (nloc, ne)
        self.dx = np.asarray(basis.dx)  # (ne, nq), weights * |det J|, m^2
        ne, nq = self.dx.shape
        self.ne, self.nq = ne, nq
        # G[e, i, a*nq + q] = d phi_i / d x_a at quadrature point q of element e
        G = np.empty((ne, nloc, 2, nq))
        Phi = np.empty((nloc, ne, nq))
        for i in range(nloc):
            f = basis.basis[i][0]
            G[:, i, 0, :] = f.grad[0]
            G[:, i, 1, :] = f.grad[1]
            Phi[i] = np.asarray(f)
        self.G = G
        self.Gflat = G.reshape(ne, nloc, 2 * nq)
        self.phi_int = np.einsum("ieq,eq->ie", Phi, self.dx)  # (nloc, ne), m^2
        # the formulation's weights at the quadrature points (module
        # formulation): field scale f (|B| = f |grad u|), volume weight v,
        # stiffness weight f^2 v; None where they are 1 (planar)
        self.xq = np.asarray(basis.global_coordinates())  # (2, ne, nq)
        f = form.field_scale(self.xq)
        v = form.volume_weight(self.xq)
        self.f2 = None if f is None else f * f
        self.wv = self.dx if v is None else self.dx * v  # volume integrals
        self.wk = self.dx if self.f2 is None else self.dx * self.f2 * v  # stiffness
        self.Phi = Phi
        # region areas and material laws per element
        self.region_names = rmesh.region_names
        areas = {}
        for name, idx in rmesh.subdomains.items():
            areas[name] = float(self.dx[idx].sum())
        self.areas = areas
        # the open exterior's constant element matrices (fem2d.exterior)
        self.ext = None
        self.wv_geometric = self.wv  # volume weights including the exterior ring's
        if "exterior" in rmesh.subdomains:
            from .exterior import ring_tensor

            idx = rmesh.subdomains["exterior"]
            cx, cy, half = lay.air_geometry()
            T = ring_tensor(self.xq[:, idx], (cx, cy), half, 2.0 * half,
                            form.name == "axisymmetric")  # (2, 2, n, nq)
            Gx = G[idx]  # (n, nloc, 2, nq)
            Ke = np.einsum("eiaq,abeq,ejbq,eq->eij", Gx, T, Gx, self.dx[idx])
            self.ext = (idx, Ke)
            # the ring's ordinary weights are zero: its matrix is Ke
            self.wk = self.wk.copy()
            self.wv = self.wv.copy()
            self.wk[idx] = 0.0
            self.wv[idx] = 0.0
        # Dirichlet ("outer") and interior DOFs; reduced numbering
        self.D = basis.get_dofs(rmesh.boundaries["outer"]).all()
        mask = np.ones(self.ndofs, dtype=bool)
        mask[self.D] = False
        self.I = np.nonzero(mask)[0]
        red = np.full(self.ndofs, -1, dtype=np.int64)
        red[self.I] = np.arange(len(self.I))
        rows = np.broadcast_to(red[self.dofs][:, None, :], (nloc, nloc, ne))
        cols = np.broadcast_to(red[self.dofs][None, :, :], (nloc, nloc, ne))
        # flatten in the (e, i, j) order of the batched local matrices
        rows = np.ascontiguousarray(rows.transpose(2, 0, 1)).ravel()
        cols = np.ascontiguousarray(cols.transpose(2, 0, 1)).ravel()
        keep = (rows >= 0) & (cols >= 0)
        nI = len(self.I)
        keys = rows[keep] * nI + cols[keep]
        ukeys, inv = np.unique(keys, return_inverse=True)
        self.keep = keep
        self.scatter = inv
        self.nnz = len(ukeys)
        urows = ukeys // nI
        self.indices = (ukeys % nI).astype(np.int32)
        self.indptr = np.searchsorted(urows, np.arange(nI + 1)).astype(np.int32)
        self.nI = nI

        geom = {k: v for k, v in self.__dict__.items() if k not in keys0}
        for v in geom.values():
            if isinstance(v, np.ndarray):
                v.setflags(write=False)
        return geom

    # -------------------------------------------------------------- loads
    def region_load(self, ampere_turns: dict) -> np.ndarray:
        """Load vector int J phi_i dx of total currents (A) per region name."""
        Je = np.zeros(self.ne)
        for name, cur in ampere_turns.items():
            if cur != 0.0:
                if name not in self.rmesh.subdomains:
                    raise SolverInputError(f"currents: region {name!r} not in the mesh")
                Je[self.rmesh.subdomains[name]] += cur / self.areas[name]
        return np.bincount(self.dofs.ravel(), weights=(self.phi_int * Je).ravel(),
                           minlength=self.ndofs)

    def coil_load(self, coil) -> np.ndarray:
        """Load vector of a :class:`fem2d.sources.Coil` at 1 A (per turn)."""
        for r, _ in coil.regions:
            if r not in self.rmesh.subdomains or r in ("air", "exterior"):
                raise SolverInputError(f"coil {coil.name!r}: region {r!r} not in the layout")
        return self.region_load({r: s * coil.turns for r, s in coil.regions})

    def set_load(self, b_coils: np.ndarray) -> None:
        """Set the total load b = coils' + magnets' (full DOF vector)."""
        self.b_coils = b_coils
        self.b = b_coils + self.b_magnets

    # ------------------------------------------------------------ exterior
    def ext_quadratic(self, A: np.ndarray, dA: np.ndarray) -> tuple[float, float, float]:
        """Exterior energy E(A + a dA) = e0 + a e1 + a^2 e2: returns (e0, e1, e2)."""
        if self.ext is None:
            return 0.0, 0.0, 0.0
        idx, Ke = self.ext
        Ae = A[self.dofs[:, idx]]
        de = dA[self.dofs[:, idx]]
        KA = np.einsum("eij,je->ie", Ke, Ae)
        Kd = np.einsum("eij,je->ie", Ke, de)
        return (0.5 * float(np.sum(Ae * KA)), float(np.sum(de * KA)), 0.5 * float(np.sum(de * Kd)))

    def ext_energy(self, A: np.ndarray) -> float:
        """Field energy of the mapped exterior, (1/2) A.K A (per metre or per radian)."""
        if self.ext is None:
            return 0.0
        idx, Ke = self.ext
        Ae = A[self.dofs[:, idx]]
        return 0.5 * float(np.einsum("ie,eij,je->", Ae, Ke, Ae))

    @staticmethod
    def _is_linear(law) -> bool:
        probe = np.array([0.0, 0.01, 0.25, 1.0, 2.25, 4.0, 9.0])
        with np.errstate(all="ignore"):
            return bool(np.all(np.asarray(law.dnu_ds(probe)) == 0.0))

    # ------------------------------------------------------------------ fields
    def grad(self, A: np.ndarray) -> np.ndarray:
        """grad of the unknown at quadrature points, shape (2, ne, nq)."""
        Ae = A[self.dofs]  # (nloc, ne)
        return np.einsum("eiaq,ie->aeq", self.G, Ae)

    def s_of(self, g: np.ndarray) -> np.ndarray:
        """s = |B|^2 (T^2) at the quadrature points from the unknown's gradient."""
        s = g[0] ** 2 + g[1] ** 2
        return s if self.f2 is None else s * self.f2

    def b_at_qp(self, g: np.ndarray) -> np.ndarray:
        """B (T) at the quadrature points from the unknown's gradient, (2, ne, nq)."""
        return self.formulation.b(g, self.xq)

    def coefficients(self, s: np.ndarray, derivative: bool = True):
        """nu(s) and dnu/ds(s) at quadrature points, arrays (ne, nq)."""
        nu = np.empty_like(s)
        dnu = np.zeros_like(s)
        for law, idx in zip(self.laws, self.groups):
            si = s[idx]
            nu[idx] = law.nu(si)
            if derivative:
                dnu[idx] = law.dnu_ds(si)
        return nu, (dnu if derivative else None)

    def energy_density(self, s: np.ndarray) -> np.ndarray:
        """w(s) at quadrature points (ne, nq), J/m^3."""
        w = np.empty_like(s)
        for law, idx in zip(self.laws, self.groups):
            w[idx] = energy_density(law, s[idx])
        return w

    # ---------------------------------------------------------------- assembly
    def residual(self, g: np.ndarray, nu: np.ndarray, A: np.ndarray | None = None) -> np.ndarray:
        """Full residual vector r = F_int(A) - b, shape (ndofs,), A (per metre).

        ``g`` is grad A at the quadrature points; ``A`` itself is needed
        only for the open exterior's matrix."""
        c = nu * self.wk
        fl = np.einsum("eiaq,aeq->ie", self.G, g * c[None])
        if self.ext is not None:
            idx, Ke = self.ext
            if A is None:
                raise ValueError("residual: A is needed with the open exterior")
            fl[:, idx] += np.einsum("eij,je->ie", Ke, A[self.dofs[:, idx]])
        return np.bincount(self.dofs.ravel(), weights=fl.ravel(), minlength=self.ndofs) - self.b

    def tangent(self, g: np.ndarray, nu: np.ndarray, dnu: np.ndarray | None) -> sp.csr_matrix:
        """Interior-DOF tangent matrix K_II (CSR, fixed pattern), H^-1 per metre.

        K_e = X_e diag(w_e) X_e^T with the columns of X_e the basis gradient
        components d phi_i/dx_a at each quadrature point (weights nu dx) and,
        for a nonlinear law, G_i . grad A (weights 2 dnu/ds dx): one batched
        matrix product for all elements.
        """
        nq = self.nq
        c = nu * self.wk  # (ne, nq)
        if dnu is None or not np.any(dnu):
            X = self.Gflat
            W = np.concatenate([c, c], axis=1)  # (ne, 2nq)
        else:
            if not hasattr(self, "_X"):
                self._X = np.empty((self.ne, self.nloc, 3 * nq))
                self._X[:, :, :2 * nq] = self.Gflat
                self._W = np.empty((self.ne, 3 * nq))
            X, W = self._X, self._W
            G = self.G
            X[:, :, 2 * nq:] = G[:, :, 0, :] * g[0][:, None, :] + G[:, :, 1, :] * g[1][:, None, :]
            W[:, :nq] = c
            W[:, nq:2 * nq] = c
            W[:, 2 * nq:] = 2.0 * dnu * (self.wk if self.f2 is None else self.wk * self.f2)
        Ke = np.matmul(X * W[:, None, :], X.transpose(0, 2, 1))  # (ne, nloc, nloc)
        if self.ext is not None:
            Ke[self.ext[0]] += self.ext[1]
        data = np.bincount(self.scatter, weights=Ke.ravel()[self.keep], minlength=self.nnz)
        return sp.csr_matrix((data, self.indices, self.indptr), shape=(self.nI, self.nI))

    def energy(self, g: np.ndarray, A: np.ndarray) -> float:
        """W(A) = int w(|B|^2) (volume weight) dx - int J A dx (per metre, or per radian)."""
        return float(np.sum(self.energy_density(self.s_of(g)) * self.wv) - self.b @ A
                     + self.ext_energy(A))
