"""Nonlinear magnetic-circuit (reluctance network) solver.

Formulation
-----------
Unknowns are the magnetic scalar potentials u (A) of the nodes, with the first
node of ``Network.nodes`` grounded (u = 0).  Branch k runs from node a_k to
node b_k and carries the MMF source s_k (sum of N*I of the windings on it,
acting a -> b).  Its MMF drop (the line integral of H along the branch) is

    F_k = u_a - u_b + s_k                                             (1)

and its flux (Wb, positive a -> b) is phi_k(F_k): phi = A*B(F/l) for a core
branch (monotone, d phi/dF = A/l * dB/dH >= A*mu0/l > 0) and phi = P*F for a
gap.  Kirchhoff's flux law at every node reads

    r(u) = D^T phi(D u + s) = 0                                       (2)

with D the (branches x nodes) incidence matrix (+1 at a_k, -1 at b_k).  (2) is
the gradient of the convex co-energy functional

    Pi(u) = sum_k C_k(F_k),   C_k(F) = integral_0^F phi_k dF'          (3)

(for a core branch C = volume * coenergy density, for a gap P F^2/2), which is
the branch co-energy minus the source work in disguise.  Newton's method with
the Jacobian J = D_r^T diag(d phi/dF) D_r (reduced weighted Laplacian, SPD for
a connected network) is globalised by Armijo backtracking on Pi, as in the
damped Newton method for nonlinear magnetostatics (Egger, Engertsberger, Radu,
arXiv 2403.18520 [confirmed]).  The decrease Pi(u + t du) - Pi(u) is evaluated
as the integral of the directional derivative r(u + tau du).du over [0, t] by
3-point Gauss-Legendre quadrature, which avoids subtracting two large
energies (rounding) near convergence.

For accuracy the potentials are carried in tree coordinates: the unknowns are
the MMF drops of the branches of a maximum-permeance spanning tree, an
invertible linear change of variables (u = P (x - s_tree)).  A highly permeable
core then keeps all digits of its tiny MMF drop instead of getting it as the
difference of two potentials of the size of N*I.

Convergence measure: relative residual ||D^T phi||_2 / ||phi||_2 (nodal flux
imbalance over branch fluxes; 0 when every flux is 0).
"""

from __future__ import annotations

import logging
import math
from dataclasses import dataclass, field
from typing import Any, Mapping, Sequence

import numpy as np
from numpy.typing import NDArray

from .constants import mu_0

logger = logging.getLogger(__name__)

_ARMIJO_C1 = 1e-4  # sufficient-decrease constant (standard choice, Nocedal & Wright 2006, ch. 3)
_MAX_HALVINGS = 60
_GAUSS_X, _GAUSS_W = np.polynomial.legendre.leggauss(3)
_MATERIAL_METHODS = ("b_of_h", "dh_db", "energy_density", "check_range")


class NetworkError(ValueError):
    """Invalid network description; the message names the branch/node/winding and value."""


class ConvergenceError(RuntimeError):
    """Raised by :meth:`NetworkResult.raise_if_failed` when the solve did not converge."""


def _positive(kind: str, name: str, key: str, value: Any) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise NetworkError(f"{kind} '{name}': {key} = {value!r} is not a number") from None
    if not (math.isfinite(v) and v > 0.0):
        raise NetworkError(f"{kind} '{name}': {key} = {value!r} must be finite and > 0")
    return v


# --------------------------------------------------------------------------- inputs


