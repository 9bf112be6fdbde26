"""Monte Carlo intervals against first-order error propagation, and the sampler's guarantees."""

import json

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import stats

from orbitdeck.models import Planet, Star, System, Uncertainty, derive
from orbitdeck.models.engine.draws import sampled_inputs
from orbitdeck.models.engine.registry import Context

N = 20000


def _star(**spreads):
    star = Star(name="s", mass=1.0, radius=1.0, teff=5772.0)
    for key, spread in spreads.items():
        star.set_uncertainty(key, spread)
    return star


def _planet(name="b", value=100.0, radius_value=1.0, mass_value=1.0, **spreads):
    """A planet with period ``value``; keyword arguments are Uncertainty objects of its fields."""
    planet = Planet(name=name, period=value, radius=radius_value, mass=mass_value)
    for key, spread in spreads.items():
        planet.set_uncertainty(key, spread)
    return planet


def _half_width(derived, table, key, index=0):
    lo, hi = derived.intervals[table][key]
    return 0.5 * (hi[index] - lo[index])


@pytest.fixture(scope="module")
def one_percent():
    """A Sun-like star with 1 % errors on M, R and Teff and a planet with a 2 % radius error."""
    sigma = Uncertainty.from_sigma
    system = System(star=_star(mass=sigma(0.01), radius=sigma(0.01), teff=sigma(57.72)),
                    planets=[_planet(radius=sigma(0.02))])
    return system, derive(system, samples=N, seed=2024)


def test_teq_interval_matches_first_order_propagation(one_percent):
    _, derived = one_percent
    teq = derived.planets["teq_k"][0]
    # Teq ~ Teff R^(1/2) a^(-1/2) with a ~ M^(1/3): first-order propagation of independent errors
    # (Taylor, An Introduction to Error Analysis, 1997, section 3.8, from memory)
    expected = teq * np.sqrt(0.01**2 + (0.01 / 2) ** 2 + (0.01 / 6) ** 2)
    # the 16-84 % half-width of a normal is one sigma; Monte Carlo noise at N = 20000 is ~1 %
    assert _half_width(derived, "planets", "teq_k") == pytest.approx(expected, rel=0.05)


def test_semi_major_axis_and_insolation_intervals_match_propagation(one_percent):
    _, derived = one_percent
    a = derived.planets["semi_major_axis_au"][0]
    s = derived.planets["insolation_earth"][0]
    # a ~ M^(1/3); S = L / a^2 with L ~ R^2 Teff^4, so S ~ R^2 Teff^4 M^(-2/3)
    assert _half_width(derived, "planets", "semi_major_axis_au") == pytest.approx(a * 0.01 / 3, rel=0.05)
    expected_s = s * np.sqrt((2 * 0.01) ** 2 + (4 * 0.01) ** 2 + (2 / 3 * 0.01) ** 2)
    assert _half_width(derived, "planets", "insolation_earth") == pytest.approx(expected_s, rel=0.05)


def test_transit_depth_interval_matches_propagation(one_percent):
    _, derived = one_percent
    depth = derived.planets["transit_depth_ppm"][0]
    # depth = (Rp / R*)^2: relative sigma sqrt((2 sRp/Rp)^2 + (2 sR*/R*)^2)
    expected = depth * np.sqrt((2 * 0.02) ** 2 + (2 * 0.01) ** 2)
    assert _half_width(derived, "planets", "transit_depth_ppm") == pytest.approx(expected, rel=0.05)


def test_exact_inputs_give_zero_width_intervals(one_percent):
    _, derived = one_percent
    # the period carries no uncertainty: its interval is the value itself
    lo, hi = derived.intervals["planets"]["period_d"]
    assert lo[0] == hi[0] == 100.0
    system = System(star=_star(mass=Uncertainty.from_sigma(0.05)), planets=[_planet(), _planet("c", 180.0)])
    d = derive(system, samples=500, seed=1)
    for key in ("radius_rearth", "transit_depth_ppm", "period_d"):
        lo, hi = d.intervals["planets"][key]
        np.testing.assert_array_equal(lo, hi)
        np.testing.assert_array_equal(lo, d.planets[key])
    lo, hi = d.intervals["pairs"]["period_ratio"]
    assert lo[0] == hi[0]
    # while the star's mass uncertainty does reach a
    lo, hi = d.intervals["planets"]["semi_major_axis_au"]
    assert np.all(hi > lo)


