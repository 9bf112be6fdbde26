"""Timing of Kepler's equation, positions, the sky from one planet and close approaches.

Run as ``python tests/benchmarks/bench_kepler.py``; prints figures, asserts nothing.
Targets: 10^6 Kepler solves < 150 ms; the sky over 1000 times for 7 planets < 50 ms.
"""

import time

import numpy as np

from orbitdeck.models.motion import ephemeris, kepler, sky_view
from orbitdeck.models.files.system import Planet, Star, System


def best_of(func, repeat=7):
    """Shortest wall time of ``repeat`` calls [s] (CPU time is printed too on a shared machine)."""
    times, cpu = [], []
    for _ in range(repeat):
        start, start_cpu = time.perf_counter(), time.process_time()
        func()
        times.append(time.perf_counter() - start)
        cpu.append(time.process_time() - start_cpu)
    best_of.cpu = min(cpu)
    return min(times)


def seven_planets():
    """An invented compact system of seven planets around a late M dwarf."""
    periods = [1.6, 2.5, 4.1, 6.2, 9.3, 12.5, 18.9]
    return System(name="bench", star=Star(mass=0.09, radius=0.12, teff=2600.0), planets=[
        Planet(name=name, period=p, radius=1.0, eccentricity=0.01 * k, omega=30.0 * k,
               inclination=89.5 + 0.05 * k, transit_time=2461000.0 + 0.3 * k)
        for k, (name, p) in enumerate(zip("bcdefgh", periods))])


def main():
    rng = np.random.default_rng(1)
    n = 10 ** 6
    M = rng.uniform(0.0, 2 * np.pi, n)
    e = rng.uniform(0.0, 0.9, n)
    t = best_of(lambda: kepler.solve_kepler(M, e))
    print(f"solve_kepler, 1e6 solves, e in [0, 0.9]: {t * 1e3:7.1f} ms  (CPU {best_of.cpu * 1e3:.1f} ms; "
          f"target < 150 ms)")
    e99 = rng.uniform(0.0, 0.99, n)
    t = best_of(lambda: kepler.solve_kepler(M, e99))
    print(f"solve_kepler, 1e6 solves, e in [0, 0.99]: {t * 1e3:6.1f} ms  (CPU {best_of.cpu * 1e3:.1f} ms)")

    system = seven_planets()
    times = 2461000.0 + np.linspace(0.0, 100.0, 1000)
    elements = ephemeris.orbital_elements(system)
    t = best_of(lambda: ephemeris.positions(elements, times))
    print(f"positions, 1000 times x 7 planets:        {t * 1e3:7.2f} ms")
    t = best_of(lambda: sky_view.sky_from(system, "e", times))
    print(f"sky_from one planet, 1000 times, 7 planets: {t * 1e3:5.2f} ms  (CPU {best_of.cpu * 1e3:.2f} ms; "
          f"target < 50 ms)")
    t = best_of(lambda: sky_view.sky_document(system, "e", 2461000.0))
    print(f"sky_document, one time:                   {t * 1e3:7.2f} ms")
    t = best_of(lambda: sky_view.close_approaches(system, "e", 2461000.0, 3), repeat=3)
    print(f"close_approaches, 6 planets x 3 minima:   {t * 1e3:7.1f} ms")


if __name__ == "__main__":
    main()