@dataclass(frozen=True)
class CoreBranch:
    """Uniform core section: flux = area*B(H), H = mmf_drop/length.

    Attributes
    ----------
    name, node_a, node_b : str
        Branch name and end nodes (positive flux a -> b).
    length : float
        Mean magnetic path length (m).
    area : float
        Cross-section (m^2).
    material : object
        Provides ``b_of_h``, ``dh_db``, ``energy_density``, ``check_range``
        (:class:`~analytic.bh.BHCurve` or :class:`~analytic.bh.LinearMaterial`).
    """

    name: str
    node_a: str
    node_b: str
    length: float
    area: float
    material: Any

    def __post_init__(self) -> None:
        object.__setattr__(self, "length", _positive("core branch", self.name, "length", self.length))
        object.__setattr__(self, "area", _positive("core branch", self.name, "area", self.area))
        missing = [m for m in _MATERIAL_METHODS if not callable(getattr(self.material, m, None))]
        if missing:
            raise NetworkError(
                f"core branch '{self.name}': material {self.material!r} lacks method(s) {', '.join(missing)}"
            )


@dataclass(frozen=True)
class GapBranch:
    """Linear gap: flux = permeance*mmf_drop; reported B = flux/effective_area.

    Attributes
    ----------
    length : float
        Gap length (m), used for the reported mean H = mmf_drop/length.
    permeance : float
        Gap permeance (Wb/A), e.g. from :func:`analytic.fringing.gap_permeance`.
    effective_area : float
        Area (m^2) used to report B.
    kind : str
        "gap" (an air gap of the core) or "leakage" (a linear air path that
        bypasses part of the core, e.g. across a winding window).
    dpermeance_dlength : float or None
        dP/dg (Wb/A per m), the permeance's derivative with respect to the gap
        length at fixed faces (e.g. :func:`analytic.fringing.gap_permeance_derivative`);
        with it the gap's closing force follows from one solve
        (:func:`analytic.force.gap_forces`).
    """

    name: str
    node_a: str
    node_b: str
    length: float
    permeance: float
    effective_area: float
    kind: str = "gap"
    dpermeance_dlength: float | None = None

    def __post_init__(self) -> None:
        for key in ("length", "permeance", "effective_area"):
            object.__setattr__(self, key, _positive("gap branch", self.name, key, getattr(self, key)))
        d = self.dpermeance_dlength
        if d is not None:
            if isinstance(d, bool) or not isinstance(d, (int, float)) or not math.isfinite(d):
                raise NetworkError(f"gap branch {self.name!r}: dpermeance_dlength = {d!r} must be "
                                   "a finite number (Wb/A per m)")
            object.__setattr__(self, "dpermeance_dlength", float(d))


@dataclass(frozen=True)
class MagnetBranch:
    """A permanent magnet with a linear recoil line, magnetised a -> b.

    B = mu0 mu_r H + B_r along the branch, so its flux is
    phi = P (F + F_c) with the internal permeance P = mu0 mu_r A / l and the
    coercive MMF F_c = H_c l = B_r l / (mu0 mu_r): an MMF source F_c behind
    the internal reluctance l / (mu0 mu_r A), the textbook equivalent circuit
    of a magnet on its recoil line (Parker, Advances in Permanent Magnetism,
    1990, ch. 4 [from memory]).  F is the magnet's own H drop (negative at a
    working point: H opposes B inside the magnet).

    Attributes
    ----------
    length : magnet length along its magnetisation l_m (m).
    area : pole face area A_m (m^2).
    remanence : B_r (T, > 0; reverse a and b for the other sense).
    mu_r : recoil permeability (> 0, typically 1.02-1.1).
    """

    name: str
    node_a: str
    node_b: str
    length: float
    area: float
    remanence: float
    mu_r: float = 1.05

    def __post_init__(self) -> None:
        for key in ("length", "area", "remanence", "mu_r"):
            object.__setattr__(self, key, _positive("magnet branch", self.name, key,
                                                    getattr(self, key)))

    @property
    def permeance(self) -> float:
        """Internal permeance P = mu0 mu_r A / l (Wb/A)."""
        return mu_0 * self.mu_r * self.area / self.length

    @property
    def coercive_mmf(self) -> float:
        """F_c = H_c l = B_r l / (mu0 mu_r) (A)."""
        return self.remanence * self.length / (mu_0 * self.mu_r)


