"""Time the model fits on noisy 1,000-point sweeps: prints milliseconds per fit.

Run: python bench/bench_fit.py
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))  # run from a checkout

from partsel.engine.fit import fit_capacitor, fit_inductor  # noqa: E402
from partsel.engine.models import lcp, rlc  # noqa: E402


def _noisy(z: np.ndarray, rng: np.random.Generator, level: float = 0.02) -> np.ndarray:
    n = rng.standard_normal(z.size) + 1j * rng.standard_normal(z.size)
    return z * (1.0 + level * n / np.sqrt(2.0))


def _time(label: str, fit, repeat: int = 20) -> None:
    t0 = time.perf_counter()
    for _ in range(repeat):
        result = fit()
    ms = (time.perf_counter() - t0) / repeat * 1e3
    print(f"{label:<42} {ms:8.1f} ms per fit  (residual {result.residual_db:.3f} dB RMS)")


def main() -> None:
    rng = np.random.default_rng(0)
    f = np.logspace(3, 9, 1000)
    zc = _noisy(rlc.impedance(f, 100e-9, 10e-3, 0.8e-9), rng)
    zd = _noisy(rlc.impedance(f, 10e-6, 3e-3, 1e-9, 0.05), rng)
    fi = np.logspace(2, np.log10(3e8), 1000)
    zi = _noisy(lcp.impedance(fi, 10e-6, 50e-3, lcp.winding_capacitance(10e-6, 30e6),
                                   20e3), rng)
    _time("capacitor C, ESR, ESL (1000 points)", lambda: fit_capacitor(f, zc))
    _time("capacitor C, ESR, ESL, tan_delta", lambda: fit_capacitor(f, zd, tan_delta=True))
    _time("inductor L, DCR, Cp, Rp (1000 points)", lambda: fit_inductor(fi, zi))
    _time("inductor L, DCR, Cp", lambda: fit_inductor(fi, zi, rp=False))


if __name__ == "__main__":
    main()
