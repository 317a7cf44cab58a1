"""docs/api.md: every fenced python block runs, in order, in one session from
the repository's root (the page's asserts are its checks); and the API
module's own docstring example (doctest)."""
import doctest
import re
from pathlib import Path

import matplotlib
import pytest

ROOT = Path(__file__).resolve().parents[1]


def _blocks() -> list[str]:
    return re.findall(r"```python\n(.*?)```", (ROOT / "docs/api.md").read_text(), re.S)


@pytest.mark.slow  # ~14 s: two FE solves, the report's figures
def test_the_api_page_examples_run(monkeypatch, capsys):
    matplotlib.use("Agg")
    monkeypatch.chdir(ROOT)
    blocks = _blocks()
    assert len(blocks) >= 8
    ns: dict = {}
    for i, code in enumerate(blocks):
        exec(compile(code, f"docs/api.md block {i + 1}", "exec"), ns)
    out = capsys.readouterr().out
    assert "gaps[0].length = '-0.1 mm': must be positive" in out
    assert "mean |B| in the core: " in out


def test_the_api_module_docstring_example():
    import magcheck.compare.front.api as api

    import os

    before = Path.cwd()
    os.chdir(ROOT)  # the example reads cases/demo_choke.toml
    try:
        res = doctest.testmod(api)
    finally:
        os.chdir(before)
    assert res.attempted >= 5 and res.failed == 0