@dataclass(frozen=True)
class Winding:
    """MMF source N*I (A) acting in branch ``branch`` in its a -> b direction.

    ``turns`` may be negative (reversed sense) but not zero; ``current`` in A.
    """

    name: str
    turns: float
    current: float
    branch: str

    def __post_init__(self) -> None:
        for key in ("turns", "current"):
            value = getattr(self, key)
            try:
                v = float(value)
            except (TypeError, ValueError):
                raise NetworkError(f"winding '{self.name}': {key} = {value!r} is not a number") from None
            if not math.isfinite(v):
                raise NetworkError(f"winding '{self.name}': {key} = {value!r} is not finite")
            object.__setattr__(self, key, v)
        if self.turns == 0.0:
            raise NetworkError(f"winding '{self.name}': turns = 0 (a winding needs turns)")

    @property
    def mmf(self) -> float:
        """N*I (A)."""
        return self.turns * self.current


@dataclass(frozen=True)
class Network:
    """A reluctance network; validated when built.

    Attributes
    ----------
    nodes : tuple of str
        Node names; the first is grounded (potential 0).
    branches : tuple of CoreBranch | GapBranch | MagnetBranch
    windings : tuple of Winding
    """

    nodes: tuple[str, ...]
    branches: tuple[CoreBranch | GapBranch | MagnetBranch, ...]
    windings: tuple[Winding, ...] = ()

    def __post_init__(self) -> None:
        object.__setattr__(self, "nodes", tuple(self.nodes))
        object.__setattr__(self, "branches", tuple(self.branches))
        object.__setattr__(self, "windings", tuple(self.windings))
        _validate_network(self)

    def branch_index(self, name: str) -> int:
        """Position of the branch called ``name``."""
        for k, br in enumerate(self.branches):
            if br.name == name:
                return k
        raise NetworkError(f"unknown branch {name!r}")

    def incidence(self) -> NDArray[np.float64]:
        """Incidence matrix D, shape (n_branches, n_nodes): +1 at node_a, -1 at node_b."""
        pos = {n: i for i, n in enumerate(self.nodes)}
        d = np.zeros((len(self.branches), len(self.nodes)))
        for k, br in enumerate(self.branches):
            d[k, pos[br.node_a]] += 1.0
            d[k, pos[br.node_b]] -= 1.0
        return d

    def source_mmf(self) -> NDArray[np.float64]:
        """Branch MMF sources s (A), shape (n_branches,)."""
        s = np.zeros(len(self.branches))
        for w in self.windings:
            s[self.branch_index(w.branch)] += w.mmf
        return s


def _check_unique(names: Sequence[str], what: str) -> None:
    seen: set[str] = set()
    for n in names:
        if n in seen:
            raise NetworkError(f"duplicate {what} name {n!r}")
        seen.add(n)


def _validate_network(net: Network) -> None:
    if not net.nodes:
        raise NetworkError("network has no nodes")
    if not net.branches:
        raise NetworkError("network has no branches")
    _check_unique(net.nodes, "node")
    for br in net.branches:
        if not isinstance(br, (CoreBranch, GapBranch, MagnetBranch)):
            raise NetworkError(f"branch {br!r} is not a CoreBranch, GapBranch or MagnetBranch")
    _check_unique([b.name for b in net.branches], "branch")
    _check_unique([w.name for w in net.windings], "winding")
    nodes = set(net.nodes)
    for br in net.branches:
        for key in ("node_a", "node_b"):
            if getattr(br, key) not in nodes:
                raise NetworkError(f"branch '{br.name}': {key} = {getattr(br, key)!r} is not a node of the network")
        if br.node_a == br.node_b:
            raise NetworkError(f"branch '{br.name}': node_a = node_b = {br.node_a!r} (a branch joins two nodes)")
    names = {b.name for b in net.branches}
    for w in net.windings:
        if w.branch not in names:
            raise NetworkError(f"winding '{w.name}': branch = {w.branch!r} is not a branch of the network")
    used = {b.node_a for b in net.branches} | {b.node_b for b in net.branches}
    for n in net.nodes:
        if n not in used:
            raise NetworkError(f"node {n!r} has no branches")
    _check_connected(net)


