"""Transitional names of the band extrema of the ``rlc`` and ``lcp`` families."""

from partsel.engine.models.base import BandExtrema  # noqa: F401
from partsel.engine.models.lcp import band as inductor_band  # noqa: F401
from partsel.engine.models.rlc import band as capacitor_band  # noqa: F401
from partsel.engine.models.rlc import band_max as capacitor_band_max  # noqa: F401
