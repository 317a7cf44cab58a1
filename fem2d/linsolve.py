"""Pluggable sparse linear solvers for the (symmetric positive definite) tangent.

A factory takes a CSR matrix and returns ``solve(rhs) -> x``.  Registry:

- ``"auto"`` (default): ``"direct-reuse"`` up to :data:`AUTO_DIRECT_MAX`
  DOFs, ``"amg-cg"`` above.
- ``"direct-reuse"``: a direct factorisation reused across the Newton steps
  and the post-processing's tangent solves as CG preconditioner
  (:class:`DirectReuse`).
- ``"amg-cg"``: pyamg smoothed aggregation as preconditioner for
  scipy CG, relative tolerance 1e-12 (pure pip wheels, least memory), a new
  hierarchy for every tangent.  Inside Newton the steps are solved inexactly
  (forcing term ~ the residual), which makes it as fast as a direct solver
  on the demo check (1.5 s of linear algebra either way).
- ``"direct"``: CHOLMOD when scikit-sparse is installed, else SuperLU.  One
  solve of the demo choke's saturated tangent to 1e-10 (2 cores, one BLAS
  thread): 24k DOFs AMG-CG 0.29 s, SuperLU 0.10 s, CHOLMOD 0.10 s; 197k DOFs
  5.5 / 2.5 / 1.6 s; 477k DOFs 32 / 9.7 / 6.7 s (bench/fe_bench.py).
- ``"amg-cg-reuse"``: the same, reusing the AMG hierarchy across Newton steps
  until CG slows down (:class:`AmgCgReuse`); measured slower than
  ``"amg-cg"`` on saturating problems (the tangent changes too much).
- ``"superlu"``: scipy's SuperLU direct factorisation, minimum-degree
  ordering of K + K^T in symmetric mode (2-2.7x faster than its default
  COLAMD ordering on these matrices).
- ``"cholmod"``: sparse Cholesky from scikit-sparse, only if importable.
"""
from __future__ import annotations

import logging
import time
from typing import Any, Callable

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla

__all__ = ["LinearSolverError", "SOLVERS", "get_linear_solver", "superlu", "amg_cg",
           "DEFAULT_SOLVER", "IterativeSolve", "AmgCgReuse", "DirectReuse", "Auto",
           "AUTO_DIRECT_MAX", "one_blas_thread"]

logger = logging.getLogger(__name__)

Factory = Callable[[sp.csr_matrix], Callable[[np.ndarray], np.ndarray]]


from .errors import LinearSolverError  # noqa: E402  (re-exported)

_CONTROLLER: tuple[int, Any] | None = None


def one_blas_thread():
    """A context that holds the BLAS and OpenMP pools to one thread (threadpoolctl),
    as ``threadpool_limits(limits=1)`` does, from a controller kept while no
    module has been imported since: ``threadpool_limits`` looks up the loaded
    libraries each time (~4 ms, several times per solve and per sweep point),
    ``ThreadpoolController.limit`` on a kept controller ~0.2 ms.  A new import
    (which may load a library with a pool of its own) makes a new controller."""
    import sys

    from threadpoolctl import ThreadpoolController

    global _CONTROLLER
    key = len(sys.modules)
    if _CONTROLLER is None or _CONTROLLER[0] != key:
        _CONTROLLER = (key, ThreadpoolController())
    return _CONTROLLER[1].limit(limits=1)


ORDERINGS_KEPT = 8
"""Sparsity patterns whose fill-reducing ordering :func:`superlu` keeps."""

_ORDERINGS: dict[tuple, np.ndarray] = {}


def _pattern_key(K: sp.csc_matrix) -> tuple:
    """The sparsity pattern of K as a dictionary key (shape, nnz, digest of
    the index arrays): the tangents of one mesh share it (fem2d.assembly's
    fixed pattern), so their ordering is computed once."""
    import hashlib

    h = hashlib.blake2b(digest_size=16)
    h.update(np.ascontiguousarray(K.indptr).data)
    h.update(np.ascontiguousarray(K.indices).data)
    return (K.shape, K.nnz, h.hexdigest())


