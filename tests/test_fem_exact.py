"""fem2d against exact solutions (docs/references.md section 2)."""
from __future__ import annotations

import numpy as np
import pytest
from scipy.constants import mu_0
from scipy.integrate import quad
from scipy.optimize import brentq

from magcheck.fem2d import post
from magcheck.fem2d.layout import AirBox, Annulus, Disk, Layout, MeshSettings, Rect, Region
from magcheck.fem2d.materials import AIR, BrauerReluctivity, LinearReluctivity
from magcheck.fem2d.mesh import build_mesh
from magcheck.fem2d.solver import solve

# test-only steel-like law (Brauer, IEEE Trans. Magn. MAG-11, 1975); mu_r(0) ~ 2000
BRAUER = BrauerReluctivity(3.8, 2.17, 396.2)


def b_of_h(law, H):
    """Invert H = nu(B^2) B for B >= 0 (monotone, so a bracketing root-find is exact)."""
    return brentq(lambda b: law.nu(b * b) * b - H, 0.0, 10.0, xtol=1e-15, rtol=1e-14)


# ---------------------------------------------------------------- round wire
A_WIRE, I_WIRE, R_AIR = 1e-3, 10.0, 4e-3


def wire_exact_a(x, y):
    """Exact A for a round wire of radius a in a disk domain of radius R with A = 0 at R.

    exact solution: A = mu0 I/(2 pi) ln(R/r) (r >= a), mu0 I/(2 pi) ln(R/a)
    + mu0 I/(4 pi) (1 - r^2/a^2) (r < a); B = -dA/dr e_theta magnitude
    mu0 I/(2 pi r) outside, mu0 I r/(2 pi a^2) inside.
    """
    r = np.hypot(x, y)
    out = mu_0 * I_WIRE / (2 * np.pi) * np.log(R_AIR / r)
    inn = mu_0 * I_WIRE / (2 * np.pi) * np.log(R_AIR / A_WIRE) + mu_0 * I_WIRE / (4 * np.pi) * (1 - (r / A_WIRE) ** 2)
    return np.where(r >= A_WIRE, out, inn)


def wire_layout(order=2, size=None, air_size_factor=8.0):
    return Layout((Region("wire", (Disk(0.0, 0.0, A_WIRE),), "copper", current=I_WIRE, kind="coil"),),
                  air=AirBox("disk", size=2 * R_AIR),
                  mesh=MeshSettings(order=order, size=size, air_size_factor=air_size_factor))


def test_round_wire_b_and_a_at_points():
    sol = solve(build_mesh(wire_layout()), {"copper": AIR})
    ang = np.linspace(0.1, 2 * np.pi, 7)
    r = np.array([0.3, 0.7, 1.5, 2.5, 3.5]) * 1e-3
    R, T = np.meshgrid(r, ang)
    pts = np.vstack([(R * np.cos(T)).ravel(), (R * np.sin(T)).ravel()])
    B = post.sample_b(sol, pts)
    rr = np.hypot(*pts)
    # Source: exact solution (Ampere's law), docs/references.md section 2 "Round wire"
    b_exact = np.where(rr < A_WIRE, mu_0 * I_WIRE * rr / (2 * np.pi * A_WIRE**2), mu_0 * I_WIRE / (2 * np.pi * rr))
    # direction: counter-clockwise e_theta for +z current
    et = np.vstack([-pts[1], pts[0]]) / rr
    # Tolerance 2 %: the default mesh grows to 2 mm elements in the air where B
    # varies like 1/r; the pointwise P2 gradient error is O((h/r)^2), measured
    # 1.3 % at worst (r = 1.5 mm, where h ~ r/2).
    np.testing.assert_allclose(np.sum(B * et, axis=0), b_exact, rtol=2e-2)
    np.testing.assert_allclose(np.sum(B * np.vstack([pts[0], pts[1]]) / rr, axis=0), 0.0, atol=2e-2 * b_exact.max())
    # Source: exact solution for A on the disk domain (docstring of wire_exact_a)
    # Tolerance 1e-2 relative to the peak A: A converges one order faster than
    # B (measured 4e-3 relative at worst).
    a_exact = wire_exact_a(pts[0], pts[1])
    np.testing.assert_allclose(post.sample_a(sol, pts), a_exact, atol=1e-2 * a_exact.max())


def _energy_error(sol):
    """||grad(A_h - A)||_L2 over the domain (T m), exact gradient by region."""
    asm = sol.assembler
    g = asm.grad(sol.A)
    xy = np.asarray(asm.basis.global_coordinates())
    r = np.hypot(xy[0], xy[1])
    dadr = -mu_0 * I_WIRE / (2 * np.pi * r)
    wire = sol.mesh.subdomains["wire"]
    dadr[wire] = -mu_0 * I_WIRE * r[wire] / (2 * np.pi * A_WIRE**2)
    ex = dadr * xy / r
    return float(np.sqrt(np.sum(((g - ex) ** 2).sum(axis=0) * asm.dx)))


