"""Synthetic systems of any size for benchmarks (invented, not real systems)."""

from __future__ import annotations

import numpy as np

from orbitdeck.models import Planet, Star, System, Uncertainty


def synthetic_system(planets: int, seed: int = 7, with_errors: bool = True, eccentric: bool = True) -> System:
    """A made-up M-dwarf system of ``planets`` small planets spaced by period ratios of 1.3-1.6
    (or just above 1 for more than 40 planets).

    With ``eccentric`` every orbit has a small eccentricity (0-0.05) with an
    uncertainty of 0.01; without it every orbit is circular and its
    eccentricity is taken as exact, as for a chain whose eccentricities are
    not measured (every other value is the same).
    """
    rng = np.random.default_rng(seed)
    # a crowded system keeps its periods in range with ratios just above 1
    ratios = rng.uniform(1.3, 1.6, planets) if planets <= 40 else rng.uniform(1.002, 1.01, planets)
    periods = 1.2 * np.cumprod(ratios)
    star = Star(name="synthetic", mass=0.2, radius=0.22, teff=3200.0, j_mag=9.5, k_mag=8.8)
    members = []
    for i, period in enumerate(periods):
        radius, mass = float(rng.uniform(0.7, 2.5)), float(rng.uniform(0.5, 6.0)) if i % 3 else None
        eccentricity = float(rng.uniform(0.0, 0.05))   # drawn either way, so the other values stay the same
        planet = Planet(name=f"p{i + 1}", period=float(period), radius=radius, mass=mass,
                        eccentricity=eccentricity if eccentric else 0.0, inclination=89.5)
        if with_errors:
            planet.uncertainties = {"period": Uncertainty.from_sigma(1e-4 * period),
                                    "radius": Uncertainty(0.05, 0.04)}
            if eccentric:
                planet.uncertainties = {**planet.uncertainties, "eccentricity": Uncertainty.from_sigma(0.01)}
            if planet.mass is not None:
                planet.uncertainties = {**planet.uncertainties, "mass": Uncertainty.from_sigma(0.15 * planet.mass)}
        members.append(planet)
    if with_errors:
        star.uncertainties = {"mass": Uncertainty.from_sigma(0.006), "radius": Uncertainty(0.008, 0.006),
                              "teff": Uncertainty.from_sigma(70.0)}
    return System(name=f"synthetic {planets}", star=star, planets=members)
