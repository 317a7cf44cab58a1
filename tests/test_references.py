"""Every source citation in the code, tests and docs resolves in the project's
own docs/references.md, and nothing cites a file outside the repository."""

from __future__ import annotations

import re
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
REFS = ROOT / "docs" / "references.md"
# the file name of the outside list, built so this file does not cite it
OUTSIDE = "REFERENCES" + ".md"
SCANNED = ("analytic", "fem2d", "compare", "tests", "tools", "bench")
CITE = re.compile(r"docs/references\.md[\s#]*sections?\s+(\d+(?:\s*(?:,|and)\s*\d+)*)")


def _texts() -> dict[Path, str]:
    files = [p for d in SCANNED for p in (ROOT / d).rglob("*.py")]
    files += [ROOT / "README.md", ROOT / "DEVELOPERS.md"]
    return {p: p.read_text(encoding="utf-8") for p in files}


def cited_sections(text: str) -> set[int]:
    out: set[int] = set()
    for m in CITE.finditer(text):
        out.update(int(n) for n in re.findall(r"\d+", m.group(1)))
    return out


def defined_sections(text: str) -> set[int]:
    """Sections with both their stable anchor and their numbered heading."""
    anchors = {int(n) for n in re.findall(r'<a id="s(\d+)"></a>', text)}
    heads = {int(n) for n in re.findall(r"^## (\d+)\. ", text, flags=re.M)}
    return anchors & heads


def test_citation_pattern_reads_every_form():
    assert cited_sections("(docs/references.md section 5: W = L I^2/2)") == {5}
    assert cited_sections("[secondary, docs/references.md\n    # section 1]") == {1}
    assert cited_sections("docs/references.md sections 2, 7 and 9") == {2, 7, 9}


def test_every_cited_section_exists():
    defined = defined_sections(REFS.read_text(encoding="utf-8"))
    missing = []
    n_cites = 0
    for path, text in _texts().items():
        secs = cited_sections(text)
        n_cites += len(secs)
        missing += [f"{path.relative_to(ROOT)}: section {n}" for n in sorted(secs - defined)]
    assert not missing, "cited but not in docs/references.md: " + "; ".join(missing)
    # the code does cite it (a scan that found nothing would pass vacuously)
    assert n_cites >= 20


def test_sections_numbered_in_order_with_anchors():
    text = REFS.read_text(encoding="utf-8")
    heads = [int(n) for n in re.findall(r"^## (\d+)\. ", text, flags=re.M)]
    assert heads == list(range(1, len(heads) + 1))
    assert defined_sections(text) == set(heads)


def test_nothing_cites_the_outside_list():
    offenders = [str(p.relative_to(ROOT)) for p, t in _texts().items() if OUTSIDE in t]
    assert not offenders, f"cite docs/references.md instead of {OUTSIDE}: {offenders}"


def test_readme_links_the_references():
    assert "(docs/references.md)" in (ROOT / "README.md").read_text(encoding="utf-8")
