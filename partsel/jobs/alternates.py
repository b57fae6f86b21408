r"""Substitutes for a part: form, fit and function, ranked by curve distance, with reasons.

Every rule is checked for every candidate and reported with its outcome and a one-line reason.

Form and fit rules are boolean SQL expressions with bound parameters, evaluated by the store in
one query; only the rows that pass them (or, with ``explain``, fail at most one) reach numpy,
where the function rules are evaluated for all of them at once.

Form
    ``case``: the same EIA case code, or one of the allowed cases the user gives.
    ``height``: seated height not greater. ``mounting``: the same (smd or through_hole).
Fit
    ``voltage``: rated voltage at least the original's; with a working voltage instead, the
    rating derated by technology at least the working voltage (see
    :func:`partsel.derating.derating`).
    ``temperature``: the operating range covers the original's. ``tolerance``: no wider.
    ``dielectric``: EIA-198 code at least as stable (our order, see
    :func:`partsel.standards.eia198.at_least_as_stable`: the range covers the original's, class I
    beats class II, then the smaller change). ``safety``: IEC 60384-14 class kept (same or
    higher subclass, Y may replace X, never the reverse; a rated part is never replaced by an
    unrated one; :func:`partsel.standards.safety.may_replace`). ``aec_q200``: AEC-Q200 Rev E
    grade equal or better. ``lifecycle``: one of the accepted states (default active).
    ``stock``: in stock (when asked). Inductors: ``dcr`` no higher; ``isat`` no lower and defined
    at the same or a smaller inductance drop; ``irms`` no lower; ``srf`` no lower than the
    original's, or at least a frequency the user gives.
Function
    ``value``: the value within a window around the original's (default: the original's
    tolerance); for capacitors with a DC bias, the effective capacitance of both parts at that
    bias (the part's measured curve, else the rule-of-thumb class II estimate).
    ``curve``: |Z| of the candidate within ``within_db`` of the original's at every frequency of
    the band (default 6 dB, a factor of 2).
    ``esr``: capacitors, when a window is given: R(f0) = esr + tan_delta/(2 pi f0 C) of the
    candidate over the original's, at the original's SRF f0 (where ESR sets |Z|).

A rule whose reference the original does not state (no height, no tolerance, ...) is skipped and
listed as skipped. A candidate that does not state a figure the rule needs fails that rule.

Curve distance (the ranking key), in dB:

.. math::

    d(f) = 20 \log_{10}\frac{|Z_{cand}(f)|}{|Z_{orig}(f)|}, \qquad
    \mathrm{distance\_db} = \sqrt{\frac{1}{\ln(f_2/f_1)} \int_{f_1}^{f_2} d(f)^2 \, d\ln f}

(the RMS of the log-magnitude difference, each decade weighted equally), evaluated by the
trapezoid rule in ln f on a log grid of :data:`PER_DECADE` points per decade, refined around
the |Z| extremum of both parts (the series resonance of a capacitor, the peak of an inductor;
see :func:`band_grid`) so that a narrow resonance is neither stepped over nor under-weighted.
The largest |d| (the ``curve`` rule) is taken on the same points. Ties in distance break by
price (lowest first), then stock (highest first), then the order the parts were stored.

Default band (our choice): capacitors SRF/30 .. SRF*10 of the original at the working bias,
which holds the capacitive region (C sets |Z|), the resonance (ESR) and the inductive region
(ESL); inductors SRF/100 .. SRF/3, the region where an inductor is used (rule of thumb: SRF at
least 10x the working frequency), since the SRF rule covers the resonance itself.
"""

from __future__ import annotations

import json
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from numpy.typing import NDArray

