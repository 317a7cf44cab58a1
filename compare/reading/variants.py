"""Varied cases: a case file's document kept to derive cases from it.

A sweep point or a tolerance sample is the case file with some keys set to
other values (:func:`make_case`); it is validated again through
:func:`compare.reading.casefile.case_from_dict`, so a varied value is checked
exactly like case-file input.  Two keys scale the core's B-H curve instead
of setting a value (factor, nominal 1; :func:`analytic.bh.scale_law`):
``materials.core.scale_H`` and ``materials.core.scale_B``.

The cases :func:`case_source`, :func:`case_from_tables` and
:func:`with_values` return carry their :class:`Origin` (the tables they were
validated from, with :func:`with_values` to derive another):
:meth:`compare.design.case.Case.with_values` calls it, since the case model
may not import the reader.  Sweep points and tolerance samples
(:func:`make_case`) need none and carry none.
"""

from __future__ import annotations

import copy
import dataclasses
import hashlib
import re
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Mapping

from magcheck.analytic.bh import BHDataError, scale_law

from ..design.case import Case, MaterialSpec
from .casefile import case_from_dict, metres_hint
from ..errors import CaseError
from ..design.keys import SCALE_KEYS, parse_key, set_key

__all__ = ["CaseSource", "Origin", "case_source", "case_from_tables", "make_case", "with_values",
           "attach_origin", "scale_core_material"]


@dataclass(frozen=True)
class CaseSource:
    """A case file's parsed TOML, kept to derive varied cases from."""

    data: dict = field(repr=False, compare=False)
    base_dir: Path | None
    source: str
    sha256: str
    scales: tuple[tuple[str, float], ...] = ()
    """B-H scale factors (``SCALE_KEYS``, nominal 1) applied on top of the
    tables: a case derived with ``materials.core.scale_H`` keeps its scaled
    curve in the sweeps and samples made from it."""


@dataclass(frozen=True)
class Origin:
    """What a case read here carries (``Case.origin``, the case model's
    ``CaseOrigin``): its tables and the validation that derives new cases."""

    source: CaseSource
    case: Case = field(repr=False, compare=False)
    """The case as validated, without its origin (Case.with_values refuses
    a case that no longer equals it)."""

    def derive(self, values: Mapping[str, Any]) -> Case:
        return with_values(self.source, values)


def attach_origin(case: Case, src: CaseSource) -> Case:
    """``case`` carrying its tables ``src`` (so that ``case.with_values`` works)."""
    bare = dataclasses.replace(case, origin=None)
    return dataclasses.replace(bare, origin=Origin(src, bare))


def case_from_tables(data: dict, base_dir: str | Path | None = None) -> tuple[CaseSource, Case]:
    """A case from parsed TOML tables (a copy is kept; ``base_dir`` resolves
    relative B-H files), validated like a case file, with its origin."""
    data = copy.deepcopy(data)
    bd = Path(base_dir) if base_dir is not None else None
    case = case_from_dict(data, base_dir=bd)
    src = CaseSource(data, bd, "", "")
    return src, attach_origin(case, src)


def case_source(path: str | Path, *, allow_large: bool = False) -> tuple[CaseSource, Case]:
    """Read a case file both as raw TOML (to vary) and validated.

    ``allow_large`` sets ``[fe] allow_large = true`` in both (the
    ``--allow-large`` option); the file's hash stays that of the file.
    """
    from dataclasses import replace

    from .casefile import load_case

    case = load_case(path)  # all errors of a bad file come from here
    path = Path(path)
    raw = path.read_bytes()
    data = tomllib.loads(raw.decode("utf-8"))
    if allow_large:
        fe = data.get("fe")
        data["fe"] = {**(fe if isinstance(fe, dict) else {}), "allow_large": True}
        case = replace(case, fe=replace(case.fe, allow_large=True))
    src = CaseSource(data, path.parent, str(path), hashlib.sha256(raw).hexdigest())
    return src, attach_origin(case, src)


def make_case(src: CaseSource, settings: dict[str, float], *, spec_of: dict[str, str] | None = None) -> Case:
    """The case of ``src`` with ``settings`` (key -> SI value) applied, validated.

    Raises
    ------
    CaseError
        Naming the ``--vary`` spec (when ``spec_of`` maps the key to it) and
        the offending value.
    """
    data = copy.deepcopy(src.data)
    scales = {**dict(src.scales), **{k: v for k, v in settings.items() if k in SCALE_KEYS}}
    for key, value in settings.items():
        if key in SCALE_KEYS:
            continue
        try:
            _check_drive_key(data, key)
            set_key(data, parse_key(key), value, key)
        except CaseError as exc:
            where = spec_of.get(key, key) if spec_of else key
            raise CaseError(where, None, exc.reason) from None
    try:
        case = case_from_dict(data, base_dir=src.base_dir, source=src.source, sha256=src.sha256)
    except CaseError as exc:
        if spec_of:
            point = ", ".join(f"{k} = {_shown(k, v)}" for k, v in settings.items())
            shown: object = exc.value
            if exc.key in settings and isinstance(exc.value, float):  # the swept value
                shown = _shown(exc.key, exc.value)
            reason = exc.reason
            if exc.key in settings and not _bare_spec(spec_of.get(exc.key, "")):
                reason = reason.replace(metres_hint(exc.value), "")  # the spec has units
            raise CaseError(exc.key, shown, f"{reason} (at the point {point})") from None
        raise
    for k, v in scales.items():
        if v <= 0:
            where = spec_of.get(k, k) if spec_of else k
            raise CaseError(where, v, "a B-H scale factor must be positive")
    if scales:
        case = scale_core_material(case, scales.get(SCALE_KEYS[0], 1.0),
                                   scales.get(SCALE_KEYS[1], 1.0))
    return case


