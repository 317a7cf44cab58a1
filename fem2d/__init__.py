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
from __future__ import annotations

import importlib
from typing import TYPE_CHECKING, Any

# The names below are imported on first use (PEP 562): ``import
# magcheck.fem2d.layout`` (the case reader's shapes) then costs no scipy,
# scikit-fem or gmsh import; a command that never solves never pays for them.
_WHERE = {
    **dict.fromkeys(("AirBox", "Annulus", "Disk", "HalfDisk", "Layout", "LayoutError",
                     "MeshSettings", "Polygon", "Rect", "Region"), "layout"),
    **dict.fromkeys(("AIR", "BrauerReluctivity", "LinearReluctivity", "MaterialError",
                     "Reluctivity"), "materials"),
    **dict.fromkeys(("RegionMesh", "build_mesh"), "mesh"),
    **dict.fromkeys(("ConvergenceError", "FieldSolution", "SolverInputError", "solve"), "solver"),
}

__all__ = [
    "AirBox", "Annulus", "Disk", "HalfDisk", "Layout", "LayoutError", "MeshSettings", "Polygon", "Rect",
    "Region", "AIR", "BrauerReluctivity", "LinearReluctivity", "MaterialError", "Reluctivity",
    "RegionMesh", "build_mesh", "ConvergenceError", "FieldSolution", "SolverInputError", "solve",
]

if TYPE_CHECKING:
    from .layout import (AirBox, Annulus, Disk, HalfDisk, Layout, LayoutError, MeshSettings,
                         Polygon, Rect, Region)
    from .materials import AIR, BrauerReluctivity, LinearReluctivity, MaterialError, Reluctivity
    from .mesh import RegionMesh, build_mesh
    from .solver import ConvergenceError, FieldSolution, SolverInputError, solve


def __getattr__(name: str) -> Any:
    where = _WHERE.get(name)
    if where is None:
        raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
    value = getattr(importlib.import_module(f"{__name__}.{where}"), name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(__all__))
