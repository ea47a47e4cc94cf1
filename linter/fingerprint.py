"""Finding fingerprints: an identity that survives edits which only shift lines.

A fingerprint hashes, in this order: the rule id; the file's path relative to a root (the git work
tree that holds the file, else the baseline file's folder when it holds the file, else the folder given
on the command line); the material (normalised like the solvers do); the finding's key data (its text
text values only, with paths made relative and line references and written-out floating-point numbers
replaced: no floating-point number, no line number); and the text of the offending line with its
whitespace collapsed. Findings equal in all of these are told apart by an occurrence index in line order.

The same string goes into the JSON report (``fingerprint``), the baseline file and SARIF
``partialFingerprints`` under :data:`SARIF_KEY` (the ``/v1`` changes when the recipe changes).
"""
from __future__ import annotations

import hashlib
import json
import os
import re
from typing import Iterable, Optional

VERSION = 1
SARIF_KEY = f"deckwardenFinding/v{VERSION}"
BLOCK = 1 << 20


def git_root(path: str) -> Optional[str]:
    """The work tree (folder holding ``.git``) that contains ``path``, or None."""
    here = os.path.abspath(path)
    if not os.path.isdir(here):
        here = os.path.dirname(here)
    while True:
        if os.path.exists(os.path.join(here, ".git")):
            return here
        up = os.path.dirname(here)
        if up == here:
            return None
        here = up


def roots_for(paths: Iterable[str], baseline: Optional[str] = None) -> list[str]:
    """Candidate roots, longest first: for every path given, its git work tree, else the baseline's
    folder when it holds the path, else the folder itself (a file: its folder)."""
    base = os.path.dirname(os.path.abspath(baseline)) if baseline else None
    out = set()
    for p in paths:
        ap = os.path.abspath(p)
        root = git_root(ap)
        if root is None and base and (ap == base or ap.startswith(base + os.sep)):
            root = base
        if root is None:
            root = ap if os.path.isdir(ap) else os.path.dirname(ap)
        out.add(root)
    return sorted(out, key=len, reverse=True)


def relative(path: Optional[str], roots: list[str]) -> str:
    """``path`` relative to the longest root holding it (``/`` separators); absolute when none does."""
    if not path:
        return ""
    ap = os.path.abspath(path)
    for r in roots:
        if ap.startswith(r.rstrip(os.sep) + os.sep):
            return os.path.relpath(ap, r).replace(os.sep, "/")
    return ap.replace(os.sep, "/")


def line_texts(path: str, wanted: set[int]) -> dict[int, str]:
    """The text of the wanted (1-based) lines of a file, read in blocks up to the last one needed.

    Blocks without a wanted line are only counted (``bytes.count``), never split into lines.
    """
    out: dict[int, str] = {}
    if not wanted:
        return out
    todo = sorted(wanted)
    last = todo[-1]
    n, rest = 0, b""            # n: complete lines before ``rest``
    try:
        with open(path, "rb") as fh:
            while n < last:
                chunk = fh.read(BLOCK)
                data = rest + chunk if rest else chunk
                if not chunk:                      # the last line has no line end
                    if n + 1 in wanted:
                        out[n + 1] = data.decode("utf-8", "replace")
                    break
                cut = data.rfind(b"\n") + 1
                count = data.count(b"\n", 0, cut)
                if any(n < w <= n + count for w in todo):
                    for i, raw in enumerate(data[:cut].split(b"\n")[:count], start=n + 1):
                        if i in wanted:
                            out[i] = raw.decode("utf-8", "replace")
                n += count
                rest = data[cut:]
    except OSError:
        pass
    return out


_LINE_REF = re.compile(r"\blines? \d+(?:\s*(?:-|to|and)\s*\d+)?", re.I)
_FLOAT = re.compile(r"[-+]?(?:\d+\.\d*|\.\d+|\d+(?=[eE]))(?:[eE][-+]?\d+)?")


def _key_text(value: str, roots: list[str]) -> str:
    """A text value as it enters the key: a path relative to the root, line references and
    floating-point numbers written out replaced by ``#`` (they move or are rounded).

    A path is made relative whether the run named the decks by absolute paths or relative to the working
    folder (``models/a.inp`` from the repository, ``a.inp`` from inside ``models``): a value with a
    path separator that lies under a root is taken for a path."""
    if os.path.isabs(value):
        return relative(value, roots)
    if "/" in value or os.sep in value:
        ap = os.path.abspath(value)
        if any(ap.startswith(r.rstrip(os.sep) + os.sep) for r in roots):
            return relative(ap, roots)
    return _FLOAT.sub("#", _LINE_REF.sub("line #", value))


def _key_data(data, roots: Optional[list[str]] = None) -> dict:
    """The text values of a finding's data (no numbers: they may be floats or line numbers)."""
    if not isinstance(data, dict):
        return {}
    roots = roots or []
    out = {}
    for k, v in data.items():
        if str(k).startswith("_") or "path" in str(k):
            continue
        if isinstance(v, str):
            out[str(k)] = _key_text(v, roots)
        elif isinstance(v, (list, tuple)) and v and all(isinstance(x, str) for x in v):
            out[str(k)] = [_key_text(x, roots) for x in v]
    return out


def _norm(text: str) -> str:
    return " ".join(text.split())


def assign(findings: list, roots: list[str], known: Optional[dict[str, dict[int, str]]] = None) -> dict[str, str]:
    """Set ``fingerprint`` on every finding (the offending lines from ``known``, path -> line -> text as the
    check took them from the parser's text, else read from the files); return fingerprint -> the
    offending text, whitespace collapsed (for readable baseline entries)."""
    from .model import norm_key

    known = known or {}
    wanted: dict[str, set[int]] = {}
    for f in findings:
        if f.path and f.line and int(f.line) not in known.get(f.path, {}):
            wanted.setdefault(f.path, set()).add(int(f.line))
    texts = {p: dict(lines) for p, lines in known.items()}
    for p, lines in wanted.items():
        texts.setdefault(p, {}).update(line_texts(p, lines))
    seen: dict[str, int] = {}
    shown: dict[str, str] = {}
    for f in sorted(findings, key=lambda f: (str(f.path or ""), f.line or 0, f.rule, f.message)):
        text = _norm(texts.get(f.path, {}).get(int(f.line), "")) if f.path and f.line else ""
        parts = [f"v{VERSION}", f.rule, relative(f.path, roots),
                 norm_key(str(f.material)) if f.material is not None else "",
                 json.dumps(_key_data(f.data, roots), sort_keys=True, ensure_ascii=True),
                 hashlib.sha256(text.encode("utf-8", "replace")).hexdigest()]
        base = hashlib.sha256("\0".join(parts).encode("utf-8", "replace")).hexdigest()[:24]
        index = seen.get(base, 0)
        seen[base] = index + 1
        f.fingerprint = f"{base}:{index}"
        shown[f.fingerprint] = text
    return shown
