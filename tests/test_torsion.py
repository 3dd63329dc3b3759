"""Saint-Venant torsion constants solved numerically (fem.sections.torsion).

Independent references, named beside each check: the exact series of a solid rectangle
(Timoshenko & Goodier, *Theory of Elasticity*, 3rd ed., section 109; Roark's *Formulas for Stress
and Strain*, Table 10.1; the series is fem.sections.rect's, and the square's 0.140577 a^4 is
/work/shared/reference-values.md's worked value), the polar moment of a disc, the thin-wall
limit of an open section, and a finite-difference solution of the same problem on a square grid
(tests/test_sections_catalogue.py).
"""

import math

import pytest

from fem.sections import angle, rect
from fem.sections.torsion import angle_torsion_constant, arc, patch_torsion_constant, segment


def _rectangle(a, b, n=3, split=False):
    """Patches of an a x b rectangle (a along y), n elements across b; optionally cut in two."""
    if not split:
        return [(segment((0, 0), (a, 0)), segment((0, b), (a, b)), segment((0, 0), (0, b)),
                 segment((a, 0), (a, b)), round(n * a / b), n)]
    m = a / 2
    mid = segment((m, 0), (m, b))
    return [(segment((0, 0), (m, 0)), segment((0, b), (m, b)), segment((0, 0), (0, b)), mid, round(n * m / b), n),
            (segment((m, 0), (a, 0)), segment((m, b), (a, b)), mid, segment((a, 0), (a, b)), round(n * m / b), n)]


@pytest.mark.parametrize("a", [1.0, 2.0, 5.0])
def test_rectangle_against_the_exact_series(a):
    # The series is exact; the extrapolated FE value is measured 6e-5 low on the square (its four
    # convex corners carry the r^2 log r term that slows quadratic elements), less on longer
    # rectangles. rtol 1e-4 fails a wrong element matrix or load vector by orders of magnitude.
    J = patch_torsion_constant(_rectangle(a, 1.0))
    assert J == pytest.approx(rect(a, 1.0).J, rel=1e-4)
    assert J < rect(a, 1.0).J                        # the Galerkin J converges from below
    if a == 1.0:
        assert J == pytest.approx(0.140577, rel=1e-4)   # reference-values.md, square (C)


def test_patches_are_joined():
    # The same rectangle in one patch and in two (nodes merged along the cut) is the same mesh
    one = patch_torsion_constant(_rectangle(2.0, 1.0, n=2))
    two = patch_torsion_constant(_rectangle(2.0, 1.0, n=2, split=True))
    assert two == pytest.approx(one, rel=1e-12)


def test_disc_is_its_polar_moment():
    # A disc of radius R in five patches (a central square and four curved ones): J = pi R^4 / 2
    # exactly (Timoshenko & Goodier, section 104). The arcs are followed quadratically, so this
    # checks the curved edges; rtol 1e-5 against a measured error of about 1e-6.
    R, s = 1.0, 0.45
    c = [(s, -s), (s, s), (-s, s), (-s, -s)]
    rim = [(R * math.cos(a), R * math.sin(a)) for a in (-math.pi / 4, math.pi / 4, 3 * math.pi / 4, -3 * math.pi / 4)]
    n = 3
    patches = [(segment(c[3], c[0]), segment(c[2], c[1]), segment(c[3], c[2]), segment(c[0], c[1]), n, n)]
    for k in range(4):
        i, j = k, (k + 1) % 4              # the square's side c[i]-c[j] and the rim beyond it
        a0 = -math.pi / 4 + k * math.pi / 2
        patches.append((segment(c[i], c[j]), arc((0, 0), R, a0, a0 + math.pi / 2),
                        segment(c[i], rim[i]), segment(c[j], rim[j]), n, n))
    assert patch_torsion_constant(patches) == pytest.approx(math.pi * R**4 / 2, rel=1e-5)


@pytest.mark.parametrize("r_over_t", [0.01, 0.2, 0.63, 1.6, 3.0])
def test_angle_converges(r_over_t):
    # The default mesh (3 and 6 elements through t, extrapolated) against 8 and 16 (extrapolated):
    # measured differences 2.4e-4 at r = t/100, 2e-5 to 4e-5 otherwise.
    coarse = angle_torsion_constant(10.0, 10.0, 1.0, r_over_t)
    fine = angle_torsion_constant(10.0, 10.0, 1.0, r_over_t, n=8)
    assert coarse == pytest.approx(fine, rel=3e-4 if r_over_t < 0.1 else 1e-4)


