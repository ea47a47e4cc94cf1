"""The JSON report: one document per run, described by ``linter/data/report.schema.json``.

Contract (schema_version 1; later changes are additive only)::

    {"schema_version": 1,
     "tool": {"name": "deckwarden", "version": "..."},
     "caution": "...",
     "files": [{"path", "format", "dialect", "materials": [{"name", "path", "line", ...}],
                "unchecked": [...], "incomplete", ["unit_system"], ["summary"], "counts"}],
     "findings": [{"rule", "severity", "path", "line", "material", "message", "data",
                   ["fingerprint"], ["suppression"], ["baseline"]}],
     "summary": {"error", "warning", "note", "total", "suppressed", "in_baseline", "files", "incomplete",
                 "fail_on", "exit_code"}}

The counts per severity and ``total`` are of the findings that count for the exit code; findings
accepted by a suppression comment (``suppression``) or recorded in the baseline (``baseline``) are
still listed, and counted under ``suppressed`` and ``in_baseline``.

Paths are as given on the command line (relative stays relative); materials carry the
file where they are defined (maybe an include). Non-finite numbers become ``null``.
"""
from __future__ import annotations

from typing import Any

from . import as_options, dump_json, line_of, run_exit_code, severity_counts, sorted_findings, state_counts

SCHEMA_VERSION = 1


def _finding(f) -> dict[str, Any]:
    return {
        "rule": str(f.rule),
        "severity": str(f.severity),
        "path": None if f.path is None else str(f.path),
        "line": line_of(f.line),
        "material": None if f.material is None else str(f.material),
        "message": str(f.message),
        "data": f.data if isinstance(f.data, dict) else {"value": f.data},
        **({"fingerprint": str(f.fingerprint)} if getattr(f, "fingerprint", None) else {}),
        **({"suppression": f.suppression} if getattr(f, "suppression", None) is not None else {}),
        **({"baseline": True} if getattr(f, "baseline", False) else {}),
    }


def _located(item: dict, label: str) -> dict[str, Any]:
    """A material or unchecked entry with the keys the schema requires, in their types."""
    out = dict(item)
    out[label] = "" if item.get(label) is None else str(item.get(label))
    out["path"] = None if item.get("path") is None else str(item.get("path"))
    out["line"] = line_of(item.get("line"))
    return out


def build(result, options=None) -> dict[str, Any]:
    """The report as plain JSON types (no NaN or infinity anywhere)."""
    from .. import CAUTION, __version__
    from ..findings import jsonable

    opts = as_options(options)
    files = []
    for fr in result.files:
        entry = fr.to_dict()
        entry["materials"] = [_located(m, "name") for m in entry.get("materials") or () if isinstance(m, dict)]
        entry["unchecked"] = [_located(u, "what") for u in entry.get("unchecked") or () if isinstance(u, dict)]
        entry["counts"] = severity_counts(fr.findings)
        files.append(entry)
    findings = sorted_findings(result.general) + [f for fr in result.files for f in sorted_findings(fr.findings)]
    counts = severity_counts(findings)
    doc = {
        "schema_version": SCHEMA_VERSION,
        "tool": {"name": "deckwarden", "version": __version__},
        "caution": CAUTION,
        "files": files,
        "findings": [_finding(f) for f in findings],
        "summary": {**counts, "total": sum(counts.values()), **state_counts(findings), "files": len(result.files),
                    "incomplete": bool(result.incomplete), "fail_on": opts.fail_on,
                    "exit_code": run_exit_code(result, opts),
                    **({"fixed": list(result.fixed)} if getattr(result, "fixed", None) else {})},
    }
    return jsonable(doc)


def report(result, stream, options=None) -> None:
    doc = build(result, options)
    stream.write(dump_json(doc, depth=2))          # one file entry, one finding per line
    stream.write("\n")
