"""The deckwarden command: exit codes, options, rules/explain, literal output, start-up imports."""
from __future__ import annotations

import json
import os
import re
import subprocess
import sys
from pathlib import Path

import pytest

import linter.check
from linter import __version__, registry
from linter.cli import main
from linter.cli_rules import rules_markdown

from decks import TET_MESH as MESH

REPO = Path(__file__).resolve().parents[2]


def deck(name: str = "MAT1", nu: str = "0.3") -> str:
    return (MESH + f"*MATERIAL,NAME={name}\n*ELASTIC\n210000.,{nu}\n*DENSITY\n7.85e-9\n"
            f"*SOLID SECTION,ELSET=E1,MATERIAL={name}\n*STEP\n*STATIC\n*END STEP\n")


@pytest.fixture
def decks(write_deck, monkeypatch):
    """A folder with a clean deck, a deck with an error (nu = 0.7, line 10) and a text file; cwd is that folder."""
    pytest.importorskip("linter.parsers.keyword")
    good = write_deck("good.inp", deck())
    write_deck("bad.inp", deck(nu="0.7"))
    write_deck("notes.txt", "Meeting notes: nothing here is a deck.\n")
    monkeypatch.chdir(good.parent)
    return good.parent


def run(args, capsys):
    code = main(args)
    out, err = capsys.readouterr()
    return code, out, err


def test_exit_0_clean_deck(decks, capsys):
    # --units declares the system, so that no rule has to report an undetermined unit system
    code, out, err = run(["check", "good.inp", "--units", "mm-tonne-s", "--format", "line"], capsys)
    assert code == 0, out + err
    assert not [ln for ln in out.splitlines() if ": error: " in ln]


def test_exit_1_finding_at_fail_level(decks, capsys):
    code, out, _ = run(["check", "bad.inp", "--format", "line"], capsys)
    assert code == 1
    # nu = 0.7 is outside -1 < nu < 0.5 (positive-definite isotropic strain energy; Timoshenko & Goodier, Theory of Elasticity, from memory)
    assert re.search(r"^bad\.inp:10: error: elastic/[a-z-]+: .*\[MAT1\]$", out, re.M)


def test_fail_on_level(decks, capsys):
    code, out, _ = run(["check", "good.inp", "--format", "json"], capsys)
    doc = json.loads(out)
    has_note = doc["summary"]["note"] + doc["summary"]["warning"] > 0
    code_note, _, _ = run(["check", "good.inp", "--fail-on", "note", "--format", "json"], capsys)
    assert code == 0 and code_note == (1 if has_note else 0)


def test_exit_2_missing_path_other_files_still_checked(decks, capsys):
    code, out, _ = run(["check", "nowhere.inp", "bad.inp", "--format", "line"], capsys)
    assert code == 2                                  # 2 wins over 1
    assert "nowhere.inp: error: parse/path-not-found" in out
    assert "bad.inp:10: error: elastic/" in out


def test_exit_2_not_a_deck(decks, capsys):
    code, out, _ = run(["check", "notes.txt", "--format", "line"], capsys)
    assert code == 2 and "parse/not-a-deck" in out


@pytest.mark.parametrize("args", [["check"], ["check", "x.inp", "--bogus"], ["check", "x.inp", "--jobs", "0"],
                                  ["check", "x.inp", "--format", "xml"], ["frobnicate"], [],
                                  ["check", "good.inp", "--select", "elastik"],
                                  ["check", "good.inp", "--dialect", "keyword="],
                                  ["check", "good.inp", "--dialect", "abaqus=standard"],
                                  ["check", "good.inp", "--include-root", "no-such-folder"]])
def test_exit_2_usage_errors(decks, capsys, args):
    code, out, err = run(args, capsys)
    assert code == 2
    assert "Traceback" not in err and err.strip()


def test_unknown_select_suggests(decks, capsys):
    _, _, err = run(["check", "good.inp", "--select", "elastik"], capsys)
    assert "unknown rule or family 'elastik'" in err and "elastic" in err


