"""Whether the planets can keep an atmosphere, and what a telescope could see of one.

* The cosmic shoreline of Zahnle & Catling 2017 (ApJ 843, 122): in the
  Solar System, bodies with atmospheres and bodies without divide along
  I proportional to v_esc^4 (insolation against escape speed).
* The energy-limited escape rate (Watson, Donahue & Walker 1981, Icarus 48,
  150) with the Roche-lobe factor K of Erkaev et al. 2007 (A&A 472, 329).
* The pressure scale height, the transmission signal of one scale height,
  and the secondary-eclipse depth of a bare rock (Cowan & Agol 2011, ApJ
  729, 54; Koll et al. 2019, ApJ 886, 140).

Every number here is a model estimate under stated assumptions (XUV flux,
heating efficiency, mean molecular weight, albedo), not a measurement.
"""

from __future__ import annotations

import numpy as np

from ..constants import ATOMIC_MASS_UNIT, C_LIGHT, G, H_PLANCK, K_BOLTZMANN, SOLAR_CONSTANT
from .solar_system import body

#: the body the shoreline is drawn through: Mars, which keeps a thin atmosphere at the boundary
#: between the Solar System bodies with and without one (Zahnle & Catling 2017, Fig. 1)
SHORELINE_ANCHOR = "Mars"


def _shoreline_speed_kms() -> float:
    anchor = body(SHORELINE_ANCHOR)
    return anchor.escape_speed_kms / anchor.insolation_earth**0.25


#: escape speed [km/s] at which the shoreline reaches Earth's insolation: I / I_earth = (v / v0)^4
SHORELINE_SPEED_KMS = _shoreline_speed_kms()


def shoreline_insolation(escape_speed_kms):
    """Insolation on the cosmic shoreline at a given escape speed.

    I / I_earth = (v_esc / v0)^4 (Zahnle & Catling 2017, ApJ 843, 122: the
    line I proportional to v_esc^4 that divides the Solar System bodies with
    atmospheres from those without), normalised here by drawing it through
    Mars (v_esc = 5.03 km/s at I = 0.43 I_earth), which gives v0 = 6.2 km/s.
    Bodies above the line (more insolation at their escape speed) are
    expected to have lost their atmospheres.

    Parameters
    ----------
    escape_speed_kms : array_like
        Escape speed [km s^-1].

    Returns
    -------
    ndarray
        Insolation [S_earth].
    """
    return (np.asarray(escape_speed_kms) / SHORELINE_SPEED_KMS) ** 4


def roche_lobe_factor(xi):
    """Reduction of the potential energy needed to escape by the star's tide.

    K(xi) = 1 - 3 / (2 xi) + 1 / (2 xi^3), xi = R_Roche / R_p (Erkaev et al.
    2007, A&A 472, 329, eq. 17); K = 1 far inside the Roche lobe and 0 when
    the planet fills it.

    Parameters
    ----------
    xi : array_like
        Roche-lobe radius over planet radius.

    Returns
    -------
    ndarray
        K, dimensionless.
    """
    xi = np.asarray(xi)
    return 1.0 - 3.0 / (2.0 * xi) + 1.0 / (2.0 * xi**3)


def roche_lobe_radius(a_m, planet_mass_kg, star_mass_kg):
    """Distance from the planet to its Lagrange point L1, a (Mp / 3 M*)^(1/3) (Hill approximation).

    As used for xi by Erkaev et al. 2007 (A&A 472, 329).

    Returns
    -------
    ndarray
        Radius [m] (the unit of ``a_m``).
    """
    return a_m * (planet_mass_kg / (3.0 * star_mass_kg)) ** (1.0 / 3.0)


def energy_limited_escape_rate(efficiency, xuv_flux_w_m2, radius_m, planet_mass_kg, roche_factor):
    """Energy-limited mass-loss rate of an atmosphere heated by XUV light.

    dM/dt = epsilon pi Rp^3 F_XUV / (G Mp K) (Watson, Donahue & Walker 1981;
    Erkaev et al. 2007, A&A 472, 329, eq. 20, with the XUV absorbed at the
    planet's radius). NaN where K <= 0 (the planet fills its Roche lobe).

    Parameters
    ----------
    efficiency : array_like
        Heating efficiency epsilon (fraction of the XUV energy that drives escape).
    xuv_flux_w_m2 : array_like
        XUV flux at the planet [W m^-2].
    radius_m : array_like
        Planet radius [m].
    planet_mass_kg : array_like
        Planet mass [kg].
    roche_factor : array_like
        K of :func:`roche_lobe_factor`.

    Returns
    -------
    ndarray
        Mass-loss rate [kg s^-1].
    """
    k = np.where(roche_factor > 0.0, roche_factor, np.nan)
    return efficiency * np.pi * radius_m**3 * xuv_flux_w_m2 / (G * planet_mass_kg * k)


