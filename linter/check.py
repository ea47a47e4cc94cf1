"""The check driver: paths -> decks -> parse -> derive -> rules -> :class:`FileReport`.

Everything that can go wrong with one file is contained in that file's report;
the other files are still checked.
"""
from __future__ import annotations

import math
import os
import time
import traceback
from typing import Any, Optional

from . import parsers
from .config import Config
from .findings import FileReport, Finding, RunResult
from .includes import IncludePolicy, default_root
from .sources import SourceError

SNIFF_BYTES = 65536
#: rules whose findings make the check incomplete (exit code 2)
INCOMPLETE_RULES = {"internal/rule-failed", "internal/parser-failed", "internal/derive-failed",
                    "parse/include-refused", "parse/file-unreadable", "parse/binary-file",
                    "parse/file-too-large", "parse/not-a-deck", "parse/path-not-found",
                    "parse/no-deck-found", "parse/include-unreadable", "internal/plugin-failed",
                    "parse/xml-refused", "parse/xml-malformed", "parse/xml-unavailable",
                    "parse/unsupported-version"}


def _general(rule: str, message: str, path: Optional[str]) -> Finding:
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
    for p in paths:
        if not os.path.lexists(p):
            result.general.append(_general("parse/path-not-found", f"{p}: no such file or folder", p))
            continue
        if os.path.isdir(p):
            files = [f for f in _walk(p, result) if os.path.splitext(f)[1].lower() in exts]
            for f, (fmt, err) in zip(files, mapper(_detect_task, files)):
                if err:
                    result.general.append(_general("parse/file-unreadable", f"{f}: cannot read the file ({err})", f))
                elif fmt:
                    walked.append((f, fmt))
            continue
        try:
            head = _head(p)
        except OSError as exc:
            result.general.append(_general("parse/file-unreadable", f"{p}: cannot read the file ({exc.strerror or exc})", p))
            continue
        fmt = parsers.detect(p, head)
        if fmt is None:
            from .sources import looks_binary

            if looks_binary(head):
                result.general.append(_general("parse/binary-file", f"{p}: is a binary file, not a text deck", p))
            elif not head.strip():
                fmts = parsers.formats_for_extension(os.path.splitext(p)[1])
                if fmts:
                    explicit.append((p, fmts[0]))
                    continue
                result.general.append(_general("parse/not-a-deck", f"{p}: empty file of unknown format", p))
            else:
                result.general.append(_general(
                    "parse/not-a-deck", f"{p}: does not look like a deck of a known format "
                    f"({', '.join(parsers.names())})", p))
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
    """Files under ``top`` in sorted order; follows links to folders once (loops are cut)."""
    seen_dirs: set[str] = set()
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
            result.general.append(_general("parse/file-unreadable",
                                           f"{d}: cannot list the folder ({exc.strerror or exc})", d))
            continue
        subdirs = []
        for e in entries:
            try:
                if e.is_dir(follow_symlinks=True):
                    if not e.name.startswith("."):
                        subdirs.append(e.path)
                elif e.is_file(follow_symlinks=True):
                    yield e.path
            except OSError:
                continue
        stack.extend(reversed(subdirs))


def make_policy(paths: list[str], config: Config) -> IncludePolicy:
    root = None if config.allow_include_outside else default_root(paths, config.source, config.include_root)
    return IncludePolicy(root=root, allow_outside=config.allow_include_outside,
                         max_depth=int(config.max_include_depth), solver_cwd=config.solver_cwd)


def jsonable(value: Any) -> Any:
    """Plain JSON types from numpy scalars/arrays, tuples, non-finite floats (-> None)."""
    import numpy as np

    if isinstance(value, dict):
        return {str(k): jsonable(v) for k, v in value.items() if not str(k).startswith("_")}
    if isinstance(value, (list, tuple)):
        return [jsonable(v) for v in value]
    if isinstance(value, np.ndarray):
        return jsonable(value.tolist())
    if isinstance(value, (np.floating, float)):
        f = float(value)
        return f if math.isfinite(f) else None
    if isinstance(value, (np.integer,)):
        return int(value)
    if isinstance(value, (np.bool_,)):
        return bool(value)
    if value is None or isinstance(value, (str, int, bool)):
        return value
    return str(value)


def material_summary(model) -> list[dict[str, Any]]:
    from .usage import element_types_of

    out = []
    for m in list(model.materials.values()) + list(model.duplicate_materials):
        entry = {
            "name": m.name, "path": m.loc.path, "line": m.loc.line,
            "properties": [f"{b.kind}:{b.form}" if b.form != "iso" else b.kind for b in m.blocks],
        }
        used = element_types_of(model, m.key)
        if used:
            entry["used_by"] = used
        if m.derived:
            entry["derived"] = jsonable(m.derived)
        out.append(entry)
    return out


