"""The case model: one validated design case as frozen dataclasses, SI inside.

The case file is read and checked at the edge, in :mod:`compare.reading.casefile`
(TOML -> :class:`Case`); the models downstream trust what they are given.
The file's tables map onto these classes::

    [case]       name, family, description
    [core]       family dimensions (see compare.design.families)
    [[gaps]]     limb, length, position (optional; default mid-limb)
    [winding]    limb, turns, current, and thickness + length, or fill; clearance
    [materials]  core = "<built-in>" | {csv = "file.csv"} |
                 {H = [...], B = [...], H_unit = "A/m", B_unit = "T"} | {mu_r = 2000}
    [hand]       fringing = "<model>"
    [fe]         order, gap_elements, mesh_size, air_factor, boundary, tol
    [margins]    peak_B, current_density (+ copper_fill), force_min, [[margins.inductance]]
                 (at, min, max, kind), [[margins.saturation_current]] (drop_pct, min,
                 kind), [margins.agreement] (percent per quantity)
    [sweep]      vary = ["KEY=SPEC", ...], drops_pct, inductance; or [[sweep]] for several
    [[tolerances]] key, distribution (uniform: minus/plus; normal: sigma, limit)
    [[targets]]  key = "KEY=LO:HI", target = "QUANTITY OP VALUE[@AT]" (or a list), fe, tolerance
    [[measured]] quantity, at + value or csv, uncertainty, current, frequency, source
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field
from typing import Any, Mapping, Protocol

from .families import FAMILIES, Family
from .geometry import Gap, Limb, WindingSpec

__all__ = ["Case", "CaseOrigin", "with_current", "MaterialSpec", "HandSettings", "FESettings", "Margins",
           "InductanceLimit", "SaturationLimit", "LossSpec", "LOSS_WAVEFORMS", "ForceLimit", "SweepDecl", "Tolerance",
           "TargetDecl"]


DEFAULT_DROPS = (0.10, 0.20, 0.30)
"""Saturation drop levels (fractions of the low-current inductance) where
neither the case's ``[sweep]`` nor the command gives them."""

@dataclass(frozen=True)
class MaterialSpec:
    """A region's material: where it came from and the loaded law.

    ``law`` provides h_of_b, b_of_h, nu(s), dnu_ds(s) (SI) - a BHCurve or a
    LinearMaterial from analytic.bh.
    """

    region: str
    kind: str  # "builtin" | "csv" | "table" | "mu_r"
    description: str
    law: Any = field(repr=False, compare=False)


@dataclass(frozen=True)
class HandSettings:
    """Settings of the magnetic-circuit model.

    fringing : the gap fringing model (analytic.fringing.FRINGING_MODELS).
    leakage : add the leakage across the winding window(s)
        (analytic.leakage; ``[hand] leakage = true``).
    stacking : core B and H on the net iron area k_s A ([core] stacking),
        the gaps on the gross face (``[hand] stacking = true``).
    effective_parameters : one core branch of the IEC 60205 effective
        length and area instead of the mean-path segments
        (``[hand] effective_parameters = true``).
    rogowski : the leakage inductance of two concentric windings with
        Rogowski's factor for the end fringing of their leakage field
        (analytic.leakage.rogowski_factor; ``[hand] rogowski = true``).
    """

    fringing: str = "area"
    leakage: bool = False
    stacking: bool = False
    effective_parameters: bool = False
    rogowski: bool = False


@dataclass(frozen=True)
class FESettings:
    """Settings of the finite-element model.

    order : element order, 1 or 2.
    gap_elements : minimum number of elements across each gap length.
    mesh_size : element size in the core (m); None picks one from the geometry.
    boundary : "open" (default): the field decays as in unbounded space (the
        air disk's exterior mapped onto a ring of elements, fem2d.exterior);
        "closed": A = 0 on the air box (a flux-tight enclosure).
    air_factor : the air domain's size as a multiple of the parts' largest
        extent: the air disk's diameter (open; default OPEN_AIR_FACTOR) or
        the air box's side (closed; default CLOSED_AIR_FACTOR).
    tol : relative Newton residual to stop at.
    allow_large : mesh even when the element estimate exceeds
        compare.models.fe.MAX_TRIANGLES (``[fe] allow_large = true`` or ``--allow-large``).
    """

    order: int = 2
    gap_elements: int = 4
    mesh_size: float | None = None
    air_factor: float | None = None
    tol: float = 1e-8
    allow_large: bool = False
    boundary: str = "open"

    @property
    def air_extent(self) -> float:
        """The air domain's size factor in use (air_factor or its default)."""
        if self.air_factor is not None:
            return self.air_factor
        return OPEN_AIR_FACTOR if self.boundary == "open" else CLOSED_AIR_FACTOR


