"""The Python API (compare.front.api): the README's example runs as written, and
the API gives the same results as the command line."""
import json
import re
import tomllib
from pathlib import Path

import pytest

from magcheck.compare.front import api
from magcheck.compare.front.cli import main

ROOT = Path(__file__).resolve().parents[1]


def _readme_example() -> str:
    text = (ROOT / "README.md").read_text()
    section = text[text.index("## Python API"):]
    return re.search(r"```python\n(.*?)```", section, re.S).group(1)


@pytest.mark.slow
def test_the_readme_example_runs(monkeypatch, capsys):
    monkeypatch.chdir(ROOT)
    exec(compile(_readme_example(), "README.md", "exec"), {})
    out = capsys.readouterr().out
    assert "hand: L = " in out and "gap B" in out
    # the sweep line: four incremental inductances in mH, falling with current
    values = json.loads(out.strip().splitlines()[-1])
    assert len(values) == 4 and values == sorted(values, reverse=True)


@pytest.mark.slow
def test_the_api_check_is_the_cli_check(tmp_path):
    out = tmp_path / "c.json"
    assert main(["check", str(ROOT / "cases/demo_choke.toml"), "--json", str(out)]) == 0
    cli = json.loads(out.read_text())
    doc = api.to_json(api.check(api.load(ROOT / "cases/demo_choke.toml")))
    for k in ("inductance", "gap_B", "incremental_inductance"):
        assert doc["fe"][k] == pytest.approx(cli["fe"][k], rel=1e-9)
        assert doc["hand"][k] == cli["hand"][k]


def test_load_from_a_dict_equals_load_from_the_file_and_bad_input_raises():
    data = tomllib.loads((ROOT / "cases/demo_choke.toml").read_text())
    a, b = api.load(data), api.load(ROOT / "cases/demo_choke.toml")
    assert api.hand(a).values() == api.hand(b).values()
    data["winding"]["turns"] = 0
    with pytest.raises(api.CaseError, match="winding.turns"):
        api.load(data)
    with pytest.raises(api.CaseError, match="vary"):
        api.sweep(ROOT / "cases/demo_choke.toml")
    with pytest.raises(TypeError):
        api.to_json(42)


def test_a_hand_only_sweep_from_a_dict():
    data = tomllib.loads((ROOT / "cases/demo_choke.toml").read_text())
    sw = api.sweep(data, "winding.current=1A,4A", with_fe=False)
    assert [p.current for p in sw.points] == [1.0, 4.0]
    one = api.hand(api.load(data))  # 6 A in the file
    assert sw.points[1].hand["inductance"] != one.inductance
    assert api.to_json(one)["inductance"] == one.inductance
