"""Mutated material files (lines deleted, repeated, values replaced by wrong types): never an internal
error, every finding on a line of the file."""
from __future__ import annotations

import random
import shutil
from pathlib import Path

import pytest

pytest.importorskip("meshio")

from linter.check import check_file  # noqa: E402
from linter.config import Config  # noqa: E402
from linter.parsers.includes import IncludePolicy  # noqa: E402

SAMPLE = Path(__file__).resolve().parents[2] / "sample_decks"
TOKENS = ["", "-", "{}", "[]", "null", "1e400", "-5", "0", "true", "x", "[1, 2]", "{a: 1}", ".nan", "'3'", "*a",
          "&a 1", ":", "- x", "99999999999999999999999", "[[1, 2, 3, 4]]", "{model: ogden-9}"]
NAMES = ["E", "nu", "C10", "kind", "cells", "material", "model", "type", "T", "physical", "gravity", "density"]


def mutate(lines: list[str], rng: random.Random) -> list[str]:
    out = list(lines)
    for _ in range(rng.randint(1, 3)):
        i = rng.randrange(len(out))
        op = rng.random()
        if op < 0.3:
            del out[i]
        elif op < 0.6 and ":" in out[i]:
            head, _sep, _tail = out[i].rpartition(":")
            out[i] = f"{head}: {rng.choice(TOKENS)}"
        elif op < 0.8:
            out.insert(i, out[rng.randrange(len(out))])
        else:
            out[i] = out[i].replace(rng.choice(NAMES), rng.choice(NAMES + ["", "Q"]))
    return out


def test_mutated_material_files(tmp_path):
    shutil.copy(SAMPLE / "pv40_seal_housing.msh", tmp_path / "pv40_seal_housing.msh")
    lines = (SAMPLE / "pv40_seal_housing.yaml").read_text().splitlines()
    rng = random.Random(20261204)
    for case in range(150):
        text = "\n".join(mutate(lines, rng)) + "\n"
        path = tmp_path / "model.yaml"
        path.write_text(text)
        report = check_file(str(path), "mesh", Config(), IncludePolicy())
        n = text.count("\n")
        for f in report.findings:
            assert not f.rule.startswith("internal/"), (case, f.message, text)
            if f.line is not None and f.path == str(path):
                assert 1 <= f.line <= n, (case, f.rule, f.line, text)
