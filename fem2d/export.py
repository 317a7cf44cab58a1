"""VTU export of a solution via meshio (readable by ParaView).

Written to a temporary file in the target folder, then renamed, so the file
is complete or absent.
"""
from __future__ import annotations

import os
import tempfile

import numpy as np
from scipy.constants import mu_0

from .post import b_elements

__all__ = ["write_vtu"]


def write_vtu(sol, path) -> str:
    """Write mesh, A (point data, Wb/m), B (cell vector, T), |B| (T), H (cell
    vector, A/m), mu_r (cell, secant B/(mu0 H)) and region id (cell) to ``path``.

    P2 curved meshes are written as 6-node triangles ("triangle6", corners
    then edge nodes 0-1, 1-2, 2-0), P1 as 3-node triangles.
    Returns the path written.
    """
    import meshio

    asm = sol.assembler
    pts = asm.basis.doflocs  # (2, ndofs); for P1/P2 Lagrange every DOF is a node
    cells = asm.dofs.T  # (ne, nloc)
    ctype = "triangle6" if asm.nloc == 6 else "triangle"
    Be = b_elements(sol)
    s = Be[0] ** 2 + Be[1] ** 2
    nu = np.empty(len(s))
    for law, idx in zip(asm.laws, asm.groups):
        nu[idx] = law.nu(s[idx])
    He = nu * Be
    m = meshio.Mesh(
        points=np.column_stack([pts[0], pts[1], np.zeros(pts.shape[1])]),
        cells=[(ctype, cells.astype(np.int64))],
        point_data={"A": np.asarray(sol.A, dtype=float)},
        cell_data={
            "B": [np.column_stack([Be[0], Be[1], np.zeros(len(s))])],
            "Bmag": [np.sqrt(s)],
            "H": [np.column_stack([He[0], He[1], np.zeros(len(s))])],
            "mu_r": [1.0 / (mu_0 * nu)],
            "region": [np.asarray(sol.mesh.element_region, dtype=np.int32)],
        },
    )
    path = os.fspath(path)
    folder = os.path.dirname(os.path.abspath(path))
    fd, tmp = tempfile.mkstemp(suffix=".vtu", dir=folder)
    os.close(fd)
    try:
        meshio.write(tmp, m, file_format="vtu")
        os.replace(tmp, path)
    except BaseException:
        if os.path.exists(tmp):
            os.unlink(tmp)
        raise
    return path
