"""The measured family: interpolation in log-log, the measured range, layers and band extrema.

Check values: the data itself at the measured points; |Z| of an R-L-C evaluated from its
formula (any circuit-theory text) as the curve between points; a dense grid as the reference
for the extrema of a layered curve.
"""

from __future__ import annotations

import numpy as np
import pytest

from partsel.engine.models import family

MEAS = family("measured")
RLC = family("rlc")


def _curve(n: int = 61):
    b = RLC.make(value=1e-6, esr=0.01, esl=1e-9, tan_delta=0.02)
    f = np.geomspace(1e3, 1e9, n)
    return f, RLC.impedance(b, f)[0], b


def test_exact_at_the_points_and_undefined_outside():
    f, z, _ = _curve()
    c = MEAS.from_curves([f], [z])
    np.testing.assert_allclose(MEAS.impedance(c, f)[0], z, rtol=1e-12)
    out = MEAS.impedance(c, np.array([500.0, 2e9]))[0]
    assert np.all(np.isnan(out))
    assert np.all(np.isnan([getattr(MEAS.band(c, 500.0, 1e6), k)[0]
                            for k in ("max_z", "f_max", "min_z", "f_min")]))


def test_log_log_interpolation_between_points():
    """Between two points ln|Z| is linear in ln f: at the geometric mean, |Z| is the geometric
    mean of the two magnitudes (derived)."""
    f = np.array([1e3, 1e5])
    z = np.array([100 - 1j, 1 + 1j])
    c = MEAS.from_curves([f], [z])
    mid = MEAS.impedance(c, np.array([1e4]))[0, 0]
    assert np.isclose(abs(mid), np.sqrt(abs(z[0]) * abs(z[1])), rtol=1e-12)


def test_extrema_of_the_plain_curve_lie_at_points_or_edges():
    f, z, _ = _curve(25)
    c = MEAS.from_curves([f], [z])
    ext = MEAS.band(c, 2e5, 7e7)
    inner = f[(f > 2e5) & (f < 7e7)]
    pts = np.concatenate([[2e5], inner, [7e7]])
    mag = np.abs(MEAS.impedance(c, pts)[0])
    assert ext.max_z[0] == mag.max() and ext.min_z[0] == mag.min()


def test_layers_and_their_extrema_against_a_dense_grid():
    f, z, b = _curve(31)
    c = MEAS.from_curves([f], [z], value=b["value"], tan_delta=b["tan_delta"])
    layered = MEAS.with_capacitance_scale(MEAS.with_series_inductance(c, 2e-9), 0.5)
    g = np.geomspace(1e4, 1e8, 400001)
    expect = MEAS.impedance(c, g)[0] + 1j * 2 * np.pi * g * 2e-9 + \
        (0.02 - 1j) * (1 / (2 * np.pi * g * 0.5e-6) - 1 / (2 * np.pi * g * 1e-6))
    got = MEAS.impedance(layered, g)[0]
    np.testing.assert_allclose(got, expect, rtol=1e-12)
    ext = MEAS.band(layered, 1e4, 1e8)
    assert ext.max_z[0] >= np.abs(got).max() * (1 - 1e-12)
    assert ext.min_z[0] <= np.abs(got).min() * (1 + 1e-9)


def test_the_zero_phase_frequency_of_a_measured_rlc_is_near_its_srf():
    f, z, _ = _curve(601)
    c = MEAS.from_curves([f], [z])
    srf = 1 / (2 * np.pi * np.sqrt(1e-9 * 1e-6))
    assert np.isclose(MEAS.zero_phase(c)[0], srf, rtol=1e-3)


def test_bad_curves_are_refused():
    with pytest.raises(ValueError, match="increasing"):
        MEAS.from_curves([[1e3, 1e3]], [[1, 1]])
    with pytest.raises(ValueError, match="non-zero"):
        MEAS.from_curves([[1e3, 1e4]], [[1, 0]])


def test_a_fallback_model_answers_outside_the_measured_range():
    """Inside the range the curve, outside the model; the band extrema take the more extreme
    piece (the model here is 2x the curve, so the outside pieces win the maximum)."""
    from partsel.engine.models import ModelSet
    b = RLC.make(value=1e-6, esr=0.01, esl=1e-9)
    f = np.geomspace(1e4, 1e6, 41)
    z = RLC.impedance(b, f)[0] / 2
    model = ModelSet.of(RLC, b)
    c = MEAS.from_curves([f], [z], fallback=[model])
    pts = np.array([1e3, 1e5, 1e7])
    got = MEAS.impedance(c, pts)[0]
    np.testing.assert_allclose(got[[0, 2]], RLC.impedance(b, pts[[0, 2]])[0], rtol=1e-15)
    np.testing.assert_allclose(got[1], MEAS.impedance(MEAS.from_curves([f], [z]), pts[[1]])[0, 0])
    ext = MEAS.band(c, 1e3, 1e5)
    model_low = RLC.band(b, 1e3, 1e4)
    assert ext.max_z[0] == model_low.max_z[0] and ext.f_max[0] == 1e3
    lo, hi = MEAS.span(c)
    assert lo[0] == 0 and hi[0] == np.inf
    srf = 1 / (2 * np.pi * np.sqrt(1e-9 * 1e-6))
    assert np.isclose(MEAS.zero_phase(c)[0], srf, rtol=1e-12)  # above the range: the model's
