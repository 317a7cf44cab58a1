"""Tests of analytic.fringing: each model against its published formula, typed again here."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.constants import mu_0

from magcheck.analytic.fringing import (FRINGING_MODELS, GapFace, GapFaceError, GapSides,
                                        UnknownModelError, curved_tube_edge, effective_area,
                                        gap_permeance, get_fringing)

FACE = GapFace(length=0.8e-3, width=12e-3, depth=20e-3, free_height=30e-3)  # invented for the test


def _element_permeance_per_depth(w, l, h):
    """Basic conformal-map element, permeance per unit depth (Wb/(A m)).

    Source: Muehlethaler, Kolar, Ecklebe, "A novel approach for 3D air gap reluctance calculations",
    ICPE-ECCE Asia 2011 [approach confirmed; element formula from memory]:
    R' = 1/(mu0 [w/(2l) + (2/pi)(1 + ln(pi h/(4 l)))])
    """
    return mu_0 * (w / (2 * l) + 2 / math.pi * (1 + math.log(math.pi * h / (4 * l))))


def _sigma_from_elements(w, g, h):
    # four elements with l = g/2: two half widths in parallel, two half lengths in series
    # (docs/references.md section 1 [derived])
    p_elem = _element_permeance_per_depth(w, g / 2, h)
    p_gap = 1.0 / (1.0 / (2 * p_elem) + 1.0 / (2 * p_elem))
    p_ideal = mu_0 * w / g
    return p_ideal / p_gap  # sigma = R(fringing)/R(ideal)


def test_none_model():
    assert get_fringing("none").factors(FACE) == (1.0, 1.0)
    # Source: exact ideal gap permeance mu0 a b / g (uniform field, no fringing)
    assert gap_permeance(FACE, "none", planar=False) == pytest.approx(mu_0 * 12e-3 * 20e-3 / 0.8e-3, rel=1e-15)


def test_area_model():
    g, a, b = 0.8e-3, 12e-3, 20e-3
    k_plane, k_depth = get_fringing("area").factors(FACE)
    # Source: area enlargement A_g = (a+g)(b+g), Matsch 1964 ch. 3 [confirmed]; common practice
    # tolerance: rounding only
    assert k_plane == pytest.approx((a + g) / a, rel=1e-15)
    assert k_depth == pytest.approx((b + g) / b, rel=1e-15)
    assert effective_area(FACE, "area", planar=False) == pytest.approx((a + g) * (b + g), rel=1e-14)
    # planar 2D comparison uses (a+g) b (docs/references.md section 1 [confirmed])
    assert effective_area(FACE, "area", planar=True) == pytest.approx((a + g) * b, rel=1e-14)


def test_area_model_tends_to_one_for_vanishing_gap():
    face = GapFace(length=1e-9, width=10e-3, depth=10e-3, free_height=10e-3)
    k_plane, k_depth = get_fringing("area").factors(face)
    # Source: (a+g)/a -> 1 as g -> 0 (limit of the formula); here g/a = 1e-7
    assert k_plane - 1 == pytest.approx(1e-7, rel=1e-6) and k_depth - 1 == pytest.approx(1e-7, rel=1e-6)


def test_flux_factor_model():
    g, a, b, big_g = 0.8e-3, 12e-3, 20e-3, 30e-3
    # Source: McLyman, Transformer and Inductor Design Handbook, 4th ed. 2011 [secondary, via Liao & Chen,
    # J. Eng. 2022, eq. 20]: F = 1 + (l_g/sqrt(A_c)) ln(2G/l_g); tolerance: rounding only
    f_ref = 1 + g / math.sqrt(a * b) * math.log(2 * big_g / g)
    k_plane, k_depth = get_fringing("flux-factor").factors(FACE)
    # The published F is the 3D factor: kept exactly by the split
    assert k_plane * k_depth == pytest.approx(f_ref, rel=1e-14)
    assert gap_permeance(FACE, "flux-factor", planar=False) == pytest.approx(mu_0 * a * b / g * f_ref, rel=1e-14)
    # Split of F - 1 by perimeter share (analytic.fringing.flux_factor_split,
    # derived there): in-plane edges have length b, depth edges length a
    assert k_plane == pytest.approx(1 + (f_ref - 1) * b / (a + b), rel=1e-14)
    assert gap_permeance(FACE, "flux-factor", planar=True) == pytest.approx(
        mu_0 * a * b / g * (1 + (f_ref - 1) * b / (a + b)), rel=1e-14)


def test_flux_factor_split_matches_the_area_models_shares_to_first_order():
    # Identity of the split: k_depth = 1 + (F-1) a/(a+b) + O((F-1)^2).  Over
    # gaps shrinking by 10x the residual must shrink like (F-1)^2.
    a, b = 12e-3, 20e-3
    residuals = []
    for g in (1e-3, 1e-4, 1e-5):
        face = GapFace(length=g, width=a, depth=b, free_height=30e-3)
        f = 1 + g / math.sqrt(a * b) * math.log(2 * 30e-3 / g)
        k_plane, k_depth = get_fringing("flux-factor").factors(face)
        residuals.append((abs(k_depth - (1 + (f - 1) * a / (a + b))), (f - 1) ** 2))
    for res, second in residuals:
        assert res <= 0.5 * second  # bounded by the second-order term
    # and the area model's first-order shares are the same b/(a+b) : a/(a+b)
    face = GapFace(length=1e-6, width=a, depth=b, free_height=30e-3)
    kp, kd = get_fringing("area").factors(face)
    assert (kp - 1) / ((kp - 1) + (kd - 1)) == pytest.approx(b / (a + b), rel=1e-9)


def test_flux_factor_clamped_when_log_is_negative():
    face = GapFace(length=2e-3, width=10e-3, depth=10e-3, free_height=0.5e-3)  # 2G/g = 0.5
    # Source: the formula gives 1 + 0.2 ln 0.5 < 1, below the ideal gap; documented clamp to F = 1
    assert 1 + 0.2 * math.log(0.5) < 1
    assert get_fringing("flux-factor").factors(face) == pytest.approx((1.0, 1.0), rel=1e-15)


def test_conformal_model_against_elements():
    g, a, b, h = 0.8e-3, 12e-3, 20e-3, 30e-3
    k_plane, k_depth = get_fringing("conformal").factors(FACE)
    # Source: Muehlethaler et al. 2011 element formula [from memory], composed in this test; tolerance: rounding
    assert 1 / k_plane == pytest.approx(_sigma_from_elements(a, g, h), rel=1e-13)
    assert 1 / k_depth == pytest.approx(_sigma_from_elements(b, g, h), rel=1e-13)
    # 3D: R_g = sigma_x sigma_y l_g/(mu0 x y) (Muehlethaler et al. 2011 [from memory])
    p3d = 1 / (_sigma_from_elements(a, g, h) * _sigma_from_elements(b, g, h) * g / (mu_0 * a * b))
    assert gap_permeance(FACE, "conformal", planar=False) == pytest.approx(p3d, rel=1e-13)


def test_conformal_with_its_own_free_face_each_side():
    # Per-side geometry (Muehlethaler, Kolar, Ecklebe 2011 [approach confirmed;
    # element formula from memory]): each edge is two elements in series
    # (either side of the mid-gap plane), with the free face that side has;
    # the two edges' columns in parallel.  Composed here from the element.
    from magcheck.analytic.fringing import GapSides

    g, a, b = 0.8e-3, 12e-3, 20e-3
    sides = GapSides(minus=(5e-3, 25e-3), plus=(40e-3, 40e-3), depth=(45e-3, 45e-3))
    face = GapFace(length=g, width=a, depth=b, free_height=30e-3, sides=sides)

    def column(w, lo, hi):
        p_lo, p_hi = (_element_permeance_per_depth(w, g / 2, h) for h in (lo, hi))
        return 1 / (1 / p_lo + 1 / p_hi)

    k_plane_ref = (column(a, 5e-3, 25e-3) + column(a, 40e-3, 40e-3)) / (mu_0 * a / g)
    k_depth_ref = 2 * column(b, 45e-3, 45e-3) / (mu_0 * b / g)
    k_plane, k_depth = get_fringing("conformal").factors(face)
    assert k_plane == pytest.approx(k_plane_ref, rel=1e-13)
    assert k_depth == pytest.approx(k_depth_ref, rel=1e-13)
    # a shorter free face on one side fringes less than the symmetric face
    sym = GapFace(length=g, width=a, depth=b, free_height=40e-3)
    assert k_plane < get_fringing("conformal").factors(sym)[0]


def test_conformal_check_value():
    face = GapFace(length=1e-3, width=10e-3, depth=10e-3, free_height=10e-3)
    sigma = 1 / get_fringing("conformal").factors(face)[0]
    # Source: docs/references.md section 1, w = h = 10 mm, l_g = 1 mm gives sigma = 0.807 [derived]; 3 significant figures
    assert round(sigma, 3) == 0.807


def test_conformal_guard_for_tiny_free_height():
    face = GapFace(length=1e-3, width=10e-3, depth=10e-3, free_height=0.1e-3)
    # Source: 1 + ln(pi h/(2 g)) = 1 + ln(0.157) < 0 here; documented clamp of the fringing term at 0
    assert 1 + math.log(math.pi * 0.1e-3 / 2e-3) < 0
    assert get_fringing("conformal").factors(face) == (1.0, 1.0)


def test_ordering_for_small_gap():
    a = b = 10e-3
    face = GapFace(length=0.02 * a, width=a, depth=b, free_height=10 * a)
    # Hand evaluation of the formulas (g/a = 0.02, h = 10 a):
    #   area:        (1.02)(1.02)                                   = 1.0404
    #   flux-factor: 1 + 0.02 ln(2*10/0.02) = 1 + 0.02*6.908         = 1.1382
    #   conformal:   per direction 1 + (0.04/pi)(1 + ln(pi*10/0.04)) = 1.0976, squared 1.2048
    #   planar flux-factor: half the excess (a = b, perimeter share) = 1.0691
    # Source: the model formulas of docs/references.md section 1, evaluated by hand above (3D and planar orderings)
    total = {n: np.prod(get_fringing(n).factors(face)) for n in FRINGING_MODELS}
    assert total["none"] < total["area"] < total["flux-factor"] < total["conformal"]
    plane = {n: get_fringing(n).factors(face)[0] for n in FRINGING_MODELS}
    assert plane["none"] < plane["area"] < plane["flux-factor"] < plane["conformal"]
    assert plane["flux-factor"] == pytest.approx(1.0691, abs=1e-4)
    # tolerance: the hand values above are rounded to 4-5 significant figures
    assert total["area"] == pytest.approx(1.0404, abs=1e-4)
    assert total["flux-factor"] == pytest.approx(1.1382, abs=1e-4)
    assert total["conformal"] == pytest.approx(1.2048, abs=2e-4)


def test_all_factors_at_least_one():
    rng = np.random.default_rng(12345)  # seeded
    for _ in range(300):
        a, b = rng.uniform(1e-3, 50e-3, size=2)
        g = rng.uniform(1e-5, 0.5) * a
        h = rng.uniform(1e-4, 0.2)
        face = GapFace(length=g, width=a, depth=b, free_height=h)
        for model in FRINGING_MODELS.values():
            k_plane, k_depth = model.factors(face)
            # Source: a fringing path only adds permeance in parallel to the ideal gap (common practice, no source)
            assert k_plane >= 1.0 and k_depth >= 1.0, (model.name, face)
            assert gap_permeance(face, model, planar=False) >= gap_permeance(face, model, planar=True)


def test_registry_and_unknown_name():
    assert set(FRINGING_MODELS) == {"none", "area", "flux-factor", "conformal", "flux-tube"}
    for name, model in FRINGING_MODELS.items():
        assert model.name == name and model.title and model.source
    with pytest.raises(UnknownModelError, match=r"'conformall'.*did you mean 'conformal'\?.*flux-factor"):
        get_fringing("conformall")
    assert issubclass(UnknownModelError, ValueError)


@pytest.mark.parametrize("key", ["length", "width", "depth", "free_height"])
@pytest.mark.parametrize("bad", [0.0, -1e-3, float("nan"), float("inf"), "x"])
def test_bad_face_rejected(key, bad):
    kwargs = dict(length=1e-3, width=10e-3, depth=10e-3, free_height=10e-3)
    kwargs[key] = bad
    with pytest.raises(GapFaceError, match=rf"{key} = "):
        GapFace(**kwargs)


def test_flux_tube_model_edge_by_edge():
    # Source: Roters, Electromagnetic Devices, 1941 [secondary, docs/references.md
    # section 1]: per pole edge of length L a half solid cylinder 0.26 mu0 L
    # and a half hollow cylinder (mu0 L/pi) ln(1 + t/r_i), r_i = g/2.
    # Composed here: in-plane edges (length b) each with the shorter free face
    # of its two sides, capped by the room across; depth edges (length a).
    from magcheck.analytic.fringing import GapSides

    g, a, b = 0.8e-3, 12e-3, 20e-3
    sides = GapSides(minus=(5e-3, 25e-3), plus=(40e-3, 40e-3), depth=(45e-3, 60e-3),
                     room=(math.inf, 9e-3))
    face = GapFace(length=g, width=a, depth=b, free_height=30e-3, sides=sides)

    def edge(length, t):  # permeance of one edge over mu0
        return 0.26 * length + length / math.pi * math.log(1 + t / (g / 2))

    p0 = a * b / g
    k_plane = 1 + (edge(b, 5e-3) + edge(b, 9e-3)) / p0   # minus: 5 mm face; plus: 9 mm room
    k_depth = 1 + 2 * edge(a, 45e-3) / p0
    got = get_fringing("flux-tube").factors(face)
    assert got == pytest.approx((k_plane, k_depth), rel=1e-13)


def test_flux_tube_needs_room_beside_the_gap():
    # A window half as wide halves the tube's reach: less fringing, and the
    # half cylinder alone (0.26 per edge) when the room is ~0.
    from magcheck.analytic.fringing import GapSides

    g, a = 1e-3, 10e-3
    wide = GapSides((30e-3, 30e-3), (30e-3, 30e-3), (30e-3, 30e-3), room=(20e-3, 20e-3))
    narrow = GapSides((30e-3, 30e-3), (30e-3, 30e-3), (30e-3, 30e-3), room=(1e-9, 1e-9))
    kw = get_fringing("flux-tube").factors(GapFace(g, a, a, 30e-3, sides=wide))[0]
    kn = get_fringing("flux-tube").factors(GapFace(g, a, a, 30e-3, sides=narrow))[0]
    assert kn < kw
    assert kn == pytest.approx(1 + g / a * 2 * 0.26, rel=1e-6)


# ------------------------------------------------------------------ round faces (r-z)
DISC = GapFace.round(0.5e-3, 0.0, 6e-3, 10e-3)          # invented for the test
RING = GapFace.round(0.5e-3, 17e-3, 20e-3, 10e-3)


def test_round_face_area_and_no_depth_part():
    # width * depth is the face's area, and an r-z face has no depth fringing:
    # planar and 3D permeances are the same number
    assert DISC.width * DISC.depth == pytest.approx(math.pi * 6e-3 ** 2, rel=1e-14)
    assert RING.width * RING.depth == pytest.approx(math.pi * (20e-3 ** 2 - 17e-3 ** 2), rel=1e-14)
    for name in FRINGING_MODELS:
        for face in (DISC, RING):
            k_plane, k_depth = get_fringing(name).factors(face)
            assert k_depth == 1.0 and k_plane >= 1.0
            assert gap_permeance(face, name, True) == gap_permeance(face, name, False)


def test_round_disc_closed_forms():
    g, r, h = 0.5e-3, 6e-3, 10e-3
    p0 = mu_0 * math.pi * r ** 2 / g
    # Source: ideal gap, mu0 A / g (exact for a uniform gap field)
    assert gap_permeance(DISC, "none", False) == pytest.approx(p0, rel=1e-14)
    # Source: Matsch 1964 ch. 3 area enlargement, g/2 added at the edge: pi (r + g/2)^2
    assert gap_permeance(DISC, "area", False) == pytest.approx(
        mu_0 * math.pi * (r + g / 2) ** 2 / g, rel=1e-13)
    # Source: Roters 1941 flux tubes [secondary, docs/references.md section 1]: the half
    # solid cylinder 0.26 mu0 round the circumference 2 pi r, the half hollow
    # cylinder bent round the edge (a half torus), its permeance by nested
    # quadrature (_half_torus); tolerance 1e-8: the two quadratures
    tube = mu_0 * (2 * math.pi * r * 0.26 + _half_torus(g, h, r, True))
    assert gap_permeance(DISC, "flux-tube", False) == pytest.approx(p0 + tube, rel=1e-8)
    # Source: Muehlethaler, Kolar, Ecklebe 2011 basic element: per edge length
    # mu0 (1/pi)(1 + ln(pi h/(2g))) (half the gap's two-edge term) [element from memory]
    conf = mu_0 * 2 * math.pi * r * (1 + math.log(math.pi * h / (2 * g))) / math.pi
    assert gap_permeance(DISC, "conformal", False) == pytest.approx(p0 + conf, rel=1e-13)
    # Source: McLyman 2011, F = 1 + (g/sqrt(A)) ln(2G/g) with A the face's area
    f = 1 + g / math.sqrt(math.pi * r ** 2) * math.log(2 * h / g)
    assert gap_permeance(DISC, "flux-factor", False) == pytest.approx(p0 * f, rel=1e-13)


@pytest.mark.parametrize("name", ["area", "conformal", "none"])
def test_round_annulus_equals_the_planar_strip_of_its_width(name):
    # the edge models are linear in edge length, and the annulus's two edges
    # sum to 2 pi (r_i + r_o), its area being 2 pi r_mean w: its factor is the
    # planar strip's in-plane factor of the same width for any radius [derived here]
    g, w, h = 0.5e-3, 3e-3, 10e-3
    strip = GapFace(g, w, 50e-3, h)
    for r_i in (5e-3, 17e-3, 1.0):
        ring = GapFace.round(g, r_i, r_i + w, h)
        k_ring = get_fringing(name).factors(ring)[0]
        assert k_ring == pytest.approx(get_fringing(name).factors(strip)[0], rel=1e-12)


def _half_torus(g: float, t: float, r_e: float, outward: bool) -> float:
    """Permeance over mu0 (m) of Roters's half hollow cylinder (radii g/2 to
    g/2 + t about an edge) bent round a circular edge of radius r_e, by
    nested adaptive quadrature: each thin shell of radius rho is a flux tube
    from one side face to the other whose section 2 pi r(theta) drho varies
    along it, r(theta) = r_e +/- rho sin theta (outer / inner edge), so its
    permeance is mu0 drho / int_0^pi rho dtheta / (2 pi r(theta))."""
    from scipy.integrate import quad

    sign = 1.0 if outward else -1.0

    def shell(rho: float) -> float:
        inv, _ = quad(lambda th: rho / (2 * math.pi * (r_e + sign * rho * math.sin(th))),
                      0.0, math.pi, epsabs=0.0, epsrel=1e-12)
        return 1.0 / inv

    val, _ = quad(shell, 0.5 * g, 0.5 * g + t, epsabs=0.0, epsrel=1e-12, limit=200)
    return val


@pytest.mark.parametrize("g, t, r_e, outward", [
    (3e-3, 7.5e-3, 6e-3, True),     # the plunger demo's working gap: t/r 1.25
    (3e-3, 1e-3, 6e-3, True),
    (0.4e-3, 5.4e-3, 5.4e-3, True),  # a pot-core post's outer edge, t ~ r
    (0.3e-3, 4.5e-3, 8e-3, True),
    (0.4e-3, 1.1e-3, 1.5e-3, False),  # a pot-core hole's edge, the tube near the axis
    (0.3e-3, 4.5e-3, 17e-3, False),
])
def test_curved_tube_against_nested_quadrature(g, t, r_e, outward):
    # Source: the permeance of the bent tube by its own reluctance integral
    # (_half_torus, nested adaptive quadrature), independent of the code's
    # closed-form inner integral and Gauss-Legendre sum; tolerance 1e-8: the
    # 48-point rule's error on the smooth ln(rho) integrand (found < 1e-10)
    assert curved_tube_edge(g, t, r_e, outward) == pytest.approx(
        _half_torus(g, t, r_e, outward), rel=1e-8)


def test_curved_tube_bends_the_straight_tube():
    # Source: Roters 1941 straight half hollow cylinder, (mu0 L / pi) ln(1 + 2t/g)
    # per edge length L [secondary, docs/references.md section 1], the limit of a large
    # radius; a round face's tubes are curved: at the plunger demo's outer
    # edge (g 3 mm, t 7.5 mm, r 6 mm) the bent tube carries 1.40 times the
    # straight one, an inner edge's less
    g, t = 3e-3, 7.5e-3
    straight = 2 * math.pi * math.log(1 + 2 * t / g) / math.pi
    assert curved_tube_edge(g, t, 10.0, True) / 10.0 == pytest.approx(straight, rel=1e-3)
    assert curved_tube_edge(g, t, 10.0, False) / 10.0 == pytest.approx(straight, rel=1e-3)
    # first order in t/r the two bends are +-(4/pi) t over the mean shell: the
    # outer and inner edges of a wide annulus average to the straight tube
    out, inn = curved_tube_edge(g, t, 1.0, True), curved_tube_edge(g, t, 1.0, False)
    assert 0.5 * (out + inn) == pytest.approx(straight, rel=1e-4)  # second order, (t/r)^2
    ratio = curved_tube_edge(g, t, 6e-3, True) / (6e-3 * straight)
    assert 1.35 < ratio < 1.45
    # a disc's flux-tube permeance takes the bent tube, not the straight one
    disc = GapFace.round(g, 0.0, 6e-3, 34e-3,
                         GapSides((19e-3, 12e-3), (19e-3, 12e-3), (19e-3, 12e-3),
                                  (math.inf, 7.5e-3)))
    p0 = mu_0 * math.pi * 6e-3 ** 2 / g
    tube = mu_0 * (2 * math.pi * 6e-3 * 0.26 + _half_torus(g, t, 6e-3, True))
    assert gap_permeance(disc, "flux-tube", False) == pytest.approx(p0 + tube, rel=1e-8)


def test_round_face_rejects_bad_radii():
    with pytest.raises(GapFaceError, match="r_inner"):
        GapFace.round(1e-3, 5e-3, 4e-3, 1e-2)
    with pytest.raises(GapFaceError, match="radii"):
        GapFace(1e-3, 1e-3, 1e-3, 1e-2, radii=(0.0, 2e-3))
