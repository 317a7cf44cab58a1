"""Sources (coils, magnets, background field), the open boundary and the
inductance matrix of fem2d; each check names its reference."""
import math

import numpy as np
import pytest
from scipy.constants import mu_0

from magcheck.fem2d import post
from magcheck.fem2d.exterior import ring_tensor
from magcheck.fem2d.layout import AirBox, Disk, Layout, LayoutError, MeshSettings, Rect, Region
from magcheck.fem2d.materials import AIR
from magcheck.fem2d.mesh import build_mesh
from magcheck.fem2d.solver import SolverInputError, solve
from magcheck.fem2d.sources import Background, Coil, Magnet, Sources
from magcheck.fem2d.verification import BRAUER, loop_mutual_inductance


def _pair(open_: bool, factor: float, size: float = 2.5e-4):
    a, d = 1e-3, 10e-3
    lay = Layout((Region("go", (Disk(-d / 2, 0.0, a),), "cu", kind="coil"),
                  Region("ret", (Disk(d / 2, 0.0, a),), "cu", kind="coil")),
                 air=AirBox("disk", factor=factor, open=open_),
                 mesh=MeshSettings(size=size, grading=0.2))
    return build_mesh(lay)


@pytest.fixture(scope="module")
def pair_open():
    return _pair(True, 1.5)


LINE = Coil("line", (("go", 1), ("ret", -1)), turns=3.0)


def test_open_boundary_gives_the_unbounded_two_wire_inductance(pair_open):
    # exact: L' = (mu0/pi)(1/4 + ln(d/a)) per metre for uniform current in
    # round wires (each wire's outer field is a line current's)
    exact = mu_0 / math.pi * (0.25 + math.log(10.0))
    sol = solve(pair_open, {"cu": AIR}, sources=Sources(coils=(LINE,)), currents={"line": 2.0})
    lam = post.coil_flux_linkage(sol, "line")
    assert lam / (9.0 * 2.0) == pytest.approx(exact, rel=1e-4)
    # energy includes the mapped exterior: W = L I^2 / 2
    assert post.energy(sol) == pytest.approx(0.5 * lam * 2.0, rel=1e-9)
    # the same air disk closed (A = 0 on its rim) misses by over 10 %
    closed = solve(_pair(False, 1.5), {"cu": AIR}, sources=Sources(coils=(LINE,)),
                   currents={"line": 2.0})
    assert post.coil_flux_linkage(closed, "line") < 0.9 * lam


def test_ring_tensor_meets_the_air_at_the_inner_radius():
    # f'(R1) = 1 for R2 = 2 R1 (fem2d.exterior): T = nu0 I (planar) and
    # nu0/r I (r-z, the formulation's stiffness weight 1/r) at rho = R1
    x = np.array([[0.3, 0.6 * math.cos(1.0)], [0.4, 0.6 * math.sin(1.0)]]) * (1 - 1e-12)
    T = ring_tensor(x[:, :1] * 1.0, (0.0, 0.0), 0.5, 1.0, False)[..., 0]
    assert np.allclose(T * mu_0, np.eye(2), rtol=0, atol=1e-9)
    Tr = ring_tensor(x[:, 1:] / 0.6 * 0.5, (0.0, 0.0), 0.5, 1.0, True)[..., 0]
    r = 0.5 * math.cos(1.0)
    assert np.allclose(Tr * mu_0 * r, np.eye(2), rtol=0, atol=1e-9)


def test_coil_equals_the_region_currents_it_stands_for(pair_open):
    sol = solve(pair_open, {"cu": AIR}, sources=Sources(coils=(LINE,)), currents={"line": 2.0})
    legacy = solve(pair_open, {"cu": AIR}, currents={"go": 6.0, "ret": -6.0})
    assert np.allclose(sol.A, legacy.A, rtol=0, atol=1e-12 * np.max(np.abs(sol.A)))


