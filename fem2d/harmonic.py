"""Time-harmonic eddy-current solve (sinusoidal steady state), planar and r-z.

Every field is a complex phasor X with x(t) = Re(X e^{j w t}) (w = 2 pi f,
rad/s); amplitudes are peak values, so time-average powers carry 1/2.

Equations (the static forms of fem2d.formulation with the conductors'
current added; Meunier (ed.), *The Finite Element Method for
Electromagnetic Modeling*, Wiley/ISTE 2008, chapters on 2D magnetodynamics
[from memory]; docs/references.md section 12):

planar, unknown A = A_z (Wb/m):
    int nu grad A . grad v dx = int J v dx,
    J = sigma (-j w A + E_c) in solid conductor c (E_c: its voltage per metre, V/m),
r-z, unknown u = r A_phi (Wb/rad):
    int (nu / r) grad u . grad v dr dz = int J v dr dz,
    J_phi = sigma (-j w A_phi + V_c / (2 pi r)) = (sigma / r) (-j w u + e_c),
    e_c = V_c / (2 pi) the turn's voltage per radian (V).
Both are J = sigma m(x) (-j w u + e_c) with m = Formulation.eddy_weight
(1 planar, 1/r in r-z), and the turn's voltage is V_c = total x e_c
(total = the stack depth, or 2 pi).  The conductor's total current is
    I_c = int_c J dx = -j w b_c . u + G_c e_c,
    b_c,i = int_c sigma m phi_i dx,   G_c = int_c sigma m dx,
one extra unknown e_c and one extra row per solid conductor: a bordered
sparse system, solved by SuperLU (complex) on the field block with the
conductors reduced to their Schur complement (HarmonicProblem._factorise).  The turns of a winding
(:class:`SolidWinding`) are in series: each carries sign x the winding's
current, and the winding's voltage is the sum of sign x V_c.  Stranded
coils (fem2d.sources.Coil) carry their uniform J as in the static solve,
with no eddy current (homogenised).  A conducting region outside every
winding is passive: planar, a bar whose ends close the current out of the
plane (net current 0, its E a free unknown); r-z, a closed ring (V = 0).

Around a DC operating point (``operating_point``: a converged static
FieldSolution on the same mesh) the magnetic operator is the static
Newton tangent at the DC state, nu I + 2 (dnu/ds) B0 B0^T (fem2d.assembly:
the differential reluctivity, anisotropic in saturation).  For a small
ripple b about B0, H(B0 + b) = H(B0) + (dH/dB)|B0 b + O(|b|^2), so the
ripple obeys the linear problem with that tangent plus j w times the
conductivity mass matrix (first-order Taylor expansion, i.e. small-signal
linearisation [derived]; the tangent is the Newton linearisation of the
static energy, Egger, Engertsberger, Radu, arXiv 2403.18520).  Limits:
small ripple (the second-order terms, harmonics of the ripple and its
shift of the DC point, are dropped); no hysteresis (the DC curve is
single-valued, so minor loops and their loss are not modelled);
laminated cores carry no eddy current here (give them no conductivity).
At zero bias with linear materials it is the ordinary linear eddy-current
problem; with no operating point the tangent is taken at B = 0.
"""
from __future__ import annotations

import logging
import math
import time
from dataclasses import dataclass, field
from typing import Any, Callable

import numpy as np
import scipy.sparse as sp
from scipy.constants import mu_0
from scipy.sparse.linalg import splu

from .assembly import Assembler
from .errors import PostError, SolverInputError, finite_number
from .layout import MeshSettings
from .linsolve import one_blas_thread
from .mesh import RegionMesh
from .sources import Background, Coil

__all__ = ["SolidWinding", "HarmonicProblem", "HarmonicSolution", "WindingImpedance",
           "ImpedanceMatrix", "harmonic_solve", "full_tangent", "current_density", "b_field",
           "loss_density", "region_loss", "winding_loss", "conductor_losses", "total_loss",
           "magnetic_energy", "winding_impedance", "impedance_matrix", "skin_depth", "surface_mesh_size",
           "mesh_settings_for", "size_over_skin_depth", "vtu_mesh", "write_vtu",
           "factorisation_bytes", "guard_factorisation", "MAX_FACTOR_BYTES"]

logger = logging.getLogger(__name__)


