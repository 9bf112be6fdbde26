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
    by ds = -0.078 s^5 / (1 + e): E = M + e sign(M) (3 s - 4 s^3). Good to a
    few 1e-3 rad for all 0 <= e < 1.

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
    M, e = np.broadcast_arrays(np.asarray(reduced_mean_anomaly, dtype=float), np.asarray(eccentricity, dtype=float))
    shape = M.shape
    M, e = np.atleast_1d(M, e)
    # in-place arithmetic on a few buffers: large temporaries cost more than the arithmetic
    m_abs = np.abs(M)
    den = 4.0 * e + 0.5
    alpha = np.subtract(1.0, e)
    alpha /= den
    beta = 0.5 * m_abs
    beta /= den
    z = beta * beta
    np.multiply(alpha, alpha, out=den)
    den *= alpha
    z += den
    np.sqrt(z, out=z)
    z += beta
    np.cbrt(z, out=z)
    np.divide(alpha, z, out=alpha)
    s = np.subtract(z, alpha, out=z)                 # s = z - alpha / z
    s2 = np.multiply(s, s, out=den)
    np.multiply(s2, s2, out=beta)
    beta *= s
    beta *= 0.078
    np.add(e, 1.0, out=alpha)
    beta /= alpha
    s -= beta                                        # s -= 0.078 s^5 / (1 + e)
    np.multiply(s, s, out=s2)
    s2 *= -4.0
    s2 += 3.0
    s2 *= s
    s2 *= e
    s2 += m_abs                                      # |M| + e s (3 - 4 s^2)
    return np.copysign(s2, M, out=s2).reshape(shape)


def solve_kepler(mean_anomaly, eccentricity, tol: float = 1e-12, max_iter: int = 10) -> np.ndarray:
    """Solve Kepler's equation E - e sin E = M for the eccentric anomaly E.

    Newton's iteration corrected by the second and third derivatives of
    ``g(E) = E - e sin E - M`` (Danby's quartic variant, Danby 1987), on the
    mean anomaly reduced to [-pi, pi], started from Mikkola's (1987) cubic
    approximation (:func:`kepler_starting_guess`). Elements are iterated
    together until every residual ``|E - e sin E - M|`` on the reduced M is
    at most ``tol / 2``, leaving room for the rounding of adding whole turns
    back (once most have converged, only the rest are carried on); one step
    suffices for e <= 0.9 and two for e up to 0.999.

    Parameters
    ----------
    mean_anomaly : array_like
        Mean anomaly M [rad], any shape; any revolution.
    eccentricity : array_like
        Eccentricity e, 0 <= e < 1, broadcastable against ``mean_anomaly``.
    tol : float
        Largest accepted residual of Kepler's equation [rad].
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
    M, e = np.broadcast_arrays(np.asarray(mean_anomaly, dtype=float), check_eccentricity(eccentricity))
    shape = M.shape
    M, e = M.ravel(), e.ravel()
    turns = np.round(M / TWO_PI)
    turns *= TWO_PI
    Mr = M - turns
    result = E = kepler_starting_guess(Mr, e)
    where = None                                     # indices of E in result; None: all of them
    buffers = [np.empty_like(E) for _ in range(6)]   # in-place work: large temporaries are slow
    for _ in range(max_iter + 1):
        e_sin, e_cos, g, g1, step, tmp = (b[:E.size] for b in buffers)
        np.sin(E, out=e_sin)
        e_sin *= e
        np.subtract(E, e_sin, out=g)
        g -= Mr                                      # g = E - e sin E - M
        bad = np.abs(g, out=tmp) > 0.5 * tol         # NaN counts as done; margin for E + 2 pi k
        n_bad = np.count_nonzero(bad)
        if n_bad == 0:
            break
        if n_bad < E.size // 2:                      # carry on with the unconverged ones only
            if where is None:
                where = np.flatnonzero(bad)
            else:
                result[where] = E
                where = where[bad]
            E, e, Mr, g, e_sin = E[bad], e[bad], Mr[bad], g[bad], e_sin[bad]
            e_cos, g1, step, tmp = (b[:n_bad] for b in buffers[1:2] + buffers[3:])
        np.cos(E, out=e_cos)
        e_cos *= e
        np.subtract(1.0, e_cos, out=g1)              # g' = 1 - e cos E; g'' = e sin E; g''' = e cos E
        np.divide(g, g1, out=step)                   # -d1, Newton's step
        np.multiply(step, e_sin, out=tmp)
        tmp *= -0.5
        tmp += g1
        np.divide(g, tmp, out=step)                  # -d2 = g / (g' + d1 g''/2), Halley's step
        np.multiply(step, step, out=tmp)
        tmp *= e_cos
        tmp /= 6.0
        tmp += g1
        step *= e_sin
        step *= 0.5
        tmp -= step                                  # g' + d2 g''/2 + d2^2 g'''/6
        np.divide(g, tmp, out=tmp)
        E -= tmp                                     # E + d3, Danby's quartic step
    else:
        raise RuntimeError(f"Kepler's equation did not converge to {tol:g} rad in {max_iter} steps "
                           f"(largest residual {np.nanmax(np.abs(g)):.3g} rad)")
    if where is not None:
        result[where] = E
    result += turns
    return result.reshape(shape)


def true_anomaly(eccentric_anomaly, eccentricity) -> np.ndarray:
    """True anomaly from the eccentric anomaly (M&D 1999, eq. 2.46).

    tan(f/2) = sqrt((1 + e) / (1 - e)) tan(E/2), evaluated with ``arctan2``
    and put on the same revolution as E (|f - E| < pi).

    Parameters
    ----------
    eccentric_anomaly : array_like
        Eccentric anomaly E [rad].
    eccentricity : array_like
        Eccentricity e, 0 <= e < 1.

    Returns
    -------
    numpy.ndarray
        True anomaly f [rad].
    """
    E = np.asarray(eccentric_anomaly, dtype=float)
    half = 0.5 * E
    e = np.asarray(eccentricity, dtype=float)
    f = 2.0 * np.arctan2(np.sqrt(1.0 + e) * np.sin(half), np.sqrt(1.0 - e) * np.cos(half))
    return E + wrap_angle(f - E)


def eccentric_anomaly(true_anomaly, eccentricity) -> np.ndarray:
    """Eccentric anomaly from the true anomaly, the inverse of M&D 1999 eq. 2.46.

    tan(E/2) = sqrt((1 - e) / (1 + e)) tan(f/2), on the same revolution as f.

    Parameters
    ----------
    true_anomaly : array_like
        True anomaly f [rad].
    eccentricity : array_like
        Eccentricity e, 0 <= e < 1.

    Returns
    -------
    numpy.ndarray
        Eccentric anomaly E [rad].
    """
    f = np.asarray(true_anomaly, dtype=float)
    half = 0.5 * f
    e = np.asarray(eccentricity, dtype=float)
    E = 2.0 * np.arctan2(np.sqrt(1.0 - e) * np.sin(half), np.sqrt(1.0 + e) * np.cos(half))
    return f + wrap_angle(E - f)


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
        Mean anomaly at transit [rad], in [-pi, pi].
    """
    e = check_eccentricity(eccentricity)
    return mean_anomaly(eccentric_anomaly(true_anomaly_of_transit(omega), e), e)
