"""EIA-198 temperature envelopes (issue 11 check values; source: EIA-198)."""

import pytest

from partsel.standards.eia198 import temperature_envelope


@pytest.mark.parametrize("code, t_lo, t_hi, low, high", [
    ("X7R", -55.0, 125.0, 0.85, 1.15),   # EIA-198: X7R ±15 % over -55..125 degC
    ("X5R", -55.0, 85.0, 0.85, 1.15),    # EIA-198: X5R ±15 % over -55..85 degC
    ("Y5V", -30.0, 85.0, 0.18, 1.22),    # EIA-198: Y5V +22/-82 % over -30..85 degC
])
def test_class_ii_envelopes(code: str, t_lo: float, t_hi: float, low: float, high: float) -> None:
    env = temperature_envelope(code, t_lo, t_hi)
    assert env.low == pytest.approx(low)
    assert env.high == pytest.approx(high)
    assert not env.beyond
    assert code in env.source and "EIA-198" in env.source


def test_c0g_envelope() -> None:
    # EIA-198: C0G 0 ±30 ppm/K; derived: at -55 degC, 80 K below 25 degC -> 1 -/+ 2.4e-3;
    # at 125 degC, 100 K above -> 1 -/+ 3.0e-3
    env = temperature_envelope("C0G", -55.0, 125.0)
    assert env.low == pytest.approx(1.0 - 30e-6 * 100.0)
    assert env.high == pytest.approx(1.0 + 30e-6 * 100.0)
    assert "EIA-198" in env.source


def test_range_beyond_code_is_flagged() -> None:
    # EIA-198: X5R covers -55..85 degC only, so 125 degC lies outside it
    assert temperature_envelope("X5R", -55.0, 125.0).beyond