# ------------------------------------------------------------------ skin depth
def skin_depth(frequency: float, conductivity: float, mu_r: float = 1.0) -> float:
    """Skin depth delta = sqrt(2 / (w mu sigma)) (m); w = 2 pi f, f in Hz, sigma
    in S/m (the 1D plane-wave decay length in a good conductor, e.g. Ramo,
    Whinnery, Van Duzer, *Fields and Waves*, from memory; also docs/references.md
    section 12).  Infinite at f = 0."""
    f = finite_number("frequency", frequency, SolverInputError)
    s = finite_number("conductivity", conductivity, SolverInputError)
    if f < 0 or s <= 0 or not mu_r > 0:
        raise SolverInputError(f"skin_depth: frequency = {frequency!r} Hz must be >= 0, "
                               f"conductivity = {conductivity!r} S/m and mu_r = {mu_r!r} > 0")
    if f == 0.0:
        return math.inf
    return math.sqrt(2.0 / (2.0 * math.pi * f * mu_0 * mu_r * s))


MAX_SIZE_OVER_DELTA = 1.0
"""Largest :func:`size_over_skin_depth` before the solve logs a warning: the
isolated wire at a/delta = 10 measures 0.93 with elements delta (R within
1.5e-3 of the Bessel value) and 0.57 with delta/2 (1e-4)."""

SURFACE_ELEMENTS_PER_DEPTH = 2.0
"""P2 elements per skin depth at a conductor's surface by default: with the
curved P2 field, delta/2 keeps the isolated wire's R and internal L within
1e-3 of the Bessel solution up to a/delta = 10 (tests/test_harmonic.py)."""


def surface_mesh_size(frequency: float, conductivity: float, mu_r: float = 1.0,
                      per_depth: float = SURFACE_ELEMENTS_PER_DEPTH) -> float:
    """Element size (m) at a conductor surface for the highest frequency of a
    study: delta / per_depth (the current decays as exp(-x/delta) inward, so
    the size is tied to delta; common practice, no source).  Infinite at f = 0."""
    if not per_depth > 0:
        raise SolverInputError(f"per_depth = {per_depth!r} must be > 0")
    return skin_depth(frequency, conductivity, mu_r) / per_depth


SURFACE_BAND_DEPTHS = 3.0
"""Width of the fine band on each side of a conductor's surface, in skin
depths: the current density falls to e^-3 = 5 % over it."""


def mesh_settings_for(settings: MeshSettings, conductivity: dict, frequency: float,
                      per_depth: float = SURFACE_ELEMENTS_PER_DEPTH,
                      band_depths: float = SURFACE_BAND_DEPTHS) -> MeshSettings:
    """A copy of ``settings`` with a surface refinement (MeshSettings.surface_sizes)
    on every conducting region: elements delta/per_depth within band_depths x
    delta of its boundary at ``frequency`` (the highest of a study), graded to
    the region size beyond.  Regions already listed keep the finer entry."""
    from dataclasses import replace

    if frequency <= 0:
        return settings
    out = {name: (size, band) for name, size, band in settings.surface_sizes}
    for name, s in conductivity.items():
        if s <= 0:
            continue
        d = skin_depth(frequency, s)
        size, band = d / per_depth, band_depths * d
        if name in out and out[name][0] <= size:
            continue
        out[name] = (size, band)
    return replace(settings, surface_sizes=tuple((n, sz, b) for n, (sz, b) in out.items()))


def size_over_skin_depth(rmesh: RegionMesh, conductivity: dict, frequency: float) -> float:
    """The mesh guard's measure (0 if nothing conducts or f = 0): the largest
    (element edge / delta) x exp(-d / delta) over the conducting regions' elements,
    d the distance of the element's centroid from the region's boundary (facet
    midpoints): the current density decays as exp(-d/delta) inward, so a coarse
    element deep inside a thick conductor does not count.  Above ~1 the surface
    current is under-resolved.  delta with mu_r = 1: a conducting iron part's
    own delta is sqrt(mu_r) smaller."""
    from scipy.spatial import cKDTree

    worst = 0.0
    m = rmesh.mesh
    p, t = m.p, m.t
    reg = np.asarray(rmesh.element_region)
    f2t = m.f2t
    mid = 0.5 * (p[:, m.facets[0]] + p[:, m.facets[1]])
    for name, s in conductivity.items():
        if s <= 0 or frequency <= 0 or name not in rmesh.subdomains:
            continue
        d = skin_depth(frequency, s)
        idx = rmesh.subdomains[name]
        inside = np.zeros(t.shape[1] + 1, dtype=bool)  # index -1: outside the mesh
        inside[idx] = True
        edge = inside[f2t[0]] != inside[f2t[1]]
        c = p[:, t[:3, idx]]  # (2, 3, n)
        h = np.max([np.hypot(*(c[:, i] - c[:, (i + 1) % 3])) for i in range(3)], axis=0)
        dist, _ = cKDTree(mid[:, edge].T).query(c.mean(axis=1).T)
        worst = max(worst, float(np.max(h / d * np.exp(-dist / d))))
    return worst


MAX_FACTOR_BYTES = 6.0e9
"""Largest memory the complex factorisation may take (bytes) by
:func:`factorisation_bytes`; above it :func:`guard_factorisation` refuses
before SuperLU starts (the machine's memory ran out at 500 kHz on the foil
choke with the whole bordered system factorised, > 7.6 GB)."""