def _check_connected(net: Network) -> None:
    adj: dict[str, set[str]] = {n: set() for n in net.nodes}
    for br in net.branches:
        adj[br.node_a].add(br.node_b)
        adj[br.node_b].add(br.node_a)
    seen = {net.nodes[0]}
    stack = [net.nodes[0]]
    while stack:
        for nb in adj[stack.pop()]:
            if nb not in seen:
                seen.add(nb)
                stack.append(nb)
    if len(seen) != len(net.nodes):
        lost = [n for n in net.nodes if n not in seen]
        raise NetworkError(f"network is disconnected: node(s) {lost} cannot be reached from node {net.nodes[0]!r}")


# --------------------------------------------------------------------------- branch laws


def _branch_flux(br: CoreBranch | GapBranch | MagnetBranch, f: float) -> tuple[float, float]:
    """Flux phi (Wb) and d phi/dF (Wb/A) of one branch at MMF drop f (A)."""
    if isinstance(br, GapBranch):
        return br.permeance * f, br.permeance
    if isinstance(br, MagnetBranch):
        return br.permeance * (f + br.coercive_mmf), br.permeance
    b = float(br.material.b_of_h(f / br.length))
    dbdh = 1.0 / float(br.material.dh_db(b))
    return br.area * b, br.area * dbdh / br.length


@dataclass(frozen=True, eq=False)
class _FluxLaw:
    """Every branch's flux and d phi/dF at once: :func:`_branch_flux` over
    the branches, with one ``b_of_h`` call per material on the drops of all
    its core branches (the B-H inversion is a vectorised Newton iteration,
    so a call costs about the same for one value as for many).

    ``f`` has the branches on its last axis (shape (..., n_branches)), so a
    line search evaluates its quadrature points in one call."""

    linear: NDArray[np.int64]
    permeance: NDArray[np.float64]
    offset: NDArray[np.float64]
    cores: tuple[tuple[Any, NDArray[np.int64], NDArray[np.float64], NDArray[np.float64]], ...]

    @classmethod
    def of(cls, net: Network) -> "_FluxLaw":
        lin: list[int] = []
        perm: list[float] = []
        off: list[float] = []
        groups: dict[int, tuple[Any, list[CoreBranch], list[int]]] = {}
        for k, br in enumerate(net.branches):
            if isinstance(br, GapBranch):
                lin.append(k)
                perm.append(br.permeance)
                off.append(0.0)
            elif isinstance(br, MagnetBranch):
                lin.append(k)
                perm.append(br.permeance)
                off.append(br.coercive_mmf)
            else:
                group = groups.setdefault(id(br.material), (br.material, [], []))
                group[1].append(br)
                group[2].append(k)
        cores = tuple((mat, np.array(idx, dtype=np.int64), np.array([b.length for b in brs]),
                       np.array([b.area for b in brs]))
                      for mat, brs, idx in groups.values())
        return cls(np.array(lin, dtype=np.int64), np.array(perm), np.array(off), cores)

    def __call__(self, f: NDArray) -> tuple[NDArray, NDArray]:
        f = np.asarray(f, dtype=float)
        phi = np.empty_like(f)
        g = np.empty_like(f)
        if self.linear.size:
            phi[..., self.linear] = self.permeance * (f[..., self.linear] + self.offset)
            g[..., self.linear] = np.broadcast_to(self.permeance, f[..., self.linear].shape)
        for mat, idx, length, area in self.cores:
            b = np.asarray(mat.b_of_h(f[..., idx] / length), dtype=float)
            phi[..., idx] = area * b
            g[..., idx] = area * (1.0 / np.asarray(mat.dh_db(b), dtype=float)) / length
        return phi, g


