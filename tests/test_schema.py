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
    for value in ("0.6 mm", 0.0006, "0.0006"):
        assert not list(v.iter_errors(_set(doc, ("gaps", 0, "length"), value))), value
    assert not list(v.iter_errors(_set(doc, ("core", "limb_width"),
                                       {"left": "12 mm", "right": "12 mm", "top": 0.012,
                                        "bottom": "12 mm"})))


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
