"""fem2d plumbing: layout validation, gmsh sessions, region assignment,
point probes, VTU export, import isolation."""
from __future__ import annotations

import concurrent.futures
import os
import subprocess
import sys
import tempfile
import threading

import numpy as np
import pytest
from scipy.constants import mu_0

from magcheck.fem2d import post
from magcheck.fem2d.export import write_vtu
from magcheck.fem2d.layout import (AirBox, Annulus, Disk, Layout, LayoutError, MeshSettings,
                                   Polygon, Rect, Region)
from magcheck.fem2d.linsolve import LinearSolverError
from magcheck.fem2d.materials import AIR, LinearReluctivity, MaterialError
from magcheck.fem2d.mesh import build_mesh
from magcheck.fem2d.solver import SolverInputError, solve

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))


def small_layout(order=2):
    return Layout((Region("block", (Rect(0, 0, 0.01, 0.01),), "iron", kind="core"),
                   Region("slot", (Rect(0.004, 0.004, 0.006, 0.006),), "air", kind="gap"),
                   Region("wire", (Disk(0.015, 0.005, 0.002),), "copper", current=5.0, kind="coil")),
                  mesh=MeshSettings(order=order, size=1e-3))


# ------------------------------------------------------------ validation
@pytest.mark.parametrize("make,words", [
    (lambda: Region("a", (Rect(0, 0, -1, 1),), "m"), ["'a'", "-1"]),
    (lambda: Region("b", (Disk(0, 0, 0.0),), "m"), ["'b'", "Disk.r", "0.0"]),
    (lambda: Region("c", (Rect(0, 0, float("nan"), 1),), "m"), ["'c'", "x1", "nan"]),
    (lambda: Region("air", (Rect(0, 0, 1, 1),), "m"), ["'air'", "reserved"]),
    (lambda: Region("outer", (Rect(0, 0, 1, 1),), "m"), ["'outer'", "reserved"]),
    (lambda: Region("d", (Annulus(0, 0, 2.0, 1.0),), "m"), ["'d'", "r_out", "r_in"]),
    (lambda: Region("e", (Polygon(((0, 0), (1, 0))),), "m"), ["'e'", "3 points"]),
    (lambda: Region("f", (Rect(0, 0, 1, 1),), "m", current=float("inf")), ["'f'", "current", "inf"]),
    (lambda: Layout((Region("g", (Rect(0, 0, 1, 1),), "m"), Region("g", (Rect(2, 0, 3, 1),), "m"))),
     ["'g'", "duplicate"]),
    (lambda: Layout((Region("h", (Rect(0, 0, 1, 1),), "m"),), depth=-2.0), ["depth", "-2.0"]),
    (lambda: Layout((Region("k", (Rect(0, 0, 1, 1),), "m"),), air=AirBox(size=0.5)), ["'k'", "sticks out"]),
    (lambda: MeshSettings(order=3), ["order", "3"]),
    (lambda: AirBox(shape="sphere"), ["shape", "sphere"]),
])
def test_layout_errors_name_region_and_value(make, words):
    with pytest.raises(LayoutError) as exc:
        make()
    for w in words:
        assert w in str(exc.value)
    assert isinstance(exc.value, ValueError)


def test_region_fully_covered_is_an_error():
    lay = Layout((Region("under", (Rect(0, 0, 1e-3, 1e-3),), "m"),
                  Region("over", (Rect(-1e-3, -1e-3, 2e-3, 2e-3),), "m")))
    with pytest.raises(LayoutError, match="'under'.*area = 0"):
        build_mesh(lay)


def test_solver_input_errors(tmp_path):
    rm = build_mesh(small_layout(order=1))
    with pytest.raises(MaterialError, match="'block'.*'iron'"):
        solve(rm, {"copper": AIR})
    with pytest.raises(SolverInputError, match="'nope'"):
        solve(rm, {"iron": AIR, "copper": AIR}, currents={"nope": 1.0})
    with pytest.raises(LinearSolverError, match="'magic'"):
        solve(rm, {"iron": AIR, "copper": AIR}, linear_solver="magic")
    with pytest.raises(SolverInputError, match="A0 shape"):
        solve(rm, {"iron": AIR, "copper": AIR}, A0=np.zeros(3))


