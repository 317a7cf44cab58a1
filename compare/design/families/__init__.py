"""Core families: how a case's ``[core]`` table becomes limbs, shapes and a path.

A family is a small object, one module per family in this package, listed
in the registry below by name.  It reads its dimensions and describes the
core to both models: the limbs (for gaps and coils), the core's rectangles
(for the field model), the mean-path skeleton of segments (for the
magnetic-circuit model), the winding windows (for leakage) and the numeric
``[core]`` keys that sweeps and tolerances may vary.  Nothing else in
compare switches on a family's name.

Adding a family: write its module (see ``window_core.py``) and add it to
:data:`BUILTIN` here.  A separate package can add one without touching
magcheck through the entry-point group ``magcheck.families`` (each entry a
zero-argument callable returning the family object); they are loaded the
first time a family is looked up.
"""

from __future__ import annotations

import difflib
import logging

from ...errors import CaseError
from .base import Family, Segment, Window
from .drawn import DrawnCore, DrawnCoreDims
from .ei_core import EICore, EICoreDims
from .holding_magnet import HoldingMagnet, HoldingMagnetDims
from .plunger import Plunger, PlungerDims
from .pot_core import PotCore, PotCoreDims
from .u_armature import UArmature, UArmatureDims
from .window_core import WindowCore, WindowCoreDims

__all__ = ["Segment", "Window", "Family", "FAMILIES", "BUILTIN", "WindowCore", "WindowCoreDims",
           "EICore", "EICoreDims", "UArmature", "UArmatureDims", "HoldingMagnet",
           "HoldingMagnetDims", "Plunger", "PlungerDims", "PotCore",
           "PotCoreDims", "DrawnCore", "DrawnCoreDims",
           "get_family", "register",
           "core_keys"]

log = logging.getLogger(__name__)

BUILTIN: tuple[Family, ...] = (WindowCore(), EICore(), UArmature(), HoldingMagnet(),
                                Plunger(), PotCore(), DrawnCore())
"""The families that come with magcheck, in the order they are listed."""

FAMILIES: dict[str, Family] = {f.name: f for f in BUILTIN}
"""Every known family by name (the built-in ones, then registered plug-ins)."""

ENTRY_POINT_GROUP = "magcheck.families"
_plugins_loaded = False


def register(family: Family) -> Family:
    """Add a family to :data:`FAMILIES` (a plug-in's own call, or a test's);
    a name already taken by another family is refused."""
    for attr in ("name", "limb_names", "winding_limbs", "core_keys", "parts", "read_core",
                 "limbs", "core_rects", "part_rects", "segments", "mean_path", "windows",
                 "effective_path"):
        if not hasattr(family, attr):
            raise TypeError(f"core family {family!r}: missing {attr!r}")
    old = FAMILIES.get(family.name)
    if old is not None and old is not family:
        raise ValueError(f"core family {family.name!r} is already registered")
    FAMILIES[family.name] = family
    return family


def _load_plugins() -> None:
    global _plugins_loaded
    if _plugins_loaded:
        return
    _plugins_loaded = True
    from importlib.metadata import entry_points

    for ep in entry_points(group=ENTRY_POINT_GROUP):
        try:
            register(ep.load()())
        except Exception as exc:  # a broken plug-in must not stop the built-in families
            log.warning("core family plug-in %r not loaded: %s", ep.name, exc)


def get_family(name: str, key: str = "case.family") -> Family:
    """The registered family of that name, or a CaseError listing the choices."""
    if name not in FAMILIES:
        _load_plugins()
    try:
        return FAMILIES[name]
    except KeyError:
        close = difflib.get_close_matches(name, list(FAMILIES), n=1)
        hint = f"; did you mean '{close[0]}'?" if close else ""
        raise CaseError(key, name, f"unknown core family; known: {', '.join(FAMILIES)}{hint}") from None


def core_keys() -> tuple[str, ...]:
    """The numeric ``[core]`` keys of every known family (for a key checked
    without its case)."""
    _load_plugins()
    out: list[str] = []
    for f in FAMILIES.values():
        out.extend(k for k in f.core_keys if k not in out)
    return tuple(out)
