"""The exact minimax carriage move, checked by brute force and against the closed
form for equal rates (DOMAIN.md section 3: move time max_i |g_i + dK| / rate_i,
dK free in a span; with equal rates dK = -(max g + min g)/2, clamped)."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import scheduler.astro  # noqa: F401  (astropy offline before any transform)
from scheduler.geometry.reposition import minimax_move, move_time_s

# --- tolerances --------------------------------------------------------------------
MINIMAX_TOL_S = 1e-9  # no sampled dK may beat the returned move by more than this
SPAN_EDGE_TOL_M = 1e-12  # returned dK inside the span (rounding only)
CLOSED_FORM_TOL_M = 1e-9  # equal rates: dK from the closed form
BRUTE_SAMPLES = 4001  # dK samples across the span (plus its two ends)

g_values = st.floats(-150.0, 150.0, allow_nan=False)
rates = st.floats(0.3, 2.0, allow_nan=False)


@st.composite
def moves(draw, equal_rates=False):
    """Invented test transitions: 1-6 lines, path changes g (m), rates (m/s) and a
    span for dK that may or may not contain the unconstrained optimum."""
    count = draw(st.integers(1, 6))
    g = np.array([draw(g_values) for _ in range(count)])
    if equal_rates:
        r = np.full(count, draw(rates))
    else:
        r = np.array([draw(rates) for _ in range(count)])
    lo = draw(st.floats(-200.0, 200.0))
    width = draw(st.sampled_from([0.0]) | st.floats(0.0, 300.0))
    return g, r, lo, lo + width


def _cost(g, r, dk):
    """Longest move time for shifts dk (any shape), straight from the definition."""
    dk = np.asarray(dk, float)
    return np.max(np.abs(g[None, :] + dk.reshape(-1, 1)) / r[None, :], axis=1).reshape(dk.shape)


@settings(max_examples=300, deadline=None)
@given(moves())
def test_minimax_beats_brute_force(problem):
    """No sampled dK in the span gives a shorter move than the returned one, the
    returned dK lies in the span, and the returned time is the move of that dK."""
    g, r, lo, hi = problem
    dk, move = minimax_move(g, r, lo, hi)
    assert lo - SPAN_EDGE_TOL_M <= dk <= hi + SPAN_EDGE_TOL_M
    assert move == pytest.approx(float(_cost(g, r, dk)), abs=MINIMAX_TOL_S)
    assert move == pytest.approx(float(move_time_s(g + dk, r)), abs=MINIMAX_TOL_S)
    samples = np.concatenate([np.linspace(lo, hi, BRUTE_SAMPLES), [lo, hi]])
    assert _cost(g, r, samples).min() >= move - MINIMAX_TOL_S


@settings(max_examples=200, deadline=None)
@given(moves(equal_rates=True))
def test_equal_rates_closed_form(problem):
    """DOMAIN.md section 3: with equal rates dK = -(max g + min g)/2 clamped to the
    span, and the move is max |g + dK| / rate."""
    g, r, lo, hi = problem
    dk, move = minimax_move(g, r, lo, hi)
    expected = np.clip(-(g.max() + g.min()) / 2.0, lo, hi)
    assert dk == pytest.approx(expected, abs=CLOSED_FORM_TOL_M)
    assert move == pytest.approx(np.max(np.abs(g + expected)) / r[0], abs=MINIMAX_TOL_S)


def test_unequal_rates_hand_example():
    """Two lines, g = (0, 10) m, rates (1, 0.5) m/s, free span: the rising piece of
    line 1, 2 (10 + dK), meets the falling piece of line 0, -dK, at dK = -20/3 m,
    a move of 20/3 s (computed by hand from the definition)."""
    dk, move = minimax_move(np.array([0.0, 10.0]), np.array([1.0, 0.5]), -100.0, 100.0)
    assert dk == pytest.approx(-20.0 / 3.0, abs=CLOSED_FORM_TOL_M)
    assert move == pytest.approx(20.0 / 3.0, abs=MINIMAX_TOL_S)
    # the same move clamped by a span that excludes the optimum
    dk, move = minimax_move(np.array([0.0, 10.0]), np.array([1.0, 0.5]), -2.0, 5.0)
    assert dk == pytest.approx(-2.0, abs=CLOSED_FORM_TOL_M)
    assert move == pytest.approx(16.0, abs=MINIMAX_TOL_S)


@settings(max_examples=30, deadline=None)
@given(st.integers(2, 6), st.integers(1, 40), st.integers(0, 2**32 - 1))
def test_vectorised_batch_equals_single_calls(count, batch, seed):
    """A batch of transitions (B, L) gives the same dK and move as one call per
    transition (internal consistency, no outside source; random invented test data)."""
    rng = np.random.default_rng(seed)
    g = rng.uniform(-150, 150, (batch, count))
    r = rng.uniform(0.3, 2.0, count)
    lo = rng.uniform(-200, 200, batch)
    hi = lo + rng.uniform(0, 300, batch) * (rng.random(batch) > 0.2)
    dk, move = minimax_move(g, r, lo, hi)
    assert dk.shape == (batch,) and move.shape == (batch,)
    for b in range(batch):
        dk1, move1 = minimax_move(g[b], r, lo[b], hi[b])
        assert dk[b] == dk1 and move[b] == move1
