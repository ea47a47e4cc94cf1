"""The rule engine: registry, runner (containment, one defect one finding), config, exit codes."""
from __future__ import annotations

import pytest

from linter import registry
from linter.findings import exit_code
from linter.config import Config, ConfigError
from linter.findings import FileReport, Finding, RunResult
from linter.model import DeckModel, Loc
from linter.runner import finalize, run_rules


@pytest.fixture
def temp_rules():
    added = []

    def add(rule_id, fn, severity="warning"):
        registry.load()
        registry.rule(rule_id, severity=severity, title="t", rationale="r", pack="testpack")(fn)
        added.append(rule_id)

    yield add
    for rid in added:
        registry._RULES.pop(rid, None)


def test_rule_ids_are_validated():
    with pytest.raises(ValueError):
        registry.register(registry.Rule(id="Elastic/Bad_Name", severity="error", title="", rationale="", func=None))
    with pytest.raises(ValueError):
        registry.register(registry.Rule(id="elastic/ok", severity="fatal", title="", rationale="", func=None))
    with pytest.raises(ValueError):  # built-in rules must use a known family
        registry.register(registry.Rule(id="bogus/name", severity="error", title="", rationale="", func=None))


def test_builtin_rules_have_metadata():
    rules = registry.all_rules()
    assert rules, "the built-in pack registered no rule"
    for r in rules:
        assert r.family in registry.FAMILIES, r.id
        assert r.title and r.rationale, r.id


def test_failing_rule_is_contained(temp_rules):
    def boom(model, ctx):
        raise ZeroDivisionError("bad luck")

    def fine(model, ctx):
        yield ctx.finding("still here", Loc("d.inp", 3))

    temp_rules("testpack/boom", boom)
    temp_rules("testpack/fine", fine)
    cfg = Config(select=["testpack"])
    found = run_rules(DeckModel(path="d.inp", format="keyword", dialect="calculix"), cfg)
    rules = {f.rule for f in found}
    assert "internal/rule-failed" in rules and "testpack/fine" in rules
    failed = next(f for f in found if f.rule == "internal/rule-failed")
    assert failed.data["failed_rule"] == "testpack/boom" and "bad luck" in failed.message


def test_restatements_are_dropped_and_overrides_apply():
    cause = Finding("a/x", "error", "cause", "d", 1, defect=("nu", "M", 4))
    echo = Finding("b/y", "error", "echo", "d", 1, restates=(("nu", "M", 4),))
    other = Finding("b/y", "error", "independent", "d", 2, restates=(("nu", "N", 9),))
    kept = finalize([echo, cause, other], Config(rules={"b/y": "note"}))
    assert [f.message for f in kept] == ["cause", "independent"]
    assert kept[1].severity == "note"


def test_config_selection_and_thresholds():
    cfg = Config.from_mapping({"ignore": ["units"], "rules": {"elastic/poisson-negative": "off"},
                               "thresholds": {"elastic": {"near_incompressible_nu": 0.49}}})
    assert not cfg.rule_enabled("units/mismatch")
    assert not cfg.rule_enabled("elastic/poisson-negative")
    assert cfg.rule_enabled("elastic/poisson-out-of-range")
    assert cfg.threshold("elastic.near_incompressible_nu") == 0.49
    # untouched keys keep their defaults
    assert cfg.threshold("element.locking_error_nu") == 0.499
    with pytest.raises(ConfigError):
        Config.from_mapping({"no_such_key": 1})
    with pytest.raises(ConfigError):
        Config.from_mapping({"fail_on": "fatal"})


def test_config_file_yaml_aliases_refused(tmp_path):
    cfg = tmp_path / "deckwarden.yaml"
    cfg.write_text("a: &x [1, 2]\nb: *x\n")
    with pytest.raises(ConfigError):
        Config.load(str(cfg))
    cfg.write_text("fail_on: warning\nunits: mm-tonne-s\n")
    loaded = Config.load(start=str(tmp_path))
    assert loaded.fail_on == "warning" and loaded.units == "mm-tonne-s"


def _result(*sevs, incomplete=False):
    rep = FileReport(path="d", format="keyword", dialect="calculix",
                     findings=[Finding("a/b", s, "m", "d", 1) for s in sevs], incomplete=incomplete)
    return RunResult(files=[rep], incomplete=incomplete)


def test_exit_codes():
    assert exit_code(_result(), "error") == 0
    assert exit_code(_result("warning"), "error") == 0
    assert exit_code(_result("warning"), "warning") == 1
    assert exit_code(_result("note"), "note") == 1
    assert exit_code(_result("error"), "error") == 1
    assert exit_code(_result("error", incomplete=True), "error") == 2  # 2 wins over 1


def test_incompleteness_is_declared_on_the_rules():
    declared = {r.id for r in registry.all_rules() if r.incomplete}
    # every failure of deckwarden itself, and every input that could not be read in full
    assert {r.id for r in registry.all_rules() if r.family == "internal"} <= declared
    assert declared == {
        "internal/rule-failed", "internal/parser-failed", "internal/derive-failed", "internal/plugin-failed",
        "parse/include-refused", "parse/include-unreadable", "parse/file-unreadable", "parse/binary-file",
        "parse/file-too-large", "parse/not-a-deck", "parse/path-not-found", "parse/no-deck-found",
        "parse/missing-include",
        # an XML model refused as unsafe, not well-formed, unreadable for lack of defusedxml or of another version
        "parse/xml-refused", "parse/xml-malformed", "parse/xml-unavailable", "parse/unsupported-version"}


def test_a_plugin_rule_may_declare_that_its_finding_makes_the_check_incomplete():
    registry.load()
    registry.rule("testpack/gave-up", severity="note", title="t", rationale="r", pack="testpack",
                  incomplete=True)(lambda model, ctx: ())
    try:
        found = [Finding(rule="testpack/gave-up", severity="note", message="m", path="d.inp", line=1)]
        assert registry.makes_incomplete(found)
        assert not registry.makes_incomplete([Finding(rule="testpack/other", severity="error", message="m",
                                                      path="d.inp", line=1)])
    finally:
        registry._RULES.pop("testpack/gave-up", None)