OPEN_AIR_FACTOR = 1.5
"""Default air disk diameter / parts' extent with the open boundary."""
CLOSED_AIR_FACTOR = 3.0
"""Default air box side / parts' extent with the closed boundary."""


@dataclass(frozen=True)
class InductanceLimit:
    """Inductance at a stated current must lie within [min, max] (H; None = open).

    at : winding current (A); kind : "secant" (lambda/I) or "incremental" (d lambda/dI).
    """

    at: float
    min: float | None = None
    max: float | None = None
    kind: str = "secant"


@dataclass(frozen=True)
class SaturationLimit:
    """The current at which the inductance has fallen by ``drop`` (fraction of
    its low-current value) must be at least ``min`` (A)."""

    drop: float
    min: float
    kind: str = "incremental"


@dataclass(frozen=True)
class ForceLimit:
    """The force on the moving part at a stated stroke (m) must lie within
    [min, max] (N along the closing stroke; None = open): the pull-in force
    at the open position, the holding force closed.  Judged along a sweep of
    the stroke (FE, interpolated), or at the case's own stroke by the check."""

    stroke: float
    min: float | None = None
    max: float | None = None


@dataclass(frozen=True)
class Margins:
    """Design margins and hand-vs-FE agreement limits.

    peak_B : maximum peak core flux density (T), checked on the FE's peak
        (see compare.models.fe); None = no limit.
    agreement : maximum |hand - FE| per quantity, percent of the FE value;
        quantities not named keep compare.judge.check.DEFAULT_LIMITS.
    current_density : maximum winding current density (A/m^2) in the
        conductor, N |I| / (copper_fill * coil cross-section); None = no limit.
    copper_fill : conductor fraction of the coil cross-section (0, 1].
    inductance : inductance limits at stated currents.
    saturation : minimum saturation currents at stated drops.
    """

    peak_B: float | None = None
    agreement: tuple[tuple[str, float], ...] = ()
    current_density: float | None = None
    copper_fill: float = 1.0
    inductance: tuple[InductanceLimit, ...] = ()
    saturation: tuple[SaturationLimit, ...] = ()
    force_min: float | None = None
    """Minimum force on the moving part at the case's stroke and current (N,
    along the closing stroke: the pull-in force at the open position, the
    holding force closed), judged on the FE's Maxwell stress."""
    force: tuple[ForceLimit, ...] = ()
    """Force limits at stated strokes ([[margins.force]])."""
    B_peak: float | None = None
    """Maximum peak flux density of a voltage-driven winding at the drive's
    peak (T; FE: the 0.5 % area quantile)."""
    magnetizing_current_peak: float | None = None
    """Maximum magnetizing current of a voltage-driven winding, peak (A)."""
    magnetizing_current_rms: float | None = None
    """Maximum magnetizing current of a voltage-driven winding, rms (A)."""
    inrush_current_peak: float | None = None
    """Maximum first peak of the inrush current estimate (A; the driven
    winding's ``residual_flux`` given)."""
    winding_loss: float | None = None
    """Maximum winding loss of an AC winding, DC + AC (W; judged on the FE)."""
    resistance_ratio: float | None = None
    """Maximum R_ac/R_dc of an AC winding (judged on the FE)."""
    motion: tuple[tuple[str, float], ...] = ()
    """A moving part's limits (compare.design.casekeys.MOTION_MARGINS: pull-in
    voltage, operate and release time maxima, drop-out voltage minimum), SI."""
    total_loss: float | None = None
    """Maximum total loss of the loss budget (W; ``[loss]``; judged on the FE)."""
    core_loss: float | None = None
    """Maximum core loss (W; ``[loss]``; judged on the FE)."""
    efficiency: float | None = None
    """Minimum efficiency of a transformer at rated load (a fraction; written in percent)."""
    regulation: float | None = None
    """Maximum voltage regulation of a transformer at rated load (a fraction; written in percent)."""
    temperature_rise: float | None = None
    """Maximum temperature rise estimate (K), from the loss per surface area."""

    def agreement_limit(self, key: str, default: float | None) -> float | None:
        return dict(self.agreement).get(key, default)


LOSS_WAVEFORMS = ("sine", "triangle", "square")
"""The flux waveforms of ``[loss] waveform``."""


