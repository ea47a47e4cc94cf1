"""The baseline: findings a team has accepted as they stand, recorded by fingerprint.

``--write-baseline FILE`` records the findings that count (not those a comment suppresses);
``--baseline FILE`` marks the findings whose fingerprint is recorded (``Finding.baseline``) so that only
new ones count for the exit code, and lists the recorded entries no finding matches any more as fixed.

The file is JSON, sorted and laid out one entry per line, so that it diffs well in review::

    {"deckwarden_baseline": 1, "fingerprint": "deckwardenFinding/v1",
     "entries": [{"path": "...", "rule": "...", "material": "...", "fingerprint": "...", "text": "..."}]}

``text`` (the offending line, whitespace collapsed, cut at 100 characters) is for the reader only; a
finding matches an entry by its fingerprint.
"""
from __future__ import annotations

import json
import os
from collections import Counter
from typing import Any, Optional

from .fingerprint import SARIF_KEY, VERSION, assign, relative, roots_for

FORMAT_VERSION = 1


class BaselineError(ValueError):
    """A baseline file that cannot be read (a usage error)."""


def fingerprint_run(result, paths: list[str], baseline: Optional[str] = None) -> tuple[list[str], dict[str, str]]:
    """Fingerprint every finding of the run; return (roots, fingerprint -> offending text)."""
    roots = roots_for(paths, baseline)
    known: dict[str, dict[int, str]] = {}
    for fr in result.files:                       # the lines the check took from the parsers' text
        for p, lines in (getattr(fr, "line_texts", None) or {}).items():
            known.setdefault(p, {}).update(lines)
    return roots, assign(result.findings, roots, known)


def entries(result, roots: list[str], texts: dict[str, str]) -> list[dict[str, Any]]:
    out = []
    for f in result.findings:
        if f.suppression is not None or not f.fingerprint:
            continue
        out.append({"path": relative(f.path, roots), "rule": f.rule,
                    "material": None if f.material is None else str(f.material),
                    "fingerprint": f.fingerprint, "text": texts.get(f.fingerprint, "")[:100]})
    out.sort(key=lambda e: (e["path"], e["rule"], e["material"] or "", e["fingerprint"]))
    return out


def write(path: str, result, roots: list[str], texts: dict[str, str]) -> int:
    """Write the baseline of ``result``; return the number of entries."""
    items = entries(result, roots, texts)
    lines = ",\n".join("    " + json.dumps(e, ensure_ascii=False, sort_keys=False) for e in items)
    doc = (f'{{\n  "deckwarden_baseline": {FORMAT_VERSION},\n  "fingerprint": {json.dumps(SARIF_KEY)},\n'
           f'  "entries": [\n{lines}\n  ]\n}}\n' if items else
           f'{{\n  "deckwarden_baseline": {FORMAT_VERSION},\n  "fingerprint": {json.dumps(SARIF_KEY)},\n'
           '  "entries": []\n}\n')
    tmp = f"{path}.tmp{os.getpid()}"
    with open(tmp, "w", encoding="utf-8", newline="\n") as fh:
        fh.write(doc)
    os.replace(tmp, path)
    return len(items)


def read(path: str) -> list[dict[str, Any]]:
    try:
        with open(path, encoding="utf-8") as fh:
            doc = json.load(fh)
    except OSError as exc:
        raise BaselineError(f"--baseline {path}: cannot read the file ({exc.strerror or exc})") from None
    except ValueError as exc:
        raise BaselineError(f"--baseline {path}: not a deckwarden baseline (invalid JSON: {exc})") from None
    if not isinstance(doc, dict) or doc.get("deckwarden_baseline") != FORMAT_VERSION \
            or not isinstance(doc.get("entries"), list):
        raise BaselineError(f"--baseline {path}: not a deckwarden baseline (version {FORMAT_VERSION} expected; "
                            "write one with --write-baseline)")
    if doc.get("fingerprint") != SARIF_KEY:
        raise BaselineError(f"--baseline {path}: written with fingerprint recipe {doc.get('fingerprint')!r}, "
                            f"this version uses {SARIF_KEY!r}: write it again with --write-baseline")
    return [e for e in doc["entries"] if isinstance(e, dict) and isinstance(e.get("fingerprint"), str)]


def apply(result, recorded: list[dict[str, Any]]) -> list[dict[str, Any]]:
    """Mark the findings the baseline records; return the recorded entries nothing matched (fixed)."""
    left = Counter(e["fingerprint"] for e in recorded)
    for f in result.findings:
        if f.fingerprint and left.get(f.fingerprint, 0) > 0 and f.suppression is None:
            f.baseline = True
            left[f.fingerprint] -= 1
    fixed = []
    for e in recorded:
        if left.get(e["fingerprint"], 0) > 0:
            left[e["fingerprint"]] -= 1
            fixed.append({k: e.get(k) for k in ("path", "rule", "material", "fingerprint", "text")})
    return fixed


__all__ = ["BaselineError", "SARIF_KEY", "VERSION", "apply", "fingerprint_run", "read", "write"]
