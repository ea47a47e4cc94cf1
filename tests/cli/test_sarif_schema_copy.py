"""The SARIF tests validate against the schema copy in tests/data; without it they fail, never skip."""
import hashlib

import pytest

import sarif_schema


def test_schema_copy_is_in_the_repository(monkeypatch):
    monkeypatch.delenv("DECKWARDEN_SARIF_SCHEMA", raising=False)
    path = sarif_schema.schema_path()
    assert path == sarif_schema.REPO / "tests" / "data" / "sarif-schema-2.1.0.json"
    # sha256 of the unchanged copy, as recorded in tests/data/README.md
    assert hashlib.sha256(path.read_bytes()).hexdigest() == \
        "7c9688f0a1c4a4e1649ecc78521087e664729c1dff56ee8212ff195c7b16132a"


def test_missing_schema_fails_with_a_clear_message(monkeypatch, tmp_path):
    monkeypatch.setenv("DECKWARDEN_SARIF_SCHEMA", str(tmp_path / "nowhere.json"))
    with pytest.raises(pytest.fail.Exception, match="SARIF 2.1.0 schema not found at .*nowhere.json"):
        sarif_schema.validator()
