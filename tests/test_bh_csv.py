"""B-H CSV files as spreadsheets write them (byte-order mark, ``;`` or tab,
units in brackets or parentheses, a polarisation column), a decimal comma
refused naming the file, the line and the value, and a built-in curve
written with ``magcheck materials NAME --csv`` read back by a case."""

from __future__ import annotations

import tomllib
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from magcheck.analytic.bh import BHDataError
from magcheck.analytic.materials import (_parse_bh_text, bh_csv_text, builtin, builtin_names,
                                         load_bh_csv)
from magcheck.compare.front.cli import main
from magcheck.compare.reading.casefile import case_from_dict

CASES = Path(__file__).resolve().parents[1] / "cases"

H = [0.0, 100.0, 1000.0, 10000.0]
B = [0.0, 0.5, 1.2, 1.6]
PLAIN = "H [A/m],B [T]\n" + "".join(f"{h!r},{b!r}\n" for h, b in zip(H, B))


def _write(tmp_path: Path, text: str, name: str = "mat.csv", encoding: str = "utf-8") -> Path:
    p = tmp_path / name
    p.write_bytes(text.encode(encoding))
    return p


def _points(path: Path) -> tuple[np.ndarray, np.ndarray]:
    c = load_bh_csv(path)
    return c.h_points, c.b_points


# --------------------------------------------------------------- spreadsheet forms
@pytest.mark.parametrize("sep", [",", ";", "\t", ", ", " ;\t"])
@pytest.mark.parametrize("bom", ["", "\ufeff"])
@pytest.mark.parametrize("newline", ["\n", "\r\n"])
def test_bom_separator_and_line_ends_read_the_same_numbers(tmp_path, sep, bom, newline):
    text = bom + PLAIN.replace(",", sep).replace("\n", newline)
    h, b = _points(_write(tmp_path, text))
    ref_h, ref_b = _points(_write(tmp_path, PLAIN, "plain.csv"))
    np.testing.assert_array_equal(h, ref_h)  # the same decimals give the same floats
    np.testing.assert_array_equal(b, ref_b)


def test_utf16_file_with_its_byte_order_mark(tmp_path):
    text = "H (A/m)\tB (T)\r\n" + "".join(f"{h!r}\t{b!r}\r\n" for h, b in zip(H, B))
    h, b = _points(_write(tmp_path, text, encoding="utf-16"))
    np.testing.assert_array_equal(h, H)
    np.testing.assert_array_equal(b, B)


def test_trailing_empty_cells_of_a_spreadsheet_are_ignored(tmp_path):
    text = "# exported;;\nH [A/m];B [T];\n" + "".join(f"{h!r};{b!r};\n" for h, b in zip(H, B)) + ";;\n"
    h, b = _points(_write(tmp_path, text))
    np.testing.assert_array_equal(h, H)
    np.testing.assert_array_equal(b, B)


# Source: SI definitions of the CGS units, NIST SP 811 (2008) appendix B.8:
# 1 Oe = 1000/(4 pi) A/m = 79.577 A/m, 1 G = 1e-4 T (docs/references.md section 3) [exact: definitions].
# So 4 pi Oe = 1000 A/m and 10 000 G = 1 T, typed here as numbers, not taken from the code's tables.
# Tolerance: 1e-15 relative, the rounding of one multiplication and of 4 pi's decimal.
@pytest.mark.parametrize("h_head, h_val, h_si", [
    ("H [A/m]", 1000.0, 1000.0), ("H (A/m)", 1000.0, 1000.0), ("h ( a / m )", 1000.0, 1000.0),
    ("H [kA/m]", 1.0, 1000.0), ("H(KA/M)", 1.0, 1000.0),
    ("H [Oe]", 12.566370614359172, 1000.0), ("H (oe)", 12.566370614359172, 1000.0),
])
@pytest.mark.parametrize("b_head, b_val, b_si", [
    ("B [T]", 1.0, 1.0), ("b (t)", 1.0, 1.0), ("B (G)", 10000.0, 1.0), ("B [ g ]", 10000.0, 1.0),
    ("B [mT]", 1000.0, 1.0), ("B [kG]", 10.0, 1.0),
])
def test_header_units_in_brackets_or_parentheses(tmp_path, h_head, h_val, h_si, b_head, b_val, b_si):
    # the 1 kA/m, 1 T point between three points in A/m and T scaled the same way
    rows = [(0.25, 0.4), (1.0, 1.0), (4.0, 1.3), (16.0, 1.5)]
    text = f"{h_head};{b_head}\n" + "".join(f"{h * h_val!r};{b * b_val!r}\n" for h, b in rows)
    c = load_bh_csv(_write(tmp_path, text))
    np.testing.assert_allclose(c.h_points[1:], [h * h_si for h, _ in rows], rtol=1e-15)
    np.testing.assert_allclose(c.b_points[1:], [b * b_si for _, b in rows], rtol=1e-15)