# -------------------------------------------------------- regions / mesh
def test_later_region_wins_and_areas():
    rm = build_mesh(small_layout())
    sol = solve(rm, {"iron": LinearReluctivity(100.0), "copper": AIR})
    areas = sol.assembler.areas
    # Source: exact areas of the shapes (plane geometry); the slot is cut out of
    # the block because it is listed later. Tolerance 1e-9 relative for
    # straight edges (exact up to round-off); 5e-4 for the curved P2 disk with
    # h = r/2 (isoparametric boundary error O(h^4), measured 1.1e-4; a
    # straight-sided 13-gon would miss 4 %).
    assert areas["slot"] == pytest.approx(4e-6, rel=1e-9)
    assert areas["block"] == pytest.approx(1e-4 - 4e-6, rel=1e-9)
    assert areas["wire"] == pytest.approx(np.pi * 4e-6, rel=5e-4)
    cx, cy, half = rm.layout.air_geometry()
    total = sum(areas.values())
    assert total == pytest.approx((2 * half) ** 2, rel=1e-9)
    assert len(rm.boundaries["outer"]) > 0
    # outer facets lie on the air box boundary
    p = rm.mesh.p[:, rm.mesh.facets[:, rm.boundaries["outer"]]]
    on_edge = np.isclose(np.abs(p[0] - cx), half) | np.isclose(np.abs(p[1] - cy), half)
    assert np.all(on_edge)


def test_gap_refinement_elements_across_gap():
    rm = build_mesh(small_layout(order=1))
    m = rm.mesh
    gap = rm.subdomains["slot"]
    # at least gap_elements (4) elements across the 2 mm slot: element size <= 0.5 mm
    edge = np.linalg.norm(m.p[:, m.t[[0, 1, 2]]] - m.p[:, m.t[[1, 2, 0]]], axis=0)[:, gap]
    assert edge.max() <= 2e-3 / 4 * 1.5  # gmsh sizes are targets; 1.5x slack for triangle edges
    # away from the slot the block keeps the global 1 mm size (fields stop at DistMax)
    air = rm.subdomains["air"]
    edge_air = np.linalg.norm(m.p[:, m.t[[0, 1, 2]]] - m.p[:, m.t[[1, 2, 0]]], axis=0)[:, air]
    assert edge_air.max() > 3e-3


# ------------------------------------------------------------ gmsh sessions
def _mesh_count(order):
    rm = build_mesh(small_layout(order))
    return int(rm.nelements)