from partsel.catalog import LIFECYCLES
from partsel.derating import derating
from partsel.engine import capacitor, ceramic, inductor
from partsel.errors import QueryError, UnitError
from partsel.jobs import models
from partsel.jobs.models import Models
from partsel.jobs.show import log_grid
from partsel.standards import aecq200, eia198, safety
from partsel.store.db import Store
from partsel.store.query import ELECTROLYTE_SQL, derating_sql
from partsel.units import format_quantity

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
        Accepted lifecycle states of a candidate.
    in_stock : bool
        Candidates must have stock > 0.
    explain : bool
        Also report near misses: candidates that fail exactly one rule.
    limit : int
        Candidates (and near misses) returned; 0 = all.
    """

    cases: tuple[str, ...] = ()
    band: tuple[float, float] | None = None
    within_db: float | None = DEFAULT_WITHIN_DB
    esr_window: tuple[float, float] | None = None
    bias: float | None = None
    value_within: float | None = None
    working_voltage: float | None = None
    srf_above: float | None = None
    lifecycles: tuple[str, ...] = ("active",)
    in_stock: bool = False
    explain: bool = False
    limit: int = 10

    def validate(self, kind: str) -> None:
        """Raise QueryError for options that contradict each other or the original's kind."""
        if self.band is not None and not 0 < self.band[0] < self.band[1] < np.inf:
            raise QueryError("the band must run from a lower to a higher positive frequency, "
                             "e.g. --band 1MHz..100MHz")
        if self.within_db is not None and not (np.isfinite(self.within_db)
                                               and self.within_db >= 0):
            raise QueryError("--within must be 0 dB or more, e.g. --within 2dB")
        if self.value_within is not None and not 0 < self.value_within < 1:
            raise QueryError("--value-within must lie between 0 % and 100 %, e.g. 10%")
        if self.esr_window is not None and not 0 < self.esr_window[0] <= self.esr_window[1]:
            raise QueryError("--esr-window must hold positive ratios, low first, e.g. 0.5..2")
        for name in ("bias", "working_voltage", "srf_above"):
            v = getattr(self, name)
            if v is not None and not (np.isfinite(v) and v >= 0):
                raise QueryError(f"--{name.replace('_', '-')} must be a positive number")
        if kind == "inductor":
            for name in ("esr_window", "bias", "working_voltage"):
                if getattr(self, name) is not None:
                    raise QueryError(f"--{name.replace('_', '-')} applies to capacitors; the "
                                     "original is an inductor")
        if kind == "capacitor" and self.srf_above is not None:
            raise QueryError("--srf-above applies to inductors; the original is a capacitor")
        bad = [s for s in self.lifecycles if s not in LIFECYCLES]
        if bad or not self.lifecycles:
            raise QueryError(f"unknown lifecycle '{', '.join(bad)}': use "
                             f"{', '.join(LIFECYCLES)}")
        if self.limit < 0:
            raise QueryError("--limit must be 0 (all) or a positive count")


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
    order: str = ("curve distance (RMS dB difference of |Z| over the band), then price, "
                  "then stock")
    bias: float | None = None            # DC bias applied to capacitors [V]
    original_bias_source: str = "none"   # one of partsel.jobs.models.BIAS_SOURCES


# --- helpers ------------------------------------------------------------------------------------

def _q(x: float | None, unit: str) -> str:
    return "not stated" if x is None else format_quantity(x, unit)


def _pct(x: float) -> str:
    return f"{100 * x:.3g} %"


_ELECTROLYTE_SQL = ELECTROLYTE_SQL
_DERATING_SQL = derating_sql()

_FETCH = ("id", "part_number", "maker", "kind", "technology", "case", "value", "tolerance",
          "rated_voltage", "dielectric", "esr", "tan_delta", "esl", "dcr", "srf", "rp", "isat",
          "isat_drop", "irms", "temp_min", "temp_max", "height", "mounting", "safety_class",
          "aec_q200_grade", "lifecycle", "price", "stock", "bias_v", "bias_ratio", "esr_source",
          "esl_source", "electrolyte")
_TEXT = {"part_number", "maker", "kind", "technology", "case", "dielectric", "mounting",
         "safety_class", "lifecycle", "esr_source", "esl_source", "electrolyte"}
_LISTS = {"bias_v", "bias_ratio"}


def _select(name: str) -> str:
    """Fetch expression: unknown text as '' and unknown curves as [] (never NULL)."""
    if name in _TEXT:
        return f"coalesce(\"{name}\", '') AS \"{name}\""
    if name in _LISTS:
        return f"coalesce({name}, CAST([] AS DOUBLE[])) AS {name}"
    return f'"{name}"'


def _all_dielectric_codes() -> list[str]:
    codes = list(eia198.CLASS_I)
    codes += [lo + hi + ch for lo in eia198.LOW_TEMPERATURE for hi in eia198.HIGH_TEMPERATURE
              for ch in eia198.CHANGE]
    return codes


def curve_ratio_sql(voltage_param: str = "?") -> tuple[str, str]:
    """SQL for C(V)/C0 from a part's stored curve (NULL without one), as two expressions.

    The first, ``bias_k``, picks the curve segment (1-based index of its lower point) and
    must be computed in a subquery below the second, the ratio itself. Both take the voltage
    as a bound parameter. The same interpolation as
    :func:`partsel.engine.ceramic.bias_ratio_from_curve` (linear between points, the end
    ratios held beyond them), done in the store so that the curves need not be fetched.
    """
    v = f"abs({voltage_param})"
    k = (f"least(greatest(len(list_filter(bias_v, lambda x: x <= {v})), 1), "
         f"len(bias_v) - 1)")
    ratio = (f"CASE WHEN len(bias_v) = 1 THEN bias_ratio[1] WHEN len(bias_v) >= 2 THEN "
             f"bias_ratio[bias_k] + least(greatest(({v} - bias_v[bias_k]) / "
             f"(bias_v[bias_k + 1] - bias_v[bias_k]), 0), 1) * "
             f"(bias_ratio[bias_k + 1] - bias_ratio[bias_k]) END")
    return k, ratio


