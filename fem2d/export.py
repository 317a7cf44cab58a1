"""VTU export of a solution via meshio (readable by common VTK viewers).

`vtu_mesh` builds the meshio Mesh; `write_vtu_file` writes such a mesh
to a named file with its field data (the region legend, which meshio's VTU
writer leaves out); `write_vtu` writes a solution to a temporary file in the
target folder, then renames it, so the file is complete or absent.
"""
from __future__ import annotations

import os
import tempfile

import numpy as np
from scipy.constants import mu_0

from .post import b_elements

__all__ = ["vtu_mesh", "write_vtu", "write_vtu_file", "write_mesh", "POINT_ARRAYS",
           "CELL_ARRAYS", "EARLIER_NAMES"]

POINT_ARRAYS = {
    "planar": {"A_z_Wb_per_m": "the vector potential A_z (Wb/m): the unknown of the planar form"},
    "axisymmetric": {
        "rA_phi_Wb_per_rad": "r A_phi (Wb/rad): the unknown of the r-z form; 2 pi r A_phi is "
                             "the flux through the circle of radius r at height z",
        "A_phi_Wb_per_m": "the vector potential A_phi = (r A_phi) / r (Wb/m; 0 on the axis, "
                          "where it vanishes like B_z r / 2)"},
}
"""Point arrays of the VTU per formulation: name -> what it holds (unit in the name)."""

CELL_ARRAYS = {
    "B_T": "flux density (B_x, B_y, 0) or (B_r, B_z, 0), element mean (T)",
    "B_magnitude_T": "|B| of the element mean (T)",
    "H_A_per_m": "field strength H = nu (B - B_r), element mean (A/m)",
    "mu_r": "relative permeability, secant B / (mu0 H) at the element's |B| (1)",
    "region": "region id; the file's field data maps each region name to [id, 2]",
}
"""Cell arrays of the VTU: name -> what it holds (unit in the name)."""

EARLIER_NAMES = {"A": ("A_z_Wb_per_m", "rA_phi_Wb_per_rad"), "B": "B_T",
                 "Bmag": "B_magnitude_T", "H": "H_A_per_m"}
"""The names earlier versions wrote, kept beside the new ones (the same
values; ``A`` is A_z in a planar case and r A_phi in an r-z case, as it
was) so that a script written for them keeps working: old name -> new name
(planar, r-z for ``A``)."""


