"""Build and mesh a :class:`~fem2d.layout.Layout` with gmsh (OCC kernel).

One gmsh session per call (``gmsh.initialize(interruptible=False)``, always
finalized), nothing printed, no files written: node and element arrays are
read straight from the gmsh API.  gmsh keeps one global session per process,
so calls are serialised with a lock; two threads never mesh at once.

Ctrl-C while meshing: a Python signal handler runs only between bytecodes,
so while gmsh works inside one C call the main thread would not see SIGINT
until the mesh is done (a minute or more for a mesh far too fine).  Called
from the main thread, the session therefore runs in a helper thread while
the main thread waits in short joins, where KeyboardInterrupt is raised at
once.  The abandoned helper cannot be stopped; :func:`meshing_in_progress`
tells the caller so it can end the process without the interpreter's
shutdown racing gmsh's C code.
"""
from __future__ import annotations

import logging
import threading
import math
import time
from dataclasses import dataclass

import numpy as np

from .layout import Annulus, Disk, HalfDisk, Layout, LayoutError, Polygon, Rect

__all__ = ["GmshArrays", "mesh_layout", "meshing_in_progress", "estimate_triangles",
           "TRIANGLE_ESTIMATE_RATIO"]

logger = logging.getLogger(__name__)
_LOCK = threading.Lock()

#: gmsh element types: 3-node and 6-node triangles
_TRI = {1: 2, 2: 9}


@dataclass(frozen=True)
class GmshArrays:
    """Raw mesh arrays straight from gmsh.

    Attributes
    ----------
    nodes : ndarray, shape (2, n_nodes)
        Node coordinates, m (only nodes used by triangles, numbered 0..n-1).
    triangles : ndarray, shape (3 or 6, n_elem)
        Node indices per triangle in gmsh order (corners, then edge nodes
        0-1, 1-2, 2-0).
    region_ids : ndarray, shape (n_elem,)
        Index into ``region_names`` per triangle.
    region_names : tuple of str
        ``("air", *layout region names)``.
    outer_edges : ndarray, shape (2, n_edges)
        Corner node indices of the boundary segments of the "outer" group.
    timings : dict
        Seconds spent in "geometry" and "generate".
    """

    nodes: np.ndarray
    triangles: np.ndarray
    region_ids: np.ndarray
    region_names: tuple
    outer_edges: np.ndarray
    timings: dict


def _add_shape(occ, s) -> list[tuple[int, int]]:
    if isinstance(s, Rect):
        return [(2, occ.addRectangle(s.x0, s.y0, 0.0, s.x1 - s.x0, s.y1 - s.y0))]
    if isinstance(s, Disk):
        return [(2, occ.addDisk(s.cx, s.cy, 0.0, s.r, s.r))]
    if isinstance(s, HalfDisk):
        disk = occ.addDisk(s.cx, s.cy, 0.0, s.r, s.r)
        keep = occ.addRectangle(s.cx, s.cy - s.r, 0.0, s.r, 2 * s.r)
        out, _ = occ.intersect([(2, disk)], [(2, keep)], removeObject=True, removeTool=True)
        return list(out)
    if isinstance(s, Annulus):
        outer = occ.addDisk(s.cx, s.cy, 0.0, s.r_out, s.r_out)
        inner = occ.addDisk(s.cx, s.cy, 0.0, s.r_in, s.r_in)
        out, _ = occ.cut([(2, outer)], [(2, inner)], removeObject=True, removeTool=True)
        return list(out)
    if isinstance(s, Polygon):
        def loop(points) -> int:
            pts = [occ.addPoint(float(x), float(y), 0.0) for x, y in points]
            n = len(pts)
            return occ.addCurveLoop([occ.addLine(pts[i], pts[(i + 1) % n]) for i in range(n)])

        # the outline first, then the holes (gmsh's plane surface with holes)
        return [(2, occ.addPlaneSurface([loop(s.points), *(loop(h) for h in s.holes)]))]
    raise LayoutError(f"unknown shape {s!r}")  # pragma: no cover - Region checks shapes