def test_same_seed_same_document_and_different_seeds_differ():
    system = System(star=_star(mass=Uncertainty.from_sigma(0.03), radius=Uncertainty(0.04, 0.02)),
                    planets=[_planet(), _planet("c", 151.0, period=Uncertainty.from_sigma(0.5))])
    first = derive(system, samples=2000, seed=5).to_dict()
    assert derive(system, samples=2000, seed=5).to_dict() == first
    other = derive(system, samples=2000, seed=6).to_dict()
    assert other != first
    assert other["planets"][0]["interval"]["teq_k"] != first["planets"][0]["interval"]["teq_k"]
    # nominal values do not depend on the seed
    assert [p["teq_k"] for p in other["planets"]] == [p["teq_k"] for p in first["planets"]]


def test_asymmetric_input_gives_a_skewed_interval():
    system = System(star=_star(radius=Uncertainty(0.05, 0.01)), planets=[_planet(radius_value=2.0, radius=Uncertainty(0.3, 0.1))])
    d = derive(system, samples=N, seed=9)
    teq = d.planets["teq_k"][0]
    lo, hi = (x[0] for x in d.intervals["planets"]["teq_k"])
    # plus > minus on R*: Teq ~ R*^(1/2) is skewed upwards, ~ (0.05/2) up and (0.01/2) down
    assert hi - teq > 3 * (teq - lo)
    assert hi - teq == pytest.approx(teq * (np.sqrt(1.05) - 1), rel=0.05)
    assert teq - lo == pytest.approx(teq * (1 - np.sqrt(0.99)), rel=0.05)
    # an asymmetric value is read as median with 16th/84th percentiles at value - minus and
    # value + plus (common practice for quoted asymmetric errors)
    rlo, rhi = (x[0] for x in d.intervals["planets"]["radius_rearth"])
    assert rhi == pytest.approx(2.3, abs=0.3 * 0.05)
    assert rlo == pytest.approx(1.9, abs=0.1 * 0.05)


def test_truncation_keeps_draws_physical():
    # sigmas that would cross both e = 0 and e = 1, and a mass sigma that would cross zero
    planet = _planet(mass_value=0.5, eccentricity=Uncertainty.from_sigma(0.5), mass=Uncertainty.from_sigma(1.0),
                     radius=Uncertainty(2.0, 2.0))
    planet.eccentricity = 0.05
    system = System(star=_star(mass=Uncertainty.from_sigma(2.0)), planets=[planet])
    draws = sampled_inputs(system, N, seed=3)
    assert draws.eccentricity.shape == (N, 1)
    assert np.all(draws.eccentricity >= 0.0) and np.all(draws.eccentricity < 1.0)
    assert np.all(draws.mass > 0.0) and np.all(draws.radius > 0.0) and np.all(draws.star_mass > 0.0)
    # redrawing outside the domain is exactly a truncated normal: compare with scipy.stats.truncnorm
    e = draws.eccentricity[:, 0]
    reference = stats.truncnorm((0.0 - 0.05) / 0.5, (1.0 - 0.05) / 0.5, loc=0.05, scale=0.5)
    assert stats.kstest(e, reference.cdf).pvalue > 1e-3
    m = draws.mass[:, 0]
    reference = stats.truncnorm((0.0 - 0.5) / 1.0, np.inf, loc=0.5, scale=1.0)
    assert stats.kstest(m, reference.cdf).pvalue > 1e-3
    # and the derivation of these draws stays finite
    d = derive(system, samples=2000, seed=3)
    assert np.all(np.isfinite(d.intervals["planets"]["teq_k"]))


def test_truncated_split_normals_have_the_truncated_distribution():
    # rejection with several tries at once must still give exactly the truncated distribution:
    # e = 0 with widths +0.02 / -0.1 rejects half of all draws (the whole lower half), leaving a
    # half-normal of scale 0.02 (scipy.stats.halfnorm); a mass of 0.3 with widths +0.2 / -0.5 is
    # a split normal cut at zero, whose CDF is written out from its two halves (scipy.stats.norm)
    planet = _planet(mass_value=0.3, eccentricity=Uncertainty(0.02, 0.1), mass=Uncertainty(0.2, 0.5))
    planet.eccentricity = 0.0
    draws = sampled_inputs(System(star=_star(), planets=[planet]), N, seed=12)
    assert stats.kstest(draws.eccentricity[:, 0], stats.halfnorm(scale=0.02).cdf).pvalue > 1e-3

    def split_cdf(x, value=0.3, plus=0.2, minus=0.5):
        below = 0.5 * 2.0 * stats.norm.cdf((x - value) / minus)      # each half holds half the mass
        above = 0.5 + 0.5 * 2.0 * (stats.norm.cdf((x - value) / plus) - 0.5)
        return np.where(x < value, below, above)

    cut = split_cdf(0.0)
    m = draws.mass[:, 0]
    assert m.min() > 0.0
    assert stats.kstest(m, lambda x: (split_cdf(x) - cut) / (1.0 - cut)).pvalue > 1e-3