def bias_ratio(voltage: float, technology: NDArray, dielectric: NDArray, case: NDArray,
               rated_voltage: NDArray, value: NDArray, curve_ratio: NDArray,
               curve_last_v: NDArray | None = None) -> tuple[NDArray[np.float64], NDArray[np.int8]]:
    """C(V)/C0 per part at a DC voltage, vectorised, and its source (index into
    :data:`partsel.jobs.models.BIAS_SOURCES`).

    The same policy as :func:`partsel.jobs.models.bias_ratio_columns`, from curves interpolated
    in the store: the part's own curve (``curve_ratio``, NaN without one) within its voltage
    range; beyond its last point (``curve_last_v``) the rule-of-thumb estimate where it is lower;
    MLCCs without a curve get the estimate; other parts keep their value.
    """
    curve_ratio = np.asarray(curve_ratio, dtype=float)
    has_curve = np.isfinite(curve_ratio)
    ratio = np.where(has_curve, curve_ratio, 1.0)
    source = has_curve.astype(np.int8)
    mlcc = technology == "mlcc"
    estimate = np.ones_like(ratio)
    if mlcc.any():
        estimate[mlcc] = ceramic.estimate_bias_ratio(
            voltage, rated_voltage[mlcc].astype(float), value[mlcc], case[mlcc],
            dielectric[mlcc])
    if curve_last_v is not None:
        last = np.asarray(curve_last_v, dtype=float)
        beyond = has_curve & (abs(voltage) > last) & (estimate < ratio)
        ratio = np.where(beyond, estimate, ratio)
        source[beyond] = 3
    est = mlcc & ~has_curve & (estimate < 1.0)
    ratio[est] = estimate[est]
    source[est] = 2
    return ratio, source


def _own_curve_ratio(row: dict[str, Any], voltage: float) -> float:
    """C(V)/C0 from the original's own curve by the engine (NaN without one)."""
    bv, br = row.get("bias_v"), row.get("bias_ratio")
    if bv is None or len(bv) == 0:
        return float("nan")
    # padded to two columns: the engine indexes a second point even for a one-point curve
    cv = np.full((1, max(2, len(bv))), np.nan)
    cr = np.full_like(cv, np.nan)
    cv[0, :len(bv)], cr[0, :len(br)] = bv, br
    return float(ceramic.bias_ratio_from_curve(voltage, cv, cr)[0])


BIAS_SOURCES = models.BIAS_SOURCES


def curve_distance(f: NDArray[np.float64], z_cand: NDArray[np.complex128],
                   z_orig: NDArray[np.complex128]) -> tuple[NDArray, NDArray, NDArray]:
    """RMS and largest |d| of d(f) = 20 log10(|Z_cand|/|Z_orig|) over the band [dB].

    ``f`` is ascending along its last axis, shape (F,) or (P, F) (one grid per candidate);
    ``z_cand`` is (P, F) and ``z_orig`` broadcasts against it. The RMS is the trapezoid rule
    in ln f divided by ln(f_last/f_first) (see the module docstring). Returns (rms_db,
    max_abs_db, f_at_max) per candidate.
    """
    d = 20.0 * np.log10(np.maximum(np.abs(z_cand), Z_FLOOR)
                        / np.maximum(np.abs(z_orig), Z_FLOOR))
    x = np.broadcast_to(np.log(f), d.shape)
    mean_sq = np.trapezoid(d * d, x, axis=-1) / (x[:, -1] - x[:, 0])
    worst = np.argmax(np.abs(d), axis=-1)
    rows = np.arange(len(d))
    return np.sqrt(mean_sq), np.abs(d)[rows, worst], np.broadcast_to(f, d.shape)[rows, worst]


def band_grid(band: tuple[float, float], f_star: NDArray[np.float64]) -> NDArray[np.float64]:
    """Per-candidate frequency grids (P, N) [Hz], ascending.

    :data:`PER_DECADE` log-spaced points per decade over the band, plus :data:`REFINE_POINTS`
    log-spaced points over f* / (1 + s) .. f* x (1 + s), s = :data:`REFINE_SPAN`, centred on
    each frequency of ``f_star`` (P, k) (the |Z| extrema of the two parts) and clipped to the
    band, so that a resonance narrower than the base spacing is resolved (steps of 0.1 %:
    series Q up to a few hundred).
    """
    base = log_grid(band[0], band[1], PER_DECADE)
    span = np.log1p(REFINE_SPAN)
    local = np.exp(np.linspace(-span, span, REFINE_POINTS))  # odd count: holds f* itself
    around = np.clip(f_star[:, :, None] * local, band[0], band[1]).reshape(len(f_star), -1)
    grid = np.concatenate([np.broadcast_to(base, (len(f_star), len(base))), around], axis=1)
    return np.sort(grid, axis=1)


def _impedance_at(m: Models, f: NDArray[np.float64]) -> NDArray[np.complex128]:
    """Z of the parts of ``m`` (all one kind) at per-part frequencies f (P, K) [ohm]."""
    if m.is_cap.all():
        return capacitor.impedance(f, m.value[:, None], m.esr[:, None], m.esl[:, None],
                                   m.tan_delta[:, None])
    return inductor.impedance(f, m.value[:, None], m.dcr[:, None], m.cp[:, None], m.rp[:, None])


