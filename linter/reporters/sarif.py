"""SARIF 2.1.0: one run, rule metadata from the registry for every rule that appears.

With a source root (``ReportOptions.srcroot``, the fingerprint root) every path under it is a URI
relative to ``%SRCROOT%`` (``originalUriBaseIds``), so a code-scanning service maps results to its own
checkout; other relative paths stay relative URI references, absolute ones become ``file:`` URIs. A line
is given only when it is known (>= 1). Rules carry no ``helpUri`` (no network); results carry
``partialFingerprints`` (``deckwardenFinding/v1``), ``suppressions`` (inSource, with the reason) and, when
a baseline was compared, ``baselineState``. ``invocations[0].executionSuccessful`` is false when the exit
code is 2; ``automationDetails.id`` names the run (one per shard).
"""
from __future__ import annotations

import os
from pathlib import Path
from typing import Any, Optional
from urllib.parse import quote

from . import as_options, dump_json, line_of, run_exit_code, sorted_findings

SARIF_VERSION = "2.1.0"
SRCROOT = "SRCROOT"
SARIF_KEY = "deckwardenFinding/v1"   # linter.fingerprint.SARIF_KEY (not imported: reporters stay light)
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


def _location(path: str, srcroot: Optional[str]) -> dict[str, Any]:
    if srcroot:
        ap = os.path.abspath(path)
        root = srcroot.rstrip(os.sep) + os.sep
        if ap.startswith(root):
            return {"uri": uri_of(os.path.relpath(ap, srcroot)), "uriBaseId": SRCROOT}
    return {"uri": uri_of(path)}


def _result(f, index: int, srcroot: Optional[str] = None, baseline: bool = False) -> dict[str, Any]:
    res: dict[str, Any] = {
        "ruleId": str(f.rule),
        "ruleIndex": index,
        "level": _level(f.severity),
        "message": {"text": str(f.message) or str(f.rule)},
        "properties": {"material": None if f.material is None else str(f.material),
                       "data": f.data if isinstance(f.data, dict) else {"value": f.data}},
    }
    if f.path:
        phys: dict[str, Any] = {"artifactLocation": _location(f.path, srcroot)}
        line: Optional[int] = line_of(f.line)
        if line is not None:
            phys["region"] = {"startLine": line}
        res["locations"] = [{"physicalLocation": phys}]
    sup = getattr(f, "suppression", None)
    if isinstance(sup, dict):
        entry: dict[str, Any] = {"kind": "inSource", "status": "accepted",
                                 "justification": str(sup.get("reason") or f"accepted for {sup.get('scope')}")}
        if sup.get("path"):
            loc: dict[str, Any] = {"artifactLocation": _location(sup["path"], srcroot)}
            if line_of(sup.get("line")) is not None:
                loc["region"] = {"startLine": line_of(sup.get("line"))}
            entry["location"] = {"physicalLocation": loc}
        res["suppressions"] = [entry]
    if getattr(f, "fingerprint", None):
        res["partialFingerprints"] = {SARIF_KEY: str(f.fingerprint)}
    if baseline:
        res["baselineState"] = "unchanged" if getattr(f, "baseline", False) else "new"
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
    srcroot = opts.srcroot
    run: dict[str, Any] = {
        "tool": {"driver": {"name": "deckwarden", "version": __version__, "semanticVersion": __version__,
                            "rules": [_descriptor(rid) for rid in rule_ids]}},
        "automationDetails": {"id": opts.automation_id or "deckwarden/"},
        "invocations": [{"executionSuccessful": code != 2, "exitCode": code}],
        "results": [_result(f, index[str(f.rule)], srcroot, opts.baseline) for f in findings],
        "properties": {"caution": CAUTION,
                       "files": [{"path": fr.path, "format": fr.format, "dialect": fr.dialect,
                                  "incomplete": bool(fr.incomplete)} for fr in result.files]},
    }
    if srcroot:
        run["originalUriBaseIds"] = {SRCROOT: {"uri": Path(os.path.abspath(srcroot)).as_uri().rstrip("/") + "/",
                                               "description": {"text": "the root finding paths are relative to"}}}
    if getattr(result, "fixed", None):
        run["properties"]["baseline_fixed"] = list(result.fixed)
    return jsonable({"version": SARIF_VERSION, "runs": [run]})


def report(result, stream, options=None) -> None:
    stream.write(dump_json(build(result, options), depth=4))     # one result per line
    stream.write("\n")
