"""Parsing of quantities with units at the case-file edge.

A quantity is a plain number (taken as SI) or a string ``"<number> <unit>"``
such as ``"0.8 mm"``, ``"12 A"``, ``"1.45 T"``, ``"350 Oe"``, ``"15 kG"``,
``"4 A/mm^2"``. Inside magcheck everything is an SI float.

Why not a general units library: the common one on PyPI treats oersted and
gauss as Gaussian-system units that do not convert to A/m and T without an
explicit context, and building its registry costs about 0.8 s, which alone
breaks the one-second budget of ``magcheck hand``. The handful of units a
magnetics case file needs fits in the table below, and every conversion
factor in it is a definition.
"""

from __future__ import annotations

import math
import re

__all__ = ["UnitError", "Dimension", "DIMENSIONS", "SI_UNIT", "parse_quantity", "format_si",
           "quantity_pattern"]


class UnitError(ValueError):
    """A quantity string that cannot be read or has the wrong dimension."""


# Dimension exponents over the SI base units (m, kg, s, A).
Dimension = tuple[int, int, int, int]

DIMENSIONS: dict[str, Dimension] = {
    "dimensionless": (0, 0, 0, 0),
    "length": (1, 0, 0, 0),
    "area": (2, 0, 0, 0),
    "current": (0, 0, 0, 1),
    "flux density": (0, 1, -2, -1),
    "field strength": (-1, 0, 0, 1),
    "inductance": (2, 1, -2, -2),
    "flux": (2, 1, -2, -1),
    "current density": (-2, 0, 0, 1),
    "energy": (2, 1, -2, 0),
    "force": (1, 1, -2, 0),
    "time": (0, 0, 1, 0),
    "voltage": (2, 1, -3, -1),
    "frequency": (0, 0, -1, 0),
    "resistance": (2, 1, -3, -2),
    "resistivity": (3, 1, -3, -2),
    "power": (2, 1, -3, 0),
    "mass": (0, 1, 0, 0),
    "stiffness": (0, 1, -2, 0),
}

SI_UNIT: dict[str, str] = {
    "dimensionless": "", "length": "m", "area": "m^2", "current": "A", "flux density": "T",
    "field strength": "A/m", "inductance": "H", "flux": "Wb", "current density": "A/m^2",
    "energy": "J", "force": "N", "time": "s", "voltage": "V", "frequency": "Hz",
    "resistance": "ohm", "resistivity": "ohm m", "power": "W",
    "mass": "kg", "stiffness": "N/m",
}
"""The SI unit each dimension is printed in (with an engineering prefix, format_si)."""

# Unit symbol -> (factor to SI, dimension). All factors are definitions:
# 1 Oe = 1000/(4 pi) A/m, 1 G = 1e-4 T, 1 in = 25.4 mm, 1 mil = 25.4 um, 1 g = 1e-3 kg.
_UNITS: dict[str, tuple[float, Dimension]] = {
    "m": (1.0, DIMENSIONS["length"]),
    "in": (0.0254, DIMENSIONS["length"]),
    "mil": (25.4e-6, DIMENSIONS["length"]),
    "A": (1.0, DIMENSIONS["current"]),
    "At": (1.0, DIMENSIONS["current"]),  # ampere-turn: only in a ratio (At/m), see _TURN_UNIT_RE
    "T": (1.0, DIMENSIONS["flux density"]),
    "G": (1e-4, DIMENSIONS["flux density"]),
    "Oe": (1000.0 / (4.0 * math.pi), DIMENSIONS["field strength"]),
    "H": (1.0, DIMENSIONS["inductance"]),
    "Wb": (1.0, DIMENSIONS["flux"]),
    "J": (1.0, DIMENSIONS["energy"]),
    "N": (1.0, DIMENSIONS["force"]),
    "s": (1.0, DIMENSIONS["time"]),
    "V": (1.0, DIMENSIONS["voltage"]),
    "Hz": (1.0, DIMENSIONS["frequency"]),
    "ohm": (1.0, DIMENSIONS["resistance"]),
    "Ω": (1.0, DIMENSIONS["resistance"]),
    "W": (1.0, DIMENSIONS["power"]),
    "g": (1e-3, DIMENSIONS["mass"]),
}

