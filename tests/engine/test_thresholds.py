"""Thresholds: a user override that does not exist or has the wrong type is an error naming key and file;
every rule declares the thresholds it reads, and ``deckwarden explain`` lists them with their values."""
from __future__ import annotations

from pathlib import Path

import pytest

from linter import registry
from linter.check import check_paths
from linter.cli import main
from linter.config import Config, ConfigError, default_thresholds
from linter.context import Context

SAMPLES = Path(__file__).resolve().parents[2] / "sample_decks"


def _leaves(node, prefix=""):
    for k, v in node.items():
        if isinstance(v, dict):
            yield from _leaves(v, f"{prefix}{k}.")
        else:
            yield f"{prefix}{k}"


@pytest.mark.parametrize("over, words", [
    ({"elastic": {"near_incompresible_nu": 0.45}}, ["'elastic.near_incompresible_nu'", "unknown threshold",
                                                   "did you mean 'elastic.near_incompressible_nu'"]),
    ({"elastc": {"near_incompressible_nu": 0.45}}, ["'elastc'", "unknown threshold"]),
    ({"elastic": {"near_incompressible_nu": "0.45"}}, ["'elastic.near_incompressible_nu'", "must be a number"]),
    ({"elastic": {"near_incompressible_nu": True}}, ["must be a number"]),
    ({"hyper": {"stretch_range": [0.1]}}, ["'hyper.stretch_range'", "a list of 2 numbers"]),
    ({"hyper": {"stretch_points": 400.5}}, ["'hyper.stretch_points'", "a whole number"]),
    ({"hyper": 3}, ["'thresholds.hyper'", "mapping"]),
])
def test_bad_threshold_override_names_key_and_file(over, words):
    with pytest.raises(ConfigError) as exc:
        Config.from_mapping({"thresholds": over}, source="/proj/deckwarden.yaml")
    text = str(exc.value)
    assert text.startswith("/proj/deckwarden.yaml: ")
    for w in words:
        assert w in text, text


def test_good_threshold_overrides_are_taken():
    cfg = Config.from_mapping({"thresholds": {"elastic": {"near_incompressible_nu": 0.45},
                                              "element": {"locking_ratio": 30, "locking_error_ratio": 400.0},
                                              "hyper": {"stretch_range": [0.2, 3], "stretch_points": 200.0}}})
    assert cfg.threshold("elastic.near_incompressible_nu") == 0.45
    assert cfg.threshold("element.locking_ratio") == 30 and cfg.threshold("hyper.stretch_range") == [0.2, 3]
    assert cfg.threshold("elastic.mat1_consistency_tol") == default_thresholds()["elastic"]["mat1_consistency_tol"]


def test_misspelt_override_stops_the_command_line(tmp_path, capsys):
    conf = tmp_path / "deckwarden.yaml"
    conf.write_text("thresholds:\n  plastic:\n    yield_strain_metl: [1.0e-4, 2.0e-2]\n")
    assert main(["check", str(SAMPLES), "--config", str(conf)]) == 2
    err = capsys.readouterr().err
    assert str(conf) in err and "plastic.yield_strain_metl" in err


def test_declared_thresholds_exist_and_every_threshold_has_a_reader():
    known = set(_leaves(default_thresholds()))
    declared = {t for r in registry.all_rules() for t in r.thresholds}
    assert declared <= known, declared - known
    assert known <= declared, f"thresholds no rule declares: {sorted(known - declared)}"


def test_rules_read_only_the_thresholds_they_declare(monkeypatch):
    read: dict[str, set] = {}
    real = Context.threshold

    def recording(self, name):
        read.setdefault(self.rule.id, set()).add(name)
        return real(self, name)

    monkeypatch.setattr(Context, "threshold", recording)
    check_paths([str(SAMPLES)], Config())
    assert read, "no rule read a threshold on the sample decks"
    for rid, names in read.items():
        assert names <= set(registry.get(rid).thresholds), (rid, names)


def test_explain_lists_the_thresholds_with_their_current_values(tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)                      # no configuration found upwards: the defaults
    assert main(["explain", "hyper/too-compressible"]) == 0
    out = capsys.readouterr().out
    assert "thresholds (values from the defaults" in out
    assert f"hyper.min_bulk_ratio = {default_thresholds()['hyper']['min_bulk_ratio']}" in out
    conf = tmp_path / "mine.yaml"
    conf.write_text("thresholds:\n  hyper:\n    min_bulk_ratio: 15\n")
    assert main(["explain", "hyper/too-compressible", "--config", str(conf)]) == 0
    out = capsys.readouterr().out
    assert f"values from {conf}" in out and "hyper.min_bulk_ratio = 15" in out
    assert main(["explain", "element/volumetric-locking"]) == 0
    assert "element.locking_ratio = null" in capsys.readouterr().out