def test_exit_2_bad_config(decks, capsys, write_deck):
    write_deck("deckwarden.yaml", "fail_on: error\nshout: loud\n")
    code, _, err = run(["check", "good.inp"], capsys)
    assert code == 2 and "deckwarden.yaml, line 2: shout: unknown key" in err and "Traceback" not in err


def test_config_fail_on_and_cli_override(decks, capsys, write_deck):
    write_deck("strict.yaml", "fail_on: note\nrules: {elastic/poisson-out-of-range: note}\n")
    code, out, _ = run(["check", "bad.inp", "--config", "strict.yaml", "--format", "line"], capsys)
    assert code == 1 and ": note: elastic/poisson-out-of-range" in out
    code, _, _ = run(["check", "bad.inp", "--config", "strict.yaml", "--fail-on", "error", "--units", "mm-tonne-s",
                      "--ignore", "units"], capsys)
    assert code == 0


def test_dialect_option_reaches_the_report(decks, capsys):
    code, out, _ = run(["check", "good.inp", "--dialect", "keyword=calculix", "--format", "json"], capsys)
    assert json.loads(out)["files"][0]["dialect"] == "calculix"
    code, out, err = run(["check", "good.inp", "--dialect", "mydialect", "--format", "json"], capsys)
    assert code == 2 and "unknown dialect 'mydialect'" in err


def test_exit_2_internal_failure(decks, capsys, monkeypatch):
    def explode(*a, **k):
        raise RuntimeError("simulated defect")

    monkeypatch.setattr(linter.check, "check_paths", explode)
    code, out, err = run(["check", "good.inp"], capsys)
    assert code == 2
    assert err.strip() == "deckwarden: internal error (please report it): RuntimeError: simulated defect"


def test_ignore_and_select(decks, capsys):
    code, out, _ = run(["check", "bad.inp", "--ignore", "elastic", "--format", "line"], capsys)
    assert code == 0 and "elastic/" not in out
    code, out, _ = run(["check", "bad.inp", "--select", "units,parse", "--format", "line"], capsys)
    assert code == 0 and "elastic/" not in out


def test_output_file_and_never_the_input(decks, capsys):
    code, out, _ = run(["check", "bad.inp", "--format", "sarif", "--output", "report.sarif"], capsys)
    assert code == 1 and out == ""
    doc = json.loads((decks / "report.sarif").read_text(encoding="utf-8"))
    assert doc["runs"][0]["results"]
    before = (decks / "bad.inp").read_bytes()
    code, _, err = run(["check", "bad.inp", "--output", "bad.inp"], capsys)
    assert code == 2 and "never writes its input" in err
    code, _, err = run(["check", ".", "--output", "good.inp"], capsys)   # a deck found by walking the folder
    assert code == 2 and "never writes its input" in err
    assert (decks / "bad.inp").read_bytes() == before


def test_text_is_plain_when_not_a_terminal(decks, capsys, write_deck):
    write_deck("hostile.inp", deck(name="[bold red]X\x1b[31mY", nu="0.7"))
    code, out, _ = run(["check", "hostile.inp"], capsys)
    assert code == 1
    assert "\x1b" not in out
    assert "[bold red]X\\e[31mY" in out and "ERROR" in out
    code, out, _ = run(["check", "hostile.inp", "--format", "audit"], capsys)
    assert "\\[bold red\\]X\\\\e\\[31mY" in out and "\x1b" not in out


def test_jobs_gives_the_same_findings(decks, capsys):
    _, one, _ = run(["check", "good.inp", "bad.inp", "--format", "line"], capsys)
    _, two, _ = run(["check", "good.inp", "bad.inp", "--format", "line", "--jobs", "2"], capsys)
    assert one == two and "bad.inp:10" in one


