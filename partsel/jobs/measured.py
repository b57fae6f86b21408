r"""Measured impedance sweeps: store them with their part, fit the part's model to them, and use
them in place of the model.

A sweep is stored in the ``sweeps`` table with the part's maker and part number, the file it came
from, the fixture and the import date. :func:`fit_part` fits the equivalent circuit
(:mod:`partsel.engine.fit`) to the latest sweep and stores the fitted values as the part's model
with provenance "measured fit"; the model it replaces goes to ``model_history``.

A measured curve used in place of the model is the ``measured`` family of the model layer
(:mod:`partsel.engine.models.measured`), chosen per part by
:func:`partsel.jobs.models.choose_models`.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field
from datetime import datetime
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np
from numpy.typing import ArrayLike, NDArray

from partsel.catalog import MODEL_PARAMETERS
from partsel.engine.models.measured import interpolate
from partsel.errors import FileFormatError, ModelError, QueryError
from partsel.io.sweep import MIN_POINTS
from partsel.store import history, sweeps
from partsel.store.db import Store
from partsel.store.sweeps import StoredSweep
from partsel.units import format_quantity

if TYPE_CHECKING:  # the fit needs scipy.optimize (0.3-0.4 s): imported when a fit runs
    from partsel.engine.fit import FitResult

TOUCHSTONE = re.compile(r"\.(s\d+p|ts)\Z", re.IGNORECASE)
CSV_SUFFIXES = (".csv", ".txt", ".tsv")
POOR_FIT_DB = 1.0          # RMS residual above which a fit is flagged as poor [dB]
SHUNT_GROUND_LOOP_HZ = 100e3   # shunt-thru below this may carry a ground-loop error (rule of thumb)
FIT_REASON = "replaced by a measured fit"   # start of the history reason a fit writes
PLAUSIBLE_RATIO = 10.0     # a fitted C or L further than this factor from the stored value
SRF_REACH = 10.0           # a sweep must reach within this factor of the part's catalog SRF


class ImplausibleFit(ModelError):
    """A fit that converged but disagrees with the part's catalog data (likely a unit error)."""


@dataclass(frozen=True)
class SweepImport:
    sweep: StoredSweep
    added: bool                  # False: the same sweep was already stored
    remarks: list[str] = field(default_factory=list)
    dry_run: bool = False        # True: checked only; ``added`` says it would be added


# -- reading sweep files -------------------------------------------------------------------------

def read_sweep_file(path: str | Path, *, fixture: str | None = None, cli: bool = False,
                    **csv_options: str | None) -> tuple[NDArray, NDArray, str | None, str]:
    """Read a Touchstone (.s1p, .s2p, .ts) or CSV sweep: (f, z, fixture, note).

    Touchstone files need the fixture the part was measured in (``reflection``, ``shunt-thru``
    or ``series-thru``; a 1-port file is a reflection measurement); CSV files hold the
    impedance itself and take ``csv_options`` (see :func:`partsel.io.sweep.read_sweep_csv`);
    with ``cli`` their messages name the command's options.
    """
    from partsel.engine.fixture import FIXTURES, impedance_from
    from partsel.io.sweep import read_sweep_csv
    from partsel.io.touchstone import read_touchstone

    p = Path(path)
    if TOUCHSTONE.search(p.name):
        if any(v is not None for v in csv_options.values()):
            raise FileFormatError("column and unit options are for CSV sweeps; a Touchstone file "
                                  "names its own units")
        data = read_touchstone(p)
        if fixture is None:
            if data.n_ports != 1:
                raise FileFormatError(f"{p.name} is a {data.n_ports}-port file: say how the part "
                                      f"was mounted with {_word(cli, '--fixture ', 'fixture=')}"
                                      "reflection, shunt-thru or series-thru")
            fixture = "reflection"
        if fixture not in FIXTURES:
            raise FileFormatError(f"unknown fixture '{fixture}'; choose one of "
                                  + ", ".join(FIXTURES))
        z = impedance_from(data, fixture)  # type: ignore[arg-type]
        note = (f"Touchstone {data.version}, {data.n_ports}-port {data.kind}-parameters, "
                f"{fixture}, Z0 {float(data.z0[0]):g} ohm")
        return data.f, z, fixture, note
    if p.suffix.lower() in CSV_SUFFIXES:
        if fixture is not None:
            raise FileFormatError(f"{_word(cli, '--fixture', 'a fixture')} is for Touchstone "
                                  "files; a CSV sweep holds the impedance itself")
        sweep = read_sweep_csv(p, cli=cli, **csv_options)
        return sweep.f, sweep.z, None, sweep.source
    raise FileFormatError(f"cannot tell the sweep format of {p.name}: use a Touchstone file "
                          "(.s1p, .s2p, .ts) or a CSV file (.csv)")


