"""Speed of the derivation of the default demo with the dynamics quantities. Prints medians.

Run: python tests/benchmarks/bench_dynamics.py

Prints the whole derivation of the default demo, nominal (target < 2 ms)
and with 4000 Monte Carlo draws (target < 20 ms), and the part the
dynamics quantities take (TTV amplitudes, AMD, Hill stability, overlap
zone) when every other input they read is already there.
"""

from __future__ import annotations

import statistics
import time

import numpy as np

from bench_derive import timings

from orbitdeck.demo_systems import demo_path
from orbitdeck.models import derive, load_system
from orbitdeck.models.engine.derive import Anchor
from orbitdeck.models.engine.draws import sampled_inputs
from orbitdeck.models.engine.inputs import nominal_inputs
from orbitdeck.models.engine.registry import Context

DYNAMICS = ("ttv_inner_min", "ttv_outer_min", "amd_kg_m2_s", "amd_critical", "amd_beta", "amd_stable",
            "hill_stable", "in_overlap_zone")
#: what the dynamics read that other quantities compute anyway
SHARED = ("a_m", "mass_kg", "star_mass_kg", "delta", "order", "period_ratio")


def median_ms(function, repeat: int) -> float:
    """Median wall time [ms] of ``repeat`` calls after one warm-up call."""
    return float(np.median(timings(function, repeat)))


def dynamics_only(inputs, anchor) -> float:
    """Seconds to compute the dynamics quantities in a context whose shared inputs are ready."""
    context = Context(inputs, anchor)
    for name in SHARED:
        getattr(context, name)
    start = time.perf_counter()
    for name in DYNAMICS:
        getattr(context, name)
    return time.perf_counter() - start


def without_amd(function):
    """``function`` run with the AMD declarations left out of the registry (then put back). The TTV ones
    stay: ``derive`` keeps the complex TTV amplitudes for the Dynamics view, and the warnings read the
    Hill-stability and overlap flags."""
    from orbitdeck.models.engine import registry

    registry.declared()   # fills the registry
    taken = {name: q for name, q in registry.REGISTRY.items()
             if q.function.__module__.endswith("quantities.dynamics")
             and (name.startswith("amd_") or name == "circular_momentum")}
    for name in taken:
        del registry.REGISTRY[name]
    try:
        return function()
    finally:
        registry.REGISTRY.update(taken)


def main() -> None:
    demo = load_system(demo_path())
    nominal = derive(demo)
    anchor = Anchor(pair_p=nominal.pairs["p"][None, :], pair_q=nominal.pairs["q"][None, :],
                    triple_p=np.asarray(nominal.triples["p"], dtype=int)[None, :],
                    triple_q=np.asarray(nominal.triples["q"], dtype=int)[None, :])
    draws = sampled_inputs(demo, 4000, 1)
    for label, call, inputs, context_anchor, target, repeat in (
            ("nominal:                ", lambda: derive(demo), nominal_inputs(demo), None, 2, 200),
            ("4000 Monte Carlo draws: ", lambda: derive(demo, samples=4000, seed=1), draws, anchor, 20, 30)):
        whole = median_ms(call, repeat)
        part = statistics.median(dynamics_only(inputs, context_anchor) for _ in range(repeat)) * 1e3
        before = without_amd(lambda: median_ms(call, repeat))
        print(f"derive, {len(demo.planets)}-planet demo, {label}{whole:8.3f} ms   (target < {target} ms); "
              f"the dynamics quantities alone {part:.3f} ms; without the AMD ones {before:.3f} ms")


if __name__ == "__main__":
    main()
