"""Case files: valid demo cases load to SI values; every kind of bad input
gives a CaseError naming the key path and the value; random documents give a
case or a CaseError, never another exception."""

from __future__ import annotations

import copy
import math
import tomllib
import warnings
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from magcheck.compare.reading.casefile import case_from_dict, load_case
from magcheck.compare.errors import CaseError, CaseWarning

CASES = Path(__file__).resolve().parents[1] / "cases"


def demo_dict() -> dict:
    return tomllib.loads((CASES / "demo_choke.toml").read_text())


def load(d: dict):
    """Load a document; the warnings it gives are asserted here, not leaked
    into the suite's output: each a one-line CaseWarning naming a key (a
    fuzzed document may well be valid and implausible)."""
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        case = case_from_dict(d, base_dir=CASES)
    for w in caught:
        assert issubclass(w.category, CaseWarning), w
        assert "\n" not in str(w.message) and w.message.key, w  # type: ignore[union-attr]
    return case


def test_demo_choke_loads_in_si():
    case = load_case(CASES / "demo_choke.toml")
    assert case.family == "window-core"
    assert case.core.outer_width == pytest.approx(0.060)
    assert case.core.left == pytest.approx(0.012)
    assert case.depth == pytest.approx(0.020)
    assert case.gaps[0].length == pytest.approx(0.6e-3)
    # default position: middle of the right limb's straight part (12..58 mm)
    assert case.gaps[0].position == pytest.approx(0.035)
    assert case.winding.turns == 80 and case.winding.current == pytest.approx(6.0)
    assert len(case.sha256) == 64


def test_ei_case_fill_gives_coil_build():
    case = load_case(CASES / "demo_ei_inductor.toml")
    # fill 0.7 of a 12 mm window width, over the 30 mm window height
    assert case.winding.thickness == pytest.approx(0.7 * 0.012)
    assert case.winding.length == pytest.approx(0.030)
    assert case.core.outer == pytest.approx(0.008)


def test_units_in_case():
    d = demo_dict()
    d["core"]["depth"] = "0.787401575 in"  # 20 mm; 1 in = 25.4 mm (definition)
    d["winding"]["current"] = 6
    d["materials"]["core"] = {"H": [0, 50, 100, 400, 2000], "B": [0, 5, 9, 13, 15.5],
                              "H_unit": "Oe", "B_unit": "kG"}
    case = load(d)
    assert case.depth == pytest.approx(0.020, rel=1e-9)
    law = case.material("core").law
    # Source: unit definitions 1 Oe = 1000/(4 pi) A/m, 1 kG = 0.1 T.
    assert float(law.h_of_b(0.9)) == pytest.approx(100 * 1000 / (4 * math.pi), rel=1e-9)


def _mutate(path: str, value):
    d = demo_dict()
    node = d
    keys = path.split(".")
    for k in keys[:-1]:
        node = node[int(k)] if isinstance(node, list) else node[k]
    if value is KeyError:
        del node[keys[-1]]
    else:
        node[keys[-1]] = value
    return d


BAD = [
    # (mutation path, value, key named in the message, words in the message)
    ("core.limb_widht", "12 mm", "core.limb_widht", "did you mean 'limb_width'"),
    ("core.depth", KeyError, "core.depth", "missing key"),
    ("gaps.0.length", "3 A", "gaps[0].length", "is not a length"),
    ("core.outer_width", "-60 mm", "core.outer_width", "must be positive"),
    ("core.outer_width", "0 mm", "core.outer_width", "must be positive"),
    ("gaps.0.length", "50 mm", "gaps[0].length", "gap not shorter than its limb"),
    ("gaps.0.length", "13 mm", "gaps[0].length", "not shorter than the width"),
    ("gaps.0.length", "1e-20 m", "gaps[0].length", "gap too thin to draw"),
    ("winding.thickness", "40 mm", "winding.thickness", "does not fit the window"),
    ("winding.length", "47 mm", "winding.length", "does not fit the window"),
    ("winding.turns", 0, "winding.turns", "at least 1"),
    ("winding.turns", 2.5, "winding.turns", "whole number"),
    ("winding.current", "nan A", "winding.current", "finite"),
    ("winding.current", math.inf, "winding.current", "finite"),
    ("core.depth", math.nan, "core.depth", "finite"),
    ("case.family", "window-cor", "case.family", "did you mean 'window-core'"),
    ("materials.core", "demo-sisteal", "materials.core", "did you mean 'demo-sisteel'"),
    ("materials.core", {"mu_r": 0.5}, "materials.core.mu_r", "must lie in"),
    ("materials.core", {"csv": "no_such.csv"}, "materials.core.csv", "no such B-H file"),
    ("materials.core", {"H": [0, 10, 20, 30, 40], "B": [0, 0.5, 0.4, 0.9, 1.0]},
     "materials.core", "row"),
    ("hand.fringing", "areas", "hand.fringing", "did you mean 'area'"),
    ("gaps.0.limb", "middle", "gaps[0].limb", "must be one of"),
    ("gaps.0.position", "46 mm", "gaps[0].position", "does not lie within"),
    ("fe.order", 3, "fe.order", "1 or 2"),
    ("margins.anything", 1, "margins.anything", "unknown key"),
    ("core.limb_width", "40 mm", "core.limb_width", "leave no window"),
]


