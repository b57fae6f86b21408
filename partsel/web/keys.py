"""The JSON row shaping the web API shares with the CLI's ``--format json``.

One adapter: the shaping lives in the CLI modules for now and is imported from here only, so that
moving it to a library module changes this file and nothing else in ``partsel.web``.
"""

from __future__ import annotations

from partsel.cli.cmd_find import json_row as find_row

__all__ = ["find_row"]