@settings(max_examples=30, deadline=None)
@given(e=st.floats(0.0, 0.98), e_sigma=st.floats(0.0, 2.0), mass=st.floats(0.01, 10.0), plus=st.floats(0.0, 20.0),
       minus=st.floats(0.0, 20.0), albedo=st.floats(0.0, 0.95), a_sigma=st.floats(0.0, 2.0), seed=st.integers(0, 2**32))
def test_draws_stay_in_their_domains(e, e_sigma, mass, plus, minus, albedo, a_sigma, seed):
    # the param bounds are the physical domains: 0 <= e < 1, mass > 0, 0 <= A < 1
    planet = _planet(mass_value=mass, eccentricity=Uncertainty.from_sigma(e_sigma), mass=Uncertainty(plus, minus))
    planet.eccentricity = e
    system = System(star=_star(), planets=[planet])
    system.assumptions.bond_albedo = albedo
    system.assumptions.set_uncertainty("bond_albedo", Uncertainty.from_sigma(a_sigma))
    draws = sampled_inputs(system, 2000, seed)
    assert np.all((draws.eccentricity >= 0.0) & (draws.eccentricity < 1.0))
    assert np.all(draws.mass > 0.0)
    assert np.all((draws.bond_albedo >= 0.0) & (draws.bond_albedo < 1.0))


def test_symmetric_draws_are_normal():
    # with a sigma far from any bound the draws are N(value, sigma) (scipy.stats.norm as reference)
    system = System(star=_star(teff=Uncertainty.from_sigma(100.0)), planets=[_planet()])
    teff = sampled_inputs(system, N, seed=4).star_teff[:, 0]
    assert stats.kstest(teff, stats.norm(loc=5772.0, scale=100.0).cdf).pvalue > 1e-3


def test_document_records_samples_seed_and_intervals():
    system = System(star=_star(mass=Uncertainty.from_sigma(0.02)),
                    planets=[_planet(), _planet("c", 149.0), _planet("d", 222.0)])
    doc = derive(system, samples=300, seed=42).to_dict()
    assert doc["samples"] == 300 and doc["seed"] == 42
    assert "interval" in doc["star"] and "luminosity_lsun" in doc["star"]["interval"]
    for table in ("planets", "pairs", "triples", "skies"):
        assert doc[table], table
        for r in doc[table]:
            assert isinstance(r["interval"], dict) and r["interval"]
            for lo_hi in r["interval"].values():
                assert len(lo_hi) == 2
    assert "teq_k" in doc["planets"][0]["interval"]
    lo, hi = doc["planets"][0]["interval"]["teq_k"]
    assert lo < doc["planets"][0]["teq_k"] < hi
    json.dumps(doc, allow_nan=False)   # strict JSON
    # without samples the document carries none of this
    nominal = derive(system).to_dict()
    assert "samples" not in nominal and "interval" not in nominal["planets"][0]


def test_delta_interval_stays_on_the_nominal_rung():
    # ratio 1.545 lies near the 3:2 / 8:5 midpoint (1.55); draws cross to the other rung, yet the
    # offset of every draw is measured from the nominal 3:2, so Delta = ratio * 2/3 - 1 holds for
    # the interval ends too (Lithwick et al. 2012 eq. 5)
    outer = _planet("c", 154.5, period=Uncertainty.from_sigma(1.0))
    system = System(star=_star(), planets=[_planet(), outer])
    d = derive(system, samples=4000, seed=8)
    assert d.pairs["nearest"][0] == "3:2"
    rlo, rhi = (x[0] for x in d.intervals["pairs"]["period_ratio"])
    dlo, dhi = (x[0] for x in d.intervals["pairs"]["delta"])
    assert dlo == pytest.approx(rlo * 2 / 3 - 1, rel=1e-9)
    assert dhi == pytest.approx(rhi * 2 / 3 - 1, rel=1e-9)
    assert 0.0 < d.extra["other_nearest_fraction"][0] < 0.5


