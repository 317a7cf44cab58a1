"""``magcheck check CASE --dxf FILE``: the built geometry as a DXF drawing.

The drawing holds every region of the case's field model on a layer of its
name; the drawn family reads it back to the same regions.  Checked here:
the layers and their areas against the case file's dimensions (worked out
by hand in each test), every bundled case's drawing read back by the DXF
reader to the mesh's regions, a drawn case built on the written drawing
(the companion case file written by :func:`_companion`) giving the same
hand values (planar) and the same FE values within the FE's uncertainty
(planar and r-z), and the command line: written before the solve, and
``--geometry-only`` without one.
"""

from __future__ import annotations

import math
import warnings
from pathlib import Path

import pytest

from magcheck.compare.design.coremodel import core_model
from magcheck.compare.design.dxf import read_dxf_regions
from magcheck.compare.front.cli import main
from magcheck.compare.models.hand import HAND_KEYS, run_hand
from magcheck.compare.outputs.drawing import dxf_text, region_outlines, write_dxf
from magcheck.compare.reading.casefile import case_from_dict, load_case

CASES = Path(__file__).resolve().parents[1] / "cases"
BUNDLED = sorted(p.name for p in CASES.glob("*.toml"))


def _load(name: str):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return load_case(CASES / name)


def _layer_areas(path: Path) -> dict[str, float]:
    """Each layer's area (mm^2) as the drawn family's reader sees it."""
    return {layer: sum(s.area() for s in shapes) * 1e6
            for layer, shapes in read_dxf_regions(path).items()}


def _mesh_areas(case) -> dict[str, float]:
    """Each region's area (mm^2) in the mesh, a later region cutting the
    earlier ones: the rectangles' union less the later regions', counted on
    a fine grid of the regions' own edges (independent of the writer's
    tracing: cell by cell, no outlines)."""
    regions = core_model(case).regions
    xs = sorted({v for r in regions for s in r.shapes for v in (s.x0, s.x1)})
    ys = sorted({v for r in regions for s in r.shapes for v in (s.y0, s.y1)})
    out = {r.name: 0.0 for r in regions}
    for x0, x1 in zip(xs, xs[1:]):
        for y0, y1 in zip(ys, ys[1:]):
            cx, cy = 0.5 * (x0 + x1), 0.5 * (y0 + y1)
            owner = None
            for r in regions:
                if any(s.x0 < cx < s.x1 and s.y0 < cy < s.y1 for s in r.shapes):
                    owner = r.name
            if owner is not None:
                out[owner] += (x1 - x0) * (y1 - y0) * 1e6
    return out


def test_demo_choke_layers_and_areas_from_its_dimensions(tmp_path):
    # demo_choke.toml: a 60 x 70 mm window core, 12 mm limbs, a 0.6 mm gap
    # across the 12 mm right limb, coil sides 10 x 40 mm: the core less its
    # 36 x 46 mm window and less the gap that cuts it
    path = tmp_path / "choke.dxf"
    write_dxf(_load("demo_choke.toml"), path)
    areas = _layer_areas(path)
    assert set(areas) == {"core", "gap0", "coil+", "coil-"}
    expected = {"core": 60 * 70 - 36 * 46 - 12 * 0.6, "gap0": 12 * 0.6, "coil+": 10 * 40,
                "coil-": 10 * 40}
    for name, a in expected.items():
        # the points go through mm and back: round-off only
        assert areas[name] == pytest.approx(a, rel=1e-12), name


