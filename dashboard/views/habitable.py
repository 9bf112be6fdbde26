"""The habitable zone's visual code, shared by Layout (distances) and Flux & temperature (insolation).

The zone runs from the recent-Venus limit (hottest) to the early-Mars limit
(coldest) of Kopparapu et al. 2014, as ``Derived`` gives them. It is drawn
as a band of steps graded from warm to cool, evenly in the logarithm of the
insolation (which is also even in the logarithm of the distance, d being
proportional to S^-1/2): solid over the conservative zone (runaway to
maximum greenhouse) and lighter and hatched over the two optimistic
extensions. When the limits are extrapolated beyond the fit's calibrated
range of Teff the band is drawn fainter and the legend says so.
"""

from __future__ import annotations

import numpy as np

from . import palette

#: the four limits, hottest first, with the names used in labels and legends
LIMITS = ("recent_venus", "runaway_greenhouse", "maximum_greenhouse", "early_mars")
LIMIT_NAMES = {"recent_venus": "recent Venus", "runaway_greenhouse": "runaway greenhouse",
               "maximum_greenhouse": "maximum greenhouse", "early_mars": "early Mars"}
#: the three parts between them
ZONES = ("optimistic (inner)", "conservative", "optimistic (outer)")
CONSERVATIVE_ALPHA, OPTIMISTIC_ALPHA = 0.9, 0.6
EXTRAPOLATED_FACTOR = 0.55


def limits_of(derived) -> dict | None:
    """The four limit distances [au] by name, or None when the derived state has no habitable zone."""
    hz = derived.star.get("hz_au")
    if not hz or any(hz.get(k) is None or not np.isfinite(hz[k]) for k in LIMITS):
        return None
    return {k: float(hz[k]) for k in LIMITS}


def extrapolated(derived) -> bool:
    """True when the limits lie outside the fit's calibrated range of Teff (a flag of the derived star)."""
    return bool(derived.star.get("hz_extrapolated", False))


def steps(edges, count: int = palette.HZ_STEPS):
    """The graded steps of the band between four increasing edges (distances, or any quantity
    whose logarithm is proportional to that of the insolation).

    Returns
    -------
    inner, outer : ndarray
        The edges of each step, inner (hot) side first.
    colour : list of str
        The colour of each step (graded by the step's middle across the whole band).
    zone : ndarray of int
        0, 1, 2 for the inner optimistic, conservative and outer optimistic part.
    """
    edges = np.log(np.asarray(edges, dtype=float))
    width = edges[-1] - edges[0]
    inner, outer, zone = [], [], []
    for part in range(3):
        lo, hi = edges[part], edges[part + 1]
        n = max(2, int(round(count * (hi - lo) / width))) if width > 0 else 1
        cuts = np.linspace(lo, hi, n + 1)
        inner.extend(cuts[:-1])
        outer.extend(cuts[1:])
        zone.extend([part] * n)
    inner, outer = np.array(inner), np.array(outer)
    middle = 0.5 * (inner + outer)
    fraction = (middle - edges[0]) / width if width > 0 else np.zeros_like(middle)
    return np.exp(inner), np.exp(outer), palette.hz_grade(fraction), np.array(zone)


def alphas(zone, faded: bool) -> np.ndarray:
    """Opacity of each step: solid in the conservative zone, lighter in the optimistic ones."""
    alpha = np.where(np.asarray(zone) == 1, CONSERVATIVE_ALPHA, OPTIMISTIC_ALPHA)
    return alpha * (EXTRAPOLATED_FACTOR if faded else 1.0)


def key_html(derived) -> str:
    """The key to the band beneath a plot: its grade, its hatching and the limits' source."""
    if limits_of(derived) is None:
        return ""
    warm, mild, cool = (palette.hz_grade([t])[0] for t in (0.0, 0.5, 1.0))
    hatch = palette.HZ_HATCH_COLOUR
    swatch = ("display:inline-block;width:34px;height:11px;vertical-align:-1px;margin:0 4px;"
              "border:1px solid #d8d2c4;")
    faded = extrapolated(derived)
    return (f'<span role="img" aria-label="graded band" style="{swatch}background:linear-gradient(90deg,'
            f'{warm},{mild},{cool})"></span>habitable zone (Kopparapu et al. 2014), warm inner edge (recent Venus) '
            f'to cool outer edge (early Mars); <span role="img" aria-label="hatched band" style="{swatch}'
            f'background:repeating-linear-gradient(135deg,{hatch} 0 2px,{warm} 2px 6px)"></span>hatched: the '
            "optimistic extensions, solid: the conservative zone"
            + ("; <b>faded: extrapolated beyond the fit's calibrated Teff range</b>" if faded else "") + ".")
