"""The known keys of every case-file table, in one place.

The reader (:class:`~compare.design.reader.TableReader`) and the JSON
Schema generator (``tools/make_schema.py``, ``docs/case.schema.json``) both
take the keys from here, so the schema cannot drift from what is read: a
reader whose table has a spec refuses, as a programming error
(:class:`UndeclaredKey`), to ask for a key that is not declared in it or to
read it as another kind than declared.

A :class:`Key` says what a key holds: a quantity of a dimension (a number
in SI units or a string with a unit, ``"0.6 mm"``), a plain number, a whole
number, a string (with its choices), true/false, a table (its own keys) or
an array of tables, a list, or one of several forms.  The tables every
case has are declared here (:data:`ROOT`); a family declares its ``[core]``
keys (``core_spec``) and the tables of its own (``table_specs``, with its
``case_tables``) in its module, with these helpers.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Mapping

from magcheck.analytic.bh import B_UNITS, H_UNITS
from magcheck.analytic.fringing import FRINGING_MODELS

__all__ = ["Key", "Spec", "UndeclaredKey", "quantity", "number", "integer", "string", "boolean",
           "table", "tables", "listof", "oneof", "lengths", "ROOT", "ROOT_KEYS", "CORE_COMMON",
           "AGREEMENT_KEYS", "INDUCTANCE_KINDS", "DISTRIBUTIONS", "FE_BOUNDARIES",
           "WINDING_KEYS", "CONDUCTOR_KEYS", "AC_KEYS", "CONDUCTOR_KINDS", "CONDUCTOR_MATERIALS",
           "MATERIAL", "CORE_LOSS_KEYS", "LOSS_KEYS", "child", "check_read", "MOTION_KEYS",
           "SPRING_KEYS", "GRAVITY_SENSES", "SUPPRESSIONS", "MOTION_MARGINS"]


class UndeclaredKey(LookupError):
    """A reader asked for a key its table's spec does not declare, or read it
    as another kind: a bug in magcheck (declare the key here), not bad input."""


@dataclass(frozen=True)
class Key:
    """What one key holds.

    kind : "quantity", "number", "integer", "string", "boolean", "table",
        "tables" (an array of tables), "list" or "any" (one of ``forms``).
    dimension : a quantity's (compare.design.units.DIMENSIONS; "" any: a
        tolerance's deviation, in its key's unit).
    choices : a string's allowed values (empty: any string).
    keys : a table's keys (None: any keys, not declared).
    extra : a table's freely named keys' value (a [materials] part).
    items : a list's items (None: any).
    forms : the accepted forms of an "any" key.
    doc : one line for the schema's description.
    """

    kind: str
    doc: str = ""
    dimension: str = ""
    choices: tuple[str, ...] = ()
    keys: "Spec | None" = None
    extra: "Key | None" = None
    items: "Key | None" = None
    forms: tuple["Key", ...] = field(default=())


Spec = Mapping[str, Key]
"""A table's keys: name -> :class:`Key`."""


def quantity(dimension: str, doc: str = "") -> Key:
    return Key("quantity", doc, dimension=dimension)


def number(doc: str = "") -> Key:
    """A plain number (a string holding one is read too)."""
    return Key("number", doc)


def integer(doc: str = "") -> Key:
    return Key("integer", doc)


def string(doc: str = "", choices: tuple[str, ...] | list[str] = ()) -> Key:
    return Key("string", doc, choices=tuple(choices))


def boolean(doc: str = "") -> Key:
    return Key("boolean", doc)


def table(keys: Spec | None, doc: str = "", extra: Key | None = None) -> Key:
    return Key("table", doc, keys=keys, extra=extra)


def tables(keys: Spec | None, doc: str = "") -> Key:
    return Key("tables", doc, keys=keys)


def listof(items: Key | None = None, doc: str = "") -> Key:
    return Key("list", doc, items=items)


def oneof(*forms: Key, doc: str = "") -> Key:
    return Key("any", doc, forms=tuple(forms))


