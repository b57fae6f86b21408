"""Options shared by several commands, parsed once at the edge, and the old spellings of
renamed options (:func:`renamed`)."""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from typing import Any

import typer
from typer.core import TyperCommand

from partsel import render, units
from partsel.catalog import DEFAULT_LIFECYCLES
from partsel.errors import QueryError

#: the default lifecycle states as the help texts print them
LIFECYCLES_TEXT = ",".join(DEFAULT_LIFECYCLES)


def format_option() -> Any:
    return typer.Option("table", "--format", "-f", metavar="table|json|csv",
                        help="Output: a table for reading, or JSON/CSV with SI numbers.")


def limit_option(default: int = 20) -> Any:
    return typer.Option(default, "--limit", "-n", min=0, metavar="N",
                        help="Rows to show (0 = all).")


def check_format(fmt: str) -> str:
    f = fmt.lower()
    if f not in render.FORMATS:
        raise QueryError(f"unknown --format '{fmt}': use table, json or csv")
    return f


def split_list(values: Sequence[str] | None) -> tuple[str, ...]:
    """Repeatable options that also take comma lists: --case 0402,0603 --case 0805."""
    out: list[str] = []
    for v in values or ():
        out.extend(x.strip() for x in v.split(",") if x.strip())
    return tuple(out)


def quantity(text: str | None, unit: str, option: str) -> float | None:
    if text is None:
        return None
    return units.parse_quantity(text, unit, what=option)


def parse_at(text: str | None, option: str) -> tuple[float, float] | None:
    """'30@10MHz' -> (30.0, 10e6): a figure at a frequency."""
    if text is None:
        return None
    if "@" not in text:
        raise QueryError(f"{option} '{text}' needs a frequency: write e.g. 30@10MHz")
    q, f = text.split("@", 1)
    return units.parse_number(q.strip(), option), units.parse_quantity(f.strip(), "Hz", what=option)


def parse_q_at(text: str | None, target: float | None, option: str,
               target_option: str) -> tuple[float, float] | None:
    """'30@10MHz' -> (30.0, 10e6); a bare '30' is Q at ``target`` (the command's target
    frequency, given with ``target_option``), a plain shorthand."""
    if text is None:
        return None
    if "@" in text:
        return parse_at(text, option)
    if target is None:
        raise QueryError(f"{option} '{text}' needs a frequency: write e.g. {text}@10MHz, or "
                         f"give {target_option} (a bare Q is at that frequency)")
    return units.parse_number(text.strip(), option), target


def emit(rows: list[dict[str, Any]], cols: Sequence[render.Col], fmt: str,
         *, extra_json: dict[str, Any] | None = None,
         json_keys: Callable[[dict[str, Any]], dict[str, Any]] | None = None) -> str:
    """Render rows in the chosen format (the table uses ``cols``)."""
    if fmt == "table":
        return render.table(rows, cols) if rows else "(no parts)"
    shaped = [json_keys(r) if json_keys else r for r in rows]
    if fmt == "json":
        payload: Any = shaped if extra_json is None else {**extra_json, "rows": shaped}
        return render.to_json(payload)
    keys: list[str] = []
    for r in shaped:
        keys.extend(k for k in r if k not in keys)
    return render.to_csv(shaped, keys).rstrip("\n")


def model_option() -> Any:
    return typer.Option("best", "--model", metavar="catalog|vendor|measured|best",
                        help="Which model of each part: its catalog model, its maker's model "
                             "(partsel model import), its measured curve (partsel sweep import),"
                             " or the best it has (measured, else vendor, else catalog).")


def model_only_option() -> Any:
    return typer.Option(False, "--model-only",
                        help="Leave out parts that lack the --model chosen (best: parts with "
                             "neither a vendor model nor a measured curve).")


def points_per_decade_option(default: int, what: str) -> Any:
    return typer.Option(default, "--points-per-decade", min=1, max=10000, metavar="N",
                        help=what)


def dry_run_option(what: str = "Check everything and say what would be written; write "
                               "nothing.") -> Any:
    return typer.Option(False, "--dry-run", help=what)


def temp_option(used_with: str = "--corners", note: str = "") -> Any:
    """--temp T1..T2, the temperature range of the worst case (jobs.corners.Conditions)."""
    return typer.Option(None, "--temp", metavar="T1..T2",
                        help=f"With {used_with}: temperature range, e.g. -40C..85C (default "
                             f"25 degC only){note}.")


def age_option(used_with: str = "--corners") -> Any:
    """--age LIFE, the life after which class II aging is taken (jobs.corners.Conditions)."""
    return typer.Option(None, "--age", metavar="LIFE",
                        help=f"With {used_with}: class II aging after this life, e.g. 10y or "
                             "1000h (default new).")


def maker_option(what: str = "Maker, when several share the part number.") -> Any:
    return typer.Option(None, "--maker", metavar="NAME", help=what)


# -- old spellings --------------------------------------------------------------------------------

DEPRECATION = "partsel: {old} is now {new}; the old spelling will be removed in the next release"


class _Renamed(TyperCommand):
    """A command that still reads the old spellings of its renamed options.

    ``aliases`` maps an old spelling to the tokens that replace it: one option name (the
    option renamed; a value, ``--old=V`` or ``--old V``, goes with it) or several (a flag that
    stands for an option with a value, e.g. ``--measured`` -> ``--model measured``; these go
    after the other options, so that they win as the old flag did). The old spellings are not
    options of the command, so its help never shows them; each one used prints one line to
    standard error, once per run.
    """

    aliases: Mapping[str, tuple[str, ...]] = {}

    def parse_args(self, ctx: Any, args: list[str]) -> list[str]:
        return super().parse_args(ctx, self.respell(args))

    def respell(self, args: list[str]) -> list[str]:
        takes_value = {name for p in self.params if p.param_type_name == "option"
                       and not getattr(p, "is_flag", False) and not getattr(p, "count", False)
                       for name in (*p.opts, *p.secondary_opts)}
        end = args.index("--") if "--" in args else len(args)
        out: list[str] = []
        tail: list[str] = []
        told: set[str] = set()
        i = 0
        while i < end:
            token = args[i]
            name, eq, value = token.partition("=") if token.startswith("--") else (token, "", "")
            new = self.aliases.get(name)
            if new is not None:
                if name not in told:
                    typer.echo(DEPRECATION.format(old=name, new=" ".join(new)), err=True)
                    told.add(name)
                if len(new) > 1:
                    tail.extend(new)
                    i += 1
                    continue
                name = token = new[0] + eq + value
            out.append(token)
            if not eq and name in takes_value and i + 1 < end:
                out.append(args[i + 1])
                i += 1
            i += 1
        return out + tail + args[end:]


def renamed(aliases: Mapping[str, str | tuple[str, ...]]) -> type[TyperCommand]:
    """The command class for ``@app.command(..., cls=renamed({"--to": "--inductive-to"}))``:
    old option spellings kept for one release as hidden, deprecated aliases (see
    :class:`_Renamed`)."""
    table = {old: (new,) if isinstance(new, str) else tuple(new) for old, new in aliases.items()}
    return type("RenamedCommand", (_Renamed,), {"aliases": table})


#: the spellings of --model measured [--model-only] before every command took --model
MEASURED_ALIASES = {"--measured": ("--model", "measured"),
                    "--measured-only": ("--model", "measured", "--model-only")}
