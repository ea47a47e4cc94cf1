"""Sweep over the shared MYSTRAN corpus (skipped when absent): every deck parses without an
exception, and every MAT1/MAT2/MAT8/MAT9 entry is extracted (counted here independently)."""
from __future__ import annotations

import re

import pytest

from linter.parsers import ParseOptions, bulk

CARD = re.compile(r"^(MAT1|MAT2|MAT8|MAT9)(\*?)(?=[ ,\t]|$)", re.IGNORECASE)


def count_cards(path) -> dict[str, int]:
    """MAT1/2/8/9 entries in a file by a plain scan: the card name in the first field of a line."""
    out: dict[str, int] = {}
    in_bulk = False
    with open(path, "rb") as fh:
        for raw in fh:
            line = raw.decode("latin-1").lstrip(" ") if b"," in raw[:10] else raw.decode("latin-1")
            up = line.upper()
            if up.strip().startswith("BEGIN BULK"):
                in_bulk = True
                continue
            if up.strip().startswith("ENDDATA"):
                break
            m = CARD.match(up)
            if in_bulk and m:
                out[m.group(1)] = out.get(m.group(1), 0) + 1
    return out


def test_bulk_corpus(corpus_dir):
    files = sorted((corpus_dir / "bulk").glob("*.DAT"))
    if not files:
        pytest.skip("no bulk decks in the corpus")
    total = 0
    for path in files:
        model = bulk.parse(str(path), ParseOptions())   # must not raise
        expected = count_cards(path)
        got: dict[str, int] = {}
        for mat in list(model.materials.values()) + model.duplicate_materials:
            for blk in mat.blocks:
                if blk.kind == "elastic" and blk.card in ("MAT1", "MAT2", "MAT8", "MAT9"):
                    got[blk.card] = got.get(blk.card, 0) + 1
        assert got == expected, path.name
        total += sum(expected.values())
        assert all(i.loc.line >= 1 for i in model.issues)
    assert total > 100