def superlu(K: sp.csr_matrix):
    """SuperLU factorisation of the symmetric K (minimum degree on K + K^T,
    symmetric mode: diagonal pivots preferred); returns ``solve(rhs)``.

    Symbolic reuse: the minimum-degree ordering depends only on the sparsity
    pattern, which every tangent of one mesh shares; it is kept per pattern
    (the last :data:`ORDERINGS_KEPT`) and a later K with the same pattern is
    permuted symmetrically by it and factorised in its natural order, which
    skips the ordering (~15 % of a factorisation at 22k-43k DOFs; the
    factors have the same fill).
    """
    Kc = K.tocsc()
    Kc.sort_indices()
    key = _pattern_key(Kc)
    q = _ORDERINGS.get(key)
    if q is None:
        lu = spla.splu(Kc, permc_spec="MMD_AT_PLUS_A", options=dict(SymmetricMode=True))
        # the column order SuperLU used: position j holds column q[j] of K
        q = np.empty_like(lu.perm_c)
        q[lu.perm_c] = np.arange(len(q), dtype=q.dtype)
        if len(_ORDERINGS) >= ORDERINGS_KEPT:
            _ORDERINGS.pop(next(iter(_ORDERINGS)))
        _ORDERINGS[key] = q
        return lu.solve
    lu = spla.splu(Kc[q][:, q].tocsc(), permc_spec="NATURAL", options=dict(SymmetricMode=True))

    def solve(rhs: np.ndarray) -> np.ndarray:
        # (P K P^T) y = P b with (P v)_j = v[q[j]]; x = P^T y
        y = lu.solve(np.asarray(rhs)[q])
        x = np.empty_like(y)
        x[q] = y
        return x

    return solve


class IterativeSolve:
    """An iterative solve ``x = solve(rhs, rtol=None)``.

    The Newton loop passes a looser ``rtol`` (inexact Newton, forcing term
    proportional to the current residual, which keeps quadratic convergence:
    Dembo, Eisenstat, Steihaug, SIAM J. Numer. Anal. 19, 1982).
    """

    def __init__(self, K: sp.csr_matrix, M, rtol: float, maxiter: int, name: str):
        self.K, self.M, self.rtol, self.maxiter, self.name = K, M, rtol, maxiter, name
        self.iterations = 0
        self.rate: float | None = None  # CG iterations per decade of residual reduction
        self.on_done: Callable[[IterativeSolve], None] | None = None

    def __call__(self, rhs: np.ndarray, rtol: float | None = None) -> np.ndarray:
        rtol = self.rtol if rtol is None else max(float(rtol), self.rtol)
        count = [0]

        def cb(_xk):
            count[0] += 1

        x, info = spla.cg(self.K, rhs, rtol=rtol, atol=0.0, maxiter=self.maxiter, M=self.M,
                          callback=cb)
        self.iterations += count[0]
        decades = max(-np.log10(rtol), 1.0)
        self.rate = count[0] / decades
        if self.on_done is not None:
            self.on_done(self)
        if info != 0:
            res = float(np.linalg.norm(rhs - self.K @ x)) / max(float(np.linalg.norm(rhs)), 1e-300)
            if res > 1e3 * rtol:
                raise LinearSolverError(
                    f"{self.name}: no convergence after {self.maxiter} iterations (rel. residual {res:.2e})")
        return x


def amg_cg(K: sp.csr_matrix, rtol: float = 1e-12, maxiter: int = 1000) -> IterativeSolve:
    """pyamg smoothed-aggregation preconditioned CG; returns ``solve(rhs, rtol=None)``.

    ``rtol`` is relative to ||rhs||; 1e-12 by default so that Newton's 1e-8
    relative residual is reachable.
    """
    import pyamg

    ml = pyamg.smoothed_aggregation_solver(K, symmetry="symmetric", max_coarse=500)
    return IterativeSolve(K, ml.aspreconditioner(cycle="V"), rtol, maxiter, "amg-cg")


class AmgCgReuse:
    """Stateful AMG-CG factory for one Newton solve: keeps the AMG hierarchy
    of an earlier tangent as preconditioner for later tangents (same
    sparsity) and rebuilds it only when CG needed more than ``growth`` times
    the iterations it took right after the last rebuild.

    The CG operator is always the current tangent, so the solution accuracy
    is unchanged; only the preconditioner is reused.
    """

    def __init__(self, rtol: float = 1e-12, maxiter: int = 1000, growth: float = 1.2):
        self.rtol, self.maxiter, self.growth = rtol, maxiter, growth
        self._M: Any = None
        self._last: IterativeSolve | None = None
        self._base_rate: float | None = None

    def __call__(self, K: sp.csr_matrix) -> IterativeSolve:
        last = self._last
        if last is not None and self._base_rate is not None and last.rate is not None \
                and last.rate > self.growth * self._base_rate:
            self._M = None  # preconditioner has gone stale
        fresh = self._M is None
        if fresh:
            import pyamg

            ml = pyamg.smoothed_aggregation_solver(K, symmetry="symmetric", max_coarse=500)
            self._M = ml.aspreconditioner(cycle="V")
        solver = IterativeSolve(K, self._M, self.rtol, self.maxiter, "amg-cg")
        solver.on_done = (lambda s: self._record(s, fresh))
        self._last = solver
        return solver

    def _record(self, solver, fresh):
        if fresh and solver.rate is not None:
            self._base_rate = solver.rate


