"""The greedy fill's bound on the points that can fall short: the sums it takes over fewer
points are those over the whole grid, and the fills it makes are the same.

The bound is the triangle inequality |y + y_k| >= |y| - |y_k| (any algebra text; common
practice, no source): exact, so the check values are the unbounded computation itself.
"""

from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from partsel.engine import pdn
from partsel.jobs.decouple import solver


def _complex(draw, shape, lo, hi):
    mag = 10.0 ** np.asarray(draw(st.lists(st.floats(lo, hi), min_size=int(np.prod(shape)),
                                           max_size=int(np.prod(shape)))))
    ph = np.asarray(draw(st.lists(st.floats(-np.pi, np.pi), min_size=mag.size,
                                  max_size=mag.size)))
    return (mag * np.exp(1j * ph)).reshape(shape)


@st.composite
def _state(draw):
    k, f = draw(st.integers(1, 6)), draw(st.integers(1, 12))
    y = _complex(draw, (f,), -2.0, 3.0)
    y_cols = _complex(draw, (k, f), -3.0, 2.0)
    y_t = 10.0 ** np.asarray(draw(st.lists(st.floats(-1.0, 2.5), min_size=f, max_size=f)))
    return y, y_cols, y_t


@settings(max_examples=300, deadline=None)
@given(_state())
def test_bounded_sums_equal_the_whole_grid(state):
    y, y_cols, y_t = state
    whole = solver.shortfall_sums(y, y_cols, y_t)
    bounded = solver.shortfall_sums(y, y_cols, y_t, np.abs(y_cols).max(axis=0))
    np.testing.assert_allclose(bounded, whole, rtol=1e-12, atol=1e-12 * len(y))


def test_the_bound_prunes_points_that_cannot_fall_short():
    """A point far above the target for any added part is left out; one below it is kept."""
    y = np.array([1000.0 + 0j, 1.0 + 0j])
    y_cols = np.array([[1.0 + 0j, 1.0 + 0j], [2.0j, -2.0 + 0j]])
    y_t = np.array([10.0, 10.0])
    # point 0: |y| - reach = 998 >= 10, no shortfall whatever is added; point 1 falls short:
    # 1 - |1 + 1|/10 = 0.8 for part 0, 1 - |1 - 2|/10 = 0.9 for part 1
    np.testing.assert_allclose(solver.shortfall_sums(y, y_cols, y_t,
                                                     np.abs(y_cols).max(axis=0)), [0.8, 0.9])


def test_fills_with_and_without_the_bound_agree(monkeypatch):
    """A fill of 40 R-L-C candidates (the decade values 10 nF..100 uF, ESL 0.3..2 nH) to
    5 mohm over 10 kHz..100 MHz, from empty and from a start, is the same with the bound."""
    rng = np.random.default_rng(7)
    c = 10.0 ** rng.uniform(-8, -4, 40)
    cands = pdn.Branches.of(c, 10.0 ** rng.uniform(-3, -1.5, 40), rng.uniform(3e-10, 2e-9, 40))
    board = pdn.Branches.of(np.empty(0), np.empty(0), np.empty(0))
    f = pdn.log_grid(1e4, 1e8)
    search = solver.Search.build(f, cands, board, 5e-3)
    w, price = np.ones(40), np.full(40, 0.01)
    limits = solver.Limits(max_parts=500)
    start = np.zeros(40)
    start[[3, 17]] = 5
    runs = {}
    for bound_from in (solver._BOUND_FROM, 10**9):
        monkeypatch.setattr(solver, "_BOUND_FROM", bound_from)
        runs[bound_from] = [solver.greedy(search, w, price, 2000, limits, s)
                            for s in (None, start)]
    for (a, a_best, a_ok), (b, b_best, b_ok) in zip(*runs.values(), strict=True):
        assert a_ok == b_ok
        np.testing.assert_array_equal(a, b)
        np.testing.assert_array_equal(a_best, b_best)
    assert runs[10**9][0][2], "the fill should meet the target (else the case tests little)"
