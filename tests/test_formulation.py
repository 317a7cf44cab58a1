"""The planar and axisymmetric formulations (fem2d.formulation) and the
r-z engine against references outside the project."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from scipy.constants import mu_0

from magcheck.compare.front.cli import main
from magcheck.fem2d import post
from magcheck.fem2d.assembly import Assembler
from magcheck.fem2d.formulation import Axisymmetric, Planar
from magcheck.fem2d.layout import AirBox, Layout, LayoutError, MeshSettings, Rect, Region
from magcheck.fem2d.materials import AIR, BrauerReluctivity
from magcheck.fem2d.mesh import build_mesh
from magcheck.fem2d.solver import solve
from magcheck.fem2d.verification import (_gauss_square, loop_field, loop_mutual_inductance,
                                         run_cases)

A, S = 10e-3, 1e-3  # coil radius and section side (invented for the tests)


def _coil_layout(size=5e-4, core=False):
    regions = [Region("probe", (Rect(0.0, -2e-3, 8e-3, 5e-3),), "air-like"),
               Region("coil", (Rect(A - S / 2, -S / 2, A + S / 2, S / 2),), "air-like",
                      current=1.0, kind="coil")]
    if core:
        regions.insert(1, Region("core", (Rect(0.0, -6e-3, 4e-3, 6e-3),), "steel", kind="core"))
    return Layout(tuple(regions), air=AirBox("rz-box", size=2.0),
                  mesh=MeshSettings(size=size, air_size_factor=50.0, grading=0.1))


@pytest.fixture(scope="module")
def coil():
    return solve(build_mesh(_coil_layout()), {"air-like": AIR}, formulation=Axisymmetric())


def test_weights_satisfy_the_energy_identity(coil):
    # stiffness weight = field scale^2 x volume weight (formulation docstring):
    # the residual is the gradient of the energy the line search minimises
    asm = coil.assembler
    r = asm.xq[0]
    assert np.allclose(asm.wk, asm.dx / r, rtol=1e-14)
    assert np.allclose(asm.wv, asm.dx * r, rtol=1e-14)
    assert np.allclose(asm.wk, asm.f2 * asm.wv, rtol=1e-14)
    assert np.all(r > 0)  # no quadrature point on the axis


def test_planar_weights_are_the_plain_measure():
    lay = Layout((Region("c", (Rect(0.0, 0.0, 1e-3, 1e-3),), "a", current=1.0),),
                 mesh=MeshSettings(size=2e-4))
    asm = Assembler(build_mesh(lay), {"a": AIR}, {"c": 1.0}, Planar(0.02))
    assert asm.wk is asm.dx and asm.wv is asm.dx and asm.f2 is None
    assert asm.formulation.total == 0.02


def test_off_axis_field_against_magpylib(coil):
    # Source: magpylib (general-purpose reference library), current.Circle:
    # the coil as the mean of 8 x 8 filaments over its section (Gauss points).
    # Tolerance 1e-3: a point value of the P2 gradient at this mesh (measured
    # 4.8e-4; 1e-5 at a 4x finer mesh).
    magpy = pytest.importorskip("magpylib")
    R, Z, W = _gauss_square(A - S / 2, A + S / 2, -S / 2, S / 2, 8)
    pts = np.array([[6e-3, 0.0, 3e-3], [3e-3, 0.0, -1e-3]])
    ref = np.zeros((2, 3))
    for r, z, w in zip(R, Z, W):
        loop = magpy.current.Circle(current=1.0, diameter=2 * r, position=(0.0, 0.0, z))
        ref += w * loop.getB(pts)
    fe = post.sample_b(coil, pts[:, [0, 2]].T)
    np.testing.assert_allclose(fe[1], ref[:, 2], rtol=1e-3)  # B_z
    np.testing.assert_allclose(fe[0], ref[:, 0], rtol=2e-3, atol=1e-3 * abs(ref[:, 2]).max())
    # and the elliptic-integral formula of fem2d.verification agrees with magpylib
    assert loop_field(A, 6e-3, 3e-3) == pytest.approx(
        tuple(magpy.current.Circle(current=1.0, diameter=2 * A).getB([6e-3, 0, 3e-3])[[0, 2]]),
        rel=1e-10)


def test_mutual_inductance_formula_against_a_direct_flux_integral():
    # Source: Maxwell's formula (Treatise, 1873, art. 701) against the flux
    # of the loop's field (Biot-Savart by elliptic integrals, Simpson et al.
    # NASA 2001) through the second loop's disk: int_0^b 2 pi rho B_z drho.
    from scipy.integrate import quad

    a, b, d = 10e-3, 15e-3, 5e-3
    flux = quad(lambda rho: 2 * math.pi * rho * loop_field(a, rho, d)[1], 1e-12, b,
                epsabs=0.0, epsrel=1e-11, limit=200)[0]
    assert loop_mutual_inductance(a, b, d) == pytest.approx(flux, rel=1e-8)


def test_self_inductance_from_energy_and_from_flux_linkage_agree(coil):
    # Linear air problem: L = lambda / I = 2 W / I^2 (exact identity of the
    # discrete problem too, to solver tolerance).
    lam = post.flux_linkage(coil, 1.0, "coil", ())
    assert lam == pytest.approx(2 * post.energy(coil), rel=1e-7)
    # the right size: a thin loop's L = mu0 a (ln(8a/b) - 2 + 1/4) for a
    # round wire of radius b (Grover, 1946) with b ~ 0.56 S (equal area):
    # within 5 % for a square section in a closed 1 m box
    b_eq = S / math.sqrt(math.pi)
    assert lam == pytest.approx(mu_0 * A * (math.log(8 * A / b_eq) - 1.75), rel=0.05)


def test_nonlinear_rz_core_converges_and_balances_its_energy():
    # A saturating steel plug inside the coil (Brauer law, IEEE Trans. Magn.
    # MAG-11, 1975): Newton converges with the r-z weights, and at
    # equilibrium W + W' = int J A dV (exact identity of the solution).
    law = BrauerReluctivity(3.8, 2.17, 396.2, vacuum=True)
    sol = solve(build_mesh(_coil_layout(size=1e-3, core=True)), {"air-like": AIR, "steel": law},
                currents={"coil": 10000.0}, formulation=Axisymmetric())
    assert sol.converged and sol.iterations >= 3  # really nonlinear
    assert post.energy(sol) + post.coenergy(sol) == pytest.approx(post.source_work(sol), rel=1e-6)
    assert post.peak_b(sol, ["core"])[0] > 1.5  # saturating


def test_axisymmetric_needs_the_axis_and_r_at_least_zero():
    with pytest.raises(LayoutError, match="'bad'.*r = "):
        Layout((Region("bad", (Rect(-1e-3, 0.0, 1e-3, 1e-3),), "a"),), air=AirBox("rz-box"))
    lay = Layout((Region("c", (Rect(1e-3, 0.0, 2e-3, 1e-3),), "a", current=1.0),),
                 mesh=MeshSettings(size=5e-4))
    with pytest.raises(LayoutError, match="rz-box"):
        solve(build_mesh(lay), {"a": AIR}, formulation=Axisymmetric())


@pytest.mark.slow
def test_quick_verification_cases_pass():
    results = run_cases(quick=True)
    assert {r.formulation for r in results} == {"planar", "axisymmetric"}
    names = " ".join(r.name for r in results)
    # magnets, the open boundary and the mutual inductance in both formulations
    for must in ("planar-magnet-cylinder", "rz-magnet-sphere", "planar-wire-pair-open",
                 "rz-thin-loop-open", "rz-mutual-inductance"):
        assert must in names
    for r in results:
        assert r.passed, (r.name, r.rel_error, r.tolerance)


@pytest.mark.slow
def test_selftest_command(tmp_path, capsys):
    out = tmp_path / "st.json"
    assert main(["selftest", "--quick", "--json", str(out)]) == 0
    data = json.loads(out.read_text())
    assert set(data) == {"cases", "seconds", "passed"} and data["passed"]
    assert set(data["cases"][0]) == {"name", "formulation", "quantity", "fe", "reference",
                                     "rel_error", "tolerance", "source", "passed", "methods",
                                     "methods_rel_diff", "methods_tolerance"}
    assert "rz-mutual-inductance" in capsys.readouterr().out
    # force cases in both formulations, each by both methods, both methods
    # within the reference's tolerance and within 1e-3 of each other
    cases = [c for c in data["cases"] if "force" in c["name"]]
    assert {c["formulation"] for c in cases} == {"planar", "axisymmetric"}
    assert len(cases) >= 7
    for c in cases:
        ms, vw = c["methods"]["maxwell_stress"], c["methods"]["virtual_work"]
        assert c["passed"] and c["fe"] == ms
        assert abs(ms - vw) <= 1e-3 * abs(ms)
        assert abs(vw - c["reference"]) <= c["tolerance"] * abs(c["reference"])
    assert all(c["methods"] is None for c in data["cases"] if "force" not in c["name"])
