"""What a core family provides: the mean-path segments, the winding windows
and the protocol every family implements (lengths in m, areas in m^2)."""

from __future__ import annotations

import math
from dataclasses import dataclass
from collections.abc import Callable
from typing import Any, Protocol

from ..geometry import Limb, Rect
from ..reader import TableReader

__all__ = ["Segment", "Window", "Family", "INF", "check_stroke_case"]

INF = math.inf

@dataclass(frozen=True)
class Segment:
    """One stretch of the core's mean path, between two network nodes.

    Attributes
    ----------
    name : str
        Branch name in the network and in reports.
    node_a, node_b : str
        End nodes; flux is counted positive from a to b.
    length : float
        Mean-path length (m), including any gap in it.
    area : float
        Core cross-section (m^2), limb width times stack depth.
    limb : str
        Case-file limb name this segment runs along (gaps and windings on
        that limb are placed in this segment).
    on_path : bool
        True when the segment belongs to the closed mean path through the
        winding that path-averaged quantities use.
    part : str
        The core part it runs in (``Family.parts``; "" = the part named
        like its limb): the part's material, if the case gives one.
    axis_sign : int
        +1 when a -> b runs along the limb's +axis (x or y), -1 against it:
        with it the network's MMF sources take the sign of the field model's
        coils (compare.design.geometry.flux_direction), so that several windings
        aid or oppose each other in both models alike.
    """

    name: str
    node_a: str
    node_b: str
    length: float
    area: float
    limb: str
    on_path: bool = True
    axis_sign: int = 1
    part: str = ""


@dataclass(frozen=True)
class Window:
    """A winding window beside a limb, for the leakage across it.

    width : from the limb's face to the facing limb's face (m).
    facing : the limb across the window.
    lo_side : limbs (yokes) the return loop of the leakage runs along at the
        lo end of the winding limb: their gaps are always crossed.
    lo_segments : the network segments of that return (their iron's MMF
        drop is always crossed); default: the lo_side limbs' segments.
    """

    width: float
    facing: str
    lo_side: tuple[str, ...] = ()
    lo_segments: tuple[str, ...] | None = None


class Family(Protocol):
    """What a core family provides. Lengths in m, areas in m^2.

    Optional, for a family whose shapes are not limbs (looked up with
    ``getattr``; the rectangular families need none of them):

    - ``core_model(case) -> compare.design.coremodel.CoreModel``: the regions,
      coils and measurement places of both models, and the hand circuit
      (``CoreModel.circuit``) when the family gives it explicitly; without
      it compare.design.coremodel builds the model from the limbs and segments.
    - ``case_tables``: further top-level tables the family reads; then
      ``read_core(t, tables={name: raw table}, base_dir=...)``.
    - ``part_names(core)``: the parts that may have a material when they
      depend on the case; ``required_parts(core)``: {part: why} that must.
    - ``check_case(case)``: checks across tables once the case is read
      (raises CaseError).
    - ``no_gaps``: a family that takes no ``[[gaps]]`` (its working gaps are
      ``[core]`` keys) says why in this string; the reader refuses a gap
      with it and the JSON Schema refuses ``gaps`` (absent or "": gaps
      are taken on ``limb_names``).
    - ``describe(core) -> [(key, text)]``: the report's input rows.

    A family with no ``winding_limbs`` draws its coils itself: a winding
    then gives only name, turns and current.
    """

    name: str
    limb_names: tuple[str, ...]
    winding_limbs: tuple[str, ...]
    core_keys: tuple[str, ...]
    """The numeric ``[core]`` keys (lengths) that sweeps and tolerances may vary."""
    parts: tuple[str, ...]
    """The core's parts that may have their own material (``[materials]`` keys
    beside ``core``)."""

    def read_core(self, t: TableReader) -> Any: ...

    def limbs(self, core: Any) -> dict[str, Limb]: ...

    def core_rects(self, core: Any) -> list[Rect]: ...

    def part_rects(self, core: Any) -> dict[str, list[Rect]]: ...

    def segments(self, core: Any) -> list[Segment]: ...

    def mean_path(self, core: Any) -> list[tuple[float, float]]: ...

    def windows(self, core: Any, limb: str) -> list[Window]: ...

    def effective_path(self, core: Any) -> tuple[list[tuple[str, float, float]], tuple[str, ...]]: ...




