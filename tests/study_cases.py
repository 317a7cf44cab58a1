"""Cases of the studies that both the tests and the README quote
(tests/test_leakage.py, tests/test_leakage_inductance.py and
tools/make_readme.py build them from here, so the README's figures are
those of the tested study)."""
from __future__ import annotations

import tomllib
from pathlib import Path

from magcheck.compare.design.case import Case
from magcheck.compare.reading.casefile import case_from_dict

CASES = Path(__file__).resolve().parents[1] / "cases"


def ideal_window_core(ow_mm: float, oh_mm: float, fringing: str = "none",
                      leakage: bool = False) -> Case:
    """An ideal-iron window core (mu_r 1e6), ``ow_mm`` x ``oh_mm`` outside,
    10 mm limbs, 20 mm deep, a 0.5 mm gap in the right limb, 100 turns at
    1 A filling the left limb's window height less 2 mm."""
    wh = oh_mm - 20
    return case_from_dict({
        "case": {"name": "lk", "family": "window-core"},
        "core": {"outer_width": f"{ow_mm} mm", "outer_height": f"{oh_mm} mm",
                 "limb_width": "10 mm", "depth": "20 mm"},
        "gaps": [{"limb": "right", "length": "0.5 mm"}],
        "winding": {"limb": "left", "turns": 100, "current": "1 A", "thickness": "6 mm",
                    "length": f"{wh - 2} mm"},
        "materials": {"core": {"mu_r": 1e6}},
        "hand": {"fringing": fringing, "leakage": leakage},
    })


def pot_pair(height_mm: float, end_mm: float = 1.0) -> Case:
    """The demo pot core with ideal iron (mu_r 1e5) and two 60-turn windings
    of 1.5 mm build, 0.5 mm apart, ``height_mm`` high with ``end_mm`` to
    each plate, carrying +1 A and -1 A (balanced ampere-turns)."""
    d = tomllib.loads((CASES / "demo_pot_core_choke.toml").read_text())
    for k in ("sweep", "margins", "winding"):
        d.pop(k, None)
    d["core"]["height"] = f"{height_mm + 2 * end_mm} mm"
    d["windings"] = [
        {"name": "a", "limb": "post", "turns": 60, "current": "1 A", "thickness": "1.5 mm",
         "length": f"{height_mm} mm", "clearance": "0.6 mm"},
        {"name": "b", "limb": "post", "turns": 60, "current": "-1 A", "thickness": "1.5 mm",
         "length": f"{height_mm} mm", "clearance": "0.5 mm"}]
    d["materials"]["core"] = {"mu_r": 1e5}
    return case_from_dict(d)
