"""Mesh blocks of an FEBio model as byte ranges, and the small rest of the file as XML.

``<Nodes>``, ``<Elements>`` and the other per-item blocks (surfaces, sets, mesh data) are most
of the bytes of a model. They are located by scanning the bytes for their tags and cut out of
the text handed to the XML parser: their content is replaced by a comment holding as many newlines
as it held, so every line number of the remaining skeleton stays the line number in the file. Items are
counted with ``bytes.count`` and parsed with numpy only when a rule asks for them.
"""
from __future__ import annotations

import re
from dataclasses import dataclass, field

#: blocks whose content is one short line per item; cut out of the skeleton
BULK_TAGS = (b"Nodes", b"Elements", b"Surface", b"NodeSet", b"ElementSet", b"Edge", b"ElementData",
             b"NodeData", b"SurfaceData", b"DiscreteSet")
#: the item tag counted in each block (None: not counted)
ITEM_TAG = {b"Nodes": b"<node", b"Elements": b"<elem", b"ElementData": b"<e", b"NodeData": b"<n",
            b"NodeSet": b"<n", b"ElementSet": b"<e"}
_OPEN = re.compile(rb"<(" + b"|".join(BULK_TAGS) + rb")(?=[\s/>])([^>]*)>")
_ATTR = re.compile(rb"""([A-Za-z_][\w.\-]*)\s*=\s*(?:"([^"]*)"|'([^']*)')""")
#: blocks smaller than this stay in the skeleton (nodes and elements are always cut out)
MIN_CUT = 4096


@dataclass(slots=True)
class Block:
    """One cut-out block: its tag, attributes, line of the opening tag and the byte range of its content."""

    tag: str
    attrib: dict
    line: int
    start: int
    end: int
    count: int = 0


@dataclass
class Scan:
    skeleton: bytes
    blocks: list[Block] = field(default_factory=list)


def _attrs(raw: bytes) -> dict:
    out = {}
    for m in _ATTR.finditer(raw):
        val = m.group(2) if m.group(2) is not None else m.group(3)
        out[m.group(1).decode("latin-1")] = val.decode("utf-8", "replace")
    return out


def _in_comment(data: bytes, pos: int, last_cut: int) -> bool:
    """Whether ``pos`` is inside an XML comment or CDATA section opened after ``last_cut``."""
    for opener, closer in ((b"<!--", b"-->"), (b"<![CDATA[", b"]]>")):
        o = data.rfind(opener, last_cut, pos)
        if o >= 0 and data.find(closer, o, pos) < 0:
            return True
    return False


def scan(data: bytes) -> Scan:
    """Cut the bulk blocks out of ``data`` (bytes of the whole file)."""
    parts: list[bytes] = []
    blocks: list[Block] = []
    pos = 0            # next byte not yet copied to the skeleton
    search = 0
    line = 1           # line number at ``pos``
    while True:
        m = _OPEN.search(data, search)
        if m is None:
            break
        if m.group(2).rstrip().endswith(b"/") or _in_comment(data, m.start(), pos):
            search = m.end()
            continue
        tag = m.group(1)
        close = data.find(b"</" + tag + b">", m.end())
        if close < 0:
            break      # unclosed: the XML parser reports it
        start, end = m.end(), close
        small = end - start < MIN_CUT and tag not in (b"Nodes", b"Elements")
        if small:
            search = m.end()    # small: leave it to the XML parser
            continue
        # (a block nested in one of its own tag would leave a stray closing tag: the XML parser reports it)
        line += data.count(b"\n", pos, m.start())
        item = ITEM_TAG.get(tag)
        count = data.count(item, start, end) if item else 0
        if item == b"<e" or item == b"<n":      # "<e" also counts "<elem"-like tags; only exact ones
            count = data.count(item + b" ", start, end) + data.count(item + b">", start, end)
        blocks.append(Block(tag.decode(), _attrs(m.group(2)), line, start, end, count))
        newlines = data.count(b"\n", start, end)
        parts.append(data[pos:start])
        # inside a comment, so that the XML parser skips them in C instead of reporting character data
        parts.append(b"<!--" + b"\n" * newlines + b"-->")
        line += data.count(b"\n", m.start(), start) + newlines
        pos = search = end
    parts.append(data[pos:])
    return Scan(b"".join(parts), blocks)
