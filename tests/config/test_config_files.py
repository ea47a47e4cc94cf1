"""Configuration files: pyproject and YAML discovery and precedence, per-path settings, exclude globs,
every bad key or value as a usage error naming the file, the key (line for YAML) and the closest name."""
from __future__ import annotations

import json
import sys

import pytest

from linter.cli import main
from linter.config import Config, ConfigError

from decks import TET_MESH as MESH

needs_toml = pytest.mark.skipif(sys.version_info < (3, 11), reason="tomllib needs Python 3.11")


def deck(nu: str = "0.3") -> str:
    # nu = 0.7 lies outside -1 < nu < 0.5 (isotropic elasticity, common practice)
    return (MESH + f"*MATERIAL,NAME=STEEL\n*ELASTIC\n210000.,{nu}\n*DENSITY\n7.85e-9\n"
            "*SOLID SECTION,ELSET=E1,MATERIAL=STEEL\n*STEP\n*STATIC\n*END STEP\n")


def run(args, capsys):
    code = main(args)
    out, err = capsys.readouterr()
    return code, out, err


def effective(capsys, *args):
    code, out, err = run(["config", *args, "--format", "json"], capsys)
    assert code == 0, err
    return json.loads(out)


@needs_toml
def test_pyproject_found_upwards_from_the_first_path(tmp_path, capsys, monkeypatch):
    (tmp_path / "pyproject.toml").write_text('[project]\nname = "x"\n\n[tool.deckwarden]\nfail_on = "note"\n')
    (tmp_path / "models" / "a").mkdir(parents=True)
    monkeypatch.chdir("/")                                   # not the working directory: the first path
    doc = effective(capsys, str(tmp_path / "models" / "a"))
    assert doc["values"]["fail_on"] == {"value": "note", "origin": f"{tmp_path / 'pyproject.toml'} [tool.deckwarden]"}


@needs_toml
def test_nearest_wins_and_yaml_before_pyproject_in_one_folder(tmp_path, capsys):
    (tmp_path / "pyproject.toml").write_text('[tool.deckwarden]\nfail_on = "note"\n')
    sub = tmp_path / "models"
    sub.mkdir()
    (sub / "deckwarden.yaml").write_text("fail_on: warning\n")
    assert effective(capsys, str(sub))["values"]["fail_on"]["value"] == "warning"     # nearer folder
    assert effective(capsys, str(tmp_path))["values"]["fail_on"]["value"] == "note"
    (tmp_path / "deckwarden.yaml").write_text("fail_on: error\n")
    assert effective(capsys, str(tmp_path))["values"]["fail_on"]["value"] == "error"  # YAML wins in one folder
    (sub / "pyproject.toml").write_text('[project]\nname = "no table"\n')           # no table: not a config
    assert effective(capsys, str(sub))["values"]["fail_on"]["value"] == "warning"


@needs_toml
def test_config_option_overrides_discovery_and_cli_overrides_file(tmp_path, capsys):
    (tmp_path / "deckwarden.yaml").write_text("fail_on: warning\nunits: mm-tonne-s\n")
    other = tmp_path / "elsewhere" / "pyproject.toml"
    other.parent.mkdir()
    other.write_text('[tool.deckwarden]\nfail_on = "note"\nignore = ["units"]\n')
    doc = effective(capsys, str(tmp_path), "--config", str(other))
    assert doc["values"]["fail_on"]["value"] == "note" and doc["values"]["units"]["value"] is None
    doc = effective(capsys, str(tmp_path), "--fail-on", "error", "--jobs", "3")
    assert doc["values"]["fail_on"] == {"value": "error", "origin": "--fail-on"}
    assert doc["values"]["units"]["origin"].endswith("deckwarden.yaml, line 2")
    assert doc["values"]["jobs"] == {"value": 3, "origin": "--jobs"}


def test_config_text_lists_every_value_with_origin(tmp_path, capsys):
    (tmp_path / "deckwarden.yaml").write_text("ignore: [units]\n")
    code, out, _ = run(["config", str(tmp_path)], capsys)
    assert code == 0
    assert f"configuration file: {tmp_path / 'deckwarden.yaml'}" in out
    assert any(ln.startswith("ignore") and '["units"]' in ln and "line 1]" in ln for ln in out.splitlines())
    assert any(ln.startswith("fail_on") and "[default]" in ln for ln in out.splitlines())


def test_jobs_default_is_the_affinity(tmp_path, capsys, monkeypatch):
    import os

    monkeypatch.setattr(os, "sched_getaffinity", lambda pid: {0, 1, 2}, raising=False)
    assert effective(capsys, str(tmp_path))["values"]["jobs"]["value"] == 3


