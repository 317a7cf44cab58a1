"""Case files: TOML in, a validated frozen :class:`~compare.design.case.Case` out.

This module owns the case-file format (the tables are listed in
:mod:`compare.design.case`).  Everything is checked here, at the edge: a bad value
is a :class:`~compare.errors.CaseError` naming the key and the value; units
and B-H files are read here too.
"""

from __future__ import annotations

import dataclasses
import hashlib
import math
import tomllib
from pathlib import Path
from typing import Any

from magcheck.analytic.bh import B_UNITS, H_UNITS, BHDataError, LinearMaterial
from magcheck.analytic.fringing import FRINGING_MODELS
from magcheck.analytic.materials import bh_from_table, builtin, builtin_names, load_bh_csv

from ..design.case import (Case, FESettings, HandSettings, InductanceLimit, Margins, MaterialSpec,
                           LOSS_WAVEFORMS, LossSpec, SaturationLimit, SweepDecl, TargetDecl, Tolerance, ForceLimit)
from ..errors import CaseError, CaseWarning, RunError, format_value, warn
from ..design.families import Family, get_family
from ..design.geometry import ACSpec, ConductorSpec, Gap, Limb, WindingSpec, coil_rects
from ..design.keys import key_dimension, parse_key, parse_vary
from ..design.casekeys import (CONDUCTOR_KINDS, CONDUCTOR_MATERIALS,  # noqa: E501
                               AGREEMENT_KEYS, CORE_COMMON, DISTRIBUTIONS, INDUCTANCE_KINDS,
                               ROOT, ROOT_KEYS, table)
from ..design.reader import TableReader

__all__ = ["load_case", "case_from_dict", "plausibility_issues", "referenced_files"]

FILE_KEYS = ("csv", "dxf", "table")
"""Case keys whose value names a file the case reads (a B-H table, a drawing)."""

MATERIAL_REGIONS = ("core",)


# ---------------------------------------------------------------------------
def referenced_files(path: str | Path) -> dict[str, str]:
    """The files a case file reads besides itself (path -> what it is): the
    values of FILE_KEYS anywhere in it, relative to its folder, that exist.
    For the CLI's output check (no output may overwrite one); a case that
    cannot be read gives {} here and its own error when it is loaded."""
    import tomllib

    path = Path(path)
    try:
        doc = tomllib.loads(path.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, tomllib.TOMLDecodeError):
        return {}
    out: dict[str, str] = {}

    def walk(node: object, where: str) -> None:
        if isinstance(node, dict):
            for k, v in node.items():
                key = f"{where}.{k}" if where else str(k)
                if k in FILE_KEYS and isinstance(v, str):
                    p = Path(v) if Path(v).is_absolute() else path.parent / v
                    if p.is_file():
                        out[str(p)] = f"read by the case ({key} in {path.name})"
                else:
                    walk(v, key)
        elif isinstance(node, list):
            for i, v in enumerate(node):
                walk(v, f"{where}[{i}]")

    walk(doc, "")
    return out


def load_case(path: str | Path) -> Case:
    """Read and validate a TOML case file.

    Raises
    ------
    CaseError
        For any problem, naming the key path and the value.
    """
    path = Path(path)
    try:
        raw = path.read_bytes()
    except OSError as exc:
        raise CaseError(str(path), None, f"cannot read case file ({exc.strerror})") from None
    try:
        data = tomllib.loads(raw.decode("utf-8"))
    except UnicodeDecodeError:
        raise CaseError(str(path), None, "case file is not UTF-8 text") from None
    except tomllib.TOMLDecodeError as exc:
        raise CaseError(str(path), None, f"TOML syntax error: {exc}") from None
    return case_from_dict(data, base_dir=path.parent, source=str(path),
                          sha256=hashlib.sha256(raw).hexdigest())


MAX_TURNS = 1_000_000
MIN_COIL_SIZE = 1e-6
"""Smallest coil thickness and length (m): a 1 um coil is already no coil
(the plausibility warning starts at 0.1 mm), and a far smaller one gives
coil rectangles of zero width once added to the core's coordinates."""
TURNS_WHY = " (a winding of more turns is no wound component; common practice, no source)"

MIN_FE_TOL = 1e-10
"""Smallest ``[fe] tol``: the demo choke's Newton residual stalls at 4.4e-14
(50 steps, tol 1e-14), and the floor grows with the mesh's condition number,
so 1e-10 leaves the solver a margin of three or more decades."""

def visible_text(text: str) -> str:
    """``text`` without control and invisible format characters (a newline, an
    escape sequence, a right-to-left override): a case name or description
    goes into the terminal, Markdown, HTML and file names, where such a
    character reorders or restyles what follows. Tabs and newlines become spaces."""
    import unicodedata

    text = text.replace("\t", " ").replace("\n", " ").replace("\r", " ")
    return "".join(c for c in text if unicodedata.category(c) not in ("Cc", "Cf", "Zl", "Zp"))


ROOT_TABLES = tuple(ROOT_KEYS)
"""The top-level tables of a case file (a family may read more: ``case_tables``)."""


