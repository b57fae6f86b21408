"""Impedance models and band metrics: pure numpy, SI units, no I/O.

Every function broadcasts like a numpy ufunc. To evaluate P parts on F frequencies pass part
parameters as column vectors (``value[:, None]``) and frequencies as a row (``f[None, :]``);
the result is a (P, F) array.
"""

from partsel.engine import band, capacitor, ceramic, fixture, inductor

__all__ = ["band", "capacitor", "ceramic", "fixture", "inductor"]
