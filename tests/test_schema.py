"""The JSON Schema of case files (docs/case.schema.json).

It is generated from the reader's own key declarations
(compare/design/casekeys.py, the families' core_spec and table_specs):
the committed file equals what tools/make_schema.py writes; every bundled
case validates; bad cases (an unknown key, a wrong type, a misspelt table,
a choice that is none, another family's table) are refused by the schema
and by the reader alike; and the reader refuses to read a key that is not
declared, so the schema cannot fall behind it.
"""

from __future__ import annotations

import copy
import importlib.util
import json
import tomllib
import warnings
from pathlib import Path

import pytest

from magcheck.compare.design.casekeys import UndeclaredKey, quantity, string, table
from magcheck.compare.design.reader import TableReader
from magcheck.compare.design.schema import SCHEMA_PATH, case_schema
from magcheck.compare.errors import CaseError
from magcheck.compare.reading.casefile import case_from_dict

ROOT = Path(__file__).resolve().parents[1]
CASES = sorted((ROOT / "cases").glob("*.toml"))


def _tool():
    spec = importlib.util.spec_from_file_location("make_schema", ROOT / "tools" / "make_schema.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def _validator():
    jsonschema = pytest.importorskip("jsonschema")
    schema = json.loads((ROOT / SCHEMA_PATH).read_text(encoding="utf-8"))
    jsonschema.Draft202012Validator.check_schema(schema)
    return jsonschema.Draft202012Validator(schema)


def _doc(name: str) -> dict:
    return tomllib.loads((ROOT / "cases" / name).read_text(encoding="utf-8"))


def test_the_committed_schema_is_the_generated_one():
    committed = (ROOT / SCHEMA_PATH).read_text(encoding="utf-8")
    assert committed == _tool().schema_text(), \
        "docs/case.schema.json is stale: run PYTHONPATH=. python3 tools/make_schema.py"
    assert json.loads(committed) == case_schema()


@pytest.mark.parametrize("path", CASES, ids=[p.name for p in CASES])
def test_every_bundled_case_validates(path):
    v = _validator()
    doc = tomllib.loads(path.read_text(encoding="utf-8"))
    errors = [f"{list(e.absolute_path)}: {e.message}" for e in v.iter_errors(doc)]
    assert errors == []


def _set(doc: dict, path: tuple, value) -> dict:
    d = copy.deepcopy(doc)
    node = d
    for p in path[:-1]:
        node = node[p]
    node[path[-1]] = value
    return d


def _renamed(doc: dict, old: str, new: str) -> dict:
    d = copy.deepcopy(doc)
    d[new] = d.pop(old)
    return d


CHOKE = "demo_choke.toml"
BAD = {
    "unknown core key": (CHOKE, lambda d: _set(d, ("core", "outer_widht"), "60 mm")),
    "unknown key in a gap": (CHOKE, lambda d: _set(d, ("gaps", 0, "lenght"), "1 mm")),
    "turns not a whole number": (CHOKE, lambda d: _set(d, ("winding", "turns"), "many")),
    "a quantity as a list": (CHOKE, lambda d: _set(d, ("core", "depth"), [20, "mm"])),
    "a switch as a string": (CHOKE, lambda d: _set(d, ("hand", "leakage"), "yes")),
    "misspelt table": (CHOKE, lambda d: _renamed(d, "winding", "windng")),
    "misspelt hand table": (CHOKE, lambda d: _renamed(d, "hand", "hands")),
    "a fringing model that is none": (CHOKE, lambda d: _set(d, ("hand", "fringing"), "areas")),
    "another family's core key": (CHOKE, lambda d: _set(d, ("core", "post_radius"), "5 mm")),
    "a drawn core's table on a window core": (
        CHOKE, lambda d: _set(d, ("shapes",), {"units": "mm"})),
    "unknown agreement quantity": (
        "demo_choke_margins.toml", lambda d: _set(d, ("margins", "agreement"), {"gapB": 5})),
    "a limb the family has not": (CHOKE, lambda d: _set(d, ("winding", "limb"), "centre")),
    "a part the family has not": (CHOKE, lambda d: _set(d, ("materials", "leg"), {"mu_r": 900})),
    "a gap on a drawn core": ("demo_drawn_core.toml",
                              lambda d: _set(d, ("gaps",), [{"limb": "left", "length": 1e-3}])),
    "a coil build on a drawn core": ("demo_drawn_core.toml",
                                     lambda d: _set(d, ("windings", 0, "thickness"), "10 mm")),
    "a gap on a pot core": ("demo_pot_core_choke.toml",
                            lambda d: _set(d, ("gaps",), [{"limb": "post", "length": 1e-4}])),
    "a gap on a plunger": ("demo_plunger_solenoid.toml",
                           lambda d: _set(d, ("gaps",), [{"limb": "plunger", "length": 1e-4}])),
    "a gap on a holding magnet": ("demo_holding_magnet.toml",
                                  lambda d: _set(d, ("gaps",), [{"limb": "pole",
                                                                 "length": 1e-4}])),
    "a gap on a u-armature": ("demo_clapper_relay.toml",
                              lambda d: _set(d, ("gaps",), [{"limb": "left", "length": 1e-4}])),
    "a current in tesla": (CHOKE, lambda d: _set(d, ("winding", "current"), "6 T")),
    "a current as a current density": (CHOKE,
                                       lambda d: _set(d, ("winding", "current"), "3 A/mm2")),
    "a current in ampere-turns": (CHOKE, lambda d: _set(d, ("winding", "current"), "480 At")),
    "a length in a quoted number": (CHOKE, lambda d: _set(d, ("gaps", 0, "length"), "0.0006")),
    "a flux density limit in A/m": ("demo_choke_margins.toml",
                                    lambda d: _set(d, ("margins", "peak_B"), "1.2 kA/m")),
    "stacking in percent": (CHOKE, lambda d: _set(d, ("core", "stacking"), "95 %")),
    "an agreement limit in percent": (
        "demo_choke_margins.toml",
        lambda d: _set(d, ("margins", "agreement"), {"inductance": "8 %"})),
    "unknown region key": ("demo_drawn_core.toml",
                           lambda d: _set(d, ("regions", 0, "colour"), "red")),
    "a region kind that is none": ("demo_drawn_core.toml",
                                   lambda d: _set(d, ("regions", 0, "kind"), "iron")),
}


@pytest.mark.parametrize("what", list(BAD))
def test_bad_cases_are_refused_by_the_schema_and_the_reader(what):
    name, mutate = BAD[what]
    doc = mutate(_doc(name))
    assert list(_validator().iter_errors(doc)), f"the schema takes a case with {what}"
    with warnings.catch_warnings(), pytest.raises(CaseError):
        warnings.simplefilter("ignore")
        case_from_dict(doc, base_dir=ROOT / "cases")


def test_quantities_are_numbers_or_strings_with_units():
    v = _validator()
    doc = _doc(CHOKE)
    for value in ("0.6 mm", 0.0006, " 6e-4 m ", "0.024 in", "24 mil"):
        assert not list(v.iter_errors(_set(doc, ("gaps", 0, "length"), value))), value
    for value in ("12 A", "12000 mA", 12, "1.2e1 A"):
        assert not list(v.iter_errors(_set(doc, ("winding", "current"), value))), value
    for value in ("0.95", 0.95):
        assert not list(v.iter_errors(_set(doc, ("core", "stacking"), value))), value
    assert not list(v.iter_errors(_set(doc, ("core", "limb_width"),
                                       {"left": "12 mm", "right": "12 mm", "top": 0.012,
                                        "bottom": "12 mm"})))


# every unit string of each dimension the reader takes, written as designers do
UNITS_READ = {"length": ("0.8 mm", "1 in", "40 mil", "2.5 cm", "1e-3 m", "0.5mm"),
              "area": ("20 mm^2", "0.2 cm**2", "1e-5 m^2", "4 mm*mm"),
              "current": ("6 A", "600 mA", "1.5 kA"),
              "current density": ("4 A/mm^2", "4e6 A/m^2", "400 A/cm^2"),
              "flux density": ("1.45 T", "15 kG", "800 mT"),
              "field strength": ("350 Oe", "800 A/m", "1.2 kA/m", "800 At/m"),
              "inductance": ("1.2 mH", "40 uH", "40 µH"),
              "force": ("12 N", "0.5 kN"),
              "frequency": ("50 Hz", "2 kHz"),
              "voltage": ("230 V",),
              "resistance": ("2 ohm", "2 Ω", "0.5 mohm"),
              "dimensionless": ("0.95", "1e-3")}


@pytest.mark.parametrize("dimension", list(UNITS_READ))
def test_the_quantity_pattern_takes_what_the_reader_takes(dimension):
    """Each dimension's pattern (built from the reader's units table) takes
    the strings the reader reads as that dimension and none that it refuses
    as that dimension (each other dimension's strings)."""
    import re

    from magcheck.compare.design.units import UnitError, parse_quantity, quantity_pattern

    pattern = re.compile(quantity_pattern(dimension))
    for other, values in UNITS_READ.items():
        for value in values:
            try:
                parse_quantity(value, dimension)
                read = True
            except UnitError:
                read = False
            assert bool(pattern.match(value)) == read, (value, dimension)
            assert read == (other == dimension), (value, dimension)  # the table is right


def test_the_reader_refuses_an_undeclared_key_or_kind():
    spec = table({"length": quantity("length"), "name": string()})
    t = TableReader({"length": "1 mm"}, "gaps[0]", spec=spec)
    assert t.quantity("length", "length") == pytest.approx(1e-3)
    with pytest.raises(UndeclaredKey, match="gaps\\[0\\].width is read but not declared"):
        t.quantity("width", "length", 0.0)
    with pytest.raises(UndeclaredKey, match="read as string"):
        t.string("length")
    with pytest.raises(UndeclaredKey, match="read as quantity current"):
        t.quantity("length", "current")
    with pytest.raises(UndeclaredKey):
        t.has("colour")
    # a table without a spec (a plug-in family's [core]) reads any key
    assert TableReader({"size": 1.0}, "core").quantity("size", "length") == 1.0
