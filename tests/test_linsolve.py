"""fem2d.linsolve: the default solver's factorisation reuse gives the same
solution as a fresh direct solve, to the requested tolerance."""
from __future__ import annotations

import numpy as np
import pytest
import scipy.sparse as sp

from magcheck.fem2d import linsolve
from magcheck.fem2d.linsolve import DirectReuse, IterativeSolve, get_linear_solver


def laplacian(n: int, coef: np.ndarray) -> sp.csr_matrix:
    """2D five-point operator on an n x n grid with edge coefficients from
    ``coef`` (a cell field, positive): symmetric positive definite."""
    N = n * n
    idx = np.arange(N).reshape(n, n)
    rows, cols, vals = [], [], []
    diag = np.full(N, 1e-3)
    for a, b in ((idx[:, :-1], idx[:, 1:]), (idx[:-1, :], idx[1:, :])):
        a, b = a.ravel(), b.ravel()
        c = 0.5 * (coef.ravel()[a] + coef.ravel()[b])
        rows += [a, b]
        cols += [b, a]
        vals += [-c, -c]
        np.add.at(diag, a, c)
        np.add.at(diag, b, c)
    rows.append(np.arange(N))
    cols.append(np.arange(N))
    vals.append(diag)
    return sp.csr_matrix((np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))),
                         shape=(N, N))


@pytest.fixture
def mats():
    rng = np.random.default_rng(3)
    n = 40
    base = 1.0 + rng.random((n, n))
    near = base * (1.0 + 0.05 * rng.random((n, n)))  # a tangent close to the factorised one
    far = base * np.exp(6.0 * rng.random((n, n)))  # one far from it (saturation)
    return laplacian(n, base), laplacian(n, near), laplacian(n, far), rng.random(n * n)


def rel_err(x, ref):
    return float(np.linalg.norm(x - ref) / np.linalg.norm(ref))


def test_reuse_solves_each_operator_to_its_tolerance(mats):
    K0, K1, K2, b = mats
    f = DirectReuse()
    x0 = f(K0)(b)
    assert f.factorisations == 1
    # Source: exact solution by a fresh dense-accurate direct solve (scipy spsolve)
    assert rel_err(x0, sp.linalg.spsolve(K0.tocsc(), b)) < 1e-10  # round-off of a direct solve
    s1 = f(K1)
    assert isinstance(s1, IterativeSolve)
    x1 = s1(b, rtol=1e-10)
    assert f.factorisations == 1, "a nearby tangent is solved by CG on the old factorisation"
    assert 0 < s1.iterations <= 10
    # relative residual <= rtol, so the error <= cond * rtol; this operator's condition ~1e4
    assert rel_err(x1, sp.linalg.spsolve(K1.tocsc(), b)) < 1e-5
    assert np.linalg.norm(K1 @ x1 - b) <= 1.01e-10 * np.linalg.norm(b)


def test_reuse_refactorises_when_cg_runs_out_of_budget(mats, monkeypatch):
    K0, _, K2, b = mats
    monkeypatch.setattr(linsolve, "STALL_PACE", 0.0)  # the budget alone decides
    f = DirectReuse()
    f(K0)(b)
    f.cg_budget = 5
    x2 = f(K2)(b, rtol=1e-12)
    assert f.factorisations == 2
    assert f.log[-1][0] == "factor" and f.log[-2][0] == "cg-failed"
    # Source: exact solution by a fresh direct solve (scipy spsolve)
    assert rel_err(x2, sp.linalg.spsolve(K2.tocsc(), b)) < 1e-10
    assert f.stale, "after a failed CG the next tangent is factorised at once"


def test_reuse_abandons_a_stalling_cg_after_a_third_of_its_budget(mats):
    K0, K1, K2, b = mats
    f = DirectReuse()
    f(K0)(b)
    x2 = f(K2)(b, rtol=1e-12)
    # the far tangent: after 10 of 30 iterations CG on K0's factors is far off
    # the pace it needs, so it is dropped for a factorisation then, not at 30
    assert f.log[-2] == ("cg-stalled", 10, 30) and f.log[-1][0] == "factor"
    # Source: exact solution by a fresh direct solve (scipy spsolve)
    assert rel_err(x2, sp.linalg.spsolve(K2.tocsc(), b)) < 1e-10  # round-off of a direct solve
    assert f.stale
    # a nearby tangent keeps its pace and is solved by CG
    g = DirectReuse()
    g(K0)(b)
    x1 = g(K1)(b, rtol=1e-10)
    assert g.log[-1][0] == "cg" and g.factorisations == 1
    assert np.linalg.norm(K1 @ x1 - b) <= 1.01e-10 * np.linalg.norm(b)