@pytest.mark.parametrize("path,value,key,words", BAD, ids=[b[0] + "=" + str(b[1]) for b in BAD])
def test_bad_input_names_key_and_value(path, value, key, words):
    with pytest.raises(CaseError) as info:
        load(_mutate(path, value))
    msg = str(info.value)
    assert msg.startswith(key), msg
    assert words in msg, msg
    if value is not KeyError and not isinstance(value, dict):
        shown = repr(value) if isinstance(value, str) else str(value)
        assert shown in msg, msg


def test_fill_and_thickness_exclusive():
    d = demo_dict()
    d["winding"]["fill"] = 0.5
    with pytest.raises(CaseError, match="either fill or thickness"):
        load(d)


def test_overlapping_gaps():
    d = demo_dict()
    d["gaps"].append({"limb": "right", "length": "0.6 mm", "position": "23.3 mm"})
    with pytest.raises(CaseError, match=r"gaps\[1\].position.*overlaps gaps\[0\]"):
        load(d)


def test_toml_syntax_error(tmp_path):
    p = tmp_path / "broken.toml"
    p.write_text("[case\nname = 1\n")
    with pytest.raises(CaseError, match="TOML syntax error"):
        load_case(p)


def test_missing_file(tmp_path):
    with pytest.raises(CaseError, match="cannot read case file"):
        load_case(tmp_path / "nope.toml")


# -- property-based: any document gives a Case or a CaseError -----------------
_scalars = st.one_of(
    st.none(), st.booleans(), st.integers(-10**6, 10**6),
    st.floats(allow_nan=True, allow_infinity=True),
    st.sampled_from(["12 mm", "0 mm", "-1 mm", "3 A", "nan mm", "1e400 mm", "mm", "",
                     "demo-sisteel", "left", "right", "centre", "window-core", "ei-core",
                     "area", "0.6 mm", "80", "1.45 T", "350 Oe", "15 kG"]),
    st.text(max_size=12),
)
_values = st.recursive(_scalars, lambda inner: st.one_of(
    st.lists(inner, max_size=4), st.dictionaries(st.text(max_size=8), inner, max_size=4)),
    max_leaves=8)
_paths = st.sampled_from([
    "case", "case.family", "case.name", "core", "core.outer_width", "core.limb_width",
    "core.depth", "gaps", "gaps.0", "gaps.0.length", "gaps.0.limb", "gaps.0.position",
    "winding", "winding.turns", "winding.current", "winding.thickness", "winding.fill",
    "materials", "materials.core", "hand", "hand.fringing", "fe", "fe.order", "fe.tol",
    "margins", "extra",
])


def _mutate_all(d: dict, mutations) -> None:
    """Set (or delete, for KeyError) each dotted path that exists in ``d``."""
    for path, value in mutations:
        node = d
        keys = path.split(".")
        try:
            for k in keys[:-1]:
                node = node[int(k)] if isinstance(node, list) else node[k]
            last = keys[-1]
            if isinstance(node, list):
                last = int(last)
            if value is KeyError:
                del node[last]
            else:
                node[last] = copy.deepcopy(value)
        except (KeyError, IndexError, TypeError, ValueError):
            continue


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(st.tuples(_paths, st.one_of(_values, st.just(KeyError))), min_size=1,
                max_size=4))
def test_fuzz_mutated_documents(mutations):
    d = demo_dict()
    _mutate_all(d, mutations)
    try:
        case = load(d)
    except CaseError:
        return
    assert case.winding.turns >= 1
    assert all(math.isfinite(v) and v > 0 for v in (case.depth, case.winding.thickness))


@settings(max_examples=100, deadline=None)
@given(st.dictionaries(st.text(max_size=10), _values, max_size=6))
def test_fuzz_random_documents(doc):
    try:
        load(doc)
    except CaseError:
        pass


_winding_paths = st.sampled_from([
    "windings", "windings.0", "windings.1", "windings.0.name", "windings.1.name",
    "windings.0.limb", "windings.1.limb", "windings.1.turns", "windings.1.current",
    "windings.1.thickness", "windings.1.length", "windings.1.clearance", "windings.0.clearance",
    "windings.1.fill", "winding", "hand.leakage",
])


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(st.tuples(_winding_paths, st.one_of(_values, st.just(KeyError))), min_size=1,
                max_size=4))
def test_fuzz_mutated_windings(mutations):
    # the [[windings]] tables: any mutation gives a valid case or a CaseError;
    # a valid case's coils fit their windows without overlapping
    d = tomllib.loads((CASES / "demo_coupled_inductor.toml").read_text())
    _mutate_all(d, mutations)
    try:
        case = load(d)
    except CaseError:
        return
    names = [w.name for w in case.windings]
    assert len(set(names)) == len(names)
    for w in case.windings:
        assert w.turns >= 1 and w.thickness > 0 and w.clearance >= 0
        limb = case.limbs[w.limb]
        assert w.inner + w.clearance + w.thickness <= min(limb.room_minus, limb.room_plus) \
            * (1 + 1e-9)


def test_a_misspelt_required_key_is_named_with_the_missing_one():
    # a required key given under a misspelt name: the error names both
    d = demo_dict()
    d["core"]["depht"] = d["core"].pop("depth")
    with pytest.raises(CaseError) as info:
        case_from_dict(d)
    assert info.value.key == "core.depth"
    assert "missing key ('core.depht' is given: a misspelling of 'depth'?)" in str(info.value)
