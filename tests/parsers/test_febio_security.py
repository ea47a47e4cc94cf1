"""Hostile FEBio files: each is refused or read safely, with a clear finding and no traceback."""
from __future__ import annotations

import json
import os
import resource
import time

import pytest

from febio_decks import check_path, check_text, feb, parse_text, write
from linter.config import Config
from linter.parsers.febio.xmltree import MAX_DEPTH
from linter.findings import RunResult
from linter.reporters import get as reporter

BOMB = """<?xml version="1.0"?>
<!DOCTYPE febio_spec [
 <!ENTITY a "aaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaa">
 <!ENTITY b "&a;&a;&a;&a;&a;&a;&a;&a;&a;&a;&a;&a;&a;&a;&a;&a;&a;&a;&a;&a;">
 <!ENTITY c "&b;&b;&b;&b;&b;&b;&b;&b;&b;&b;&b;&b;&b;&b;&b;&b;&b;&b;&b;&b;">
 <!ENTITY d "&c;&c;&c;&c;&c;&c;&c;&c;&c;&c;&c;&c;&c;&c;&c;&c;&c;&c;&c;&c;">
 <!ENTITY e "&d;&d;&d;&d;&d;&d;&d;&d;&d;&d;&d;&d;&d;&d;&d;&d;&d;&d;&d;&d;">
 <!ENTITY f "&e;&e;&e;&e;&e;&e;&e;&e;&e;&e;&e;&e;&e;&e;&e;&e;&e;&e;&e;&e;">
 <!ENTITY g "&f;&f;&f;&f;&f;&f;&f;&f;&f;&f;&f;&f;&f;&f;&f;&f;&f;&f;&f;&f;">
]>
<febio_spec version="4.0">
 <Material><material id="1" name="&g;" type="neo-Hookean"><E>1</E><v>0.3</v></material></Material>
</febio_spec>
"""


def _only(report, rule):
    found = [f for f in report.findings if f.rule == rule]
    assert found, [f.rule for f in report.findings]
    assert not [f for f in report.findings if f.rule.startswith("internal/")]
    return found[0]


def test_entity_expansion_bomb_is_refused(tmp_path):
    # 20^6 * 60 bytes (~4 GB) if expanded: "billion laughs" (defusedxml documentation, attack vectors)
    t0 = time.perf_counter()
    report = check_text(tmp_path, BOMB)
    f = _only(report, "parse/xml-refused")
    assert "entities" in f.message and f.severity == "error" and report.incomplete
    assert time.perf_counter() - t0 < 5


def test_external_entity_is_refused_and_not_fetched(tmp_path):
    secret = tmp_path / "secret.txt"
    secret.write_text("TOPSECRET")
    text = (f'<?xml version="1.0"?>\n<!DOCTYPE febio_spec [<!ENTITY x SYSTEM "file://{secret}">]>\n'
            '<febio_spec version="4.0"><Material><material id="1" name="&x;" type="neo-Hookean">'
            '<E>1</E><v>0.3</v></material></Material></febio_spec>\n')
    report = check_text(tmp_path, text)
    f = _only(report, "parse/xml-refused")
    assert "TOPSECRET" not in json.dumps([x.message for x in report.findings])
    assert f.line in (1, 2, 3)


def test_external_dtd_is_not_fetched(tmp_path):
    text = ('<?xml version="1.0"?>\n<!DOCTYPE febio_spec SYSTEM "http://example.invalid/x.dtd">\n'
            + feb().split("\n", 1)[1])
    report = check_text(tmp_path, text)
    f = _only(report, "parse/xml-refused")
    assert "external" in f.message


def test_declared_one_gigabyte_file_is_refused_by_size(tmp_path):
    # a sparse file: 1 GiB declared by the file system, a few bytes written
    p = tmp_path / "huge.feb"
    with open(p, "wb") as fh:
        fh.write(feb().encode()[:200])
        fh.truncate(1 << 30)
    before = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    cfg = Config(max_file_size_mb=512)
    report = check_path(p, cfg)
    f = _only(report, "parse/file-too-large")
    assert "1024.0 MiB" in f.message and report.incomplete
    # nothing was read: the peak memory of this process grew by far less than the file
    assert resource.getrusage(resource.RUSAGE_SELF).ru_maxrss - before < 100 * 1024


