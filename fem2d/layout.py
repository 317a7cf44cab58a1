"""Plain-data description of a planar 2D magnetostatic problem.

A :class:`Layout` is a tuple of named :class:`Region` objects built from
simple shapes, the air box around them, mesh settings and the out-of-plane
depth.  Lengths are in metres, currents in amperes (ampere-turns).

Regions are listed in priority order: where shapes overlap, the later region
wins.  The air fills the rest of the air box and is named ``"air"``; the
outer boundary of the air box is named ``"outer"``.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Union

import numpy as np

__all__ = [
    "LayoutError",
    "Rect",
    "Disk",
    "HalfDisk",
    "Annulus",
    "Polygon",
    "Shape",
    "Region",
    "AirBox",
    "MeshSettings",
    "Layout",
    "RESERVED_NAMES",
    "crossing_edges",
    "crossing_between",
    "point_in_polygon",
]

RESERVED_NAMES = ("air", "outer", "exterior")


from .errors import LayoutError, finite_number  # noqa: E402  (LayoutError re-exported)


def _finite(where: str, key: str, value: float) -> float:
    return finite_number(f"{where}: {key}", value, LayoutError)


def _positive(where: str, key: str, value: float) -> float:
    v = _finite(where, key, value)
    if v <= 0.0:
        raise LayoutError(f"{where}: {key} = {value!r} must be > 0")
    return v


@dataclass(frozen=True)
class Rect:
    """Axis-aligned rectangle with corners (x0, y0) and (x1, y1), m; x1 > x0, y1 > y0."""

    x0: float
    y0: float
    x1: float
    y1: float

    def check(self, where: str) -> None:
        for k in ("x0", "y0", "x1", "y1"):
            _finite(where, f"Rect.{k}", getattr(self, k))
        if not self.x1 > self.x0:
            raise LayoutError(f"{where}: Rect width x1 - x0 = {self.x1 - self.x0!r} must be > 0")
        if not self.y1 > self.y0:
            raise LayoutError(f"{where}: Rect height y1 - y0 = {self.y1 - self.y0!r} must be > 0")

    def bbox(self) -> tuple[float, float, float, float]:
        return (self.x0, self.y0, self.x1, self.y1)

    def feature(self) -> float:
        """Smallest dimension (m)."""
        return min(self.x1 - self.x0, self.y1 - self.y0)

    def extreme_points(self) -> list[tuple[float, float, float]]:
        """Points (x, y, radius) whose discs cover the shape's outline."""
        return [(self.x0, self.y0, 0.0), (self.x1, self.y0, 0.0),
                (self.x1, self.y1, 0.0), (self.x0, self.y1, 0.0)]

    def area(self) -> float:
        return (self.x1 - self.x0) * (self.y1 - self.y0)


@dataclass(frozen=True)
class Disk:
    """Disk of centre (cx, cy) and radius r, m."""

    cx: float
    cy: float
    r: float

    def check(self, where: str) -> None:
        _finite(where, "Disk.cx", self.cx)
        _finite(where, "Disk.cy", self.cy)
        _positive(where, "Disk.r", self.r)

    def bbox(self) -> tuple[float, float, float, float]:
        return (self.cx - self.r, self.cy - self.r, self.cx + self.r, self.cy + self.r)

    def feature(self) -> float:
        return self.r

    def extreme_points(self) -> list[tuple[float, float, float]]:
        return [(self.cx, self.cy, self.r)]

    def area(self) -> float:
        return math.pi * self.r**2


@dataclass(frozen=True)
class HalfDisk:
    """The half x >= cx of the disk of centre (cx, cy) and radius r, m.

    On the axis (cx = 0) of an r-z layout it is the meridian section of a
    sphere."""

    cx: float
    cy: float
    r: float

    def check(self, where: str) -> None:
        _finite(where, "HalfDisk.cx", self.cx)
        _finite(where, "HalfDisk.cy", self.cy)
        _positive(where, "HalfDisk.r", self.r)

    def bbox(self) -> tuple[float, float, float, float]:
        return (self.cx, self.cy - self.r, self.cx + self.r, self.cy + self.r)

    def feature(self) -> float:
        return self.r

    def extreme_points(self) -> list[tuple[float, float, float]]:
        return [(self.cx, self.cy, self.r)]

    def area(self) -> float:
        return 0.5 * math.pi * self.r**2


