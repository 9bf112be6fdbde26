"""The sky seen from one planet: sizes, elongations, phases, brightness, close approaches.

Geometry comes from :mod:`orbitdeck.models.motion.ephemeris` (fixed Keplerian
orbits, star at the origin). For an observer planet O and a body B (the
star, named ``"star"``, or another planet):

* distance |B - O| [au] and angular diameter 2 arcsin(R/d);
* elongation, the angle star-O-B (0 for the star itself);
* phase angle alpha, the angle star-B-O (undefined for the star);
* illuminated fraction of the disc, (1 + cos alpha) / 2;
* brightness relative to the full Moon seen from Earth.

Brightnesses are model estimates: a planet is treated as a Lambert sphere of
an assumed geometric albedo (0.3 unless told otherwise, a round value
between rocky bodies and cloudy ones, not a measurement), fluxes are
bolometric (the star's whole luminosity; no colour correction for the red
spectrum of a cool star), and the full Moon is the Sun's light reflected
with the Moon's geometric albedo at 1 au.
"""

from __future__ import annotations

import astropy.constants as const
import astropy.units as u
import numpy as np

from . import ephemeris
from ..constants import RAD_TO_ARCSEC
from ..physics.skies import angular_diameter

#: Moon mean radius, 1737.4 km (IAU WGCCRE report, Archinal et al. 2018; from memory)
MOON_RADIUS = 1737.4 * u.km
#: mean Earth-Moon distance, 384 400 km (e.g. NASA Moon fact sheet; from memory)
MOON_DISTANCE = 384400.0 * u.km
#: geometric albedo of the Moon, 0.12 (NASA Moon fact sheet, visual; from memory)
MOON_GEOMETRIC_ALBEDO = 0.12

R_SUN_AU = float((const.R_sun / const.au).decompose())
R_EARTH_AU = float((const.R_earth / const.au).decompose())
MOON_ANGULAR_RADIUS = float((MOON_RADIUS / MOON_DISTANCE).decompose())
STAR = "star"


# -- formulas ---------------------------------------------------------------
def angular_diameter_arcsec(radius, distance) -> np.ndarray:
    """Apparent angular diameter of a sphere, 2 arcsin(R / d) (spherical geometry).

    Parameters
    ----------
    radius, distance : array_like
        Body radius R and centre distance d, same length unit.

    Returns
    -------
    numpy.ndarray
        Angular diameter [arcsec]; 180 deg when d <= R.
    """
    return angular_diameter(np.asarray(radius, dtype=float), np.asarray(distance, dtype=float)) * RAD_TO_ARCSEC


def angle_between_deg(a, b) -> np.ndarray:
    """Angle between vectors along the last axis, atan2(|a x b|, a . b) (vector algebra).

    Parameters
    ----------
    a, b : array_like
        Vectors, shape (..., 3), broadcast against each other.

    Returns
    -------
    numpy.ndarray
        Angle [deg] in [0, 180], shape (...).
    """
    a, b = np.broadcast_arrays(np.asarray(a, dtype=float), np.asarray(b, dtype=float))
    return np.degrees(np.arctan2(np.linalg.norm(np.cross(a, b), axis=-1), np.sum(a * b, axis=-1)))


def illuminated_fraction(phase_angle_deg) -> np.ndarray:
    """Illuminated fraction of a sphere's disc, k = (1 + cos alpha) / 2 (Meeus 1998, ch. 41; from memory).

    Parameters
    ----------
    phase_angle_deg : array_like
        Phase angle alpha, star-body-observer [deg].

    Returns
    -------
    numpy.ndarray
        Fraction of the disc's area that is lit, 0 (new) to 1 (full).
    """
    return 0.5 * (1.0 + np.cos(np.radians(np.asarray(phase_angle_deg, dtype=float))))


