"""tools/mutation_probe.py stays in step with the code: every mutation's
snippet occurs exactly once in its file (a stale snippet would mutate
nothing and 'survive' for the wrong reason)."""

from __future__ import annotations

import importlib.util
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
_spec = importlib.util.spec_from_file_location("mutation_probe", ROOT / "tools" / "mutation_probe.py")
assert _spec is not None and _spec.loader is not None
probe = importlib.util.module_from_spec(_spec)
sys.modules["mutation_probe"] = probe  # its dataclasses look themselves up there
_spec.loader.exec_module(probe)


@pytest.mark.parametrize("m", probe.MUTATIONS, ids=[m.name for m in probe.MUTATIONS])
def test_snippet_occurs_once(m):
    text = (ROOT / m.file).read_text(encoding="utf-8")
    assert text.count(m.old) == 1, f"{m.name}: update the snippet to the current code"
    assert m.new != m.old
    for t in m.tests:  # a file, or a file::test node id
        path, _, node = t.partition("::")
        assert (ROOT / path).is_file(), f"{m.name}: no test file {path}"
        if node:
            name = node.split("::")[-1].split("[")[0]
            assert f"def {name}(" in (ROOT / path).read_text(encoding="utf-8"), \
                f"{m.name}: no test {node} in {path}"