def _constant_field(gmsh, surfs: list[int], size_in: float, size_out: float) -> int:
    """A Constant size field: ``size_in`` on the surfaces, ``size_out`` elsewhere."""
    fld = gmsh.model.mesh.field
    c = fld.add("Constant")
    fld.setNumber(c, "VIn", size_in)
    fld.setNumber(c, "VOut", size_out)
    fld.setNumbers(c, "SurfacesList", surfs)
    return c


def _graded_field(gmsh, surfs: list[int], size_min: float, size_max: float, dist_min: float,
                  dist_max: float, sampling: int, stop_at_max: bool) -> int:
    """Distance to the surfaces' boundary curves fed to a Threshold field.

    ``stop_at_max``: beyond ``dist_max`` the field returns a huge size, so a
    Min field ignores it there (without it a Threshold holds ``size_max``
    everywhere beyond, which inside a Min keeps the whole air that fine).
    """
    fld = gmsh.model.mesh.field
    curves = sorted({abs(t) for s in surfs
                     for _, t in gmsh.model.getBoundary([(2, s)], oriented=False)})
    d = fld.add("Distance")
    fld.setNumbers(d, "CurvesList", curves)
    fld.setNumber(d, "Sampling", sampling)
    th = fld.add("Threshold")
    fld.setNumber(th, "InField", d)
    fld.setNumber(th, "SizeMin", size_min)
    fld.setNumber(th, "SizeMax", size_max)
    fld.setNumber(th, "DistMin", dist_min)
    fld.setNumber(th, "DistMax", dist_max)
    if stop_at_max:
        fld.setNumber(th, "StopAtDistMax", 1)
    return th


def _size_fields(gmsh, layout: Layout, owner_surfs: dict[int, list[int]]) -> None:
    """Mesh-size fields: regions at h, gaps at g/n, air graded up to h*air_size_factor."""
    fld = gmsh.model.mesh.field
    ms = layout.mesh
    h = layout.core_size()
    h_air = h * ms.air_size_factor
    nreg = len(layout.regions)
    region_surfs = [t for i, ts in owner_surfs.items() if 0 < i <= nreg for t in ts]
    ids = [
        # constant size inside every region
        _constant_field(gmsh, region_surfs, h, h_air),
        # graded growth into the air from the regions' boundaries
        _graded_field(gmsh, region_surfs, h, h_air, 0.0, (h_air - h) / ms.grading, 200, False),
    ]
    # gap refinement: at least gap_elements across the shortest side
    for i, r in enumerate(layout.regions, start=1):
        if r.kind != "gap" or not owner_surfs.get(i):
            continue
        g = r.feature()
        hg = min(h, g / ms.gap_elements)
        ids.append(_constant_field(gmsh, owner_surfs[i], hg, h_air))
        ids.append(_graded_field(gmsh, owner_surfs[i], hg, h, 0.5 * g,
                                 0.5 * g + (h - hg) / ms.grading, 100, True))
    # finer elements along chosen regions' boundaries (skin depth), both sides
    index = {r.name: i for i, r in enumerate(layout.regions, start=1)}
    for name, size, band in ms.surface_sizes:
        surfs = owner_surfs.get(index[name])
        if not surfs or size >= h:
            continue
        ids.append(_graded_field(gmsh, surfs, size, h_air, band, band + (h_air - size) / ms.grading,
                                 400, False))
    m = fld.add("Min")
    fld.setNumbers(m, "FieldsList", ids)
    fld.setAsBackgroundMesh(m)


TRIANGLE_ESTIMATE_RATIO = (0.75, 1.33)
"""Range of real/estimated triangle counts allowed for `estimate_triangles`
(tests/test_mesh_guard.py: the bundled cases at 1x and 1.5x refinement, with
4 and 12 elements across the gap and core sizes 0.5 and 4 mm)."""

