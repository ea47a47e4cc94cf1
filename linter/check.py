"""The check driver: paths -> decks -> parse -> derive -> rules -> :class:`FileReport`.

Everything that can go wrong with one file is contained in that file's report;
the other files are still checked.
"""
from __future__ import annotations

import os
import time
from typing import Any, Optional

from . import background, parsers, registry
from .config import Config
from .discovery import discover, general_finding, make_policy
from .findings import FileReport, Finding, RunResult, jsonable, raised_at
from .parsers.includes import IncludePolicy
from .parsers.sources import SourceError

def material_summary(model) -> list[dict[str, Any]]:
    from .review_facts import block_facts
    from .usage import element_types_of

    out = []
    for m in list(model.materials.values()) + list(model.duplicate_materials):
        entry = {
            "name": m.name, "path": m.loc.path, "line": m.loc.line,
            "properties": [f"{b.kind}:{b.form}" if b.form != "iso" else b.kind for b in m.blocks],
            "blocks": [block_facts(b) for b in m.blocks],
        }
        used = element_types_of(model, m.key)
        if used:
            entry["used_by"] = used
        if m.derived:
            entry["derived"] = jsonable(m.derived)
        out.append(entry)
    return out


def check_file(path: str, fmt: str, config: Config, policy: IncludePolicy, details: bool = False) -> FileReport:
    """Check one deck; ``details`` adds the audit's facts (file hashes, steps, usage map, unit labels)."""
    from .derived import derive_all
    from .runner import finalize, run_rules

    t0 = time.perf_counter()
    dialect = config.dialect_for(fmt)
    report = FileReport(path=path, format=fmt, dialect=dialect)
    try:
        mod = parsers.get(fmt)
        opts = parsers.ParseOptions(dialect=dialect, include=policy, max_file_size=config.max_file_size,
                                    materials=config.materials if fmt == "mesh" else None,
                                    display_path=path)
        model = mod.parse(path, opts)
    except SourceError as exc:
        report.findings = [Finding(rule=f"parse/{exc.code}", severity="error", message=f"{path}: {exc.message}",
                                   path=path, line=None)]
        report.incomplete = True
        report.seconds = time.perf_counter() - t0
        return report
    except Exception as exc:
        where = raised_at(exc)
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
    if getattr(config, "inline_suppressions", True):
        from .suppressions import apply

        notes = [f for f in apply(model, report.findings, getattr(mod, "COMMENT_PREFIXES", ()),
                                  deferred=report.deferred)
                 if config.rule_enabled(f.rule)]
        if notes:
            report.findings = finalize(report.findings + notes, config)
    report.dialect = model.dialect
    report.line_texts = finding_line_texts(model, report.findings)
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
    if details:
        from .review_facts import model_details

        report.details = model_details(model)
    report.incomplete = registry.makes_incomplete(report.findings)
    report.seconds = time.perf_counter() - t0
    return report


def finding_line_texts(model, findings) -> dict[str, dict[int, str]]:
    """The lines the findings point at, from the text the parser kept (``DeckModel.texts``), each found
    from the nearest line the parser recorded (``extras["line_anchors"]``, at most 64 lines on)."""
    texts = getattr(model, "texts", None)
    if not texts:
        return {}
    from .parsers.buffers import line_texts

    wanted: dict[str, set[int]] = {}
    for f in findings:
        if f.path in texts and f.line:
            wanted.setdefault(f.path, set()).add(int(f.line))
    anchors = model.extras.get("line_anchors") or {}
    return {p: line_texts(texts[p], lines, anchors.get(p, ()), reach=64) for p, lines in wanted.items()}


def _type_counts(model) -> dict[str, int]:
    out: dict[str, int] = {}
    for b in model.element_blocks:
        out[b.type] = out.get(b.type, 0) + b.count
    return out


def _check_one(args):
    path, fmt, config, policy, details = args
    return check_file(path, fmt, config, policy, details)


def _no_deck_check(decks: list, result: RunResult, paths: list[str]) -> list:
    if not decks and not result.general:
        result.general.append(general_finding("parse/no-deck-found",
                                       f"no deck of a known format found in: {', '.join(paths)}", None))
    return decks


def _collect(reports, total: int, progress) -> list[FileReport]:
    """The file reports in order; ``progress`` (``linter.progress.Progress`` or None) advances per deck."""
    if progress is None:
        return list(reports)
    out = []
    progress.start(total)
    try:
        for fr in reports:
            out.append(fr)
            progress.advance(len(fr.findings))
    finally:
        progress.stop()
    return out


def check_paths(paths: list[str], config: Optional[Config] = None, jobs: Optional[int] = None,
                details: bool = False, progress=None) -> RunResult:
    config = config or Config()
    result = RunResult()
    registry.load()
    for kind, errors in (("rule", registry.plugin_errors()), ("parser", parsers.plugin_errors())):
        for name, detail in errors:
            result.general.append(Finding(rule="internal/plugin-failed", severity="error",
                                          message=f"{kind} plugin {name!r} could not be loaded: {detail}",
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
        # the workers use the processors: no helper process inside them (``linter.background``)
        with background.allowed(False), ProcessPoolExecutor(max_workers=jobs, mp_context=ctx) as pool:
            def mapper(fn, items):
                return pool.map(fn, items, chunksize=max(1, len(items) // (jobs * 8)))

            decks = _no_deck_check(discover(paths, result, config, mapper), result, paths)
            result.files = _collect(mapper(_check_one, [(p, fmt, config.for_path(p), policy, details)
                                                        for p, fmt in decks]), len(decks), progress)
    else:
        decks = _no_deck_check(discover(paths, result, config), result, paths)
        with background.allowed(jobs > 1):      # one process: a large deck may use a helper on another core
            result.files = _collect((_check_one((p, fmt, config.for_path(p), policy, details)) for p, fmt in decks),
                                    len(decks), progress)
    result.files.sort(key=lambda fr: fr.path)   # the same order whatever --jobs is
    if len(result.files) > 1:
        from .drift import material_drift   # run-level stage: materials compared across decks

        material_drift(result, config)
    if any(fr.deferred for fr in result.files):
        from .suppressions import settle_run_level   # comments that accept run-level findings

        settle_run_level(result, config)
    result.incomplete = registry.makes_incomplete(result.general) or any(f.incomplete for f in result.files)
    return result
