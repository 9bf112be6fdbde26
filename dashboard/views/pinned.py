"""The pinned reference state drawn beside the current one, in Layout and in the Period ladder.

``app.pinned`` is a pinned :class:`~orbitdeck.models.Derived` and
``app.pinned_elements`` its Keplerian elements, kept with it when it was
pinned (no derivation per frame). A derivation pinned from code without
its elements gets them made once from its own columns
(:func:`elements_of_derived`): the orbits are the same, but the transit
times that place the planets on them are not part of a derivation, so its
positions are left out.

The functions here turn those into the plain data of the views' layers:
Layout draws the pinned orbits dashed and the pinned planets as rings at
the current time, in the planets' colours; the ladder draws the pinned
period ratios (and their intervals, with draws) as rings beside the
current pair with the same planets.
"""

from __future__ import annotations

import numpy as np

from orbitdeck.models.motion import ephemeris

from .common import escape, interval, span_texts
from .orbit_drawing import curve_segments, dashed, ellipse_points, in_plane_positions, orbit_ellipses
from .pair_choice import pair_names

#: ladder: offsets of the pinned rings (inner planet's, outer planet's) and of their interval from the pair's
#: position; the current discs sit at -0.09 and +0.09
RING_OFFSETS = (0.28, 0.42)
RANGE_OFFSET = 0.35
#: ladder: colour of the pinned intervals
RANGE_COLOUR = "#555555"


def elements_of_derived(derived) -> ephemeris.OrbitalElements:
    """The Keplerian elements of ``derived``'s planets, from its own columns, with no transit times.

    The eccentricity comes back from the periastron distance q = a (1 - e)
    (Murray & Dermott 1999, sec. 2.4), so e = 1 - q / a. A derivation keeps
    no transit times: ``tref_d`` is NaN and ``tref_is_transit`` False, so
    such elements give orbits but no positions.
    """
    a = np.asarray(derived.planets["semi_major_axis_au"], dtype=float)
    extra = derived.extra
    periastron = np.asarray(extra["periastron_au"], dtype=float)
    n = a.size
    return ephemeris.OrbitalElements(
        names=tuple(str(name) for name in derived.planet_names), period_d=np.asarray(extra["period_d"], float),
        a_au=a, e=np.clip(1.0 - periastron / a, 0.0, None), inc_rad=np.asarray(extra["inclination_rad"], float),
        omega_rad=np.asarray(extra["omega_rad"], float), tref_d=np.full(n, np.nan),
        tref_is_transit=np.zeros(n, dtype=bool),
        warnings=("the pinned derivation keeps no transit times: its positions are not known",))


def elements_belong_to(elements, derived) -> bool:
    """Whether ``elements`` can be the elements of ``derived`` (the same planets, the same semi-major axes)."""
    return (elements is not None and derived is not None and tuple(elements.names) == tuple(derived.planet_names)
            and np.array_equal(np.asarray(elements.a_au, float),
                               np.asarray(derived.planets["semi_major_axis_au"], float)))


def elements_of_pin(pinned, elements, set_with_it: bool):
    """The elements to keep with the pinned derivation ``pinned``: None without one; ``elements`` when they
    were set with it (``set_with_it``) and belong to it; else made once from ``pinned`` itself
    (:func:`elements_of_derived`: orbits, no positions)."""
    if pinned is None:
        return None
    if set_with_it and elements_belong_to(elements, pinned):
        return elements
    return elements_of_derived(pinned)


def layout_layers(elements, colours, widths, time: float, view) -> dict:
    """The data of Layout's pinned layers: the orbits of ``elements`` dashed in the planets' ``colours`` (one
    line width each), and at ``time`` [BJD_TDB] the planets whose transit time is known; empty for None."""
    empty = np.zeros(0)
    if elements is None:
        nothing = np.zeros((0, 2))
        return {"pinned_orbits": {**curve_segments(nothing, nothing, [], [], view, view), "name": []},
                "pinned_planets": {"x": empty, "y": empty, "name": [], "colour": [], "r": empty, "f_deg": empty,
                                   "x_range": view, "y_range": view}}
    names = [str(n) for n in elements.names]
    ox, oy = ellipse_points(orbit_ellipses(elements.a_au, elements.e, elements.omega_rad))
    known = np.isfinite(np.asarray(elements.tref_d, dtype=float))
    x, y, r, f = (in_plane_positions(elements.take(np.flatnonzero(known)), time) if known.any()
                  else (empty, empty, empty, empty))
    return {"pinned_orbits": {**dashed(curve_segments(ox, oy, colours, widths, view, view), ox.shape[1] - 1),
                              "name": names},
            "pinned_planets": {"x": x, "y": y, "name": [n for n, k in zip(names, known) if k],
                               "colour": [c for c, k in zip(colours, known) if k], "r": r, "f_deg": np.degrees(f),
                               "x_range": view, "y_range": view}}


