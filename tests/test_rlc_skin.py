"""The rlc-skin family against its closed form and the rlc family it extends.

Check values are derived from the family's equation, R(f) = esr + tan_delta/(2 pi f C) +
k_skin sqrt(f) (skin-effect resistance rising as sqrt(f): Ramo, Whinnery, Van Duzer, *Fields
and Waves in Communication Electronics*, 1994, from memory), and the series R-L-C resonance.
"""

from __future__ import annotations

import numpy as np

from partsel.engine.models import family

RLC = family("rlc")
SKIN = family("rlc-skin")


def test_without_skin_term_it_is_the_rlc_family():
    args = dict(value=[1e-6, 1e-7], esr=[0.01, 0.002], esl=[1e-9, 5e-10], tan_delta=[0.02, 0])
    f = np.geomspace(1e3, 1e9, 50)
    np.testing.assert_allclose(SKIN.impedance(SKIN.make(**args), f),
                               RLC.impedance(RLC.make(**args), f), rtol=1e-15)
    a, b = SKIN.band(SKIN.make(**args), 1e5, 1e8), RLC.band(RLC.make(**args), 1e5, 1e8)
    np.testing.assert_allclose(a.max_z, b.max_z, rtol=1e-15)
    np.testing.assert_allclose(a.min_z, b.min_z, rtol=1e-12)
    np.testing.assert_allclose(a.f_min, b.f_min, rtol=1e-9)


def test_resistance_rises_as_the_square_root_of_frequency():
    # derived: 10 mohm + 1e-5 ohm/sqrt(Hz) x sqrt(1 MHz) = 10 mohm + 10 mohm = 20 mohm at the SRF
    c, lser = 1e-6, 1e-9
    f0 = 1 / (2 * np.pi * np.sqrt(lser * c))
    b = SKIN.make(value=c, esr=0.01, esl=lser, k_skin=1e-5)
    z = SKIN.impedance_each(b, np.array([f0]))[0]
    assert np.isclose(z.real, 0.01 + 1e-5 * np.sqrt(f0), rtol=1e-14)
    assert abs(z.imag) < 1e-12
    # four times the frequency, twice the skin term (derived)
    r4 = SKIN.impedance_each(b, np.array([4 * f0]))[0].real - 0.01
    assert np.isclose(r4, 2 * 1e-5 * np.sqrt(f0), rtol=1e-14)


def test_the_minimum_moves_below_the_srf_when_loss_rises_with_frequency():
    """With R rising in f, d|Z|^2/df at the SRF is 2 R dR/df > 0, so the minimum of |Z| lies
    below the SRF (derived); it matches a fine grid's argmin."""
    c, lser = 10e-6, 2e-9
    f0 = 1 / (2 * np.pi * np.sqrt(lser * c))
    b = SKIN.make(value=c, esr=0.001, esl=lser, k_skin=3e-5)
    ext = SKIN.band(b, f0 / 100, f0 * 100)
    assert ext.f_min[0] < f0
    f = np.geomspace(ext.f_min[0] * 0.9, ext.f_min[0] * 1.1, 200001)
    z = np.abs(SKIN.impedance(b, f))[0]
    assert np.isclose(f[np.argmin(z)], ext.f_min[0], rtol=1e-5)
    assert ext.min_z[0] <= z.min() * (1 + 1e-12)
    # the maximum of a convex |Z|^2 in ln f is at a band edge (derived)
    assert ext.f_max[0] in (f0 / 100, f0 * 100)


def test_the_zero_phase_frequency_is_the_series_resonance():
    b = SKIN.make(value=100e-9, esr=0.02, esl=1e-9, tan_delta=0.03, k_skin=1e-5)
    f0 = 1 / (2 * np.pi * np.sqrt(1e-9 * 100e-9))
    assert np.isclose(SKIN.zero_phase(b)[0], f0, rtol=1e-15)
