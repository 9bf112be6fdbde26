"""Tidal heating of planets on eccentric orbits, for a constant modified tidal quality factor Q'.

A planet in synchronous rotation on an eccentric orbit is flexed once per
orbit; the energy dissipated inside it, for a constant Q' (a constant time
lag would give another law), follows Peale & Cassen 1978 (Icarus 36, 245)
as written by Jackson, Greenberg & Barnes 2008 (ApJ 681, 1631). Q' = 3 Q /
(2 k2) folds the Love number k2 and the quality factor Q into one number:
k2 / Q = 0.015 (Io, Lainey et al. 2009) is Q' = 100. The results are model
estimates: Q' of an exoplanet is unknown by orders of magnitude.
"""

from __future__ import annotations

import numpy as np

from ..constants import G

#: Earth's mean surface heat flow [W m^-2]: about 47 TW over 5.1e14 m^2 (Davies & Davies 2010,
#: Solid Earth 1, 5; from memory), for comparison
EARTH_HEAT_FLUX = 0.092
#: Io's mean surface heat flow [W m^-2]: about 2.5 W m^-2 from its infrared emission (Veeder et al.
#: 1994, JGR 99, 17095; from memory), for comparison
IO_HEAT_FLUX = 2.5


def q_prime_from_love_number(k2_over_q):
    """Modified tidal quality factor Q' = 3 Q / (2 k2) from k2 / Q (Goldreich & Soter 1966 convention).

    Parameters
    ----------
    k2_over_q : array_like
        Ratio of the Love number k2 to the quality factor Q.

    Returns
    -------
    ndarray
        Q', dimensionless.
    """
    return 1.5 / np.asarray(k2_over_q)


def tidal_heating_rate(star_mass_kg, radius_m, a_m, eccentricity, q_prime):
    """Tidal power dissipated in a synchronously rotating planet on an eccentric orbit.

    H = (63/4) (G M*)^(3/2) M* Rp^5 a^(-15/2) e^2 / Q' (Peale & Cassen
    1978; Jackson, Greenberg & Barnes 2008, ApJ 681, 1631, their tidal
    heating rate of a planet), to second order in e. Equivalent to
    (21/2) (k2 / Q) G M*^2 Rp^5 n e^2 / a^6 with n the mean motion.

    Parameters
    ----------
    star_mass_kg : array_like
        Mass of the body raising the tide (the star) [kg].
    radius_m : array_like
        Planet radius [m].
    a_m : array_like
        Semi-major axis [m].
    eccentricity : array_like
        Orbital eccentricity.
    q_prime : array_like
        Modified tidal quality factor Q' of the planet.

    Returns
    -------
    ndarray
        Heating rate [W].
    """
    return (63.0 / 4.0 * (G * star_mass_kg) ** 1.5 * star_mass_kg * radius_m**5 * a_m**-7.5
            * eccentricity**2 / q_prime)


def surface_heat_flux(heating_w, radius_m):
    """Mean heat flux through the surface, H / (4 pi Rp^2) (definition).

    Parameters
    ----------
    heating_w : array_like
        Power [W].
    radius_m : array_like
        Planet radius [m].

    Returns
    -------
    ndarray
        Heat flux [W m^-2].
    """
    return heating_w / (4.0 * np.pi * radius_m**2)
