"""README.md's generated blocks (tools/make_readme.py) match the code: the
quick blocks (stored case results, hand model, argument parser) here, the
blocks that need FE runs in the slow tier."""

from __future__ import annotations

import difflib
import functools
import importlib.util
import re
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent


@functools.lru_cache(maxsize=1)
def _tool():
    spec = importlib.util.spec_from_file_location("make_readme", ROOT / "tools" / "make_readme.py")
    mod = importlib.util.module_from_spec(spec)
    sys.modules["make_readme"] = mod
    spec.loader.exec_module(mod)
    return mod


def _diff(old: str, new: str) -> str:
    return "".join(difflib.unified_diff(old.splitlines(keepends=True), new.splitlines(keepends=True),
                                        "README.md", "as tools/make_readme.py writes it"))


def test_readme_quick_blocks_match_the_code():
    tool = _tool()
    old = tool.README.read_text(encoding="utf-8")
    new = tool.render(old, slow=False)
    assert new == old, ("README.md is stale; run PYTHONPATH=. python3 tools/make_readme.py\n"
                        + _diff(old, new))


def test_a_stale_number_is_rewritten():
    # a stale pot-core hand inductance inside its block is put back, and
    # text outside the blocks is left alone
    tool = _tool()
    text = tool.README.read_text(encoding="utf-8")
    stale = re.sub(r"(<!-- generated: pot-core-L -->L )[0-9.]+( mH)", r"\g<1>9.999\2", text)
    assert stale != text
    assert tool.render(stale, slow=False) == tool.render(text, slow=False)
    edited = text.replace("## Layout", "## Layout of the code")
    assert tool.render(edited, slow=False) == tool.render(text, slow=False).replace(
        "## Layout", "## Layout of the code")


def test_command_reference_lists_every_option_of_the_parser():
    from magcheck.compare.front.cli import COMMANDS, build_parser

    tool = _tool()
    ref = tool.block_commands()
    parser = build_parser()
    subs = next(a for a in parser._actions if hasattr(a, "choices") and isinstance(a.choices, dict))
    for name in COMMANDS:
        for action in subs.choices[name]._actions:
            for opt in action.option_strings:
                if opt not in ("-h", "--help", "-v", "--verbose"):
                    assert f"`{opt}" in ref or f", {opt}" in ref, (name, opt)
    # the options the hand-written lists had missed
    verify = ref.split("**`magcheck verify`**")[1].split("**`magcheck")[0]
    tolerance = ref.split("**`magcheck tolerance`**")[1].split("**`magcheck")[0]
    for opt in ("--no-error-estimate", "--workers", "--scheduler"):
        assert f"`{opt}" in verify
    for opt in ("--workers", "--scheduler"):
        assert f"`{opt}" in tolerance


def test_unknown_or_missing_block_is_refused():
    tool = _tool()
    text = tool.README.read_text(encoding="utf-8")
    with pytest.raises(ValueError, match="no generator"):
        tool.render(text + "\n<!-- generated: no-such-block -->x<!-- end generated -->\n", slow=False)
    without = re.sub(r"<!-- generated: drawn-L -->.*?<!-- end generated -->", "3.4 mH", text, flags=re.S)
    with pytest.raises(ValueError, match="drawn-L"):
        tool.render(without, slow=False)


def _slow_names() -> list[str]:
    return list(_tool().SLOW)


@pytest.mark.slow
@pytest.mark.parametrize("name", _slow_names())
def test_readme_slow_block_matches_the_code(name):
    # FE runs (a check printout, force-stroke sweeps, the transformer's drive,
    # leakage and open-boundary studies): one block at a time, so a failure
    # names its block; measured run times and a rounding-level Newton
    # residual are not compared
    tool = _tool()
    text = tool.README.read_text(encoding="utf-8")
    blocks = [m for m in tool.BLOCK.finditer(text) if m["name"] == name]
    assert len(blocks) == 1 and blocks[0]["slow"], name
    old = tool.normalize(blocks[0]["body"])
    new = tool.normalize(tool.SLOW[name]())
    assert new == old, (f"README.md block {name} is stale; run PYTHONPATH=. python3 "
                        f"tools/make_readme.py --slow\n" + _diff(old, new))
