"""The pre-commit manifest: it loads, matches every supported extension, and its entry runs on decks."""
from __future__ import annotations

import os
import re
import shlex
import shutil
import subprocess
import sys
from pathlib import Path

import pytest
import yaml

from linter import parsers

REPO = Path(__file__).resolve().parents[2]
SAMPLES = REPO / "sample_decks"


@pytest.fixture(scope="module")
def hook():
    doc = yaml.safe_load((REPO / ".pre-commit-hooks.yaml").read_text(encoding="utf-8"))
    (h,) = [h for h in doc if h["id"] == "deckwarden"]
    return h


def test_manifest_loads_and_matches_every_extension(hook):
    assert hook["pass_filenames"] is True and hook["language"] == "python"
    rx = re.compile(hook["files"])
    for ext in parsers.all_extensions():
        assert rx.search(f"models/part{ext}") and rx.search(f"MODELS/PART{ext.upper()}"), ext
    assert not rx.search("notes.txt") and not rx.search("model.inp.bak")


def run_entry(hook, files, cwd):
    argv = shlex.split(hook["entry"])
    assert argv[0] == "deckwarden"
    cmd = [sys.executable, "-m", "linter", *argv[1:], *[str(f) for f in files]]
    return subprocess.run(cmd, capture_output=True, text=True, cwd=cwd, timeout=120)


def test_entry_runs_on_two_sample_decks(hook, tmp_path):
    work = tmp_path / "repo"
    shutil.copytree(SAMPLES, work)
    (work / ".git").mkdir()                      # the include root of a work tree
    decks = [work / "pv40_pump_assembly.inp", work / "pv40_motor_bracket.bdf"]
    proc = run_entry(hook, decks, work)
    # the assembly is clean and the bracket has one planted warning (sample_decks/README.md): exit code 0
    assert proc.returncode == 0, proc.stderr
    assert "0 error(s), 1 warning(s)" in proc.stdout and "in 2 deck(s)" in proc.stdout
    assert "pv40_pump_assembly.inp" in proc.stdout and "pv40_motor_bracket.bdf" in proc.stdout
    assert "Traceback" not in proc.stderr


def test_fragment_alone_is_checked_through_its_deck(hook, tmp_path):
    work = tmp_path / "repo"
    shutil.copytree(SAMPLES, work)
    (work / ".git").mkdir()
    (work / "ci.yml").write_text("stages: [test]\n")   # a YAML file that is not a material file: skipped
    proc = run_entry(hook, [work / "materials" / "pv40_materials.inp", work / "ci.yml"], work)
    assert "Traceback" not in proc.stderr
    assert "pv40_pump_assembly.inp" in proc.stdout                  # the deck that includes the fragment
    assert "in 1 deck(s)" in proc.stdout and "not-a-deck" not in proc.stdout
    proc = run_entry(hook, [work / "ci.yml"], work)
    assert proc.returncode == 0 and proc.stdout == ""


def test_pre_commit_try_repo(tmp_path):
    """Runs the hook through the pre-commit framework when it is installed (optional; skipped otherwise)."""
    exe = shutil.which("pre-commit")
    if exe is None or shutil.which("git") is None:
        pytest.skip("pre-commit (optional test extra 'hooks') or git not installed")
    repo = tmp_path / "models"
    repo.mkdir()
    shutil.copy(SAMPLES / "pv40_motor_bracket.bdf", repo)
    env = {**os.environ, "GIT_AUTHOR_NAME": "t", "GIT_AUTHOR_EMAIL": "t@example.invalid",
           "GIT_COMMITTER_NAME": "t", "GIT_COMMITTER_EMAIL": "t@example.invalid"}
    for cmd in (["git", "init", "-q"], ["git", "add", "."]):
        subprocess.run(cmd, cwd=repo, check=True, env=env)
    proc = subprocess.run([exe, "try-repo", str(REPO), "deckwarden", "--all-files"], cwd=repo,
                          capture_output=True, text=True, env=env, timeout=900)
    if "An unexpected error has occurred" in proc.stdout + proc.stderr:
        pytest.skip("pre-commit could not set the hook up here (no package index?)")
    assert proc.returncode == 0 and "deckwarden" in proc.stdout
