"""A maker's Touchstone file as a part's measured impedance curve.

The file is read by :func:`partsel.io.touchstone.read_touchstone` and turned into impedance by
:func:`partsel.engine.fixture.impedance_from` for the fixture the parts were measured in (a
1-port file is a reflection measurement; a 2-port one needs the fixture named). What can be
wrong with one file (unreadable, bad numbers, a zero impedance) is a :class:`FileFormatError`
for that file only; a 2-port file without a fixture stops the import (:class:`FixtureNeeded`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from partsel.engine.fixture import FIXTURES, impedance_from
from partsel.errors import FileFormatError, QueryError
from partsel.io.sweep import MIN_POINTS
from partsel.io.touchstone import read_touchstone
from partsel.jobs.vendor_sources import Source
from partsel.units import format_quantity


class FixtureNeeded(QueryError):
    """A 2-port Touchstone file imported without saying how the parts were mounted."""


@dataclass(frozen=True)
class Curve:
    """Impedance ``z`` [ohm] at ``f`` [Hz] (strictly increasing, > 0), the note to store (format,
    fixture, Z0, range) and the file's header as read (comments and option line)."""

    f: NDArray[np.float64]
    z: NDArray[np.complex128]
    note: str
    header: str


def check_fixture(fixture: str | None) -> str | None:
    if fixture is not None and fixture not in FIXTURES:
        raise FileFormatError(f"unknown fixture '{fixture}'; choose one of "
                              + ", ".join(FIXTURES))
    return fixture


def header_of(text: str) -> str:
    """The lines before the first data line: comments, the option line, version 2 keywords."""
    out = []
    for line in text.splitlines():
        content = line.split("!", 1)[0].strip()
        if content and (content[0].isdigit() or content[0] in "+-."):
            break
        if content.lower().startswith("[network data]"):
            out.append(line)
            break
        out.append(line)
    return "\n".join(out) + "\n"


def read_curve(source: Source, fixture: str | None, *, cli: bool = False) -> Curve:
    """The impedance curve of one Touchstone file (module notes)."""
    data_bytes = source.read()
    text = data_bytes.decode("utf-8", errors="replace")
    if not text.strip():
        raise FileFormatError(f"{source.label}: empty file")
    data = read_touchstone(text if "\n" in text else text + "\n", name=source.label)
    if data.n_ports == 1:
        fixture = "reflection"      # whatever fixture the 2-port files of the import name
    elif fixture is None:
        how = "--fixture " if cli else "fixture="
        raise FixtureNeeded(f"{source.label} is a {data.n_ports}-port file: say how the "
                            f"parts were mounted with {how}reflection, shunt-thru or "
                            "series-thru; nothing was imported")
    z = impedance_from(data, fixture)  # type: ignore[arg-type]
    f = data.f
    if f.size < MIN_POINTS:
        raise FileFormatError(f"{source.label}: {f.size} points; a curve needs at least "
                              f"{MIN_POINTS}")
    if not f[0] > 0:
        raise FileFormatError(f"{source.label}: a point at 0 Hz; an impedance curve starts "
                              "above DC (remove that point)")
    bad = np.flatnonzero(~np.isfinite(z) | (z == 0))
    if bad.size:
        what = "zero" if z[bad[0]] == 0 else "not finite"
        raise FileFormatError(f"{source.label}: the impedance at {f[bad[0]]:.6g} Hz is {what} "
                              f"({bad.size} point{'s' if bad.size != 1 else ''}; is the fixture "
                              "right? a series-thru S21 of 1 or a shunt-thru S21 of 0 gives "
                              "this)")
    note = (f"Touchstone {data.version}, {data.n_ports}-port {data.kind}-parameters, "
            f"{fixture}, Z0 {float(data.z0[0]):g} ohm; {f.size} points, "
            f"{format_quantity(float(f[0]), 'Hz')} to {format_quantity(float(f[-1]), 'Hz')}")
    return Curve(f, z, note, header_of(text))