def lengths(names: tuple[str, ...] | list[str]) -> dict[str, Key]:
    """Keys that are lengths (a family's core dimensions)."""
    return {n: quantity("length") for n in names}


# ------------------------------------------------------------ choices
AGREEMENT_KEYS = ("gap_B", "core_B", "path_H", "flux", "flux_linkage", "inductance",
                  "incremental_inductance", "energy", "force", "force_pull", "B_peak",
                  "magnetizing_current_peak", "magnetizing_current_rms",
                  "magnetizing_inductance", "leakage_inductance", "inrush_current_peak",
                  "B_limb_peak", "R_dc", "R_ac", "R_ac_ratio", "winding_loss", "L_ac",
                  "pull_in_current", "drop_out_current", "operate_time", "release_time",
                  "core_loss", "copper_loss", "winding_loss_ac", "total_loss", "efficiency",
                  "efficiency_part", "regulation", "temperature_rise")
"""The quantities a ``[margins.agreement]`` limit (percent) may name."""

INDUCTANCE_KINDS = ("secant", "incremental")
DISTRIBUTIONS = ("uniform", "normal")
FE_BOUNDARIES = ("open", "closed")

# ------------------------------------------------------------ the tables
CASE = {"name": string("the case's name"),
        "family": string("the core family (a built-in or a plug-in's name)"),
        "description": string("what the case is, and what its hand model leaves out")}

CORE_COMMON = {"stacking": number("the lamination stacking factor, 0.3 to 1 (default 1)")}
"""The ``[core]`` keys every family has; the family adds its ``core_spec``."""

GAP = {"limb": string("the limb the gap crosses"),
       "length": quantity("length", "the gap's length along the flux"),
       "position": quantity("length", "the gap centre along the limb's straight part "
                                      "(default: its middle)")}

CONDUCTOR_KINDS = ("foil", "round")
CONDUCTOR_MATERIALS = ("copper", "aluminium")

CONDUCTOR_KEYS: dict[str, Key] = {
    "kind": string("foil (one turn per layer) or round wire", CONDUCTOR_KINDS),
    "thickness": quantity("length", "foil: its thickness across the coil build"),
    "width": quantity("length", "foil: its width along the limb"),
    "diameter": quantity("length", "round wire: the bare copper diameter"),
    "insulation": quantity("length", "round wire: the enamel build per side (default 0)"),
    "layers": integer("layers across the coil build, the first on the limb side"),
    "turns_per_layer": integer("round wire: turns side by side along the limb (foil: 1)"),
    "layer_gap": quantity("length", "insulation between layers (foil: required)"),
    "material": string("copper (default) or aluminium: the resistivity and its temperature "
                       "coefficient at 20 degC", CONDUCTOR_MATERIALS),
    "resistivity": quantity("resistivity", "resistivity at reference_temperature (ohm*m), "
                                           "instead of the material's"),
    "temperature_coefficient": number("of the resistivity at reference_temperature, 1/K"),
    "reference_temperature": number("where resistivity and temperature_coefficient hold, "
                                    "degC (default 20)"),
    "temperature": number("the conductor's operating temperature, degC (default 20)"),
}
"""``[winding.conductor]``: the winding drawn turn by turn (window-core family)."""

AC_KEYS: dict[str, Key] = {
    "frequency": quantity("frequency", "of the sinusoidal current"),
    "current": quantity("current", "the sinusoidal current's amplitude, peak (on top of the "
                                   "winding's DC current)"),
}
"""``[winding.ac]``: a sinusoidal current on top of the winding's DC ``current``."""