def _fluxes(net: Network, f: NDArray) -> tuple[NDArray, NDArray]:
    """Branch fluxes phi (Wb) and d phi/dF (Wb/A) at the drops f (A)."""
    return _FluxLaw.of(net)(f)


# --------------------------------------------------------------------------- results


@dataclass(frozen=True)
class BranchResult:
    """Solution in one branch (SI).

    Attributes
    ----------
    kind : str
        "core", "gap", "leakage" or "magnet".
    area : float
        Cross-section (m^2); the effective area for gaps.
    flux : float
        Flux a -> b (Wb).
    B, H : float
        flux/area (T) and mmf_drop/length (A/m; for a gap the mean H along it).
    mmf_drop : float
        Line integral of H along the branch (A).
    energy : float
        Stored energy (J): volume*w(B) for cores, flux^2/(2 P) for gaps.
    coenergy : float
        Co-energy (J): volume*w'(H) for cores, P*F^2/2 for gaps.
    """

    name: str
    kind: str
    length: float
    area: float
    flux: float
    B: float
    H: float
    mmf_drop: float
    energy: float
    coenergy: float


@dataclass(frozen=True)
class NetworkResult:
    """Result of :func:`solve_network`.

    Attributes
    ----------
    converged : bool
    iterations : int
        Newton steps taken.
    residual_history : tuple of float
        Relative residual before each step and after the last one.
    message : str
    branches : tuple of BranchResult
    node_potentials : dict str -> float
        Magnetic scalar potential (A), first node 0.
    flux_linkage : dict str -> float
        lambda = N*flux of the winding's branch (Wb), by winding name.
    inductance : dict str -> float
        Secant lambda/I (H); at I = 0 the incremental value is given instead.
        With several windings lambda includes the mutual contributions.
    incremental_inductance : dict str -> float
        Self terms d lambda_w / d I_w (H), from one linear solve with the
        converged Jacobian per winding.
    incremental_inductance_matrix : ndarray, shape (n_windings, n_windings)
        Full d lambda_v / d I_w (H), rows/columns in ``Network.windings`` order.
    energy, coenergy : float
        Sums over branches (J); without magnets energy + coenergy = sum of
        lambda*I at the solution.
    """

    converged: bool
    iterations: int
    residual_history: tuple[float, ...]
    message: str
    branches: tuple[BranchResult, ...]
    node_potentials: dict[str, float]
    flux_linkage: dict[str, float]
    inductance: dict[str, float]
    incremental_inductance: dict[str, float]
    incremental_inductance_matrix: NDArray[np.float64] = field(repr=False, compare=False)
    energy: float = 0.0
    coenergy: float = 0.0

    def branch(self, name: str) -> BranchResult:
        """Result of the branch called ``name``."""
        for br in self.branches:
            if br.name == name:
                return br
        raise KeyError(name)

    def raise_if_failed(self) -> "NetworkResult":
        """Raise :class:`ConvergenceError` if not converged; return self otherwise."""
        if not self.converged:
            raise ConvergenceError(self.message)
        return self


# --------------------------------------------------------------------------- solver


@dataclass(frozen=True, eq=False)
class _TreeCoordinates:
    """Affine map from tree-branch MMF drops x to all branch drops: F = M x + C s.

    The tree is a maximum-permeance spanning tree (Kruskal).  Using the drops of
    its branches (source included) as unknowns is a change of variables of the
    node potentials, u = P (x - s_tree), chosen for accuracy: a highly permeable
    core branch carries a tiny drop F that, computed as u_a - u_b + s from
    potentials of the size of N*I, would lose most of its digits.

    Attributes
    ----------
    m : ndarray, shape (n_branches, n_tree)
    c : ndarray, shape (n_branches, n_branches)
        Source map; rows of tree branches are zero (F_tree = x exactly).
    p : ndarray, shape (n_nodes, n_tree)
        Node potentials u = p @ (x - s[tree]); ground node row is zero.
    tree : ndarray of int, shape (n_tree,)
    """

    m: NDArray[np.float64]
    c: NDArray[np.float64]
    p: NDArray[np.float64]
    tree: NDArray[np.int64]

    def drops(self, x: NDArray, s: NDArray) -> NDArray:
        return self.m @ x + self.c @ s

    def potentials(self, x: NDArray, s: NDArray) -> NDArray:
        return self.p @ (x - s[self.tree])


