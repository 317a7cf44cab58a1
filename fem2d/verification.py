"""The engine's verification suite: exact-solution cases, planar and
axisymmetric, each with its reference and source (``magcheck selftest``).

Each case builds a layout, solves it and compares one quantity with a
value computed independently of the engine (a closed form, or a
quadrature of a closed form).  Tolerances are stated per case with their
reason.  The quick set runs in seconds; the full set adds finer meshes.
"""

from __future__ import annotations

import math
import time
from dataclasses import asdict, dataclass
from typing import Callable

import numpy as np
from scipy import integrate, special
from scipy.constants import mu_0
from scipy.optimize import brentq

from . import post
from .formulation import Axisymmetric, Planar
from .layout import AirBox, Annulus, Disk, HalfDisk, Layout, MeshSettings, Rect, Region
from .materials import AIR, BrauerReluctivity
from .mesh import build_mesh
from .solver import solve
from .sources import Magnet, Sources

__all__ = ["VerificationResult", "CASES", "run_cases", "loop_mutual_inductance", "u_core_armature",
           "loop_axis_field", "loop_field"]


@dataclass(frozen=True)
class VerificationResult:
    """One case: FE value, reference, relative error against the tolerance."""

    name: str
    formulation: str
    quantity: str
    fe: float
    reference: float
    rel_error: float
    tolerance: float
    source: str
    passed: bool
    seconds: float
    methods: dict | None = None
    """Force cases: the value by each method ({"maxwell_stress": N,
    "virtual_work": N}); ``fe`` is the Maxwell stress and ``rel_error`` the
    larger of the two methods' errors."""
    methods_rel_diff: float | None = None
    """Force cases: |stress - virtual work| / |stress|."""
    methods_tolerance: float | None = None
    """Force cases: the agreement required between the two methods."""

    def to_dict(self) -> dict:
        return asdict(self)


METHODS_TOLERANCE = 1e-3
"""Maxwell stress and virtual work agree within this on every force case
(the issue's criterion at the quick meshes; measured: 1e-8 to 1e-6, since
both are exact derivatives of the same discrete field where the layer is the
same)."""


# ------------------------------------------------------------ references
def loop_mutual_inductance(a: float, b: float, d: float) -> float:
    """Mutual inductance (H) of two coaxial circular filaments of radii a, b
    at axial distance d: M = mu0 sqrt(ab) [(2/k - k) K(k) - (2/k) E(k)],
    k^2 = 4ab / ((a + b)^2 + d^2) (Maxwell, A Treatise on Electricity and
    Magnetism, 1873, art. 701; in Grover, Inductance Calculations, 1946).
    scipy's ellipk/ellipe take the parameter m = k^2."""
    m = 4.0 * a * b / ((a + b) ** 2 + d * d)
    k = math.sqrt(m)
    return mu_0 * math.sqrt(a * b) * ((2.0 / k - k) * special.ellipk(m)
                                      - 2.0 / k * special.ellipe(m))


def loop_axis_field(a: float, z: float, current: float = 1.0) -> float:
    """B_z (T) on the axis of a circular filament of radius a at distance z:
    mu0 I a^2 / (2 (a^2 + z^2)^(3/2)) (Biot-Savart, exact)."""
    return mu_0 * current * a * a / (2.0 * (a * a + z * z) ** 1.5)


def loop_field(a: float, rho: float, z: float, current: float = 1.0) -> tuple[float, float]:
    """(B_rho, B_z) (T) of a circular filament of radius a at (rho > 0, z),
    by complete elliptic integrals (Simpson, Lane, Immer, Youngquist,
    "Simple analytic expressions for the magnetic field of a circular
    current loop", NASA Technical Memorandum, 2001):
    alpha^2 = a^2 + rho^2 + z^2 - 2 a rho, beta^2 = same + 2 a rho,
    k^2 = 1 - alpha^2/beta^2, C = mu0 I / pi,
    B_z = C / (2 alpha^2 beta) [(a^2 - rho^2 - z^2) E + alpha^2 K],
    B_rho = C z / (2 alpha^2 beta rho) [(a^2 + rho^2 + z^2) E - alpha^2 K]."""
    r2 = a * a + rho * rho + z * z
    al2, be2 = r2 - 2 * a * rho, r2 + 2 * a * rho
    be = math.sqrt(be2)
    m = 1.0 - al2 / be2
    K, E = special.ellipk(m), special.ellipe(m)
    c = mu_0 * current / math.pi
    bz = c / (2 * al2 * be) * ((a * a - rho * rho - z * z) * E + al2 * K)
    br = c * z / (2 * al2 * be * rho) * (r2 * E - al2 * K)
    return br, bz


def _gauss_square(r0: float, r1: float, z0: float, z1: float, n: int = 6):
    x, w = np.polynomial.legendre.leggauss(n)
    r = 0.5 * (r0 + r1) + 0.5 * (r1 - r0) * x
    z = 0.5 * (z0 + z1) + 0.5 * (z1 - z0) * x
    R, Z = np.meshgrid(r, z, indexing="ij")
    W = np.outer(w, w) / 4.0  # weights of the mean over the square
    return R.ravel(), Z.ravel(), W.ravel()


