"""What a core family provides: the mean-path segments, the winding windows
and the protocol every family implements (lengths in m, areas in m^2)."""

from __future__ import annotations

import math
from dataclasses import dataclass
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
        coils (compare.geometry.flux_direction), so that several windings
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

    - ``core_model(case) -> compare.coremodel.CoreModel``: the regions,
      coils and measurement places of both models, and the hand circuit
      (``CoreModel.circuit``) when the family gives it explicitly; without
      it compare.coremodel builds the model from the limbs and segments.
    - ``case_tables``: further top-level tables the family reads; then
      ``read_core(t, tables={name: raw table}, base_dir=...)``.
    - ``part_names(core)``: the parts that may have a material when they
      depend on the case; ``required_parts(core)``: {part: why} that must.
    - ``check_case(case)``: checks across tables once the case is read
      (raises CaseError).
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
    """The checks of a family whose working gaps are its stroke: no
    ``[[gaps]]``, and no hand refinement that needs a window core's limbs.

    Raises CaseError naming the key."""
    from ..errors import CaseError

    if case.gaps:
        raise CaseError("gaps[0].limb", case.gaps[0].limb,
                        f"a {what}'s working gaps are its stroke ([core] stroke); it takes "
                        "no [[gaps]]")
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
                       height: float) -> tuple[float, float]:
    """Energy-equivalent permeance (Wb/A) of the leakage across a coil space
    of an axisymmetric part that bypasses an axial gap in its inner column,
    and its derivative with respect to ``l_lo`` (Wb/A per m).

    The column's two pieces, l_lo below the gap and l_hi above it (m),
    face an outer shell across the annulus r_inner < r < r_outer over the
    coil space's ``height`` (m).  With the winding filling the coil space
    the shell's magnetic potential runs linearly between the end plates
    while each piece of the column sits at its plate's potential, so the
    difference across the annulus grows linearly from each plate to the gap,
    where it is the gap's drop F.  An annulus of length dz has permeance
    P' dz, P' = 2 pi mu0 / ln(r_outer / r_inner) (radial flux of a coaxial
    annulus); its energy, (1/2) P' F^2 int (z/h)^2 dz over both pieces, is
    that of P' (l_lo^3 + l_hi^3) / (3 h^2) under F [derived here; the linear
    potential is common practice, no source].
    """
    import math

    from analytic.constants import mu_0

    p_side = 2 * math.pi * mu_0 / math.log(r_outer / r_inner)
    h2 = height * height
    return p_side * (l_lo ** 3 + l_hi ** 3) / (3 * h2), p_side * l_lo ** 2 / h2
