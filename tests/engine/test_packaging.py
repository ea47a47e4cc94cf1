"""The package list of pyproject.toml names every package of the source tree.

setuptools cannot find sub-packages by itself while rules/ is installed as linter.rules, so the
list is explicit; this test keeps it complete (a new format package must be added to it).
"""
from __future__ import annotations

from pathlib import Path

import pytest

tomllib = pytest.importorskip("tomllib")  # Python 3.11+

REPO = Path(__file__).resolve().parents[2]


def _declared() -> set[str]:
    with open(REPO / "pyproject.toml", "rb") as fh:
        return set(tomllib.load(fh)["tool"]["setuptools"]["packages"])


def _on_disk() -> set[str]:
    found = {".".join(p.parent.relative_to(REPO).parts) for p in (REPO / "linter").rglob("__init__.py")}
    if (REPO / "rules" / "__init__.py").is_file():
        found.add("linter.rules")
    return found


def test_every_package_is_listed():
    missing = _on_disk() - _declared()
    assert not missing, f"add to [tool.setuptools] packages in pyproject.toml: {sorted(missing)}"


def test_no_listed_package_is_missing():
    listed = {name for name in _declared() if name != "linter.rules"}
    stale = {name for name in listed if not (REPO / Path(*name.split(".")) / "__init__.py").is_file()}
    assert not stale, f"listed in pyproject.toml but not on disk: {sorted(stale)}"