# ----------------------------------------------------------------- cases
BRAUER = BrauerReluctivity(3.8, 2.17, 396.2)
"""Steel-like test law (Brauer, IEEE Trans. Magn. MAG-11, 1975), mu_r(0) ~ 2000."""


def _b_of_h(law, h: float) -> float:
    return brentq(lambda b: law.nu(b * b) * b - h, 0.0, 10.0, xtol=1e-15, rtol=1e-14)


def _planar_wire_energy(quick: bool):
    a, R, current = 1e-3, 4e-3, 10.0
    size = 2.5e-4 if quick else 1.25e-4
    lay = Layout((Region("wire", (Disk(0.0, 0.0, a),), "copper", current=current, kind="coil"),),
                 air=AirBox("disk", size=2 * R), mesh=MeshSettings(size=size, air_size_factor=2.0))
    sol = solve(build_mesh(lay), {"copper": AIR}, formulation=Planar(1.0))
    ref = mu_0 * current ** 2 / (4 * math.pi) * (0.25 + math.log(R / a))
    return ("round wire in a coaxial return, energy per metre", "energy (J/m)", post.energy(sol),
            ref, 1e-4, "exact: W = mu0 I^2/(4 pi) (1/4 + ln(R/a)) from Ampere's law")


def _planar_nonlinear_ring(quick: bool):
    ri, ro, current = 5e-3, 10e-3, 600.0
    lay = Layout((Region("ring", (Annulus(0.0, 0.0, ri, ro),), "steel", kind="core"),
                  Region("wire", (Disk(0.0, 0.0, 1e-3),), "copper", current=current, kind="coil")),
                 air=AirBox("disk"), mesh=MeshSettings(size=None if quick else 0.6e-3))
    sol = solve(build_mesh(lay), {"steel": BRAUER, "copper": AIR}, formulation=Planar(1.0))
    fe = post.flux_across(sol, (ro, 0.0), (ri, 0.0))
    ref = integrate.quad(lambda r: _b_of_h(BRAUER, current / (2 * math.pi * r)), ri, ro,
                         epsabs=0.0, epsrel=1e-12)[0]
    return ("saturating steel ring around a wire (1.9 T at the bore)", "flux per metre (Wb/m)",
            fe, ref, 1e-4, "exact for any B-H curve: H = I/(2 pi r), flux = int B(H) dr "
            "(Ampere's law with circular symmetry)")


def _rz_layout(coils: list[tuple[str, float, float, float, float, float]], size: float,
               domain: float) -> Layout:
    regions = tuple(Region(n, (Rect(r0, z0, r1, z1),), "copper", current=cur,
                           kind="coil" if n != "probe" else "other")
                    for n, r0, z0, r1, z1, cur in coils)
    return Layout(regions, air=AirBox("rz-box", size=2 * domain),
                  mesh=MeshSettings(size=size, air_size_factor=50.0, grading=0.1))


def _rz_coil(quick: bool):
    # a coil of radius 10 mm and 1 x 1 mm section carrying 1 A, domain 1 m:
    # the closed boundary's effect is ~(a/R)^3 ~ 1e-6
    a, s = 10e-3, 1e-3
    # an air "probe" region inside the coil keeps the elements fine where
    # the field is sampled
    lay = _rz_layout([("probe", 0.0, -2e-3, 8e-3, 5e-3, 0.0),
                      ("coil", a - s / 2, -s / 2, a + s / 2, s / 2, 1.0)],
                     size=5e-4 if quick else 2.5e-4, domain=1.0)
    return a, s, solve(build_mesh(lay), {"copper": AIR}, formulation=Axisymmetric())


def _rz_loop_disk_flux(quick: bool):
    a, s, sol = _rz_coil(quick)
    rho = 5e-3
    fe = post.flux_across(sol, (0.0, 0.0), (rho, 0.0))  # 2 pi u(rho, 0)
    R, Z, W = _gauss_square(a - s / 2, a + s / 2, -s / 2, s / 2, 8)
    ref = float(sum(w * loop_mutual_inductance(r, rho, z) for r, z, w in zip(R, Z, W)))
    return ("coil of 10 mm radius, 1 x 1 mm section: flux through a 5 mm disk in its plane",
            "flux (Wb)", fe, ref, 1e-4,
            "Maxwell's mutual-inductance formula (Treatise, 1873, art. 701) between the coil's "
            "filaments and the disk's rim, averaged over the section by 8x8 Gauss points")


def _rz_loop_off_axis_field(quick: bool):
    a, s, sol = _rz_coil(quick)
    rho, z = 6e-3, 3e-3
    fe = float(post.sample_b(sol, np.array([[rho], [z]]))[1, 0])
    R, Z, W = _gauss_square(a - s / 2, a + s / 2, -s / 2, s / 2, 8)
    ref = float(sum(w * loop_field(r, rho, z - zz)[1] for r, zz, w in zip(R, Z, W)))
    return ("same coil: B_z off the axis at r = 6 mm, z = 3 mm", "B_z (T)", fe, ref, 1e-3,
            "the loop's field by elliptic integrals (Simpson, Lane, Immer, Youngquist, NASA TM "
            "2001) averaged over the section; tolerance 1e-3: a point value of the P2 gradient")


