"""TTV amplitudes near first-order commensurabilities (Lithwick, Xie & Wu 2012, ApJ 761, 122).

Checked against: scipy's adaptive quadrature of the Laplace-coefficient
integral (Murray & Dermott 1999, eq. 6.67) and Murray & Dermott's derivative
identity (eq. 6.70); the f and g of Lithwick et al. 2012 Table 3 (values
from memory, the same as Murray & Dermott 1999 Table 8.5's f_27 and f_31);
amplitudes worked out by hand from their eqs. (8)-(9); and derive() on an
invented two-planet system against an independent computation with astropy
and scipy.
"""

from __future__ import annotations

import astropy.constants as const
import astropy.units as u
import numpy as np
import pytest
from scipy.integrate import quad
from scipy.special import factorial, hyp2f1, poch

from orbitdeck.models import Uncertainty, derive
from orbitdeck.models.physics import ttv

SUN = dict(name="sun", mass=1.0, radius=1.0, teff=5772.0)


def laplace_by_quad(alpha, j, s=0.5):
    """b_s^(j)(alpha) = (1/pi) int_0^{2 pi} cos(j psi) (1 - 2 alpha cos psi + alpha^2)^(-s) dpsi
    (Murray & Dermott 1999, eq. 6.67), by scipy's adaptive quadrature."""
    value, _ = quad(lambda psi: np.cos(j * psi) / (1 - 2 * alpha * np.cos(psi) + alpha**2) ** s, 0.0, 2 * np.pi,
                    epsabs=1e-13, epsrel=1e-13, limit=400)
    return value / np.pi


def laplace_derivative_by_quad(alpha, j):
    """d b_{1/2}^(j) / d alpha = (1/pi) int cos(j psi) (cos psi - alpha) (1 - 2 alpha cos psi + alpha^2)^(-3/2)."""
    value, _ = quad(lambda psi: np.cos(j * psi) * (np.cos(psi) - alpha) / (1 - 2 * alpha * np.cos(psi) + alpha**2) ** 1.5,
                    0.0, 2 * np.pi, epsabs=1e-13, epsrel=1e-13, limit=400)
    return value / np.pi


@pytest.mark.parametrize("alpha", [0.1, 0.5, 0.63, 0.7631, 0.86, 0.93])
@pytest.mark.parametrize("j", [0, 1, 2, 3, 5, 9])
def test_laplace_coefficients_match_scipy_quadrature(alpha, j):
    b, db = ttv.laplace_coefficients(alpha, j)
    assert b == pytest.approx(laplace_by_quad(alpha, j), rel=1e-11, abs=1e-13)
    assert db == pytest.approx(laplace_derivative_by_quad(alpha, j), rel=1e-10, abs=1e-12)


@pytest.mark.parametrize("alpha, j", [(0.3, 30), (0.6, 45), (0.8, 80)])
def test_laplace_coefficients_of_high_index_match_the_hypergeometric_series(alpha, j):
    # b_s^(j)(alpha) = 2 (s)_j / j! alpha^j 2F1(s, s + j; j + 1; alpha^2) (Murray & Dermott 1999, eq. 6.68, from
    # memory), with scipy's hyp2f1: tiny coefficients that the quadrature must still get to its absolute accuracy
    # (~1e-15, the rounding of a sum of terms of order one), which takes as many more nodes as j
    expected = 2 * poch(0.5, j) / factorial(j) * alpha**j * hyp2f1(0.5, 0.5 + j, j + 1, alpha**2)
    assert ttv.laplace_coefficients(alpha, j)[0] == pytest.approx(expected, rel=1e-9, abs=5e-15)


@pytest.mark.parametrize("alpha", [0.4, 0.76, 0.9])
@pytest.mark.parametrize("j", [1, 2, 4])
def test_derivative_obeys_murray_dermott_identity(alpha, j):
    # Murray & Dermott 1999 eq. 6.70: D b_s^(j) = s (b_{s+1}^(j-1) - 2 alpha b_{s+1}^(j) + b_{s+1}^(j+1)), s = 1/2
    expected = 0.5 * (laplace_by_quad(alpha, j - 1, 1.5) - 2 * alpha * laplace_by_quad(alpha, j, 1.5)
                      + laplace_by_quad(alpha, j + 1, 1.5))
    assert ttv.laplace_coefficients(alpha, j)[1] == pytest.approx(expected, rel=1e-10)


