"""Stellar luminosity, insolation, equilibrium temperature and habitable zone."""

from __future__ import annotations

import numpy as np

from ..constants import AU, L_SUN, SIGMA_SB

#: Kopparapu et al. 2014 (ApJL 787, L29), Table 1: S_eff,sun, a, b, c, d of
#: S_eff = S_eff,sun + a T + b T^2 + c T^3 + d T^4, T = Teff - 5780 K.
#: The runaway greenhouse row is the one for a 1 Earth-mass planet.
HZ_LIMITS = ("recent_venus", "runaway_greenhouse", "maximum_greenhouse", "early_mars")
HZ_COEFFICIENTS = np.array([
    [1.776, 2.136e-4, 2.533e-8, -1.332e-11, -3.097e-15],   # recent Venus
    [1.107, 1.332e-4, 1.580e-8, -8.308e-12, -1.931e-15],   # runaway greenhouse, 1 Mearth
    [0.356, 6.171e-5, 1.698e-9, -3.198e-12, -5.575e-16],   # maximum greenhouse
    [0.320, 5.547e-5, 1.526e-9, -2.874e-12, -5.011e-16],   # early Mars
])
#: Teff range over which Kopparapu et al. 2014 state their fit valid [K]
HZ_TEFF_RANGE = (2600.0, 7200.0)
#: coolest Teff to which the fit is extrapolated, flagged as such, for ultracool dwarfs [K]; below,
#: no habitable zone is given (the polynomial was never meant for brown dwarfs or planets as hosts)
HZ_EXTRAPOLATED_MIN_TEFF = 1000.0
HZ_REGIONS = ("too hot", "optimistic inner", "conservative", "optimistic outer", "too cold")


def luminosity_from_radius_teff(radius_m, teff_k):
    """Bolometric luminosity of a black-body sphere.

    L = 4 pi R^2 sigma_SB Teff^4 (Stefan-Boltzmann law).

    Parameters
    ----------
    radius_m : array_like
        Stellar radius [m].
    teff_k : array_like
        Effective temperature [K].

    Returns
    -------
    ndarray
        Luminosity [W].
    """
    return 4.0 * np.pi * np.asarray(radius_m) ** 2 * SIGMA_SB * np.asarray(teff_k) ** 4


def insolation(luminosity_lsun, a_au, eccentricity):
    """Orbit-averaged bolometric insolation relative to Earth's.

    S / S_earth = (L / L_sun) / (a / au)^2 / sqrt(1 - e^2); the factor
    1/sqrt(1-e^2) is the time average of 1/r^2 over a Keplerian orbit
    (Williams & Pollard 2002; Méndez & Rivera-Valentín 2017).

    Parameters
    ----------
    luminosity_lsun : array_like
        Stellar luminosity [L_sun].
    a_au : array_like
        Semi-major axis [au].
    eccentricity : array_like
        Orbital eccentricity.

    Returns
    -------
    ndarray
        Insolation [S_earth].
    """
    return luminosity_lsun / a_au**2 / np.sqrt(1.0 - eccentricity**2)


#: the Sun's flux at 1 au [W m^-2], for insolations given in units of Earth's
SOLAR_FLUX_AT_1AU = L_SUN / (4.0 * np.pi * AU**2)


def equilibrium_temperature(insolation_earth, bond_albedo, redistribution):
    """Planetary equilibrium temperature from the flux the planet receives.

    Teq = [f (1 - A) F / sigma]^(1/4), F the bolometric flux at the planet,
    with f = 1/4 for full redistribution, 1/2 for dayside-only and 2/3 for
    none (instant re-radiation); e.g. Cowan & Agol 2011, eq. 4. For a
    circular orbit and L = 4 pi R*^2 sigma Teff^4 this is the familiar
    Teff sqrt(R*/a) [f (1 - A)]^(1/4). Fed the orbit-averaged flux
    L / (4 pi a^2 sqrt(1 - e^2)) it is the temperature of the time-averaged
    absorbed power, the convention discussed by Méndez & Rivera-Valentín
    2017 (ApJL 837, L1). A model estimate: no greenhouse effect, no internal
    heat.

    Parameters
    ----------
    insolation_earth : array_like
        Flux received (orbit-averaged) [S_earth: the Sun's flux at 1 au].
    bond_albedo : array_like
        Bond albedo A, 0 <= A < 1.
    redistribution : array_like
        Heat-redistribution factor f.

    Returns
    -------
    ndarray
        Equilibrium temperature [K].
    """
    flux = np.asarray(insolation_earth) * SOLAR_FLUX_AT_1AU
    return (redistribution * (1.0 - bond_albedo) * flux / SIGMA_SB) ** 0.25


def effective_flux_polynomial(teff_k, coefficients):
    """S_eff = S_eff,sun + a T + b T^2 + c T^3 + d T^4 with T = Teff - 5780 K (Kopparapu et al. 2014, eq. 4).

    Evaluated by Horner's rule, S_eff,sun + T (a + T (b + T (c + T d))):
    numpy raises a negative T (every M dwarf) to the third and fourth
    powers about a hundred times slower than it multiplies.

    Parameters
    ----------
    teff_k : array_like
        Stellar effective temperature [K], any shape.
    coefficients : array_like
        Rows (S_eff,sun, a, b, c, d) of Kopparapu et al. 2014, Table 1.

    Returns
    -------
    ndarray
        S_eff [S_earth], shape ``teff_k.shape + (rows,)``.
    """
    t = np.asarray(teff_k, dtype=float) - 5780.0
    return np.stack([s_sun + t * (a + t * (b + t * (c + t * d))) for s_sun, a, b, c, d in coefficients], axis=-1)


