"""B-H tables from CSV files and inline data, and the built-in demo materials.

CSV format: optional comment lines starting with ``#``; one header row naming
the two columns with bracketed units, e.g. ``H [A/m],B [T]`` or
``H [Oe],B [kG]`` (A/m and T when no unit is given); then one ``H,B`` pair per
row, first quadrant, origin optional.  Units: :data:`analytic.bh.H_UNITS`,
:data:`analytic.bh.B_UNITS`.

Built-in demo materials (``analytic/data/*.csv``) are invented for the demo:
each is sampled from the Froehlich-Kennelly law plus the vacuum term,

    B(H) = mu0*H + H/(a + b*H)        (Froehlich-Kennelly [from memory], docs/references.md section 3)

with invented parameters a (m/H, initial reluctivity of the polarisation part)
and b (1/T, inverse saturation polarisation).  Its slope mu0 + a/(a + b H)^2
is always above mu0, so every chord of the sampled table is >= mu0 and the
last chords approach mu0 from above.  :func:`render_demo_csv` regenerates a
file's exact text; :func:`write_demo_csvs` rewrites all of them.
"""

from __future__ import annotations

import csv
import difflib
import io
import logging
import re
from dataclasses import dataclass
from importlib import resources
from pathlib import Path

import numpy as np
from numpy.typing import ArrayLike
from .constants import mu_0

from .bh import B_UNITS, H_UNITS, BHCurve, BHDataError

logger = logging.getLogger(__name__)

_HEADER_RE = re.compile(r"^\s*([HB])\s*(?:\[\s*([^\]]*?)\s*\])?\s*$")


# --------------------------------------------------------------------------- tables


def bh_from_table(
    H: ArrayLike, B: ArrayLike, h_unit: str = "A/m", b_unit: str = "T", name: str = "", source: str = ""
) -> BHCurve:
    """Build a :class:`BHCurve` from an inline table given in the named units.

    Parameters
    ----------
    H, B : array_like, shape (n,)
        Field strength in ``h_unit`` and flux density in ``b_unit``.
    h_unit, b_unit : str
        Keys of :data:`H_UNITS` / :data:`B_UNITS`.

    Raises
    ------
    BHDataError
        Unknown unit (names the key and the value) or any table error.
    """
    if h_unit not in H_UNITS:
        raise BHDataError(f"h_unit = {h_unit!r} is not a known H unit; choose one of {', '.join(H_UNITS)}")
    if b_unit not in B_UNITS:
        raise BHDataError(f"b_unit = {b_unit!r} is not a known B unit; choose one of {', '.join(B_UNITS)}")
    try:
        h = np.asarray(H, dtype=float) * H_UNITS[h_unit]
        b = np.asarray(B, dtype=float) * B_UNITS[b_unit]
    except (TypeError, ValueError) as exc:
        raise BHDataError(f"B-H table '{name}': values must be numbers ({exc})") from None
    return BHCurve.from_points(h, b, name=name, source=source)


def _parse_header(cells: list[str], where: str) -> tuple[int, float, float]:
    """Return (index of the H column, H factor, B factor) from a header row."""
    if len(cells) != 2:
        raise BHDataError(f"{where}: header must name exactly two columns (H and B), got {cells!r}")
    found: dict[str, tuple[int, str]] = {}
    for col, cell in enumerate(cells):
        match = _HEADER_RE.match(cell)
        if not match:
            raise BHDataError(f"{where}: header cell {cell!r} is not of the form 'H [unit]' or 'B [unit]'")
        found[match.group(1)] = (col, match.group(2) or "")
    if set(found) != {"H", "B"}:
        raise BHDataError(f"{where}: header {cells!r} must name one H column and one B column")
    h_col, h_unit = found["H"]
    _, b_unit = found["B"]
    h_unit = h_unit or "A/m"
    b_unit = b_unit or "T"
    if h_unit not in H_UNITS:
        raise BHDataError(f"{where}: unknown H unit {h_unit!r}; choose one of {', '.join(H_UNITS)}")
    if b_unit not in B_UNITS:
        raise BHDataError(f"{where}: unknown B unit {b_unit!r}; choose one of {', '.join(B_UNITS)}")
    return h_col, H_UNITS[h_unit], B_UNITS[b_unit]


def _parse_bh_text(text: str, label: str) -> tuple[np.ndarray, np.ndarray]:
    """Parse CSV text into H (A/m) and B (T) arrays; errors name ``label`` and the line."""
    header = None
    h_vals: list[float] = []
    b_vals: list[float] = []
    for lineno, cells in enumerate(csv.reader(io.StringIO(text)), start=1):
        cells = [c.strip() for c in cells]
        if not cells or all(not c for c in cells) or cells[0].startswith("#"):
            continue
        where = f"{label}, line {lineno}"
        if header is None:
            header = _parse_header(cells, where)
            continue
        if len(cells) != 2:
            raise BHDataError(f"{where}: expected 2 columns (H, B), got {len(cells)}: {','.join(cells)!r}")
        values = []
        for cell in cells:
            try:
                values.append(float(cell))
            except ValueError:
                raise BHDataError(f"{where}: cell {cell!r} is not a number") from None
        h_col, h_factor, b_factor = header
        h_vals.append(values[h_col] * h_factor)
        b_vals.append(values[1 - h_col] * b_factor)
    if header is None:
        raise BHDataError(f"{label}: no header row (expected e.g. 'H [A/m],B [T]')")
    return np.array(h_vals), np.array(b_vals)


