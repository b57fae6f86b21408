"""What a substitute must meet (:class:`Criteria`), the rules' names, and the results."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from partsel.catalog import DEFAULT_LIFECYCLES, LIFECYCLES
from partsel.errors import QueryError

PER_DECADE = 100
REFINE_POINTS = 101   # grid points around each |Z| extremum ...
REFINE_SPAN = 0.05    # ... over f* / 1.05 .. f* x 1.05
DEFAULT_WITHIN_DB = 6.0
DEFAULT_VALUE_WINDOW = 0.10      # when the original states no tolerance
CAPACITOR_BAND = (1 / 30, 10.0)  # default band as multiples of the original's SRF
INDUCTOR_BAND = (1 / 100, 1 / 3)
Z_FLOOR = 1e-9                   # [ohm]: |Z| floor so that a lossless model gives no log(0)
# Bounds of C(V)/C0 used only to widen the SQL value window when a DC bias is applied: the
# class II estimate never falls below 0.1 and a stored curve never exceeds 1.5.
_RATIO_LOW, _RATIO_HIGH = 0.1, 1.5
_EPS = 1e-9

RULES: dict[str, str] = {
    "case": "same EIA case code, or one of the allowed cases",
    "height": "seated height not greater than the original's",
    "mounting": "same mounting (smd or through_hole)",
    "voltage": "rated voltage at least the original's, or derated rating at least the working "
               "voltage",
    "temperature": "operating range covers the original's",
    "tolerance": "tolerance no wider than the original's",
    "dielectric": "EIA-198 dielectric at least as stable (range covers; class I over class II; "
                  "smaller change)",
    "safety": "IEC 60384-14 safety class kept (Y may replace X, never the reverse)",
    "aec_q200": "AEC-Q200 (Rev E) grade equal or better",
    "lifecycle": "lifecycle one of the accepted states",
    "stock": "in stock",
    "dcr": "DCR no higher than the original's",
    "isat": "Isat no lower, at the same or a smaller inductance drop",
    "irms": "Irms no lower than the original's",
    "srf": "SRF no lower than the original's (or than the given frequency)",
    "value": "value (capacitors: at the DC bias) within the window around the original's",
    "curve": "|Z| within the limit of the original's at every frequency of the band",
    "esr": "ESR at the original's SRF within the window of ratios",
    "corner_z": "capacitors: the largest |Z| over the band at the worst corner no higher than "
                "the original's at its worst corner (corners: tolerance, temperature, aging, "
                "ESR vs temperature, at the DC bias)",
    "corner_l": "inductors: L at the worst corner (tolerance low side) no lower than the "
                "original's at its worst corner",
    "corner_dcr": "inductors: DCR at the hot end of the temperature range no higher than the "
                  "original's at its hot end",
    "corner_srf": "SRF over the box no worse than the original's over its box: capacitors the "
                  "SRF window (lowest..highest) inside the original's, inductors the lowest "
                  "zero-phase frequency no lower",
    "corner_temp": "operating range covers the asked temperature range",
}


@dataclass(frozen=True)
class Criteria:
    """What a substitute must meet beyond the original's own figures. SI units.

    Parameters
    ----------
    cases : tuple of str
        Allowed case codes; empty means the original's case.
    band : (float, float), optional
        Band [Hz] of the function rules and the distance; default see the module docstring.
    within_db : float, optional
        Largest |dB| difference of |Z| over the band; None turns the curve rule off.
    esr_window : (float, float), optional
        Capacitors: ESR ratio window (candidate / original) at the original's SRF.
    bias : float, optional
        Capacitors: DC bias [V] for the effective capacitance; default the working voltage.
    value_within : float, optional
        Value window as a fraction; default the original's tolerance (10 % when unstated).
    working_voltage : float, optional
        Capacitors: the voltage the part works at [V]; replaces "rated voltage at least the
        original's" by the derated rating check.
    srf_above : float, optional
        Inductors: SRF at least this [Hz] instead of at least the original's.
    lifecycles : tuple of str
        Accepted lifecycle states of a candidate (default
        :data:`partsel.catalog.DEFAULT_LIFECYCLES`: active and nrnd).
    in_stock : bool
        Candidates must have stock > 0.
    explain : bool
        Also report near misses: candidates that fail exactly one rule.
    limit : int
        Candidates (and near misses) returned; 0 = all.
    model : str
        Which model of each part the function rules use: catalog, vendor, measured or best
        (see :func:`partsel.jobs.models.choose_models`).
    corners : bool
        Judge the original and every candidate at their worst corners too (rules
        ``corner_z`` or ``corner_l`` and ``corner_dcr``, ``corner_srf`` and, with ``temp``,
        ``corner_temp``; see
        :mod:`partsel.jobs.alternates.corners`).
    temp : (float, float) or str, optional
        With ``corners``: temperature range [degC], or text '-40C..85C' (default 25 degC only).
    age : float or str, optional
        With ``corners``: life [h], or text '10y' (default new parts).
    """

    cases: tuple[str, ...] = ()
    band: tuple[float, float] | None = None
    within_db: float | None = DEFAULT_WITHIN_DB
    esr_window: tuple[float, float] | None = None
    bias: float | None = None
    value_within: float | None = None
    working_voltage: float | None = None
    srf_above: float | None = None
    lifecycles: tuple[str, ...] = DEFAULT_LIFECYCLES
    in_stock: bool = False
    explain: bool = False
    limit: int = 10
    model: str = "best"
    corners: bool = False
    temp: Any = None
    age: Any = None

    def validate(self, kind: str) -> None:
        from partsel.jobs.models import check_choice
        check_choice(self.model)
        """Raise QueryError for options that contradict each other or the original's kind."""
        if self.band is not None and not 0 < self.band[0] < self.band[1] < np.inf:
            raise QueryError("the band must run from a lower to a higher positive frequency, "
                             "e.g. 1MHz..100MHz")
        if self.within_db is not None and not (np.isfinite(self.within_db)
                                               and self.within_db >= 0):
            raise QueryError("the |Z| limit must be 0 dB or more, e.g. 2dB")
        if self.value_within is not None and not 0 < self.value_within < 1:
            raise QueryError("the value window must lie between 0 % and 100 %, e.g. 10%")
        if self.esr_window is not None and not 0 < self.esr_window[0] <= self.esr_window[1]:
            raise QueryError("the ESR window must hold positive ratios, low first, e.g. 0.5..2")
        for name in ("bias", "working_voltage", "srf_above"):
            v = getattr(self, name)
            if v is not None and not (np.isfinite(v) and v >= 0):
                raise QueryError(f"{_NAMES[name]} must be a positive number")
        if kind == "inductor":
            for name in ("esr_window", "bias", "working_voltage"):
                if getattr(self, name) is not None:
                    raise QueryError(f"{_NAMES[name]} applies to capacitors; the original is an "
                                     "inductor")
        if kind == "capacitor" and self.srf_above is not None:
            raise QueryError(f"{_NAMES['srf_above']} applies to inductors; the original is a "
                             "capacitor")
        bad = [s for s in self.lifecycles if s not in LIFECYCLES]
        if bad or not self.lifecycles:
            raise QueryError(f"unknown lifecycle '{', '.join(bad)}': use "
                             f"{', '.join(LIFECYCLES)}")
        if self.limit < 0:
            raise QueryError("the limit must be 0 (all) or a positive count")
        if (self.temp is not None or self.age is not None) and not self.corners:
            raise QueryError("a temperature range (temp) or a life (age) applies to the worst "
                             "case: ask for the corners too", params=("temp", "age"))
        if self.corners:
            self.conditions()

    def conditions(self) -> Any:
        """The worst case asked for (:class:`partsel.jobs.corners.Conditions`)."""
        from partsel.jobs.corners import Conditions
        return Conditions.read(self.temp, self.age)


