"""Query strings and bank bodies read into job arguments, the same way the CLI reads its options.

Every field is read by the parser the command uses (same ``what`` text), inside
:func:`reading`, so that a bad field becomes :class:`BadInput` carrying the field's name and the
message of the CLI's ``Error:`` line. Errors the jobs raise later are worded with the command's
option names (:func:`worded`) and pointed at the field their ``params`` name.
"""

from __future__ import annotations

import math
from collections.abc import Iterator, Mapping
from contextlib import contextmanager
from typing import Any

from partsel import units
from partsel.catalog import DEFAULT_LIFECYCLES
from partsel.errors import PartselError, QueryError


class BadInput(Exception):
    """A request the page cannot answer: the CLI's message and the field it is about."""

    def __init__(self, message: str, field: str | None) -> None:
        super().__init__(message)
        self.message, self.field = message, field


# library keyword -> the option a command names it by (cli.app.flag_names of each command)
FIND_FLAGS = {"ripple": "--ripple-current", "value_min": "--value", "value_max": "--value"}
INDUCTIVE_FLAGS = {"target": "--inductive-to", "ripple": "--ripple-current", "samples": "--yield"}
# library keyword -> the query field that sets it
_FIELDS = {"value_min": "value", "value_max": "value", "ripple": "ripple_current",
           "samples": "yield", "builds": "yield",
           "target": "inductive_to", "cases": "case", "dielectrics": "dielectric",
           "technologies": "technology", "makers": "maker", "lifecycles": "lifecycle"}


def worded(exc: PartselError, flags: Mapping[str, str]) -> str:
    """The message as the CLI's ``Error:`` line words it (cli.app.App._report)."""
    return exc.worded({p: flags.get(p, "--" + p.replace("_", "-")) for p in exc.params})


def field_of(exc: PartselError, default: str | None) -> str | None:
    """The query field an error from a job is about: its first keyword, else ``default``."""
    for p in exc.params:
        return _FIELDS.get(p, p)
    return default


@contextmanager
def reading(field: str | None, flags: Mapping[str, str] = {},  # noqa: B006
            query: Mapping[str, Any] | None = None) -> Iterator[None]:
    """Turn a PartselError raised inside into BadInput about ``field``: the error's first
    keyword when it names one, else (given the ``query``) the field whose value the message
    quotes, else ``field``."""
    try:
        yield
    except PartselError as exc:
        where = field_of(exc, field) if exc.params else quoted_field(str(exc), query, field)
        raise BadInput(worded(exc, flags), where) from None


def quoted_field(message: str, query: Mapping[str, Any] | None, default: str | None
                 ) -> str | None:
    """The query field one of whose values (or list items) the message quotes."""
    for key, value in (query or {}).items():
        text = str(value).strip()
        items = [text, *(x.strip() for x in text.split(","))]
        if text and any(x and f"'{x}'" in message for x in items):
            return str(key)
    return default


def _text(q: Mapping[str, Any], key: str) -> str | None:
    v = q.get(key)
    if v is None:
        return None
    v = str(v)
    return v if v.strip() else None


def _list(q: Mapping[str, Any], key: str) -> tuple[str, ...]:
    v = _text(q, key)
    return tuple(x.strip() for x in v.split(",") if x.strip()) if v else ()


def _quantity(q: Mapping[str, Any], key: str, unit: str, flags: Mapping[str, str] = {}  # noqa: B006
              ) -> float | None:
    text = _text(q, key)
    if text is None:
        return None
    with reading(key):
        return units.parse_quantity(text, unit, what=flags.get(key, "--" + key.replace("_", "-")))


def _count(q: Mapping[str, Any], key: str, default: int, low: int = 0) -> int:
    text = _text(q, key)
    if text is None:
        return default
    flag = "'--limit' / '-n'" if key == "limit" else f"'--{key.replace('_', '-')}'"
    try:
        n = int(text.strip())
    except ValueError:
        raise BadInput(f"Invalid value for {flag}: '{text}' is not a whole number", key) from None
    if n < low:
        raise BadInput(f"Invalid value for {flag}: {n} is below the smallest allowed value, "
                       f"{low}", key)
    return n


