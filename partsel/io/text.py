"""Reading a text file a user names, with one message for each way it can fail."""

from __future__ import annotations

from pathlib import Path

from partsel.errors import FileFormatError


def read_text(path: str | Path, what: str, fix: str = "") -> str:
    """The UTF-8 text of ``path`` (a byte-order mark dropped).

    ``what`` names the file in messages ("parts list", "mapping"); ``fix`` says what a
    missing file should hold. Every failure is a :class:`FileFormatError`.
    """
    p = Path(path)
    if p.is_dir():
        raise FileFormatError(f"{p} is a folder: give a {what} file")
    try:
        return p.read_text(encoding="utf-8-sig")
    except FileNotFoundError:
        raise FileFormatError(f"no such {what}: {p}" + (f"; {fix}" if fix else "")) from None
    except UnicodeDecodeError as exc:
        raise FileFormatError(f"cannot read {p.name}: not UTF-8 text near byte {exc.start}; "
                              f"save the {what} as UTF-8") from None
    except OSError as exc:
        raise FileFormatError(f"cannot read the {what} {p}: {exc.strerror or exc}; check the "
                              "path") from None
