"""Lines, fields and numbers of a SPICE library, read as ngspice reads them.

The rules follow the ngspice User's Manual (version 39, sections 2.1 "General Structure and
Conventions" and 2.3 "Basic lines"), checked against ngspice 39 itself where the manual is
silent or says otherwise (the tests run both on the same text):

- A line whose first non-blank character is ``*`` is a comment; so is a line that starts with
  one of ``= [ ] ? ( ) & % $ § " ! :`` (ngspice turns those into comments with a warning).
  Blank lines are ignored.
- End-of-line comments start at ``;``, ``$`` or ``//`` outside a ``{...}`` or ``'...'``
  expression (ngspice accepts ``$`` with or without a following space).
- A line that starts with ``+`` continues the previous line; comment and blank lines may stand
  between the two (ngspice 39 joins them so).
- The first line of a deck is its title. A library usually starts with a comment or a
  dot-command instead; such a first line is read as a line of the library, as ngspice reads a
  file it includes. Any other first line (plain text) is the title and is not read.
- Numbers on element lines (ngspice's number reader, manual 2.1.4.2): an integer or decimal,
  an optional exponent, then an optional scale factor, case-insensitive: T 1e12, G 1e9,
  MEG 1e6, K 1e3, MIL 25.4e-6, M 1e-3, U 1e-6, N 1e-9, P 1e-12, F 1e-15. Letters after the
  number or the scale factor are ignored (``10uF``, ``1.5nH``, ``5F`` is 5e-15, ``3H`` is 3).
  Inside expressions (numparam, manual 2.9.5) the scale factors are the same except MIL,
  which there reads as M (milli) followed by ignored letters, as ngspice 39 does.
- ngspice reads ``2k5`` as 2k, ignoring the ``5``: that silently misreads an RKM code, so such a
  number is refused with a message rather than read.
"""

from __future__ import annotations

import functools
import re
from dataclasses import dataclass

from partsel.errors import FileFormatError

# scale factors of ngspice's number reader (manual table 2.2); "meg" and "mil" before "m"
# (powers of ten, so that 1.5n is the double nearest 1.5e-9; mil is 25.4e-6)
_ELEMENT_SCALE = {"t": 12, "g": 9, "meg": 6, "k": 3, "m": -3, "u": -6, "n": -9, "p": -12,
                  "f": -15}
# numparam's table (manual 2.9.5; "t" as ngspice 39 reads it, "mil" is not in it)
_EXPR_SCALE = _ELEMENT_SCALE
_MANTISSA = r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?"
_NUMBER = re.compile(rf"({_MANTISSA})(meg|mil|[tgkmunpf])?([a-z]*)(.*)\Z", re.I | re.S)
_SPECIAL_LEAD = set('=[]?()&%$§"!:')
_COMMENT = re.compile(r";|\$|//")
_GROUPING = re.compile(r"[{}'()]")
_EQUALS = re.compile(r"(?<![<>!=])=(?!=)")


class NumberError(ValueError):
    """A token that starts like a number but is not one ngspice reads as meant."""


def element_number(token: str) -> float | None:
    """The value of a number field on an element line, or None when the token is no number.

    Raises NumberError for a number followed by characters other than letters (``2k5``,
    ``10.5.3``), which ngspice would read as the part before them.
    """
    m = _NUMBER.match(token)
    if m is None:
        return None
    mant, suffix, _letters, rest = m.groups()
    if rest and any(ch in rest for ch in "*/+-^()"):
        raise NumberError(f"'{token}' is not a number: write an expression in braces, "
                          f"{{{token}}}")
    if rest:
        raise NumberError(f"'{token}' is not a SPICE number (ngspice would read it as "
                          f"'{token[:len(token) - len(rest)]}' and ignore '{rest}'); an RKM "
                          "code such as 2k5 is written 2.5k")
    if not suffix:
        return float(mant)
    if suffix.lower() == "mil":
        return float(mant) * 25.4e-6
    return _scaled(mant, _ELEMENT_SCALE[suffix.lower()])


def _scaled(mant: str, power: int) -> float:
    """mant x 10^power, rounded once (the exponent is added, not multiplied in)."""
    base, _, exp = mant.lower().partition("e")
    return float(f"{base}e{int(exp or 0) + power}")


