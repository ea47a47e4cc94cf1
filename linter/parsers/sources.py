"""Reading deck files safely: size limit, encoding detection, line ends. Never writes.

Parsers work on bytes (UTF-8 or an ASCII-compatible 8-bit encoding) with ``\\n``
line ends; :func:`read_deck_bytes` delivers exactly that and says what it did.
"""
from __future__ import annotations

import io
import os
import stat
from dataclasses import dataclass
from typing import Optional

BOMS = (
    (b"\xef\xbb\xbf", "utf-8-sig"),
    (b"\xff\xfe", "utf-16-le"),
    (b"\xfe\xff", "utf-16-be"),
)


class SourceError(Exception):
    """A file that cannot be read as a deck. ``code`` names the parse rule that reports it."""

    def __init__(self, code: str, message: str):
        super().__init__(message)
        self.code = code
        self.message = message


@dataclass
class Source:
    path: str
    data: bytes          # ASCII-compatible bytes, "\n" line ends
    encoding: str        # what the file was: utf-8, utf-8-sig, utf-16-le, latin-1 ...
    line_ends: str       # "lf", "crlf", "cr", "mixed"


#: control characters that do not occur in text decks (TAB, LF, VT, FF, CR and ESC excluded)
_CONTROL = bytes(b for b in range(32) if not (9 <= b <= 13 or b == 27))


def looks_binary(head: bytes) -> bool:
    """NUL bytes (outside UTF-16) or many control characters mean the file is not text."""
    if not head:
        return False
    if any(head.startswith(bom) for bom, enc in BOMS if enc.startswith("utf-16")):
        return False
    if b"\x00" in head:
        return True
    ctrl = len(head) - len(head.translate(None, _CONTROL))
    return ctrl > len(head) * 0.05


def special_kind(mode: int) -> str:
    """What a file that is not regular is, in words."""
    for test, name in ((stat.S_ISFIFO, "a named pipe (FIFO)"), (stat.S_ISCHR, "a character device"),
                       (stat.S_ISBLK, "a block device"), (stat.S_ISSOCK, "a socket")):
        if test(mode):
            return name
    return "a special file"


def not_regular(path: str):
    """None for a regular file (or a path that cannot be stat'ed); else why it is refused."""
    try:
        mode = os.stat(path).st_mode
    except OSError:
        return None
    if stat.S_ISREG(mode) or stat.S_ISDIR(mode):
        return None
    return f"is {special_kind(mode)}, not a regular file; refused (reading it could block or never end)"


#: bytes read at a time when characters are replaced while reading
READ_BLOCK = 1 << 20


def checked_size(path: str, max_size: int) -> int:
    """The size of a regular file within ``max_size``; else :class:`SourceError` saying why not."""
    try:
        st = os.stat(path)
    except FileNotFoundError:
        raise SourceError("file-unreadable", "file not found") from None
    except OSError as exc:
        raise SourceError("file-unreadable", f"cannot read the file ({exc.strerror or exc})") from None
    if stat.S_ISDIR(st.st_mode):
        raise SourceError("file-unreadable", "is a directory, not a file")
    if not stat.S_ISREG(st.st_mode):
        raise SourceError("file-unreadable", f"is {special_kind(st.st_mode)}, not a regular file; refused "
                          "(reading it could block or never end)")
    if st.st_size > max_size:
        raise SourceError("file-too-large",
                          f"file is {st.st_size / 2**20:.1f} MiB, over the limit of {max_size / 2**20:.0f} MiB "
                          "(raise max_file_size_mb to check it)")
    return st.st_size


