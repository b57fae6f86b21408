"""Models out: SPICE subcircuits, Touchstone files of the modeled curve, the catalog as Parquet.

Every file says where its numbers came from: the SPICE header lists each value with its
provenance (datasheet, measured fit, estimated by rule), the Touchstone comments carry the model,
and the Parquet file holds the ``<param>_source`` columns, so that ``partsel import`` of it gives
back the same parts.
"""

from __future__ import annotations

import json
import os
import tempfile
from collections.abc import Sequence
from datetime import datetime
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np

from partsel import __version__
from partsel.catalog import COLUMNS, MODEL_PARAMETERS, NAMES, PROVENANCES
from partsel.engine.fixture import FIXTURES, s_parameters
from partsel.engine.models import lcp
from partsel.errors import ModelError, QueryError, StoreError
from partsel.io.spice import capacitor_subckt, circuit_subckt, inductor_subckt, spice_name
from partsel.io.touchstone import write_touchstone
from partsel.jobs.measured import FIT_REASON
from partsel.jobs.models import choose_for_rows
from partsel.jobs.show import log_grid
from partsel.standards import safety
from partsel.store import history
from partsel.store.db import Store
from partsel.store.parts import catalog_rows
from partsel.units import format_quantity

if TYPE_CHECKING:  # pandas (0.3-0.5 s with pyarrow) only for the Parquet catalog
    import pandas as pd


def writable_path(path: Path) -> Path:
    """``path`` (user folder expanded) if a file can be written there: not a folder, in a
    folder that exists."""
    path = path.expanduser()
    if path.is_dir():
        raise StoreError(f"{path} is a folder: give a file name")
    folder = path.parent if str(path.parent) else Path(".")
    if not folder.is_dir():
        raise StoreError(f"no folder {folder} for {path.name}: create it first")
    return path


def write_atomic(path: Path, data: str | bytes) -> Path:
    """Write a file whole or not at all (a temporary file in the same folder, then a rename)."""
    path = writable_path(path)
    folder = path.parent if str(path.parent) else Path(".")
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", dir=folder)
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data.encode("utf-8") if isinstance(data, str) else data)
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return path


# -- SPICE -------------------------------------------------------------------------------------

def _fit_note(store: Store, part: dict[str, Any]) -> str | None:
    """'measured fit to FILE (...)': how the part's model was last fitted, if it was."""
    last = history.latest_with_reason(store, part["maker"], part["part_number"], FIT_REASON)
    return last[1].removeprefix("replaced by a ") if last else None


def _provenance(part: dict[str, Any]) -> dict[str, str]:
    return {p: part[f"{p}_source"] for p in MODEL_PARAMETERS
            if part.get(p) is not None and part.get(f"{p}_source") in PROVENANCES}


def _chosen_subckt(part: dict[str, Any], chosen: Any, head: list[str],
                   f_ref: float | None) -> str:
    """The subcircuit of a part whose chosen model is not its catalog R-L-C or L-C-R: the exact
    network of a lumped model (a maker's netlist, a ladder), or, for an R-L-C with a skin-effect
    term, the resistance evaluated at f_ref (exact there only, as for tan delta)."""
    pn = part["part_number"]
    m = chosen.models
    label, origin = chosen.labels()[0], chosen.origin[0]
    head = [f"* model: {label} ({origin})", *head]
    circuit = m.circuit(0)
    if circuit is not None:
        return circuit_subckt(pn, circuit, [f"partsel {label} model", f"part number: {pn}",
                                            *(h.lstrip("* ") for h in head)])
    g = m.groups[0]
    if g.family.name == "rlc-skin":
        b = g.batch
        c, lser = float(b["value"][0]), float(b["esl"][0])
        fr = f_ref if f_ref is not None else (1 / (2 * np.pi * np.sqrt(lser * c))
                                              if lser > 0 else 1e3)
        esr = float(b["esr"][0]) + float(b["k_skin"][0]) * np.sqrt(fr)
        text = capacitor_subckt(pn, c, esr, lser, float(b["tan_delta"][0]), f_ref=fr)
        head.append(f"* ESR includes the skin-effect term k_skin sqrt(f) at f_ref = {fr:.6g} "
                    "Hz: exact there only")
        first, second, rest = text.split("\n", 2)
        return "\n".join([first, second, *head, rest])
    raise ModelError(f"{pn} uses a {label} ({origin}), which has no SPICE form: export it as "
                     "Touchstone, fit a closed-form family to it, or export the catalog model")