WINDING_KEYS: dict[str, Key] = {
    "name": string("the winding's name (default main, or w1, w2, ...)"),
    "limb": string("the limb it is wound on"),
    "turns": integer("number of turns"),
    "current": quantity("current", "DC current (or the peak of a voltage drive, found)"),
    "voltage": quantity("voltage", "rms voltage of a sinusoidal drive (first winding)"),
    "frequency": quantity("frequency", "the voltage drive's frequency"),
    "residual_flux": number("residual flux linkage for the inrush estimate, a fraction of "
                            "the peak"),
    "resistance": quantity("resistance", "series resistance damping the inrush estimate"),
    "clearance": quantity("length", "space between the limb (or the winding inside) and "
                                    "the coil"),
    "fill": number("fraction of the free window width the coil takes (instead of "
                   "thickness and length)"),
    "thickness": quantity("length", "the coil's build across the window"),
    "length": quantity("length", "the coil's length along the limb"),
    "conductor": table(CONDUCTOR_KEYS, "the conductor drawn turn by turn (foil or round "
                                       "wire) in the coil space"),
    "ac": table(AC_KEYS, "a sinusoidal current on top of the DC current: AC resistance, "
                         "winding loss, AC inductance"),
}

MATERIAL_TABLE = {"mu_r": number("a linear material's relative permeability"),
                  "csv": string("a B-H table file (H, B columns), relative to the case file"),
                  "H": listof(number(), "inline B-H table: H values"),
                  "B": listof(number(), "inline B-H table: B values"),
                  "H_unit": string("the unit of H", tuple(H_UNITS)),
                  "B_unit": string("the unit of B", tuple(B_UNITS))}

MATERIAL = oneof(string("a built-in B-H curve's name (magcheck materials)"),
                 table(MATERIAL_TABLE), doc="a built-in name, {csv = ...}, {H = [...], "
                                                "B = [...]} or {mu_r = ...}")

CORE_LOSS_KEYS: dict[str, Key] = {
    "k": number("Steinmetz k, loss per unit (see unit) at 1 Hz and 1 T"),
    "alpha": number("Steinmetz frequency exponent"),
    "beta": number("Steinmetz flux-density exponent"),
    "unit": string("the unit of k", ("W/kg", "W/m^3")),
    "f_min": quantity("frequency", "lowest frequency the coefficients hold at"),
    "f_max": quantity("frequency", "highest frequency the coefficients hold at"),
    "B_min": quantity("flux density", "lowest peak flux density the coefficients hold at"),
    "B_max": quantity("flux density", "highest peak flux density the coefficients hold at"),
    "density": number("the core material's density, kg/m^3"),
    "table": string("a loss table CSV (f [Hz], B [T], P [W/kg]) fitted for k, alpha, beta, "
                    "relative to the case file"),
    "thickness": quantity("length", "lamination thickness (Bertotti's classical eddy term)"),
    "resistivity": quantity("resistivity", "the steel's resistivity"),
    "k_h": number("Bertotti hysteresis coefficient, W/m^3 per (Hz T^beta_h)"),
    "beta_h": number("Bertotti hysteresis exponent"),
    "k_e": number("Bertotti excess-loss coefficient, W/m^3 per (Hz T)^1.5"),
}
"""``[materials.core_loss]``: the core's loss data (over a built-in's, key by key)."""

LOSS_KEYS: dict[str, Key] = {
    "waveform": string("the core's flux waveform", ("sine", "triangle", "square")),
    "duty": number("triangle: rising fraction of the period; square: fraction at +-V"),
    "frequency": quantity("frequency", "of the flux (default the AC or drive frequency)"),
    "ripple": quantity("current", "a choke's ripple current, peak (default [winding.ac])"),
    "load_current": quantity("current", "a transformer's rated load current in its second "
                                        "winding, rms"),
    "load_fraction": number("a stated fraction of the rated load for a second efficiency"),
    "power_factor": number("the load's power factor (lagging), 0 to 1"),
    "resistances": listof(quantity("resistance"), "each winding's resistance, in winding "
                                                  "order"),
    "surface_area": quantity("area", "the wound part's outside surface, for the temperature "
                                     "rise (default the box round core and coils)"),
}
"""``[loss]``: the loss budget's operating point."""

