"""``[motion]`` and the motion's ``[margins]`` into validated data
(compare.design.actuator.ActuatorSpec); every refusal names its key."""

from __future__ import annotations

import math
from typing import Any

from ..design.actuator import DEFAULT_DIODE_DROP, ActuatorSpec
from ..design.case import Case
from ..design.casekeys import GRAVITY_SENSES, MOTION_MARGINS, SUPPRESSIONS
from ..design.reader import TableReader
from ..design.units import UnitError, parse_quantity
from ..errors import CaseError

__all__ = ["read_motion", "read_motion_margins"]


def read_motion_margins(t: TableReader) -> tuple[tuple[str, float], ...]:
    """The motion's limits of ``[margins]`` (MOTION_MARGINS), SI, as (key, value)."""
    dims = {"pull_in_voltage": "voltage", "drop_out_voltage": "voltage",
            "operate_time": "time", "release_time": "time",
            "release_current": "current"}
    out = []
    for key in MOTION_MARGINS:
        v = t.quantity(key, dims[key], None)
        if v is not None:
            out.append((key, v))
    return tuple(out)


def _spring(t: TableReader, travel: float) -> Any:
    # scipy's integrators load with analytic.motion: only for a case with [motion]
    from magcheck.analytic.motion import MotionError, Spring, series_springs

    engage = t.quantity("engage", "length", 0.0, allow_zero=True)
    preload = t.quantity("preload", "force", 0.0, allow_zero=True)
    solid = t.quantity("solid", "length", None)
    if t.has("rate") == t.has("series"):
        raise CaseError(t.key("rate"), t.raw("rate", None),
                        "give the spring's rate, or series = [rates] for springs in series "
                        "(one of the two)")
    try:
        if t.has("rate"):
            sp = Spring(t.quantity("rate", "stiffness", allow_zero=True), preload, engage, solid)
        else:
            raw = t.raw("series")
            if not isinstance(raw, list) or not raw:
                raise CaseError(t.key("series"), raw, "must be a list of rates, e.g. "
                                                      "[\"2 N/mm\", \"3 N/mm\"]")
            rates = []
            for k, r in enumerate(raw):
                try:
                    rates.append(parse_quantity(r, "stiffness"))
                except UnitError as exc:
                    raise CaseError(f"{t.key('series')}[{k}]", r, str(exc)) from None
                if not math.isfinite(rates[-1]) or rates[-1] <= 0.0:
                    raise CaseError(f"{t.key('series')}[{k}]", r, "must be a positive rate")
            sp = Spring(series_springs(rates).rate, preload, engage, solid)
    except MotionError as exc:
        raise CaseError(t.key("rate"), t.raw("rate", None), str(exc)) from None
    if engage > travel:
        raise CaseError(t.key("engage"), t.raw("engage"),
                        f"beyond the travel ({travel * 1e3:g} mm, open_gap - closed_gap): the "
                        "load line is not defined as intended over the whole travel")
    if solid is not None and solid < travel:
        raise CaseError(t.key("solid"), t.raw("solid"),
                        f"the spring goes solid inside the travel ({travel * 1e3:g} mm): the "
                        "load line is not defined over the whole travel")
    t.finish()
    return sp