def _flag(q: Mapping[str, Any], key: str) -> bool:
    return (_text(q, key) or "").strip().lower() in ("1", "true", "on", "yes")


def _q_at(q: Mapping[str, Any], target: float | None, target_option: str) -> Any:
    from partsel.cli.options import parse_q_at
    with reading("min_q"):
        return parse_q_at(_text(q, "min_q"), target, "--min-q", target_option)


def model_of(q: Mapping[str, Any]) -> str:
    return (_text(q, "model") or "best").strip()


def search_from_query(q: Mapping[str, Any]) -> Any:
    """The :class:`partsel.jobs.find.Search` of a search view's query, validated."""
    from partsel.jobs.find import Search

    kind = (_text(q, "kind") or "capacitor").strip().lower()
    if kind not in ("capacitor", "inductor"):
        raise BadInput(f"unknown kind '{kind}': use capacitor or inductor, or a quoted phrase "
                       "such as \"capacitor below 0.5 ohm from 1 to 30 MHz\"", "kind")
    kw: dict[str, Any] = {"kind": kind}
    band = _text(q, "band")
    if band:
        with reading("band"):
            kw["band"] = units.parse_band(band)
    for key, unit in (("below", "ohm"), ("above", "ohm"), ("inductive_to", "Hz"),
                      ("min_voltage", "V"), ("bias", "V"), ("mount_l", "H"), ("current", "A")):
        v = _quantity(q, key, unit)
        if v is not None:
            kw[key] = v
    ripple = _quantity(q, "ripple_current", "A")
    if ripple is not None:
        kw["ripple"] = ripple
    min_q = _q_at(q, _quantity(q, "inductive_to", "Hz"), "--inductive-to")
    if min_q is not None:
        kw["min_q"] = min_q
    for key, name in (("case", "cases"), ("dielectric", "dielectrics"),
                      ("technology", "technologies"), ("maker", "makers")):
        if _list(q, key):
            kw[name] = _list(q, key)
    value = _text(q, "value")
    if value:
        with reading("value"):
            kw["value_min"], kw["value_max"] = units.parse_range(
                value, {"capacitor": "F", "inductor": "H"}[kind])
    life = tuple(x.lower() for x in _list(q, "lifecycle"))
    if life:
        kw["lifecycles"] = life
    if _flag(q, "include_obsolete"):
        kw["lifecycles"] = (*(kw.get("lifecycles") or DEFAULT_LIFECYCLES), "obsolete")
    if _flag(q, "in_stock"):
        kw["in_stock"] = True
    srf_ratio = _text(q, "srf_ratio")
    if srf_ratio:
        with reading("srf_ratio"):
            kw["srf_ratio"] = units.parse_number(srf_ratio, "--srf-ratio")
    kw["model"], kw["model_only"] = model_of(q), _flag(q, "model_only")
    kw["limit"] = _count(q, "limit", 20)
    # the worst case (find --corners --temp --age): the texts as the command line takes them
    kw["corners"] = _flag(q, "corners")
    for key in ("temp", "age"):
        if _text(q, key):
            kw[key] = _text(q, key).strip()
    search = Search(**kw)
    with reading(None, FIND_FLAGS, q):
        search.validate()
    return search