HAND = {"fringing": string("the gap fringing model", tuple(FRINGING_MODELS)),
        "leakage": boolean("add the across-window leakage permeance"),
        "stacking": boolean("apply the core's stacking factor"),
        "effective_parameters": boolean("use IEC 60205 effective parameters"),
        "rogowski": boolean("Rogowski-correct the leakage inductance of two concentric "
                            "windings")}

FE = {"order": integer("element order, 1 or 2"),
      "gap_elements": integer("elements across a gap"),
      "mesh_size": quantity("length", "element size in the core"),
      "air_factor": number("air domain size over the core's, 1.5 to 100"),
      "boundary": string("the outer boundary", FE_BOUNDARIES),
      "tol": number("Newton tolerance"),
      "allow_large": boolean("mesh even above the element-count guard")}

GRAVITY_SENSES = ("none", "opening", "closing")
SUPPRESSIONS = ("none", "diode", "resistor")

SPRING_KEYS: dict[str, Key] = {
    "rate": quantity("stiffness", "the spring's rate, e.g. \"0.5 N/mm\""),
    "series": listof(quantity("stiffness"), "rates of springs in series, one force through "
                                            "each (instead of rate)"),
    "preload": quantity("force", "its force where it engages (default 0)"),
    "engage": quantity("length", "the stroke from the open stop where it starts to push "
                                 "(default 0: over the whole travel; a contact spring later)"),
    "solid": quantity("length", "the stroke from the open stop where it goes solid (refused "
                                "inside the travel)"),
}
"""``[[motion.springs]]``: one spring of the load (in parallel with the others)."""

MOTION_KEYS: dict[str, Key] = {
    "open_gap": quantity("length", "the stroke key's value at the open stop"),
    "closed_gap": quantity("length", "the stroke key's value at the closed stop"),
    "mass": quantity("mass", "the moving mass (armature, plunger, contacts); without it "
                             "the static limits only (no operate or release motion)"),
    "springs": tables(SPRING_KEYS, "the springs of the load, in parallel"),
    "constant_load": quantity("force", "a constant opening load (a keeper's, a contact "
                                       "pressure), default 0"),
    "gravity": string("gravity along the stroke: its weight pulls opening, closing, or none "
                      "(default)", GRAVITY_SENSES),
    "restitution": number("the stops' coefficient of restitution, 0 (inelastic, default) "
                          "to below 1"),
    "resistance": quantity("resistance", "the coil's resistance at resistance_temperature"),
    "resistance_temperature": number("where resistance holds, degC (default 20)"),
    "temperature": number("the coil's temperature for the limits and the motion, degC "
                          "(default 20)"),
    "voltage": quantity("voltage", "the rated coil voltage, a step at switch-on"),
    "voltage_table": table({"time": listof(number(), "times, s, rising from 0"),
                            "voltage": listof(number(), "the coil voltage, V, one per time")},
                           "a coil voltage v(t) at switch-on instead of the step"),
    "suppression": string("across the coil at switch-off: none (the current stops at once, "
                          "default), a diode or a resistor", SUPPRESSIONS),
    "suppression_resistance": quantity("resistance", "the suppression resistor"),
    "diode_drop": quantity("voltage", "the suppression diode's forward drop (default 0.7 V)"),
    "map_strokes": integer("strokes of the force and flux-linkage map, 3 to 15 (default 5)"),
    "map_currents": integer("currents of the map above zero, 3 to 15 (default 5)"),
}
"""``[motion]``: the moving part's mechanics and the coil's drive (compare.models.motion)."""

MOTION_MARGINS = ("pull_in_voltage", "drop_out_voltage", "operate_time", "release_time",
                  "release_current")
"""The ``[margins]`` keys judged on the motion: pull-in voltage and operate and release
time maxima, the drop-out voltage a minimum; a holding magnet's release current a maximum."""