# Lithwick, Xie & Wu 2012, Table 3, f and g at the exact commensurability alpha = ((j-1)/j)^(2/3)
# (from memory; they are Murray & Dermott 1999 Table 8.5's f_27 and f_31, the 2:1 f_31 with its indirect term)
TABLE_3 = {2: (-1.190, 0.4284), 3: (-2.025, 2.484), 4: (-2.840, 3.283), 5: (-3.650, 4.084)}


@pytest.mark.parametrize("j", sorted(TABLE_3))
def test_f_and_g_match_the_published_table(j):
    alpha = ((j - 1) / j) ** (2 / 3)
    f, g = TABLE_3[j]
    assert ttv.resonance_coefficient_f(alpha, j) == pytest.approx(f, abs=6e-4)
    assert ttv.resonance_coefficient_g(alpha, j) == pytest.approx(g, abs=6e-4)


@pytest.mark.parametrize("j", [2, 3, 4, 5, 8])
def test_f_and_g_match_an_independent_quadrature(j):
    # f = -j b^(j) - (alpha/2) Db^(j), g = (j - 1/2) b^(j-1) + (alpha/2) Db^(j-1) - 2^(1/3) [j = 2]
    # (Lithwick et al. 2012, Table 3; the indirect term as in Murray & Dermott 1999, Table 8.5), at an alpha
    # off the exact commensurability
    alpha = 1.004 * ((j - 1) / j) ** (2 / 3)
    f = -j * laplace_by_quad(alpha, j) - alpha / 2 * laplace_derivative_by_quad(alpha, j)
    g = ((j - 0.5) * laplace_by_quad(alpha, j - 1) + alpha / 2 * laplace_derivative_by_quad(alpha, j - 1)
         - (2 ** (1 / 3) if j == 2 else 0.0))
    assert ttv.resonance_coefficient_f(alpha, j) == pytest.approx(f, rel=1e-11)
    assert ttv.resonance_coefficient_g(alpha, j) == pytest.approx(g, rel=1e-11)


def test_coefficients_of_many_draws_equal_direct_quadrature():
    # many draws are interpolated between quadratures at Chebyshev points: the same numbers as direct
    # quadrature at every draw (scipy quad on a sample of them)
    rng = np.random.default_rng(4)
    alpha = np.array([0.63, 0.7631, 0.8255, 0.90]) * (1 + 1e-4 * rng.standard_normal((300, 4)))
    j = np.array([2, 3, 4, 7])
    f, g = ttv.resonance_coefficients(alpha, j)
    for draw in (0, 17, 299):
        for column in range(4):
            a, jj = alpha[draw, column], j[column]
            expected_f = -jj * laplace_by_quad(a, jj) - a / 2 * laplace_derivative_by_quad(a, jj)
            assert f[draw, column] == pytest.approx(expected_f, rel=1e-11)
    assert np.allclose(g, ttv.resonance_coefficient_g(alpha, j), rtol=1e-12, atol=0)


def test_coefficients_of_widely_spread_draws_equal_direct_quadrature():
    # draws spread over 0.6 < alpha < 0.9 are too far from a single interpolant's reach (its error would be
    # ~3^-12 here) and are integrated one by one; a moderately spread pair beside them is interpolated: both
    # against scipy quad on a sample of draws
    rng = np.random.default_rng(8)
    alpha = np.column_stack([rng.uniform(0.6, 0.9, 200), 0.82 * (1 + 1e-3 * rng.standard_normal(200))])
    j = np.array([3, 4])
    f, g = ttv.resonance_coefficients(alpha, j)
    for draw in (0, 99, 199):
        for column in range(2):
            a, jj = alpha[draw, column], j[column]
            expected_f = -jj * laplace_by_quad(a, jj) - a / 2 * laplace_derivative_by_quad(a, jj)
            expected_g = (jj - 0.5) * laplace_by_quad(a, jj - 1) + a / 2 * laplace_derivative_by_quad(a, jj - 1)
            assert f[draw, column] == pytest.approx(expected_f, rel=1e-11)
            assert g[draw, column] == pytest.approx(expected_g, rel=1e-11)


# -- the amplitudes of eqs. (8) and (9), worked out by hand ------------------------------------------

