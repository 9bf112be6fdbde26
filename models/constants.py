"""Physical constants as plain SI floats, taken once from astropy.

astropy.constants carries the IAU 2015 nominal solar and planetary values
(Prsa et al. 2016) and CODATA 2018; nothing here is retyped by hand except
the lunar reference values, whose sources are given beside them.
"""

import astropy.constants as const
import astropy.units as u
import numpy as np

G = float(const.G.si.value)                      # m^3 kg^-1 s^-2
SIGMA_SB = float(const.sigma_sb.si.value)        # W m^-2 K^-4
H_PLANCK = float(const.h.si.value)               # J s
C_LIGHT = float(const.c.si.value)                # m s^-1
K_BOLTZMANN = float(const.k_B.si.value)          # J K^-1
ATOMIC_MASS_UNIT = float(const.u.si.value)       # kg

M_SUN = float(const.M_sun.si.value)              # kg, IAU 2015 nominal (via GM_sun / G)
R_SUN = float(const.R_sun.si.value)              # m, IAU 2015 nominal
L_SUN = float(const.L_sun.si.value)              # W, IAU 2015 nominal
M_EARTH = float(const.M_earth.si.value)          # kg
R_EARTH = float(const.R_earth.si.value)          # m, IAU 2015 nominal equatorial
M_JUP = float(const.M_jup.si.value)              # kg
R_JUP = float(const.R_jup.si.value)              # m
AU = float(const.au.si.value)                    # m
#: bolometric flux of the Sun at 1 au [W m^-2], from the IAU 2015 nominal luminosity
SOLAR_CONSTANT = L_SUN / (4.0 * np.pi * AU**2)
PC = float(const.pc.si.value)                    # m
DAY = u.day.to(u.s)                              # s
HOUR = u.hour.to(u.s)                            # s
MINUTE = u.min.to(u.s)                           # s
YEAR = u.year.to(u.s)                            # s (Julian year)
GYR = 1e9 * YEAR                                 # s

#: Mean radius of the Moon [m]: IAU WGCCRE 2015 report (Archinal et al. 2018), 1737.4 km.
R_MOON = 1737.4e3
#: Mean Earth-Moon distance [m]: NASA Moon fact sheet semi-major axis, 384,400 km.
D_MOON = 384_400e3
#: Apparent diameter of the Moon seen from Earth at mean distance [rad], about 0.518 deg.
MOON_ANGULAR_DIAMETER = float(2.0 * np.arcsin(R_MOON / D_MOON))

RAD_TO_ARCSEC = float((1.0 * u.rad).to_value(u.arcsec))


#: G M_sun in au^3 / d^2 and the Earth-to-Sun mass ratio, for integrations in au and days
GM_SUN_AU3_D2 = float((const.G * const.M_sun).to_value(u.au**3 / u.day**2))
EARTH_TO_SUN_MASS = float((const.M_earth / const.M_sun).decompose())
