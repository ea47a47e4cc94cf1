"""Reporters: registry, literal rendering of deck strings, colour policy, robustness."""
from __future__ import annotations

import io

import pytest

from linter import CAUTION, reporters
from linter.findings import RunResult
from linter.reporters import ReportOptions, visible

from report_samples import HOSTILE_NAME, clean_result, hostile_result, odd_result


class TtyIO(io.StringIO):
    def isatty(self):
        return True


def render(name, result, **opts) -> str:
    out = io.StringIO()
    reporters.get(name)(result, out, ReportOptions(**opts) if opts else None)
    return out.getvalue()


def test_registry_names_get_register():
    assert set(reporters.names()) >= {"text", "json", "sarif", "audit", "line"}
    with pytest.raises(KeyError):
        reporters.get("no-such-format")

    def mine(result, stream, options):
        stream.write("mine\n")

    reporters.register("test-mine", mine)
    try:
        assert reporters.get("test-mine") is mine
        assert "test-mine" in reporters.names()
        with pytest.raises(ValueError):
            reporters.register("test-mine", lambda *a: None)
    finally:
        reporters._REPORTERS.pop("test-mine", None)


@pytest.mark.parametrize("name", reporters.names())
@pytest.mark.parametrize("make", [hostile_result, odd_result, clean_result, RunResult])
def test_every_reporter_takes_any_result(name, make):
    for options in (None, {}, {"color": False}, ReportOptions(fail_on="note")):
        out = io.StringIO()
        reporters.get(name)(make(), out, options)
        if name != "line" or out.getvalue():   # the line report of a run without findings is empty
            assert out.getvalue().strip(), f"{name} wrote nothing"
        if name == "line":
            assert len(out.getvalue().splitlines()) == len(make().findings)


def test_visible_escapes_controls_and_keeps_text():
    assert visible("Stahl 1.4301 µ") == "Stahl 1.4301 µ"
    assert visible("a\nb\r\tc") == "a\\nb\\r\\tc"
    assert visible("\x1b[31mred") == "\\e[31mred"
    assert visible("bell\x07 del\x7f c1\x9b") == "bell\\x07 del\\x7f c1\\x9b"
    assert visible("\u202eabc\u2028") == "\\u202eabc\\u2028"
    assert visible(None) == ""


def test_text_without_colour_has_no_escape_codes_and_prints_markup_literally():
    text = render("text", hostile_result(), color=False)
    assert "\x1b" not in text and "\x07" not in text
    assert "[bold red]STEEL\\e[31m\\e]0;pwned\\x07" in text
    assert "forged" in text and "\nfake.inp:1:" not in text
    assert "ERROR" in text and "WARNING" in text and "NOTE" in text   # severity as a word, not only colour
    assert "mm-tonne-s" in text and "*CREEP x2" in text
    assert CAUTION.split(":")[0] in text.replace("\n", " ")
    assert "INCOMPLETE" in text


def test_text_colour_policy(monkeypatch):
    monkeypatch.delenv("NO_COLOR", raising=False)
    tty = TtyIO()
    reporters.get("text")(hostile_result(), tty, ReportOptions(width=200))
    coloured = tty.getvalue()
    assert "\x1b[" in coloured                       # a terminal gets colour ...
    assert "\x1b]0;" not in coloured and "\x07" not in coloured   # ... but never the deck's own sequences
    assert "[bold red]STEEL" in coloured
    monkeypatch.setenv("NO_COLOR", "1")
    tty = TtyIO()
    reporters.get("text")(hostile_result(), tty, None)
    assert "\x1b" not in tty.getvalue()
    monkeypatch.delenv("NO_COLOR")
    plain = io.StringIO()                             # not a terminal
    reporters.get("text")(hostile_result(), plain, None)
    assert "\x1b" not in plain.getvalue()


def test_line_reporter_one_line_per_finding():
    result = hostile_result()
    lines = render("line", result).splitlines()
    assert len(lines) == len(result.findings)
    assert lines[0] == "missing.inp: error: parse/path-not-found: missing.inp: no such file or folder"
    poisson = [ln for ln in lines if "poisson" in ln][0]
    assert poisson.startswith("model/parts.inp:5: error: elastic/poisson-out-of-range: nu = 0.7\\nfake.inp:1:")
    assert poisson.endswith("[[bold red]STEEL\\e[31m\\e]0;pwned\\x07]")
    assert not any(ln.startswith("fake.inp") for ln in lines)
    assert "\\u202eGIRL" in render("line", result)
    # line 0 and unknown lines are not shown as a line number
    assert any(ln.startswith("model/main.inp: warning: model/undefined-material") for ln in lines)


