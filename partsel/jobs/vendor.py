"""Makers' model files into the store: SPICE libraries and Touchstone files (model import).

:func:`import_models` reads a file, a folder of files or a .zip (:mod:`partsel.jobs.
vendor_sources`), matches every subcircuit (by its name) and every Touchstone file (by its
stem) to a stored part (:mod:`partsel.jobs.vendor_match`), checks that each model describes
its part (the right kind of reactance, a low-frequency value within 10x of the catalog's) and
stores the models with source ``vendor``: a subcircuit as family ``netlist`` (analysed once,
its exact band metrics kept in the packed form), a Touchstone file as family ``measured`` (the
maker's measured impedance). Provenance goes with each row: the file (``archive.zip!member``
inside a zip), the subcircuit, the import date, the subcircuit as written (or the Touchstone
header) and a note.

What is left out is reported, never dropped silently: names that match no part, subcircuits
the reader refused (file, line, element, reason), models refused as implausible, Touchstone
files that cannot be read. The whole import is one transaction: a fatal error (a file or zip
that cannot be read, a failure while writing, an interrupt) leaves the store as it was.
``dry_run`` does everything but the write.
"""

from __future__ import annotations

import math
import re
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from partsel.engine.models import family
from partsel.errors import FileFormatError, ModelError, QueryError, StoreError
from partsel.io.spice_lib import Library, SubcktResult, parse_library
from partsel.jobs.vendor_match import Match, compile_pattern, match_names, netlist_doubt
from partsel.jobs.vendor_sources import ArchiveDamaged, Source, Sources, gather
from partsel.store import models as stored
from partsel.store.db import Store

CHUNK = 256               # netlists analysed per call (progress between calls)
REASON = "replaced by a vendor model"


@dataclass(frozen=True)
class Progress:
    """Where an import is: ``stage`` ("reading", "analysing", "storing"), ``done`` of
    ``total`` (files while reading, models while analysing), ``models`` found so far."""

    stage: str
    done: int
    total: int
    models: int


ProgressFn = Callable[[Progress], None]


@dataclass(frozen=True)
class StoredModel:
    """A model stored (or, in a dry run, to be stored) for a part."""

    maker: str
    part_number: str
    kind: str
    family: str
    file: str
    name: str                      # subcircuit name, or the Touchstone file's stem
    subckt: str | None
    how: str                       # how the name was matched
    value: float                   # low-frequency C [F] or L [H] of the model
    replaces: str | None = None    # the vendor model it replaces
    note: str = ""


@dataclass(frozen=True)
class Refusal:
    """A subcircuit or file that was read but not stored, and why."""

    file: str
    name: str
    reason: str
    line: int | None = None
    element: str | None = None
    part_number: str | None = None
    maker: str | None = None

    def text(self) -> str:
        where = f"{self.file}" + (f", line {self.line}" if self.line else "")
        what = f"subcircuit {self.name}" if self.line else self.name
        el = f", {self.element}" if self.element else ""
        part = f" (part {self.part_number})" if self.part_number else ""
        return f"{where}, {what}{el}{part}: {self.reason}"


@dataclass(frozen=True)
class Unmatched:
    file: str
    name: str
    reason: str


@dataclass(frozen=True)
class FileError:
    file: str
    reason: str


@dataclass
class ModelImport:
    """What an import did (or, with ``dry_run``, would do)."""

    path: str
    files: int
    ignored: int
    read: int                       # subcircuits and Touchstone files examined
    stored: list[StoredModel] = field(default_factory=list)
    refused: list[Refusal] = field(default_factory=list)
    unmatched: list[Unmatched] = field(default_factory=list)
    errors: list[FileError] = field(default_factory=list)
    dry_run: bool = False
    written: int = 0
    notes: list[str] = field(default_factory=list)

    def summary(self) -> str:
        def n(count: int, word: str) -> str:
            return f"{count} {word}{'' if count == 1 else 's'}"
        replacing = sum(1 for s in self.stored if s.replaces)
        verb = "would be stored" if self.dry_run else "stored"
        parts = [f"{self.path}: {n(self.files, 'file')}, {n(self.read, 'model')} read",
                 f"{len(self.stored)} {verb} ({replacing} replacing a vendor model)",
                 f"{len(self.refused)} refused", f"{len(self.unmatched)} matching no part"]
        if self.errors:
            parts.append(f"{n(len(self.errors), 'file')} unreadable")
        text = ", ".join(parts)
        return text + ("; nothing was written (dry run)" if self.dry_run else "")