def expr_number(text: str) -> float:
    """The value of a number inside an expression: mantissa, exponent, then letters, of which
    a leading scale factor counts (numparam rules: ``1mil`` is 1e-3 there)."""
    m = _NUMBER.match(text)
    if m is None or m.group(4):
        raise NumberError(f"'{text}' is not a number")
    mant, _suffix, _letters, _rest = m.groups()
    letters = text[len(mant):].lower()
    if letters.startswith("meg"):
        return _scaled(mant, 6)
    if letters[:1] in _EXPR_SCALE:
        return _scaled(mant, _EXPR_SCALE[letters[:1]])
    return float(mant)


@dataclass(frozen=True)
class Card:
    """One logical line: continuation lines joined, comments removed, blanks trimmed.

    ``line`` is the number of its first physical line (1-based); ``last`` of its last one.
    """

    line: int
    text: str
    last: int


def decode(data: bytes, source: str) -> tuple[str, list[str]]:
    """Text of a library file and the notes about how it was read.

    UTF-8 (a byte-order mark is dropped) is read as is. A file with NUL bytes is refused as
    binary, and UTF-16 or UTF-32 is refused with a hint to save it as UTF-8 (ngspice reads
    UTF-8 only, manual 2.1.2.1). Other bytes that are not UTF-8 (a degree sign in a comment,
    written in a Windows code page) are read as Latin-1 with a note, rather than refusing the
    whole library as ngspice would.
    """
    if data.startswith((b"\xff\xfe", b"\xfe\xff")) or (b"\x00" in data[:4096] and _utf16ish(data)):
        raise FileFormatError(f"{source} is UTF-16 (or UTF-32) text; SPICE libraries are read "
                              "as UTF-8 or ASCII: save it in one of those encodings")
    if b"\x00" in data:
        line = data[:data.index(b"\x00")].count(b"\n") + 1
        raise FileFormatError(f"{source}, line {line}: the file holds NUL bytes, so it is not "
                              "a text file; give the SPICE library itself (.lib, .mod, .cir, "
                              ".sub)")
    notes: list[str] = []
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = data[:exc.start].count(b"\n") + 1
        text = data.decode("latin-1")
        notes.append(f"{source} is not UTF-8 (first at line {line}); read as Latin-1")
    return text, notes


def _utf16ish(data: bytes) -> bool:
    head = data[:4096]
    even, odd = head[0::2].count(0), head[1::2].count(0)
    return max(even, odd) > len(head) // 4


def strip_comment(text: str) -> str:
    """The line without its end-of-line comment (``;``, ``$``, ``//`` outside expressions)."""
    if ";" not in text and "$" not in text and "//" not in text:
        return text
    if "{" not in text and "'" not in text:
        m = _COMMENT.search(text)
        return text[:m.start()] if m else text
    depth = 0
    quote = False
    for i, ch in enumerate(text):
        if quote:
            quote = ch != "'"
        elif ch == "'":
            quote = True
        elif ch == "{":
            depth += 1
        elif ch == "}":
            depth = max(depth - 1, 0)
        elif depth == 0 and (ch in ";$" or text.startswith("//", i)):
            return text[:i]
    return text


def cards(text: str) -> tuple[list[Card], list[str]]:
    """The logical lines of a library and notes (a continuation line with nothing before it).

    See the module docstring for the rules on comments, continuations and the title line.
    """
    out: list[Card] = []
    notes: list[str] = []
    lines = text.splitlines()
    first = lines[0].strip() if lines else ""
    start = 0
    if first and first[0] not in "*.+" and first[0] not in _SPECIAL_LEAD:
        start = 1  # a title line (module docstring)
    pending: list[str] = []
    line0 = last = 0
    for no, raw in enumerate(lines[start:], start=start + 1):
        s = raw.strip()
        if not s or s[0] == "*" or s[0] in _SPECIAL_LEAD:
            continue
        body = strip_comment(s)
        if s[0] == "+":
            if not pending:
                notes.append(f"line {no}: a continuation line with no line before it is "
                             "ignored")
                continue
            pending.append(body[1:].strip())
            last = no
            continue
        if pending:
            out.append(Card(line0, " ".join(p for p in pending if p), last))
        pending, line0, last = [body.strip()], no, no
    if pending:
        out.append(Card(line0, " ".join(p for p in pending if p), last))
    return out, notes


