"""The references of the force cases in ``magcheck selftest``, checked apart
from the engine: the image solution of a wire beside a permeable cylinder
meets the interface conditions, and the magnet-pair formula agrees with a
general-purpose library (magpylib)."""
import math

import numpy as np
import pytest
from scipy.constants import mu_0

from magcheck.fem2d.verification import image_force_cylinder, magnet_pair_force


def _line_b(current, x0, y0, x, y):
    """B (T) of a line current (A) at (x0, y0), free space: mu0 I / (2 pi r) around it."""
    dx, dy = x - x0, y - y0
    r2 = dx * dx + dy * dy
    c = mu_0 * current / (2 * math.pi * r2)
    return -c * dy, c * dx


def test_the_cylinder_image_solution_meets_the_interface_conditions():
    # Exact solution checked directly: outside, the wire + k I at a^2/d
    # + (-k I) on the axis; inside, 2 mu_r/(mu_r + 1) x the wire's field.
    # On r = a, B_n and H_t must be continuous (to round-off).
    a, d, current, mu_r = 5e-3, 8e-3, 10.0, 10.0
    k = (mu_r - 1) / (mu_r + 1)
    th = np.linspace(0, 2 * np.pi, 64, endpoint=False)
    x, y = a * np.cos(th), a * np.sin(th)
    bo = np.add(np.add(_line_b(current, d, 0, x, y), _line_b(k * current, a * a / d, 0, x, y)),
                _line_b(-k * current, 0, 0, x, y))
    bi = 2 * mu_r / (mu_r + 1) * np.asarray(_line_b(current, d, 0, x, y))
    n = np.array([np.cos(th), np.sin(th)])
    t = np.array([-np.sin(th), np.cos(th)])
    scale = mu_0 * current / (2 * math.pi * (d - a))
    assert np.max(np.abs(np.sum((bo - bi) * n, axis=0))) < 1e-12 * scale
    assert np.max(np.abs(np.sum((bo - bi / mu_r) * t, axis=0))) < 1e-12 * scale
    # the force on the wire is I z x B of the images at it (Lorentz): F_x = -I B_y
    bx, by = np.add(_line_b(k * current, a * a / d, 0, d, 0), _line_b(-k * current, 0, 0, d, 0))
    assert image_force_cylinder(current, d, a, mu_r) == pytest.approx(-current * by, rel=1e-13)
    assert bx == 0


def test_the_cylinder_image_force_tends_to_the_half_space_image_force():
    # Source: image of a line current in a permeable half-space, I' = k I at
    # 2h (exact), so F = mu0 k I^2 / (4 pi h) attraction; the cylinder's
    # formula tends to it as a -> infinity at fixed clearance h.
    h, current, mu_r = 2e-3, 5.0, 1000.0
    k = (mu_r - 1) / (mu_r + 1)
    half = -mu_0 * k * current ** 2 / (4 * math.pi * h)
    errs = [abs(image_force_cylinder(current, a + h, a, mu_r) / half - 1)
            for a in (0.02, 0.2, 2.0)]
    assert errs[0] > errs[1] > errs[2]
    assert errs[2] < 2e-3


@pytest.mark.parametrize("gap", [1e-3, 2.5e-3, 5e-3])
def test_the_magnet_pair_force_agrees_with_magpylib(gap):
    # Reference library: magpylib (Ortner and Coliado Bandeira, "Magpylib: A
    # free Python package for magnetic field computation", SoftwareX 11, 2020),
    # getFT on the upper magnet meshed into 16000 cells (its discretisation
    # error, measured against 64000 cells: 3e-7 at 2.5 mm, 4e-6 at 1 mm).
    import magpylib as magpy

    R, L, br = 5e-3, 5e-3, 1.2
    m1 = magpy.magnet.Cylinder(polarization=(0, 0, br), dimension=(2 * R, L),
                               position=(0, 0, L / 2))
    m2 = magpy.magnet.Cylinder(polarization=(0, 0, br), dimension=(2 * R, L),
                               position=(0, 0, 1.5 * L + gap))
    F, _ = magpy.getFT(m1, m2, meshing=16000)
    ref = magnet_pair_force(br, R, L, gap)
    assert ref < 0  # like poles apart: they attract
    assert ref == pytest.approx(F[2], rel=1e-5)