def lambert_phase_function(phase_angle_deg) -> np.ndarray:
    """Phase function of a Lambert sphere, [sin a + (pi - a) cos a] / pi (Russell 1916, ApJ 43, 173).

    Parameters
    ----------
    phase_angle_deg : array_like
        Phase angle [deg].

    Returns
    -------
    numpy.ndarray
        Reflected flux relative to full phase, 1 at 0 deg, 0 at 180 deg.
    """
    a = np.radians(np.asarray(phase_angle_deg, dtype=float))
    return (np.sin(a) + (np.pi - a) * np.cos(a)) / np.pi


def reflected_to_incident_flux(geometric_albedo, radius, distance, phase_function) -> np.ndarray:
    """Reflected flux at the observer over the incident flux at the body, p (R/d)^2 Phi(alpha).

    The definition of the geometric albedo p and phase function Phi
    (e.g. Seager 2010, *Exoplanet Atmospheres*, ch. 3; from memory).

    Parameters
    ----------
    geometric_albedo : array_like
        Geometric albedo p.
    radius, distance : array_like
        Body radius R and observer-body distance d, same unit.
    phase_function : array_like
        Phi(alpha), 1 at full phase.

    Returns
    -------
    numpy.ndarray
        Flux ratio (dimensionless).
    """
    ratio = np.asarray(radius, dtype=float) / np.asarray(distance, dtype=float)
    return np.asarray(geometric_albedo, dtype=float) * ratio * ratio * np.asarray(phase_function, dtype=float)


def full_moon_flux() -> float:
    """Flux of the full Moon at Earth over the solar constant, p_Moon (R_Moon / d_Moon)^2.

    :func:`reflected_to_incident_flux` at zero phase with the Moon's
    geometric albedo, radius and mean distance (constants above).

    Returns
    -------
    float
        About 2.5e-6 (the Sun is ~14 magnitudes brighter than the full Moon).
    """
    return float(reflected_to_incident_flux(MOON_GEOMETRIC_ALBEDO, MOON_ANGULAR_RADIUS, 1.0, 1.0))


def stellar_luminosity_lsun(star) -> float:
    """The star's luminosity, given or L = 4 pi R^2 sigma Teff^4 (Stefan-Boltzmann law).

    Parameters
    ----------
    star : orbitdeck.models.files.system.Star
        The star (radius [Rsun], teff [K], optional luminosity [Lsun]).

    Returns
    -------
    float
        Luminosity [Lsun].
    """
    if star.luminosity is not None:
        return float(star.luminosity)
    lum = 4.0 * np.pi * (star.radius * const.R_sun) ** 2 * const.sigma_sb * (star.teff * u.K) ** 4
    return float((lum / const.L_sun).decompose())


# -- the sky from one planet ------------------------------------------------
def _check_albedo(geometric_albedo) -> float:
    p = float(geometric_albedo)
    if not np.isfinite(p) or p < 0:
        raise ValueError(f"geometric_albedo: must be a finite number >= 0, got {geometric_albedo!r}")
    return p


def _planet_xyz(pos) -> np.ndarray:
    return np.stack([pos.x_au, pos.y_au, pos.z_au], axis=-1)