@dataclass(frozen=True)
class Annulus:
    """Ring of centre (cx, cy) between radii r_in < r_out, m."""

    cx: float
    cy: float
    r_in: float
    r_out: float

    def check(self, where: str) -> None:
        _finite(where, "Annulus.cx", self.cx)
        _finite(where, "Annulus.cy", self.cy)
        _positive(where, "Annulus.r_in", self.r_in)
        _positive(where, "Annulus.r_out", self.r_out)
        if not self.r_out > self.r_in:
            raise LayoutError(
                f"{where}: Annulus r_out = {self.r_out!r} must be > r_in = {self.r_in!r}")

    def bbox(self) -> tuple[float, float, float, float]:
        r = self.r_out
        return (self.cx - r, self.cy - r, self.cx + r, self.cy + r)

    def feature(self) -> float:
        return self.r_out - self.r_in

    def extreme_points(self) -> list[tuple[float, float, float]]:
        return [(self.cx, self.cy, self.r_out)]

    def area(self) -> float:
        return math.pi * (self.r_out**2 - self.r_in**2)


@dataclass(frozen=True)
class Polygon:
    """Simple closed polygon through ``points`` ((x, y) pairs, m, at least 3,
    not repeated), with optional ``holes`` (each a simple polygon's points,
    inside the outline and apart from each other).  Edges may not cross."""

    points: tuple[tuple[float, float], ...]
    holes: tuple[tuple[tuple[float, float], ...], ...] = ()

    def check(self, where: str) -> None:
        for label, pts in (("Polygon", self.points),
                           *((f"Polygon hole {k}", h) for k, h in enumerate(self.holes))):
            if len(pts) < 3:
                raise LayoutError(f"{where}: {label} needs >= 3 points, got {len(pts)}")
            for i, pt in enumerate(pts):
                if len(pt) != 2:
                    raise LayoutError(f"{where}: {label} point {i} = {pt!r} is not an (x, y) pair")
                _finite(where, f"{label}.points[{i}].x", pt[0])
                _finite(where, f"{label}.points[{i}].y", pt[1])
            bad = crossing_edges(pts)
            if bad is not None:
                i, j = bad
                raise LayoutError(f"{where}: {label} edges {i} and {j} cross or touch (points "
                                  f"{pts[i]!r} and {pts[j]!r} start them): the outline must not "
                                  "cross itself")
            if _shoelace(pts) <= 0.0:
                raise LayoutError(f"{where}: {label} area = {_shoelace(pts)!r} must be > 0")
        loops = [self.points, *self.holes]
        for k, h in enumerate(self.holes):
            if not all(point_in_polygon(p, self.points) for p in h):
                raise LayoutError(f"{where}: Polygon hole {k} is not inside the outline")
            for m, other in enumerate(loops):
                if m != k + 1 and crossing_between(h, other):
                    raise LayoutError(f"{where}: Polygon hole {k} crosses "
                                      + ("the outline" if m == 0 else f"hole {m - 1}"))
            for m, other in enumerate(self.holes[:k]):
                if point_in_polygon(h[0], other) or point_in_polygon(other[0], h):
                    raise LayoutError(f"{where}: Polygon holes {m} and {k} overlap")

    def bbox(self) -> tuple[float, float, float, float]:
        xs = [p[0] for p in self.points]
        ys = [p[1] for p in self.points]
        return (min(xs), min(ys), max(xs), max(ys))

    def feature(self) -> float:
        x0, y0, x1, y1 = self.bbox()
        return min(x1 - x0, y1 - y0)

    def extreme_points(self) -> list[tuple[float, float, float]]:
        return [(float(x), float(y), 0.0) for x, y in self.points]

    def area(self) -> float:
        """Shoelace area of the outline less its holes (m^2)."""
        return _shoelace(self.points) - sum(_shoelace(h) for h in self.holes)


def _shoelace(points) -> float:
    s = 0.0
    n = len(points)
    for i in range(n):
        x0, y0 = points[i]
        x1, y1 = points[(i + 1) % n]
        s += x0 * y1 - x1 * y0
    return abs(0.5 * s)


def _segments(points) -> tuple[np.ndarray, np.ndarray]:
    p = np.asarray(points, dtype=float)
    return p, np.roll(p, -1, axis=0)