def factorisation_bytes(unknowns: int, conductors: int = 0) -> float:
    """Estimated memory (bytes) of the harmonic factorisation: the L and U
    factors of a 2D P2 field block of ``unknowns`` under minimum-degree
    ordering hold about 7 n log2 n complex entries (measured: 5.9 M at 74.6k
    unknowns, 7.1 M at 71.7k on the foil choke's meshes; nested dissection's
    O(n log n) fill for a 2D mesh, George 1973, from memory), at 16 bytes a
    value and 4 an index, doubled for SuperLU's working storage; plus the
    conductors' dense columns Z^-1 B (16 bytes each entry)."""
    n = max(int(unknowns), 2)
    return 2.0 * 20.0 * 7.0 * n * math.log2(n) + 16.0 * n * max(int(conductors), 0)


def guard_factorisation(unknowns: int, conductors: int = 0) -> None:
    """Refuse a factorisation whose :func:`factorisation_bytes` exceeds
    MAX_FACTOR_BYTES: a SolverInputError that names the size, before any
    memory is taken."""
    need = factorisation_bytes(unknowns, conductors)
    if need > MAX_FACTOR_BYTES:
        raise SolverInputError(
            f"harmonic: {unknowns} unknowns and {conductors} conductors need about "
            f"{need / 1e9:.1f} GB to factorise (limit {MAX_FACTOR_BYTES / 1e9:.1f} GB, "
            "fem2d.harmonic.MAX_FACTOR_BYTES): lower the frequency or coarsen the mesh "
            "(the skin-depth band sets the element size at the conductors)")


# ------------------------------------------------------------------ sources
@dataclass(frozen=True)
class SolidWinding:
    """Solid conductors in series: ``conductors`` a tuple of (region name, sign +1/-1).

    Each region is one solid conductor (a turn side planar, a turn in r-z)
    carrying sign x the winding's current, with its own voltage unknown.
    """

    name: str
    conductors: tuple

    def __post_init__(self) -> None:
        if not isinstance(self.name, str) or not self.name:
            raise SolverInputError(f"winding name {self.name!r} must be a non-empty string")
        regs = tuple((str(r), int(s)) for r, s in self.conductors)
        if not regs:
            raise SolverInputError(f"winding {self.name!r}: conductors is empty")
        for r, s in regs:
            if s not in (1, -1):
                raise SolverInputError(f"winding {self.name!r}: conductor {r!r} sign = {s!r} "
                                       "must be +1 or -1")
        if len({r for r, _ in regs}) != len(regs):
            raise SolverInputError(f"winding {self.name!r}: a conductor is listed twice")
        object.__setattr__(self, "conductors", regs)


# ------------------------------------------------------------------ assembly
def full_tangent(asm: Assembler, A: np.ndarray | None = None) -> sp.csr_matrix:
    """The static Newton tangent at ``A`` (default 0) on all DOFs, CSR (H^-1
    per metre, or per radian): the same local matrices as Assembler.tangent
    (nu I + 2 dnu/ds grad A grad A^T, the formulation's weights, the open
    exterior's ring), scattered without removing the Dirichlet DOFs (the
    lifting of imposed boundary values needs K_ID)."""
    if A is None:
        A = np.zeros(asm.ndofs)
    g = asm.grad(A)
    nu, dnu = asm.coefficients(asm.s_of(g))
    c = nu * asm.wk
    G = asm.G  # (ne, nloc, 2, nq)
    Ke = np.einsum("eiaq,eq,ejaq->eij", G, c, G)
    if not asm.linear and np.any(dnu):
        f2wk = asm.wk if asm.f2 is None else asm.wk * asm.f2
        Gg = G[:, :, 0, :] * g[0][:, None, :] + G[:, :, 1, :] * g[1][:, None, :]
        Ke += np.einsum("eiq,eq,ejq->eij", Gg, 2.0 * dnu * f2wk, Gg)
    if asm.ext is not None:
        Ke[asm.ext[0]] += asm.ext[1]
    return _scatter(asm, Ke)


def _scatter(asm: Assembler, Ke: np.ndarray) -> sp.csr_matrix:
    d = asm.dofs  # (nloc, ne)
    rows = np.broadcast_to(d.T[:, :, None], Ke.shape).ravel()
    cols = np.broadcast_to(d.T[:, None, :], Ke.shape).ravel()
    return sp.csr_matrix((Ke.ravel(), (rows, cols)), shape=(asm.ndofs, asm.ndofs))


