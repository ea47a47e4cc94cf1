"""The FEBio parser over the shared corpus of real models (skipped when the corpus is absent).

Every model is read without an internal finding; every <material> found by an independent byte
scan is in the model; element and node counts agree with a plain count of the item tags.
"""
from __future__ import annotations

import re

import pytest

from febio_decks import check_path
from linter.parsers import ParseOptions, detect
from linter.parsers import febio as F

MATERIAL_RE = re.compile(rb"<material\s[^>]*?name=\"([^\"]*)\"")
ROOT_RE = re.compile(rb"<(febio_spec|febio_optimize)\b")
NODES_RE = re.compile(rb"<Nodes\b[^>]*>(.*?)</Nodes>", re.S)
ELEMENTS_RE = re.compile(rb"<Elements\b[^>]*>(.*?)</Elements>", re.S)


def _files(corpus_dir):
    files = sorted((corpus_dir / "febio").glob("*.feb"))
    if not files:
        pytest.skip("no FEBio models in the corpus")
    return files


def _models(corpus_dir):
    out, others = [], []
    for p in _files(corpus_dir):
        m = ROOT_RE.search(p.read_bytes()[:4096])
        (out if m and m.group(1) == b"febio_spec" else others).append(p)
    return out, others


@pytest.mark.corpus
def test_every_model_is_read_without_internal_findings(corpus_dir):
    models, _others = _models(corpus_dir)
    bad = []
    for p in models:
        report = check_path(p)
        internal = [f for f in report.findings if f.rule.startswith("internal/") or f.rule.startswith("parse/xml")
                    or f.rule == "parse/unsupported-version"]
        if internal or report.incomplete:
            bad.append((p.name, [(f.rule, f.message) for f in internal]))
    assert not bad, bad[:5]
    assert len(models) > 200


@pytest.mark.corpus
def test_optimisation_files_are_not_taken_for_models(corpus_dir):
    # febio_optimize files drive parameter fits over a model; they hold no model themselves
    _models_, others = _models(corpus_dir)
    for p in others:
        assert detect(str(p), p.read_bytes()[:65536]) is None, p.name


@pytest.mark.corpus
def test_every_material_and_element_is_in_the_model(corpus_dir):
    models, _others = _models(corpus_dir)
    for p in models:
        data = p.read_bytes()
        m = F.parse(str(p), ParseOptions(display_path=str(p)))
        names = [n.decode("latin-1") for n in MATERIAL_RE.findall(data)]
        got = [x.name for x in m.materials.values()] + [x.name for x in m.duplicate_materials]
        assert sorted(got) == sorted(names), p.name
        assert sum(b.count for b in m.element_blocks) == sum(x.count(b"<elem ") for x in ELEMENTS_RE.findall(data))
        assert m.geometry.node_count == sum(x.count(b"<node ") for x in NODES_RE.findall(data)), p.name
        for b in m.element_blocks:          # lazy arrays agree with the counts
            if b.count and b.count < 5000 and b.conn is not None:
                assert b.conn.get().shape == (b.count, b.nodes), (p.name, b.type)


@pytest.mark.corpus
def test_corpus_error_findings_are_the_judged_ones(corpus_dir):
    """Error-level findings on the corpus, each judged (see DEVELOPERS.md, FEBio corpus notes)."""
    models, _others = _models(corpus_dir)
    judged = {"units/mismatch", "element/volumetric-locking"}
    seen = set()
    for p in models:
        for f in check_path(p).findings:
            if f.severity == "error":
                seen.add(f.rule)
    assert seen <= judged, seen - judged
