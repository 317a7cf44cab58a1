"""Hand force formulas: the Maxwell pull of a gap face and the virtual work
of the magnetic circuit.

- Maxwell pull per pole face, F = B_g^2 A_g / (2 mu0) (N), attractive: the
  stress B^2/(2 mu0) on a face of uniform normal field (common practice;
  any textbook of electromagnetic devices, e.g. Roters, Electromagnetic
  Devices, 1941).
- Virtual work: the generalised force along a coordinate x at constant
  winding currents is F_x = dW'/dx, W' the circuit's co-energy (N for a
  length x); for a gap of length g the closing force is -dW'/dg.  For a
  linear circuit W' = L I^2 / 2, so F_x = (I^2/2) dL/dx.  The derivative is a
  central difference of two network solves at x -/+ delta, delta = 1e-3 x by
  default: the difference's truncation error is ~(delta/x)^2 = 1e-6 of the
  force for a smooth W'(x), and the network's co-energy, solved to 1e-10
  relative, leaves a rounding error ~1e-10 W' x / delta = 1e-7 W'.
- Per gap from one solve: the network's co-energy at constant currents is
  stationary in the node potentials, so its derivative with respect to a gap
  length is the explicit one of that gap's branch alone, dW'/dg = (1/2) F^2
  dP/dg (F the gap's MMF drop, P its permeance, any fringing model through
  dP/dg); the closing force is -(1/2) F^2 dP/dg (``gap_forces``; the same
  virtual-work principle, here in closed form; equal to the central
  difference above, tested for every fringing model).
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable

from .constants import mu_0
from .network import GapBranch, Network, NetworkResult, solve_network

__all__ = ["maxwell_pull", "VirtualWork", "virtual_work_force", "gap_closing_force",
           "gap_forces"]


def maxwell_pull(b_gap: float, area: float) -> float:
    """Attractive force (N) on a pole face of ``area`` (m^2) at normal flux
    density ``b_gap`` (T): B^2 A / (2 mu0)."""
    if not (math.isfinite(b_gap) and math.isfinite(area) and area > 0):
        raise ValueError(f"maxwell_pull: b_gap = {b_gap!r} T, area = {area!r} m^2")
    return b_gap * b_gap * area / (2.0 * mu_0)


@dataclass(frozen=True)
class VirtualWork:
    """dW'/dx (N) at x (m) by a central difference, and the two co-energies (J)."""

    x: float
    delta: float
    force: float
    coenergy_minus: float
    coenergy_plus: float


def virtual_work_force(build: Callable[[float], Network], x: float,
                       delta: float | None = None, rtol: float = 1e-10) -> VirtualWork:
    """F_x = dW'/dx at constant currents from the network ``build(x)``.

    ``build`` returns the circuit with the coordinate at x (its gap
    permeances evaluated there, by any fringing model); the windings'
    currents must not depend on x.
    """
    if not (math.isfinite(x) and x > 0):
        raise ValueError(f"virtual_work_force: x = {x!r} must be finite and > 0")
    d = 1e-3 * x if delta is None else float(delta)
    if not (0 < d < x):
        raise ValueError(f"virtual_work_force: delta = {delta!r} must lie in (0, x)")
    wm = solve_network(build(x - d), rtol=rtol).raise_if_failed().coenergy
    wp = solve_network(build(x + d), rtol=rtol).raise_if_failed().coenergy
    return VirtualWork(x, d, (wp - wm) / (2.0 * d), wm, wp)


def gap_closing_force(build: Callable[[float], Network], gap: float,
                      delta: float | None = None) -> float:
    """Force (N) that closes a gap of length ``gap`` (m): -dW'/dg at constant current."""
    return -virtual_work_force(build, gap, delta).force


def gap_forces(net: Network, result: NetworkResult) -> dict[str, float]:
    """Closing force (N) of every gap branch that knows dP/dg, from one
    solved network: -(1/2) F^2 dP/dg with F the branch's MMF drop (module
    docstring).  Gaps that close together (an armature across two legs)
    add."""
    out = {}
    for br in net.branches:
        if isinstance(br, GapBranch) and br.dpermeance_dlength is not None:
            f = result.branch(br.name).mmf_drop
            out[br.name] = -0.5 * f * f * br.dpermeance_dlength
    return out
