"""A JSON Schema of case files, made from the reader's own key declarations.

:func:`case_schema` turns :mod:`compare.design.casekeys` (every table's
keys and kinds) and the built-in families' ``core_spec`` and
``table_specs`` into a JSON Schema (draft 2020-12) of the TOML document as
``tomllib`` parses it.  ``tools/make_schema.py`` writes it to
``docs/case.schema.json`` (``--check``: compare), and
tests/test_schema.py holds the committed file to this function and every
bundled case to the schema.

What it states: the tables and keys (an unknown key or a misspelt table
is refused), each value's type (a quantity is a number in SI units or a
string with a unit of the key's dimension, ``"0.6 mm"``, matched by a
pattern made from the reader's units table,
:func:`compare.design.units.quantity_pattern`, kept once per dimension in
``$defs``; a plain number may be written as a string too, as the reader
takes it), the choices of a string, each built-in family's ``[core]``
keys (and the drawn family's own tables), and which families take no
``[[gaps]]`` (a family's ``no_gaps``, which the reader refuses them by).
What it leaves to the reader: which keys are required, ranges, and checks
across keys; a plug-in family's ``[core]`` is any table.
"""

from __future__ import annotations

from typing import Any

from .casekeys import ROOT_KEYS, Key, table
from .families import BUILTIN
from .units import DIMENSIONS, SI_UNIT, quantity_pattern

__all__ = ["SCHEMA_DIALECT", "SCHEMA_PATH", "DRAWN_COIL_KEYS", "case_schema", "key_schema",
           "quantity_defs"]

SCHEMA_DIALECT = "https://json-schema.org/draft/2020-12/schema"
SCHEMA_PATH = "docs/case.schema.json"
"""Where the schema is kept, relative to the repository root."""


def key_schema(k: Key) -> dict[str, Any]:
    """The JSON Schema of one declared key."""
    out: dict[str, Any]
    if k.kind == "quantity":
        out = {"$ref": f"#/$defs/{_quantity_def(k.dimension)}"}
        if k.dimension:
            unit = SI_UNIT[k.dimension] or "1"
            note = f"{k.dimension}: a number in {unit}, or a string with a unit"
        else:
            note = "a number, or a string with a unit or in percent"
        out["description"] = f"{k.doc} ({note})" if k.doc else note
        return out
    if k.kind == "number":
        out = {"$ref": f"#/$defs/{_quantity_def('dimensionless')}"}
    elif k.kind == "integer":
        out = {"type": "integer"}
    elif k.kind == "string":
        out = {"type": "string"}
        if k.choices:
            out["enum"] = list(k.choices)
    elif k.kind == "boolean":
        out = {"type": "boolean"}
    elif k.kind == "table":
        out = _table(k)
    elif k.kind == "tables":
        out = {"type": "array", "items": _table(table(k.keys))}
    elif k.kind == "list":
        out = {"type": "array"}
        if k.items is not None:
            out["items"] = key_schema(k.items)
    elif k.kind == "any":
        out = {"anyOf": [key_schema(f) for f in k.forms]}
    else:  # pragma: no cover - casekeys has no other kind
        raise ValueError(f"unknown key kind {k.kind!r}")
    if k.doc:
        out["description"] = k.doc
    return out


def _quantity_def(dimension: str) -> str:
    """The name in ``$defs`` of the quantities of a dimension ("" any unit or percent)."""
    return f"quantity-{dimension or 'any'}".replace(" ", "-")


def quantity_defs() -> dict[str, Any]:
    """The ``$defs`` entries a quantity's ``$ref`` names: per dimension, a number
    (SI) or a string matching the reader's units of that dimension."""
    out: dict[str, Any] = {}
    for dim in ("", *DIMENSIONS):
        if not dim:
            what = "a number, or a string with a unit or in percent (\"5 %\")"
        elif dim == "dimensionless":
            what = "a plain number (a string holding one is read too)"
        else:
            unit = SI_UNIT.get(dim) or "SI units"
            what = f"a {dim}: a number in {unit}, or a string with a unit of that dimension"
        out[_quantity_def(dim)] = {"type": ["number", "string"],
                                   "pattern": quantity_pattern(dim), "description": what}
    return out


def _table(k: Key) -> dict[str, Any]:
    out: dict[str, Any] = {"type": "object"}
    if k.keys is None:
        return out
    out["properties"] = {name: key_schema(v) for name, v in k.keys.items()}
    out["additionalProperties"] = key_schema(k.extra) if k.extra is not None else False
    return out


DRAWN_COIL_KEYS = ("limb", "thickness", "length", "fill", "clearance")
"""A winding's keys that a family drawing its own coils (no ``winding_limbs``) refuses."""


def _family_rules(fam: Any) -> dict[str, Any]:
    """What a family narrows: the limbs a gap or a winding names, the
    [materials] parts (when they do not depend on the case)."""
    out: dict[str, Any] = {}
    out["gaps"] = ({"items": {"properties": {"limb": {"enum": list(fam.limb_names)}}}}
                   if fam.limb_names and not getattr(fam, "no_gaps", "") else False)
    winding: dict[str, Any]
    if fam.winding_limbs:
        winding = {"properties": {"limb": {"enum": list(fam.winding_limbs)}}}
    else:  # the family draws the coils: a winding is its name, turns and drive
        winding = {"properties": {k: False for k in DRAWN_COIL_KEYS}}
    out["winding"] = winding
    out["windings"] = {"items": winding}
    if not hasattr(fam, "part_names"):  # parts fixed by the family
        out["materials"] = {"propertyNames": {"enum": ["core", "core_loss", *fam.parts]}}
    return out


def case_schema() -> dict[str, Any]:
    """The JSON Schema (a dict) of a case file, for the built-in families."""
    from .casekeys import CORE_COMMON

    own_tables: dict[str, Key] = {}
    owners: dict[str, list[str]] = {}
    for fam in BUILTIN:
        for name, spec in (getattr(fam, "table_specs", None) or {}).items():
            own_tables.setdefault(name, spec)
            owners.setdefault(name, []).append(fam.name)
    root = _table(table({**ROOT_KEYS, **own_tables}))
    root["properties"]["case"]["properties"]["family"]["examples"] = [f.name for f in BUILTIN]
    root["properties"]["case"]["required"] = ["family"]
    root["required"] = ["case", "core", "materials"]
    defs: dict[str, Any] = quantity_defs()
    rules = []
    for fam in BUILTIN:
        spec = getattr(fam, "core_spec", None)
        if spec is None:  # pragma: no cover - every built-in family declares one
            continue
        defs[f"core-{fam.name}"] = _table(table({**CORE_COMMON, **spec},
                                                f"[core] of a {fam.name} case"))
        then: dict[str, Any] = {"properties": {"core": {"$ref": f"#/$defs/core-{fam.name}"}}}
        for name, who in owners.items():
            if fam.name not in who:  # another family's table: not read for this one
                then["properties"][name] = False
        then["properties"].update(_family_rules(fam))
        rules.append({"if": {"properties": {"case": {"properties": {
            "family": {"const": fam.name}}, "required": ["family"]}}, "required": ["case"]},
            "then": then})
    return {"$schema": SCHEMA_DIALECT,
            "title": "magcheck case file",
            "description": "A magcheck case (TOML), as its reader takes it: generated from "
                           "compare/design/casekeys.py and the families' key declarations by "
                           "tools/make_schema.py; do not edit. Values with units are numbers "
                           "in SI units or strings with a unit of their dimension (\"0.6 mm\").",
            **root, "allOf": rules, "$defs": defs}
