"""The check on a terminal: the two verdicts first, the table by topic within
100 columns, notes wrapped, Unicode units where the stream can print them;
Markdown and the HTML report lead with the same verdicts."""

from __future__ import annotations

import dataclasses
import io
import math
from pathlib import Path

import pytest

from magcheck.compare.front.commands.check import print_check
from magcheck.compare.judge.check import run_check
from magcheck.compare.outputs.serialize import (check_markdown, margin_cells, pretty_units,
                                                row_topic, table_cells, verdict_banners)
from magcheck.compare.reading.casefile import load_case

CASES = Path(__file__).resolve().parents[1] / "cases"


class _Stream(io.StringIO):
    def __init__(self, encoding: str = "utf-8", tty: bool = False):
        super().__init__()
        self._enc, self._tty = encoding, tty

    @property
    def encoding(self):  # type: ignore[override]
        return self._enc

    def isatty(self) -> bool:
        return self._tty


@pytest.fixture(scope="module")
def choke():
    return run_check(load_case(CASES / "demo_choke.toml"), estimate_error=False)


def _printed(res, monkeypatch, columns="100", **kw) -> str:
    monkeypatch.setenv("COLUMNS", columns)
    s = _Stream(**{k: kw.pop(k) for k in ("encoding", "tty") if k in kw})
    print_check(res, s, **kw)
    return s.getvalue()


def test_verdicts_come_first_and_everything_fits_100_columns(choke, monkeypatch):
    text = _printed(choke, monkeypatch)
    lines = text.splitlines()
    assert lines[1].startswith("design:    PASS") and "agreement: PASS" in "\n".join(lines[2:6])
    assert max(len(ln) for ln in lines) <= 100
    # every quantity named whole (wrapped, never cut), grouped by topic
    assert "── field and flux ──" in text and "── inductances ──" in text
    assert text.index("── field and flux ──") < text.index("── inductances ──")
    assert "incremen..." not in text and "(incremental)" in text
    assert "µWb" in text and "uWb" not in text  # Unicode units
    # the breakdown in one line unless asked for
    assert "(the full table: --breakdown)" in text and "dL/dI diff %" not in text
    full = _printed(choke, monkeypatch, breakdown=True)
    assert "dL/dI diff %" in full


def test_wide_prints_every_column(choke, monkeypatch):
    text = _printed(choke, monkeypatch, wide=True)
    head = next(ln for ln in text.splitlines() if ln.startswith("quantity"))
    assert "hand 3D" in head and "FE 3D" in head and "dL/dI diff %" in text


def test_narrow_terminal_wraps_notes(choke, monkeypatch):
    text = _printed(choke, monkeypatch, columns="60")
    lines = text.splitlines()
    start = next(i for i, ln in enumerate(lines) if ln.startswith("- "))
    prose = lines[:1] + lines[start:]  # the title, the notes and what follows them
    assert max(len(ln) for ln in prose) <= 60
    assert sum(ln.startswith("- ") for ln in lines) == len(choke.notes) + 1  # + the FE line


def test_ascii_stream_gets_ascii_units(choke, monkeypatch):
    text = _printed(choke, monkeypatch, encoding="ascii")
    text.encode("ascii")  # would raise on µ, ≥ or a box rule
    assert "uWb" in text


def test_terminal_colours_the_verdicts(choke, monkeypatch):
    text = _printed(choke, monkeypatch, tty=True)
    first = text.splitlines()[1]
    assert "\x1b[" in first and "design:    PASS" in first  # styled banner line


def test_banners_name_what_failed_and_the_tightest_margin(choke):
    rows = list(choke.rows)
    peak = next(r for r in rows if r.key == "peak_B")
    # two margins: one met with 10 % left, one failed by 20 %
    met = dataclasses.replace(peak, key="margin:a", label="inductance at 6 A, min", unit="H",
                              fe_3d=3.3e-3, limit_value=3.0e-3, margin_pct=10.0,
                              limit_kind="min", verdict="pass")
    failed = dataclasses.replace(peak, key="margin:b", label="peak core B, max", unit="T",
                                 fe_3d=1.2, limit_value=1.0, margin_pct=-20.0,
                                 limit_kind="max", verdict="FAIL")
    res = dataclasses.replace(choke, rows=tuple(rows + [met, failed]))
    design, agree = verdict_banners(res)
    assert design.status == "FAIL" and not design.ok
    assert any(d.startswith("failed: peak core B, max") and "20 % over" in d
               for d in design.details)
    assert any(d.startswith("tightest margin: inductance at 6 A, min") and "10 % left" in d
               for d in design.details)
    assert table_cells(failed)[6] == "FAIL, 20 % over"
    assert margin_cells(met)[3] == "≥ 3 mH" and margin_cells(met)[4] == "10 % left"
    # agreement: the row using the largest share of its limit
    use = {r.label: abs(r.diff_pct) / r.limit_pct for r in rows
           if r.judges == "agreement" and r.limit_pct and math.isfinite(r.diff_pct)}
    worst = max(use, key=use.get)
    assert agree.ok and agree.details[0].startswith(f"closest to its limit: {worst}")


def test_markdown_leads_with_the_verdicts_and_keeps_its_columns(choke):
    md = check_markdown(choke)
    assert md.index("**DESIGN MARGINS: PASS**") < md.index("| quantity |")
    assert md.index("**HAND VS FE: PASS**") < md.index("| quantity |")
    assert "| quantity | hand | FE | FE +/- | diff % | limit % | verdict | hand 3D | FE 3D |" in md
    assert "design:    PASS" in md  # the verdict lines stay at the end


def test_topics_and_unicode_units():
    assert pretty_units("221.6 uWb, >= 3 mH, 4.4 A/mm^2, +/-") == "221.6 µWb, ≥ 3 mH, 4.4 A/mm², ±"
    assert pretty_units("a unit cell, run time") == "a unit cell, run time"  # words untouched
    row = type("R", (), {"judges": "agreement"})
    for key, topic in [("gap_B", "field and flux"), ("flux_linkage:primary", "field and flux"),
                       ("L:primary,secondary", "inductances"), ("force_pull", "force"),
                       ("magnet_H", "magnet"), ("magnetizing_current_rms", "drive")]:
        r = row()
        r.key = key
        assert row_topic(r) == topic, key
