"""The files of a model import: one file, a folder of them (searched to any depth) or a .zip.

Each file is a :class:`Source` that says what it holds by its name (a SPICE library or a
Touchstone file, letter case ignored) and where it came from (``folder/sub/file.lib``,
``archive.zip!member``), and reads its bytes only when asked. A zip that cannot be read (cut
short, damaged) is a fatal error, as is a path that does not exist or holds nothing to import.
"""

from __future__ import annotations

import os
import re
import zipfile
import zlib
from collections.abc import Callable
from dataclasses import dataclass, field
from datetime import datetime
from pathlib import Path, PurePosixPath

from partsel.errors import FileFormatError

SPICE_SUFFIXES = (".lib", ".mod", ".cir", ".sub")
TOUCHSTONE = re.compile(r"\.(s\d+p|ts)\Z", re.IGNORECASE)


class ArchiveDamaged(FileFormatError):
    """A zip member that cannot be read: the archive is damaged, which stops the import."""


KNOWN = "SPICE libraries (.lib, .mod, .cir, .sub) or Touchstone files (.s1p, .s2p, .ts)"


def kind_of(name: str) -> str | None:
    """"spice", "touchstone" or None, from a file name."""
    low = name.lower()
    if low.endswith(SPICE_SUFFIXES):
        return "spice"
    if TOUCHSTONE.search(low):
        return "touchstone"
    return None


@dataclass(frozen=True)
class Source:
    """One file to import: ``label`` names it in provenance and messages, ``stem`` is its name
    without folder and suffix (what a Touchstone file is matched by)."""

    label: str
    kind: str
    read: Callable[[], bytes] = field(repr=False, compare=False)
    dated: datetime | None = None

    @property
    def stem(self) -> str:
        return PurePosixPath(self.label.rsplit("!", 1)[-1]).stem


@dataclass
class Sources:
    """The files found, and how many others were passed over (unknown suffixes)."""

    items: list[Source]
    ignored: int = 0
    _close: Callable[[], None] | None = None

    def close(self) -> None:
        if self._close is not None:
            self._close()
            self._close = None

    def __enter__(self) -> Sources:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()


def _file_reader(p: Path) -> Callable[[], bytes]:
    def read() -> bytes:
        try:
            return p.read_bytes()
        except OSError as exc:
            raise FileFormatError(f"cannot read {p}: {exc.strerror or exc}") from None
    return read


def _dated(p: Path) -> datetime | None:
    try:
        return datetime.fromtimestamp(p.stat().st_mtime)
    except OSError:
        return None


def _from_zip(p: Path) -> Sources:
    try:
        zf = zipfile.ZipFile(p)
        infos = zf.infolist()
    except (zipfile.BadZipFile, OSError, EOFError) as exc:
        raise FileFormatError(f"{p.name} is not a readable zip archive ({exc}): it may be cut "
                              "short or damaged; nothing was imported") from None
    items, ignored = [], 0
    for info in sorted(infos, key=lambda i: i.filename):
        if info.is_dir():
            continue
        name = info.filename
        kind = kind_of(name)
        hidden = any(part.startswith(".") or part == "__MACOSX"
                     for part in PurePosixPath(name).parts)
        if kind is None or hidden:
            ignored += 1
            continue

        def read(info: zipfile.ZipInfo = info) -> bytes:
            try:
                return zf.read(info)
            except (zipfile.BadZipFile, zlib.error, EOFError, OSError) as exc:
                raise ArchiveDamaged(f"{p.name}!{info.filename} cannot be read from the "
                                      f"archive ({exc}): the zip is damaged or cut short; "
                                      "nothing was imported") from None
        dated = datetime(*info.date_time) if info.date_time[0] >= 1980 else None
        items.append(Source(f"{p.name}!{name}", kind, read, dated))
    return Sources(items, ignored, zf.close)


def gather(path: str | os.PathLike[str]) -> Sources:
    """The files to import from ``path`` (a file, a folder or a .zip), sorted by name.

    Raises FileFormatError for a missing path, a file of another kind, an unreadable zip and a
    folder or zip with nothing to import.
    """
    p = Path(path)
    if not p.exists():
        raise FileFormatError(f"no file or folder {p}: check the path")
    if p.is_dir():
        items, ignored = [], 0
        for f in sorted(x for x in p.rglob("*") if x.is_file()):
            rel = f.relative_to(p)
            kind = kind_of(f.name)
            if kind is None or any(part.startswith(".") for part in rel.parts):
                ignored += 1
                continue
            items.append(Source(str(PurePosixPath(p.name, *rel.parts)), kind,
                                _file_reader(f), _dated(f)))
        found = Sources(items, ignored)
    elif p.suffix.lower() == ".zip":
        found = _from_zip(p)
    else:
        kind = kind_of(p.name)
        if kind is None:
            raise FileFormatError(f"cannot tell what {p.name} holds: give {KNOWN}, a folder "
                                  "of them or a .zip")
        return Sources([Source(p.name, kind, _file_reader(p), _dated(p))])
    if not found.items:
        found.close()
        other = f" ({found.ignored} other file{'s' if found.ignored != 1 else ''})" \
            if found.ignored else ""
        raise FileFormatError(f"{p.name} holds no {KNOWN}{other}: nothing to import")
    return found