def hz_effective_flux(teff_k):
    """Effective stellar flux at the four habitable-zone limits.

    S_eff = S_eff,sun + a T + b T^2 + c T^3 + d T^4 with T = Teff - 5780 K
    (Kopparapu et al. 2014, ApJL 787, L29, eq. 4 and Table 1). Valid for
    2600 K <= Teff <= 7200 K; the caller checks the range and flags an
    extrapolation.

    Parameters
    ----------
    teff_k : array_like
        Stellar effective temperature [K], any shape.

    Returns
    -------
    ndarray
        S_eff [S_earth], shape ``teff_k.shape + (4,)``, ordered recent Venus,
        runaway greenhouse (1 Mearth), maximum greenhouse, early Mars.
    """
    return effective_flux_polynomial(teff_k, HZ_COEFFICIENTS)


def hz_distance(luminosity_lsun, effective_flux):
    """Distance at which a star delivers a given flux.

    d = sqrt((L / L_sun) / S_eff) au (Kopparapu et al. 2013, eq. 3).

    Parameters
    ----------
    luminosity_lsun : array_like
        Stellar luminosity [L_sun].
    effective_flux : array_like
        S_eff [S_earth].

    Returns
    -------
    ndarray
        Distance [au].
    """
    return np.sqrt(luminosity_lsun / effective_flux)


def hz_region_index(insolation_earth, limit_fluxes):
    """Index into :data:`HZ_REGIONS` of each planet's place in the HZ.

    Compares the orbit-averaged insolation with the four limit fluxes
    (decreasing from recent Venus to early Mars): more than recent Venus is
    "too hot", between recent Venus and runaway greenhouse "optimistic
    inner", between runaway and maximum greenhouse "conservative", between
    maximum greenhouse and early Mars "optimistic outer", below early Mars
    "too cold" (Kopparapu et al. 2013, 2014 definitions).

    Parameters
    ----------
    insolation_earth : array_like
        Insolation [S_earth], shape (..., planets).
    limit_fluxes : array_like
        S_eff at the four limits, shape (..., 4), broadcast against planets.

    Returns
    -------
    ndarray of int
        0 ... 4, same shape as ``insolation_earth``.
    """
    insolation, limits = np.asarray(insolation_earth), np.asarray(limit_fluxes)
    # the limits passed: one limit at a time against every planet (no (limits, draws, planets) array)
    return sum(insolation <= limits[..., k, None] for k in range(limits.shape[-1]))


#: Kopparapu et al. 2014 (ApJL 787, L29), Table 1: the runaway-greenhouse rows for planets of
#: 0.1, 1 and 5 Earth masses (S_eff,sun, a, b, c, d as above)
RUNAWAY_MASSES_MEARTH = (0.1, 1.0, 5.0)
RUNAWAY_COEFFICIENTS = np.array([
    [0.990, 1.209e-4, 1.404e-8, -7.418e-12, -1.713e-15],   # 0.1 Mearth
    [1.107, 1.332e-4, 1.580e-8, -8.308e-12, -1.931e-15],   # 1 Mearth
    [1.188, 1.433e-4, 1.707e-8, -8.968e-12, -2.084e-15],   # 5 Mearth
])


def runaway_greenhouse_flux(teff_k, mass_mearth):
    """Runaway-greenhouse effective flux for a planet's own mass.

    The Kopparapu et al. 2014 (ApJL 787, L29, eq. 4 and Table 1) limits for
    0.1, 1 and 5 Earth masses at the star's Teff, interpolated linearly in
    log10 mass; a mass outside 0.1-5 Mearth takes the nearest published
    limit (the caller flags it, see :func:`runaway_greenhouse_mass_clamped`).
    NaN outside 2600-7200 K, where the polynomial is not valid.

    Parameters
    ----------
    teff_k : array_like
        Stellar effective temperature [K], broadcast against ``mass_mearth``.
    mass_mearth : array_like
        Planet mass [Mearth].

    Returns
    -------
    ndarray
        S_eff [S_earth].
    """
    teff = np.asarray(teff_k, dtype=float)
    limits = np.moveaxis(effective_flux_polynomial(teff, RUNAWAY_COEFFICIENTS), -1, 0)   # 0.1, 1 and 5 Mearth
    x = np.log10(np.clip(mass_mearth, *RUNAWAY_MASSES_MEARTH[::2]))
    low_mass = x < 0.0
    step = np.where(low_mass, (x + 1.0) / 1.0, x / np.log10(5.0))
    flux = np.where(low_mass, limits[0] + step * (limits[1] - limits[0]), limits[1] + step * (limits[2] - limits[1]))
    valid = (teff >= HZ_TEFF_RANGE[0]) & (teff <= HZ_TEFF_RANGE[1])
    return np.where(valid, flux, np.nan)


def runaway_greenhouse_mass_clamped(mass_mearth):
    """Whether a mass lies outside 0.1-5 Mearth, where Kopparapu et al. 2014 give no runaway limit."""
    m = np.asarray(mass_mearth)
    return (m < RUNAWAY_MASSES_MEARTH[0]) | (m > RUNAWAY_MASSES_MEARTH[-1])
