"""VTU export of a solution via meshio (readable by common VTK viewers).

`vtu_mesh` builds the meshio Mesh (callers with their own writer use it);
`write_vtu` writes it to a temporary file in the target folder, then renames
it, so the file is complete or absent.
"""
from __future__ import annotations

import os
import tempfile

import numpy as np
from scipy.constants import mu_0

from .post import b_elements

__all__ = ["vtu_mesh", "write_vtu", "write_mesh"]


def vtu_mesh(sol):
    """The solution as a meshio Mesh: A (point data, Wb/m), B (cell vector, T),
    |B| (T), H (cell vector, A/m), mu_r (cell, secant B/(mu0 H)) and region id (cell).

    P2 curved meshes are 6-node triangles ("triangle6", corners then edge
    nodes 0-1, 1-2, 2-0), P1 3-node triangles.  The open boundary's
    "exterior" ring (a mapped image of the far field) is left out.
    """
    import meshio

    asm = sol.assembler
    pts = asm.basis.doflocs  # (2, ndofs); for P1/P2 Lagrange every DOF is a node
    keep = np.ones(asm.ne, dtype=bool)
    if asm.ext is not None:
        keep[asm.ext[0]] = False
    cells = asm.dofs.T[keep]  # (ne, nloc)
    ctype = "triangle6" if asm.nloc == 6 else "triangle"
    Be = b_elements(sol)
    s = Be[0] ** 2 + Be[1] ** 2
    nu = np.empty(len(s))
    for law, idx in zip(asm.laws, asm.groups):
        nu[idx] = law.nu(s[idx])
    br = asm.br.mean(axis=2)  # magnets' remanence (uniform per element)
    He = (nu * (Be - br))[:, keep]
    Be, s = Be[:, keep], s[keep]
    nu = nu[keep]
    return meshio.Mesh(
        points=np.column_stack([pts[0], pts[1], np.zeros(pts.shape[1])]),
        cells=[(ctype, cells.astype(np.int64))],
        point_data={"A": np.asarray(sol.A, dtype=float)},
        cell_data={
            "B": [np.column_stack([Be[0], Be[1], np.zeros(len(s))])],
            "Bmag": [np.sqrt(s)],
            "H": [np.column_stack([He[0], He[1], np.zeros(len(s))])],
            "mu_r": [1.0 / (mu_0 * nu)],
            "region": [np.asarray(sol.mesh.element_region, dtype=np.int32)[keep]],
        },
    )


def write_vtu(sol, path) -> str:
    """Write `vtu_mesh` of ``sol`` to ``path`` (a temporary file beside it, then a
    rename, mode per the umask). Returns the path written."""
    return write_mesh(vtu_mesh(sol), path)


def write_mesh(m, path) -> str:
    """Write a meshio Mesh ``m`` as VTU to ``path`` atomically (see `write_vtu`)."""
    import meshio

    path = os.fspath(path)
    folder = os.path.dirname(os.path.abspath(path))
    fd, tmp = tempfile.mkstemp(suffix=".vtu", dir=folder)
    os.close(fd)
    try:
        meshio.write(tmp, m, file_format="vtu")
        mask = os.umask(0)
        os.umask(mask)
        os.chmod(tmp, 0o666 & ~mask)
        os.replace(tmp, path)
    except BaseException:
        if os.path.exists(tmp):
            os.unlink(tmp)
        raise
    return path