def test_sky_intervals_by_chunks_are_numpy_percentiles_of_one_whole_computation(monkeypatch):
    # numpy's percentile over one computation of every draw at once is the reference for the sky
    # table's intervals, worked out a few rows at a time when first read
    from orbitdeck.models.engine import derive as engine

    monkeypatch.setattr(engine, "SKY_ROWS_PER_CHUNK", 3)
    planets = [_planet(name, value=period, radius_value=1.2, mass_value=None,
                       period=Uncertainty.from_sigma(1e-4), radius=Uncertainty(0.08, 0.05),
                       eccentricity=Uncertainty.from_sigma(0.02))
               for name, period in zip("bcde", (3.1, 4.9, 7.6, 11.8))]
    system = System(name="chunks", star=_star(mass=Uncertainty.from_sigma(0.02)), planets=planets)
    derived = derive(system, samples=3000, seed=5)
    whole = Context(sampled_inputs(system, 3000, 5))
    for key in ("closest_distance_au", "max_angular_diameter_arcsec", "moon_ratio"):
        expected = np.percentile(getattr(whole, key), [16, 84], axis=0)
        np.testing.assert_allclose(derived.intervals["skies"][key], expected, rtol=1e-12, err_msg=key)
    for key in ("teq_k", "semi_major_axis_au", "hill_radius_au"):
        expected = np.percentile(np.broadcast_to(getattr(whole, key), (3000, 4)), [16, 84], axis=0)
        np.testing.assert_allclose(derived.intervals["planets"][key], expected, rtol=1e-12, err_msg=key)


def test_sky_intervals_are_worked_out_only_when_read():
    planets = [_planet(name, value=period, radius=Uncertainty(0.08, 0.05)) for name, period in zip("bc", (3.1, 4.9))]
    derived = derive(System(name="lazy", star=_star(), planets=planets), samples=500, seed=1)
    assert "skies" in derived.intervals._pending
    assert derived.intervals["skies"]["moon_ratio"][0].shape == (4,)
    assert "skies" not in derived.intervals._pending


def test_draws_where_orbits_cross_fill_at_most_half_the_sky():
    # two eccentric orbits that cross in many draws: there the neighbour is at zero distance and
    # fills half the sky, 180 deg (geometry), and no interval may go past that
    inner = _planet("b", value=3.0, eccentricity=Uncertainty.from_sigma(0.1))
    outer = _planet("c", value=3.3, eccentricity=Uncertainty.from_sigma(0.1))
    inner.eccentricity, outer.eccentricity = 0.3, 0.4
    derived = derive(System(name="crossing", star=_star(), planets=[inner, outer]), samples=2000, seed=4)
    low, high = derived.intervals["skies"]["max_angular_diameter_arcsec"]
    assert np.all(high <= 180 * 3600.0)
    crossing = derived.skies["body"] != "star"
    assert np.all(high[crossing] == 180 * 3600.0)
    assert np.all(low[crossing] < high[crossing])
    assert np.all(derived.intervals["skies"]["closest_distance_au"][0][crossing] == 0.0)


def test_intervals_far_narrower_than_the_values_are_resolved():
    # only the periods carry errors, of 1e-7 of their value (common practice for long transit
    # baselines): a, S, Teq and the skies then spread by ~1e-7 relative, which double precision
    # resolves; every interval is numpy's percentiles of the same draws
    planets = [_planet(name, value=period, period=Uncertainty.from_sigma(1e-7 * period))
               for name, period in zip("bc", (12.0, 19.0))]
    system = System(name="precise", star=_star(), planets=planets)
    derived = derive(system, samples=3000, seed=9)
    exact = Context(sampled_inputs(system, 3000, 9))
    for key in ("semi_major_axis_au", "insolation_earth", "teq_k", "period_d"):
        low, high = derived.intervals["planets"][key]
        expected = np.percentile(getattr(exact, key), [16, 84], axis=0)
        assert np.all(high > low)
        np.testing.assert_allclose([low, high], expected, rtol=1e-12, err_msg=key)
    low, high = derived.intervals["skies"]["max_angular_diameter_arcsec"]
    assert np.all(high > low)


