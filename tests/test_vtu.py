"""The VTU file of a bundled case, read back with meshio: array names with
units, region names in the field data, no orphan points, and values at
known points equal to the solution's own."""
from pathlib import Path

import meshio
import numpy as np
import pytest

import magcheck
from magcheck.fem2d import post
from magcheck.fem2d.export import CELL_ARRAYS, EARLIER_NAMES, POINT_ARRAYS

ROOT = Path(__file__).resolve().parents[1]


def _solved_and_read(name: str, tmp_path):
    run = magcheck.fe(ROOT / "cases" / name, estimate_error=False)
    path = magcheck.write_vtu(run, tmp_path / "f.vtu")
    return run.solution, meshio.read(path)


def _check_structure(sol, m, form: str) -> np.ndarray:
    """Names, units, legend and points; returns the kept elements' indices."""
    asm = sol.assembler
    earlier = set(EARLIER_NAMES)
    assert set(m.point_data) == set(POINT_ARRAYS[form]) | {"A"}
    assert set(m.cell_data) == set(CELL_ARRAYS) | (earlier - {"A"})
    # the names of earlier versions hold the same values (A: the unknown, as it was)
    unknown = "A_z_Wb_per_m" if form == "planar" else "rA_phi_Wb_per_rad"
    np.testing.assert_array_equal(m.point_data["A"], m.point_data[unknown])
    for old, new in EARLIER_NAMES.items():
        if isinstance(new, str):
            np.testing.assert_array_equal(m.cell_data[old][0], m.cell_data[new][0])
    # every array but the two dimensionless ones says its unit in its name
    for name in (*(set(m.point_data) - earlier), *(set(m.cell_data) - earlier)):
        assert name in ("mu_r", "region") or name.rsplit("_", 1)[-1] in ("T", "m", "rad") \
            or name.endswith("_per_m") or name.endswith("_per_rad"), name
    # no orphan points: every point is a node of a cell, and no cell is in the exterior ring
    cells = m.cells[0].data
    assert m.cells[0].type == "triangle6"
    assert np.array_equal(np.unique(cells), np.arange(len(m.points)))
    kept = np.setdiff1d(np.arange(asm.ne), asm.ext[0] if asm.ext is not None else [])
    assert len(cells) == len(kept)
    names = sol.mesh.region_names
    assert "exterior" in names and asm.ext is not None  # the open boundary's ring ...
    assert len(m.points) < sol.ndofs  # ... whose points are gone with its cells
    # the legend: each region name maps to the id the region array holds, exterior left out
    legend = {k: tuple(int(x) for x in v) for k, v in m.field_data.items()}
    region = m.cell_data["region"][0]
    assert legend == {names[i]: (i, 2) for i in np.unique(region)}
    assert "exterior" not in legend and any(k.startswith("core") for k in legend)
    np.testing.assert_array_equal(region, np.asarray(sol.mesh.element_region)[kept])
    return kept


def _point_dofs(sol, m) -> np.ndarray:
    """The DOF behind each VTU point, found by its coordinates."""
    from scipy.spatial import cKDTree

    d, idx = cKDTree(sol.assembler.basis.doflocs.T).query(m.points[:, :2])
    assert d.max() < 1e-12
    return idx


def test_planar_vtu(tmp_path):
    sol, m = _solved_and_read("demo_choke.toml", tmp_path)
    kept = _check_structure(sol, m, "planar")
    dofs = _point_dofs(sol, m)
    # A_z at every point is the solution's value at that node
    np.testing.assert_array_equal(m.point_data["A_z_Wb_per_m"], sol.A[dofs])
    # B and |B| per cell are the solution's element means
    be = post.b_elements(sol)[:, kept]
    np.testing.assert_allclose(m.cell_data["B_T"][0][:, :2], be.T, rtol=0, atol=0)
    np.testing.assert_allclose(m.cell_data["B_magnitude_T"][0], np.hypot(be[0], be[1]))
    # a known point: the cell holding the gap's centre; B at its centroid sampled
    # from the field itself (B is linear in a P2 cell, so its mean is its
    # centroid value up to the cell's curvature)
    gap = [i for i, n in enumerate(sol.mesh.region_names) if n.startswith("gap")]
    in_gap = np.flatnonzero(np.isin(m.cell_data["region"][0], gap))
    k = in_gap[len(in_gap) // 2]
    centre = m.points[m.cells[0].data[k, :3], :2].mean(axis=0)
    b = post.sample_b(sol, centre.reshape(2, 1))[:, 0]
    np.testing.assert_allclose(m.cell_data["B_T"][0][k, :2], b, rtol=1e-6, atol=1e-9)
    # H = B / mu0 in the air of the gap, mu_r = 1 there
    # Source: exact (the constitutive law of air, H = B / mu0)
    assert m.cell_data["mu_r"][0][k] == pytest.approx(1.0, rel=1e-12)
    np.testing.assert_allclose(m.cell_data["H_A_per_m"][0][k, :2], b / (4e-7 * np.pi), rtol=1e-6)


def test_axisymmetric_vtu(tmp_path):
    sol, m = _solved_and_read("demo_pot_core_choke.toml", tmp_path)
    _check_structure(sol, m, "axisymmetric")
    dofs = _point_dofs(sol, m)
    ra = m.point_data["rA_phi_Wb_per_rad"]
    a = m.point_data["A_phi_Wb_per_m"]
    r = m.points[:, 0]
    np.testing.assert_array_equal(ra, sol.A[dofs])  # the unknown, r A_phi
    off = r > 0
    np.testing.assert_allclose(a[off], ra[off] / r[off], rtol=1e-14)  # A_phi = (r A_phi) / r
    assert np.all(a[~off] == 0) and (~off).any()  # on the axis, where A_phi -> B_z r / 2 -> 0
    # Source: exact (B_z = (1/r) d(r A_phi)/dr; near the axis r A_phi = B_z r^2 / 2, so
    # A_phi / r -> B_z(0, z) / 2): the nearest off-axis nodes give B_z / 2 to the
    # field's variation over one element
    near = np.flatnonzero(off & (r < 0.2 * r[off].max()))
    k = near[np.argmin(r[near])]
    bz = post.sample_b(sol, m.points[k, :2].reshape(2, 1))[1, 0]
    assert a[k] / r[k] == pytest.approx(bz / 2, rel=0.05)
