"""The case-key grammar and ``KEY=SPEC`` parsing, shared by case files, sweeps and tolerances.

A key names one value of a case file: ``gaps[0].length``, ``winding.current``,
``materials.core.scale_H``. A spec gives its values: a range
``start:stop:count`` (``winding.current=0:20A:41``), evenly spaced, or
``start:stop:count:log`` (``winding.ac.frequency=10kHz:1MHz:9:log``), in
geometric progression (both ends > 0), or a list ``v1,v2,...``
(``gaps[0].length=0.5mm,0.8mm,1.2mm``); a unit written on one item applies to
the items written without one, plain numbers are SI.

This module sits below ``case`` and ``sweep`` (both import it; it imports
neither), so the case loader can validate ``[sweep]`` and ``[[tolerances]]``
without importing the sweep machinery.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from typing import Any, Sequence

import numpy as np

from ..errors import CaseError
from .units import SI_UNIT, UnitError, parse_quantity

__all__ = ["CURRENT_KEY", "SCALE_KEYS", "VarySpec", "parse_key", "key_dimension", "display_unit", "parse_vary",
           "resolve_vary", "set_key", "winding_alias"]

CURRENT_KEY = "winding.current"
SCALE_KEYS = ("materials.core.scale_H", "materials.core.scale_B")

_KEY_RE = re.compile(r"^([A-Za-z_][A-Za-z0-9_]*)(?:\[(\d+)\])?$")
_ITEM_RE = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*$")


# --------------------------------------------------------------------------- keys
def parse_key(key: str) -> tuple[str | int, ...]:
    """``"gaps[0].length"`` -> ``("gaps", 0, "length")``.

    Raises
    ------
    CaseError
        When the key path cannot be read.
    """
    out: list[str | int] = []
    if not key:
        raise CaseError("key", key, "empty key path")
    for part in key.split("."):
        m = _KEY_RE.match(part)
        if not m:
            raise CaseError("key", key, f"cannot read key path part '{part}' "
                                        "(write e.g. gaps[0].length)")
        out.append(m.group(1))
        if m.group(2) is not None:
            out.append(int(m.group(2)))
    return tuple(out)


_NAMES = {
    "gaps": ("length", "position"),
    "winding": ("current", "turns", "thickness", "length", "fill", "clearance", "voltage",
                "frequency"),
    "windings": ("current", "turns", "thickness", "length", "fill", "clearance", "voltage",
                 "frequency"),
}
"""The variable keys of the tables every case has; ``[core]``'s come from its family."""


def key_dimension(key: str, family: Any = None) -> str:
    """The dimension (compare.design.units) of a variable case key, or ``"integer"``.

    Only design keys may vary: [core] dimensions (the family's ``core_keys``;
    without a family, those of every known family), [[gaps]] length and
    position, [winding] current, turns, thickness, length, fill and clearance (and a
    voltage-driven winding's voltage and frequency), and the
    core material (``materials.core.mu_r``, ``scale_H``, ``scale_B``).
    """
    import difflib

    from .families import core_keys

    parts = [p for p in parse_key(key) if isinstance(p, str)]
    top, last = parts[0], parts[-1]
    if key in SCALE_KEYS or key == "materials.core.mu_r":
        return "dimensionless"
    names = dict(_NAMES, core=tuple(family.core_keys) if family is not None else core_keys())
    if top not in names:
        raise CaseError("key", key, "cannot vary: only keys of [core], [[gaps]], [winding], "
                                    "materials.core.mu_r and materials.core.scale_H/scale_B can")
    if last not in names[top]:
        close = difflib.get_close_matches(last, names[top], n=1)
        hint = f"; did you mean '{close[0]}'?" if close else ""
        raise CaseError("key", key, f"is not a numeric key of [{top}] that can vary "
                                    f"(known: {', '.join(names[top])}){hint}")
    if last == "current":
        return "current"
    if last in ("voltage", "frequency"):  # a voltage-driven winding's drive (rms V, Hz)
        return last
    if last == "turns":
        return "integer"
    if last == "fill":
        return "dimensionless"
    return "length"