def sky_from(system, observer_name: str, times, a_au=None, geometric_albedo: float = 0.3) -> dict:
    """The star and the other planets as seen from one planet, at one or many times.

    Parameters
    ----------
    system : orbitdeck.models.files.system.System
        The system.
    observer_name : str
        Name of the planet whose sky is wanted.
    times : float or array_like
        Times [BJD_TDB, d], scalar or any shape.
    a_au : array_like, optional
        Semi-major axes [au], as for :func:`ephemeris.orbital_elements`.
    geometric_albedo : float
        Geometric albedo assumed for every planet (default 0.3, an
        assumption, not a measurement).

    Returns
    -------
    dict
        ``observer``, ``times``, ``bodies`` (list: ``"star"`` then the other
        planets in period order), ``warnings``, and arrays shaped
        ``np.shape(times) + (bodies,)``: ``distance_au``,
        ``angular_diameter_arcsec``, ``elongation_deg``, ``phase_angle_deg``
        (NaN for the star), ``illuminated_fraction`` (1 for the star, which
        shines by itself) and ``brightness_moon_ratio`` (flux at the observer
        over the full Moon's at Earth; model estimate, see module notes).
        Where a body overlaps the observer (their centres closer than the
        sum of their radii) only its distance is given, the rest is NaN, and
        a warning says so.

    Raises
    ------
    ValueError
        Unknown observer, bad times, albedo or semi-major axes.
    """
    p = _check_albedo(geometric_albedo)
    elements = ephemeris.orbital_elements(system, a_au)
    obs = elements.index(observer_name)
    others = np.array([j for j in range(elements.n_planets) if j != obs], dtype=int)
    pos = ephemeris.positions(elements, times)
    planets = _planet_xyz(pos)                                      # (..., planets, 3)
    observer = planets[..., obs, :]                                 # (..., 3)
    bodies = np.concatenate([np.zeros_like(observer)[..., None, :], planets[..., others, :]], axis=-2)
    radius = np.concatenate([[system.star.radius * R_SUN_AU],
                             np.array([system.planets[j].radius for j in others], dtype=float) * R_EARTH_AU])
    rel = bodies - observer[..., None, :]                          # observer -> body
    distance = np.linalg.norm(rel, axis=-1)
    elongation = angle_between_deg(-observer[..., None, :], rel)
    elongation[..., 0] = 0.0
    phase = angle_between_deg(-bodies, -rel)                       # body -> star, body -> observer
    phase[..., 0] = np.nan
    lit = illuminated_fraction(phase)
    lit[..., 0] = 1.0
    lum = stellar_luminosity_lsun(system.star)
    star_dist = np.linalg.norm(bodies, axis=-1)                    # star -> body, au
    with np.errstate(divide="ignore", invalid="ignore"):
        incident = lum / (star_dist * star_dist)                   # in units of the solar constant
        flux = incident * reflected_to_incident_flux(p, radius, distance, lambert_phase_function(phase))
    flux[..., 0] = lum / (distance[..., 0] ** 2)
    names = [STAR, *(elements.names[j] for j in others)]
    sky = {"angular_diameter_arcsec": angular_diameter_arcsec(radius, distance), "elongation_deg": elongation,
           "phase_angle_deg": phase, "illuminated_fraction": lit, "brightness_moon_ratio": flux / full_moon_flux()}
    # a body whose centre is closer than the two radii overlaps the observer (two planets given the same orbit
    # and phase, say): it has no place in the observer's sky, so none is given
    overlap = distance < radius + system.planets[obs].radius * R_EARTH_AU
    for values in sky.values():
        values[overlap] = np.nan
    return {"observer": observer_name, "times": np.asarray(times, dtype=float), "bodies": names,
            "distance_au": distance, **sky,
            "warnings": list(elements.warnings) + overlap_warnings(observer_name, names, times, overlap)}


def overlap_warnings(observer: str, bodies, times, overlap) -> list[str]:
    """What :func:`sky_from` says of each body that overlaps the observer at some of ``times``."""
    count = np.size(times)
    found = np.reshape(overlap, (count, len(bodies))).sum(axis=0)
    warnings = []
    for body, n in zip(bodies, found):
        if n:
            when = f"at BJD_TDB {float(times):.4f}" if np.ndim(times) == 0 else f"at {n} of the {count} times"
            warnings.append(f"{body} overlaps planet {observer} {when} (their centres are closer than the sum of "
                            f"their radii): its size, direction, phase and brightness in {observer}'s sky are "
                            "not given there")
    return warnings


def _json_number(value):
    value = float(value)
    return value if np.isfinite(value) else None


