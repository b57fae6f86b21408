"""Plain conversion of option values (str, int, float, bool, Path, lists of them) for typer
releases that convert every value through a pydantic adapter.

Building those adapters imports pydantic, about a fifth of a second for every command run,
to turn strings into strings and integers. :func:`install` gives each such parameter
a converter of its own with the same results and the same kind of error
(a usage error naming the option); parameters of any other kind, and typer releases without
such adapters, keep typer's own conversion. tests/test_startup.py compares the two.
"""

from __future__ import annotations

import math
from pathlib import Path
from typing import Any, get_args, get_origin

_SIMPLE = (str, int, float, bool, Path)
# The words a boolean value may be given as (as click reads them).
_TRUE = {"1", "true", "t", "yes", "y", "on"}
_FALSE = {"0", "false", "f", "no", "n", "off"}


def _leaf(annotation: Any) -> type | None:
    """The plain type of an annotation (``X``, ``X | None``, ``list[X]``), else None."""
    if annotation in _SIMPLE:
        return annotation
    args = [a for a in get_args(annotation) if a is not type(None)]
    if get_origin(annotation) is list and len(args) == 1 and args[0] in _SIMPLE:
        return args[0]
    if len(args) == 1 and args[0] in _SIMPLE and type(None) in get_args(annotation):
        return args[0]
    return None


def _plain_info(info: Any) -> bool:
    """Whether the option asks for nothing beyond the plain type (ranges are fine)."""
    if getattr(info, "parser", None) is not None or getattr(info, "clamp", False):
        return False
    if getattr(info, "click_type", None) is not None:
        return False
    for flag in ("exists", "resolve_path", "allow_dash"):
        if getattr(info, flag, False):
            return False
    for flag in ("file_okay", "dir_okay", "readable"):
        if getattr(info, flag, True) is not True:
            return False
    return not getattr(info, "writable", False)


def _convert(kind: type, value: Any, info: Any) -> Any:
    """One value to ``kind``; ValueError with a one-line reason."""
    if kind is str:
        if isinstance(value, bytes):
            return value.decode("utf-8", "replace")
        return str(value)
    if kind is Path:
        return value if isinstance(value, Path) else Path(str(value))
    if kind is bool:
        word = str(value).strip().lower()
        if isinstance(value, bool) or word in _TRUE | _FALSE:
            return value if isinstance(value, bool) else word in _TRUE
        raise ValueError(f"'{value}' is not true or false")
    if isinstance(value, bool):
        raise ValueError(f"{value!r} is not a number")
    if kind is int:
        if isinstance(value, int):
            number: Any = value
        else:
            text = str(value).strip()
            try:
                number = int(text)
            except ValueError:
                raise ValueError(f"'{value}' is not a whole number") from None
    else:
        try:
            number = float(value)
        except (TypeError, ValueError):
            raise ValueError(f"'{value}' is not a number") from None
    lo, hi = getattr(info, "min", None), getattr(info, "max", None)
    if lo is not None and (number < lo or (kind is float and math.isnan(number))):
        raise ValueError(f"{value} is below the smallest allowed value, {lo}")
    if hi is not None and number > hi:
        raise ValueError(f"{value} is above the largest allowed value, {hi}")
    return number


def _runtime(descriptor: Any) -> Any:
    """A typer RuntimeParam converting plainly, or None to keep typer's own."""
    try:
        from typer._click.exceptions import BadParameter
        from typer._coercion import RuntimeParam
    except ImportError:
        return None
    kind = _leaf(descriptor.annotation)
    if kind is None or getattr(descriptor, "file_annotation", None) is not None:
        return None
    info = descriptor.parameter_info
    if not _plain_info(info):
        return None
    many = get_origin(descriptor.annotation) is list

    class Plain(RuntimeParam):
        def _coerce_value(self, value: Any, param: Any, ctx: Any) -> Any:
            try:
                if many:
                    items = value if isinstance(value, (list, tuple)) else [value]
                    return [_convert(kind, v, info) for v in items]
                return _convert(kind, value, info)
            except ValueError as exc:
                raise BadParameter(str(exc), ctx=ctx, param=param) from None

    return Plain(parameter_info=info, annotation=descriptor.annotation)


def install() -> None:
    """Make typer build plain conversions for plain parameters (its own for the rest). Does
    nothing on typer releases without runtime adapters."""
    try:
        import typer.core as core
    except ImportError:
        return
    original = getattr(core, "build_runtime_param", None)
    if original is None or getattr(original, "plain", False):
        return

    def build(descriptor: Any) -> Any:
        return _runtime(descriptor) or original(descriptor)

    build.plain = True  # type: ignore[attr-defined]
    core.build_runtime_param = build
