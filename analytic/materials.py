"""B-H tables from CSV files and inline data, and the built-in demo materials.

CSV format (what spreadsheets write is read as saved): UTF-8 text, a leading
byte-order mark allowed (UTF-16 with its byte-order mark too); optional
comment lines starting with ``#``; one header row naming the two columns with
their units in brackets or parentheses, e.g. ``H [A/m],B [T]``,
``H (kA/m);B (mT)`` or ``H [Oe]<tab>B [kG]`` (A/m and T when no unit is given;
letters and units in any case, spaces ignored); then one ``H,B`` pair per row,
first quadrant, origin optional.  The column separator -- a comma, a semicolon
or a tab -- is read off the header row and holds for the whole file; numbers
take a decimal point: a decimal comma (``1,5``) is refused naming the file,
the line and the value.  Units: :data:`analytic.bh.H_UNITS`,
:data:`analytic.bh.B_UNITS` (1 Oe = 1000/(4 pi) A/m, 1 G = 1e-4 T: SI
definitions, NIST SP 811 appendix B; docs/references.md section 3).

A ``J`` column instead of ``B`` holds the magnetic polarisation (units as B)
and is read as B = mu0*H + J, the definition of J (IEC 60050-121,
International Electrotechnical Vocabulary, "magnetic polarization"; any
magnetics textbook; docs/references.md section 3).  :func:`bh_csv_text` writes
a curve in this format.

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

import codecs
import csv
import difflib
import logging
import re
from dataclasses import dataclass
from importlib import resources
from pathlib import Path
from typing import Sequence

import numpy as np
from numpy.typing import ArrayLike
from .constants import mu_0

from .bh import B_UNITS, H_UNITS, BHCurve, BHDataError
from .core_loss import LaminationLoss, MaterialLoss, SteinmetzCoefficients

logger = logging.getLogger(__name__)



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


_UNIT_PART = r"(?:\[\s*(?P<bracket>[^\]]*?)\s*\]|\(\s*(?P<paren>[^)]*?)\s*\))"
_HEADER_RE = re.compile(r"^\s*(?P<q>[HBJ])\s*" + _UNIT_PART + r"?\s*$", re.IGNORECASE)

SEPARATORS: dict[str, str] = {",": "a comma", ";": "a semicolon", "\t": "a tab"}
"""Column separators of a B-H CSV file (one per file, detected from its header row)."""

_BLANK = " \t,;\"'"  # a line of only these characters holds no cell
_INTEGER_RE = re.compile(r"^[+-]?\d+$")


def _unit_factor(unit: str, table: dict[str, float]) -> float | None:
    """Factor to SI of a unit as written in a header (spaces ignored, any case); None if unknown."""
    compact = "".join(unit.split())
    if compact in table:
        return table[compact]
    by_lower = {k.lower(): v for k, v in table.items()}
    return by_lower.get(compact.lower())


def _parse_header(cells: list[str], where: str) -> tuple[int, float, float, str]:
    """Return (index of the H column, H factor to A/m, factor to T of the other
    column, its quantity ``"B"`` or ``"J"``) from a header row."""
    if len(cells) != 2:
        raise BHDataError(f"{where}: header must name exactly two columns (H and B, or H and J), "
                          f"separated by a comma, a semicolon or a tab; got {cells!r}")
    found: dict[str, tuple[int, str]] = {}
    for col, cell in enumerate(cells):
        match = _HEADER_RE.match(cell)
        if not match:
            raise BHDataError(f"{where}: header cell {cell!r} is not of the form 'H [unit]', "
                              "'B [unit]' or 'J [unit]' (units in brackets or parentheses)")
        q = match.group("q").upper()
        if q in found:
            raise BHDataError(f"{where}: header {cells!r} names {q} twice")
        found[q] = (col, match.group("bracket") or match.group("paren") or "")
    other = "J" if "J" in found else "B"
    if set(found) != {"H", other}:
        raise BHDataError(f"{where}: header {cells!r} must name one H column and one B column "
                          "(or one J column, the polarisation)")
    h_col, h_unit = found["H"]
    _, b_unit = found[other]
    h_factor = _unit_factor(h_unit or "A/m", H_UNITS)
    b_factor = _unit_factor(b_unit or "T", B_UNITS)
    if h_factor is None:
        raise BHDataError(f"{where}: unknown H unit {h_unit!r}; choose one of {', '.join(H_UNITS)}")
    if b_factor is None:
        raise BHDataError(f"{where}: unknown {other} unit {b_unit!r}; choose one of {', '.join(B_UNITS)}")
    return h_col, h_factor, b_factor, other


def _split(line: str, sep: str, where: str) -> list[str]:
    """The stripped cells of one line (quotes as in CSV), trailing empty cells dropped
    (a spreadsheet writes them when another row is longer)."""
    try:
        cells = [c.strip() for c in next(csv.reader([line], delimiter=sep), [])]
    except csv.Error as exc:  # e.g. a cell beyond the csv module's field size limit
        raise BHDataError(f"{where}: not a CSV row ({exc})") from None
    while cells and not cells[-1]:
        cells.pop()
    return cells


def _separator(header_line: str, where: str) -> str:
    """The file's column separator: the first of ``,`` ``;`` tab that splits the
    header row into two or more cells (``,`` when none does)."""
    for sep in SEPARATORS:
        if len(_split(header_line, sep, where)) >= 2:
            return sep
    return ","


def _number(cell: str, sep: str, where: str) -> float:
    """A data cell as a float; a decimal comma or another separator is refused by name."""
    try:
        return float(cell)
    except ValueError:
        pass
    if cell.count(",") == 1:
        fixed = cell.replace(",", ".")
        try:
            float(fixed)
        except ValueError:
            pass
        else:
            raise BHDataError(f"{where}: {cell!r} is written with a decimal comma; write {fixed} "
                              "(a point as the decimal separator, no thousands separator)")
    for other, name in SEPARATORS.items():
        if other != sep and other in cell:
            raise BHDataError(f"{where}: cell {cell!r} holds {name}, but the header row separates "
                              f"columns with {SEPARATORS[sep]}; use one separator throughout the file")
    raise BHDataError(f"{where}: cell {cell!r} is not a number")


def _parse_bh_text(text: str, label: str) -> tuple[np.ndarray, np.ndarray]:
    """Parse CSV text into H (A/m) and B (T) arrays; errors name ``label`` and the line.

    The separator is read off the header row and holds for the whole file; a
    leading byte-order mark is dropped. A J column (magnetic polarisation) is
    turned into B = mu0*H + J, the definition of J (IEC 60050-121, magnetic
    polarization; docs/references.md section 3) [exact: a definition].
    """
    text = text.removeprefix("\ufeff")
    header: tuple[int, float, float, str] | None = None
    sep = ","
    h_vals: list[float] = []
    b_vals: list[float] = []
    for lineno, line in enumerate(text.splitlines(), start=1):
        if not line.strip(_BLANK) or line.lstrip(_BLANK).startswith("#"):
            continue
        where = f"{label}, line {lineno}"
        if header is None:
            sep = _separator(line, where)
            header = _parse_header(_split(line, sep, where), where)
            continue
        cells = _split(line, sep, where)
        if len(cells) != 2:
            hint = f"; the header row separates columns with {SEPARATORS[sep]}"
            if sep == "," and len(cells) > 2 and all(_INTEGER_RE.match(c) for c in cells):
                hint += "; a decimal comma? write numbers with a point (1.5)"
            raise BHDataError(f"{where}: expected 2 columns (H, B), got {len(cells)}: "
                              f"{sep.join(cells)!r}{hint}")
        values = [_number(cell, sep, where) for cell in cells]
        h_col, h_factor, b_factor, other = header
        h = values[h_col] * h_factor
        b = values[1 - h_col] * b_factor
        h_vals.append(h)
        b_vals.append(b + mu_0 * h if other == "J" else b)
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
        raw = path.read_bytes()
    except OSError as exc:
        raise BHDataError(f"B-H file {str(path)!r} cannot be read: {exc.strerror or exc}") from None
    return _curve_from_text(_decode(raw, str(path)), str(path), name if name is not None else path.stem)


def _decode(raw: bytes, label: str) -> str:
    """The text of a B-H file: UTF-8 (a byte-order mark dropped), or UTF-16
    when it starts with that byte-order mark (a spreadsheet's "Unicode text")."""
    try:
        if raw.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE)):
            return raw.decode("utf-16")
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise BHDataError(f"B-H file {label!r} is not UTF-8 text (byte 0x{raw[exc.start]:02x} at "
                          f"offset {exc.start}); save it as CSV in UTF-8") from None


