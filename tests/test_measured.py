"""Measured values of a built part ([[measured]], compare.design.measured):
CSV curves and their error messages, the case keys, and the combined
uncertainty of a model value against a measured one."""

from __future__ import annotations

import math
from pathlib import Path

import pytest

import magcheck
from magcheck.compare.design.measured import (combined_uncertainty, interpolate,
                                              normalised_difference, parse_measured_csv)
from magcheck.compare.errors import CaseError

CHOKE = Path(__file__).resolve().parents[1] / "cases" / "demo_choke.toml"


# --------------------------------------------------------------- arithmetic
def test_combined_uncertainty_is_the_root_sum_of_squares():
    # Source: JCGM 100:2008 (GUM), eq. (10): uncorrelated inputs, unit
    # sensitivities for a difference; a 3-4-5 triangle is exact in floating point
    assert combined_uncertainty(3.0, 4.0) == 5.0
    assert combined_uncertainty(-3.0, 4.0) == 5.0  # a sign is no uncertainty
    assert combined_uncertainty(0.07e-3, math.nan) == 0.07e-3  # the hand model states none


def test_normalised_difference_counts_combined_uncertainties():
    # model 3.6 mH +- 0.04, measured 3.5 mH +- 0.03: combined 0.05, so 2 of them
    # Source: the definition above (difference over the GUM combined uncertainty)
    assert normalised_difference(3.6e-3, 3.5e-3, 0.03e-3, 0.04e-3) == pytest.approx(2.0,
                                                                                   rel=1e-12)
    assert normalised_difference(3.4e-3, 3.5e-3, 0.05e-3) == pytest.approx(-2.0, rel=1e-12)
    assert math.isnan(normalised_difference(3.4e-3, 3.5e-3, 0.0))  # no uncertainty: no scale
    assert math.isnan(normalised_difference(math.nan, 3.5e-3, 1e-6))


# --------------------------------------------------------------- CSV
def test_a_curve_with_units_and_a_percent_u_column():
    text = "\ufeff# invented for the test\nI [A];L [mH];u [%]\n6;3.5;2\n0;3.9;2\n\n9;2.0;5\n"
    pts = parse_measured_csv(text, "inductance", "m.csv")
    assert [p.at for p in pts] == [0.0, 6.0, 9.0]  # sorted by current
    assert [p.value for p in pts] == pytest.approx([3.9e-3, 3.5e-3, 2.0e-3], rel=1e-12)
    # 2 % of 3.9 mH, 2 % of 3.5 mH, 5 % of 2.0 mH
    assert [p.uncertainty for p in pts] == pytest.approx([0.078e-3, 0.07e-3, 0.1e-3], rel=1e-12)
    v, u = interpolate(pts, 3.0)  # half way between 0 A and 6 A
    assert (v, u) == (pytest.approx(3.7e-3, rel=1e-12), pytest.approx(0.074e-3, rel=1e-12))
    assert math.isnan(interpolate(pts, 10.0)[0])  # no measurement beyond the curve


def test_a_force_curve_with_an_absolute_u_column_and_one_given_uncertainty():
    pts = parse_measured_csv("stroke (mm),F (N),u (N)\n0.5,12,0.3\n2,4.5,0.2\n", "force", "f.csv")
    assert [(p.at, p.value, p.uncertainty) for p in pts] == [
        (pytest.approx(0.5e-3), 12.0, 0.3), (pytest.approx(2e-3), 4.5, 0.2)]
    pts = parse_measured_csv("stroke [mm],F [N]\n1,8\n", "force", "f.csv", uncertainty=0.05,
                             relative=True)
    assert pts[0].uncertainty == pytest.approx(0.4)


@pytest.mark.parametrize("text, words", [
    ("I [A],L [mH]\n1,3.5\n", "no u column and no uncertainty given"),
    ("I [A],F [N],u [N]\n1,3.5,0.1\n", "column 2 must be 'L [unit]'"),
    ("I [A],L [T],u [%]\n1,3.5,1\n", "is not an inductance"),
    ("I [A],L [mH],u [%]\n1,3.5,1\n2,\"3,4\",1\n", "line 3"),
    ("I [A],L [mH],u [%]\n1;3.5;1\n", "expected 3 columns"),
    ("I [A],L [mH],u [%]\n1,3.5,-1\n", "must not be negative"),
    ("I [A],L [mH],u [%]\n1,3.5,1\n1,3.4,1\n", "two rows at the same I"),
    ("# only a comment\n", "no data rows"),
    ("I [A],L [mH],u [%]\n1,abc,1\n", "is not a number"),
])
def test_bad_csv_is_refused_naming_the_file_line_and_cell(text, words):
    with pytest.raises(CaseError) as exc:
        parse_measured_csv(text, "inductance", "m.csv")
    assert str(exc.value).startswith("m.csv") and words in str(exc.value)


def test_a_decimal_comma_is_named_with_its_fix():
    with pytest.raises(CaseError, match=r"m.csv, line 2 = '3,5': written with a decimal comma; "
                                        r"write 3.5"):
        parse_measured_csv("I [A];L [mH];u [%]\n1;3,5;1\n", "inductance", "m.csv")


# --------------------------------------------------------------- case keys
def _case(tmp_path: Path, entry: str) -> Path:
    p = tmp_path / "c.toml"
    p.write_text(CHOKE.read_text() + "\n[[measured]]\n" + entry + "\n")
    return p


def test_case_keys_read_a_value_and_a_curve(tmp_path):
    c = magcheck.load(_case(tmp_path, 'quantity = "inductance"\nat = "6 A"\nvalue = "3.5 mH"\n'
                                      'uncertainty = "0.07 mH"\nfrequency = "1 kHz"\n'
                                      'source = "LCR meter, 2026-11-30"'))
    (m,) = c.measured
    assert (m.quantity, m.points[0].at, m.points[0].value) == ("inductance", 6.0,
                                                                pytest.approx(3.5e-3))
    assert m.points[0].uncertainty == pytest.approx(0.07e-3) and m.frequency == 1000.0
    assert m.source == "LCR meter, 2026-11-30" and m.unit == "H"
    (tmp_path / "L.csv").write_text("I [A],L [mH]\n0,3.9\n6,3.5\n")
    c = magcheck.load(_case(tmp_path, 'quantity = "inductance"\ncsv = "L.csv"\n'
                                      'uncertainty = "2%"'))
    assert [p.uncertainty for p in c.measured[0].points] == pytest.approx([0.078e-3, 0.07e-3])


@pytest.mark.parametrize("entry, words", [
    ('quantity = "inductance"\nat = "6 A"\nvalue = "3.5 mH"', "uncertainty: missing"),
    ('quantity = "flux"\nat = "6 A"\nvalue = "3.5 mH"\nuncertainty = "1%"', "quantity"),
    ('quantity = "inductance"\ncsv = "none.csv"', "cannot be read"),
    ('quantity = "inductance"\ncsv = "none.csv"\nat = "6 A"', "either csv"),
    ('quantity = "inductance"\nat = "6 A"\nvalue = "3.5 mH"\nuncertainty = "1%"\n'
     'current = "2 A"', "only a force takes a current"),
    ('quantity = "inductance"\nat = "6 A"\nvalue = "3.5 mH"\nuncertainty = "x%"',
     "cannot read the percentage"),
])
def test_bad_case_keys_name_the_key(tmp_path, entry, words):
    with pytest.raises(CaseError) as exc:
        magcheck.load(_case(tmp_path, entry))
    assert str(exc.value).startswith("measured[0].") and words in str(exc.value)