def _distances(mo: Models, mc: Models, band: tuple[float, float],
               chunk: int = 4096) -> tuple[NDArray, NDArray, NDArray]:
    """Curve distance, largest difference and where, for every candidate of ``mc``."""
    n = len(mc)
    rms, worst, f_worst = np.zeros(n), np.zeros(n), np.zeros(n)
    f_orig = _extremum_frequency(mo)
    for start in range(0, n, chunk):
        part = slice(start, min(start + chunk, n))
        mp = Models(*(getattr(mc, k)[part] for k in Models.__dataclass_fields__))
        f_star = np.stack(np.broadcast_arrays(f_orig, _extremum_frequency(mp)), axis=1)
        f = band_grid(band, f_star)
        rms[part], worst[part], f_worst[part] = curve_distance(
            f, _impedance_at(mp, f), _impedance_at(mo, f))
    return rms, worst, f_worst


def _extremum_frequency(m: Models) -> NDArray[np.float64]:
    if m.is_cap.all():
        return capacitor.min_impedance_frequency(m.value, m.esr, m.esl, m.tan_delta)
    return inductor.peak_frequency(m.value, m.dcr, m.cp, m.rp)


def _models(cols: dict[str, NDArray], value: NDArray, is_cap: bool) -> Models:
    n = len(value)
    rp = cols["rp"].astype(float)
    return Models(is_cap=np.full(n, is_cap), value=value,
                  esr=np.nan_to_num(cols["esr"].astype(float)),
                  esl=np.nan_to_num(cols["esl"].astype(float)),
                  tan_delta=np.nan_to_num(cols["tan_delta"].astype(float)),
                  dcr=np.nan_to_num(cols["dcr"].astype(float)),
                  cp=inductor.winding_capacitance(cols["value"].astype(float),
                                                  cols["srf"].astype(float)),
                  rp=np.where(np.isfinite(rp), rp, np.inf))


def _cell(name: str, v: Any) -> Any:
    """A fetched cell as a plain Python value; unknown is None."""
    if hasattr(v, "item"):
        v = v.item()
    if (isinstance(v, float) and np.isnan(v)) or (name in _TEXT and v == ""):
        return None
    return v


def _column_arrays(row: dict[str, Any]) -> dict[str, NDArray]:
    """One stored row as the column arrays the query returns (length 1)."""
    values = {**row, "electrolyte": (row.get("extra") or {}).get("electrolyte")}
    out: dict[str, NDArray] = {}
    for name in _FETCH:
        v = values.get(name)
        if name in _TEXT:
            out[name] = np.array(["" if v is None else str(v)], dtype=object)
        elif name not in _LISTS:
            out[name] = np.array([np.nan if v is None else float(v)])
    return out


# --- rules --------------------------------------------------------------------------------------

Detail = Callable[[dict[str, Any], bool], str]


@dataclass(frozen=True)
class _SqlRule:
    name: str
    expr: str
    params: tuple[Any, ...]
    detail: Detail