def _rz_mutual_inductance(quick: bool):
    a, b, d, s = 10e-3, 15e-3, 5e-3, 1e-3
    lay = _rz_layout([("c1", a - s / 2, -s / 2, a + s / 2, s / 2, 1.0),
                      ("c2", b - s / 2, d - s / 2, b + s / 2, d + s / 2, 0.0)],
                     size=5e-4 if quick else 2.5e-4, domain=1.0)
    sol = solve(build_mesh(lay), {"copper": AIR}, formulation=Axisymmetric())
    fe = post.flux_linkage(sol, 1.0, "c2", ())
    R1, Z1, W1 = _gauss_square(a - s / 2, a + s / 2, -s / 2, s / 2)
    R2, Z2, W2 = _gauss_square(b - s / 2, b + s / 2, d - s / 2, d + s / 2)
    ref = float(sum(w1 * w2 * loop_mutual_inductance(r1, r2, z2 - z1)
                    for r1, z1, w1 in zip(R1, Z1, W1) for r2, z2, w2 in zip(R2, Z2, W2)))
    return ("two coaxial coils (10 and 15 mm radius, 5 mm apart, 1 x 1 mm sections)",
            "mutual inductance (H)", fe, ref, 1e-4,
            "Maxwell's formula for coaxial filaments (Treatise, 1873, art. 701) averaged over both "
            "sections by 6x6 Gauss points each")


def _planar_wire_pair_open(quick: bool):
    a, d = 1e-3, 10e-3
    lay = Layout((Region("go", (Disk(-d / 2, 0.0, a),), "copper", kind="coil"),
                  Region("return", (Disk(d / 2, 0.0, a),), "copper", kind="coil")),
                 air=AirBox("disk", factor=1.5, open=True),
                 mesh=MeshSettings(size=a / 4 if quick else a / 8, grading=0.2))
    sol = solve(build_mesh(lay), {"copper": AIR}, currents={"go": 1.0, "return": -1.0},
                formulation=Planar(1.0))
    fe = 2.0 * post.energy(sol)  # L' = 2 W' / I^2 at 1 A
    ref = mu_0 / math.pi * (0.25 + math.log(d / a))
    return ("two round wires, go and return, 1 mm radius, 10 mm apart, open boundary at 1.5x",
            "inductance per metre (H/m)", fe, ref, 1e-4,
            "exact for uniform current in round wires: L' = (mu0/pi)(1/4 + ln(d/a)) (each wire's "
            "field outside it is a line current's; mean value property of ln)")


def _planar_permeable_cylinder(quick: bool):
    a, R, mu_r, b0 = 5e-3, 15e-3, 50.0, 0.1
    K = (mu_r - 1.0) / (mu_r + 1.0)
    lay = Layout((Region("cylinder", (Disk(0.0, 0.0, a),), "iron", kind="core"),),
                 air=AirBox("disk", size=2 * R),
                 mesh=MeshSettings(size=a / 10 if quick else a / 20, air_size_factor=3.0))
    # the exact exterior potential on the boundary: A = B0 y (1 + K a^2 / rho^2)
    sol = solve(build_mesh(lay), {"iron": _linear(mu_r)}, formulation=Planar(1.0),
                boundary_potential=lambda x, y: b0 * y * (1.0 + K * a * a / (x * x + y * y)))
    fe = post.region_mean_b(sol, "cylinder", direction=(1.0, 0.0))
    ref = 2.0 * mu_r / (mu_r + 1.0) * b0
    return ("permeable cylinder (mu_r = 50) in a uniform transverse field of 0.1 T",
            "mean B inside (T)", fe, ref, 1e-4,
            "exact: B_in = 2 mu_r/(mu_r + 1) B0 (separation of variables in polar coordinates), "
            "the exact exterior potential imposed on the boundary")


def _planar_magnet_cylinder(quick: bool):
    R, br, mu_r = 5e-3, 1.2, 1.05
    lay = Layout((Region("magnet", (Disk(0.0, 0.0, R),), "magnet", kind="magnet"),),
                 air=AirBox("disk", factor=1.5, open=True),
                 mesh=MeshSettings(size=R / 12 if quick else R / 24, grading=0.3))
    sol = solve(build_mesh(lay), {"magnet": AIR}, formulation=Planar(1.0),
                sources=Sources(magnets=(Magnet("magnet", (br, 0.0), mu_r),)))
    fe = post.region_mean_b(sol, "magnet", direction=(1.0, 0.0))
    ref = br / (1.0 + mu_r)
    return ("long cylinder magnet, transversely magnetised (B_r 1.2 T, recoil mu_r 1.05), "
            "open boundary", "mean B inside (T)", fe, ref, 1e-4,
            "exact: uniform inside, B_in = -mu0 H_in for a 2D cylinder (demagnetising factor 1/2), "
            "so B_in = B_r/(1 + mu_r) (derived here; B_r/2 for mu_r = 1)")


