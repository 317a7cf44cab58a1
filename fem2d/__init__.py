"""fem2d: nonlinear 2D magnetostatic finite-element engine (gmsh + scikit-fem),
planar (A_z) and axisymmetric (u = r A_phi), closed or open boundary.

Generic: knows shapes, regions, material laws (``nu(s)``, ``dnu_ds(s)``,
s = |B|^2) and sources (coils, magnets, a background field); never imports
``analytic`` or ``compare``.

Modules (``magcheck.fem2d.<name>``):

- ``layout``: the plain-data problem: shapes, regions, mesh settings (m).
- ``mesher``: builds and meshes a layout with gmsh.
- ``mesh``: gmsh arrays to a scikit-fem mesh with named subdomains and boundaries.
- ``materials``: material laws as reluctivity functions of s = |B|^2.
- ``sources``: coils, permanent magnets and a uniform background field.
- ``formulation``: the planar and axisymmetric forms of the problem.
- ``assembly``: fast assembly into a fixed sparsity pattern.
- ``linsolve``: pluggable sparse linear solvers for the tangent.
- ``exterior``: the open boundary (the unbounded exterior mapped onto a ring).
- ``solver``: the nonlinear solve (Newton with an energy line search).
- ``harmonic``: the time-harmonic eddy-current solve, planar and r-z.
- ``post``: post-processing of a :class:`~.solver.FieldSolution`.
- ``force``: force on a body by the weighted Maxwell stress (N).
- ``export``: VTU export of a solution via meshio.
- ``verification``: the engine's verification suite against exact solutions.
- ``errors``: the package's exception types.
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
