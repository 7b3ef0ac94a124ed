"""State model: Viterbi decoding, transitions, shore geometry, net speed."""

from __future__ import annotations

import itertools
import math

import numpy as np
import pytest

from sessions.states import (
    PADDLE,
    RIDE,
    SHORE,
    WAIT,
    ShoreGeometry,
    StateModelSettings,
    emission_loglik,
    estimate_shore,
    net_speed,
    runs,
    transition_logprob,
    viterbi,
)


def _brute_force(log_pi, log_a, loglik):
    """Most probable path by enumerating every path (exact; only for tiny problems)."""
    n, k = loglik.shape
    best, best_path = -math.inf, None
    for path in itertools.product(range(k), repeat=n):
        score = log_pi[path[0]] + loglik[0, path[0]]
        for t in range(1, n):
            score += log_a[path[t - 1], path[t]] + loglik[t, path[t]]
        if score > best:
            best, best_path = score, path
    return np.array(best_path)


@pytest.mark.parametrize("seed", range(6))
def test_viterbi_equals_exhaustive_search(seed):
    # reference: exhaustive maximisation of the joint path probability, the quantity the
    # Viterbi algorithm maximises (Rabiner 1989, Proc. IEEE 77(2):257-286, eq. 30)
    rng = np.random.default_rng(seed)
    k, n = 3, 7
    a = rng.dirichlet(np.ones(k), size=k)
    if seed % 2:
        a[0, 2] = 0.0  # a forbidden transition
        a[0] /= a[0].sum()
    with np.errstate(divide="ignore"):
        log_a = np.log(a)
    log_pi = np.log(rng.dirichlet(np.ones(k)))
    loglik = rng.normal(0, 2, (n, k))
    np.testing.assert_array_equal(viterbi(log_pi, log_a, loglik), _brute_force(log_pi, log_a, loglik))


def test_transition_rows_are_distributions_with_published_bout_lengths():
    s = StateModelSettings()
    a = np.exp(transition_logprob(s, 1.0))
    np.testing.assert_allclose(a.sum(axis=1), 1.0, atol=1e-12)
    # expected bout length 1/(1 - p_stay) equals the mean bout durations of
    # Mendez-Villanueva, Bishop & Hamer 2006 (J Strength Cond Res 20(3):477-482):
    # paddling 30.1 s, stationary 37.7 s, riding 11.6 s
    assert 1.0 / (1.0 - a[PADDLE, PADDLE]) == pytest.approx(30.1)
    assert 1.0 / (1.0 - a[WAIT, WAIT]) == pytest.approx(37.7)
    assert 1.0 / (1.0 - a[RIDE, RIDE]) == pytest.approx(11.6)
    # no ride straight from the beach
    assert a[SHORE, RIDE] == 0.0


def test_speed_emissions_order_states_by_speed():
    s = StateModelSettings()
    geo = ShoreGeometry(0, 0, 1, 0, 0, "unknown")
    v = np.array([0.1, 1.1, 7.0])
    ll = emission_loglik(v, v, 0 * v, v, v, geo, s)
    assert ll[0].argmax() in (WAIT, SHORE)
    assert ll[1].argmax() in (PADDLE, SHORE)
    assert ll[2].argmax() == RIDE


def test_ride_heading_out_to_sea_is_unlikely():
    s = StateModelSettings()
    geo = ShoreGeometry(0.0, 0.0, 1.0, 0.0, 0.0, "start_end")  # sea toward +x
    # same speed and place, heading shoreward (-x) versus seaward (+x)
    ll = emission_loglik(np.array([6.0, 6.0]), np.array([-6.0, 6.0]), np.zeros(2), np.array([100.0, 100.0]), np.zeros(2), geo, s)
    assert ll[0, RIDE] - ll[1, RIDE] > 5.0


def test_estimate_shore_from_start_and_end_on_the_beach():
    # beach at the origin, line-up 200 m toward the north-east; rides back toward shore
    rng = np.random.default_rng(2)
    ux, uy = math.cos(math.radians(40)), math.sin(math.radians(40))
    d = np.concatenate((np.linspace(0, 200, 200), 200 + rng.normal(0, 5, 1500), np.linspace(200, 60, 20), np.linspace(60, 0, 120)))
    x, y = d * ux, d * uy
    v = np.concatenate((np.full(200, 1.0), np.full(1500, 0.2), np.full(20, 7.0), np.full(120, 1.0)))
    vx = np.gradient(x)
    vy = np.gradient(y)
    geo = estimate_shore(x, y, v, vx, vy)
    assert geo.method == "start_end"
    assert math.degrees(math.acos(geo.seaward_x * ux + geo.seaward_y * uy)) < 5.0
    assert 0.0 <= geo.edge_m <= 60.0
    # the start point is on land, the line-up in the water
    margin = geo.land_margin_m(np.array([x[0], 200 * ux]), np.array([y[0], 200 * uy]))
    assert margin[0] < 0 < margin[1]
    # seaward motion has cosine -1 with the shoreward direction
    assert geo.cos_shoreward(np.array([ux]), np.array([uy]))[0] == pytest.approx(-1.0)


def test_net_speed_of_straight_motion():
    t = np.arange(0.0, 100.0)
    x = 1.25 * t
    u = net_speed(t, x, 0 * x, np.zeros(t.size, dtype=int), 16.0)
    np.testing.assert_allclose(u, 1.25, rtol=1e-12)
    # back-and-forth motion nets almost nothing over the window
    wobble = 3.0 * np.sin(2 * np.pi * t / 8.0)
    assert float(np.median(net_speed(t, wobble, 0 * t, np.zeros(t.size, dtype=int), 16.0))) < 0.2


def test_runs():
    assert runs(np.array([1, 1, 2, 2, 2, 1])) == [(1, 0, 2), (2, 2, 5), (1, 5, 6)]
    assert runs(np.array([], dtype=int)) == []