def xuv_flux_at_planet(insolation_earth, xuv_fraction):
    """XUV flux at a planet [W m^-2]: the stated fraction L_XUV / L_bol of the bolometric insolation.

    F_XUV = f_XUV S (S in S_earth times the solar constant from astropy's
    nominal solar luminosity). An assumption, not a measurement.
    """
    return np.asarray(xuv_fraction) * np.asarray(insolation_earth) * SOLAR_CONSTANT


def scale_height(temperature_k, mean_molecular_weight, gravity_ms2):
    """Pressure scale height of an isothermal atmosphere, H = k T / (mu m_u g) (definition).

    Parameters
    ----------
    temperature_k : array_like
        Temperature [K].
    mean_molecular_weight : array_like
        Mean molecular weight mu [u].
    gravity_ms2 : array_like
        Gravitational acceleration [m s^-2].

    Returns
    -------
    ndarray
        H [m].
    """
    return K_BOLTZMANN * temperature_k / (mean_molecular_weight * ATOMIC_MASS_UNIT * gravity_ms2)


def transmission_signal(scale_height_m, radius_m, star_radius_m):
    """Change of transit depth over one scale height of atmosphere, 2 H Rp / R*^2.

    The area of an annulus of width H around the planet's disc over the
    star's disc (e.g. Kempton et al. 2018, PASP 130, 114401, Sect. 3).

    Returns
    -------
    ndarray
        Fraction of the stellar flux (1e-6 is one ppm).
    """
    return 2.0 * scale_height_m * radius_m / star_radius_m**2


def dayside_temperature_bare_rock(teff_k, star_radius_m, a_m, bond_albedo):
    """Dayside temperature of a bare rock that re-radiates where it absorbs, with no transport.

    T_day = Teff sqrt(R* / a) (1 - A)^(1/4) (2/3)^(1/4) (Cowan & Agol 2011,
    ApJ 729, 54, eq. 4 with no heat recirculation; Koll et al. 2019, ApJ
    886, 140, the bare-rock limit).

    Returns
    -------
    ndarray
        Temperature [K].
    """
    return teff_k * np.sqrt(star_radius_m / a_m) * ((1.0 - bond_albedo) * 2.0 / 3.0) ** 0.25


def planck_radiance(wavelength_m, temperature_k):
    """Spectral radiance of a black body per unit wavelength, B_lambda (Planck's law).

    B = 2 h c^2 / lambda^5 / (exp(h c / (lambda k T)) - 1).

    Returns
    -------
    ndarray
        B_lambda [W m^-2 m^-1 sr^-1].
    """
    x = H_PLANCK * C_LIGHT / (wavelength_m * K_BOLTZMANN * temperature_k)
    return 2.0 * H_PLANCK * C_LIGHT**2 / wavelength_m**5 / np.expm1(x)


def eclipse_depth(radius_ratio, wavelength_m, planet_temperature_k, star_temperature_k):
    """Secondary-eclipse depth of thermal emission, (Rp/R*)^2 B(lambda, Tp) / B(lambda, T*).

    Both bodies as black bodies (Cowan & Agol 2011, ApJ 729, 54; Koll et al.
    2019, ApJ 886, 140), reflected light left out.

    Returns
    -------
    ndarray
        Fraction of the stellar flux (1e-6 is one ppm).
    """
    return (radius_ratio**2 * planck_radiance(wavelength_m, planet_temperature_k)
            / planck_radiance(wavelength_m, star_temperature_k))


def transits_needed(feature_ppm, precision_ppm, significance=3.0):
    """Transits to observe before a spectral feature stands ``significance`` times above the noise.

    The noise of n co-added transits is sigma_1 / sqrt(n) (photon noise,
    independent transits: common practice), so n = ceil((significance
    sigma_1 / feature)^2), at least 1. A feature of N scale heights has
    ``feature_ppm`` = N times :func:`transmission_signal` in ppm.

    Parameters
    ----------
    feature_ppm : array_like
        Size of the feature [ppm].
    precision_ppm : array_like
        Noise of one transit's measurement of it [ppm].
    significance : float
        Wanted ratio of feature to noise.

    Returns
    -------
    ndarray
        Number of transits (float; inf for a feature of zero size, NaN where unknown).
    """
    feature = np.asarray(feature_ppm, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        count = np.ceil((significance * np.asarray(precision_ppm, dtype=float) / feature) ** 2)
    return np.where(np.isnan(count), np.nan, np.maximum(count, 1.0))
