"""What the planets are made of: iron core, rock, water and hydrogen-helium envelopes.

Three published models, each applied only where it was made for, NaN elsewhere:

* the core mass fraction of a two-layer (iron core, rock mantle) planet from
  its mass and radius, Zeng, Sasselov & Jacobsen 2016 (ApJ 819, 127);
* the water mass fraction of a planet less dense than pure rock, from the
  water-planet curves tabulated in the same paper (Table 2);
* the hydrogen-helium envelope mass fraction of a sub-Neptune, from the
  envelope-radius fit of Lopez & Fortney 2014 (ApJ 792, 1).

All three are model estimates: a planet's mass and radius allow many
interiors, and each model picks one family of them.
"""

from __future__ import annotations

import numpy as np

# Zeng, Sasselov & Jacobsen 2016 (ApJ 819, 127), Table 2 (the journal's machine-readable
# table): radius [Rearth] at each mass [Mearth] of planets of 100 %, 50 %, 30 %, 25 %, 20 %
# iron core by mass, of pure rock (no iron core), and of 25 %, 50 % and 100 % water.
ZENG2016_MASS = np.array([0.125, 0.25, 0.5, 1.0, 2.0, 4.0, 8.0, 16.0, 32.0])
ZENG2016_RADIUS = {
    "iron_100": np.array([0.445, 0.55, 0.676, 0.823, 0.99, 1.176, 1.38, 1.59, 1.82]),
    "iron_50": np.array([0.523, 0.645, 0.789, 0.961, 1.164, 1.4, 1.66, 1.94, 2.25]),
    "iron_30": np.array([0.547, 0.672, 0.823, 1.005, 1.22, 1.47, 1.75, 2.06, 2.38]),
    "iron_25": np.array([0.553, 0.679, 0.832, 1.016, 1.23, 1.49, 1.77, 2.08, 2.42]),
    "iron_20": np.array([0.558, 0.685, 0.84, 1.026, 1.25, 1.5, 1.79, 2.11, 2.45]),
    "rock": np.array([0.58, 0.711, 0.872, 1.067, 1.3, 1.57, 1.88, 2.22, 2.58]),
    "water_25": np.array([0.649, 0.793, 0.969, 1.182, 1.44, 1.74, 2.07, 2.45, 2.85]),
    "water_50": np.array([0.697, 0.851, 1.039, 1.27, 1.54, 1.85, 2.21, 2.61, 3.04]),
    "water_100": np.array([0.776, 0.952, 1.163, 1.41, 1.71, 2.05, 2.45, 2.9, 3.36]),
}
#: the curves drawn on a mass-radius diagram, with their labels
COMPOSITION_CURVES = {
    "iron_100": "pure iron", "iron_30": "Earth-like (30 % iron)", "rock": "pure rock",
    "water_50": "50 % water", "water_100": "pure water",
}
#: water mass fractions of the water curves, in order of increasing radius
_WATER_STEPS = (("rock", 0.0), ("water_25", 0.25), ("water_50", 0.5), ("water_100", 1.0))

#: Zeng et al. 2016 state their formula applicable for 1-8 Mearth and a core mass fraction of 0-0.4
CMF_MASS_RANGE = (1.0, 8.0)
CMF_RANGE = (0.0, 0.4)

#: Lopez & Fortney 2014: model grid 1-20 Mearth, envelope fractions 0.1-20 %, 0.1-1000 S_earth
ENVELOPE_MASS_RANGE = (1.0, 20.0)
ENVELOPE_FRACTION_RANGE = (0.001, 0.20)
ENVELOPE_INSOLATION_RANGE = (0.1, 1000.0)
#: age assumed for the envelope fit [Gyr]: the fit's own reference age (a field planet, old)
ENVELOPE_AGE_GYR = 5.0
#: the regula falsi stops once every misfit is below this (ln of a radius ratio, so the relative
#: error of f_env is about twice it)
_ROOT_TOLERANCE = 1e-14
#: steps after which it stops anyway (on the nearly linear misfit it needs five to eight)
_ROOT_STEPS = 40