def _word(cli: bool, option: str, keyword: str) -> str:
    """How a message names a choice: the command's option (``cli``) or the keyword argument."""
    return option if cli else keyword


def _checked(f: ArrayLike, z: ArrayLike, label: str) -> tuple[NDArray, NDArray]:
    fa = np.asarray(f, dtype=float).ravel()
    za = np.asarray(z, dtype=complex).ravel()
    if fa.shape != za.shape:
        raise FileFormatError(f"{label}: {fa.size} frequencies but {za.size} impedances")
    if fa.size < MIN_POINTS:
        raise FileFormatError(f"{label}: {fa.size} points; a sweep needs at least {MIN_POINTS}")
    if not (np.all(np.isfinite(fa)) and fa[0] > 0 and np.all(np.diff(fa) > 0)):
        raise FileFormatError(f"{label}: frequencies must be > 0 and strictly increasing")
    bad = np.flatnonzero(~np.isfinite(za) | (za == 0))
    if bad.size:
        raise FileFormatError(f"{label}: the impedance at {fa[bad[0]]:.6g} Hz is "
                              f"{'zero' if za[bad[0]] == 0 else 'not finite'} (is the fixture "
                              "right? a series-thru S21 of 1 or a shunt-thru S21 of 0 gives "
                              "this); remove the point or check the file")
    return fa, za


# -- storing and loading -------------------------------------------------------------------------

def sweeps_of(store: Store, part_number: str, maker: str | None = None) -> list[StoredSweep]:
    """Every stored sweep of a part, newest first."""
    part = store.find_part(part_number, maker)
    return sweeps.sweeps_of(store, part["maker"], part["part_number"])


def latest_sweep(store: Store, part: dict[str, Any]) -> StoredSweep | None:
    """The newest stored sweep of a part row, or None."""
    return sweeps.latest_sweep(store, part["maker"], part["part_number"])


def store_sweep(store: Store, part_number: str, f: ArrayLike, z: ArrayLike, *,
                maker: str | None = None, source_file: str = "", fixture: str | None = None,
                note: str | None = None, dry_run: bool = False) -> SweepImport:
    """Store a measured sweep with its part (one statement: nothing changes on an error).

    The same curve stored again for the same part is not added twice. With ``dry_run`` every
    check is made and nothing is stored (the sweep returned is dated now).
    """
    part = store.find_part(part_number, maker)
    fa, za = _checked(f, z, source_file or "sweep")
    key = (part["maker"], part["part_number"])
    same = sweeps.same_sweep(store, *key, fa, za, fixture)
    if same is not None:
        return SweepImport(same, added=False, dry_run=dry_run)
    if dry_run:
        stored = StoredSweep(*key, source_file, fixture, datetime.now(), fa, za, note)
    else:
        stored = sweeps.insert_sweep(store, *key, fa, za, source_file=source_file,
                                     fixture=fixture, note=note)
    remarks = []
    negative = int(np.count_nonzero(za.real < 0))
    if negative > fa.size // 4:
        remarks.append(f"{negative} of {fa.size} points have a negative resistance, which a "
                       "passive part cannot have: check the fixture and the calibration")
    return SweepImport(stored, added=True, remarks=remarks, dry_run=dry_run)


