"""Transitional name of :mod:`partsel.engine.models.rlc` (the ``rlc`` family's formulas)."""

from partsel.engine.models.rlc import (  # noqa: F401
    effective_capacitance,
    impedance,
    min_impedance_frequency,
    q_factor,
    reactance,
    resonance_q,
    series_resistance,
    srf,
)