def sky_document(system, observer: str, time=None, a_au=None, geometric_albedo: float = 0.3) -> dict:
    """JSON-ready sky from one planet at one time (the system epoch by default).

    Parameters
    ----------
    system, observer, a_au, geometric_albedo
        As for :func:`sky_from`.
    time : float, optional
        One time [BJD_TDB, d]; the system epoch when omitted.

    Returns
    -------
    dict
        ``{"observer", "time", "geometric_albedo", "bodies": [{"body",
        "distance_au", "angular_diameter_arcsec", "elongation_deg",
        "phase_angle_deg", "illuminated_fraction", "brightness_moon_ratio"}],
        "warnings"}``; ``phase_angle_deg`` is None for the star. Values are
        model estimates (see :func:`sky_from`).
    """
    t = system.epoch if time is None else time
    if np.ndim(t) != 0:
        raise ValueError(f"time: expected one time (BJD_TDB days), got {np.shape(t)} values")
    sky = sky_from(system, observer, float(t), a_au=a_au, geometric_albedo=geometric_albedo)
    keys = ["distance_au", "angular_diameter_arcsec", "elongation_deg", "phase_angle_deg",
            "illuminated_fraction", "brightness_moon_ratio"]
    bodies = [{"body": name, **{k: _json_number(sky[k][b]) for k in keys}} for b, name in enumerate(sky["bodies"])]
    return {"observer": observer, "time": float(t), "geometric_albedo": float(geometric_albedo),
            "bodies": bodies, "warnings": sky["warnings"]}


# -- close approaches ---------------------------------------------------------
def synodic_period(period_1, period_2) -> np.ndarray:
    """Synodic period 1 / |1/P1 - 1/P2| (M&D 1999, ch. 1; from memory); inf for equal periods."""
    with np.errstate(divide="ignore"):
        return 1.0 / np.abs(1.0 / np.asarray(period_1, dtype=float) - 1.0 / np.asarray(period_2, dtype=float))


def _separation(obs_elements, other_elements, times) -> np.ndarray:
    a = _planet_xyz(ephemeris.positions_broadcast(obs_elements, times))
    b = _planet_xyz(ephemeris.positions_broadcast(other_elements, times))
    return np.linalg.norm(b - a, axis=-1)


def _golden_minimum(obs_el, oth_el, lo, hi, tol_d: float):
    """Vectorised golden-section search of the separation on brackets [lo, hi]."""
    ratio = 0.5 * (np.sqrt(5.0) - 1.0)
    c = hi - ratio * (hi - lo)
    d = lo + ratio * (hi - lo)
    fc, fd = _separation(obs_el, oth_el, c), _separation(obs_el, oth_el, d)
    for _ in range(200):
        if np.max(hi - lo, initial=0.0) <= tol_d:
            break
        left = fc < fd                       # minimum in [lo, d]
        hi = np.where(left, d, hi)
        lo = np.where(left, lo, c)
        new_c, new_d = hi - ratio * (hi - lo), lo + ratio * (hi - lo)
        probe = np.where(left, new_c, new_d)
        fp = _separation(obs_el, oth_el, probe)
        c, d = np.where(left, new_c, d), np.where(left, c, new_d)
        fc, fd = np.where(left, fp, fd), np.where(left, fc, fp)
    t = 0.5 * (lo + hi)
    return t, _separation(obs_el, oth_el, t)


