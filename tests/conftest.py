"""Shared fixtures. The shared corpus of real decks is test data only: tests that use it skip when absent."""
from __future__ import annotations

import os
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[1]
SAMPLES = REPO / "sample_decks"


def corpus_root() -> Path | None:
    env = os.environ.get("DECKWARDEN_CORPUS")
    cand = Path(env) if env else REPO.parent / "shared" / "corpus"
    return cand if cand.is_dir() else None


@pytest.fixture(scope="session")
def corpus_dir() -> Path:
    root = corpus_root()
    if root is None:
        pytest.skip("shared corpus not present (set DECKWARDEN_CORPUS)")
    return root


@pytest.fixture(scope="session")
def sarif_schema_path() -> Path:
    """The OASIS SARIF 2.1.0 schema copied into tests/data (see tests/data/README.md): never skipped."""
    env = os.environ.get("DECKWARDEN_SARIF_SCHEMA")
    return Path(env) if env else REPO / "tests" / "data" / "sarif-schema-2.1.0.json"


@pytest.fixture(scope="session")
def sarif_validator(sarif_schema_path):
    """validate(doc): raises when a SARIF document breaks the SARIF 2.1.0 schema."""
    import json

    import jsonschema

    validator = jsonschema.Draft7Validator(json.loads(sarif_schema_path.read_text(encoding="utf-8")))
    return validator.validate


@pytest.fixture
def write_deck(tmp_path):
    """write_deck("name.inp", text) -> path of a deck written in a temporary folder."""

    def _write(name: str, text: str | bytes) -> Path:
        p = tmp_path / name
        p.parent.mkdir(parents=True, exist_ok=True)
        if isinstance(text, bytes):
            p.write_bytes(text)
        else:
            p.write_text(text, encoding="utf-8")
        return p

    return _write
