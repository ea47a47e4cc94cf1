"""One line per finding that counts (suppressed and baseline findings are left out):
``path:line: severity: rule: message [material]``.

Deck strings pass through :func:`visible`, so a name or message can never start a new
line or move the cursor: one finding is always exactly one output line.
"""
from __future__ import annotations

from . import active, sorted_findings, visible, where


def format_finding(f) -> str:
    text = f"{where(f.path, f.line)}: {visible(f.severity)}: {visible(f.rule)}: {visible(f.message)}"
    if f.material is not None and str(f.material) != "":
        text += f" [{visible(f.material)}]"
    return text


def report(result, stream, options=None) -> None:
    for f in sorted_findings(active(result.general)):
        stream.write(format_finding(f) + "\n")
    for fr in result.files:
        for f in sorted_findings(active(fr.findings)):
            stream.write(format_finding(f) + "\n")
