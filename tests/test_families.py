"""The contract every registered model family keeps, checked on random parts of each.

Check values: band extrema against a dense log grid refined around its extrema (the grid is
the reference: the exact metrics must be at least as extreme, and attained); zero-phase
frequencies against the sign of Im Z on both sides; consistency of the batch operations. The
closed forms each family states are checked in its own test file (test_engine.py for rlc and
lcp, test_rlc_skin.py, test_measured_family.py).
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from partsel.engine.models import FAMILIES, ModelSet, family
from partsel.engine.models.base import ClosedForm

Sample = Callable[[np.random.Generator, int], object]


def _rlc(rng: np.random.Generator, n: int):
    loss = np.where(rng.random(n) < 0.5, 0, 10 ** rng.uniform(-4, -1, n))
    return family("rlc").make(value=10 ** rng.uniform(-12, -3, n),
                              esr=10 ** rng.uniform(-3, 0, n),
                              esl=10 ** rng.uniform(-10, -8, n), tan_delta=loss)


def _rlc_skin(rng: np.random.Generator, n: int):
    b = _rlc(rng, n)
    return family("rlc-skin").make(**b, k_skin=10 ** rng.uniform(-7, -4, n))


def _lcp(rng: np.random.Generator, n: int):
    value = 10 ** rng.uniform(-9, -3, n)
    srf = 10 ** rng.uniform(5, 9, n)
    return family("lcp").make(value=value, dcr=10 ** rng.uniform(-2, 1, n),
                              cp=1.0 / ((2 * np.pi * srf) ** 2 * value),
                              rp=np.where(rng.random(n) < 0.5, np.inf, 10 ** rng.uniform(3, 6, n)))


def _measured(rng: np.random.Generator, n: int):
    fam = family("measured")
    fs, zs = [], []
    b = _rlc(rng, n)
    for i in range(n):
        f = np.geomspace(1e3, 1e9, int(rng.integers(20, 200)))
        fs.append(f)
        zs.append(family("rlc").impedance({k: v[i:i + 1] for k, v in b.items()}, f)[0])
    return fam.from_curves(fs, zs, value=b["value"], tan_delta=b["tan_delta"])


SAMPLES: dict[str, Sample] = {"rlc": _rlc, "rlc-skin": _rlc_skin, "lcp": _lcp,
                              "measured": _measured}


def test_every_registered_family_has_a_sample_here():
    """A family added to the registry must be added to these shared checks too."""
    missing = set(FAMILIES) - set(SAMPLES) - set(EXTERNAL_SAMPLES)
    assert not missing, f"add a sample generator for {sorted(missing)}"


# Families whose shared checks live in their own test module (they need heavier fixtures).
EXTERNAL_SAMPLES = {"netlist", "ladder2"}
NAMES = sorted(SAMPLES)


def _dense(fam, batch, f1: float, f2: float, n: int = 20001):
    f = np.geomspace(f1, f2, n)
    return f, np.abs(fam.impedance(batch, f))


@pytest.mark.parametrize("name", NAMES)
def test_impedance_each_is_the_diagonal(name: str):
    fam = family(name)
    batch = SAMPLES[name](np.random.default_rng(1), 12)
    f = np.geomspace(1e3, 1e9, 12)
    full = fam.impedance(batch, f)
    np.testing.assert_allclose(fam.impedance_each(batch, f), np.diag(full), rtol=1e-12)


@pytest.mark.parametrize("name", NAMES)
def test_batch_operations_keep_the_parts(name: str):
    fam = family(name)
    batch = SAMPLES[name](np.random.default_rng(2), 9)
    f = np.geomspace(1e4, 1e8, 7)
    z = fam.impedance(batch, f)
    idx = np.array([4, 0, 8, 4])
    np.testing.assert_array_equal(fam.impedance(fam.take(batch, idx), f), z[idx])
    both = fam.concat([fam.take(batch, np.arange(3)), fam.take(batch, np.arange(3, 9))])
    np.testing.assert_array_equal(fam.impedance(both, f), z)
    packed = fam.pack(batch)
    ints = np.concatenate([p[0] for p in packed]).astype(np.int64)
    reals = np.concatenate([p[1] for p in packed])
    io = np.concatenate([[0], np.cumsum([len(p[0]) for p in packed])])
    ro = np.concatenate([[0], np.cumsum([len(p[1]) for p in packed])])
    np.testing.assert_array_equal(fam.impedance(fam.unpack(ints, io, reals, ro), f), z)


def _refined_grid_extrema(fam, batch, i: int, f1: float, f2: float):
    """Max and min of |Z| of part i on a dense grid, each refined by a finer grid around it."""
    one = fam.take(batch, np.array([i]))
    f, z = _dense(fam, one, f1, f2)
    out = []
    for k in (int(np.argmax(z[0])), int(np.argmin(z[0]))):
        lo, hi = f[max(k - 1, 0)], f[min(k + 1, len(f) - 1)]
        ff = np.geomspace(lo, hi, 2001)
        zz = np.abs(fam.impedance(one, ff))[0]
        out.append((zz, ff))
    (zmax, _), (zmin, _) = out
    return float(max(zmax.max(), z[0].max())), float(min(zmin.min(), z[0].min()))


@pytest.mark.parametrize("name", NAMES)
def test_band_extrema_hold_against_a_refined_grid(name: str):
    """Exact extrema are at least as extreme as a refined 20,001-point grid finds, and are
    attained: |Z| at the reported frequency equals the reported value."""
    fam = family(name)
    rng = np.random.default_rng(3)
    batch = SAMPLES[name](rng, 25)
    for f1, f2 in ((1e4, 1e8), (2e3, 5e8), (3e6, 3.1e6)):
        ext = fam.band(batch, f1, f2)
        zmax, fmax = fam.band_max(batch, f1, f2)
        np.testing.assert_allclose(zmax, ext.max_z, rtol=1e-12)
        at_max = np.abs(fam.impedance_each(batch, ext.f_max))
        at_min = np.abs(fam.impedance_each(batch, ext.f_min))
        np.testing.assert_allclose(at_max, ext.max_z, rtol=1e-9)
        np.testing.assert_allclose(at_min, ext.min_z, rtol=1e-9)
        for i in range(fam.size(batch)):
            gmax, gmin = _refined_grid_extrema(fam, batch, i, f1, f2)
            assert ext.max_z[i] >= gmax * (1 - 1e-9), (name, i, f1, f2)
            assert ext.min_z[i] <= gmin * (1 + 1e-9), (name, i, f1, f2)


@pytest.mark.parametrize("name", NAMES)
def test_zero_phase_is_where_the_reactance_changes_sign(name: str):
    fam = family(name)
    batch = SAMPLES[name](np.random.default_rng(4), 20)
    f0 = fam.zero_phase(batch)
    for i in range(fam.size(batch)):
        one = fam.take(batch, np.array([i]))
        lo, hi = fam.span(one)
        if not (np.isfinite(f0[i]) and f0[i] > 0):
            continue
        x = fam.impedance(one, np.array([f0[i] * (1 - 1e-6), f0[i] * (1 + 1e-6)]))[0].imag
        assert np.sign(x[0]) != np.sign(x[1]), (name, i)
        f = np.geomspace(max(lo[0], f0[i] * 1e-4), f0[i] * (1 - 1e-6), 2000)
        xs = fam.impedance(one, f)[0].imag
        assert np.all(np.sign(xs) == np.sign(xs[0])), (name, i)


@pytest.mark.parametrize("name", [n for n in NAMES if "capacitor" in family(n).kinds])
def test_layers_move_the_curve_as_stated(name: str):
    """A series inductance adds j omega L; a capacitance scale of 1 changes nothing (derived)."""
    fam = family(name)
    batch = SAMPLES[name](np.random.default_rng(5), 6)
    f = np.geomspace(1e4, 1e8, 9)
    z = fam.impedance(batch, f)
    z_l = fam.impedance(fam.with_series_inductance(batch, 1e-9), f)
    np.testing.assert_allclose(z_l, z + 1j * 2 * np.pi * f * 1e-9, rtol=1e-12)
    np.testing.assert_array_equal(fam.impedance(fam.with_capacitance_scale(batch, 1.0), f), z)


def test_a_model_set_of_mixed_families_answers_in_part_order():
    rng = np.random.default_rng(6)
    sets = [ModelSet.of(family(n), SAMPLES[n](rng, 4)) for n in NAMES]
    mixed = ModelSet.concat(sets).take(np.array([15, 0, 7, 3, 12, 9]))
    f = np.geomspace(1e4, 1e8, 5)
    parts = [(k // 4, k % 4) for k in (15, 0, 7, 3, 12, 9)]
    expect = np.array([family(NAMES[g]).impedance(
        family(NAMES[g]).take(s.groups[0].batch, np.array([j])), f)[0]
        for (g, j), s in zip(parts, [sets[g] for g, _ in parts], strict=True)])
    np.testing.assert_array_equal(mixed.impedance(f), expect)
    assert list(mixed.family_names()) == [NAMES[g] for g, _ in parts]
    # the names at a few positions without the whole list, and a family's mask test
    assert mixed.family_at([4, 1, 1]) == [NAMES[parts[4][0]], NAMES[parts[1][0]],
                                          NAMES[parts[1][0]]]
    one_hot = np.zeros(len(parts), dtype=bool)
    one_hot[2] = True
    assert mixed.any_in(NAMES[parts[2][0]], one_hot)
    assert not any(mixed.any_in(n, one_hot) for n in NAMES if n != NAMES[parts[2][0]])
    ext = mixed.band(1e4, 1e8)
    for k, (g, j) in enumerate(parts):
        fam = family(NAMES[g])
        one = fam.band(fam.take(sets[g].groups[0].batch, np.array([j])), 1e4, 1e8)
        assert ext.max_z[k] == one.max_z[0] or (np.isnan(ext.max_z[k]) and np.isnan(one.max_z[0]))


@pytest.mark.parametrize("name", [n for n in NAMES if isinstance(family(n), ClosedForm)])
def test_closed_forms_refuse_unknown_or_missing_parameters(name: str):
    fam = family(name)
    with pytest.raises(ValueError, match="no parameter"):
        fam.make(value=[1e-6], nonsense=[1.0])
    with pytest.raises(ValueError, match="needs value"):
        fam.make()


def test_an_unknown_family_is_refused_with_the_known_ones():
    from partsel.errors import ModelError
    with pytest.raises(ModelError, match="unknown model family 'rcl'.*rlc"):
        family("rcl")


@settings(max_examples=60)
@given(st.floats(-12, -3), st.floats(-4, 0), st.floats(-10, -7), st.floats(-8, -3),
       st.floats(3, 9), st.floats(0.01, 3))
def test_rlc_skin_band_extrema_against_a_refined_grid(lc: float, lr: float, ll: float,
                                                      lk: float, lf: float, span: float):
    """rlc-skin: the band maximum at an edge and the minimum at the stationary point hold
    against a 20,001-point grid refined around its extrema, for Q up to about 1e4."""
    fam = family("rlc-skin")
    b = fam.make(value=10 ** lc, esr=10 ** lr, esl=10 ** ll, tan_delta=0.01, k_skin=10 ** lk)
    f1, f2 = 10 ** lf, 10 ** (lf + span)
    ext = fam.band(b, f1, f2)
    gmax, gmin = _refined_grid_extrema(fam, b, 0, f1, f2)
    assert ext.max_z[0] >= gmax * (1 - 1e-12)
    assert ext.min_z[0] <= gmin * (1 + 1e-9)
    assert np.isclose(np.abs(fam.impedance_each(b, ext.f_min))[0], ext.min_z[0], rtol=1e-12)
