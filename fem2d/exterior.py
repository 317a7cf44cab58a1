"""The open boundary: the unbounded exterior mapped onto a ring of elements.

Shell transformation (Brunotte, Meunier, Imhoff, "Finite element modeling
of unbounded problems using transformations: a rigorous, powerful and easy
solution", IEEE Trans. Magn. 28(2), 1992, pp. 1663-1666; review: Chen and
Konrad, "A review of finite element open boundary techniques for static
and quasi-static electromagnetic field problems", IEEE Trans. Magn. 33(1),
1997).  The ring R1 < rho < R2 of the mesh (rho: distance from the air
disk's centre) stands for the whole exterior R1 < rho' < infinity through
the radial map

    rho' = f(rho) = R1 (R2 - R1) / (R2 - rho),   f' = f / (R2 - rho),

continuous with the identity at R1 and with f'(R1) = 1 for R2 = 2 R1 (the
choice here), so the mapped coefficient meets the air's without a jump.
The air's energy over the true exterior, written in the ring's
coordinates, is int T grad u . grad u dx with the tensor
T = nu0 |det DPhi| DPhi^-1 DPhi^-T (and the formulation's 1/r' for r-z;
derived here for the unknowns of fem2d.formulation):

    planar   T = nu0 [ (R2 - rho)/rho  e e^T + rho/(R2 - rho)  t t^T ]
    r-z      T = (nu0 / r) [ (R2 - rho)/f  e e^T + rho^2 / (f (R2 - rho))  t t^T ]

(e the radial, t the tangential unit vector of the map; r the mesh point's
radius from the axis, the map centred on the axis).  The unknown is a
scalar under the map (A_z, or u = r A_phi, the flux function), and it is
zero at rho' = infinity, i.e. on the ring's outer circle: exact for any
field with no net current (planar) and for every axisymmetric field.  The
exterior is air: the ring's matrix is constant and assembled once.
"""
from __future__ import annotations

import numpy as np
from scipy.constants import mu_0

__all__ = ["ring_tensor"]


def ring_tensor(xq: np.ndarray, centre: tuple[float, float], r1: float, r2: float,
                axisymmetric: bool) -> np.ndarray:
    """The mapped reluctivity tensor T (m/H; r-z: m/H per m) at points ``xq``.

    Parameters
    ----------
    xq : array, shape (2, ...)
        Points of the ring, m (quadrature points: never on rho = R2).
    centre : (x, y)
        Centre of the air disk, m (r-z: (0, z_c), on the axis).
    r1, r2 : float
        Inner and outer radius of the ring, m, r1 < r2.

    Returns
    -------
    T : array, shape (2, 2, ...)
    """
    dx = xq[0] - centre[0]
    dy = xq[1] - centre[1]
    rho = np.hypot(dx, dy)
    ex, ey = dx / rho, dy / rho
    gap = r2 - rho
    if axisymmetric:
        f = r1 * (r2 - r1) / gap
        inv_r = 1.0 / xq[0]
        a = mu_0 ** -1 * inv_r * gap / f
        b = mu_0 ** -1 * inv_r * rho ** 2 / (f * gap)
    else:
        a = mu_0 ** -1 * gap / rho
        b = mu_0 ** -1 * rho / gap
    # a e e^T + b t t^T = b I + (a - b) e e^T
    d = a - b
    return np.stack([np.stack([b + d * ex * ex, d * ex * ey]),
                     np.stack([d * ex * ey, b + d * ey * ey])])