def import_sweep(store: Store, path: str | Path, part_number: str, *, maker: str | None = None,
                 fixture: str | None = None, cli: bool = False, dry_run: bool = False,
                 **csv_options: str | None) -> SweepImport:
    """Read a sweep file (:func:`read_sweep_file`) and store it with the part (with
    ``dry_run``: read and check it, store nothing)."""
    if not dry_run:
        store.require_write("store a sweep")
    p = Path(path)
    store.find_part(part_number, maker)  # a wrong part number fails before the file is read
    f, z, fixture, note = read_sweep_file(p, fixture=fixture, cli=cli, **csv_options)
    try:
        dated = datetime.fromtimestamp(p.stat().st_mtime).strftime("%Y-%m-%d %H:%M")
        note = f"{note}; file dated {dated}"
    except OSError:
        pass
    return store_sweep(store, part_number, f, z, maker=maker, source_file=p.name,
                       fixture=fixture, note=note, dry_run=dry_run)


def span_text(lo: float, hi: float) -> str:
    """'1 MHz to 1 GHz'."""
    return f"{format_quantity(lo, 'Hz')} to {format_quantity(hi, 'Hz')}"


# -- fitting ---------------------------------------------------------------------------------

@dataclass
class PartFit:
    """The outcome of fitting a part's model to its sweep."""

    part: dict[str, Any]
    sweep: StoredSweep
    fit: FitResult
    previous: dict[str, Any]         # the model before: param -> value, param_source -> source
    model: dict[str, float | None]   # the fitted model under catalog names, SI units
    saved: bool
    band: tuple[float, float]        # the frequencies fitted
    warnings: list[str] = field(default_factory=list)


def _model_of(part: dict[str, Any]) -> dict[str, Any]:
    out: dict[str, Any] = {}
    for p in MODEL_PARAMETERS:
        out[p] = part.get(p)
        out[f"{p}_source"] = part.get(f"{p}_source")
    return out


def _initial(part: dict[str, Any]) -> dict[str, float] | None:
    """The stored model as a starting point, when it is complete enough to be one."""
    keys = ("value", "esr", "esl") if part["kind"] == "capacitor" else ("value", "dcr", "srf")
    start = {k: float(part[k]) for k in keys if part.get(k) is not None}
    if len(start) < len(keys) or not all(math.isfinite(v) and v > 0 for v in start.values()):
        return None
    if part["kind"] == "inductor" and part.get("rp"):
        start["rp"] = float(part["rp"])
    return start


def _run_fit(kind: str, f: NDArray, z: NDArray, tan_delta: bool, rp: bool,
             initial: dict[str, float] | None) -> FitResult:
    """Fit from the data's own start and, when given, from the stored model; keep the better."""
    from partsel.engine import fit as fitting

    def one(start: dict[str, float] | None) -> FitResult:
        if kind == "capacitor":
            return fitting.fit_capacitor(f, z, tan_delta=tan_delta, initial=start)
        return fitting.fit_inductor(f, z, rp=rp, initial=start)

    best = one(None)
    if initial is not None:
        try:
            other = one(initial)
        except ModelError:
            return best
        if other.success and (not best.success or other.residual_db < best.residual_db):
            best = other
    return best


