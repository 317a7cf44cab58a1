"""Winding resistance by hand: DC resistance at temperature, Dowell's AC factor.

Plain functions, SI units (m, ohm, S/m, Hz, K or degC differences).

Sources (docs/references.md section 12)
---------------------------------------
- Copper: resistivity 1.724e-8 ohm m at 20 degC, temperature coefficient
  0.00393 /K (IEC 60028, annealed copper standard) [from memory];
  rho(T) = rho_20 (1 + alpha (T - 20)) (the linear law of the same standard).
  Aluminium 2.826e-8 ohm m, 0.00403 /K [from memory].
- One layer in a 1D field (foil or equivalent foil of thickness h, field
  H_a and H_b on its two faces, layer current per unit height K = H_b - H_a):
  the 1D diffusion equation d^2H/dx^2 = j w mu sigma H gives the loss per
  unit face area [derived here; Dowell's and Ferreira's layer results are
  this with H_a = (m - 1) K, H_b = m K]

      P = (1 / (2 sigma delta)) [ (|H_a|^2 + |H_b|^2) G1(D) - 4 Re(H_a H_b*) G2(D) ],
      G1 = (sinh 2D + sin 2D) / (cosh 2D - cos 2D),
      G2 = (sinh D cos D + cosh D sin D) / (cosh 2D - cos 2D),   D = h / delta,

  and the DC loss K^2 / (2 sigma h), so the layer's F_R = P / P_dc.
- Dowell (P. L. Dowell, "Effects of eddy currents in transformer windings",
  Proc. IEE 113(8), 1966, pp. 1387-1394 [title confirmed; formula from
  memory in this form]): for a winding section of m layers between a point
  of zero MMF and its maximum,
      F_R = D [ G1(D) + (2 (m^2 - 1) / 3) G3(D) ],
      G3 = (sinh D - sin D) / (cosh D + cos D),
  the mean of the layer factors above (G1 - 2 G2 = 2 G3 [derived]); the
  FE foil stack in an ideal-iron window (tests/test_winding_loss.py) checks it.
- Round wires: the equivalent foil is the square conductor of equal area,
  side h = (sqrt(pi)/2) d, and the layer's porosity factor
  eta = N_l h / b (N_l turns of the layer across the window height b); the
  field sees the effective conductivity eta sigma, so D = sqrt(eta) h / delta
  (Dowell's convention, 1966 [from memory]).
- MMF pattern (interleaved windings): each layer's factor from the MMFs on
  its two faces in units of its own current (the face-field form above); the
  usual generalisation of Dowell's result to arbitrary layer MMF ratios
  (e.g. Vandelac and Ziogas, "A novel approach for minimizing
  high-frequency transformer copper losses", IEEE Trans. Power Electron.
  3(3), 1988 [from memory]).
- Leakage inductance from the MMF pattern (the 1D window field of the same
  model, low frequency): H(x) = MMF(x) / b across the window height b,
  linear through a conductor layer, constant across the insulation between
  layers; the energy mu0/2 int H^2 b l dx over the turn length l gives
  L = mu0 l / (b I^2) int MMF(x)^2 dx, which for two windings of builds a1,
  a2 a distance d apart is the classic mu0 N^2 l / b (d + (a1 + a2) / 3)
  (analytic.leakage.concentric_leakage_inductance; docs/references.md
  section 9) [derived].
- Litz wire: left out (no published strand-level formula is carried here).

What these 1D formulas cannot see: the fringing field of a nearby air gap
crossing the winding (proximity loss near a gap), 2D end effects where the
layers do not fill the window height, and unequal current sharing between
parallel strands or foils.
"""
from __future__ import annotations

import math
from typing import Sequence

import numpy as np
from scipy.constants import mu_0

__all__ = ["COPPER", "ALUMINIUM", "Conductor", "resistivity", "dc_resistance", "skin_depth",
           "layer_factor", "dowell_factor", "dowell_layer_factors", "mmf_pattern_factors",
           "round_wire_equivalent_foil", "foil_delta_ratio", "round_wire_delta_ratio",
           "face_mmfs", "mmf_leakage_inductance"]


class Conductor(tuple):
    """(resistivity at 20 degC in ohm m, temperature coefficient in 1/K)."""

    __slots__ = ()

    def __new__(cls, rho20: float, alpha: float):
        return super().__new__(cls, (float(rho20), float(alpha)))

    @property
    def rho20(self) -> float:
        return self[0]

    @property
    def alpha(self) -> float:
        return self[1]