def case_from_dict(data: dict, *, base_dir: Path | None = None, source: str = "",
                   sha256: str = "") -> Case:
    """Validate an already parsed TOML document (see :func:`load_case`)."""
    root = TableReader(data, "", known=ROOT_TABLES, spec=ROOT)
    meta = root.table("case")
    name = visible_text(meta.string("name", "unnamed"))
    family_name = meta.string("family")
    description = visible_text(meta.string("description", ""))
    meta.finish()
    family = get_family(family_name)

    core_t = root.table("core")
    core_t.spec = core_spec(family)
    stacking = core_t.number("stacking", 1.0, lo=0.3, hi=1.0)
    extra = getattr(family, "case_tables", ())
    root._known |= frozenset(extra)
    root.spec = root_spec(family)
    if extra:  # a family that reads tables of its own (a drawn core: [shapes], [[regions]], ...)
        reader: Any = family.read_core  # read_core(t, *, tables, base_dir) for such a family
        core = reader(core_t, tables={n: root.raw(n, None) for n in extra}, base_dir=base_dir)
    else:
        core = family.read_core(core_t)
    core_t.finish()
    limbs = family.limbs(core)

    gaps = tuple(_read_gap(t, family, limbs) for t in root.tables("gaps"))
    _check_gap_overlap(gaps)
    windings = _read_windings(root, family, limbs)
    if len(windings) > 1 and any(wd.conductor is not None or wd.ac is not None
                                 for wd in windings):
        # several windings drawn turn by turn (a transformer, interleaved or
        # not): every one with its conductor and AC current, on one limb, at
        # one frequency (compare.models.ac)
        for k, wd in enumerate(windings):
            for part in ("conductor", "ac"):
                if getattr(wd, part) is None:
                    raise CaseError(f"windings[{k}].{part}", None,
                                    "missing: with several windings drawn turn by turn, give "
                                    "every winding [windings.conductor] and [windings.ac] "
                                    "(a winding's AC current is its peak phasor, negative "
                                    "for the opposite phase: -N1/N2 I1 for a loaded secondary)")
            if wd.limb != windings[0].limb:
                raise CaseError(f"windings[{k}].limb", wd.limb,
                                f"windings drawn turn by turn share one limb "
                                f"('{windings[0].limb}') for now")
            if wd.ac is not None and math.isnan(wd.ac.frequency) and windings[0].ac is not None:
                wd = dataclasses.replace(wd, ac=dataclasses.replace(
                    wd.ac, frequency=windings[0].ac.frequency))
                windings = windings[:k] + (wd,) + windings[k + 1:]
            if wd.ac is not None and windings[0].ac is not None and \
                    wd.ac.frequency != windings[0].ac.frequency:
                raise CaseError(f"windings[{k}].ac.frequency", wd.ac.frequency,
                                f"differs from the first winding's {windings[0].ac.frequency:g} "
                                "Hz: the AC windings share one frequency")
    mat_t = root.table("materials")
    core_loss = _read_core_loss(mat_t, base_dir)
    materials = _read_materials(mat_t, base_dir, family, core)
    loss = _read_loss(root.table("loss"), len(windings)) if root.has("loss") else None
    conducting = (_read_conducting(root.table("conducting_parts"), family, core)
                  if root.has("conducting_parts") else ())
    hand = _read_hand(root.table("hand", {}))
    fe = _read_fe(root.table("fe", {}))
    margins = _read_margins(root.table("margins", {}))
    sweeps = _read_sweeps(root, "sweep", family)
    tolerances = tuple(_read_tolerance(t, family, data) for t in root.tables("tolerances"))
    targets = tuple(_read_target(t, family) for t in root.tables("targets"))
    measured = tuple(_read_measured(t, base_dir) for t in root.tables("measured"))
    from .motion import motion_of, read_motion

    motion_t = motion_of(root)
    root.finish()
    if len(windings) > 1 and hand.leakage:
        raise CaseError("hand.leakage", True, "window leakage is modelled for one winding; with "
                                              "several windings set it false")
    case = Case(name=name, family=family_name, core=core, gaps=gaps, winding=windings[0],
                extra_windings=windings[1:],
                materials=materials, hand=hand, fe=fe, margins=margins, sweeps=sweeps,
                tolerances=tolerances, stacking=stacking, targets=targets, measured=measured,
                description=description, source=source, sha256=sha256, core_loss=core_loss,
                loss=loss, conducting=conducting)
    check = getattr(family, "check_case", None)
    if check is not None:  # what the family checks across tables (coils name windings, ...)
        check(case)
    if motion_t is not None:
        case = dataclasses.replace(case, motion=read_motion(motion_t, case))
        from ..design.coremodel import core_model as _core_model

        magnets = bool(_core_model(case).magnets)
        for key, value in case.margins.motion:
            # a holding magnet gets its release current only; a relay or
            # solenoid never a release current: such a margin would stay n/a
            if (key == "release_current") != magnets:
                unit = "A" if key == "release_current" else ("V" if "voltage" in key else "s")
                raise CaseError(f"margins.{key}", f"{value:g} {unit}",
                                "a holding magnet's limit (its release current): the case has "
                                "no magnet" if not magnets else
                                "a relay's or solenoid's limit: a holding magnet's [motion] "
                                "gives its release current only (margins.release_current)")
    elif case.margins.motion:
        raise CaseError(f"margins.{case.margins.motion[0][0]}", case.margins.motion[0][1],
                        "a motion limit: give the case a [motion] table, or drop it")
    if case.margins.force_min is not None or case.margins.force:
        from ..design.coremodel import core_model

        spec = core_model(case).force
        if spec is None:
            key, value = (("margins.force_min", case.margins.force_min)
                          if case.margins.force_min is not None
                          else ("margins.force[0].stroke", case.margins.force[0].stroke))
            raise CaseError(key, value, "the case has no moving part (a u-armature, plunger or "
                                        "holding-magnet core, or a drawn core with [force])")
        if case.margins.force and spec.stroke_key is None:
            raise CaseError("margins.force[0].stroke", case.margins.force[0].stroke,
                            "the moving part has no stroke key to sweep (a drawn core): use "
                            "margins.force_min at the drawn position")
        for i, lim in enumerate(case.margins.force):
            _check_force_limit_stroke(f"margins.force[{i}].stroke", lim.stroke, spec, data,
                                      family, case)
    if case.hand.rogowski:
        from ..models.coupling import concentric_pair

        if concentric_pair(case) is None:
            raise CaseError("hand.rogowski", True, "corrects the leakage inductance of two "
                            "concentric windings: give two [[windings]] on one limb, or drop it")
    for w in plausibility_issues(case, data):
        warn(w)  # at the user's line that loaded or derived the case
    if case.winding.driven:
        case = _resolved_drive(case)
    else:
        margins = case.margins
        for mkey, mval in (("B_peak", margins.B_peak),
                           ("magnetizing_current_peak", margins.magnetizing_current_peak),
                           ("magnetizing_current_rms", margins.magnetizing_current_rms)):
            if mval is not None:
                raise CaseError(f"margins.{mkey}", mval, "a voltage-drive margin: give the first "
                                "winding a voltage and frequency, or drop it")
    for mkey in ("winding_loss", "resistance_ratio"):
        if getattr(case.margins, mkey) is not None and case.winding.ac is None:
            raise CaseError(f"margins.{mkey}", getattr(case.margins, mkey),
                            "an AC-winding margin: give the winding [winding.conductor] and "
                            "[winding.ac], or drop it")
    if case.margins.inrush_current_peak is not None and case.winding.residual_flux is None:
        raise CaseError("margins.inrush_current_peak", case.margins.inrush_current_peak,
                        "judges the inrush estimate of a voltage drive: give the first winding "
                        "voltage, frequency and residual_flux (a fraction of the peak flux "
                        "linkage, e.g. 0.8), or drop it")
    _check_loss(case)
    return case


def core_spec(family: Family) -> Any:
    """The declared keys of ``[core]`` for ``family`` (compare.design.casekeys):
    the common ones and the family's ``core_spec``; None (not checked) for a
    plug-in family that declares none of its own (one derived from a built-in
    family that reads other keys inherits the built-in's)."""
    own = type(family).__dict__.get("core_spec", getattr(family, "__dict__", {}).get("core_spec"))
    return None if own is None else table({**CORE_COMMON, **own})


def root_spec(family: Family) -> Any:
    """The declared top-level tables: every case's and the family's own
    (``table_specs``; a plug-in's ``case_tables`` without them: any keys)."""
    own = dict(getattr(family, "table_specs", {}) or {})
    for name in getattr(family, "case_tables", ()):
        own.setdefault(name, table(None))
    return table({**ROOT_KEYS, **own})


def _resolved_drive(case: Case) -> Case:
    """A voltage-driven case with its winding's current set (compare.models.drive):
    the drive's checks first, each naming its key."""
    from ..design.coremodel import core_model
    from ..models.drive import resolve_drive

    key = "windings[0].voltage" if case.extra_windings else "winding.voltage"
    if core_model(case).magnets:
        raise CaseError(key, case.winding.voltage, "a voltage drive of a core with a magnet is "
                        "not modelled (its lambda-i curve is not odd about zero)")
    for k, w in enumerate(case.extra_windings, start=1):
        if w.current != 0.0:
            raise CaseError(f"windings[{k}].current", w.current,
                            "with a voltage drive on the first winding the others must carry "
                            "0 A (open): a DC bias is not modelled")
    try:
        return resolve_drive(case)
    except RunError as exc:
        raise CaseError(key, case.winding.voltage, str(exc)) from None


def family_parts(family: Family, core: object) -> tuple[str, ...]:
    """The core parts that may have a material of their own: the family's
    ``part_names(core)`` when its parts depend on the case, else ``parts``."""
    names = getattr(family, "part_names", None)
    return tuple(names(core)) if names is not None else tuple(family.parts)


# Plausibility bounds (common practice, no source): magnetic parts designed by
# hand run from a few mm to about a metre; a bare number is metres, so "20"
# meant as 20 mm lands far outside. A gap under 1 um is below lapping
# flatness; a core with mu_r under 5 is hardly magnetic.
CORE_SIZE_RANGE = (1e-3, 2.0)  # m, outer core dimensions and stack depth
GAP_MIN = 1e-6  # m
PART_MIN = 1e-4  # m: a part thinner than 0.1 mm (a lamination's thickness) is no limb
GAP_LIKE_KEYS = ("stroke", "sliding_gap", "gap")  # [core] lengths that may be tiny
MU_R_MIN = 5.0
# The depth correction (the hand and FE 3D columns) adds the fringing at the
# stack's front and back faces as two independent edges.  That holds while
# the depth exceeds the gap: Roters's edge tubes (a half cylinder of diameter
# g at each edge) of the two faces meet at depth = g, the area model's
# (b + g)/b doubles the face there, and the conformal basic element reaches
# the other edge's element (its half face b/2 shorter than its half gap g/2).
# Beyond it the planar cut is no model of the part (its field is 3D
# throughout) [derived here from the models' constructions].
DEPTH_PER_GAP_MIN = 1.0


def _as_written(data: dict | None, path: tuple, si: float) -> str:
    """A length for a message as the case file wrote it ("0.001 mm", or a bare
    number in metres "20 m"); in mm when the document is not at hand."""
    node: Any = data
    for part in path:
        try:
            node = node[part]
        except (KeyError, IndexError, TypeError):
            node = None
            break
    if isinstance(node, str):
        return node.strip()
    if isinstance(node, (int, float)) and not isinstance(node, bool):
        return f"{node:g} m"
    return f"{si * 1e3:.4g} mm"


