"""Entry points of deckwarden's plugin groups, without importing ``importlib.metadata`` when none can exist.

``importlib.metadata`` costs ~25 ms to import (it pulls in the ``email`` package), a tenth
of a small check. Before paying that, look on ``sys.path`` for an installed distribution
whose ``entry_points.txt`` names the group; only when one does (or when something the quick
look cannot read is on the path: an archive, a finder of its own) ask ``importlib.metadata``.
"""
from __future__ import annotations

import os
import sys


def entry_points(group: str) -> list:
    """The entry points of ``group`` (``importlib.metadata.EntryPoint`` objects)."""
    if not _may_declare(group):
        return []
    from importlib import metadata

    return list(metadata.entry_points(group=group))


def _may_declare(group: str) -> bool:
    from importlib.machinery import PathFinder

    if any(hasattr(f, "find_distributions") and f is not PathFinder for f in sys.meta_path):
        return True
    header = f"[{group}]"
    for entry in sys.path:
        folder = entry or "."
        try:
            names = os.listdir(folder)
        except NotADirectoryError:          # a zip archive on the path: let importlib.metadata read it
            return True
        except OSError:
            continue
        for name in names:
            if not name.endswith((".dist-info", ".egg-info")):
                continue
            try:
                with open(os.path.join(folder, name, "entry_points.txt"), encoding="utf-8", errors="replace") as fh:
                    if header in fh.read():
                        return True
            except OSError:
                continue
    return False
