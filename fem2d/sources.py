"""Field sources: coils, permanent magnets and a uniform background field.

The layout (fem2d.layout) is geometry and materials only; sources name its
regions, and coil currents are given at solve time, so one mesh serves every
excitation (a current sweep reuses the mesh as it is).

Conventions (SI): a coil of ``turns`` N carries the current I (A) in each
turn; each of its regions carries N I sign (ampere-turns) spread uniformly
over the region's cross-section, J = sign N I / S (A/m^2), + along +z
(planar) or +phi (r-z).  A magnet is the linear recoil law
B = mu0 mu_r H + B_r (Br a vector in the plane: (x, y), or (r, z) for r-z).
"""
from __future__ import annotations

from dataclasses import dataclass, field

from .errors import SolverInputError, finite_number

__all__ = ["Coil", "Magnet", "Background", "Sources"]


def _finite(label: str, value) -> float:
    return finite_number(label, value, SolverInputError)


def _vector2(label: str, value) -> tuple[float, float]:
    """A finite 2-vector (T), else SolverInputError naming ``label``."""
    v = tuple(value)
    if len(v) != 2:
        raise SolverInputError(f"{label} = {value!r} must be a 2-vector (T)")
    return (_finite(label, v[0]), _finite(label, v[1]))


@dataclass(frozen=True)
class Coil:
    """A winding: ``turns`` turns through ``regions``, each (region name, sign +1/-1).

    A planar coil usually has a go side (+1) and a return side (-1); an r-z
    coil one region (+1).
    """

    name: str
    regions: tuple
    turns: float = 1.0

    def __post_init__(self) -> None:
        if not isinstance(self.name, str) or not self.name:
            raise SolverInputError(f"coil name {self.name!r} must be a non-empty string")
        where = f"coil {self.name!r}"
        regs = tuple((str(r), int(s)) for r, s in self.regions)
        if not regs:
            raise SolverInputError(f"{where}: regions is empty")
        for r, s in regs:
            if s not in (1, -1):
                raise SolverInputError(f"{where}: region {r!r} sign = {s!r} must be +1 or -1")
        if len({r for r, _ in regs}) != len(regs):
            raise SolverInputError(f"{where}: a region is listed twice in {regs!r}")
        object.__setattr__(self, "regions", regs)
        t = _finite(f"{where}: turns", self.turns)
        if t <= 0:
            raise SolverInputError(f"{where}: turns = {self.turns!r} must be > 0")
        object.__setattr__(self, "turns", t)


@dataclass(frozen=True)
class Magnet:
    """A permanent magnet filling ``region``: remanence (T, 2-vector) and recoil mu_r.

    The region's own material is replaced by the linear recoil law.
    """

    region: str
    remanence: tuple
    mu_r: float = 1.0

    def __post_init__(self) -> None:
        where = f"magnet {self.region!r}"
        object.__setattr__(self, "remanence", _vector2(f"{where}: remanence", self.remanence))
        m = _finite(f"{where}: mu_r", self.mu_r)
        if m <= 0:
            raise SolverInputError(f"{where}: mu_r = {self.mu_r!r} must be > 0")
        object.__setattr__(self, "mu_r", m)


@dataclass(frozen=True)
class Background:
    """A uniform background field B (T, 2-vector), imposed on a closed boundary.

    Planar: A = B_x y - B_y x on the boundary; r-z: u = B_z r^2 / 2 (B_r
    must be 0: a uniform radial field is not axisymmetric).  Needs a closed
    air domain (the open exterior decays to zero field).
    """

    b: tuple

    def __post_init__(self) -> None:
        object.__setattr__(self, "b", _vector2("background: b", self.b))


@dataclass(frozen=True)
class Sources:
    """All sources of a solve: coils, magnets and an optional background field."""

    coils: tuple = ()
    magnets: tuple = ()
    background: Background | None = None
    defaults: dict = field(default_factory=dict, compare=False)

    def __post_init__(self) -> None:
        object.__setattr__(self, "coils", tuple(self.coils))
        object.__setattr__(self, "magnets", tuple(self.magnets))
        names = [c.name for c in self.coils]
        for c in self.coils:
            if not isinstance(c, Coil):
                raise SolverInputError(f"sources: {c!r} is not a Coil")
        dup = {n for n in names if names.count(n) > 1}
        if dup:
            raise SolverInputError(f"sources: coil name {sorted(dup)[0]!r} is used twice")
        regs = [m.region for m in self.magnets]
        for m in self.magnets:
            if not isinstance(m, Magnet):
                raise SolverInputError(f"sources: {m!r} is not a Magnet")
        if len(set(regs)) != len(regs):
            raise SolverInputError(f"sources: a region holds two magnets ({regs!r})")

    def coil(self, name: str) -> Coil:
        for c in self.coils:
            if c.name == name:
                return c
        raise SolverInputError(f"coil {name!r}: no such coil (have {[c.name for c in self.coils]})")

    @classmethod
    def from_layout(cls, layout) -> "Sources":
        """One one-turn coil per region, named after it, its current the region's
        ``current`` (the layout's own currents, kept as a shorthand)."""
        coils = tuple(Coil(r.name, ((r.name, 1),), 1.0) for r in layout.regions)
        return cls(coils=coils, defaults={r.name: float(r.current) for r in layout.regions})

    def currents(self, given: dict | None) -> dict:
        """Current per coil (A): ``given`` over the defaults (0 if none)."""
        out = {c.name: float(self.defaults.get(c.name, 0.0)) for c in self.coils}
        for name, cur in (given or {}).items():
            if name not in out:
                raise SolverInputError(f"currents: coil {name!r} not among the coils "
                                       f"(have {sorted(out)})")
            out[name] = _finite(f"currents: coil {name!r} current", cur)
        return out