def check_stroke_case(case: Any, what: str) -> None:
    """The checks of a family whose working gaps are its stroke: no hand
    refinement that needs a window core's limbs (its ``no_gaps`` refuses
    ``[[gaps]]`` as they are read).

    Raises CaseError naming the key."""
    from ...errors import CaseError

    for key, on in (("hand.leakage", case.hand.leakage),
                    ("hand.effective_parameters", case.hand.effective_parameters)):
        if on:
            raise CaseError(key, True, f"not modelled for a {what}: set it false")


def radial_run(r1: float, r2: float, t: float) -> tuple[float, float]:
    """(length, area) of a hand-circuit segment with the exact reluctance of
    radial flux between radii r1 < r2 (m) through a plate t thick (m),
    ln(r2/r1) / (2 pi mu t) (a radial flux tube of an axisymmetric part):
    the length r2 - r1 and the equivalent area 2 pi t (r2 - r1) / ln(r2/r1)."""
    import math

    length = r2 - r1
    return length, 2 * math.pi * t * length / math.log(r2 / r1)


def coil_space_leakage(r_inner: float, r_outer: float, l_lo: float, l_hi: float,
                       height: float,
                       spans: tuple[tuple[float, float, float], ...] = ()) -> tuple[float, float]:
    """Energy-equivalent permeance (Wb/A, under the winding's whole MMF N I)
    of the leakage across a coil space of an axisymmetric part that bypasses
    an axial gap in its inner column, and its derivative with respect to
    ``l_lo`` (Wb/A per m).

    The column's two pieces, l_lo below the gap and l_hi above it (m),
    face an outer shell across the annulus r_inner < r < r_outer over the
    coil space's ``height`` (m).  With ideal iron each piece sits at its end
    plate's potential, and the potential difference across the annulus at
    height z is the MMF the winding encloses between that plate and z: N I
    f(z) below the gap and N I (1 - f(z)) above it, f(z) the fraction of the
    turns below z (Ampere's law round column, annulus, shell and plate).  An
    annulus of length dz has permeance P' dz, P' = 2 pi mu0 / ln(r_outer /
    r_inner) (radial flux of a coaxial annulus); its energy (1/2) P' (N I)^2
    [int_0^l_lo f^2 dz + int_(h - l_hi)^h (1 - f)^2 dz] is that of

        P_eq = P' [int_0^l_lo f^2 dz + int_(h - l_hi)^h (1 - f)^2 dz],

    dP_eq / dl_lo = P' f(l_lo)^2 [derived here; common practice, no source].
    A winding filling the coil space has f = z / h, hence P' (l_lo^3 +
    l_hi^3) / (3 h^2).  A shorter winding (``spans``: (z1, z2, turns) per
    winding, z from the lower plate, its turns spread evenly over z1..z2;
    several windings counted as one current) leaks less: f is 0 below it and
    1 above it.  The drop across the gap faces is N I l_lo / h and N I l_hi /
    h for the filled space, not the gap's own drop; the network puts P_eq in
    parallel with the gap, whose drop is N I for ideal iron.
    """
    import math

    from magcheck.analytic.constants import mu_0

    p_side = 2 * math.pi * mu_0 / math.log(r_outer / r_inner)
    spans = spans or ((0.0, height, 1.0),)
    total = sum(n for _, _, n in spans)

    def f(z: float) -> float:
        return sum(n * min(max((z - a) / (b - a), 0.0), 1.0) for a, b, n in spans) / total

    def integral(a: float, b: float, g: Callable[[float], float]) -> float:
        # g is piecewise linear between the spans' ends, so g^2 is quadratic on
        # each piece and Simpson's rule is exact there
        cuts = sorted({a, b, *(z for s in spans for z in s[:2] if a < z < b)})
        out = 0.0
        for lo, hi in zip(cuts[:-1], cuts[1:]):
            m = 0.5 * (lo + hi)
            out += (hi - lo) / 6 * (g(lo) ** 2 + 4 * g(m) ** 2 + g(hi) ** 2)
        return out

    p_eq = p_side * (integral(0.0, l_lo, f)
                     + integral(height - l_hi, height, lambda z: 1.0 - f(z)))
    return p_eq, p_side * f(l_lo) ** 2