_CAL_BULK, _CAL_GAP = 1.45, 1.9


def estimate_triangles(layout: Layout) -> int:
    """Triangles gmsh will make for ``layout`` under `_size_fields`, estimated
    before meshing (a fraction of a millisecond; no gmsh).

    Each zone's area divided by the area of an equilateral triangle of the
    local size, sqrt(3)/4 h^2: the regions at h; each gap at h_g = min(h,
    g/n) plus its graded band, where the size grows linearly by ``grading``
    per metre from h_g to h, which holds P/(c grading) (1/h_g - 1/h)
    triangles for a zone boundary of perimeter P (c = sqrt(3)/4: the
    integral of P dd / (c s(d)^2) over the band); the air's band graded from
    h to h_air likewise; the rest of the air at h_air. Overlaps of regions
    are ignored, so this over-counts a little where gaps sit in the core.
    """
    c = math.sqrt(3.0) / 4.0
    ms = layout.mesh
    h = layout.core_size()
    h_air = h * ms.air_size_factor
    region_area = sum(s.area() for r in layout.regions if r.kind != "gap" for s in r.shapes)
    x0, y0, x1, y1 = layout.bbox()
    outline = 2.0 * ((x1 - x0) + (y1 - y0))
    n = region_area / (c * h * h)
    n += outline / (c * ms.grading) * (1.0 / h - 1.0 / h_air)
    _, _, half = layout.air_geometry()
    air_area = {"box": 4.0, "disk": math.pi, "rz-box": 2.0,
                "rz-disk": 0.5 * math.pi}[layout.air.shape] * half * half
    if layout.air.open:
        air_area *= 4.0  # the exterior ring, R to 2R
    band = (h_air - h) / ms.grading
    free_air = max(0.0, air_area - (x1 - x0 + 2 * band) * (y1 - y0 + 2 * band))
    n += free_air / (c * h_air * h_air)
    n_gap = 0.0
    for r in layout.regions:
        if r.kind != "gap":
            continue
        g = r.feature()
        hg = min(h, g / ms.gap_elements)
        area = sum(s.area() for s in r.shapes)
        bx0, by0, bx1, by1 = r.bbox()
        perimeter = 2.0 * ((bx1 - bx0) + (by1 - by0))
        n_gap += area / (c * hg * hg) + perimeter / (c * ms.grading) * (1.0 / hg - 1.0 / h)
    # surface refinement: a band of width 2 band at the size s around the
    # region's outline (bounding-box perimeter), graded to h on both sides;
    # counted without calibration (measured: real/estimate 0.9 on a round wire
    # at a/delta = 10, tests/test_harmonic.py)
    n_surf = 0.0
    for name, size, band in ms.surface_sizes:
        if size >= h:
            continue
        bx0, by0, bx1, by1 = layout.region(name).bbox()
        perimeter = 2.0 * ((bx1 - bx0) + (by1 - by0))
        n_surf += (2.0 * band * perimeter / (c * size * size)
                   + 2.0 * perimeter / (c * ms.grading) * (1.0 / size - 1.0 / h))
    # gmsh's Delaunay triangles of size h average less than the equilateral
    # area: calibration factors fitted on the bundled cases (docstring)
    return int(math.ceil(_CAL_BULK * n + _CAL_GAP * n_gap + n_surf))


