"""Planar and axisymmetric forms of the magnetostatic problem.

The one place where B is formed from the unknown's gradient, where the
integration weights live and where per-metre integrals become totals.

Planar (unknown A = A_z, Wb/m; stack depth d):
    int nu(|B|^2) grad A . grad v dx = int J v dx,   B = (dA/dy, -dA/dx),
    totals = d x the integrals over the plane.

Axisymmetric (coordinates x = r >= 0, y = z; unknown u = r A_phi, Wb/rad;
2 pi u is the flux through the circle of radius r at height z):
    int (nu(|B|^2) / r) grad u . grad v dr dz = int J v dr dz,
    B_r = -(1/r) du/dz,  B_z = (1/r) du/dr,  u = 0 on the axis,
    totals = 2 pi x the integrals with the volume weight r
(the "r A_phi" form of the axisymmetric vector-potential problem, e.g.
Meunier (ed.), The Finite Element Method for Electromagnetic Modeling,
Wiley/ISTE 2008, ch. on 2D axisymmetric magnetostatics [from memory];
the Newton tangent stays symmetric positive definite exactly when
dH/dB > 0, as in the planar case).  Quadrature points lie inside the
elements, so 1/r is never evaluated on the axis.

Both forms give, with s = |B|^2:
    stiffness weight  k(x) = (field scale)^2 x (volume weight),
so the energy int w(s) (volume weight) dx has the residual above as its
gradient; `Assembler`, the Newton line search and the post-processing rely
on that identity (tests/test_formulation.py checks it).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .layout import Layout, LayoutError

__all__ = ["Planar", "Axisymmetric", "formulation_for"]


@dataclass(frozen=True)
class Planar:
    """Planar A_z problem for a stack of depth ``depth`` (m)."""

    depth: float = 1.0
    name = "planar"

    @property
    def total(self) -> float:
        """Factor from a per-metre integral to the total (m)."""
        return self.depth

    def check(self, layout: Layout) -> None:
        """Nothing to check: any layout is a planar cut."""

    def field_scale(self, xy: np.ndarray) -> np.ndarray | None:
        """Factor from grad(unknown) to |B| (None: 1)."""
        return None

    def volume_weight(self, xy: np.ndarray) -> np.ndarray | None:
        """Weight of dx in volume integrals (None: 1)."""
        return None

    def eddy_weight(self, xy: np.ndarray) -> np.ndarray | None:
        """Factor m(x) in the conductor's J = sigma m (-j w A + E) (None: 1):
        E the voltage per metre of the conductor (V/m) (fem2d.harmonic)."""
        return None

    def b(self, g: np.ndarray, xy: np.ndarray) -> np.ndarray:
        """B = (dA/dy, -dA/dx) from grad A, shape (2, ...) (T)."""
        return np.stack([g[1], -g[0]])

    def stress_force_density(self, B: np.ndarray, grad_w: np.ndarray,
                             xy: np.ndarray) -> np.ndarray:
        """-T . grad w with the air's Maxwell stress T = (B B^T - |B|^2 I / 2)/mu0
        (N/m^3), shape (2, ...): integrated with the volume weight and times
        ``total`` it is the force (N) on the body where w = 1."""
        return -_stress_dot(B, grad_w)


@dataclass(frozen=True)
class Axisymmetric:
    """Axisymmetric problem in (r, z), unknown u = r A_phi (module docstring)."""

    name = "axisymmetric"

    @property
    def total(self) -> float:
        """Factor from an integral over the (r, z) half-plane to the total (rad)."""
        return 2.0 * math.pi

    def check(self, layout: Layout) -> None:
        """The axis must bound the domain and every region must lie in r >= 0."""
        if not layout.air.axisymmetric:
            raise LayoutError(f"axisymmetric: air shape = {layout.air.shape!r} must be 'rz-box' "
                              "or 'rz-disk' "
                              "(the domain r >= 0 with the axis as its boundary)")
        for r in layout.regions:
            x0 = r.bbox()[0]
            if x0 < 0.0:
                raise LayoutError(f"region {r.name!r}: reaches r = {x0!r} m < 0 (axisymmetric)")

    def field_scale(self, xy: np.ndarray) -> np.ndarray:
        return 1.0 / xy[0]

    def volume_weight(self, xy: np.ndarray) -> np.ndarray:
        return xy[0]

    def eddy_weight(self, xy: np.ndarray) -> np.ndarray:
        """Factor m = 1/r in J_phi = sigma m (-j w u + e), u = r A_phi,
        e = V/(2 pi) the turn's voltage per radian (fem2d.harmonic):
        E_phi = -j w A_phi + V/(2 pi r)."""
        return np.reciprocal(xy[0])

    def b(self, g: np.ndarray, xy: np.ndarray) -> np.ndarray:
        """B = (-du/dz, du/dr) / r from grad u, shape (2, ...) (T)."""
        inv_r = 1.0 / xy[0]
        return np.stack([-g[1] * inv_r, g[0] * inv_r])

    def stress_force_density(self, B: np.ndarray, grad_w: np.ndarray,
                             xy: np.ndarray) -> np.ndarray:
        """(0, -(T . grad w)_z) in (r, z) (N/m^3): the axial force density; the
        radial part of a force on a body of revolution cancels round the axis.
        With the volume weight r and ``total`` 2 pi it is F_z (N)."""
        f = -_stress_dot(B, grad_w)
        return np.stack([np.zeros_like(f[1]), f[1]])


def _stress_dot(B: np.ndarray, v: np.ndarray) -> np.ndarray:
    """T . v for the vacuum Maxwell stress T = (B B^T - |B|^2 I / 2) / mu0."""
    from scipy.constants import mu_0

    bv = B[0] * v[0] + B[1] * v[1]
    half_b2 = 0.5 * (B[0] ** 2 + B[1] ** 2)
    return np.stack([B[0] * bv - half_b2 * v[0], B[1] * bv - half_b2 * v[1]]) / mu_0


def formulation_for(layout: Layout):
    """The formulation a layout implies: axisymmetric for an "rz-box" or
    "rz-disk" air domain, planar with the layout's depth otherwise."""
    return Axisymmetric() if layout.air.axisymmetric else Planar(layout.depth)
