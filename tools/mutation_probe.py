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
    M("core-b-volume-mean", "compare/fe.py",
      'vals["core_B"] = path_mean_core_b(samples, cores)',
      'vals["core_B"] = post.region_mean_b(sol, cores)',
      "the FE core B back to a volume mean over the core (not the hand's path mean)",
      ("tests/test_core_b_and_depth.py",)),
    M("ei-one-loop-path", "compare/families/ei_core.py",
      'Segment("right", "tr", "br", yt - yb, c.outer * d, "right", axis_sign=-1, part="E"),',
      'Segment("right", "tr", "br", yt - yb, c.outer * d, "right", axis_sign=-1, part="E",\n'
      '                    on_path=False),',
      "the EI core's core B and path H over one loop (a mirrored case differs)",
      ("tests/test_core_b_and_depth.py",)),
    M("depth-case-model", "compare/check.py",
      "chosen = ranked[0] if ranked else",
      "chosen = own if own in DEPTH_MODELS else ranked[0] if ranked else",
      "the FE 3D column takes the case's fringing model, not the best-ranked depth model",
      ("tests/test_core_b_and_depth.py",)),
    M("depth-no-spread", "compare/check.py",
      "spread[k] = max(vals) - min(vals) if vals else 0.0",
      "spread[k] = 0.0",
      "the FE 3D column's uncertainty without the depth models' spread",
      ("tests/test_core_b_and_depth.py",)),
    M("depth-below-gap-silent", "compare/casefile.py",
      "worst[1].depth >= DEPTH_PER_GAP_MIN * worst[1].length",
      "worst[1].depth >= 0.0 * worst[1].length",
      "a stack depth shorter than the gap passes without a warning",
      ("tests/test_core_b_and_depth.py",)),
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
      "    if abs(diff_pct) <= limit:",
      "    if abs(diff_pct) >= limit:",
      "an agreement limit judged the wrong way round",
      ("tests/test_check.py", "tests/test_margins.py")),
    M("noise-band", "compare/check.py",
      "noise = math.isfinite(unc) and abs(hand - fe) <= unc",
      "noise = math.isfinite(unc) and abs(hand - fe) <= 10 * unc",
      "'within FE noise' given for ten times the uncertainty",
      ("tests/test_check.py", "tests/test_wording.py")),
    M("noise-band-x2", "compare/check.py",
      "noise = math.isfinite(unc) and abs(hand - fe) <= unc",
      "noise = math.isfinite(unc) and abs(hand - fe) <= 2 * unc",
      "the FE noise band doubled: a row beyond its limit at 1.25x its uncertainty "
      "called inconclusive instead of FAIL",
      ("tests/test_verdicts.py",)),
    M("noise-before-limit", "compare/check.py",
      "    if abs(diff_pct) <= limit:\n        return NOISE if noise else \"pass\"",
      "    if noise or abs(diff_pct) <= limit:\n        return NOISE if noise else \"pass\"",
      "the FE noise band judged before the limit: a difference beyond the limit within a "
      "wide uncertainty passes",
      ("tests/test_verdicts.py",)),
    M("agreement-exit-as-design", "compare/check.py",
      "            return EXIT_AGREEMENT\n        return 0",
      "            return EXIT_DESIGN\n        return 0",
      "a hand-vs-FE disagreement exits 1 like a failed design margin",
      ("tests/test_verdicts.py",)),
    M("agreement-in-design", "compare/check.py",
      'if self.limit_value is not None or self.key == "peak_B" or self.key.startswith("margin:"):',
      'if self.limit_pct is not None or self.limit_value is not None or self.key == "peak_B":',
      "agreement rows counted in the design verdict",
      ("tests/test_verdicts.py",)),
    M("coupling-judged", "compare/check.py",
      "None, _verdict(d, hk, fk, math.nan, None),",
      "20.0, _verdict(d, hk, fk, math.nan, 20.0),",
      "the coupling factor judged by its percent difference (any k from 0.8 to 1 passes)",
      ("tests/test_verdicts.py",)),
    M("known-any-stored", "compare/verify.py",
      'if verdict == "FAIL" and stored is not None and stored.get(r.key) == "FAIL":',
      'if verdict == "FAIL" and stored is not None and r.key in stored:',
      "an agreement FAIL called known when the baseline stored any verdict for the row",
      ("tests/test_verdicts.py",)),
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
      ("tests/test_line_search.py", "tests/test_fem_newton.py", "tests/test_fem_exact.py")),
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
    # ---------------------------------------------------------------- compare: signs and notes
    M("magnet-sign-hand", "compare/hand.py",
      "    ref = sign_reference(case, float(res.flux_linkage[name0]))",
      "    ref = float(res.flux_linkage[name0]) if many else case.winding.current",
      "with a magnet the hand signs follow the current, not the magnet's direction",
      ("tests/test_notes_signs.py",)),
    M("magnet-sign-fe", "compare/fe.py",
      "    ref = sign_reference(case, lam)",
      "    ref = lam if many else w.current",
      "with a magnet the FE signs follow the current, not the magnet's direction",
      ("tests/test_notes_signs.py",)),
    M("magnet-sense-flipped", "compare/hand.py",
      "return 0 if lam == 0.0 or not math.isfinite(lam) else (1 if lam > 0 else -1)",
      "return 0 if lam == 0.0 or not math.isfinite(lam) else (-1 if lam > 0 else 1)",
      "the magnet's sense taken against its flux linkage (a magnet alone negative)",
      ("tests/test_notes_signs.py",)),
    M("magnet-secant-judged", "compare/check.py",
      "if magnets and k == \"inductance\":",
      "if False and k == \"inductance\":",
      "with a magnet lambda/I (its own flux counted in) judged as an inductance",
      ("tests/test_notes_signs.py",)),
    M("magnet-secant-note-at-zero", "compare/check.py",
      "    if i == 0:\n        return (signs",
      "    if i != 0:\n        return (signs",
      "the magnet's secant note says lambda/I has no value at a non-zero current",
      ("tests/test_notes_signs.py",)),
    M("cancel-undetected", "compare/hand.py",
      "if not (scale > 0 and abs(v[lk]) <= CANCEL_FLOOR * scale):",
      "if not (scale > 0 and abs(v[lk]) <= 0.0):",
      "windings whose fields cancel compared row by row (-100 % FAIL on float residue)",
      ("tests/test_notes_signs.py",)),
    M("hand-residue-printed", "compare/commands/hand.py",
      "return 0.0 if cancel or v == 0.0 else v",
      "return v",
      "'magcheck hand' prints a cancellation's float residue (1e-164 A/m)",
      ("tests/test_notes_signs.py",)),
    M("residue-printed", "compare/serialize.py",
      "if v == 0.0 or abs(v) < RESIDUE_FLOOR * scale:",
      "if abs(v) < 0.0:",
      "float residue (3.4e-159 pWb, -0) printed as a value",
      ("tests/test_notes_signs.py",)),
    M("corner-note-any-sign", "compare/check.py",
      "if math.isfinite(ph.diff_pct) and ph.diff_pct < -5:",
      "if math.isfinite(ph.diff_pct) and abs(ph.diff_pct) > 5:",
      "the corner-crowding note where the hand path H is above the FE's",
      ("tests/test_notes_signs.py",)),
    M("singular-note-at-zero-field", "compare/check.py",
      "if math.isfinite(fe.fine.max_B) and fe.fine.max_B > max(peak, 0.0) > 0.0:",
      "if True:",
      "the singular-corner note with no field in the core",
      ("tests/test_notes_signs.py",)),
    M("no-leakage-note-with-leakage", "compare/check.py",
      "has_leak = bool(hand_p.leakage_permeance) or bool(circuit is not None",
      "has_leak = False and bool(circuit is not None",
      "'the hand model has no leakage path' said of a hand model with leakage paths",
      ("tests/test_notes_signs.py",)),
    M("breakdown-saturation-always", "compare/serialize.py",
      "if not res.fe.fine.peak_B > _knee(res.case.material(\"core\").law):",
      "if False:",
      "the breakdown note blames local saturation below the knee",
      ("tests/test_notes_signs.py",)),
    M("lower-b-note-any-core-b", "compare/check.py",
      "if math.isfinite(cb) and cb > 0 else",
      "if True else",
      "the path-H note claims a lower FE B where the core B row says otherwise",
      ("tests/test_notes_signs.py",)),
    M("gap-note-blames-absent-model", "compare/check.py",
      'if hand_p.fringing_model == "none":',
      'if False:',
      "the gap-B note blames 'the fringing model' of a hand model without fringing",
      ("tests/test_notes_signs.py",)),
    M("coupling-note-k-1-always", "compare/check.py",
      'hand_k = ("no leakage path: k = 1" if abs(abs(kr.hand) - 1.0) < 1e-9',
      'hand_k = ("no leakage path: k = 1" if True',
      "the coupling note says the hand k is 1 whatever the hand row holds",
      ("tests/test_notes_signs.py",)),
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
    M("u-armature-free-sides", "compare/families/u_armature.py",
      "free_height=c.window_height, sides=self.gap_sides(c))",
      "free_height=c.window_height)",
      "the u-armature's working gaps with the window height free at every edge",
      ("tests/test_u_armature.py",)),
    M("plunger-iron-rate-dropped", "compare/hand.py",
      "for n, rate in circuit.segment_rates)",
      "for n, rate in circuit.segment_rates if False)",
      "the network's virtual work leaves out the plunger segment the stroke lengthens",
      ("tests/test_plunger.py",)),
    M("cup-leakage-flux-weight", "compare/families/holding_magnet.py",
      "p_low = p_side * (0.5 * h_pole + c.magnet_height / 3.0)",
      "p_low = p_side * (0.5 * h_pole + c.magnet_height / 2.0)",
      "the cup leakage weights the magnet's side by h_m/2 (flux) instead of h_m/3 (energy)",
      ("tests/test_holding_magnet.py",)),
    M("pot-flux-factor-half-window", "compare/families/pot_core.py",
      "face = GapFace.round(g, r0, r1, h,",
      "face = GapFace.round(g, r0, r1, half,",
      "the pot core's flux-factor G half the window's height",
      ("tests/test_gap_faces.py",)),
    M("holding-window-shared", "compare/families/holding_magnet.py",
      "GapSides((h_pole, 0.5 * window), (h_pole, 0.5 * window),",
      "GapSides((h_pole, window), (h_pole, window),",
      "the holding magnet's pole edge takes the whole window the wall's edge also uses",
      ("tests/test_gap_faces.py",)),
    M("flux-tube-straight-round", "analytic/fringing.py",
      "total += w * 2.0 * math.pi / _half_turn(r_e, sign * rho)",
      "total += w * 2.0 * math.pi / _half_turn(r_e, 0.0 * rho)",
      "a round face's hollow-cylinder tubes left straight (the edge's curvature neglected)",
      ("tests/test_fringing.py",)),
    M("plunger-space-counted-twice", "compare/families/plunger.py",
      "return coil_space_leakage(rp, rs_in, lp - r, l_s - r, H - 2 * t, spans)[0]",
      "return coil_space_leakage(rp, rs_in, lp, l_s, H - 2 * t, spans)[0]",
      "the plunger's coil-space leakage fills the stretch the gap's fringing tubes take",
      ("tests/test_plunger.py",)),
    M("pot-window-counted-twice", "compare/families/pot_core.py",
      "p_leak, _ = coil_space_leakage(r1, rw0, half - reach, half - reach, h, spans)",
      "p_leak, _ = coil_space_leakage(r1, rw0, half, half, h, spans)",
      "the pot core's window leakage fills the stretch the gap's fringing tubes take",
      ("tests/test_pot_core.py",)),
    M("facing-gaps-full-window", "compare/hand.py",
      "room[side] = 0.5 * w",
      "room[side] = w",
      "two gaps facing each other across a window each take the whole window",
      ("tests/test_gap_faces.py",)),
    M("stroke-margin-interp", "compare/margins.py",
      "return float(np.interp(at, s[ok], v[ok]))",
      "return float(v[ok][np.argmin(abs(s[ok] - at))])",
      "a force limit takes the nearest swept stroke instead of interpolating",
      ("tests/test_margins.py",)),
    # ---------------------------------------------------------------- issue 28: survivors' kinds
    M("ei-effective-outer-area", "compare/families/ei_core.py",
      "parts += [(segs[n].limb, segs[n].length, 2.0 * segs[n].area)",
      "parts += [(segs[n].limb, segs[n].length, segs[n].area)",
      "the EI core's effective path with its two parallel outer paths not doubled in area",
      ("tests/test_effective.py",)),
    M("effective-gap-in-iron", "compare/hand.py",
      "iron = [(length - sum(g.length for g in case.gaps if g.limb == limb), area)",
      "iron = [(length, area)",
      "the effective core's iron length still holding the gaps",
      ("tests/test_effective.py",)),
    M("bypass-coil-build-half", "compare/hand.py",
      "width = win.width - c - t + t / 3.0",
      "width = win.width - c - t + t / 2.0",
      "the yoke-to-yoke bypass with the coil build weighted t/2 instead of t/3",
      ("tests/test_leakage.py",)),
    M("rz-mean-b-unweighted", "fem2d/post.py",
      "    B = b_field(sol)[:, idx]\n    dx = _asm(sol).wv[idx]\n",
      "    B = b_field(sol)[:, idx]\n    dx = _asm(sol).dx[idx]\n",
      "a region's mean B without the r-z volume weight (plain area mean)",
      ("tests/test_region_means.py",)),
    M("rz-mean-h-unweighted", "fem2d/post.py",
      "    H = h_field(sol)[:, idx]\n    dx = _asm(sol).wv[idx]\n",
      "    H = h_field(sol)[:, idx]\n    dx = _asm(sol).dx[idx]\n",
      "a region's mean H without the r-z volume weight (plain area mean)",
      ("tests/test_region_means.py",)),
    M("bh-slope-weights-swapped", "analytic/bh.py",
      "m[1:-1] = (w1 + w2) / (w1 / d[:-1] + w2 / d[1:])",
      "m[1:-1] = (w1 + w2) / (w2 / d[:-1] + w1 / d[1:])",
      "the B-H interpolant's interior knot slopes with the harmonic mean's weights swapped",
      ("tests/test_bh_slopes.py", "tests/test_bh.py")),
    M("line-search-full-step", "fem2d/solver.py",
      "full_ok = bool(np.isfinite(Wn) and Wn <= W + c * slope + scale)",
      "full_ok = bool(np.isfinite(Wn))",
      "the Newton line search takes the full step without its sufficient-decrease test",
      ("tests/test_line_search.py", "tests/test_fem_newton.py")),
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