_PREFIXES: dict[str, float] = {
    "p": 1e-12, "n": 1e-9, "u": 1e-6, "µ": 1e-6, "μ": 1e-6, "m": 1e-3,
    "c": 1e-2, "k": 1e3, "M": 1e6,
}

# An ampere-turn factor not divided by anything: "480 At", "1.2 kAt". Every
# current a case file gives is a winding's current per turn, so an MMF there
# is N times too large; At stays welcome inside a field strength ("800 At/m").
_TURN_UNIT_RE = re.compile(r"^(?:[pnuµμmckM])?At(?:\^1)?$")

_NUMBER = r"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?"
_QUANTITY_RE = re.compile(rf"^\s*({_NUMBER}|nan|inf|-inf|\+inf)\s*(.*?)\s*$", re.IGNORECASE)
_FACTOR_RE = re.compile(r"^([A-Za-zµμΩ]+)(?:(?:\^|\*\*)([-+]?\d+))?$")


def _lookup(symbol: str) -> tuple[float, Dimension]:
    """Scale and dimension of one unit symbol, with an optional SI prefix."""
    if symbol in _UNITS:
        return _UNITS[symbol]
    if len(symbol) > 1 and symbol[0] in _PREFIXES and symbol[1:] in _UNITS:
        scale, dim = _UNITS[symbol[1:]]
        return _PREFIXES[symbol[0]] * scale, dim
    raise UnitError(f"unknown unit '{symbol}'")


def _parse_unit(text: str) -> tuple[float, Dimension]:
    """Scale and dimension of a unit expression such as ``A/mm^2``."""
    text = text.replace(" ", "")
    if not text:
        return 1.0, DIMENSIONS["dimensionless"]
    scale = 1.0
    dim = [0, 0, 0, 0]
    # Split on * and / but keep '**' (a power) intact.
    tokens = re.split(r"(?<!\*)([*/])(?!\*)", text)
    sign = 1
    for tok in tokens:
        if tok == "*":
            sign = 1
            continue
        if tok == "/":
            sign = -1
            continue
        m = _FACTOR_RE.match(tok)
        if not m:
            raise UnitError(f"cannot read unit '{text}'")
        s, d = _lookup(m.group(1))
        power = int(m.group(2)) if m.group(2) else 1
        scale *= s ** (sign * power)
        for i in range(4):
            dim[i] += d[i] * sign * power
    return scale, tuple(dim)  # type: ignore[return-value]


def _article(word: str) -> str:
    """'an' before a vowel ('an area', 'an inductance'), else 'a'."""
    return "an" if word[:1] in "aeiou" else "a"


def parse_quantity(value: object, dimension: str) -> float:
    """Convert a case-file value to an SI float of the given dimension.

    Parameters
    ----------
    value : int, float or str
        A plain number (taken as already SI) or ``"<number> <unit>"``.
    dimension : str
        One of :data:`DIMENSIONS`, e.g. ``"length"``.

    Returns
    -------
    float
        The value in SI units. NaN and infinity are returned as such; callers
        reject them with the key path.

    Raises
    ------
    UnitError
        The string is unreadable, the unit unknown, or of another dimension
        (message: ``'3 A' is not a length``).
    """
    want = DIMENSIONS[dimension]
    if isinstance(value, bool):
        raise UnitError(f"{value!r} is not {_article(dimension)} {dimension}")
    if isinstance(value, (int, float)):
        return float(value)
    if not isinstance(value, str):
        raise UnitError(f"{value!r} is not {_article(dimension)} {dimension}")
    m = _QUANTITY_RE.match(value)
    if not m:
        raise UnitError(f"'{value}' is not a number with a unit")
    number = float(m.group(1))
    try:
        scale, dim = _parse_unit(m.group(2))
    except UnitError as exc:
        if m.group(2).strip().lower() in ("degc", "deg c", "°c", "celsius", "c"):
            raise UnitError(f"'{value}': a temperature is a plain number in degC (write "
                            f"{number:g})") from None
        raise UnitError(f"'{value}': {exc}") from None
    if dimension == "current" and _TURN_UNIT_RE.match(m.group(2).replace(" ", "")):
        raise UnitError(f"'{value}' is ampere-turns (an MMF), but this is the current per "
                        "turn: give it in A (the MMF divided by the turns)")
    if dim != want:
        if not m.group(2).strip():
            raise UnitError(f"'{value}' has no unit; add one, or write the number unquoted "
                              "for SI")
        raise UnitError(f"'{value}' is not {_article(dimension)} {dimension}")
    return number * scale


