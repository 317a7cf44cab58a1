"""A checked view of one TOML table: typed getters that know their key path.

Every getter raises :class:`~compare.errors.CaseError` naming the full key
path and the value; :meth:`TableReader.finish` rejects keys nobody asked for,
with a did-you-mean suggestion.
"""

from __future__ import annotations

import difflib
import math
from typing import Any

from ..errors import CaseError
from .casekeys import Key, check_read, child
from .units import UnitError, parse_quantity

__all__ = ["TableReader", "MISSING"]


class _Missing:
    def __repr__(self) -> str:  # pragma: no cover - debugging aid
        return "MISSING"


MISSING: Any = _Missing()


class TableReader:
    """Read keys of one TOML table, tracking which were used.

    Parameters
    ----------
    data : dict
        The parsed table.
    path : str
        Its key path in the file ("" for the root, "core", "gaps[1]").
    spec : compare.design.casekeys.Key, optional
        The table's declared keys: a getter asking for an undeclared key, or
        reading one as another kind, raises ``casekeys.UndeclaredKey`` (a
        bug, so that the JSON Schema made from the declarations cannot drift
        from what is read).  The tables a reader hands out (``table``,
        ``tables``) take their part of it.
    """

    def __init__(self, data: object, path: str, *, known: tuple[str, ...] = (),
                 spec: Key | None = None):
        if not isinstance(data, dict):
            raise CaseError(path or "<root>", data, "must be a table")
        self.data: dict[str, Any] = data
        self.path = path
        self._used: set[str] = set()
        # keys this table may hold: a missing key is never taken for a
        # misspelling of one of them ([margins] given, [materials] missing)
        self._known = frozenset(known)
        self.spec = spec

    # -- helpers -----------------------------------------------------------
    def key(self, name: str) -> str:
        """Full key path of ``name`` in this table."""
        return f"{self.path}.{name}" if self.path else name

    def has(self, name: str) -> bool:
        check_read(self.spec, self.path, name)
        return name in self.data

    def _raw(self, name: str, default: Any, kind: str = "", dimension: str = "") -> Any:
        check_read(self.spec, self.path, name, kind, dimension)
        self._used.add(name)
        if name in self.data:
            return self.data[name]
        if default is MISSING:
            # a key in the table that nobody asked for and that is close to
            # this one is most likely it, misspelt
            strays = [k for k in self.data if k not in self._used and k not in self._known]
            close = difflib.get_close_matches(name, strays, n=1, cutoff=0.6)
            hint = (f" ('{self.key(close[0])}' is given: a misspelling of '{name}'?)" if close
                    else "")
            raise CaseError(self.key(name), None, "missing key" + hint)
        return default

    # -- typed getters -----------------------------------------------------
    def quantity(
        self,
        name: str,
        dimension: str,
        default: Any = MISSING,
        *,
        positive: bool = True,
        allow_zero: bool = False,
    ) -> float:
        """A finite SI quantity of the given dimension (see compare.design.units)."""
        raw = self._raw(name, default, "quantity", dimension)
        if raw is default and default is not MISSING:
            return default
        try:
            value = parse_quantity(raw, dimension)
        except UnitError as exc:
            raise CaseError(self.key(name), raw, str(exc)) from None
        if not math.isfinite(value):
            raise CaseError(self.key(name), raw, "must be a finite number")
        if positive and (value < 0.0 or (value == 0.0 and not allow_zero)):
            raise CaseError(self.key(name), raw,
                            "must not be negative" if allow_zero else "must be positive")
        return value

    def integer(self, name: str, default: Any = MISSING, *, minimum: int | None = None,
                maximum: int | None = None, why: str = "") -> int:
        raw = self._raw(name, default, "integer")
        if raw is default and default is not MISSING:
            return default
        if isinstance(raw, bool) or not isinstance(raw, (int, float)):
            raise CaseError(self.key(name), raw, "must be a whole number")
        if isinstance(raw, float):
            if not math.isfinite(raw) or raw != int(raw):
                raise CaseError(self.key(name), raw, "must be a whole number")
            raw = int(raw)
        if minimum is not None and raw < minimum:
            raise CaseError(self.key(name), raw, f"must be at least {minimum}")
        if maximum is not None and raw > maximum:
            raise CaseError(self.key(name), self.data.get(name, raw),
                            f"must be at most {maximum:,}{why}")
        return raw

    def number(self, name: str, default: Any = MISSING, *, lo: float | None = None,
               hi: float | None = None) -> float:
        """A finite plain number, optionally within [lo, hi]."""
        return self.quantity_bounded(name, "dimensionless", default, lo=lo, hi=hi)

    def quantity_bounded(self, name: str, dimension: str, default: Any = MISSING, *,
                         lo: float | None = None, hi: float | None = None) -> float:
        raw = self.data.get(name, default)
        value = self.quantity(name, dimension, default, positive=False)
        if value is None:  # absent, with default None
            return value
        if (lo is not None and value < lo) or (hi is not None and value > hi):
            span = f"[{lo if lo is not None else '-inf'}, {hi if hi is not None else 'inf'}]"
            raise CaseError(self.key(name), raw, f"must lie in {span}")
        return value

    def string(self, name: str, default: Any = MISSING, *, choices: tuple[str, ...] | None = None) -> str:
        raw = self._raw(name, default, "string")
        if raw is default and default is not MISSING:
            return default
        if not isinstance(raw, str):
            raise CaseError(self.key(name), raw, "must be a string")
        if choices is not None and raw not in choices:
            raise CaseError(self.key(name), raw, _choice_text(raw, choices))
        return raw

    def table(self, name: str, default: Any = MISSING) -> "TableReader":
        raw = self._raw(name, default, "table")
        if raw is default and default is not MISSING:
            raw = {}
        return TableReader(raw, self.key(name), spec=child(self.spec, name, "table"))

    def tables(self, name: str) -> list["TableReader"]:
        """An array of tables (``[[name]]``); absent means empty."""
        raw = self._raw(name, [], "tables")
        if not isinstance(raw, list):
            raise CaseError(self.key(name), raw, "must be an array of tables ([[...]])")
        item = child(self.spec, name, "tables")
        return [TableReader(v, f"{self.key(name)}[{i}]", spec=item) for i, v in enumerate(raw)]

    def sub_spec(self, name: str, kind: str = "table") -> Key | None:
        """The declared keys of the table ``name`` holds (for a reader made
        by hand, e.g. one item of a table-or-array key)."""
        return child(self.spec, name, kind)

    def raw(self, name: str, default: Any = MISSING) -> Any:
        """The unconverted value (for fields with several accepted forms)."""
        return self._raw(name, default)

    def finish(self, valid: tuple[str, ...] | None = None) -> None:
        """Reject keys that no getter asked for.

        ``valid``: the table's full set of keys, for tables whose keys are
        optional (e.g. ``[margins] agreement``); the error then lists all of
        them instead of only those the file happened to use.
        """
        for name in self.data:
            if name not in self._used:
                if valid is not None:
                    close = difflib.get_close_matches(name, valid, n=1, cutoff=0.6)
                    hint = f"did you mean '{close[0]}'? " if close else ""
                    raise CaseError(self.key(name), self.data[name],
                                    f"unknown key; {hint}valid keys: {', '.join(valid)}")
                known = sorted(self._used)
                raise CaseError(self.key(name), self.data[name], "unknown key" + _suggest(name, known))


def _suggest(name: str, known: list[str]) -> str:
    close = difflib.get_close_matches(name, known, n=1, cutoff=0.6)
    if close:
        return f"; did you mean '{close[0]}'?"
    if known:
        return f"; known keys here: {', '.join(known)}"
    return "; this table takes no keys yet"


def _choice_text(value: str, choices: tuple[str, ...]) -> str:
    close = difflib.get_close_matches(value, choices, n=1, cutoff=0.6)
    hint = f"; did you mean '{close[0]}'?" if close else ""
    return f"must be one of {', '.join(choices)}{hint}"