@pytest.mark.parametrize("text, expected", [
    ("rules:\n  elastic/poison-out-of-range: off\n",
     ["line 2", "rules.elastic/poison-out-of-range", "did you mean: elastic/poisson-out-of-range"]),
    ("ignore:\n  - units\n  - elastic/poison-out-of-range\n",
     ["line 3", "ignore[1]", "did you mean: elastic/poisson-out-of-range"]),
    ("select: [elastik]\n", ["select", "unknown rule or family 'elastik'", "elastic"]),
    ("fail_on: fatal\n", ["line 1", "fail_on", "not one of error, warning, note"]),
    ("dialect: foo\n", ["dialect", "unknown dialect 'foo'", "keyword: calculix"]),
    ("dialect: {bulk: nastrn}\n", ["dialect.bulk", "did you mean: nastran"]),
    ("dialect: {abaqus: standard}\n", ["unknown format 'abaqus'"]),
    ("units: furlong-fortnight\n", ["units", "unknown unit system", "mm-tonne-s"]),
    ("unit: mm-tonne-s\n", ["line 1", "unknown key; did you mean: units"]),
    ("rules: {elastic/poisson-negative: loud}\n", ["'loud' is not one of error, warning, note, off"]),
    ("rules: {elastic: off}\n", ["a family: switch it off with ignore:"]),
    ("jobs: 0\n", ["jobs", "whole number of 1 or more"]),
    ("max_file_size_mb: -1\n", ["max_file_size_mb", "above 0"]),
    ("allow_include_outside: maybe\n", ["true or false"]),
    ("exclude: 3\n", ["exclude", "glob patterns"]),
    ("per_path:\n  - paths: [legacy/**]\n    rule: {units/mismatch: off}\n",
     ["line 3", "per_path[0].rule", "did you mean: rules"]),
    ("per_path:\n  - ignore: [units]\n", ["per_path[0]", "paths: [globs]"]),
    ("per_path:\n  - paths: [legacy/**]\n    ignore: [unit]\n", ["per_path[0].ignore[0]", "did you mean: units"]),
])
def test_every_bad_key_or_value_is_a_usage_error(tmp_path, capsys, text, expected):
    cfg = tmp_path / "deckwarden.yaml"
    cfg.write_text(text)
    (tmp_path / "a.inp").write_text(deck())
    code, _, err = run(["check", str(tmp_path / "a.inp")], capsys)
    assert code == 2 and "Traceback" not in err
    assert str(cfg) in err
    for piece in expected:
        assert piece in err, (piece, err)


@needs_toml
def test_pyproject_errors_name_the_table(tmp_path, capsys):
    (tmp_path / "pyproject.toml").write_text('[tool.deckwarden]\nrules = {"elastic/poison-out-of-range" = "off"}\n')
    code, _, err = run(["config", str(tmp_path)], capsys)
    assert code == 2 and "pyproject.toml [tool.deckwarden]: rules.elastic/poison-out-of-range" in err
    assert "did you mean: elastic/poisson-out-of-range" in err


@pytest.mark.parametrize("args, expected", [
    (["--dialect", "foo"], "unknown dialect 'foo'"),
    (["--dialect", "bulk=calculix"], "unknown bulk dialect 'calculix'"),
    (["--units", "furlong-fortnight"], "unknown unit system 'furlong-fortnight'"),
])
def test_bad_options_are_usage_errors(tmp_path, capsys, args, expected):
    (tmp_path / "a.inp").write_text(deck())
    code, out, err = run(["check", str(tmp_path / "a.inp"), *args], capsys)
    assert code == 2 and expected in err and not out


def test_plain_dialect_applies_to_the_formats_that_know_it(tmp_path, capsys):
    doc = effective(capsys, str(tmp_path), "--dialect", "nastran")
    dialects = doc["values"]["dialect"]["value"]
    assert dialects["bulk"] == "nastran" and dialects["keyword"] == "calculix"


def test_help_lists_unit_systems_and_dialects(capsys):
    code, out, _ = run(["check", "--help"], capsys)
    flat = " ".join(out.split())
    assert code == 0 and "mm-tonne-s" in flat and "in-lbf-s" in flat and "mystran, nastran" in flat


def test_per_path_overrides_and_exclude(tmp_path, capsys):
    (tmp_path / "deckwarden.yaml").write_text(
        "exclude: ['generated/**']\n"
        "per_path:\n  - paths: [legacy/**]\n    rules: {elastic/poisson-out-of-range: warning}\n")
    for folder in ("new", "legacy/old", "generated"):
        (tmp_path / folder).mkdir(parents=True)
        (tmp_path / folder / "m.inp").write_text(deck(nu="0.7"))
    code, out, err = run(["check", str(tmp_path), "--format", "json", "--jobs", "1"], capsys)
    doc = json.loads(out)
    paths = sorted(f["path"] for f in doc["files"])
    assert paths == [str(tmp_path / "legacy/old/m.inp"), str(tmp_path / "new/m.inp")]   # generated/ excluded
    sev = {f["path"]: f["severity"] for f in doc["findings"] if f["rule"] == "elastic/poisson-out-of-range"}
    assert sev == {str(tmp_path / "legacy/old/m.inp"): "warning", str(tmp_path / "new/m.inp"): "error"}


def test_globs():
    from linter.configfile import glob_regex, matches

    assert matches([glob_regex("legacy/**")], "legacy/a/b.inp")
    assert matches([glob_regex("legacy")], "legacy/b.inp")          # a folder covers what is under it
    assert not matches([glob_regex("legacy/*")], "other/legacy/b.inp")
    assert matches([glob_regex("*.bak.inp")], "deep/x/y.bak.inp")   # no slash: any depth
    assert not matches([glob_regex("src/*.inp")], "src/a/b.inp")    # * stays in one segment
    assert matches([glob_regex("src/**/*.inp")], "src/b.inp")


def test_from_mapping_validates_too():
    with pytest.raises(ConfigError, match="did you mean: elastic/poisson-out-of-range"):
        Config.from_mapping({"rules": {"elastic/poison-out-of-range": "off"}})
