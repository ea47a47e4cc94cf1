"""Format parsers behind a registry (one module per format).

Every parser module provides::

    FORMAT = "keyword"                       # registry name
    EXTENSIONS = (".inp",)                   # lower-case, with dot
    DEFAULT_DIALECT = "calculix"
    def sniff(head: bytes) -> float: ...      # 0..1: how much the first 64 KiB look like this format
    def parse(path: str, options: ParseOptions) -> DeckModel: ...
    def includes_of(path: str, options: ParseOptions) -> list[str]  # optional: resolved include paths

Modules are imported lazily, on first use. Third-party formats register through the
entry-point group ``deckwarden.parsers`` (value: a module with the attributes above).
"""
from __future__ import annotations

import importlib
from dataclasses import dataclass, field
from typing import Optional

from .includes import IncludePolicy

ENTRY_POINT_GROUP = "deckwarden.parsers"

#: built-in formats: name -> module (imported on first use)
BUILTIN = {
    "keyword": "linter.parsers.keyword",
    "bulk": "linter.parsers.bulk",
    "febio": "linter.parsers.febio",
}
#: extensions known without importing the modules (kept in sync by a test)
EXTENSIONS = {
    "keyword": (".inp",),
    "bulk": (".bdf", ".dat", ".nas", ".blk", ".bulk"),
    "febio": (".feb",),
}


@dataclass
class ParseOptions:
    """What a parser needs to know beyond the path."""

    dialect: Optional[str] = None
    include: IncludePolicy = field(default_factory=IncludePolicy)
    max_file_size: int = 4 << 30
    #: path to show for the top deck (as the user gave it)
    display_path: Optional[str] = None


_modules: dict = {}
_plugins_loaded = False


def _load_plugins() -> None:
    global _plugins_loaded
    if _plugins_loaded:
        return
    _plugins_loaded = True
    from ..entrypoints import entry_points

    for ep in entry_points(ENTRY_POINT_GROUP):
        try:
            mod = ep.load()
            _modules[mod.FORMAT] = mod
            EXTENSIONS[mod.FORMAT] = tuple(mod.EXTENSIONS)
        except Exception:  # pragma: no cover - reported by `deckwarden rules --plugins`
            continue


def names() -> list[str]:
    _load_plugins()
    return sorted(set(BUILTIN) | set(_modules))


def get(name: str):
    _load_plugins()
    if name not in _modules:
        if name not in BUILTIN:
            raise KeyError(f"no parser for format {name!r}")
        _modules[name] = importlib.import_module(BUILTIN[name])
    return _modules[name]


def formats_for_extension(ext: str) -> list[str]:
    _load_plugins()
    ext = ext.lower()
    return [name for name, exts in EXTENSIONS.items() if ext in exts]


def all_extensions() -> set[str]:
    _load_plugins()
    return {e for exts in EXTENSIONS.values() for e in exts}


def detect(path: str, head: bytes) -> Optional[str]:
    """Choose the format of a file from its extension and contents; None when nothing fits."""
    import os

    ext = os.path.splitext(path)[1].lower()
    cands = formats_for_extension(ext) or names()
    best, score = None, 0.0
    for name in cands:
        try:
            s = get(name).sniff(head)
        except Exception:
            s = 0.0
        if s > score:
            best, score = name, s
    return best if score >= 0.3 else None
