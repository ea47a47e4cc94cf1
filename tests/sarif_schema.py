"""Where the tests find the SARIF 2.1.0 schema: the copy in tests/data (see tests/data/README.md), or the file
named by DECKWARDEN_SARIF_SCHEMA. A missing schema fails the tests that need it, with this message; it never
turns their validation off."""
from __future__ import annotations

import json
import os
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[1]


def schema_path() -> Path:
    env = os.environ.get("DECKWARDEN_SARIF_SCHEMA")
    path = Path(env) if env else REPO / "tests" / "data" / "sarif-schema-2.1.0.json"
    if not path.is_file():
        pytest.fail(f"SARIF 2.1.0 schema not found at {path}: it belongs in tests/data/sarif-schema-2.1.0.json "
                    "(see tests/data/README.md), or set DECKWARDEN_SARIF_SCHEMA to a copy", pytrace=False)
    return path


def validator():
    """A Draft 7 validator of the SARIF 2.1.0 schema (fails the calling test when the schema is missing)."""
    import jsonschema

    return jsonschema.Draft7Validator(json.loads(schema_path().read_text(encoding="utf-8")))
