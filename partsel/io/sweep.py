"""Measured impedance sweeps in CSV: frequency with |Z| and phase, or with R and X.

The first line that is not blank and not a comment (``#`` or ``!``) is the header. Column names
match case-insensitively. A header may carry its unit in brackets or parentheses
("Frequency (MHz)", "|Z| [ohm]", "Phase (deg)") or after a final underscore ("frequency_hz",
"r_ohm") or after a space ("|Z| ohm"); a header that is only a frequency unit ("MHz") names the
frequency column and its unit. Cells are plain numbers, in the column's unit, or quantities with
their own unit ("1 MHz", "22 mohm"), read by :func:`partsel.units.parse_quantity`. The
delimiter is the one of ``,``, ``;`` and tab that the header line uses most.

When no columns are named the obvious ones are taken: frequency/freq/f; R and X (r/real/re,
x/imag/im) when both are present, else |Z| (|z|/z/mag/magnitude/z_abs) with phase
(phase/angle/theta). :attr:`Sweep.columns` and :attr:`Sweep.source` say which were used.
"""

from __future__ import annotations

import csv
import math
import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
from numpy.typing import NDArray

from partsel.errors import FileFormatError, UnitError
from partsel.io.text import read_text

MIN_POINTS = 5
FREQ_NAMES = ("frequency", "freq", "f")
MAG_NAMES = ("|z|", "mag", "magnitude", "z_abs", "abs(z)", "zmag", "z_mag", "impedance", "z")
PHASE_NAMES = ("phase", "angle", "theta", "arg", "z_phase", "phase(z)")
R_NAMES = ("r", "real", "re", "re(z)", "z_re", "resistance")
X_NAMES = ("x", "imag", "im", "im(z)", "z_im", "reactance")
PHASE_UNITS = {"deg": math.pi / 180.0, "degree": math.pi / 180.0, "degrees": math.pi / 180.0,
               "°": math.pi / 180.0, "rad": 1.0, "radian": 1.0, "radians": 1.0}
_BRACKET = re.compile(r"(.*?)\s*[(\[]\s*([^()\[\]]*?)\s*[)\]]\s*\Z")
_SUFFIX_UNITS = ("hz", "khz", "mhz", "ghz", "ohm", "ohms", "mohm", "kohm", "deg", "rad",
                 "degrees", "radians")
_FREQ_UNITS = ("hz", "khz", "mhz", "ghz")
# How messages name the column and unit choices: keyword arguments, or the command's options.
_KEYWORDS = {"freq": "freq_col=", "mag": "mag_col=", "phase": "phase_col=", "r": "r_col=",
             "x": "x_col=", "radians": "phase_unit='rad'"}
_OPTIONS = {"freq": "--freq-col", "mag": "--mag-col", "phase": "--phase-col", "r": "--r-col",
            "x": "--x-col", "radians": "--phase-unit rad"}
