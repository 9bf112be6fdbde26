"""What an N-body ensemble found: outcomes per draw, transit-timing variations and summaries.

TTVs are the residuals of each planet's transit times from a straight-line
ephemeris t_n = T_0 + n P fitted by least squares (common practice, e.g.
Agol & Fabrycky 2018, "Transit-timing and duration variations", in
Handbook of Exoplanets), and a planet's TTV amplitude is half the range of
its residuals. An integration shorter than the TTV super-period lets the
fitted line absorb part of the signal: the amplitude is then a lower bound.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

import numpy as np
from scipy.stats import binomtest

from .chunk import OUTCOME_NAMES, SURVIVED, Settings

FORMAT = "orbitdeck-ensemble/1"
#: one-sigma probability of a normal, for the binomial interval and the percentile bands
ONE_SIGMA = 0.6827
MINUTES_PER_DAY = 1440.0
ASSUMPTIONS = ("Model estimates: the star and planets as point masses under Newtonian gravity (no tides, no "
               "general relativity, no collisions), integrated with the Wisdom-Holman map at a fixed step; "
               "masses estimated from radii where none is measured; transit-time uncertainties not sampled.")


def linear_ephemeris_residuals(times) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Least-squares straight line t_n = T_0 + n P through each row of transit times, and the residuals.

    Parameters
    ----------
    times : ndarray, shape (..., transits)
        Consecutive mid-transit times (transit number n = column), NaN where none.

    Returns
    -------
    (ndarray, ndarray, ndarray)
        T_0 and P shaped ``times.shape[:-1]`` (NaN for fewer than two transits), and the residuals
        t_n - T_0 - n P shaped like ``times``.
    """
    times = np.asarray(times, dtype=float)
    valid = np.isfinite(times)
    n = np.broadcast_to(np.arange(times.shape[-1], dtype=float), times.shape)
    count = valid.sum(axis=-1)
    with np.errstate(invalid="ignore", divide="ignore"):
        n_mean = np.where(valid, n, 0.0).sum(axis=-1) / count
        t_mean = np.where(valid, times, 0.0).sum(axis=-1) / count
        dn = np.where(valid, n - n_mean[..., None], 0.0)
        dt = np.where(valid, times - t_mean[..., None], 0.0)
        period = (dn * dt).sum(axis=-1) / (dn * dn).sum(axis=-1)
    t0 = t_mean - period * n_mean
    return t0, period, times - (t0[..., None] + n * period[..., None])


def half_range(residuals, minimum_count: int = 3) -> np.ndarray:
    """Half the range (max - min) / 2 of each row, NaN for rows with fewer than ``minimum_count`` values."""
    residuals = np.asarray(residuals, dtype=float)
    valid = np.isfinite(residuals)
    high = np.where(valid, residuals, -np.inf).max(axis=-1, initial=-np.inf)
    low = np.where(valid, residuals, np.inf).min(axis=-1, initial=np.inf)
    return np.where(valid.sum(axis=-1) >= minimum_count, 0.5 * (high - low), np.nan)


def binomial_interval(successes: int, trials: int, level: float = ONE_SIGMA) -> tuple[float, float]:
    """Wilson score interval of a proportion (Wilson 1927, JASA 22, 209), via scipy.stats.binomtest."""
    ci = binomtest(int(successes), int(trials)).proportion_ci(confidence_level=level, method="wilson")
    return float(ci.low), float(ci.high)


def _number(x):
    """A float for JSON, None for NaN or infinity."""
    x = float(x)
    return x if np.isfinite(x) else None


