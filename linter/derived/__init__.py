"""Derivations: model-wide quantities computed once after parsing and before the rules.

Each module here registers functions with :func:`derivation`; they fill
``Material.derived`` / ``DeckModel.derived`` (derived elastic constants, initial
hyperelastic moduli, the inferred unit system, ...) for rules and reporters. They
call the pure functions of ``linter.physics`` and do no I/O.
"""
from __future__ import annotations

import importlib
import pkgutil
from typing import Callable

_DERIVATIONS: list[tuple[int, str, Callable]] = []
_loaded = False


def derivation(name: str, order: int = 50):
    """Register ``fn(model, config)``; lower ``order`` runs first (elastic 10, hyper 20, units 80)."""

    def deco(fn):
        _DERIVATIONS.append((order, name, fn))
        _DERIVATIONS.sort(key=lambda t: (t[0], t[1]))
        return fn

    return deco


def _load() -> None:
    global _loaded
    if not _loaded:
        _loaded = True
        for info in pkgutil.iter_modules(__path__):
            if not info.name.startswith("_"):
                importlib.import_module(f"{__name__}.{info.name}")


def derive_all(model, config) -> list:
    """Run every derivation; a failing one becomes an ``internal/derive-failed`` finding."""
    from ..findings import Finding, raised_at

    _load()
    failures = []
    for _order, name, fn in _DERIVATIONS:
        try:
            fn(model, config)
        except Exception as exc:
            where = raised_at(exc)
            failures.append(Finding(rule="internal/derive-failed", severity="error",
                                    message=f"deriving {name} failed ({type(exc).__name__}: {exc})",
                                    path=model.path, line=None,
                                    data={"step": name, "exception": type(exc).__name__, "detail": str(exc),
                                          "where": where}))
    return failures
