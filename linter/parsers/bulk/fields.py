"""Field-level reading of Nastran-style bulk data: numbers and the three field formats.

Scalar helpers (``real``, ``integer``, ``split_line``) serve the few cards read one by
one (materials, properties, loads); the ``vec_*`` helpers read whole columns of many
cards of one name at once with numpy (GRID and element cards), from a byte buffer and
arrays of field start/end offsets. Facts: NASTRAN-95 User's Manual 2.4.1 (field formats, numbers);
MYSTRAN source FFIELD.f90.
"""
from __future__ import annotations

import math
import re
from typing import Optional

import numpy as np

# a sign that follows a mantissa digit or '.', with no exponent letter: 7.85-9 -> 7.85E-9
_COMPACT = re.compile(r"(?<=[0-9.])([+-])")


class FieldError(ValueError):
    """A field that is not the number its card needs."""


def real(text: str) -> Optional[float]:
    """A bulk real field: None when blank. Accepts 7.85-9, 2.1+5, 1.+5, .3, 1.E3, 1.D3, -.5-3.

    Integers are accepted too (many dialects read them where a real is expected); the
    caller can tell with :func:`is_integer_text`. Raises FieldError on anything else.
    """
    try:                      # most fields are plain numbers; float() accepts none that the rewrite below would change
        return float(text)
    except ValueError:
        pass
    s = text.strip().upper()
    if not s:
        return None
    s = s.replace("D", "E")
    if "E" not in s:
        s = s[0] + _COMPACT.sub(r"E\1", s[1:])
    try:
        return float(s)
    except ValueError:
        raise FieldError(f"'{text.strip()}' is not a number") from None


def integer(text: str) -> Optional[int]:
    s = text.strip()
    if not s:
        return None
    try:
        return int(s)
    except ValueError:
        raise FieldError(f"'{s}' is not an integer") from None


def is_integer_text(text: str) -> bool:
    s = text.strip()
    return bool(s) and s.lstrip("+-").isdigit()


def split_line(line: str) -> tuple[str, list[str], bool]:
    """(name or marker, data fields, large) of one physical bulk line (comment already removed).

    Free field (a comma anywhere; tabs were turned into commas): fields 2-9 of a small
    entry, or 2-5 of a large one when the name/marker carries ``*``; fixed small field:
    eight 8-column fields after the name; fixed large field: four 16-column fields.
    Field 10 (continuation id) is dropped. The data list always has 8 (small) or 4 (large) items.
    """
    if "," in line:
        parts = line.split(",")
        name = parts[0].strip()
        large = "*" in name
        n = 4 if large else 8
        data = [p.strip() for p in parts[1:1 + n]]
        data += [""] * (n - len(data))
        return name, data, large
    name = line[:8].strip()
    large = "*" in name
    if large:
        data = [line[8 + 16 * k: 24 + 16 * k].strip() for k in range(4)]
    else:
        data = [line[8 + 8 * k: 16 + 8 * k].strip() for k in range(8)]
    return name, data, large


def continuation_marker(line: str, large: bool) -> str:
    """Field 10 of a physical line (the continuation id), '' when blank."""
    if "," in line:
        parts = line.split(",")
        n = 5 if large else 9
        return parts[n].strip() if len(parts) > n else ""
    return line[72:80].strip()


# --------------------------------------------------------------------------- vectorised


PAD = 128   # blanks the line table appends to the buffer, so that windows never run past its end


def gather(buf: np.ndarray, start: np.ndarray, end: np.ndarray, width: int) -> np.ndarray:
    """(n, width) uint8 matrix of the bytes buf[start:end] per row, padded with blanks (truncated to width).

    ``buf`` must end with at least ``width`` spare bytes (see ``PAD``); rows are copied
    from a sliding-window view, without an index matrix.
    """
    n = start.shape[0]
    if n == 0:
        return np.zeros((0, width), dtype=np.uint8)
    win = np.lib.stride_tricks.sliding_window_view(buf, width)
    out = win[np.minimum(start, win.shape[0] - 1)]
    out[np.arange(width)[None, :] >= (end - start)[:, None]] = 32
    return out


def _width(start: np.ndarray, end: np.ndarray, cap: int) -> int:
    return int(min(max(int((end - start).max(initial=1)), 1), cap))


def vec_int(buf: np.ndarray, start: np.ndarray, end: np.ndarray, width: int = 16
            ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Integers of many fields at once: (values int64, blank mask, bad mask); bad and blank fields read 0."""
    w = _width(start, end, width)
    m = gather(buf, start, end, w)
    blank = (m == 32).all(axis=1)
    m[blank, 0] = 48
    s = np.ascontiguousarray(m).view(f"S{w}").ravel()
    bad = (end - start) > width
    try:
        vals = s.astype(np.int64)
    except (ValueError, OverflowError):
        vals = np.zeros(s.shape[0], dtype=np.int64)
        bad = bad.copy()
        for i in range(s.shape[0]):
            try:
                vals[i] = int(s[i])
            except (ValueError, OverflowError):
                bad[i] = True
    vals[blank | bad] = 0
    return vals, blank, bad


def vec_real(buf: np.ndarray, start: np.ndarray, end: np.ndarray, width: int = 16
             ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Reals of many fields at once: (values float64 with nan for blank/bad, blank mask, bad mask)."""
    w = _width(start, end, width)
    m = gather(buf, start, end, w)
    blank = (m == 32).all(axis=1)
    s = np.ascontiguousarray(m).view(f"S{w}").ravel()
    vals = np.full(s.shape[0], np.nan)
    bad = np.zeros(s.shape[0], dtype=bool)
    ok = ~blank
    try:
        vals[ok] = s[ok].astype(np.float64)
    except ValueError:
        # compact exponents (7.85-9), D exponents or junk: read those one by one
        for i in np.flatnonzero(ok):
            try:
                v = real(s[i].decode("latin-1"))
                vals[i] = np.nan if v is None else v
            except FieldError:
                bad[i] = True
    return vals, blank, bad


def finite(value: Optional[float]) -> bool:
    return value is not None and math.isfinite(value)