def test_pot_core_layers_and_areas_from_its_dimensions(tmp_path):
    # demo_pot_core_choke.toml (r-z, x = r): bore 1.5 mm, post 5.4 mm, outer
    # radius 12.5 mm, wall 1.8 mm, plates 2.8 mm, window 11 mm high, a 0.4 mm
    # gap across the post; the coil 4.2 x 9.6 mm
    path = tmp_path / "pot.dxf"
    write_dxf(_load("demo_pot_core_choke.toml"), path)
    areas = _layer_areas(path)
    assert set(areas) == {"core", "gap", "coil"}
    height = 2 * 2.8 + 11
    core = (12.5 - 1.5) * height - (12.5 - 1.8 - 5.4) * 11 - (5.4 - 1.5) * 0.4
    assert areas["core"] == pytest.approx(core, rel=1e-12)
    assert areas["gap"] == pytest.approx((5.4 - 1.5) * 0.4, rel=1e-12)
    assert areas["coil"] == pytest.approx(4.2 * 9.6, rel=1e-12)
    # in r >= 0, the axis side of the core at the bore
    boxes = [s.bbox() for shapes in read_dxf_regions(path).values() for s in shapes]
    assert min(b[0] for b in boxes) == pytest.approx(1.5e-3, rel=1e-12)


@pytest.mark.parametrize("name", BUNDLED)
def test_every_bundled_case_reads_back_to_its_regions(name, tmp_path):
    case = _load(name)
    path = tmp_path / "geometry.dxf"
    path.write_text(dxf_text(case))
    areas = _layer_areas(path)
    model = core_model(case)
    assert set(areas) == {r.name for r in model.regions}
    if all(type(s).__name__ == "Rect" for r in model.regions for s in r.shapes):
        mesh = _mesh_areas(case)
    else:  # a drawn case: written as drawn (a gap over the core it cuts)
        mesh = {r.name: sum(s.area() for s in r.shapes) * 1e6 for r in model.regions}
    for layer, a in areas.items():
        assert a == pytest.approx(mesh[layer], rel=1e-9), layer


def test_a_cell_grid_keeps_corner_touching_parts_apart():
    # two squares meeting at one corner are two outlines, not a figure eight
    from magcheck.compare.outputs.drawing import _trace

    loops = _trace({(0, 0), (1, 1)})
    assert sorted(sorted(loop) for loop in loops) == [[(0, 0), (0, 1), (1, 0), (1, 1)],
                                                     [(1, 1), (1, 2), (2, 1), (2, 2)]]
    # a ring of eight cells: its outline counter-clockwise, its hole clockwise
    ring = {(i, j) for i in range(3) for j in range(3)} - {(1, 1)}
    signed = []
    for loop in _trace(ring):
        signed.append(0.5 * sum(x0 * y1 - x1 * y0 for (x0, y0), (x1, y1)
                                in zip(loop, [*loop[1:], loop[0]])))
    assert sorted(signed) == [-1.0, 9.0]


def test_round_shapes_are_written_as_circles_and_arcs(tmp_path):
    # shapes no built-in family makes but a drawn case or fem2d may hold: a
    # lone disk is a CIRCLE read back exactly; an annulus (two circles) and a
    # half disk (a bulge-1 arc and its chord) come back as chords 2 degrees
    # apart, whose polygon's area is low by 1 - sin(2 deg)/(2 deg / 1 rad) =
    # 2.0e-4 relative (compare.design.dxf.ARC_STEP_DEG; exact geometry)
    from magcheck.compare.outputs.drawing import drawing_text, outlines_of
    from magcheck.fem2d.layout import Annulus, Disk, HalfDisk, Polygon, Region

    regions = [Region("disk", (Disk(0.01, 0.0, 0.002),), material="air", kind="coil"),
               Region("ring", (Annulus(0.0, 0.02, 0.003, 0.005),), material="core", kind="core"),
               Region("half", (HalfDisk(0.0, -0.02, 0.004),), material="air", kind="gap"),
               Region("frame", (Polygon(((0.02, 0.0), (0.03, 0.0), (0.03, 0.01), (0.02, 0.01)),
                                        (((0.022, 0.002), (0.028, 0.002), (0.028, 0.008),
                                          (0.022, 0.008)),)),), material="core", kind="core")]
    path = tmp_path / "round.dxf"
    path.write_text(drawing_text(outlines_of(regions)))
    shapes = read_dxf_regions(path)
    assert type(shapes["disk"][0]).__name__ == "Disk"
    assert shapes["disk"][0].area() == pytest.approx(math.pi * 4e-6, rel=1e-12)
    step = math.radians(2.0)
    chord = math.sin(step) / step  # a polygon of 2-degree chords over its circle
    assert _area(shapes["ring"]) == pytest.approx(math.pi * (25e-6 - 9e-6) * chord, rel=1e-9)
    assert _area(shapes["half"]) == pytest.approx(0.5 * math.pi * 16e-6 * chord, rel=1e-9)
    assert _area(shapes["frame"]) == pytest.approx(1e-4 - 36e-6, rel=1e-12)