COPPER = Conductor(1.724e-8, 0.00393)
"""Annealed copper (IEC 60028) [from memory]."""
ALUMINIUM = Conductor(2.826e-8, 0.00403)
"""Aluminium [from memory]."""


def _positive(name: str, value: float) -> float:
    v = float(value)
    if not (math.isfinite(v) and v > 0):
        raise ValueError(f"{name} = {value!r} must be finite and > 0")
    return v


def resistivity(temperature: float = 20.0, material: Conductor = COPPER) -> float:
    """rho(T) = rho_20 (1 + alpha (T - 20)) (ohm m), T in degC."""
    t = float(temperature)
    if not math.isfinite(t):
        raise ValueError(f"temperature = {temperature!r} degC must be finite")
    rho = material.rho20 * (1.0 + material.alpha * (t - 20.0))
    if rho <= 0:
        raise ValueError(f"temperature = {temperature!r} degC gives resistivity {rho!r} <= 0")
    return rho


def dc_resistance(turns: float, mean_turn_length: float, area: float,
                  temperature: float = 20.0, material: Conductor = COPPER,
                  parallel: int = 1) -> float:
    """R_dc = rho(T) N MLT / (parallel A) (ohm): N turns of mean length MLT (m),
    conductor area A (m^2) each, ``parallel`` conductors in hand."""
    return (resistivity(temperature, material) * _positive("turns", turns)
            * _positive("mean_turn_length", mean_turn_length)
            / (_positive("area", area) * int(parallel)))


def skin_depth(frequency: float, rho: float, mu_r: float = 1.0) -> float:
    """delta = sqrt(2 rho / (w mu)) (m) (the plane-wave decay length; from memory)."""
    f = _positive("frequency", frequency)
    return math.sqrt(2.0 * _positive("rho", rho) / (2.0 * math.pi * f * mu_0 * mu_r))


def _g(D):
    D = np.asarray(D, dtype=float)
    if np.any(~(D > 0)):
        raise ValueError(f"h/delta = {D!r} must be > 0")
    # for large D the hyperbolic terms dominate: the ratios tend to 1, 0 and 1;
    # past D = 300 cosh overflows, so the limits are used there
    big = D > 300.0
    Ds = np.where(big, 1.0, D)
    den = np.cosh(2 * Ds) - np.cos(2 * Ds)
    g1 = (np.sinh(2 * Ds) + np.sin(2 * Ds)) / den
    g2 = (np.sinh(Ds) * np.cos(Ds) + np.cosh(Ds) * np.sin(Ds)) / den
    g3 = (np.sinh(Ds) - np.sin(Ds)) / (np.cosh(Ds) + np.cos(Ds))
    return np.where(big, 1.0, g1), np.where(big, 0.0, g2), np.where(big, 1.0, g3)


def layer_factor(delta_ratio, mmf_a, mmf_b):
    """R_ac/R_dc of one layer of D = h/delta with face MMFs ``mmf_a``, ``mmf_b``
    (any unit; the layer's own current is mmf_b - mmf_a, != 0):
    D [(a^2 + b^2) G1 - 4 a b G2] / (b - a)^2 (module docstring, [derived])."""
    g1, g2, _ = _g(delta_ratio)
    a, b = np.asarray(mmf_a, dtype=float), np.asarray(mmf_b, dtype=float)
    if np.any(b == a):
        raise ValueError("layer_factor: the layer carries no current (mmf_a == mmf_b)")
    return np.asarray(delta_ratio) * ((a * a + b * b) * g1 - 4.0 * a * b * g2) / (b - a) ** 2


def dowell_layer_factors(delta_ratio: float, layers: int) -> np.ndarray:
    """R_ac/R_dc of layers 1..m of a section from zero MMF: layer_factor(D, k-1, k)."""
    m = int(layers)
    if m < 1:
        raise ValueError(f"layers = {layers!r} must be >= 1")
    k = np.arange(1, m + 1, dtype=float)
    return np.asarray(layer_factor(delta_ratio, k - 1.0, k))


def dowell_factor(delta_ratio, layers) -> np.ndarray:
    """Dowell's F_R = R_ac/R_dc of a winding section of m layers (module docstring):
    D [G1 + (2 (m^2 - 1)/3) G3], D = h/delta (with the porosity for round wires)."""
    m = np.asarray(layers, dtype=float)
    if np.any(m < 1):
        raise ValueError(f"layers = {layers!r} must be >= 1")
    g1, _, g3 = _g(delta_ratio)
    return np.asarray(delta_ratio) * (g1 + 2.0 * (m * m - 1.0) / 3.0 * g3)