@dataclass
class _Pending:
    """A model read and matched, waiting for its checks."""

    source: Source
    name: str
    subckt: str | None
    match: Match
    order: int
    line: int | None = None
    family: str = ""
    circuit: Any = None             # a netlist's Circuit, until it is analysed
    curve: tuple[Any, Any] | None = None   # a curve's (f, z)
    packed: tuple[Any, Any] | None = None  # the family's storage form (ints, reals)
    value: float = math.nan         # low-frequency C [F] or L [H]
    value_kind: str = ""            # a netlist's: "capacitance", "inductance" or ""
    text: str | None = None
    note: str = ""


def _word(cli: bool, option: str, keyword: str) -> str:
    return option if cli else keyword


def _forced_part(store: Store, part: str, maker: str | None) -> dict[str, Any]:
    row = store.find_part(part, maker)
    return {k: row.get(k) for k in stored.CANDIDATE_COLUMNS}


def _check_options(store: Store, *, part: str | None, maker: str | None,
                   pattern: str | None, pins: Sequence[str] | None,
                   cli: bool) -> tuple[re.Pattern[str] | None, tuple[str, str] | None]:
    if part is not None and pattern is not None:
        raise QueryError(f"a part number ({_word(cli, '--part', 'part')}) and a name pattern "
                         f"({_word(cli, '--match', 'match')}) exclude each other: give one")
    regex = compile_pattern(pattern) if pattern is not None else None
    if maker is not None and not stored.makers_like(store, maker):
        known = stored.all_makers(store)
        raise QueryError(f"no part from maker '{maker}' in the store {store.path}"
                         + (f"; its makers: {', '.join(known)}" if known else ""))
    pin_pair = None
    if pins is not None:
        names = [p.strip() for p in pins if p.strip()]
        if len(names) != 2 or names[0].lower() == names[1].lower():
            raise QueryError(f"pins must name two different pins (driven, reference), e.g. "
                             f"1,2; got {','.join(pins)}")
        pin_pair = (names[0], names[1])
    return regex, pin_pair


def import_models(store: Store, path: str | Path, *, part: str | None = None,
                  subckt: str | None = None, maker: str | None = None,
                  match: str | None = None, pins: Sequence[str] | None = None,
                  ground_is_reference: bool = False, fixture: str | None = None,
                  dry_run: bool = False, progress: ProgressFn | None = None,
                  cli: bool = False) -> ModelImport:
    """Import the models of a maker's files (module notes).

    Parameters
    ----------
    path : a SPICE library (.lib, .mod, .cir, .sub), a Touchstone file (.s1p, .s2p, .ts), a
        folder of them (searched to any depth) or a .zip
    part : attach the one model of ``path`` to this part number (``subckt`` picks it from a
        library of several)
    subckt : import only the subcircuit of this name (any letter case)
    maker : match only this maker's parts (any letter case)
    match : a regular expression with a named group ``part`` (and optionally ``maker``)
        matched against the whole subcircuit name or file stem
    pins : (driven, reference) pin names of multi-pin subcircuits (see
        :func:`partsel.io.spice_lib.read_library`); ``ground_is_reference`` reads node 0
        inside a subcircuit as the reference pin
    fixture : how the parts of 2-port Touchstone files were measured: reflection, shunt-thru
        or series-thru (1-port files are reflections)
    dry_run : read, match and check, write nothing
    progress : called with a :class:`Progress` as files are read and models analysed
    cli : messages name the command's options instead of keyword arguments
    """
    from partsel.jobs.vendor_touchstone import check_fixture

    if not dry_run:
        store.require_write("import models")
    check_fixture(fixture)
    regex, pin_pair = _check_options(store, part=part, maker=maker, pattern=match, pins=pins,
                                     cli=cli)
    forced = _forced_part(store, part, maker) if part is not None else None
    tell = progress or (lambda p: None)
    with gather(path) as sources:
        out = ModelImport(Path(path).name, len(sources.items), sources.ignored, 0,
                          dry_run=dry_run)
        if forced is not None and len(sources.items) != 1:
            raise QueryError(f"a part number given takes one model, but {out.path} holds "
                             f"{len(sources.items)} files: import one file for it")
        pending = _read_all(store, sources, out, tell, forced=forced, subckt=subckt,
                            maker=maker, regex=regex, pins=pin_pair,
                            ground_is_reference=ground_is_reference, fixture=fixture, cli=cli)
        order = {src.label: k for k, src in enumerate(sources.items)}
    _analyse(pending, out, tell)
    kept = _checked(store, pending, out)
    out.refused.sort(key=lambda r: (order.get(r.file, 0), r.line or 0))
    _write(store, kept, out, tell)
    return out