def _area(shapes) -> float:
    return sum(s.area() for s in shapes)


# ---------------------------------------------------- the drawn case read back
def _companion(case, doc: dict, dxf: str, circuit: dict) -> dict:
    """The drawn case of a written drawing: what the DXF does not hold.

    [[regions]] name each layer with its kind, a core part's [materials]
    entry, a coil side's winding and side (and a magnet's remanence,
    recoil mu_r and direction); the windings' turns and current, the
    symmetry (with the stack depth) from the case; [materials], [hand] and
    [fe] from its file ``doc`` (a drawn core's hand model is its circuit:
    no window leakage or effective parameters); ``circuit`` is the user's
    hand circuit ([circuit]).
    """
    model = core_model(case)
    entries = dict(model.materials)
    sides = {reg: (case.windings[k].name, s)
             for k, coil in enumerate(model.coils) for reg, s in coil.sides}
    magnets = {m.region: m for m in model.magnets}
    regions = []
    for r in model.regions:
        t: dict = {"name": r.name, "kind": r.kind}
        if r.kind == "core" and entries[r.material] != "core":
            t["material"] = entries[r.material]
        elif r.kind == "coil":
            w, s = sides[r.name]
            t.update(winding=w, side="go" if s > 0 else "return")
        elif r.kind == "magnet":
            m = magnets[r.name]
            t.update(remanence=math.hypot(*m.remanence), mu_r=m.mu_r,
                     direction=[float(m.remanence[0]), float(m.remanence[1])])
        regions.append(t)
    core = ({"depth": case.depth} if not model.axisymmetric else {"symmetry": "axisymmetric"})
    hand = {k: v for k, v in doc.get("hand", {}).items()
            if k not in ("leakage", "effective_parameters")}
    return {"case": {"name": f"{case.name}-drawn", "family": "drawn"}, "core": core,
         "shapes": {"dxf": dxf}, "regions": regions,
         "windings": [{"name": w.name, "turns": w.turns, "current": w.current}
                      for w in case.windings],
         "circuit": circuit, "materials": doc["materials"], "hand": hand,
         "fe": doc.get("fe", {})}


def _mm(points) -> list[list[float]]:
    return [[x * 1e3, y * 1e3] for x, y in points]


def _choke_circuit(case) -> dict:
    """The designer's four-segment circuit of the demo choke (as
    tests/test_drawn.py writes it: 12 x 20 mm limbs, mean lengths 58, 48,
    57.4 (less the 0.6 mm gap) and 48 mm), measured where the family does."""
    model = core_model(case)
    seg = [{"name": n, "length": f"{length} mm", "area": "240 mm^2"}
           for n, length in (("left", 58), ("top", 48), ("right", 57.4), ("bottom", 48))]
    return {"gap_B": "gap0", "path": _mm(model.mean_path), "flux_line": _mm(model.flux_line),
            "windings": {"main": "left"}, "segments": seg,
            "gaps": [{"name": "gap0", "length": "0.6 mm", "width": "12 mm"}]}


