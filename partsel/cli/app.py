"""The typer application, its global options and the error policy.

Every command module (``partsel/cli/cmd_*.py``) imports :data:`app` and registers its commands.
A command module is imported only when its command runs (:data:`COMMANDS` says which module
holds which command, and the line ``partsel --help`` shows for it), so a command pays for the
modules it uses and no more. A command body parses its options, calls one library function
and renders the result; it holds no logic a library user would need.
"""

from __future__ import annotations

import importlib
import os
import sys
from collections.abc import Iterator, MutableMapping
from types import ModuleType
from typing import Any

import typer
from typer.core import TyperGroup

from partsel import __version__, interrupt
from partsel.cli import coercion
from partsel.errors import PartselError


def _exception_modules() -> list[ModuleType]:
    """Where the command-line exceptions live: recent typer releases carry their own copy of
    click (and do not need click); older ones use click itself."""
    for name in ("typer._click.exceptions", "click.exceptions"):
        try:
            return [typer, importlib.import_module(name)]
        except ImportError:
            continue
    return [typer]


_MODULES = _exception_modules()
coercion.install()


def _classes(name: str) -> tuple[type[BaseException], ...]:
    found = {getattr(m, name) for m in _MODULES if isinstance(getattr(m, name, None), type)}
    return tuple(found)


def _short_help(text: str, limit: int) -> str:
    for m in _MODULES[1:]:
        utils = importlib.import_module(m.__name__.rsplit(".", 1)[0] + ".utils")
        return utils.make_default_short_help(text, limit)
    return text


_USAGE = _classes("UsageError")
_CLICK = _classes("ClickException")
_ABORT = _classes("Abort")
_NOARGS = _classes("NoArgsIsHelpError")


# name -> (module in partsel.cli, first paragraph of its help), in the order a user meets
# them (``partsel --help`` lists them so). tests/test_startup.py checks this against the
# commands the modules register.
COMMANDS: dict[str, tuple[str, str]] = {
    "find": ("cmd_find", "Find parts that meet an impedance limit over a band, best first."),
    "show": ("cmd_show", "Show one part: catalog data, model with provenance, SRF, Q and "
                         "ESR/ESL at a few frequencies."),
    "curve": ("cmd_show", "Print |Z| and phase of parts on a log grid, and optionally plot "
                          "them to a file."),
    "alternates": ("cmd_alternates", "Substitutes for a part: same form, fit and function, "
                                     "ranked by how closely |Z| follows the original's."),
    "bom": ("cmd_alternates", "Check a parts list: is every part known, active and in stock, "
                              "and what can replace it."),
    "inductive": ("cmd_inductive", "Check inductors: inductive up to a target frequency, SRF "
                                   "margin, Q and current ratings."),
    "decouple": ("cmd_decouple", "Plan decoupling capacitors that keep a rail below its target "
                                 "impedance over a band."),
    "import": ("cmd_store", "Add or replace parts from a catalog file, all or nothing."),
    "demo": ("cmd_store", "Fill the store with invented demo parts (for trying partsel and for "
                          "benchmarks)."),
    "sweep": ("cmd_data", "Measured impedance sweeps of parts."),
    "fit": ("cmd_data", "Fit a part's equivalent circuit to its latest measured sweep and store "
                        "it as its model."),
    "model": ("cmd_model", "Makers' models of parts (SPICE subcircuits, Touchstone data), "
                           "matched to stored parts."),
    "export": ("cmd_data", "Write models for simulators, or the catalog for sharing."),
    "check": ("cmd_check", "Verify a store: file header, schema version, tables and columns, "
                           "row counts, keys, and that every model and sweep belongs to a "
                           "stored part."),
    "serve": ("cmd_serve", "Serve the local page and its JSON API, the store opened read-only."),
}
ORDER = tuple(COMMANDS)


