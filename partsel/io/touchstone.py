r"""Touchstone network files (IBIS Open Forum Touchstone 1.1 and 2.0): read and write.

Version 1 files start with an option line ``# <Hz|kHz|MHz|GHz> <S|Y|Z|H|G> <DB|MA|RI> R <n>``
(fields in any order, case-insensitive, missing fields default to GHz, S, MA, R 50) and take their
port count from the extension (``.s1p``, ``.s2p``, ...). Version 2 files start with
``[Version] 2.0`` and declare the port count, the two-port data order, the number of frequencies,
per-port reference impedances and the matrix format in keywords. ``!`` starts a comment anywhere.

Pairs are read as RI (re, im), MA (magnitude, angle in degrees) or DB (20 log10 |x|, angle in
degrees). Version 1 stores Z and Y normalised to R; the reader returns ohm and siemens in both
versions. H and G parameters are returned as written in the file.

The impedance of a part measured in a fixture, and the S-parameters of a modeled part in one,
are computed by :mod:`partsel.engine.fixture`; this module holds the file format only.
"""

from __future__ import annotations

import re
from collections.abc import Iterable
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
from numpy.typing import ArrayLike, NDArray

from partsel.errors import FileFormatError, UnitError

FREQ_UNITS = {"hz": 1.0, "khz": 1e3, "mhz": 1e6, "ghz": 1e9}
_UNIT_NAMES = {"hz": "Hz", "khz": "kHz", "mhz": "MHz", "ghz": "GHz"}
KINDS = ("S", "Y", "Z", "H", "G")
FORMATS = ("DB", "MA", "RI")

