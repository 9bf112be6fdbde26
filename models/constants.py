"""Physical constants as plain SI floats, taken once from astropy.

astropy.constants carries the IAU 2015 nominal solar and planetary values
(Prsa et al. 2016) and CODATA 2018; nothing here is retyped by hand except
the lunar reference values, whose sources are given beside them.
"""

import astropy.constants as const
import astropy.units as u
import numpy as np

G = const.G.si.value                      # m^3 kg^-1 s^-2
SIGMA_SB = const.sigma_sb.si.value        # W m^-2 K^-4
H_PLANCK = const.h.si.value               # J s
C_LIGHT = const.c.si.value                # m s^-1
K_BOLTZMANN = const.k_B.si.value          # J K^-1

M_SUN = const.M_sun.si.value              # kg, IAU 2015 nominal (via GM_sun / G)
R_SUN = const.R_sun.si.value              # m, IAU 2015 nominal
L_SUN = const.L_sun.si.value              # W, IAU 2015 nominal
M_EARTH = const.M_earth.si.value          # kg
R_EARTH = const.R_earth.si.value          # m, IAU 2015 nominal equatorial
M_JUP = const.M_jup.si.value              # kg
R_JUP = const.R_jup.si.value              # m
AU = const.au.si.value                    # m
PC = const.pc.si.value                    # m
DAY = u.day.to(u.s)                       # s
HOUR = u.hour.to(u.s)                     # s
YEAR = u.year.to(u.s)                     # s (Julian year)
GYR = 1e9 * YEAR                          # s

#: Mean radius of the Moon [m]: IAU WGCCRE 2015 report (Archinal et al. 2018), 1737.4 km.
R_MOON = 1737.4e3
#: Mean Earth-Moon distance [m]: NASA Moon fact sheet semi-major axis, 384,400 km.
D_MOON = 384_400e3
#: Apparent diameter of the Moon seen from Earth at mean distance [rad], about 0.518 deg.
MOON_ANGULAR_DIAMETER = 2.0 * np.arcsin(R_MOON / D_MOON)

RAD_TO_ARCSEC = (1.0 * u.rad).to_value(u.arcsec)