def test_angle_thin_wall_limit():
    # Far from the heel and the toes a leg is a long strip with phi = z (t - z), which adds t^3/3
    # to J per unit length exactly (thin-wall theory, Timoshenko & Goodier section 111). So the
    # excess of J over the thin-wall (2b - t) t^3/3 is a fixed amount set by the toes and the
    # heel (each free toe takes 0.105 t^4 off, Roark Table 10.1; the fillet adds more), the same
    # for every leg length, and J/((2b - t) t^3/3) tends to 1 as b/t grows.
    t, r = 1.0, 1.0
    excess = [angle_torsion_constant(b, b, t, r) - (2 * b - t) * t**3 / 3 for b in (10.0, 40.0, 100.0)]
    assert excess[1] == pytest.approx(excess[0], rel=1e-6) and excess[2] == pytest.approx(excess[0], rel=1e-6)
    assert 0.0 < excess[0] < 0.5 * t**4
    assert angle_torsion_constant(100.0, 100.0, t, r) / (199.0 * t**3 / 3) == pytest.approx(1.0, abs=0.01)
    # without much fillet the toes win: J falls below the thin-wall value
    assert angle_torsion_constant(40.0, 40.0, t, 0.05) < 79.0 * t**3 / 3


def test_angle_toe_radii():
    # Toe radii r2 at the toes' inner corners (EN 10056-1 angles: r2 = r1/2) take material off,
    # and J can only fall when the region shrinks (the stress function of the smaller region is
    # below that of the larger one: maximum principle); the drop is a fraction of a percent.
    # The toe patches converge like the rest: default mesh against 8 and 16, measured 1.6e-5
    # (80 x 80 x 8) and 6e-6 (r2 = t).
    square = angle_torsion_constant(80.0, 80.0, 8.0, 10.0)
    toes = angle_torsion_constant(80.0, 80.0, 8.0, 10.0, 5.0)
    assert 0.99 * square < toes < square
    assert toes == pytest.approx(angle_torsion_constant(80.0, 80.0, 8.0, 10.0, 5.0, n=8), rel=1e-4)
    assert angle_torsion_constant(10.0, 10.0, 1.0, 1.0, 1.0) == pytest.approx(
        angle_torsion_constant(10.0, 10.0, 1.0, 1.0, 1.0, n=8), rel=1e-4)
    assert angle(0.08, 0.08, 0.008, r=0.01, r2=0.005).J == pytest.approx(toes * 1e-12, rel=1e-12)


def test_angle_symmetry_units_and_cache():
    # swapping the legs mirrors the mesh; J scales as length^4 (the solve is on t = 1)
    swapped = angle_torsion_constant(5.0, 8.0, 0.5, 0.4)
    assert angle_torsion_constant(8.0, 5.0, 0.5, 0.4) == pytest.approx(swapped, rel=1e-12)
    assert angle_torsion_constant(0.2032, 0.2032, 0.0254, 0.016002) == pytest.approx(
        angle_torsion_constant(8.0, 8.0, 1.0, 0.016002 / 0.0254) * 0.0254**4, rel=1e-9)
    before = angle_torsion_constant.cache_info().hits
    angle(0.1, 0.1, 0.01, r=0.012)
    angle(0.1, 0.1, 0.01, r=0.012)
    assert angle_torsion_constant.cache_info().hits > before
    assert angle(0.1, 0.1, 0.01, r=0.012).J == angle_torsion_constant(0.1, 0.1, 0.01, 0.012)


def test_angle_torsion_bad_dimensions():
    with pytest.raises(ValueError, match=r"angle torsion: need 0 < t < min\(b, h\), r > 0, 0 <= r2 <= t"):
        angle_torsion_constant(0.1, 0.1, 0.01, 0.0)
    with pytest.raises(ValueError, match=r"angle torsion: need"):
        angle_torsion_constant(0.1, 0.1, 0.01, 0.01, 0.012)
    with pytest.raises(ValueError, match=r"angle torsion: need"):
        angle_torsion_constant(0.1, 0.1, 0.01, 0.095)
