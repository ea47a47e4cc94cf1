"""Reporters by name: each turns a :class:`linter.findings.RunResult` into text on a stream.

A reporter is ``fn(result, stream, options)``. ``options`` is a :class:`ReportOptions`
(``None`` or a plain mapping of the same keys is accepted too). Reporters see only the
plain report data, never the neutral model, and must accept any ``RunResult``.

Deck strings (material names, paths, messages) are untrusted: every reporter passes
them through :func:`visible` (control characters and escape sequences become visible
escapes) and, where the output has a markup language, escapes that too.
"""
from __future__ import annotations

import importlib
import math
import unicodedata
from dataclasses import dataclass, fields
from typing import Any, Callable, Optional

#: built-in reporters: name -> "module:function" (imported on first use, so start-up stays light)
BUILTIN = {
    "text": "linter.reporters.text:report",
    "json": "linter.reporters.json_report:report",
    "sarif": "linter.reporters.sarif:report",
    "audit": "linter.reporters.audit:report",
    "html": "linter.reporters.review_html:report",
    "line": "linter.reporters.line:report",
    "markdown": "linter.reporters.markdown:report",
}
_REPORTERS: dict[str, Callable] = {}


@dataclass
class ReportOptions:
    #: colour: True, False, or None to decide from the stream (a terminal) and NO_COLOR
    color: Optional[bool] = None
    #: the fail level the exit code is computed with
    fail_on: str = "error"
    #: the exit code of the run (computed from ``fail_on`` when None)
    exit_code: Optional[int] = None
    #: terminal width for the text report (None: the terminal's, or 120 when not a terminal)
    width: Optional[int] = None
    #: the audit's provenance: the command line as given, and the configuration used (plain data)
    command: Optional[list] = None
    config: Optional[dict] = None
    #: the folder paths are shown relative to in SARIF (``%SRCROOT%``): the fingerprint root
    srcroot: Optional[str] = None
    #: SARIF ``automationDetails.id`` (one per shard: ``deckwarden/<category>/``)
    automation_id: Optional[str] = None
    #: a baseline was compared (SARIF ``baselineState`` of every result)
    baseline: bool = False


def as_options(options: Any) -> ReportOptions:
    if isinstance(options, ReportOptions):
        return options
    if isinstance(options, dict):
        known = {f.name for f in fields(ReportOptions)}
        return ReportOptions(**{k: v for k, v in options.items() if k in known})
    return ReportOptions()


def register(name: str, fn: Callable) -> None:
    """Add a reporter (a third party may add its own); a name can be registered once."""
    if name in _REPORTERS and _REPORTERS[name] is not fn:
        raise ValueError(f"reporter {name!r} registered twice")
    _REPORTERS[name] = fn


def get(name: str) -> Callable:
    if name not in _REPORTERS:
        if name not in BUILTIN:
            raise KeyError(f"no reporter named {name!r} (known: {', '.join(names())})")
        mod, func = BUILTIN[name].split(":")
        _REPORTERS[name] = getattr(importlib.import_module(mod), func)
    return _REPORTERS[name]


def names() -> list[str]:
    return sorted(set(BUILTIN) | set(_REPORTERS))


# --------------------------------------------------------------------------- shared helpers

_BIDI = {0x061C, 0x200E, 0x200F, *range(0x202A, 0x202F), *range(0x2066, 0x206A)}
_NAMED = {"\n": "\\n", "\r": "\\r", "\t": "\\t", "\x1b": "\\e"}


def visible(value: Any) -> str:
    """``value`` as one line of text in which no character acts on a terminal or a layout.

    Control characters (C0, DEL, C1), line/paragraph separators and bidirectional
    overrides are shown as escapes (``\\n``, ``\\e``, ``\\x07``, ``\\u202e``). Backslashes
    stay as written: the escapes are a visible marker for a reader, never decoded again.
    """
    if value is None:
        return ""
    s = value if isinstance(value, str) else str(value)
    if s.isprintable():
        return s
    out = []
    for ch in s:
        code = ord(ch)
        if ch in _NAMED:
            out.append(_NAMED[ch])
        elif code < 0x20 or 0x7F <= code < 0xA0:
            out.append(f"\\x{code:02x}")
        elif code in _BIDI or unicodedata.category(ch) in ("Zl", "Zp", "Cs", "Co", "Cn"):
            out.append(f"\\u{code:04x}")
        else:
            out.append(ch)
    return "".join(out)


