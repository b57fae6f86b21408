"""A bank of branches of any family in parallel, and its worst |Z| over a band.

Check values: the two-branch anti-resonance (10 uF / 1 nH / 5 mOhm in parallel with
100 nF / 1 nH / 20 mOhm peaks near 0.205 ohm at about 11.2 MHz, derived by exact complex
evaluation, recomputed here on a dense grid); the exact Foster-based scan of the same branches
as R-L-C (circuit theory) for the general path.
"""

from __future__ import annotations

import numpy as np
import pytest

from partsel.engine import pdn
from partsel.engine.bank import Bank
from partsel.engine.models import ModelSet, family

RLC, SKIN, MEAS = family("rlc"), family("rlc-skin"), family("measured")
C = np.array([10e-6, 100e-9])
R = np.array([5e-3, 20e-3])
L = np.array([1e-9, 1e-9])


def _dense_peak(bank: Bank, f1: float, f2: float) -> tuple[float, float]:
    f = np.geomspace(f1, f2, 400_001)
    z = np.abs(bank.total(f))
    k = int(np.argmax(z))
    return float(z[k]), float(f[k])


def test_an_rlc_bank_scans_as_the_r_l_c_branches_do():
    bank = Bank.of(ModelSet.of(RLC, RLC.make(value=C, esr=R, esl=L)), [1, 1])
    sc = bank.scan(1e6, 3e7)
    ref = pdn.scan(1e6, 3e7, pdn.Branches.of(C, R, L))
    assert sc.max_z == ref.max_z and sc.f_max == ref.f_max
    z, f = _dense_peak(bank, 1e6, 3e7)
    assert sc.max_z == pytest.approx(0.205, abs=0.0005) and sc.f_max == pytest.approx(11.2e6,
                                                                                       rel=0.01)
    assert sc.max_z >= z * (1 - 1e-12) and sc.f_max == pytest.approx(f, rel=1e-4)


def test_the_general_path_finds_the_same_peak():
    """One branch as rlc-skin without its skin term: the bank leaves the Foster path, and the
    landmark grid finds the same anti-resonance, to rounding."""
    mixed = ModelSet.concat([ModelSet.of(RLC, RLC.make(value=C[:1], esr=R[:1], esl=L[:1])),
                             ModelSet.of(SKIN, SKIN.make(value=C[1:], esr=R[1:], esl=L[1:]))])
    bank = Bank.of(mixed, [1, 1])
    sc = bank.scan(1e5, 1e9)
    ref = pdn.scan(1e5, 1e9, pdn.Branches.of(C, R, L))
    assert sc.max_z == pytest.approx(ref.max_z, rel=1e-9)
    assert sc.f_max == pytest.approx(ref.f_max, rel=1e-6)


def test_a_measured_branch_with_its_model_outside_the_data():
    """The 100 nF branch measured 1-100 MHz (its own R-L-C curve, 401 points), its model as the
    fallback outside: the peak is the R-L-C bank's, within the interpolation error."""
    small = RLC.make(value=C[1:], esr=R[1:], esl=L[1:])
    f = np.geomspace(1e6, 1e8, 401)
    curve = MEAS.from_curves([f], [RLC.impedance(small, f)[0]],
                             fallback=[ModelSet.of(RLC, small)])
    mixed = ModelSet.concat([ModelSet.of(RLC, RLC.make(value=C[:1], esr=R[:1], esl=L[:1])),
                             ModelSet.of(MEAS, curve)])
    sc = Bank.of(mixed, [1, 1]).scan(1e5, 1e9)
    ref = pdn.scan(1e5, 1e9, pdn.Branches.of(C, R, L))
    assert sc.max_z == pytest.approx(ref.max_z, rel=2e-3)
    assert sc.f_max == pytest.approx(ref.f_max, rel=2e-3)


def test_counts_divide_the_branch_impedance():
    """N copies in parallel divide Z by N (circuit theory)."""
    m = ModelSet.of(RLC, RLC.make(value=C, esr=R, esl=L))
    f = np.geomspace(1e4, 1e8, 9)
    one = Bank.of(m, [1, 0]).total(f)
    four = Bank.of(m, [4, 0]).total(f)
    np.testing.assert_allclose(four, one / 4, rtol=1e-14)
    with pytest.raises(ValueError, match="empty"):
        Bank.of(m, [0, 0]).scan(1e4, 1e8)
