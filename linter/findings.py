"""Findings and per-file reports: what rules produce and reporters consume.

Reporters never see the neutral model; they get :class:`FileReport` objects,
which are plain data and pickle cleanly (for ``--jobs``).
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any, Optional

SEVERITIES = ("error", "warning", "note")
SEVERITY_RANK = {"error": 3, "warning": 2, "note": 1}


@dataclass(slots=True)
class Finding:
    """One defect, located.

    ``data`` holds the numbers behind the message (documented per rule).
    ``defect`` identifies the root cause; ``restates`` lists root causes this
    finding merely follows from: the runner drops a finding when any defect it
    restates was reported by another finding (one defect gives one finding).
    """

    rule: str
    severity: str
    message: str
    path: Optional[str]
    line: Optional[int]
    material: Optional[str] = None
    data: dict[str, Any] = field(default_factory=dict)
    defect: Optional[tuple] = None
    restates: tuple = ()
    #: set when a comment in the deck accepts the finding: {"rules", "scope", "reason", "path", "line"}
    suppression: Optional[dict[str, Any]] = None
    #: the finding's identity across edits that shift lines (``linter/fingerprint.py``)
    fingerprint: Optional[str] = None
    #: the finding is recorded in the baseline given with ``--baseline``
    baseline: bool = False

    @property
    def active(self) -> bool:
        """Counts for the exit code and the severity totals: neither suppressed nor in the baseline."""
        return self.suppression is None and not self.baseline

    def sort_key(self) -> tuple:
        return (self.path or "", self.line or 0, -SEVERITY_RANK.get(self.severity, 0), self.rule)

    def to_dict(self) -> dict[str, Any]:
        return {
            "rule": self.rule,
            "severity": self.severity,
            "path": self.path,
            "line": self.line,
            "material": self.material,
            "message": self.message,
            "data": self.data,
        }


@dataclass
class FileReport:
    """Everything a reporter needs about one top-level deck."""

    path: str
    format: Optional[str]
    dialect: Optional[str]
    materials: list[dict[str, Any]] = field(default_factory=list)
    unchecked: list[dict[str, Any]] = field(default_factory=list)
    findings: list[Finding] = field(default_factory=list)
    #: e.g. {"name": "mm-tonne-s", "confidence": 0.8}
    unit_system: Optional[dict[str, Any]] = None
    summary: dict[str, Any] = field(default_factory=dict)
    #: the check of this file is incomplete (unreadable, internal failure, refused include ...)
    incomplete: bool = False
    seconds: float = 0.0
    #: the audit's facts (file hashes, includes, element grades, steps, usage map, unit labels), only when
    #: the check was asked for them (``linter.review_facts.model_details``)
    details: dict[str, Any] = field(default_factory=dict)
    #: suppression comments of run-level rules, settled after the run-level stages (not reported)
    deferred: list[Any] = field(default_factory=list)
    #: path -> line -> text of the lines findings point at, taken from the text the parser read (for the
    #: fingerprints: no second read of the file); not part of any report
    line_texts: dict[str, dict[int, str]] = field(default_factory=dict, repr=False)

    def to_dict(self) -> dict[str, Any]:
        out: dict[str, Any] = {
            "path": self.path,
            "format": self.format,
            "dialect": self.dialect,
            "materials": self.materials,
            "unchecked": self.unchecked,
        }
        if self.unit_system is not None:
            out["unit_system"] = self.unit_system
        if self.summary:
            out["summary"] = self.summary
        out["incomplete"] = self.incomplete
        if self.details:
            out["details"] = self.details
        return out


@dataclass
class RunResult:
    files: list[FileReport] = field(default_factory=list)
    #: findings not tied to a deck (a path that does not exist, ...)
    general: list[Finding] = field(default_factory=list)
    #: problems that make the run incomplete (exit code 2)
    incomplete: bool = False
    dialects: dict[str, str] = field(default_factory=dict)
    #: baseline entries that no finding matches any more ({"path", "rule", "material", "fingerprint", "text"})
    fixed: list[dict[str, Any]] = field(default_factory=list)

    @property
    def findings(self) -> list[Finding]:
        out = list(self.general)
        for f in self.files:
            out.extend(f.findings)
        return out


def encodable(text: str) -> str:
    """``text`` with lone surrogates escaped, so it can be written as UTF-8.

    A file name that is not valid UTF-8 reaches Python with its bad bytes as surrogates
    (U+DC80..U+DCFF); those are written as ``\\xNN`` (the byte), other lone surrogates as ``\\uNNNN``.
    """
    if text.isascii():
        return text
    try:
        text.encode("utf-8")
        return text
    except UnicodeEncodeError:
        return "".join(ch if not 0xD800 <= ord(ch) <= 0xDFFF else
                       (f"\\x{ord(ch) - 0xDC00:02x}" if 0xDC80 <= ord(ch) <= 0xDCFF else f"\\u{ord(ch):04x}")
                       for ch in text)


def jsonable(value: Any) -> Any:
    """Plain JSON types from numpy scalars/arrays, tuples, non-finite floats (-> None)."""
    import numpy as np

    if isinstance(value, str):
        return encodable(value)
    if isinstance(value, dict):
        return {encodable(str(k)): jsonable(v) for k, v in value.items() if not str(k).startswith("_")}
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
    if value is None or isinstance(value, (int, bool)):
        return value
    return encodable(str(value))


def raised_at(exc: BaseException) -> str:
    """``file.py:line`` of the innermost frame of ``exc``'s traceback ('' without one): where an internal
    failure happened, for the ``where`` field of ``internal/*`` findings."""
    import traceback

    tb = traceback.extract_tb(exc.__traceback__)
    return f"{tb[-1].filename.rsplit('/', 1)[-1]}:{tb[-1].lineno}" if tb else ""


def exit_code(result: RunResult, fail_on: str) -> int:
    if result.incomplete:
        return 2
    level = SEVERITY_RANK[fail_on]
    return 1 if any(SEVERITY_RANK.get(f.severity, 0) >= level and getattr(f, "active", True)
                    for f in result.findings) else 0