def test_rules_listing(capsys):
    ids = [r.id for r in registry.all_rules()]
    code, out, _ = run(["rules"], capsys)
    assert code == 0 and all(i in out for i in ids) and f"{len(ids)} rules" in out
    code, out, _ = run(["rules", "--format", "json"], capsys)
    assert [r["id"] for r in json.loads(out)] == ids
    code, out, _ = run(["rules", "--format", "markdown"], capsys)
    assert out == rules_markdown(registry.all_rules())
    assert out.startswith("| Rule | Severity | Other levels, and when | What it reports |") \
        and out.count("\n| `") == len(ids)
    # a rule whose findings can take another level says when, in its own row
    row = next(x for x in out.splitlines() if x.startswith("| `element/volumetric-locking`"))
    assert "error when" in row and "note on" in row
    assert next(x for x in out.splitlines() if x.startswith("| `model/unused-material`")).split(" | ")[2] == "-"


def test_readme_rule_list_is_current():
    readme = REPO / "README.md"
    text = readme.read_text(encoding="utf-8") if readme.is_file() else ""
    m = re.search(r"<!-- rules:start -->\n(.*?)<!-- rules:end -->", text, re.S)
    if not m:
        pytest.skip("README has no rule-list markers")
    if not m.group(1).strip():
        pytest.skip("README rule list not generated yet (deckwarden rules --format markdown)")
    assert m.group(1).strip() == rules_markdown(registry.all_rules()).strip(), \
        "README rule list is out of date: regenerate it with `deckwarden rules --format markdown`"


def test_explain(capsys):
    r = registry.all_rules()[0]
    code, out, _ = run(["explain", r.id], capsys)
    assert code == 0
    assert out.startswith(f"{r.id}: {r.title}") and f"default severity: {r.severity}" in out
    assert "why:" in out and "references:" in out and "finding data:" in out
    code, out, _ = run(["explain", "parse"], capsys)
    assert code == 0 and "parse/path-not-found" in out


def test_explain_unknown_suggests(capsys):
    code, out, err = run(["explain", "parse/path-not-fund"], capsys)
    assert code == 2 and "no rule named 'parse/path-not-fund'" in err and "parse/path-not-found" in err
    code, _, err = run(["explain", "path-not-found"], capsys)
    assert code == 2 and "parse/path-not-found" in err


def test_version(capsys):
    code, out, _ = run(["--version"], capsys)
    assert code == 0 and out.strip() == f"deckwarden {__version__}"


def _env(**extra):
    env = dict(os.environ, **extra)
    env["PYTHONPATH"] = str(REPO) + os.pathsep + env.get("PYTHONPATH", "")
    return env


def test_module_entry_subprocess(decks):
    proc = subprocess.run([sys.executable, "-m", "linter", "check", "bad.inp", "nowhere.inp"], cwd=decks,
                          capture_output=True, text=True, env=_env(NO_COLOR="1"), timeout=120)
    assert proc.returncode == 2, proc.stderr
    assert "\x1b" not in proc.stdout and "Traceback" not in proc.stderr
    assert "nowhere.inp" in proc.stdout
    # the deck's heading names the file; its findings show the line only
    deck_part = proc.stdout.split(" bad.inp ", 1)[1]
    assert re.search(r"^\s*10\s+ERROR\s", deck_part, re.M), proc.stdout


def test_importing_cli_stays_light():
    code = ("import sys, linter.cli; heavy = [m for m in ('rich', 'meshio', 'matplotlib', 'numpy', 'yaml') "
            "if m in sys.modules]; print(','.join(heavy))")
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, env=_env(), timeout=60)
    assert proc.returncode == 0, proc.stderr
    assert proc.stdout.strip() == ""


def test_console_script(decks):
    script = Path(sys.executable).parent / ("deckwarden.exe" if os.name == "nt" else "deckwarden")
    if not script.is_file():
        pytest.skip("the deckwarden console script is not installed in this environment")
    proc = subprocess.run([str(script), "check", "bad.inp", "--format", "line"], cwd=decks, capture_output=True,
                          text=True, timeout=120)
    assert proc.returncode == 1, proc.stderr
    assert re.search(r"^bad\.inp:10: error: elastic/", proc.stdout, re.M)
