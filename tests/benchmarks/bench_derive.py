"""Speed of the derivation, nominal and with Monte Carlo intervals. Prints figures.

Run: python tests/benchmarks/bench_derive.py
"""

from __future__ import annotations

import subprocess
import sys
import time
from pathlib import Path

import astropy.constants as const
import astropy.units as u
import numpy as np

sys.path.insert(0, str(Path(__file__).parent))
from synthetic import synthetic_system  # noqa: E402

from orbitdeck.demo_systems import demo_path  # noqa: E402
from orbitdeck.models import derive, load_system  # noqa: E402
from orbitdeck.models.engine.draws import sampled_inputs  # noqa: E402


def best_of(function, repeat: int = 20) -> float:
    """Smallest wall time of ``repeat`` calls [ms], after one warm-up call."""
    function()
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        function()
        times.append(time.perf_counter() - start)
    return 1e3 * min(times)


def interleaved(ours, theirs, rounds: int = 6, calls: int = 4) -> tuple[float, float, list[float]]:
    """Best wall times [ms] of two functions measured in alternating rounds (so that both see
    the same machine: a shared machine's speed drifts by tens of percent within a minute), and
    the ratio theirs / ours of each round's bests."""
    best_ours, best_theirs, ratios = [], [], []
    for _ in range(rounds):
        best_ours.append(best_of(ours, calls))
        best_theirs.append(best_of(theirs, calls))
        ratios.append(best_theirs[-1] / best_ours[-1])
    return min(best_ours), min(best_theirs), ratios


def notebook_style(system, samples: int, seed: int = 1) -> None:
    """The core quantities as one would write them by hand: Quantity arrays, a loop over planets."""
    draws = sampled_inputs(system, samples, seed)
    m_star = draws.star_mass[:, 0] * u.M_sun
    r_star = draws.star_radius[:, 0] * u.R_sun
    teff = draws.star_teff[:, 0] * u.K
    lum = (4 * np.pi * r_star**2 * const.sigma_sb * teff**4).to(u.L_sun)
    t = teff.value - 5780.0
    hz = {name: np.sqrt(lum.value / (s + a * t + b * t**2 + c * t**3 + d * t**4)) * u.au
          for name, (s, a, b, c, d) in {"rv": (1.776, 2.136e-4, 2.533e-8, -1.332e-11, -3.097e-15),
                                        "rg": (1.107, 1.332e-4, 1.580e-8, -8.308e-12, -1.931e-15),
                                        "mg": (0.356, 6.171e-5, 1.698e-9, -3.198e-12, -5.575e-16),
                                        "em": (0.320, 5.547e-5, 1.526e-9, -2.874e-12, -5.011e-16)}.items()}
    results = []
    for i in range(draws.period.shape[1]):
        period = draws.period[:, i] * u.day
        mass = np.nan_to_num(draws.mass[:, i], nan=1.0) * u.M_earth
        radius = draws.radius[:, i] * u.R_earth
        a = ((const.G * (m_star + mass) * period**2 / (4 * np.pi**2)) ** (1 / 3)).to(u.au)
        s = (lum / u.L_sun) / (a / u.au) ** 2
        teq = (teff * np.sqrt(r_star / a) * (0.25 * (1 - 0.3)) ** 0.25).to(u.K)
        rho = (mass / (4 / 3 * np.pi * radius**3)).to(u.g / u.cm**3)
        results.append([np.percentile(q.value, [16, 84]) for q in (a, s, teq, rho)])
    ratios = [draws.period[:, i + 1] / draws.period[:, i] for i in range(draws.period.shape[1] - 1)]
    results.append([np.percentile(r, [16, 84]) for r in ratios])
    results.append([np.percentile(h.value, [16, 84]) for h in hz.values()])


def main() -> None:
    demo = load_system(demo_path())
    print(f"derive, {len(demo.planets)}-planet demo, nominal:        {best_of(lambda: derive(demo)):8.3f} ms"
          "   (target < 1 ms)")
    big = synthetic_system(1000, with_errors=False)
    print(f"derive, 1000-planet synthetic, nominal:     {best_of(lambda: derive(big), 5):8.3f} ms"
          "   (target < 20 ms)")
    for planets, target in ((7, 10), (30, 40)):
        system = synthetic_system(planets)
        ours, by_hand, ratios = interleaved(lambda: derive(system, samples=4000, seed=1),
                                            lambda: notebook_style(system, 4000))
        print(f"derive, {planets:2d} planets x 4000 samples, all:     {ours:8.3f} ms   (target < {target} ms); "
              f"core quantities by hand with Quantity arrays and a planet loop: {by_hand:8.3f} ms "
              f"(ratio {by_hand / ours:.2f}; per round {min(ratios):.2f}-{max(ratios):.2f})")
    start = time.perf_counter()
    subprocess.run([sys.executable, "-m", "orbitdeck.dashboard.cli", "table", "--json"], check=True,
                   stdout=subprocess.DEVNULL)
    print(f"orbitdeck table --json as a whole process:   {1e3 * (time.perf_counter() - start):8.1f} ms"
          "   (target < 2000 ms)")


if __name__ == "__main__":
    main()
