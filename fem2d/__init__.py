"""fem2d: nonlinear 2D magnetostatic finite-element engine (gmsh + scikit-fem),
planar (A_z) and axisymmetric (u = r A_phi), closed or open boundary.

Generic: knows shapes, regions, material laws (``nu(s)``, ``dnu_ds(s)``,
s = |B|^2) and sources (coils, magnets, a background field); never imports
``analytic`` or ``compare``.
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
