"""gmsh arrays -> scikit-fem mesh with named subdomains and boundaries.

The array layout is decided here once: scikit-fem's (dim, n).
"""
from __future__ import annotations

from typing import Any

import time
from dataclasses import dataclass, field

import numpy as np
from skfem import MeshTri1, MeshTri2

from .mesher import mesh_layout
from .layout import Layout, LayoutError

__all__ = ["RegionMesh", "build_mesh"]


@dataclass(frozen=True)
class RegionMesh:
    """A scikit-fem mesh plus region index arrays.

    Attributes
    ----------
    mesh : skfem.MeshTri2 (order 2, curved) or skfem.MeshTri1 (order 1)
    subdomains : dict[str, ndarray]
        Element indices per region name, "air" included.
    boundaries : dict[str, ndarray]
        Facet indices per boundary name ("outer").
    layout : Layout
    timings : dict
        Seconds: "geometry", "generate", "read", "convert", "mesh" (total).
    element_region : ndarray, shape (n_elem,)
        Index into ``region_names`` per element.
    region_names : tuple of str
    """

    mesh: Any
    subdomains: dict
    boundaries: dict
    layout: Layout
    timings: dict
    element_region: np.ndarray = field(repr=False)
    region_names: tuple = ()

    @property
    def order(self) -> int:
        return self.layout.mesh.order

    @property
    def nelements(self) -> int:
        return self.mesh.t.shape[1]

    def elements_of(self, regions) -> np.ndarray:
        """Element indices of one region name or a list of names."""
        names = [regions] if isinstance(regions, str) else list(regions)
        out = []
        for n in names:
            if n not in self.subdomains:
                raise LayoutError(f"region {n!r}: no such region (have {sorted(self.subdomains)})")
            out.append(self.subdomains[n])
        return np.unique(np.concatenate(out)) if out else np.zeros(0, dtype=np.int64)


def build_mesh(layout: Layout) -> RegionMesh:
    """Mesh ``layout`` and return a :class:`RegionMesh`.

    Raises
    ------
    LayoutError
        If a region has zero area after overlaps.
    """
    t0 = time.perf_counter()
    raw = mesh_layout(layout)
    t1 = time.perf_counter()
    if layout.mesh.order == 2:
        m = MeshTri2(raw.nodes, raw.triangles)
        # MeshTri2 renumbers vertices (sorted original index); map old -> new
        uniq = np.unique(raw.triangles[:3])
        old2new = np.full(raw.nodes.shape[1], -1, dtype=np.int64)
        old2new[uniq] = np.arange(len(uniq))
        edges = old2new[raw.outer_edges]
    else:
        m = MeshTri1(raw.nodes, raw.triangles)
        edges = raw.outer_edges
    subdomains = {}
    for i, name in enumerate(raw.region_names):
        idx = np.nonzero(raw.region_ids == i)[0]
        if len(idx) == 0 and name != "air":
            raise LayoutError(f"region {name!r}: area = 0 after meshing")
        subdomains[name] = idx
    # outer facets: boundary facets of the mesh matched against gmsh's "outer" edges
    bf = m.boundary_facets()
    fkey = np.sort(m.facets[:, bf], axis=0)
    ekey = np.sort(edges, axis=0)
    n = m.p.shape[1]
    sel = np.isin(fkey[0] * n + fkey[1], ekey[0] * n + ekey[1])
    outer = bf[sel]
    t2 = time.perf_counter()
    timings = dict(raw.timings)
    timings["convert"] = t2 - t1
    timings["mesh"] = t2 - t0
    return RegionMesh(mesh=m, subdomains=subdomains, boundaries={"outer": outer}, layout=layout,
                      timings=timings, element_region=raw.region_ids, region_names=raw.region_names)