STALL_PACE = 0.5
"""CG on a stale factorisation is abandoned after a third of its budget when
it has reduced the residual by fewer than STALL_PACE x (the decades asked)
x (iterations so far / budget) decades: at that pace it would need more than
twice the budget.  0 turns the test off."""


class _Stalled(Exception):
    """CG's pace says it will not converge within its budget."""


class _FactorSolve(IterativeSolve):
    """One tangent's solve inside :class:`DirectReuse`: an exact back-
    substitution when the tangent was factorised itself, else CG on the
    tangent preconditioned by an earlier tangent's factorisation (falls
    back to a fresh factorisation when CG does not converge within the
    owner's budget).  The CG operator is always this tangent, so the
    accuracy is that of ``rtol`` either way."""

    def __init__(self, K: sp.csr_matrix, owner: "DirectReuse"):
        super().__init__(K, None, owner.rtol, owner.budget(), "direct-reuse")
        self.owner = owner
        self.fresh = owner.stale

    def __call__(self, rhs: np.ndarray, rtol: float | None = None) -> np.ndarray:
        own = self.owner
        if self.fresh:
            own.factorise(self.K)
            return own.lu_solve(rhs)
        rtol = self.rtol if rtol is None else max(float(rtol), self.rtol)
        count = [0]
        look = max(self.maxiter // 3, 1)
        norm_b = float(np.linalg.norm(rhs))

        def cb(xk):
            count[0] += 1
            if count[0] == look and look < self.maxiter and STALL_PACE > 0:
                # a third of the budget spent: give up when the pace so far
                # (decades of residual per iteration) would reach rtol only
                # in more than twice the budget (CG with a stale factorisation
                # that stalls does not recover: bench/fe_bench.py's cold solves)
                res = float(np.linalg.norm(rhs - self.K @ xk)) / max(norm_b, 1e-300)
                done = -np.log10(max(res, 1e-300))
                if not done * self.maxiter >= STALL_PACE * (-np.log10(rtol)) * look:
                    raise _Stalled

        t0 = time.perf_counter()
        try:
            x, info = spla.cg(self.K, rhs, rtol=rtol, atol=0.0, maxiter=self.maxiter,
                              M=own.preconditioner(), callback=cb)
            outcome = "cg" if info == 0 and np.all(np.isfinite(x)) else "cg-failed"
        except _Stalled:
            x, info, outcome = np.full_like(rhs, np.nan, dtype=float), 1, "cg-stalled"
        own.cg_seconds += time.perf_counter() - t0
        self.iterations += count[0]
        own.cg_iterations += count[0]
        own.log.append((outcome, count[0], self.maxiter))
        if info != 0 or not np.all(np.isfinite(x)):
            # the old factorisation no longer fits: a new one, and the next
            # tangent (still changing fast) factorised without trying CG first
            own.factorise(self.K)
            own.stale = True
            return own.lu_solve(rhs)
        # worth keeping only while CG stays well under the cost of a new factorisation
        own.stale = count[0] > self.maxiter // 2
        return x


class DirectReuse:
    """Stateful direct factory for one Newton solve and its post-processing:
    SuperLU (or CHOLMOD) factorises a tangent; later tangents on the same mesh
    are solved by CG preconditioned with that factorisation (a back-
    substitution per iteration, ~1/40 of a factorisation at 24k DOFs) as
    long as CG converges within a budget that keeps it cheaper than a new
    factorisation; otherwise the tangent is factorised afresh.

    Near the Newton solution, and for the tangent at the converged state
    (incremental inductance, inductance matrix), the tangent differs from
    the last factorised one by little, so CG takes a few iterations.
    Measured on the demo choke (24k DOFs, 2 cores, one BLAS thread): one
    SuperLU factorisation 0.09 s, one back-substitution 2.5 ms.
    """

    def __init__(self, rtol: float = 1e-12, factor: Callable | None = None, cg_budget: int = 30):
        self.rtol = rtol
        self.cg_budget = cg_budget
        self._factor = factor or _default_factor
        self.stale = True
        self._solve: Callable | None = None
        self._n = -1
        self.t_factor = 0.0  # seconds of the last factorisation (for benches)
        self.factorisations = 0
        self.cg_iterations = 0
        self.cg_seconds = 0.0
        self.log: list[tuple[str, int, int]] = []  # ("factor"|"cg", iterations, budget) per solve

    def __call__(self, K: sp.csr_matrix) -> _FactorSolve:
        if K.shape[0] != self._n:
            self.stale = True
        return _FactorSolve(K, self)

    def budget(self) -> int:
        """CG iterations allowed before a new factorisation is cheaper: a
        fixed count, so that the sequence of solves (and the last digits of
        the results) does not depend on the machine's load.  Measured
        factorisation / (back-substitution + product) time ratios: 17-44 on
        the demo meshes (8k-45k DOFs)."""
        return self.cg_budget

    def factorise(self, K: sp.csr_matrix) -> None:
        t0 = time.perf_counter()
        self._solve = self._factor(K)
        self.t_factor = time.perf_counter() - t0
        self._n = K.shape[0]
        self.factorisations += 1
        self.log.append(("factor", 0, 0))
        self.stale = False

    def lu_solve(self, rhs: np.ndarray) -> np.ndarray:
        assert self._solve is not None
        return self._solve(rhs)

    def preconditioner(self) -> spla.LinearOperator:
        assert self._solve is not None
        n = self._n
        return spla.LinearOperator((n, n), matvec=self._solve, dtype=float)


def _default_factor(K: sp.csr_matrix):
    if "cholmod" in SOLVERS:
        return _cholmod(K)
    return superlu(K)


AUTO_DIRECT_MAX = 100_000
"""DOFs up to which "auto" solves directly (:class:`DirectReuse`); above it
AMG-CG.  A SuperLU factorisation grows faster than linearly with the DOFs
(P2 tangents, 2 cores, one BLAS thread, loaded machine: 14k DOFs 0.08-0.17 s,
24k 0.09 s, 43k 0.46-0.68 s, 48k r-z 0.6-0.9 s, 78k 0.77 s), an inexact
AMG-CG Newton step about linearly (0.16, -, 0.26, 0.33 s).  A cold Newton
solve alone favours AMG-CG from ~30k DOFs (bench window core at 43k: 2.6 s
CPU reusing factorisations, 2.1 s AMG-CG; r-z 48k: 4.3 / 2.4 s; 14k: 1.15 /
1.93 s), but a check's solve is warm-started and followed by tangent solves
to 1e-9..1e-11 (dA/dI, the inductance matrix), which the factorisation turns
into a few CG steps: the demo transformer's finest mesh (45k DOFs, solve and
measurement) took 1.8-2.1 s CPU direct against 3.7-3.9 s AMG-CG.  The bound
keeps the factor's memory to a few hundred MB."""


class Auto:
    """The default: :class:`DirectReuse` up to :data:`AUTO_DIRECT_MAX` DOFs,
    AMG-CG above.  One instance per nonlinear solve (state is per mesh)."""

    def __init__(self, large: Factory | None = None):
        self.direct = DirectReuse()
        self.large = large or amg_cg  # above the bound (a sequence of solves: AmgCgReuse())

    def __call__(self, K: sp.csr_matrix):
        if K.shape[0] <= AUTO_DIRECT_MAX:
            return self.direct(K)
        return self.large(K)


def _cholmod(K: sp.csr_matrix):
    from sksparse.cholmod import cholesky  # optional

    f = cholesky(K.tocsc())
    return f


#: registry: name -> maker of a fresh factory (one per solve, so stateful
#: factories such as the AMG reuse start clean)
SOLVERS: dict[str, Callable[[], Factory]] = {
    "auto": Auto,
    "direct-reuse": DirectReuse,
    "superlu": lambda: superlu,
    "amg-cg": lambda: amg_cg,
    "amg-cg-reuse": AmgCgReuse,
}
try:  # optional, never a hard dependency
    import sksparse.cholmod  # noqa: F401

    SOLVERS["cholmod"] = lambda: _cholmod
    SOLVERS["direct"] = lambda: _cholmod
except Exception:  # pragma: no cover - depends on the machine
    SOLVERS["direct"] = lambda: superlu

DEFAULT_SOLVER = "auto"


def get_linear_solver(spec=None) -> Factory:
    """Return a factory from a registry name, a callable, or None (default)."""
    if spec is None:
        spec = DEFAULT_SOLVER
    if callable(spec):
        return spec
    if isinstance(spec, str) and spec in SOLVERS:
        return SOLVERS[spec]()
    raise LinearSolverError(f"linear_solver = {spec!r}: unknown (have {sorted(SOLVERS)})")
