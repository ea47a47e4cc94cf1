"""The JSON report against its shipped JSON Schema (linter/data/report.schema.json)."""
from __future__ import annotations

import io
import json
from pathlib import Path

import jsonschema
import pytest

from linter import CAUTION, __version__
from linter.check import check_paths
from linter.config import Config
from linter.findings import RunResult
from linter.reporters import ReportOptions, get

from decks import TET_MESH
from report_samples import HOSTILE_NAME, clean_result, hostile_result, odd_result

SCHEMA_PATH = Path(__file__).resolve().parents[2] / "linter" / "data" / "report.schema.json"


@pytest.fixture(scope="module")
def validator():
    schema = json.loads(SCHEMA_PATH.read_text(encoding="utf-8"))
    jsonschema.Draft7Validator.check_schema(schema)
    return jsonschema.Draft7Validator(schema)


def _strict_loads(text: str):
    def refuse(const):
        raise ValueError(f"non-standard JSON constant {const}")

    return json.loads(text, parse_constant=refuse)


def render(result, **opts) -> dict:
    out = io.StringIO()
    get("json")(result, out, ReportOptions(**opts))
    return _strict_loads(out.getvalue())


def test_hostile_report_with_non_finite_numbers_is_valid(validator):
    doc = render(hostile_result())
    validator.validate(doc)
    assert doc["schema_version"] == 1
    assert doc["tool"] == {"name": "deckwarden", "version": __version__}
    assert doc["caution"] == CAUTION
    poisson = [f for f in doc["findings"] if f["rule"] == "elastic/poisson-out-of-range"][0]
    assert poisson["data"] == {"nu": 0.7, "K": None, "ratio": None, "rows": [{"T": None, "E": None}]}
    assert poisson["material"] == HOSTILE_NAME           # JSON keeps the deck string exactly
    assert doc["files"][0]["materials"][0]["derived"]["elastic"][0]["K"] is None
    assert doc["files"][0]["materials"][0]["path"] == "model/parts.inp"   # where it is defined (an include)
    assert doc["summary"] == {"error": 2, "warning": 1, "note": 1, "total": 4, "files": 1, "incomplete": True,
                              "fail_on": "error", "exit_code": 2, "suppressed": 0, "in_baseline": 0}
    # a line that is 0 or unknown is null, never 0
    assert [f["line"] for f in doc["findings"] if f["rule"] == "model/undefined-material"] == [None]


@pytest.mark.parametrize("make", [odd_result, clean_result, RunResult])
def test_other_results_are_valid(validator, make):
    validator.validate(render(make()))


def test_exit_code_follows_fail_level(validator):
    clean = render(clean_result())
    assert clean["summary"]["exit_code"] == 0 and clean["summary"]["total"] == 0
    result = hostile_result()
    result.incomplete = False
    result.general = []
    assert render(result)["summary"]["exit_code"] == 1


def test_schema_rejects_what_the_contract_forbids(validator):
    doc = render(hostile_result())
    for mutate in (lambda d: d["findings"][0].update(severity="fatal"),
                   lambda d: d["findings"][0].pop("data"),
                   lambda d: d["findings"][0].update(line=0),
                   lambda d: d["files"][0]["materials"][0].pop("line"),
                   lambda d: d.update(schema_version=2),
                   lambda d: d["summary"].pop("exit_code")):
        bad = json.loads(json.dumps(doc))
        mutate(bad)
        assert not validator.is_valid(bad)


def test_relative_paths_stay_relative(validator, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    result = check_paths(["sub/missing.inp"], Config())
    doc = render(result, exit_code=2)
    validator.validate(doc)
    assert doc["findings"][0]["rule"] == "parse/path-not-found"
    assert doc["findings"][0]["path"] == "sub/missing.inp"


def test_real_deck_report_is_valid(validator, write_deck, monkeypatch):
    pytest.importorskip("linter.parsers.keyword")
    deck = write_deck("beam.inp", TET_MESH + "*MATERIAL,NAME=AL\n*ELASTIC\n70000.,0.7\n*DENSITY\n2.7e-9\n"
                      "*SOLID SECTION,ELSET=E1,MATERIAL=AL\n*STEP\n*STATIC\n*END STEP\n")
    monkeypatch.chdir(deck.parent)
    doc = render(check_paths(["beam.inp"], Config()))
    validator.validate(doc)
    assert doc["files"][0]["path"] == "beam.inp"
    assert [m["name"] for m in doc["files"][0]["materials"]] == ["AL"]
    # nu = 0.7 is outside -1 < nu < 0.5 (admissible range of isotropic elasticity; Timoshenko & Goodier, from memory)
    assert any(f["rule"].startswith("elastic/") and f["line"] == 10 for f in doc["findings"])


@pytest.mark.corpus
def test_corpus_reports_are_valid(validator, corpus_dir, sarif_schema_path):
    """Every reporter on real decks written by others: JSON and SARIF valid, line report one line per finding."""
    pytest.importorskip("linter.parsers.keyword")
    decks = sorted(str(p) for p in (corpus_dir / "keyword").glob("*.inp"))[::2]
    decks += sorted(str(p) for p in (corpus_dir / "bulk").glob("*.DAT"))[::6]
    if not decks:
        pytest.skip("corpus holds no decks")
    result = check_paths(decks, Config(), jobs=2)
    doc = render(result)
    validator.validate(doc)
    assert len(doc["files"]) == len(decks)
    sarif = jsonschema.Draft7Validator(json.loads(sarif_schema_path.read_text(encoding="utf-8")))
    out = io.StringIO()
    get("sarif")(result, out, None)
    sarif.validate(json.loads(out.getvalue()))
    out = io.StringIO()
    get("line")(result, out, None)
    assert len(out.getvalue().splitlines()) == len(result.findings)
    for name in ("text", "audit"):
        out = io.StringIO()
        get(name)(result, out, {"color": False})
        assert "\x1b" not in out.getvalue() and CAUTION[:40] in out.getvalue().replace("\n", " ")
