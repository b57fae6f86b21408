"""Band search: parts whose impedance meets a limit over a continuous band, best first.

The store narrows the candidates with SQL filters (bound parameters); each candidate gets its
model (:func:`partsel.jobs.models.choose_models`: the catalog's, a maker's or a measured one)
and the layers asked for (DC bias, mounting inductance); the model layer evaluates the exact
band extrema of every remaining part at once (no grid: each family's own proof, see
:mod:`partsel.engine.models`); only the rows shown are fetched in full.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Literal

import numpy as np

from partsel.catalog import (
    CAPACITOR_TECHNOLOGIES,
    DEFAULT_LIFECYCLES,
    INDUCTOR_TECHNOLOGIES,
    LIFECYCLES,
    canonical,
    normalise_case,
)
from partsel.engine.models import BandExtrema, ModelSet
from partsel.errors import QueryError
from partsel.jobs.models import (
    BIAS_SOURCES,
    Chosen,
    bias_ratio_columns,
    catalog_models,
    check_choice,
    choose_models,
)
from partsel.standards import eia198
from partsel.store import search as queries
from partsel.store.db import Store
from partsel.units import format_quantity

Kind = Literal["capacitor", "inductor"]
REL_SLACK = 1e-12


@dataclass
class Search:
    """What to look for. Quantities in SI units; empty tuples mean "any"."""

    kind: Kind
    band: tuple[float, float] | None = None
    below: float | None = None          # |Z| <= below over the whole band [ohm]
    above: float | None = None          # |Z| >= above over the whole band [ohm]
    inductive_to: float | None = None   # inductors: Im Z > 0 for every f <= this [Hz]
    value_min: float | None = None
    value_max: float | None = None
    min_voltage: float | None = None    # rated voltage at least [V]
    cases: tuple[str, ...] = ()
    dielectrics: tuple[str, ...] = ()
    technologies: tuple[str, ...] = ()
    makers: tuple[str, ...] = ()
    lifecycles: tuple[str, ...] = DEFAULT_LIFECYCLES
    in_stock: bool = False
    bias: float | None = None           # capacitors: working DC voltage for class II loss [V]
    mount_l: float | None = None        # capacitors: mounting inductance added to ESL [H]
    current: float | None = None        # inductors: DC current [A]
    ripple: float | None = None         # inductors: peak-to-peak ripple current [A]
    min_q: tuple[float, float] | None = None  # inductors: (Q, at frequency [Hz])
    srf_ratio: float = 1.0              # inductors: catalog SRF at least this x inductive_to
    model: str = "best"                 # which model: catalog, vendor, measured or best
    model_only: bool = False            # leave out parts without the chosen kind of model
    measured: bool = False              # old spelling of model="measured"
    measured_only: bool = False         # old spelling of model="measured", model_only=True
    limit: int = 20                     # 0 = all
    corners: bool = False               # judge and rank at each part's worst corner
    temp: Any = None                    # corners: temperature range [degC] or text '-40C..85C'
    age: Any = None                     # corners: life [h] or text '10y'

    def validate(self) -> None:
        """Refuse contradictory or unknown criteria; spell the list filters as the catalog does
        (so that a filter that cannot match anything is an error, not an empty answer)."""
        if self.kind not in ("capacitor", "inductor"):
            raise QueryError(f"unknown kind '{self.kind}': use capacitor or inductor")
        self._read_text()
        self.technologies = tuple(canonical("technology", t, CAPACITOR_TECHNOLOGIES
                                            + INDUCTOR_TECHNOLOGIES) for t in self.technologies)
        self.lifecycles = tuple(canonical("lifecycle", x, LIFECYCLES) for x in self.lifecycles)
        self.dielectrics = tuple(eia198.decode(d).code for d in self.dielectrics)
        self.cases = tuple(normalise_case(c) for c in self.cases)
        if (self.below is not None or self.above is not None) and self.band is None:
            raise QueryError("an impedance limit needs a frequency range: add band F1..F2",
                             params=("band",))
        if self.band is not None and not 0 < self.band[0] <= self.band[1]:
            lo, hi = (format_quantity(x, "Hz").replace(" ", "") for x in self.band)
            raise QueryError(f"band '{lo}..{hi}' runs backwards or is not positive: write the "
                             "low frequency first")
        for name in ("below", "above", "inductive_to", "value_min", "value_max", "current",
                     "mount_l", "ripple", "bias", "min_voltage"):
            v = getattr(self, name)
            if v is not None and (not np.isfinite(v) or v < 0 or
                                  (v == 0 and name in ("below", "inductive_to", "current"))):
                raise QueryError(f"{name} must be a positive number, got {v:g}",
                                 params=(name,))
        if self.limit < 0:
            raise QueryError("limit must be 0 (all) or a positive count", params=("limit",))
        if self.kind == "capacitor" and (self.inductive_to or self.current or self.min_q):
            raise QueryError("inductive_to, current and min_q apply to inductors: "
                             "search 'inductor' instead",
                             params=("inductive_to", "current", "min_q"))
        if self.kind == "inductor" and (self.bias is not None or self.mount_l is not None):
            raise QueryError("bias and mount_l apply to capacitors", params=("bias", "mount_l"))
        if not (np.isfinite(self.srf_ratio) and self.srf_ratio >= 1.0):
            raise QueryError(f"srf_ratio must be 1 or more, got {self.srf_ratio:g}",
                             params=("srf_ratio",))
        if self.srf_ratio > 1.0 and self.inductive_to is None:
            raise QueryError("srf_ratio needs inductive_to: it is a multiple of that frequency",
                             params=("srf_ratio", "inductive_to"))
        if self.ripple is not None and self.current is None:
            raise QueryError("ripple needs current: the ripple rides on a DC current",
                             params=("ripple", "current"))
        if self.value_min and self.value_max and self.value_min > self.value_max:
            raise QueryError("the value range runs backwards: write the lower value first")
        if self.measured or self.measured_only:
            self.model = "measured"
            self.model_only = self.model_only or self.measured_only
            self.measured = self.measured_only = False
        check_choice(self.model)
        if self.model_only and self.model == "catalog":
            raise QueryError("model_only needs a model choice other than catalog (vendor, "
                             "measured or best)")
        if (self.temp is not None or self.age is not None) and not self.corners:
            given = ("temp", "age") if self.temp is not None else ("age", "temp")
            raise QueryError("a temperature range (temp) or a life (age) applies to the worst "
                             "case: ask for the corners too", params=given)
        if self.corners:
            from partsel.jobs.corners_find import conditions_of
            conditions_of(self)
        if self.band is None and self.inductive_to is None and self.current is None:
            raise QueryError("nothing to search for: give an impedance limit below or above "
                             "over a band, a frequency to stay inductive to, or a current")

    _UNITS = {"below": "ohm", "above": "ohm", "inductive_to": "Hz", "value_min": "F|H",
              "value_max": "F|H", "min_voltage": "V", "bias": "V", "mount_l": "H",
              "current": "A", "ripple": "A"}

    def _read_text(self) -> None:
        """Library callers may write quantities as text ("0.5ohm", "1MHz..30MHz") and a single
        filter word as a string; anything else of the wrong type is a QueryError."""
        from partsel.units import parse_band, parse_quantity
        if isinstance(self.band, str):
            self.band = parse_band(self.band)
        if self.band is not None:
            try:
                lo, hi = (float(x) for x in self.band)
            except (TypeError, ValueError):
                raise QueryError(f"band {self.band!r} must be two frequencies in Hz, e.g. "
                                 "(1e6, 30e6) or '1MHz..30MHz'") from None
            if not (np.isfinite(lo) and np.isfinite(hi)):
                raise QueryError("the band edges must be finite frequencies")
            self.band = (lo, hi)
        for name, unit in self._UNITS.items():
            v = getattr(self, name)
            if isinstance(v, str):
                setattr(self, name, parse_quantity(v, unit, what=name))
            elif v is not None and not isinstance(v, (int, float, np.floating, np.integer)):
                raise QueryError(f"{name} must be a number in SI units, got {v!r}")
        for name in ("cases", "dielectrics", "technologies", "makers", "lifecycles"):
            v = getattr(self, name)
            setattr(self, name, (v,) if isinstance(v, str) else tuple(v or ()))
        if not isinstance(self.limit, int):
            raise QueryError(f"limit must be a whole number (0 = all), got {self.limit!r}")


@dataclass
class FindResult:
    rows: list[dict[str, Any]]
    matches: int                 # parts that pass, before --limit
    considered: int              # parts that passed the SQL filters
    order: str                   # how rows are ranked
    effects: list[str] = field(default_factory=list)   # models and layers applied
    notes: list[str] = field(default_factory=list)     # what was left out and why


def _count(n: int, word: str) -> str:
    return f"{n} {word}{'' if n == 1 else 's'}"


def _filters(search: Search) -> dict[str, Any]:
    return {"lifecycles": search.lifecycles, "value_min": search.value_min,
            "value_max": search.value_max, "min_voltage": search.min_voltage,
            "cases": search.cases, "dielectrics": search.dielectrics,
            "technologies": search.technologies, "makers": search.makers,
            "in_stock": search.in_stock}


@dataclass
class _Pool:
    """The candidates: their catalog columns, chosen models (layers applied), and the figures
    computed for them (per-part arrays), with which parts are still in."""

    cols: dict[str, np.ndarray]
    chosen: Chosen
    models: ModelSet
    ok: np.ndarray
    metrics: dict[str, np.ndarray] = field(default_factory=dict)
    c_eff: np.ndarray | None = None
    bias_src: np.ndarray | None = None
    extra_rows: Any = None     # corners: the text fields of a row, by position


def corner_columns(kind: str) -> tuple[str, ...]:
    from partsel.jobs.corners import CAPACITOR_COLUMNS, INDUCTOR_COLUMNS
    return CAPACITOR_COLUMNS if kind == "capacitor" else INDUCTOR_COLUMNS


def _capacitors(store: Store, search: Search, effects: list[str], notes: list[str]) -> _Pool:
    cols = queries.CAPACITOR_COLUMNS + (queries.BIAS_COLUMNS if search.bias is not None else ())
    if search.corners:
        cols += tuple(c for c in corner_columns("capacitor") if c not in cols)
    a = queries.candidate_columns(store, "capacitor", cols, **_filters(search))
    a["tan_delta"] = np.nan_to_num(a["tan_delta"])
    chosen = choose_models(store, a["id"], catalog_models("capacitor", a), search.model,
                           only=search.model_only, value=a["value"], tan_delta=a["tan_delta"])
    effects.append(chosen.summary())
    catalog = chosen.source == "catalog"
    if catalog.any():
        effects.append("catalog: series R-L-C, ESR(f) = esr + tan_delta/(2 pi f C)")
    ok = np.isfinite(a["value"]) & chosen.available & \
        (~catalog | (np.isfinite(a["esr"]) & np.isfinite(a["esl"])))
    pool = _Pool(a, chosen, chosen.models, ok)
    if search.bias is not None:
        ratio, pool.bias_src = bias_ratio_columns(
            search.bias, a["value"], a["technology"], a["dielectric"], a["case"],
            a["rated_voltage"], a["bias_v"], a["bias_ratio"])
        src = pool.bias_src
        effects.append(f"DC bias {search.bias:g} V: the part's catalog curve for "
                       f"{int(((src == 1) | (src == 3)).sum())} parts (beyond its last point the "
                       f"estimate where lower for {int((src == 3).sum())}), "
                       f"rule-of-thumb estimate for {int((src == 2).sum())} class II parts "
                       "(estimated)" + _bias_on_models(chosen, ratio))
        pool.c_eff = a["value"] * ratio
        pool.models = pool.models.with_capacitance_scale(ratio)
        # a part rated below the working voltage is not a candidate at that voltage
        over = a["rated_voltage"] < abs(search.bias)
        if (over & ok).any():
            notes.append(f"{_count(int((over & ok).sum()), 'capacitor')} rated below the "
                         f"bias {search.bias:g} V left out")
        pool.ok &= ~over
    if search.mount_l:
        pool.models = pool.models.with_series_inductance(search.mount_l)
        effects.append(f"mounting inductance {search.mount_l * 1e9:g} nH added to each ESL")
    return pool


def _bias_on_models(chosen: Chosen, ratio: np.ndarray) -> str:
    """How the bias loss reaches models that are not series R-L-C (said in the effects)."""
    moved = ratio != 1.0
    out = []
    if chosen.models.any_in("netlist", moved):
        out.append("applied to every C of a vendor netlist")
    if chosen.models.any_in("measured", moved):
        out.append("applied to a measured curve as the series R-L-C model's own change, "
                   "the sweep taken as measured at 0 V")
    return ("; " + "; ".join(out)) if out else ""


def _inductors(store: Store, search: Search, effects: list[str], notes: list[str]) -> _Pool:
    cols = queries.INDUCTOR_COLUMNS
    if search.corners:
        cols += tuple(c for c in corner_columns("inductor") if c not in cols)
    a = queries.candidate_columns(store, "inductor", cols, **_filters(search))
    chosen = choose_models(store, a["id"], catalog_models("inductor", a), search.model,
                           only=search.model_only)
    effects.append(chosen.summary())
    catalog = chosen.source == "catalog"
    if catalog.any():
        effects.append("catalog: (L + DCR) in parallel with C_p = 1/((2 pi SRF)^2 L) and Rp")
    pool = _Pool(a, chosen, chosen.models, np.isfinite(a["value"]) & chosen.available)
    pool.metrics["zero_phase_hz"] = pool.models.zero_phase()
    if search.inductive_to is not None or search.band is not None:
        # without an SRF the catalog model has no winding capacitance and would claim a rising
        # |Z| and a positive phase at every frequency: such parts cannot be judged
        unknown = catalog & ~np.isfinite(a["srf"])
        if (unknown & pool.ok).any():
            notes.append(f"{_count(int((unknown & pool.ok).sum()), 'inductor')} without an SRF "
                         "left out: their self-resonance cannot be checked")
        pool.ok &= ~unknown
    return pool


def _inductor_checks(search: Search, pool: _Pool, notes: list[str]) -> None:
    a, m, ok = pool.cols, pool.metrics, pool.ok
    catalog = pool.chosen.source == "catalog"
    if search.inductive_to is not None:
        ok &= search.inductive_to < m["zero_phase_hz"]
        m["srf_margin"] = m["zero_phase_hz"] / search.inductive_to
        m["srf_ratio"] = np.where(catalog, a["srf"], pool.models.srf()) / search.inductive_to
        if search.srf_ratio > 1.0:
            ok &= m["srf_ratio"] >= search.srf_ratio
    if search.current is not None:
        # peak of DC + triangular ripple against Isat; RMS of the same waveform,
        # sqrt(I^2 + I_pp^2/12) (derived), against Irms
        unrated = ~(np.isfinite(a["isat"]) & np.isfinite(a["irms"]))
        if (unrated & ok).any():
            notes.append(f"{_count(int((unrated & ok).sum()), 'inductor')} without Isat or "
                         "Irms left out: the current cannot be checked")
        ok &= ~unrated
        ripple = search.ripple or 0.0
        peak = search.current + ripple / 2.0
        rms = np.sqrt(search.current**2 + ripple**2 / 12.0)
        ok &= (a["isat"] >= peak) & (a["irms"] >= rms)
        m["isat_margin"] = a["isat"] / peak
        m["irms_margin"] = a["irms"] / rms
    if search.min_q is not None:
        q_min, f_q = search.min_q
        lossless = catalog & ~(a["dcr"] > 0) & ~np.isfinite(a["rp"])
        if (lossless & ok).any():
            notes.append(f"{_count(int((lossless & ok).sum()), 'inductor')} without a DCR "
                         "(or Rp) left out: their Q cannot be computed")
        z = pool.models.impedance_each(np.full(len(ok), f_q))
        with np.errstate(divide="ignore", invalid="ignore"):
            q = z.imag / z.real    # an inductor's Q: negative where it is capacitive
        ok &= ~lossless & (q >= q_min)
        m["q"] = q


def _band(search: Search, pool: _Pool) -> BandExtrema:
    """The band extrema every candidate needs: the maximum alone decides and ranks a "below"
    search (the rest is computed for the rows shown)."""
    assert search.band is not None
    f1, f2 = search.band
    if search.kind == "capacitor" and search.above is None:
        max_z, f_max = pool.models.band_max(f1, f2)
        return BandExtrema(max_z, f_max, np.full_like(max_z, np.nan), np.full_like(f_max, np.nan))
    return pool.models.band(f1, f2)


def _rank(search: Search, pool: _Pool) -> tuple[np.ndarray, str]:
    m, ok = pool.metrics, pool.ok
    n = len(ok)
    if search.band:
        ext = _band(search, pool)
        m.update(max_z_ohm=ext.max_z, f_max_hz=ext.f_max, min_z_ohm=ext.min_z,
                 f_min_hz=ext.f_min)
        # "at or below" with a relative slack of 1e-12: a part exactly at the limit is not lost
        # to the last bit of floating-point rounding; NaN (a model that does not cover the
        # band) never passes
        if search.below is not None:
            ok &= ext.max_z <= search.below * (1 + REL_SLACK)
        if search.above is not None:
            ok &= ext.min_z >= search.above * (1 - REL_SLACK)
        if search.above is not None and search.below is None:
            return -ext.min_z, "highest band minimum |Z| first"
        return ext.max_z, "lowest band maximum |Z| first"
    if search.kind == "inductor" and (search.inductive_to or search.current or search.min_q):
        # best margin first: the worst of the margins asked for, each normalised so that 1 is
        # "just passes" (zero-phase frequency over srf_ratio x target, Isat and Irms over the
        # need, Q over the minimum)
        margins, names = [], []
        if search.inductive_to is not None:
            margins.append(m["srf_margin"] / search.srf_ratio)
            names.append("zero-phase f / target")
        if search.current is not None:
            margins += [m["isat_margin"], m["irms_margin"]]
            names += ["Isat", "Irms"]
        if search.min_q is not None:
            with np.errstate(divide="ignore", invalid="ignore"):
                margins.append(m["q"] / search.min_q[0])
            names.append("Q")
        return -np.minimum.reduce(margins), ("best worst-case margin first ("
                                             + ", ".join(names) + ")")
    return np.zeros(n), "part number"


def _shown(search: Search, key: np.ndarray, ok: np.ndarray) -> tuple[np.ndarray, int]:
    """Positions of the parts to show, best first (ties at the cut kept so that the part
    number can break them), and how many pass."""
    ok &= np.isfinite(key)
    idx = np.flatnonzero(ok)
    matches = len(idx)
    if search.limit and matches > search.limit:
        # the limit-th smallest key by selection, not a sort of every match
        cut = np.partition(key[idx], search.limit - 1)[search.limit - 1]
        idx = idx[key[idx] <= cut]
    return idx[np.argsort(key[idx], kind="stable")], matches


def _shown_metrics(search: Search, pool: _Pool, idx: np.ndarray) -> None:
    """Figures computed only for the rows shown: SRF, and the band minimum when the fast path
    skipped it."""
    n = len(pool.ok)
    sub = pool.models.take(idx)
    if search.kind == "capacitor":
        pool.metrics["srf_hz"] = np.full(n, np.nan)
        pool.metrics["srf_hz"][idx] = sub.srf()
        if search.band and search.above is None:
            full = sub.band(*search.band)
            for name, arr in (("min_z_ohm", full.min_z), ("f_min_hz", full.f_min)):
                pool.metrics[name][idx] = arr


def _curve_word(pool: _Pool, i: int, band: tuple[float, float] | None) -> str | None:
    """For a part judged on a measured curve: whether the curve covers the band."""
    if pool.chosen.source[i] != "measured":
        return None
    covered = band is None or bool(pool.chosen.covers(band)[i])
    return "measured" if covered else "measured + model"


def find(store: Store, search: Search) -> FindResult:
    """Run a band search. See :class:`Search` for the criteria."""
    search.validate()
    effects: list[str] = []
    notes: list[str] = []
    if search.kind == "capacitor":
        pool = _capacitors(store, search, effects, notes)
    else:
        pool = _inductors(store, search, effects, notes)
        _inductor_checks(search, pool, notes)
    if search.model == "measured" and search.kind == "inductor" and \
            (search.inductive_to or search.min_q):
        notes.append("the inductive limit and the minimum Q are checked on the chosen models "
                     "(the measured curve where a part has one)")
    key, order = _rank(search, pool)
    if search.corners:
        from partsel.jobs import corners_find
        key = corners_find.apply(search, pool, key, effects, notes, lambda i: [
            p["part_number"] for p in store.parts_by_id(pool.cols["id"][i])])
        order = order.replace(" first", " at the worst corner first")
    idx, matches = _shown(search, key, pool.ok)
    _shown_metrics(search, pool, idx)
    parts = store.parts_by_id(pool.cols["id"][idx])
    labels = dict(zip(idx.tolist(), pool.chosen.labels(idx), strict=True))
    fams = dict(zip(idx.tolist(), pool.chosen.models.family_at(idx), strict=True))
    rows = []
    for pos, part in zip(idx, parts, strict=True):
        row = {k: v for k, v in part.items() if k not in ("bias_v", "bias_ratio")}
        row["_rank"] = float(key[pos])
        for name, arr in pool.metrics.items():
            row[name] = float(arr[pos])
        if pool.c_eff is not None and pool.bias_src is not None:
            row["c_eff_f"] = float(pool.c_eff[pos])
            row["bias_source"] = BIAS_SOURCES[pool.bias_src[pos]]
        row["model_source"] = str(pool.chosen.source[pos])
        row["model_family"] = fams[int(pos)]
        row["model"] = labels[int(pos)]
        row["model_origin"] = str(pool.chosen.origin[pos])
        if pool.extra_rows is not None:
            row.update(pool.extra_rows(pos))
        curve = _curve_word(pool, int(pos), search.band)
        if curve is not None:
            row["curve"] = curve
        rows.append(row)
    rows.sort(key=lambda r: (r["_rank"], r["part_number"]))
    for r in rows:
        del r["_rank"]
    if search.limit:
        rows = rows[:search.limit]
    if (~pool.chosen.available).any():
        left = int((~pool.chosen.available).sum())
        notes.append(f"{_count(left, search.kind)} without a {search.model} model left out")
    return FindResult(rows, matches, len(pool.ok), order, effects, notes)