def test_polarisation_column_is_read_as_b_equals_mu0_h_plus_j(tmp_path):
    rows = [(100.0, 0.5), (1000.0, 1.2), (10000.0, 1.6), (100000.0, 1.9)]
    text = "J [T],H [kA/m]\n" + "".join(f"{j!r},{h / 1000!r}\n" for h, j in rows)
    c = load_bh_csv(_write(tmp_path, text))
    # Source: definition of the magnetic polarisation, B = mu0 H + J (IEC 60050-121,
    # "magnetic polarization"; any magnetics textbook) [exact: a definition], with
    # mu0 = 1.25663706127e-6 H/m (CODATA 2022, docs/references.md section 11), typed here.
    # Tolerance: 1e-14 relative, rounding of the sum.
    expected = [j + 1.25663706127e-6 * h for h, j in rows]
    np.testing.assert_allclose(c.b_points[1:], expected, rtol=1e-14)
    assert c.b_points[-1] == pytest.approx(1.9 + 0.125663706127, rel=1e-14)
    # the same curve given as B reads to the same points
    b_text = "H [A/m],B [T]\n" + "".join(f"{h!r},{b!r}\n" for (h, _), b in zip(rows, expected))
    np.testing.assert_allclose(load_bh_csv(_write(tmp_path, b_text, "b.csv")).b_points,
                               c.b_points, rtol=1e-15)


# --------------------------------------------------------------- refused, by name
@pytest.mark.parametrize("text, words", [
    ("H [A/m];B [T]\n100;0,5\n", ["line 2", "'0,5'", "decimal comma", "write 0.5"]),
    ("# note\nH [A/m];B [T]\n100;0.5\n1000;1,5\n", ["line 4", "'1,5'", "write 1.5"]),
    ("H [A/m]\tB [T]\n1,5e3\t1.2\n", ["line 2", "'1,5e3'", "write 1.5e3"]),
    ("H [A/m],B [T]\n100,0.5\n1000,1,5\n", ["line 3", "got 3", "'1000,1,5'", "decimal comma?"]),
    ("H [A/m],B [T]\n100,0.5\n1000;1.2\n", ["line 3", "got 1", "'1000;1.2'", "a comma"]),
    ("H [A/m];B [T]\n100;0.5\n1000\t1.2\n", ["line 3", "got 1", "a semicolon"]),
    ("H [A/m],B [T]\n100,0.5\n1000;2,1.2\n", ["line 3", "'1000;2'", "a semicolon", "a comma"]),
    ("H [A/m];J [T];B [T]\n", ["line 1", "exactly two columns"]),
    ("H [A/m];H [Oe]\n", ["line 1", "names H twice"]),
    ("H [A/m],J [Tesla]\n", ["line 1", "unknown J unit 'Tesla'"]),
    ("H [A/m},B [T]\n", ["line 1", "header cell 'H [A/m}'"]),
    ("H (A/m) B (T)\n", ["line 1", "exactly two columns"]),
])
def test_bad_file_is_refused_naming_file_line_and_value(tmp_path, text, words):
    with pytest.raises(BHDataError) as err:
        load_bh_csv(_write(tmp_path, text))
    msg = str(err.value)
    assert "\n" not in msg and msg.startswith(str(tmp_path / "mat.csv"))
    for w in words:
        assert w in msg, (w, msg)


def test_a_file_that_is_not_utf8_is_refused_by_name(tmp_path):
    p = tmp_path / "latin.csv"
    p.write_bytes("H [A/m];B [T] \xb5\n1;0.1\n".encode("latin-1"))
    with pytest.raises(BHDataError, match=r"latin\.csv' is not UTF-8 text \(byte 0xb5 at offset 14\)"):
        load_bh_csv(p)


def _case_with_csv(folder: Path, csv_name: str) -> Path:
    text = (CASES / "demo_choke.toml").read_text()
    assert 'core = "demo-sisteel"' in text
    case = folder / "case.toml"
    case.write_text(text.replace('core = "demo-sisteel"', f'core = {{ csv = "{csv_name}" }}'))
    return case