@pytest.mark.parametrize("order,slope", [(1, 1.0), (2, 2.0)])
def test_energy_norm_convergence_rate(order, slope):
    hs = np.array([A_WIRE / 2, A_WIRE / 4, A_WIRE / 8])
    errs = []
    for h in hs:
        sol = solve(build_mesh(wire_layout(order=order, size=h, air_size_factor=1.0)), {"copper": AIR})
        errs.append(_energy_error(sol))
    fit = np.polyfit(np.log(hs), np.log(errs), 1)[0]
    # Source: a-priori estimate ||grad(u - u_h)|| = O(h^p) for P_p Lagrange
    # elements and a smooth (piecewise, interface-fitted) exact solution
    # (exact solution: round wire, see wire_exact_a). Tolerance +-0.2 on the
    # fitted slope: unstructured meshes do not halve h exactly and the
    # pre-asymptotic range shifts the fit by ~0.1.
    assert abs(fit - slope) <= 0.2, (order, fit, errs)


# ----------------------------------------------------- nonlinear ring (exact)
RI, RO = 5e-3, 10e-3


@pytest.fixture(scope="module")
def ring_mesh():
    lay = Layout((Region("ring", (Annulus(0.0, 0.0, RI, RO),), "steel", kind="core"),
                  Region("wire", (Disk(0.0, 0.0, 1e-3),), "copper", current=1.0, kind="coil")),
                 air=AirBox("disk"))
    return build_mesh(lay)


def ring_flux_exact(I):
    """Flux per metre through the ring: int_{r_in}^{r_out} B(I/(2 pi r)) dr (Wb/m).

    Source: exact solution (Ampere's law with circular symmetry gives
    H = I/(2 pi r) for any B-H curve), docs/references.md section 2 [derived].
    """
    return quad(lambda r: b_of_h(BRAUER, I / (2 * np.pi * r)), RI, RO, epsabs=0.0, epsrel=1e-12)[0]


@pytest.mark.parametrize("I", [6.0, 600.0])  # ~0.5 T and ~1.9 T (saturating) at r_in
def test_nonlinear_ring_flux(ring_mesh, I):
    sol = solve(ring_mesh, {"steel": BRAUER, "copper": AIR}, currents={"wire": I})
    # flux_across is positive along the segment's right-hand normal; for +z
    # current B points +y on the +x axis, so cross from r_out to r_in.
    fe = post.flux_across(sol, (RO, 0.0), (RI, 0.0))
    # Source: exact solution, ring_flux_exact [derived]. Tolerance 1e-4
    # (the brief asks 0.1 %; curved P2 at the default mesh measures ~1e-7).
    assert fe == pytest.approx(ring_flux_exact(I), rel=1e-4)


def test_nonlinear_ring_from_zero_at_ten_times_saturating_current(ring_mesh):
    I = 6000.0  # 10x the saturating 600 A
    sol = solve(ring_mesh, {"steel": BRAUER, "copper": AIR}, currents={"wire": I})
    assert sol.converged and sol.residual_history[-1] <= 1e-8
    fe = post.flux_across(sol, (RO, 0.0), (RI, 0.0))
    # Source: exact solution, ring_flux_exact [derived]; tolerance as above.
    assert fe == pytest.approx(ring_flux_exact(I), rel=1e-4)
    # exact local check in the deeply saturated ring: |B| at r = 7 mm
    b = post.sample_b(sol, np.array([[0.0], [7e-3]]))
    # Source: exact solution B(H = I/(2 pi r)) [derived]; tolerance 1e-4:
    # pointwise P2 B error at this mesh density is ~1e-6.
    assert np.hypot(*b[:, 0]) == pytest.approx(b_of_h(BRAUER, I / (2 * np.pi * 7e-3)), rel=1e-4)