_NAMES = {"bias": "the DC bias", "working_voltage": "the working voltage",
          "srf_above": "the SRF floor (srf_above)", "esr_window": "the ESR window"}


@dataclass(frozen=True)
class RuleResult:
    rule: str
    passed: bool
    detail: str


@dataclass
class Candidate:
    """One candidate (or near miss) with its figures and the outcome of every rule."""

    part: dict[str, Any]
    distance_db: float
    max_diff_db: float
    f_max_diff_hz: float
    value_eff: float          # C at the bias (capacitors with a bias), else the nominal value
    bias_source: str          # one of partsel.jobs.models.BIAS_SOURCES
    esr_ratio: float | None
    rules: list[RuleResult]
    model: str = "catalog rlc"      # the model the function rules used, e.g. "vendor netlist"
    model_source: str = "catalog"
    corner: dict[str, Any] | None = None   # the worst-case fields (corners asked)

    @property
    def failed(self) -> list[RuleResult]:
        return [r for r in self.rules if not r.passed]


@dataclass
class AlternatesResult:
    original: dict[str, Any]
    original_value_eff: float
    band: tuple[float, float]
    candidates: list[Candidate]
    near_misses: list[Candidate]
    passing: int                 # candidates that pass every rule (before the limit)
    fit: int                     # parts that pass every form and fit rule
    near: int                    # near misses (before the limit)
    rules: list[str]             # names of the rules checked, in order
    skipped: list[str] = field(default_factory=list)
    effects: list[str] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    cautions: list[str] = field(default_factory=list)
    order: str = ("curve distance (RMS dB difference of |Z| over the band), then active before "
                  "nrnd, then price, then stock")
    bias: float | None = None            # DC bias applied to capacitors [V]
    original_bias_source: str = "none"   # one of partsel.jobs.models.BIAS_SOURCES
    original_corner: dict[str, Any] | None = None   # the original's worst case (corners)
    conditions: str | None = None        # the worst case asked for, in words (corners)