def _form_fit_rules(o: dict[str, Any], crit: Criteria) -> tuple[list[_SqlRule], list[str]]:
    """The SQL rules that apply to this original, and the ones skipped (with why)."""
    rules: list[_SqlRule] = []
    skipped: list[str] = []

    def add(name: str, expr: str, params: Sequence[Any], detail: Detail) -> None:
        rules.append(_SqlRule(name, expr, tuple(params), detail))

    cases = crit.cases or ((o["case"],) if o.get("case") else ())
    if cases:
        allowed = [c.strip().lower() for c in cases]
        shown = " or ".join(cases)

        def case_detail(c: dict[str, Any], ok: bool) -> str:
            if c.get("case") is None:
                return "case not stated"
            return f"{c['case']}" + (f" (allowed: {shown})" if ok else f", not {shown}")
        add("case", 'list_contains(?, lower("case"))', [allowed], case_detail)
    else:
        skipped.append("case: the original states no case code (give --case)")

    if o.get("height") is not None:
        h = float(o["height"])
        add("height", "height <= ?", [h * (1 + _EPS)],
            lambda c, ok: f"{_q(c.get('height'), 'm')} {'<=' if ok else '>'} {_q(h, 'm')}"
            if c.get("height") is not None else "height not stated")
    else:
        skipped.append("height: the original states no height")

    if o.get("mounting"):
        mount = str(o["mounting"]).lower()
        add("mounting", "lower(mounting) = ?", [mount],
            lambda c, ok: f"{c.get('mounting') or 'not stated'}"
            + ("" if ok else f", original {mount}"))
    else:
        skipped.append("mounting: the original states no mounting")

    wv = crit.working_voltage
    if wv is not None:
        def wv_detail(c: dict[str, Any], ok: bool) -> str:
            rv = c.get("rated_voltage")
            if rv is None:
                return "rated voltage not stated"
            factor, why = derating(c.get("technology"), c.get("electrolyte"), rv)
            usable = f" x {factor:g} ({why}) = {_q(rv * factor, 'V')}" if factor < 1 else ""
            return (f"rated {_q(rv, 'V')}{usable} {'>=' if ok else '<'} working "
                    f"{_q(wv, 'V')}")
        add("voltage", f"rated_voltage * ({_DERATING_SQL}) >= ?", [wv * (1 - _EPS)], wv_detail)
    elif o.get("rated_voltage") is not None:
        rv0 = float(o["rated_voltage"])
        add("voltage", "rated_voltage >= ?", [rv0 * (1 - _EPS)],
            lambda c, ok: f"rated {_q(c.get('rated_voltage'), 'V')} "
                          f"{'>=' if ok else '<'} original {_q(rv0, 'V')}"
            if c.get("rated_voltage") is not None else "rated voltage not stated")
    else:
        skipped.append("voltage: the original states no rated voltage"
                       + (" (give --working-voltage)" if o.get("kind") == "capacitor" else ""))

    tmin, tmax = o.get("temp_min"), o.get("temp_max")
    if tmin is not None or tmax is not None:
        conds, params = [], []
        if tmin is not None:
            conds.append("temp_min <= ?")
            params.append(float(tmin))
        if tmax is not None:
            conds.append("temp_max >= ?")
            params.append(float(tmax))
        want = f"{_q(tmin, 'degC')}..{_q(tmax, 'degC')}"

        def temp_detail(c: dict[str, Any], ok: bool) -> str:
            have = f"{_q(c.get('temp_min'), 'degC')}..{_q(c.get('temp_max'), 'degC')}"
            return f"{have} {'covers' if ok else 'does not cover'} {want}"
        add("temperature", "(" + " AND ".join(conds) + ")", params, temp_detail)
    else:
        skipped.append("temperature: the original states no operating range")

    if o.get("tolerance") is not None:
        tol = float(o["tolerance"])
        add("tolerance", "tolerance <= ?", [tol * (1 + 1e-6)],
            lambda c, ok: f"±{_pct(c['tolerance'])} {'<=' if ok else '>'} ±{_pct(tol)}"
            if c.get("tolerance") is not None else "tolerance not stated")
    else:
        skipped.append("tolerance: the original states no tolerance")

    if o.get("dielectric"):
        try:
            eia198.decode(o["dielectric"])
        except UnitError as exc:
            skipped.append(f"dielectric: {exc}")
        else:
            od = o["dielectric"]
            allowed_d = [d for d in _all_dielectric_codes() if eia198.at_least_as_stable(d, od)]
            if "C0G" in allowed_d:
                allowed_d += ["NP0", "NPO", "COG"]

            def diel_detail(c: dict[str, Any], ok: bool) -> str:
                if not c.get("dielectric"):
                    return f"no EIA-198 code to compare with {od}"
                return (f"{c['dielectric']} at least as stable as {od}" if ok else
                        f"{c['dielectric']} is not at least as stable as {od} (EIA-198 ranges "
                        "and changes)")
            add("dielectric", "list_contains(?, upper(dielectric))", [allowed_d], diel_detail)

    if o.get("safety_class"):
        osc = o["safety_class"]
        allowed_s = [s for s in safety.SAFETY_CLASSES if safety.may_replace(s, osc)[0]]

        def safety_detail(c: dict[str, Any], ok: bool) -> str:
            try:
                return safety.may_replace(c.get("safety_class"), osc)[1]
            except UnitError as exc:
                return str(exc)
        add("safety", "list_contains(?, upper(safety_class))", [allowed_s], safety_detail)

    if o.get("aec_q200_grade") is not None:
        g = int(o["aec_q200_grade"])

        def aec_detail(c: dict[str, Any], ok: bool) -> str:
            cg = c.get("aec_q200_grade")
            if cg is None:
                return f"no AEC-Q200 grade; the original has grade {g}"
            lo, hi = aecq200.grade_range(int(cg))
            return (f"grade {int(cg)} ({lo:g}..{hi:g} degC) "
                    f"{'at least' if ok else 'below'} grade {g}")
        add("aec_q200", "aec_q200_grade <= ?", [g], aec_detail)

    accepted = list(crit.lifecycles)
    add("lifecycle", "list_contains(?, coalesce(lifecycle, 'active'))", [accepted],
        lambda c, ok: (c.get("lifecycle") or "active")
        + ("" if ok else f" (accepted: {', '.join(accepted)})"))

    if crit.in_stock:
        add("stock", "stock > 0", [],
            lambda c, ok: f"{int(c['stock'])} in stock" if ok else
            ("out of stock" if c.get("stock") is not None else "stock not stated"))

    if o.get("kind") == "inductor":
        rules += _inductor_rules(o, crit, skipped)
    return rules, skipped