def _circuit_of(case) -> dict:
    """[circuit] from a family's explicit hand circuit (the r-z families),
    in SI numbers; a gap with radii as a round face."""
    model = core_model(case)
    c = model.circuit
    segs = [{"name": s.name, "from": s.node_a, "to": s.node_b, "length": s.length,
             "area": s.area, "on_path": s.on_path} for s in c.segments]
    gaps = []
    for g in c.gaps:
        f = g.face
        t = {"name": g.name, "from": g.node_a, "to": g.node_b, "length": f.length,
             "free_height": f.free_height}
        if f.radii is not None:
            t.update(r_inner=f.radii[0], r_outer=f.radii[1])
        else:
            t.update(width=f.width, depth=f.depth)
        gaps.append(t)
    windings = {case.windings[k].name: ("-" if s < 0 else "") + b
                for k, (b, s) in enumerate(c.windings)}
    magnets = [{"name": m.name, "from": m.node_a, "to": m.node_b, "length": m.length,
                "area": m.area, "remanence": m.remanence, "mu_r": m.mu_r} for m in c.magnets]
    return {"gap_B": c.gap_B, "path": _mm(model.mean_path), "flux_line": _mm(model.flux_line),
            "core_B": list(model.core_regions), "windings": windings, "segments": segs,
            "gaps": gaps, "magnets": magnets}


def _doc(name: str) -> dict:
    import tomllib

    return tomllib.loads((CASES / name).read_text(encoding="utf-8"))


def _drawn_choke(tmp_path: Path):
    case = _load("demo_choke.toml")
    write_dxf(case, tmp_path / "choke.dxf")
    d = _companion(case, _doc("demo_choke.toml"), "choke.dxf", _choke_circuit(case))
    d["shapes"]["units"] = "mm"  # the path's and flux line's points (the DXF says mm too)
    return case, case_from_dict(d, base_dir=tmp_path)


def _drawn_pot(tmp_path: Path):
    case = _load("demo_pot_core_choke.toml")
    write_dxf(case, tmp_path / "pot.dxf")
    d = _companion(case, _doc("demo_pot_core_choke.toml"), "pot.dxf", _circuit_of(case))
    d["shapes"]["units"] = "mm"
    return case, case_from_dict(d, base_dir=tmp_path)


def _same_coils(a, b) -> None:
    assert [c.sides for c in b.coils] == [c.sides for c in a.coils]
    # the go side's area through mm and back: round-off only
    assert [c.area for c in b.coils] == pytest.approx([c.area for c in a.coils], rel=1e-12)
    assert b.gap_region == a.gap_region


def test_the_drawn_choke_has_the_same_regions_and_hand_values(tmp_path):
    case, drawn = _drawn_choke(tmp_path)
    a, b = core_model(case), core_model(drawn)
    mesh = _mesh_areas(case)
    got = {r.name: sum(s.area() for s in r.shapes) * 1e6 for r in b.regions}
    assert got == pytest.approx(mesh, rel=1e-12)
    assert [(r.name, r.kind, r.material) for r in b.regions] == \
        [(r.name, r.kind, r.material) for r in a.regions]
    _same_coils(a, b)
    assert b.gap_direction == a.gap_direction
    # the same network (tests/test_drawn.py: this circuit is the family's):
    # every hand value to round-off
    for planar in (True, False):
        ha, hb = run_hand(case, planar=planar).values(), run_hand(drawn, planar=planar).values()
        for k in HAND_KEYS:
            assert hb[k] == pytest.approx(ha[k], rel=1e-9), k


def test_the_drawn_pot_core_has_the_same_regions(tmp_path):
    case, drawn = _drawn_pot(tmp_path)
    a, b = core_model(case), core_model(drawn)
    assert b.axisymmetric
    got = {r.name: sum(s.area() for s in r.shapes) * 1e6 for r in b.regions}
    assert got == pytest.approx(_mesh_areas(case), rel=1e-12)
    assert [(r.name, r.kind, r.material) for r in b.regions] == \
        [(r.name, r.kind, r.material) for r in a.regions]
    _same_coils(a, b)
    # the hand circuit copied branch by branch: the ideal network (no
    # fringing) is the family's to round-off
    from dataclasses import replace

    ideal = {k: replace(c, hand=replace(c.hand, fringing="none")) for k, c in
             (("a", case), ("b", drawn))}
    assert run_hand(ideal["b"]).inductance == pytest.approx(run_hand(ideal["a"]).inductance,
                                                            rel=1e-9)