MARGINS = {
    "peak_B": quantity("flux density", "largest allowed peak |B| in the core"),
    "agreement": table({k: number(f"agreement limit for {k}, percent") for k in AGREEMENT_KEYS},
                       "hand-vs-FE agreement limits, percent"),
    "current_density": quantity("current density", "largest allowed winding current density"),
    "force_min": quantity("force", "smallest allowed force on the moving part"),
    "B_peak": quantity("flux density", "voltage drive: largest allowed peak flux density"),
    "magnetizing_current_peak": quantity("current", "voltage drive: largest peak "
                                                    "magnetizing current"),
    "magnetizing_current_rms": quantity("current", "voltage drive: largest rms magnetizing "
                                                   "current"),
    "inrush_current_peak": quantity("current", "largest inrush current estimate"),
    "copper_fill": number("copper fraction of the coil area, for the current density"),
    "winding_loss": quantity("power", "AC winding: largest allowed winding loss (DC + AC)"),
    "resistance_ratio": number("AC winding: largest allowed R_ac/R_dc"),
    "pull_in_voltage": quantity("voltage", "[motion]: largest allowed pull-in voltage"),
    "drop_out_voltage": quantity("voltage", "[motion]: smallest allowed drop-out voltage"),
    "operate_time": quantity("time", "[motion]: largest allowed operate time at rated "
                                     "voltage"),
    "release_time": quantity("time", "[motion]: largest allowed release time"),
    "release_current": quantity("current", "[motion], a holding magnet: largest allowed "
                                           "reverse current that releases the keeper"),
    "total_loss": quantity("power", "largest allowed total loss (core and windings)"),
    "core_loss": quantity("power", "largest allowed core loss"),
    "efficiency": number("transformer: smallest allowed efficiency at rated load, percent"),
    "regulation": number("transformer: largest allowed voltage regulation, percent"),
    "temperature_rise": number("largest allowed temperature rise estimate, K"),
    "inductance": tables({"at": quantity("current", "the current the limit holds at"),
                          "min": quantity("inductance"), "max": quantity("inductance"),
                          "kind": string("", INDUCTANCE_KINDS)}, "inductance limits"),
    "saturation_current": tables({"drop_pct": number("inductance drop, percent"),
                                  "min": quantity("current", "smallest allowed current at "
                                                             "that drop"),
                                  "kind": string("", INDUCTANCE_KINDS)},
                                 "saturation current limits (judged along a sweep)"),
    "force": tables({"stroke": quantity("length"), "min": quantity("force"),
                     "max": quantity("force")}, "force limits along the stroke"),
}

SWEEP = {"vary": oneof(string(), listof(string()), doc='"KEY=SPEC" strings, e.g. '
                                                       '"winding.current=0:20A:41"'),
         "drops_pct": listof(number(), "inductance drops (percent) for the saturation currents"),
         "inductance": string("which inductance the drops read", INDUCTANCE_KINDS)}

_DEVIATION = quantity("", 'a deviation in the key\'s unit ("0.05 mm") or in percent ("5%")')
TOLERANCE = {"key": string("the case key that varies, e.g. gaps[0].length"),
             "distribution": string("", DISTRIBUTIONS),
             "minus": _DEVIATION, "plus": _DEVIATION, "sigma": _DEVIATION, "limit": _DEVIATION}

TARGETS = {"key": string('the design key and its bracket, "KEY=LO:HI", e.g. '
                         '"gaps[0].length=0.3mm:1.2mm"'),
           "target": oneof(string(), listof(string()),
                           doc='"QUANTITY OP VALUE[@AT]" strings, e.g. "inductance>=3.2mH@6A"'),
           "fe": quantity("", "the FE answer stored, in the key's unit"),
           "tolerance": quantity("", 'how far the FE answer may move, in the key\'s unit '
                                     '("0.02 mm") or in percent of fe ("3%")')}

