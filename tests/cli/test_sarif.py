"""SARIF 2.1.0 output, validated against the OASIS schema (Draft 7)."""
from __future__ import annotations

import io
import json

import jsonschema
import pytest

from linter import CAUTION, registry
from linter.check import check_paths
from linter.config import Config
from linter.findings import RunResult
from linter.reporters import ReportOptions, get
from linter.reporters.sarif import uri_of

from decks import TET_MESH
from report_samples import clean_result, hostile_result, odd_result


@pytest.fixture(scope="module")
def validator(sarif_schema_path):
    schema = json.loads(sarif_schema_path.read_text(encoding="utf-8"))
    return jsonschema.Draft7Validator(schema)


def render(result, **opts) -> dict:
    out = io.StringIO()
    get("sarif")(result, out, ReportOptions(**opts))

    def refuse(const):
        raise ValueError(const)

    return json.loads(out.getvalue(), parse_constant=refuse)


@pytest.mark.parametrize("make", [hostile_result, odd_result, clean_result, RunResult])
def test_valid_against_schema(validator, make):
    doc = render(make())
    errors = sorted(validator.iter_errors(doc), key=str)
    assert not errors, errors[0].message


def test_run_content():
    doc = render(hostile_result())
    assert doc["version"] == "2.1.0" and len(doc["runs"]) == 1
    run = doc["runs"][0]
    assert run["properties"]["caution"] == CAUTION
    assert run["invocations"][0]["executionSuccessful"] is False
    assert run["invocations"][0]["exitCode"] == 2
    rules = run["tool"]["driver"]["rules"]
    ids = [r["id"] for r in rules]
    assert sorted(ids) == sorted({r["ruleId"] for r in run["results"]})
    for res in run["results"]:
        assert rules[res["ruleIndex"]]["id"] == res["ruleId"]
    meta = rules[ids.index("elastic/poisson-out-of-range")]
    known = registry.get("elastic/poisson-out-of-range")
    if known is not None:
        assert meta["shortDescription"]["text"] == known.title
        assert meta["fullDescription"]["text"] == known.rationale
        assert meta["defaultConfiguration"]["level"] == known.severity
        assert meta["help"]["text"].startswith(known.rationale)
    by_rule = {r["ruleId"]: r for r in run["results"]}
    poisson = by_rule["elastic/poisson-out-of-range"]
    assert poisson["level"] == "error"
    assert poisson["locations"][0]["physicalLocation"] == {"artifactLocation": {"uri": "model/parts.inp"},
                                                           "region": {"startLine": 5}}
    assert poisson["properties"]["data"]["K"] is None      # -inf never reaches the JSON
    # no region when the line is unknown (None) or not a line (0)
    for rid in ("units/undetermined", "model/undefined-material"):
        assert "region" not in by_rule[rid]["locations"][0]["physicalLocation"]
    assert "locations" not in render(odd_result())["runs"][0]["results"][0]   # no path, no location


def test_complete_run_is_successful():
    run = render(clean_result())["runs"][0]
    assert run["invocations"][0]["executionSuccessful"] is True
    assert run["results"] == [] and run["tool"]["driver"]["rules"] == []


def test_uris():
    assert uri_of("models/a b.inp") == "models/a%20b.inp"
    assert uri_of("/tmp/x#1.inp") == "file:///tmp/x%231.inp"


def test_real_deck(validator, write_deck, monkeypatch):
    pytest.importorskip("linter.parsers.keyword")
    deck = write_deck("plate.inp", TET_MESH + "*MATERIAL,NAME=AL\n*ELASTIC\n-70000.,0.3\n"
                      "*SOLID SECTION,ELSET=E1,MATERIAL=AL\n*STEP\n*STATIC\n*END STEP\n")
    monkeypatch.chdir(deck.parent)
    doc = render(check_paths(["plate.inp"], Config()))
    validator.validate(doc)
    results = doc["runs"][0]["results"]
    # E < 0 is not admissible (positive definiteness of isotropic elasticity; Timoshenko & Goodier, from memory)
    hits = [r for r in results if r["ruleId"].startswith("elastic/") and r["level"] == "error"]
    assert hits and hits[0]["locations"][0]["physicalLocation"]["artifactLocation"]["uri"] == "plate.inp"
    assert hits[0]["locations"][0]["physicalLocation"]["region"]["startLine"] == 10