def check_file(path: str, fmt: str, config: Config, policy: IncludePolicy) -> FileReport:
    from .derived import derive_all
    from .runner import finalize, run_rules

    t0 = time.perf_counter()
    dialect = config.dialect_for(fmt)
    report = FileReport(path=path, format=fmt, dialect=dialect)
    try:
        mod = parsers.get(fmt)
        opts = parsers.ParseOptions(dialect=dialect, include=policy, max_file_size=config.max_file_size,
                                    display_path=path)
        model = mod.parse(path, opts)
    except SourceError as exc:
        report.findings = [Finding(rule=f"parse/{exc.code}", severity="error", message=f"{path}: {exc.message}",
                                   path=path, line=None)]
        report.incomplete = True
        report.seconds = time.perf_counter() - t0
        return report
    except Exception as exc:
        tb = traceback.extract_tb(exc.__traceback__)
        where = f"{tb[-1].filename.rsplit('/', 1)[-1]}:{tb[-1].lineno}" if tb else ""
        report.findings = [Finding(
            rule="internal/parser-failed", severity="error",
            message=f"the {fmt} parser failed on this file ({type(exc).__name__}: {exc}); nothing in it was checked",
            path=path, line=None, data={"exception": type(exc).__name__, "detail": str(exc), "where": where})]
        report.incomplete = True
        report.seconds = time.perf_counter() - t0
        return report
    found = derive_all(model, config)
    found += run_rules(model, config)
    report.findings = finalize(found, config) if found else []
    report.dialect = model.dialect
    report.materials = material_summary(model)
    report.unchecked = [{"what": u.what, "path": u.loc.path, "line": u.loc.line, "reason": u.reason,
                         "material": u.material} for u in model.unchecked]
    us = model.derived.get("unit_system")
    report.unit_system = jsonable(us) if us else None
    report.summary = jsonable({
        "files_read": model.files,
        "materials": len(model.materials),
        "sections": len(model.sections),
        "elements": sum(b.count for b in model.element_blocks),
        "element_types": _type_counts(model),
        "nodes": model.geometry.node_count,
        "steps": [p.kind for _s, p in model.procedures()],
    })
    report.incomplete = any(f.rule in INCOMPLETE_RULES for f in report.findings)
    report.seconds = time.perf_counter() - t0
    return report


def _type_counts(model) -> dict[str, int]:
    out: dict[str, int] = {}
    for b in model.element_blocks:
        out[b.type] = out.get(b.type, 0) + b.count
    return out


def _check_one(args):
    path, fmt, config, policy = args
    return check_file(path, fmt, config, policy)


def _no_deck_check(decks: list, result: RunResult, paths: list[str]) -> list:
    if not decks and not result.general:
        result.general.append(_general("parse/no-deck-found",
                                       f"no deck of a known format found in: {', '.join(paths)}", None))
    return decks


def check_paths(paths: list[str], config: Optional[Config] = None, jobs: Optional[int] = None) -> RunResult:
    from . import registry

    config = config or Config()
    result = RunResult()
    registry.load()
    for name, detail in registry.plugin_errors():
        result.general.append(Finding(rule="internal/plugin-failed", severity="error",
                                      message=f"rule plugin {name!r} could not be loaded: {detail}",
                                      path=None, line=None, data={"plugin": name, "detail": detail}))
    jobs = max(1, int(jobs or config.jobs or 1))
    policy = make_policy(paths, config)
    if jobs > 1 and (len(paths) > 1 or any(os.path.isdir(p) for p in paths)):
        import multiprocessing as mp
        from concurrent.futures import ProcessPoolExecutor

        for fmt in parsers.names():  # import the parsers once, before the workers fork
            try:
                parsers.get(fmt)
            except Exception:
                pass
        ctx = mp.get_context("fork") if "fork" in mp.get_all_start_methods() else None
        with ProcessPoolExecutor(max_workers=jobs, mp_context=ctx) as pool:
            def mapper(fn, items):
                return pool.map(fn, items, chunksize=max(1, len(items) // (jobs * 8)))

            decks = _no_deck_check(discover(paths, result, config, mapper), result, paths)
            result.files = list(mapper(_check_one, [(p, fmt, config, policy) for p, fmt in decks]))
    else:
        decks = _no_deck_check(discover(paths, result, config), result, paths)
        result.files = [_check_one((p, fmt, config, policy)) for p, fmt in decks]
    result.incomplete = bool(result.general and any(f.rule in INCOMPLETE_RULES for f in result.general)) or \
        any(f.incomplete for f in result.files)
    return result


def exit_code(result: RunResult, fail_on: str) -> int:
    from .findings import SEVERITY_RANK

    if result.incomplete:
        return 2
    level = SEVERITY_RANK[fail_on]
    return 1 if any(SEVERITY_RANK.get(f.severity, 0) >= level for f in result.findings) else 0