def test_deep_nesting_is_refused(tmp_path):
    depth = MAX_DEPTH + 50
    inner = "<a>" * depth + "</a>" * depth
    text = feb().replace("<Material>", "<Material>" + inner)
    report = check_text(tmp_path, text)
    f = _only(report, "parse/xml-refused")
    lines = text.splitlines()
    assert "nested" in f.message and "<Material><a>" in lines[f.line - 1]


def test_very_deep_nesting_does_not_crash(tmp_path):
    depth = 200_000
    text = '<?xml version="1.0"?>\n<febio_spec version="4.0">' + "<a>" * depth + "</a>" * depth + "</febio_spec>\n"
    report = check_text(tmp_path, text)
    _only(report, "parse/xml-refused")


def test_malformed_xml_gives_the_line(tmp_path):
    text = feb().replace("</Material>", "</Materail>")
    report = check_text(tmp_path, text)
    f = _only(report, "parse/xml-malformed")
    assert f.line == text.splitlines().index("\t</Materail>") + 1


def test_unknown_encoding_in_the_declaration_is_malformed_not_a_failure(tmp_path):
    # found by the fuzz suite: expat asks Python for the codec named in the declaration and
    # Python raises LookupError for a name it does not know
    text = feb().replace('<?xml version="1.0"', '<?xml version="1.0" encoding="ISO-0-1"', 1)
    assert 'encoding="ISO-0-1"' in text
    report = check_text(tmp_path, text)
    f = _only(report, "parse/xml-malformed")
    assert "encoding" in f.message and f.line == 1


HOSTILE = ["[bold red]markup[/bold red]", "line\u2028break", "a" * 5000, "tab\there",
           "&lt;script&gt;alert(1)&lt;/script&gt;", "../../etc/passwd", "\u202eevil"]


def _render(report) -> dict:
    import io

    out = {}
    for fmt in ("text", "line", "json", "sarif"):
        buf = io.StringIO()
        reporter(fmt)(RunResult(files=[report]), buf, None)
        out[fmt] = buf.getvalue()
    return out


@pytest.mark.parametrize("name", HOSTILE)
def test_hostile_names_are_read_and_escaped(tmp_path, name):
    mat = f'<material id="1" name="{name}" type="neo-Hookean"><E>1</E><v>0.5</v></material>'
    text = feb(mat, domains=f'<SolidDomain name="Part1" mat="{name}"/>')
    p = write(tmp_path, text.encode("utf-8").replace(b"ISO-8859-1", b"UTF-8"))
    report = check_path(p)
    f = _only(report, "elastic/poisson-out-of-range")
    assert f.material and f.line
    out = _render(report)
    for fmt in ("text", "line"):
        # rich markup is shown as written (escaped), never interpreted; line separators and bidi
        # overrides never reach the terminal raw
        assert "\x1b" not in out[fmt] and "\u2028" not in out[fmt] and "\u202e" not in out[fmt]
        if "markup" in name:
            assert "[bold" in out[fmt]
    json.loads(out["json"])


def test_control_characters_in_names_are_refused(tmp_path):
    # XML 1.0 section 2.2: ESC is not a legal character, so the file is not well-formed
    name = "\x1b[31mred\x1b[0m"
    mat = f'<material id="1" name="{name}" type="neo-Hookean"><E>1</E><v>0.3</v></material>'
    report = check_text(tmp_path, feb(mat))
    f = _only(report, "parse/xml-malformed")
    assert f.line == 9         # the <material> line
    assert all("\x1b" not in text for text in _render(report).values())


def test_hostile_names_parse_exactly(tmp_path):
    name = '"quoted" & <angled>'
    mat = '<material id="1" name="&quot;quoted&quot; &amp; &lt;angled&gt;" type="neo-Hookean"><E>1</E><v>0.3</v></material>'
    m = parse_text(tmp_path, feb(mat, domains='<SolidDomain name="Part1" mat="&quot;quoted&quot; &amp; &lt;angled&gt;"/>'))
    assert list(m.materials) == [name] and m.sections[0].materials[0].key == name


def test_truncated_file(tmp_path):
    text = feb()
    report = check_text(tmp_path, text[: len(text) // 2])
    _only(report, "parse/xml-malformed")


def test_binary_garbage_named_feb(tmp_path):
    p = tmp_path / "junk.feb"
    p.write_bytes(os.urandom(4096))
    report = check_path(p)
    assert report.findings and not [f for f in report.findings if f.rule.startswith("internal/")]