def test_decimal_comma_in_a_case_is_bad_input_exit_2_one_line(tmp_path, capsys):
    (tmp_path / "steel.csv").write_text("\ufeffH (A/m);B (T)\n100;0,5\n1000;1,2\n")
    case = _case_with_csv(tmp_path, "steel.csv")
    assert main(["hand", str(case)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "Traceback" not in err
    assert "materials.core" in err and "steel.csv, line 2" in err and "write 0.5" in err


# --------------------------------------------------------------- the writer
@pytest.mark.parametrize("name", builtin_names())
def test_materials_csv_round_trips_through_a_case(tmp_path, name, capsys):
    out = tmp_path / f"{name}.csv"
    assert main(["materials", name, "--csv", str(out)]) == 0
    assert f"wrote {out}" in capsys.readouterr().out
    text = out.read_text()
    assert "invented for the demo" in text.splitlines()[0]
    assert "H [A/m],B [T]" in text.splitlines()
    d = tomllib.loads(_case_with_csv(tmp_path, out.name).read_text())
    case = case_from_dict(d, base_dir=tmp_path)
    spec = case.material("core")
    assert spec.kind == "csv"
    back, ref = spec.law, builtin(name)
    np.testing.assert_array_equal(back.h_points, ref.h_points)  # repr decimals: bit for bit
    np.testing.assert_array_equal(back.b_points, ref.b_points)
    np.testing.assert_array_equal(back.b_of_h(ref.h_points), ref.b_points)
    mid = 0.5 * (ref.h_points[1:] + ref.h_points[:-1])
    np.testing.assert_array_equal(back.b_of_h(mid), ref.b_of_h(mid))  # same interpolant


def test_materials_csv_to_stdout_is_the_csv_alone(tmp_path, capsys):
    assert main(["materials", "demo-ferrite", "--csv", "-"]) == 0
    captured = capsys.readouterr()
    assert "demo-ferrite" in captured.err and "wrote" not in captured.err  # the table: stderr
    c = load_bh_csv(_write(tmp_path, captured.out))  # standard output holds the CSV alone
    np.testing.assert_array_equal(c.b_points, builtin("demo-ferrite").b_points)


@pytest.mark.parametrize("argv, words", [
    (["materials", "--csv", "x.csv"], "--csv = 'x.csv': name one material to write"),
    (["materials", "demo-hard-ferrite", "--csv", "x.csv"], "is a magnet grade"),
    (["materials", "demo-ferrite", "--csv", "x.csv", "--plot", "x.csv"], "name the same path"),
    (["materials", "demo-ferrite", "--csv", "sub/"], "ends in a slash"),
])
def test_materials_csv_bad_input(tmp_path, monkeypatch, capsys, argv, words):
    monkeypatch.chdir(tmp_path)
    assert main(argv) == 2
    assert words in capsys.readouterr().err
    assert not any(tmp_path.iterdir())  # nothing written


def test_bh_csv_text_of_a_converted_curve_reads_back_exactly(tmp_path):
    # a curve read in Oe carries factors of 1000/(4 pi): repr keeps every bit
    text = "H [Oe],B [kG]\n" + "".join(f"{h / 79.57747154594767!r},{b * 10!r}\n"
                                       for h, b in zip(H[1:], B[1:]))
    c = load_bh_csv(_write(tmp_path, text))
    again = load_bh_csv(_write(tmp_path, bh_csv_text(c, ["two\nlines"]), "again.csv"))
    np.testing.assert_array_equal(again.h_points, c.h_points)
    np.testing.assert_array_equal(again.b_points, c.b_points)


# --------------------------------------------------------------- never another exception
_PIECES = ["H [A/m]", "B (T)", "J [mT]", "h(oe)", "1", "0,5", "2.5", "-3", "1e3", "nan", "#",
           ",", ";", "\t", "\n", "\r\n", "\ufeff", '"', " ", "[", ")", "x", "\x00", "1,5"]


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(st.sampled_from(_PIECES), max_size=40) | st.text(max_size=200))
def test_any_text_gives_a_curve_or_a_one_line_bh_data_error(parts):
    text = parts if isinstance(parts, str) else "".join(parts)
    try:
        h, b = _parse_bh_text(text, "fuzz.csv")
    except BHDataError as exc:
        assert str(exc).startswith("fuzz.csv") and "\n" not in str(exc)
        return
    assert h.shape == b.shape