def _build(gmsh, layout: Layout) -> GmshArrays:
    t0 = time.perf_counter()
    gmsh.model.add("layout")
    occ = gmsh.model.occ
    cx, cy, half = layout.air_geometry()
    shape = layout.air.shape

    def half_disk(radius: float) -> list[tuple[int, int]]:
        disk = occ.addDisk(0.0, cy, 0.0, radius, radius)
        keep = occ.addRectangle(0.0, cy - radius, 0.0, radius, 2 * radius)
        out, _ = occ.intersect([(2, disk)], [(2, keep)], removeObject=True, removeTool=True)
        return list(out)

    if shape == "rz-box":
        air = [(2, occ.addRectangle(0.0, cy - half, 0.0, half, 2 * half))]
    elif shape == "rz-disk":
        air = half_disk(half)
    elif shape == "box":
        air = [(2, occ.addRectangle(cx - half, cy - half, 0.0, 2 * half, 2 * half))]
    else:
        air = [(2, occ.addDisk(cx, cy, 0.0, half, half))]
    inputs: list[list[tuple[int, int]]] = [air]  # input index 0 = air
    owner_of_input: list[int] = [0] * len(air)
    for i, r in enumerate(layout.regions, start=1):
        for s in r.shapes:
            tags = _add_shape(occ, s)
            inputs.append(tags)
            owner_of_input.extend([i] * len(tags))
    names = ("air",) + tuple(r.name for r in layout.regions)
    if layout.air.open:
        # the ring R..2R onto which the exterior is mapped (fem2d.exterior)
        if shape == "rz-disk":
            big = half_disk(2 * half)
            inner = half_disk(half)
        else:
            big = [(2, occ.addDisk(cx, cy, 0.0, 2 * half, 2 * half))]
            inner = [(2, occ.addDisk(cx, cy, 0.0, half, half))]
        ring, _ = occ.cut(big, inner, removeObject=True, removeTool=True)
        inputs.append(list(ring))
        owner_of_input.extend([len(names)] * len(ring))
        names = names + ("exterior",)
    flat = [dt for group in inputs for dt in group]
    out, out_map = occ.fragment(flat[:1], flat[1:])
    occ.synchronize()
    # out_map[k] lists the output entities of input k; later inputs win
    owner: dict[int, int] = {}
    for k, children in enumerate(out_map):
        for dim, tag in children:
            if dim == 2:
                owner[tag] = owner_of_input[k]
    owner_surfs: dict[int, list[int]] = {}
    for tag, i in owner.items():
        owner_surfs.setdefault(i, []).append(tag)
    for i, name in enumerate(names):
        if i not in owner_surfs:
            if i == 0:
                continue  # no air left: allowed only if regions fill the box
            raise LayoutError(f"region {name!r}: area = 0 after overlaps (fully covered by later regions)")
        gmsh.model.addPhysicalGroup(2, sorted(owner_surfs[i]), tag=i + 1, name=name)
    all_surfs = [(2, t) for t in owner]
    outer_curves = [abs(t) for _, t in gmsh.model.getBoundary(all_surfs, combined=True, oriented=False)]
    gmsh.model.addPhysicalGroup(1, outer_curves, tag=len(names) + 1, name="outer")
    _size_fields(gmsh, layout, owner_surfs)
    t1 = time.perf_counter()
    gmsh.model.mesh.generate(2)
    if layout.mesh.order == 2:
        gmsh.model.mesh.setOrder(2)
    gmsh.model.mesh.renumberNodes()
    t2 = time.perf_counter()

    node_tags_raw, coords, _ = gmsh.model.mesh.getNodes()
    node_tags = np.asarray(node_tags_raw, dtype=np.int64)
    xyz = np.asarray(coords).reshape(-1, 3)
    lookup = np.full(int(node_tags.max()) + 1, -1, dtype=np.int64)
    lookup[node_tags] = np.arange(len(node_tags))
    etype = _TRI[layout.mesh.order]
    nper = 3 * layout.mesh.order
    tri_blocks, id_blocks = [], []
    for i in range(len(names)):
        for s in sorted(owner_surfs.get(i, [])):
            types, _, enodes = gmsh.model.mesh.getElements(2, s)
            for ty, en in zip(types, enodes):
                if ty != etype:
                    raise LayoutError(f"region {names[i]!r}: unexpected gmsh element type {ty}")
                blk = lookup[np.asarray(en, dtype=np.int64)].reshape(-1, nper).T
                tri_blocks.append(blk)
                id_blocks.append(np.full(blk.shape[1], i, dtype=np.int32))
    tris = np.hstack(tri_blocks)
    region_ids = np.concatenate(id_blocks)
    edge_blocks = []
    for c in outer_curves:
        types, _, enodes = gmsh.model.mesh.getElements(1, c)
        for ty, en in zip(types, enodes):
            npe = 2 if ty == 1 else 3
            edge_blocks.append(lookup[np.asarray(en, dtype=np.int64)].reshape(-1, npe).T[:2])
    edges = np.hstack(edge_blocks)
    # keep only nodes used by triangles, numbered 0..n-1
    used, inv = np.unique(tris, return_inverse=True)
    renum = np.full(len(node_tags), -1, dtype=np.int64)
    renum[used] = np.arange(len(used))
    tris = inv.reshape(tris.shape).astype(np.int64)
    edges = renum[edges]
    nodes = np.ascontiguousarray(xyz[used, :2].T)
    t3 = time.perf_counter()
    return GmshArrays(nodes=nodes, triangles=tris, region_ids=region_ids, region_names=names,
                      outer_edges=edges,
                      timings={"geometry": t1 - t0, "generate": t2 - t1, "read": t3 - t2})


