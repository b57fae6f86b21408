"""Transitional name of :mod:`partsel.engine.models.lcp` (the ``lcp`` family's formulas)."""

from partsel.engine.models.lcp import (  # noqa: F401
    admittance,
    conductance,
    effective_inductance,
    impedance,
    is_inductive_to,
    peak_frequency,
    q_factor,
    srf,
    winding_capacitance,
    zero_phase_frequency,
)