def test_amplitudes_worked_by_hand():
    # j = 3 (3:2), P = 10 d, P' = 15.15 d: Delta = (15.15 / 10) (2/3) - 1 = 0.01; mu' = 1e-5, mu = 2e-5;
    # f = -2.025, g = 2.484 (Table 3); Z_free = 0.
    # |V| = P mu' |f| / (pi j^(2/3) (j-1)^(1/3) Delta)
    #     = 10 x 1e-5 x 2.025 / (pi x 2.0800838 x 1.2599210 x 0.01) = 2.025e-4 / 0.08233302 d
    #     = 2.4595236e-3 d = 3.541714 min
    # |V'| = P' mu |g| / (pi j Delta) = 15.15 x 2e-5 x 2.484 / (pi x 0.03) = 7.52652e-4 / 0.09424778 d
    #      = 7.985886e-3 d = 11.49968 min
    args = dict(j=3, delta=0.01)
    v = ttv.ttv_amplitude_inner(10.0, 1e-5, f=-2.025, z_free=0.0, **args)
    w = ttv.ttv_amplitude_outer(15.15, 2e-5, g=2.484, z_free=0.0, **args)
    assert abs(v) * 1440 == pytest.approx(3.541714, rel=1e-6)
    assert abs(w) * 1440 == pytest.approx(11.49968, rel=1e-6)
    # Z_free = 0.005 at 0 deg: the brackets become -f - 1.5 x 0.005 / 0.01 = 2.025 - 0.75 = 1.275 and
    # -g + 0.75 = -1.734: |V| = 3.541714 x 1.275 / 2.025 = 2.229968 min, |V'| = 11.49968 x 1.734 / 2.484 = 8.027552 min
    z = ttv.free_eccentricity(0.005, 0.0)
    assert abs(ttv.ttv_amplitude_inner(10.0, 1e-5, f=-2.025, z_free=z, **args)) * 1440 == pytest.approx(2.229968,
                                                                                                       rel=1e-6)
    assert abs(ttv.ttv_amplitude_outer(15.15, 2e-5, g=2.484, z_free=z, **args)) * 1440 == pytest.approx(8.027552,
                                                                                                        rel=1e-6)
    # at 90 deg Z* = -0.005 i: |2.025 + 0.75 i| = sqrt(4.100625 + 0.5625) = 2.159427; |V| = 3.541714 x 2.159427
    # / 2.025 = 3.776826 min
    z = ttv.free_eccentricity(0.005, 90.0)
    v = ttv.ttv_amplitude_inner(10.0, 1e-5, f=-2.025, z_free=z, **args)
    assert abs(v) * 1440 == pytest.approx(3.776826, rel=1e-6)
    # and its phase: the prefactor is positive (Delta > 0), arg(2.025 + 0.75 i) = atan(0.37037) = 20.323 deg
    assert np.angle(v, deg=True) == pytest.approx(20.323, abs=1e-3)


def test_signal_is_a_sinusoid_of_the_longitude_of_conjunctions():
    # delta t = Im[V exp(i lambda^j)], lambda^j = j lambda' - (j - 1) lambda; its period is the super-period
    # 1 / |j/P' - (j-1)/P| (Lithwick et al. 2012, eq. 7)
    period, period_out, j = 10.0, 15.15, 3
    t = np.linspace(0.0, 3000.0, 4001)
    longitude = ttv.longitude_of_conjunctions(t, period, period_out, 0.0, 0.0, j)
    signal = ttv.ttv_signal(2e-3 + 1e-3j, longitude)
    assert np.max(np.abs(signal)) == pytest.approx(abs(2e-3 + 1e-3j), rel=1e-4)
    super_period = 1 / abs(j / period_out - (j - 1) / period)
    # Im[V exp(i lambda)]: at lambda = 0 the imaginary part of V, a quarter turn on its real part
    assert ttv.ttv_signal(2e-3 + 1e-3j, 0.0) == pytest.approx(1e-3, rel=1e-12)
    assert ttv.ttv_signal(2e-3 + 1e-3j, np.pi / 2) == pytest.approx(2e-3, rel=1e-12)
    later = ttv.ttv_signal(2e-3 + 1e-3j, ttv.longitude_of_conjunctions(t + super_period, period, period_out,
                                                                          0.0, 0.0, j))
    assert np.allclose(later, signal, atol=1e-12)


