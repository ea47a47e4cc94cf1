"""FEBio model files (``.feb``, XML): febio_spec 4.0, and 3.0 / 2.5 where only names differ.

Reading: the bytes are read once (size limit first, :mod:`linter.sources`); the mesh blocks are
located as byte ranges (:mod:`.scan`) and the small rest is parsed with defusedxml
(:mod:`.xmltree`: no entity expansion, no external entities, bounded nesting). Materials go
through :mod:`.materials`, the mesh, domains and analysis through :mod:`.model_builder`.

Names: FEBio matches material and part names exactly, so ``key`` is the name as written.
``DeckModel.extras["febio"]`` holds ``version``, ``module`` and ``mesh_blocks`` (tag, name, line,
count of every cut-out block).
"""
from __future__ import annotations

import re

FORMAT = "febio"
EXTENSIONS = (".feb",)
DEFAULT_DIALECT = "febio"
#: how a comment starts in this format (inline suppressions)
COMMENT_PREFIXES = ("<!--",)

_ROOT = re.compile(rb"<febio_spec\b")


def sniff(head: bytes) -> float:
    """How much ``head`` looks like an FEBio model (0..1)."""
    if _ROOT.search(head[:65536]):
        return 0.95
    stripped = head.lstrip(b"\xef\xbb\xbf \t\r\n")
    if stripped.startswith(b"<?xml") and (b"<Material" in head or b"<Geometry" in head):
        return 0.4
    return 0.0


def parse(path: str, options):
    """Parse one model file. Raises :class:`linter.sources.SourceError` only when it cannot be read."""
    from .model_builder import build

    return build(path, options)


__all__ = ["FORMAT", "EXTENSIONS", "DEFAULT_DIALECT", "COMMENT_PREFIXES", "sniff", "parse"]
