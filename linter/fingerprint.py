"""Finding fingerprints: an identity that survives edits which only shift lines.

A fingerprint hashes, in this order: the rule id; the file's path relative to a root (the git work
tree that holds the file, else the baseline file's folder when it holds the file, else the folder given
on the command line); the material (normalised like the solvers do); the finding's key data (its text
values only: no floating-point number, no line number); and the text of the offending line with its
whitespace collapsed. Findings equal in all of these are told apart by an occurrence index in line order.

The same string goes into the JSON report (``fingerprint``), the baseline file and SARIF
``partialFingerprints`` under :data:`SARIF_KEY` (the ``/v1`` changes when the recipe changes).
"""
from __future__ import annotations

import bisect
import hashlib
import json
import os
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
    """The text of the wanted (1-based) lines of a file, read in blocks up to the last one needed."""
    out: dict[int, str] = {}
    if not wanted:
        return out
    order = sorted(wanted)
    last = order[-1]
    n, rest = 0, b""
    try:
        with open(path, "rb") as fh:
            while n < last:
                chunk = fh.read(BLOCK)
                data = rest + chunk
                if chunk:
                    cut = data.rfind(b"\n") + 1
                    data, rest = data[:cut], data[cut:]
                    k = data.count(b"\n")          # whole lines in this block
                else:
                    rest = b""
                    k = data.count(b"\n") + 1      # the last line has no newline
                at = bisect.bisect_right(order, n)
                if at < len(order) and order[at] <= n + k:      # split only the blocks holding a wanted line
                    for i, raw in enumerate(data.split(b"\n")[:k], start=n + 1):
                        if i in wanted:
                            out[i] = raw.decode("utf-8", "replace")
                n += k
                if not chunk:
                    break
    except OSError:
        pass
    return out


def _key_data(data) -> dict:
    """The text values of a finding's data (no numbers: they may be floats or line numbers)."""
    if not isinstance(data, dict):
        return {}
    out = {}
    for k, v in data.items():
        if str(k).startswith("_") or "path" in str(k):
            continue
        if isinstance(v, str):
            out[str(k)] = v
        elif isinstance(v, (list, tuple)) and v and all(isinstance(x, str) for x in v):
            out[str(k)] = list(v)
    return out


def _norm(text: str) -> str:
    return " ".join(text.split())


def assign(findings: list, roots: list[str]) -> dict[str, str]:
    """Set ``fingerprint`` on every finding (reads the offending lines from the files); return
    fingerprint -> the offending text, whitespace collapsed (for readable baseline entries)."""
    from .model import norm_key

    wanted: dict[str, set[int]] = {}
    for f in findings:
        if f.path and f.line:
            wanted.setdefault(f.path, set()).add(int(f.line))
    texts = {p: line_texts(p, lines) for p, lines in wanted.items()}
    seen: dict[str, int] = {}
    shown: dict[str, str] = {}
    for f in sorted(findings, key=lambda f: (str(f.path or ""), f.line or 0, f.rule, f.message)):
        text = _norm(texts.get(f.path, {}).get(int(f.line), "")) if f.path and f.line else ""
        parts = [f"v{VERSION}", f.rule, relative(f.path, roots),
                 norm_key(str(f.material)) if f.material is not None else "",
                 json.dumps(_key_data(f.data), sort_keys=True, ensure_ascii=True),
                 hashlib.sha256(text.encode("utf-8", "replace")).hexdigest()]
        base = hashlib.sha256("\0".join(parts).encode("utf-8", "replace")).hexdigest()[:24]
        index = seen.get(base, 0)
        seen[base] = index + 1
        f.fingerprint = f"{base}:{index}"
        shown[f.fingerprint] = text
    return shown
