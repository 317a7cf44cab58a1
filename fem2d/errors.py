"""Exception types of fem2d, in one place.

Every error names the offending region, key or value.  The modules that
raise them re-export them under the same names.
"""
from __future__ import annotations

import math

__all__ = ["LayoutError", "MaterialError", "SolverInputError", "ConvergenceError",
           "LinearSolverError", "PostError", "finite_number"]


class LayoutError(ValueError):
    """Invalid layout input; the message names the offending region/key and value."""


class MaterialError(ValueError):
    """Invalid material parameters or a missing material; names the key and value."""


class SolverInputError(ValueError):
    """Bad solver input (unknown coil in ``currents``, bad A0, bad sources, ...)."""


class ConvergenceError(RuntimeError):
    """The nonlinear solve did not converge."""


class LinearSolverError(ValueError):
    """Unknown linear solver, or a linear solve that failed."""


class PostError(ValueError):
    """Bad post-processing input (point outside the mesh, unknown region, ...)."""


def finite_number(label: str, value, error: type[Exception]) -> float:
    """``value`` as a finite float, else ``error`` naming ``label`` and the value."""
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise error(f"{label} = {value!r} is not a number") from None
    if not math.isfinite(v):
        raise error(f"{label} = {value!r} is not finite")
    return v