def _element_sigma(asm: Assembler, conductivity: dict) -> np.ndarray:
    """sigma per element (S/m); regions not named have 0."""
    s = np.zeros(asm.ne)
    for name, val in conductivity.items():
        v = finite_number(f"conductivity of {name!r}", val, SolverInputError)
        if v < 0:
            raise SolverInputError(f"conductivity of {name!r} = {val!r} S/m must be >= 0")
        if name not in asm.rmesh.subdomains or name in ("air", "exterior"):
            raise SolverInputError(f"conductivity: region {name!r} not in the layout "
                                   f"(have {sorted(set(asm.rmesh.subdomains) - {'air', 'exterior'})})")
        s[asm.rmesh.subdomains[name]] = v
    return s


@dataclass(frozen=True)
class _Conductor:
    region: str
    winding: str | None  # None: passive (net current 0, planar)
    sign: int
    dofs: np.ndarray  # the conductor's DOFs
    b: np.ndarray  # int_c sigma m phi_i dx on those DOFs
    G: float  # int_c sigma m dx


class HarmonicProblem:
    """The eddy-current operator of one mesh at one frequency, factorised once.

    Parameters
    ----------
    mesh : RegionMesh
    materials : dict[str, Reluctivity]
        As for the static solve (ignored with ``operating_point``, whose
        assembler holds the laws).
    conductivity : dict[str, float]
        sigma (S/m) per region name; regions not named do not conduct.
    frequency : float
        f (Hz), >= 0 (at 0 the solve is the static linear(ised) one).
    windings : tuple of SolidWinding
        Solid conductors with imposed current.
    coils : tuple of fem2d.sources.Coil
        Stranded coils (uniform J, no eddy current); their regions must not conduct.
    operating_point : fem2d.solver.FieldSolution, optional
        Converged DC solution on ``mesh``: the tangent is taken there (module
        docstring); default: at B = 0.
    formulation : Planar or Axisymmetric, optional
    natural_boundary : callable (x, y) -> bool array, optional
        Outer-boundary DOFs where it is True get the natural condition (zero
        tangential H: the face of an ideal-iron pole) instead of the Dirichlet value.
    """

    def __init__(self, mesh: RegionMesh, materials: dict, conductivity: dict, frequency: float,
                 *, windings: tuple = (), coils: tuple = (), operating_point=None,
                 formulation=None, natural_boundary: Callable | None = None):
        t0 = time.perf_counter()
        f = finite_number("frequency", frequency, SolverInputError)
        if f < 0:
            raise SolverInputError(f"frequency = {frequency!r} Hz must be >= 0")
        if operating_point is not None:
            if not operating_point.converged:
                raise SolverInputError("operating_point: the static solution did not converge")
            if operating_point.mesh is not mesh:
                raise SolverInputError("operating_point: solved on another mesh")
            asm = operating_point.assembler
            A0 = operating_point.A
        else:
            asm = Assembler(mesh, materials, None, formulation)
            A0 = None
        self.asm = asm
        self.mesh = mesh
        self.operating_point = operating_point
        self.form = form = asm.formulation
        self.conductivity = dict(conductivity)
        sig = _element_sigma(asm, conductivity)
        self.sigma = sig
        mw = form.eddy_weight(asm.xq)
        self.m = np.ones_like(asm.dx) if mw is None else mw  # (ne, nq)
        self.windings = tuple(windings)
        self.coils = tuple(coils)
        names = [w_.name for w_ in self.windings] + [c.name for c in self.coils]
        if len(set(names)) != len(names):
            raise SolverInputError(f"windings and coils: a name is used twice ({names!r})")
        for c in self.coils:
            if not isinstance(c, Coil):
                raise SolverInputError(f"coils: {c!r} is not a fem2d.sources.Coil")
            for r, _ in c.regions:
                if conductivity.get(r, 0.0) > 0:
                    raise SolverInputError(f"coil {c.name!r}: region {r!r} conducts (sigma = "
                                           f"{conductivity[r]!r}): a stranded coil has no eddy "
                                           "current; use a SolidWinding")
        # conductors: winding turns, then passive bars (planar only)
        weight = sig[:, None] * self.m * asm.dx  # sigma m dx at the quadrature points
        conds: list[_Conductor] = []
        used: set[str] = set()
        for wd in self.windings:
            if not isinstance(wd, SolidWinding):
                raise SolverInputError(f"windings: {wd!r} is not a SolidWinding")
            for r, s in wd.conductors:
                if r in used:
                    raise SolverInputError(f"winding {wd.name!r}: conductor {r!r} is in two windings")
                if conductivity.get(r, 0.0) <= 0:
                    raise SolverInputError(f"winding {wd.name!r}: conductor {r!r} has no "
                                           "conductivity > 0")
                used.add(r)
                conds.append(self._conductor(r, wd.name, s, weight))
        self.passive = tuple(r for r, s in conductivity.items() if s > 0 and r not in used)
        if form.name == "planar":
            for r in self.passive:
                conds.append(self._conductor(r, None, 1, weight))
        self.conductors = tuple(conds)
        # the conductors' columns b_c (ndofs x nc, sparse: each lives on its own DOFs)
        self.B = sp.csr_matrix(
            (np.concatenate([c.b for c in conds]) if conds else np.zeros(0),
             (np.concatenate([c.dofs for c in conds]) if conds else np.zeros(0, dtype=np.int64),
              np.concatenate([np.full(len(c.dofs), k) for k, c in enumerate(conds)])
              if conds else np.zeros(0, dtype=np.int64))),
            shape=(asm.ndofs, len(conds)))
        # operators on all DOFs
        K = full_tangent(asm, A0)
        Phi = asm.Phi  # (nloc, ne, nq)
        Me = np.einsum("ieq,eq,jeq->eij", Phi, weight, Phi)
        M = _scatter(asm, Me)
        self.K, self.M = K, M
        # Dirichlet / free DOFs
        D = asm.D
        if natural_boundary is not None:
            xy = asm.basis.doflocs[:, D]
            free = np.asarray(natural_boundary(xy[0], xy[1]), dtype=bool)
            if free.shape != D.shape:
                raise SolverInputError("natural_boundary must return one bool per point")
            D = D[~free]
        mask = np.ones(asm.ndofs, dtype=bool)
        mask[D] = False
        self.D, self.I = D, np.nonzero(mask)[0]
        self.timings = {"assemble": time.perf_counter() - t0}
        self._factorise(f)

    def _factorise(self, f: float) -> None:
        """Factorise the field block at frequency f (Hz) and reduce the
        conductors to their Schur complement.

        The bordered system [[Z, -B], [-j w B^T, diag G]] [u; e] = [r_u; r_c]
        is solved as u = y + X e with y = Z^-1 r_u, X = Z^-1 B (one solve per
        conductor, here), and the nc x nc system
        (diag G - j w B^T X) e = r_c + j w B^T y (dense LU).  Factorising the
        bordered matrix whole put each conductor's dense row and column into
        SuperLU's ordering: on the foil choke's 300 kHz mesh (74.6k unknowns,
        16 conductors) 25-31 s against 1.2-1.4 s for Z alone, the same fill.
        """
        from scipy.linalg import lu_factor

        t1 = time.perf_counter()
        self.frequency = f
        self.omega = w = 2.0 * math.pi * f
        self.Z = (self.K + 1j * w * self.M).tocsr()
        I, conds = self.I, self.conductors
        ZII = self.Z[I][:, I].tocsc()
        guard_factorisation(len(I), len(conds))
        # one BLAS thread (as the static solve): threaded BLAS inside SuperLU
        # was 10-15x slower on 2 shared cores; minimum degree on Z + Z^T in
        # symmetric mode (Z is complex symmetric): 12k P2 DOFs 0.3 s
        # against 0.4 s for COLAMD and twice its fill; on 72k unknowns
        # 0.64 s against 10.6 s (COLAMD) and 60 s (reverse Cuthill-McKee)
        with one_blas_thread():
            self.lu = splu(ZII.astype(complex), permc_spec="MMD_AT_PLUS_A",
                           options=dict(SymmetricMode=True))
            if conds:
                self._Bc = self.B[I].tocsc()  # (nI, nc), sparse
                self._X = self.lu.solve(self._Bc.toarray().astype(complex))
                C = (np.diag(np.array([c.G for c in conds], dtype=complex))
                     - 1j * w * (self._Bc.T @ self._X))
                self._C = lu_factor(C)
        self.timings = dict(self.timings, factorise=time.perf_counter() - t1)
        self.nunknowns = len(I) + len(conds)
        self.size_over_delta = size_over_skin_depth(self.mesh, self.conductivity, f)
        if self.size_over_delta > MAX_SIZE_OVER_DELTA:
            logger.warning("harmonic: elements up to %.2f skin depths in the conductors at "
                           "%.4g Hz (resolve delta: fem2d.harmonic.surface_mesh_size)",
                           self.size_over_delta, f)

    def release_factorisation(self) -> None:
        """Drop the factors (and the conductors' Schur columns) to free their
        memory: the solutions made so far keep their post-processing (loss,
        J, B, VTU), a later :meth:`solve` is refused."""
        self.lu = None
        self._X = self._C = None

    def at_frequency(self, frequency: float) -> "HarmonicProblem":
        """The same problem at another frequency (Hz): the operators K and M, the
        conductors and the boundary are reused, only the factorisation is new
        (a frequency sweep on one mesh)."""
        import copy

        f = finite_number("frequency", frequency, SolverInputError)
        if f < 0:
            raise SolverInputError(f"frequency = {frequency!r} Hz must be >= 0")
        other = copy.copy(self)
        other.timings = {"assemble": 0.0}
        other._factorise(f)
        return other

    def _conductor(self, region: str, winding, sign: int, weight: np.ndarray) -> _Conductor:
        asm = self.asm
        idx = asm.rmesh.subdomains[region]
        loc = np.einsum("ieq,eq->ie", asm.Phi[:, idx], weight[idx])
        dofs, inv = np.unique(asm.dofs[:, idx].ravel(), return_inverse=True)
        b = np.bincount(inv, weights=loc.ravel(), minlength=len(dofs))
        return _Conductor(region, winding, sign, dofs, b, float(weight[idx].sum()))

    # ---------------------------------------------------------------- solve
    def solve(self, currents: dict | None = None, *, background: Background | None = None,
              background_phasor: complex = 1.0,
              boundary_potential: Callable | None = None) -> "HarmonicSolution":
        """Solve for the current phasors (A, peak) per winding or coil name.

        ``background``: a uniform field B (T) imposed on the closed boundary,
        times ``background_phasor``; or ``boundary_potential(x, y)`` (complex,
        Wb/m or Wb/rad) on the Dirichlet DOFs.  Unnamed windings and coils carry 0.
        """
        t0 = time.perf_counter()
        if self.lu is None:
            raise SolverInputError("solve: the factorisation was released "
                                   "(HarmonicProblem.release_factorisation)")
        asm, w = self.asm, self.omega
        known = {wd.name for wd in self.windings} | {c.name for c in self.coils}
        cur = {n: 0j for n in known}
        for n, v in (currents or {}).items():
            if n not in known:
                raise SolverInputError(f"currents: {n!r} is not a winding or coil "
                                       f"(have {sorted(known)})")
            cur[n] = complex(v)
            if not np.isfinite(cur[n]):
                raise SolverInputError(f"currents: {n!r} = {v!r} is not finite")
        u = np.zeros(asm.ndofs, dtype=complex)
        if background is not None:
            if boundary_potential is not None:
                raise SolverInputError("background and boundary_potential are both given: pass one")
            if asm.rmesh.layout.air.open:
                raise SolverInputError("background: needs a closed air domain (air open = False)")
            from .solver import background_potential

            bp = background_potential(background, self.form)
            xy = asm.basis.doflocs[:, self.D]
            u[self.D] = complex(background_phasor) * np.asarray(bp(xy[0], xy[1]), dtype=float)
        elif boundary_potential is not None:
            xy = asm.basis.doflocs[:, self.D]
            u[self.D] = np.asarray(boundary_potential(xy[0], xy[1]), dtype=complex)
        load = np.zeros(asm.ndofs, dtype=complex)
        for c in self.coils:
            if cur[c.name] != 0:
                load += cur[c.name] * asm.coil_load(c)
        I = self.I
        rhs_u = load[I] - self.Z[I][:, self.D] @ u[self.D]
        rhs_c = (np.array([cur[c.winding] * c.sign if c.winding is not None else 0.0
                           for c in self.conductors], dtype=complex)
                 + 1j * w * (self.B[self.D].T @ u[self.D]))
        with one_blas_thread():
            y = self.lu.solve(rhs_u)
            if self.conductors:
                from scipy.linalg import lu_solve

                e = lu_solve(self._C, rhs_c + 1j * w * (self._Bc.T @ y))
                u[I] = y + self._X @ e
            else:
                e = np.zeros(0, dtype=complex)
                u[I] = y
        t1 = time.perf_counter()
        timings = dict(self.timings, solve=t1 - t0)
        return HarmonicSolution(u=u, e=e, currents=cur, problem=self, timings=timings,
                                ndofs=asm.ndofs)