def test_inductance_matrix_is_symmetric_and_matches_maxwell():
    # two coaxial coils in r-z with the open boundary: L12 against Maxwell's
    # formula (Treatise, 1873, art. 701) for the section centres; the
    # matrix is symmetric to 1e-9 (the tangent is)
    s = 0.5e-3
    lay = Layout((Region("c1", (Rect(10e-3 - s, -s, 10e-3 + s, s),), "cu", kind="coil"),
                  Region("c2", (Rect(15e-3 - s, 5e-3 - s, 15e-3 + s, 5e-3 + s),), "cu",
                         kind="coil")),
                 air=AirBox("rz-disk", factor=1.5, open=True),
                 mesh=MeshSettings(size=2.5e-4, grading=0.2, air_size_factor=40.0))
    coils = (Coil("c1", (("c1", 1),), 10.0), Coil("c2", (("c2", 1),), 20.0))
    sol = solve(build_mesh(lay), {"cu": AIR}, sources=Sources(coils=coils), currents={"c1": 1.0})
    m = post.inductance_matrix(sol)
    L = m.incremental
    assert m.names == ("c1", "c2")
    assert abs(L[0, 1] - L[1, 0]) <= 1e-9 * abs(L[0, 1])
    ref = 200.0 * loop_mutual_inductance(10e-3, 15e-3, 5e-3)
    assert L[0, 1] == pytest.approx(ref, rel=2e-3)  # filaments vs 1 mm sections
    # linear: secant = incremental for the excited coil, flux of coil 2 = L21 I1
    assert m.secant[0] == pytest.approx(L[0, 0], rel=1e-9)
    assert math.isnan(m.secant[1])
    assert m.flux_linkage[1] == pytest.approx(L[1, 0], rel=1e-9)
    assert 0 < m.coupling[0, 1] < 1 and m.coupling[0, 0] == pytest.approx(1.0)
    # W = L11 I^2 / 2 with the exterior's energy included
    assert m.energy == pytest.approx(0.5 * L[0, 0], rel=1e-8)


def test_one_coil_matrix_reproduces_the_incremental_inductance(pair_open):
    mats = {"cu": AIR}
    sol = solve(pair_open, mats, sources=Sources(coils=(LINE,)), currents={"line": 1.0})
    m = post.inductance_matrix(sol)
    ref = post.incremental_flux_linkage(sol, 3.0, "go", "ret")
    assert m.incremental[0, 0] == pytest.approx(ref, rel=1e-8)


def test_magnet_and_saturating_iron_converge_to_the_energy_minimum():
    # a magnet against a steel keeper driven into saturation: Newton with the
    # energy line search converges, and the result minimises the discrete
    # energy W(A) (its gradient is the residual: random perturbations raise W)
    lay = Layout((Region("magnet", (Rect(0.0, 0.0, 4e-3, 2e-3),), "m", kind="magnet"),
                  Region("keeper", (Rect(-1e-3, 2e-3, 5e-3, 2.3e-3),), "steel", kind="core")),
                 air=AirBox("disk", factor=1.5, open=True), mesh=MeshSettings(size=2.5e-4))
    src = Sources(magnets=(Magnet("magnet", (0.0, 1.3), 1.05),))
    sol = solve(build_mesh(lay), {"m": AIR, "steel": BRAUER}, sources=src, tol=1e-10)
    assert sol.converged and sol.iterations <= 15
    peak, _ = post.peak_b(sol, "keeper")
    assert peak > 1.8  # the keeper saturates
    asm = sol.assembler
    W0 = asm.energy(asm.grad(sol.A), sol.A)
    rng = np.random.default_rng(1)
    for _ in range(3):
        d = np.zeros_like(sol.A)
        d[asm.I] = rng.standard_normal(len(asm.I)) * 1e-6 * np.max(np.abs(sol.A))
        for sgn in (1.0, -1.0):
            A = sol.A + sgn * d
            assert asm.energy(asm.grad(A), A) > W0
    # H inside the magnet opposes B_r (it demagnetises itself)
    assert post.region_mean_h(sol, "magnet", (0.0, 1.0)) < 0.0


