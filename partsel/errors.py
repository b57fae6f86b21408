"""One exception tree for everything a user can get wrong.

The CLI maps every :class:`PartselError` to one line ``Error: <message>`` and a non-zero exit
code. Messages say what was wrong and how to fix it; they never carry a traceback.
"""

from __future__ import annotations


class PartselError(Exception):
    """Base class of every error partsel reports to a user.

    A message names a setting by its library keyword (``srf_ratio``, ``band``) and lists those
    words in ``params``; the command line shows them as its own option names (:meth:`worded`),
    so a library user never reads a flag and a CLI user never reads a keyword.
    """

    exit_code = 2

    def __init__(self, *args: object, params: tuple[str, ...] = ()) -> None:
        super().__init__(*args)
        self.params = tuple(params)

    def worded(self, names: dict[str, str]) -> str:
        """The message with each of its ``params`` renamed as ``names`` says."""
        import re

        text = str(self)
        for p in self.params:
            if p in names:
                text = re.sub(rf"(?<![\w-]){re.escape(p)}(?![\w-])", names[p], text)
        return text


class UnitError(PartselError, ValueError):
    """A quantity, range, tolerance or band that cannot be read."""


class CatalogError(PartselError):
    """A catalog file (or one of its rows or cells) that cannot be imported."""


class StoreError(PartselError):
    """A store path that is not a partsel store, or a store that cannot be opened."""


class PartNotFound(PartselError):
    """A part number that the store does not hold."""


class ModelError(PartselError, ValueError):
    """Model parameters that make no physical sense (negative L, zero C, ...)."""


class FileFormatError(PartselError):
    """A measured sweep, Touchstone, mapping or parts-list file that cannot be read."""


class QueryError(PartselError):
    """A search, check or plan whose options contradict each other or cannot be met."""