def test_far_reaching_systems_give_finite_intervals():
    # periods up to 4e6 d around a 2 Msun star: a^6, M*^2 and G M P^2 in SI need double precision,
    # and a / R* up to 7e4, where an edge-on orbit's impact parameter needs cos i to ~1e-10
    sigma = Uncertainty.from_sigma
    star = _star(mass=sigma(0.05), radius=Uncertainty(0.04, 0.03), teff=sigma(80.0))
    star.mass, star.radius, star.teff, star.j_mag, star.k_mag = 2.0, 1.8, 7000.0, 8.0, 7.6
    planets = []
    for name, period in zip("bcde", (1.3, 40.0, 2.0e3, 4.0e6)):
        planet = _planet(name, value=period, radius_value=2.0, mass_value=None, period=sigma(1e-4 * period),
                         radius=Uncertainty(0.1, 0.08), eccentricity=sigma(0.02), inclination=sigma(0.05))
        planet.eccentricity, planet.inclination = 0.05, 89.9
        planets.append(planet)
    derived = derive(System(name="far", star=star, planets=planets), samples=2000, seed=3)
    for key in ("tidal_lock_gyr", "semi_major_axis_au", "rv_semi_amplitude_ms", "hill_radius_au", "esm"):
        low, high = derived.intervals["planets"][key]
        assert np.all(np.isfinite(low) & np.isfinite(high) & (high > low)), key
    assert np.isfinite(derived.intervals["planets"]["transit_duration_h"][1][3])   # some draws transit


@pytest.mark.parametrize("draws", [1, 2, 5, 999, 4000])
def test_percentile_bounds_are_numpys_percentiles_bit_for_bit(draws):
    # numpy's percentile (rows without NaN) and nanpercentile (rows with some) are the reference,
    # to the last bit: rows with ties, infinities, NaN in some or all draws, constant rows
    from orbitdeck.models.engine.draws import percentile_bounds

    rng = np.random.default_rng(draws)
    rows = rng.standard_normal((12, draws)) * np.logspace(-8, 8, 12)[:, None]
    rows[1] = np.round(rows[1], 0)
    rows[2, rng.random(draws) < 0.4] = np.nan
    rows[3] = np.nan
    rows[4, ::7] = np.inf
    rows[5, ::3] = -np.inf
    rows[6] = 2.5
    rows[7, 1:] = np.nan
    rows[8, rng.random(draws) < 0.9] = np.nan
    with np.errstate(invalid="ignore"), pytest.warns(RuntimeWarning, match="All-NaN"):
        expected = np.array([np.nanpercentile(row, (16, 84)) if np.isnan(row).any() else
                             np.percentile(row, (16, 84)) for row in rows]).T
    for given_rows, overwrite in ((rows, False), (np.asfortranarray(rows), True)):
        low, high = percentile_bounds(given_rows.copy(), overwrite=overwrite)
        np.testing.assert_array_equal(low, expected[0])
        np.testing.assert_array_equal(high, expected[1])


@pytest.mark.parametrize("rows", [0, 1, 6])
def test_share_of_draws_is_the_mean_of_the_yes_no_draws(rows):
    # numpy's mean of booleans is the reference, to the last bit; a (1, rows) quantity stands for every draw
    from orbitdeck.models.engine.draws import share_of_draws

    holds = np.random.default_rng(rows).random((4000, rows)) < np.linspace(0.0, 1.0, rows)
    np.testing.assert_array_equal(share_of_draws(holds, 4000), np.mean(holds, axis=0))
    np.testing.assert_array_equal(share_of_draws(holds[:1], 4000), holds[0].astype(float))
    assert share_of_draws(holds, 4000).shape == (rows,)


@pytest.mark.parametrize("planets", [1, 2])
def test_sky_distances_when_only_the_periastron_angle_is_drawn(planets):
    # omega drawn, a and e not: the closest approach of two orbits varies over the draws while the
    # periastron distance is one row; the sky table must take every draw (found by the round-trip property test)
    members = [_planet(name=name, value=period) for name, period in zip("bc", (10.0, 25.0))][:planets]
    for planet in members:   # eccentric, so that the orientation matters
        planet.eccentricity = 0.2
    members[-1].omega = 30.0
    members[-1].uncertainties = {"omega": Uncertainty.from_sigma(20.0)}
    derived = derive(System(star=_star(), planets=members), samples=24, seed=11)
    low, high = derived.intervals["skies"]["closest_distance_au"]
    assert low.shape == high.shape == (len(derived.skies["observer"]),)
    if planets == 2:   # the two orbits' closest approach depends on the drawn omega
        rows = [i for i, (o, b) in enumerate(zip(derived.skies["observer"], derived.skies["body"])) if b != "star"]
        assert np.all(high[rows] >= low[rows]) and np.any(high[rows] > low[rows])
