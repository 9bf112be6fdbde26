"""Commensurabilities, offsets, super-periods and three-body relations against outside references."""

from fractions import Fraction

import numpy as np
import pytest
from scipy import optimize

from orbitdeck.models import derive
from orbitdeck.models.physics import resonances

# Galilean moons' sidereal periods [d] (JPL planetary satellite physical/orbital parameters, from memory)
IO, EUROPA, GANYMEDE = 1.769138, 3.551181, 7.154553


def _pair(make_system, p_inner, p_outer):
    system = make_system([dict(name="b", period=p_inner, radius=1.0, mass=1.0),
                          dict(name="c", period=p_outer, radius=1.0, mass=1.0)])
    return derive(system).to_dict()["pairs"][0]


@pytest.mark.parametrize("ratio, nearest, order", [
    (1.52, "3:2", 1),     # by hand: |1.52 - 3/2| = 0.02; next rungs 8:5 (0.08), 7:5 (0.12)
    (2.03, "2:1", 1),     # by hand: |2.03 - 2| = 0.03; next rung 5:2 (0.47)
    (1.65, "5:3", 2),     # by hand: |1.65 - 5/3| = 0.0167 beats 8:5 (0.05) and 3:2 (0.15)
    (1.34, "4:3", 1),     # by hand: 4/3 = 1.3333; 11:8 = 1.375 (order 3) is farther
    (3.0, "3:1", 2),
])
def test_nearest_commensurability(make_system, ratio, nearest, order):
    pair = _pair(make_system, 10.0, 10.0 * ratio)
    assert pair["nearest"] == nearest
    assert pair["order"] == order
    p, q = map(int, nearest.split(":"))
    # written in lowest terms, p > q (design brief convention)
    assert Fraction(p, q).numerator == p and p > q


def test_delta_by_hand(make_system):
    pair = _pair(make_system, 10.0, 15.3)
    # Lithwick, Xie & Wu 2012 eq. 5: Delta = (P2/P1)/(p/q) - 1 = 1.53 / 1.5 - 1 = 0.02
    assert pair["period_ratio"] == pytest.approx(1.53, rel=1e-14)
    assert pair["delta"] == pytest.approx(0.02, rel=1e-12)
    below = _pair(make_system, 10.0, 19.6)
    assert below["delta"] == pytest.approx(1.96 / 2 - 1, rel=1e-12)   # -0.02: wide of 2:1 is positive
    assert below["delta"] < 0


def test_super_period_by_hand(make_system):
    # Lithwick, Xie & Wu 2012 eq. 7: P_sup = 1 / |j/P' - (j-1)/P|; a Kepler-18-like pair near 2:1,
    # P = 7.64 d and P' = 14.86 d, by hand with exact fractions
    pair = _pair(make_system, 7.64, 14.86)
    p, p_outer = Fraction("7.64"), Fraction("14.86")
    expected = 1 / abs(2 / p_outer - 1 / p)
    assert float(expected) == pytest.approx(270.3, abs=0.1)
    assert pair["super_period_d"] == pytest.approx(float(expected), rel=1e-12)
    # the same, written with Delta: P_sup = P' / (j |Delta|) (Lithwick et al. 2012, after eq. 7)
    assert pair["super_period_d"] == pytest.approx(14.86 / (2 * abs(pair["delta"])), rel=1e-12)


def _conjunction_circulation_period(p_inner, p_outer, count=40):
    """Time for the longitude of conjunctions to go once round, found numerically.

    Lithwick, Xie & Wu 2012 (section 2) describe the super-period as the period over which the line of
    conjunctions circulates. Here the conjunctions of two circular orbits are found one by one with scipy's
    brentq (the inner planet laps the outer one: lambda - lambda' = 2 pi k), their longitudes are unwrapped and
    a straight line is fitted to longitude against time: 2 pi over its slope.
    """
    lag = lambda t, k: 2 * np.pi * (t / p_inner - t / p_outer) - 2 * np.pi * k
    synodic_guess = p_inner * 4   # brackets wide enough for any pair here: the lag grows monotonically
    times, t0 = [], 0.0
    for k in range(1, count + 1):
        t = optimize.brentq(lag, t0, t0 + synodic_guess, args=(k,), xtol=1e-13, rtol=1e-15)
        times.append(t)
        t0 = t
    times = np.array(times)
    longitudes = np.unwrap(np.mod(2 * np.pi * times / p_outer, 2 * np.pi))
    slope = np.polyfit(times, longitudes, 1)[0]
    return 2 * np.pi / abs(slope)


@pytest.mark.parametrize("p_inner, p_outer, nearest", [
    (7.64, 14.86, "2:1"),      # the c-d pair of Kepler-18 (Cochran et al. 2011, periods quoted from memory)
    (10.0, 15.3, "3:2"),
    (4.0, 5.38, "4:3"),
    (3.0, 6.2, "2:1"),
])
def test_super_period_is_the_circulation_period_of_the_conjunctions(make_system, p_inner, p_outer, nearest):
    pair = _pair(make_system, p_inner, p_outer)
    assert pair["nearest"] == nearest
    assert pair["super_period_d"] == pytest.approx(_conjunction_circulation_period(p_inner, p_outer), rel=1e-9)