def test_audit_is_literal_markdown():
    md = render("audit", hostile_result())
    assert md.count(CAUTION.split(":")[0]) == 2       # caution at the top and at the bottom
    assert "<script>" not in md and "&lt;script&gt;" in md
    assert "\\*\\*bold\\*\\*" in md and "\\| cell" in md
    assert "\\[bold red\\]STEEL" in md and "\x1b" not in md
    assert "\nfake.inp" not in md
    # summary verdict, files read, unit system, findings by severity, what was not checked
    assert "| model/main.inp | keyword | 1 error(s), 1 warning(s), 1 note(s); check complete |" in md
    assert "Not tied to a deck: 1 error(s)" in md
    assert "| model/parts.inp | include |" in md
    assert "Unit system: **mm-tonne-s** (inferred, confidence 0.80)" in md
    assert md.index("#### Errors") < md.index("#### Warnings") < md.index("#### Notes")
    assert "| \\*CREEP | no rule yet | 2 | model/parts.inp:9, model/parts.inp:19 |" in md
    # derived values with the audit's formatting rule, infinite and undefined spelled out
    assert "| 80769.2 | infinite | n/a |" in md
    assert "worst_row" not in md


def test_text_shows_usage_when_known():
    text = render("text", hostile_result(), color=False)
    assert "used by" in text and "C3D10 x1200" in text
    assert "used by" not in render("text", clean_result(), color=False)


def test_audit_escapes_leading_list_markers():
    from linter.reporters.audit import md

    assert md("- item") == "\\- item"
    assert md("1. item") == "1\\. item"
    assert md("a|b") == "a\\|b"
    assert md("<b>&") == "&lt;b&gt;&amp;"
    assert md("steel-304") == "steel-304"


def test_name_is_not_interpreted_as_markup_anywhere():
    for name in ("text", "line", "audit"):
        out = render(name, hostile_result(), color=False)
        assert "\x1b" not in out, name
        assert "STEEL" in out and HOSTILE_NAME not in out, name   # the raw escape never reaches the output


from hypothesis import given, settings, strategies as st  # noqa: E402

from linter.findings import FileReport, Finding  # noqa: E402


def _one_finding(text: str) -> RunResult:
    f = Finding("model/undefined-material", "warning", text, f"d{text}.inp", 3, material=text)
    return RunResult(files=[FileReport(path=f"d{text}.inp", format="keyword", dialect="calculix",
                                       materials=[{"name": text, "path": "d.inp", "line": 1}], findings=[f])])


@settings(max_examples=150, deadline=None)
@given(st.text(min_size=1, max_size=40))
def test_any_deck_string_stays_on_its_line(text):
    """Whatever a deck string holds, the line report has one line and no control character in it."""
    out = render("line", _one_finding(text))
    assert out.count("\n") == 1 and out.endswith("\n")
    assert not any((ord(ch) < 0x20 and ch != "\n") or 0x7F <= ord(ch) < 0xA0 for ch in out)
    assert "\x1b" not in out and "\r" not in out and "\u2028" not in out and "\u202e" not in out
    md = render("audit", _one_finding(text))
    empty = render("audit", _one_finding("x"))
    assert md.count("\n") == empty.count("\n")       # a deck string never adds a line to the audit report


def test_dump_json_is_the_same_document_as_the_standard_encoder():
    # reference: the standard library's json module (its indented output parsed back)
    import json

    from linter.reporters import dump_json

    doc = {"a": [1, {"b": [2.5, None, "ü"], "c": {}}, []], "d": {"e": {"f": [True, "x\n"]}}, "g": []}
    for depth in (0, 1, 2, 3, 6):
        text = dump_json(doc, depth)
        assert json.loads(text) == json.loads(json.dumps(doc, indent=2))
    lines = dump_json(doc, 2).splitlines()
    assert '    {"b": [2.5, null, "ü"], "c": {}},' in lines          # depth 2: the items of "a" on one line each
    with pytest.raises(ValueError):
        dump_json({"x": float("nan")}, 1)


def test_key_numbers_leave_out_bookkeeping_indices():
    """The text report's "derived" column shows quantities, not the derivation's row index."""
    from linter.reporters import key_numbers
    hyper = {"model": "mooney-rivlin", "line": 12, "worst_row": 0, "mu0": 2.0, "K0": 2000.0,
             "nu0": 0.4995, "rows": [{"line": 13, "mu0": 2.0}]}
    names = [name for name, _ in key_numbers(hyper)]
    assert "worst_row" not in names and "line" not in names
    assert names[:3] == ["mu0", "K0", "nu0"]
