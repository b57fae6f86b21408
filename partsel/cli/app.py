"""The typer application, its global options and the error policy.

Every command module (``partsel/cli/cmd_*.py``) imports :data:`app` and registers its commands;
:mod:`partsel.cli` imports them all. A command body parses its options, calls one library
function and renders the result; it holds no logic a library user would need.
"""

from __future__ import annotations

import importlib
import os
import sys
from types import ModuleType
from typing import Any

import typer
from typer.core import TyperGroup

from partsel import __version__
from partsel.errors import PartselError


def _exception_modules() -> list[ModuleType]:
    """Where the command-line exceptions live: recent typer releases carry their own copy of
    click (and do not install click); older ones use click itself."""
    found: list[ModuleType] = [typer]
    for name in ("typer._click.exceptions", "click.exceptions"):
        try:
            found.append(importlib.import_module(name))
        except ImportError:
            continue
    return found


_MODULES = _exception_modules()


def _classes(name: str) -> tuple[type[BaseException], ...]:
    found = {getattr(m, name) for m in _MODULES if isinstance(getattr(m, name, None), type)}
    return tuple(found)


_USAGE = _classes("UsageError")
_CLICK = _classes("ClickException")
_ABORT = _classes("Abort")
_NOARGS = _classes("NoArgsIsHelpError")


ORDER = ("find", "show", "curve", "alternates", "bom", "inductive", "decouple", "import",
         "demo", "sweep", "fit", "model", "export")


class _Group(TyperGroup):
    """Maps every error a user can cause to one line 'Error: ...' and a non-zero exit, and
    lists the commands in the order a user meets them."""

    def list_commands(self, ctx: Any) -> list[str]:
        names = super().list_commands(ctx)
        return sorted(names, key=lambda n: (ORDER.index(n) if n in ORDER else len(ORDER), n))

    def main(self, *args: Any, **kwargs: Any) -> Any:
        kwargs["standalone_mode"] = False
        argv = kwargs.get("args", args[0] if args else None)
        if argv is None:
            argv = sys.argv[1:]
        moved = _store_first(list(argv))
        if args:
            args = (moved, *args[1:])
        else:
            kwargs["args"] = moved
        try:
            rc = super().main(*args, **kwargs)
        except PartselError as exc:
            _fail(str(exc), exc.exit_code)
        except _NOARGS as exc:
            typer.echo(exc.ctx.get_help() if exc.ctx else "", err=True)
            sys.exit(2)
        except _USAGE as exc:
            hint = ""
            if exc.ctx is not None and exc.ctx.command_path:
                hint = f" (see '{exc.ctx.command_path} --help')"
            _fail(exc.format_message().replace("\n", " ") + hint, 2)
        except _CLICK as exc:
            _fail(exc.format_message().replace("\n", " "), exc.exit_code or 1)
        except _ABORT:
            _fail("aborted", 1)
        except BrokenPipeError:
            sys.stderr.close()
            sys.exit(1)
        except KeyboardInterrupt:
            _fail("interrupted", 130)
        sys.exit(rc if isinstance(rc, int) else 0)


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
