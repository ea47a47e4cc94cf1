"""Load a script of ``tests/bench/`` (not a package) as a module, for the tests that use its generators."""
from __future__ import annotations

import importlib.util
import sys
from pathlib import Path

BENCH = Path(__file__).resolve().parent / "bench"


def load(name: str):
    """The module ``tests/bench/<name>.py`` (its folder is on sys.path while it loads, for its own imports)."""
    key = f"_bench_{name}"
    if key in sys.modules:
        return sys.modules[key]
    spec = importlib.util.spec_from_file_location(key, BENCH / f"{name}.py")
    mod = importlib.util.module_from_spec(spec)
    sys.modules[key] = mod
    sys.path.insert(0, str(BENCH))
    try:
        spec.loader.exec_module(mod)
    finally:
        sys.path.remove(str(BENCH))
    return mod