def test_longitude_of_conjunctions_from_the_transit_times():
    # lambda^j = j lambda' - (j - 1) lambda, each mean longitude 2 pi (t - T) / P from the line of sight, zero at the
    # planet's transit time T (Lithwick et al. 2012, Sect. 2), worked by hand for j = 3, P = 10, P' = 15.15,
    # T = 1, T' = 4: at t = T' lambda' = 0, lambda = 2 pi x 0.3, lambda^3 = -2 x 0.6 pi = -1.2 pi; at t = T
    # lambda = 0, lambda' = 2 pi (1 - 4) / 15.15, lambda^3 = -18 pi / 15.15 = -3.7325853
    args = (10.0, 15.15, 1.0, 4.0, 3)
    assert ttv.longitude_of_conjunctions(4.0, *args) == pytest.approx(-1.2 * np.pi, rel=1e-12)
    assert ttv.longitude_of_conjunctions(1.0, *args) == pytest.approx(-3.7325853, rel=1e-7)


def test_signal_is_the_lateness_of_transits_worked_out_from_first_order_theory():
    # derived here, independently of eqs. (8)-(9): with longitudes from the line of sight a transit happens at
    # true longitude theta = 0, and theta = lambda + 2 e sin(lambda - varpi) to first order in e (the equation of
    # the centre, Murray & Dermott 1999, eq. 2.88, from memory), so a transit comes (P / 2 pi)(2 Im z - dlambda)
    # late, z = e exp(i varpi). The resonant term R = (G m'/a') Re[(f z* + g z'*) exp(i lambda^j)] of the
    # disturbing function in Lagrange's equations (M&D ch. 6-7, from memory), dz/dt = (2 i / (n a^2)) dR/dz* and
    # da/dt = (2 / (n a)) dR/dlambda with dn = -(3/2) n da / a, gives with w = dlambda^j/dt = j n' - (j - 1) n:
    #   forced z = G m' f exp(i lambda^j) / (n a^2 a' w),  z' = G m g exp(i lambda^j) / (n' a'^3 w),
    #   dlambda = 3 G m' (j - 1) Im[Z* exp(i lambda^j)] / (a^2 a' w^2),  dlambda' = -3 G m j Im[...] / (a'^3 w^2),
    # Z = Z_free (constant parts of z go into the linear ephemeris). V and V' of eqs. (8)-(9) agree with these
    # to order Delta (the paper takes alpha and the frequencies at the exact commensurability), so Delta = 1e-3
    # here; an N-body run checks the same phase (tests/test_nbody_ttv.py).
    j, period, delta, mu_in, mu_out, f, g = 3, 10.0, 1e-3, 2e-5, 1e-5, -2.025, 2.484
    period_out = period * j / (j - 1) * (1 + delta)
    n, n_out = 2 * np.pi / period, 2 * np.pi / period_out
    a, a_out = n ** (-2 / 3), n_out ** (-2 / 3)          # G M* = 1
    w = j * n_out - (j - 1) * n
    longitude = np.linspace(-np.pi, np.pi, 13)
    turn = np.exp(1j * longitude)
    for z_free in (0.0, ttv.free_eccentricity(0.002, 40.0)):
        forced, forced_out = mu_out * f / (n * a**2 * a_out * w), mu_in * g / (n_out * a_out**3 * w)
        drift = 3 * mu_out * (j - 1) * np.imag(np.conj(z_free) * turn) / (a**2 * a_out * w**2)
        drift_out = -3 * mu_in * j * np.imag(np.conj(z_free) * turn) / (a_out**3 * w**2)
        late = period / (2 * np.pi) * (2 * np.imag(forced * turn) - drift)
        late_out = period_out / (2 * np.pi) * (2 * np.imag(forced_out * turn) - drift_out)
        v = ttv.ttv_amplitude_inner(period, mu_out, j, delta, f, z_free)
        v_out = ttv.ttv_amplitude_outer(period_out, mu_in, j, delta, g, z_free)
        np.testing.assert_allclose(ttv.ttv_signal(v, longitude), late, rtol=0, atol=3e-3 * abs(v))
        np.testing.assert_allclose(ttv.ttv_signal(v_out, longitude), late_out, rtol=0, atol=3e-3 * abs(v_out))


# -- through derive() ------------------------------------------------------------------------------