def plausibility_issues(case: Case, data: dict | None = None) -> tuple[CaseWarning, ...]:
    """Valid but implausible inputs of a case, as warnings (not raised).

    Checks the outer core dimensions and the stack depth against
    :data:`CORE_SIZE_RANGE`, each gap against :data:`GAP_MIN`, and the core's
    (initial) relative permeability against :data:`MU_R_MIN`.
    """
    out = []
    lo, hi = CORE_SIZE_RANGE
    dims = [(name, getattr(case.core, name)) for name in ("outer_width", "outer_height")
            if isinstance(getattr(case.core, name, None), float)]
    if hasattr(case.core, "depth") and getattr(case.core, "symmetry", "planar") == "planar":
        dims.append(("depth", case.depth))  # an r-z core has no stack depth
    for name, v in dims:
        if not lo <= v <= hi:
            out.append(CaseWarning(f"core.{name}", _as_written(data, ("core", name), v),
                                   "outside the plausible 1 mm .. 2 m for a core dimension "
                                   "(a bare number is metres: write e.g. \"20 mm\")"))
    seen = {name for name, _ in dims}
    for name in case.family_model.core_keys:  # every other dimension of the core
        v = getattr(case.core, name, None)
        if name in seen or not isinstance(v, float) or v == 0.0:
            continue
        small = GAP_MIN if name in GAP_LIKE_KEYS else PART_MIN
        if not small <= v <= hi:
            span = "1 um" if small == GAP_MIN else "0.1 mm"
            out.append(CaseWarning(f"core.{name}", _as_written(data, ("core", name), v),
                                   f"outside the plausible {span} .. 2 m (a bare number is "
                                   "metres: write e.g. \"20 mm\")"))
    file_windings = "windings" in (data or {})
    for k, w in enumerate(case.windings):
        table: tuple = ("windings", k) if file_windings or k else ("winding",)
        for name in ("thickness", "length"):
            v = getattr(w, name, 0.0)
            if isinstance(v, float) and v != 0.0 and not PART_MIN <= v <= hi:
                key = "windings[%d].%s" % (k, name) if table[0] == "windings" else f"winding.{name}"
                out.append(CaseWarning(key, _as_written(data, (*table, name), v),
                                       "outside the plausible 0.1 mm .. 2 m for a winding's "
                                       "build (a bare number is metres: write e.g. \"20 mm\")"))
    for i, g in enumerate(case.gaps):
        if g.length < GAP_MIN:
            out.append(CaseWarning(f"gaps[{i}].length",
                                   _as_written(data, ("gaps", i, "length"), g.length),
                                   "below 1 um: shorter than a ground face is flat"))
    if not case.family_model.limb_names:  # a drawn core: its drawing's extent, its circuit's gaps
        from ..design.coremodel import core_model

        model = core_model(case)
        boxes = [r.bbox() for r in model.regions]
        extent = max(max(b[2] for b in boxes) - min(b[0] for b in boxes),
                     max(b[3] for b in boxes) - min(b[1] for b in boxes))
        if not lo <= extent <= hi:
            out.append(CaseWarning("shapes.units", f"{extent:g} m",
                                   "the drawing's extent is outside the plausible 1 mm .. 2 m "
                                   "(check the unit of its points or the DXF's)"))
        if model.circuit is not None:
            for i, gap in enumerate(model.circuit.gaps):
                if gap.face.length < GAP_MIN:
                    out.append(CaseWarning(f"circuit.gaps[{i}].length",
                                           f"{gap.face.length:g} m",
                                           "below 1 um: shorter than a ground face is flat"))
    out.extend(_depth_issues(case))
    for region in ("core", *case.part_overrides):
        spec = case.material(region)
        mu_r = float(spec.law.mu_r_initial)
        if mu_r < MU_R_MIN:
            what = "mu_r" if spec.kind == "mu_r" else "initial relative permeability"
            key = f"materials.{region}" + (".mu_r" if spec.kind == "mu_r" else "")
            out.append(CaseWarning(key, mu_r, f"core {what} below {MU_R_MIN:g}: the core is "
                                              "hardly magnetic, so the differences to the FE "
                                              "are not about fringing"))
    return tuple(out)


def _depth_issues(case: Case) -> list[CaseWarning]:
    """A planar case whose stack depth is shorter than one of its gaps
    (:data:`DEPTH_PER_GAP_MIN`): its depth correction is outside every
    fringing model's range, so its 3D columns are no estimate."""
    from ..design.coremodel import core_model
    from ..models.hand import gap_face, hand_circuit

    if core_model(case).axisymmetric:  # an r-z case has no stack depth
        return []
    circuit = hand_circuit(case)
    if circuit is not None:
        gaps = [(f"circuit.gaps[{i}]", g.face) for i, g in enumerate(circuit.gaps)
                if g.face.radii is None]
    else:
        gaps = [(f"gaps[{i}]", gap_face(case, i)) for i in range(len(case.gaps))]
    worst = max(gaps, key=lambda kf: kf[1].length / kf[1].depth, default=None)
    if worst is None or worst[1].depth >= DEPTH_PER_GAP_MIN * worst[1].length:
        return []
    where, face = worst
    return [CaseWarning("core.depth", f"{face.depth:g} m",
                        f"shorter than the {face.length * 1e3:g} mm gap ({where}): the depth "
                        "fringing models hold for a depth above the gap length (the stack's "
                        "front and back faces fringe independently), so the hand 3D and FE 3D "
                        "columns are outside their range")]


def metres_hint(raw: object) -> str:
    """A message's ending for a length given as a bare number (taken as
    metres): `` (a bare number is metres: write "0.8 mm" for 0.8 mm)``;
    "" for anything else."""
    if isinstance(raw, (int, float)) and not isinstance(raw, bool) and raw > 0:
        return f' (a bare number is metres: write "{raw:g} mm" for {raw:g} mm)'
    return ""


def _read_gap(t: TableReader, family: Family, limbs: dict[str, Limb]) -> Gap:
    refused = getattr(family, "no_gaps", "")
    if refused:  # the family's own reason (the schema refuses gaps by it too)
        raise CaseError(t.key("limb"), t.raw("limb", None), refused)
    if not family.limb_names:
        raise CaseError(t.key("limb"), t.raw("limb", None),
                        f"a {family.name} core has no limbs: draw its gaps as regions "
                        "(kind = \"gap\") and give them to the hand model in its circuit")
    limb_name = t.string("limb", choices=family.limb_names)
    limb = limbs[limb_name]
    length = t.quantity("length", "length")
    if length < 1e-6 * limb.width:  # below it the gap's edges meet in floating point
        raise CaseError(t.key("length"), t.data["length"],
                        f"gap too thin to draw: below 1e-6 of the face it crosses "
                        f"({limb_name} limb is {limb.width * 1e3:g} mm wide)"
                        + metres_hint(t.data["length"]))
    if length >= limb.span:
        raise CaseError(t.key("length"), t.data["length"],
                        f"gap not shorter than its limb ({limb_name} limb straight part is "
                        f"{limb.span * 1e3:g} mm){metres_hint(t.data['length'])}")
    if length >= limb.width:
        raise CaseError(t.key("length"), t.data["length"],
                        f"gap not shorter than the width of the face it crosses ({limb_name} limb is "
                        f"{limb.width * 1e3:g} mm wide); the fringing models do not hold"
                        + metres_hint(t.data["length"]))
    mid = 0.5 * (limb.lo + limb.hi)
    # Position of the gap centre, measured along the limb from the start of
    # its straight part (bottom end of a vertical limb, left end of a
    # horizontal one); default: the middle.
    offset = t.quantity("position", "length", None, allow_zero=True)
    pos = mid if offset is None else limb.lo + offset
    if pos - 0.5 * length < limb.lo - 1e-12 or pos + 0.5 * length > limb.hi + 1e-12:
        raise CaseError(t.key("position"), t.data.get("position"),
                        f"gap does not lie within the {limb_name} limb's straight part "
                        f"(0 to {limb.span * 1e3:g} mm)" + metres_hint(t.data.get("position")))
    t.finish()
    return Gap(limb_name, length, pos)


def _check_gap_overlap(gaps: tuple[Gap, ...]) -> None:
    for i, a in enumerate(gaps):
        for j in range(i):
            b = gaps[j]
            if a.limb == b.limb and abs(a.position - b.position) < 0.5 * (a.length + b.length):
                raise CaseError(f"gaps[{i}].position", a.position,
                                f"gap overlaps gaps[{j}] on the {a.limb} limb")


def _read_windings(root: TableReader, family: Family,
                   limbs: dict[str, Limb]) -> tuple[WindingSpec, ...]:
    """``[winding]`` (one winding, named "main") or ``[[windings]]`` (any
    number, each with a unique name, default w1, w2, ...); windings on the
    same limb are concentric, stacking outward in file order."""
    if root.has("winding") and root.has("windings"):
        raise CaseError("windings", root.data["windings"],
                        "give [winding] (one winding) or [[windings]], not both")
    if not root.has("windings"):
        if not root.has("winding"):
            raise CaseError("winding", None, "missing: give a [winding] table, or one "
                                             "[[windings]] table per winding")
        return (_read_winding(root.table("winding"), family, limbs, "main", 0.0),)
    tables = root.tables("windings")
    if not tables:
        raise CaseError("windings", [], "give at least one winding")
    out: list[WindingSpec] = []
    for k, t in enumerate(tables):
        limb_name = t.raw("limb", None)
        inner = sum(w.clearance + w.thickness for w in out if w.limb == limb_name)
        w = _read_winding(t, family, limbs, f"w{k + 1}", inner)
        if k > 0 and w.driven:
            raise CaseError(t.key("voltage"), t.raw("voltage"),
                            "only the first winding may be voltage-driven (the others carry "
                            "their stated currents, 0 A for an open winding)")
        if w.name in {o.name for o in out}:
            raise CaseError(t.key("name"), w.name, "a winding of that name comes before; names "
                                                   "must differ")
        out.append(w)
    if family.winding_limbs:
        _check_winding_overlap(out, limbs, [t.key("thickness") for t in tables])
    return tuple(out)


