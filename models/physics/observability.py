"""Transit geometry, radial-velocity signal and atmospheric-characterisation metrics."""

from __future__ import annotations

import numpy as np

from ..constants import C_LIGHT, G, H_PLANCK, K_BOLTZMANN

# Kempton et al. 2018 (PASP 130, 114401), Table 1: TSM scale factors by radius bin [Rearth]
TSM_RADIUS_EDGES = np.array([0.0, 1.5, 2.75, 4.0, 10.0])
TSM_SCALE_FACTORS = np.array([0.190, 1.26, 1.28, 1.15])
#: Kempton et al. 2018 (PASP 130, 114401): the TSM thresholds they suggest for follow-up, below and above
#: 1.5 Rearth (to 10 Rearth, the metric's range)
TSM_FOLLOW_UP_EDGES = np.array([0.0, 1.5, 10.0])
TSM_FOLLOW_UP_THRESHOLDS = np.array([10.0, 90.0])
#: ESM wavelength [m] and normalisation (Kempton et al. 2018, eq. 4)
ESM_WAVELENGTH = 7.5e-6
ESM_SCALE = 4.29e6
#: dayside temperature over Teq assumed by the ESM (Kempton et al. 2018)
ESM_DAYSIDE_FACTOR = 1.10


def transit_probability(star_radius, planet_radius, a, eccentricity, omega):
    """Geometric transit probability, grazing transits included.

    p = ((R* + Rp) / a) (1 + e sin omega) / (1 - e^2) (Winn 2010, eq. 9).

    Parameters
    ----------
    star_radius, planet_radius, a : array_like
        Lengths in one common unit.
    eccentricity : array_like
    omega : array_like
        Argument of periastron [rad].
    """
    return (star_radius + planet_radius) / a * (1.0 + eccentricity * np.sin(omega)) / (1.0 - eccentricity**2)


def transit_depth(planet_radius, star_radius):
    """Transit depth (Rp / R*)^2, ignoring limb darkening (Winn 2010, eq. 1)."""
    return (planet_radius / star_radius) ** 2


def impact_parameter(a, inclination, star_radius, eccentricity, omega):
    """Impact parameter of the transit.

    b = (a |cos i| / R*) (1 - e^2) / (1 + e sin omega) (Winn 2010, eq. 7;
    reported >= 0 whichever side of 90 deg the inclination lies, as usual).

    Parameters
    ----------
    a, star_radius : array_like
        Lengths in one common unit.
    inclination, omega : array_like
        Inclination and argument of periastron [rad].
    eccentricity : array_like
    """
    return a * np.abs(np.cos(inclination)) / star_radius * (1.0 - eccentricity**2) / (1.0 + eccentricity * np.sin(omega))


def transit_duration_total(period, a, star_radius, planet_radius, inclination, b, eccentricity, omega):
    """Total transit duration T14, first to fourth contact.

    T14 = (P / pi) arcsin[(R*/a) sqrt((1 + k)^2 - b^2) / sin i]
          x sqrt(1 - e^2) / (1 + e sin omega)
    with k = Rp / R* (Winn 2010, eqs. 14 and 16). NaN where the planet does
    not transit ((1 + k)^2 < b^2).

    Parameters
    ----------
    period : array_like
        Orbital period (the result takes its unit).
    a, star_radius, planet_radius : array_like
        Lengths in one common unit.
    inclination, omega : array_like
        [rad].
    b, eccentricity : array_like
        Impact parameter and eccentricity.
    """
    k = planet_radius / star_radius
    chord2 = np.asarray((1.0 + k) ** 2 - b**2)
    chord2[chord2 <= 0.0] = np.nan   # no transit
    with np.errstate(invalid="ignore", divide="ignore"):
        argument = star_radius / a * np.sqrt(chord2) / np.sin(inclination)
        t14 = period / np.pi * np.arcsin(np.minimum(argument, 1.0))
    return t14 * np.sqrt(1.0 - eccentricity**2) / (1.0 + eccentricity * np.sin(omega))


