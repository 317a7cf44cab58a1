"""Magnetic-circuit hand model: B-H curves, demo materials, gap fringing models, reluctance network.

Modules (``magcheck.analytic.<name>``):

- ``bh``: single-valued B-H curves and linear materials (T, A/m).
- ``constants``: physical constants (SI).
- ``core_loss``: core loss density: Steinmetz, the iGSE for any flux waveform, laminated steel's
  loss separation, a Steinmetz fit to a loss table (W/m^3, W/kg).
- ``effective``: a core's effective magnetic parameters (IEC 60205).
- ``force``: the Maxwell pull of a gap face and the virtual-work force (N).
- ``fringing``: air-gap fringing (gap permeance) models.
- ``leakage``: leakage permeance across a winding window.
- ``magnetizing``: sinusoidal voltage drive: peak flux linkage, magnetizing current.
- ``magnets``: permanent-magnet materials on their recoil line, built-in grades.
- ``materials``: B-H tables from CSV files and inline data, built-in demo materials.
- ``motion``: a moving armature: load line, pull-in and drop-out, the coupled motion.
- ``network``: the nonlinear reluctance-network solver.
- ``plotting``: a B-H curve's plot (the only module importing matplotlib).
- ``winding_loss``: winding resistance: DC at temperature, Dowell's AC factor.

This package does not import ``fem2d`` or ``compare``.
"""
