"""Impedance models and band metrics: pure numpy, SI units, no I/O.

Every equivalent circuit is a family of :mod:`partsel.engine.models` (``rlc``, ``rlc-skin``,
``lcp``, ``ladder2``, ``netlist``, ``measured``); :mod:`partsel.engine.bank` puts parts of any
family in parallel, :mod:`partsel.engine.pdn` holds the power-distribution formulas and the
exact scan of R-L-C banks, :mod:`partsel.engine.ceramic` the DC-bias and aging of ceramics,
:mod:`partsel.engine.fixture` the S-parameters of a part in a test fixture and
:mod:`partsel.engine.fit` the fitting of a family to a curve.

Functions broadcast like numpy ufuncs: parts on axis 0, frequencies on axis 1.
"""
