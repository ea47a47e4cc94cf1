"""A compact Markdown summary for a merge-request comment (``--format markdown``).

Counts by severity of the findings that count, how many are suppressed by comments, in the baseline and
fixed; a table of the new findings (``path:line``, severity, rule, message; deck strings escaped); the
caution. The comment stays under :data:`LIMIT` characters whatever the number of findings: rows that do
not fit are left out and the comment says how many.
"""
from __future__ import annotations

from . import (active, as_options, line_of, run_exit_code, severity_counts, sorted_findings, state_counts,
               visible)
from ..findings import SEVERITY_RANK

#: merge-request comments are limited to 65,536 characters on common hosting services; keep a margin
LIMIT = 60000
MESSAGE_CHARS = 300


def _md(value) -> str:
    from .audit import md

    return md(value)


def _cell(value, limit: int = MESSAGE_CHARS) -> str:
    s = visible(value)
    if len(s) > limit:
        s = s[:limit - 1] + "…"
    return _md(s)          # escapes Markdown punctuation, the table's | included


def _where(f) -> str:
    path = _cell(f.path or "(no file)", 200)
    n = line_of(f.line)
    return f"{path}:{n}" if n else path


def render(result, options=None) -> str:
    from .. import CAUTION

    opts = as_options(options)
    findings = result.findings
    counts = severity_counts(findings)
    states = state_counts(findings)
    fixed = len(getattr(result, "fixed", None) or ())
    code = run_exit_code(result, opts)
    new = sorted_findings(active(findings))
    new.sort(key=lambda f: -SEVERITY_RANK.get(f.severity, 0))     # stable: errors first, then by path
    head = [f"### deckwarden: {len(new)} finding(s) that count, exit code {code}", ""]
    head.append(f"**{counts['error']}** error(s), **{counts['warning']}** warning(s), **{counts['note']}** "
                f"note(s) in {len(result.files)} deck(s)")
    extra = []
    if states["in_baseline"]:
        extra.append(f"{states['in_baseline']} in the baseline")
    if fixed:
        extra.append(f"{fixed} baseline entr{'y' if fixed == 1 else 'ies'} fixed (prune with --write-baseline)")
    if states["suppressed"]:
        extra.append(f"{states['suppressed']} suppressed by comments")
    if result.incomplete:
        extra.append("**the check is incomplete**")
    if extra:
        head.append("; ".join(extra))
    tail = ["", f"_{_md(CAUTION)}_", ""]
    out = head + [""]
    if new:
        rows = ["| location | severity | rule | message |", "| --- | --- | --- | --- |"]
        size = sum(len(x) + 1 for x in out + rows + tail) + 200
        shown = 0
        for f in new:
            row = f"| {_where(f)} | {_cell(f.severity, 20)} | {_cell(f.rule, 80)} | {_cell(f.message)} |"
            if size + len(row) + 1 > LIMIT:
                break
            rows.append(row)
            size += len(row) + 1
            shown += 1
        out += rows
        if shown < len(new):
            out += ["", f"{len(new) - shown} more finding(s) not shown (the comment is limited to about "
                        f"{LIMIT // 1000},000 characters; see the JSON or SARIF report)."]
    else:
        out.append("No finding counts.")
    return "\n".join(out + tail)


def report(result, stream, options=None) -> None:
    stream.write(render(result, options))