def test_the_drawn_holding_magnet_has_the_same_regions_and_magnet(tmp_path):
    # an r-z core with a magnet and a moving keeper: the magnet region comes
    # back as a magnet with the family's remanence vector and recoil mu_r
    case = _load("demo_holding_magnet.toml")
    write_dxf(case, tmp_path / "hm.dxf")
    d = _companion(case, _doc("demo_holding_magnet.toml"), "hm.dxf", _circuit_of(case))
    d["shapes"]["units"] = "mm"
    a, b = core_model(case), core_model(case_from_dict(d, base_dir=tmp_path))
    got = {r.name: sum(s.area() for s in r.shapes) * 1e6 for r in b.regions}
    assert got == pytest.approx(_mesh_areas(case), rel=1e-12)
    assert [(r.name, r.kind) for r in b.regions] == [(r.name, r.kind) for r in a.regions]
    assert b.magnets == a.magnets
    _same_coils(a, b)


@pytest.mark.slow
@pytest.mark.parametrize("build", [_drawn_choke, _drawn_pot], ids=["planar", "rz"])
def test_the_drawn_case_has_the_fe_values_within_their_uncertainty(build, tmp_path):
    # the same geometry meshed from the drawing's outlines instead of the
    # family's rectangles: the field values agree within the sum of the two
    # three-mesh uncertainties (the discretisation error is all that differs)
    from magcheck.compare.models.fe import run_fe_checked

    case, drawn = build(tmp_path)
    a, b = run_fe_checked(case), run_fe_checked(drawn)
    for k in ("inductance", "flux_linkage", "energy", "gap_B"):
        tol = a.uncertainty[k] + b.uncertainty[k]
        assert abs(b.values[k] - a.values[k]) <= tol, (k, a.values[k], b.values[k], tol)


# ---------------------------------------------------------------- the command
def test_geometry_only_writes_the_drawing_and_solves_nothing(tmp_path, monkeypatch, capsys):
    import magcheck.compare.front.commands.check as check

    def no_solve(*a, **k):
        raise AssertionError("solved")

    monkeypatch.setattr(check, "run_check", no_solve)
    out = tmp_path / "sub" / "g.dxf"
    assert main(["check", str(CASES / "demo_choke.toml"), "--dxf", str(out),
                 "--geometry-only"]) == 0
    assert set(_layer_areas(out)) == {"core", "gap0", "coil+", "coil-"}


def test_the_drawing_is_written_before_the_solve(tmp_path, monkeypatch):
    import magcheck.compare.front.commands.check as check

    out = tmp_path / "g.dxf"

    def solve(*a, **k):
        assert out.is_file()  # already there when the solve starts
        raise KeyboardInterrupt

    monkeypatch.setattr(check, "run_check", solve)
    with pytest.raises(KeyboardInterrupt):
        check.run(check_args(["check", str(CASES / "demo_choke.toml"), "--dxf", str(out)]))


def check_args(argv):
    from magcheck.compare.front.cli import build_parser

    return build_parser("check").parse_args(argv)


@pytest.mark.parametrize("argv, words", [
    (["--geometry-only"], "--geometry-only: writes the --dxf drawing: give --dxf FILE"),
    (["--geometry-only", "--dxf", "g.dxf", "--json", "r.json"],
     "--geometry-only: solves nothing, so --json has nothing to write"),
])
def test_geometry_only_misuse_is_one_line_of_bad_input(argv, words, tmp_path, monkeypatch,
                                                        capsys):
    monkeypatch.chdir(tmp_path)
    assert main(["check", str(CASES / "demo_choke.toml"), *argv]) == 2
    err = capsys.readouterr().err.strip()
    assert words in err and "\n" not in err
    assert list(tmp_path.iterdir()) == []


def test_dxf_to_standard_output(capsysbinary):
    assert main(["check", str(CASES / "demo_pot_core_choke.toml"), "--dxf", "-",
                 "--geometry-only"]) == 0
    text = capsysbinary.readouterr().out.decode()
    assert text.startswith("  0\nSECTION") and "\ncoil\n" in text and text.rstrip().endswith("EOF")