def close_approaches(system, observer: str, after=None, count: int = 3, a_au=None,
                     samples_per_period: int = 40, max_samples: int = 1_000_000, tol_d: float = 1e-7) -> dict:
    """The next ``count`` minima of the distance from ``observer`` to each other planet.

    The separation of each pair is sampled on its own grid, with a step of
    min(P_obs, P_other) / (``samples_per_period`` g), where g (1 to 50) is
    the periastron angular speed over the mean motion,
    (1 + e)^2 / (1 - e^2)^(3/2), of the more eccentric planet; sampling goes
    on, in blocks and for all pairs at once, until ``count`` local minima
    are found, (count + 2) synodic periods have been covered, or
    ``max_samples`` were used. Each minimum is then refined by a
    golden-section search (Kiefer 1953, Proc. AMS 4, 502; from memory)
    between its neighbouring samples. No circular orbit is assumed. A minimum counts only when the sampled
    curvature exceeds 1e-9 of the distance, so a constant separation
    (equal periods on circular coplanar orbits) gives none.

    Parameters
    ----------
    system : orbitdeck.models.files.system.System
        The system.
    observer : str
        Name of the planet the distances are measured from.
    after : float, optional
        Start time [BJD_TDB, d]; the system epoch when omitted.
    count : int
        Number of approaches wanted per planet (>= 1).
    a_au : array_like, optional
        Semi-major axes [au], as for :func:`ephemeris.orbital_elements`.
    samples_per_period, max_samples : int
        Sampling density and the largest number of samples per pair.
    tol_d : float
        Width [d] to which each minimum's time is refined.

    Returns
    -------
    dict
        ``{"observer", "after", "bodies": [{"body", "synodic_period_d",
        "approaches": [{"time", "distance_au", "angular_diameter_arcsec"}]}],
        "warnings"}``; a planet's list is shorter than ``count`` (with a
        warning) when fewer minima exist in the searched span.
    """
    if isinstance(count, bool) or not isinstance(count, (int, np.integer)) or count < 1:
        raise ValueError(f"count: must be a whole number >= 1, got {count!r}")
    t0 = system.epoch if after is None else after
    if np.ndim(t0) != 0 or not np.isfinite(float(t0)):
        raise ValueError(f"after: expected one finite time (BJD_TDB days), got {after!r}")
    t0 = float(t0)
    el = ephemeris.orbital_elements(system, a_au)
    obs = el.index(observer)
    others = np.array([j for j in range(el.n_planets) if j != obs], dtype=int)
    n_oth = len(others)
    warnings = list(el.warnings)
    synodic = synodic_period(el.period_d[obs], el.period_d[others])
    e_pair = np.maximum(el.e[obs], el.e[others])
    g = np.clip((1.0 + e_pair) ** 2 / (1.0 - e_pair ** 2) ** 1.5, 1.0, 50.0)
    step = np.minimum(el.period_d[obs], el.period_d[others]) / (samples_per_period * g)
    span_needed = np.where(np.isfinite(synodic), (count + 2) * synodic, np.inf)

    block = 4096
    found = [[] for _ in range(n_oth)]              # per pair: indices k of sampled minima
    active = np.arange(n_oth)
    start = 0
    while active.size:
        k = np.arange(max(start - 1, 0), start + block + 1, dtype=float)   # neighbours on both sides
        times = t0 + k[:, None] * step[active]
        sep = _separation(el.take(np.full(active.size, obs)), el.take(others[active]), times)
        mid = sep[1:-1]
        # a local minimum whose curvature stands above rounding noise (1e-9 of the distance)
        is_min = (mid < sep[:-2]) & (mid <= sep[2:]) & (sep[:-2] + sep[2:] - 2.0 * mid > 1e-9 * mid)
        rows, cols = np.nonzero(is_min)
        for r, c in zip(k[1:-1][rows].astype(int), active[cols]):
            if len(found[c]) < count:
                found[c].append(r)
        start += block
        done = np.array([len(found[c]) >= count for c in active], dtype=bool)
        done |= start * step[active] >= span_needed[active]
        done |= start >= max_samples
        active = active[~done]

    pair = np.array([c for c in range(n_oth) for _ in found[c]], dtype=int)
    idx = np.array([r for c in range(n_oth) for r in found[c]], dtype=float)
    results = [[] for _ in range(n_oth)]
    if pair.size:
        lo = t0 + (idx - 1.0) * step[pair]
        hi = t0 + (idx + 1.0) * step[pair]
        t_min, d_min = _golden_minimum(el.take(np.full(pair.size, obs)), el.take(others[pair]), lo, hi, tol_d)
        radius = np.array([system.planets[j].radius for j in others], dtype=float)[pair] * R_EARTH_AU
        size = angular_diameter_arcsec(radius, d_min)
        for c, t, d, s in zip(pair, t_min, d_min, size):
            results[c].append({"time": float(t), "distance_au": float(d), "angular_diameter_arcsec": float(s)})
    bodies = []
    for c, j in enumerate(others):
        if len(results[c]) < count:
            warnings.append(f"only {len(results[c])} of {count} close approaches of {el.names[j]!r} "
                            f"to {observer!r} found in the searched span")
        bodies.append({"body": el.names[j], "synodic_period_d": _json_number(synodic[c]), "approaches": results[c]})
    return {"observer": observer, "after": t0, "bodies": bodies, "warnings": warnings}
