"""Band search: parts whose impedance meets a limit over a continuous band, best first.

The store narrows the candidates with SQL filters (bound parameters); the engine evaluates the
exact band extrema of every remaining part at once (no grid, see :mod:`partsel.engine.band`);
only the rows shown are fetched in full.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Literal

import numpy as np

from partsel.catalog import (
    CAPACITOR_TECHNOLOGIES,
    INDUCTOR_TECHNOLOGIES,
    LIFECYCLES,
    canonical,
    normalise_case,
)
from partsel.engine import band as band_metrics
from partsel.engine import capacitor, inductor
from partsel.errors import QueryError
from partsel.jobs.models import BIAS_SOURCES, bias_ratio_columns
from partsel.standards import eia198
from partsel.store.db import Store
from partsel.store.query import membership
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
    lifecycles: tuple[str, ...] = ("active", "nrnd")
    in_stock: bool = False
    bias: float | None = None           # capacitors: working DC voltage for class II loss [V]
    mount_l: float | None = None        # capacitors: mounting inductance added to ESL [H]
    current: float | None = None        # inductors: DC current [A]
    ripple: float | None = None         # inductors: peak-to-peak ripple current [A]
    min_q: tuple[float, float] | None = None  # inductors: (Q, at frequency [Hz])
    srf_ratio: float = 1.0              # inductors: catalog SRF at least this x inductive_to
    measured: bool = False              # band limits on stored measured curves, model elsewhere
    measured_only: bool = False         # band limits on measured curves; parts without: out
    limit: int = 20                     # 0 = all

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
            raise QueryError("an impedance limit needs a band: add --band F1..F2")
        if self.band is not None and not 0 < self.band[0] <= self.band[1]:
            lo, hi = (format_quantity(x, "Hz").replace(" ", "") for x in self.band)
            raise QueryError(f"band '{lo}..{hi}' runs backwards or is not positive: write the "
                             "low frequency first")
        for name in ("below", "above", "inductive_to", "value_min", "value_max", "current",
                     "mount_l", "ripple", "bias", "min_voltage"):
            v = getattr(self, name)
            if v is not None and (not np.isfinite(v) or v < 0 or
                                  (v == 0 and name in ("below", "inductive_to", "current"))):
                raise QueryError(f"--{name.replace('_', '-')} must be a positive number, "
                                 f"got {v:g}")
        if self.limit < 0:
            raise QueryError("--limit must be 0 (all) or a positive count")
        if self.kind == "capacitor" and (self.inductive_to or self.current or self.min_q):
            raise QueryError("--inductive-to, --current and --min-q apply to inductors: "
                             "search 'inductor' instead")
        if self.kind == "inductor" and (self.bias is not None or self.mount_l is not None):
            raise QueryError("--bias and --mount-l apply to capacitors")
        if not (np.isfinite(self.srf_ratio) and self.srf_ratio >= 1.0):
            raise QueryError(f"--srf-ratio must be 1 or more, got {self.srf_ratio:g}")
        if self.srf_ratio > 1.0 and self.inductive_to is None:
            raise QueryError("--srf-ratio needs --inductive-to: it is a multiple of that frequency")
        if self.ripple is not None and self.current is None:
            raise QueryError("--ripple needs --current: the ripple rides on a DC current")
        if self.value_min and self.value_max and self.value_min > self.value_max:
            raise QueryError("the value range runs backwards: write the lower value first")
        if self.measured or self.measured_only:
            if self.band is None:
                raise QueryError("--measured applies to band limits: add --band F1..F2 with "
                                 "--below or --above")
            if self.bias is not None:
                raise QueryError("--bias cannot be applied to a measured curve (it was measured "
                                 "at its own bias): leave out --measured or --bias")
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


def _where(search: Search) -> tuple[str, list[Any]]:
    conds = ["kind = ?"]
    params: list[Any] = [search.kind]
    if search.lifecycles:
        conds.append("list_contains(?, coalesce(lifecycle, 'active'))")
        params.append(list(search.lifecycles))
    if search.value_min is not None:
        conds.append("value >= ?")
        params.append(search.value_min * (1 - 1e-9))
    if search.value_max is not None:
        conds.append("value <= ?")
        params.append(search.value_max * (1 + 1e-9))
    if search.min_voltage is not None:
        conds.append("rated_voltage >= ?")
        params.append(search.min_voltage)
    more, more_params = membership(search.cases, search.dielectrics, search.technologies,
                                   search.makers, search.in_stock)
    conds += more
    params += more_params
    return " AND ".join(conds), params


def _measured(search: Search) -> bool:
    return search.measured or search.measured_only


def _count(n: int, word: str) -> str:
    return f"{n} {word}{'' if n == 1 else 's'}"


def _c_effective(a: dict[str, np.ndarray], bias: float,
                 effects: list[str]) -> tuple[np.ndarray, np.ndarray]:
    """Capacitance at the working DC bias (see :func:`partsel.jobs.models.bias_ratio_columns`)
    and its source code (0 none, 1 measured curve, 2 estimate)."""
    ratio, source = bias_ratio_columns(bias, a["value"], a["technology"], a["dielectric"],
                                       a["case"], a["rated_voltage"], a["bias_v"],
                                       a["bias_ratio"])
    effects.append(f"DC bias {bias:g} V: the part's catalog curve for "
                   f"{int(((source == 1) | (source == 3)).sum())} parts (beyond its last point the "
                   f"estimate where lower for {int((source == 3).sum())}), "
                   f"rule-of-thumb estimate for {int((source == 2).sum())} class II parts "
                   "(estimated)")
    return a["value"] * ratio, source


def find(store: Store, search: Search) -> FindResult:
    """Run a band search. See :class:`Search` for the criteria."""
    search.validate()
    where, params = _where(search)
    effects: list[str] = []
    notes: list[str] = []
    if search.kind == "capacitor":
        cols = "id, value, esr, esl, coalesce(tan_delta, 0.0) AS tan_delta"
        if search.bias is not None:
            cols += ", technology, dielectric, \"case\", rated_voltage, bias_v, bias_ratio"
        # one query, so every column comes back in the same row order
        a = store.arrays(f"SELECT {cols} FROM parts WHERE {where}", params)
        value, esr, esl, td = a["value"], a["esr"], a["esl"], a["tan_delta"]
        effects.append("series R-L-C, ESR(f) = esr + tan_delta/(2 pi f C)")
        c_eff = value
        bias_src = None
        if search.bias is not None:
            c_eff, bias_src = _c_effective(a, search.bias, effects)
        l_tot = esl
        if search.mount_l:
            l_tot = esl + search.mount_l
            effects.append(f"mounting inductance {search.mount_l * 1e9:g} nH added to each ESL")
        ok = np.isfinite(value) & np.isfinite(esr) & np.isfinite(esl)
        if search.bias is not None:
            # a part rated below the working voltage is not a candidate at that voltage
            over = a["rated_voltage"] < abs(search.bias)
            if (over & ok).any():
                notes.append(f"{_count(int((over & ok).sum()), 'capacitor')} rated below the "
                             f"bias {search.bias:g} V left out")
            ok &= ~over
        metrics: dict[str, np.ndarray] = {}
        if search.band:
            esr0, l0 = np.nan_to_num(esr), np.nan_to_num(l_tot)
            if search.above is None and not _measured(search):
                # fast path: the maximum alone decides and ranks; the rest is computed for the
                # rows shown
                max_z, f_max = band_metrics.capacitor_band_max(*search.band, c_eff, esr0, l0, td)
                ext = band_metrics.BandExtrema(max_z, f_max, max_z, f_max)
            else:
                ext = band_metrics.capacitor_band(*search.band, c_eff, esr0, l0, td)

            def model_band(f1: float, f2: float, i: int) -> band_metrics.BandExtrema:
                return band_metrics.capacitor_band(f1, f2, c_eff[i], esr0[i], l0[i], td[i])
    else:
        a = store.arrays(f"SELECT id, value, dcr AS dcr_raw, coalesce(dcr, 0.0) AS dcr, srf, rp, "
                         f"isat, irms FROM parts WHERE {where}", params)
        value, dcr = a["value"], a["dcr"]
        cp = inductor.winding_capacitance(value, a["srf"])
        effects.append("(L + DCR) in parallel with C_p = 1/((2 pi SRF)^2 L) and Rp")
        ok = np.isfinite(value)
        metrics = {"zero_phase_hz": inductor.zero_phase_frequency(value, dcr, cp)}
        if search.inductive_to is not None or search.band is not None:
            # without an SRF the model has no winding capacitance and would claim a rising
            # |Z| and a positive phase at every frequency: such parts cannot be judged
            known = np.isfinite(a["srf"])
            if (~known & ok).any():
                notes.append(f"{_count(int((~known & ok).sum()), 'inductor')} without an SRF "
                             "left out: their self-resonance cannot be checked")
            ok &= known
        if search.inductive_to is not None:
            ok &= inductor.is_inductive_to(search.inductive_to, value, dcr, cp)
            metrics["srf_margin"] = metrics["zero_phase_hz"] / search.inductive_to
            metrics["srf_ratio"] = a["srf"] / search.inductive_to
            if search.srf_ratio > 1.0:
                ok &= metrics["srf_ratio"] >= search.srf_ratio
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
            metrics["isat_margin"] = a["isat"] / peak
            metrics["irms_margin"] = a["irms"] / rms
        if search.min_q is not None:
            q_min, f_q = search.min_q
            lossless = ~(a["dcr_raw"] > 0) & ~np.isfinite(a["rp"])
            if (lossless & ok).any():
                notes.append(f"{_count(int((lossless & ok).sum()), 'inductor')} without a DCR "
                             "(or Rp) left out: their Q cannot be computed")
            with np.errstate(divide="ignore", invalid="ignore"):
                q = inductor.q_factor(f_q, value, dcr, cp, a["rp"])
            ok &= ~lossless & (q >= q_min)
            metrics["q"] = q
        if search.band:
            ext = band_metrics.inductor_band(*search.band, value, dcr, cp, a["rp"])

            def model_band(f1: float, f2: float, i: int) -> band_metrics.BandExtrema:
                return band_metrics.inductor_band(f1, f2, value[i], dcr[i], cp[i], a["rp"][i])
        if _measured(search) and (search.inductive_to or search.min_q):
            notes.append("--inductive-to and --min-q are checked on the model, not on the "
                         "measured curves")
    curve = None
    if search.band and _measured(search):
        from partsel.jobs.measured import overlay_band
        over = overlay_band(store, a["id"], search.band, ext, model_band,
                            only=search.measured_only, mount_l=search.mount_l or 0.0)
        ext, curve = over.extrema, over.source
        effects += over.effects
        notes += over.notes
    considered = len(value)
    order = "part number"
    key = np.zeros(considered)
    if search.band:
        metrics.update(max_z_ohm=ext.max_z, f_max_hz=ext.f_max, min_z_ohm=ext.min_z,
                       f_min_hz=ext.f_min)
        # "at or below" with a relative slack of 1e-12: a part exactly at the limit is not lost
        # to the last bit of floating-point rounding
        if search.below is not None:
            ok &= ext.max_z <= search.below * (1 + REL_SLACK)
        if search.above is not None:
            ok &= ext.min_z >= search.above * (1 - REL_SLACK)
        if search.above is not None and search.below is None:
            key, order = -ext.min_z, "highest band minimum |Z| first"
        else:
            key, order = ext.max_z, "lowest band maximum |Z| first"
    elif search.kind == "inductor" and (search.inductive_to or search.current or search.min_q):
        # best margin first: the worst of the margins asked for, each normalised so that 1 is
        # "just passes" (zero-phase frequency over srf_ratio x target, Isat and Irms over the
        # need, Q over the minimum)
        margins, names = [], []
        if search.inductive_to is not None:
            margins.append(metrics["srf_margin"] / search.srf_ratio)
            names.append("zero-phase f / target")
        if search.current is not None:
            margins += [metrics["isat_margin"], metrics["irms_margin"]]
            names += ["Isat", "Irms"]
        if search.min_q is not None:
            with np.errstate(divide="ignore", invalid="ignore"):
                margins.append(metrics["q"] / search.min_q[0])
            names.append("Q")
        key = -np.minimum.reduce(margins)
        order = "best worst-case margin first (" + ", ".join(names) + ")"
    ok &= np.isfinite(key)
    idx = np.flatnonzero(ok)
    matches = len(idx)
    idx = idx[np.argsort(key[idx], kind="stable")]
    if search.limit and matches > search.limit:
        cut = key[idx[search.limit - 1]]
        idx = idx[key[idx] <= cut]  # keep ties at the cut so part number can break them
    if search.kind == "capacitor":
        sub = idx
        metrics["srf_hz"] = np.full(considered, np.nan)
        metrics["srf_hz"][sub] = capacitor.srf(c_eff[sub], l_tot[sub])
        if search.band and search.above is None and not _measured(search):
            full = band_metrics.capacitor_band(*search.band, c_eff[sub], esr0[sub], l0[sub],
                                               td[sub])
            for name, arr in (("min_z_ohm", full.min_z), ("f_min_hz", full.f_min)):
                metrics[name] = np.full(considered, np.nan)
                metrics[name][sub] = arr
    ids = a["id"][idx]
    parts = store.parts_by_id(ids)
    rows = []
    for pos, part in zip(idx, parts, strict=True):
        row = {k: v for k, v in part.items() if k not in ("bias_v", "bias_ratio")}
        row["_rank"] = float(key[pos])
        for name, arr in metrics.items():
            row[name] = float(arr[pos])
        if search.kind == "capacitor" and search.bias is not None:
            row["c_eff_f"] = float(c_eff[pos])
            row["bias_source"] = BIAS_SOURCES[bias_src[pos]]
        if curve is not None:
            row["curve"] = curve[pos]
        rows.append(row)
    rows.sort(key=lambda r: (r["_rank"], r["part_number"]))
    for r in rows:
        del r["_rank"]
    if search.limit:
        rows = rows[:search.limit]
    return FindResult(rows, matches, considered, order, effects, notes)