def zeng2016_place(mass_mearth):
    """Where each mass falls among the Zeng et al. 2016 Table 2 masses, for :func:`zeng2016_radius`.

    Every curve of the table shares its masses, so one place serves them all.

    Returns
    -------
    below, fraction : ndarray
        Index of the tabulated mass at or below, and the fraction of the way
        in log mass to the next one (NaN outside 0.125-32 Mearth).
    """
    log_mass = np.log10(ZENG2016_MASS)
    with np.errstate(invalid="ignore", divide="ignore"):
        index = np.interp(np.log10(mass_mearth), log_mass, np.arange(log_mass.size), left=np.nan, right=np.nan)
    below = np.minimum(np.nan_to_num(index).astype(np.intp), log_mass.size - 2)
    return below, index - below


def zeng2016_radius(curve: str, mass_mearth=None, place=None):
    """Radius of a planet of ``mass_mearth`` on a Zeng et al. 2016 Table 2 curve.

    Interpolated linearly in log mass and log radius between the tabulated
    masses (0.125 to 32 Mearth); NaN outside them.

    Parameters
    ----------
    curve : str
        A key of :data:`ZENG2016_RADIUS` ("iron_100", "rock", "water_50" ...).
    mass_mearth : array_like
        Planet mass [Mearth].
    place : tuple, optional
        :func:`zeng2016_place` of the masses, when already known (then
        ``mass_mearth`` is not needed).

    Returns
    -------
    ndarray
        Radius [Rearth].
    """
    below, fraction = zeng2016_place(mass_mearth) if place is None else place
    log_r = np.log10(ZENG2016_RADIUS[curve])
    return 10.0 ** (log_r[below] + (log_r[below + 1] - log_r[below]) * fraction)


def composition_curves(points: int = 60) -> dict:
    """Mass-radius curves of pure iron, Earth-like, pure rock and water planets, for a diagram.

    From Zeng, Sasselov & Jacobsen 2016 (ApJ 819, 127), Table 2, on a grid
    of ``points`` masses from 0.125 to 32 Mearth (log-spaced).

    Returns
    -------
    dict
        label -> (mass [Mearth], radius [Rearth]) arrays.
    """
    mass = np.geomspace(ZENG2016_MASS[0], ZENG2016_MASS[-1], points)
    return {label: (mass, zeng2016_radius(curve, mass)) for curve, label in COMPOSITION_CURVES.items()}


def core_mass_fraction_unbounded(mass_mearth, radius_rearth):
    """The core mass fraction that the Zeng et al. 2016 formula gives, inside its range or not.

    Zeng, Sasselov & Jacobsen 2016 (ApJ 819, 127, their formula in the abstract):
    R / Rearth = (1.07 - 0.21 CMF) (M / Mearth)^(1/3.7), solved for CMF:
    CMF = (1.07 - R / M^(1/3.7)) / 0.21.

    Parameters
    ----------
    mass_mearth, radius_rearth : array_like
        Mass [Mearth] and radius [Rearth].

    Returns
    -------
    ndarray
        Core (iron) mass fraction, dimensionless.
    """
    return (1.07 - np.asarray(radius_rearth) / np.asarray(mass_mearth) ** (1.0 / 3.7)) / 0.21


def core_mass_fraction_applies(mass_mearth, radius_rearth):
    """Whether a planet lies where Zeng et al. 2016 state their formula applicable.

    1 <= M <= 8 Mearth and 0 <= CMF <= 0.4 (Zeng, Sasselov & Jacobsen 2016, abstract).

    Returns
    -------
    ndarray of bool
    """
    m = np.asarray(mass_mearth)
    cmf = core_mass_fraction_unbounded(m, radius_rearth)
    return ((m >= CMF_MASS_RANGE[0]) & (m <= CMF_MASS_RANGE[1])
            & (cmf >= CMF_RANGE[0]) & (cmf <= CMF_RANGE[1]))


def core_mass_fraction(mass_mearth, radius_rearth):
    """Core mass fraction of a rocky planet (Zeng, Sasselov & Jacobsen 2016); NaN outside its range.

    See :func:`core_mass_fraction_unbounded` for the formula and
    :func:`core_mass_fraction_applies` for the range. A model estimate for a
    two-layer planet (iron core, rock mantle) without water or gas.

    Parameters
    ----------
    mass_mearth, radius_rearth : array_like
        Mass [Mearth] and radius [Rearth].

    Returns
    -------
    ndarray
        Core mass fraction, NaN where the formula does not apply.
    """
    cmf = core_mass_fraction_unbounded(mass_mearth, radius_rearth)
    return np.where(core_mass_fraction_applies(mass_mearth, radius_rearth), cmf, np.nan)


