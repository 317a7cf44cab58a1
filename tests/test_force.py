"""Force on a body by the weighted Maxwell stress (fem2d.force), against
exact results."""
import math

import pytest
from scipy.constants import mu_0

from magcheck.fem2d.force import maxwell_force, virtual_work_force
from magcheck.fem2d.layout import AirBox, Annulus, Disk, Layout, MeshSettings, Rect, Region
from magcheck.fem2d.materials import AIR, LinearReluctivity
from magcheck.fem2d.mesh import build_mesh
from magcheck.fem2d.post import PostError, coil_flux_linkage, region_mean_b
from magcheck.fem2d.solver import solve
from magcheck.fem2d.sources import Coil, Magnet, Sources
from magcheck.fem2d.verification import BRAUER, _gauss_square, loop_mutual_inductance

A, D = 1e-3, 6e-3


@pytest.fixture(scope="module")
def wire_pair():
    lay = Layout((Region("w1", (Disk(-D / 2, 0.0, A),), "cu"),
                  Region("w2", (Disk(D / 2, 0.0, A),), "cu"),
                  Region("ring", (Annulus(D / 2, 0.0, 1.3 * A, 1.8 * A),), "air2")),
                 air=AirBox("disk", factor=1.5, open=True),
                 mesh=MeshSettings(size=A / 4, grading=0.2), depth=0.05)
    return solve(build_mesh(lay), {"cu": AIR, "air2": AIR}, currents={"w1": 10.0, "w2": -10.0})


def test_two_wires_repel_with_the_exact_force(wire_pair):
    # Source: exact for round wires with uniform current: the force per metre
    # is mu0 I1 I2 / (2 pi d) (each wire's field outside it is a line
    # current's; the mean value property gives the force on the other wire);
    # antiparallel currents repel. Stack depth 50 mm.
    F = maxwell_force(wire_pair, "w2")
    ref = 0.05 * mu_0 * 100.0 / (2 * math.pi * D)
    assert F.force[0] == pytest.approx(ref, rel=1e-4)
    assert abs(F.force[1]) < 1e-5 * ref
    assert F.layer_regions == ("air",)
    # Newton's third law: the other wire feels the opposite force
    assert maxwell_force(wire_pair, "w1").force[0] == pytest.approx(-ref, rel=1e-4)


def test_the_force_does_not_depend_on_the_layer(wire_pair):
    # the wire alone (layer between it and the air ring at 1.3a..1.8a) and
    # the wire with the ring (layer outside 1.8a): two different layers, the
    # same force, since div T = 0 in current-free air (exact)
    inner = maxwell_force(wire_pair, "w2")
    outer = maxwell_force(wire_pair, ("w2", "ring"))
    assert outer.force[0] == pytest.approx(inner.force[0], rel=2e-4)


def test_coaxial_coils_attract_by_the_derivative_of_maxwells_mutual_inductance():
    # Source: F_z = I1 I2 dM/dz with Maxwell's mutual inductance of coaxial
    # filaments (Treatise, 1873, art. 701), averaged over both 1 x 1 mm
    # sections by 6x6 Gauss points; dM/dz by a central difference (1e-7 m).
    s = 1e-3
    lay = Layout((Region("c1", (Rect(10e-3 - s / 2, -s / 2, 10e-3 + s / 2, s / 2),), "cu"),
                  Region("c2", (Rect(12e-3 - s / 2, 3e-3 - s / 2, 12e-3 + s / 2, 3e-3 + s / 2),),
                         "cu")),
                 air=AirBox("rz-disk", factor=1.5, open=True),
                 mesh=MeshSettings(size=1.25e-4, grading=0.2, air_size_factor=40.0))
    sol = solve(build_mesh(lay), {"cu": AIR}, currents={"c1": 1.0, "c2": 1.0})
    F = maxwell_force(sol, "c2")
    R1, Z1, W1 = _gauss_square(10e-3 - s / 2, 10e-3 + s / 2, -s / 2, s / 2)
    R2, Z2, W2 = _gauss_square(12e-3 - s / 2, 12e-3 + s / 2, 3e-3 - s / 2, 3e-3 + s / 2)

    def M(dz):
        return sum(w1 * w2 * loop_mutual_inductance(r1, r2, z2 - z1 + dz)
                   for r1, z1, w1 in zip(R1, Z1, W1) for r2, z2, w2 in zip(R2, Z2, W2))

    ref = (M(1e-7) - M(-1e-7)) / 2e-7
    assert ref < 0  # parallel currents attract: the upper coil is pulled down
    assert F.force[0] == 0.0
    assert F.force[1] == pytest.approx(ref, rel=2e-4)
    # the body moved along the axis: virtual work gives the same force
    assert virtual_work_force(sol, "c2", (0.0, 1.0)).force == pytest.approx(ref, rel=2e-4)
    with pytest.raises(PostError, match="along the axis only"):
        virtual_work_force(sol, "c2", (1.0, 0.0))


