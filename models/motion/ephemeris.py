"""Planet positions at given times on fixed Keplerian orbits.

Frame (DESIGN.md): the star at the origin, the observer far away on the +Z
axis, the sky plane X-Y, every orbit's longitude of the ascending node 0
(so all nodes lie on the X axis and the mutual inclination of two orbits is
the difference of their inclinations), and mid-transit where
omega + f = 90 deg (Winn 2010). Times are BJD_TDB days, distances au.

Each planet moves on its own two-body ellipse about the star: planet-planet
perturbations are ignored, so positions far from the reference epoch are
model estimates, not predictions of transit times.

Sources
-------
* Murray, C. D. & Dermott, S. F. 1999, *Solar System Dynamics*, chapter 2
  ("M&D"; equation numbers quoted from memory).
* Winn, J. N. 2010, "Transits and Occultations", arXiv:1001.2010.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import NamedTuple

import numpy as np

from . import kepler



@dataclass(frozen=True)
class OrbitalElements:
    """Keplerian elements of every planet, arrays shaped (planets,).

    Attributes
    ----------
    names : tuple of str
        Planet names, in the system's (period) order.
    period_d : numpy.ndarray
        Orbital period [d].
    a_au : numpy.ndarray
        Semi-major axis [au].
    e : numpy.ndarray
        Eccentricity.
    inc_rad : numpy.ndarray
        Inclination to the sky plane [rad].
    omega_rad : numpy.ndarray
        Argument of periastron [rad].
    tref_d : numpy.ndarray
        A time of mid-transit [BJD_TDB, d].
    tref_is_transit : numpy.ndarray of bool
        True when ``tref_d`` is the planet's given transit time; False when
        the system epoch was put in its place (see ``warnings``).
    warnings : tuple of str
        One sentence for each substitution made while building the elements.
    """

    names: tuple
    period_d: np.ndarray
    a_au: np.ndarray
    e: np.ndarray
    inc_rad: np.ndarray
    omega_rad: np.ndarray
    tref_d: np.ndarray
    tref_is_transit: np.ndarray
    warnings: tuple = ()

    @property
    def n_planets(self) -> int:
        """Number of planets."""
        return len(self.names)

    def index(self, name: str) -> int:
        """Position of the planet called ``name``; ValueError if absent."""
        try:
            return self.names.index(name)
        except ValueError:
            known = ", ".join(self.names) or "none"
            raise ValueError(f"no planet named {name!r} (planets: {known})") from None

    def take(self, indices) -> "OrbitalElements":
        """The elements of the planets at ``indices`` (repeats allowed)."""
        idx = np.asarray(indices, dtype=int)
        return OrbitalElements(
            names=tuple(self.names[i] for i in idx), period_d=self.period_d[idx], a_au=self.a_au[idx],
            e=self.e[idx], inc_rad=self.inc_rad[idx], omega_rad=self.omega_rad[idx], tref_d=self.tref_d[idx],
            tref_is_transit=self.tref_is_transit[idx], warnings=self.warnings)


class Positions(NamedTuple):
    """Positions in the DESIGN.md frame, each shaped ``times.shape + (planets,)``.

    ``true_anomaly_rad`` lies in [0, 2 pi).
    """

    x_au: np.ndarray
    y_au: np.ndarray
    z_au: np.ndarray
    true_anomaly_rad: np.ndarray


def _checked_a_au(a_au, n: int) -> np.ndarray:
    a = np.asarray(a_au, dtype=float)
    if a.shape != (n,):
        raise ValueError(f"a_au: expected one semi-major axis per planet, shape ({n},), got shape {a.shape}")
    if not np.all(np.isfinite(a) & (a > 0)):
        raise ValueError(f"a_au: semi-major axes must be finite and > 0, got {a.tolist()}")
    return a


def orbital_elements(system, a_au=None) -> OrbitalElements:
    """Collect the Keplerian elements of every planet of ``system``.

    Parameters
    ----------
    system : orbitdeck.models.files.system.System
        The system; its planets are taken in period order.
    a_au : array_like, optional
        Semi-major axes [au], one per planet, e.g. those derived with
        estimated masses elsewhere. When omitted, they are the derived
        ones (Kepler's third law with M* + Mp, masses estimated from radii
        where not given).

    Returns
    -------
    OrbitalElements
        Elements shaped (planets,). A planet without ``transit_time`` gets
        the system epoch as its transit time, ``tref_is_transit`` False and
        a sentence in ``warnings``.

    Raises
    ------
    ValueError
        When ``a_au`` has the wrong shape or non-positive values.
    """
    planets = list(system.planets)
    n = len(planets)
    period = np.array([p.period for p in planets], dtype=float)
    if a_au is None:
        from ..engine.derive import nominal_semi_major_axes_au   # the engine imports this module's package

        a = nominal_semi_major_axes_au(system)
    else:
        a = _checked_a_au(a_au, n)
    has_transit = np.array([p.transit_time is not None for p in planets], dtype=bool)
    tref = np.array([system.epoch if p.transit_time is None else p.transit_time for p in planets], dtype=float)
    warnings = tuple(
        f"planet {p.name!r} has no transit_time: the system epoch {system.epoch} is taken as its "
        f"mid-transit time, so its orbital phase is arbitrary"
        for p in planets if p.transit_time is None)
    return OrbitalElements(
        names=tuple(p.name for p in planets), period_d=period, a_au=a,
        e=kepler.check_eccentricity([p.eccentricity for p in planets]).reshape(n),
        inc_rad=np.radians(np.array([p.inclination for p in planets], dtype=float)),
        omega_rad=np.radians(np.array([p.omega for p in planets], dtype=float)),
        tref_d=tref, tref_is_transit=has_transit, warnings=warnings)


def sky_frame_position(r, true_anomaly, omega, inclination):
    """Position in the sky frame with longitude of node 0 (M&D 1999, eq. 2.122, Omega = 0).

    x = r cos(omega + f), y = r sin(omega + f) cos i, z = r sin(omega + f) sin i,
    with the observer on +Z. (Winn 2010, eqs. 2-4, has the signs of x and y
    reversed, i.e. Omega = 180 deg; sky separations are the same.)

    Parameters
    ----------
    r : array_like
        Star-planet distance (any unit; the result has the same unit).
    true_anomaly, omega, inclination : array_like
        True anomaly f, argument of periastron omega, inclination i [rad].

    Returns
    -------
    tuple of numpy.ndarray
        x, y, z in the unit of ``r``.
    """
    u_arg = np.asarray(omega) + np.asarray(true_anomaly)
    s = np.sin(u_arg)
    r = np.asarray(r, dtype=float)
    return r * np.cos(u_arg), r * s * np.cos(inclination), r * s * np.sin(inclination)


def mean_anomaly_at(elements: OrbitalElements, times) -> np.ndarray:
    """Mean anomaly M = M_transit + n (t - t_transit) (M&D 1999, eq. 2.51; Winn 2010).

    Parameters
    ----------
    elements : OrbitalElements
        The planets' elements.
    times : array_like
        Times [BJD_TDB, d], shaped so that they broadcast against
        (planets,), e.g. ``times[..., None]``.

    Returns
    -------
    numpy.ndarray
        Mean anomaly [rad], the broadcast shape.
    """
    m0 = kepler.mean_anomaly_of_transit(elements.e, elements.omega_rad)
    return m0 + kepler.mean_motion(elements.period_d) * (np.asarray(times, dtype=float) - elements.tref_d)


def _checked_times(times) -> np.ndarray:
    try:
        t = np.asarray(times, dtype=float)
    except (TypeError, ValueError):
        raise ValueError(f"times: expected numbers (BJD_TDB days), got {times!r}") from None
    if not np.all(np.isfinite(t)):
        raise ValueError("times: every time must be a finite number of BJD_TDB days")
    return t


def positions_broadcast(elements: OrbitalElements, times) -> Positions:
    """Positions for times that broadcast against (planets,): planet j at ``times[..., j]``.

    Same computation as :func:`positions`; used where each planet needs its
    own time grid.
    """
    t = _checked_times(times)
    E = kepler.solve_kepler(mean_anomaly_at(elements, t), elements.e)
    f = kepler.true_anomaly(E, elements.e)
    r = kepler.orbital_radius(elements.a_au, elements.e, E)
    x, y, z = sky_frame_position(r, f, elements.omega_rad, elements.inc_rad)
    return Positions(x, y, z, np.mod(f, kepler.TWO_PI))


def positions(elements: OrbitalElements, times) -> Positions:
    """Positions of every planet at ``times`` on its Keplerian orbit.

    Mean anomaly from the transit time (Winn 2010), Kepler's equation
    (:func:`orbitdeck.models.motion.kepler.solve_kepler`), true anomaly and radius
    (M&D 1999, eqs. 2.46, 2.42) and the sky frame of
    :func:`sky_frame_position`.

    Parameters
    ----------
    elements : OrbitalElements
        From :func:`orbital_elements`.
    times : float or array_like
        Times [BJD_TDB, d]: a scalar or an array of any shape.

    Returns
    -------
    Positions
        ``(x_au, y_au, z_au, true_anomaly_rad)``, each shaped
        ``np.shape(times) + (planets,)``: (times, planets) for a 1-D array,
        (planets,) for a scalar.

    Raises
    ------
    ValueError
        When a time is not a finite number.
    """
    t = _checked_times(times)
    return positions_broadcast(elements, t[..., None])


def positions_document(system, time=None, a_au=None) -> dict:
    """JSON-ready positions of every planet at one time.

    Parameters
    ----------
    system : orbitdeck.models.files.system.System
        The system.
    time : float, optional
        Time [BJD_TDB, d]; the system epoch when omitted.
    a_au : array_like, optional
        Semi-major axes [au], as for :func:`orbital_elements`.

    Returns
    -------
    dict
        ``{"time", "planets": [{"name", "x_au", "y_au", "z_au",
        "true_anomaly_deg"}], "warnings": [...]}``; model positions on fixed
        Keplerian orbits.
    """
    t = system.epoch if time is None else _checked_times(time)
    if np.ndim(t) != 0:
        raise ValueError(f"time: expected one time (BJD_TDB days), got {np.shape(t)} values")
    t = float(t)
    elements = orbital_elements(system, a_au)
    pos = positions(elements, t)
    planets = [
        {"name": name, "x_au": float(pos.x_au[j]), "y_au": float(pos.y_au[j]), "z_au": float(pos.z_au[j]),
         "true_anomaly_deg": float(np.degrees(pos.true_anomaly_rad[j]))}
        for j, name in enumerate(elements.names)]
    return {"time": t, "planets": planets, "warnings": list(elements.warnings)}