def _cross_matrix(a0, a1, b0, b1) -> np.ndarray:
    """[i, j]: segment a_i properly crosses or touches segment b_j."""
    def orient(p, q, r):
        return np.sign((q[..., 0] - p[..., 0]) * (r[..., 1] - p[..., 1])
                       - (q[..., 1] - p[..., 1]) * (r[..., 0] - p[..., 0]))
    A0, A1 = a0[:, None, :], a1[:, None, :]
    B0, B1 = b0[None, :, :], b1[None, :, :]
    d1, d2 = orient(B0, B1, A0), orient(B0, B1, A1)
    d3, d4 = orient(A0, A1, B0), orient(A0, A1, B1)
    proper = (d1 * d2 < 0) & (d3 * d4 < 0)

    def on(p, q0, q1, d):  # p on the segment q0-q1 (d = its orientation, 0 if collinear)
        lo, hi = np.minimum(q0, q1), np.maximum(q0, q1)
        return (d == 0) & np.all((p >= lo) & (p <= hi), axis=-1)

    # an end of one segment on the other (a T or a pinch: the outline touches itself)
    proper |= on(A0, B0, B1, d1) | on(A1, B0, B1, d2) | on(B0, A0, A1, d3) | on(B1, A0, A1, d4)
    # collinear overlap (a shared vertex alone is not a crossing here)
    col = (d1 == 0) & (d2 == 0)
    if np.any(col):
        ax = np.minimum(A0, A1), np.maximum(A0, A1)
        bx = np.minimum(B0, B1), np.maximum(B0, B1)
        lo = np.maximum(ax[0], bx[0])
        hi = np.minimum(ax[1], bx[1])
        span = np.max(hi - lo, axis=-1)
        proper |= col & (span > 0) & np.all(hi >= lo, axis=-1)
    return proper


def crossing_edges(points) -> tuple[int, int] | None:
    """The first pair of non-adjacent edges of a closed polygon that cross
    (or overlap along a line), or None when it is simple."""
    a0, a1 = _segments(points)
    n = len(a0)
    m = _cross_matrix(a0, a1, a0, a1)
    i, j = np.triu_indices(n, 1)
    adjacent = (j == i + 1) | ((i == 0) & (j == n - 1))
    hit = m[i, j] & ~adjacent
    if not np.any(hit):
        return None
    k = int(np.argmax(hit))
    return int(i[k]), int(j[k])


def crossing_between(p, q) -> bool:
    """True when an edge of closed polygon p crosses an edge of q."""
    a0, a1 = _segments(p)
    b0, b1 = _segments(q)
    return bool(np.any(_cross_matrix(a0, a1, b0, b1)))


def point_in_polygon(pt, points) -> bool:
    """Even-odd rule (a point on an edge may go either way)."""
    x, y = pt
    p = np.asarray(points, dtype=float)
    q = np.roll(p, -1, axis=0)
    cond = (p[:, 1] > y) != (q[:, 1] > y)
    with np.errstate(divide="ignore", invalid="ignore"):
        xc = p[:, 0] + (y - p[:, 1]) * (q[:, 0] - p[:, 0]) / (q[:, 1] - p[:, 1])
    return bool(np.count_nonzero(cond & (x < xc)) % 2)


Shape = Union[Rect, Disk, HalfDisk, Annulus, Polygon]
_SHAPES = (Rect, Disk, HalfDisk, Annulus, Polygon)


@dataclass(frozen=True)
class Region:
    """A named region built from shapes.

    Parameters
    ----------
    name : str
        Unique name; "air" and "outer" are reserved.
    shapes : tuple of Shape
        Their union forms the region (before later regions cut into it).
    material : str
        Key into the solver's ``materials`` mapping.
    current : float
        Total current through the region's cross-section, A (ampere-turns),
        + means +z; spread uniformly, J = current / area (A/m^2).
    kind : str
        Free text for callers ("core", "gap", "coil", ...); kind "gap" gets
        the gap mesh refinement.
    """

    name: str
    shapes: tuple
    material: str
    current: float = 0.0
    kind: str = "other"

    def __post_init__(self) -> None:
        if not isinstance(self.name, str) or not self.name.strip():
            raise LayoutError(f"region name {self.name!r} must be a non-empty string")
        where = f"region {self.name!r}"
        if self.name in RESERVED_NAMES:
            raise LayoutError(f"{where}: name {self.name!r} is reserved")
        shapes = self.shapes
        if isinstance(shapes, _SHAPES):
            shapes = (shapes,)
            object.__setattr__(self, "shapes", shapes)
        if not isinstance(shapes, (tuple, list)) or len(shapes) == 0:
            raise LayoutError(f"{where}: shapes = {shapes!r} must be a non-empty tuple of shapes")
        object.__setattr__(self, "shapes", tuple(shapes))
        for s in self.shapes:
            if not isinstance(s, _SHAPES):
                raise LayoutError(f"{where}: shape {s!r} is not a Rect, Disk, HalfDisk, Annulus or Polygon")
            s.check(where)
        if not isinstance(self.material, str) or not self.material:
            raise LayoutError(f"{where}: material = {self.material!r} must be a non-empty string")
        _finite(where, "current", self.current)
        if not isinstance(self.kind, str):
            raise LayoutError(f"{where}: kind = {self.kind!r} must be a string")

    def bbox(self) -> tuple[float, float, float, float]:
        boxes = [s.bbox() for s in self.shapes]
        return (min(b[0] for b in boxes), min(b[1] for b in boxes),
                max(b[2] for b in boxes), max(b[3] for b in boxes))

    def feature(self) -> float:
        """Smallest shape dimension (m), used for default mesh sizes."""
        return min(s.feature() for s in self.shapes)


