"""Kepler's equation and the anomalies of an elliptic orbit.

Every function works element-wise on numpy arrays of any shape and
broadcasts its arguments against each other. Angles are in radians.

Sources
-------
* Murray, C. D. & Dermott, S. F. 1999, *Solar System Dynamics*, Cambridge
  University Press, chapter 2 ("M&D" below; equation numbers quoted from
  memory).
* Winn, J. N. 2010, "Transits and Occultations", in *Exoplanets*, ed.
  S. Seager, University of Arizona Press (arXiv:1001.2010).
* Danby, J. M. A. 1987, "The solution of Kepler's equation, III",
  Celestial Mechanics 40, 303 (higher-order Newton iteration).
* Mikkola, S. 1987, "A cubic approximation for Kepler's equation",
  Celestial Mechanics 40, 329 (starting guess).
  (The last two references are quoted from memory.)
"""

from __future__ import annotations

import numpy as np

TWO_PI = 2.0 * np.pi


def check_eccentricity(eccentricity) -> np.ndarray:
    """Return ``eccentricity`` as a float array after checking 0 <= e < 1.

    Raises
    ------
    ValueError
        When any value is not finite or lies outside [0, 1).
    """
    e = np.asarray(eccentricity, dtype=float)
    bad = ~np.isfinite(e) | (e < 0.0) | (e >= 1.0)
    if np.any(bad):
        raise ValueError(f"eccentricity must satisfy 0 <= e < 1; got {e[bad].ravel()[:5].tolist()}")
    return e


def wrap_angle(angle) -> np.ndarray:
    """Reduce an angle to the interval [-pi, pi).

    Parameters
    ----------
    angle : array_like
        Angle [rad].

    Returns
    -------
    numpy.ndarray
        ``angle - 2 pi k`` for the integer k that puts it in [-pi, pi) [rad].
    """
    return np.remainder(np.asarray(angle, dtype=float) + np.pi, TWO_PI) - np.pi


def mean_anomaly(eccentric_anomaly, eccentricity) -> np.ndarray:
    """Kepler's equation, M = E - e sin E (M&D 1999, eq. 2.52).

    Parameters
    ----------
    eccentric_anomaly : array_like
        Eccentric anomaly E [rad].
    eccentricity : array_like
        Eccentricity e, 0 <= e < 1.

    Returns
    -------
    numpy.ndarray
        Mean anomaly M [rad], on the same revolution as E.
    """
    E = np.asarray(eccentric_anomaly, dtype=float)
    return E - np.asarray(eccentricity, dtype=float) * np.sin(E)


def kepler_starting_guess(reduced_mean_anomaly, eccentricity) -> np.ndarray:
    """Mikkola's cubic approximation to the eccentric anomaly (Mikkola 1987).

    With alpha = (1 - e) / (4 e + 1/2), beta = |M| / (2 (4 e + 1/2)),
    z = cbrt(beta + sqrt(beta^2 + alpha^3)) and s = z - alpha / z, corrected
    by ds = -0.078 s^5 / (1 + e): E = M + e sign(M) (3 s - 4 s^3). Good to
    about 1e-2 rad or better for all 0 <= e < 1.

    Parameters
    ----------
    reduced_mean_anomaly : array_like
        Mean anomaly M reduced to [-pi, pi] [rad].
    eccentricity : array_like
        Eccentricity e, 0 <= e < 1.

    Returns
    -------
    numpy.ndarray
        Approximate eccentric anomaly [rad].
    """
    M = np.asarray(reduced_mean_anomaly, dtype=float)
    e = np.asarray(eccentricity, dtype=float)
    m_abs = np.abs(M)
    denominator = 4.0 * e + 0.5
    alpha = (1.0 - e) / denominator
    beta = 0.5 * m_abs / denominator
    z = np.cbrt(beta + np.sqrt(beta * beta + alpha * alpha * alpha))
    s = z - alpha / z
    s2 = s * s
    s = s - 0.078 * s2 * s2 * s / (1.0 + e)  # products, not **: far faster in numpy
    s2 = s * s
    return np.sign(M) * (m_abs + e * s * (3.0 - 4.0 * s2))


def solve_kepler(mean_anomaly, eccentricity, tol: float = 1e-12, max_iter: int = 10) -> np.ndarray:
    """Solve Kepler's equation E - e sin E = M for the eccentric anomaly E.

    Newton's iteration corrected by the second and third derivatives of
    ``g(E) = E - e sin E - M`` (Danby's quartic variant, Danby 1987), on the
    mean anomaly reduced to [-pi, pi], started from Mikkola's (1987) cubic
    approximation (:func:`kepler_starting_guess`). All elements are iterated
    together until every residual ``|E - e sin E - M|`` is at most ``tol``;
    one step suffices for e <= 0.9 and two for e up to 0.999.

    Parameters
    ----------
    mean_anomaly : array_like
        Mean anomaly M [rad], any shape; any revolution.
    eccentricity : array_like
        Eccentricity e, 0 <= e < 1, broadcastable against ``mean_anomaly``.
    tol : float
        Largest accepted residual of Kepler's equation, evaluated on the
        reduced mean anomaly [rad].
    max_iter : int
        Largest number of iteration steps.

    Returns
    -------
    numpy.ndarray
        Eccentric anomaly E [rad], shape of the broadcast inputs, on the same
        revolution as M (``E - M`` lies in [-e, e]). NaN where M is NaN.

    Raises
    ------
    ValueError
        When an eccentricity lies outside [0, 1).
    RuntimeError
        When the iteration has not reached ``tol`` after ``max_iter`` steps.
    """
    M = np.asarray(mean_anomaly, dtype=float)
    e = check_eccentricity(eccentricity)
    M, e = np.broadcast_arrays(M, e)
    turns = TWO_PI * np.round(M / TWO_PI)
    Mr = M - turns
    E = kepler_starting_guess(Mr, e)
    finite = np.isfinite(Mr)
    worst = np.inf
    for _ in range(max_iter + 1):
        e_sin = e * np.sin(E)
        g = E - e_sin - Mr
        worst = np.max(np.abs(g), where=finite, initial=0.0)
        if worst <= tol:
            return E + turns
        e_cos = e * np.cos(E)
        g1 = 1.0 - e_cos  # g' = 1 - e cos E, g'' = e sin E, g''' = e cos E
        d1 = -g / g1
        d2 = -g / (g1 + 0.5 * d1 * e_sin)
        E = E - g / (g1 + 0.5 * d2 * e_sin + d2 * d2 * e_cos / 6.0)
    raise RuntimeError(f"Kepler's equation did not converge to {tol:g} rad in {max_iter} steps "
                       f"(largest residual {worst:.3g} rad)")


