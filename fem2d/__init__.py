"""fem2d: nonlinear 2D magnetostatic finite-element engine (gmsh + scikit-fem),
planar (A_z) and axisymmetric (u = r A_phi), closed or open boundary.

Generic: knows shapes, regions, material laws (``nu(s)``, ``dnu_ds(s)``,
s = |B|^2) and sources (coils, magnets, a background field); never imports
``analytic`` or ``compare``.
"""
from .layout import (AirBox, Annulus, Disk, HalfDisk, Layout, LayoutError, MeshSettings, Polygon, Rect,
                     Region)
from .materials import AIR, BrauerReluctivity, LinearReluctivity, MaterialError, Reluctivity
from .mesh import RegionMesh, build_mesh
from .solver import ConvergenceError, FieldSolution, SolverInputError, solve

__all__ = [
    "AirBox", "Annulus", "Disk", "HalfDisk", "Layout", "LayoutError", "MeshSettings", "Polygon", "Rect",
    "Region", "AIR", "BrauerReluctivity", "LinearReluctivity", "MaterialError", "Reluctivity",
    "RegionMesh", "build_mesh", "ConvergenceError", "FieldSolution", "SolverInputError", "solve",
]