def _check_winding_overlap(windings: list[WindingSpec], limbs: dict[str, Limb],
                           keys: list[str]) -> None:
    """Coil sides of windings on different limbs must not overlap (on the
    same limb they stack by construction)."""
    sides = [(k, r) for k, w in enumerate(windings) for r in coil_rects(limbs[w.limb], w)]
    for a, (i, ra) in enumerate(sides):
        for j, rb in sides[a + 1:]:
            if i == j:
                continue
            if min(ra.x1, rb.x1) - max(ra.x0, rb.x0) > 0 and min(ra.y1, rb.y1) - max(ra.y0, rb.y0) > 0:
                wi, wj = windings[i], windings[j]
                raise CaseError(keys[j], wj.thickness,
                                f"winding '{wj.name}' on the {wj.limb} limb overlaps winding "
                                f"'{wi.name}' on the {wi.limb} limb in the window: make the "
                                "coils thinner or shorter")


def _read_winding(t: TableReader, family: Family, limbs: dict[str, Limb], default_name: str,
                  inner: float) -> WindingSpec:
    name = t.string("name", default_name)
    if not name.strip():
        raise CaseError(t.key("name"), name, "must not be empty")
    if not family.winding_limbs:  # the family draws its coils (regions naming the winding)
        for key in ("limb", "thickness", "length", "fill", "clearance"):
            if t.has(key):
                raise CaseError(t.key(key), t.raw(key), f"a {family.name} core's coils are "
                                "drawn as regions (kind = \"coil\", winding = its name): give "
                                "only name, turns and current here")
        turns = t.integer("turns", minimum=1, maximum=MAX_TURNS, why=TURNS_WHY)
        current, voltage, frequency, residual, resistance = _read_drive(t)
        t.finish()
        return WindingSpec("", turns, current, 0.0, 0.0, 0.0, name, 0.0, voltage, frequency,
                           residual, resistance)
    limb_name = t.string("limb", choices=family.winding_limbs)
    limb = limbs[limb_name]
    turns = t.integer("turns", minimum=1, maximum=MAX_TURNS, why=TURNS_WHY)
    current, voltage, frequency, residual, resistance = _read_drive(t)
    room = min(limb.room_minus, limb.room_plus) - inner
    inside = " left beside the windings inside it" if inner > 0 else ""
    if room <= 0:
        raise CaseError(t.key("limb"), limb_name,
                        f"no room left beside the {limb_name} limb: the windings inside take "
                        "the whole window width")
    clearance = t.quantity("clearance", "length", 0.0, positive=False)
    if clearance < 0 or clearance >= room:
        raise CaseError(t.key("clearance"), t.data["clearance"],
                        f"must be >= 0 and less than the {room * 1e3:g} mm window width{inside} "
                        f"beside the {limb_name} limb")
    if t.has("fill"):
        if t.has("thickness") or t.has("length"):
            raise CaseError(t.key("fill"), t.data["fill"],
                            "give either fill or thickness and length, not both")
        fill = t.number("fill", lo=0.0, hi=1.0)
        if fill <= 0.0:
            raise CaseError(t.key("fill"), t.data["fill"], "must be positive")
        # Fill fraction of the window beside the limb (less the clearance):
        # the coil takes the limb's whole straight length and that fraction
        # of the free width.
        thickness, length = fill * (room - clearance), limb.span
    else:
        thickness = t.quantity("thickness", "length")
        length = t.quantity("length", "length")
        if thickness + clearance > room * (1 + 1e-9):
            extra = f" plus the {clearance * 1e3:g} mm clearance" if clearance else ""
            raise CaseError(t.key("thickness"), t.data["thickness"],
                            f"winding does not fit the window: coil build {thickness * 1e3:g} mm"
                            f"{extra} is more than the {room * 1e3:g} mm window width{inside} "
                            f"beside the {limb_name} limb (the coil would overlap the core)")
        if length > limb.span * (1 + 1e-9):
            raise CaseError(t.key("length"), t.data["length"],
                            f"winding does not fit the window: coil length {length * 1e3:g} mm "
                            f"is more than the {limb.span * 1e3:g} mm window height along the "
                            f"{limb_name} limb (the coil would overlap the core)")
    for key, v in (("thickness", thickness), ("length", length)):
        if v < MIN_COIL_SIZE:  # a coil side thinner has no area in double precision
            k = key if t.has(key) or not t.has("fill") else "fill"
            raise CaseError(t.key(k), t.raw(k), f"gives a coil {key} of {v:.4g} m: it must be at "
                            f"least {MIN_COIL_SIZE * 1e6:g} um")
    conductor = ac = None
    if t.has("conductor"):
        if not getattr(family, "turn_by_turn", False):
            raise CaseError(t.key("conductor"), t.raw("conductor"),
                            f"the {family.name} family does not draw turns yet (the "
                            "window-core, pot-core and plunger families do): drop it")
        conductor = _read_conductor(t.table("conductor"), turns, thickness, length, limb,
                                    t.key("turns"))
    if t.has("ac"):
        if voltage is not None:
            raise CaseError(t.key("ac"), t.raw("ac"), "a voltage-driven winding has its own "
                            "sinusoid: give current (the DC bias) with [ac], or drop it")
        if conductor is None:
            raise CaseError(t.key("ac"), t.raw("ac"), "the AC resistance needs the conductor: "
                            "give [winding.conductor] (foil or round wire) with it")
        at = t.table("ac")
        i_ac = at.quantity("current", "current", positive=False)
        if i_ac == 0.0:
            raise CaseError(at.key("current"), at.raw("current"), "must not be zero (the "
                            "peak AC current; negative for the opposite phase)")
        # a later winding may leave its frequency to the first's (read_case):
        # a frequency sweep then varies winding.ac.frequency alone
        f_ac = at.quantity("frequency", "frequency", None)
        if f_ac is None and t.path in ("winding", "windings[0]"):
            at.quantity("frequency", "frequency")  # the missing-key error
        ac = ACSpec(math.nan if f_ac is None else f_ac, i_ac)
        at.finish()
    t.finish()
    return WindingSpec(limb_name, turns, current, thickness, length, clearance, name, inner,
                       voltage, frequency, residual, resistance, conductor, ac)


MATERIAL_RESISTIVITY = {"copper": (1.724e-8, 0.00393), "aluminium": (2.826e-8, 0.00403)}
"""Resistivity (ohm m) and its temperature coefficient (1/K) at 20 degC
(IEC 60028 annealed copper; aluminium; from memory; analytic.winding_loss)."""


def _read_conductor(t: TableReader, turns: int, thickness: float, length: float, limb: Limb,
                    turns_key: str) -> ConductorSpec:
    """``[winding.conductor]``: the turns must fit the coil space (thickness x
    length) and number the winding's turns."""
    kind = t.string("kind", choices=CONDUCTOR_KINDS)
    layers = t.integer("layers", minimum=1, maximum=1000)
    material = t.string("material", "copper", choices=CONDUCTOR_MATERIALS)
    rho20, alpha20 = MATERIAL_RESISTIVITY[material]
    rho = t.quantity("resistivity", "resistivity", rho20)
    alpha = t.number("temperature_coefficient", alpha20, lo=0.0, hi=0.1)
    t_ref = t.number("reference_temperature", 20.0, lo=-273.15, hi=1000.0)
    temp = t.number("temperature", 20.0, lo=-273.15, hi=1000.0)
    if 1.0 + alpha * (temp - t_ref) <= 0:
        raise CaseError(t.key("temperature"), t.raw("temperature"),
                        "gives a resistivity <= 0 with the temperature coefficient")
    if kind == "foil":
        for key in ("diameter", "insulation"):
            if t.has(key):
                raise CaseError(t.key(key), t.raw(key), "a round wire's key: a foil has "
                                                        "thickness and width")
        tpl = t.integer("turns_per_layer", 1, minimum=1, maximum=1)
        if not t.has("layer_gap"):
            raise CaseError(t.key("layer_gap"), None, "missing: foil layers need the "
                                                      "insulation between them, e.g. \"0.05 mm\"")
        c = ConductorSpec("foil", layers, tpl, thickness=t.quantity("thickness", "length"),
                          width=t.quantity("width", "length"),
                          layer_gap=t.quantity("layer_gap", "length"), material=material,
                          rho_ref=rho, alpha=alpha, t_ref=t_ref, temperature=temp)
    else:
        for key in ("thickness", "width"):
            if t.has(key):
                raise CaseError(t.key(key), t.raw(key), "a foil's key: a round wire has "
                                                        "diameter and insulation")
        c = ConductorSpec("round", layers, t.integer("turns_per_layer", minimum=1,
                                                     maximum=100000),
                          diameter=t.quantity("diameter", "length"),
                          insulation=t.quantity("insulation", "length", 0.0, allow_zero=True),
                          layer_gap=t.quantity("layer_gap", "length", 0.0, allow_zero=True),
                          material=material, rho_ref=rho, alpha=alpha, t_ref=t_ref,
                          temperature=temp)
    t.finish()
    if c.turns != turns:
        raise CaseError(turns_key, turns, f"the conductor has {c.layers} layers x "
                        f"{c.turns_per_layer} turns = {c.turns} turns: make them equal")
    if c.build > thickness * (1 + 1e-9):
        raise CaseError(t.key("layers"), c.layers,
                        f"the layers do not fit the coil space: {c.layers} layers build "
                        f"{c.build * 1e3:g} mm across, more than the coil thickness "
                        f"{thickness * 1e3:g} mm")
    if c.height > length * (1 + 1e-9):
        what = ("foil width" if c.kind == "foil"
                else f"{c.turns_per_layer} turns x {c.pitch * 1e3:g} mm pitch")
        raise CaseError(t.key("width" if c.kind == "foil" else "turns_per_layer"),
                        c.width if c.kind == "foil" else c.turns_per_layer,
                        f"the turns do not fit the coil space: the {what} = "
                        f"{c.height * 1e3:g} mm along the limb is more than the coil length "
                        f"{length * 1e3:g} mm")
    return c