def _inductor_rules(o: dict[str, Any], crit: Criteria, skipped: list[str]) -> list[_SqlRule]:
    rules: list[_SqlRule] = []
    if o.get("dcr") is not None:
        dcr = float(o["dcr"])
        rules.append(_SqlRule(
            "dcr", "dcr <= ?", (dcr * (1 + _EPS),),
            lambda c, ok: f"{_q(c.get('dcr'), 'ohm')} {'<=' if ok else '>'} {_q(dcr, 'ohm')}"
            if c.get("dcr") is not None else "DCR not stated"))
    else:
        skipped.append("dcr: the original states no DCR")
    if o.get("isat") is not None:
        isat, drop = float(o["isat"]), o.get("isat_drop")

        def at(x: float | None) -> str:
            return "" if x is None else f" at {_pct(x)} drop"

        def isat_detail(c: dict[str, Any], ok: bool) -> str:
            ci, cd = c.get("isat"), c.get("isat_drop")
            if ci is None:
                return "Isat not stated"
            text = f"{_q(ci, 'A')}{at(cd)} vs {_q(isat, 'A')}{at(drop)}"
            if not ok and ci >= isat * (1 - _EPS):
                text += ": defined at a larger drop, not comparable"
            return text
        if drop is not None:
            rules.append(_SqlRule("isat", "(isat >= ? AND coalesce(isat_drop <= ?, true))",
                                  (isat * (1 - _EPS), float(drop) + _EPS), isat_detail))
        else:
            rules.append(_SqlRule("isat", "isat >= ?", (isat * (1 - _EPS),), isat_detail))
    else:
        skipped.append("isat: the original states no Isat")
    if o.get("irms") is not None:
        irms = float(o["irms"])
        rules.append(_SqlRule(
            "irms", "irms >= ?", (irms * (1 - _EPS),),
            lambda c, ok: f"{_q(c.get('irms'), 'A')} {'>=' if ok else '<'} {_q(irms, 'A')}"
            if c.get("irms") is not None else "Irms not stated"))
    else:
        skipped.append("irms: the original states no Irms")
    floor = crit.srf_above if crit.srf_above is not None else o.get("srf")
    if floor is not None:
        floor = float(floor)
        label = "given" if crit.srf_above is not None else "original"
        rules.append(_SqlRule(
            "srf", "srf >= ?", (floor * (1 - _EPS),),
            lambda c, ok: f"{_q(c.get('srf'), 'Hz')} {'>=' if ok else '<'} {label} "
                          f"{_q(floor, 'Hz')}" if c.get("srf") is not None else "SRF not stated"))
    else:
        skipped.append("srf: the original states no SRF (give --srf-above)")
    return rules


# --- the job ------------------------------------------------------------------------------------

def alternates(store: Store, part_number: str, maker: str | None = None,
               criteria: Criteria | None = None) -> AlternatesResult:
    """Substitutes for one stored part, ranked, with the outcome of every rule."""
    return alternates_for(store, _find(store, part_number, maker), criteria or Criteria())


def _rows_by_id(store: Store, ids: list[int]) -> dict[int, dict[str, Any]]:
    """The catalog columns of the given parts, as plain values (unknown = None), by id."""
    if not ids:
        return {}
    a = store.arrays(f"SELECT {', '.join(_select(c) for c in _FETCH if c not in _LISTS)} FROM "
                     f"(SELECT *, {_ELECTROLYTE_SQL} AS electrolyte FROM parts WHERE "
                     f"list_contains(?, id))", [ids])
    return {int(a["id"][i]): {k: _cell(k, v[i]) for k, v in a.items()}
            for i in range(len(a["id"]))}


def _find(store: Store, part_number: str, maker: str | None) -> dict[str, Any]:
    """The original's row: an exact match read without pandas (it keeps the command fast);
    anything else (case-insensitive match, several makers, not found) goes through
    :meth:`Store.find_part`, which also names close matches."""
    sql = (f"SELECT {', '.join(_select(c) for c in _FETCH if c != 'electrolyte')}, "
           f"coalesce(extra, '') AS extra FROM parts WHERE part_number = ?")
    params = [part_number]
    if maker:
        sql += " AND lower(maker) = lower(?)"
        params.append(maker)
    a = store.arrays(sql, params)
    if len(a["id"]) != 1:
        return store.find_part(part_number, maker)
    row = {k: _cell(k, v[0]) for k, v in a.items() if k not in _LISTS and k != "extra"}
    for k in _LISTS:
        row[k] = list(a[k][0]) if len(a[k][0]) else None
    row["extra"] = json.loads(a["extra"][0]) if a["extra"][0] else {}
    return row


