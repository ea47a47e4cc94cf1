"""Corpus sweep: real decks written by others must not get an error-level units/mismatch, except
decks that really mix units (listed below with the evidence), and the derivation never fails.

Decks are test data only (``corpus_dir`` fixture; skipped when absent). A format whose parser module
is not importable yet is skipped with the reason.
"""
from __future__ import annotations

import collections
import importlib

import pytest

#: decks that really mix unit systems, with the evidence (values as written in the deck)
KNOWN_MIXED = {
    # *ELASTIC 1E7,.3 (aluminium in psi: 1e7 psi = 68.9 GPa) with *DENSITY 7.8E-9 (steel in t/mm^3);
    # *FREQUENCY reads both, so E/rho and the frequencies have no consistent unit system
    "simplebeampipe3.inp": "error",
    # *ELASTIC 210000.,0.3 (MPa) with *DENSITY 7850. (kg/m^3); only *STATIC steps: density unused -> note
    "rot1.inp": "note",
    "rot3.inp": "note",
}

#: decks whose system is clear from their values (values as written in the deck)
EXPECTED_SYSTEM = {
    "channel1.inp": "m-kg-s",        # water *DENSITY 1000., GRAV 9.81 (read from the corpus deck itself)
    "thermomech.inp": "mm-tonne-s",  # *ELASTIC 210000, *DENSITY 7.8E-9, *SPECIFIC HEAT 446.E6 (CalculiX manual mm-N-s)
    "furnace.inp": "m-kg-s",         # *DENSITY 7800., *SPECIFIC HEAT 446. (SI)
}


def _parser_or_skip(fmt: str):
    from linter import parsers

    module = getattr(parsers, "BUILTIN", {}).get(fmt, f"linter.parsers.{fmt}")
    try:
        importlib.import_module(module)
    except ImportError as exc:
        pytest.skip(f"the {fmt} parser is not importable yet ({exc})")


def _sweep(folder):
    from linter.check import check_paths
    from linter.config import Config

    if not folder.is_dir() or not any(folder.iterdir()):
        pytest.skip(f"corpus folder {folder.name} is empty or absent")
    return check_paths([str(folder)], Config(select=["units", "internal"]))


def test_keyword_corpus_units(corpus_dir):
    _parser_or_skip("keyword")
    res = _sweep(corpus_dir / "keyword")
    assert res.files
    failed = [f for f in res.findings if f.rule == "internal/derive-failed"
              and f.data.get("step") == "unit system"]
    assert not failed, failed[:3]
    mism = collections.defaultdict(set)
    for f in res.findings:
        if f.rule == "units/mismatch":
            mism[f.path.rsplit("/", 1)[-1]].add(f.severity)
    errors = {name for name, sev in mism.items() if "error" in sev}
    present = {r.path.rsplit("/", 1)[-1] for r in res.files}
    assert errors == {n for n, s in KNOWN_MIXED.items() if s == "error" and n in present}
    for name, sev in KNOWN_MIXED.items():
        if name in present:
            assert sev in mism.get(name, set()), f"{name}: the known mix is no longer reported"
    systems = {r.path.rsplit("/", 1)[-1]: (r.unit_system or {}).get("name") for r in res.files}
    for name, expect in EXPECTED_SYSTEM.items():
        if name in present:
            assert systems[name] == expect, name
    assert all(r.unit_system is not None for r in res.files)


def test_bulk_corpus_units(corpus_dir):
    _parser_or_skip("bulk")
    res = _sweep(corpus_dir / "bulk")
    assert res.files
    failed = [f for f in res.findings if f.rule == "internal/derive-failed"
              and f.data.get("step") == "unit system"]
    assert not failed, failed[:3]
    errors = sorted({f.path.rsplit("/", 1)[-1] for f in res.findings
                     if f.rule == "units/mismatch" and f.severity == "error"})
    assert errors == sorted(n for n, s in KNOWN_MIXED_BULK.items() if s == "error"), errors


#: bulk decks that really mix units (filled in from the sweep with the evidence)
KNOWN_MIXED_BULK: dict[str, str] = {}