def _rz_thin_loop(quick: bool):
    a, b = 50e-3, 0.5e-3
    lay = Layout((Region("loop", (Disk(a, 0.0, b),), "copper", kind="coil"),),
                 air=AirBox("rz-disk", factor=1.5, open=True),
                 mesh=MeshSettings(size=b / 4 if quick else b / 8, grading=0.1,
                                   air_size_factor=50.0))
    sol = solve(build_mesh(lay), {"copper": AIR}, currents={"loop": 1.0},
                formulation=Axisymmetric())
    fe = 2.0 * post.energy(sol)
    ref = mu_0 * a * (math.log(8 * a / b) - 1.75)
    return ("thin circular loop, 50 mm radius, round wire of 0.5 mm radius, open boundary at 1.5x",
            "self inductance (H)", fe, ref, 1e-4,
            "L = mu0 a (ln(8a/b) - 7/4) for uniform current in a round wire (Grover, Inductance "
            "Calculations, 1946); its next term, of order (b/a)^2 ln(8a/b), is ~2e-5 here")


def _rz_permeable_sphere(quick: bool):
    a, R, mu_r, b0 = 5e-3, 15e-3, 50.0, 0.1
    K = (mu_r - 1.0) / (mu_r + 2.0)
    lay = Layout((Region("sphere", (HalfDisk(0.0, 0.0, a),), "iron", kind="core"),),
                 air=AirBox("rz-disk", size=2 * R),
                 mesh=MeshSettings(size=a / 10 if quick else a / 20, air_size_factor=3.0))
    # the exact exterior flux function: u = B0 r^2/2 (1 + 2 K a^3 / rho^3)
    sol = solve(build_mesh(lay), {"iron": _linear(mu_r)}, formulation=Axisymmetric(),
                boundary_potential=lambda r, z: 0.5 * b0 * r * r
                * (1.0 + 2.0 * K * a ** 3 / (r * r + z * z) ** 1.5))
    fe = post.region_mean_b(sol, "sphere", direction=(0.0, 1.0))
    ref = 3.0 * mu_r / (mu_r + 2.0) * b0
    return ("permeable sphere (mu_r = 50) in a uniform axial field of 0.1 T",
            "mean B_z inside (T)", fe, ref, 1e-4,
            "exact: B_in = 3 mu_r/(mu_r + 2) B0 (separation of variables in spherical "
            "coordinates), the exact exterior flux function imposed on the boundary")


def _rz_magnet_sphere(quick: bool):
    a, br, mu_r = 5e-3, 1.2, 1.05
    lay = Layout((Region("magnet", (HalfDisk(0.0, 0.0, a),), "magnet", kind="magnet"),),
                 air=AirBox("rz-disk", factor=1.5, open=True),
                 mesh=MeshSettings(size=a / 12 if quick else a / 24, grading=0.3))
    sol = solve(build_mesh(lay), {"magnet": AIR}, formulation=Axisymmetric(),
                sources=Sources(magnets=(Magnet("magnet", (0.0, br), mu_r),)))
    fe = post.region_mean_b(sol, "magnet", direction=(0.0, 1.0))
    ref = 2.0 * br / (mu_r + 2.0)
    return ("sphere magnet, axially magnetised (B_r 1.2 T, recoil mu_r 1.05), open boundary",
            "mean B_z inside (T)", fe, ref, 1e-4,
            "exact: uniform inside, B_in = -2 mu0 H_in (demagnetising factor 1/3), so "
            "B_in = 2 B_r/(mu_r + 2) (Jackson, Classical Electrodynamics, 3rd ed. 1999, sec. 5.10)")


def _rz_magnet_cylinder(quick: bool):
    R, L, br = 5e-3, 10e-3, 1.2
    rho = 0.5 * R
    lay = Layout((Region("magnet", (Rect(0.0, -L / 2, R, L / 2),), "magnet", kind="magnet"),),
                 air=AirBox("rz-disk", factor=1.5, open=True),
                 mesh=MeshSettings(size=R / 15 if quick else R / 30, grading=0.3))
    sol = solve(build_mesh(lay), {"magnet": AIR}, formulation=Axisymmetric(),
                sources=Sources(magnets=(Magnet("magnet", (0.0, br), 1.0),)))
    fe = post.flux_across(sol, (0.0, 0.0), (rho, 0.0))
    # the magnet is the sheet current K = B_r/mu0 on r = R, |z| < L/2
    x, w = np.polynomial.legendre.leggauss(40)
    z = 0.5 * L * x
    ref = float(sum(0.5 * L * wi * br / mu_0 * loop_mutual_inductance(R, rho, zi)
                    for zi, wi in zip(z, w)))
    return ("cylinder magnet, axially magnetised (B_r 1.2 T, mu_r 1), 5 mm radius, 10 mm long: "
            "flux through a 2.5 mm disk at its mid-plane, open boundary", "flux (Wb)", fe, ref,
            1e-4, "the equivalent sheet current B_r/mu0 on the side with Maxwell's formula "
            "(Treatise, 1873, art. 701), integrated along the magnet by 40 Gauss points")