def _read_all(store: Store, sources: Sources, out: ModelImport, tell: ProgressFn, *,
              forced: dict[str, Any] | None, subckt: str | None, maker: str | None,
              regex: re.Pattern[str] | None, pins: tuple[str, str] | None,
              ground_is_reference: bool, fixture: str | None, cli: bool) -> list[_Pending]:
    """Read every library, match every name, read the matched Touchstone files."""
    from partsel.jobs.vendor_touchstone import FixtureNeeded, read_curve

    total = len(sources.items)
    libs: list[tuple[Source, Library]] = []
    done = 0
    for src in sources.items:
        if src.kind != "spice":
            continue
        try:
            libs.append((src, parse_library(src.read(), name=src.label, pins=pins,
                                            ground_is_reference=ground_is_reference)))
        except FileFormatError as exc:
            raise FileFormatError(f"{exc}; nothing was imported") from None
        done += 1
        out.notes += [f"{src.label}: {n}" for n in libs[-1][1].notes]
        tell(Progress("reading", done, total, sum(len(lib.subckts) for _, lib in libs)))
    named: list[tuple[Source, SubcktResult | None]] = [
        (src, r) for src, lib in libs for r in lib.results()]
    named += [(src, None) for src in sources.items if src.kind == "touchstone"]
    if subckt is not None:
        named = _only_subckt(named, subckt, libs)
    if forced is not None and len(named) != 1:
        shown = ", ".join(r.name for _, r in named[:5] if r is not None)
        raise QueryError(f"a part number given takes one model, but {out.path} holds "
                         f"{len(named)} subcircuits ({shown}{', ...' if len(named) > 5 else ''}"
                         f"): pick one with {_word(cli, '--subckt NAME', 'subckt=NAME')}")
    names = [r.name if r is not None else src.stem for src, r in named]
    matches = ([Match(forced, "given part")] if forced is not None else
               match_names(store, names, maker=maker, pattern=regex))
    out.read = len(named)
    text_of = {id(src): lib for src, lib in libs}
    pending: list[_Pending] = []
    for order, ((src, res), name, m) in enumerate(zip(named, names, matches, strict=True)):
        part = m.part
        if res is None:
            done += 1
            if done % 50 == 0 or done == total:
                tell(Progress("reading", done, total, len(pending)))
        if res is not None and not res.ok:
            out.refused.append(Refusal(src.label, name, res.reason or res.refusal or "",
                                       res.refused_line, res.element,
                                       part and part["part_number"], part and part["maker"]))
            continue
        if part is None:
            out.unmatched.append(Unmatched(src.label, name, m.reason))
            continue
        p = _Pending(src, name, res.name if res else None, m, order)
        if res is not None:
            lib = text_of[id(src)]
            p.line, p.family = res.line, "netlist"
            p.circuit = res.circuit
            p.text = lib.text(res.name)
            p.note = "; ".join([*res.notes] + ([f"pins {pins[0]}, {pins[1]}"] if pins else []))
        else:
            try:
                curve = read_curve(src, fixture, cli=cli)
            except (FixtureNeeded, ArchiveDamaged):
                raise
            except FileFormatError as exc:
                out.errors.append(FileError(src.label, _without_label(str(exc), src.label)))
                continue
            p.family, p.curve, p.text, p.note = "measured", (curve.f, curve.z), curve.header, \
                curve.note
        if src.dated is not None:
            p.note = "; ".join(x for x in (p.note, f"file dated {src.dated:%Y-%m-%d %H:%M}") if x)
        pending.append(p)
    return pending


def _without_label(message: str, label: str) -> str:
    """A reader's message without the file name it starts with (the list names the file)."""
    for lead in (f"{label}: ", f"{label} "):
        if message.startswith(lead):
            return message[len(lead):]
    return message


def _only_subckt(named: list[tuple[Source, SubcktResult | None]], subckt: str,
                 libs: list[tuple[Source, Library]]) -> list[tuple[Source, SubcktResult | None]]:
    keep = [(s, r) for s, r in named if r is not None and r.name.lower() == subckt.lower()]
    if not keep:
        import difflib
        every = [r.name for _, lib in libs for r in lib.results()]
        close = difflib.get_close_matches(subckt, every, n=3)
        raise QueryError(f"no subcircuit {subckt} in the {len(libs)} SPICE librar"
                         f"{'y' if len(libs) == 1 else 'ies'} read"
                         + (f" (did you mean {', '.join(close)}?)" if close else ""))
    return keep


