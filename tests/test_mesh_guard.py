"""A mesh far too fine is refused before gmsh runs, naming the key, the
estimate and the override; the estimate tracks gmsh's real count."""

from __future__ import annotations

import dataclasses
import time
from pathlib import Path

import pytest

from magcheck.compare.reading.casefile import case_from_dict, load_case
from magcheck.compare.front.cli import main
from magcheck.compare.errors import CaseError
from magcheck.compare.models.fe import MAX_TRIANGLES, case_layout, guard_mesh_size
from magcheck.fem2d.mesher import TRIANGLE_ESTIMATE_RATIO, estimate_triangles, mesh_layout

CASES = Path(__file__).resolve().parents[1] / "cases"


def _with_fe(case, **fe):
    return dataclasses.replace(case, fe=dataclasses.replace(case.fe, **fe))


@pytest.mark.parametrize("name, fe", [
    ("demo_choke", {}),
    pytest.param("demo_ei_inductor", {}, marks=pytest.mark.slow),
    pytest.param("demo_saturating_choke", {}, marks=pytest.mark.slow),
    pytest.param("demo_choke", {"gap_elements": 12}, marks=pytest.mark.slow),
    pytest.param("demo_saturating_choke", {"gap_elements": 12}, marks=pytest.mark.slow),
    pytest.param("demo_ei_inductor", {"mesh_size": 0.5e-3}, marks=pytest.mark.slow),
])
def test_estimate_tracks_the_real_count(name, fe):
    case = _with_fe(load_case(CASES / f"{name}.toml"), **fe)
    for refine in (1.0, 1.5):
        layout = case_layout(case, refine=refine)
        real = mesh_layout(layout).triangles.shape[1]
        ratio = real / estimate_triangles(layout)
        lo, hi = TRIANGLE_ESTIMATE_RATIO
        assert lo <= ratio <= hi, (name, fe, refine, ratio)


def _tiny_mesh_case(tmp_path: Path) -> Path:
    text = (CASES / "demo_choke.toml").read_text()
    assert "[fe]" in text
    text = text.replace("[fe]", '[fe]\nmesh_size = "0.02 mm"', 1)
    path = tmp_path / "fine.toml"
    path.write_text(text)
    return path


def test_far_too_fine_mesh_is_bad_input_at_once(tmp_path, capsys):
    path = _tiny_mesh_case(tmp_path)
    t0 = time.perf_counter()
    assert main(["check", str(path)]) == 2
    assert time.perf_counter() - t0 < 10.0  # no meshing happened (generous: shared machine)
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1
    assert "fe.mesh_size = '0.02 mm'" in err[0] and "allow_large" in err[0] and "triangles" in err[0]


def test_too_many_gap_elements_names_gap_elements():
    case = _with_fe(load_case(CASES / "demo_choke.toml"), gap_elements=1000)
    with pytest.raises(CaseError) as exc:
        guard_mesh_size(case)
    assert exc.value.key == "fe.gap_elements" and exc.value.value == 1000


def test_allow_large_lets_the_estimate_through():
    case = _with_fe(load_case(CASES / "demo_choke.toml"), mesh_size=0.02e-3, allow_large=True)
    assert guard_mesh_size(case) > MAX_TRIANGLES  # no error: the caller asked for it


def test_refined_mesh_of_the_uncertainty_counts_too():
    base = load_case(CASES / "demo_choke.toml")
    n1 = guard_mesh_size(base)
    n15 = guard_mesh_size(base, refine=1.5)
    assert 1.7 < n15 / n1 < 2.6  # elements 1.5x smaller: about 2.25x the triangles


def test_allow_large_must_be_boolean():
    text = (CASES / "demo_choke.toml").read_text().replace("[fe]", "[fe]\nallow_large = 1", 1)
    import tomllib

    with pytest.raises(CaseError) as exc:
        case_from_dict(tomllib.loads(text), base_dir=CASES)
    assert exc.value.key == "fe.allow_large"


@pytest.mark.parametrize("command", [
    ["sweep", "--vary", "winding.current=1:2A:2"],
    ["tolerance", "--samples", "2", "--fe-samples", "1"],
])
def test_sweep_and_tolerance_refuse_a_far_too_fine_mesh_before_running(command, tmp_path, capsys):
    text = (CASES / "demo_choke_margins.toml").read_text().replace(
        "[fe]", '[fe]\nmesh_size = "0.02 mm"', 1)
    path = tmp_path / "fine.toml"
    path.write_text(text)
    assert main([command[0], str(path), *command[1:]]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "fe.mesh_size = '0.02 mm'" in err[0] and "--allow-large" in err[0]


def test_allow_large_option_of_sweep_and_tolerance_reaches_every_derived_case(tmp_path):
    from magcheck.compare.studies.sweep import case_source, make_case

    path = _tiny_mesh_case(tmp_path)
    src, case = case_source(path, allow_large=True)
    assert case.fe.allow_large
    varied = make_case(src, {"winding.current": 3.0})
    assert varied.fe.allow_large and varied.winding.current == 3.0
    assert guard_mesh_size(varied) > MAX_TRIANGLES  # let through, as asked
    plain, _ = case_source(path)
    assert not make_case(plain, {}).fe.allow_large
    assert src.sha256 == plain.sha256  # the file's hash, not the option's