def fields(text: str) -> list[str]:
    """Split a card into fields: blanks (and commas outside parentheses) separate, ``=`` is a
    field of its own; ``{...}``, ``'...'`` and ``(...)`` groups stay inside one field.

    Raises NumberError (a ValueError) on an unbalanced brace, quote or parenthesis.
    """
    if not _GROUPING.search(text):  # the common case, without a character loop
        return _EQUALS.sub(" = ", text.replace(",", " ")).split()
    fast = _fast_fields(text)
    if fast is not None:
        return fast
    out: list[str] = []
    cur: list[str] = []
    brace = paren = 0
    quote = False
    n = len(text)
    i = 0
    while i < n:
        ch = text[i]
        if quote:
            cur.append(ch)
            quote = ch != "'"
        elif ch == "'":
            cur.append(ch)
            quote = True
        elif ch == "{":
            brace += 1
            cur.append(ch)
        elif ch == "}":
            brace -= 1
            if brace < 0:
                raise NumberError("a '}' closes no '{'")
            cur.append(ch)
        elif brace:
            cur.append(ch)
        elif ch == "(":
            paren += 1
            cur.append(ch)
        elif ch == ")":
            paren -= 1
            if paren < 0:
                raise NumberError("a ')' closes no '('")
            cur.append(ch)
        elif paren:
            cur.append(ch)
        elif ch.isspace() or ch == ",":
            if cur:
                out.append("".join(cur))
                cur = []
        elif ch == "=" and text[i + 1:i + 2] != "=" and (not cur or cur[-1] not in "<>!="):
            if cur:
                out.append("".join(cur))
                cur = []
            out.append("=")
        else:
            cur.append(ch)
        i += 1
    if quote:
        raise NumberError("a quote ' is not closed")
    if brace:
        raise NumberError("a '{' is not closed")
    if paren:
        raise NumberError("a '(' is not closed")
    if cur:
        out.append("".join(cur))
    return out


# groups without nesting, which is what libraries write; anything else takes the loop above
_FAST = re.compile(r"""
    \s+|,
  | (?P<eq>(?<![<>!=])=(?!=))
  | (?P<tok>(?:\{[^{}]*\}|'[^']*'|\([^()]*\)|==|<=|>=|!=|[^\s,={}'()])+)
""", re.X)


def _fast_fields(text: str) -> list[str] | None:
    out: list[str] = []
    pos, n = 0, len(text)
    while pos < n:
        m = _FAST.match(text, pos)
        if m is None:
            return None
        if m.group("eq"):
            out.append("=")
        elif m.group("tok"):
            out.append(m.group("tok"))
        pos = m.end()
    return out


_NAME = re.compile(r"[A-Za-z_][\w]*\Z")


def split_assignments(tokens: list[str]) -> tuple[list[str], list[tuple[str, str]]]:
    """Positional fields, then ``name = value`` pairs, of a tokenised card.

    A value runs up to the next ``name =`` (so ``c = 123 * 3`` keeps ``123 * 3``, as ngspice 39
    reads it); a ``PARAMS:`` field before the pairs is dropped. Raises NumberError when a
    positional field follows a pair or a pair has no value.
    """
    pos: list[str] = []
    pairs: list[tuple[str, str]] = []
    i = 0
    n = len(tokens)
    while i < n:
        tok = tokens[i]
        if tok.lower().startswith("params:"):
            tok = tok[7:]
            if not tok:
                i += 1
                continue
        if i + 1 < n and tokens[i + 1] == "=":
            if not _NAME.match(tok):
                raise NumberError(f"'{tok}' is not a parameter name")
            j = i + 2
            value: list[str] = []
            while j < n and not (j + 1 < n and tokens[j + 1] == "="):
                value.append(tokens[j])
                j += 1
            if not value:
                raise NumberError(f"the parameter {tok} has no value")
            pairs.append((tok, " ".join(value)))
            i = j
            continue
        if tok == "=":
            raise NumberError("an '=' with no parameter name before it")
        if pairs:
            raise NumberError(f"the field '{tok}' follows the name=value pairs")
        pos.append(tok)
        i += 1
    return pos, pairs


@functools.lru_cache(maxsize=65536)
def tokenize(text: str) -> tuple[tuple[str, ...], tuple[tuple[str, str], ...]]:
    """:func:`split_assignments` of :func:`fields` of a card, cached: a library repeats the
    same element lines in every subcircuit, and a shared subcircuit is expanded many times."""
    pos, pairs = split_assignments(fields(text))
    return tuple(pos), tuple(pairs)