def pinned_apoastron_au(elements) -> float:
    """The largest apoastron distance a (1 + e) of the pinned orbits [au] (0 without planets)."""
    if elements is None or not len(elements.names):
        return 0.0
    return float(np.max(np.asarray(elements.a_au, float) * (1.0 + np.asarray(elements.e, float))))


def pinned_ratios(pinned, current) -> dict:
    """The pinned state's adjacent period ratios placed at the current pairs of the same two planets.

    Returns ``position`` (the current pair's index), ``ratio``, ``inner``,
    ``outer``, ``low`` and ``high`` (its 16th-84th percentile interval; NaN
    without draws) of each pinned pair that is also a pair now, and
    ``gone``: the names "inner\u2013outer" of the pinned pairs that are not.
    """
    now = {pair: i for i, pair in enumerate(pair_names(current))}
    then = pair_names(pinned) if pinned is not None else []
    kept = [i for i, pair in enumerate(then) if pair in now]
    ratio = np.asarray(pinned.pairs["period_ratio"], dtype=float)[kept] if pinned is not None else np.zeros(0)
    found = interval(pinned, "pairs", "period_ratio") if pinned is not None else None
    low, high = ((found[0][kept], found[1][kept]) if found is not None
                 else (np.full(len(kept), np.nan), np.full(len(kept), np.nan)))
    return {"position": np.array([now[then[i]] for i in kept], dtype=float), "ratio": ratio,
            "inner": [then[i][0] for i in kept], "outer": [then[i][1] for i in kept], "low": low, "high": high,
            "gone": [f"{a}\u2013{b}" for a, b in then if (a, b) not in now]}



def ladder_layers(then: dict, ratio, colours_of, x_range, y_range) -> dict:
    """The data of the ladder's pinned layers: each pinned ratio of :func:`pinned_ratios` as two rings (its
    inner and outer planet's colours, from ``colours_of(names)``) right of the current pair of the same
    planets (whose ratio now is ``ratio[position]``), and its interval, with draws, between the rings."""
    x, count = then["position"], then["position"].size
    pair = [f"{a}\u2013{b}" for a, b in zip(then["inner"], then["outer"])]
    now = np.asarray(ratio, dtype=float)[x.astype(int)] if count else np.zeros(0)
    spans = span_texts(then["low"], then["high"], digits=6)
    has_range = np.isfinite(then["low"]) & np.isfinite(then["high"])
    bar_x = x[has_range] + RANGE_OFFSET
    return {
        "pinned_pairs": {"x": np.concatenate([x + RING_OFFSETS[0], x + RING_OFFSETS[1]]),
                         "y": np.concatenate([then["ratio"]] * 2),
                         "colour": list(colours_of(then["inner"])) + list(colours_of(then["outer"])),
                         "pair": pair + pair, "now": np.concatenate([now, now]), "ratio_range": spans + spans,
                         "x_range": x_range, "y_range": y_range},
        "pinned_errors": {"x0": bar_x, "y0": then["low"][has_range], "x1": bar_x, "y1": then["high"][has_range],
                          "colour": [RANGE_COLOUR] * bar_x.size, "width": np.ones(bar_x.size),
                          "x_range": x_range, "y_range": y_range}}


def ladder_notes(pinned, label: str, current) -> list[str]:
    """The ladder's words on the pinned reference: what its rings are, and which of its pairs are not drawn."""
    if pinned is None:
        return []
    then = pinned_ratios(pinned, current)
    notes = [f"Rings right of each pair: the pinned reference ({escape(label or 'pinned')}), its period ratio "
             "for the same two planets" + (", with its 16th\u201384th percentiles dashed." if pinned.intervals
                                          else ".")]
    if then["gone"]:
        notes.append("Pairs of the reference whose planets are no longer neighbours are not drawn: "
                     + ", ".join(escape(g) for g in then["gone"]) + ".")
    return notes
