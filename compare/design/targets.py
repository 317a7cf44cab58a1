"""The target grammar of ``magcheck target`` and ``[[targets]]``: a design key's
bracket ``KEY=LO:HI`` and targets ``QUANTITY OP VALUE[@AT]`` in the terms of
the check's margins (compare.studies.target solves them; this module only
reads them, so that the case reader can validate a stored target).

Quantities and what ``@AT`` means: ``inductance`` and
``incremental_inductance`` at a current (default the case's),
``saturation_current`` at a drop in percent (default 20 %), ``force`` at a
stroke (default the case's), ``peak_B`` at a current (default the case's).
OP: ``>=`` (at least), ``<=`` (at most), ``=`` (exactly).
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import Any

from ..errors import CaseError
from .keys import _items, _to_si, key_dimension
from .units import SI_UNIT, UnitError

__all__ = ["Quantity", "QUANTITIES", "DEFAULT_DROP", "Target", "parse_target", "KeyBracket",
           "parse_bracket"]


@dataclass(frozen=True)
class Quantity:
    """One target quantity: its dimension, unit and what ``@AT`` means."""

    name: str
    dimension: str
    at: str  # "current", "drop", "stroke"
    label: str


QUANTITIES: dict[str, Quantity] = {
    "inductance": Quantity("inductance", "inductance", "current", "inductance (secant)"),
    "incremental_inductance": Quantity("incremental_inductance", "inductance", "current",
                                       "incremental inductance"),
    "saturation_current": Quantity("saturation_current", "current", "drop",
                                   "saturation current (incremental L)"),
    "force": Quantity("force", "force", "stroke", "force on the moving part"),
    "peak_B": Quantity("peak_B", "flux density", "current", "peak core B"),
}
"""The target quantities (names of the check's rows and margins)."""

DEFAULT_DROP = 0.20
"""A saturation-current target without ``@DROP%``: the inductance fallen by 20 %."""

_TARGET_RE = re.compile(r"^\s*([A-Za-z_]+)\s*(>=|<=|=)\s*([^@]+?)\s*(?:@\s*(.*?))?\s*$")


@dataclass(frozen=True)
class Target:
    """One target: ``quantity op value`` at ``at`` (SI; None = the case's own).

    op : ``">="`` (at least), ``"<="`` (at most) or ``"="`` (exactly).
    at : current (A), drop (fraction) or stroke (m), per :data:`QUANTITIES`.
    """

    text: str
    quantity: str
    op: str
    value: float
    at: float | None = None

    @property
    def unit(self) -> str:
        return SI_UNIT[QUANTITIES[self.quantity].dimension]

    def met(self, q: float) -> bool:
        """Whether the value ``q`` meets the target (``=`` never: a point)."""
        return (self.op == ">=" and q >= self.value) or (self.op == "<=" and q <= self.value)

    def label(self) -> str:
        return self.text.strip()


def parse_target(text: str, *, where: str = "--target") -> Target:
    """Read ``QUANTITY OP VALUE[@AT]`` (module doc) into a :class:`Target`.

    Raises
    ------
    CaseError
        Naming ``where`` and the text, with what is wrong.
    """
    m = _TARGET_RE.match(text or "")
    if not m:
        raise CaseError(where, text, "write QUANTITY OP VALUE[@AT] with OP >=, <= or =, e.g. "
                                     "inductance>=3.2mH@6A or saturation_current>=8A@20%")
    name, op, value_text, at_text = m.groups()
    if name not in QUANTITIES:
        import difflib

        close = difflib.get_close_matches(name, QUANTITIES, n=1)
        hint = f"; did you mean '{close[0]}'?" if close else ""
        raise CaseError(where, text, f"unknown quantity '{name}' (known: "
                                     f"{', '.join(QUANTITIES)}){hint}")
    qty = QUANTITIES[name]
    try:
        value = _quantity(value_text, qty.dimension)
    except (UnitError, ValueError) as exc:
        raise CaseError(where, text, f"value: {exc}") from None
    at: float | None = None
    if at_text is not None:
        try:
            if qty.at == "drop":
                t = at_text.strip()
                if not t.endswith("%"):
                    raise ValueError("a drop is written in percent, e.g. @20%")
                at = float(t[:-1]) / 100.0
                if not 0.0 < at < 1.0:
                    raise ValueError("a drop must lie between 0 and 100 %")
            else:
                at = _quantity(at_text, "length" if qty.at == "stroke" else "current")
        except (UnitError, ValueError) as exc:
            raise CaseError(where, text, f"@{at_text}: {exc}") from None
    if qty.at == "drop" and at is None:
        at = DEFAULT_DROP
    if name in ("saturation_current", "peak_B", "force") and value < 0 and name != "force":
        raise CaseError(where, text, "the value must not be negative")
    return Target(text, name, op, value, at)


def _quantity(text: str, dim: str) -> float:
    """One number with an optional unit, in SI (``3.2mH`` -> 0.0032)."""
    items = _items(text)
    if len(items) != 1:
        raise ValueError(f"one value, not '{text.strip()}'")
    return float(_to_si(items, dim)[0])


@dataclass(frozen=True)
class KeyBracket:
    """The key to solve and its bracket (SI; integers for an integer key)."""

    spec: str
    key: str
    lo: float
    hi: float
    dimension: str

    @property
    def integer(self) -> bool:
        return self.dimension == "integer"


def parse_bracket(spec: str, *, family: Any = None, where: str = "--key") -> KeyBracket:
    """Read ``KEY=LO:HI`` (``gaps[0].length=0.3mm:1.2mm``, ``winding.turns=60:120``).

    A unit written on one end applies to the other; plain numbers are SI.

    Raises
    ------
    CaseError
        Naming ``where`` and the spec: unreadable, a key that cannot vary,
        LO not below HI, a fractional end of an integer key.
    """
    key, sep, rhs = (spec or "").partition("=")
    key, rhs = key.strip(), rhs.strip()
    if not sep or not key or not rhs or rhs.count(":") != 1:
        raise CaseError(where, spec, "write KEY=LO:HI, e.g. gaps[0].length=0.3mm:1.2mm or "
                                     "winding.turns=60:120")
    try:
        dim = key_dimension(key, family)
    except CaseError as exc:
        raise CaseError(where, spec, f"key '{key}' {exc.reason}") from None
    a, b = rhs.split(":")
    try:
        lo, hi = _to_si(_items(a) + _items(b), dim)
    except (UnitError, ValueError) as exc:
        raise CaseError(where, spec, str(exc)) from None
    if not lo < hi:
        raise CaseError(where, spec, "the bracket's low end must be below its high end")
    if dim == "integer" and hi - lo < 1:
        raise CaseError(where, spec, "an integer key's bracket needs two values")
    return KeyBracket(spec, key, float(lo), float(hi), dim)