MEASURED = {"quantity": string("what was measured", ("inductance", "incremental_inductance",
                                                     "force")),
            "at": quantity("", "a single value's current (an inductance) or stroke (a force)"),
            "value": quantity("", "the measured value"),
            "uncertainty": quantity("", "the standard uncertainty, in the value's unit or in "
                                        'percent of it ("2%")'),
            "current": quantity("current", "a force's winding current (default the case's)"),
            "frequency": quantity("frequency", "the measuring frequency, for the record"),
            "source": string("free text: instrument, date, who"),
            "csv": string("a measured curve: CSV file with 'I [A],L [mH]' or 'stroke [mm],F [N]' "
                          "(and optionally 'u [unit]' or 'u [%]'), relative to the case file"),
            "hold": string("the model magcheck verify holds to this measurement at the case's "
                           "operating point (default fe when within is given)",
                           ("fe", "hand", "both")),
            "within": number("verify's limit: the largest |model - measured| in combined "
                             "standard uncertainties sqrt(u_meas^2 + u_model^2), e.g. 2")}

ROOT_KEYS: dict[str, Key] = {
    "case": table(CASE, "name, family, description"),
    "core": table(None, "the core's dimensions (keys per family)"),
    "gaps": tables(GAP, "the gaps of a limb family"),
    "winding": table(WINDING_KEYS, "one winding (or [[windings]])"),
    "windings": tables(WINDING_KEYS, "one table per winding (or [winding])"),
    "materials": table({"core": MATERIAL,
                        "core_loss": table(CORE_LOSS_KEYS, "the core's loss data")},
                       "core (and a part's own material)", extra=MATERIAL),
    "loss": table(LOSS_KEYS, "the loss budget: core and winding loss, efficiency, temperature "
                             "rise"),
    "hand": table(HAND, "the hand model's switches"),
    "fe": table(FE, "the field model's settings"),
    "margins": table(MARGINS, "design margins and agreement limits"),
    "sweep": oneof(table(SWEEP), tables(SWEEP), doc="the sweeps magcheck verify runs"),
    "tolerances": tables(TOLERANCE, "the tolerances of a Monte Carlo study"),
    "targets": tables(TARGETS, "stored target solves that magcheck verify runs"),
    "measured": tables(MEASURED, "measurements of the built part (a value or a CSV curve)"),
    "conducting_parts": table({}, "solid conducting core parts for the AC field model: "
                                    "core or a part name = its resistivity (\"0.1 uohm*m\")",
                              extra=quantity("resistivity", "the part's resistivity")),
    "motion": table(MOTION_KEYS, "a moving part's load, mass and coil drive: pull-in, "
                                 "drop-out, operate and release"),
}
"""The top-level tables every case may have (a family adds its ``table_specs``)."""

ROOT = table(ROOT_KEYS, "a case file")
"""The case file's root table."""


def child(spec: Key | None, name: str, kind: str) -> Key | None:
    """The table (a :class:`Key` of kind "table") that ``name`` in the table
    ``spec`` holds in its ``kind`` form ("table", or "tables" for each item);
    None when nothing is declared."""
    if spec is None:
        return None
    key = (spec.keys or {}).get(name, spec.extra)
    if key is None:
        return None
    for k in (key, *key.forms):
        if k.kind == kind:
            return k if kind == "table" else Key("table", k.doc, keys=k.keys)
    return None


def check_read(spec: Key | None, path: str, name: str, kind: str = "",
               dimension: str = "") -> None:
    """Raise :class:`UndeclaredKey` when a table with declared keys is asked
    for an undeclared key, or reads it as another kind (``kind`` "" for a
    raw read, which takes any form)."""
    if spec is None or spec.keys is None:
        return
    key = spec.keys.get(name, spec.extra)
    where = f"{path}.{name}" if path else name
    if key is None:
        raise UndeclaredKey(f"{where} is read but not declared in compare.design.casekeys "
                            "(or its family's core_spec / table_specs)")
    if not kind:
        return
    for k in (key, *key.forms):
        if k.kind == kind and (not dimension or k.dimension in ("", dimension)):
            return
        if kind == "quantity" and dimension == "dimensionless" and k.kind == "number":
            return
    raise UndeclaredKey(f"{where} is read as {kind} {dimension}".rstrip()
                        + f" but declared as {key.kind} {key.dimension}".rstrip())
