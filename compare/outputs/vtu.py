"""The field solution as a VTU file (``magcheck check --vtu FILE``, ``magcheck.write_vtu``).

The mesh and its arrays come from :func:`magcheck.fem2d.export.vtu_mesh`
(array names carry their units: ``B_T``, ``H_A_per_m``, planar
``A_z_Wb_per_m``, r-z ``rA_phi_Wb_per_rad`` and ``A_phi_Wb_per_m``; region
names in the field data); the file goes through the one writer
(:func:`compare.outputs.output.write_produced`: atomic, ``-`` for standard
output).
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

from .output import write_produced

__all__ = ["field_solution", "write_vtu", "write_ac_vtu"]


def field_solution(result: Any) -> Any:
    """The fem2d field solution behind a result: a check's
    (``CheckResult.fe.solution``, the finest mesh), an FE run's
    (``FEResult.solution``) or a fem2d solution itself.

    Raises
    ------
    TypeError
        For anything else (a hand result has no field).
    """
    fe = getattr(result, "fe", None)
    if fe is not None and hasattr(fe, "solution"):
        return fe.solution
    if hasattr(result, "solution") and hasattr(result.solution, "assembler"):
        return result.solution
    if hasattr(result, "assembler"):
        return result
    raise TypeError(f"write_vtu: a check result, an FE result or a field solution, not "
                    f"{type(result).__name__} (a hand result has no field)")


def write_vtu(result: Any, path: str | Path) -> Path | None:
    """Write the field of ``result`` (see :func:`field_solution`) as VTU to
    ``path`` (``-``: standard output); returns the path written (None for
    standard output)."""
    from magcheck.fem2d.export import vtu_mesh, write_vtu_file

    mesh = vtu_mesh(field_solution(result))
    return write_produced(path, lambda tmp: write_vtu_file(mesh, tmp), ".vtu")


def write_ac_vtu(result: Any, path: str | Path) -> Path | None:
    """Write the time-harmonic field of a check's AC windings (the finest
    mesh's, ``CheckResult.ac.solution``) as VTU: point data ``u_re``,
    ``u_im`` (the potential's phasor), cell data ``Jmag`` (|J| peak, A/m^2),
    ``loss_density`` (W/m^3, time average), ``Bmag`` (|B| peak, T) and
    ``region`` (fem2d.harmonic.vtu_mesh)."""
    from magcheck.fem2d.harmonic import vtu_mesh
    from magcheck.fem2d.export import write_vtu_file

    ac = getattr(result, "ac", None)
    hs = getattr(ac, "solution", None)
    if hs is None:
        raise TypeError("write_ac_vtu: the result has no AC solution (a case with "
                        "[winding.ac], checked with the FE)")
    mesh = vtu_mesh(hs)
    return write_produced(path, lambda tmp: write_vtu_file(mesh, tmp), ".vtu")
