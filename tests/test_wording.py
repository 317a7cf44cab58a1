"""Wording of the check's notes, errors and printed summaries.

The notes with a direction (more/less, over/under, optimistic/pessimistic)
must follow the sign of the difference they describe; each test forces both
directions with hand-built rows.
"""

from __future__ import annotations

import math
from pathlib import Path
from types import SimpleNamespace

import pytest

from magcheck.compare.reading.casefile import load_case
from magcheck.compare.judge.check import LABELS, Row, explain

CASES = Path(__file__).resolve().parent.parent / "cases"
KEYS = ("gap_B", "core_B", "path_H", "flux", "flux_linkage", "inductance",
        "incremental_inductance", "energy")


def _rows(**diffs: float) -> tuple[Row, ...]:
    """Rows with FE = 1 and hand = 1 + diff/100 (so diff_pct is the given one)."""
    out = []
    for k in KEYS:
        d = diffs.get(k, 0.0)
        out.append(Row(k, LABELS[k], "-", 1.0 + d / 100.0, 1.0, 0.0, d, 10.0, "pass"))
    return tuple(out)


def _fe(peak_B: float = 0.1) -> SimpleNamespace:
    return SimpleNamespace(fine=SimpleNamespace(peak_B=peak_B, max_B=peak_B, peak_B_at=(0.0, 0.0)))


HAND = SimpleNamespace(fringing_model="area", leakage_permeance=0.0)  # no window leakage


def _notes(case, rows, peak_B: float = 0.1) -> str:
    return "\n".join(explain(case, rows, HAND, _fe(peak_B)))  # type: ignore[arg-type]


@pytest.fixture(scope="module")
def saturating():
    return load_case(CASES / "demo_saturating_choke.toml")


@pytest.mark.parametrize("d", [-12.0, +12.0])
def test_flux_note_names_the_side_that_carries_more(saturating, d: float) -> None:
    text = _notes(saturating, _rows(flux=d))
    if d < 0:
        assert "The FE carries 12 % more flux" in text
        assert "hand model carries" not in text
    else:
        assert "The hand model carries 12 % more flux" in text
        assert "FE carries" not in text


@pytest.mark.parametrize("d, word", [(-8.0, "understates"), (+8.0, "overstates")])
def test_gap_note_over_or_under(saturating, d: float, word: str) -> None:
    text = _notes(saturating, _rows(gap_B=d))
    assert f"fringing model {word} the gap B by 8 %" in text
    other = "overstates" if word == "understates" else "understates"
    assert other not in text


@pytest.mark.parametrize("d", [-3.8, +3.8])
def test_saturation_note_optimistic_only_when_hand_is_above(saturating, d: float) -> None:
    # A peak B of 2.5 T is past the knee of every built-in steel curve.
    text = _notes(saturating, _rows(inductance=d), peak_B=2.5)
    assert "past the knee" in text
    if d > 0:
        assert "3.8 % above the FE: optimistic" in text
        assert "pessimistic" not in text
    else:
        assert "3.8 % below the FE: pessimistic" in text
        assert "optimistic" not in text


def test_saturation_note_without_a_difference_has_no_direction(saturating) -> None:
    text = _notes(saturating, _rows(inductance=0.1), peak_B=2.5)
    assert "past the knee" in text
    assert "optimistic" not in text and "pessimistic" not in text


def _demo_dict() -> dict:
    import tomllib
    return tomllib.loads((CASES / "demo_choke.toml").read_text())


ALL_AGREEMENT = ("gap_B, core_B, path_H, flux, flux_linkage, inductance, "
                 "incremental_inductance, energy, force, force_pull, B_peak, "
                 "magnetizing_current_peak, magnetizing_current_rms, "
                 "magnetizing_inductance, leakage_inductance, inrush_current_peak, B_limb_peak, "
                 "R_dc, R_ac, R_ac_ratio, winding_loss, L_ac, pull_in_current, drop_out_current, "
                 "operate_time, release_time, core_loss, copper_loss, "
                 "winding_loss_ac, total_loss, efficiency, efficiency_part, regulation, "
                 "temperature_rise")


def test_agreement_typo_lists_every_key_with_a_suggestion() -> None:
    from magcheck.compare.reading.casefile import case_from_dict
    from magcheck.compare.errors import CaseError
    data = _demo_dict()
    data.setdefault("margins", {})["agreement"] = {"inductanse": 8}
    with pytest.raises(CaseError) as exc:
        case_from_dict(data, base_dir=CASES)
    text = str(exc.value)
    assert text.startswith("margins.agreement.inductanse = 8: unknown key")
    assert "did you mean 'inductance'?" in text
    assert f"valid keys: {ALL_AGREEMENT}" in text
    assert "takes no keys" not in text