#: sessions running in helper threads, each a threading.Event set when done
_RUNNING: set = set()


def meshing_in_progress() -> bool:
    """True while a gmsh session runs in a helper thread (for instance one the
    main thread abandoned on Ctrl-C)."""
    return any(not done.is_set() for done in list(_RUNNING))


def mesh_layout(layout: Layout) -> GmshArrays:
    """Mesh ``layout`` in a fresh gmsh session and return the raw arrays.

    Safe to call many times, from any thread (calls are serialised) and in
    worker processes.  Prints nothing and writes no files.  From the main
    thread the session runs in a helper thread so that Ctrl-C interrupts the
    wait at once (module docstring).
    """
    if threading.current_thread() is not threading.main_thread():
        return _mesh_session(layout)
    box: dict = {}
    done = threading.Event()

    def work() -> None:
        try:
            box["arrays"] = _mesh_session(layout)
        except BaseException as exc:  # handed back to the caller below
            box["error"] = exc
        finally:
            done.set()

    _RUNNING.add(done)
    threading.Thread(target=work, name="fem2d-gmsh-session", daemon=True).start()
    # An Event, not Thread.join: a KeyboardInterrupt inside join can leave
    # the thread marked as stopped while it still runs.
    while not done.wait(0.05):  # returns as soon as the session ends; SIGINT lands here
        pass
    _RUNNING.discard(done)
    if "error" in box:
        raise box["error"]
    return box["arrays"]


def _mesh_session(layout: Layout) -> GmshArrays:
    import gmsh

    with _LOCK:
        gmsh.initialize(interruptible=False)
        try:
            gmsh.option.setNumber("General.Terminal", 0)
            gmsh.option.setNumber("General.Verbosity", 0)
            gmsh.option.setNumber("Mesh.MeshSizeFromPoints", 0)
            gmsh.option.setNumber("Mesh.MeshSizeFromCurvature", 0)
            gmsh.option.setNumber("Mesh.MeshSizeExtendFromBoundary", 0)
            # Delaunay without Laplace smoothing: ~2.5x faster than the
            # defaults here, quality adequate for the field solve
            gmsh.option.setNumber("Mesh.Algorithm", 5)
            gmsh.option.setNumber("Mesh.Smoothing", 0)
            # surfaces in parallel only on request: gmsh's OpenMP pool is not
            # fork-safe (a forked worker process then hangs in gmsh)
            gmsh.option.setNumber("Mesh.MaxNumThreads2D", layout.mesh.threads)
            gmsh.option.setNumber("General.NumThreads", layout.mesh.threads)
            gmsh.option.setNumber("Mesh.HighOrderOptimize", 0)
            gmsh.option.setNumber("Mesh.SecondOrderLinear", 0)
            return _build(gmsh, layout)
        finally:
            gmsh.finalize()