def fit_part(store: Store, part_number: str, *, maker: str | None = None,
             tan_delta: bool = False, rp: bool = True, band: tuple[float, float] | None = None,
             save: bool = True, keep_anyway: bool = False, cli: bool = False,
             sweep: StoredSweep | None = None) -> PartFit:
    """Fit a part's equivalent circuit to its latest stored sweep; store it unless ``save`` is
    false.

    Capacitor: C, ESR, ESL and, with ``tan_delta``, the dielectric loss term. Inductor: L, DCR,
    C_p (stored as the SRF) and, with ``rp``, the parallel loss R_p. ``band`` limits the fit to
    the sweep's points inside it. The fitted values replace the stored model with provenance
    "measured fit"; the model they replace is kept in ``model_history``. A fit that did not
    converge is refused and changes nothing, and so is one that :func:`fit_doubts` finds
    implausible, unless ``keep_anyway`` (with ``save`` false its doubts become warnings).
    With ``cli``, messages name the command's options instead of keyword arguments. ``sweep``
    fits that sweep instead of the latest stored one (a sweep not stored: ``save`` false).

    Raises
    ------
    ImplausibleFit
        the fitted C or L is more than 10x from the stored value, or the sweep does not reach
        within a decade of the catalog SRF; nothing is stored.
    """
    if save:
        store.require_write("store a fit")
    part = store.find_part(part_number, maker)
    if part["kind"] == "inductor" and tan_delta:
        raise QueryError(f"{_word(cli, '--tan-delta', 'tan_delta')} is for capacitors; an "
                         "inductor's losses are DCR and Rp")
    if sweep is not None and save:
        raise QueryError("a sweep that is not stored cannot give a stored fit: store it first, "
                         "or fit it without saving")
    sweep = sweep or latest_sweep(store, part)
    if sweep is None:
        raise QueryError(f"no measured sweep is stored for {part['part_number']}: import one "
                         "first" + (f" with 'partsel sweep import FILE --part "
                                    f"{part['part_number']}'" if cli else " (import_sweep)"))
    f, z = _fit_points(sweep, band, cli)
    result = _run_fit(part["kind"], f, z, tan_delta, rp, _initial(part))
    model = _fitted_model(part["kind"], result.params)
    doubts = fit_doubts(part, model["value"], (float(f[0]), float(f[-1])))
    warnings = _fit_warnings(result, sweep, f)
    if not save or keep_anyway:
        warnings += [f"implausible fit: {d}" for d in doubts]
    out = PartFit(part, sweep, result, _model_of(part), model, False, (float(f[0]),
                  float(f[-1])), warnings)
    if not save:
        return out
    _refuse_bad_fit(part, sweep, result, [] if keep_anyway else doubts, cli)
    _save_fit(store, out)
    out.saved = True
    return out


def _fit_points(sweep: StoredSweep, band: tuple[float, float] | None,
                cli: bool) -> tuple[NDArray, NDArray]:
    """The sweep's points inside ``band`` (all without one); at least MIN_POINTS of them."""
    f, z = sweep.f, sweep.z
    if band is None:
        return f, z
    keep = (f >= band[0]) & (f <= band[1])
    if keep.sum() < MIN_POINTS:
        raise QueryError(f"the band keeps {int(keep.sum())} of the sweep's points "
                         f"({span_text(*sweep.band)}); a fit needs {MIN_POINTS}: widen "
                         f"{_word(cli, '--band', 'the band')}")
    return f[keep], z[keep]


def _fitted_model(kind: str, prm: dict[str, float]) -> dict[str, float | None]:
    """The fitted parameters under catalog names (an infinite Rp is no Rp)."""
    if kind == "capacitor":
        return {k: prm[k] for k in ("value", "esr", "tan_delta", "esl")}
    return {"value": prm["value"], "dcr": prm["dcr"], "srf": prm["srf"],
            "rp": prm["rp"] if math.isfinite(prm["rp"]) else None}


def _refuse_bad_fit(part: dict[str, Any], sweep: StoredSweep, result: FitResult,
                    doubts: list[str], cli: bool) -> None:
    """Refuse to store a fit that did not converge, or one with doubts."""
    if not result.success:
        raise ModelError(f"the fit of {part['part_number']} did not converge "
                         f"({result.message.rstrip('.')}); the stored model was not changed: "
                         f"try a narrower {_word(cli, '--band', 'band')} to leave out points "
                         "the model cannot follow")
    if doubts:
        where = (f"give {_word(cli, '--freq-unit MHz', 'freq_unit=MHz')} or put the unit in "
                 "the column header, e.g. 'Frequency (MHz)'" if sweep.fixture is None else
                 "see the unit on the Touchstone option line ('# MHz ...')")
        raise ImplausibleFit(f"the fit of {part['part_number']} was not stored: "
                             f"{'; '.join(doubts)}; check the frequency unit of the sweep: "
                             f"{where}; to store this fit anyway add "
                             f"{_word(cli, '--keep-anyway', 'keep_anyway=True')}")