def _read_drive(t: TableReader) -> tuple[float, float | None, float | None, float | None,
                                         float | None]:
    """A winding's excitation: ``current``, or ``voltage`` (rms) with
    ``frequency`` (a sinusoidal drive; the current is then found, see
    compare.models.drive) and optionally ``residual_flux`` (the inrush estimate's
    residual flux linkage, a fraction of the peak) and ``resistance`` (ohm,
    the winding's and the source's in series: damps the inrush estimate).
    Returns (current, voltage, frequency, residual_flux, resistance)."""
    if t.has("residual_flux") and not t.has("voltage"):
        raise CaseError(t.key("residual_flux"), t.raw("residual_flux"),
                        "the inrush estimate of a voltage drive: give voltage and frequency "
                        "with it, or drop it")
    if t.has("resistance") and not t.has("residual_flux"):
        raise CaseError(t.key("resistance"), t.raw("resistance"),
                        "damps the inrush estimate of a voltage drive: give voltage, frequency "
                        "and residual_flux with it, or drop it (the magnetizing current "
                        "neglects it)")
    if t.has("voltage"):
        if t.has("current"):
            raise CaseError(t.key("voltage"), t.raw("voltage"),
                            "give either current or voltage (with frequency), not both")
        voltage = t.quantity("voltage", "voltage")
        if not t.has("frequency"):
            raise CaseError(t.key("frequency"), None, "missing: a voltage drive needs its "
                                                      "frequency, e.g. \"50 Hz\"")
        frequency = t.quantity("frequency", "frequency")
        # + 0.0: a -0.0 read as 0
        residual = (t.number("residual_flux", lo=0.0, hi=1.0) + 0.0 if t.has("residual_flux")
                    else None)
        resistance = (t.quantity("resistance", "resistance", allow_zero=True)
                      if t.has("resistance") else None)
        return 0.0, voltage, frequency, residual, resistance
    if t.has("frequency"):
        raise CaseError(t.key("frequency"), t.raw("frequency"),
                        "a frequency without a voltage: give voltage (rms) with it")
    return t.quantity("current", "current", positive=False), None, None, None, None


def _read_materials(t: TableReader, base_dir: Path | None, family: Family,
                    core: object) -> tuple[MaterialSpec, ...]:
    """``core`` (every part of the core) and, optionally, a material per
    part of the family's core (``family.parts``, or ``family.part_names(core)``
    for a family whose parts depend on the case) that overrides it; a part
    in ``family.required_parts(core)`` (name -> why) must be given."""
    required = (family.required_parts(core) if hasattr(family, "required_parts") else {})
    parts = family_parts(family, core)
    specs = [_read_material(t, region, base_dir) for region in MATERIAL_REGIONS]
    for part in parts:
        if t.has(part):
            specs.append(_read_material(t, part, base_dir))
        elif part in required:
            raise CaseError(t.key(part), None, f"missing: {required[part]}")
    t.finish(valid=(*MATERIAL_REGIONS, *parts, "core_loss"))
    return tuple(specs)


def _read_conducting(t: TableReader, family: Family, core: object) -> tuple[tuple[str, float], ...]:
    """``[conducting_parts]``: a solid part's resistivity per part name ("core"
    for the whole core, or one of the family's parts), as (part, conductivity
    S/m).  Parts that conduct need an AC winding to matter; laminated parts
    are not listed (their eddy loss is the core-loss budget's)."""
    parts = ("core", *family_parts(family, core))
    out = []
    for name in t.data:
        if name not in parts:
            continue  # finish() names it
        rho = t.quantity(name, "resistivity")
        if not 1e-9 <= rho <= 1.0:  # copper 1.7e-8 ... ferrite's ~1 ohm m (common practice, no source)
            raise CaseError(t.key(name), t.raw(name), "a part's resistivity must lie in "
                            "[1e-9, 1] ohm m (e.g. \"0.1 uohm*m\" for soft iron)")
        out.append((name, 1.0 / rho))
    t.finish(valid=parts)
    return tuple(out)


def _read_core_loss(t: TableReader, base_dir: Path | None) -> Any:
    """The core's loss data (analytic.core_loss.MaterialLoss): the built-in core material's,
    overridden key by key by ``[materials.core_loss]`` (a loss table given there is fitted for
    k, alpha and beta, its residual kept); None when neither gives Steinmetz coefficients."""
    from magcheck.analytic.core_loss import (LaminationLoss, MaterialLoss, SteinmetzCoefficients,
                                             fit_steinmetz, parse_loss_table)
    from magcheck.analytic.materials import builtin_loss

    raw_core = t.data.get("core")
    base = builtin_loss(raw_core) if isinstance(raw_core, str) else None
    if not t.has("core_loss"):
        return base
    ct = t.table("core_loss")
    c0 = base.steinmetz if base is not None else None
    fit = None
    source = ct.key("")[:-1]
    if ct.has("table"):
        rel = ct.string("table")
        p = Path(rel)
        if not p.is_absolute() and base_dir is not None:
            p = base_dir / p
        if not p.is_file():
            raise CaseError(ct.key("table"), rel, f"no such loss table ({p})")
        try:
            f, b, pl, unit = parse_loss_table(p.read_text(encoding="utf-8-sig"), rel)
            fit = fit_steinmetz(f, b, pl, unit)
        except (ValueError, OSError) as exc:
            raise CaseError(ct.key("table"), rel, str(exc)) from None
        c0 = fit.coefficients
        source = (f"loss table {rel}, fitted over {fit.n_points} points (rms error "
                  f"{100 * fit.rms_log_error:.2g} %, worst {100 * fit.max_relative_error:.2g} %)")
        for given in ("k", "alpha", "beta", "unit"):
            if ct.has(given):
                raise CaseError(ct.key(given), ct.raw(given), "the loss table gives k, alpha and "
                                                              "beta: give the table or the "
                                                              "coefficients")
    k = ct.number("k", c0.k if c0 else None, lo=0.0)
    alpha = ct.number("alpha", c0.alpha if c0 else None, lo=0.5, hi=3.0)
    beta = ct.number("beta", c0.beta if c0 else None, lo=1.0, hi=4.0)
    unit = ct.string("unit", c0.unit if c0 else "W/kg", choices=("W/kg", "W/m^3"))
    if k is None or alpha is None or beta is None:
        raise CaseError(ct.key("k"), None, "give k, alpha and beta (or a loss table); the core "
                                           "material has no loss data of its own")
    if k <= 0.0:
        raise CaseError(ct.key("k"), ct.raw("k"), "must be positive")
    lims = {}
    for name, dim, dflt in (("f_min", "frequency", c0.f_min if c0 else 0.0),
                            ("f_max", "frequency", c0.f_max if c0 else math.inf),
                            ("B_min", "flux density", c0.b_min if c0 else 0.0),
                            ("B_max", "flux density", c0.b_max if c0 else math.inf)):
        lims[name] = ct.quantity(name, dim, dflt, allow_zero=True)
    for lo, hi in (("f_min", "f_max"), ("B_min", "B_max")):
        if lims[lo] >= lims[hi]:
            raise CaseError(ct.key(hi), ct.raw(hi, lims[hi]), f"must be above {lo}")
    density = ct.number("density", base.density if base else None, lo=100.0, hi=30000.0)
    if density is None:
        raise CaseError(ct.key("density"), None, "missing: the core material's density, kg/m^3 "
                                                 "(for the loss per kilogram and the mass)")
    thickness = ct.quantity("thickness", "length", base.thickness if base else None)
    rho = ct.quantity("resistivity", "resistivity", base.resistivity if base else None)
    lam0 = base.lamination if base is not None else None
    kh = ct.number("k_h", lam0.k_h if lam0 else None, lo=0.0)
    bh = ct.number("beta_h", lam0.beta_h if lam0 else None, lo=1.0, hi=3.0)
    ke = ct.number("k_e", lam0.k_e if lam0 else 0.0, lo=0.0)
    ct.finish()
    lam = (LaminationLoss(kh, bh, 1.0 / rho, thickness, ke, density)
           if None not in (kh, bh, thickness, rho) else None)
    coeffs = SteinmetzCoefficients(k, alpha, beta, unit, lims["f_min"], lims["f_max"],
                                   lims["B_min"], lims["B_max"])
    if fit is not None:
        fit = dataclasses.replace(fit, coefficients=coeffs)
    return MaterialLoss(coeffs, density, thickness, rho, lam, fit,
                        source if fit is not None or base is None
                        else f"{base.source}, with [materials.core_loss]")