def read_motion(t: TableReader, case: Case) -> ActuatorSpec:
    """``[motion]`` of ``case``: the moving part must have a stroke key; the
    open and closed gaps bracket a positive travel; the springs' load line
    defined over all of it; the coil's resistance and rated voltage positive."""
    from magcheck.analytic.motion import MotionError

    from ..design.coremodel import core_model

    force = core_model(case).force
    if force is None or force.stroke_key is None:
        raise CaseError("motion", "[motion]", "the case has no moving part with a stroke key "
                        "(a u-armature, plunger or holding-magnet core)")
    open_gap = t.quantity("open_gap", "length")
    closed_gap = t.quantity("closed_gap", "length")
    if closed_gap >= open_gap:
        raise CaseError(t.key("closed_gap"), t.raw("closed_gap"),
                        f"must be below open_gap ({open_gap * 1e3:g} mm): the travel is "
                        "open_gap - closed_gap")
    travel = open_gap - closed_gap
    mass = t.quantity("mass", "mass", None)  # None: the static limits only
    springs = tuple(_spring(st, travel) for st in t.tables("springs"))
    constant = t.quantity("constant_load", "force", 0.0, positive=False)
    gravity = t.string("gravity", "none", choices=GRAVITY_SENSES)
    if mass is None and gravity != "none":
        raise CaseError(t.key("gravity"), gravity, "the weight along the stroke needs the "
                                                   "moving mass: give mass with it")
    restitution = t.number("restitution", 0.0, lo=0.0, hi=0.99)
    resistance = t.quantity("resistance", "resistance")
    r_temp = t.number("resistance_temperature", 20.0, lo=-60.0, hi=250.0)
    temp = t.number("temperature", 20.0, lo=-60.0, hi=250.0)
    if t.has("voltage_table") and not t.has("voltage"):
        raise CaseError(t.key("voltage"), None, "missing: give the rated voltage with "
                        "voltage_table too (the map's currents, the holding current at "
                        "release and the margins' rated figures take it)")
    voltage = t.quantity("voltage", "voltage")
    table = None
    if t.has("voltage_table"):
        vt = t.table("voltage_table")
        times, volts = vt.raw("time"), vt.raw("voltage")
        vt.finish()
        ok = (isinstance(times, list) and isinstance(volts, list) and len(times) == len(volts)
              and len(times) >= 2
              and all(isinstance(x, (int, float)) and not isinstance(x, bool)
                      and math.isfinite(x) for x in times + volts))
        if not ok or times[0] != 0 or any(b <= a for a, b in zip(times, times[1:])):
            raise CaseError(vt.key("time"), times, "give time (s, rising from 0) and voltage "
                                                   "(V) lists of equal length, at least 2")
        table = (tuple(float(x) for x in times), tuple(float(x) for x in volts))
    suppression = t.string("suppression", "none", choices=SUPPRESSIONS)
    rs = t.quantity("suppression_resistance", "resistance", None, allow_zero=True)
    if (rs is not None) != (suppression == "resistor"):
        raise CaseError(t.key("suppression_resistance"), t.raw("suppression_resistance", None),
                        "give it with suppression = \"resistor\", and only then")
    drop = t.quantity("diode_drop", "voltage", None, allow_zero=True)
    if drop is not None and suppression != "diode":
        raise CaseError(t.key("diode_drop"), t.raw("diode_drop"),
                        "a suppression diode's drop: give suppression = \"diode\" with it")
    n_s = t.integer("map_strokes", 5, minimum=3, maximum=15)
    n_i = t.integer("map_currents", 5, minimum=3, maximum=15)
    t.finish()
    spec = ActuatorSpec(stroke_key=force.stroke_key, open_gap=open_gap, closed_gap=closed_gap,
                        mass=mass, springs=springs, constant_load=constant, gravity=gravity,
                        restitution=restitution, resistance=resistance,
                        resistance_temperature=r_temp, temperature=temp, voltage=voltage,
                        voltage_table=table, suppression=suppression,
                        suppression_resistance=rs or 0.0,
                        diode_drop=DEFAULT_DIODE_DROP if drop is None else drop,
                        map_strokes=n_s, map_currents=n_i)
    try:
        load = spec.load
    except MotionError as exc:
        raise CaseError("motion.springs", None, str(exc)) from None
    if float(load.force(0.0)) <= 0.0:
        raise CaseError("motion.springs", None, "the load at the open stop is not an opening "
                        "force: nothing returns the armature (give a spring's preload or a "
                        "constant_load)")
    return spec


def motion_of(root: TableReader) -> Any:
    """The ``[motion]`` table's reader, or None without one (read before the
    root table is finished; :func:`read_motion` once the case is built)."""
    return root.table("motion") if root.has("motion") else None
