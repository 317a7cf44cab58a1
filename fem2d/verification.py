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
from .layout import AirBox, Annulus, Disk, Layout, MeshSettings, Rect, Region
from .materials import AIR, BrauerReluctivity
from .mesh import build_mesh
from .solver import solve

__all__ = ["VerificationResult", "CASES", "run_cases", "loop_mutual_inductance",
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

    def to_dict(self) -> dict:
        return asdict(self)


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


CASES: dict[str, tuple[str, Callable]] = {
    "planar-wire-energy": ("planar", _planar_wire_energy),
    "planar-nonlinear-ring": ("planar", _planar_nonlinear_ring),
    "rz-loop-disk-flux": ("axisymmetric", _rz_loop_disk_flux),
    "rz-loop-off-axis-field": ("axisymmetric", _rz_loop_off_axis_field),
    "rz-mutual-inductance": ("axisymmetric", _rz_mutual_inductance),
}


def run_cases(quick: bool = True, names: tuple[str, ...] | None = None) -> list[VerificationResult]:
    """Run the verification cases (all, or ``names``) and return their results."""
    out = []
    for name, (form, fn) in CASES.items():
        if names is not None and name not in names:
            continue
        t0 = time.perf_counter()
        title, quantity, fe, ref, tol, source = fn(quick)
        err = abs(fe - ref) / abs(ref)
        out.append(VerificationResult(f"{name}: {title}", form, quantity, float(fe), float(ref),
                                      float(err), tol, source, bool(err <= tol),
                                      time.perf_counter() - t0))
    return out