@dataclass(frozen=True)
class EnsembleResult:
    """Per-draw outcomes of an ensemble (arrays over draws; planets in period order).

    Attributes
    ----------
    outcome : ndarray of int8
        SURVIVED (0) or the stopping reason (chunk.OUTCOME_NAMES).
    survival_orbits : ndarray
        Orbits of the draw's innermost planet before it stopped; ``orbits`` for survivors.
    megno : ndarray
        Mean MEGNO <Y> at the end (about 2 quasi-periodic, larger chaotic); NaN without the indicator.
    energy_error : ndarray
        Relative energy error at the last check.
    transit_times : tuple of ndarray
        Per planet, (draws, slots) mid-transit times [BJD_TDB, d], NaN after the last.
    inner_period : ndarray
        Each draw's innermost period [d].
    """

    system_name: str
    names: tuple
    epoch: float
    draws: int
    orbits: int
    seed: int | None
    settings: Settings
    inner_period: np.ndarray
    outcome: np.ndarray
    survival_orbits: np.ndarray
    megno: np.ndarray
    energy_error: np.ndarray
    transit_times: tuple
    mass_estimated: np.ndarray
    warnings: tuple = ()

    @property
    def stable(self) -> np.ndarray:
        """Draws that survived every stopping rule to the end."""
        return self.outcome == SURVIVED

    @property
    def stable_fraction(self) -> float:
        return float(np.count_nonzero(self.stable)) / self.draws

    @property
    def stable_interval(self) -> tuple[float, float]:
        """68.27 % Wilson interval of the stable fraction."""
        return binomial_interval(np.count_nonzero(self.stable), self.draws)

    @cached_property
    def ttv_residuals_min(self) -> tuple:
        """Per planet, (draws, slots) residuals from each draw's linear ephemeris [min]."""
        return tuple(MINUTES_PER_DAY * linear_ephemeris_residuals(t - self.epoch)[2] for t in self.transit_times)

    @cached_property
    def ttv_amplitude_min(self) -> np.ndarray:
        """(draws, planets) half range of each planet's TTVs [min]."""
        return np.stack([half_range(r) for r in self.ttv_residuals_min], axis=1)

    def ttv_summary(self) -> np.ndarray:
        """(planets, 3) 16th, 50th, 84th percentiles of the TTV amplitude over the stable draws [min]."""
        stable = self.ttv_amplitude_min[self.stable]
        result = np.full((len(self.names), 3), np.nan)
        for_planet = np.isfinite(stable).any(axis=0)
        if stable.size and for_planet.any():
            result[for_planet] = np.nanpercentile(stable[:, for_planet], [16.0, 50.0, 84.0], axis=0).T
        return result

    def ttv_band(self, planet: int) -> tuple[np.ndarray, np.ndarray]:
        """The TTV curve of one planet over the stable draws, transit by transit.

        Returns
        -------
        (ndarray, ndarray)
            The median mid-transit time of each transit number [BJD_TDB, d] (NaN where no stable draw
            has it), and the 16th, 50th and 84th percentiles of the TTVs there [min], shaped (3, slots).
        """
        times = self.transit_times[planet][self.stable]
        residuals = self.ttv_residuals_min[planet][self.stable]
        seen = np.isfinite(times).any(axis=0)
        middle = np.full(times.shape[1], np.nan)
        band = np.full((3, times.shape[1]), np.nan)
        if seen.any():
            middle[seen] = np.nanmedian(times[:, seen], axis=0)
            band[:, seen] = np.nanpercentile(residuals[:, seen], [16.0, 50.0, 84.0], axis=0)
        return middle, band

    def survival_curve(self) -> tuple[np.ndarray, np.ndarray]:
        """The empirical survival function: after t orbits, the fraction of draws still running.

        Returns
        -------
        (ndarray, ndarray)
            The distinct stopping times t_k [orbits of the innermost planet], ending with ``orbits``, and
            the fraction of draws that ran beyond each (a step function, right-continuous).
        """
        times = np.unique(np.append(self.survival_orbits, float(self.orbits)))
        beyond = (self.survival_orbits[None, :] > times[:, None]).mean(axis=1)
        stable_to_end = float(np.count_nonzero(self.stable)) / self.draws
        return times, np.where(times >= self.orbits, stable_to_end, beyond)

    def outcome_counts(self) -> dict:
        return {name: int(np.count_nonzero(self.outcome == code)) for code, name in OUTCOME_NAMES.items()}

    def to_dict(self) -> dict:
        """The JSON document (format orbitdeck-ensemble/1); NaN becomes null."""
        s = self.settings
        low, high = self.stable_interval
        ttv = self.ttv_summary()
        megno_stable = self.megno[self.stable]
        return {
            "format": FORMAT, "system": self.system_name, "epoch": self.epoch,
            "draws": self.draws, "orbits": self.orbits, "seed": self.seed,
            "integrator": {"method": "Wisdom-Holman map, Jacobi coordinates, Kepler drift in universal variables",
                           "step_fraction_of_inner_period": 1.0 / s.steps_per_orbit,
                           "close_encounter_hill_radii": s.hill_multiple,
                           "ejection_outer_semi_major_axes": s.ejection_multiple,
                           "energy_error_threshold": s.energy_threshold,
                           "chaos_indicator": "MEGNO from a renormalised shadow trajectory" if s.chaos else None},
            "stable_fraction": self.stable_fraction,
            "stable_interval": [low, high],
            "stable_interval_method": "Wilson score interval, 68.27 %",
            "outcomes": self.outcome_counts(),
            "survival_orbits": [float(x) for x in self.survival_orbits],
            "survival_orbits_percentiles": dict(zip(("16", "50", "84"), (
                float(x) for x in np.percentile(self.survival_orbits, [16.0, 50.0, 84.0])))),
            "megno": [_number(x) for x in self.megno],
            "megno_median_stable": _number(np.nanmedian(megno_stable)) if np.isfinite(megno_stable).any() else None,
            "planets": [
                {"name": name, "mass_estimated": bool(estimated),
                 "ttv_amplitude_min": _number(ttv[j, 1]),
                 "ttv_amplitude_interval_min": [_number(ttv[j, 0]), _number(ttv[j, 2])]}
                for j, (name, estimated) in enumerate(zip(self.names, self.mass_estimated))],
            "assumptions": ASSUMPTIONS,
            "warnings": list(self.warnings),
        }


