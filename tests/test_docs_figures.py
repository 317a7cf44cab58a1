"""The figures under docs/ are what the current code draws (their stamps:
case hash and defining values, tools/make_docs_figures.py)."""

from __future__ import annotations

import importlib.util
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


def _tool():
    spec = importlib.util.spec_from_file_location("make_docs_figures",
                                                  ROOT / "tools" / "make_docs_figures.py")
    mod = importlib.util.module_from_spec(spec)
    assert spec.loader is not None
    spec.loader.exec_module(mod)
    return mod


@pytest.mark.slow
def test_docs_figures_are_current():
    tool = _tool()
    for name, (case_file, _) in tool.DOCS_FIGURES.items():
        want = tool.stamp(tool._result(case_file))
        have = tool.stored_stamp(ROOT / name)
        assert have == want, (f"{name} is stale: run PYTHONPATH=. python "
                              "tools/make_docs_figures.py and commit it")


def test_stamp_is_read_back_from_a_written_png(tmp_path):
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    from magcheck.compare.outputs.output import save_figure

    tool = _tool()
    fig, ax = plt.subplots()
    ax.plot([0, 1], [0, 1])
    save_figure(fig, tmp_path / "a.png", metadata={tool.STAMP_KEY: "x=1"})
    plt.close(fig)
    assert tool.stored_stamp(tmp_path / "a.png") == "x=1"