def with_values(src: CaseSource, values: Mapping[str, Any]) -> Case:
    """The case of ``src`` with case-file keys set to ``values`` (what the
    file would hold: a string with a unit or an SI number), validated like
    the case file; it carries its own origin, so it derives further cases.

    The keys follow the ``--vary`` grammar (``gaps[0].length``,
    ``winding.current``, ``materials.core.scale_H``); any key of the file may
    be set, a missing table is created (``fe.mesh_size`` without ``[fe]``),
    a missing list entry is not.  The derived case keeps the file's path
    (relative B-H files) but not its sha256: it is not the file's content.

    Raises
    ------
    CaseError
        Naming the key and the value.
    """
    data = copy.deepcopy(src.data)
    scales = dict(src.scales)
    for key, value in values.items():
        if not isinstance(key, str):
            raise CaseError("with_values", key, "a key is a string such as 'gaps[0].length'")
        value = _plain(value)
        try:
            path = parse_key(key)
            if key in SCALE_KEYS:
                scales[key] = _scale_factor(value)
                continue
            _check_drive_key(data, key)
            set_key(data, path, value, key, create_tables=True)
        except CaseError as exc:
            raise CaseError(key, value, exc.reason) from None
    try:
        case = case_from_dict(data, base_dir=src.base_dir, source=src.source, sha256="")
    except CaseError as exc:
        hinted = _bare_length_hint(exc, values, _family_of(data))
        if hinted is None:
            raise
        raise hinted from None
    for k, v in scales.items():
        if v <= 0:
            raise CaseError(k, v, "a B-H scale factor must be positive")
    if scales:
        case = scale_core_material(case, scales.get(SCALE_KEYS[0], 1.0),
                                   scales.get(SCALE_KEYS[1], 1.0))
    new = CaseSource(data, src.base_dir, src.source, "", tuple(scales.items()))
    return attach_origin(case, new)


def _bare_length_hint(exc: CaseError, values: Mapping[str, Any],
                      family: Any) -> CaseError | None:
    """``exc`` with the bare-number-is-metres hint when it names a length key
    that ``values`` set to a bare number (None: nothing to add)."""
    from ..design.keys import key_dimension

    raw = _plain(values.get(exc.key))
    if not metres_hint(raw) or "a bare number is metres" in exc.reason:
        return None
    try:
        if key_dimension(exc.key, family) != "length":
            return None
    except CaseError:
        return None
    return CaseError(exc.key, exc.value, exc.reason + metres_hint(raw))


def _bare_spec(spec: str) -> bool:
    """Whether a ``KEY=SPEC`` writes its values as bare numbers (SI), no unit."""
    rhs = spec.partition("=")[2]
    return not re.search(r"[^\d\s.,:+eE-]", rhs)


def _family_of(data: dict) -> Any:
    """The core family a case document names (None when it names none known)."""
    from ..design.families import get_family

    try:
        return get_family(str(data.get("case", {}).get("family")))
    except (CaseError, AttributeError):
        return None


def _plain(value: Any) -> Any:
    """A numpy scalar as the Python number TOML would give."""
    if hasattr(value, "item") and callable(value.item) and not isinstance(value, (str, bytes)):
        try:
            return value.item()
        except (TypeError, ValueError):
            return value
    return value


def _scale_factor(value: Any) -> float:
    from ..design.units import UnitError, parse_quantity

    if isinstance(value, bool) or not isinstance(value, (int, float, str)):
        raise CaseError("key", value, "a B-H scale factor is a number, e.g. 1.1")
    try:
        v = parse_quantity(value, "dimensionless") if isinstance(value, str) else float(value)
    except (UnitError, ValueError) as exc:
        raise CaseError("key", value, str(exc)) from None
    if not v > 0 or v == float("inf"):
        raise CaseError("key", value, "a B-H scale factor must be positive and finite")
    return float(v)


def _check_drive_key(data: dict, key: str) -> None:
    """A winding's voltage or frequency varies only on a voltage-driven winding."""
    from ..design.keys import winding_alias

    path = winding_alias(data, parse_key(key))
    if path[-1] not in ("voltage", "frequency") or path[0] not in ("winding", "windings"):
        return
    if "ac" in path[:-1]:  # an AC winding's frequency ([winding.ac]): a key of its own
        return
    node: Any = data
    for part in path[:-1]:
        try:
            node = node[part]
        except (KeyError, IndexError, TypeError):
            return  # set_key names what is missing
    if isinstance(node, dict) and "voltage" not in node:
        raise CaseError("key", key, "this winding is driven by its current: vary its current, "
                                    "or give it voltage and frequency in the case file")


def _shown(key: str, value: float) -> str:
    """A swept SI value in the unit the sweep's tables show it in (lengths in mm)."""
    from ..design.keys import display_unit

    factor, unit = display_unit(key)
    return f"{value * factor:g} {unit}".rstrip()


def scale_core_material(case: Case, k_h: float = 1.0, k_b: float = 1.0) -> Case:
    """The case with its core material's B-H curve scaled, H by ``k_h`` and
    B by ``k_b`` (analytic.bh.scale_law; the parts with a material of their
    own keep theirs).

    Raises
    ------
    CaseError
        Naming ``materials.core.scale_H`` when the scaled curve is not valid.
    """
    spec = case.material("core")
    try:
        law = scale_law(spec.law, k_h, k_b)
    except BHDataError as exc:
        raise CaseError(SCALE_KEYS[0], {"scale_H": k_h, "scale_B": k_b}, str(exc)) from None
    new = MaterialSpec(spec.region, spec.kind, f"{spec.description}, scaled", law)
    return dataclasses.replace(case, materials=tuple(
        new if m.region == "core" else m for m in case.materials))