def read_deck_bytes(path: str, max_size: int, tabs_to: Optional[bytes] = None) -> Source:
    """The deck's bytes (see the module docstring). ``tabs_to``: every TAB becomes this one byte, the same
    as ``read_deck_bytes(path, max_size).data.replace(b"\\t", tabs_to)`` but done block by block while
    reading, so that the file is held once (no second full-size copy)."""
    size = checked_size(path, max_size)
    try:
        with open(path, "rb") as fh:
            if tabs_to is None:
                data = fh.read(size + 1)                 # a buffer of the file's size, not of the limit
                if len(data) > size:                     # the file grew since: read on, up to the limit
                    data += _read_upto(fh, max_size + 1 - len(data))
            else:
                data = _read_replacing(fh, size, max_size, tabs_to)
    except OSError as exc:
        raise SourceError("file-unreadable", f"cannot read the file ({exc.strerror or exc})") from None
    encoding = "utf-8"
    for bom, enc in BOMS:
        if data.startswith(bom):
            encoding = enc
            break
    if encoding.startswith("utf-16"):
        try:
            data = data.decode(encoding).encode("utf-8")
        except UnicodeDecodeError:
            raise SourceError("binary-file", f"starts with a {encoding} byte-order mark but does not decode") from None
        if tabs_to is not None and b"\t" in data:     # the bytes were read as they are: replace after decoding
            data = data.replace(b"\t", tabs_to)
        if data.startswith(b"\xef\xbb\xbf"):
            data = data[3:]
    elif encoding == "utf-8-sig":
        data = data[3:]
    elif looks_binary(data[:8192]):
        raise SourceError("binary-file", "is a binary file, not a text deck")
    line_ends = "lf"
    if b"\r" in data:
        crlf = data.count(b"\r\n")
        cr = data.count(b"\r") - crlf
        lf = data.count(b"\n") - crlf
        line_ends = "crlf" if crlf and not cr and not lf else ("cr" if cr and not crlf and not lf else "mixed")
        data = data.replace(b"\r\n", b"\n").replace(b"\r", b"\n")
    if encoding == "utf-8" and not data.isascii():  # isascii() is a fast scan; most decks are ASCII
        try:
            data.decode("utf-8")
        except UnicodeDecodeError:
            encoding = "latin-1"
    return Source(path=path, data=data, encoding=encoding, line_ends=line_ends)


def _read_replacing(fh, size: int, max_size: int, new: bytes) -> bytes:
    """Up to ``max_size + 1`` bytes of ``fh`` with every TAB made ``new``, replaced block by block in the
    one buffer the result is made of (``io.BytesIO.getvalue`` hands that buffer over without a copy).
    A file that starts with a UTF-16 byte-order mark is read as it is (its bytes are not ASCII text)."""
    import numpy as np

    bio = io.BytesIO(bytes(min(size, max_size + 1)))      # zero pages: memory is taken as they are filled
    code = new[0]                                         # one byte
    got, done, utf16, seg = 0, 0, None, None
    with bio.getbuffer() as view:
        arr = np.frombuffer(view, dtype=np.uint8) if len(view) else None   # the same buffer, written in place
        while got < len(view):
            n = fh.readinto(view[got:got + READ_BLOCK])
            got += n
            if utf16 is None and (got >= 2 or not n):      # a byte-order mark needs two bytes to be seen
                utf16 = any(bytes(view[:2]) == bom for bom, enc in BOMS if enc.startswith("utf-16"))
            if utf16 is False:
                seg = arr[done:got]
                seg[seg == 9] = code
                done = got
            if not n:
                break
        del arr, seg                                      # no array may outlive the buffer's export
    if got < size:                                       # the file is shorter than when it was stat'ed
        bio.truncate(got)
    elif got <= max_size:                                # ... or longer: the rest, up to the limit
        rest = _read_upto(fh, max_size + 1 - got)
        if rest:
            if utf16 is None:                            # the file was empty when it was stat'ed
                utf16 = any(rest.startswith(bom) for bom, enc in BOMS if enc.startswith("utf-16"))
            bio.seek(got)
            bio.write(rest if utf16 else rest.replace(b"\t", new))
    data = bio.getvalue()
    del bio
    return data


def _read_upto(fh, n: int) -> bytes:
    """At most ``n`` more bytes of ``fh``, read a block at a time (``fh.read(n)`` would first take a buffer of
    ``n`` bytes, the whole size limit, even at the end of the file)."""
    parts, got = [], 0
    while got < n:
        more = fh.read(min(READ_BLOCK, n - got))
        if not more:
            break
        parts.append(more)
        got += len(more)
    return b"".join(parts)


def text(raw: bytes) -> str:
    """Decode a piece of a deck for display and names: UTF-8, falling back to latin-1."""
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError:
        return raw.decode("latin-1")
