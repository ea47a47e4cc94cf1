"""SARIF 2.1.0: one run, rule metadata from the registry for every rule that appears.

Relative paths stay relative URI references; a line is given only when it is known
(>= 1). ``invocations[0].executionSuccessful`` is false when the check is incomplete.
"""
from __future__ import annotations

import os
from pathlib import Path
from typing import Any, Optional
from urllib.parse import quote

from . import as_options, dump_json, line_of, run_exit_code, sorted_findings

SARIF_VERSION = "2.1.0"
LEVELS = ("error", "warning", "note")


def uri_of(path: str) -> str:
    """A URI reference for ``path``: relative stays relative (percent-encoded), absolute becomes file:."""
    p = str(path)
    if os.path.isabs(p):
        return Path(p).as_uri()
    # bytes, so that a name that is not valid UTF-8 is percent-encoded byte by byte
    return quote(os.fsencode(p.replace(os.sep, "/")), safe="/-._~")


def _level(sev: Any) -> str:
    return sev if sev in LEVELS else "warning"


def _descriptor(rule_id: str) -> dict[str, Any]:
    from .. import registry

    try:
        r = registry.get(rule_id)
    except Exception:  # a broken registry must not stop the report
        r = None
    name = rule_id.split("/", 1)[-1]
    if r is None:
        return {"id": rule_id, "name": name, "shortDescription": {"text": rule_id},
                "defaultConfiguration": {"level": "warning"}}
    help_parts = [r.rationale]
    if r.data:
        help_parts.append(f"Finding data: {r.data}")
    if r.references:
        help_parts.append("References: " + "; ".join(r.references))
    desc: dict[str, Any] = {
        "id": r.id,
        "name": name,
        "shortDescription": {"text": r.title or r.id},
        "fullDescription": {"text": r.rationale or r.title or r.id},
        "defaultConfiguration": {"level": _level(r.severity)},
        "help": {"text": "\n\n".join(p for p in help_parts if p) or r.id},
        "properties": {"family": r.family, "pack": r.pack},
    }
    if r.references:
        desc["properties"]["references"] = list(r.references)
    return desc


def _result(f, index: int) -> dict[str, Any]:
    res: dict[str, Any] = {
        "ruleId": str(f.rule),
        "ruleIndex": index,
        "level": _level(f.severity),
        "message": {"text": str(f.message) or str(f.rule)},
        "properties": {"material": None if f.material is None else str(f.material),
                       "data": f.data if isinstance(f.data, dict) else {"value": f.data}},
    }
    if f.path:
        phys: dict[str, Any] = {"artifactLocation": {"uri": uri_of(f.path)}}
        line: Optional[int] = line_of(f.line)
        if line is not None:
            phys["region"] = {"startLine": line}
        res["locations"] = [{"physicalLocation": phys}]
    sup = getattr(f, "suppression", None)
    if isinstance(sup, dict):
        entry: dict[str, Any] = {"kind": "inSource", "status": "accepted",
                                 "justification": str(sup.get("reason") or f"accepted for {sup.get('scope')}")}
        if sup.get("path"):
            loc: dict[str, Any] = {"artifactLocation": {"uri": uri_of(sup["path"])}}
            if line_of(sup.get("line")) is not None:
                loc["region"] = {"startLine": line_of(sup.get("line"))}
            entry["location"] = {"physicalLocation": loc}
        res["suppressions"] = [entry]
    return res


def build(result, options=None) -> dict[str, Any]:
    from .. import CAUTION, __version__
    from ..findings import jsonable

    opts = as_options(options)
    findings = sorted_findings(result.general) + [f for fr in result.files for f in sorted_findings(fr.findings)]
    rule_ids: list[str] = []
    for f in findings:
        if str(f.rule) not in rule_ids:
            rule_ids.append(str(f.rule))
    index = {rid: i for i, rid in enumerate(rule_ids)}
    code = run_exit_code(result, opts)
    run = {
        "tool": {"driver": {"name": "deckwarden", "version": __version__, "semanticVersion": __version__,
                            "rules": [_descriptor(rid) for rid in rule_ids]}},
        "invocations": [{"executionSuccessful": not result.incomplete, "exitCode": code}],
        "results": [_result(f, index[str(f.rule)]) for f in findings],
        "properties": {"caution": CAUTION,
                       "files": [{"path": fr.path, "format": fr.format, "dialect": fr.dialect,
                                  "incomplete": bool(fr.incomplete)} for fr in result.files]},
    }
    return jsonable({"version": SARIF_VERSION, "runs": [run]})


def report(result, stream, options=None) -> None:
    stream.write(dump_json(build(result, options), depth=4))     # one result per line
    stream.write("\n")
