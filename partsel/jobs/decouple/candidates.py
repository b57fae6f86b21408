"""The parts the planner may use: loaded from the store with the rail's layers applied, then
reduced to the candidates worth considering (package notes, step 1).
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from partsel import units
from partsel.derating import NO_DERATING, derating_factors
from partsel.engine import pdn
from partsel.engine.bank import Bank
from partsel.engine.models import ModelSet, family
from partsel.errors import QueryError
from partsel.jobs.decouple.capacitance import capacitance_at_bias, worst_case_ratio
from partsel.jobs.decouple.inputs import Choice, Prefer, Rail
from partsel.jobs.decouple.layout import crowding
from partsel.jobs.models import bias_estimates
from partsel.store.db import Store
from partsel.store.parts import capacitors

# The rated voltage a part needs by default (:func:`usable`): parts with a derating rule
# (MnO2 and polymer, :mod:`partsel.derating`) are used up to their derated rating; for the other
# technologies, which have no derating rule (the DC-bias loss of class II ceramics is applied
# separately), the planner keeps a design margin of its own: a rating at least 1.25 x the rail
# voltage. The margin is not applied on top of a derating.
DEFAULT_VOLTAGE_MARGIN = 1.25
VOLTAGE_RULE = ("rated voltage x derating (MnO2 tantalum 50 %; polymer 90 % up to a 10 V "
                "rating, 80 % above) at least the rail voltage; other technologies rated at "
                f"least {DEFAULT_VOLTAGE_MARGIN:g} x the rail voltage (a design margin)")


_MODEL_FIELDS = ("models", "source", "label", "origin", "measured_lo", "measured_hi")


@dataclass
class Parts:
    """Capacitors as model arrays, with the layers of the rail applied."""

    id: NDArray
    part_number: NDArray
    maker: NDArray
    value: NDArray            # nominal C [F]
    c_eff: NDArray            # C at the rail's DC bias (and worst case, when asked) [F]
    bias_source: NDArray      # index into BIAS_LABELS
    bias_ratio: NDArray       # C at bias / nominal C
    worst_ratio: NDArray      # tolerance x temperature x aging factor (1 when not asked)
    esr: NDArray
    tan_delta: NDArray
    esl: NDArray              # body ESL [H]
    mount_l: NDArray          # [H]
    price: NDArray            # NaN when unknown
    case: NDArray
    technology: NDArray
    dielectric: NDArray
    rated_voltage: NDArray
    mounting: NDArray
    lifecycle: NDArray
    safety_class: NDArray     # None when the part has none
    # The model each part is evaluated with (jobs.models.choose_models) with the rail's
    # layers applied; None while every part uses its catalog series R-L-C (the arrays above).
    models: ModelSet | None = None
    source: NDArray | None = None        # per part: catalog, fit, vendor or measured
    label: NDArray | None = None         # per part: e.g. "vendor netlist"
    origin: NDArray | None = None        # per part: file, subcircuit, date
    measured_lo: NDArray | None = None   # a measured curve's range [Hz], else NaN
    measured_hi: NDArray | None = None
    crowd_l: NDArray | None = None       # crowding into the vias on a ring [H] (layout.py)

    @property
    def l_total(self) -> NDArray:
        """ESL + mounting (+ crowding on a ring, when the board has a cavity) [H]."""
        if self.crowd_l is None:
            return self.esl + self.mount_l
        return self.esl + self.mount_l + self.crowd_l

    def __len__(self) -> int:
        return len(self.id)

    def take(self, idx: NDArray) -> Parts:
        out = {}
        for k in self.__dataclass_fields__:
            v = getattr(self, k)
            out[k] = None if v is None else (v.take(idx) if isinstance(v, ModelSet) else v[idx])
        return Parts(**out)

    def branches(self, counts: NDArray | float = 1.0) -> pdn.Branches:
        """The parts' catalog series R-L-C models with the rail's layers, as branches."""
        return pdn.Branches.of(self.c_eff, self.esr, self.l_total, self.tan_delta, counts)

    @property
    def catalog_rlc(self) -> bool:
        """Every part evaluated with its catalog series R-L-C model."""
        return self.models is None

    def network(self, counts: NDArray | float = 1.0) -> pdn.Branches | Bank:
        """The parts as branches of the network: R-L-C branches when every part uses its
        catalog model (the exact Foster scan applies), else a bank of their chosen models."""
        if self.models is None:
            return self.branches(counts)
        return Bank.of(self.models, counts)

    def without_models(self) -> Parts:
        """The same parts on their catalog models only."""
        return Parts(**{k: (None if k in _MODEL_FIELDS else getattr(self, k))
                        for k in self.__dataclass_fields__})

    def sources(self) -> NDArray:
        return self.source if self.source is not None else np.full(len(self), "catalog",
                                                                      dtype=object)

    def covers(self, band: tuple[float, float]) -> NDArray[np.bool_]:
        """Per part: its measured curve covers the band."""
        if self.measured_lo is None or self.measured_hi is None:
            return np.zeros(len(self), dtype=bool)
        return (self.measured_lo <= band[0]) & (band[1] <= self.measured_hi)


def attach_models(store: Store, parts: Parts, rail: Rail, choice: str, only: bool,
                  notes: list[str]) -> Parts:
    """Each part's chosen model (:func:`partsel.jobs.models.choose_models`) with the rail's
    DC bias, worst case and mounting applied the way the catalog model takes them: C scaled
    to ``c_eff`` and the mounting inductance in series. A measured curve that does not reach
    the band leaves the catalog model in place (said in the notes)."""
    from partsel.jobs.models import choose_models

    rlc = family("rlc")
    base = ModelSet.of(rlc, rlc.make(value=parts.value, esr=parts.esr, esl=parts.esl,
                                     tan_delta=parts.tan_delta))
    chosen = choose_models(store, parts.id, base, choice, only=only, value=parts.value,
                           tan_delta=parts.tan_delta)
    f1, f2 = rail.band
    away = (chosen.source == "measured") & ~((chosen.measured_lo <= f2)
                                             & (chosen.measured_hi >= f1))
    if away.any():
        notes.append(f"{int(away.sum())} capacitor(s) have a stored sweep that does not reach "
                     "the band: their model is used")
        chosen = chosen.reverted(away, base)
    keep = chosen.available
    if not keep.all():
        parts, chosen = parts.take(np.flatnonzero(keep)), chosen.take(np.flatnonzero(keep))
    if np.all(chosen.source == "catalog"):
        return parts
    models = chosen.models.with_capacitance_scale(parts.c_eff / parts.value)
    models = models.with_series_inductance(parts.l_total - parts.esl)
    return Parts(**{k: getattr(parts, k) for k in parts.__dataclass_fields__
                    if k not in _MODEL_FIELDS},
                 models=models, source=chosen.source, label=np.array(chosen.labels(),
                                                                      dtype=object),
                 origin=chosen.origin, measured_lo=chosen.measured_lo,
                 measured_hi=chosen.measured_hi)


def _by_rows(cols: dict[str, NDArray], names: Sequence[str],
             fn: Callable[..., Any]) -> Any:
    """``fn(*columns)`` of a function that treats every row on its own, evaluated once per
    distinct combination of the columns ``names`` and spread back to every row: the same
    values, without a Python step per row (a catalog has a few dozen cases, dielectrics and
    technologies, a few hundred values). A text column is grouped by its ``<name>:code``
    (:func:`partsel.store.parts.capacitors`), a numeric one by its distinct values (kept in
    ``cols`` as its code for the next call); a tuple result is spread element by element.
    Without codes for a text column, ``fn`` runs on the rows as they are."""
    n = len(cols["id"])
    if any(f"{name}:code" not in cols and np.asarray(cols[name]).dtype.kind not in "fiub"
           for name in names):
        return fn(*(cols[name] for name in names))     # text without codes: row by row
    key, size = np.zeros(n, dtype=np.int64), 1
    for name in names:
        code = cols.get(f"{name}:code")
        if code is None:
            _, code = np.unique(np.asarray(cols[name], dtype=float), return_inverse=True)
            code = cols[f"{name}:code"] = np.asarray(code, dtype=np.int64).ravel()
        code = np.asarray(code, dtype=np.int64)
        card = int(code.max()) + 1 if n else 1
        key, size = key * card + code, size * card
        if size > 1 << 22:    # renumber the combinations so far: keys stay small
            _, key = np.unique(key, return_inverse=True)
            key = key.ravel()
            size = int(key.max()) + 1 if n else 1
    present = np.zeros(size, dtype=bool)
    present[key] = True
    slot = np.cumsum(present) - 1                       # combination -> group number
    first = np.full(size, n, dtype=np.int64)
    np.minimum.at(first, key, np.arange(n))
    out = fn(*(np.asarray(cols[name])[first[present]] for name in names))
    inv = slot[key]
    if isinstance(out, tuple):
        return tuple(np.asarray(o)[inv] for o in out)
    return np.asarray(out)[inv]


def _bias(rail: Rail, cols: dict[str, NDArray]) -> tuple[NDArray, NDArray]:
    """C at the rail's DC bias and its source per part: the rule-of-thumb estimate once per
    combination of the columns it reads (:func:`_by_rows`), each stored curve on its own."""
    value = np.asarray(cols["value"], dtype=float)
    if "bias_n" not in cols:     # curves as lists (a bank's rows): the policy row by row
        return capacitance_at_bias(
            rail.voltage, value, cols["technology"], cols["dielectric"], cols["case"],
            np.asarray(cols["rated_voltage"], dtype=float), cols["bias_v"], cols["bias_ratio"])
    estimate = _by_rows(cols, ("value", "technology", "dielectric", "case", "rated_voltage"),
                        lambda v, t, d, c, r: bias_estimates(rail.voltage, v, t, d, c, r))
    return capacitance_at_bias(
        rail.voltage, value, cols["technology"], cols["dielectric"], cols["case"],
        np.asarray(cols["rated_voltage"], dtype=float), None, None,
        (np.asarray(cols["bias_n"]) > 0, cols["bias_v"], cols["bias_ratio"]), estimate)


def _parts_from(cols: dict[str, NDArray], rail: Rail) -> Parts:
    value = np.asarray(cols["value"], dtype=float)
    c_bias, source = _bias(rail, cols)
    worst = _by_rows(cols, ("tolerance", "technology", "dielectric"),
                     lambda tol, t, d: worst_case_ratio(np.asarray(tol, dtype=float), t, d)) \
        if rail.worst_case else np.ones(len(value))
    mounting = cols["mounting"]
    crowd = crowding(rail.board)
    return Parts(
        id=cols["id"], part_number=cols["part_number"], maker=cols["maker"], value=value,
        c_eff=c_bias * worst, bias_source=source, bias_ratio=c_bias / value,
        worst_ratio=worst, esr=np.asarray(cols["esr"], dtype=float),
        tan_delta=np.nan_to_num(np.asarray(cols["tan_delta"], dtype=float)),
        esl=np.asarray(cols["esl"], dtype=float),
        mount_l=_by_rows(cols, ("case", "mounting"), rail.board.mounting),
        price=np.asarray(cols["price"], dtype=float), case=cols["case"],
        technology=cols["technology"], dielectric=cols["dielectric"],
        rated_voltage=np.asarray(cols["rated_voltage"], dtype=float), mounting=mounting,
        lifecycle=cols["lifecycle"], safety_class=cols["safety_class"],
        crowd_l=np.full(len(value), crowd) if rail.board.has_cavity else None)


def usable(voltage: float, rated_voltage: ArrayLike, technology: Sequence[Any],
           electrolyte: Sequence[Any], override: float | None = None) -> NDArray[np.bool_]:
    """Which parts may serve a rail of ``voltage`` [V]: rated at least ``override`` when given,
    else the default rule (:data:`VOLTAGE_RULE`). An unknown rating is never usable."""
    rated = np.asarray(rated_voltage, dtype=float)
    if override is not None:
        return rated >= override
    factor = derating_factors(technology, electrolyte, rated)
    need = np.where(factor < NO_DERATING, voltage, voltage * DEFAULT_VOLTAGE_MARGIN)
    return rated * factor >= need


def voltage_rule_text(voltage: float, override: float | None = None) -> str:
    """The voltage rule for a rail, as the effects of a plan state it."""
    if override is not None:
        return f"rated voltage at least {units.format_quantity(override, 'V')}"
    return (f"{VOLTAGE_RULE} ({units.format_quantity(voltage * DEFAULT_VOLTAGE_MARGIN, 'V')} "
            "for this rail)")


def load_candidates(store: Store, rail: Rail, choice: Choice) -> tuple[Parts, list[str], int]:
    """Capacitors that pass the filters and carry a usable model, each with its chosen model
    (``choice.model``): (parts, notes, considered)."""
    cols = capacitors(store, lifecycles=choice.lifecycles, cases=choice.cases,
                      dielectrics=choice.dielectrics, technologies=choice.technologies,
                      makers=choice.makers, in_stock=choice.in_stock, packed=True)
    considered = len(cols["id"])
    notes: list[str] = []
    if considered == 0:
        raise QueryError("no capacitor in the store passes the filters (case, technology, "
                         "dielectric, maker, lifecycle, stock): widen them")
    ok_voltage = _by_rows(cols, ("rated_voltage", "technology", "electrolyte"),
                          lambda r, t, e: usable(rail.voltage, r, t, e, choice.min_voltage))
    keep = np.ones(considered, dtype=bool)

    def drop(mask: NDArray, why: str) -> None:
        nonlocal keep
        k = int((mask & keep).sum())
        if k:
            notes.append(f"{k} capacitors left out: {why}")
        keep &= ~mask

    drop(~ok_voltage, "rated voltage unknown or below "
         + (f"{units.format_quantity(choice.min_voltage, 'V')}" if choice.min_voltage
            is not None else "the voltage rule (" + VOLTAGE_RULE + ")"))
    esr = np.asarray(cols["esr"], dtype=float)
    esl = np.asarray(cols["esl"], dtype=float)
    value = np.asarray(cols["value"], dtype=float)
    drop(~(np.isfinite(esr) & np.isfinite(esl) & (value > 0)),
         "no ESR or ESL in the store (their impedance cannot be evaluated)")
    diel_unknown = _by_rows(cols, ("technology", "dielectric"), lambda ts, ds: np.array(
        [t == "mlcc" and not d for t, d in zip(ts, ds, strict=True)], dtype=bool))
    drop(diel_unknown, "MLCCs without a dielectric code (their DC-bias loss is unknown)")
    if choice.prefer == "cost" or choice.max_cost is not None:
        drop(~np.isfinite(np.asarray(cols["price"], dtype=float)),
             "no price in the store (needed to prefer cost or to limit it)")
    idx = np.flatnonzero(keep)
    if idx.size == 0:
        raise QueryError("no capacitor is left to plan with: " + "; ".join(notes))
    parts = _parts_from(cols if idx.size == considered else
                        {k: v[idx] for k, v in cols.items()}, rail)
    measured_only = choice.model_only and choice.model == "measured"
    parts = attach_models(store, parts, rail, choice.model,
                          choice.model_only and not measured_only, notes)
    if measured_only:
        parts = _covering(parts, rail.band, notes)
    elif choice.model_only and len(parts) < len(idx):
        notes.append(f"{len(idx) - len(parts)} capacitors left out: no {choice.model} model")
    if not len(parts):
        raise QueryError(f"no capacitor that passes the filters has a {choice.model} model: "
                         "import one or choose another model")
    return parts, notes, considered


def _covering(parts: Parts, band: tuple[float, float], notes: list[str]) -> Parts:
    """Only the parts whose measured curve covers the band (a measured-only plan)."""
    keep = parts.covers(band)
    left = len(keep) - int(keep.sum())
    if left:
        partial = int((parts.sources() == "measured").sum()) - int(keep.sum())
        notes.append(f"{left} capacitors left out (measured curves only): no stored sweep "
                     f"covers the whole band ({partial} cover part of it)")
    if not keep.any():
        raise QueryError(f"no capacitor that passes the filters has a stored sweep covering "
                         f"{units.format_quantity(band[0], 'Hz')}.."
                         f"{units.format_quantity(band[1], 'Hz')}: import sweeps with "
                         "'partsel sweep import', narrow the band, or let the models stand in "
                         "where there is no measurement")
    return parts.take(np.flatnonzero(keep))


# -- candidate reduction -----------------------------------------------------------------------

def weights(parts: Parts, prefer: Prefer, max_parts: int) -> NDArray[np.float64]:
    """Objective weight of one part: 1 (+ a price tie-break) for ``count``, its price (+ a
    count tie-break) for ``cost``. Tie-breaks stay below one unit of the main objective."""
    price = parts.price
    known = np.isfinite(price)
    if prefer == "count":
        top = float(price[known].max()) if known.any() and price[known].max() > 0 else 1.0
        p = np.where(known, price, top)
        return 1.0 + 0.5 / max_parts * p / top
    low = float(price[price > 0].min()) if np.any(price > 0) else 1.0
    return price + 0.5 / max_parts * low


def reduce_candidates(parts: Parts, w: NDArray, f_band: tuple[float, float],
                      per_bin: int = 3) -> NDArray[np.intp]:
    """Indices of the parts worth considering (package notes, step 1).

    Bins: log10(SRF) in tenths of a decade (SRFs more than 30x outside the band share one bin
    at each side) and log10(R at SRF) in quarters. In each bin the Pareto front of (mounted L,
    weight), at most ``per_bin`` parts spread over it (1 keeps the lowest L, for the count
    objective, where the weight is only a tie-break).
    """
    if parts.models is not None:
        # parts with a model of their own (vendor, measured, a saved fit) stay candidates
        # whatever their catalog model's bin; the bins sort the catalog R-L-C parts
        own = np.flatnonzero(parts.sources() != "catalog")
        cat = np.flatnonzero(parts.sources() == "catalog")
        kept = cat[reduce_candidates(parts.take(cat).without_models(), w[cat], f_band,
                                     per_bin)] if len(cat) else np.empty(0, np.intp)
        return np.union1d(own, kept).astype(np.intp)
    c, l_tot = parts.c_eff, parts.l_total
    with np.errstate(divide="ignore"):
        srf = 1.0 / (2 * np.pi * np.sqrt(l_tot * c))
        r_srf = parts.esr + parts.tan_delta * np.sqrt(l_tot / c)
    lo, hi = np.log10(f_band[0] / 30.0), np.log10(f_band[1] * 30.0)
    s_bin = np.floor(10 * np.clip(np.log10(srf), lo, hi)).astype(np.int64)
    r_bin = np.floor(4 * np.log10(np.maximum(r_srf, 1e-6))).astype(np.int64)
    # Far above the band a part acts as a capacitor: rank those by C. Elsewhere by mounted L
    # (far below the band a part acts as R + j omega L; at a common SRF smaller L is larger C).
    above = np.log10(srf) > hi
    key_l = np.where(above, -c, l_tot)
    rows = np.arange(len(key_l))
    if per_bin == 1 and len(key_l):
        # one part per bin: the first in the order below, so one with its bin's lowest key;
        # only those are sorted (the same choice, without sorting a whole catalog)
        s0, r0 = s_bin - s_bin.min(), r_bin - r_bin.min()
        cell = s0 * (int(r0.max()) + 1) + r0
        low = np.full(int(cell.max()) + 1, np.inf)
        np.minimum.at(low, cell, key_l)
        rows = np.flatnonzero(key_l <= low[cell])
    order = rows[np.lexsort((w[rows], key_l[rows], r_bin[rows], s_bin[rows]))]
    sb, rb = s_bin[order], r_bin[order]
    start = np.flatnonzero(np.concatenate([[True], (sb[1:] != sb[:-1]) | (rb[1:] != rb[:-1])]))
    ends = np.append(start[1:], len(order))
    keep: list[int] = []
    for a, b in zip(start, ends, strict=True):
        grp = order[a:b]                      # ascending key_l, then weight
        best_w = np.minimum.accumulate(w[grp])
        front = grp[np.concatenate([[True], w[grp][1:] < best_w[:-1]])]
        if len(front) > per_bin:
            pick = np.unique(np.round(np.linspace(0, len(front) - 1, per_bin)).astype(int))
            front = front[pick]
        keep.extend(int(i) for i in front)
    return np.array(sorted(keep), dtype=np.intp)
