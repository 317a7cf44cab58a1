"""Exception types of the compare layer (case files, runs, outputs)."""

from __future__ import annotations

import math

__all__ = ["CaseError", "RunError", "CaseWarning", "format_value", "printable", "warn"]


def printable(text: str) -> str:
    """``text`` with every non-printable character escaped (``\\n``,
    ``\\u202e``): a key or name from a case file then stays on one line and
    cannot reorder or restyle the terminal line it is printed on."""
    return "".join(c if c.isprintable() else repr(c)[1:-1] for c in text)


def format_value(value: object) -> str:
    """Short, quoted rendering of a case-file value for an error message."""
    if isinstance(value, str):
        text = repr(value)
    elif isinstance(value, float) and not math.isfinite(value):
        text = str(value)
    else:
        text = repr(value)
    return text if len(text) <= 60 else text[:57] + "..."


class CaseError(ValueError):
    """Bad input in a case file.

    Attributes
    ----------
    key : str
        Key path in the case file, e.g. ``"gaps[0].length"``.
    value : object
        The offending value (or ``None`` for a missing key).
    reason : str
        What is wrong with it.
    """

    def __init__(self, key: str, value: object, reason: str):
        self.key = key
        self.value = value
        self.reason = reason
        shown = printable(str(key))
        if value is None:
            text = f"{shown}: {reason}"
        else:
            text = f"{shown} = {format_value(value)}: {reason}"
        super().__init__(text)


class RunError(RuntimeError):
    """A model run failed (a nonlinear solve did not converge, meshing failed)."""


class CaseWarning(UserWarning):
    """Valid but implausible input (e.g. a bare number taken as metres for a
    core dimension, a core mu_r near that of air).

    Attributes: ``key`` (key path), ``value`` (SI value), ``reason``; the
    message reads like a :class:`CaseError`'s.
    """

    def __init__(self, key: str, value: object, reason: str):
        self.key = key
        self.value = value
        self.reason = reason
        super().__init__(f"{printable(str(key))} = {format_value(value)}: {reason}")


def warn(w: Warning) -> None:
    """Issue ``w`` (``warnings.warn``) attributed to the first caller outside
    magcheck: the user's line that called ``magcheck.load``, ``with_values``
    or ``check``, not the line inside magcheck that found the problem (a
    fixed ``stacklevel`` cannot say which, the call depth differs per entry
    point).  A run with no frame outside magcheck (the command line) names
    the outermost one."""
    import sys
    import warnings

    level, f = 2, sys._getframe(1)
    while f.f_back is not None and _ours(f):
        f, level = f.f_back, level + 1
    warnings.warn(w, stacklevel=level)


def _ours(frame: object) -> bool:
    name = getattr(frame, "f_globals", {}).get("__name__", "")
    return name == "magcheck" or name.startswith("magcheck.")
