"""Third-party rule packs through the entry-point group deckwarden.rules (tests/plugin_example)."""
from __future__ import annotations

import io
import json
import os
import sys
from pathlib import Path

import pytest

from linter import registry
from linter.check import check_paths
from linter.findings import exit_code
from linter.cli import main
from linter.config import Config

from decks import TET_MESH

EXAMPLE = Path(__file__).resolve().parents[1] / "plugin_example"
DECK = (TET_MESH + "*MATERIAL,NAME=AL\n*ELASTIC\n70000.,0.33\n*SOLID SECTION,ELSET=E1,MATERIAL=AL\n"
        "*STEP\n*STATIC\n*END STEP\n")


@pytest.fixture
def load_plugins(monkeypatch, tmp_path_factory):
    """load_plugins({"name": "module"}): load entry points of deckwarden.rules declared by a dist-info folder
    written to a temporary folder on sys.path (nothing is installed with pip)."""
    pytest.importorskip("linter.parsers.keyword")
    registry.load()
    monkeypatch.syspath_prepend(str(EXAMPLE))
    before = set(registry._RULES)
    errors_before = list(registry._plugin_errors)

    def load(points: dict[str, str]) -> None:
        # an installed distribution as pip leaves it (a dist-info folder on sys.path), found the real way
        site = tmp_path_factory.mktemp("site")
        info = site / "acme_rules-1.0.dist-info"
        info.mkdir()
        (info / "METADATA").write_text("Metadata-Version: 2.1\nName: acme-rules\nVersion: 1.0\n")
        (info / "entry_points.txt").write_text(f"[{registry.ENTRY_POINT_GROUP}]\n" +
                                               "".join(f"{n} = {v}\n" for n, v in points.items()))
        monkeypatch.syspath_prepend(str(site))
        registry._load_plugins()

    yield load
    for rid in set(registry._RULES) - before:
        registry._RULES.pop(rid, None)
    registry._plugin_errors[:] = errors_before
    for mod in [m for m in sys.modules if m == "acme_rules" or m.startswith("acme_rules.")]:
        del sys.modules[mod]


def test_example_declares_its_entry_point():
    text = (EXAMPLE / "pyproject.toml").read_text(encoding="utf-8")
    assert '[project.entry-points."deckwarden.rules"]' in text
    assert 'acme = "acme_rules"' in text
    assert (EXAMPLE / "acme_rules" / "__init__.py").is_file()


def test_plugin_rule_runs(load_plugins, write_deck):
    load_plugins({"acme": "acme_rules"})
    r = registry.get("acme/density-missing-note")
    assert r is not None and r.pack == "acme_rules" and r.severity == "note"
    deck = write_deck("part.inp", DECK)
    result = check_paths([str(deck)], Config())
    hits = [f for f in result.findings if f.rule == "acme/density-missing-note"]
    assert len(hits) == 1
    assert hits[0].material == "AL" and hits[0].line == 8 and hits[0].data == {"properties": ["elastic"]}
    assert exit_code(result, "error") == 0 and exit_code(result, "note") == 1


def test_plugin_rule_in_cli_listing(load_plugins, capsys):
    load_plugins({"acme": "acme_rules"})
    assert main(["rules", "--format", "json"]) == 0
    listed = {r["id"]: r for r in json.loads(capsys.readouterr().out)}
    assert listed["acme/density-missing-note"]["pack"] == "acme_rules"
    assert main(["explain", "acme/density-missing-note"]) == 0
    assert "house rule" in capsys.readouterr().out


def test_failing_plugin_rule_is_contained(load_plugins, write_deck, capsys, monkeypatch):
    load_plugins({"acme": "acme_rules", "acme-broken": "acme_rules.broken"})
    deck = write_deck("part.inp", DECK.replace("0.33", "0.7"))
    result = check_paths([str(deck)], Config())
    failed = [f for f in result.findings if f.rule == "internal/rule-failed"]
    assert len(failed) == 1 and failed[0].data["failed_rule"] == "acme/always-fails"
    assert failed[0].data["exception"] == "ZeroDivisionError"
    rules = {f.rule for f in result.findings}
    assert "acme/density-missing-note" in rules                   # the other plugin rule still ran
    assert any(r.startswith("elastic/") for r in rules)           # and so did the built-in ones (nu = 0.7)
    assert result.incomplete and exit_code(result, "error") == 2
    monkeypatch.chdir(deck.parent)
    assert main(["check", "part.inp", "--format", "line"]) == 2
    out = capsys.readouterr().out
    assert "internal/rule-failed" in out and "acme/always-fails" in out


def test_plugin_that_cannot_be_imported(load_plugins, write_deck):
    load_plugins({"acme-missing": "acme_rules.no_such_module"})
    assert any(name == "acme-missing" for name, _ in registry.plugin_errors())
    result = check_paths([str(write_deck("part.inp", DECK))], Config())
    assert [f.data["plugin"] for f in result.general if f.rule == "internal/plugin-failed"] == ["acme-missing"]
    assert exit_code(result, "error") == 2


def test_entry_point_look_up_skips_the_metadata_import_when_no_distribution_declares_the_group(tmp_path, monkeypatch):
    from linter import entrypoints

    assert entrypoints._may_declare("deckwarden.no-such-group") is False
    info = tmp_path / "other-2.0.dist-info"
    info.mkdir()
    (info / "METADATA").write_text("Metadata-Version: 2.1\nName: other\nVersion: 2.0\n")
    (info / "entry_points.txt").write_text("[deckwarden.no-such-group]\nx = os.path:join\n")
    monkeypatch.syspath_prepend(str(tmp_path))
    assert entrypoints._may_declare("deckwarden.no-such-group") is True
    # reference: importlib.metadata reads the same entry point
    (ep,) = entrypoints.entry_points("deckwarden.no-such-group")
    assert ep.name == "x" and ep.load() is os.path.join