@dataclass(frozen=True)
class HarmonicSolution:
    """Result of :meth:`HarmonicProblem.solve`.

    Attributes
    ----------
    u : complex ndarray (ndofs,)
        Phasor of A_z (Wb/m) or u = r A_phi (Wb/rad), peak.
    e : complex ndarray (n_conductors,)
        Each conductor's E (V/m, planar) or e = V/(2 pi) (V, r-z), in the
        order of ``problem.conductors``.
    currents : dict[str, complex]
        Current phasor per winding and coil (A, peak).
    timings : dict
        Seconds: "assemble", "factorise" (the problem's), "solve".
    ndofs : int
    """

    u: np.ndarray
    e: np.ndarray
    currents: dict
    problem: Any = field(repr=False)
    timings: dict = field(default_factory=dict)
    ndofs: int = 0

    @property
    def frequency(self) -> float:
        return self.problem.frequency

    def conductor_voltage(self, region: str) -> complex:
        """Voltage phasor of one conductor (V): total x e (depth x E planar,
        2 pi e r-z), along +z (planar) or +phi (r-z)."""
        for c, e in zip(self.problem.conductors, self.e):
            if c.region == region:
                return complex(self.problem.form.total * e)
        raise PostError(f"conductor {region!r}: not a solid conductor")

    def conductor_current(self, region: str) -> complex:
        """Net current phasor of a conducting region, int J dx (A)."""
        idx = _elements(self, region)
        J = current_density(self)[idx]
        return complex(np.sum(J * self.problem.asm.dx[idx]))


