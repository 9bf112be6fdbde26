"""Bulk properties: density, gravity, escape speed, and mass from radius."""

from __future__ import annotations

import numpy as np

from ..constants import G, M_EARTH, M_JUP

# Chen & Kipping 2017 (ApJ 834, 17), Table 1, mean posterior values:
# R = C M^S piecewise in Earth units, continuous at the transitions.
_TERRAN_C, _TERRAN_S = 1.008, 0.2790
_NEPTUNIAN_S = 0.589
_TERRAN_TO_NEPTUNIAN_MEARTH = 2.04
_NEPTUNIAN_TO_JOVIAN_MEARTH = 0.414 * M_JUP / M_EARTH
_R_TERRAN_MAX = _TERRAN_C * _TERRAN_TO_NEPTUNIAN_MEARTH**_TERRAN_S
_NEPTUNIAN_C = _R_TERRAN_MAX / _TERRAN_TO_NEPTUNIAN_MEARTH**_NEPTUNIAN_S
#: largest radius [Rearth] for which the relation can be inverted uniquely
R_NEPTUNIAN_MAX = _NEPTUNIAN_C * _NEPTUNIAN_TO_JOVIAN_MEARTH**_NEPTUNIAN_S
# Chen & Kipping 2017, Table 1: intrinsic scatter sigma_R of each branch, the standard deviation of
# log10(R) at fixed mass (their model draws log10 R from a normal about C + S log10 M)
TERRAN_SCATTER_LOG_R = 0.0403
NEPTUNIAN_SCATTER_LOG_R = 0.146


def mass_from_radius(radius_rearth):
    """Deterministic mass estimate from radius (Chen & Kipping 2017).

    Inverts the mean power laws R = C M^S of Chen & Kipping 2017 (ApJ 834,
    17, Table 1): Terran worlds (M < 2.04 Mearth) R = 1.008 M^0.279,
    Neptunian worlds (up to 0.414 Mjup) S = 0.589. Above the Neptunian
    maximum radius (about 14 Rearth) the Jovian branch is nearly flat
    (S = -0.044) and cannot be inverted; the estimate there is the
    Neptunian-Jovian transition mass (0.414 Mjup), a placeholder the caller
    flags. Any such mass is a model estimate, not a measurement.

    Parameters
    ----------
    radius_rearth : array_like
        Planet radius [Rearth].

    Returns
    -------
    ndarray
        Estimated mass [Mearth].
    """
    r = np.asarray(radius_rearth)
    terran = (r / _TERRAN_C) ** (1.0 / _TERRAN_S)
    neptunian = (np.minimum(r, R_NEPTUNIAN_MAX) / _NEPTUNIAN_C) ** (1.0 / _NEPTUNIAN_S)
    return np.where(r < _R_TERRAN_MAX, terran, neptunian)


def radius_scatter_log10(radius_rearth):
    """Intrinsic scatter of the Chen & Kipping 2017 relation at a radius, in log10 R.

    sigma_R of Chen & Kipping 2017 (ApJ 834, 17, Table 1) for the branch
    the mean relation puts ``radius_rearth`` on: 0.0403 (Terran), 0.146
    (Neptunian); 0 in the giant regime, where the estimate is a flagged
    placeholder. The equivalent scatter of log10 M at fixed radius is
    sigma_R / S: about 0.14 dex (Terran) and 0.25 dex (Neptunian).

    Parameters
    ----------
    radius_rearth : array_like
        Planet radius [Rearth].

    Returns
    -------
    ndarray
        Standard deviation of log10(R / Rearth) at fixed mass.
    """
    r = np.asarray(radius_rearth)
    return np.where(r < _R_TERRAN_MAX, TERRAN_SCATTER_LOG_R,
                    np.where(r < R_NEPTUNIAN_MAX, NEPTUNIAN_SCATTER_LOG_R, 0.0))


def mass_from_radius_with_scatter(radius_rearth, z):
    """A draw of the mass of a planet of given radius, the relation's intrinsic scatter included.

    Chen & Kipping 2017 (ApJ 834, 17) model log10 R at fixed mass as a
    normal of width sigma_R about the mean power law. The draw takes the
    offset of the planet from the mean law in log R, z sigma_R, and
    inverts the mean law at R / 10^(z sigma_R): log10 M moves by
    -z sigma_R / S, the same scatter expressed in mass. z = 0 gives
    :func:`mass_from_radius`. A model estimate, not a measurement.

    Parameters
    ----------
    radius_rearth : array_like
        Planet radius [Rearth].
    z : array_like
        Unit normal deviates, one per planet and draw.

    Returns
    -------
    ndarray
        Mass [Mearth].
    """
    r = np.asarray(radius_rearth)
    return mass_from_radius(r / 10.0 ** (np.asarray(z) * radius_scatter_log10(r)))


def bulk_density(mass_kg, radius_m):
    """Mean density rho = M / (4/3 pi R^3) (definition).

    Parameters
    ----------
    mass_kg, radius_m : array_like
        Mass [kg] and radius [m].

    Returns
    -------
    ndarray
        Density [kg m^-3].
    """
    return mass_kg / (4.0 / 3.0 * np.pi * radius_m**3)


def surface_gravity(mass_kg, radius_m):
    """Surface gravitational acceleration g = G M / R^2 (Newton).

    Returns
    -------
    ndarray
        g [m s^-2].
    """
    return G * mass_kg / radius_m**2


def escape_speed(mass_kg, radius_m):
    """Escape speed from the surface, v = sqrt(2 G M / R) (energy conservation).

    Returns
    -------
    ndarray
        v_esc [m s^-1].
    """
    return np.sqrt(2.0 * G * mass_kg / radius_m)