def spice_subckt(store: Store, part: dict[str, Any], f_ref: float | None = None,
                 model: str = "best") -> str:
    """The SPICE subcircuit of one stored part, with a header of where each value came from;
    ``model`` chooses which of its models (see :func:`partsel.jobs.models.choose_models`)."""
    pn = part["part_number"]
    if part.get("value") is None:
        raise ModelError(f"{pn} has no value in the store; a SPICE model needs it")
    head = [f"* maker: {' '.join(str(part['maker']).split())}"]
    if safety.needs_caution(part.get("safety_class"), part.get("rated_voltage")):
        head.append(f"* {safety.caution_text()}")
    chosen = choose_for_rows(store, [part], model)
    if chosen.source[0] == "measured" and model == "best":
        # a curve has no SPICE form: the best model that has one (vendor, else catalog)
        head.append(f"* its measured curve ({chosen.origin[0]}) has no SPICE form: the next "
                    "best model is written")
        chosen = choose_for_rows(store, [part], "vendor")
    if chosen.source[0] != "catalog":
        return _chosen_subckt(part, chosen, head, f_ref)
    fit = _fit_note(store, part)
    if fit and any(v == "measured fit" for v in _provenance(part).values()):
        head.append(f"* {fit}")
    if part["kind"] == "capacitor":
        for p in ("esr", "esl"):
            if part.get(p) is None:
                head.append(f"* {p.upper()} is not in the store: left out (0)")
        text = capacitor_subckt(pn, part["value"], part.get("esr") or 0.0,
                                part.get("esl") or 0.0, part.get("tan_delta") or 0.0,
                                f_ref=f_ref, provenance=_provenance(part))
    else:
        if part.get("srf") is None:
            head.append("* SRF is not in the store: no winding capacitance (Cp left out)")
        cp = float(lcp.winding_capacitance(part["value"], part.get("srf") or np.nan))
        text = inductor_subckt(pn, part["value"], part.get("dcr") or 0.0, cp, part.get("rp"),
                               provenance=_provenance(part))
    first, second, rest = text.split("\n", 2)
    return "\n".join([first, second, *head, rest])


def spice_cautions(store: Store, part_numbers: Sequence[str], *,
                   maker: str | None = None) -> list[str]:
    """The caution (:func:`partsel.standards.safety.caution_text`) naming the parts that need it:
    a safety class, or a rated voltage above the hazardous limit; empty when none does."""
    pns = []
    for pn in part_numbers:
        row = store.find_part(pn, maker)
        if (safety.needs_caution(row.get("safety_class"), row.get("rated_voltage"))
                and row["part_number"] not in pns):
            pns.append(row["part_number"])
    return [f"{safety.caution_text()} (parts: {', '.join(pns)})"] if pns else []


def spice_library(store: Store, part_numbers: Sequence[str], *, maker: str | None = None,
                  f_ref: float | None = None, model: str = "best") -> str:
    """SPICE subcircuits of several parts in one text, each named after its part number."""
    rows: list[dict[str, Any]] = []
    for pn in part_numbers:
        row = store.find_part(pn, maker)
        if all(r["id"] != row["id"] for r in rows):
            rows.append(row)
    names: dict[str, str] = {}
    for r in rows:
        key = spice_name(r["part_number"]).lower()
        if key in names:
            raise QueryError(f"{names[key]} and {r['part_number']} give the same SPICE name "
                             f"{spice_name(r['part_number'])} (SPICE ignores case); export them "
                             "to separate files")
        names[key] = r["part_number"]
    head = [f"* partsel {__version__}: SPICE models of {len(rows)} part"
            f"{'s' if len(rows) != 1 else ''}, written {datetime.now():%Y-%m-%d %H:%M}",
            "* Each .SUBCKT connects pins 1 and 2; values in SI units (F, H, ohm). The value",
            "* lines say where each number came from: datasheet, measured fit or estimated",
            "* by rule.", ""]
    return "\n".join(head) + "\n".join(spice_subckt(store, r, f_ref, model) for r in rows)


# -- Touchstone --------------------------------------------------------------------------------