def test_agreement_unknown_key_beside_a_valid_one_lists_all_keys() -> None:
    from magcheck.compare.reading.casefile import case_from_dict
    from magcheck.compare.errors import CaseError
    data = _demo_dict()
    # (a key like no valid one: "foo" now resembles "force")
    data.setdefault("margins", {})["agreement"] = {"inductance": 8, "zzq": 3}
    with pytest.raises(CaseError) as exc:
        case_from_dict(data, base_dir=CASES)
    text = str(exc.value)
    assert text.startswith("margins.agreement.zzq = 3: unknown key")
    assert "did you mean" not in text
    assert text.endswith(f"valid keys: {ALL_AGREEMENT}")


def _case_with(**edits) -> "object":
    """demo_choke with edits {"table.key": value}, loaded with warnings recorded."""
    import warnings

    from magcheck.compare.reading.casefile import case_from_dict
    data = _demo_dict()
    for dotted, value in edits.items():
        table, key = dotted.split(".")
        data[table][key] = value
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        case = case_from_dict(data, base_dir=CASES)
    return case, [str(w.message) for w in caught if w.category.__name__ == "CaseWarning"]


@pytest.mark.parametrize("key, value, needle", [
    ("core.depth", 20, "core.depth = '20 m': outside the plausible 1 mm .. 2 m"),
    ("core.outer_width", "3 m", "core.outer_width = '3 m': outside the plausible 1 mm .. 2 m"),
    ("core.outer_height", "2.5 m", "core.outer_height = '2.5 m': outside the plausible"),
])
def test_implausible_core_dimension_warns(key: str, value, needle: str) -> None:
    # 3 m / 2.5 m outer sizes need limb widths that still fit: keep the demo's.
    _, msgs = _case_with(**{key: value})
    assert any(needle in m for m in msgs), msgs


def test_tiny_depth_warns() -> None:
    _, msgs = _case_with(**{"core.depth": "0.5 mm"})
    # echoed as written, not in bare metres
    assert any(m.startswith("core.depth = '0.5 mm'") for m in msgs), msgs


def test_sub_micron_gap_warns() -> None:
    import warnings

    from magcheck.compare.reading.casefile import case_from_dict
    data = _demo_dict()
    data["gaps"][0]["length"] = "0.5 um"
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        case_from_dict(data, base_dir=CASES)
    msgs = [str(w.message) for w in caught]
    assert any(m.startswith("gaps[0].length = '0.5 um': below 1 um") for m in msgs), msgs


def test_air_like_core_warns_and_the_notes_say_so() -> None:
    from magcheck.compare.reading.casefile import plausibility_issues
    case, msgs = _case_with(**{"materials.core": {"mu_r": 1}})
    assert any(m.startswith("materials.core.mu_r = 1.0: core mu_r below 5") for m in msgs), msgs
    rows = _rows()
    text = _notes(case, rows)
    assert "Check the input: materials.core.mu_r = 1.0" in text
    assert len(plausibility_issues(case)) == 1


def test_bh_curve_initial_permeability_is_checked() -> None:
    # A B-H table whose initial slope is 3 mu0 (B = 3 mu0 H, then flattening).
    mu0 = 4e-7 * math.pi
    h = [0.0, 1000.0, 2000.0, 4000.0]
    b = [0.0, 3 * mu0 * 1000.0, 5 * mu0 * 1000.0, 8 * mu0 * 1000.0]
    _, msgs = _case_with(**{"materials.core": {"H": h, "B": b}})
    assert any(m.startswith("materials.core = ") and "initial relative permeability below 5" in m
               for m in msgs), msgs


def test_bundled_cases_raise_no_plausibility_warning() -> None:
    import warnings

    from magcheck.compare.reading.casefile import load_case
    for path in sorted(CASES.glob("*.toml")):
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            load_case(path)
        assert [str(w.message) for w in caught] == [], path.name


def test_within_fe_noise_only_inside_the_uncertainty():
    # 'within FE noise' means |hand - FE| <= the FE uncertainty, nothing wider
    # (README, "The check"); just outside it the agreement limit decides.
    from magcheck.compare.judge.check import _verdict

    fe, unc = 1.0, 0.01
    assert _verdict(0.5, 1.005, fe, unc, 10.0) == "within FE noise"
    assert _verdict(2.0, 1.02, fe, unc, 10.0) == "pass"
    assert _verdict(-2.0, 0.98, fe, unc, 1.0) == "FAIL"
    assert _verdict(20.0, 1.2, fe, unc, 10.0) == "FAIL"