def harmonic_solve(mesh: RegionMesh, materials: dict, conductivity: dict, frequency: float, *,
                   currents: dict | None = None, windings: tuple = (), coils: tuple = (),
                   operating_point=None, formulation=None, background: Background | None = None,
                   natural_boundary: Callable | None = None) -> HarmonicSolution:
    """Build, factorise and solve in one call (:class:`HarmonicProblem`)."""
    prob = HarmonicProblem(mesh, materials, conductivity, frequency, windings=windings,
                           coils=coils, operating_point=operating_point, formulation=formulation,
                           natural_boundary=natural_boundary)
    return prob.solve(currents, background=background)


# ------------------------------------------------------------------ post
def _elements(hs: HarmonicSolution, regions) -> np.ndarray:
    try:
        return hs.problem.mesh.elements_of(regions)
    except ValueError as exc:
        raise PostError(str(exc)) from None


def current_density(hs: HarmonicSolution) -> np.ndarray:
    """Phasor of J (A/m^2, +z or +phi) at the quadrature points, (ne, nq):
    sigma m (-j w u + e_c) in the conductors, the uniform N I / S of the
    stranded coils, 0 elsewhere."""
    p = hs.problem
    asm = p.asm
    uq = np.einsum("ieq,ie->eq", asm.Phi, hs.u[asm.dofs])
    ev = np.zeros(asm.ne, dtype=complex)
    for c, e in zip(p.conductors, hs.e):
        ev[asm.rmesh.subdomains[c.region]] = e
    J = p.sigma[:, None] * p.m * (-1j * p.omega * uq + ev[:, None])
    for c in p.coils:
        for r, s in c.regions:
            idx = asm.rmesh.subdomains[r]
            J[idx] += s * c.turns * hs.currents[c.name] / asm.areas[r]
    return J