def _planar_wire_pair_force(quick: bool):
    a, d, current = 1e-3, 6e-3, 10.0
    lay = Layout((Region("w1", (Disk(-d / 2, 0.0, a),), "copper", kind="coil"),
                  Region("w2", (Disk(d / 2, 0.0, a),), "copper", kind="coil")),
                 air=AirBox("disk", factor=1.5, open=True),
                 mesh=MeshSettings(size=a / 4 if quick else a / 8, grading=0.2))
    sol = solve(build_mesh(lay), {"copper": AIR}, currents={"w1": current, "w2": -current},
                formulation=Planar(1.0))
    methods = _both(sol, "w2", (1.0, 0.0))
    ref = mu_0 * current ** 2 / (2 * math.pi * d)
    return ("two round wires, 1 mm radius, 6 mm apart, 10 A each way: force per metre",
            "force (N/m)", methods["maxwell_stress"], ref, 1e-4,
            "exact for uniform current in round wires: mu0 I1 I2 / (2 pi d) (each wire's field "
            "outside it is a line current's)", methods)


def _rz_coaxial_coil_force(quick: bool):
    s = 1e-3
    lay = Layout((Region("c1", (Rect(10e-3 - s / 2, -s / 2, 10e-3 + s / 2, s / 2),), "copper",
                         kind="coil"),
                  Region("c2", (Rect(12e-3 - s / 2, 3e-3 - s / 2, 12e-3 + s / 2, 3e-3 + s / 2),),
                         "copper", kind="coil")),
                 air=AirBox("rz-disk", factor=1.5, open=True),
                 mesh=MeshSettings(size=1.25e-4 if quick else 0.625e-4, grading=0.2,
                                   air_size_factor=40.0))
    sol = solve(build_mesh(lay), {"copper": AIR}, currents={"c1": 1.0, "c2": 1.0},
                formulation=Axisymmetric())
    methods = _both(sol, "c2", (0.0, 1.0))
    R1, Z1, W1 = _gauss_square(10e-3 - s / 2, 10e-3 + s / 2, -s / 2, s / 2)
    R2, Z2, W2 = _gauss_square(12e-3 - s / 2, 12e-3 + s / 2, 3e-3 - s / 2, 3e-3 + s / 2)

    def m(dz: float) -> float:
        return float(sum(w1 * w2 * loop_mutual_inductance(r1, r2, z2 - z1 + dz)
                         for r1, z1, w1 in zip(R1, Z1, W1) for r2, z2, w2 in zip(R2, Z2, W2)))

    ref = (m(1e-7) - m(-1e-7)) / 2e-7
    return ("two coaxial coils (10 and 12 mm radius, 3 mm apart, 1 A-turn each): axial force",
            "force F_z (N)", methods["maxwell_stress"], ref, 1e-4,
            "F_z = I1 I2 dM/dz with Maxwell's formula (Treatise, 1873, art. 701) averaged over "
            "both sections by 6x6 Gauss points, dM/dz by a central difference", methods)


def _both(sol, body, direction: tuple[float, float]) -> dict[str, float]:
    """The force on ``body`` along ``direction`` by both methods (N)."""
    from .force import maxwell_force, virtual_work_force

    f = maxwell_force(sol, body).force
    return {"maxwell_stress": float(direction[0] * f[0] + direction[1] * f[1]),
            "virtual_work": float(virtual_work_force(sol, body, direction).force)}


def image_force_cylinder(current: float, d: float, a: float, mu_r: float) -> float:
    """Force per metre (N/m, along the line from the axis to the wire; < 0:
    attracted) on a line current ``current`` at distance ``d`` from the axis
    of a linear permeable cylinder of radius ``a`` < d.

    Method of images (exact, 2D): outside the cylinder the field is the
    wire's plus an image k I at a^2/d and -k I on the axis, k = (mu_r - 1) /
    (mu_r + 1); inside it is 2 mu_r / (mu_r + 1) times the wire's own field
    (e.g. Binns, Lawrenson and Trowbridge, The Analytical and Numerical
    Solution of Electric and Magnetic Fields, 1992, ch. on images [from
    memory]; the interface conditions are checked in the tests).  As a ->
    infinity at fixed d - a = h it tends to the half-space's -mu0 k I^2 /
    (4 pi h).
    """
    k = (mu_r - 1.0) / (mu_r + 1.0)
    b = a * a / d
    return -mu_0 * k * current * current / (2.0 * math.pi) * (1.0 / (d - b) - 1.0 / d)


