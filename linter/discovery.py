"""Deck discovery: the decks under the paths given (folder walk, format sniffing by extension and
contents, and the include graph, so that a file that only serves as an include of another walked
deck is not checked on its own)."""
from __future__ import annotations

import os
from typing import Optional

from . import parsers
from .config import Config
from .findings import Finding, RunResult
from .parsers.includes import IncludePolicy, default_root

SNIFF_BYTES = 65536
#: extensions of common mesh files (meshio reads them with a material file; alone they are not decks)
MESH_EXTENSIONS = (".msh", ".vtu", ".vtk", ".xdmf", ".xmf", ".med", ".mesh", ".meshb", ".obj", ".ply", ".stl",
                   ".off", ".h5m", ".e", ".exo", ".su2", ".ugrid", ".f3grid", ".node", ".ele")


def general_finding(rule: str, message: str, path: Optional[str]) -> Finding:
    """An error that belongs to the run (or a path given), not to a checked deck."""
    return Finding(rule=rule, severity="error", message=message, path=path, line=None)


def _head(path: str) -> bytes:
    with open(path, "rb") as fh:
        return fh.read(SNIFF_BYTES)


def _includes_task(args) -> list[str]:
    f, fmt, config, policy = args
    finder = getattr(parsers.get(fmt), "includes_of", None)
    if finder is None:
        return []
    try:
        opts = parsers.ParseOptions(dialect=config.dialect_for(fmt), include=policy,
                                    max_file_size=config.max_file_size, display_path=f)
        return [os.path.realpath(x) for x in finder(f, opts)]
    except Exception:
        return []


def _detect_task(path: str) -> tuple[Optional[str], Optional[str]]:
    """(format or None, error text or None) of one walked file."""
    try:
        return parsers.detect(path, _head(path)), None
    except OSError as exc:
        return None, str(exc.strerror or exc)


def discover(paths: list[str], result: RunResult, config: Config, mapper=map) -> list[tuple[str, str]]:
    """(path, format) of every top-level deck under ``paths``; records problems in ``result``.

    ``mapper`` maps the format sniffing and the include scan over the walked files (a process pool's
    ``map`` with ``--jobs``).
    """
    explicit: list[tuple[str, str]] = []
    walked: list[tuple[str, str]] = []
    exts = parsers.all_extensions()
    if config.materials:  # mesh route: every path is a mesh, checked with the material file given
        for p in paths:
            if not os.path.lexists(p):
                result.general.append(general_finding("parse/path-not-found", f"{p}: no such file or folder", p))
            else:
                explicit.append((p, "mesh"))
        return explicit
    for p in paths:
        if not os.path.lexists(p):
            result.general.append(general_finding("parse/path-not-found", f"{p}: no such file or folder", p))
            continue
        if os.path.isdir(p):
            files = [f for f in _walk(p, result) if os.path.splitext(f)[1].lower() in exts
                     and not config.excluded(f)]
            for f, (fmt, err) in zip(files, mapper(_detect_task, files)):
                if err:
                    result.general.append(general_finding("parse/file-unreadable", f"{f}: cannot read the file ({err})", f))
                elif fmt:
                    walked.append((f, fmt))
            continue
        from .parsers.sources import not_regular

        special = not_regular(p)
        if special:
            result.general.append(general_finding("parse/file-unreadable", f"{p}: {special}", p))
            continue
        try:
            head = _head(p)
        except OSError as exc:
            result.general.append(general_finding("parse/file-unreadable", f"{p}: cannot read the file ({exc.strerror or exc})", p))
            continue
        fmt = parsers.detect(p, head)
        if fmt is None:
            from .parsers.sources import looks_binary

            if looks_binary(head):
                result.general.append(general_finding("parse/binary-file", f"{p}: is a binary file, not a text deck", p))
            elif not head.strip():
                # a file given by name must be a model: an empty one fails the check (an empty include is a warning)
                result.general.append(general_finding("parse/not-a-deck", f"{p}: the file is empty (or blank): "
                                                      "it holds no model", p))
            else:
                hint = (" (a mesh: check it with --materials FILE, or name it in a material file)"
                        if os.path.splitext(p)[1].lower() in MESH_EXTENSIONS else "")
                result.general.append(general_finding(
                    "parse/not-a-deck", f"{p}: does not look like a deck of a known format "
                    f"({', '.join(parsers.names())}){hint}", p))
            continue
        explicit.append((p, fmt))
    # a file that only serves as an include of another walked deck is not linted on its own
    if walked:
        included: set[str] = set()
        policy = make_policy(paths, config)
        for found in mapper(_includes_task, [(f, fmt, config, policy) for f, fmt in walked]):
            included.update(found)
        walked = [(f, fmt) for f, fmt in walked if os.path.realpath(f) not in included]
    seen, out = set(), []
    for f, fmt in explicit + walked:
        real = os.path.realpath(f)
        if real not in seen:
            seen.add(real)
            out.append((f, fmt))
    return out


def _walk(top: str, result: RunResult):
    """Files under ``top`` in sorted order. A link to a folder is followed only when its target lies
    inside ``top`` (the walk never leaves the folder given) and each folder is read once (no loops)."""
    seen_dirs: set[str] = set()
    root = os.path.realpath(top)
    stack = [top]
    while stack:
        d = stack.pop()
        real = os.path.realpath(d)
        if real in seen_dirs:
            continue
        seen_dirs.add(real)
        try:
            entries = sorted(os.scandir(d), key=lambda e: e.name)
        except OSError as exc:
            result.general.append(general_finding("parse/file-unreadable",
                                           f"{d}: cannot list the folder ({exc.strerror or exc})", d))
            continue
        subdirs = []
        for e in entries:
            try:
                if e.is_dir(follow_symlinks=True):
                    if not e.name.startswith(".") and _inside(e.path, root):
                        subdirs.append(e.path)
                elif e.is_file(follow_symlinks=True):
                    yield e.path
            except OSError:
                continue
        stack.extend(reversed(subdirs))


def _inside(path: str, root: str) -> bool:
    real = os.path.realpath(path)
    return real == root or real.startswith(root.rstrip(os.sep) + os.sep)


def make_policy(paths: list[str], config: Config) -> IncludePolicy:
    root = None if config.allow_include_outside else default_root(paths, config.source, config.include_root)
    return IncludePolicy(root=root, allow_outside=config.allow_include_outside,
                         max_depth=int(config.max_include_depth), solver_cwd=config.solver_cwd)
