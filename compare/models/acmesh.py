"""The mesh of a case with an AC winding (compare.models.ac): the skin-depth
band round every turn and the element size of the other regions.  Apart
from compare.models.ac so that compare.models.fe, which meshes, and the AC
model, which uses fe's uncertainty rule, do not import each other."""

from __future__ import annotations

from ..design.case import Case
from ..design.coremodel import core_model

__all__ = ["has_ac", "surface_sizes", "default_mesh_size", "AC_PER_DEPTH", "AC_BAND_DEPTHS",
           "with_ac_frequency", "ac_frequency", "AC_KEY_PREFIX"]

AC_KEY_PREFIX = "winding.ac."
"""Swept keys under this prefix change the AC solve only: the mesh (made at the
highest frequency of a sweep's chain) and the DC operating point are shared."""

AC_PER_DEPTH = 1.5
"""Elements per skin depth at the turns' surfaces on the case's own mesh (the
middle of the three): delta / 1.5, so the coarsest mesh (refine 1/1.5) has
elements of delta, the engine's guard limit (fem2d.harmonic.MAX_SIZE_OVER_DELTA),
and the finest delta / 2.25.  Measured on cases/demo_foil_choke.toml at
100 kHz: R_ac/R_dc 36.274 +- 0.40 % (three meshes, 71.7k DOFs on the finest)
against 36.304 +- 0.37 % with delta / 2 and a 3 delta band (137k DOFs), the
AC part of the check 8 s against 20 s."""

AC_BAND_DEPTHS = 1.5
"""Width of the fine band on each side of a turn's boundary, in skin depths
(the engine's default is 3): the turns' current density is down to e^-1.5 =
22 % there, and beyond it the P2 field is smooth; the R_ac of the foil choke
moved 0.03 % between bands of 1.5 and 3 delta at delta / 1 (within its 0.4 %
three-mesh uncertainty)."""


def has_ac(case: Case) -> bool:
    """True when the case's first winding carries an AC current."""
    return case.winding.ac is not None and case.winding.conductor is not None


def surface_sizes(case: Case, refine: float = 1.0) -> tuple:
    """MeshSettings.surface_sizes for the case's AC turns: delta / AC_PER_DEPTH
    within AC_BAND_DEPTHS x delta of every turn's boundary at the case's
    frequency (copper at its temperature), the size divided by ``refine``;
    () without AC."""
    c, ac = case.winding.conductor, case.winding.ac
    if c is None or ac is None:
        return ()
    from magcheck.fem2d.harmonic import mesh_settings_for
    from magcheck.fem2d.layout import MeshSettings

    coils = core_model(case).coils
    turns = {r: w.conductor.conductivity for w, c in zip(case.windings, coils)
             if w.conductor is not None and w.ac is not None for r, _ in c.sides}
    turns.update(_part_sigma_mu(case))
    ms = mesh_settings_for(MeshSettings(), turns, ac.frequency, per_depth=AC_PER_DEPTH,
                           band_depths=AC_BAND_DEPTHS)
    return tuple((n, s / refine, b) for n, s, b in ms.surface_sizes)


def _part_sigma_mu(case: Case) -> dict[str, float]:
    """sigma x mu_r per region of the case's conducting parts ([conducting_parts]),
    mu_r the largest relative permeability of the part's B-H law over
    0..2.5 T: the skin depth sqrt(2 / (w mu0 mu_r sigma)) depends on the
    product only, so the turns' band rule meshes the part at its smallest
    skin depth (the operating point's permeability is at most that)."""
    if not case.conducting:
        return {}
    import numpy as np
    from scipy.constants import mu_0

    regions = core_model(case).regions
    laws = {m.region: m.law for m in case.materials}
    out: dict[str, float] = {}
    for part, sigma in case.conducting:
        for r in regions:
            if r.kind != "core" or not (part == "core" or r.name == part
                                        or r.material == f"core-{part}"):
                continue
            law = laws.get(r.material[5:] if r.material.startswith("core-") else "core",
                           laws["core"])
            nu = law.nu(np.linspace(0.0, 2.5, 251) ** 2)
            mu_r = 1.0 / (mu_0 * float(np.min(nu)))
            out[r.name] = max(out.get(r.name, 0.0), sigma * mu_r)
    return out


def default_mesh_size(case: Case) -> float | None:
    """The element size in the regions when ``[fe] mesh_size`` is not given
    and the turns are drawn: a quarter of the smallest side of the core's
    parts (the turns, far thinner, take the skin-depth band instead)."""
    if case.fe.mesh_size is not None or not any(c.turn_regions for c in core_model(case).coils):
        return case.fe.mesh_size
    feats = [r.feature() for r in core_model(case).regions if r.kind not in ("gap", "coil")]
    return min(feats) / 4.0 if feats else None


def ac_frequency(case: Case) -> float:
    """The AC frequency of the case's first winding (Hz; 0 without AC)."""
    ac = case.winding.ac
    return float(ac.frequency) if ac is not None and case.winding.conductor is not None else 0.0


def with_ac_frequency(case: Case, frequency: float) -> Case:
    """The case with its AC frequency set (Hz), on every AC winding; unchanged
    without AC.  A
    sweep's mesh key takes the case at a fixed frequency, so that the points
    of a frequency sweep share one mesh, made at the chain's highest frequency
    (the finest skin-depth band, so every lower frequency is resolved too)."""
    import dataclasses

    def at(w):
        if w.ac is None:
            return w
        return dataclasses.replace(w, ac=dataclasses.replace(w.ac, frequency=float(frequency)))

    if case.winding.ac is None:
        return case
    return dataclasses.replace(case, winding=at(case.winding),
                               extra_windings=tuple(at(w) for w in case.extra_windings))