def b_field(hs: HarmonicSolution) -> np.ndarray:
    """Phasor of B (T) at the quadrature points, (2, ne, nq)."""
    asm = hs.problem.asm
    g = np.einsum("eiaq,ie->aeq", asm.G, hs.u[asm.dofs])
    return asm.formulation.b(g, asm.xq)


def loss_density(hs: HarmonicSolution) -> np.ndarray:
    """Time-average loss density |J|^2 / (2 sigma) (W/m^3) at the quadrature
    points, (ne, nq); 0 where sigma = 0 (stranded coils: no loss here)."""
    p = hs.problem
    J = current_density(hs)
    with np.errstate(divide="ignore", invalid="ignore"):
        q = np.where(p.sigma[:, None] > 0, 0.5 * np.abs(J) ** 2 / p.sigma[:, None], 0.0)
    return q


def winding_loss(hs: HarmonicSolution, name: str) -> float:
    """Loss (W) in the conductors of solid winding ``name``."""
    for wd in hs.problem.windings:
        if wd.name == name:
            return region_loss(hs, [r for r, _ in wd.conductors])
    raise PostError(f"winding {name!r}: no such solid winding")


def region_loss(hs: HarmonicSolution, regions) -> float:
    """Time-average loss (W; planar: in the stack depth) of one region or a list:
    total x int |J|^2/(2 sigma) (volume weight) dx."""
    idx = _elements(hs, regions)
    asm = hs.problem.asm
    return float(asm.formulation.total * np.sum(loss_density(hs)[idx] * asm.wv[idx]))


def conductor_losses(hs: HarmonicSolution) -> dict:
    """Loss (W) per conducting region."""
    return {r: region_loss(hs, r) for r, s in hs.problem.conductivity.items() if s > 0}


def total_loss(hs: HarmonicSolution) -> float:
    """Loss (W) in all conducting regions."""
    asm = hs.problem.asm
    return float(asm.formulation.total * np.sum(loss_density(hs) * asm.wv))


def magnetic_energy(hs: HarmonicSolution) -> float:
    """Time-average magnetic energy (J): total x (1/4) Re(u^H K u), K the magnetic
    operator (the tangent at the operating point; with a linear law
    (1/4) int nu |B|^2 dV), the open exterior included."""
    p = hs.problem
    return float(p.form.total * 0.25 * np.real(np.conj(hs.u) @ (p.K @ hs.u)))


