"""Numbers written in aligned columns, read without a text parser: the fast path for fixed-format node lines.

Pre-processors usually write node lines with one format, e.g. ``%d, %15.8e, %15.8e, %15.8e``: lines of
equal length then hold their decimal point, exponent letter and commas in the same columns. For such a
run of lines the columns are read as bytes, eight digits at a time in a 64-bit word (the SWAR digit
sum: pairs, then quadruples, then the eight-digit value), and each value is the digit integer m times
or divided by a power of ten 10^k. With m < 2^53 and |k| <= 22 both factors are exact doubles, so the
one rounding of that product or quotient is the correctly rounded value of the decimal: the same double
``strtod`` gives (Clinger 1990, "How to read floating point numbers accurately", the fast path).

Anything else gives None and the caller reads the text as before: lines of varying length beyond a few
runs, a field whose form differs from the first line's in the run (a decimal point elsewhere, a blank
or sign inside the digits, a ``D`` exponent, more than 8 digits before or after the point, an exponent
outside the fast path, nan or inf ...). So where this module answers, its table is the one the text
parsers give, bit for bit (``tests/parsers/test_aligned.py`` checks it against Python's ``float()`` and the
general keyword reader).
"""
from __future__ import annotations

import re
from typing import Optional

import numpy as np

#: a run of equal-length lines is read in blocks of this many lines (they stay in the processor's cache)
BLOCK = 16384
#: more runs of equal length than this in one piece: not an aligned layout
MAX_RUNS = 64

_TOKEN = re.compile(rb"([+-]?)(\d+)(?:\.(\d*))?(?:([eE])([+-]?)(\d{1,3}))?")
_P10 = 10.0 ** np.arange(23)
_U = np.uint64
_ONES = _U(0x0101010101010101)
_LOW, _HIGH = _U(0x0F0F0F0F0F0F0F0F), _U(0xF0F0F0F0F0F0F0F0)
_ZEROS, _BLANKS = _U(0x3030303030303030), _U(0x2020202020202020)
_MINUS, _PLUS = _U(0x2D2D2D2D2D2D2D2D), _U(0x2B2B2B2B2B2B2B2B)
#: value * _MUL[k + 22] / _DIV[k + 22] = value * 10**k for |k| <= 22, each factor exact
_MUL = np.concatenate((np.ones(22), _P10))
_DIV = np.concatenate((_P10[:0:-1], np.ones(23)))


def rows(raw: bytes, width: int) -> Optional[np.ndarray]:
    """(lines, width) float64 table of the lines of ``raw`` (each ending with LF) when they are written
    in aligned columns (missing fields 0, fields after ``width`` read and checked but not kept; stored
    column by column); None otherwise."""
    if not raw.endswith(b"\n"):
        return None
    buf = np.frombuffer(raw, dtype=np.uint8)
    runs = _runs(raw, buf)
    if runs is None:
        return None
    padded = np.frombuffer(b" " * 8 + raw, dtype=np.uint8)    # a word may start before the first line
    out = np.zeros((width, sum(k for _p, _L, k in runs)))      # column by column: filled contiguously
    at = 0
    for p, L, k in runs:
        fields = _layout(raw[p:p + L - 1])
        if fields is None:
            return None
        for b0 in range(0, k, BLOCK):
            n = min(BLOCK, k - b0)
            base = 8 + p + b0 * L
            block = padded[base:base + n * L].reshape(n, L)
            for j, field in enumerate(fields):
                col = _read(padded, base, block, field)
                if col is None:
                    return None
                if j < width:
                    out[j, at + b0:at + b0 + n] = col
        at += k
    return out.T


def _runs(raw: bytes, buf: np.ndarray) -> Optional[list]:
    """(offset, line length, lines) of the runs of lines of equal length; None when there are too many."""
    out, p, total = [], 0, len(raw)
    while p < total:
        L = raw.find(b"\n", p) - p + 1
        if L < 2:
            return None
        kmax = (total - p) // L
        ends = buf[p + L - 1::L][:kmax] == 10
        k = kmax if ends.all() else int(np.argmin(ends))
        out.append((p, L, k))
        p += k * L
        if len(out) > MAX_RUNS:
            return None
    return out


def _layout(first: bytes) -> Optional[list]:
    """Column layout of every comma-separated field of a run's first line, from its form there."""
    fields, a = [], 0
    for part in first.split(b","):
        b = a + len(part)
        s = part.strip(b" ")
        m = _TOKEN.fullmatch(s)
        if m is None:
            return None
        sign, ints, frac, e, esign, edig = m.groups()
        ts = a + part.index(s)
        dot = ts + len(sign) + len(ints)                # the column after the integer digits
        nfrac = len(frac) if frac is not None else 0
        if len(ints) > 8 or nfrac > 8:
            return None
        f = {"start": a, "end": b, "dot": dot if frac is not None else None, "nfrac": nfrac,
             "exp": None, "tail": ts + len(s), "sep": b if b < len(first) else None}
        if e is not None:
            f["exp"] = (dot + (1 + nfrac if frac is not None else 0), bool(esign), len(edig))
        fields.append(f)
        a = b + 1
    return fields


