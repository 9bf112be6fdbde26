"""N-body transit-timing variations of a near-resonant pair against Lithwick, Xie & Wu (2012).

The reference is written here from the paper (Lithwick, Xie & Wu 2012,
ApJ 761, 122, eqs. 8-9 for the amplitudes, eqs. A21-A22 / Murray & Dermott
1999 Table 8.5 for f and g; equation numbers from memory), with the Laplace
coefficients integrated by scipy.integrate.quad, independently of the
library's code.
"""

from __future__ import annotations

import astropy.constants as const
import numpy as np
from scipy.integrate import quad

from orbitdeck.models import Planet, Star, System
from orbitdeck.models.physics import ttv
from orbitdeck.models.nbody import run_ensemble
from orbitdeck.models.nbody.results import linear_ephemeris_residuals, ttv_sinusoid

EARTH_TO_SUN = float(const.M_earth / const.M_sun)


def laplace_coefficient(s, j, alpha):
    """b_s^(j)(alpha) = (1/pi) integral_0^(2 pi) cos(j psi) / (1 - 2 alpha cos psi + alpha^2)^s dpsi (M&D eq. 6.67)."""
    value, _ = quad(lambda psi: np.cos(j * psi) / (1 - 2 * alpha * np.cos(psi) + alpha * alpha) ** s,
                    0.0, 2 * np.pi, limit=200, epsabs=1e-13, epsrel=1e-13)
    return value / np.pi


def d_laplace_coefficient(s, j, alpha, h=1e-5):
    """d b_s^(j) / d alpha by a centred difference of the quadratures."""
    return (laplace_coefficient(s, j, alpha + h) - laplace_coefficient(s, j, alpha - h)) / (2 * h)


def lithwick_f_g(j):
    """f = -j b^(j) - (alpha/2) Db^(j), g = (j - 1/2) b^(j-1) + (alpha/2) Db^(j-1) at alpha = ((j-1)/j)^(2/3)
    (Lithwick et al. 2012, appendix; M&D Table 8.5, f27 and f31, direct terms only: j >= 3)."""
    alpha = ((j - 1) / j) ** (2 / 3)
    f = -j * laplace_coefficient(0.5, j, alpha) - alpha / 2 * d_laplace_coefficient(0.5, j, alpha)
    g = (j - 0.5) * laplace_coefficient(0.5, j - 1, alpha) + alpha / 2 * d_laplace_coefficient(0.5, j - 1, alpha)
    return f, g


def lithwick_amplitudes(period, period_outer, mu, mu_outer, j, z_free=0.0):
    """V = P / (pi j^(2/3) (j-1)^(1/3) Delta) mu' (-f - 3/2 Z*/Delta) and
    V' = P' / (pi j Delta) mu (-g + 3/2 Z*/Delta), with Delta = P'/P (j-1)/j - 1 (Lithwick et al. 2012, eqs. 8-9)."""
    f, g = lithwick_f_g(j)
    delta = period_outer / period * (j - 1) / j - 1
    inner = period / (np.pi * j ** (2 / 3) * (j - 1) ** (1 / 3) * delta) * mu_outer * (-f - 1.5 * np.conj(z_free) / delta)
    outer = period_outer / (np.pi * j * delta) * mu * (-g + 1.5 * np.conj(z_free) / delta)
    return inner, outer


def test_f_and_g_match_the_published_table():
    # Lithwick et al. 2012, Table 3, for j = 3 (from memory): f = -2.025, g = 2.484
    f, g = lithwick_f_g(3)
    assert abs(f - (-2.025)) < 2e-3 and abs(g - 2.484) < 2e-3


def test_near_resonant_pair_ttvs_match_lithwick_xie_wu():
    # two Earth-mass planets of a Sun-mass star 1 % wide of 3:2, circular and edge-on, integrated for 20
    # super-periods P_sup = 1 / |3/P' - 2/P| (about 1000 orbits of the inner planet); the TTV sinusoid at
    # the super-period has the amplitudes of eqs. 8-9 with Z_free = 0 within 10 %, and the two planets'
    # sinusoids are in antiphase (V and V' have opposite signs since f < 0 < g)
    j, period, delta = 3, 10.0, 0.01
    period_outer = period * j / (j - 1) * (1 + delta)
    super_period = 1.0 / abs(j / period_outer - (j - 1) / period)
    system = System(name="near 3:2", epoch=2461000.0, star=Star(mass=1.0, radius=1.0, teff=5772.0), planets=[
        Planet(name="b", period=period, radius=1.0, mass=1.0, inclination=90.0, transit_time=2461001.0),
        Planet(name="c", period=period_outer, radius=1.0, mass=1.0, inclination=90.0, transit_time=2461004.0)])
    orbits = int(round(20 * super_period / period))
    result = run_ensemble(system, draws=1, orbits=orbits, seed=1, scheduler="synchronous")
    assert result.stable.all()
    inner, outer = lithwick_amplitudes(period, period_outer, EARTH_TO_SUN, EARTH_TO_SUN, j)
    fits = [ttv_sinusoid(t[0] - result.epoch, super_period) for t in result.transit_times]
    amplitude, phase = (np.array([fit[k] for fit in fits]) for k in (0, 1))
    np.testing.assert_allclose(amplitude, [abs(inner), abs(outer)], rtol=0.10)
    assert np.sign(inner.real) != np.sign(outer.real)
    assert abs(np.cos(phase[0] - phase[1]) + 1.0) < 0.01          # antiphase
    # the reported amplitude (half the range of the residuals) is of the same size
    np.testing.assert_allclose(result.ttv_amplitude_min[0], 1440 * np.abs([inner, outer]), rtol=0.15)
    # and the phase: with the mean longitudes from the line of sight, zero at each planet's transit, the TTVs are
    # Im[V exp(i lambda^j)] (a transit at true longitude 0 comes (P / pi) Im z late, z the forced eccentricity;
    # the real part would be a quarter super-period off). The longitudes are taken, as an observer would, from
    # the linear ephemerides T + n P fitted to the transit times (the osculating periods of the set-up differ
    # from the mean ones); least squares of t_n = T + n P + c cos lambda^j + s sin lambda^j then give s + i c ~ V
    # (2-3 deg and 5 % measured; the pair's free eccentricity from its circular start is left out of V)
    ephemerides = [linear_ephemeris_residuals(times[0][np.isfinite(times[0])])[:2] for times in result.transit_times]
    (t_in, p_in), (t_out, p_out) = ((float(t0), float(p)) for t0, p in ephemerides)
    inner, outer = lithwick_amplitudes(p_in, p_out, EARTH_TO_SUN, EARTH_TO_SUN, j)
    for times, amplitude in zip(result.transit_times, (inner, outer)):
        t = times[0][np.isfinite(times[0])]
        longitude = 2 * np.pi * (j * (t - t_out) / p_out - (j - 1) * (t - t_in) / p_in)
        design = np.stack([np.ones_like(t), np.arange(t.size), np.cos(longitude), np.sin(longitude)], axis=1)
        _, _, c, s = np.linalg.lstsq(design, t - t[0], rcond=None)[0]
        assert abs((s + 1j * c) / amplitude - 1) < 0.1
        curve = ttv.ttv_signal(amplitude, ttv.longitude_of_conjunctions(t, p_in, p_out, t_in, t_out, j))
        np.testing.assert_allclose(curve, np.imag(amplitude * np.exp(1j * longitude)), rtol=0, atol=1e-9 * abs(amplitude))