def winding_alias(data: dict, path: tuple[str | int, ...]) -> tuple[str | int, ...]:
    """The first winding's keys work in either form of the file:
    ``winding.X`` on a ``[[windings]]`` file is ``windings[0].X``, and
    ``windings[0].X`` on a ``[winding]`` file is ``winding.X``."""
    if path[:1] == ("winding",) and "winding" not in data and "windings" in data:
        return ("windings", 0, *path[1:])
    if path[:2] == ("windings", 0) and "windings" not in data and "winding" in data:
        return ("winding", *path[2:])
    return path


def key_text(path: Sequence[str | int]) -> str:
    """A key path as the case file's messages write it: ``gaps[3].length``."""
    out = ""
    for part in path:
        out += f"[{part}]" if isinstance(part, int) else (f".{part}" if out else str(part))
    return out


def set_key(data: dict, path: tuple[str | int, ...], value: Any, key: str, *,
            create_tables: bool = False) -> None:
    """Set ``path`` in a case file's parsed tables to ``value``; a CaseError
    naming ``key`` when the path is not in the file (``create_tables``:
    missing tables are created, list entries never) or names a table."""
    path = winding_alias(data, path)
    node: Any = data
    for i, part in enumerate(path[:-1]):
        if (create_tables and isinstance(node, dict) and isinstance(part, str)
                and part not in node and not isinstance(path[i + 1], int)):
            node[part] = {}
        try:
            node = node[part]
        except (KeyError, IndexError, TypeError):
            raise CaseError("key", key, f"'{key_text(path[:i + 1])}' is not in the "
                                        "case file") from None
    last = path[-1]
    if isinstance(node, list):
        if not isinstance(last, int) or last >= len(node):
            raise CaseError("key", key, "index out of range in the case file")
        node[last] = value
        return
    if not isinstance(node, dict) or isinstance(last, int):
        parent = key_text(path[:-1])
        if path[0] == "materials" and len(path) == 3 and isinstance(node, str):
            # a part's material given by a built-in curve's name: no keys to set
            scale = (" (or set materials.core.scale_H / scale_B, which scale that curve)"
                     if parent == "materials.core" else "")
            raise CaseError("key", key, f"{parent} is the built-in '{node}', which has no "
                                        f"{last}: give {parent} = {{{last} = ...}} in the "
                                        f"case file, then set {key}{scale}")
        raise CaseError("key", key, f"{parent} is {node!r} in the case file, not a table")
    curve = [k for k in ("csv", "H", "B") if k in node]
    if path[0] == "materials" and len(path) == 3 and last == "mu_r" and curve:
        parent = key_text(path[:-1])  # a B-H curve given as a table: a linear mu_r replaces it
        scale = (" (or set materials.core.scale_H / scale_B, which scale that curve)"
                 if parent == "materials.core" else "")
        raise CaseError("key", key, f"{parent} is a B-H curve ({', '.join(curve)}), which has "
                                    f"no mu_r: give {parent} = {{mu_r = ...}} in the case "
                                    f"file, then set {key}{scale}")
    if isinstance(node.get(last), dict):
        raise CaseError("key", key, f"is a table; vary one of its keys "
                                    f"({', '.join(sorted(node[last]))})")
    node[last] = value


# --------------------------------------------------------------------------- specs
@dataclass(frozen=True)
class VarySpec:
    """One ``KEY=SPEC`` as written: the key and its values in SI."""

    spec: str
    key: str
    values: tuple[float, ...]


def _vary_error(spec: str, where: str, reason: str) -> CaseError:
    return CaseError(where, spec, reason)


def display_unit(key: str) -> tuple[float, str]:
    """How a swept key's SI values are shown: (factor, unit) with lengths
    (strokes, gaps) in mm and the rest in their SI unit; (1, "") for a count,
    a plain number or a key without a dimension here."""
    try:
        dim = key_dimension(key)
    except CaseError:
        return 1.0, ""
    if dim == "length":
        return 1e3, "mm"
    return 1.0, "" if dim == "integer" else SI_UNIT.get(dim, "")