def test_gmsh_twice_in_process_in_thread_and_in_worker(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    tmpdir = tempfile.gettempdir()
    before = set(os.listdir(tmpdir))
    n1 = _mesh_count(1)
    n2 = _mesh_count(1)
    assert n1 == n2 > 0  # deterministic and repeatable in one process
    out = {}
    t = threading.Thread(target=lambda: out.setdefault("n", _mesh_count(1)))
    t.start()
    t.join()
    assert out["n"] == n1
    with concurrent.futures.ProcessPoolExecutor(max_workers=1) as ex:
        assert ex.submit(_mesh_count, 1).result(timeout=120) == n1
    assert os.listdir(tmp_path) == []
    new = {f for f in set(os.listdir(tmpdir)) - before if not f.startswith("pymp-")}
    assert not new, new


# --------------------------------------------------------------- probes
def test_sample_b_many_points_matches_element_values():
    rm = build_mesh(small_layout())
    sol = solve(rm, {"iron": LinearReluctivity(100.0), "copper": AIR})
    asm = sol.assembler
    xy = np.asarray(asm.basis.global_coordinates())  # quadrature points (2, ne, nq)
    pts = xy.reshape(2, -1)
    Bq = post.b_field(sol).reshape(2, -1)
    # probing at the quadrature points must reproduce the field there (same
    # polynomial); tolerance: 1e-9 relative to the peak B (Newton inverse map
    # converges to round-off), except where a point on an element edge is
    # attributed to the neighbour (B jumps there) - none at interior points.
    Bp = post.sample_b(sol, pts)
    assert np.max(np.abs(Bp - Bq)) <= 1e-9 * np.abs(Bq).max()
    with pytest.raises(post.PostError, match="outside the mesh"):
        post.sample_b(sol, np.array([[1.0], [1.0]]))


def test_peak_and_path_mean_h():
    a, I = 1e-3, 20.0
    lay = Layout((Region("wire", (Disk(0, 0, a),), "copper", current=I),), air=AirBox("disk", size=8e-3))
    sol = solve(build_mesh(lay), {"copper": AIR})
    bpk, (x, y) = post.peak_b(sol, "wire")
    # Source: exact solution, round wire: |B| peaks at r = a with mu0 I/(2 pi a).
    # Tolerance 3 %: the outermost quadrature points sit a fraction of an
    # element (h = a/4) inside r = a, where B = mu0 I r/(2 pi a^2) (measured 1.2 % low).
    assert bpk == pytest.approx(mu_0 * I / (2 * np.pi * a), rel=3e-2)
    assert np.hypot(x, y) == pytest.approx(a, rel=0.05)
    t = np.linspace(0, 2 * np.pi, 65)[:-1]
    circle = 2e-3 * np.vstack([np.cos(t), np.sin(t)])
    res = post.path_mean_h(sol, circle, closed=True, n=500)
    # Source: Ampere's law (exact): |H| = I/(2 pi r) on the circle r = 2 mm; the
    # 64-gon sits at r cos(pi/64) at chord midpoints. Tolerance 0.5 %.
    assert res.mean_h == pytest.approx(I / (2 * np.pi * 2e-3), rel=5e-3)
    assert res.s.shape == res.h.shape == res.b.shape == res.region.shape == (500,)
    line = np.array([[-3e-3, 3e-3], [0.0, 0.0]])
    res2 = post.path_mean_h(sol, line, exclude=("wire",), n=600)
    assert not np.any(res2.kept & (res2.region == "wire"))
    assert np.any(~res2.kept)


# --------------------------------------------------------------- export
def test_vtu_round_trip(tmp_path):
    import meshio

    for order, ctype, nper in ((2, "triangle6", 6), (1, "triangle", 3)):
        rm = build_mesh(small_layout(order))
        sol = solve(rm, {"iron": LinearReluctivity(100.0), "copper": AIR})
        path = tmp_path / f"f{order}.vtu"
        write_vtu(sol, path)
        assert os.listdir(tmp_path).count(f"f{order}.vtu") == 1
        m = meshio.read(path)
        ne = rm.nelements
        assert m.cells[0].type == ctype and m.cells[0].data.shape == (ne, nper)
        assert m.points.shape == (sol.ndofs, 3)  # a closed box: every DOF is in a cell
        assert m.point_data["A_z_Wb_per_m"].shape == (sol.ndofs,)
        np.testing.assert_allclose(m.point_data["A_z_Wb_per_m"], sol.A)
        assert m.cell_data["B_T"][0].shape == (ne, 3)
        assert m.cell_data["H_A_per_m"][0].shape == (ne, 3)
        assert m.cell_data["B_magnitude_T"][0].shape == (ne,)
        assert m.cell_data["mu_r"][0].shape == (ne,)
        assert set(np.unique(m.cell_data["region"][0])) == {0, 1, 2, 3}
        assert {k: int(v[0]) for k, v in m.field_data.items()} == {
            n: i for i, n in enumerate(rm.region_names)}
    assert sorted(os.listdir(tmp_path)) == ["f1.vtu", "f2.vtu"]  # no temp files left


# --------------------------------------------------------------- isolation
def test_import_fem2d_pulls_in_neither_analytic_nor_compare():
    code = ("import magcheck.fem2d, magcheck.fem2d.post, magcheck.fem2d.export, "
            "magcheck.fem2d.solver, sys; "
            "bad = [m for m in sys.modules if m.split('.')[:2] in "
            "(['magcheck', 'analytic'], ['magcheck', 'compare'])]; "
            "assert 'magcheck.fem2d.solver' in sys.modules; assert not bad, bad")
    subprocess.run([sys.executable, "-c", code], check=True, cwd=ROOT)


def test_assembler_geometry_shared_per_mesh_and_same_answer():
    """Solves on one mesh share the mesh-only setup (basis, quadrature, sparsity): the
    second solve reuses it (the same arrays, read-only) and gives the same potential, to the
    last bit, as a solve with the shared setup cleared; a different material on the same mesh
    still gets its own laws."""
    from magcheck.fem2d import assembly

    rm = build_mesh(small_layout())
    mats = {"iron": LinearReluctivity(100.0), "copper": AIR}
    first = solve(rm, mats)
    second = solve(rm, mats)
    assert second.assembler.G is first.assembler.G
    assert not second.assembler.G.flags.writeable
    assembly._GEOMETRY.clear()
    fresh = solve(rm, mats)
    assert fresh.assembler.G is not first.assembler.G
    np.testing.assert_array_equal(second.A, fresh.A)
    other = solve(rm, {"iron": LinearReluctivity(1000.0), "copper": AIR})
    assert not np.array_equal(other.A, fresh.A)


def test_point_locator_shared_per_mesh_and_its_memo_exact():
    """The point locator is built once per mesh and shared by solves on it; a
    point set located before is answered from its memo, and a different point
    set of the same size is located anew: each probe equals a fresh locator's."""
    from magcheck.fem2d.post import _Locator, _locator

    rm = build_mesh(small_layout())
    one = solve(rm, {"iron": LinearReluctivity(100.0), "copper": AIR})
    two = solve(rm, {"iron": LinearReluctivity(1000.0), "copper": AIR})
    assert _locator(one) is _locator(two)
    rng = np.random.default_rng(5)
    p1 = np.vstack([rng.uniform(0.0005, 0.0095, 50), rng.uniform(0.0005, 0.0095, 50)])
    p2 = np.vstack([rng.uniform(0.0005, 0.0095, 50), rng.uniform(0.0005, 0.0095, 50)])
    b1 = post.sample_b(one, p1)
    for pts in (p1, p2, p1):  # p1 from the memo, p2 (same shape) located anew
        got = post.sample_b(two, pts)
        _, g, _ = _Locator(two.assembler).evaluate(two.A, pts)  # a new one: no memo
        # Source: the same field by a locator without memo (the same arithmetic: exact)
        np.testing.assert_array_equal(got, two.assembler.formulation.b(g, pts))
    assert not np.allclose(b1, post.sample_b(two, p1))  # another solution, another field