def vtu_mesh(sol, *, earlier_names: bool = True):
    """The solution as a meshio Mesh (arrays named with their units:
    :data:`POINT_ARRAYS`, :data:`CELL_ARRAYS`).

    Point data: planar ``A_z_Wb_per_m``; r-z ``rA_phi_Wb_per_rad`` (the
    unknown r A_phi) and ``A_phi_Wb_per_m`` (= r A_phi / r, 0 on the axis).
    Cell data: ``B_T`` and ``H_A_per_m`` (vectors, third component 0),
    ``B_magnitude_T``, ``mu_r`` (secant B/(mu0 H)), ``region`` (an integer
    id).  ``field_data`` maps each region name to ``[id, 2]`` (meshio's
    convention, written as the VTU's FieldData arrays: a legend without
    strings, listed by name in a VTK viewer's information panel).

    P2 curved meshes are 6-node triangles ("triangle6", corners then edge
    nodes 0-1, 1-2, 2-0), P1 3-node triangles.  The open boundary's
    "exterior" ring (a mapped image of the far field, no physical field) is
    left out with its points: every point belongs to a cell (renumbered).
    ``earlier_names`` adds the same arrays under the names earlier versions
    wrote (:data:`EARLIER_NAMES`: ``A``, ``B``, ``Bmag``, ``H``).
    """
    import meshio

    asm = sol.assembler
    pts = asm.basis.doflocs  # (2, ndofs); for P1/P2 Lagrange every DOF is a node
    keep = np.ones(asm.ne, dtype=bool)
    if asm.ext is not None:
        keep[asm.ext[0]] = False
    cells = asm.dofs.T[keep]  # (ne, nloc)
    used = np.unique(cells)  # the points of the kept cells, sorted
    new_index = np.full(pts.shape[1], -1, dtype=np.int64)
    new_index[used] = np.arange(len(used))
    cells = new_index[cells]
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
    u = np.asarray(sol.A, dtype=float)[used]
    x = pts[0][used]
    if asm.formulation.name == "axisymmetric":
        r = x
        a_phi = np.divide(u, r, out=np.zeros_like(u), where=r > 0)
        point_data = {"rA_phi_Wb_per_rad": u, "A_phi_Wb_per_m": a_phi}
    else:
        point_data = {"A_z_Wb_per_m": u}
    region = np.asarray(sol.mesh.element_region, dtype=np.int32)[keep]
    names = sol.mesh.region_names
    field_data = {str(names[i]): np.array([i, 2], dtype=np.int32) for i in np.unique(region)}
    cell_data = {
        "B_T": [np.column_stack([Be[0], Be[1], np.zeros(len(s))])],
        "B_magnitude_T": [np.sqrt(s)],
        "H_A_per_m": [np.column_stack([He[0], He[1], np.zeros(len(s))])],
        "mu_r": [1.0 / (mu_0 * nu)],
        "region": [region],
    }
    if earlier_names:  # the same arrays under the names of earlier versions
        point_data["A"] = u
        cell_data.update({old: cell_data[new] for old, new in EARLIER_NAMES.items()
                          if isinstance(new, str)})
    return meshio.Mesh(
        points=np.column_stack([x, pts[1][used], np.zeros(len(used))]),
        cells=[(ctype, cells.astype(np.int64))],
        point_data=point_data,
        cell_data=cell_data,
        field_data=field_data,
    )


def write_vtu_file(mesh, path) -> None:
    """Write a meshio Mesh as VTU to ``path`` with its ``field_data`` as the
    file's FieldData (integer arrays named after the regions; meshio 5
    writes no FieldData in VTU, so it goes in after the grid's opening tag,
    where VTK readers look for it)."""
    import meshio
    from xml.sax.saxutils import quoteattr

    path = os.fspath(path)
    meshio.write(path, mesh, file_format="vtu")
    if not mesh.field_data:
        return
    arrays = "".join(
        f'<DataArray type="Int32" Name={quoteattr(str(name))} NumberOfTuples="{np.size(v)}" '
        f'format="ascii">{" ".join(str(int(x)) for x in np.ravel(v))}</DataArray>\n'
        for name, v in mesh.field_data.items())
    with open(path, "r+", encoding="utf-8") as f:
        text = f.read()
        tag = "<UnstructuredGrid>"
        at = text.index(tag) + len(tag)
        f.seek(0)
        f.write(text[:at] + "\n<FieldData>\n" + arrays + "</FieldData>" + text[at:])
        f.truncate()


def write_vtu(sol, path) -> str:
    """Write `vtu_mesh` of ``sol`` to ``path`` (a temporary file beside it, then a
    rename, mode per the umask). Returns the path written."""
    return write_mesh(vtu_mesh(sol), path)


def write_mesh(m, path) -> str:
    """Write a meshio Mesh ``m`` as VTU (with its field data, :func:`write_vtu_file`)
    to ``path`` atomically: a temporary file beside it, then a rename, mode per
    the umask.  Returns the path written."""
    path = os.fspath(path)
    folder = os.path.dirname(os.path.abspath(path))
    fd, tmp = tempfile.mkstemp(suffix=".vtu", dir=folder)
    os.close(fd)
    try:
        write_vtu_file(m, tmp)
        mask = os.umask(0)
        os.umask(mask)
        os.chmod(tmp, 0o666 & ~mask)
        os.replace(tmp, path)
    except BaseException:
        if os.path.exists(tmp):
            os.unlink(tmp)
        raise
    return path
