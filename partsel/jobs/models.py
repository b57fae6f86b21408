"""Which model each part uses, and the layers every job applies the same way.

A part can have up to three models: its *catalog* model (the catalog columns as a ``rlc`` or
``lcp`` family, or the fit of another family saved for it with ``partsel fit``), a *vendor*
model (a maker's SPICE subcircuit or Touchstone data, ``partsel model import``) and a
*measured* curve (its newest stored sweep, ``partsel sweep import``). :func:`choose_models`
picks one per part by the user's choice (:data:`MODEL_CHOICES`): ``catalog``; ``vendor`` or
``measured`` (that one where the part has it, the catalog model elsewhere); ``best`` (measured,
else vendor, else catalog; the default). With ``only``, parts without the chosen kind of model
are left out. A measured curve answers within its measured range and, unless ``only``, the
part's other model answers outside it.

The DC-bias policy (:func:`bias_ratio_columns`) is the one every job applies to capacitors.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, replace
from functools import cached_property
from typing import Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from partsel.engine import ceramic
from partsel.engine.models import ModelSet, family, lcp
from partsel.engine.models.modelset import Group


def _col(rows: Sequence[dict[str, Any]], key: str, default: float = np.nan) -> NDArray:
    return np.array([default if r.get(key) is None else float(r[key]) for r in rows], dtype=float)


BIAS_SOURCES = ("none", "catalog curve", "estimated", "catalog curve, estimate beyond it")


def curve_matrix(bias_v: Sequence[Any], bias_ratio: Sequence[Any]
                 ) -> tuple[NDArray[np.bool_], NDArray[np.float64], NDArray[np.float64]]:
    """Stored bias curves (lists, or None) as NaN-padded (P, K >= 2) arrays, and which rows
    have one."""
    has = np.array([v is not None and not isinstance(v, (str, float)) and len(v) > 0
                    for v in bias_v], dtype=bool)
    k = max([2] + [len(v) for v, h in zip(bias_v, has, strict=True) if h])
    cv = np.full((len(has), k), np.nan)
    cr = np.full_like(cv, np.nan)
    for i in np.flatnonzero(has):
        cv[i, :len(bias_v[i])] = bias_v[i]
        cr[i, :len(bias_ratio[i])] = bias_ratio[i]
    return has, cv, cr


def bias_ratio_columns(voltage: float, value: ArrayLike, technology: Sequence[Any],
                       dielectric: Sequence[Any], case: Sequence[Any], rated_voltage: ArrayLike,
                       bias_v: Sequence[Any], bias_ratio: Sequence[Any],
                       curves: tuple[NDArray, NDArray, NDArray] | None = None,
                       estimate: NDArray | None = None
                       ) -> tuple[NDArray[np.float64], NDArray[np.int8]]:
    """C(V)/C0 of each part at a DC voltage, and where it came from (index into BIAS_SOURCES).

    The one policy for every job: the part's own measured curve wins within its voltage range;
    beyond its last point the curve is not extrapolated optimistically (the rule-of-thumb
    estimate is used where it is lower, source 3). Class II MLCCs without a curve get the
    rule-of-thumb estimate of :func:`partsel.engine.ceramic.estimate_bias_ratio` (labelled
    "estimated"); class I dielectrics and other technologies keep their value.

    ``curves`` gives the stored curves already as :func:`curve_matrix` makes them (which
    rows have one, NaN-padded voltages and ratios); ``bias_v`` and ``bias_ratio`` are then
    not read. ``estimate`` gives the rule-of-thumb ratio of every part already (what
    :func:`bias_estimates` returns).
    """
    value = np.asarray(value, dtype=float)
    ratio = np.ones(value.shape)
    source = np.zeros(value.shape, dtype=np.int8)
    tech = np.asarray(technology, dtype=object)
    mlcc = tech == "mlcc"
    if estimate is None:
        estimate = bias_estimates(voltage, value, tech, dielectric, case, rated_voltage)
    has, cv, cr = curve_matrix(bias_v, bias_ratio) if curves is None else curves
    if has.any():
        r = ceramic.bias_ratio_from_curve(voltage, cv[has], cr[has])
        last_v = np.nanmax(cv[has], axis=1)
        beyond = (abs(voltage) > last_v) & (estimate[has] < r)
        ratio[has] = np.where(beyond, estimate[has], r)
        source[has] = np.where(beyond, 3, 1)
    est = mlcc & ~has & (estimate < 1.0)
    ratio[est] = estimate[est]
    source[est] = 2
    return ratio, source


def bias_estimates(voltage: float, value: ArrayLike, technology: Sequence[Any],
                   dielectric: Sequence[Any], case: Sequence[Any], rated_voltage: ArrayLike
                   ) -> NDArray[np.float64]:
    """The rule-of-thumb C(V)/C0 of :func:`partsel.engine.ceramic.estimate_bias_ratio` for
    the MLCCs, 1 for every other part (row by row: each part on its own)."""
    value = np.asarray(value, dtype=float)
    estimate = np.ones(value.shape)
    mlcc = np.asarray(technology, dtype=object) == "mlcc"
    if mlcc.any():
        idx = np.flatnonzero(mlcc)
        estimate[idx] = ceramic.estimate_bias_ratio(
            voltage, np.asarray(rated_voltage, dtype=float)[idx], value[idx],
            np.asarray(case, dtype=object)[idx], np.asarray(dielectric, dtype=object)[idx])
    return estimate


def bias_ratios(rows: Sequence[dict[str, Any]], voltage: float) -> tuple[NDArray, list[str]]:
    """:func:`bias_ratio_columns` for stored rows; sources as words."""
    def col(key: str) -> list[Any]:
        return [r.get(key) if r.get("kind") == "capacitor" else None for r in rows]
    rated = [np.nan if v is None else v for v in col("rated_voltage")]
    ratio, source = bias_ratio_columns(voltage, [r["value"] for r in rows], col("technology"),
                                       col("dielectric"), col("case"), rated, col("bias_v"),
                                       col("bias_ratio"))
    return ratio, [BIAS_SOURCES[s] for s in source]


# -- the model of each part ------------------------------------------------------------------

MODEL_CHOICES = ("catalog", "vendor", "measured", "best")
PREFERENCE = {"catalog": ("catalog",), "vendor": ("vendor", "catalog"),
              "measured": ("measured", "catalog"), "best": ("measured", "vendor", "catalog")}
SOURCE_WORDS = {"catalog": "catalog", "fit": "catalog (saved fit)", "vendor": "vendor",
                "measured": "measured"}


def check_choice(choice: str) -> str:
    from partsel.errors import QueryError
    if choice not in MODEL_CHOICES:
        raise QueryError(f"unknown model choice '{choice}': use one of {', '.join(MODEL_CHOICES)}")
    return choice


def catalog_models(kind: str, cols: dict[str, Any]) -> ModelSet:
    """The catalog model of parts of one kind from their catalog columns (arrays in SI units,
    NaN where unknown): ``rlc`` for capacitors (value, esr, esl, tan_delta; an unknown ESR, ESL
    or tan delta counts as 0), ``lcp`` for inductors (value, dcr, srf, rp; C_p from the SRF, 0
    without one; no Rp without one)."""
    def col(name: str, default: float) -> NDArray:
        v = np.asarray(cols[name], dtype=float) if name in cols else None
        n = len(np.asarray(cols["value"]))
        return np.full(n, default) if v is None else np.where(np.isnan(v), default, v)

    value = np.asarray(cols["value"], dtype=float)
    if kind == "capacitor":
        fam = family("rlc")
        return ModelSet.of(fam, fam.make(value=value, esr=col("esr", 0.0), esl=col("esl", 0.0),
                                         tan_delta=col("tan_delta", 0.0)))
    fam = family("lcp")
    return ModelSet.of(fam, fam.make(value=value, dcr=col("dcr", 0.0),
                                     cp=lcp.winding_capacitance(value, col("srf", np.nan)),
                                     rp=col("rp", np.inf)))


def row_columns(rows: Sequence[dict[str, Any]]) -> dict[str, NDArray]:
    """Stored rows (dicts) as the columns :func:`catalog_models` reads."""
    return {k: _col(rows, k) for k in ("id", "value", "esr", "esl", "tan_delta", "dcr", "srf",
                                       "rp")}


def catalog_models_of_rows(rows: Sequence[dict[str, Any]]) -> ModelSet:
    """The catalog models of stored rows of either kind, in row order."""
    groups = []
    for kind in ("capacitor", "inductor"):
        pos = np.array([i for i, r in enumerate(rows) if r.get("kind") == kind], dtype=np.intp)
        if len(pos):
            part = catalog_models(kind, row_columns([rows[i] for i in pos]))
            groups += [Group(g.family, pos[g.index], g.batch) for g in part.groups]
    return ModelSet.merge(len(rows), groups)


def choose_for_rows(store: Any, rows: Sequence[dict[str, Any]], choice: str = "best", *,
                    only: bool = False) -> Chosen:
    """:func:`choose_models` for stored rows of either kind."""
    cols = row_columns(rows)
    return choose_models(store, cols["id"].astype(np.int64), catalog_models_of_rows(rows),
                         choice, only=only, value=cols["value"],
                         tan_delta=np.nan_to_num(cols["tan_delta"]))


@dataclass(frozen=True)
class Chosen:
    """The model each part uses: the set, and per part its source ("catalog", "fit",
    "vendor", "measured"), its family and where it came from (file, subcircuit, date)."""

    models: ModelSet
    source: NDArray[np.object_]
    origin: NDArray[np.object_]
    available: NDArray[np.bool_]     # False: left out because the chosen model is missing
    measured_lo: NDArray[np.float64]   # the measured range of a measured curve [Hz], else NaN
    measured_hi: NDArray[np.float64]
    # which parts' source is not "catalog", when known (a million parts: no string compare)
    special: NDArray[np.bool_] | None = None

    def covers(self, band: tuple[float, float]) -> NDArray[np.bool_]:
        """Per part: its measured curve covers the band (False for other models)."""
        return (self.measured_lo <= band[0]) & (band[1] <= self.measured_hi)

    @cached_property
    def family(self) -> NDArray[np.object_]:
        return self.models.family_names()

    @cached_property
    def _label_masks(self) -> list[tuple[str, NDArray[np.intp]]]:
        """(label, positions) of each kind of model in use: a comparison per source and
        family, not one string per part (a catalog has a million parts)."""
        out = []
        for g in self.models.groups:
            word = "curve" if g.family.name == "measured" else g.family.name
            rest = g.index
            if self.special is not None:
                plain = ~self.special[rest]
                if plain.any():
                    out.append((f"{SOURCE_WORDS['catalog']} {word}", rest[plain]))
                rest = rest[~plain]
            src = self.source[rest]
            for s in sorted(SOURCE_WORDS, key=lambda x: x != "catalog"):
                if not len(rest):
                    break
                hit = src == s
                if hit.any():
                    out.append((f"{SOURCE_WORDS[s]} {word}", rest[hit]))
                    rest, src = rest[~hit], src[~hit]
        return out

    @cached_property
    def _label_codes(self) -> NDArray[np.int16]:
        codes = np.full(self.n, -1, dtype=np.int16)
        for k, (_, pos) in enumerate(self._label_masks):
            codes[pos] = k
        return codes

    def labels(self, at: NDArray[np.intp] | None = None) -> list[str]:
        """Per part, e.g. "vendor netlist", "catalog rlc" or "measured curve"; with ``at``,
        of those positions only (without a list of a million words)."""
        if at is not None:
            names = [lab for lab, _ in self._label_masks]
            return [names[c] if c >= 0 else None for c in self._label_codes[np.asarray(at)]]
        out = np.empty(self.n, dtype=object)
        for label, pos in self._label_masks:
            out[pos] = label
        return out.tolist()

    @property
    def n(self) -> int:
        return len(self.source)

    def summary(self) -> str:
        """One line for the effects of a result: how many parts use which model."""
        counts: dict[str, int] = {}
        for lab, pos in self._label_masks:
            counts[lab] = counts.get(lab, 0) + int(np.count_nonzero(self.available[pos]))
        counts = {k: v for k, v in counts.items() if v}
        return "models: " + ", ".join(f"{lab} for {n} part{'s' if n != 1 else ''}"
                                      for lab, n in sorted(counts.items(), key=lambda x: -x[1]))

    def reverted(self, mask: NDArray[np.bool_], base: ModelSet) -> Chosen:
        """The parts where ``mask`` holds back on their models in ``base`` (their catalog
        models): for a measured curve that does not reach the band, say."""
        pos = np.flatnonzero(mask)
        if not len(pos):
            return self
        sub = base.take(pos)
        models = self.models
        for g in sub.groups:
            models = _replace(models, pos[g.index], g.family.name, g.batch)
        source, origin = self.source.copy(), self.origin.copy()
        source[pos], origin[pos] = "catalog", "catalog columns"
        lo, hi = self.measured_lo.copy(), self.measured_hi.copy()
        lo[pos] = hi[pos] = np.nan
        return Chosen(models, source, origin, self.available, lo, hi)

    def take(self, idx: NDArray[np.intp]) -> Chosen:
        return Chosen(self.models.take(idx), self.source[idx], self.origin[idx],
                      self.available[idx], self.measured_lo[idx], self.measured_hi[idx])


def _replace(models: ModelSet, positions: NDArray[np.intp], fam_name: str,
             batch: Any) -> ModelSet:
    """``models`` with the parts at ``positions`` replaced by the parts of ``batch``."""
    if not len(positions):
        return models
    mask = np.ones(len(models), dtype=bool)
    mask[positions] = False
    keep = np.flatnonzero(mask)
    kept = models.take(keep)
    groups = [Group(g.family, keep[g.index], g.batch) for g in kept.groups]
    groups.append(Group(family(fam_name), positions, batch))
    return ModelSet.merge(len(models), groups)


def choose_models(store: Any, ids: NDArray, base: ModelSet, choice: str = "best", *,
                  only: bool = False, value: NDArray | None = None,
                  tan_delta: NDArray | None = None) -> Chosen:
    """The model of each part (module notes). ``ids`` are the parts' store ids in the order of
    ``base``, their catalog models; ``value`` and ``tan_delta`` (catalog C and loss) let a
    measured curve take a capacitance change the way the catalog model would."""
    from partsel.store.models import stored_models

    check_choice(choice)
    ids = np.asarray(ids, dtype=np.int64)
    n = len(ids)
    source, origin = _filled(n, "catalog"), _filled(n, "catalog columns")
    special = np.zeros(n, dtype=bool)
    models = base
    pref = PREFERENCE[choice]
    ranks = ("fit", "vendor") if "vendor" in pref else ("fit",)
    stored = stored_models(store, ids=ids, sources=ranks) if n else []
    lo, hi = np.full(n, np.nan), np.full(n, np.nan)
    for rank in ranks:
        for grp in stored:
            if grp.source != rank:
                continue
            pos = _positions(ids, grp.part_id)
            fam = family(grp.family)
            batch = fam.unpack(grp.ints, grp.int_offsets, grp.reals, grp.real_offsets)
            if grp.family == "measured":
                # a maker's measured curve answers within its range, like a stored sweep; the
                # catalog model outside it (unless only)
                batch = replace(batch, fallback=tuple(
                    None if only else base.take(np.array([k])) for k in pos))
                lo[pos], hi[pos] = fam.measured_span(batch)
            models = _replace(models, pos, grp.family, batch)
            special[pos] = True
            source[pos] = rank
            origin[pos] = _origins(grp.source_file, grp.subckt, grp.imported_at)
    if "measured" in pref:
        models = _with_curves(store, ids, models, source, origin, (lo, hi), only, value,
                              tan_delta)
        special |= np.isfinite(lo)      # a sweep's range is set where it took the place
    # with only, a part needs a model of the kind chosen (best: a vendor or measured one)
    available = np.isin(source, ["vendor", "measured"]) if only and choice != "catalog" \
        else np.ones(n, dtype=bool)
    return Chosen(models, source, origin, available, lo, hi, special)


def _filled(n: int, text: str) -> NDArray[np.object_]:
    """An object array of ``n`` times ``text`` (np.full is 30x slower for objects)."""
    out = np.empty(n, dtype=object)
    out.fill(text)
    return out


def _origins(files: Sequence[str | None], subckts: Sequence[str | None],
             ats: Sequence[Any]) -> NDArray[np.object_]:
    """:func:`_origin` of many models: joined as whole columns when every file and date is
    there and the subcircuits are all there or all absent (a maker's import), else one by
    one."""
    days: dict[Any, str | None] = {}
    for at in ats:
        if at not in days:
            days[at] = f"{at:%Y-%m-%d}" if hasattr(at, "strftime") else None
    when = np.array([days[at] for at in ats], dtype=object)
    f = np.array(files, dtype=object)
    sub = np.array(subckts, dtype=object)
    has_sub = np.array([x is not None and x != "" for x in subckts], dtype=bool)
    plain = all(x for x in files) and all(w is not None for w in when)
    if plain and has_sub.all():
        return f + ", subcircuit " + sub + ", imported " + when
    if plain and not has_sub.any():
        return f + ", imported " + when
    return np.array([_origin_text(a, b, c) for a, b, c in zip(files, subckts, when,
                                                              strict=True)], dtype=object)


def _positions(ids: NDArray[np.int64], wanted: NDArray[np.int64]) -> NDArray[np.intp]:
    """Where each of ``wanted`` stands in ``ids`` (every one is there; of repeated ids, the
    last)."""
    order = np.argsort(ids, kind="stable")
    at = np.searchsorted(ids[order], np.asarray(wanted, dtype=np.int64), side="right") - 1
    return order[at].astype(np.intp)


def _origin(source_file: str | None, subckt: str | None, at: Any) -> str:
    when = f"{at:%Y-%m-%d}" if hasattr(at, "strftime") else None
    return _origin_text(source_file, subckt, when)


def _origin_text(source_file: str | None, subckt: str | None, when: str | None) -> str:
    parts = [x for x in (source_file, f"subcircuit {subckt}" if subckt else None) if x]
    return ", ".join(parts + ([f"imported {when}"] if when else [])) or "stored model"


def _with_curves(store: Any, ids: NDArray, models: ModelSet, source: NDArray, origin: NDArray,
                 span: tuple[NDArray, NDArray], only: bool, value: NDArray | None,
                 tan_delta: NDArray | None) -> ModelSet:
    """Put each part's newest stored sweep in place of its model (the model as fallback)."""
    from partsel.store.sweeps import latest_sweeps_by_id

    sweeps = latest_sweeps_by_id(store)
    if not sweeps:
        return models
    pos = np.flatnonzero(np.isin(ids, np.fromiter(sweeps, dtype=np.int64, count=len(sweeps))))
    if not len(pos):
        return models
    fam = family("measured")
    curves = [sweeps[int(ids[k])] for k in pos]
    fallback = [None if only else models.take(np.array([k])) for k in pos]
    batch = fam.from_curves([c.f for c in curves], [c.z for c in curves],
                            value=None if value is None else np.asarray(value)[pos],
                            tan_delta=None if tan_delta is None else np.asarray(tan_delta)[pos],
                            fallback=fallback)
    source[pos] = "measured"
    for k, c in zip(pos, curves, strict=True):
        origin[k] = _origin(c.source_file or "a sweep", None, c.imported_at)
        span[0][k], span[1][k] = c.band
    return _replace(models, pos, "measured", batch)