def _permeance_estimate(br: CoreBranch | GapBranch | MagnetBranch) -> float:
    """Permeance at zero field (Wb/A), used only to choose the tree."""
    if isinstance(br, (GapBranch, MagnetBranch)):
        return br.permeance
    return br.area / (br.length * float(br.material.dh_db(0.0)))


def _spanning_tree(net: Network) -> list[int]:
    """Branch indices of a maximum-permeance spanning tree (Kruskal with union-find)."""
    parent = list(range(len(net.nodes)))
    pos = {n: i for i, n in enumerate(net.nodes)}

    def root(i: int) -> int:
        while parent[i] != i:
            parent[i] = parent[parent[i]]
            i = parent[i]
        return i

    order = sorted(range(len(net.branches)), key=lambda k: -_permeance_estimate(net.branches[k]))
    tree = []
    for k in order:
        ra, rb = root(pos[net.branches[k].node_a]), root(pos[net.branches[k].node_b])
        if ra != rb:
            parent[ra] = rb
            tree.append(k)
    return sorted(tree)


def _tree_coordinates(net: Network) -> _TreeCoordinates:
    d = net.incidence()
    tree = _spanning_tree(net)
    n_nodes, n_tree = len(net.nodes), len(tree)
    p = np.zeros((n_nodes, n_tree))
    known = {0}
    pending = list(enumerate(tree))
    while pending:  # walk the tree out from the ground node: u_a - u_b = e_k
        rest = []
        for j, k in pending:
            a, b = int(np.flatnonzero(d[k] > 0)[0]), int(np.flatnonzero(d[k] < 0)[0])
            if a in known:
                p[b] = p[a]
                p[b, j] -= 1.0
                known.add(b)
            elif b in known:
                p[a] = p[b]
                p[a, j] += 1.0
                known.add(a)
            else:
                rest.append((j, k))
        pending = rest
    m = d @ p
    sel = np.zeros((n_tree, len(net.branches)))
    sel[np.arange(n_tree), tree] = 1.0
    c = np.eye(len(net.branches)) - m @ sel
    m[tree] = np.eye(n_tree)  # exact: a tree branch's drop is its own unknown
    c[tree] = 0.0
    return _TreeCoordinates(m, c, p, np.array(tree, dtype=np.int64))


def _initial_drops(net: Network, coords: _TreeCoordinates, s: NDArray, flux0: Any) -> NDArray:
    """Tree unknowns x from an optional guess of branch fluxes; default: all node potentials 0."""
    if flux0 is None:
        return s[coords.tree].copy()  # u = 0  =>  F = s on every branch
    if isinstance(flux0, Mapping):
        unknown = set(flux0) - {b.name for b in net.branches}
        if unknown:
            raise NetworkError(f"flux0: unknown branch name(s) {sorted(unknown)}")
        phi0 = np.array([float(flux0.get(b.name, 0.0)) for b in net.branches])
    else:
        phi0 = np.asarray(flux0, dtype=float).ravel()
        if phi0.size != len(net.branches):
            raise NetworkError(f"flux0: {phi0.size} values given for {len(net.branches)} branches")
    if not np.all(np.isfinite(phi0)):
        raise NetworkError(f"flux0: non-finite value in {phi0.tolist()}")
    f0 = [
        p / br.permeance if isinstance(br, GapBranch)
        else p / br.permeance - br.coercive_mmf if isinstance(br, MagnetBranch)
        else float(br.material.h_of_b(p / br.area)) * br.length
        for br, p in zip(net.branches, phi0)
    ]
    return np.array(f0)[coords.tree]


