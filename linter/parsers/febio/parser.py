"""Sniffing and the parse entry point of the FEBio reader (see the package docstring)."""
from __future__ import annotations

import re

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


__all__ = ["sniff", "parse"]