@dataclass(frozen=True)
class WindingImpedance:
    """Impedance of one winding driven alone.

    Attributes
    ----------
    Z : complex
        V / I (ohm) from the winding's voltage (solid) or j w lambda (stranded;
        a homogenised coil has no resistance of its own in the field model:
        its R is the loss it induces in the conductors).
    R, L : float
        Re Z (ohm) and Im Z / w (H) (L: nan at f = 0).
    Z_power : complex
        (2 P + 4 j w W_m) / |I|^2 from the loss P in all conductors and the
        time-average magnetic energy W_m (complex power; equals Z when this
        winding is the only source).
    """

    Z: complex
    R: float
    L: float
    Z_power: complex


def _winding_voltage(hs: HarmonicSolution, name: str) -> complex:
    p = hs.problem
    for wd in p.windings:
        if wd.name == name:
            return complex(sum(s * hs.conductor_voltage(r) for r, s in wd.conductors))
    for c in p.coils:
        if c.name == name:
            asm = p.asm
            lam = c.turns * asm.formulation.total * sum(
                s * np.sum(asm.phi_int[:, asm.rmesh.subdomains[r]]
                           * hs.u[asm.dofs[:, asm.rmesh.subdomains[r]]]) / asm.areas[r]
                for r, s in c.regions)
            return complex(1j * p.omega * lam)
    raise PostError(f"winding {name!r}: no such winding or coil")


def winding_impedance(hs: HarmonicSolution, name: str) -> WindingImpedance:
    """Z = V / I of winding or coil ``name`` (which must carry current)."""
    cur = hs.currents.get(name)
    if cur is None or cur == 0:
        raise PostError(f"winding {name!r}: carries no current")
    Z = _winding_voltage(hs, name) / cur
    w = hs.problem.omega
    zp = (2.0 * total_loss(hs) + 4j * w * magnetic_energy(hs)) / abs(cur) ** 2
    return WindingImpedance(complex(Z), float(Z.real), float(Z.imag / w) if w > 0 else math.nan,
                            complex(zp))


@dataclass(frozen=True)
class ImpedanceMatrix:
    """Z_jk = V_j / I_k (ohm) with winding k alone at 1 A; R = Re Z, L = Im Z / w (H)."""

    names: tuple
    Z: np.ndarray
    R: np.ndarray
    L: np.ndarray
    frequency: float


def impedance_matrix(problem: HarmonicProblem, names: tuple | None = None) -> ImpedanceMatrix:
    """The impedance matrix of the problem's windings and coils (one factorisation,
    one solve per winding)."""
    if names is None:
        names = tuple(w.name for w in problem.windings) + tuple(c.name for c in problem.coils)
    n = len(names)
    Z = np.zeros((n, n), dtype=complex)
    for k, nk in enumerate(names):
        hs = problem.solve({nk: 1.0})
        for j, nj in enumerate(names):
            Z[j, k] = _winding_voltage(hs, nj)
    w = problem.omega
    L = Z.imag / w if w > 0 else np.full((n, n), np.nan)
    return ImpedanceMatrix(tuple(names), Z, Z.real.copy(), L, problem.frequency)


# ------------------------------------------------------------------ export
def vtu_mesh(hs: HarmonicSolution):
    """The solution as a meshio Mesh: Re and Im of the unknown (point data),
    element means of |J| (A/m^2, peak), the loss density (W/m^3, time
    average) and |B| (T, peak: sqrt(|B_x|^2 + |B_y|^2)), and the region id
    (cell data).  The open boundary's "exterior" ring is left out."""
    import meshio

    asm = hs.problem.asm
    keep = np.ones(asm.ne, dtype=bool)
    if asm.ext is not None:
        keep[asm.ext[0]] = False
    w = asm.wv_geometric
    den = np.sum(w, axis=1)

    def mean(q):
        return (np.sum(q * w, axis=1) / den)[keep]

    B = b_field(hs)
    pts = asm.basis.doflocs
    return meshio.Mesh(
        points=np.column_stack([pts[0], pts[1], np.zeros(pts.shape[1])]),
        cells=[("triangle6" if asm.nloc == 6 else "triangle", asm.dofs.T[keep].astype(np.int64))],
        point_data={"u_re": hs.u.real.copy(), "u_im": hs.u.imag.copy()},
        cell_data={"Jmag": [mean(np.abs(current_density(hs)))],
                   "loss_density": [mean(loss_density(hs))],
                   "Bmag": [mean(np.sqrt(np.abs(B[0]) ** 2 + np.abs(B[1]) ** 2))],
                   "region": [np.asarray(hs.problem.mesh.element_region, dtype=np.int32)[keep]]})


def write_vtu(hs: HarmonicSolution, path) -> str:
    """Write :func:`vtu_mesh` to ``path`` (atomically, as fem2d.export.write_vtu)."""
    from .export import write_mesh

    return write_mesh(vtu_mesh(hs), path)