_POWERS = (1, 2, 3)
"""The powers :func:`quantity_pattern` writes out (``mm^2``, ``m**3``)."""


def _power_re(p: int) -> str:
    """A factor's power as the reader takes it: ``^2``, ``**2`` (power 1: none, ``^1``)."""
    pw = rf" *(?:\^|\*\*) *\+?{p}"
    return f"(?:{pw})?" if p == 1 else pw


def _factor_re(symbols: list[str], p: int) -> str:
    prefix = "[" + "".join(_PREFIXES) + "]?"
    alt = "|".join(sorted((re.escape(s) for s in symbols), key=lambda s: (-len(s), s)))
    return f"{prefix}(?:{alt}){_power_re(p)}"


def quantity_pattern(dimension: str) -> str:
    """A regular expression (for a JSON Schema ``pattern``; Python's and
    ECMAScript's syntax alike) of the quantity strings of ``dimension``
    that :func:`parse_quantity` reads: a number and a unit made of one
    prefixed unit of this module's table or two joined by ``*`` or ``/``,
    each to a power 1 to 3 (``"0.8 mm"``, ``"4 A/mm^2"``, ``"800 At/m"``).
    A dimensionless quantity is a number alone (a quoted number: ``"0.95"``).
    ``dimension`` "" takes any unit, or a percentage (``"5 %"``).

    The reader takes longer unit products too, and a ratio of like units
    for a plain number (``"5 m/m"``), which the pattern refuses: it serves
    an editor, where ``"6 T"`` for a current should be flagged."""
    number = rf"^\s*{_NUMBER}\s*"
    if not dimension:
        factor = r"[A-Za-zµμΩ]+(?: *(?:\^|\*\*) *[-+]?\d+)?"
        return rf"{number}(?:%|{factor}(?: *[*/] *{factor})*)?\s*$"
    want = DIMENSIONS[dimension]
    if want == DIMENSIONS["dimensionless"]:
        return rf"{number}$"
    by_dim: dict[Dimension, list[str]] = {}
    for sym, (_, dim) in _UNITS.items():
        by_dim.setdefault(dim, []).append(sym)

    def times(d: Dimension, p: int) -> Dimension:
        return tuple(x * p for x in d)  # type: ignore[return-value]

    alts: list[str] = []
    for d1, syms1 in by_dim.items():
        for p1 in _POWERS:
            if times(d1, p1) == want:
                s1 = [s for s in syms1 if not (dimension == "current" and s == "At")]
                if s1:
                    alts.append(_factor_re(s1, p1))
            for op, sign in (("\\*", 1), ("/", -1)):
                for d2, syms2 in by_dim.items():
                    for p2 in _POWERS:
                        got = tuple(a + sign * b for a, b in zip(times(d1, p1), times(d2, p2)))
                        if got == want:
                            alts.append(f"{_factor_re(syms1, p1)} *{op} *{_factor_re(syms2, p2)}")
    return rf"{number}(?:{'|'.join(alts)})\s*$"


def format_si(value: float, unit: str, digits: int = 4) -> str:
    """Format an SI value with an engineering prefix, e.g. ``1.25 mH``; a
    pure number (``unit`` "" or "%") takes no prefix: ``0.9984``, ``0.8836 %``;
    a current density (``unit`` "A/m^2") is shown in A/mm^2: ``3.2 A/mm^2``."""
    if unit == "A/m^2":  # a winding's current density: A/mm^2, as designers write it
        return f"{value / 1e6:.{digits}g} A/mm^2"
    if not math.isfinite(value) or value == 0.0 or unit in ("", "%"):
        return f"{value:.{digits}g} {unit}".rstrip()
    exp3 = int(math.floor(math.log10(abs(value)) / 3.0)) * 3
    exp3 = max(-12, min(6, exp3))
    prefix = {-12: "p", -9: "n", -6: "u", -3: "m", 0: "", 3: "k", 6: "M"}[exp3]
    return f"{value / 10 ** exp3:.{digits}g} {prefix}{unit}"
