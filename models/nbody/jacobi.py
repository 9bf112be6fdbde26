"""Jacobi coordinates of a star and its planets, and orbits set up from elements.

Jacobi coordinates (Wisdom & Holman 1991, AJ 102, 1528, section 3): planet
i is placed relative to the centre of mass of the star and the planets
inside it, x'_i = x_i - X_(i-1), with the interior mass
eta_i = m_0 + m_1 + ... + m_i and the Jacobi mass m'_i = m_i eta_(i-1) / eta_i;
the heliocentric position follows as
d_i = x'_i + sum_(k<i) (m_k / eta_k) x'_k. Velocities transform the same way.

Arrays hold the Cartesian components first, then planets, then draws:
positions (3, planets, draws), masses (planets, draws). Masses are
gravitational parameters G m in au^3 / d^2. Sums over planets are taken by
sweeps and folds (:func:`planet_prefix_sums`, :func:`folded_sum`), so every draw's
result depends only on its own numbers, however many draws share the arrays.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..motion.kepler import TWO_PI, mean_anomaly_of_transit, solve_kepler, true_anomaly


def planet_prefix_sums(a):
    """Inclusive sums along the planet axis (axis -2), in place, by an up- and a down-sweep.

    The work-efficient scan of Blelloch (1990, "Prefix sums and their
    applications", CMU-CS-90-190): pass k adds row i - 2^k into the rows
    i = 2^(k+1) - 1 (mod 2^(k+1)), then passes back down fill the rows
    between. About 2 log2(planets) vectorised additions touching 2 planets'
    rows in all, instead of one addition per planet, in an order that does
    not depend on the number of draws.

    Parameters
    ----------
    a : ndarray, shape (..., planets, draws)
        Overwritten with its prefix sums, and returned.
    """
    planets = a.shape[-2]
    step = 1
    while step < planets:                             # up-sweep: sums of blocks of 2 step rows
        a[..., 2 * step - 1::2 * step, :] += a[..., step - 1:planets - step:2 * step, :]
        step *= 2
    step //= 2
    while step >= 1:                                  # down-sweep: the rows between the blocks
        a[..., 3 * step - 1::2 * step, :] += a[..., 2 * step - 1:planets - step:2 * step, :]
        step //= 2
    return a


def folded_sum(a, axis: int):
    """Sum of ``a`` along ``axis`` by folding the far half onto the near one, in place.

    Overwrites the leading entries of ``a`` along ``axis`` and returns the
    sum (a view into ``a``). The order of the additions depends only on the
    length of that axis: numpy's own reductions change their order with the
    memory layout (for a single draw, say), which would make a draw's
    result depend on the draws beside it.
    """
    length = a.shape[axis]

    def part(start, stop):
        index = [slice(None)] * a.ndim
        index[axis] = slice(start, stop)
        return a[tuple(index)]

    while length > 1:
        half = length // 2
        part(0, half)[...] += part(length - half, length)
        length -= half
    index = [slice(None)] * a.ndim
    index[axis] = 0
    return a[tuple(index)]


@dataclass(frozen=True)
class Masses:
    """Gravitational parameters of the star and planets and their Jacobi combinations.

    Attributes
    ----------
    gm_star : ndarray, shape (1, draws)
        G m_0 [au^3 d^-2].
    gm : ndarray, shape (planets, draws)
        G m_i [au^3 d^-2].
    """

    gm_star: np.ndarray
    gm: np.ndarray

    @classmethod
    def of(cls, gm_star, gm) -> "Masses":
        gm = np.ascontiguousarray(gm, dtype=float)
        return cls(np.ascontiguousarray(np.broadcast_to(gm_star, (1, gm.shape[1])), dtype=float), gm)

    @property
    def interior(self) -> np.ndarray:
        """G eta_i = G (m_0 + ... + m_i), shape (planets, draws)."""
        return self.gm_star + np.cumsum(self.gm, axis=0)   # accumulate: a fixed order per draw

    @property
    def interior_before(self) -> np.ndarray:
        """G eta_(i-1), shape (planets, draws)."""
        return self.interior - self.gm

    @property
    def jacobi_ratio(self) -> np.ndarray:
        """m_i / eta_i, the weight of x'_i in the centre of mass of bodies 0..i."""
        return self.gm / self.interior

    @property
    def reduced(self) -> np.ndarray:
        """G m'_i = G m_i eta_(i-1) / eta_i, the Jacobi mass."""
        return self.gm * self.interior_before / self.interior

    def take(self, keep) -> "Masses":
        """The masses of the draws ``keep`` (an index or boolean array over draws)."""
        return Masses(self.gm_star[:, keep], self.gm[:, keep])


def heliocentric_from_jacobi(jacobi, ratio, out=None, scratch=None):
    """Heliocentric vectors d_i = x'_i + sum_(k<i) (m_k / eta_k) x'_k (Wisdom & Holman 1991).

    Parameters
    ----------
    jacobi : ndarray, shape (3, planets, draws)
        Jacobi positions or velocities.
    ratio : ndarray, shape (planets, draws)
        m_k / eta_k (:attr:`Masses.jacobi_ratio`).
    out, scratch : ndarray, optional
        Output and work arrays shaped like ``jacobi``.
    """
    out = np.empty_like(jacobi) if out is None else out
    weighted = np.multiply(jacobi, ratio, out=np.empty_like(jacobi) if scratch is None else scratch)
    planet_prefix_sums(weighted)
    out[:, 0] = jacobi[:, 0]
    np.add(jacobi[:, 1:], weighted[:, :-1], out=out[:, 1:])
    return out


def jacobi_from_heliocentric(helio, masses: Masses):
    """Jacobi vectors from heliocentric ones, x'_i = d_i - sum_(k<i) m_k d_k / eta_(i-1)."""
    weighted = planet_prefix_sums(helio * masses.gm)
    out = helio.copy()
    out[:, 1:] -= weighted[:, :-1] / masses.interior_before[1:]
    return out


def semi_major_axis(gm_total, period):
    """Kepler's third law, a^3 = G M P^2 / (4 pi^2) (Murray & Dermott 1999, eq. 2.26).

    Parameters
    ----------
    gm_total : array_like
        G M of the two-body problem [au^3 d^-2].
    period : array_like
        Period [d].

    Returns
    -------
    ndarray
        Semi-major axis [au].
    """
    period = np.asarray(period, dtype=float)
    return np.cbrt(gm_total * period * period / (TWO_PI * TWO_PI))


def cartesian_from_elements(gm_total, a, e, inclination, omega, mean_anomaly):
    """Position and velocity on a Keplerian ellipse in the orbitdeck sky frame.

    Longitude of the node 0, observer on +Z (Murray & Dermott 1999,
    eqs. 2.122 with Omega = 0 for the position; the velocity is its time
    derivative with r' = n a e sin f / sqrt(1 - e^2) and
    r f' = n a (1 + e cos f) / sqrt(1 - e^2), M&D eqs. 2.31-2.32; equation
    numbers from memory).

    Parameters
    ----------
    gm_total : array_like
        G M of the two-body problem [au^3 d^-2].
    a, e : array_like
        Semi-major axis [au] and eccentricity.
    inclination, omega, mean_anomaly : array_like
        Inclination to the sky plane, argument of periastron, mean anomaly [rad].

    Returns
    -------
    (ndarray, ndarray)
        Position [au] and velocity [au/d], each shaped (3, *broadcast shape).
    """
    e = np.asarray(e, dtype=float)
    f = true_anomaly(solve_kepler(mean_anomaly, e), e)
    n = np.sqrt(gm_total / (a * a * a))
    root = np.sqrt(1.0 - e * e)
    r = a * root * root / (1.0 + e * np.cos(f))
    r_dot = n * a * e * np.sin(f) / root
    r_f_dot = n * a * (1.0 + e * np.cos(f)) / root
    u = omega + f
    cos_u, sin_u = np.cos(u), np.sin(u)
    cos_i, sin_i = np.cos(inclination), np.sin(inclination)
    in_plane_y = r * sin_u
    in_plane_vy = r_dot * sin_u + r_f_dot * cos_u
    position = np.stack([r * cos_u, in_plane_y * cos_i, in_plane_y * sin_i])
    velocity = np.stack([r_dot * cos_u - r_f_dot * sin_u, in_plane_vy * cos_i, in_plane_vy * sin_i])
    return position, velocity


def mean_anomaly_from_transit(period, e, omega, transit_time, epoch):
    """Mean anomaly at ``epoch`` of an orbit whose mid-transit was at ``transit_time``.

    Transit at omega + f = 90 deg with the observer on +Z (Winn 2010,
    arXiv:1001.2010, section 2.1); f to E by the inverse of M&D 1999
    eq. 2.46, E to M by Kepler's equation, and M grows by 2 pi / P per day.

    Parameters
    ----------
    period : array_like
        Period [d].
    e, omega : array_like
        Eccentricity and argument of periastron [rad].
    transit_time, epoch : array_like
        Mid-transit time and the epoch of the initial conditions [BJD_TDB, d].

    Returns
    -------
    ndarray
        Mean anomaly at ``epoch`` [rad].
    """
    return mean_anomaly_of_transit(e, omega) + TWO_PI * (np.asarray(epoch, dtype=float) - transit_time) / period