@dataclass(frozen=True)
class AirBox:
    """The air domain around all regions.

    ``shape`` "box" (square) or "disk"; its side (diameter) is ``size`` if
    given, else ``factor`` x the largest extent of the regions' bounding box,
    centred on that bounding box.  ``shape`` "rz-box" is the axisymmetric
    domain: r from 0 (the axis) to half the side, z over the side, centred
    on the regions' z range; the extent counts the regions' full diameter.
    ``shape`` "rz-disk" is the axisymmetric half-disk of that radius centred
    on the axis at the middle of the regions' z range.

    ``open`` (for "disk" and "rz-disk"): the exterior of the disk is not cut
    off but mapped onto a ring of elements from the disk's radius R to 2R
    (region "exterior"; fem2d.exterior, the shell transformation), so the
    field decays as in unbounded space; otherwise the potential is zero on
    the domain's boundary (a flux-tight box: shielded parts, imposed
    external fields).
    """

    shape: str = "box"
    factor: float = 3.0
    size: float | None = None
    open: bool = False

    def __post_init__(self) -> None:
        if self.shape not in ("box", "disk", "rz-box", "rz-disk"):
            raise LayoutError(f"air: shape = {self.shape!r} must be 'box', 'disk', 'rz-box' "
                              "or 'rz-disk'")
        _positive("air", "factor", self.factor)
        if self.size is not None:
            _positive("air", "size", self.size)
        if not isinstance(self.open, bool):
            raise LayoutError(f"air: open = {self.open!r} must be true or false")
        if self.open and self.shape not in ("disk", "rz-disk"):
            raise LayoutError(f"air: open = True needs shape 'disk' or 'rz-disk', got "
                              f"{self.shape!r} (the exterior map is radial)")

    @property
    def axisymmetric(self) -> bool:
        """True for the r-z domains ("rz-box", "rz-disk")."""
        return self.shape.startswith("rz-")


@dataclass(frozen=True)
class MeshSettings:
    """Mesh controls.

    Parameters
    ----------
    size : float or None
        Element size in the regions, m; default: smallest region feature / 4
        (regions of kind "gap" excluded: they get their own size).
    gap_elements : int
        At least this many elements across each "gap" region's shortest side.
    grading : float
        Growth rate of the element size with distance from a refined zone
        (size grows by ``grading`` m per m of distance).
    air_size_factor : float
        Largest air element = ``air_size_factor`` x ``size``.
    order : int
        1 (straight P1 triangles) or 2 (curved 6-node triangles, P2 field).
    threads : int
        gmsh meshing threads (surfaces in parallel).  Default 1: gmsh's
        OpenMP thread pool is not fork-safe, so a process that meshed with
        threads > 1 must not later fork worker processes that mesh.
    surface_sizes : tuple of (region name, size, band)
        Finer elements along a region's boundary (m): ``size`` within
        ``band`` of it on both sides, graded back to the region size by
        ``grading`` beyond (a conductor's skin depth: fem2d.harmonic.
        surface_mesh_size).  Sizes above the region size change nothing.
    """

    size: float | None = None
    gap_elements: int = 4
    grading: float = 0.3
    air_size_factor: float = 8.0
    order: int = 2
    threads: int = 1
    surface_sizes: tuple = ()

    def __post_init__(self) -> None:
        out = []
        for item in tuple(self.surface_sizes):
            try:
                name, size, band = item
            except (TypeError, ValueError):
                raise LayoutError(f"mesh: surface_sizes entry {item!r} must be "
                                  "(region name, size, band)") from None
            if not isinstance(name, str) or not name:
                raise LayoutError(f"mesh: surface_sizes region {name!r} must be a region name")
            size = _positive("mesh", f"surface_sizes[{name!r}] size", size)
            band = _finite("mesh", f"surface_sizes[{name!r}] band", band)
            if band < 0:
                raise LayoutError(f"mesh: surface_sizes[{name!r}] band = {band!r} must be >= 0")
            out.append((name, size, band))
        object.__setattr__(self, "surface_sizes", tuple(out))
        if not isinstance(self.threads, int) or self.threads < 1:
            raise LayoutError(f"mesh: threads = {self.threads!r} must be an int >= 1")
        if self.size is not None:
            _positive("mesh", "size", self.size)
        if not isinstance(self.gap_elements, int) or self.gap_elements < 1:
            raise LayoutError(f"mesh: gap_elements = {self.gap_elements!r} must be an int >= 1")
        _positive("mesh", "grading", self.grading)
        if _positive("mesh", "air_size_factor", self.air_size_factor) < 1.0:
            raise LayoutError(f"mesh: air_size_factor = {self.air_size_factor!r} must be >= 1")
        if self.order not in (1, 2):
            raise LayoutError(f"mesh: order = {self.order!r} must be 1 or 2")