def mmf_pattern_factors(delta_ratio: float, face_mmfs: Sequence[float]) -> tuple[np.ndarray, float]:
    """Layer factors from the MMF at the layer boundaries (m + 1 values, in
    units of one layer's current; e.g. [0, 1, 2] for two layers of one
    winding, [0, 1, 0] for a primary layer interleaved with a secondary
    layer), and their mean (the section's R_ac/R_dc when the layers have
    equal R_dc and equal current magnitude)."""
    f = np.asarray(face_mmfs, dtype=float)
    if f.ndim != 1 or len(f) < 2:
        raise ValueError(f"face_mmfs = {face_mmfs!r} must list at least two MMFs")
    F = np.asarray(layer_factor(delta_ratio, f[:-1], f[1:]))
    return F, float(F.mean())


def round_wire_equivalent_foil(diameter: float, turns_per_layer: int,
                               window_height: float) -> tuple[float, float]:
    """(h, eta): the equal-area square side h = sqrt(pi)/2 d (m) and the porosity
    eta = N_l h / b (Dowell's equivalent foil, module docstring)."""
    d = _positive("diameter", diameter)
    h = math.sqrt(math.pi) / 2.0 * d
    eta = int(turns_per_layer) * h / _positive("window_height", window_height)
    if not 0 < eta <= 1:
        raise ValueError(f"porosity N_l h / b = {eta!r} must be in (0, 1] "
                         "(more copper than the window height holds)")
    return h, eta


def foil_delta_ratio(thickness: float, frequency: float, rho: float) -> float:
    """D = h / delta of a foil filling the window height."""
    return _positive("thickness", thickness) / skin_depth(frequency, rho)


def round_wire_delta_ratio(diameter: float, turns_per_layer: int, window_height: float,
                           frequency: float, rho: float) -> float:
    """D = sqrt(eta) h / delta for round wire (equivalent foil, porosity)."""
    h, eta = round_wire_equivalent_foil(diameter, turns_per_layer, window_height)
    return math.sqrt(eta) * h / skin_depth(frequency, rho)


def face_mmfs(layer_ampere_turns: Sequence[float]) -> np.ndarray:
    """The MMF (A) at the layer boundaries, from zero at the first layer's
    inner face: the cumulative sum of each layer's ampere-turns (signed: a
    secondary layer's current is opposite the primary's), m + 1 values."""
    at = np.asarray(layer_ampere_turns, dtype=float)
    if at.ndim != 1 or len(at) < 1:
        raise ValueError(f"layer_ampere_turns = {layer_ampere_turns!r} must list >= 1 layer")
    return np.concatenate([[0.0], np.cumsum(at)])


def mmf_leakage_inductance(layer_ampere_turns: Sequence[float], layer_thickness: Sequence[float],
                           gaps: Sequence[float], window_height: float, turn_length: float,
                           current: float) -> float:
    """Leakage inductance (H) referred to a winding carrying ``current`` (A)
    from the 1D window field of the layers (module docstring): layers in
    radial order with their ampere-turns (A, signed) and copper thickness
    (m), ``gaps`` the m - 1 distances between successive layers (m),
    L = mu0 l / (b I^2) [sum_k t_k (a_k^2 + a_k b_k + b_k^2) / 3
    + sum_k g_k b_k^2], a_k, b_k the face MMFs of layer k.  The MMF beyond
    the last layer is taken as zero (balanced ampere-turns): an unbalanced
    remainder is the magnetizing MMF, which the core's reluctance carries."""
    f = face_mmfs(layer_ampere_turns)
    t = np.asarray(layer_thickness, dtype=float)
    g = np.asarray(gaps, dtype=float)
    m = len(f) - 1
    if t.shape != (m,) or g.shape != (max(m - 1, 0),):
        raise ValueError("layer_thickness needs one value per layer and gaps one fewer")
    if np.any(t <= 0) or np.any(g < 0):
        raise ValueError("layer thicknesses must be > 0 and gaps >= 0")
    a, b = f[:-1], f[1:]
    integral = float(np.sum(t * (a * a + a * b + b * b) / 3.0) + np.sum(g * b[:-1] ** 2))
    return (mu_0 * _positive("turn_length", turn_length) / _positive("window_height", window_height)
            * integral / _positive("current", abs(current)) ** 2)
