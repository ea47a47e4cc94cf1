"""Include resolution shared by every parser: base folder, root confinement, cycles, depth.

A reviewer linting a third-party model must not have it read arbitrary files, so an
include may not leave the *include root* unless the configuration allows it. The root
is, in order: ``include_root`` from the configuration (or ``--include-root``); the
folder of the configuration file; the git work tree that holds the deck; the common
folder of the paths given on the command line.
"""
from __future__ import annotations

import os
from dataclasses import dataclass, field
from pathlib import Path
from typing import Optional


@dataclass
class IncludePolicy:
    root: Optional[str] = None          # absolute, resolved; None = no confinement
    allow_outside: bool = False
    max_depth: int = 16
    #: keyword decks: folder relative includes resolve against (the solver's cwd); None = top deck's folder
    solver_cwd: Optional[str] = None


@dataclass
class Resolution:
    status: str                  # ok | missing | refused | cycle | too-deep | directory
    path: Optional[str]          # the path to open (as it will be displayed)
    message: str = ""


@dataclass
class IncludeTracker:
    """Tracks the chain of open files for one top-level deck."""

    policy: IncludePolicy
    stack: list[str] = field(default_factory=list)   # real paths of the files being read

    def resolve(self, written: str, base_dir: str) -> Resolution:
        """Resolve ``written`` (as in the deck) against ``base_dir``; check root, cycles, depth."""
        name = written.strip().strip('"').strip("'").strip()
        if not name:
            return Resolution("missing", None, "the include names no file")
        cand = Path(name)
        display = str(cand if cand.is_absolute() else Path(base_dir) / cand)
        if base_dir in ("", "."):
            display = str(cand)
        real = os.path.realpath(display)
        pol = self.policy
        if pol.root and not pol.allow_outside:
            root = os.path.realpath(pol.root)
            if not (real == root or real.startswith(root.rstrip(os.sep) + os.sep)):
                return Resolution("refused", display,
                                  f"include '{name}' resolves outside the include root {pol.root}; "
                                  "refused (allow it with --allow-include-outside or include_root)")
        if real in self.stack:
            return Resolution("cycle", display, f"include '{name}' includes itself (cycle)")
        if len(self.stack) >= pol.max_depth + 1:
            return Resolution("too-deep", display,
                              f"include '{name}' is nested deeper than {pol.max_depth} levels")
        if os.path.isdir(real):
            return Resolution("directory", display, f"include '{name}' names a directory, not a file")
        if not os.path.exists(real):
            return Resolution("missing", display, f"included file '{name}' not found (looked for {display})")
        return Resolution("ok", display)


def default_root(paths: list[str], config_source: Optional[str], include_root: Optional[str]) -> Optional[str]:
    if include_root:
        return os.path.realpath(include_root)
    if config_source:
        return os.path.realpath(os.path.dirname(os.path.abspath(config_source)))
    absd = [os.path.realpath(p if os.path.isdir(p) else os.path.dirname(os.path.abspath(p)) or ".")
            for p in paths] or [os.getcwd()]
    common = os.path.commonpath(absd)
    git = _git_root(common)
    return git or common


def _git_root(folder: str) -> Optional[str]:
    here = Path(folder)
    for cand in (here, *here.parents):
        if (cand / ".git").exists():
            return str(cand)
    return None
