"""Quantity parsing at the case-file edge."""

import math

import pytest

from magcheck.compare.design.units import UnitError, format_si, parse_quantity


@pytest.mark.parametrize("text,dim,si", [
    ("0.8 mm", "length", 0.8e-3),
    ("12 A", "current", 12.0),
    ("1.45 T", "flux density", 1.45),
    # Source: definition of the oersted, 1 Oe = 1000/(4 pi) A/m.
    ("350 Oe", "field strength", 350 * 1000 / (4 * math.pi)),
    # Source: definition of the gauss, 1 G = 1e-4 T.
    ("15 kG", "flux density", 1.5),
    ("12000 G", "flux density", 1.2),
    ("2 kA/m", "field strength", 2000.0),
    ("4 A/mm^2", "current density", 4e6),
    ("4 A/mm**2", "current density", 4e6),
    ("2.5 mH", "inductance", 2.5e-3),
    ("470 uH", "inductance", 470e-6),
    ("1 in", "length", 0.0254),  # Source: definition, 1 in = 25.4 mm.
    ("10 mil", "length", 254e-6),
    ("3.2e-4 Wb", "flux", 3.2e-4),
    ("26 ohm", "resistance", 26.0),
    ("1.5 kohm", "resistance", 1500.0),
    ("3 Ω", "resistance", 3.0),
    ("1 V/A", "resistance", 1.0),  # Source: definition, 1 ohm = 1 V/A.
    (0.5, "length", 0.5),
    (7, "current", 7.0),
])
def test_parse(text, dim, si):
    assert parse_quantity(text, dim) == pytest.approx(si, rel=1e-12)


@pytest.mark.parametrize("text,dim,words", [
    ("3 A", "length", "'3 A' is not a length"),
    ("10 mm", "area", "'10 mm' is not an area"),
    ("40 degC", "dimensionless", "a temperature is a plain number in degC .write 40."),
    ("10 ohm", "inductance", "'10 ohm' is not an inductance"),
    ("1 T", "field strength", "is not a field strength"),
    ("abc", "length", "not a number with a unit"),
    ("0.020", "length", "has no unit"),
    ("3 furlong", "length", "unknown unit 'furlong'"),
    (True, "length", "is not a length"),
    ([1], "length", "is not a length"),
])
def test_rejects(text, dim, words):
    with pytest.raises(UnitError, match=words):
        parse_quantity(text, dim)


def test_format_si():
    assert format_si(3.217e-3, "H") == "3.217 mH"
    assert format_si(0.0, "Wb") == "0 Wb"
    # a pure number or a percentage takes no engineering prefix
    assert format_si(0.9984, "") == "0.9984"
    assert format_si(0.8836, "%") == "0.8836 %"
    assert format_si(23.77, "%") == "23.77 %"