def alternates_for(store: Store, original: dict[str, Any],
                   criteria: Criteria) -> AlternatesResult:
    """Substitutes for ``original`` (a stored row, as :meth:`Store.find_part` returns it)."""
    o = original
    kind = o["kind"]
    criteria.validate(kind)
    is_cap = kind == "capacitor"
    effects: list[str] = []
    notes: list[str] = []
    bias = criteria.bias if criteria.bias is not None else criteria.working_voltage
    if not is_cap:
        bias = None

    oc = _column_arrays(o)
    o_ratio, o_src = (bias_ratio(bias, oc["technology"], oc["dielectric"], oc["case"],
                                 oc["rated_voltage"], oc["value"],
                                 np.array([_own_curve_ratio(o, bias)]),
                                 np.array([o["bias_v"][-1] if o.get("bias_v") else np.nan]))
                      if bias is not None
                      else (np.ones(1), np.zeros(1, dtype=np.int8)))
    o_eff = float(o["value"]) * float(o_ratio[0])
    window = criteria.value_within
    window_why = "given"
    if window is None:
        window = float(o["tolerance"]) if o.get("tolerance") else DEFAULT_VALUE_WINDOW
        window_why = "the original's tolerance" if o.get("tolerance") else \
            "default; the original states no tolerance"

    mo = _models(oc, np.array([o_eff]), is_cap)
    band = criteria.band or _default_band(mo, is_cap)
    if criteria.band is None:
        lo_k, hi_k = CAPACITOR_BAND if is_cap else INDUCTOR_BAND
        effects.append(f"band {_q(band[0], 'Hz')}..{_q(band[1], 'Hz')} (default: original's "
                       f"SRF x {lo_k:.3g} .. x {hi_k:.3g})")
    else:
        effects.append(f"band {_q(band[0], 'Hz')}..{_q(band[1], 'Hz')}")
    effects.append("series R-L-C model, ESR(f) = esr + tan_delta/(2 pi f C)" if is_cap else
                   "inductor model (L + DCR) || C_p || R_p, C_p from the SRF")

    rules, skipped = _form_fit_rules(o, criteria)
    lo, hi = o_eff * (1 - window), o_eff * (1 + window)
    if bias is not None:
        lo, hi = lo / _RATIO_HIGH, hi / _RATIO_LOW
    a = _survivors(store, o, rules, (lo, hi), bias, criteria.explain)
    n = len(a["id"])

    fails = np.zeros(n, dtype=int)
    sql_ok = {r.name: a[f"r_{r.name}"].astype(bool) for r in rules}
    for ok in sql_ok.values():
        fails += ~ok
    fit = int(np.count_nonzero(fails == 0))

    # function rules, all candidates at once; the costly curve only where it can matter
    value = a["value"].astype(float)
    if bias is not None:
        ratio, src = bias_ratio(bias, a["technology"], a["dielectric"], a["case"],
                                a["rated_voltage"], value, a["curve_ratio"], a["curve_last_v"])
        effects.append(
            f"DC bias {_q(bias, 'V')}: original {BIAS_SOURCES[int(o_src[0])]}; candidates: "
            f"catalog curve for {int(np.count_nonzero(src == 1))}, rule-of-thumb estimate "
            f"for {int(np.count_nonzero(src == 2))} (estimated)")
    else:
        ratio, src = np.ones(n), np.zeros(n, dtype=np.int8)
    v_eff = value * ratio
    dev = v_eff / o_eff - 1.0
    func_ok: dict[str, NDArray[np.bool_]] = {"value": np.abs(dev) <= window + _EPS}
    mc = _models(a, v_eff, is_cap)
    esr_ratio = None
    f0 = float(mo.srf()[0])
    if criteria.esr_window is not None:
        if not np.isfinite(f0):
            raise QueryError("the original has no ESL, so no SRF at which to compare ESR: "
                             "drop --esr-window or import its ESL")
        r_o = float(capacitor.series_resistance(f0, mo.value, mo.esr, mo.tan_delta)[0])
        esr_ratio = capacitor.series_resistance(f0, mc.value, mc.esr, mc.tan_delta) / r_o
        e_lo, e_hi = criteria.esr_window
        func_ok["esr"] = (esr_ratio >= e_lo * (1 - _EPS)) & (esr_ratio <= e_hi * (1 + _EPS))
    for ok in func_ok.values():
        fails += ~ok
    rms, worst, f_worst = np.full(n, np.inf), np.full(n, np.inf), np.full(n, np.nan)
    need = np.flatnonzero(fails <= (1 if criteria.explain else 0))
    sub = Models(*(getattr(mc, k)[need] for k in Models.__dataclass_fields__))
    rms[need], worst[need], f_worst[need] = _distances(mo, sub, band)
    effects.append(f"curve distance: RMS of 20 log10(|Z_cand|/|Z_orig|) over the band, "
                   f"trapezoid rule in ln f on {PER_DECADE} points per decade refined around "
                   "each part's |Z| extremum")
    if criteria.within_db is not None:
        func_ok["curve"] = worst <= criteria.within_db + _EPS
        fails += ~func_ok["curve"]
    value_ok = func_ok["value"]

    names = [r.name for r in rules] + list(func_ok)
    if criteria.within_db is None:
        skipped.append("curve: turned off (the distance still ranks)")

    def describe(i: int) -> Candidate:
        c = full[int(a["id"][i])]
        results = [RuleResult(r.name, bool(ok[i]), r.detail(c, bool(ok[i])))
                   for r, ok in ((r, sql_ok[r.name]) for r in rules)]
        unit = "F" if is_cap else "H"
        at_bias = f" at {_q(bias, 'V')} ({BIAS_SOURCES[int(src[i])]})" if bias is not None else ""
        o_at = f" ({BIAS_SOURCES[int(o_src[0])]})" if bias is not None else ""
        results.append(RuleResult(
            "value", bool(value_ok[i]),
            f"{_q(float(v_eff[i]), unit)}{at_bias} vs original {_q(o_eff, unit)}{o_at}: "
            f"{100 * dev[i]:+.1f} %, window ±{_pct(window)} ({window_why})"))
        if esr_ratio is not None:
            results.append(RuleResult(
                "esr", bool(func_ok["esr"][i]),
                f"ESR at {_q(f0, 'Hz')} is {esr_ratio[i]:.3g} x the original's, window "
                f"{criteria.esr_window[0]:g}..{criteria.esr_window[1]:g}"))
        if "curve" in func_ok:
            results.append(RuleResult(
                "curve", bool(func_ok["curve"][i]),
                f"largest |Z| difference {worst[i]:.2f} dB at {_q(float(f_worst[i]), 'Hz')} "
                f"{'<=' if func_ok['curve'][i] else '>'} {criteria.within_db:g} dB"))
        return Candidate(c, float(rms[i]), float(worst[i]), float(f_worst[i]), float(v_eff[i]),
                         BIAS_SOURCES[int(src[i])],
                         None if esr_ratio is None else float(esr_ratio[i]), results)

    def ranked(sel: NDArray[np.bool_]) -> list[int]:
        idx = np.flatnonzero(sel)
        price = np.where(np.isfinite(a["price"][idx].astype(float)),
                         a["price"][idx].astype(float), np.inf)
        stock = np.nan_to_num(a["stock"][idx].astype(float), nan=-1.0)
        return [int(i) for i in idx[np.lexsort((a["id"][idx], -stock, price, rms[idx]))]]

    passing = ranked(fails == 0)
    near = ranked(fails == 1) if criteria.explain else []
    limit = criteria.limit or None
    full = _rows_by_id(store, [int(a["id"][i]) for i in passing[:limit] + near[:limit]])
    cands = [describe(i) for i in passing[:limit]]
    misses = [describe(i) for i in near[:limit]]

    o_factor, o_why = derating(o.get("technology"), _cell("electrolyte", oc["electrolyte"][0]),
                               o.get("rated_voltage"))
    if criteria.working_voltage is not None and o.get("rated_voltage") is not None and \
            o["rated_voltage"] * o_factor < criteria.working_voltage * (1 - _EPS):
        notes.append(f"the original itself is rated {_q(o['rated_voltage'], 'V')} ({o_why}): "
                     f"below the working voltage {_q(criteria.working_voltage, 'V')}")
    cautions = []
    shown = [o] + [c.part for c in cands + misses]
    if any(safety.needs_caution(p.get("safety_class"), p.get("rated_voltage")) for p in shown):
        cautions.append(safety.caution_text())
    return AlternatesResult(o, o_eff, band, cands, misses, len(passing), fit, len(near), names,
                            skipped, effects, notes, cautions, bias=bias,
                            original_bias_source=BIAS_SOURCES[int(o_src[0])])