def _relative_residual(r: NDArray, phi: NDArray) -> float:
    scale = np.linalg.norm(phi)
    return float(np.linalg.norm(r) / scale) if scale > 0 else float(np.linalg.norm(r))


def _line_search(law: _FluxLaw, coords: _TreeCoordinates, s: NDArray, x: NDArray, dx: NDArray,
                 slope0: float) -> float | None:
    """Armijo backtracking on Pi (3); returns the step t or None if none is found."""
    f0 = coords.drops(x, s)
    df = coords.m @ dx
    t = 1.0
    for _ in range(_MAX_HALVINGS):
        taus = 0.5 * t * (_GAUSS_X + 1.0)
        dderiv = law(f0[None, :] + taus[:, None] * df[None, :])[0] @ df  # the quadrature points at once
        decrease = 0.5 * t * float(_GAUSS_W @ dderiv)  # Pi(x + t dx) - Pi(x)
        if decrease <= _ARMIJO_C1 * t * slope0:
            return t
        t *= 0.5
    return None


def solve_network(
    net: Network, *, rtol: float = 1e-10, max_iter: int = 100, flux0: Mapping[str, float] | Sequence[float] | None = None
) -> NetworkResult:
    """Solve the nonlinear network by damped Newton on the node potentials.

    The potentials are carried in tree coordinates (see :class:`_TreeCoordinates`):
    an invertible linear change of variables that keeps the MMF drops of highly
    permeable branches accurate; the Newton iterates, Jacobian and line search are
    those of (2)-(3) in these coordinates.

    Parameters
    ----------
    net : Network
    rtol : float
        Stop when the relative residual ||D^T phi|| / ||phi|| <= rtol.
    max_iter : int
        Maximum Newton steps.
    flux0 : mapping branch name -> Wb, or sequence (n_branches,), optional
        Initial guess of branch fluxes (the MMF drops they imply on the tree
        branches fix the start).  Default: all node potentials 0.

    Returns
    -------
    NetworkResult
        ``converged=False`` with a message when the residual did not reach ``rtol``.
    """
    if not (rtol > 0 and math.isfinite(rtol)):
        raise NetworkError(f"rtol = {rtol!r} must be finite and > 0")
    if int(max_iter) != max_iter or max_iter < 0:
        raise NetworkError(f"max_iter = {max_iter!r} must be a non-negative integer")
    d_full = net.incidence()
    coords = _tree_coordinates(net)
    s = net.source_mmf()
    x = _initial_drops(net, coords, s, flux0)
    law = _FluxLaw.of(net)
    history: list[float] = []
    converged = False
    failure = ""
    it = 0
    while True:
        phi, g = law(coords.drops(x, s))
        res = _relative_residual(d_full.T @ phi, phi)
        history.append(res)
        if not math.isfinite(res):
            failure = "the residual became non-finite"
            break
        if res <= rtol:
            converged = True
            break
        if it >= max_iter:
            break
        r = coords.m.T @ phi  # gradient of Pi in tree coordinates
        jac = coords.m.T @ (g[:, None] * coords.m)  # SPD reduced weighted Laplacian
        dx = np.linalg.solve(jac, -r)
        t = _line_search(law, coords, s, x, dx, float(r @ dx))
        if t is None:
            failure = "the line search found no decrease of the co-energy"
            break
        x = x + t * dx
        it += 1
        logger.debug("network Newton step %d: t = %.3g, residual = %.3e", it, t, res)
    if converged:
        message = f"converged in {it} Newton iterations (relative residual {history[-1]:.3g} <= rtol {rtol:g})"
    else:
        reason = failure or f"maximum of {max_iter} iterations reached"
        message = (
            f"network solve NOT converged: {reason}; relative residual {history[-1]:.3g} > rtol {rtol:g} "
            f"after {it} iterations"
        )
        logger.warning(message)
    return _assemble_result(net, coords, s, x, converged, it, tuple(history), message, law)


