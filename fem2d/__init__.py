"""fem2d: planar nonlinear A_z finite-element engine (gmsh + scikit-fem).

Generic: knows shapes, regions, material laws (``nu(s)``, ``dnu_ds(s)``,
s = |B|^2) and currents; never imports ``analytic`` or ``compare``.
"""
from .layout import (AirBox, Annulus, Disk, Layout, LayoutError, MeshSettings, Polygon, Rect,
                     Region)
from .materials import AIR, BrauerReluctivity, LinearReluctivity, MaterialError, Reluctivity
from .mesh import RegionMesh, build_mesh
from .solver import ConvergenceError, FieldSolution, SolverInputError, solve

__all__ = [
    "AirBox", "Annulus", "Disk", "Layout", "LayoutError", "MeshSettings", "Polygon", "Rect",
    "Region", "AIR", "BrauerReluctivity", "LinearReluctivity", "MaterialError", "Reluctivity",
    "RegionMesh", "build_mesh", "ConvergenceError", "FieldSolution", "SolverInputError", "solve",
]