def _survivors(store: Store, o: dict[str, Any], rules: list[_SqlRule],
               value_range: tuple[float, float], bias: float | None,
               explain: bool) -> dict[str, NDArray]:
    """One query: parts of the original's kind in the value range that pass every form and fit
    rule (with ``explain``: fail at most one), with a boolean column r_<rule> per rule."""
    rule_cols = "".join(f", coalesce({r.expr}, false) AS r_{r.name}" for r in rules)
    if explain:
        outer = " + ".join(f"CAST(NOT r_{r.name} AS INTEGER)" for r in rules) + " <= 1"
    else:
        outer = " AND ".join(f"r_{r.name}" for r in rules) or "TRUE"
    # Only what ranking and the function rules need is fetched for every survivor; the shown
    # rows are fetched in full afterwards (text columns cost more than the whole search).
    fetch = ["id", "value", "esr", "esl", "tan_delta", "dcr", "srf", "rp", "price", "stock",
             "rated_voltage"]
    if bias is not None:
        fetch += ["technology", "dielectric", "case"]
    # C(V)/C0 from the stored curves is interpolated by the store: fetching the curves of
    # thousands of candidates would cost more than the whole search.
    k_sql, ratio_sql = curve_ratio_sql() if bias is not None else ("NULL", "NULL")
    last_sql = "bias_v[len(bias_v)]" if bias is not None else "NULL"
    sql = (f"SELECT {', '.join(_select(c) for c in fetch)}, curve_ratio, curve_last_v"
           f"{''.join(f', r_{r.name}' for r in rules)} FROM ("
           f"SELECT *, {ratio_sql} AS curve_ratio{rule_cols} FROM ("
           f"SELECT *, {_ELECTROLYTE_SQL} AS electrolyte, {k_sql} AS bias_k, "
           f"{last_sql} AS curve_last_v FROM parts "
           f"WHERE kind = ? AND id <> ? AND value BETWEEN ? AND ?)) WHERE {outer} ORDER BY id")
    bias_params = [bias] if bias is not None else []
    params = [*bias_params, *(p for r in rules for p in r.params), *bias_params, o["kind"],
              int(o["id"]), value_range[0] * (1 - _EPS), value_range[1] * (1 + _EPS)]
    return store.arrays(sql, params)


def _default_band(mo: Models, is_cap: bool) -> tuple[float, float]:
    srf = float(mo.srf()[0])
    if not np.isfinite(srf) or srf <= 0:
        what = "ESL" if is_cap else "SRF"
        raise QueryError(f"the original states no {what}, so there is no default band: give "
                         "--band F1..F2")
    lo_k, hi_k = CAPACITOR_BAND if is_cap else INDUCTOR_BAND
    return srf * lo_k, srf * hi_k