def test_a_magnetic_or_current_carrying_neighbour_is_refused():
    lay = Layout((Region("bar", (Rect(0.0, 0.0, 2e-3, 1e-3),), "iron"),
                  Region("post", (Rect(2e-3, 0.0, 3e-3, 1e-3),), "iron"),
                  Region("coil", (Rect(0.0, 1e-3, 2e-3, 2e-3),), "cu")),
                 air=AirBox("disk", factor=1.5, open=True), mesh=MeshSettings(size=3e-4))
    sol = solve(build_mesh(lay), {"iron": LinearReluctivity(1000.0), "cu": AIR},
                currents={"coil": 1.0})
    with pytest.raises(PostError, match="'post' next to it is magnetic"):
        maxwell_force(sol, "bar")
    with pytest.raises(PostError, match="'coil' next to it carries current"):
        maxwell_force(sol, ("bar", "post"))
    with pytest.raises(PostError, match="'nothing' not in the layout"):
        maxwell_force(sol, "nothing")


# ------------------------------------------------------------ virtual work
MM = 1e-3


def ucore(g: float) -> Layout:
    """A U core (40 x 30 mm, 10 mm legs) and an armature bar 8 mm thick at a
    gap g above both legs, coil sides in and beside the window, stack 20 mm
    (invented for the demo)."""
    core = Region("core", (Rect(0, 0, 40 * MM, 10 * MM), Rect(0, 10 * MM, 10 * MM, 30 * MM),
                           Rect(30 * MM, 10 * MM, 40 * MM, 30 * MM)), "iron", kind="core")
    arm = Region("armature", (Rect(0, 30 * MM + g, 40 * MM, 38 * MM + g),), "iron", kind="core")
    gaps = [Region(n, (Rect(x0, 30 * MM, x0 + 10 * MM, 30 * MM + g),), "air", kind="gap")
            for n, x0 in (("gapL", 0.0), ("gapR", 30 * MM))]
    coils = [Region("c+", (Rect(12 * MM, 12 * MM, 18 * MM, 26 * MM),), "air", kind="coil"),
             Region("c-", (Rect(-8 * MM, 12 * MM, -2 * MM, 26 * MM),), "air", kind="coil")]
    return Layout((core, arm, *gaps, *coils), air=AirBox("disk", factor=1.5, open=True),
                  depth=20 * MM)


WINDING = Sources(coils=(Coil("w", (("c+", 1), ("c-", -1)), 200),))


def test_virtual_work_matches_the_stress_on_the_wires(wire_pair):
    # the second, independent method (solves with the body moved by -/+ delta)
    # against the same exact force mu0 I1 I2 / (2 pi d)
    ref = 0.05 * mu_0 * 100.0 / (2 * math.pi * D)
    vw = virtual_work_force(wire_pair, "w2", (1.0, 0.0))
    assert vw.force == pytest.approx(ref, rel=1e-4)
    assert vw.force == pytest.approx(maxwell_force(wire_pair, "w2").force[0], rel=1e-3)


@pytest.mark.slow
def test_saturated_armature_stress_and_virtual_work_agree_and_approach_the_pull_formula():
    # U core and armature, Brauer steel driven from the linear range into
    # saturation: Maxwell stress and virtual work within 1e-3 (issue
    # criterion); the pull B_g^2 A/(2 mu0) per face (common practice, Roters
    # 1941) with the FE's mean gap B is approached as g/w -> 0 (fringing
    # adds force at large gaps)
    ratios = []
    for g in (1.0 * MM, 0.5 * MM, 0.25 * MM):
        sol = solve(build_mesh(ucore(g)), {"iron": BRAUER}, sources=WINDING,
                    currents={"w": 15.0})
        ms = maxwell_force(sol, "armature").force[1]
        vw = virtual_work_force(sol, "armature", (0.0, 1.0))
        assert ms < 0  # pulled down onto the legs
        assert vw.force == pytest.approx(ms, rel=1e-3)
        pull = sum(region_mean_b(sol, n, (0.0, 1.0)) ** 2 for n in ("gapL", "gapR")) \
            * 10 * MM * 20 * MM / (2 * mu_0)
        ratios.append(-ms / pull)
    assert ratios[0] > ratios[1] > ratios[2] > 1.0
    assert ratios[2] < 1.03