def fit_doubts(part: dict[str, Any], fitted_value: float,
               band: tuple[float, float]) -> list[str]:
    """Why a fitted model does not fit the part's catalog data; empty when it does.

    Two rules of thumb (no published source): a fitted C or L more than ``PLAUSIBLE_RATIO``
    (10x) above or below the stored value is not the same part, and a sweep that ends more
    than a decade below, or starts more than a decade above, the part's catalog SRF (when it
    has one) cannot have seen the part near its resonance. Both are what a frequency column
    read in the wrong unit gives (MHz read as Hz shifts every frequency by 1e6).
    """
    out = []
    sym, unit = ("C", "F") if part["kind"] == "capacitor" else ("L", "H")
    value = part.get("value")
    if value and math.isfinite(fitted_value) and fitted_value > 0:
        ratio = fitted_value / float(value)
        if not 1 / PLAUSIBLE_RATIO <= ratio <= PLAUSIBLE_RATIO:
            out.append(f"the fitted {sym} of {format_quantity(fitted_value, unit)} is "
                       f"{ratio:.3g}x the stored {format_quantity(float(value), unit)} "
                       f"({part.get('value_source') or 'catalog'})")
    srf = part.get("srf")
    if srf and not band[0] / SRF_REACH <= float(srf) <= band[1] * SRF_REACH:
        out.append(f"the sweep ({span_text(*band)}) does not reach within a decade of the catalog "
                   f"SRF {format_quantity(float(srf), 'Hz')}")
    return out


def _fit_warnings(result: FitResult, sweep: StoredSweep, f: NDArray) -> list[str]:
    out = []
    if result.residual_db > POOR_FIT_DB:
        out.append(f"the model departs from the data by {result.residual_db:.2f} dB RMS: the "
                   "equivalent circuit does not describe this part well over the whole band "
                   "(see where it departs; a narrower band can leave those points out)")
    if sweep.fixture == "shunt-thru" and f[0] < SHUNT_GROUND_LOOP_HZ:
        out.append("shunt-thru data below about 100 kHz can carry a ground-loop error of the "
                   "fixture (rule of thumb): low-frequency mOhm values may be off")
    return out


def _save_fit(store: Store, fit: PartFit) -> None:
    part, sweep = fit.part, fit.sweep
    reason = (f"{FIT_REASON} to {sweep.source_file or 'a sweep'} (imported "
              f"{sweep.imported_at:%Y-%m-%d %H:%M}, {fit.fit.n_points} points from "
              f"{span_text(*fit.band)}, residual {fit.fit.residual_db:.3g} dB RMS)")
    model: dict[str, Any] = {}
    for p, v in fit.model.items():
        model[p], model[f"{p}_source"] = v, "measured fit" if v is not None else None
    history.replace_model(store, part["id"], part["maker"], part["part_number"], model, reason,
                          fit.previous)


@dataclass(frozen=True)
class HistoryEntry:
    saved_at: datetime
    reason: str
    model: dict[str, Any]


def model_history(store: Store, part_number: str, maker: str | None = None
                  ) -> list[HistoryEntry]:
    """Earlier models of a part, newest first."""
    part = store.find_part(part_number, maker)
    return [HistoryEntry(*entry) for entry in history.history(store, part["maker"],
                                                              part["part_number"])]


def undo_fit(store: Store, part_number: str, maker: str | None = None) -> dict[str, Any]:
    """Put back the model the last measured fit replaced (it leaves the history; the undone fit
    is kept there as "measured fit undone"). After two fits, two undos go back to the first
    model. Returns the restored model (param -> value, param_source -> source).
    """
    store.require_write("undo a fit")
    part = store.find_part(part_number, maker)
    if not any(part.get(f"{p}_source") == "measured fit" for p in MODEL_PARAMETERS):
        raise QueryError(f"the model of {part['part_number']} is not a measured fit: nothing to "
                         "undo")
    last = history.latest_with_reason(store, part["maker"], part["part_number"], FIT_REASON)
    if last is None:
        raise QueryError(f"no earlier model of {part['part_number']} is kept: nothing to undo")
    rowid, _, restored = last
    history.restore_model(store, part["id"], part["maker"], part["part_number"], rowid, restored,
                          "measured fit undone", _model_of(part))
    return restored


__all__ = ["FIT_REASON", "HistoryEntry", "ImplausibleFit", "PartFit", "StoredSweep", "SweepImport",
           "fit_doubts", "fit_part", "import_sweep", "interpolate", "latest_sweep",
           "model_history", "read_sweep_file", "store_sweep", "sweeps_of", "undo_fit"]