def _analyse(pending: list[_Pending], out: ModelImport, tell: ProgressFn) -> None:
    """Analyse the netlists in batches (exact band metrics, low-frequency value); a netlist
    that cannot be analysed is refused alone."""
    fam = family("netlist")
    nets = [p for p in pending if p.family == "netlist"]
    for start in range(0, len(nets), CHUNK):
        chunk = nets[start:start + CHUNK]
        try:
            batches = [(chunk, fam.from_circuits([p.circuit for p in chunk]))]
        except (ModelError, ValueError, ArithmeticError, np.linalg.LinAlgError):
            batches = []
            for p in chunk:
                try:
                    batches.append(([p], fam.from_circuits([p.circuit])))
                except (ModelError, ValueError, ArithmeticError, np.linalg.LinAlgError) as exc:
                    p.family = ""
                    out.refused.append(Refusal(p.source.label, p.name, "the network cannot "
                                               f"be analysed: {exc}", p.line, None,
                                               p.match.part["part_number"],
                                               p.match.part["maker"]))
        for group, batch in batches:
            value, kind, approx = fam.value(batch), fam.value_kind(batch), fam.approx(batch)
            for k, (p, packed) in enumerate(zip(group, fam.pack(batch), strict=True)):
                p.packed, p.value, p.value_kind = packed, float(value[k]), str(kind[k])
                p.circuit = None
                if approx[k]:
                    p.note = "; ".join(x for x in (p.note, "band metrics from a dense grid (the "
                                       "pole-zero factorization did not verify)") if x)
        tell(Progress("analysing", min(start + CHUNK, len(nets)), len(nets), len(pending)))
    pending[:] = [p for p in pending if p.family]


def _checked(store: Store, pending: list[_Pending], out: ModelImport) -> list[_Pending]:
    """The models that describe their parts, one per part (the best-matched, then the first
    in file order); the others refused with the reason."""
    from partsel.jobs.vendor_curves import curve_doubts, curve_packs

    doubts: dict[int, str | None] = {}
    curves = [p for p in pending if p.family == "measured"]
    for p, why in zip(curves, curve_doubts(curves), strict=True):
        doubts[id(p)] = why
    for p in pending:
        if p.family == "netlist":
            doubts[id(p)] = netlist_doubt(p.match.part, p.value, p.value_kind)
    good = []
    for p in pending:
        why = doubts[id(p)]
        if why:
            out.refused.append(Refusal(p.source.label, p.name, why, p.line, None,
                                       p.match.part["part_number"], p.match.part["maker"]))
        else:
            good.append(p)
    rank = {how: i for i, how in enumerate(("given part", "part number", "letter case",
                                            "SPICE-safe form"))}
    best: dict[int, _Pending] = {}
    for p in sorted(good, key=lambda q: (rank.get(q.match.how.split(" (")[0], 9), q.order)):
        pid = int(p.match.part["id"])
        if pid in best:
            first = best[pid]
            what = f"subcircuit {first.name}" if first.subckt else first.name
            out.refused.append(Refusal(p.source.label, p.name, f"part {p.match.part['part_number']}"
                                       f" takes {what} of {first.source.label} in this import",
                                       p.line, None, p.match.part["part_number"],
                                       p.match.part["maker"]))
            continue
        best[pid] = p
    kept = sorted(best.values(), key=lambda q: q.order)
    curve_packs([p for p in kept if p.family == "measured"])
    return kept


def _write(store: Store, kept: list[_Pending], out: ModelImport, tell: ProgressFn) -> None:
    keys = [(p.match.part["maker"], p.match.part["part_number"]) for p in kept]
    before = stored.existing_models(store, keys, "vendor")
    rows = []
    for p, key in zip(kept, keys, strict=True):
        part = p.match.part
        old = before.get(key)
        replaces = None
        if old is not None:
            what = "netlist" if old["family"] == "netlist" else f"{old['family']} model"
            sub = f", subcircuit {old['subckt']}" if old["subckt"] else ""
            replaces = (f"vendor {what} from {old['source_file']}{sub}, imported "
                        f"{old['imported_at']:%Y-%m-%d %H:%M}")
        out.stored.append(StoredModel(part["maker"], part["part_number"], part["kind"],
                                      p.family, p.source.label, p.name, p.subckt, p.match.how,
                                      p.value, replaces, p.note))
        ints, reals = p.packed
        rows.append(stored.ModelRow(part["maker"], part["part_number"], "vendor", p.family,
                                    np.asarray(ints), np.asarray(reals),
                                    source_file=p.source.label, subckt=p.subckt, text=p.text,
                                    note=p.note or None))
    if out.dry_run or not rows:
        return
    tell(Progress("storing", 0, len(rows), len(rows)))
    import duckdb
    try:
        out.written = stored.replace_models(store, rows, reason=f"{REASON} from {out.path}")
    except duckdb.Error as exc:
        first = str(exc).splitlines()[0] if str(exc) else type(exc).__name__
        raise StoreError(f"could not store the models ({first}); the store was left as it "
                         "was") from None
    tell(Progress("storing", len(rows), len(rows), len(rows)))


__all__ = ["FileError", "ModelImport", "Progress", "Refusal", "StoredModel", "Unmatched",
           "import_models"]