def load_bh_csv(path: str | Path, name: str | None = None) -> BHCurve:
    """Read a B-H table from a CSV file (format in the module docstring).

    Parameters
    ----------
    path : str or Path
        CSV file.
    name : str, optional
        Material name; defaults to the file stem.

    Raises
    ------
    BHDataError
        Missing file, bad header/unit, wrong column count, non-numeric cell, or
        any table error; the message names the file, the line or data row and the value.
    """
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except OSError as exc:
        raise BHDataError(f"B-H file {str(path)!r} cannot be read: {exc.strerror or exc}") from None
    return _curve_from_text(text, str(path), name if name is not None else path.stem)


def _curve_from_text(text: str, label: str, name: str) -> BHCurve:
    h, b = _parse_bh_text(text, label)
    try:
        return BHCurve.from_points(h, b, name=name, source=label)
    except BHDataError as exc:
        raise BHDataError(f"{label}: {exc}") from None


# --------------------------------------------------------------------------- demo materials


@dataclass(frozen=True)
class DemoMaterial:
    """Parameters of an invented demo material (Froehlich-Kennelly plus mu0*H).

    Attributes
    ----------
    a : float
        Initial reluctivity of the polarisation part (m/H); mu_r(0) = 1 + 1/(mu0 a).
    b : float
        Inverse saturation polarisation (1/T); J_s = 1/b.
    h_min, h_max : float
        First and last sampled field strength (A/m), log-spaced.
    n_points : int
        Number of sampled points (the origin is added on top).
    description : str
        What the curve imitates.
    """

    a: float
    b: float
    h_min: float
    h_max: float
    n_points: int
    description: str


DEMO_MATERIALS: dict[str, DemoMaterial] = {
    "demo-sisteel": DemoMaterial(160.0, 0.52, 15.0, 1.0e5, 32, "silicon-steel-like, knee ~1.4-1.6 T"),
    "demo-softiron": DemoMaterial(530.0, 0.49, 50.0, 1.0e5, 32, "soft-iron-like, knee ~1.2-1.4 T"),
    "demo-ferrite": DemoMaterial(400.0, 2.15, 10.0, 3.0e4, 28, "ferrite-like, saturating ~0.45 T"),
}


def froehlich_kennelly_b(h: ArrayLike, a: float, b: float) -> np.ndarray:
    """B(H) = mu0*H + H/(a + b*|H|) (T) for H in A/m; Froehlich-Kennelly [from memory] plus vacuum term."""
    h = np.asarray(h, dtype=float)
    return mu_0 * h + h / (a + b * np.abs(h))


def demo_curve_points(name: str) -> tuple[np.ndarray, np.ndarray]:
    """Sampled (H, B) points (A/m, T) of a demo material, rounded to 10 significant digits."""
    p = _demo_params(name)
    h = np.geomspace(p.h_min, p.h_max, p.n_points)
    b = froehlich_kennelly_b(h, p.a, p.b)
    rnd = np.vectorize(lambda x: float(f"{x:.10g}"))
    return rnd(h), rnd(b)


def render_demo_csv(name: str) -> str:
    """Exact text of the CSV file of demo material ``name`` (what is stored in ``analytic/data``)."""
    p = _demo_params(name)
    h, b = demo_curve_points(name)
    lines = [
        f"# {name}: {p.description}; invented for the demo, not a measured material.",
        "# Generated by analytic.materials.render_demo_csv from the Froehlich-Kennelly law plus",
        "# the vacuum term, B = mu0*H + H/(a + b*H), with invented parameters",
        f"# a = {p.a:g} m/H, b = {p.b:g} 1/T (J_s = {1 / p.b:.4g} T, initial mu_r = {1 + 1 / (mu_0 * p.a):.0f}),",
        f"# {p.n_points} log-spaced points from H = {p.h_min:g} to {p.h_max:g} A/m (origin implied).",
        "H [A/m],B [T]",
    ]
    lines += [f"{hv:.10g},{bv:.10g}" for hv, bv in zip(h, b)]
    return "\n".join(lines) + "\n"


def write_demo_csvs(directory: str | Path) -> list[Path]:
    """(Re)write all demo CSV files into ``directory``; returns the paths written."""
    directory = Path(directory)
    out = []
    for name in DEMO_MATERIALS:
        path = directory / f"{name}.csv"
        path.write_text(render_demo_csv(name), encoding="utf-8")
        out.append(path)
    return out


def _demo_params(name: str) -> DemoMaterial:
    if name not in DEMO_MATERIALS:
        raise BHDataError(_unknown_message(name))
    return DEMO_MATERIALS[name]


def _unknown_message(name: str) -> str:
    choices = builtin_names()
    close = difflib.get_close_matches(str(name), choices, n=1)
    hint = f" did you mean {close[0]!r}?" if close else ""
    return f"material {name!r} is not a built-in material;{hint} choices: {', '.join(choices)}"


def builtin_names() -> list[str]:
    """Names of the built-in (demo) materials, sorted."""
    return sorted(DEMO_MATERIALS)


def builtin_csv_text(name: str) -> str:
    """Stored CSV text of built-in material ``name`` (packaged in ``analytic/data``)."""
    if name not in DEMO_MATERIALS:
        raise BHDataError(_unknown_message(name))
    return resources.files(__name__.rpartition(".")[0]).joinpath("data", f"{name}.csv").read_text(encoding="utf-8")


def builtin(name: str) -> BHCurve:
    """Built-in demo B-H curve ``name`` (read from its packaged CSV file).

    Raises
    ------
    BHDataError
        Unknown name, with a did-you-mean suggestion and the list of choices.
    """
    text = builtin_csv_text(name)
    return _curve_from_text(text, f"built-in material {name!r} (invented for the demo)", name)


if __name__ == "__main__":  # regenerate the packaged CSV files
    write_demo_csvs(Path(__file__).with_name("data"))