class _Group(TyperGroup):
    """Maps every error a user can cause to one line 'Error: ...' and a non-zero exit, and
    lists the commands in the order a user meets them."""

    def __init__(self, *args: Any, **kwargs: Any) -> None:
        super().__init__(*args, **kwargs)
        self.commands = _LazyCommands(self.commands)

    def list_commands(self, ctx: Any) -> list[str]:
        names = list(self.commands)  # the keys only: .items() would import every module
        return sorted(names, key=lambda n: (ORDER.index(n) if n in ORDER else len(ORDER), n))

    def format_commands(self, ctx: Any, formatter: Any) -> None:
        """The command list of ``partsel --help`` without importing every command module: a
        command not loaded yet shows its line from :data:`COMMANDS`."""
        names = [n for n in self.list_commands(ctx)
                 if n in COMMANDS or not self.commands.loaded(n).hidden]
        if not names:
            return
        limit = formatter.width - 6 - max(len(n) for n in names)
        rows = []
        for name in names:
            loaded = self.commands.loaded(name)
            rows.append((name, loaded.get_short_help_str(limit) if loaded is not None else
                         _short_help(COMMANDS[name][1], limit)))
        with formatter.section("Commands"):
            formatter.write_dl(rows)

    def main(self, *args: Any, **kwargs: Any) -> Any:
        kwargs["standalone_mode"] = False
        argv = kwargs.get("args", args[0] if args else None)
        if argv is None:
            argv = sys.argv[1:]
        if any("\x00" in str(a) for a in argv):  # no file name nor value can hold one
            _fail("an argument contains a NUL character: remove it", 2)
        moved = _store_first(list(argv))
        if args:
            args = (moved, *args[1:])
        else:
            kwargs["args"] = moved
        interrupt.install()
        FLAGS.clear()
        try:
            rc = super().main(*args, **kwargs)
        except SystemExit:
            raise
        except BaseException as exc:
            if interrupt.interrupted():  # whatever the interrupt turned into on its way up
                _fail(interrupt.message(), 130)
            self._report(exc)
        if interrupt.interrupted():  # typer turns KeyboardInterrupt into exit code 130
            _fail(interrupt.message(), 130)
        interrupt.finished()
        sys.exit(rc if isinstance(rc, int) else 0)

    @staticmethod
    def _report(exc: BaseException) -> None:
        """One 'Error: ...' line for everything a user can cause; anything else is a bug and
        keeps its traceback."""
        if isinstance(exc, PartselError):
            _fail(exc.worded({p: FLAGS.get(p, "--" + p.replace("_", "-")) for p in exc.params}),
                  exc.exit_code)
        if isinstance(exc, _NOARGS):
            typer.echo(exc.ctx.get_help() if exc.ctx else "", err=True)
            sys.exit(2)
        if isinstance(exc, _USAGE):
            hint = ""
            if exc.ctx is not None and exc.ctx.command_path:
                hint = f" (see '{exc.ctx.command_path} --help')"
            _fail(exc.format_message().replace("\n", " ") + hint, 2)
        if isinstance(exc, _CLICK):
            _fail(exc.format_message().replace("\n", " "), exc.exit_code or 1)
        if isinstance(exc, _ABORT):
            _fail("aborted", 1)
        if isinstance(exc, BrokenPipeError):
            sys.stderr.close()
            sys.exit(1)
        if isinstance(exc, KeyboardInterrupt):
            _fail(interrupt.message(), 130)
        damaged = _damaged_store(exc)
        if damaged:
            _fail(damaged, 2)
        raise exc


def written(what: str, path: Any, replaced: bool) -> None:
    """The note after an output file is written, saying when it replaced one."""
    note(f"{what} written to {path}" + (" (it replaced the file that was there)" if replaced
                                         else ""))


# A library keyword named in an error (PartselError.params) -> the option that sets it here;
# by default the keyword with dashes (srf_ratio -> --srf-ratio). A command whose option is
# spelled otherwise says so with flag_names() before it calls the library.
FLAGS: dict[str, str] = {}


def flag_names(**names: str) -> None:
    """Name library keywords as this command's options in its error lines."""
    FLAGS.update(names)


_DAMAGE = ("IOException", "SerializationException")