@pytest.mark.slow
def test_linear_armature_force_is_half_i_squared_dl_dx():
    # Source: virtual work for a linear circuit, F = (I^2/2) dL/dx (exact),
    # with dL/dx from two meshes at g (1 -/+ 2 %) (re-meshed: the mesh noise
    # is ~1e-5 of L, 3e-4 of the difference)
    g, current = 0.5 * MM, 2.0
    mats = {"iron": LinearReluctivity(2000.0)}
    sol = solve(build_mesh(ucore(g)), mats, sources=WINDING, currents={"w": current})
    ms = maxwell_force(sol, "armature").force[1]
    L = []
    for gg in (0.98 * g, 1.02 * g):
        s = solve(build_mesh(ucore(gg)), mats, sources=WINDING, currents={"w": current})
        L.append(coil_flux_linkage(s, "w") / current)
    assert ms == pytest.approx(0.5 * current ** 2 * (L[1] - L[0]) / (0.04 * g), rel=1e-3)


def test_magnet_pulls_its_keeper_and_virtual_work_counts_the_remanence():
    # r-z: a disc magnet (B_r 1.2 T, recoil mu_r 1.05) 1 mm below a
    # saturating steel keeper. Moving the magnet itself deforms its elements,
    # so virtual work is right only with the magnet's co-energy
    # mu|H|^2/2 + B_r.H (fem2d.post.coenergy); Newton's third law holds to
    # the discretisation (0.2 %).
    regs = (Region("magnet", (Rect(0, 0, 5 * MM, 4 * MM),), "m", kind="magnet"),
            Region("keeper", (Rect(0, 5 * MM, 8 * MM, 8 * MM),), "steel", kind="core"))
    lay = Layout(regs, air=AirBox("rz-disk", factor=1.5, open=True),
                 mesh=MeshSettings(size=0.4 * MM))
    sol = solve(build_mesh(lay), {"m": AIR, "steel": BRAUER},
                sources=Sources(magnets=(Magnet("magnet", (0.0, 1.2), 1.05),)))
    on_magnet = maxwell_force(sol, "magnet").force[1]
    on_keeper = maxwell_force(sol, "keeper").force[1]
    assert on_magnet > 0 and on_keeper < 0  # they attract
    assert on_keeper == pytest.approx(-on_magnet, rel=2e-3)
    vw = virtual_work_force(sol, "magnet", (0.0, 1.0))
    assert vw.force == pytest.approx(on_magnet, rel=1e-3)


@pytest.mark.slow
def test_the_three_mesh_uncertainty_bounds_the_force_error():
    # The FE uncertainty rule of every checked quantity (compare.models.fe.
    # uncertainty_rule: three meshes refined by 1.5) applied to the force:
    # for both methods on the saturating U core it bounds the difference to
    # a mesh twice finer than the finest (measured: U = 2.4e-4 of F, the
    # difference 4e-5 at refine 3, 7e-5 at refine 4.5).
    import math
    from dataclasses import replace

    from magcheck.compare.models.fe import uncertainty_rule

    lay0 = ucore(0.5 * MM)
    base = lay0.core_size()
    vals = {}
    for r in (1 / 1.5, 1.0, 1.5, 3.0):
        lay = replace(lay0, mesh=replace(lay0.mesh, size=base / r,
                                         gap_elements=math.ceil(4 * r - 1e-9)))
        sol = solve(build_mesh(lay), {"iron": BRAUER}, sources=WINDING, currents={"w": 15.0})
        vals[r] = (maxwell_force(sol, "armature").force[1],
                   virtual_work_force(sol, "armature", (0.0, 1.0)).force)
    for k in (0, 1):
        U = uncertainty_rule(vals[1 / 1.5][k], vals[1.0][k], vals[1.5][k])
        assert 0 < U < 1e-3 * abs(vals[1.5][k])
        assert abs(vals[1.5][k] - vals[3.0][k]) <= U
