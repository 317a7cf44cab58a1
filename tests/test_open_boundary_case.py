"""The open boundary on the demo choke: its inductance and gap B against the
limit of ever larger closed air boxes (extrapolated)."""
from dataclasses import replace

import pytest

from magcheck.compare.reading.casefile import load_case
from magcheck.compare.models.fe import run_fe

pytestmark = pytest.mark.slow


def _richardson(q1: float, q2: float, q3: float, ratio: float = 2.0) -> tuple[float, float]:
    """Limit of q(h) from three values at h, h/ratio, h/ratio^2 (here h: the
    box's inverse size), with the observed order clamped to [1, 4]
    (Richardson extrapolation; Roache, Verification and Validation in
    Computational Science and Engineering, 1998, ch. 5)."""
    import math

    p = math.log(abs((q1 - q2) / (q2 - q3))) / math.log(ratio)
    p = min(max(p, 1.0), 4.0)
    return q3 + (q3 - q2) / (ratio ** p - 1.0), p


def test_open_boundary_matches_the_large_box_limit():
    case = load_case("cases/demo_choke.toml")

    def values(boundary: str, factor: float):
        c = replace(case, fe=replace(case.fe, boundary=boundary, air_factor=factor))
        q, _, _ = run_fe(c)
        return q.values["inductance"], q.values["gap_B"]

    closed = [values("closed", f) for f in (6.0, 12.0, 24.0)]
    opened = values("open", 1.5)  # the default air disk
    for k in (0, 1):
        limit, p = _richardson(*(c[k] for c in closed))
        # the closed boxes converge at about the rate a planar dipole field
        # predicts (energy outside radius R ~ 1/R^2)
        assert 1.5 < p < 2.5
        assert abs(opened[k] - limit) <= 1e-4 * abs(limit), (k, opened[k], limit)
        # and the factor-3 closed box of earlier versions is 30x further off
        assert abs(closed[0][k] - limit) > 10 * abs(opened[k] - limit)
