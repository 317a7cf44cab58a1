"""Region means of the FE's post-processing (fem2d.post.region_mean_b,
region_mean_h) in r-z: a volume mean weights each point by its radius
(dV = 2 pi r dr dz), against fields whose r-weighted means are known in
closed form.  The same means give the FE's core and gap B of every
axisymmetric case (pot cores, plungers, holding magnets)."""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest
from scipy.constants import mu_0
from scipy.integrate import dblquad

from magcheck.fem2d import post
from magcheck.fem2d.formulation import Axisymmetric
from magcheck.fem2d.layout import AirBox, Layout, MeshSettings, Rect, Region
from magcheck.fem2d.materials import AIR, LinearReluctivity
from magcheck.fem2d.mesh import build_mesh
from magcheck.fem2d.solver import solve

# a ring of rectangular section, r in [R0, R1], z in [Z0, Z1] (invented for the
# test): r spans a factor 4, so an unweighted mean of a field varying with r
# differs from the volume mean by ~10 %
R0, R1, Z0, Z1 = 5e-3, 20e-3, 2e-3, 12e-3
VOLUME = 0.5 * (R1**2 - R0**2) * (Z1 - Z0)  # integral of r dr dz (per radian), m^3
MU_R = 1000.0


@pytest.fixture(scope="module")
def given_field():
    """The solution's unknown replaced by u = r A_phi = r z at the DOFs: a P2
    mesh represents it exactly, so B = (-du/dz, du/dr)/r = (-1, z/r) holds at
    every quadrature point (a field given as a function, not solved for)."""
    lay = Layout((Region("ring", (Rect(R0, Z0, R1, Z1),), "iron"),
                  Region("other", (Rect(R0, -10e-3, R1, -4e-3),), "iron")),
                 air=AirBox("rz-box", size=0.1), mesh=MeshSettings(size=2e-3, air_size_factor=5.0))
    sol = solve(build_mesh(lay), {"iron": LinearReluctivity(MU_R)}, formulation=Axisymmetric())
    assert sol.mesh.order == 2  # P2: u = r z interpolated exactly
    r, z = sol.basis.doflocs
    return dataclasses.replace(sol, A=r * z)


def test_rz_mean_of_b_weights_by_radius(given_field):
    # Source: exact integrals. B_z = z/r:
    #   volume mean = int (z/r) r dr dz / int r dr dz = (Z0 + Z1)/(R0 + R1)
    #   (the unweighted mean would be (Z0 + Z1)/2 ln(R1/R0)/(R1 - R0), 15 % higher here).
    # Tolerance 1e-12: the integrand (z/r) r = z is linear and the quadrature
    # exact for it; rounding only.
    bz = post.region_mean_b(given_field, "ring", direction=(0.0, 1.0))
    assert bz == pytest.approx((Z0 + Z1) / (R0 + R1), rel=1e-12)
    # B_r = -1 everywhere: any weighting gives -1 (checks the direction's sign)
    assert post.region_mean_b(given_field, "ring", direction=(2.0, 0.0)) == pytest.approx(
        -1.0, rel=1e-12)


def test_rz_mean_of_b_magnitude_weights_by_radius(given_field):
    # Source: |B| = sqrt(1 + z^2/r^2), so the volume mean is
    # int sqrt(r^2 + z^2) dr dz / int r dr dz, integrated here by scipy's
    # dblquad (adaptive, rel 1e-13).  Tolerance 1e-8: the FE's degree-4
    # quadrature on the smooth, non-polynomial |B| (error O(h^5); measured
    # 1.6e-10 at this 2 mm mesh); the unweighted mean is ~10 % off.
    ref = dblquad(lambda z, r: np.hypot(r, z), R0, R1, Z0, Z1, epsabs=0.0, epsrel=1e-13)[0]
    assert post.region_mean_b(given_field, "ring") == pytest.approx(ref / VOLUME, rel=1e-8)


def test_rz_mean_of_h_weights_by_radius(given_field):
    # H = B / (mu0 mu_r) in a linear material: the same volume mean over mu0 mu_r
    # (exact, as above).
    h = post.region_mean_h(given_field, "ring", (0.0, 1.0))
    assert h == pytest.approx((Z0 + Z1) / (R0 + R1) / (mu_0 * MU_R), rel=1e-12)


def test_rz_region_means_of_a_solved_source_free_field():
    # Source: exact solution of the r-z magnetostatic equation without
    # sources: u = r A_phi = r^2 z satisfies d/dr((1/r) du/dr) + d/dz((1/r) du/dz)
    # = 0, B = (-r, 2z) (div B = (1/r) d(r B_r)/dr + dB_z/dz = -2 + 2 = 0).
    # The FE solves for it with u = r^2 z imposed on the box's boundary.
    # Volume means over the ring: B_r: -int r^2 dr / int r dr
    # = -(2/3)(R1^3 - R0^3)/(R1^2 - R0^2) (unweighted: -(R0 + R1)/2, 11 % lower);
    # B_z: Z0 + Z1.  Tolerance 1e-3: P2 discretisation of the cubic u on this
    # mesh (measured 7.6e-5 and 1.7e-6).
    lay = Layout((Region("ring", (Rect(R0, Z0, R1, Z1),), "air-like"),),
                 air=AirBox("rz-box", size=0.06), mesh=MeshSettings(size=2e-3, air_size_factor=3.0))
    sol = solve(build_mesh(lay), {"air-like": AIR}, formulation=Axisymmetric(),
                boundary_potential=lambda r, z: r * r * z)
    assert sol.converged
    want_r = -(2.0 / 3.0) * (R1**3 - R0**3) / (R1**2 - R0**2)
    assert post.region_mean_b(sol, "ring", (1.0, 0.0)) == pytest.approx(want_r, rel=1e-3)
    assert post.region_mean_b(sol, "ring", (0.0, 1.0)) == pytest.approx(Z0 + Z1, rel=1e-3)