def _branch_results(net: Network, f: NDArray, phi: NDArray) -> tuple[BranchResult, ...]:
    out = []
    for br, fk, pk in zip(net.branches, f, phi):
        if isinstance(br, GapBranch):
            area = br.effective_area
            energy = pk**2 / (2 * br.permeance)
            coenergy = 0.5 * br.permeance * fk**2
            kind = br.kind
        elif isinstance(br, MagnetBranch):
            # the recoil law's field energy, mu H^2/2 per volume (as
            # fem2d.post.energy), and the co-energy int_0^H B dH = mu H^2/2 +
            # B_r H (as fem2d.post.coenergy)
            area = br.area
            energy = 0.5 * br.permeance * fk**2
            coenergy = energy + br.remanence * area * fk
            kind = "magnet"
        else:
            area = br.area
            b = pk / area
            h = fk / br.length
            energy = float(br.material.energy_density(b)) * area * br.length
            coenergy = h * b * area * br.length - energy  # Legendre transform of w(B)
            kind = "core"
        out.append(
            BranchResult(br.name, kind, br.length, area, float(pk), float(pk / area), float(fk / br.length),
                         float(fk), float(energy), float(coenergy))
        )
    return tuple(out)


def _inductance_matrix(net: Network, coords: _TreeCoordinates, g: NDArray) -> NDArray:
    """d lambda_v / d I_w (H) from the converged Jacobian (implicit differentiation of (2)).

    With F = M x + C s(I): M^T G (M dx/dI + C ds/dI) = 0, so one solve with the
    Jacobian M^T G M per winding gives dx/dI, then d phi/dI = G (M dx/dI + C ds/dI).
    """
    nw = len(net.windings)
    idx = [net.branch_index(w.branch) for w in net.windings]
    sens = np.zeros((len(net.branches), nw))  # d s / d I_w
    for j, (w, k) in enumerate(zip(net.windings, idx)):
        sens[k, j] = w.turns
    dc = coords.c @ sens
    jac = coords.m.T @ (g[:, None] * coords.m)
    dx_di = -np.linalg.solve(jac, coords.m.T @ (g[:, None] * dc)) if nw else np.zeros((jac.shape[0], 0))
    dphi_di = g[:, None] * (coords.m @ dx_di + dc)
    turns = np.array([w.turns for w in net.windings])
    return turns[:, None] * dphi_di[idx, :]


def _assemble_result(net, coords, s, x, converged, it, history, message, law=None) -> NetworkResult:
    f = coords.drops(x, s)
    phi, g = (law or _FluxLaw.of(net))(f)
    branches = _branch_results(net, f, phi)
    if converged:
        for br, res in zip(net.branches, branches):
            if isinstance(br, CoreBranch):
                br.material.check_range(res.B, where=f"core branch '{br.name}'")
    l_inc = _inductance_matrix(net, coords, g)
    linkage, secant, incremental = {}, {}, {}
    for j, w in enumerate(net.windings):
        lam = w.turns * float(phi[net.branch_index(w.branch)])
        linkage[w.name] = lam
        incremental[w.name] = float(l_inc[j, j])
        secant[w.name] = lam / w.current if w.current != 0.0 else float(l_inc[j, j])
    potentials = dict(zip(net.nodes, coords.potentials(x, s).tolist()))
    return NetworkResult(
        converged=converged,
        iterations=it,
        residual_history=history,
        message=message,
        branches=branches,
        node_potentials=potentials,
        flux_linkage=linkage,
        inductance=secant,
        incremental_inductance=incremental,
        incremental_inductance_matrix=l_inc,
        energy=float(sum(b.energy for b in branches)),
        coenergy=float(sum(b.coenergy for b in branches)),
    )