@dataclass(frozen=True)
class LossSpec:
    """``[loss]``: the operating point of the loss budget (compare.models.loss).

    waveform : the core's flux waveform, "sine" (Steinmetz), "triangle" (a choke's ripple,
        iGSE) or "square" (a square voltage, iGSE).
    duty : triangle: the rising fraction of the period; square: the fraction at +-V (1 = a
        plain square wave).
    frequency : Hz (None: the winding's [winding.ac] or drive frequency).
    ripple : a choke's ripple current, peak (A; None: [winding.ac] current).
    load_current : a transformer's rated load current in its second winding, rms (A).
    load_fraction : the stated fraction of the rated load for the second efficiency.
    power_factor : of the load (lagging), 0 to 1.
    resistances : each winding's resistance (ohm), in winding order (empty: the AC winding's
        R_dc, or no copper loss).
    surface_area : the wound part's outside surface (m^2; None: the box round core and coils).
    """

    waveform: str = "sine"
    duty: float = 0.5
    frequency: float | None = None
    ripple: float | None = None
    load_current: float | None = None
    load_fraction: float = 0.5
    power_factor: float = 1.0
    resistances: tuple[float, ...] = ()
    surface_area: float | None = None


@dataclass(frozen=True)
class SweepDecl:
    """A sweep the case declares: ``--vary`` specs and saturation drop levels."""

    vary: tuple[str, ...]
    drops: tuple[float, ...] = DEFAULT_DROPS
    inductance: str = "incremental"


@dataclass(frozen=True)
class TargetDecl:
    """A stored target solve (``[[targets]]``) that ``magcheck verify`` runs.

    key : ``"KEY=LO:HI"``, the key and its bracket (compare.design.targets.parse_bracket).
    targets : ``"QUANTITY OP VALUE[@AT]"`` strings (compare.design.targets.parse_target).
    fe : the FE answer stored (SI, the key's unit); None: verify only asks
        that a value of the key meets every target by the FE.
    tolerance : how far the FE answer may move from ``fe`` (SI, the key's
        unit; or relative to ``fe`` when ``relative``).
    """

    key: str
    targets: tuple[str, ...]
    fe: float | None = None
    tolerance: float | None = None
    relative: bool = False


@dataclass(frozen=True)
class Tolerance:
    """A manufacturing tolerance on one case key (see compare.studies.tolerance).

    key : key path (``gaps[0].length``) or ``materials.core.scale_H`` /
        ``materials.core.scale_B`` (B-H curve scale factors, nominal 1).
    distribution : "uniform" (nominal - minus .. nominal + plus) or
        "normal" (sigma, truncated at +-limit).
    minus, plus, sigma, limit : SI deviations, or fractions of the nominal
        value when ``relative`` (given as "5 %").
    """

    key: str
    distribution: str
    minus: float = 0.0
    plus: float = 0.0
    sigma: float = 0.0
    limit: float = 0.0
    relative: bool = False


class CaseOrigin(Protocol):
    """What the case reader attaches to a :class:`Case` it returns
    (``compare.reading.variants``): the parsed tables the case was validated
    from, and the reader's own function that sets keys in a copy of them and
    validates the result (:meth:`Case.with_values`)."""

    @property
    def case(self) -> "Case":
        """The case as the reader validated it (to tell a case changed since)."""
        ...

    def derive(self, values: Mapping[str, Any]) -> "Case":
        """A new case: these keys set in a copy of the tables, validated."""
        ...