def line_of(value: Any) -> Optional[int]:
    """A usable 1-based line number, or None."""
    try:
        n = int(value)
    except (TypeError, ValueError, OverflowError):
        return None
    return n if n >= 1 else None


def where(path: Any, line: Any) -> str:
    """``path:line`` (or just ``path``), shown literally."""
    p = visible(path) if path else "(no file)"
    n = line_of(line)
    return f"{p}:{n}" if n is not None else p


def severity_counts(findings) -> dict[str, int]:
    """Findings per severity, of those that count (not suppressed by a comment, not in the baseline)."""
    from ..findings import SEVERITIES

    out = {s: 0 for s in SEVERITIES}
    for f in findings:
        if f.severity in out and getattr(f, "active", True):
            out[f.severity] += 1
    return out


def active(findings) -> list:
    """The findings that count: neither accepted by a suppression comment nor in the baseline."""
    return [f for f in findings if getattr(f, "active", True)]


def state_counts(findings) -> dict[str, int]:
    """{"suppressed": accepted by a comment, "in_baseline": recorded in the baseline}."""
    sup = sum(1 for f in findings if getattr(f, "suppression", None) is not None)
    base = sum(1 for f in findings if getattr(f, "baseline", False) and getattr(f, "suppression", None) is None)
    return {"suppressed": sup, "in_baseline": base}


def run_exit_code(result, opts: ReportOptions) -> int:
    if opts.exit_code is not None:
        return int(opts.exit_code)
    from ..findings import exit_code

    try:
        return exit_code(result, opts.fail_on)
    except KeyError:
        return exit_code(result, "error")


def sorted_findings(findings) -> list:
    def key(f):
        try:
            return f.sort_key()
        except Exception:
            return (str(f.path or ""), 0, 0, str(f.rule))

    return sorted(findings, key=key)


def number(value: Any) -> str:
    """A short, readable rendering of a derived number (4 significant digits)."""
    if isinstance(value, bool):
        return str(value)
    if isinstance(value, int):
        return str(value)
    try:
        f = float(value)
    except (TypeError, ValueError):
        return visible(value)
    if not math.isfinite(f):
        return str(f)
    return f"{f:.4g}"


#: bookkeeping and input keys a derived mapping may repeat: not worth showing as "derived"
_NOT_DERIVED = {"T", "temperature", "line", "path", "block", "index", "row", "worst_row", "E", "nu", "confidence"}


def key_numbers(derived: Any, limit: int = 4) -> list[tuple[str, str]]:
    """A few (name, value) pairs of scalar numbers found in a material's ``derived`` mapping.

    The mapping's layout belongs to the derivations; this only walks it (mappings and the
    first row of lists) and takes the first finite scalars it meets.
    """
    out: list[tuple[str, str]] = []

    def walk(node: Any, name: str, depth: int) -> None:
        if len(out) >= limit or depth > 3:
            return
        if isinstance(node, dict):
            for k, v in node.items():
                if not str(k).startswith("_") and str(k) not in _NOT_DERIVED:
                    walk(v, str(k), depth + 1)
        elif isinstance(node, (list, tuple)):
            if node:
                walk(node[0], name, depth + 1)
        elif isinstance(node, (int, float)) and not isinstance(node, bool):
            if isinstance(node, int) or math.isfinite(node):
                out.append((name, number(node)))

    walk(derived, "", 0)
    return out


def dump_json(doc: Any, depth: int) -> str:
    """``doc`` as JSON: containers above ``depth`` levels laid out one member per line (indent 2),
    everything deeper on one line each (one finding per line in a report, say).

    Parsed back it is the same document as ``json.dumps(doc, indent=2)``; but each deep item is
    written by the C encoder (``json.dumps`` with an indent runs in Python, several times slower
    on a report of a few thousand findings). No NaN or infinity (``allow_nan=False``).
    """
    import json

    def one(obj: Any) -> str:
        return json.dumps(obj, ensure_ascii=False, allow_nan=False)

    def lay(obj: Any, level: int) -> str:
        if level >= depth or not isinstance(obj, (dict, list)) or not obj:
            return one(obj)
        pad, end = "  " * (level + 1), "  " * level
        if isinstance(obj, dict):
            items = [f"{pad}{one(str(k))}: {lay(v, level + 1)}" for k, v in obj.items()]
            return "{\n" + ",\n".join(items) + "\n" + end + "}"
        return "[\n" + ",\n".join(pad + lay(v, level + 1) for v in obj) + "\n" + end + "]"

    return lay(doc, 0)