def _planar_wire_cylinder_force(quick: bool):
    a, rw, d, current, mu_r = 5e-3, 0.5e-3, 8e-3, 10.0, 10.0
    lay = Layout((Region("cylinder", (Disk(0.0, 0.0, a),), "iron", kind="core"),
                  Region("wire", (Disk(d, 0.0, rw),), "copper", kind="coil")),
                 air=AirBox("disk", factor=1.5, open=True),
                 mesh=MeshSettings(size=rw / 2 if quick else rw / 4, grading=0.2))
    sol = solve(build_mesh(lay), {"iron": _linear(mu_r), "copper": AIR},
                currents={"wire": current}, formulation=Planar(1.0))
    methods = _both(sol, "wire", (1.0, 0.0))
    ref = image_force_cylinder(current, d, a, mu_r)
    return ("round wire (0.5 mm, 10 A) 3 mm from a permeable cylinder (5 mm radius, mu_r 10): "
            "attraction per metre", "force (N/m)", methods["maxwell_stress"], ref, 2e-4,
            "exact by the method of images: images k I at a^2/d and -k I on the axis, "
            "k = (mu_r - 1)/(mu_r + 1) (image_force_cylinder; the half-space is its limit "
            "a -> infinity); tolerance 2e-4: the mesh's circle of 5 mm radius", methods)


def magnet_pair_force(remanence: float, radius: float, length: float, gap: float) -> float:
    """Axial force (N, < 0: attraction) on the upper of two equal coaxial
    cylinder magnets (mu_r = 1), both magnetised along +z, faces ``gap``
    apart.  Each magnet is the sheet current K = B_r/mu0 on its side
    (exact for mu_r = 1), so F = K^2 int_0^L [M(2L + g - z) - M(L + g - z)] dz
    with Maxwell's mutual inductance of coaxial loops of equal radius
    (loop_mutual_inductance) and L the length (the double integral of dM/dz
    over both sides, integrated once exactly)."""
    k = remanence / mu_0
    R, L, g = radius, length, gap
    val = integrate.quad(lambda z: loop_mutual_inductance(R, R, 2 * L + g - z)
                         - loop_mutual_inductance(R, R, L + g - z), 0.0, L,
                         epsabs=0.0, epsrel=1e-12, limit=200)[0]
    return k * k * val


def _rz_magnet_pair(gap: float):
    def case(quick: bool):
        R, L, br = 5e-3, 5e-3, 1.2
        c = 0.4e-3  # the air shell moved with the magnet (see below)
        z0, z1 = L + gap, 2 * L + gap
        shell = Region("shell", (Rect(0.0, z0 - c, R + c, z0), Rect(R, z0, R + c, z1),
                                 Rect(0.0, z1, R + c, z1 + c)), "air", kind="air")
        lay = Layout((Region("m1", (Rect(0.0, 0.0, R, L),), "pm", kind="magnet"),
                      Region("m2", (Rect(0.0, z0, R, z1),), "pm", kind="magnet"), shell),
                     air=AirBox("rz-disk", factor=1.5, open=True),
                     mesh=MeshSettings(size=2.5e-4 if quick else 1.25e-4, grading=0.2))
        mags = (Magnet("m1", (0.0, br), 1.0), Magnet("m2", (0.0, br), 1.0))
        sol = solve(build_mesh(lay), {"pm": AIR, "air": AIR}, sources=Sources(magnets=mags),
                    formulation=Axisymmetric())
        # the body is the magnet with a 0.4 mm air shell: the stress layer
        # then lies off the magnet's edges, where B is log-singular
        methods = _both(sol, ("m2", "shell"), (0.0, 1.0))
        ref = magnet_pair_force(br, R, L, gap)
        return (f"two coaxial cylinder magnets (B_r 1.2 T, mu_r 1, 5 mm radius, 5 mm long), "
                f"faces {gap * 1e3:g} mm apart: axial force on the upper", "force F_z (N)",
                methods["maxwell_stress"], ref, 1e-4,
                "exact for mu_r = 1: the magnets as sheet currents B_r/mu0 on their sides, "
                "F = K^2 int int dM/dz with Maxwell's formula (Treatise, 1873, art. 701) "
                "(magnet_pair_force; agrees with magpylib's getFT to 2e-7 in the tests)", methods)
    return case


def u_core_armature(gap: float = 0.5e-3, size: float | None = None) -> tuple[Layout, Sources]:
    """A U core (40 x 30 mm, 10 mm legs) and an armature bar 8 mm thick at
    ``gap`` (m) above both legs, coil sides "c+" and "c-" in and beside the
    window (coil "w", 200 turns), stack 20 mm, open boundary (invented for
    the demo; materials "steel", "copper", "air")."""
    from .sources import Coil

    mm, g = 1e-3, gap
    core = Region("core", (Rect(0, 0, 40 * mm, 10 * mm), Rect(0, 10 * mm, 10 * mm, 30 * mm),
                           Rect(30 * mm, 10 * mm, 40 * mm, 30 * mm)), "steel", kind="core")
    arm = Region("armature", (Rect(0, 30 * mm + g, 40 * mm, 38 * mm + g),), "steel", kind="core")
    gaps = [Region(n, (Rect(x0, 30 * mm, x0 + 10 * mm, 30 * mm + g),), "air", kind="gap")
            for n, x0 in (("gapL", 0.0), ("gapR", 30 * mm))]
    coils = [Region("c+", (Rect(12 * mm, 12 * mm, 18 * mm, 26 * mm),), "copper", kind="coil"),
             Region("c-", (Rect(-8 * mm, 12 * mm, -2 * mm, 26 * mm),), "copper", kind="coil")]
    lay = Layout((core, arm, *gaps, *coils), air=AirBox("disk", factor=1.5, open=True),
                 depth=20 * mm, mesh=MeshSettings(size=size))
    return lay, Sources(coils=(Coil("w", (("c+", 1), ("c-", -1)), 200),))


