"""Lexical layer of the keyword-deck parser: keyword lines, data lines, fields and numbers.

Mirrors how CalculiX reads a deck (CalculiX CrunchiX User's Manual, input deck format; ccx source
getnewline.f, splitline.f): blanks and tabs carry no
meaning, ``**`` starts a comment line, a trailing comma adds no empty field, at most
16 fields per line, reals are read with ``(f20.0)`` from the first 20 characters.
"""
from __future__ import annotations

import math
import re
from dataclasses import dataclass, field
from typing import Iterator, Optional

from ...model import Issue, Loc
from ..sources import text

MAX_FIELDS = 16
REAL_WIDTH = 20
_BLANKS = re.compile(r"[ \t]+")
#: Fortran reals: 1.2D3, 1.5d-3, and the exponent without a letter (1.5-3 = 1.5e-3)
_FORTRAN_EXP = re.compile(r"^([+-]?(?:\d+\.?\d*|\.\d+))([+-]\d+)$")
_INT = re.compile(r"^[+-]?\d+$")


def squeeze(s: str) -> str:
    """Remove every blank and tab (ccx does this before it reads a line)."""
    return _BLANKS.sub("", s)


def to_float(s: str) -> Optional[float]:
    """A number in any Fortran/free form, or None when ``s`` is not a number. Empty -> 0.0."""
    if not s:
        return 0.0
    t = s.replace("D", "E").replace("d", "e")
    try:
        return float(t)
    except ValueError:
        pass
    m = _FORTRAN_EXP.match(t)
    if m:
        return float(m.group(1) + "e" + m.group(2))
    return None


def is_int(s: str) -> bool:
    return bool(_INT.match(s))


@dataclass
class KeywordLine:
    """``*KEY, PAR1, PAR2=value``: keyword and parameter names normalised, values as written."""

    key: str                                  # e.g. "SOLIDSECTION"
    written: str                              # keyword as written (for display), e.g. "*SOLID SECTION"
    params: dict[str, str] = field(default_factory=dict)   # NAME -> value as written ("" for flags)
    order: list[str] = field(default_factory=list)          # parameter names in the order given
    loc: Loc = None                           # type: ignore[assignment]
    continued: bool = False                   # the line ends with a comma

    def get(self, name: str, default: Optional[str] = None) -> Optional[str]:
        return self.params.get(name, default)

    def upper(self, name: str, default: str = "") -> str:
        """A parameter value normalised for comparison (upper case, no blanks)."""
        v = self.params.get(name)
        return default if v is None else squeeze(v).upper()


def parse_keyword_line(raw: bytes, loc: Loc) -> KeywordLine:
    s = text(raw).strip()
    body = s.lstrip()[1:]
    parts = body.split(",")
    continued = s.rstrip().endswith(",")
    kw = KeywordLine(key=squeeze(parts[0]).upper(), written="*" + parts[0].strip(), loc=loc, continued=continued)
    for part in parts[1:]:
        if not part.strip():
            continue
        if "=" in part:
            name, value = part.split("=", 1)
            value = value.strip()
        else:
            name, value = part, ""
        name = squeeze(name).upper()
        kw.params[name] = value
        kw.order.append(name)
    return kw


@dataclass
class DataLine:
    loc: Loc
    fields: list[str]          # blanks removed; trailing comma dropped; at most 16 kept
    raw: str


class Reader:
    """Per-file helper: line numbers, issues, data lines of a byte range."""

    def __init__(self, data: bytes, path: str, issues: list[Issue]):
        self.data = data
        self.path = path
        self.issues = issues

    def issue(self, code: str, message: str, line: int, material: Optional[str] = None, **data) -> None:
        self.issues.append(Issue(code, message, Loc(self.path, line), material=material, data=data))

    def lines(self, start: int, end: int, first_line: int) -> Iterator[DataLine]:
        """Data lines (not comments, not blank) of ``data[start:end]``; ``first_line`` is the line of ``start``."""
        n = first_line
        for raw in self.data[start:end].split(b"\n"):
            s = raw.strip()
            if s and not s.startswith(b"**"):
                t = text(s)
                fields = squeeze(t).split(",")
                if len(fields) > 1 and fields[-1] == "":
                    fields.pop()
                if len(fields) > MAX_FIELDS:
                    self.issue("too-many-fields", f"{len(fields)} fields on one line; CalculiX reads at most "
                               f"{MAX_FIELDS} and stops", n, fields=len(fields))
                    fields = fields[:MAX_FIELDS]
                yield DataLine(Loc(self.path, n), fields, t)
            n += 1

    def real(self, f: str, line: DataLine, what: str, material: Optional[str] = None,
             empty_is_issue: bool = True) -> Optional[float]:
        """Read one real field as ccx does; records issues; None when it is not a number."""
        if f == "":
            if empty_is_issue:
                self.issue("empty-field", f"{what} is empty and is read as 0", line.loc.line,
                           material=material, field=what)
            return 0.0
        v = to_float(f)
        if v is None:
            self.issue("malformed-data", f"'{f}' is not a number ({what}); the line is skipped",
                       line.loc.line, material=material, field=what, written=f)
            return None
        if len(f) > REAL_WIDTH:
            cut = to_float(f[:REAL_WIDTH])
            if cut is None:                      # ccx 2.20 run: "*ERROR reading *ELASTIC" on such a field
                self.issue("number-truncated", f"{what} '{f}' has {len(f)} characters; CalculiX reads only the "
                           f"first {REAL_WIDTH} ('{f[:REAL_WIDTH]}'), which is not a number, and stops",
                           line.loc.line, material=material, field=what, written=f, read_as=None)
                return None
            if cut != v:
                self.issue("number-truncated", f"{what} '{f}' has {len(f)} characters; CalculiX reads only the "
                           f"first {REAL_WIDTH} and gets {cut:g} instead of {v:g}", line.loc.line,
                           material=material, field=what, written=f, read_as=cut)
                v = cut
        if not math.isfinite(v):
            self.issue("value-not-finite", f"{what} '{f}' is not a finite number", line.loc.line,
                       material=material, field=what, written=f)
            return None
        return v