def _word(buf: np.ndarray, base: int, block: np.ndarray, end: int) -> np.ndarray:
    """The 8 bytes before column ``end`` of every line of a block starting at ``buf[base]``, as
    little-endian 64-bit words (``base + end >= 8``)."""
    n, L = block.shape
    return np.ndarray((n,), dtype="<u8", buffer=buf, offset=base + end - 8, strides=(L,)).astype(_U)


def _last_bytes(n: int) -> np.uint64:
    """Mask of the last ``n`` (1-8) characters of a word: its ``n`` highest bytes."""
    return _U(~((1 << (8 * (8 - n))) - 1) & 0xFFFFFFFFFFFFFFFF)


def _blank(block: np.ndarray, a: int, b: int) -> bool:
    """Whether columns ``a`` to ``b`` (exclusive) of every line of the block are blanks."""
    return all(bool((block[:, c] == 32).all()) for c in range(a, b))


def _nondigit(x: np.ndarray) -> np.ndarray:
    """Per byte a non-zero high nibble where the byte is not an ASCII digit, else 0."""
    return ((x & _HIGH) ^ _ZEROS) | (((x & _LOW) + _U(0x0606060606060606)) & _HIGH)


def _digits(x: np.ndarray) -> np.ndarray:
    """Per byte 0xFF where the byte is an ASCII digit, else 0."""
    flag = (((_nondigit(x) >> _U(4)) + _LOW) & _U(0x1010101010101010)) >> _U(4)   # 1 per non-digit byte
    return (flag ^ _ONES) * _U(0xFF)


def _value8(x: np.ndarray) -> np.ndarray:
    """The decimal value of 8 ASCII digits per word (first character in the lowest byte): each half
    summed in 32-bit lanes (pairs, then quadruples), then high half * 10^4 + low half."""
    v = x.view(np.uint32) & np.uint32(0x0F0F0F0F)
    v = (v * np.uint32(10) + (v >> np.uint32(8))) & np.uint32(0x00FF00FF)
    v = (v * np.uint32(100) + (v >> np.uint32(16))) & np.uint32(0x0000FFFF)
    v = v.reshape(-1, 2)
    return v[:, 0].astype(_U) * _U(10000) + v[:, 1]


def _read(buf: np.ndarray, base: int, block: np.ndarray, f: dict) -> Optional[np.ndarray]:
    """float64 values of one field over a block of lines; None when a line does not have the field's form."""
    start, dot, tail = f["start"], f["dot"], f["tail"]
    int_end = dot if dot is not None else (f["exp"][0] if f["exp"] is not None else tail)
    if f["sep"] is not None and not (block[:, f["sep"]] == 44).all():
        return None
    if not _blank(block, tail, f["end"]):               # blanks after the number
        return None
    # integer part: the last (up to) 8 columns before the point, B* [+-]? D+; wider: blanks before them
    width = int_end - start
    if width < 1 or not _blank(block, start, int_end - 8):
        return None
    x = _word(buf, base, block, int_end)
    if width < 8:                                       # bytes of the field before: read as blanks
        keep = _last_bytes(width)
        x = (x & keep) | (_BLANKS & ~keep)
    d8 = _digits(x)
    low = ~d8                                           # must be the low bytes only: blanks, then a sign
    if ((low & (low + _U(1))) != 0).any() or not (d8 >> _U(56) == 0xFF).all():
        return None
    top = low ^ (low >> _U(8))                          # the byte just before the digits
    rest = low ^ top
    if ((x & rest) != (_BLANKS & rest)).any():
        return None
    lead = x & top
    minus = lead == (_MINUS & top)
    if not (minus | (lead == (_PLUS & top)) | (lead == (_BLANKS & top))).all():
        return None
    mant = _value8((x & d8) | (_ZEROS & low))
    scale = 0
    if dot is not None:
        if not (block[:, dot] == 46).all():
            return None
        nfrac = f["nfrac"]
        if nfrac:
            y = _word(buf, base, block, dot + 1 + nfrac)
            keep = _last_bytes(nfrac)                   # leading zeros for the bytes before the fraction
            y = (y & keep) | (_ZEROS & ~keep)
            if _nondigit(y).any():
                return None
            mant = mant * _U(10 ** nfrac) + _value8(y)
        scale = -nfrac
    if (mant >= _U(1 << 53)).any():
        return None
    val = mant.astype(np.float64)
    if f["exp"] is not None:
        at, esigned, nd = f["exp"]
        e = block[:, at] | np.uint8(32)                 # E or e
        if not (e == 101).all():
            return None
        at += 1
        neg = None
        if esigned:
            sgn = block[:, at]
            neg = sgn == 45
            if not (neg | (sgn == 43)).all():
                return None
            at += 1
        ev = np.zeros(block.shape[0], dtype=np.int64)
        for c in range(at, at + nd):
            dc = block[:, c] - np.uint8(48)
            if not (dc < 10).all():
                return None
            ev = ev * 10 + dc
        k = scale + (np.where(neg, -ev, ev) if neg is not None else ev)
        if (np.abs(k) > 22).any():
            return None
        k += 22
        val = val * _MUL[k] / _DIV[k]                   # one of the two is 1: one rounding
    elif scale:
        val = val / _P10[-scale]
    if minus.any():
        val = np.where(minus, -val, val)
    return val