def water_mass_fraction(mass_mearth, radius_rearth):
    """Water mass fraction of a planet larger than a pure-rock planet of its mass.

    The radius at the planet's mass on the Zeng, Sasselov & Jacobsen 2016
    (ApJ 819, 127) Table 2 curves of pure rock (0 %), 25 %, 50 % and 100 %
    water is found by log-log interpolation in mass; the water fraction is
    then interpolated linearly in radius between the two curves that
    bracket the planet. NaN where the planet is no larger than pure rock
    (it needs no water), larger than pure water (it needs gas), or outside
    the table's 0.125-32 Mearth. A model estimate: the same mass and radius
    also fit rock with a thin hydrogen envelope.

    Parameters
    ----------
    mass_mearth, radius_rearth : array_like
        Mass [Mearth] and radius [Rearth].

    Returns
    -------
    ndarray
        Water mass fraction, 0 < f <= 1, or NaN.
    """
    m, r = np.broadcast_arrays(np.asarray(mass_mearth, dtype=float), np.asarray(radius_rearth, dtype=float))
    result = np.full(m.shape, np.nan)
    place = zeng2016_place(m)
    rock = zeng2016_radius(_WATER_STEPS[0][0], place=place)
    wet = r > rock   # the water curves are read only for planets larger than pure rock
    r, place = r[wet], tuple(x[wet] for x in place)
    curves = [rock[wet]] + [zeng2016_radius(curve, place=place) for curve, _ in _WATER_STEPS[1:]]
    fractions = [fraction for _, fraction in _WATER_STEPS]
    water = np.full(r.shape, np.nan)
    for low, high, low_f, high_f in zip(curves[:-1], curves[1:], fractions[:-1], fractions[1:]):
        inside = (r > low) & (r <= high)
        water = np.where(inside, low_f + (high_f - low_f) * (r - low) / (high - low), water)
    result[wet] = water
    return result


def envelope_radius(mass_mearth, envelope_fraction, insolation_earth, age_gyr=ENVELOPE_AGE_GYR):
    """Thickness of a hydrogen-helium envelope (Lopez & Fortney 2014, solar metallicity).

    R_env = 2.06 Rearth (M / Mearth)^-0.21 (f_env / 5 %)^0.59
    (S / S_earth)^0.044 (age / 5 Gyr)^-0.11: the analytic fit of Lopez &
    Fortney 2014 (ApJ 792, 1) to their model grid, for solar-metallicity
    envelopes.

    Parameters
    ----------
    mass_mearth : array_like
        Total planet mass [Mearth].
    envelope_fraction : array_like
        Envelope mass fraction f_env (0.05 for 5 %).
    insolation_earth : array_like
        Insolation [S_earth].
    age_gyr : array_like
        Age [Gyr].

    Returns
    -------
    ndarray
        Envelope thickness [Rearth].
    """
    return (2.06 * mass_mearth ** -0.21 * (envelope_fraction / 0.05) ** 0.59 * insolation_earth ** 0.044
            * (age_gyr / 5.0) ** -0.11)


def rocky_core_radius(core_mass_mearth):
    """Radius of the Earth-like rock and iron core under the envelope, R = (M / Mearth)^0.25 Rearth.

    The core relation of Lopez & Fortney 2014 (ApJ 792, 1).
    """
    return np.asarray(core_mass_mearth) ** 0.25


def envelope_layers(mass_mearth, envelope_fraction, insolation_earth, age_gyr=ENVELOPE_AGE_GYR):
    """The two layers of a planet with a hydrogen-helium envelope (Lopez & Fortney 2014), in Rearth.

    R_core(M (1 - f_env)), the rocky core holding the mass outside the
    envelope, and R_env of :func:`envelope_radius`.

    Returns
    -------
    core, envelope : ndarray
    """
    core = core_radius_under_envelope(mass_mearth, envelope_fraction)
    return core, envelope_radius(mass_mearth, envelope_fraction, insolation_earth, age_gyr)


def core_radius_under_envelope(mass_mearth, envelope_fraction):
    """R_core(M (1 - f_env)) [Rearth]: the rocky core holds the mass outside the envelope (Lopez & Fortney 2014)."""
    return rocky_core_radius(mass_mearth * (1.0 - envelope_fraction))


