"""A part's capacitance on the rail: at its DC bias, and the worst-case (low side) factor."""

from __future__ import annotations

import numpy as np
from numpy.typing import NDArray

from partsel.engine import ceramic
from partsel.jobs.models import BIAS_SOURCES, bias_ratio_columns

BIAS_LABELS = BIAS_SOURCES

WORST_CASE_TOLERANCE = 0.20     # when the catalog gives none (M, the widest common letter)
AGING_HOURS = (1.0, 87_600.0)   # class II aging from 1 h after the last heat to 10 years


def worst_case_ratio(tolerance: NDArray, technology: NDArray,
                     dielectric: NDArray) -> NDArray[np.float64]:
    """Low-side capacitance factor: (1 - tolerance) x (1 + EIA-198 low-side change) x aging.

    Worst-case capacitance multiplies tolerance, temperature change, DC bias and aging
    (derived, shared domain notes section 2); DC bias is applied separately. Tolerance from the
    catalog, else :data:`WORST_CASE_TOLERANCE`; the temperature change over the code's whole
    range (EIA-198) for ceramics with a code; aging C(t) = C(t0)(1 - k/100 log10(t/t0)) over
    :data:`AGING_HOURS` for class II codes (rates: rule of thumb, IEC 60384-9 / EIA-521 define
    the measurement).
    """
    from partsel.errors import UnitError
    from partsel.standards import eia198

    tol = np.where(np.isfinite(tolerance), tolerance, WORST_CASE_TOLERANCE)
    ratio = 1.0 - np.clip(tol, 0.0, 0.99)
    codes = np.array([(d or "").strip().upper() if t == "mlcc" else ""
                      for t, d in zip(technology, dielectric, strict=True)], dtype=object)
    for code in set(codes) - {""}:
        try:
            d = eia198.decode(code)
        except UnitError:
            continue
        k = ceramic.AGING_RATE.get(d.code, 2.5 if d.klass == 2 else 0.0)
        aging = float(ceramic.aging_ratio(AGING_HOURS[1], k, AGING_HOURS[0]))
        ratio[codes == code] *= (1.0 + d.change_low) * aging
    return ratio


def capacitance_at_bias(voltage: float, value: NDArray, technology: NDArray,
                        dielectric: NDArray, case: NDArray, rated_voltage: NDArray,
                        bias_v: NDArray, bias_ratio: NDArray,
                        curves: tuple[NDArray, NDArray, NDArray] | None = None,
                        estimate: NDArray | None = None) -> tuple[NDArray, NDArray]:
    """C at a DC voltage [F] and where the ratio came from (index into BIAS_LABELS), by the
    one bias policy of :func:`partsel.jobs.models.bias_ratio_columns` (``curves`` and
    ``estimate`` as there)."""
    ratio, source = bias_ratio_columns(voltage, value, technology, dielectric, case,
                                       rated_voltage, bias_v, bias_ratio, curves, estimate)
    return np.asarray(value, dtype=float) * ratio, source