def parse_vary(spec: str, *, where: str = "--vary", family: Any = None) -> VarySpec:
    """Read ``KEY=SPEC`` into a :class:`VarySpec` (values in SI); ``family``
    (the case's core family) narrows the ``[core]`` keys to its own.

    Raises
    ------
    CaseError
        Naming ``where`` (e.g. ``--vary``) and the whole spec.
    """
    key, sep, rhs = spec.partition("=")
    key, rhs = key.strip(), rhs.strip()
    if not sep or not key or not rhs:
        raise _vary_error(spec, where, "write KEY=SPEC, e.g. winding.current=0:20A:41 or "
                                       "gaps[0].length=0.5mm,0.8mm")
    try:
        dim = key_dimension(key, family)
    except CaseError as exc:
        raise _vary_error(spec, where, f"key '{key}' {exc.reason}") from None
    try:
        values = resolve_vary(rhs, dim)
    except (UnitError, ValueError) as exc:
        raise _vary_error(spec, where, str(exc)) from None
    return VarySpec(spec, key, values)


def _items(text: str) -> list[tuple[str, str]]:
    out = []
    for tok in text.split(","):
        m = _ITEM_RE.match(tok)
        if not m:
            raise ValueError(f"cannot read '{tok.strip()}' as a number with an optional unit")
        out.append((m.group(1), m.group(2)))
    return out


def _to_si(items: list[tuple[str, str]], dim: str) -> list[float]:
    units = {u for _, u in items if u}
    if len(units) > 1 and any(not u for _, u in items):
        raise ValueError(f"items without a unit but several units given ({', '.join(sorted(units))})")
    default = next(iter(units)) if len(units) == 1 else ""
    pdim = "dimensionless" if dim == "integer" else dim
    out = []
    for num, unit in items:
        # a number with no unit anywhere in the spec is SI, as an unquoted number in a case file
        u = unit or default
        v = parse_quantity(f"{num} {u}" if u else float(num), pdim)
        if not math.isfinite(v):
            raise ValueError(f"'{num}' is not finite")
        if dim == "integer":
            if v != int(v):
                raise ValueError(f"'{num}' is not a whole number")
            v = int(v)
        out.append(v)
    return out


def resolve_vary(text: str, dim: str) -> tuple[float, ...]:
    """Values of a range ``a:b:n`` or list ``v1,v2,...`` in SI (see module doc)."""
    if ":" in text:
        parts = text.split(":")
        spacing = "lin"
        if len(parts) == 4:
            spacing = parts.pop().strip().lower()
            if spacing not in ("lin", "log"):
                raise ValueError(f"spacing '{spacing}' must be lin or log "
                                 "(start:stop:count:log)")
        if len(parts) != 3:
            raise ValueError("a range is start:stop:count (or start:stop:count:log)")
        try:
            n = int(parts[2])
        except ValueError:
            raise ValueError(f"count '{parts[2]}' is not a whole number") from None
        if n < 1 or (n == 1 and parts[0] != parts[1]):
            raise ValueError("count must be at least 2 (or 1 when start = stop)")
        if n > 100000:
            raise ValueError(f"count {n} is too large")
        a, b = _to_si(_items(parts[0]) + _items(parts[1]), "dimensionless" if dim == "integer"
                      else dim)
        if spacing == "log":
            if dim == "integer":
                raise ValueError("a whole-number key takes no log range")
            if not (a > 0 and b > 0):
                raise ValueError("a log range needs start and stop > 0")
            vals = np.geomspace(a, b, n).tolist() if n > 1 else [a]
            if n > 1:  # the ends exactly as written
                vals[0], vals[-1] = a, b
        else:
            vals = np.linspace(a, b, n).tolist() if n > 1 else [a]
        if dim == "integer":
            if any(v != round(v) for v in vals):
                raise ValueError("the range does not give whole numbers")
            vals = [int(round(v)) for v in vals]
        return tuple(vals)
    vals = _to_si(_items(text), dim)
    if not vals:
        raise ValueError("no values")
    return tuple(vals)


