"""magcheck: checks a magnetic part's hand calculation (a nonlinear
magnetic-circuit model) against a 2D finite-element solution of the same
case, side by side with the FE's own uncertainty and verdicts.

One package, three parts (each its own folder in the repository):

- :mod:`magcheck.fem2d`: the field engine (meshing, formulations, Newton,
  post-processing, force); knows nothing of case files.
- :mod:`magcheck.analytic`: B-H curves, fringing, the magnetic-circuit
  network, leakage, force, magnets, drive.
- :mod:`magcheck.compare`: case files, both models on one case, judgement,
  studies, outputs and the command line, in layers.

The package itself is the Python API (``magcheck.load``, ``check``, ...;
see :mod:`magcheck.compare.front.api` and docs/api.md), imported on first use
so that ``import magcheck.fem2d`` stays the field engine alone.

Results are design estimates, to be confirmed by measurement and by the
applicable codes and licensed practice.
"""
from __future__ import annotations

import os as _os

# In a source checkout fem2d/, analytic/ and compare/ sit beside this folder
# (pyproject.toml's package-dir maps them into the package when it is
# installed): let the import system look there too, so that running from the
# checkout (PYTHONPATH=., pytest in the repository) imports the checkout's
# code under the installed names.
_here = _os.path.dirname(_os.path.abspath(__file__))
if not _os.path.isdir(_os.path.join(_here, "compare")):
    __path__.append(_os.path.dirname(_here))  # noqa: F821 (the package's own __path__)


def _version() -> str:
    from importlib import metadata

    if len(__path__) > 1:  # a source checkout: its own pyproject.toml, not whatever is installed
        import tomllib

        with open(_os.path.join(_os.path.dirname(_here), "pyproject.toml"), "rb") as f:
            return str(tomllib.load(f)["project"]["version"])
    return metadata.version("magcheck")


__version__ = _version()


_API = ("load", "hand", "fe", "check", "sweep", "tolerance", "target", "verify", "report",
        "write_vtu", "to_json", "Case", "CaseError", "CaseWarning", "RunError")
__all__ = ["__version__", *_API]


def __getattr__(name: str):
    """The API's names (PEP 562): loaded from magcheck.compare.front.api on first use."""
    if name in _API:
        from .compare.front import api

        value = getattr(api, name)
        globals()[name] = value  # later look-ups skip this function
        return value
    raise AttributeError(f"module 'magcheck' has no attribute {name!r}")


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(_API))