def test_uniform_background_field_is_reproduced_exactly():
    lay = Layout((Region("blob", (Disk(0.0, 0.0, 1e-3),), "air2"),),
                 air=AirBox("box", factor=4.0), mesh=MeshSettings(size=3e-4))
    sol = solve(build_mesh(lay), {"air2": AIR}, sources=Sources(background=Background((0.3, -0.2))))
    B = post.b_field(sol)
    assert np.allclose(B[0], 0.3, atol=1e-12) and np.allclose(B[1], -0.2, atol=1e-12)
    # straight-sided elements: u = B r^2/2 lies in the P2 space (curved
    # isoparametric cells would hold it only approximately)
    rz = Layout((Region("blob", (Rect(0.0, 0.0, 1e-3, 1e-3),), "air2"),),
                air=AirBox("rz-box", factor=4.0), mesh=MeshSettings(size=3e-4))
    sol = solve(build_mesh(rz), {"air2": AIR}, sources=Sources(background=Background((0.0, 0.5))))
    B = post.b_field(sol)
    assert np.allclose(B[0], 0.0, atol=1e-10) and np.allclose(B[1], 0.5, rtol=1e-10)


def test_source_input_errors(pair_open):
    mats = {"cu": AIR}
    with pytest.raises(SolverInputError, match="'nope'"):
        solve(pair_open, mats, sources=Sources(coils=(LINE,)), currents={"nope": 1.0})
    with pytest.raises(SolverInputError, match="sign = 2"):
        Coil("x", (("go", 2),))
    with pytest.raises(SolverInputError, match="turns = 0"):
        Coil("x", (("go", 1),), turns=0)
    with pytest.raises(SolverInputError, match="'nowhere'"):
        solve(pair_open, mats, sources=Sources(coils=(Coil("x", (("nowhere", 1),)),)),
              currents={"x": 1.0})
    with pytest.raises(SolverInputError, match="magnet 'ghost'"):
        solve(pair_open, mats, sources=Sources(magnets=(Magnet("ghost", (1.0, 0.0)),)))
    with pytest.raises(SolverInputError, match="closed air domain"):
        solve(pair_open, mats, sources=Sources(background=Background((0.1, 0.0))))
    with pytest.raises(SolverInputError, match="remanence"):
        Magnet("m", (1.0, float("nan")))
    with pytest.raises(LayoutError, match="open = True needs shape"):
        AirBox("box", open=True)
    with pytest.raises(LayoutError, match="'exterior' is reserved"):
        Region("exterior", (Disk(0, 0, 1),), "a")
    # a part reaching r < 0 in the open r-z half disk names the region
    with pytest.raises(LayoutError, match="region 'coil': reaches r"):
        Layout((Region("coil", (Rect(-1e-3, 0.0, 1e-3, 1e-3),), "a"),),
               air=AirBox("rz-disk", open=True))
    with pytest.raises(LayoutError, match="sticks out of the air rz-disk"):
        Layout((Region("coil", (Rect(0.0, 0.0, 1e-3, 1e-3),), "a"),),
               air=AirBox("rz-disk", size=1e-3))


def test_magnet_coenergy_is_half_the_remanence_times_h():
    # Source: with no currents, int B.H dV = 0 over all space (B solenoidal,
    # H = -grad phi, decaying), so W' = int_0^H B dH summed = (1/2) int_magnet
    # B_r . H dV; for a sphere magnet H_in = -B_r/(mu0 (mu_r + 2)) (uniform,
    # Jackson, Classical Electrodynamics, 1999, sec. 5.10), hence
    # W' = -B_r^2 V / (2 mu0 (mu_r + 2)). r-z, open boundary.
    from magcheck.fem2d.layout import HalfDisk

    a, br, mu_r = 5e-3, 1.2, 1.05
    lay = Layout((Region("magnet", (HalfDisk(0.0, 0.0, a),), "m", kind="magnet"),),
                 air=AirBox("rz-disk", factor=1.5, open=True), mesh=MeshSettings(size=a / 12))
    sol = solve(build_mesh(lay), {"m": AIR}, sources=Sources(magnets=(Magnet("magnet", (0.0, br),
                                                                             mu_r),)))
    ref = -br ** 2 * (4.0 / 3.0 * math.pi * a ** 3) / (2 * mu_0 * (mu_r + 2.0))
    assert post.coenergy(sol) == pytest.approx(ref, rel=2e-4)
