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
    """The OASIS SARIF 2.1.0 schema copied into tests/data (see tests/data/README.md): never skipped; a missing
    copy fails the test with a message (tests/sarif_schema.py)."""
    from sarif_schema import schema_path

    return schema_path()


@pytest.fixture(scope="session")
def sarif_validator():
    """validate(doc): raises when a SARIF document breaks the SARIF 2.1.0 schema."""
    from sarif_schema import validator

    return validator().validate


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