def _damaged_store(exc: BaseException) -> str | None:
    """The line for a store file that DuckDB cannot read while a command runs (cut short,
    overwritten): its own message names the file."""
    names = {c.__name__ for c in type(exc).__mro__ if "duckdb" in c.__module__}
    if not names & set(_DAMAGE):
        return None
    text = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
    return (f"the store could not be read ({text}): the file is damaged or cut short; see "
            "'partsel check' and restore the store from a copy")


class _LazyCommands(MutableMapping):
    """The group's commands: every name of :data:`COMMANDS` is there, and asking for one
    imports its module (and builds its command) on first use."""

    def __init__(self, built: dict[str, Any]) -> None:
        self._built = dict(built)

    def loaded(self, name: str) -> Any:
        return self._built.get(name)

    def __getitem__(self, name: str) -> Any:
        if name not in self._built and name in COMMANDS:
            importlib.import_module(f"partsel.cli.{COMMANDS[name][0]}")
            fresh = getattr(typer.main.get_command(app), "commands", {})
            # the fresh group's own lazy table: its built commands only (iterating it would
            # import every command module)
            built = fresh._built if isinstance(fresh, _LazyCommands) else fresh
            for new, command in built.items():
                self._built.setdefault(new, command)
        return self._built[name]

    def __setitem__(self, name: str, command: Any) -> None:
        self._built[name] = command

    def __delitem__(self, name: str) -> None:
        del self._built[name]

    def __iter__(self) -> Iterator[str]:
        return iter(dict.fromkeys([*COMMANDS, *self._built]))

    def __len__(self) -> int:
        return len(set(COMMANDS) | set(self._built))


def _store_first(argv: list[str]) -> list[str]:
    """Let --store stand anywhere: it is a global option, so move it before the command
    (``partsel find ... --store x`` works like ``partsel --store x find ...``). No command has
    an option of that name, and everything after ``--`` is left alone."""
    end = argv.index("--") if "--" in argv else len(argv)
    out, head = [], []
    i = 0
    while i < end:
        a = argv[i]
        if a == "--store" and i + 1 < end:
            head += argv[i:i + 2]
            i += 2
            continue
        if a.startswith("--store="):
            head.append(a)
        else:
            out.append(a)
        i += 1
    return head + out + argv[end:]


def _fail(message: str, code: int) -> None:
    interrupt.finished()  # one line, whatever Ctrl-C comes now
    first = message.strip().splitlines()[0] if message.strip() else "failed"
    typer.echo(f"Error: {first}", err=True)
    sys.exit(code)


app = typer.Typer(
    cls=_Group,
    name="partsel",
    help="Choose capacitors and inductors by how they behave across frequency.\n\n"
         "Example: partsel find capacitor --below 0.5ohm --band 1MHz..30MHz",
    no_args_is_help=True,
    add_completion=False,
    pretty_exceptions_enable=False,
    rich_markup_mode=None,
    context_settings={"help_option_names": ["-h", "--help"], "max_content_width": 100},
)


def _version(value: bool) -> None:
    if value:
        typer.echo(f"partsel {__version__}")
        raise typer.Exit()


@app.callback()
def _main(
    ctx: typer.Context,
    store: str = typer.Option(None, "--store", metavar="PATH",
                              help="Store file (DuckDB). Default: $PARTSEL_STORE, else a "
                                   "per-user store filled with the demo catalog on first use."),
    version: bool = typer.Option(False, "--version", callback=_version, is_eager=True,
                                 help="Show the version and exit."),
) -> None:
    ctx.obj = {"store": store}


def open_store_for(ctx: typer.Context, *, write: bool = False, create: bool | None = None):
    """Open the store named by --store / $PARTSEL_STORE / the default; print first-use notices."""
    from partsel.jobs.default_store import open_store
    path = (ctx.find_root().obj or {}).get("store")
    store = open_store(path, write=write, create=create)
    for notice in store.notices:
        typer.echo(f"partsel: {notice}", err=True)
    return store


def echo(text: str) -> None:
    typer.echo(text)


def note(text: str) -> None:
    """A remark for a person: to stderr, so that JSON/CSV on stdout stay machine-readable."""
    typer.echo(text, err=True)


def is_terminal() -> bool:
    return sys.stderr.isatty() and not os.environ.get("CI")
