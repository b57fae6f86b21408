"""The JSON row shaping the web API shares with the CLI's ``--format json``.

The shaping lives in :mod:`partsel.glossary`, the same functions the command line uses.
"""

from __future__ import annotations

from partsel.glossary import find_row

__all__ = ["find_row"]