def _read_loss(t: TableReader, n_windings: int) -> LossSpec:
    """``[loss]``: the loss budget's operating point (compare.design.case.LossSpec)."""
    waveform = t.string("waveform", "sine", choices=LOSS_WAVEFORMS)
    duty = t.number("duty", 1.0 if waveform == "square" else 0.5, lo=0.0, hi=1.0)
    if duty <= 0.0 or (waveform == "triangle" and duty >= 1.0):
        raise CaseError(t.key("duty"), t.raw("duty"),
                        "must lie strictly between 0 and 1" if waveform == "triangle"
                        else "must be positive")
    freq = t.quantity("frequency", "frequency", None)
    ripple = t.quantity("ripple", "current", None)
    load = t.quantity("load_current", "current", None)
    frac = t.number("load_fraction", 0.5, lo=0.0, hi=2.0)
    if frac <= 0.0:
        raise CaseError(t.key("load_fraction"), t.raw("load_fraction"), "must be positive")
    pf = t.number("power_factor", 1.0, lo=0.0, hi=1.0)
    res: list[float] = []
    if t.has("resistances"):
        raw = t.raw("resistances")
        if not isinstance(raw, list) or not raw:
            raise CaseError(t.key("resistances"), raw, "must be a list of resistances, one per "
                                                       "winding (\"0.5 ohm\")")
        from ..design.units import UnitError, parse_quantity

        for i, v in enumerate(raw):
            try:
                r = parse_quantity(v, "resistance")
            except UnitError as exc:
                raise CaseError(f"{t.key('resistances')}[{i}]", v, str(exc)) from None
            if not (math.isfinite(r) and r >= 0.0):
                raise CaseError(f"{t.key('resistances')}[{i}]", v, "must be a finite resistance "
                                                                  ">= 0")
            res.append(r)
        if len(res) != n_windings:
            raise CaseError(t.key("resistances"), raw, f"{len(res)} values for {n_windings} "
                                                       "windings: give one per winding")
    area = t.quantity("surface_area", "area", None)
    t.finish()
    return LossSpec(waveform, duty, freq, ripple, load, frac, pf, tuple(res), area)


def _check_loss(case: Case) -> None:
    """What a loss budget needs across tables: loss data, a frequency, a flux swing."""
    m = case.margins
    given = [(k, getattr(m, k)) for k in ("total_loss", "core_loss", "efficiency", "regulation",
                                          "temperature_rise") if getattr(m, k) is not None]
    spec = case.loss
    if spec is None:
        if given:
            raise CaseError(f"margins.{given[0][0]}", given[0][1], "a loss-budget margin: give "
                            "the case a [loss] table, or drop it")
        return
    if case.core_loss is None:
        raise CaseError("materials.core_loss", None, "the loss budget needs the core's loss data: "
                        "a built-in material that has it (magcheck materials) or "
                        "[materials.core_loss] k, alpha, beta, density (or a loss table)")
    w = case.winding
    f = spec.frequency or (w.ac.frequency if w.ac is not None else None) or w.frequency
    if not f:
        raise CaseError("loss.frequency", None, "missing: give the flux's frequency (or "
                        "[winding.ac] or a voltage drive)")
    # the drive sets the flux (V / f), [winding.ac] the ripple the AC-winding
    # rows take: a core loss at another frequency would be the loss of a flux
    # swing the winding does not make (and a total of two operating points)
    f_own, own = ((w.frequency, "the first winding is driven at") if w.driven else
                  (w.ac.frequency if w.ac is not None else None, "[winding.ac] ripples at"))
    if spec.frequency and f_own and abs(spec.frequency - f_own) > 1e-9 * f_own:
        raise CaseError("loss.frequency", f"{spec.frequency:g} Hz",
                        f"{own} {f_own:g} Hz, and the flux swings at that frequency: leave "
                        "loss.frequency out (it defaults to it)")
    if not w.driven and not (spec.ripple or w.ac is not None):
        raise CaseError("loss.ripple", None, "missing: a current-driven winding needs its ripple "
                        "current (peak), or [winding.ac]")
    two = len(case.extra_windings) >= 1
    for k in ("efficiency", "regulation"):
        if getattr(m, k) is not None and not (two and spec.load_current):
            raise CaseError(f"margins.{k}", getattr(m, k), "a transformer margin: give two "
                            "windings and [loss] load_current")
    if spec.load_current is not None and not two:
        raise CaseError("loss.load_current", spec.load_current, "a transformer's load: the case "
                        "has one winding")
    if spec.load_current is not None and not spec.resistances:
        raise CaseError("loss.resistances", None, "missing: the windings' resistances, for the "
                        "copper loss and the regulation at load")


def _read_material(t: TableReader, region: str, base_dir: Path | None) -> MaterialSpec:
    key = t.key(region)
    raw = t.raw(region)
    try:
        if isinstance(raw, str):
            if raw not in builtin_names():
                import difflib

                close = difflib.get_close_matches(raw, builtin_names(), n=1)
                hint = f"; did you mean '{close[0]}'?" if close else ""
                raise CaseError(key, raw, f"unknown built-in material; known: "
                                          f"{', '.join(builtin_names())}{hint}")
            return MaterialSpec(region, "builtin", f"built-in {raw}", builtin(raw))
        mt = TableReader(raw, key, spec=t.sub_spec(region))
        if mt.has("mu_r"):
            mu_r = mt.number("mu_r", lo=1.0)
            mt.finish()
            return MaterialSpec(region, "mu_r", f"linear, mu_r = {mu_r:g}", LinearMaterial(mu_r))
        if mt.has("csv"):
            rel = mt.string("csv")
            mt.finish()
            p = Path(rel)
            if not p.is_absolute() and base_dir is not None:
                p = base_dir / p
            if p.is_dir():
                raise CaseError(mt.key("csv"), rel, f"is a folder ({p}), not a B-H file; name "
                                                    "the CSV file in it")
            if not p.is_file():
                raise CaseError(mt.key("csv"), rel, f"no such B-H file ({p})")
            return MaterialSpec(region, "csv", f"B-H table {rel}", load_bh_csv(p, name=p.stem))
        if mt.has("H") or mt.has("B"):
            h = _number_list(mt, "H")
            b = _number_list(mt, "B")
            h_unit = mt.string("H_unit", "A/m", choices=tuple(H_UNITS))
            b_unit = mt.string("B_unit", "T", choices=tuple(B_UNITS))
            mt.finish()
            if len(h) != len(b):
                raise CaseError(mt.key("B"), f"{len(b)} values",
                                f"H has {len(h)} values; the two columns must be the same length")
            law = bh_from_table(h, b, h_unit=h_unit, b_unit=b_unit, name=f"{region} table")
            return MaterialSpec(region, "table", f"inline B-H table ({len(h)} points)", law)
        raise CaseError(key, raw, "give a built-in name, {csv = ...}, {H = [...], B = [...]} "
                                  "or {mu_r = ...}")
    except BHDataError as exc:
        raise CaseError(key, None, str(exc)) from None


def _number_list(t: TableReader, name: str) -> list[float]:
    raw = t.raw(name)
    if not isinstance(raw, list) or not raw:
        raise CaseError(t.key(name), raw, "must be a non-empty list of numbers")
    out = []
    for i, v in enumerate(raw):
        if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v):
            raise CaseError(f"{t.key(name)}[{i}]", v, "must be a finite number")
        out.append(float(v))
    return out


def _read_hand(t: TableReader) -> HandSettings:
    fringing = t.string("fringing", HandSettings.fringing, choices=tuple(FRINGING_MODELS))
    leakage = _boolean(t, "leakage", HandSettings.leakage)
    stacking = _boolean(t, "stacking", HandSettings.stacking)
    effective = _boolean(t, "effective_parameters", HandSettings.effective_parameters)
    rogowski = _boolean(t, "rogowski", HandSettings.rogowski)
    t.finish()
    return HandSettings(fringing=fringing, leakage=leakage, stacking=stacking,
                        effective_parameters=effective, rogowski=rogowski)