@dataclass(frozen=True)
class Layout:
    """Regions (priority order: later wins), air box, mesh settings and depth (m)."""

    regions: tuple
    air: AirBox = field(default_factory=AirBox)
    mesh: MeshSettings = field(default_factory=MeshSettings)
    depth: float = 1.0

    def __post_init__(self) -> None:
        regions = tuple(self.regions)
        object.__setattr__(self, "regions", regions)
        if not regions:
            raise LayoutError("layout: regions is empty")
        seen: set[str] = set()
        for r in regions:
            if not isinstance(r, Region):
                raise LayoutError(f"layout: {r!r} is not a Region")
            if r.name in seen:
                raise LayoutError(f"region {r.name!r}: duplicate name {r.name!r}")
            seen.add(r.name)
        _positive("layout", "depth", self.depth)
        for name, _, _ in self.mesh.surface_sizes:
            if name not in seen:
                raise LayoutError(f"mesh: surface_sizes region {name!r} is not a region "
                                  f"(have {sorted(seen)})")
        # every region must lie inside the air domain
        cx, cy, half = self.air_geometry()
        for r in regions:
            if self.air.axisymmetric and r.bbox()[0] < 0.0:
                raise LayoutError(f"region {r.name!r}: reaches r = {r.bbox()[0]!r} m < 0 "
                                  "(axisymmetric domain r >= 0)")
            for s in r.shapes:
                for x, y, rad in s.extreme_points():
                    if self.air.shape == "rz-box":
                        out = (x + rad > half * (1 + 1e-12)
                               or abs(y - cy) + rad > half * (1 + 1e-12))
                    elif self.air.shape == "rz-disk":
                        out = math.hypot(x, y - cy) + rad > half * (1 + 1e-12)
                    elif self.air.shape == "box":
                        out = (abs(x - cx) + rad > half * (1 + 1e-12)
                               or abs(y - cy) + rad > half * (1 + 1e-12))
                    else:
                        out = math.hypot(x - cx, y - cy) + rad > half * (1 + 1e-12)
                    if out:
                        raise LayoutError(
                            f"region {r.name!r}: shape {s!r} sticks out of the air "
                            f"{self.air.shape} of half-size {half!r} m centred at ({cx!r}, {cy!r})")

    def bbox(self) -> tuple[float, float, float, float]:
        """Bounding box (x0, y0, x1, y1) of all regions, m."""
        boxes = [r.bbox() for r in self.regions]
        return (min(b[0] for b in boxes), min(b[1] for b in boxes),
                max(b[2] for b in boxes), max(b[3] for b in boxes))

    def air_geometry(self) -> tuple[float, float, float]:
        """Centre (cx, cy) and half-side (or radius) of the air domain, m."""
        x0, y0, x1, y1 = self.bbox()
        cx, cy = 0.5 * (x0 + x1), 0.5 * (y0 + y1)
        if self.air.axisymmetric:  # r in [0, half], z in [cy - half, cy + half]
            size = self.air.size if self.air.size is not None else \
                self.air.factor * max(2.0 * x1, y1 - y0)
            return 0.0, cy, 0.5 * size
        size = self.air.size if self.air.size is not None else self.air.factor * max(x1 - x0, y1 - y0)
        return cx, cy, 0.5 * size

    def region(self, name: str) -> Region:
        for r in self.regions:
            if r.name == name:
                return r
        raise LayoutError(f"layout: no region named {name!r}")

    def core_size(self) -> float:
        """Default element size in the regions (m): smallest non-gap feature / 4."""
        if self.mesh.size is not None:
            return self.mesh.size
        feats = [r.feature() for r in self.regions if r.kind != "gap"]
        if not feats:
            feats = [r.feature() for r in self.regions]
        return min(feats) / 4.0