def pair_system(make_system, period_out=15.15, masses=(3.0, 6.0), e=0.0, with_errors=False):
    planets = [dict(name="b", period=10.0, radius=1.5, mass=masses[0], eccentricity=e),
               dict(name="c", period=period_out, radius=1.8, mass=masses[1])]
    system = make_system(planets, star=dict(SUN, mass=0.5))
    if with_errors:
        for planet in system.planets:
            planet.uncertainties = {"mass": Uncertainty.from_sigma(0.1 * planet.mass),
                                    "period": Uncertainty.from_sigma(1e-4)}
    return system


def test_derive_gives_the_amplitudes_of_an_independent_computation(make_system):
    system = pair_system(make_system)
    pair = derive(system).to_dict()["pairs"][0]
    # the same by hand: semi-major axes from Kepler's third law with astropy, f and g by scipy quad
    m_star, m_in, m_out = 0.5 * const.M_sun, 3.0 * const.M_earth, 6.0 * const.M_earth

    def a(period, m):
        return (const.G * (m_star + m) * (period * u.day) ** 2 / (4 * np.pi**2)) ** (1 / 3)

    alpha = float(a(10.0, m_in) / a(15.15, m_out))
    f = -3 * laplace_by_quad(alpha, 3) - alpha / 2 * laplace_derivative_by_quad(alpha, 3)
    g = 2.5 * laplace_by_quad(alpha, 2) + alpha / 2 * laplace_derivative_by_quad(alpha, 2)
    delta = 15.15 / 10.0 * 2 / 3 - 1
    mu_in, mu_out = float(m_in / m_star), float(m_out / m_star)
    v = 10.0 * mu_out * abs(f) / (np.pi * 3 ** (2 / 3) * 2 ** (1 / 3) * delta) * 1440
    w = 15.15 * mu_in * abs(g) / (np.pi * 3 * delta) * 1440
    assert pair["ttv_inner_min"] == pytest.approx(v, rel=1e-9)
    assert pair["ttv_outer_min"] == pytest.approx(w, rel=1e-9)


def test_amplitudes_scale_with_the_perturbers_mass(make_system):
    light = derive(pair_system(make_system, masses=(3.0, 6.0))).pairs
    heavy = derive(pair_system(make_system, masses=(3.0, 12.0))).pairs
    # eq. (8): V is proportional to mu' (alpha moves by a part in 1e6 with the mass, f with it)
    assert heavy["ttv_inner_min"][0] / light["ttv_inner_min"][0] == pytest.approx(2.0, rel=1e-4)
    assert heavy["ttv_outer_min"][0] / light["ttv_outer_min"][0] == pytest.approx(1.0, rel=1e-4)


@pytest.mark.parametrize("period_out, why", [(20.0 * 1.12, "2:1 with |Delta| = 0.12, beyond 0.1"),
                                             (25.0, "nearest rung 5:2, third order"),
                                             (10.0 * 5 / 3 * 1.01, "nearest rung 5:3, second order"),
                                             (15.0 * 1.00001, "|Delta| = 1e-5, inside the resonance width")])
def test_no_amplitude_outside_the_formulas_range(make_system, period_out, why):
    doc = derive(pair_system(make_system, period_out=period_out), samples=50, seed=1).to_dict()
    pair = doc["pairs"][0]
    assert pair["ttv_inner_min"] is None and pair["ttv_outer_min"] is None, why
    assert pair["interval"]["ttv_inner_min"] == [None, None]


def test_range_of_validity_edges(make_system):
    # epsilon = (3 + 6) Mearth / 0.5 Msun = 5.41e-5, whose resonance width epsilon^(2/3) = 1.43e-3
    epsilon = 9.0 * const.M_earth.value / (0.5 * const.M_sun.value)
    width = epsilon ** (2 / 3)
    assert width == pytest.approx(1.43e-3, rel=0.01)
    for delta, applies in ((0.5 * width, False), (2.0 * width, True)):
        pairs = derive(pair_system(make_system, period_out=15.0 * (1 + delta))).pairs
        assert np.isfinite(pairs["ttv_inner_min"][0]) == applies, delta
    # |Delta| < 0.1: near 2:1, whose rung stays the nearest that far off
    for delta, applies in ((0.095, True), (0.105, False)):
        pairs = derive(pair_system(make_system, period_out=20.0 * (1 + delta))).pairs
        assert pairs["nearest"][0] == "2:1"
        assert np.isfinite(pairs["ttv_inner_min"][0]) == applies, delta