def alternates_from_query(q: Mapping[str, Any]) -> tuple[str, str | None, Any]:
    """(part number, maker, :class:`partsel.jobs.alternates.Criteria`) of a substitutes
    view."""
    from partsel.jobs.alternates import Criteria

    part = _text(q, "part")
    if part is None:
        raise BadInput("Missing argument 'PART'.", "part")
    within = (_text(q, "within") or "6dB").strip()
    with reading("within"):
        within_db = None if within.lower() == "off" else units.parse_db(within, "--within")
    band = esr = value_within = None
    if _text(q, "band"):
        with reading("band"):
            band = units.parse_band(q["band"])
    if _text(q, "esr_window"):
        with reading("esr_window"):
            esr = units.parse_ratio_window(q["esr_window"])
    if _text(q, "value_within"):
        with reading("value_within"):
            value_within = units.parse_percent(q["value_within"], "--value-within")
    crit = Criteria(
        cases=_list(q, "case"), band=band, within_db=within_db, esr_window=esr,
        bias=_quantity(q, "bias", "V"), value_within=value_within,
        working_voltage=_quantity(q, "working_voltage", "V"),
        srf_above=_quantity(q, "srf_above", "Hz"),
        lifecycles=tuple(s.lower() for s in _list(q, "lifecycle")) or DEFAULT_LIFECYCLES,
        in_stock=_flag(q, "in_stock"), explain=_flag(q, "explain"),
        limit=_count(q, "limit", 10), model=model_of(q),
        # the worst case (alternates --corners --temp --age): the texts as the CLI takes them
        corners=_flag(q, "corners"), temp=_stripped(q, "temp"), age=_stripped(q, "age"))
    return part.strip(), _text(q, "maker"), crit


def inductive_from_query(q: Mapping[str, Any]) -> tuple[list[str], Any, tuple[bool, Any, Any]]:
    """(part numbers, :class:`partsel.jobs.inductive.Spec`, (corners, conditions, yield run))
    of an inductor check view: the worst case as ``inductive --corners --temp --yield --seed
    --distribution`` reads it."""
    from partsel.cli.cmd_inductive import worst_case_options
    from partsel.jobs.inductive import Spec

    parts = list(_list(q, "parts"))
    if not parts:
        raise BadInput("Missing argument 'PART...'.", "parts")
    if _text(q, "inductive_to") is None:
        raise BadInput("Missing option '--inductive-to'.", "inductive_to")
    target = _quantity(q, "inductive_to", "Hz")
    q_at = _q_at(q, target, "--inductive-to")
    ratios = {}
    for key, default in (("warn_below", 2.0), ("predictable_at", 10.0), ("current_margin", 1.2)):
        text = _text(q, key)
        ratios[key] = default
        if text is not None:
            try:
                ratios[key] = float(text)
            except ValueError:
                raise BadInput(f"Invalid value for '--{key.replace('_', '-')}': '{text}' is not "
                               "a valid float.", key) from None
    spec = Spec(target=target, current=_quantity(q, "current", "A"),
                ripple=_quantity(q, "ripple_current", "A"), **ratios,
                min_q=q_at[0] if q_at else None,
                min_q_hz=q_at[1] if q_at and q_at[1] != target else None)
    with reading(None, INDUCTIVE_FLAGS, q):
        spec.validate()
    corners, temp = _flag(q, "corners"), _stripped(q, "temp")
    builds, seed = _builds_and_seed(q)
    with reading(None, INDUCTIVE_FLAGS, q):
        cond, ys = worst_case_options(corners, temp, builds, seed,
                                      _stripped(q, "distribution") or "normal")
    return parts, spec, (corners, cond, ys)


def _stripped(q: Mapping[str, Any], key: str) -> str | None:
    text = _text(q, key)
    return text.strip() if text is not None else None


def _builds_and_seed(q: Mapping[str, Any]) -> tuple[int | None, int | None]:
    """The yield run's fields ``yield`` and ``seed``: any whole number (the range is the
    job's to check, as on the command line)."""
    whole = -(2 ** 63)
    return _count(q, "yield", None, whole), _count(q, "seed", None, whole)


