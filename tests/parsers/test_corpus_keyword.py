"""The keyword parser over the shared corpus of real CalculiX decks (skipped when the corpus is absent)."""
from __future__ import annotations

import contextlib
import io
import os
import re
import warnings

import pytest

from linter.model import norm_key
from linter.parsers import ParseOptions
from linter.parsers import keyword as K

#: an independent, deliberately simple reading of *MATERIAL cards and *INCLUDE lines
MATERIAL_RE = re.compile(rb"^[ \t]*\*[ \t]*MATERIAL[ \t]*,[^\n]*?NAME[ \t]*=[ \t]*([^,\r\n]+)", re.I | re.M)
INCLUDE_RE = re.compile(rb"^[ \t]*\*[ \t]*INCLUDE[ \t]*,[^\n]*?INPUT[ \t]*=[ \t]*([^,\r\n]+)", re.I | re.M)


def _decks(corpus_dir):
    folder = corpus_dir / "keyword"
    decks = sorted(folder.glob("*.inp"))
    if not decks:
        pytest.skip("no keyword decks in the corpus")
    return decks


def _material_names(path, seen=None):
    seen = set() if seen is None else seen
    if path in seen or not os.path.isfile(path):
        return []
    seen.add(path)
    data = open(path, "rb").read()
    names = [norm_key(m.group(1).decode("latin-1")) for m in MATERIAL_RE.finditer(data)]
    for inc in INCLUDE_RE.finditer(data):
        name = inc.group(1).decode("latin-1").strip().strip('"')
        names += _material_names(os.path.join(os.path.dirname(path), name), seen)
    return names


def test_every_corpus_deck_parses_and_keeps_every_material(corpus_dir):
    decks = _decks(corpus_dir)
    total = 0
    for path in decks:
        model = K.parse(str(path), ParseOptions())
        expected = _material_names(str(path))
        got = [m.key for m in model.materials.values()] + [m.key for m in model.duplicate_materials]
        assert sorted(got) == sorted(expected), path.name
        for mat in model.materials.values():
            assert mat.loc.line >= 1 and mat.loc.path
        for iss in model.issues:
            assert iss.loc.line >= 1, (path.name, iss)
        total += len(expected)
    assert total > 100  # the corpus holds 183 *MATERIAL cards (grep count)


def test_element_counts_agree_with_meshio_on_the_decks_it_reads(corpus_dir):
    # external reference: meshio's Abaqus-format reader (one cell block per *ELEMENT card);
    # meshio stops on many CalculiX decks (unknown keywords, types), those are left out
    meshio = pytest.importorskip("meshio")
    compared = 0
    for path in _decks(corpus_dir):
        if path.stat().st_size > 2_000_000:
            continue
        try:
            with contextlib.redirect_stdout(io.StringIO()), contextlib.redirect_stderr(io.StringIO()), \
                    warnings.catch_warnings():
                warnings.simplefilter("ignore")
                mesh = meshio.read(str(path), file_format="abaqus")
        except (Exception, SystemExit):
            continue
        ours = [b.count for b in K.parse(str(path), ParseOptions()).element_blocks if b.count]
        theirs = [len(c.data) for c in mesh.cells if len(c.data)]
        assert sorted(ours) == sorted(theirs), path.name
        compared += 1
    assert compared >= 20


def test_lazy_ids_match_counts_on_the_corpus(corpus_dir):
    for path in _decks(corpus_dir)[::5]:
        model = K.parse(str(path), ParseOptions())
        for blk in model.element_blocks:
            ids = blk.ids.get()
            assert ids.size == blk.count, (path.name, blk.loc)
            assert blk.conn.get().shape == (blk.count, blk.nodes), (path.name, blk.loc)