def _planar_armature_force(quick: bool):
    mm = 1e-3
    lay, src = u_core_armature(0.5e-3, size=None if quick else 1.25 * mm)
    sol = solve(build_mesh(lay), {"steel": BRAUER, "copper": AIR, "air": AIR}, sources=src,
                currents={"w": 15.0}, formulation=Planar(20 * mm))
    methods = _both(sol, "armature", (0.0, -1.0))
    return ("U core and armature, saturating steel (Brauer law), two 0.5 mm gaps, 200 turns "
            "x 15 A, stack 20 mm: pull on the armature", "force (N)", methods["maxwell_stress"],
            methods["virtual_work"], METHODS_TOLERANCE,
            "no exact solution with saturating iron: the check is that the two independent "
            "methods agree (reference = virtual work)", methods)


# ------------------------------------------------- time-harmonic (fem2d.harmonic)
_SIGMA = 5.8e7  # S/m: a copper-like value; only the ratios to delta matter


def _freq_for(delta: float) -> float:
    """f (Hz) whose skin depth in _SIGMA is delta (delta = sqrt(2/(w mu0 sigma)))."""
    return 2.0 / (delta ** 2 * mu_0 * _SIGMA) / (2.0 * math.pi)


def _ac_wire(quick: bool):
    from . import harmonic as H

    a, R, ad = 1e-3, 2e-3, 3.0
    f = _freq_for(a / ad)
    size = H.surface_mesh_size(f, _SIGMA, per_depth=2.0 if quick else 4.0)
    lay = Layout((Region("wire", (Disk(0.0, 0.0, a),), "copper", kind="coil"),),
                 air=AirBox("disk", size=2 * R), mesh=MeshSettings(size=size, air_size_factor=2.0))
    hs = H.harmonic_solve(build_mesh(lay), {"copper": AIR}, {"wire": _SIGMA}, f,
                          currents={"w": 1.0}, windings=(H.SolidWinding("w", (("wire", 1),)),),
                          formulation=Planar(1.0))
    k = np.sqrt(-1j * 2 * math.pi * f * mu_0 * _SIGMA)
    ref = k / (2 * math.pi * a * _SIGMA) * special.jv(0, k * a) / special.jv(1, k * a)
    return ("isolated round wire at a/delta = 3: AC resistance per metre", "R (ohm/m)",
            H.winding_impedance(hs, "w").R, float(ref.real), 1e-3,
            "exact Bessel solution Z = k J0(ka)/(2 pi a sigma J1(ka)), k^2 = -j w mu0 sigma "
            "(e^{jwt}); tolerance 1e-3: measured 9e-5 at elements delta/2, 5e-6 at delta/4")


def _dowell(D: float, m: int) -> float:
    """Dowell's F_R = D [G1 + (2 (m^2 - 1)/3) G3] (Proc. IEE 113(8), 1966; the
    same formula as analytic.winding_loss, restated: fem2d does not import it)."""
    g1 = (math.sinh(2 * D) + math.sin(2 * D)) / (math.cosh(2 * D) - math.cos(2 * D))
    g3 = (math.sinh(D) - math.sin(D)) / (math.cosh(D) + math.cos(D))
    return D * (g1 + 2.0 * (m * m - 1) / 3.0 * g3)


def _ac_foil_stack(quick: bool):
    from . import harmonic as H

    m, D, t, g = 3, 2.0, 0.2e-3, 0.05e-3
    W = m * t + (m + 1) * g
    f = _freq_for(t / D)
    regs = [Region("window", (Rect(0, 0, W, W),), "air")]
    regs += [Region(f"f{k}", (Rect(g + k * (t + g), 0, g + k * (t + g) + t, W),), "copper")
             for k in range(m)]
    size = min(t / 3, H.surface_mesh_size(f, _SIGMA, per_depth=2.0 if quick else 4.0))
    lay = Layout(tuple(regs), air=AirBox("box", size=W), mesh=MeshSettings(size=size,
                                                                          air_size_factor=1.0))
    wd = H.SolidWinding("w", tuple((f"f{k}", 1) for k in range(m)))
    hs = H.harmonic_solve(build_mesh(lay), {"copper": AIR}, {f"f{k}": _SIGMA for k in range(m)},
                          f, currents={"w": 1.0}, windings=(wd,), formulation=Planar(1.0),
                          natural_boundary=lambda x, y: x < W * (1 - 1e-9))
    rdc = m / (_SIGMA * t * W)
    return ("three foils filling an ideal-iron window, h/delta = 2", "R_ac/R_dc",
            H.winding_impedance(hs, "w").R / rdc, _dowell(D, m), 1e-3,
            "Dowell, Proc. IEE 113(8), 1966: exact for this 1D problem; tolerance 1e-3: "
            "measured 3.3e-4 at elements delta/2, 1.5e-5 at delta/4")