def test_monte_carlo_gives_an_interval_around_the_nominal_amplitude(make_system):
    system = pair_system(make_system, with_errors=True)
    doc = derive(system, samples=2000, seed=3).to_dict()
    pair = doc["pairs"][0]
    for key in ("ttv_inner_min", "ttv_outer_min"):
        low, high = pair["interval"][key]
        assert low < pair[key] < high
        # a 10 % mass error gives about a 10 % spread of the amplitude
        assert 0.05 < (high - low) / 2 / pair[key] < 0.15
    assert doc["system"]["free_eccentricity"] == {"amplitude": 0.0, "angle": 0.0}


def test_free_eccentricity_assumption_reaches_the_amplitudes(make_system):
    system = pair_system(make_system)
    before = derive(system).pairs["ttv_inner_min"][0]
    system.assumptions.param.update(free_eccentricity_amplitude=0.005, free_eccentricity_angle=0.0)
    derived = derive(system)
    assert derived.system["free_eccentricity"]["amplitude"] == 0.005
    # (-f - 1.5 Z/Delta) / (-f) with Delta = 0.01, Z = 0.005: a smaller bracket (f < 0)
    a = derived.planets["semi_major_axis_au"]
    f = ttv.resonance_coefficient_f(a[0] / a[1], 3)
    assert derived.pairs["ttv_inner_min"][0] / before == pytest.approx((-f - 0.75) / -f, rel=1e-9)


def test_curves_of_both_planets_worked_from_the_mean_longitudes():
    # LXW12 Sect. 2 with the longitudes from the line of sight: delta t = Im[V e^(i lambda^j)],
    # delta t' = Im[V' e^(i lambda^j)] (see ttv_signal), lambda^j = j lambda' -
    # (j - 1) lambda, each mean longitude 2 pi (t - T) / P from a transit (zero at transit); worked here with
    # plain numpy at a few times
    period, period_out, j = 3.1, 4.72, 3
    transit, transit_out = 1000.37, 1001.9
    v, v_out = 2e-3 - 1e-3j, -1.5e-3 + 0.4e-3j
    t = np.array([1000.37, 1003.0, 1017.25, 1200.0, 1333.3])
    lam, lam_out = 2 * np.pi * (t - transit) / period, 2 * np.pi * (t - transit_out) / period_out
    angle = j * lam_out - (j - 1) * lam
    inner, outer = ttv.ttv_curves(t, v, v_out, period, period_out, transit, transit_out, j)
    np.testing.assert_allclose(inner, v.real * np.sin(angle) + v.imag * np.cos(angle), rtol=1e-12, atol=1e-15)
    np.testing.assert_allclose(outer, v_out.real * np.sin(angle) + v_out.imag * np.cos(angle), rtol=1e-12,
                               atol=1e-15)


def test_curves_at_a_double_transit_and_one_super_period_later():
    # both planets in transit at t0: lambda = lambda' = 0, so delta t = Im V and delta t' = Im V'; the same
    # again one super-period 1 / |j/P' - (j-1)/P| later (LXW12 Sect. 2)
    period, period_out, j, t0 = 10.0, 15.15, 3, 2461000.25
    super_period = 1.0 / abs(j / period_out - (j - 1) / period)
    v, v_out = 3e-3 + 2e-3j, -1e-3 - 0.5e-3j
    at = np.array([t0, t0 + super_period])
    inner, outer = ttv.ttv_curves(at, v, v_out, period, period_out, t0, t0, j)
    np.testing.assert_allclose(inner, [v.imag, v.imag], rtol=1e-9)
    np.testing.assert_allclose(outer, [v_out.imag, v_out.imag], rtol=1e-9)
    # a quarter of a super-period on, lambda^j has turned by -pi/2 (j/P' < (j-1)/P here):
    # delta t = Im[-i V] = -Re V
    quarter = ttv.ttv_curves(t0 + super_period / 4, v, v_out, period, period_out, t0, t0, j)
    assert quarter[0] == pytest.approx(-v.real, rel=1e-9) and quarter[1] == pytest.approx(-v_out.real, rel=1e-9)