# ----------------------------------------- permeable cylinder, uniform field
@pytest.mark.parametrize("mu_r", [10.0, 1000.0])
def test_permeable_cylinder_in_uniform_field(mu_r):
    a, B0 = 5e-3, 0.1
    K = (mu_r - 1) / (mu_r + 1)

    def a_exterior(x, y):
        # exterior potential: A = B0 (r + K a^2 / r) sin(theta), giving B -> (B0, 0) far away
        r2 = x * x + y * y
        return B0 * y * (1.0 + K * a * a / r2)

    lay = Layout((Region("cyl", (Disk(0.0, 0.0, a),), "iron"),), air=AirBox("box", factor=2.0))
    sol = solve(build_mesh(lay), {"iron": LinearReluctivity(mu_r)}, boundary_potential=a_exterior)
    bx = post.region_mean_b(sol, "cyl", direction=(1.0, 0.0))
    by = post.region_mean_b(sol, "cyl", direction=(0.0, 1.0))
    # Source: classic result B_in = 2 mu_r/(mu_r + 1) B0 [from memory], verified
    # here by the exact potential: inside A = B0 (1 + K) r sin(theta), outside
    # A = B0 (r + K a^2/r) sin(theta), K = (mu_r - 1)/(mu_r + 1): A and
    # H_theta = -(1/mu) dA/dr are continuous at r = a (exact solution).
    # Tolerance 5e-4: curved P2 represents the uniform inside field exactly;
    # the error comes from the exterior a^2/r term on the coarse default air
    # mesh (measured 1.2e-4 and 1.4e-4).
    assert bx == pytest.approx(2 * mu_r / (mu_r + 1) * B0, rel=5e-4)
    assert abs(by) <= 5e-4 * B0


# ------------------------------------------------------- ideal gapped core
def gapped_core(gap, w=10e-3):
    """Square frame 60 mm outer, limb w, gap across the right limb at mid-height."""
    mm = 1e-3
    o = 60 * mm
    regions = (
        Region("core", (Rect(0, 0, o, w), Rect(0, o - w, o, o), Rect(0, w, w, o - w), Rect(o - w, w, o, o - w)),
               "iron", kind="core"),
        Region("gap", (Rect(o - w, 30 * mm - gap / 2, o, 30 * mm + gap / 2),), "air", kind="gap"),
        Region("cin", (Rect(w + 2 * mm, w + 2 * mm, w + 10 * mm, o - w - 2 * mm),), "copper", kind="coil"),
        Region("cout", (Rect(-10 * mm, w + 2 * mm, -2 * mm, o - w - 2 * mm),), "copper", kind="coil"),
    )
    return Layout(regions, air=AirBox("box", factor=2.0), mesh=MeshSettings(size=1.5e-3))


def test_gapped_core_tends_to_ideal_gap_formula():
    mm, w, NI = 1e-3, 10e-3, 100.0
    lc = 4 * (60 * mm - w)  # mean core path length
    ratios = {}
    for gap in (1.0 * mm, 0.2 * mm):
        rm = build_mesh(gapped_core(gap))
        for mu_r in (1e3, 1e5):
            sol = solve(rm, {"iron": LinearReluctivity(mu_r), "copper": AIR},
                        currents={"cin": NI, "cout": -NI})
            # flux per metre across the gapped limb at the gap mid-plane
            phi = abs(post.flux_across(sol, (60 * mm - w, 30 * mm), (60 * mm, 30 * mm))) / sol.mesh.layout.depth
            # Source: ideal gapped core B = mu0 N I/(l_g + l_c/mu_r), docs/references.md section 2
            ideal = mu_0 * NI / (gap + (lc - gap) / mu_r) * w
            ratios[(gap, mu_r)] = phi / ideal
    # Trend: with mu_r -> infinity and g/w -> 0 the FE flux tends to the ideal formula.
    assert abs(ratios[(0.2 * mm, 1e5)] - 1) < abs(ratios[(1.0 * mm, 1e3)] - 1)
    assert abs(ratios[(0.2 * mm, 1e5)] - 1) < abs(ratios[(1.0 * mm, 1e5)] - 1)
    # Tolerances: the segment across the gap mid-plane (width w) misses the
    # fringing flux that passes beside the gap and sees B dip near the gap
    # edges, and part of the MMF drives leakage across the window; measured
    # 0.96 for g/w = 0.1, mu_r = 1e3 and 0.999 for g/w = 0.02, mu_r = 1e5.
    # Bounds: 6 % for all cases, 0.5 % for the most ideal one.
    for key, val in ratios.items():
        assert 0.94 < val < 1.06, (key, val)
    # Tighter, per case. Below: the mean B across the face dips over ~g/2 at
    # each of its two edges (common practice, no source; measured deficit
    # 0.4 g/w): ratio > 1 - g/(2w). Above: the flux may shorten its core path
    # to the window's inner perimeter 4 (60 mm - 2w), no further, so the ratio
    # is at most (g + l_c/mu_r)/(g + l_inner/mu_r) [derived from the ideal
    # gapped-core formula, docs/references.md section 2].
    l_inner = 4 * (60 * mm - 2 * w)
    for (gap, mu_r), val in ratios.items():
        assert val > 1 - gap / (2 * w), (gap, mu_r, val)
        assert val < (gap + (lc - gap) / mu_r) / (gap + (l_inner - gap) / mu_r), (gap, mu_r, val)
    assert ratios[(0.2 * mm, 1e5)] == pytest.approx(1.0, abs=5e-3)