def rail_from(q: Mapping[str, Any]) -> Any:
    """The :class:`partsel.jobs.decouple.Rail` of a bank: the CLI's own reading of --rail,
    --target (or --ripple with --step), --band, --mount-l, --worst-case and --margin."""
    from partsel.cli.cmd_decouple import rail_spec, spread_spec

    texts = {k: _text(q, k) for k in ("rail", "target", "ripple", "step", "band", "margin",
                                      "mount_l", "plane", "plane_l", "vrm_r", "vrm_l", "temp",
                                      "age", "distribution")}
    board = ([texts["mount_l"]] if texts["mount_l"] else None, texts["plane"], texts["plane_l"],
             texts["vrm_r"], texts["vrm_l"])
    try:
        rail = rail_spec(texts["rail"], texts["target"], texts["ripple"], texts["step"],
                         texts["band"], board, _flag(q, "worst_case"), texts["margin"])
    except PartselError as exc:
        raise BadInput(worded(exc, {}), _rail_field(str(exc), exc)) from None
    # the spread (decouple --check --corners --temp --age --yield --seed --distribution)
    builds, seed = _builds_and_seed(q)
    spread_texts = {k: texts[k] for k in ("temp", "age", "distribution")}
    with reading(None, {"builds": "--yield"}, spread_texts):
        rail.spread = spread_spec(_flag(q, "corners"), texts["temp"], texts["age"], builds,
                                  seed, texts["distribution"])
    try:
        rail.validate()
    except PartselError as exc:
        if exc.params and exc.params[0] == "builds":
            raise BadInput(worded(exc, {"builds": "--yield"}), "yield") from None
        where = quoted_field(str(exc), spread_texts, None) or _rail_field(str(exc), exc)
        raise BadInput(worded(exc, {}), where) from None
    return rail


def _rail_field(message: str, exc: PartselError) -> str | None:
    """The bank form's field a rail message is about: the first option it names."""
    if exc.params:
        return field_of(exc, None)
    names = ("rail", "target", "ripple", "step", "band", "margin", "mount_l", "plane_l",
             "plane", "vrm_r", "vrm_l")
    at = {n: message.find("--" + n.replace("_", "-")) for n in names}
    named = [n for n in names if at[n] >= 0]
    if named:
        return min(named, key=lambda n: at[n])
    return "band" if "band" in message else "rail"


def bank_lines(lines: Any) -> list[Any]:
    """Bank lines (``[{"part_number", "count", "maker"}]``) as the bank file reader gives
    them: counts whole numbers of 1 or more, a part listed twice summed."""
    from partsel.io.bank import BankEntry

    if not isinstance(lines, list) or not lines:
        raise BadInput("the bank is empty: list at least one part", "lines")
    out: list[BankEntry] = []
    seen: dict[tuple[str, str | None], int] = {}
    for i, line in enumerate(lines):
        if not isinstance(line, dict):
            raise BadInput(f"line {i + 1}: give part_number and count", f"lines.{i}")
        pn = str(line.get("part_number") or "").strip()
        if not pn:
            raise BadInput(f"line {i + 1}: the part number is empty", f"lines.{i}.part_number")
        cnt = line.get("count")
        try:
            value = float(cnt)  # type: ignore[arg-type]
        except (TypeError, ValueError):
            value = math.nan
        if not (math.isfinite(value) and value == int(value) and value >= 1):
            raise BadInput(f"line {i + 1}: count '{cnt}' must be a whole number >= 1",
                           f"lines.{i}.count")
        maker = str(line.get("maker") or "").strip() or None
        key = (pn.lower(), maker.lower() if maker else None)
        if key in seen:
            first = out[seen[key]]
            out[seen[key]] = BankEntry(first.part_number, first.count + int(value), first.maker)
            continue
        seen[key] = len(out)
        out.append(BankEntry(pn, int(value), maker))
    return out


def bank_file_text(entries: list[Any]) -> str:
    """The bank as a bank file (the CSV ``decouple --check`` reads)."""
    import csv
    import io

    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(["part_number", "count", "maker"])
    for e in entries:
        w.writerow([e.part_number, e.count, e.maker or ""])
    return buf.getvalue()


__all__ = ["BadInput", "QueryError", "alternates_from_query", "bank_file_text", "bank_lines",
           "inductive_from_query", "rail_from", "search_from_query", "worded"]
