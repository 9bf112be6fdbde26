"""The Wisdom-Holman symplectic map of a star and point-mass planets, in Jacobi coordinates.

The Hamiltonian is split (Wisdom & Holman 1991, AJ 102, 1528, section 3)
into a Keplerian part, each Jacobi coordinate on a two-body orbit about the
interior mass G eta_i, and an interaction part,

    H_int = sum_i G m_i eta_(i-1) / r'_i - sum_i G m_0 m_i / r_i - sum_(i<j) G m_i m_j / r_ij,

which depends on positions only and so changes velocities only (a kick).
One step is kick(h/2), drift(h), kick(h/2); consecutive half kicks merge.
The map is second order: its energy error oscillates at the level
m / M* (n h)^2 without secular growth.

The kick of Jacobi coordinate i is the Jacobi transform of the Newtonian
accelerations plus G eta_i x'_i / r'_i^3 (removing the Keplerian part). With
Q_i = d_i / r_i^3 for the heliocentric d_i, the star's share is rearranged
(derived here from the definitions) into

    G eta_i (x'_i / r'_i^3 - (m_0 / eta_(i-1)) Q_i) - (G m_0 / eta_(i-1)) sum_(k>i) m_k Q_k,

which vanishes exactly for a single planet (x'_1 = d_1, eta_0 = m_0), so a
lone planet follows its Kepler orbit to rounding. Planet-planet pairs are
laid out by offset (:class:`PairLayout`): row s - 1 holds the pairs
(i, i + s mod planets) for every i, s = 1 ... planets // 2, which lists
each pair once (twice for s = planets / 2 when planets is even).

Arrays: (3, planets, draws) for vectors, (planets, draws) for scalars.
Units: au, days, G m in au^3 / d^2.
"""

from __future__ import annotations

import numpy as np
from numpy.lib.stride_tricks import as_strided

from .jacobi import Masses, folded_sum, heliocentric_from_jacobi, planet_prefix_sums
from .kepler_drift import DriftWork, kepler_drift