def ttv_sinusoid(times, period) -> tuple[np.ndarray, np.ndarray]:
    """Amplitude and phase of the sinusoid of period ``period`` in each row of transit times.

    Least squares of t_n = T_0 + n P + A sin(2 pi t_n / period) + B cos(2 pi t_n / period)
    (the TTV signal of a near-resonant pair is such a sinusoid at the
    super-period, Lithwick, Xie & Wu 2012, ApJ 761, 122, eqs. 8-9; fitting
    it with the ephemeris is common practice).

    Parameters
    ----------
    times : ndarray, shape (..., transits)
        Consecutive mid-transit times [d], NaN where none (times after the epoch keep precision).
    period : float or ndarray
        Period of the sinusoid [d], broadcasting against ``times.shape[:-1]``.

    Returns
    -------
    (ndarray, ndarray)
        Semi-amplitude sqrt(A^2 + B^2) [d] and phase atan2(B, A) [rad], shaped ``times.shape[:-1]``
        (NaN for rows with fewer than five transits).
    """
    times = np.asarray(times, dtype=float)
    valid = np.isfinite(times)
    t = np.where(valid, times, 0.0)
    # centred transit numbers and times keep the normal equations well conditioned
    count = valid.sum(axis=-1, keepdims=True)
    with np.errstate(invalid="ignore", divide="ignore"):
        n = np.arange(times.shape[-1], dtype=float) - (np.where(valid, np.arange(times.shape[-1]), 0).sum(
            axis=-1, keepdims=True) / count)
        t_centre = t.sum(axis=-1, keepdims=True) / count
    angle = 2.0 * np.pi * t / np.asarray(period, dtype=float)[..., None]
    weight = valid.astype(float)
    design = np.stack([weight, n * weight, np.sin(angle) * weight, np.cos(angle) * weight], axis=-1)
    normal = np.einsum("...ki,...kj->...ij", design, design)
    right = np.einsum("...ki,...k->...i", design, np.where(valid, t - t_centre, 0.0))
    enough = count[..., 0] >= 5
    normal[~enough] = np.eye(4)
    coefficients = np.linalg.solve(normal, right[..., None])[..., 0]
    a, b = coefficients[..., 2], coefficients[..., 3]
    return (np.where(enough, np.sqrt(a * a + b * b), np.nan), np.where(enough, np.arctan2(b, a), np.nan))
