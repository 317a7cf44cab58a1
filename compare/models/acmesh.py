"""The mesh of a case with an AC winding (compare.models.ac): the skin-depth
band round every turn and the element size of the other regions.  Apart
from compare.models.ac so that compare.models.fe, which meshes, and the AC
model, which uses fe's uncertainty rule, do not import each other."""

from __future__ import annotations

from ..design.case import Case
from ..design.coremodel import core_model

__all__ = ["has_ac", "surface_sizes", "default_mesh_size"]


def has_ac(case: Case) -> bool:
    """True when the case's first winding carries an AC current."""
    return case.winding.ac is not None and case.winding.conductor is not None


def surface_sizes(case: Case, refine: float = 1.0) -> tuple:
    """MeshSettings.surface_sizes for the case's AC turns: delta / 2 within
    3 delta of every turn's boundary at the case's frequency (copper at its
    temperature), the size divided by ``refine``; () without AC."""
    c, ac = case.winding.conductor, case.winding.ac
    if c is None or ac is None:
        return ()
    from magcheck.fem2d.harmonic import mesh_settings_for
    from magcheck.fem2d.layout import MeshSettings

    sigma = c.conductivity
    turns = {r: sigma for r, _ in core_model(case).coils[0].sides}
    ms = mesh_settings_for(MeshSettings(), turns, ac.frequency)
    return tuple((n, s / refine, b) for n, s, b in ms.surface_sizes)


def default_mesh_size(case: Case) -> float | None:
    """The element size in the regions when ``[fe] mesh_size`` is not given
    and the turns are drawn: a quarter of the smallest side of the core's
    parts (the turns, far thinner, take the skin-depth band instead)."""
    if case.fe.mesh_size is not None or not any(c.turn_regions for c in core_model(case).coils):
        return case.fe.mesh_size
    feats = [r.feature() for r in core_model(case).regions if r.kind not in ("gap", "coil")]
    return min(feats) / 4.0 if feats else None