def test_super_period_only_for_first_order(make_system):
    # the TTV super-period formula is for first-order resonances j:j-1 (Lithwick et al. 2012)
    second = _pair(make_system, 10.0, 16.7)
    assert second["nearest"] == "5:3" and second["super_period_d"] is None


def test_galilean_moons_obey_the_laplace_relation(make_system):
    # n_Io - 3 n_Europa + 2 n_Ganymede = 0 (Murray & Dermott 1999, section 8.17): p = 1, q = 2.
    # Only periods enter the relation, so a Sun-like host stands in for Jupiter.
    system = make_system([dict(name="io", period=IO, radius=0.29, mass=0.015),
                          dict(name="europa", period=EUROPA, radius=0.25, mass=0.008),
                          dict(name="ganymede", period=GANYMEDE, radius=0.41, mass=0.025)])
    triple = derive(system).to_dict()["triples"][0]
    assert triple["planets"] == ["io", "europa", "ganymede"]
    assert (triple["p"], triple["q"]) == (1, 2)
    by_hand = 360 / IO - 3 * 360 / EUROPA + 2 * 360 / GANYMEDE     # deg/day
    assert triple["residual_deg_per_day"] == pytest.approx(by_hand, rel=1e-9)
    # the relation holds to the precision of the periods (6 decimals: ~1e-4 deg/d in n_Io)
    assert abs(triple["residual_deg_per_day"]) < 1e-3


def test_io_europa_pair_is_near_2_to_1(make_system):
    pair = _pair(make_system, IO, EUROPA)
    # Io-Europa are in the 2:1 resonance (Murray & Dermott 1999, section 8.17)
    assert pair["nearest"] == "2:1"
    assert pair["delta"] == pytest.approx(EUROPA / IO / 2 - 1, rel=1e-12)
    assert 0 < pair["delta"] < 0.005


def test_three_body_residual_in_cycles_per_day():
    # p/P1 - (p+q)/P2 + q/P3 (Laplace-type relation) by hand for p = 2, q = 1
    assert resonances.three_body_residual(2.0, 3.0, 5.0, 2, 1) == pytest.approx(2 / 2 - 3 / 3 + 1 / 5)


def test_commensurability_table_is_complete():
    # every p:q with 2 <= p <= 12, 1 <= p - q <= 3 in lowest terms, enumerated with fractions
    expected = {Fraction(p, q) for p in range(2, 13) for q in range(max(1, p - 3), p)
                if Fraction(p, q).numerator == p}
    p, q, order = resonances.commensurability_table()
    assert {Fraction(int(a), int(b)) for a, b in zip(p, q)} == expected
    assert len(p) == len(expected)
    np.testing.assert_array_equal(order, p - q)


@pytest.mark.parametrize("ratio, differs", [(1.47, False), (1.46, True), (1.54, False), (1.56, True)])
def test_nearest_differs_at_the_midpoints_around_3_to_2(ratio, differs):
    # by hand: the rungs of order <= 3 either side of 3:2 are 10:7 (1.42857) and 8:5 (1.6); a period ratio keeps
    # 3:2 as its nearest commensurability between the midpoints 1.46429 and 1.55
    assert (Fraction(10, 7) + Fraction(3, 2)) / 2 == Fraction(41, 28)         # 1.46429
    assert (Fraction(3, 2) + Fraction(8, 5)) / 2 == Fraction(31, 20)          # 1.55
    assert bool(resonances.nearest_differs(np.array([ratio]), [3], [2])[0]) is differs
    p, q, _ = resonances.nearest_commensurability(ratio)
    assert ((int(p), int(q)) != (3, 2)) is differs


def test_best_three_body_relation_and_its_residual_in_degrees_per_day():
    # by hand for periods 2, 3 and 5 d: of p, q in 1..3, p/2 - (p+q)/3 + q/5 is least for p = q = 1, 1/30 cycle
    # per day, i.e. 12 deg/d; the Galilean moons pick n_Io - 3 n_Europa + 2 n_Ganymede (Murray & Dermott 1999,
    # section 8.17)
    p, q, residual = resonances.best_three_body_relation(2.0, 3.0, 5.0)
    assert (int(p), int(q)) == (1, 1) and residual == pytest.approx(360.0 / 30.0, rel=1e-12)
    p, q, residual = resonances.best_three_body_relation(IO, EUROPA, GANYMEDE)
    assert (int(p), int(q)) == (1, 2)
    assert residual == pytest.approx(360 / IO - 3 * 360 / EUROPA + 2 * 360 / GANYMEDE, rel=1e-9)