def touchstone_text(store: Store, part_number: str, band: tuple[float, float], *,
                    per_decade: int = 50, fixture: str = "reflection", z0: float = 50.0,
                    fmt: str = "RI", maker: str | None = None,
                    out_name: str | None = None, model: str = "best") -> str:
    """A Touchstone 1.1 file of the part's modeled impedance over ``band`` (log grid).

    ``reflection`` gives a 1-port (.s1p); ``shunt-thru`` and ``series-thru`` a 2-port (.s2p) of
    the part between two ``z0`` ports. ``out_name``, when given, must carry the matching
    extension, so that the file reads back with the right port count.
    """
    if fixture not in FIXTURES:
        raise QueryError(f"unknown fixture '{fixture}'; choose one of " + ", ".join(FIXTURES))
    if per_decade < 1:
        raise QueryError("the points per decade must be at least 1")
    suffix = ".s1p" if fixture == "reflection" else ".s2p"
    if out_name is not None and not out_name.lower().endswith(suffix):
        raise QueryError(f"a {fixture} file has {1 if suffix == '.s1p' else 2} port"
                         f"{'s' if suffix == '.s2p' else ''}: name it *{suffix}")
    part = store.find_part(part_number, maker)
    if part.get("value") is None:
        raise ModelError(f"{part['part_number']} has no value in the store; it has no model")
    f = log_grid(band[0], band[1], per_decade)
    chosen = choose_for_rows(store, [part], model)
    z = chosen.models.impedance(f)[0]
    if not np.all(np.isfinite(z)):
        lo, hi = chosen.models.span()
        raise QueryError(f"{part['part_number']}'s {chosen.labels()[0]} covers "
                         f"{format_quantity(lo[0], 'Hz')} to {format_quantity(hi[0], 'Hz')} "
                         "only: give a band inside it")
    unit = {"capacitor": "F", "inductor": "H"}[part["kind"]]
    model = []
    for p in MODEL_PARAMETERS:
        v = part.get(p)
        if v is not None:
            u = unit if p == "value" else {"esr": "ohm", "esl": "H", "dcr": "ohm", "srf": "Hz",
                                           "rp": "ohm", "tan_delta": ""}[p]
            shown = format_quantity(float(v), u, 6) if u else f"{float(v):.6g}"
            model.append(f"{p} = {shown} ({part.get(p + '_source') or 'not stated'})")
    where = {"reflection": "1-port reflection: the part from port 1 to ground",
             "shunt-thru": "2-port shunt-thru: the part from the line to ground between the "
                           "ports",
             "series-thru": "2-port series-thru: the part in series between the ports"}[fixture]
    if chosen.source[0] != "catalog":
        model = [f"{chosen.labels()[0]} ({chosen.origin[0]})"]
    comments = [f"partsel {__version__}: modeled impedance of {part['part_number']} "
                f"({part['maker']}, {part['kind']})",
                f"written {datetime.now():%Y-%m-%d %H:%M}; a model, not a measurement",
                "model: " + "; ".join(model), f"fixture: {where}, Z0 = {z0:g} ohm"]
    s = s_parameters(z, fixture, z0)  # type: ignore[arg-type]
    return write_touchstone(f, s, z0=z0, fmt=fmt, comments=comments)


# -- Parquet -------------------------------------------------------------------------------------

def _extra_text(v: Any) -> str:
    if isinstance(v, float):
        return repr(v)
    return v if isinstance(v, str) else json.dumps(v)


def catalog_frame(store: Store) -> pd.DataFrame:
    """The whole catalog in the import format: catalog columns (SI values), the
    ``<param>_source`` columns, then extra columns (as text), sorted by maker and part number."""
    import pandas as pd

    df = catalog_rows(store, list(NAMES) + [p + "_source" for p in MODEL_PARAMETERS])
    for c in COLUMNS:
        if c.sql_type in ("INTEGER", "BIGINT"):
            df[c.name] = df[c.name].astype("Int64")
        elif c.sql_type == "DOUBLE":
            df[c.name] = df[c.name].astype(float)
        else:
            df[c.name] = df[c.name].astype(object).where(df[c.name].notna(), None)
    extra = df.pop("extra")
    present = extra.notna().to_numpy()
    if present.any():
        decoded = {t: json.loads(t) for t in pd.unique(extra[present])}
        records = [decoded[t] if ok else {} for t, ok in zip(extra, present, strict=True)]
        wide = pd.DataFrame.from_records(records, index=df.index)
        for name in wide.columns:
            col = wide[name]
            df[name] = col.map(_extra_text, na_action="ignore").astype(object).where(
                col.notna(), None)
    return df


def write_parquet(store: Store, path: Path, dry_run: bool = False) -> tuple[int, Path]:
    """Write the whole catalog as Parquet (see :func:`catalog_frame`); returns (parts, path).
    With ``dry_run`` the file is built and the path checked, and nothing is written."""
    import pyarrow as pa
    import pyarrow.parquet as pq

    if path.suffix.lower() not in (".parquet", ".pq"):
        raise QueryError(f"name the file *.parquet (not {path.name}) so that 'partsel import' "
                         "reads it back")
    df = catalog_frame(store)
    table = pa.Table.from_pandas(df, preserve_index=False)
    info = {"written_by": f"partsel {__version__}", "written_at": datetime.now().isoformat(),
            "parts": len(df), "units": "SI base units (F, H, ohm, V, A, Hz, m, degC)"}
    table = table.replace_schema_metadata({**(table.schema.metadata or {}),
                                           b"partsel": json.dumps(info).encode()})
    sink = pa.BufferOutputStream()
    pq.write_table(table, sink, compression="zstd")
    if dry_run:
        return len(df), writable_path(path)
    return len(df), write_atomic(path, sink.getvalue().to_pybytes())
