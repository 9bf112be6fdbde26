"""Dynamics of adjacent pairs and of the system: TTV amplitudes, AMD stability, Hill stability,
first-order resonance overlap.

Every quantity here is a model estimate under stated assumptions: orbits
coplanar (no file gives nodes, so mutual inclinations are zero), masses as
measured or estimated from the radii, the free eccentricity Z_free of the
TTV amplitudes as the file's assumption (zero by default). Monte Carlo
draws keep each pair's nominal commensurability (the context's anchor).
"""

import numpy as np

from ...physics import amd, dynamics, ttv
from ...constants import DAY, MINUTE
from ..registry import inner, intermediate, outer, quantity

_DYNAMICS = "Dynamics (coplanar orbits; model estimates)"


@intermediate("planets", description="planet mass over the star's, m / M*")
def mass_ratio(c):
    return c.mass_kg / c.star_mass_kg


@intermediate("pairs", description="semi-major-axis ratio a_inner / a_outer")
def pair_alpha(c):
    return inner(c.a_m) / outer(c.a_m)


@intermediate("pairs", description="mass ratio m_inner / m_outer")
def pair_gamma(c):
    return inner(c.mass_kg) / outer(c.mass_kg)


@intermediate("pairs", description="(m_inner + m_outer) / M*")
def pair_epsilon(c):
    return inner(c.mass_ratio) + outer(c.mass_ratio)


# -- TTV amplitudes (Lithwick, Xie & Wu 2012) ---------------------------------------------------

@intermediate("pairs", description="where the near-resonant TTV formulae apply: first-order rung, "
                                   "resonance width < |Delta| < 0.1, outside the zone of overlapping resonances")
def ttv_applies(c):
    size = np.abs(c.delta)
    near = (c.order == 1) & (size > ttv.resonance_width(c.pair_epsilon)) & (size < ttv.MAX_ABS_DELTA)
    return near & ~c.in_overlap_zone   # one isolated resonance is what the formulae describe


@intermediate("pairs", description="LXW12's f and g at each pair's alpha (NaN where the formulae do not apply)")
def ttv_coefficients(c):
    alpha = np.where(c.ttv_applies, c.pair_alpha, np.nan)
    return ttv.resonance_coefficients(alpha, np.asarray(c.pair_p).reshape(-1))


@intermediate("system", description="the free eccentricity Z_free (complex), shaped (draws, 1)")
def z_free(c):
    return ttv.free_eccentricity(c.free_eccentricity_amplitude, c.free_eccentricity_angle)


@intermediate("pairs", unit="d", description="complex TTV amplitude V of the inner planet")
def ttv_inner_complex(c):
    f, _ = c.ttv_coefficients
    with np.errstate(divide="ignore", invalid="ignore"):
        return ttv.ttv_amplitude_inner(inner(c.period), outer(c.mass_ratio), c.pair_p, c.delta, f, c.z_free)


@intermediate("pairs", unit="d", description="complex TTV amplitude V' of the outer planet")
def ttv_outer_complex(c):
    _, g = c.ttv_coefficients
    with np.errstate(divide="ignore", invalid="ignore"):
        return ttv.ttv_amplitude_outer(outer(c.period), inner(c.mass_ratio), c.pair_p, c.delta, g, c.z_free)


@quantity("pairs", unit="min", label="TTV inner", fmt=".3g",
          description="TTV amplitude |V| of the inner planet near a first-order commensurability, for the "
                      "assumed free eccentricity (null outside the formula's range)",
          source="lithwick2012", estimate=True, group=_DYNAMICS, views=("dynamics",))
def ttv_inner_min(c):
    return np.abs(c.ttv_inner_complex) * (DAY / MINUTE)


@quantity("pairs", unit="min", label="TTV outer", fmt=".3g",
          description="TTV amplitude |V'| of the outer planet near a first-order commensurability, for the "
                      "assumed free eccentricity (null outside the formula's range)",
          source="lithwick2012", estimate=True, group=_DYNAMICS, views=("dynamics",))
def ttv_outer_min(c):
    return np.abs(c.ttv_outer_complex) * (DAY / MINUTE)


@quantity("system", key="free_eccentricity.amplitude", label="|Z_free|",
          description="assumed free-eccentricity amplitude |Z_free| of the TTV amplitudes", source="lithwick2012",
          estimate=True)
