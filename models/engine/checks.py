"""Notes on doubtful but valid systems, and on estimates the reader should know of."""

from __future__ import annotations

import numpy as np

from ..physics import composition, dynamics, irradiation
from ..constants import AU, R_SUN
from ..files.system import System
from .quantities.skies import all_sky_rows

#: crossing pairs named one by one in the warnings; more are counted in one line
MAX_LISTED_CROSSINGS = 20


def collect_warnings(system: System, derived) -> list[str]:
    """The warnings of ``derived``, the nominal derivation of ``system``: :func:`system_warnings`,
    then :func:`estimate_notes`."""
    return system_warnings(system, derived) + estimate_notes(derived)


def system_warnings(system: System, derived) -> list[str]:
    """What is doubtful in ``system`` or beyond a model's reach there (crossing orbits, spacings
    below the Hill-stability limits, a host outside the habitable-zone fit's range...): each a
    reason to look at the file again, as ``orbitdeck check`` reports them."""
    warnings = []
    teff = system.star.teff
    lo, hi = irradiation.HZ_TEFF_RANGE
    if irradiation.HZ_EXTRAPOLATED_MIN_TEFF <= teff < lo:
        warnings.append(f"Teff = {teff:g} K is below {lo:g}-{hi:g} K, the calibrated range of the Kopparapu et al. "
                        "2014 habitable-zone fit; the habitable-zone limits and regions shown are extrapolated.")
    elif not lo <= teff <= hi:
        warnings.append(f"Teff = {teff:g} K is outside {lo:g}-{hi:g} K, the range of the Kopparapu et al. 2014 "
                        f"habitable-zone fit (extrapolated down to {irradiation.HZ_EXTRAPOLATED_MIN_TEFF:g} K only); "
                        "the model does not apply to this host, so no habitable-zone limits or regions are given.")
    pl = derived.planets
    star_radius_au = system.star.radius * R_SUN / AU
    for name, peri in zip(pl["name"], derived.extra["periastron_au"]):
        if peri <= star_radius_au:
            warnings.append(f"planet {name}: periastron {peri:.4g} au is inside the star ({star_radius_au:.4g} au).")
    for name, r, est in zip(pl["name"], pl["radius_rearth"], pl["mass_estimated"]):
        if est and r >= composition.R_NEPTUNIAN_MAX:
            warnings.append(f"planet {name}: radius {r:g} Rearth is in the giant regime, where mass cannot be "
                            "estimated from radius; the mass shown is a placeholder (0.414 Mjup).")
    if system.star.j_mag is not None:
        for name, r in zip(pl["name"], pl["radius_rearth"]):
            if r >= 10.0:
                warnings.append(f"planet {name}: TSM is defined for radii below 10 Rearth (Kempton et al. 2018).")
    sk = derived.skies
    observer, body = all_sky_rows(len(pl["name"]))
    crossed = np.flatnonzero((body > observer) & (sk["closest_distance_au"] == 0.0))
    for a, b in zip(sk["observer"][crossed[:MAX_LISTED_CROSSINGS]], sk["body"][crossed[:MAX_LISTED_CROSSINGS]]):
        warnings.append(f"planets {a} and {b}: their orbits cross.")
    if crossed.size > MAX_LISTED_CROSSINGS:
        warnings.append(f"... and {crossed.size - MAX_LISTED_CROSSINGS} more pairs of planets whose orbits cross.")
    pr = derived.pairs
    eccentric = np.array([p.eccentricity > 0.0 for p in system.planets])
    eccentric_pair = eccentric[:-1] | eccentric[1:]
    for a, b, spacing, stable, with_e in zip(pr["inner"], pr["outer"], pr["mutual_hill_spacing"], pr["hill_stable"],
                                             eccentric_pair):
        if with_e and not stable:   # the circular-orbit limit below does not hold for eccentric orbits
            warnings.append(f"planets {a} and {b}: not Hill stable for their eccentricities (Gladman 1993 "
                            f"criterion with eccentricities; spacing {spacing:.2f} mutual Hill radii).")
        elif not with_e and spacing < dynamics.HILL_STABLE_SPACING:
            warnings.append(f"planets {a} and {b}: spacing {spacing:.2f} mutual Hill radii is below "
                            "2 sqrt(3), the Hill-stability limit for circular orbits (Gladman 1993).")
    for a, b in zip(pr["inner"][pr["in_overlap_zone"]], pr["outer"][pr["in_overlap_zone"]]):
        warnings.append(f"planets {a} and {b}: inside the zone of overlapping first-order resonances "
                        "(Deck, Payne & Holman 2013), where the motion is expected to be chaotic.")
    return warnings


def estimate_notes(derived) -> list[str]:
    """Estimates a reader of ``derived`` should know of, common in valid files (masses from radii)."""
    pl = derived.planets
    estimated = [str(n) for n, est in zip(pl["name"], pl["mass_estimated"]) if est]
    if not estimated:
        return []
    return ["masses of " + ", ".join(estimated) + " are estimated from radius (Chen & Kipping 2017), not measured."]