def true_anomaly(eccentric_anomaly, eccentricity) -> np.ndarray:
    """True anomaly from the eccentric anomaly (M&D 1999, eq. 2.46).

    tan(f/2) = sqrt((1 + e) / (1 - e)) tan(E/2), evaluated with ``arctan2``
    so that f falls in the same half-turn as E.

    Parameters
    ----------
    eccentric_anomaly : array_like
        Eccentric anomaly E [rad].
    eccentricity : array_like
        Eccentricity e, 0 <= e < 1.

    Returns
    -------
    numpy.ndarray
        True anomaly f [rad], in (-pi, pi].
    """
    half = 0.5 * np.asarray(eccentric_anomaly, dtype=float)
    e = np.asarray(eccentricity, dtype=float)
    return 2.0 * np.arctan2(np.sqrt(1.0 + e) * np.sin(half), np.sqrt(1.0 - e) * np.cos(half))


def eccentric_anomaly(true_anomaly, eccentricity) -> np.ndarray:
    """Eccentric anomaly from the true anomaly, the inverse of M&D 1999 eq. 2.46.

    tan(E/2) = sqrt((1 - e) / (1 + e)) tan(f/2).

    Parameters
    ----------
    true_anomaly : array_like
        True anomaly f [rad].
    eccentricity : array_like
        Eccentricity e, 0 <= e < 1.

    Returns
    -------
    numpy.ndarray
        Eccentric anomaly E [rad], in (-pi, pi].
    """
    half = 0.5 * np.asarray(true_anomaly, dtype=float)
    e = np.asarray(eccentricity, dtype=float)
    return 2.0 * np.arctan2(np.sqrt(1.0 - e) * np.sin(half), np.sqrt(1.0 + e) * np.cos(half))


def orbital_radius(semi_major_axis, eccentricity, eccentric_anomaly) -> np.ndarray:
    """Star-planet distance r = a (1 - e cos E) (M&D 1999, eq. 2.42).

    Parameters
    ----------
    semi_major_axis : array_like
        Semi-major axis a (any length unit; the result has the same unit).
    eccentricity : array_like
        Eccentricity e, 0 <= e < 1.
    eccentric_anomaly : array_like
        Eccentric anomaly E [rad].

    Returns
    -------
    numpy.ndarray
        Distance r, in the unit of ``semi_major_axis``.
    """
    return np.asarray(semi_major_axis, dtype=float) * (
        1.0 - np.asarray(eccentricity, dtype=float) * np.cos(np.asarray(eccentric_anomaly, dtype=float)))


def mean_motion(period) -> np.ndarray:
    """Mean motion n = 2 pi / P (M&D 1999, eq. 2.25).

    Parameters
    ----------
    period : array_like
        Orbital period P (any time unit).

    Returns
    -------
    numpy.ndarray
        Mean motion n [rad per unit of time of ``period``].
    """
    return TWO_PI / np.asarray(period, dtype=float)


def true_anomaly_of_transit(omega) -> np.ndarray:
    """True anomaly at mid-transit, f = pi/2 - omega (Winn 2010, section 2.1).

    The planet passes in front of the star when omega + f = pi/2, with the
    observer on the +Z axis.

    Parameters
    ----------
    omega : array_like
        Argument of periastron [rad].

    Returns
    -------
    numpy.ndarray
        True anomaly at transit [rad], in [-pi, pi).
    """
    return wrap_angle(0.5 * np.pi - np.asarray(omega, dtype=float))


def mean_anomaly_of_transit(eccentricity, omega) -> np.ndarray:
    """Mean anomaly at mid-transit (Winn 2010, section 2.1, with M&D 1999 eqs. 2.46, 2.52).

    The true anomaly at transit, f = pi/2 - omega, is turned into an
    eccentric anomaly by the inverse of M&D eq. 2.46 and into a mean anomaly
    by Kepler's equation (M&D eq. 2.52). With the mean motion n, the time of
    periastron follows as ``t_transit - M_transit / n``.

    Parameters
    ----------
    eccentricity : array_like
        Eccentricity e, 0 <= e < 1.
    omega : array_like
        Argument of periastron [rad].

    Returns
    -------
    numpy.ndarray
        Mean anomaly at transit [rad], in (-pi, pi].
    """
    e = check_eccentricity(eccentricity)
    return mean_anomaly(eccentric_anomaly(true_anomaly_of_transit(omega), e), e)