class PairLayout:
    """Planet pairs by offset: row s - 1 pairs planet i with planet (i + s) mod planets.

    Attributes
    ----------
    rows : int
        planets // 2 offsets.
    partner : ndarray, shape (rows, planets)
        Index of the partner of each planet in each row.
    back_rows : int
        The first ``back_rows`` rows, whose pairs are not repeated: there
        the partner takes its share of the pair (for an even count, row
        s = planets / 2 lists every pair twice and each planet takes its
        share as the first of the two).
    back_partner : ndarray, shape (back_rows, planets)
        The planet whose pair in row s - 1 has planet i as partner, (i - s) mod planets.
    weight : ndarray, shape (rows, 1)
        1, or 1/2 for a row that lists each pair twice.
    """

    def __init__(self, planets: int):
        offsets = np.arange(1, planets // 2 + 1)
        i = np.arange(planets)
        self.planets, self.rows = planets, offsets.size
        self.partner = (i[None, :] + offsets[:, None]) % planets
        self.back_rows = int(np.count_nonzero(2 * offsets != planets))
        self.back_partner = (i[None, :] - offsets[:self.back_rows, None]) % planets
        self.weight = np.where(2 * offsets == planets, 0.5, 1.0)[:, None]


def _rolled_rows(doubled, rows: int, planets: int, forward: bool) -> np.ndarray:
    """Row s - 1 of the view holds the planet axis rolled by s, read from ``doubled``, whose planet
    axis (-2) holds the values twice over (2 planets): ``forward`` gives x[(i + s) mod planets]
    (``doubled`` shaped (3, 2 planets, draws)), otherwise row s - 1 of ``doubled`` (3, rows,
    2 planets, draws) read at (i - s) mod planets. A strided view, no copy."""
    if forward:
        component, planet, draw = doubled.strides
        return as_strided(doubled[:, 1:], shape=(doubled.shape[0], rows, planets, doubled.shape[-1]),
                          strides=(component, planet, planet, draw), writeable=False)
    component, row, planet, draw = doubled.strides
    return as_strided(doubled[:, :, planets - 1:], shape=(doubled.shape[0], rows, planets, doubled.shape[-1]),
                      strides=(component, row - planet, planet, draw), writeable=False)


class WisdomHolman:
    """The Wisdom-Holman map for a batch of systems with the same number of planets.

    Parameters
    ----------
    masses : Masses
        G m of the star (1, draws) and planets (planets, draws).
    """

    def __init__(self, masses: Masses):
        self.masses = masses
        planets, draws = masses.gm.shape
        self.planets, self.draws = planets, draws
        gm_star = masses.gm_star
        self.interior = masses.interior                              # G eta_i, the Kepler G M
        interior_before = masses.interior_before
        self.ratio = masses.jacobi_ratio
        self.reduced = masses.reduced
        self.kepler_weight = self.interior                           # G eta_i
        self.direct_weight = self.interior * (gm_star / interior_before)   # G eta_i m_0 / eta_(i-1)
        self.indirect_weight = gm_star / interior_before             # G m_0 / eta_(i-1) per unit G m_k
        self.inverse_interior_before = 1.0 / interior_before
        self.pairs = pairs = PairLayout(planets)
        rows, back = pairs.rows, pairs.back_rows
        self.gm_partner = masses.gm[pairs.partner]                   # (rows, planets, draws)
        self.gm_back = -masses.gm[pairs.back_partner]                # (back rows, planets, draws)
        # arrays holding the planets twice over are filled from separate arrays: a copy between two
        # parts of one array makes numpy take a temporary copy first (their bounds overlap)
        self.helio = np.empty((3, planets, draws))
        self._helio_twice = np.empty((3, 2 * planets, draws))
        self._partner_helio = _rolled_rows(self._helio_twice, rows, planets, forward=True)
        self._unit_pull = np.empty((3, rows, planets, draws))
        self._separation = np.empty((3, rows, planets, draws))
        self.pair_r2 = np.empty((rows, planets, draws))
        self._unit_pull_twice = np.empty((3, rows, 2 * planets, draws))
        self._back_unit_pull = _rolled_rows(self._unit_pull_twice, rows, planets, forward=False)[:, :back]
        self._pull = np.empty((3, rows + back, planets, draws))
        self._pair_work = np.empty((rows, planets, draws))
        # work arrays, so that no array of this size is allocated per step
        self._scratch, self._q, self._acc = (np.empty((3, planets, draws)) for _ in range(3))
        self._drift_work = DriftWork((planets, draws))
        self._r3, self._r3_jacobi = np.empty((planets, draws)), np.empty((planets, draws))

    # -- the kick ------------------------------------------------------------------------------
    def accelerations(self, xj) -> np.ndarray:
        """Jacobi accelerations of the interaction Hamiltonian at Jacobi positions ``xj``.

        Returns a work array that the next call overwrites. Also leaves the
        heliocentric positions in ``self.helio`` and the squared
        planet-planet distances in ``self.pair_r2``.
        """
        scratch = self._scratch
        d = heliocentric_from_jacobi(xj, self.ratio, out=self.helio, scratch=scratch)
        # the weights per unit vector first, on (planets, draws), then one pass over each vector array
        # (computed alike for x' and d, so that for the innermost planet, where they are equal, the two
        # star terms cancel exactly)
        inverse_cube = np.divide(1.0, _cube(d, self._r3), out=self._r3)              # 1 / r_i^3
        weight = np.divide(1.0, _cube(xj, self._r3_jacobi), out=self._r3_jacobi)
        weight *= self.kepler_weight
        acc = np.multiply(xj, weight, out=self._acc)                 # G eta_i x'_i / r'_i^3
        np.multiply(self.direct_weight, inverse_cube, out=weight)
        acc -= np.multiply(d, weight, out=scratch)                   # - G eta_i m_0 / eta_(i-1) Q_i
        if self.planets > 1:
            np.multiply(self.masses.gm, inverse_cube, out=weight)
            outer = np.multiply(d, weight, out=self._q)              # m_k Q_k, summed over k > i
            planet_prefix_sums(outer[:, ::-1])
            acc[:, :-1] -= np.multiply(outer[:, 1:], self.indirect_weight[:-1], out=scratch[:, :-1])
            acc += self._planet_planet_jacobi(d)
        return acc

    def kick(self, vj, acc, dt) -> None:
        """vj += dt * acc, in place (``dt`` broadcasting against (planets, draws))."""
        vj += np.multiply(acc, dt, out=self._scratch)

    def _planet_planet_jacobi(self, d) -> np.ndarray:
        """Jacobi transform a_i - sum_(k<i) m_k a_k / eta_(i-1) of the planet-planet accelerations."""
        planets, rows, back = self.planets, self.pairs.rows, self.pairs.back_rows
        self._helio_twice[:, :planets] = d
        self._helio_twice[:, planets:] = d
        separation = np.subtract(self._partner_helio, d[:, None], out=self._separation)   # d_j - d_i
        r2, work = self.pair_r2, self._pair_work
        np.multiply(separation[0], separation[0], out=r2)
        r2 += np.multiply(separation[1], separation[1], out=work)
        r2 += np.multiply(separation[2], separation[2], out=work)
        inverse_cube = np.sqrt(r2, out=work)
        inverse_cube *= r2
        np.divide(1.0, inverse_cube, out=inverse_cube)
        unit_pull = np.multiply(separation, inverse_cube, out=self._unit_pull)   # (d_j - d_i) / r_ij^3
        self._unit_pull_twice[:, :back, :planets] = unit_pull[:, :back]
        self._unit_pull_twice[:, :back, planets:] = unit_pull[:, :back]
        pull = self._pull
        np.multiply(unit_pull, self.gm_partner, out=pull[:, :rows])   # G m_j (d_j - d_i) / r^3 on i
        np.multiply(self._back_unit_pull, self.gm_back, out=pull[:, rows:])   # its reaction on j
        newtonian = folded_sum(pull, axis=1)                         # (3, planets, draws)
        interior = np.multiply(newtonian, self.masses.gm, out=self._scratch)
        planet_prefix_sums(interior)
        interior[:, :-1] *= self.inverse_interior_before[1:]
        newtonian[:, 1:] -= interior[:, :-1]
        return newtonian

    # -- the map -------------------------------------------------------------------------------
    def drift(self, xj, vj, dt) -> None:
        """Every Jacobi coordinate along its Kepler orbit about G eta_i for ``dt`` (in place)."""
        kepler_drift(xj, vj, self.interior, dt, self._drift_work)

    def energy(self, xj, vj, count: int | None = None) -> np.ndarray:
        """G times the total energy of each draw [au^5 d^-4], from synchronised positions and velocities.

        Kinetic energy sum_i m'_i v'_i^2 / 2 (Jacobi velocities give the
        barycentric kinetic energy, Wisdom & Holman 1991), potential
        -sum_i G m_0 m_i / r_i - sum_(i<j) G m_i m_j / r_ij. With ``count``,
        only for the first ``count`` draws of the arrays.
        """
        n = self.draws if count is None else count
        xj, vj = xj[:, :, :n], vj[:, :, :n]
        gm, gm_star = self.masses.gm[:, :n], self.masses.gm_star[:, :n]
        v2 = vj[0] * vj[0] + vj[1] * vj[1] + vj[2] * vj[2]
        kinetic = 0.5 * folded_sum(self.reduced[:, :n] * v2, axis=0)
        d = heliocentric_from_jacobi(xj, self.ratio[:, :n])
        r = np.sqrt(d[0] * d[0] + d[1] * d[1] + d[2] * d[2])
        potential = -folded_sum(gm_star * gm / r, axis=0)
        if self.planets > 1:
            separation = np.take(d, self.pairs.partner, axis=1) - d[:, None, :, :]
            r_pair = np.sqrt(separation[0] ** 2 + separation[1] ** 2 + separation[2] ** 2)
            pair = (self.pairs.weight[:, :, None] * gm) * self.gm_partner[:, :, :n] / r_pair
            potential -= folded_sum(folded_sum(pair, axis=0), axis=0)
        return kinetic + potential


def _cube(v, out) -> np.ndarray:
    """|v|^3 of vectors v shaped (3, ...), into ``out``."""
    r2 = v[0] * v[0]
    r2 += v[1] * v[1]
    r2 += v[2] * v[2]
    r3 = np.sqrt(r2, out=out)
    r3 *= r2
    return r3


def step_many(wh: WisdomHolman, xj, vj, dt, steps: int, acc=None) -> np.ndarray:
    """``steps`` Wisdom-Holman steps of length ``dt`` in place, with synchronised output.

    kick(h/2) [drift(h) kick(h)] ... drift(h) kick(h/2): positions and
    velocities at the end belong to the same time.

    Parameters
    ----------
    wh : WisdomHolman
    xj, vj : ndarray, shape (3, planets, draws)
        Jacobi positions [au] and velocities [au/d], updated in place.
    dt : float or ndarray
        Step of each draw [d], broadcasting against (planets, draws).
    steps : int
    acc : ndarray, optional
        Accelerations at the starting positions, if known.

    Returns
    -------
    ndarray
        Accelerations at the final positions (a work array of ``wh``).
    """
    dt = np.asarray(dt, dtype=float)
    half = 0.5 * dt
    acc = wh.accelerations(xj) if acc is None else acc
    wh.kick(vj, acc, half)
    for step in range(steps):
        wh.drift(xj, vj, dt)
        acc = wh.accelerations(xj)
        wh.kick(vj, acc, half if step == steps - 1 else dt)
    return acc