def _curve_from_text(text: str, label: str, name: str) -> BHCurve:
    h, b = _parse_bh_text(text, label)
    try:
        return BHCurve.from_points(h, b, name=name, source=label)
    except BHDataError as exc:
        raise BHDataError(f"{label}: {exc}") from None


def bh_csv_text(curve: BHCurve, comments: Sequence[str] = ()) -> str:
    """A curve's table as B-H CSV text in the format :func:`load_bh_csv` reads.

    Header ``H [A/m],B [T]``, then one row per table point, the origin
    included; each value is written as the shortest decimal that reads back
    to the same float (``repr``), so reading the text back gives the curve's
    points bit for bit.  Each line of ``comments`` becomes a ``#`` line above
    the header.
    """
    lines = [f"# {line}".rstrip() for c in comments for line in str(c).splitlines() or [""]]
    lines.append("H [A/m],B [T]")
    lines += [f"{float(h)!r},{float(b)!r}" for h, b in zip(curve.h_points, curve.b_points)]
    return "\n".join(lines) + "\n"


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


#: Loss data of the built-in materials, invented for the demo (not measured): Steinmetz
#: coefficients (k per kilogram, f in Hz, B_pk in T) with their valid ranges, density, and for
#: the steel the lamination (0.35 mm, 48 uohm cm) with Bertotti's three coefficients; the
#: steel's Steinmetz set is the log-space fit of its own Bertotti split over 50-400 Hz,
#: 0.6-1.7 T (rms 4.5 %, worst 6.1 %). Ferrite-like: ~100 kW/m^3 at 100 kHz, 0.1 T.
DEMO_LOSS: dict[str, MaterialLoss] = {
    "demo-ferrite": MaterialLoss(
        SteinmetzCoefficients(3.0 / 4800.0, 1.40, 2.50, "W/kg", 20e3, 500e3, 0.02, 0.3),
        4800.0, source="built-in demo-ferrite (invented for the demo)"),
    "demo-sisteel": MaterialLoss(
        SteinmetzCoefficients(0.00214, 1.46, 1.89, "W/kg", 50.0, 400.0, 0.6, 1.7),
        7650.0, thickness=0.35e-3, resistivity=4.8e-7,
        lamination=LaminationLoss(71.0, 1.9, 1.0 / 4.8e-7, 0.35e-3, 1.77, 7650.0),
        source="built-in demo-sisteel (invented for the demo)"),
    "demo-softiron": MaterialLoss(
        SteinmetzCoefficients(0.0045, 1.30, 1.90, "W/kg", 10.0, 400.0, 0.2, 1.5),
        7870.0, thickness=1.0e-3, resistivity=1.0e-7,
        source="built-in demo-softiron (invented for the demo)"),
}


def builtin_loss(name: str) -> MaterialLoss | None:
    """The loss data of built-in material ``name`` (invented for the demo); None if it has none."""
    return DEMO_LOSS.get(name)


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
