"""Hand-built RunResults for reporter tests: hostile deck strings, non-finite data, odd fields."""
from __future__ import annotations

from linter.findings import FileReport, Finding, RunResult

#: a name carrying rich markup, an ANSI colour, an OSC title-setting sequence and a bell
HOSTILE_NAME = "[bold red]STEEL\x1b[31m\x1b]0;pwned\x07"
#: a message that tries to forge a second report line and an HTML/Markdown injection
HOSTILE_MESSAGE = "nu = 0.7\nfake.inp:1: error: parse/x: forged <script>alert(1)</script> **bold** | cell"


def hostile_result() -> RunResult:
    mat = {"name": HOSTILE_NAME, "path": "model/parts.inp", "line": 3, "properties": ["elastic", "density"],
           "derived": {"elastic": [{"G": 80769.2, "K": float("inf"), "lambda": float("nan")}]},
           "used_by": {"C3D10": 1200}}
    findings = [
        Finding("elastic/poisson-out-of-range", "error", HOSTILE_MESSAGE, "model/parts.inp", 5,
                material=HOSTILE_NAME, data={"nu": 0.7, "K": float("-inf"), "ratio": float("nan"),
                                             "rows": [{"T": None, "E": float("inf")}]}),
        Finding("units/undetermined", "note", "too little evidence", "model/main.inp", None),
        Finding("model/undefined-material", "warning", "material \u202eGIRL\u202c used", "model/main.inp", 0,
                material="GIRL"),
    ]
    fr = FileReport(path="model/main.inp", format="keyword", dialect="calculix", materials=[mat],
                    unchecked=[{"what": "*CREEP", "path": "model/parts.inp", "line": 9, "reason": "no rule yet",
                                "material": HOSTILE_NAME},
                               {"what": "*CREEP", "path": "model/parts.inp", "line": 19, "reason": "no rule yet",
                                "material": None}],
                    findings=findings, unit_system={"name": "mm-tonne-s", "confidence": 0.8},
                    summary={"files_read": ["model/main.inp", "model/parts.inp"],
                             "element_types": {"C3D10": 1200}, "elements": 1200})
    general = [Finding("parse/path-not-found", "error", "missing.inp: no such file or folder", "missing.inp", None)]
    return RunResult(files=[fr], general=general, incomplete=True)


def odd_result() -> RunResult:
    """Fields a careless producer might fill oddly: none of them may crash a reporter."""
    f = Finding("internal/rule-failed", "error", "", None, -4, material=17, data={"x": {1, 2}, 3: b"raw"})
    fr = FileReport(path="odd.inp", format=None, dialect=None, materials=[{"name": None, "path": None,
                                                                           "line": None}],
                    unchecked=[{"what": "thing"}], findings=[f], unit_system={}, summary={"element_types": None})
    return RunResult(files=[fr, FileReport(path="empty.bdf", format="bulk", dialect="mystran")])


def clean_result() -> RunResult:
    return RunResult(files=[FileReport(path="ok.inp", format="keyword", dialect="calculix",
                                       materials=[{"name": "AL", "path": "ok.inp", "line": 2,
                                                   "properties": ["elastic"]}])])