def _ac_rz_rod(quick: bool):
    from . import harmonic as H
    from .sources import Background

    a, R, B0 = 1e-3, 1.5e-3, 0.1
    delta = a / 3.0
    f = _freq_for(delta)
    lay = Layout((Region("bore", (Rect(0, -R, R, R),), "air"),
                  Region("rod", (Rect(0, -R, a, R),), "copper")),
                 air=AirBox("rz-box", size=2 * R),
                 mesh=MeshSettings(size=delta / (2.0 if quick else 4.0), air_size_factor=1.0))
    prob = H.HarmonicProblem(build_mesh(lay), {"copper": AIR}, {"rod": _SIGMA}, f,
                             formulation=Axisymmetric(),
                             natural_boundary=lambda r, z: (r > 1e-12) & (r < R * (1 - 1e-9)))
    hs = prob.solve(background=Background((0.0, B0)))
    k = np.sqrt(-1j * 2 * math.pi * f * mu_0 * _SIGMA)
    j0, j1 = special.jv(0, k * a), special.jv(1, k * a)
    H0 = math.pi * R ** 2 * B0 / (mu_0 * (math.pi * (R ** 2 - a ** 2)
                                          + 2 * math.pi * a * j1 / (k * j0)))
    ref = 2 * R * 2 * math.pi * integrate.quad(
        lambda r: abs(H0 * k * special.jv(1, k * r) / j0) ** 2 / (2 * _SIGMA) * r, 0, a,
        epsabs=0.0, epsrel=1e-12)[0]
    return ("long copper rod (a/delta = 3) in an axial AC field between ideal-iron poles",
            "loss (W)", H.region_loss(hs, "rod"), ref, 1e-3,
            "exact Bessel solution H_z = H0 J0(kr)/J0(ka), k^2 = -j w mu0 sigma, H0 from the "
            "imposed flux (derived); tolerance 1e-3: measured 1.9e-4 at elements delta/2, 1.1e-5 at delta/4")


def _linear(mu_r: float):
    from .materials import LinearReluctivity

    return LinearReluctivity(mu_r)


CASES: dict[str, tuple[str, Callable]] = {
    "planar-wire-energy": ("planar", _planar_wire_energy),
    "planar-nonlinear-ring": ("planar", _planar_nonlinear_ring),
    "rz-loop-disk-flux": ("axisymmetric", _rz_loop_disk_flux),
    "rz-loop-off-axis-field": ("axisymmetric", _rz_loop_off_axis_field),
    "rz-mutual-inductance": ("axisymmetric", _rz_mutual_inductance),
    "planar-wire-pair-open": ("planar", _planar_wire_pair_open),
    "planar-permeable-cylinder": ("planar", _planar_permeable_cylinder),
    "planar-magnet-cylinder": ("planar", _planar_magnet_cylinder),
    "rz-thin-loop-open": ("axisymmetric", _rz_thin_loop),
    "rz-permeable-sphere": ("axisymmetric", _rz_permeable_sphere),
    "rz-magnet-sphere": ("axisymmetric", _rz_magnet_sphere),
    "rz-magnet-cylinder": ("axisymmetric", _rz_magnet_cylinder),
    "planar-wire-pair-force": ("planar", _planar_wire_pair_force),
    "rz-coaxial-coil-force": ("axisymmetric", _rz_coaxial_coil_force),
    "planar-wire-cylinder-force": ("planar", _planar_wire_cylinder_force),
    "rz-magnet-pair-force-1mm": ("axisymmetric", _rz_magnet_pair(1e-3)),
    "rz-magnet-pair-force-2.5mm": ("axisymmetric", _rz_magnet_pair(2.5e-3)),
    "rz-magnet-pair-force-5mm": ("axisymmetric", _rz_magnet_pair(5e-3)),
    "planar-armature-force": ("planar", _planar_armature_force),
    "planar-ac-wire-resistance": ("planar", _ac_wire),
    "planar-ac-foil-stack-dowell": ("planar", _ac_foil_stack),
    "rz-ac-rod-axial-field": ("axisymmetric", _ac_rz_rod),
}


def run_cases(quick: bool = True, names: tuple[str, ...] | None = None) -> list[VerificationResult]:
    """Run the verification cases (all, or ``names``) and return their results."""
    out = []
    for name, (form, fn) in CASES.items():
        if names is not None and name not in names:
            continue
        t0 = time.perf_counter()
        title, quantity, fe, ref, tol, source, *more = fn(quick)
        methods = more[0] if more else None
        values = list(methods.values()) if methods else [fe]
        err = max(abs(v - ref) / abs(ref) for v in values)
        passed = err <= tol
        spread = None
        if methods:
            spread = abs(methods["maxwell_stress"] - methods["virtual_work"]) \
                / abs(methods["maxwell_stress"])
            passed = passed and spread <= METHODS_TOLERANCE
        out.append(VerificationResult(
            f"{name}: {title}", form, quantity, float(fe), float(ref), float(err), tol, source,
            bool(passed), time.perf_counter() - t0, methods,
            None if spread is None else float(spread),
            None if spread is None else METHODS_TOLERANCE))
    return out
