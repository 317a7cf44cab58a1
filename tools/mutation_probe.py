"""Mutation probe: does the test suite catch wrong physics?

Each mutation is a one-line change of the physics or the comparison (a wrong
area, a swapped fit, an inflated uncertainty...). The probe applies each one in
a scratch copy of the committed tree (``git worktree add --detach``), runs the
tests that should catch it there, and prints a table: killed (a test failed) or
survived (every test passed: the suite would not notice that bug).

    python tools/mutation_probe.py              # every mutation
    python tools/mutation_probe.py --list       # names and descriptions
    python tools/mutation_probe.py --only ei-centre-length,unc-x10

A snippet that no longer occurs exactly once in its file stops the probe with
an error naming it: update the list when the code moves. A tool for the
engineer changing the physics, not part of CI (it takes minutes).
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
import time
from dataclasses import dataclass
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


@dataclass(frozen=True)
class Mutation:
    name: str
    file: str
    old: str
    new: str
    description: str
    tests: tuple[str, ...]


M = Mutation
MUTATIONS: tuple[Mutation, ...] = (
    # ---------------------------------------------------------------- compare: geometry -> circuit
    M("window-other-limb-area", "compare/families/window_core.py",
      'Segment("right", "tr", "br", yt - yb, c.right * d, "right", axis_sign=-1),',
      'Segment("right", "tr", "br", yt - yb, c.left * d, "right", axis_sign=-1),',
      "a window-core segment takes another limb's width for its area",
      ("tests/test_circuit_geometry.py", "tests/test_network.py")),
    M("ei-centre-length", "compare/families/ei_core.py",
      'Segment("centre", "bc", "tc", yt - yb, c.centre * d, "centre", part="E"),',
      'Segment("centre", "bc", "tc", 1.1 * (yt - yb), c.centre * d, "centre", part="E"),',
      "the EI centre limb 10 % too long",
      ("tests/test_circuit_geometry.py", "tests/test_network.py", "tests/test_check.py")),
    M("first-gap-face", "compare/hand.py",
      "face = gap_face(case, i)", "face = gap_face(case, 0)",
      "every gap of a case uses the first gap's face",
      ("tests/test_circuit_geometry.py",)),
    # ---------------------------------------------------------------- compare: FE measurements
    M("unc-x10", "compare/fe.py",
      "return SAFETY * max(abs(q_fine - q_mid), abs(q_mid - q_coarse)) / (REFINE - 1.0)",
      "return 10 * SAFETY * max(abs(q_fine - q_mid), abs(q_mid - q_coarse)) / (REFINE - 1.0)",
      "the FE uncertainty multiplied by 10",
      ("tests/test_check.py",)),
    M("unc-half", "compare/fe.py",
      "return SAFETY * max(abs(q_fine - q_mid), abs(q_mid - q_coarse)) / (REFINE - 1.0)",
      "return SAFETY * abs(q_fine - q_mid) / (REFINE - 1.0)",
      "the FE uncertainty from the last two meshes only (no longer a bound)",
      ("tests/test_check.py",)),
    M("fe-incremental-5pct", "compare/fe.py",
      'vals["incremental_inductance"] = post.incremental_flux_linkage(',
      'vals["incremental_inductance"] = 1.05 * post.incremental_flux_linkage(',
      "a 5 % error in the FE incremental inductance",
      ("tests/test_fe_linear.py", "tests/test_check.py")),
    M("fe-secant-abs-lost", "compare/fe.py",
      'vals["inductance"] = lam / w.current if many else abs(lam / w.current)',
      'vals["inductance"] = lam if many else abs(lam)',
      "the FE secant inductance is the flux linkage, not lambda/I",
      ("tests/test_fe_linear.py", "tests/test_check.py")),
    M("peak-quantile", "compare/fe.py",
      "PEAK_AREA_FRACTION = 0.005", "PEAK_AREA_FRACTION = 0.05",
      "peak core B taken over 5 % of the area instead of 0.5 %",
      ("tests/test_check.py", "tests/test_cases_regression.py")),
    # ---------------------------------------------------------------- compare: comparison
    M("depth-factor-in-plane", "compare/check.py",
      "            out[k] = h3[k] / hp[k]",
      "            out[k] = h3[k] / hp[k] * h3[k] / hp[k]",
      "the FE 3D correction applied twice",
      ("tests/test_check.py", "tests/test_tolerance.py", "tests/test_cases_regression.py")),
    M("verdict-limit-direction", "compare/check.py",
      'return "pass" if abs(diff_pct) <= limit else "FAIL"',
      'return "pass" if abs(diff_pct) >= limit else "FAIL"',
      "an agreement limit judged the wrong way round",
      ("tests/test_check.py", "tests/test_margins.py")),
    M("noise-band", "compare/check.py",
      "if math.isfinite(unc) and abs(hand - fe) <= unc:",
      "if math.isfinite(unc) and abs(hand - fe) <= 10 * unc:",
      "'within FE noise' given for ten times the uncertainty",
      ("tests/test_check.py", "tests/test_wording.py")),
    # ---------------------------------------------------------------- compare: margins, sweeps, tolerance
    M("tolerance-fit-swapped", "compare/tolerance.py",
      "b, a = np.polyfit(hand, fe, 1)", "a, b = np.polyfit(hand, fe, 1)",
      "the tolerance study's straight-line fit with slope and intercept swapped",
      ("tests/test_tolerance.py",)),
    M("saturation-drop", "compare/margins.py",
      "target = (1.0 - d) * l0", "target = (1.0 - 0.5 * d) * l0",
      "the saturation current read at half the stated inductance drop",
      ("tests/test_sweep.py", "tests/test_margins.py")),
    M("current-density-fill", "compare/margins.py",
      "(case.margins.copper_fill * c.area)",
      "(c.area)",
      "the current density ignores the copper fill",
      ("tests/test_margins.py",)),
    M("oersted", "compare/units.py",
      '"Oe": (1000.0 / (4.0 * math.pi), DIMENSIONS["field strength"]),',
      '"Oe": (1000.0 / (2.0 * math.pi), DIMENSIONS["field strength"]),',
      "1 Oe = 1000/(2 pi) A/m in the case-file units",
      ("tests/test_units.py", "tests/test_case_loader.py")),
    M("bh-oersted", "analytic/bh.py",
      'H_UNITS: dict[str, float] = {"A/m": 1.0, "kA/m": 1e3, "Oe": 1000.0 / (4.0 * math.pi)}',
      'H_UNITS: dict[str, float] = {"A/m": 1.0, "kA/m": 1e3, "Oe": 1000.0 / (2.0 * math.pi)}',
      "1 Oe = 1000/(2 pi) A/m in B-H tables",
      ("tests/test_bh.py",)),
    # ---------------------------------------------------------------- analytic
    M("mu0", "analytic/constants.py",
      "mu_0 = 1.25663706127e-6", "mu_0 = 1.25663706127e-7",
      "mu0 ten times too small",
      ("tests/test_network.py", "tests/test_fringing.py")),
    M("area-fringing-depth", "analytic/fringing.py",
      "return (face.width + g) / face.width, (face.depth + g) / face.depth",
      "return (face.width + g) / face.width, (face.depth + 2 * g) / face.depth",
      "area fringing adds 2g, not g, in depth",
      ("tests/test_fringing.py", "tests/test_network.py")),
    M("flux-factor-log", "analytic/fringing.py",
      "math.log(2.0 * face.free_height / g)", "math.log(face.free_height / g)",
      "the flux factor's log term without the 2",
      ("tests/test_fringing.py",)),
    M("conformal-term", "analytic/fringing.py",
      "    term = max(1.0 + math.log(math.pi * h / (2.0 * g)), 0.0)\n    return mu_0",
      "    term = max(1.0 + math.log(math.pi * h / (4.0 * g)), 0.0)\n    return mu_0",
      "the conformal-map element with l = g instead of g/2",
      ("tests/test_fringing.py",)),
    M("flux-factor-split", "analytic/fringing.py",
      "k_plane = 1.0 + (f - 1.0) * b / (a + b)",
      "k_plane = 1.0 + (f - 1.0) * a / (a + b)",
      "the flux factor split by the wrong perimeter share",
      ("tests/test_fringing.py",)),
    M("conformal-one-side", "analytic/fringing.py",
      "return (column(minus) + column(plus)) / (mu_0 * w / g)",
      "return 2.0 * column(plus) / (mu_0 * w / g)",
      "both edges of a gap given the plus side's free face",
      ("tests/test_fringing.py", "tests/test_cli_hand.py")),
    M("flux-tube-room", "analytic/fringing.py",
      "t_plus = min(min(sides.plus), sides.room[1])",
      "t_plus = min(sides.plus)",
      "the flux tube ignores the window's width",
      ("tests/test_fringing.py",)),
    M("leakage-linkage", "analytic/leakage.py",
      "p_int += (b - a) * (ua * ua + 4 * um * um + ub * ub) / 6.0",
      "p_int += (b - a) * (ua + ub) / 2.0",
      "window leakage not weighted by the linked fraction of turns",
      ("tests/test_leakage.py",)),
    M("bypass-coil-build", "compare/hand.py",
      "width = win.width - c - t + t / 3.0",
      "width = win.width - c",
      "the yoke-to-yoke path through the coil at full weight",
      ("tests/test_leakage.py",)),
    M("effective-area", "analytic/effective.py",
      "return self.c1 / self.c2",
      "return self.c1 ** 2 / self.c2",
      "IEC 60205 A_e = C1^2/C2 (the length's formula)",
      ("tests/test_effective.py",)),
    M("stacking-on-gap", "compare/hand.py",
      "        area = seg.area * (case.stacking if stacking else 1.0)",
      "        area = seg.area",
      "the stacking factor left off the core segments",
      ("tests/test_stacking.py",)),
    M("ei-junction", "compare/families/ei_core.py",
      "q = 0.25 * c.centre  # the yokes stop at the half-limbs' centre lines",
      "q = 0.0  # the yokes stop at the half-limbs' centre lines",
      "EI T-junctions counted 1.5 times",
      ("tests/test_circuit_geometry.py",)),
    M("linear-nu", "analytic/bh.py",
      "return np.full_like(_as_float_array(s), 1.0 / self.mu)",
      "return np.full_like(_as_float_array(s), 1.1 / self.mu)",
      "a linear material's reluctivity 10 % high",
      ("tests/test_bh.py", "tests/test_fem_exact.py", "tests/test_fe_linear.py")),
    M("network-coenergy", "analytic/network.py",
      "coenergy = 0.5 * br.permeance * fk**2",
      "coenergy = br.permeance * fk**2",
      "a gap's co-energy without the 1/2",
      ("tests/test_network.py",)),
    # ---------------------------------------------------------------- fem2d
    M("b-curl-sign", "fem2d/formulation.py",
      "        return np.stack([g[1], -g[0]])",
      "        return np.stack([g[1], g[0]])",
      "B = curl A with a wrong sign on B_y",
      ("tests/test_fem_exact.py", "tests/test_fem_infra.py")),
    M("flux-depth", "fem2d/post.py",
      "return float(_asm(sol).formulation.total * (a[1] - a[0]))",
      "return float(a[1] - a[0])",
      "flux across a line per metre, not times the stack depth",
      ("tests/test_fem_exact.py", "tests/test_fem_infra.py", "tests/test_check.py")),
    M("energy-depth", "fem2d/post.py",
      "    return float(asm.formulation.total * (np.sum(w_dens * asm.wv) + asm.ext_energy(sol.A)))",
      "    return float(1.0 * (np.sum(w_dens * asm.wv) + asm.ext_energy(sol.A)))",
      "stored energy per metre, not times the stack depth",
      ("tests/test_fem_exact.py", "tests/test_fem_infra.py", "tests/test_fe_linear.py")),
    M("line-search-armijo", "fem2d/solver.py",
      "armijo_ok = Wa <= W + c * a * slope + scale",
      "armijo_ok = True",
      "the Newton line search accepts any step",
      ("tests/test_fem_newton.py", "tests/test_fem_exact.py")),
    M("rz-field-scale", "fem2d/formulation.py",
      "        return 1.0 / xy[0]\n",
      "        return 1.0 / np.sqrt(xy[0])\n",
      "the axisymmetric |B| from grad u / sqrt(r), not / r",
      ("tests/test_formulation.py",)),
    M("rz-volume-weight", "fem2d/formulation.py",
      "        return xy[0]\n",
      "        return np.ones_like(xy[0])\n",
      "axisymmetric energies without the radius in the volume element",
      ("tests/test_formulation.py",)),
    M("exterior-tensor-swap", "fem2d/exterior.py",
      "        a = mu_0 ** -1 * gap / rho\n",
      "        a = mu_0 ** -1 * rho / gap\n",
      "the planar open boundary's radial and tangential coefficients swapped",
      ("tests/test_sources.py", "tests/test_formulation.py")),
    M("exterior-outer-radius", "fem2d/assembly.py",
      "T = ring_tensor(self.xq[:, idx], (cx, cy), half, 2.0 * half,",
      "T = ring_tensor(self.xq[:, idx], (cx, cy), half, 2.2 * half,",
      "the exterior map's outer radius not the mesh ring's (2.2 R instead of 2 R)",
      ("tests/test_sources.py", "tests/test_formulation.py")),
    M("magnet-load-sign", "fem2d/assembly.py",
      "(nu_m * (br[0] * Bi[0] + br[1] * Bi[1]) * self.wv[idx]",
      "(nu_m * (br[0] * Bi[0] - br[1] * Bi[1]) * self.wv[idx]",
      "one component of the remanence with the wrong sign in the magnet's load",
      ("tests/test_sources.py", "tests/test_formulation.py")),
    M("magnet-h", "fem2d/post.py",
      "return nu * (B - asm.br)",
      "return nu * B",
      "H in a magnet without its remanence",
      ("tests/test_sources.py",)),
    M("coil-sign", "fem2d/assembly.py",
      "return self.region_load({r: s * coil.turns for r, s in coil.regions})",
      "return self.region_load({r: coil.turns for r, s in coil.regions})",
      "a coil's return side carrying current in the go direction",
      ("tests/test_sources.py", "tests/test_check.py")),
    M("inductance-matrix-index", "fem2d/post.py",
      "L[j, k] = _coil_linkage(sol, cj, dA)",
      "L[j, k] = _coil_linkage(sol, ck, dA)",
      "the inductance matrix's rows all the exciting coil's own linkage",
      ("tests/test_sources.py",)),
    M("stress-half", "fem2d/formulation.py",
      "    half_b2 = 0.5 * (B[0] ** 2 + B[1] ** 2)\n",
      "    half_b2 = 1.0 * (B[0] ** 2 + B[1] ** 2)\n",
      "the Maxwell stress without the 1/2 on |B|^2",
      ("tests/test_force.py",)),
    M("pull-half", "analytic/force.py",
      "    return b_gap * b_gap * area / (2.0 * mu_0)\n",
      "    return b_gap * b_gap * area / mu_0\n",
      "the Maxwell pull without its 1/2",
      ("tests/test_hand_force.py",)),
    M("virtual-work-edge-nodes", "fem2d/force.py",
      "            wn[dofs[3 + k]] = 0.5 * (w_vertices[t[i]] + w_vertices[t[j]])",
      "            wn[dofs[3 + k]] = 0.0",
      "the moved mesh's edge nodes left in place (curved, distorted layer elements)",
      ("tests/test_force.py",)),
    M("magnet-coenergy", "fem2d/post.py",
      "            dens[idx] = 0.5 / nu[idx] * (H[0] ** 2 + H[1] ** 2) + br[0] * H[0] + br[1] * H[1]",
      "            dens[idx] = dens[idx]",
      "the co-energy of a magnet without its remanence term",
      ("tests/test_force.py", "tests/test_sources.py")),
    M("mesh-estimate", "fem2d/mesher.py",
      "_CAL_BULK, _CAL_GAP = 1.45, 1.9", "_CAL_BULK, _CAL_GAP = 0.7, 1.9",
      "the mesh-size estimate off by a factor 2",
      ("tests/test_mesh_guard.py",)),
    # ---------------------------------------------------------------- r-z faces and families
    M("round-edge-radius", "analytic/fringing.py",
      "out = [(2 * math.pi * r_o, sides.plus, sides.room[1])]",
      "out = [(2 * math.pi * r_i, sides.plus, sides.room[1])]",
      "a round face's outer edge takes the inner radius for its circumference",
      ("tests/test_fringing.py",)),
    M("round-area-half-g", "analytic/fringing.py",
      "r_in = max(r_i - 0.5 * g, 0.0) if r_i > 0.0 else 0.0",
      "r_in = max(r_i - g, 0.0) if r_i > 0.0 else 0.0",
      "the area model grows an annulus's inner edge by g instead of g/2",
      ("tests/test_fringing.py",)),
    M("sliding-gap-log", "compare/families/plunger.py",
      "p_slide = 2 * math.pi * mu_0 * t / math.log(c.bore / rp)",
      "p_slide = 2 * math.pi * mu_0 * t / (c.bore / rp - 1.0)",
      "the sliding gap as a flat gap (thin-annulus approximation) instead of the log form",
      ("tests/test_plunger.py",)),
    M("leakage-rate-dropped", "compare/hand.py",
      "moving = (*spec.gaps, *(n for n, _ in circuit.leakage_rates))",
      "moving = tuple(spec.gaps)",
      "the network's virtual work leaves out the leakage the stroke changes",
      ("tests/test_plunger.py",)),
    M("coil-space-leakage-cube", "compare/families/base.py",
      "out += (hi - lo) / 6 * (g(lo) ** 2 + 4 * g(m) ** 2 + g(hi) ** 2)",
      "out += (hi - lo) / 6 * (g(lo) + 4 * g(m) + g(hi))",
      "the coil-space leakage by its flux form instead of its energy form",
      ("tests/test_pot_core.py", "tests/test_plunger.py")),
    M("coil-span-ignored", "compare/families/base.py",
      "spans = spans or ((0.0, height, 1.0),)",
      "spans = ((0.0, height, 1.0),)",
      "the coil-space leakage as if every winding filled the space",
      ("tests/test_pot_core.py", "tests/test_plunger.py")),
    M("rogowski-exponent-sign", "analytic/leakage.py",
      "return 1.0 - (1.0 - math.exp(-x)) / x",
      "return 1.0 - (1.0 + math.exp(-x)) / x",
      "Rogowski's factor with the exponential's sign flipped",
      ("tests/test_leakage_inductance.py",)),
    M("inrush-no-doubling", "analytic/magnetizing.py",
      "return (2.0 + residual) * lambda_peak",
      "return (1.0 + residual) * lambda_peak",
      "the inrush estimate without the doubling effect",
      ("tests/test_magnetizing.py",)),
    M("inrush-tangent-short", "compare/drive.py",
      "step = ((1.01 * target - linkages[-1]) / l_last",
      "step = ((0.99 * target - linkages[-1]) / l_last",
      "the FE curve's tangent steps aimed short of the inrush flux linkage",
      ("tests/test_drive.py",)),
    M("inrush-damping-halved", "analytic/magnetizing.py",
      "return [v_pk * math.sin(w * t) - resistance * current(float(y[0]))]",
      "return [v_pk * math.sin(w * t) - 0.5 * resistance * current(float(y[0]))]",
      "the damped inrush estimate with half the resistive drop",
      ("tests/test_magnetizing.py",)),
    M("gap-stroke-faces-ignored", "compare/hand.py",
      "if gap.stroke_faces is None:",
      "if True:",
      "the network's virtual work holds a plunger's free side fixed as the stroke moves",
      ("tests/test_plunger.py",)),
    M("pot-plate-radius", "compare/families/pot_core.py",
      "r_post, r_wall = 0.5 * (r0 + r1), c.radius - 0.5 * c.wall",
      "r_post, r_wall = 0.5 * (r0 + r1), c.radius",
      "the pot core's plates run to the wall's outer radius",
      ("tests/test_pot_core.py",)),
    M("stroke-margin-interp", "compare/margins.py",
      "return float(np.interp(at, s[ok], v[ok]))",
      "return float(v[ok][np.argmin(abs(s[ok] - at))])",
      "a force limit takes the nearest swept stroke instead of interpolating",
      ("tests/test_margins.py",)),
    # ---------------------------------------------------------------- compare: input at the edge
    M("ampere-turns-per-turn", "compare/units.py",
      'if dimension == "current" and _TURN_UNIT_RE.match(m.group(2).replace(" ", "")):',
      'if False and _TURN_UNIT_RE.match(m.group(2).replace(" ", "")):',
      "a current of 480 At read as 480 A per turn (N times the MMF)",
      ("tests/test_new_user.py",)),
    M("tolerance-past-nominal", "compare/casefile.py",
      "if abs(nom) - dev * scale > 0.0:",
      "if abs(nom) + dev * scale > 0.0:",
      "a tolerance reaching zero from its nominal (a negative gap) accepted at load",
      ("tests/test_new_user.py",)),
    M("drive-key-dimension", "compare/keys.py",
      'if last in ("voltage", "frequency"):  # a voltage-driven winding\'s drive (rms V, Hz)',
      'if last in ("frequency",):  # a voltage-driven winding\'s drive (rms V, Hz)',
      "a swept supply voltage read as a length",
      ("tests/test_new_user.py",)),
)


def _check(mutations: tuple[Mutation, ...]) -> None:
    for m in mutations:
        text = (ROOT / m.file).read_text(encoding="utf-8")
        n = text.count(m.old)
        if n != 1:
            raise SystemExit(f"mutation_probe: {m.name}: the snippet occurs {n} times in {m.file} "
                             f"(expected once): update it to the current code\n  {m.old}")


def _run_one(m: Mutation, scratch: Path, timeout: float) -> tuple[str, str, float]:
    path = scratch / m.file
    original = path.read_text(encoding="utf-8")
    path.write_text(original.replace(m.old, m.new, 1), encoding="utf-8")
    env = dict(os.environ, PYTHONPATH=str(scratch), PYTHONDONTWRITEBYTECODE="1")
    t0 = time.perf_counter()
    try:
        proc = subprocess.run([sys.executable, "-m", "pytest", "-x", "-q", "-p", "no:cacheprovider",
                               *m.tests], cwd=scratch, env=env, capture_output=True, text=True,
                              timeout=timeout)
        seconds = time.perf_counter() - t0
        if proc.returncode == 0:
            return "survived", "", seconds
        failed = [ln.split(" ")[1] for ln in proc.stdout.splitlines() if ln.startswith("FAILED ")
                  or ln.startswith("ERROR ")]
        return "killed", failed[0] if failed else f"pytest exit {proc.returncode}", seconds
    except subprocess.TimeoutExpired:
        return "killed", f"timeout {timeout:.0f} s", time.perf_counter() - t0
    finally:
        path.write_text(original, encoding="utf-8")


def main(argv: list[str] | None = None) -> int:
    p = argparse.ArgumentParser(description="Apply physics mutations and report which the tests catch.")
    p.add_argument("--list", action="store_true", help="list the mutations and exit")
    p.add_argument("--only", help="comma-separated mutation names")
    p.add_argument("--timeout", type=float, default=600.0, help="seconds per mutation")
    args = p.parse_args(argv)
    chosen = MUTATIONS
    if args.only:
        names = {n.strip() for n in args.only.split(",")}
        unknown = names - {m.name for m in MUTATIONS}
        if unknown:
            raise SystemExit(f"mutation_probe: unknown mutation(s): {', '.join(sorted(unknown))}")
        chosen = tuple(m for m in MUTATIONS if m.name in names)
    _check(chosen)
    if args.list:
        for m in chosen:
            print(f"{m.name:24s} {m.file:22s} {m.description}")
        return 0
    with tempfile.TemporaryDirectory(prefix="magcheck-probe-") as tmp:
        scratch = Path(tmp) / "tree"
        subprocess.run(["git", "worktree", "add", "--detach", "-q", str(scratch), "HEAD"],
                       cwd=ROOT, check=True)
        try:
            rows = []
            for m in chosen:
                verdict, by, seconds = _run_one(m, scratch, args.timeout)
                rows.append((m, verdict, by, seconds))
                print(f"{m.name:24s} {verdict:8s} {seconds:6.1f} s  {by}", flush=True)
        finally:
            subprocess.run(["git", "worktree", "remove", "--force", str(scratch)], cwd=ROOT,
                           check=False)
    killed = sum(1 for _, v, _, _ in rows if v == "killed")
    print(f"\n{len(rows)} mutations: {killed} killed, {len(rows) - killed} survived")
    for m, v, _, _ in rows:
        if v == "survived":
            print(f"  survived: {m.name} ({m.file}): {m.description}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