_NUMBER = re.compile(r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?\Z")
_KEYWORD = re.compile(r"\[([^\]]*)\]\s*(.*)\Z")
_EXTENSION = re.compile(r"\.[a-z](\d+)p\Z", re.IGNORECASE)
_KEYWORDS = ("version", "number of ports", "two-port data order", "number of frequencies",
             "number of noise frequencies", "reference", "matrix format", "network data",
             "noise data", "begin information", "end information", "end")
_MAX_PORTS = 256


@dataclass(eq=False)
class TouchstoneData:
    """Network parameters read from a Touchstone file.

    Attributes
    ----------
    f : frequencies [Hz], strictly increasing, shape (F,)
    params : complex parameters, shape (F, n, n); Z in ohm, Y in siemens, S, H, G as written
    kind : "S", "Y", "Z", "H" or "G"
    z0 : reference impedance of each port [ohm], shape (n,)
    n_ports : n
    version : "1.0", "2.0" or "2.1"
    comments : text after each ``!``, in file order
    """

    f: NDArray[np.float64]
    params: NDArray[np.complex128]
    kind: str
    z0: NDArray[np.float64]
    n_ports: int
    version: str
    comments: list[str] = field(default_factory=list)


@dataclass
class _Options:
    unit: float = 1e9
    kind: str = "S"
    fmt: str = "MA"
    r: float = 50.0


def _load(path_or_text: str | Path, name: str | None) -> tuple[str, str]:
    """Return (text, label); a str holding a newline or starting like a Touchstone file is text."""
    if isinstance(path_or_text, str):
        head = path_or_text.lstrip()
        if "\n" in path_or_text or head.startswith(("!", "#", "[")):
            return path_or_text, name or "<text>"
    p = Path(path_or_text)
    try:
        text = p.read_text(encoding="utf-8", errors="replace")
    except OSError as exc:
        raise FileFormatError(f"cannot read Touchstone file {p}: {exc.strerror or exc}; "
                              "check the path") from None
    return text, name or p.name


class _Reader:
    """One pass over the lines of a Touchstone file."""

    def __init__(self, text: str, label: str) -> None:
        self.label = label
        self.lines: list[tuple[int, str]] = []
        self.comments: list[str] = []
        for no, raw in enumerate(text.splitlines(), 1):
            content, bang, comment = raw.partition("!")
            if bang:
                self.comments.append(comment.strip())
            content = content.strip()
            if content:
                self.lines.append((no, content))
        self.opts: _Options | None = None
        self.version = "1.0"
        self.n_ports: int | None = None
        self.order: str | None = None
        self.n_freq: int | None = None
        self.n_freq_line = 0
        self.reference: list[float] | None = None
        self.matrix = "full"
        self.data: list[tuple[int, list[str]]] = []

    def fail(self, line: int | None, what: str) -> FileFormatError:
        where = f"{self.label} line {line}" if line else self.label
        return FileFormatError(f"{where}: {what}")

    def number(self, line: int, token: str, what: str = "value") -> float:
        if not _NUMBER.match(token):
            raise self.fail(line, f"'{token}' is not a number ({what}); fix or remove it")
        x = float(token)
        if not np.isfinite(x):
            raise self.fail(line, f"{what} '{token}' is out of range; fix the number")
        return x

    def integer(self, line: int, token: str, what: str) -> int:
        if not re.fullmatch(r"\+?\d{1,9}", token):
            raise self.fail(line, f"{what} must be a whole number, not '{token}'")
        return int(token)

    def option_line(self, line: int, body: str) -> None:
        opts = _Options()
        tokens = body.split()
        i = 0
        while i < len(tokens):
            tok = tokens[i].lower()
            if tok in FREQ_UNITS:
                opts.unit = FREQ_UNITS[tok]
            elif tok.upper() in KINDS:
                opts.kind = tok.upper()
            elif tok.upper() in FORMATS:
                opts.fmt = tok.upper()
            elif tok == "r":
                if i + 1 >= len(tokens):
                    raise self.fail(line, "option R needs the reference resistance, e.g. 'R 50'")
                opts.r = self.number(line, tokens[i + 1], "reference resistance R")
                if opts.r <= 0:
                    raise self.fail(line, f"reference resistance R {tokens[i + 1]} must be > 0")
                i += 1
            else:
                raise self.fail(line, f"unknown option '{tokens[i]}' in the option line; use "
                                "Hz|kHz|MHz|GHz, S|Y|Z|H|G, DB|MA|RI and R <ohms>")
            i += 1
        self.opts = opts

    def keyword(self, line: int, key: str, arg: str) -> str | None:
        """Handle one version 2 keyword; return the section it opens, if any."""
        words = arg.split()
        if key == "version":
            raise self.fail(line, "[Version] must be the first keyword and appear once")
        if key == "number of ports":
            if len(words) != 1:
                raise self.fail(line, "[Number of Ports] takes one whole number")
            n = self.integer(line, words[0], "[Number of Ports]")
            if not 1 <= n <= _MAX_PORTS:
                raise self.fail(line, f"[Number of Ports] must be 1 to {_MAX_PORTS}, not {n}")
            self.n_ports = n
        elif key == "two-port data order":
            if len(words) != 1 or words[0] not in ("12_21", "21_12"):
                raise self.fail(line, "[Two-Port Data Order] must be 12_21 or 21_12")
            self.order = words[0]
        elif key == "number of frequencies":
            if len(words) != 1:
                raise self.fail(line, "[Number of Frequencies] takes one whole number")
            self.n_freq = self.integer(line, words[0], "[Number of Frequencies]")
            self.n_freq_line = line
            if self.n_freq < 1:
                raise self.fail(line, "[Number of Frequencies] must be at least 1")
        elif key == "reference":
            if self.n_ports is None:
                raise self.fail(line, "[Reference] must follow [Number of Ports]")
            self.reference = []
            self.add_reference(line, words)
            return "reference"
        elif key == "matrix format":
            if len(words) != 1 or words[0].lower() not in ("full", "lower", "upper"):
                raise self.fail(line, "[Matrix Format] must be Full, Lower or Upper")
            self.matrix = words[0].lower()
        elif key == "network data":
            return "network"
        elif key == "noise data":
            return "noise"
        elif key == "begin information":
            return "information"
        elif key == "end":
            return "end"
        elif key == "number of noise frequencies":
            pass
        else:
            raise self.fail(line, f"unknown keyword [{key}]; Touchstone 2.0 keywords are "
                            + ", ".join(f"[{k.title()}]" for k in _KEYWORDS))
        return None

    def add_reference(self, line: int, words: list[str]) -> None:
        assert self.reference is not None and self.n_ports is not None
        for w in words:
            r = self.number(line, w, "reference impedance")
            if r <= 0:
                raise self.fail(line, f"reference impedance {w} must be > 0")
            self.reference.append(r)
        if len(self.reference) > self.n_ports:
            raise self.fail(line, f"[Reference] has more than {self.n_ports} values, one per port")

    def parse(self) -> TouchstoneData:
        if not self.lines:
            raise self.fail(None, "empty file; a Touchstone file needs an option line and data")
        first_no, first = self.lines[0]
        m = _KEYWORD.match(first)
        if m and m.group(1).strip().lower() == "version":
            ver = m.group(2).strip()
            if ver not in ("2.0", "2.1"):
                raise self.fail(first_no, f"unsupported [Version] '{ver}'; partsel reads 2.0, "
                                "2.1 and version 1 files (no [Version] line)")
            self.version = ver
            self.parse_v2(self.lines[1:])
        else:
            self.parse_v1()
        return self.assemble()

    def parse_v1(self) -> None:
        for no, text in self.lines:
            if text.startswith("#"):
                if self.opts is None:
                    self.option_line(no, text[1:])
                continue  # the standard ignores every option line after the first
            if text.startswith("["):
                raise self.fail(no, "keyword in a version 1 file; start the file with "
                                "'[Version] 2.0' or remove the keyword")
            if self.opts is None:
                raise self.fail(no, "data before the option line; add an option line such as "
                                "'# GHz S MA R 50' above the data")
            self.data.append((no, text.split()))
        if self.opts is None:
            raise self.fail(None, "no option line; add one such as '# GHz S MA R 50'")
        ext = _EXTENSION.search(self.label)
        if ext:
            self.n_ports = int(ext.group(1))
            if not 1 <= self.n_ports <= _MAX_PORTS:
                raise self.fail(None, f"extension says {self.n_ports} ports; use .s1p, .s2p, ...")
        elif self.data and len(self.data[0][1]) in (3, 9):
            self.n_ports = 1 if len(self.data[0][1]) == 3 else 2
        else:
            raise self.fail(None, "cannot tell the number of ports; name the file .s1p, .s2p, "
                            "... or pass name='part.s2p'")
        self.order = "21_12"

    def parse_v2(self, lines: list[tuple[int, str]]) -> None:
        section = "header"
        end_seen = False
        for no, text in lines:
            m = _KEYWORD.match(text)
            if section == "information":
                if m and m.group(1).strip().lower() == "end information":
                    section = "header"
                continue
            if m:
                key = " ".join(m.group(1).lower().split())
                if section == "noise" and key != "end":
                    continue
                opened = self.keyword(no, key, m.group(2))
                if opened == "end":
                    end_seen = True
                    break
                if opened == "network":
                    self.start_network(no)
                section = opened or ("header" if section == "reference" else section)
                continue
            if text.startswith("#"):
                if section not in ("header", "reference"):
                    raise self.fail(no, "option line inside the data; move it above "
                                    "[Network Data]")
                if self.opts is None:
                    self.option_line(no, text[1:])
                continue
            if section == "reference":
                self.add_reference(no, text.split())
            elif section == "network":
                self.data.append((no, text.split()))
            elif section != "noise":
                raise self.fail(no, "numbers outside [Network Data]; add the [Network Data] "
                                "keyword above the data")
        if self.opts is None:
            raise self.fail(None, "no option line; add one such as '# GHz S MA R 50'")
        if self.n_ports is None:
            raise self.fail(None, "no [Network Data]; version 2 files need [Number of Ports], "
                            "[Number of Frequencies] and [Network Data]")
        if not end_seen and not self.data:
            raise self.fail(None, "no [Network Data] section")

    def start_network(self, line: int) -> None:
        if self.opts is None:
            raise self.fail(line, "[Network Data] before the option line; add '# GHz S MA R 50'")
        if self.n_ports is None:
            raise self.fail(line, "[Network Data] before [Number of Ports]; declare the ports")
        if self.n_freq is None:
            raise self.fail(line, "[Network Data] before [Number of Frequencies]; declare it")
        if self.n_ports == 2 and self.order is None:
            raise self.fail(line, "a 2-port version 2 file needs [Two-Port Data Order] "
                            "12_21 or 21_12")
        if self.reference is not None and len(self.reference) != self.n_ports:
            raise self.fail(line, f"[Reference] gives {len(self.reference)} values for "
                            f"{self.n_ports} ports; give one per port")

    def points(self, n: int, need: int) -> tuple[list[int], NDArray[np.float64]]:
        """Group the data lines into frequency points of `need` numbers each: the line each
        point starts on, and the numbers (points, need)."""
        assert self.opts is not None
        fast = self._whole_points(n, need)
        if fast is not None:
            return fast
        unit = self.opts.unit
        pts: list[tuple[int, list[float]]] = []
        cur: list[float] = []
        start = 0
        last_f = -np.inf
        for no, tokens in self.data:
            if not cur and self.version == "1.0" and n == 2 and len(tokens) == 5 and pts:
                if self.number(no, tokens[0], "frequency") * unit <= last_f:
                    break  # version 1 noise parameters follow the network data
            if n <= 2 and len(tokens) != need:
                raise self.fail(no, f"expected {need} numbers (frequency and {need // 2} "
                                f"pairs) but found {len(tokens)}; the row is truncated or "
                                "has extra values: complete or delete it")
            if not cur:
                start = no
            elif (len(tokens) % 2) != 0:
                raise self.fail(no, "odd number of values on a continuation line; a pair is "
                                "split or truncated")
            cur.extend(self.number(no, t) for t in tokens)
            if len(cur) > need:
                raise self.fail(no, f"the frequency point starting on line {start} has more "
                                f"than {need} numbers; a row above is truncated or too long")
            if len(cur) == need:
                f = cur[0] * unit
                if cur[0] < 0:
                    raise self.fail(start, f"negative frequency {cur[0]}")
                if f <= last_f:
                    raise self.fail(start, f"frequency {cur[0]} is not above the one before; "
                                    "frequencies must be strictly increasing")
                last_f = f
                pts.append((start, cur))
                cur = []
        if cur:
            raise self.fail(self.data[-1][0], f"file ends inside the frequency point starting "
                            f"on line {start}: found {len(cur)} of {need} numbers (truncated)")
        return [p[0] for p in pts], np.array([p[1] for p in pts], dtype=float).reshape(-1, need)

    def _whole_points(self, n: int, need: int) -> tuple[list[int], NDArray[np.float64]] | None:
        """The common case at once: every data line one whole point of plain finite numbers,
        frequencies >= 0 and strictly increasing. None when any line departs from it; the
        line-by-line reading then names the line and the fault (same result, ~10x slower)."""
        assert self.opts is not None
        if n > 2 or not self.data or any(len(t) != need for _, t in self.data):
            return None
        flat = [tok for _, tokens in self.data for tok in tokens]
        # float() reads what _NUMBER accepts, and beyond it only digit separators ("1_0") and
        # the words inf and nan, which the finiteness test below turns away
        if "_" in " ".join(flat):
            return None
        try:
            arr = np.array(list(map(float, flat))).reshape(-1, need)
        except ValueError:
            return None
        f = arr[:, 0] * self.opts.unit
        if not (np.all(np.isfinite(arr)) and np.all(arr[:, 0] >= 0)
                and np.all(np.diff(f) > 0)):
            return None
        return [no for no, _ in self.data], arr

    def assemble(self) -> TouchstoneData:
        assert self.opts is not None and self.n_ports is not None
        n = self.n_ports
        m = n * n if self.matrix == "full" else n * (n + 1) // 2
        starts, arr = self.points(n, 1 + 2 * m)
        if not starts:
            raise self.fail(None, "no network data; add lines 'frequency value value ...'")
        if self.n_freq is not None and len(starts) != self.n_freq:
            last = starts[-1]
            if len(starts) < self.n_freq:
                raise self.fail(last, f"file ends after {len(starts)} of the {self.n_freq} "
                                f"frequencies announced by [Number of Frequencies] on line "
                                f"{self.n_freq_line}; the data is truncated")
            raise self.fail(starts[self.n_freq], f"more frequencies than the {self.n_freq} "
                            f"announced on line {self.n_freq_line}; fix the count")
        f = arr[:, 0] * self.opts.unit
        a, b = arr[:, 1::2], arr[:, 2::2]
        with np.errstate(over="ignore", invalid="ignore"):
            if self.opts.fmt == "RI":
                vals = a + 1j * b
            else:
                mag = a if self.opts.fmt == "MA" else 10.0 ** (a / 20.0)
                vals = mag * np.exp(1j * np.deg2rad(b))
        bad = ~np.isfinite(vals)
        if bad.any():
            row = int(np.argwhere(bad)[0][0])
            raise self.fail(starts[row], "a value is out of range; fix the number")
        params = self._matrix(vals, n)
        z0 = np.full(n, self.opts.r)
        if self.reference is not None:
            z0 = np.array(self.reference, dtype=float)
        if self.version == "1.0" and self.opts.kind == "Z":
            params = params * self.opts.r
        elif self.version == "1.0" and self.opts.kind == "Y":
            params = params / self.opts.r
        return TouchstoneData(f=f, params=params, kind=self.opts.kind, z0=z0, n_ports=n,
                              version=self.version, comments=self.comments)

    def _matrix(self, vals: NDArray[np.complex128], n: int) -> NDArray[np.complex128]:
        if self.matrix == "full":
            if n == 2 and self.order == "21_12":
                vals = vals[:, [0, 2, 1, 3]]
            return vals.reshape(-1, n, n)
        out = np.zeros((vals.shape[0], n, n), dtype=complex)
        rows, cols = np.tril_indices(n) if self.matrix == "lower" else np.triu_indices(n)
        out[:, rows, cols] = vals
        out[:, cols, rows] = vals
        return out


def read_touchstone(path_or_text: str | Path, *, name: str | None = None) -> TouchstoneData:
    """Read a Touchstone 1.x or 2.x file.

    Parameters
    ----------
    path_or_text : a path, or the file's text (a str holding a newline or starting with
        ``!``, ``#`` or ``[``)
    name : file name used in messages and, for version 1 text, to take the port count from its
        extension (``name="dut.s2p"``). Without it, version 1 text with 3 or 9 numbers per line is
        read as a 1-port or 2-port.

    Raises
    ------
    FileFormatError
        for any malformed content; the message names the line and what to fix.
    """
    text, label = _load(path_or_text, name)
    return _Reader(text, label).parse()


def _pair(x: complex, fmt: str) -> tuple[float, float]:
    if fmt == "RI":
        return x.real, x.imag
    mag = abs(x)
    ang = float(np.degrees(np.arctan2(x.imag, x.real)))
    return (mag if fmt == "MA" else 20.0 * float(np.log10(mag))), ang


def write_touchstone(f: ArrayLike, s: ArrayLike, *, z0: float = 50.0, fmt: str = "RI",
                     unit: str = "Hz", comments: Iterable[str] = ()) -> str:
    """Text of a Touchstone 1.1 file holding S-parameters ``s`` at frequencies ``f`` [Hz].

    ``s`` is (F, 1, 1) for a 1-port (.s1p) or (F, 2, 2) for a 2-port (.s2p), written in the
    version 1 order N11 N21 N12 N22 (:func:`partsel.engine.fixture.s_parameters` gives those
    of a part in a fixture). Numbers are written with repr, which reads back to the same float.
    """
    fa = np.asarray(f, dtype=float).ravel()
    sa = np.asarray(s, dtype=complex)
    fmt_u = fmt.upper()
    if fmt_u not in FORMATS:
        raise FileFormatError(f"unknown Touchstone format '{fmt}'; choose RI, MA or DB")
    if unit.lower() not in FREQ_UNITS:
        raise UnitError(f"unknown frequency unit '{unit}' for Touchstone; use Hz, kHz, MHz or GHz")
    if sa.ndim != 3 or sa.shape[1:] not in ((1, 1), (2, 2)) or sa.shape[0] != fa.size \
            or fa.size == 0:
        raise FileFormatError("f and s must be non-empty, with s of shape (len(f), 1, 1) or "
                              "(len(f), 2, 2)")
    if not (np.all(np.isfinite(fa)) and np.all(np.diff(fa) > 0) and fa[0] >= 0):
        raise FileFormatError("frequencies must be finite, >= 0 and strictly increasing")
    if not z0 > 0:
        raise FileFormatError(f"reference impedance z0 must be > 0, not {z0}")
    cols = [sa[:, 0, 0]] if sa.shape[1] == 1 else \
        [sa[:, 0, 0], sa[:, 1, 0], sa[:, 0, 1], sa[:, 1, 1]]
    scale = FREQ_UNITS[unit.lower()]
    out = [f"! {c}" for c in comments]
    out.append(f"# {_UNIT_NAMES[unit.lower()]} S {fmt_u} R {float(z0)!r}")
    for i, fi in enumerate(fa):
        nums = [float(fi / scale)]
        with np.errstate(divide="ignore"):
            for col in cols:
                nums.extend(_pair(complex(col[i]), fmt_u))
        if not all(np.isfinite(nums)):
            raise FileFormatError(f"the S-parameters at {fi!r} Hz cannot be written in {fmt_u} "
                                  "(not finite); use RI or check the data")
        out.append(" ".join(repr(x) for x in nums))
    return "\n".join(out) + "\n"
