"""magcheck.compare: the two models on one case, in layers, lowest first
(each imports only its own layer and those below; tests/test_layering.py):

- :mod:`.errors`: CaseError, RunError, CaseWarning;
- :mod:`.design`: what the part is, as data (case model, keys, units,
  reader, geometry, core model, families, DXF drawings);
- :mod:`.models`: the hand network and the FE model run on a case, a
  voltage drive, two windings' coupling;
- :mod:`.reading`: case files (and their tables) into validated cases, and
  cases derived with keys changed;
- :mod:`.judge`: both models side by side as rows with verdicts, margins,
  the difference breakdown, the stored baseline;
- :mod:`.studies`: sweeps, tolerance studies, verify, the process pool;
- :mod:`.outputs`: JSON, CSV, figures, the HTML report, VTU and DXF files
  through one writer;
- :mod:`.front`: the command line and the Python API (re-exported by
  ``magcheck``).

Values are SI throughout (m, A, T, A/m, Wb, H, J, N).
"""