def _boolean(t: TableReader, key: str, default: bool) -> bool:
    value = t.raw(key, default)
    if not isinstance(value, bool):
        raise CaseError(t.key(key), value, "must be true or false")
    return value


def _read_fe(t: TableReader) -> FESettings:
    d = FESettings()
    order = t.integer("order", d.order, minimum=1)
    if order not in (1, 2):
        raise CaseError(t.key("order"), order, "element order must be 1 or 2")
    gap_elements = t.integer("gap_elements", d.gap_elements, minimum=1)
    mesh_size = t.quantity("mesh_size", "length", None)
    air_factor = t.number("air_factor", None, lo=1.5, hi=100.0)
    boundary = t.string("boundary", d.boundary, choices=("open", "closed"))
    tol = t.number("tol", d.tol, lo=0.0, hi=1e-2)
    if tol < MIN_FE_TOL:
        raise CaseError(t.key("tol"), t.raw("tol"),
                        f"must be at least {MIN_FE_TOL:g}: below it the Newton residual meets "
                        "double-precision rounding (about 4e-14 on the demo choke's mesh, more "
                        "on finer ones) and the solve cannot converge")
    allow_large = t.raw("allow_large", False)
    if not isinstance(allow_large, bool):
        raise CaseError(t.key("allow_large"), allow_large, "must be true or false")
    t.finish()
    return FESettings(order=order, gap_elements=gap_elements, mesh_size=mesh_size,
                      air_factor=air_factor, tol=tol, allow_large=allow_large,
                      boundary=boundary)




def _read_margins(t: TableReader) -> Margins:
    from .motion import read_motion_margins

    motion = read_motion_margins(t)
    peak = t.quantity("peak_B", "flux density", None)
    at = t.table("agreement", {})
    agreement = []
    for key in list(at.data):
        if key not in AGREEMENT_KEYS:
            continue
        agreement.append((key, at.number(key, lo=0.0, hi=1000.0)))
    at.finish(valid=AGREEMENT_KEYS)
    jmax = t.quantity("current_density", "current density", None)
    force_min = t.quantity("force_min", "force", None)
    b_peak = t.quantity("B_peak", "flux density", None)
    im_peak = t.quantity("magnetizing_current_peak", "current", None)
    im_rms = t.quantity("magnetizing_current_rms", "current", None)
    inrush = t.quantity("inrush_current_peak", "current", None)
    loss_max = t.quantity("winding_loss", "power", None)
    total_max = t.quantity("total_loss", "power", None)
    core_max = t.quantity("core_loss", "power", None)
    eff_min = t.number("efficiency", None, lo=0.0, hi=100.0)
    reg_max = t.number("regulation", None, lo=0.0, hi=100.0)
    rise_max = t.number("temperature_rise", None, lo=0.0, hi=1000.0)
    ratio_max = t.number("resistance_ratio", None, lo=1.0, hi=1e6)
    fill = t.number("copper_fill", 1.0, lo=0.0, hi=1.0)
    if fill <= 0.0:
        raise CaseError(t.key("copper_fill"), t.data["copper_fill"], "must be positive")
    inductance = []
    for it in t.tables("inductance"):
        lo = it.quantity("min", "inductance", None)
        hi = it.quantity("max", "inductance", None)
        if lo is None and hi is None:
            raise CaseError(it.key("min"), None, "give min, max or both")
        if lo is not None and hi is not None and lo > hi:
            raise CaseError(it.key("min"), it.data["min"], "min is above max")
        inductance.append(InductanceLimit(
            at=it.quantity("at", "current", positive=False),
            min=lo, max=hi, kind=it.string("kind", "secant", choices=INDUCTANCE_KINDS)))
        it.finish()
    saturation = []
    for st in t.tables("saturation_current"):
        drop = st.number("drop_pct", lo=0.0, hi=99.0)
        if drop <= 0.0:
            raise CaseError(st.key("drop_pct"), st.data["drop_pct"], "must be positive")
        saturation.append(SaturationLimit(
            drop=drop / 100.0, min=st.quantity("min", "current"),
            kind=st.string("kind", "incremental", choices=INDUCTANCE_KINDS)))
        st.finish()
    forces = []
    for ft in t.tables("force"):
        lo = ft.quantity("min", "force", None, positive=False)
        hi = ft.quantity("max", "force", None, positive=False)
        if lo is None and hi is None:
            raise CaseError(ft.key("min"), None, "give min, max or both")
        if lo is not None and hi is not None and lo > hi:
            raise CaseError(ft.key("min"), ft.data["min"], "min is above max")
        forces.append(ForceLimit(stroke=ft.quantity("stroke", "length"), min=lo, max=hi))
        ft.finish()
    t.finish()
    return Margins(peak_B=peak, agreement=tuple(agreement), current_density=jmax,
                   copper_fill=fill, inductance=tuple(inductance), saturation=tuple(saturation),
                   force_min=force_min, force=tuple(forces), B_peak=b_peak,
                   magnetizing_current_peak=im_peak, magnetizing_current_rms=im_rms,
                   inrush_current_peak=inrush, winding_loss=loss_max,
                   resistance_ratio=ratio_max, motion=motion, total_loss=total_max, core_loss=core_max,
                   efficiency=None if eff_min is None else eff_min / 100.0,
                   regulation=None if reg_max is None else reg_max / 100.0,
                   temperature_rise=rise_max)


def _check_force_limit_stroke(key: str, stroke: float, spec: Any, data: dict, family: Family,
                              case: Case) -> None:
    """A force limit at a stroke other than the case's is judged only along a
    stroke sweep: the case must declare a ``[sweep]`` of the stroke key whose
    range reaches it, and the family must accept the core at that stroke
    (otherwise ``verify`` would pass with the limit never judged)."""
    if math.isclose(stroke, spec.stroke, rel_tol=1e-9):
        return
    ranges = [parse_vary(v, family=family).values for d in case.sweeps for v in d.vary
              if v.partition("=")[0].strip() == spec.stroke_key]
    if not any(min(r) * (1 - 1e-9) <= stroke <= max(r) * (1 + 1e-9) for r in ranges):
        have = ", ".join(f"{min(r) * 1e3:g} mm .. {max(r) * 1e3:g} mm" for r in ranges)
        raise CaseError(key, f"{stroke * 1e3:g} mm",
                        f"another stroke than the case's ({spec.stroke * 1e3:g} mm) is judged "
                        f"along a stroke sweep, and "
                        + (f"the case's [sweep] of {spec.stroke_key} covers only {have}"
                           if ranges else f"the case declares no [sweep] of {spec.stroke_key}")
                        + f': add e.g. [sweep] vary = ["{spec.stroke_key}='
                          f'{min(stroke, spec.stroke) * 1e3:g}mm:'
                          f'{max(stroke, spec.stroke) * 1e3:g}mm:5"]')
    table, _, name = spec.stroke_key.partition(".")
    moved = dict(data.get(table, {}))
    moved[name] = f"{stroke!r} m"
    try:
        core = family.read_core(TableReader(moved, table)) if table == "core" else None
        check = getattr(family, "check_case", None)
        if core is not None and check is not None:
            check(dataclasses.replace(case, core=core))
    except CaseError as exc:
        raise CaseError(key, f"{stroke * 1e3:g} mm",
                        f"the core cannot take this stroke ({exc})") from None


def _read_measured(t: TableReader, base_dir: Any) -> Any:
    """One ``[[measured]]`` entry (compare.design.measured): a single value
    (``at``, ``value``) or a CSV curve (``csv``), with its uncertainty."""
    from ..design.measured import MEASURED_QUANTITIES, Measured, MeasuredPoint, parse_measured_csv

    quantity = t.string("quantity", choices=tuple(MEASURED_QUANTITIES))
    dim, adim, _, _ = MEASURED_QUANTITIES[quantity]
    source = t.string("source", "")
    frequency = t.quantity("frequency", "frequency", None) if "frequency" in t.data else None
    current = None
    if "current" in t.data:
        if quantity != "force":
            raise CaseError(t.key("current"), t.data["current"], "only a force takes a current "
                                                                 "(an inductance's is its at)")
        current = t.quantity("current", "current", positive=False)
    hold = t.string("hold", "fe" if "within" in t.data else "", choices=("fe", "hand", "both"))
    within = math.nan
    if hold:
        if "within" not in t.data:
            raise CaseError(t.key("within"), None, "missing: how many combined standard "
                                                   "uncertainties the model may be off (e.g. 2)")
        within = t.number("within")
        if not (math.isfinite(within) and within > 0):
            raise CaseError(t.key("within"), t.data["within"], "must be a number > 0 (combined "
                                                               "standard uncertainties)")
    u, relative = (_deviation(t, "uncertainty", dim) if t.raw("uncertainty", None) is not None
                   else (None, False))
    if "csv" in t.data:
        for k in ("at", "value"):
            if k in t.data:
                raise CaseError(t.key(k), t.data[k], "give either csv (a curve) or at and value")
        name = t.string("csv")
        path = Path(name) if Path(name).is_absolute() else Path(base_dir or ".") / name
        try:
            text = path.read_bytes().decode("utf-8-sig")
        except OSError as exc:
            raise CaseError(t.key("csv"), name, f"cannot be read: {exc.strerror or exc}") from None
        except UnicodeDecodeError:
            raise CaseError(t.key("csv"), name, "is not UTF-8 text; save it as CSV in UTF-8") \
                from None
        points = parse_measured_csv(text, quantity, str(path), uncertainty=u, relative=relative)
        t.finish()
        return Measured(quantity, points, source, current, frequency, str(path), hold, within)
    if u is None:
        raise CaseError(t.key("uncertainty"), None, "missing: state the measurement's "
                                                    "uncertainty (in the value's unit or %)")
    at = t.quantity("at", adim, positive=False)
    value = t.quantity("value", dim, positive=False)
    t.finish()
    return Measured(quantity, (MeasuredPoint(at, value, u * (abs(value) if relative else 1.0)),),
                    source, current, frequency, "", hold, within)