@dataclass(frozen=True)
class Case:
    """One validated design case. All values SI.

    Read one with ``magcheck.load`` (a TOML file or its tables); derive
    others with :meth:`with_values`, which validates like a case file.
    """

    name: str
    family: str
    core: Any
    gaps: tuple[Gap, ...]
    winding: WindingSpec
    """The first winding: the one the scalar quantities (flux linkage,
    inductance, saturation current, current density) refer to."""
    materials: tuple[MaterialSpec, ...]
    hand: HandSettings = HandSettings()
    fe: FESettings = FESettings()
    margins: Margins = Margins()
    sweeps: tuple[SweepDecl, ...] = ()
    tolerances: tuple[Tolerance, ...] = ()
    description: str = ""
    source: str = ""
    sha256: str = ""
    extra_windings: tuple[WindingSpec, ...] = ()
    """The windings after the first ([[windings]] entries 1, 2, ...)."""
    targets: tuple[TargetDecl, ...] = ()
    """Stored target solves ([[targets]]) that magcheck verify runs."""
    measured: tuple[Any, ...] = ()
    """Measurements of the built part ([[measured]]: compare.design.measured.Measured)."""
    core_loss: Any = None
    """The core's loss data (analytic.core_loss.MaterialLoss: a built-in's, overridden by
    ``[materials.core_loss]``); None when the material has none."""
    loss: LossSpec | None = None
    """``[loss]``: the loss budget's operating point; None: no loss budget."""
    stacking: float = 1.0
    """Lamination stacking factor k_s ([core] stacking): iron over gross
    cross-section.  The FE always uses the homogenised core (polarisation
    scaled by k_s, analytic.bh.scale_law); the hand model uses the net iron
    area k_s A when ``[hand] stacking = true``."""
    conducting: tuple[tuple[str, float], ...] = ()
    """``[conducting_parts]``: (part, conductivity S/m) of solid conducting core
    parts ("core": every core region; a family part such as "plunger": its
    region).  The AC field model (compare.models.ac) gives them eddy currents
    at the operating point's linear(ised) permeability; laminated parts are
    left out (their loss is the core-loss budget's)."""
    motion: Any = None
    """The moving part's mechanics and drive ([motion]:
    compare.design.actuator.ActuatorSpec; None without one)."""
    origin: CaseOrigin | None = field(default=None, repr=False, compare=False)
    """The tables this case was read from and the reader's validation
    (attached by ``compare.reading.variants``; None for a case built here
    directly). Not part of equality, hash or repr."""

    def with_values(self, values: Mapping[str, Any]) -> "Case":
        """A new case with some case-file keys set, validated exactly like a
        case file.

        ``values`` maps keys in the grammar of ``--vary``
        (``"gaps[0].length"``, ``"winding.current"``, ``"core.limb_width"``,
        ``"materials.core.scale_H"``; any other key of the file too, e.g.
        ``"hand.fringing"``) to what the case file would hold: a string with a
        unit (``"0.8 mm"``, ``"7 A"``) or a plain number in SI (m, A, T,
        H/m; ``7`` is 7 A for a current).  The new case supports
        ``with_values`` in turn.

        Why through ``origin``: a value must be checked by the same reader as
        the case file (units, ranges, the family's geometry, cross-table
        checks), but the case model sits below the reader and does not import
        it (``tests/test_layering.py``).  So the reader attaches to each case
        it returns the parsed tables and its own function that sets keys in a
        copy and validates it again; this method only hands the values over.

        Raises
        ------
        CaseError
            Naming the key and the value (an unknown key, a value the case
            file would refuse), or ``with_values`` when this case was not made
            by the reader (built directly, or changed with
            ``dataclasses.replace`` since: its tables no longer describe it).
        """
        from ..errors import CaseError

        if self.origin is None:
            raise CaseError("with_values", None, "this Case was not read from a case file or "
                                                 "its tables (magcheck.load): there are no "
                                                 "tables to set the keys in")
        if self.origin.case != self:
            raise CaseError("with_values", None, "this Case was changed (dataclasses.replace) "
                                                 "after it was read: its tables no longer "
                                                 "describe it; make every change with "
                                                 "with_values")
        if not isinstance(values, Mapping):
            raise CaseError("with_values", values, "give a dict of key -> value, e.g. "
                                                   "{\"gaps[0].length\": \"0.8 mm\"}")
        return self.origin.derive(values)

    @property
    def family_model(self) -> Family:
        # through the registry's lookup, which loads entry-point plug-ins (a
        # worker process starts with the built-in families only)
        from .families import get_family

        return FAMILIES[self.family] if self.family in FAMILIES else get_family(self.family)

    @property
    def limbs(self) -> dict[str, Limb]:
        return self.family_model.limbs(self.core)

    @property
    def windings(self) -> tuple[WindingSpec, ...]:
        """Every winding, in case-file order (the first is :attr:`winding`)."""
        return (self.winding, *self.extra_windings)

    @property
    def depth(self) -> float:
        """The stack depth (m); 1 for an axisymmetric core, which has none."""
        return getattr(self.core, "depth", 1.0)

    def material(self, region: str) -> MaterialSpec:
        for m in self.materials:
            if m.region == region:
                return m
        raise KeyError(region)

    def part_material(self, part: str) -> MaterialSpec:
        """The material of a core part: its own ``[materials]`` entry, or the core's."""
        for m in self.materials:
            if m.region == part:
                return m
        return self.material("core")

    @property
    def part_overrides(self) -> tuple[str, ...]:
        """The core parts with a material of their own, in the family's order."""
        given = {m.region for m in self.materials}
        fam = self.family_model
        names = getattr(fam, "part_names", None)
        parts = names(self.core) if names is not None else fam.parts
        return tuple(p for p in parts if p in given)


def with_current(case: Case, current: float) -> Case:
    """The case with another winding current (A); everything else unchanged."""
    return dataclasses.replace(case, winding=dataclasses.replace(case.winding,
                                                                  current=float(current)))