def rv_semi_amplitude(period_s, planet_mass_kg, star_mass_kg, inclination, eccentricity):
    """Radial-velocity semi-amplitude of the star.

    K = (2 pi G / P)^(1/3) Mp sin i / (M* + Mp)^(2/3) / sqrt(1 - e^2)
    (the two-body formula; e.g. Lovis & Fischer 2010, eq. 14).

    Parameters
    ----------
    period_s : array_like
        Period [s].
    planet_mass_kg, star_mass_kg : array_like
        [kg].
    inclination : array_like
        [rad].
    eccentricity : array_like

    Returns
    -------
    ndarray
        K [m s^-1].
    """
    return ((2.0 * np.pi * G / period_s) ** (1.0 / 3.0) * planet_mass_kg * np.sin(inclination)
            / (star_mass_kg + planet_mass_kg) ** (2.0 / 3.0) / np.sqrt(1.0 - eccentricity**2))


def tsm_scale_factor(radius_rearth):
    """Kempton et al. 2018 TSM scale factor for each radius; NaN beyond 10 Rearth."""
    r = np.asarray(radius_rearth)
    index = np.clip(np.searchsorted(TSM_RADIUS_EDGES, r, side="right") - 1, 0, len(TSM_SCALE_FACTORS) - 1)
    return np.where(r < TSM_RADIUS_EDGES[-1], TSM_SCALE_FACTORS[index], np.nan)


def tsm_follow_up_threshold(radius_rearth):
    """The TSM above which Kempton et al. 2018 suggest a planet for follow-up.

    TSM > 10 for Rp < 1.5 Rearth and TSM > 90 for 1.5 <= Rp < 10 Rearth: the
    thresholds Kempton et al. 2018 (PASP 130, 114401) suggest for selecting
    targets for follow-up. NaN from 10 Rearth, where the metric is not
    defined.

    Parameters
    ----------
    radius_rearth : array_like
        Planet radius [Rearth].

    Returns
    -------
    ndarray
        The threshold (dimensionless, like the TSM).
    """
    r = np.asarray(radius_rearth, dtype=float)
    index = np.clip(np.searchsorted(TSM_FOLLOW_UP_EDGES, r, side="right") - 1, 0, len(TSM_FOLLOW_UP_THRESHOLDS) - 1)
    return np.where((r >= 0.0) & (r < TSM_FOLLOW_UP_EDGES[-1]), TSM_FOLLOW_UP_THRESHOLDS[index], np.nan)


def transmission_spectroscopy_metric(radius_rearth, mass_mearth, star_radius_rsun, teq_k, j_mag):
    """Transmission spectroscopy metric.

    TSM = scale x Rp^3 Teq / (Mp R*^2) x 10^(-mJ / 5) (Kempton et al. 2018,
    PASP 130, 114401, eq. 1), Rp and Mp in Earth units, R* in solar radii,
    Teq for zero albedo and full redistribution. Defined for Rp < 10 Rearth;
    NaN beyond, and wherever mJ is NaN.
    """
    cube = radius_rearth * radius_rearth * radius_rearth   # not **3: a slow power loop
    return (tsm_scale_factor(radius_rearth) * cube * teq_k
            / (mass_mearth * star_radius_rsun**2) * 10.0 ** (-j_mag / 5.0))


def planck(wavelength_m, temperature_k):
    """Black-body spectral radiance B_lambda(T) (Planck's law) [W m^-3 sr^-1]."""
    x = H_PLANCK * C_LIGHT / (wavelength_m * K_BOLTZMANN * temperature_k)
    return 2.0 * H_PLANCK * C_LIGHT**2 / wavelength_m**5 / np.expm1(x)


def emission_spectroscopy_metric(radius_rearth, star_radius_rearth, teq_k, teff_k, k_mag):
    """Emission spectroscopy metric.

    ESM = 4.29e6 x B(7.5 um, Tday) / B(7.5 um, Teff) x (Rp / R*)^2 x 10^(-mK / 5),
    with Tday = 1.10 Teq for zero albedo and full redistribution
    (Kempton et al. 2018, eq. 4). NaN wherever mK is NaN. In single
    precision a day side colder than ~22 K (B overflows its denominator)
    gives 0, where the metric is below ~1e-30.

    Parameters
    ----------
    radius_rearth, star_radius_rearth : array_like
        Planet and star radius, both [Rearth].
    teq_k, teff_k : array_like
        [K].
    k_mag : array_like
        Apparent K magnitude.
    """
    with np.errstate(over="ignore"):
        ratio = planck(ESM_WAVELENGTH, ESM_DAYSIDE_FACTOR * teq_k) / planck(ESM_WAVELENGTH, teff_k)
    return ESM_SCALE * ratio * (radius_rearth / star_radius_rearth) ** 2 * 10.0 ** (-k_mag / 5.0)