def _deviation(t: TableReader, name: str, dim: str) -> tuple[float, bool]:
    """A deviation written in the value's unit or as a percentage ("2 %"):
    (the value, True when it is a fraction of the value)."""
    raw = t.raw(name)
    if isinstance(raw, str) and raw.strip().endswith("%"):
        try:
            v, relative = float(raw.strip()[:-1]) / 100.0, True
        except ValueError:
            raise CaseError(t.key(name), raw, "cannot read the percentage") from None
    else:
        v, relative = t.quantity(name, dim, allow_zero=True), False
    if not (math.isfinite(v) and v >= 0.0):
        raise CaseError(t.key(name), raw, "must be a finite deviation >= 0")
    return v, relative

def _read_target(t: TableReader, family: Family) -> TargetDecl:
    """One ``[[targets]]`` entry, its bracket and targets read by the grammar
    of ``magcheck target`` (compare.design.targets)."""
    from ..design.targets import parse_bracket, parse_target

    spec = t.string("key")
    bracket = parse_bracket(spec, family=family, where=t.key("key"))
    raw = t.raw("target")
    texts = [raw] if isinstance(raw, str) else raw
    if not isinstance(texts, list) or not texts or not all(isinstance(x, str) for x in texts):
        raise CaseError(t.key("target"), raw, 'must be a "QUANTITY OP VALUE[@AT]" string or a '
                                              "list of them")
    for x in texts:
        parse_target(x, where=t.key("target"))
    dim = "dimensionless" if bracket.integer else bracket.dimension
    if "fe" in t.data and len(texts) > 1:
        raise CaseError(t.key("fe"), t.data["fe"], "holds one target's FE answer; with several "
                                                   "targets leave fe and tolerance out (verify "
                                                   "then asks for a range meeting them all)")
    fe = t.quantity("fe", dim, None, positive=False) if "fe" in t.data else None
    tol_raw = t.raw("tolerance", None)
    tol: float | None = None
    relative = False
    if tol_raw is not None:
        if fe is None:
            raise CaseError(t.key("tolerance"), tol_raw, "needs fe, the FE answer it holds")
        tol, relative = _deviation(t, "tolerance", dim)
    elif fe is not None:
        raise CaseError(t.key("fe"), t.data.get("fe"), "needs a tolerance (how far the FE "
                                                       "answer may move)")
    t.finish()
    return TargetDecl(spec, tuple(texts), fe, tol, relative)


def _read_sweeps(root: TableReader, name: str, family: Family) -> tuple[SweepDecl, ...]:
    raw = root.raw(name, [])
    items = [raw] if isinstance(raw, dict) else raw
    if not isinstance(items, list):
        raise CaseError(name, raw, "must be a table [sweep] or an array of tables [[sweep]]")

    out = []
    for i, item in enumerate(items):
        t = TableReader(item, name if isinstance(raw, dict) else f"{name}[{i}]",
                        spec=root.sub_spec(name))
        vary = t.raw("vary")
        if isinstance(vary, str):
            vary = [vary]
        if not isinstance(vary, list) or not vary or not all(isinstance(v, str) for v in vary):
            raise CaseError(t.key("vary"), vary, 'must be a list of "KEY=SPEC" strings')
        for spec in vary:
            parse_vary(spec, where=t.key("vary"), family=family)
        drops = t.raw("drops_pct", [10, 20, 30])
        if (not isinstance(drops, list) or not drops
                or not all(isinstance(d, (int, float)) and not isinstance(d, bool)
                           and 0 < d < 100 for d in drops)):
            raise CaseError(t.key("drops_pct"), drops, "must be a list of percentages in (0, 100)")
        kind = t.string("inductance", "incremental", choices=INDUCTANCE_KINDS)
        t.finish()
        out.append(SweepDecl(tuple(vary), tuple(float(d) / 100.0 for d in drops), kind))
    return tuple(out)




def _written_nominal(data: dict, key: str, dim: str) -> tuple[object, float] | None:
    """The case file's value of ``key`` as written and in SI; None when the
    key is not written there (the tolerance study names that) or unreadable."""
    from ..design.keys import SCALE_KEYS, winding_alias
    from ..design.units import UnitError, parse_quantity

    if key in SCALE_KEYS:
        return "1", 1.0
    node: Any = data
    for part in winding_alias(data, parse_key(key)):
        try:
            node = node[part]
        except (KeyError, IndexError, TypeError):
            return None
    try:
        return node, float(parse_quantity(node, dim))
    except (UnitError, ValueError, TypeError):
        return None


def _check_tolerance_span(t: TableReader, key: str, dim: str, dist: str,
                          vals: dict[str, float], relative: bool, data: dict) -> None:
    """Refuse a deviation that reaches zero or beyond from the nominal: a gap,
    a dimension, turns or a current of the other sign is no sample of the
    design, and the study would fail on one random draw (or pass by chance).
    The key named is the deviation that reaches: ``tolerances[i].minus`` (or
    ``plus`` below a negative nominal; ``limit``, else ``sigma``, for a normal
    one, whose default limit is 3 sigma)."""
    nominal = _written_nominal(data, key, dim)
    if nominal is None:
        return
    written, nom = nominal
    if not (math.isfinite(nom) and nom != 0.0):
        return
    scale = abs(nom) if relative else 1.0
    if dist == "uniform":
        name = "minus" if nom > 0.0 else "plus"
    else:
        name = "limit" if t.has("limit") else "sigma"
    dev = (vals["minus"] if nom > 0.0 else vals["plus"]) if dist == "uniform" else vals["limit"]
    if abs(nom) - dev * scale > 0.0:
        return
    side = "below zero" if nom > 0.0 else "above zero"
    if dist == "normal" and name == "sigma":
        what = "3 sigma (the default limit)"
    else:
        what = "the deviation"
    shown = written if isinstance(written, str) else format_value(written)
    raise CaseError(t.key(name), t.raw(name),
                    f"{what} reaches zero or {side} from the nominal {shown} of {key}; "
                    "keep it smaller than the nominal")


def _read_tolerance(t: TableReader, family: Family, data: dict | None = None) -> Tolerance:

    key = t.string("key")
    try:
        parse_key(key)
        dim = key_dimension(key, family)
    except CaseError as exc:
        raise CaseError(t.key("key"), key, exc.reason) from None
    dist = t.string("distribution", choices=DISTRIBUTIONS)
    dim = "dimensionless" if dim == "integer" else dim
    vals: dict[str, float] = {}
    rel: set[bool] = set()
    names = ("minus", "plus") if dist == "uniform" else ("sigma", "limit")
    for n in names:
        raw = t.raw(n, None)
        if raw is None:
            if n == "limit":
                continue
            raise CaseError(t.key(n), None, f"missing key (a {dist} tolerance needs "
                                             f"{' and '.join(names)})")
        if isinstance(raw, str) and raw.strip().endswith("%"):
            try:
                v = float(raw.strip()[:-1]) / 100.0
            except ValueError:
                raise CaseError(t.key(n), raw, "cannot read the percentage") from None
            rel.add(True)
        else:
            v = t.quantity(n, dim, allow_zero=True)
            rel.add(False)
        if not (math.isfinite(v) and v >= 0.0):
            raise CaseError(t.key(n), raw, "must be a finite deviation >= 0")
        vals[n] = v
    if len(rel) > 1:
        raise CaseError(t.key(names[0]), t.data.get(names[0]),
                        "give all deviations of one tolerance in % or all in units")
    if dist == "normal":
        if vals["sigma"] <= 0.0:
            raise CaseError(t.key("sigma"), t.data["sigma"], "must be positive")
        vals.setdefault("limit", 3.0 * vals["sigma"])
    if data is not None:
        _check_tolerance_span(t, key, dim, dist, vals, rel == {True}, data)
    t.finish()
    return Tolerance(key=key, distribution=dist, relative=rel == {True}, **vals)
