"""Core families as plug-ins: the registry, a family added from outside the
package, and the [core] keys each family exposes to sweeps and tolerances."""
import tomllib
from pathlib import Path

import pytest

from magcheck.compare.design import families
from magcheck.compare.reading.casefile import case_from_dict
from magcheck.compare.errors import CaseError
from magcheck.compare.design.families import FAMILIES, WindowCore, get_family, register
from magcheck.compare.models.hand import run_hand
from magcheck.compare.design.keys import key_dimension, parse_vary

CASES = Path(__file__).resolve().parents[1] / "cases"


class SquareFrame(WindowCore):
    """A family written outside magcheck (a test's invention): a window core
    whose [core] table gives one size for a square frame."""

    name = "square-frame"
    core_keys = ("size", "limb_width", "depth")

    def read_core(self, t):
        from magcheck.compare.design.families.window_core import WindowCoreDims

        s = t.quantity("size", "length")
        w = t.quantity("limb_width", "length")
        return WindowCoreDims(s, s, w, w, w, w, t.quantity("depth", "length"))


@pytest.fixture
def square(monkeypatch):
    monkeypatch.setitem(FAMILIES, "square-frame", SquareFrame())
    return FAMILIES["square-frame"]


def _choke(core: dict, family: str) -> dict:
    data = tomllib.loads((CASES / "demo_choke.toml").read_text())
    data["case"]["family"] = family
    data["core"] = core
    return data


def test_a_family_added_from_outside_runs_the_hand_model_like_the_builtin_one(square):
    # the same square frame through the new family and the built-in window
    # core: identical networks, so identical hand results (exact)
    d = _choke({"size": "70 mm", "limb_width": "12 mm", "depth": "20 mm"}, "square-frame")
    ref = _choke({"outer_width": "70 mm", "outer_height": "70 mm", "limb_width": "12 mm",
                  "depth": "20 mm"}, "window-core")
    ours, theirs = run_hand(case_from_dict(d)), run_hand(case_from_dict(ref))
    assert ours.values() == theirs.values()


def test_core_keys_are_the_familys_own(square):
    case = case_from_dict(_choke({"size": "70 mm", "limb_width": "12 mm", "depth": "20 mm"},
                                 "square-frame"))
    assert key_dimension("core.size", case.family_model) == "length"
    with pytest.raises(CaseError, match="did you mean 'size'"):
        parse_vary("core.sise=50mm,60mm", family=case.family_model)
    # an EI core's key is not a window core's
    with pytest.raises(CaseError, match="not a numeric key of \\[core\\]"):
        key_dimension("core.centre_width", get_family("window-core"))
    assert key_dimension("core.centre_width", get_family("ei-core")) == "length"


def test_register_refuses_a_taken_name_and_an_incomplete_family(square):
    with pytest.raises(ValueError, match="already registered"):
        register(type("Other", (SquareFrame,), {})())
    with pytest.raises(TypeError, match="missing 'limb_names'"):
        register(type("Bare", (), {"name": "bare"})())


def test_plugins_load_from_the_entry_point_group(monkeypatch):
    class EP:
        name = "square"

        def load(self):
            return SquareFrame

    class Broken(EP):
        name = "broken"

        def load(self):
            raise ImportError("no such module")

    seen = {}

    def fake_entry_points(group):
        seen["group"] = group
        return [EP(), Broken()]

    import importlib.metadata

    monkeypatch.setattr(importlib.metadata, "entry_points", fake_entry_points)
    monkeypatch.setattr(families, "_plugins_loaded", False)
    monkeypatch.delitem(FAMILIES, "square-frame", raising=False)
    try:
        assert get_family("square-frame").name == "square-frame"
        assert seen["group"] == "magcheck.families"
    finally:
        FAMILIES.pop("square-frame", None)
    with pytest.raises(CaseError, match="unknown core family"):
        get_family("broken")


def test_a_case_finds_its_plugin_family_in_a_fresh_process(monkeypatch):
    # a worker process starts with the built-in families only: the case's
    # family lookup must load the entry-point plug-ins itself
    import importlib.metadata

    class EP:
        name = "square"

        def load(self):
            return SquareFrame

    monkeypatch.setattr(importlib.metadata, "entry_points", lambda group: [EP()])
    monkeypatch.setattr(families, "_plugins_loaded", False)
    FAMILIES["square-frame"] = SquareFrame()
    try:
        case = case_from_dict(_choke({"size": "70 mm", "limb_width": "12 mm",
                                      "depth": "20 mm"}, "square-frame"))
        del FAMILIES["square-frame"]  # as in a spawned worker
        assert case.family_model.name == "square-frame"
    finally:
        FAMILIES.pop("square-frame", None)