def radius_with_envelope(mass_mearth, envelope_fraction, insolation_earth, age_gyr=ENVELOPE_AGE_GYR):
    """Total radius [Rearth] of a rocky core under a hydrogen-helium envelope (Lopez & Fortney 2014).

    R = R_core(M (1 - f_env)) + R_env, as Lopez & Fortney 2014 add them,
    without the thin radiative atmosphere above the envelope (a small
    fraction of R).
    """
    core, envelope = envelope_layers(mass_mearth, envelope_fraction, insolation_earth, age_gyr)
    return core + envelope


def envelope_mass_fraction(mass_mearth, radius_rearth, insolation_earth, age_gyr=ENVELOPE_AGE_GYR):
    """Hydrogen-helium envelope mass fraction of a sub-Neptune (Lopez & Fortney 2014).

    Solves :func:`radius_with_envelope` = R for f_env by the Illinois
    regula falsi (Dowell & Jarratt 1971, BIT 11, 168) in ln f_env, all
    planets and draws at once. NaN outside the fit's grid: 1-20 Mearth,
    0.1-1000 S_earth, and radii that need an envelope of 0.1 % to 20 % of
    the mass. The age is an assumption (default 5 Gyr, the fit's reference
    age). A model estimate: the same mass and radius also fit a water-rich
    planet with no hydrogen.

    Parameters
    ----------
    mass_mearth, radius_rearth : array_like
        Mass [Mearth] and radius [Rearth].
    insolation_earth : array_like
        Insolation [S_earth].
    age_gyr : float
        Age [Gyr].

    Returns
    -------
    ndarray
        Envelope mass fraction (0.01 for 1 %), or NaN.
    """
    m, r, s = np.broadcast_arrays(*(np.asarray(x, dtype=float) for x in (mass_mearth, radius_rearth,
                                                                           insolation_earth)))
    with np.errstate(invalid="ignore", divide="ignore"):
        (core_low, envelope_low), (core_high, envelope_high) = (envelope_layers(m, fraction, s, age_gyr)
                                                                for fraction in ENVELOPE_FRACTION_RANGE)
        applies = ((m >= ENVELOPE_MASS_RANGE[0]) & (m <= ENVELOPE_MASS_RANGE[1])
                   & (s >= ENVELOPE_INSOLATION_RANGE[0]) & (s <= ENVELOPE_INSOLATION_RANGE[1])
                   & (r >= core_low + envelope_low) & (r <= core_high + envelope_high))
    # the root is sought only where the fit applies: the result is NaN elsewhere
    m, r = m[applies], r[applies]
    ends = np.log(ENVELOPE_FRACTION_RANGE)
    ln_envelope_low, ln_envelope_high = np.log(envelope_low[applies]), np.log(envelope_high[applies])

    def misfit(ln_fraction):
        """ln(R - R_core) - ln(R_env) at f_env = exp(ln_fraction): zero where :func:`radius_with_envelope`
        gives the radius R, and decreasing in f_env.

        R_env is a power of f_env, so ln R_env is the straight line in ln f_env through its values at
        the grid's ends, and the misfit is nearly linear in ln f_env (only the core's slight shrinking
        bends it): the regula falsi on it needs a few steps, where on R itself, which curves like an
        exponential, it needs a dozen. R - R_core > 0 wherever the fit applies (R is at least the
        radius at f_env = 0.1 %, and the core shrinks as f_env grows).
        """
        along = (ln_fraction - ends[0]) / (ends[1] - ends[0])
        ln_envelope = ln_envelope_low + (ln_envelope_high - ln_envelope_low) * along
        return np.log(r - core_radius_under_envelope(m, np.exp(ln_fraction))) - ln_envelope

    x0, x1 = np.full(m.shape, ends[0]), np.full(m.shape, ends[1])
    g0, g1 = misfit(x0), misfit(x1)
    for _ in range(_ROOT_STEPS):
        with np.errstate(invalid="ignore", divide="ignore"):   # an end that is the root already
            x2 = x1 - g1 * (x1 - x0) / (g1 - g0)
        x2 = np.where(np.isfinite(x2), x2, x1)
        g2 = misfit(x2)
        # keep the root bracketed; halve the weight of an end kept twice (the Illinois step)
        crossed = np.sign(g2) != np.sign(g1)
        x0, g0 = np.where(crossed, x1, x0), np.where(crossed, g1, 0.5 * g0)
        x1, g1 = x2, g2
        if np.abs(g1).max(initial=0.0) <= _ROOT_TOLERANCE:
            break
    fraction = np.full(applies.shape, np.nan)
    fraction[applies] = np.exp(x1)
    return fraction