def free_eccentricity_amplitude_assumed(c):
    return np.broadcast_to(c.free_eccentricity_amplitude, (c.free_eccentricity_amplitude.shape[0], 1))


@quantity("system", key="free_eccentricity.angle", unit="deg", label="arg Z_free",
          description="assumed angle of the free eccentricity Z_free", source="lithwick2012", estimate=True)
def free_eccentricity_angle_assumed(c):
    return np.broadcast_to(c.free_eccentricity_angle, (c.free_eccentricity_angle.shape[0], 1))


# -- AMD stability (Laskar & Petit 2017; Petit, Laskar & Boue 2017) -----------------------------

@intermediate("planets", unit="kg m2 / s", description="Lambda = m sqrt(G M* a), the circular orbit's angular momentum")
def circular_momentum(c):
    return amd.circular_angular_momentum(c.mass_kg, c.star_mass_kg, c.a_m)


@quantity("system", unit="kg m2 / s", unit_label="kg m2/s", label="AMD", fmt=".3g",
          description="angular momentum deficit of the system (mutual inclinations taken as zero)",
          source="laskar_petit2017", estimate=True, group=_DYNAMICS)
def amd_kg_m2_s(c):
    return np.sum(amd.angular_momentum_deficit(c.circular_momentum, c.eccentricity), axis=1, keepdims=True)


@quantity("pairs", label="C_c/Lambda'", fmt=".3g",
          description="critical AMD of the pair relative to the outer planet's Lambda', with the first-order "
                      "resonance-overlap correction for close pairs (coplanar orbits)",
          source="petit_laskar_boue2017", estimate=True, views=("dynamics",))
def amd_critical(c):
    return amd.critical_amd(c.pair_alpha, c.pair_gamma, c.pair_epsilon)


@quantity("pairs", label="beta (AMD)", fmt=".3g",
          description="the system's AMD over the pair's critical AMD; AMD-stable below 1 (infinite, shown as "
                      "null, inside the overlap zone of circular orbits)",
          source="laskar_petit2017", estimate=True, group=_DYNAMICS, views=("dynamics",))
def amd_beta(c):
    return amd.amd_beta(c.amd_kg_m2_s, outer(c.circular_momentum), c.amd_critical)


@quantity("system", kind="bool", label="AMD-stable",
          description="every adjacent pair has beta < 1 and the innermost planet cannot reach the star "
                      "(a sufficient condition for long-term stability; coplanar orbits)",
          source="laskar_petit2017", estimate=True, group=_DYNAMICS)
def amd_stable(c):
    pairs_stable = np.all(c.amd_beta < 1.0, axis=1, keepdims=True)
    return pairs_stable & (amd.star_collision_beta(c.amd_kg_m2_s, c.circular_momentum[:, :1]) < 1.0)


# -- Hill stability and resonance overlap ---------------------------------------------------------

@quantity("pairs", kind="bool", label="Hill stable",
          description="Hill stable for the given eccentricities (Gladman 1993, coplanar orbits)",
          source="gladman1993", estimate=True, group=_DYNAMICS, views=("dynamics",))
def hill_stable(c):
    return dynamics.gladman_hill_stable(inner(c.a_m), outer(c.a_m), inner(c.eccentricity), outer(c.eccentricity),
                                        inner(c.mass_ratio), outer(c.mass_ratio))


@quantity("pairs", kind="bool", label="overlap zone",
          description="inside the zone where first-order resonances overlap, 1.46 ((m+m')/M*)^(2/7) "
                      "(nearly circular orbits)",
          source="deck2013", estimate=True, group=_DYNAMICS, views=("dynamics",))
def in_overlap_zone(c):
    return dynamics.in_overlap_zone(inner(c.a_m), outer(c.a_m), c.pair_epsilon)


@quantity("pairs", label="overlap edge P2/P1", fmt=".5f",
          description="period ratio below which first-order resonances overlap: the edge 1.46 ((m+m')/M*)^(2/7) "
                      "of (a'-a)/a through Kepler's third law (nearly circular orbits)",
          source="deck2013", estimate=True, group=_DYNAMICS, views=("dynamics",))
def overlap_period_ratio(c):
    return dynamics.overlap_period_ratio(c.pair_epsilon, inner(c.mass_ratio), outer(c.mass_ratio))
