"""Magnetic-circuit hand model: B-H curves, demo materials, gap fringing models, reluctance network.

Modules: :mod:`analytic.bh` (B-H curves), :mod:`analytic.materials` (tables, built-in demo
materials), :mod:`analytic.fringing` (gap permeance models), :mod:`analytic.network`
(nonlinear reluctance-network solver), :mod:`analytic.plotting` (B-H plot).
This package does not import ``fem2d``.
"""