_PLAIN = re.compile(r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?\Z")
_STARTS_NUMERIC = re.compile(r"[+-]?\.?\d")


@dataclass(eq=False)
class Sweep:
    """A measured impedance sweep.

    Attributes
    ----------
    f : frequencies [Hz], strictly increasing, > 0
    z : complex impedance [ohm]
    source : file name and the columns read, for messages and reports
    columns : role ("frequency", "|Z|", "phase", "R", "X") -> header as written
    """

    f: NDArray[np.float64]
    z: NDArray[np.complex128]
    source: str = ""
    columns: dict[str, str] = field(default_factory=dict)

    def to_csv_text(self) -> str:
        """CSV with columns frequency_hz, r_ohm, x_ohm; numbers written with repr (exact)."""
        rows = ["frequency_hz,r_ohm,x_ohm"]
        rows += [f"{float(fi)!r},{float(zi.real)!r},{float(zi.imag)!r}"
                 for fi, zi in zip(self.f, self.z, strict=True)]
        return "\n".join(rows) + "\n"


@dataclass
class _Column:
    index: int
    header: str
    name: str   # lower-case name without the unit
    unit: str   # unit as written in the header, "" when none


def _split_header(header: str) -> tuple[str, str]:
    m = _BRACKET.match(header)
    if m and m.group(1):
        return m.group(1).strip(), m.group(2).strip()
    if header.strip().lower() in _FREQ_UNITS:
        return "frequency", header.strip()
    for mark in ("_", " "):
        base, sep, suffix = header.strip().rpartition(mark)
        if sep and base.strip() and suffix.lower() in _SUFFIX_UNITS:
            return base.strip(), suffix
    return header.strip(), ""


class _Reader:
    def __init__(self, text: str, label: str, names: dict[str, str]) -> None:
        self.label = label
        self.names = names
        self.rows: list[tuple[int, list[str]]] = []
        lines = [(no, ln) for no, ln in enumerate(text.splitlines(), 1)
                 if ln.strip() and not ln.lstrip().startswith(("#", "!"))]
        if not lines:
            raise FileFormatError(f"{label} holds no header and no data; the first line names "
                                  "the columns, e.g. 'frequency,|Z|,phase'")
        head_no, head = lines[0]
        self.delim = max((",", ";", "\t"), key=head.count)
        self.header_line = head_no
        self.cols = []
        for i, h in enumerate(self.split(head_no, head)):
            name, unit = _split_header(h)
            self.cols.append(_Column(i, h, name.lower(), unit))
        self.rows = [(no, self.split(no, ln)) for no, ln in lines[1:]]

    def split(self, no: int, line: str) -> list[str]:
        try:
            return [c.strip() for c in next(csv.reader([line], delimiter=self.delim))]
        except csv.Error as exc:
            raise self.fail(no, f"cannot split the line into cells ({exc})") from None

    def fail(self, line: int | None, what: str) -> FileFormatError:
        return FileFormatError(f"{self.label} line {line}: {what}" if line
                               else f"{self.label}: {what}")

    def present(self) -> str:
        return ", ".join(f"'{c.header}'" for c in self.cols)

    def find(self, given: str | None, names: tuple[str, ...], role: str) -> _Column | None:
        if given is not None:
            want = given.strip().lower()
            for c in self.cols:
                if want in (c.header.lower(), c.name):
                    return c
            raise self.fail(self.header_line, f"no column named '{given}' for {role}; the "
                            f"columns are {self.present()}")
        for n in names:
            for c in self.cols:
                if c.name == n or c.header.lower() == n:
                    return c
        return None

    def check_rows(self) -> None:
        n = len(self.cols)
        for no, cells in self.rows:
            if len(cells) != n:
                raise self.fail(no, f"{len(cells)} cells but the header (line "
                                f"{self.header_line}) has {n} columns; add or remove cells")
        if len(self.rows) < MIN_POINTS:
            raise self.fail(None, f"{len(self.rows)} data rows; a sweep needs at least "
                            f"{MIN_POINTS} points")

    def values(self, col: _Column, base: str, override: str | None) -> NDArray[np.float64]:
        """One column in SI units: plain cells scaled by the column's unit, quantities parsed."""
        from partsel.units import parse_quantity

        unit = override if override is not None else col.unit
        scale = 1.0
        if unit:
            try:
                scale = parse_quantity("1 " + unit, base, what=f"unit of column '{col.header}'")
            except UnitError as exc:
                raise UnitError(f"{self.label} line {self.header_line}, column "
                                f"'{col.header}': {exc}") from None
        out = np.empty(len(self.rows))
        for k, (no, cells) in enumerate(self.rows):
            cell = cells[col.index]
            if _PLAIN.match(cell):
                out[k] = float(cell) * scale
                if not math.isfinite(out[k]):
                    raise self.fail(no, f"column '{col.header}': '{cell}' is out of range")
                continue
            if not _STARTS_NUMERIC.match(cell):
                raise self.fail(no, f"column '{col.header}': '{cell}' is not a number; write "
                                "a number or a quantity such as '1 MHz'")
            try:
                out[k] = parse_quantity(cell, base, what=col.header)
            except UnitError as exc:
                raise UnitError(f"{self.label} line {no}, column '{col.header}': {exc}") from None
        return out

    def phase(self, col: _Column, override: str | None) -> NDArray[np.float64]:
        unit = (override if override is not None else col.unit or "deg").lower()
        if unit not in PHASE_UNITS:
            raise UnitError(f"{self.label}: phase unit '{unit}' of column '{col.header}' is "
                            "unknown; use deg or rad")
        out = np.empty(len(self.rows))
        for k, (no, cells) in enumerate(self.rows):
            cell = cells[col.index]
            m = re.fullmatch(r"(.*?)\s*(deg|degrees|°|rad|radians)?", cell, re.IGNORECASE)
            num, own = (m.group(1), m.group(2)) if m else (cell, None)
            if not _PLAIN.match(num):
                raise self.fail(no, f"column '{col.header}': '{cell}' is not a phase; write a "
                                f"number of degrees (or radians with {self.names['radians']})")
            out[k] = float(num) * PHASE_UNITS[(own or unit).lower()]
            if not math.isfinite(out[k]):
                raise self.fail(no, f"column '{col.header}': '{cell}' is out of range")
        return out


def _load(path: str | Path) -> tuple[str, str]:
    if isinstance(path, str) and "\n" in path:
        return path, "<text>"
    p = Path(path)
    return read_text(p, "sweep file", "give a CSV file of f and Z"), p.name


def read_sweep_csv(path: str | Path, *, freq_col: str | None = None,
                   mag_col: str | None = None, phase_col: str | None = None,
                   r_col: str | None = None, x_col: str | None = None,
                   freq_unit: str | None = None, z_unit: str | None = None,
                   phase_unit: str | None = None, cli: bool = False) -> Sweep:
    """Read an impedance sweep from CSV.

    Parameters
    ----------
    path : CSV file (or its text, when the str holds a newline)
    freq_col, mag_col, phase_col, r_col, x_col : column names (header text or the name without
        its unit, any case); None picks the obvious column (module docstring)
    freq_unit : unit of plain frequency cells ("MHz"), overriding the header's unit
    z_unit : unit of plain |Z|, R and X cells ("mohm"), overriding the header's unit
    phase_unit : "deg" or "rad" for plain phase cells, overriding the header; default deg
    cli : messages name the command's options (--mag-col) instead of keyword arguments

    Raises
    ------
    FileFormatError
        wrong number of cells, a cell that is not a number, frequencies not strictly increasing
        or not > 0, an unknown column name (the message lists the columns), fewer than
        5 points, a negative |Z|. The message names the line and the column.
    UnitError
        a unit that does not fit the column (e.g. "5 nF" in the frequency column).
    """
    text, label = _load(path)
    n = _OPTIONS if cli else _KEYWORDS
    rd = _Reader(text, label, n)
    fcol = rd.find(freq_col, FREQ_NAMES, "the frequency")
    if fcol is None:
        raise rd.fail(rd.header_line, f"no frequency column; name one with {n['freq']} "
                      f"(columns are {rd.present()})")
    polar_given = mag_col is not None or phase_col is not None
    rect_given = r_col is not None or x_col is not None
    if polar_given and rect_given:
        raise FileFormatError(f"give either {n['mag']} and {n['phase']} or {n['r']} and "
                              f"{n['x']}, not both")
    rcol = xcol = mcol = pcol = None
    if not polar_given:
        rcol = rd.find(r_col, R_NAMES, "R")
        xcol = rd.find(x_col, X_NAMES, "X")
    if rcol is None or xcol is None:
        if rect_given:
            raise rd.fail(rd.header_line, f"found no {'X' if rcol else 'R'} column to go with "
                          f"{'R' if rcol else 'X'}; columns are {rd.present()}: name it with "
                          f"{n['x'] if rcol else n['r']}")
        rcol = xcol = None
        mcol = rd.find(mag_col, MAG_NAMES, "|Z|")
        pcol = rd.find(phase_col, PHASE_NAMES, "the phase")
        if mcol is None or pcol is None:
            raise rd.fail(rd.header_line, f"cannot tell which columns hold |Z| and phase or "
                          f"R and X; columns are {rd.present()}: name them with {n['mag']} and "
                          f"{n['phase']} or {n['r']} and {n['x']}")
    rd.check_rows()
    f = rd.values(fcol, "Hz", freq_unit)
    lines = [no for no, _ in rd.rows]
    for k in range(f.size):
        if not f[k] > 0:
            raise rd.fail(lines[k], f"column '{fcol.header}': frequency must be > 0")
        if k and f[k] <= f[k - 1]:
            raise rd.fail(lines[k], f"column '{fcol.header}': frequency {f[k]:g} Hz is not above "
                          f"the one before ({f[k - 1]:g} Hz); sort the rows by frequency")
    if rcol is not None and xcol is not None:
        z = rd.values(rcol, "ohm", z_unit) + 1j * rd.values(xcol, "ohm", z_unit)
        columns = {"frequency": fcol.header, "R": rcol.header, "X": xcol.header}
    else:
        assert mcol is not None and pcol is not None
        mag = rd.values(mcol, "ohm", z_unit)
        neg = np.flatnonzero(mag < 0)
        if neg.size:
            raise rd.fail(lines[neg[0]], f"column '{mcol.header}': |Z| is negative "
                          f"({mag[neg[0]]:g}); a magnitude is >= 0 (is this column R or X?)")
        z = mag * np.exp(1j * rd.phase(pcol, phase_unit))
        columns = {"frequency": fcol.header, "|Z|": mcol.header, "phase": pcol.header}
    source = f"{label} (" + ", ".join(f"{k} from '{v}'" for k, v in columns.items()) + ")"
    return Sweep(f=f, z=z, source=source, columns=columns)