def test_superlu_reuses_the_ordering_of_a_pattern_and_solves_exactly(mats, monkeypatch):
    K0, _, K2, b = mats
    linsolve._ORDERINGS.clear()
    specs = []
    real = linsolve.spla.splu

    def spy(A, permc_spec=None, **kw):
        specs.append(permc_spec)
        return real(A, permc_spec=permc_spec, **kw)

    monkeypatch.setattr(linsolve.spla, "splu", spy)
    x0 = linsolve.superlu(K0)(b)
    x2 = linsolve.superlu(K2)(b)  # same pattern, other values: the kept ordering
    assert specs == ["MMD_AT_PLUS_A", "NATURAL"]
    # Source: exact solutions by a fresh direct solve (scipy spsolve); round-off only
    assert rel_err(x0, sp.linalg.spsolve(K0.tocsc(), b)) < 1e-10
    assert rel_err(x2, sp.linalg.spsolve(K2.tocsc(), b)) < 1e-10
    B = np.stack([b, np.arange(len(b), dtype=float)], axis=1)  # several right-hand sides
    X = linsolve.superlu(K2)(B)
    assert rel_err(X[:, 1], sp.linalg.spsolve(K2.tocsc(), B[:, 1])) < 1e-10
    # another pattern gets its own ordering
    small = K0[:100, :100].tocsr()
    xs = linsolve.superlu(small)(b[:100])
    assert specs[-1] == "MMD_AT_PLUS_A"
    assert rel_err(xs, sp.linalg.spsolve(small.tocsc(), b[:100])) < 1e-10


def test_reuse_refactorises_on_a_new_size(mats):
    K0, _, _, b = mats
    f = DirectReuse()
    f(K0)(b)
    small = K0[:100, :100].tocsr()
    x = f(small)(b[:100])
    assert f.factorisations == 2
    # Source: exact solution by a fresh direct solve (scipy spsolve)
    assert rel_err(x, sp.linalg.spsolve(small.tocsc(), b[:100])) < 1e-10


def test_auto_switches_to_amg_above_the_bound(mats, monkeypatch):
    K0, _, _, b = mats
    auto = get_linear_solver("auto")
    assert isinstance(auto(K0), linsolve._FactorSolve)
    monkeypatch.setattr(linsolve, "AUTO_DIRECT_MAX", K0.shape[0] - 1)
    s = auto(K0)
    assert not isinstance(s, linsolve._FactorSolve) and isinstance(s, IterativeSolve)
    # Source: exact solution by a fresh direct solve (scipy spsolve); AMG-CG to rtol 1e-12
    assert rel_err(s(b), sp.linalg.spsolve(K0.tocsc(), b)) < 1e-7


def test_default_is_auto_and_each_call_is_fresh():
    assert linsolve.DEFAULT_SOLVER == "auto"
    a, b = get_linear_solver(None), get_linear_solver(None)
    assert a is not b


def test_default_solver_reuses_the_factorisation_and_matches_a_fresh_direct_solve():
    """A saturated Newton solve and its incremental inductance with the
    default solver (factorisation reused as CG preconditioner, also for the
    tangent at the converged state) against SuperLU on every tangent."""
    from magcheck.fem2d import post
    from magcheck.fem2d.linsolve import Auto
    from magcheck.fem2d.materials import AIR, BrauerReluctivity
    from magcheck.fem2d.mesh import build_mesh
    from magcheck.fem2d.solver import solve

    from test_fem_newton import coil, core_layout

    steel = BrauerReluctivity(3.8, 2.17, 396.2)  # test-only law (Brauer, IEEE Trans. Magn. MAG-11, 1975)
    mesh = build_mesh(core_layout(order=2, size=3e-3))
    mats = {"steel": steel, "copper": AIR}
    auto = Auto()
    ref = solve(mesh, mats, currents=coil(40.0), linear_solver="superlu")
    sol = solve(mesh, mats, currents=coil(40.0), linear_solver=auto)
    n_newton = auto.direct.factorisations
    assert any(kind == "cg" for kind, _, _ in auto.direct.log), "no tangent reused a factorisation"
    L = post.incremental_flux_linkage(sol, 50, "cin", "cout")
    assert auto.direct.factorisations == n_newton, "dA/dI refactorised the converged tangent"
    # Source: the same discrete problem solved with a fresh SuperLU factorisation
    # of every tangent. Tolerances: Newton stops at 1e-8 relative residual and
    # dA/dI is solved to 1e-9, so both agree to ~1e-8 (1e-7 leaves round-off room)
    assert np.max(np.abs(sol.A - ref.A)) <= 1e-7 * np.max(np.abs(ref.A))
    assert L == pytest.approx(post.incremental_flux_linkage(ref, 50, "cin", "cout"), rel=1e-7)


def test_one_blas_thread_limits_every_pool_and_restores_it():
    from threadpoolctl import threadpool_info

    before = [(p["filepath"], p["num_threads"]) for p in threadpool_info()]
    with linsolve.one_blas_thread():
        inside = threadpool_info()
        assert inside and all(p["num_threads"] == 1 for p in inside)
    with linsolve.one_blas_thread():  # the kept controller, a second time
        assert all(p["num_threads"] == 1 for p in threadpool_info())
    assert [(p["filepath"], p["num_threads"]) for p in threadpool_info()] == before
