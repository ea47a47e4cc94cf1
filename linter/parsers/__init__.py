"""Format parsers behind a registry (one package per format).

Every parser module (for a built-in format: the package ``linter/parsers/<format>/``) provides::

    FORMAT = "keyword"                       # registry name
    EXTENSIONS = (".inp",)                   # lower-case, with dot: the one list of the format's extensions
    DEFAULT_DIALECT = "calculix"
    COMMENT_PREFIXES = ("**",)               # what starts a comment on a line of this format
    def sniff(head: bytes) -> float: ...      # 0..1: how much the first 64 KiB look like this format
    def parse(path: str, options: ParseOptions) -> DeckModel: ...
    def includes_of(path: str, options: ParseOptions) -> list[str]  # optional: resolved include paths

A built-in package declares the constants in its ``__init__.py`` and imports its reader only when
``sniff``, ``parse`` or ``includes_of`` is first used (:func:`reader_attributes`), so listing the
formats and their extensions stays cheap. Third-party formats register through the entry-point group
``deckwarden.parsers`` (value: a module with the attributes above); one that fails to load is reported
by :func:`plugin_errors` (``internal/plugin-failed``).
"""
from __future__ import annotations

import importlib
from dataclasses import dataclass, field
from typing import Optional

from .includes import IncludePolicy

ENTRY_POINT_GROUP = "deckwarden.parsers"

#: built-in formats: name -> package (the registry entry; the package declares the rest)
BUILTIN = {
    "keyword": "linter.parsers.keyword",
    "bulk": "linter.parsers.bulk",
    "aster": "linter.parsers.aster",
    "mesh": "linter.parsers.mesh",
    "febio": "linter.parsers.febio",
}
#: the attributes every parser module must have (``includes_of`` is optional)
REQUIRED = ("FORMAT", "EXTENSIONS", "sniff", "parse")


def reader_attributes(package: str):
    """A module ``__getattr__`` for a format package: ``sniff``, ``parse`` and ``includes_of`` come
    from its ``parser`` module, imported on first use."""

    def __getattr__(name: str):
        if name in ("sniff", "parse", "includes_of"):
            return getattr(importlib.import_module(f"{package}.parser"), name)
        raise AttributeError(f"module {package!r} has no attribute {name!r}")

    return __getattr__


@dataclass
class ParseOptions:
    """What a parser needs to know beyond the path."""

    dialect: Optional[str] = None
    include: IncludePolicy = field(default_factory=IncludePolicy)
    max_file_size: int = 4 << 30
    #: path to show for the top deck (as the user gave it)
    display_path: Optional[str] = None
    #: mesh route: the material file when the path checked is the mesh itself (``--materials``)
    materials: Optional[str] = None


_modules: dict = {}
_plugins_loaded = False
_plugin_errors: list[tuple[str, str]] = []


def _load_plugins() -> None:
    global _plugins_loaded
    if _plugins_loaded:
        return
    _plugins_loaded = True
    from ..entrypoints import entry_points

    for ep in entry_points(ENTRY_POINT_GROUP):
        try:
            mod = ep.load()
            missing = [a for a in REQUIRED if not hasattr(mod, a)]
            if missing:
                raise AttributeError(f"the module lacks {', '.join(missing)}")
            _modules[mod.FORMAT] = mod
        except Exception as exc:
            _plugin_errors.append((ep.name, f"{type(exc).__name__}: {exc}"))


def plugin_errors() -> list[tuple[str, str]]:
    """(entry-point name, reason) of every parser plugin that could not be loaded."""
    _load_plugins()
    return list(_plugin_errors)


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


def extensions() -> dict[str, tuple[str, ...]]:
    """format -> its extensions (lower-case, with dot), as each parser module declares them."""
    return {name: tuple(e.lower() for e in get(name).EXTENSIONS) for name in names()}


def formats_for_extension(ext: str) -> list[str]:
    ext = ext.lower()
    return [name for name, exts in extensions().items() if ext in exts]


def all_extensions() -> set[str]:
    return {e for exts in extensions().values() for e in exts}


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
