"""The reviewer's audit (HTML and Markdown): numbers, completeness, well-formedness, safety, command."""
from __future__ import annotations

import io
import re
import xml.etree.ElementTree as ET

import pytest
from conftest import SAMPLES

from linter.check import check_paths
from linter.config import Config
from linter.findings import FileReport, Finding, RunResult
from linter.reporters import get
from linter.reporters import review_figures
from linter.reporters.review_doc import derived, given

PUMP = SAMPLES / "pv40_pump_assembly.inp"
RETROFIT = SAMPLES / "pv40_field_retrofit_review.inp"
BRACKET = SAMPLES / "pv40_motor_bracket.bdf"


def html_of(result, **opts) -> str:
    buf = io.StringIO()
    get("html")(result, buf, opts or None)
    return buf.getvalue()


def tree_of(doc: str) -> ET.Element:
    """Strict XML parse of the XHTML-style output (fails on any unclosed tag or unknown entity)."""
    return ET.fromstring(doc.split("\n", 1)[1])  # past <!DOCTYPE html>


def _local(tag: str) -> str:
    return tag.rsplit("}", 1)[-1]


def section_cells(root: ET.Element, anchor: str) -> set[str]:
    """Texts of the table cells in the section with id sec-<anchor> (the deck value, the SI value apart)."""
    sec = next(e for e in root.iter() if e.get("id") == f"sec-{anchor}")
    out = set()
    for td in sec.iter():
        if _local(td.tag) == "td":
            out.add((td.text or "").strip())
            for span in td:
                out.add((span.text or "").strip())
    return out


def text_of(root: ET.Element) -> str:
    return " ".join(t for t in root.itertext())


@pytest.fixture(scope="module")
def samples_result():
    return check_paths([str(SAMPLES)], Config(), details=True)


def engine_model(path):
    """The neutral model with its derivations, straight from the parser (not through the report)."""
    from linter import parsers
    from linter.derived import derive_all
    from linter.discovery import make_policy

    cfg = Config()
    fmt = "bulk" if str(path).endswith(".bdf") else "keyword"
    opts = parsers.ParseOptions(dialect=cfg.dialect_for(fmt), include=make_policy([str(path)], cfg),
                                max_file_size=cfg.max_file_size, display_path=str(path))
    model = parsers.get(fmt).parse(str(path), opts)
    derive_all(model, cfg)
    return model


def test_material_tables_show_the_engines_derived_values(samples_result):
    doc = html_of(samples_result)
    root = tree_of(doc)
    checked = 0
    for d, fr in enumerate(samples_result.files, 1):
        model = engine_model(fr.path)
        names = [m["name"] for m in fr.materials]
        for mat in list(model.materials.values()) + list(model.duplicate_materials):
            j = names.index(mat.name) + 1 if names.count(mat.name) == 1 else None
            if j is None:
                continue
            cells = section_cells(root, f"d{d}-m{j}")
            for row in mat.derived.get("elastic", ()):
                for k in ("G", "K", "lambda", "K_over_G", "c0", "cs"):
                    if k in row:
                        assert derived(row[k]) in cells, (mat.name, k, row[k])
                        checked += 1
            h = mat.derived.get("hyper")
            if h:
                for r in h["rows"]:
                    for k in ("mu0", "K0", "nu0", "K0_over_mu0"):
                        assert derived(r[k]) in cells, (mat.name, k)
                        checked += 1
            for entry in mat.derived.get("aniso", ()):
                for r in entry["rows"]:
                    assert derived(r["eig_min"]) in cells and derived(r["eig_max"]) in cells
                    checked += 2
            for b in mat.blocks:                      # every constant as given, every row
                for r in b.rows:
                    for v in r.values:
                        assert given(v) in cells or f"{given(v)} (blank field)" in cells, (mat.name, b.kind, v)
                        checked += 1
    assert checked > 60
    assert "worst_row" not in doc and "K_over_G" not in doc


def test_si_conversion_of_the_deck_units(samples_result):
    # 1 MPa = 1e6 Pa and 1 t/mm^3 = 1e12 kg/m^3 (SI prefixes: BIPM SI Brochure, 9th ed., table 7);
    # the factors are taken from pint here, an outside reference library
    pint = pytest.importorskip("pint")
    ureg = pint.UnitRegistry()
    stress = ureg.Quantity(1, "MPa").to("Pa").magnitude
    dens = ureg.Quantity(1, "tonne/mm**3").to("kg/m**3").magnitude
    fr = next(f for f in samples_result.files if f.path.endswith("pv40_pump_assembly.inp"))
    assert fr.details["units"]["system"] == "mm-tonne-s"
    assert fr.details["units"]["to_si"]["stress"] == pytest.approx(stress)
    assert fr.details["units"]["to_si"]["density"] == pytest.approx(dens)
    root = tree_of(html_of(samples_result))
    d = samples_result.files.index(fr) + 1
    j = [m["name"] for m in fr.materials].index("SHAFT_SS304") + 1
    cells = section_cells(root, f"d{d}-m{j}")
    e = next(b for b in fr.materials[j - 1]["blocks"] if b["kind"] == "elastic")["rows"][0]["values"][0]
    assert f"{derived(e * stress)} Pa" in cells


def test_model_facts_file_hashes_steps_usage(samples_result, tmp_path):
    import hashlib

    fr = next(f for f in samples_result.files if f.path.endswith("pv40_pump_assembly.inp"))
    files = fr.details["files"]
    assert [f["role"] for f in files] == ["deck", "include"]
    for f in files:  # hashlib is the reference implementation of FIPS 180-4 SHA-256
        assert f["sha256"] == hashlib.sha256(open(f["path"], "rb").read()).hexdigest()
    doc = html_of(samples_result)
    text = text_of(tree_of(doc))
    for f in files:
        assert f["sha256"] in text
    assert "*STATIC" in text and "*FREQUENCY" in text
    assert "E_SEAL" in text or any("ELSET" in s for s in text.split())
    retro = next(f for f in samples_result.files if f.path.endswith("retrofit_review.inp"))
    assert set(retro.details["unused_materials"]) >= {"SPACER_FOAM", "OLD_BRASS_BUSHING"}
    assert "Materials no section uses: " in text


def test_every_finding_appears_once_per_deck(samples_result):
    root = tree_of(html_of(samples_result))
    for d, fr in enumerate(samples_result.files, 1):
        sec = next(e for e in root.iter() if e.get("id") == f"sec-d{d}-findings")
        body = " ".join(sec.itertext())
        for f in fr.findings:
            assert f.message in body, f.rule
            assert f.rule in body


def _suppressed_result() -> RunResult:
    silenced = Finding("elastic/poisson-negative", "note", "nu = -0.2 in FOAM", "deck.inp", 12,
                       material="FOAM",
                       data={"suppression": {"reason": "auxetic foam, test report R-17", "path": "deck.inp",
                                             "line": 10, "rules": ["elastic/poisson-negative"]}})
    active = Finding("elastic/poisson-out-of-range", "error", "nu = 0.5 in GASKET", "deck.inp", 20,
                     material="GASKET")
    fr = FileReport(path="deck.inp", format="keyword", dialect="calculix", findings=[silenced, active])
    return RunResult(files=[fr])


@pytest.mark.parametrize("name", ["html", "audit"])
def test_suppressed_findings_are_listed_with_their_reason(name):
    buf = io.StringIO()
    get(name)(_suppressed_result(), buf, None)
    out = buf.getvalue()
    assert "Suppressed findings (1)" in out
    assert "auxetic foam, test report R-17" in out and "deck.inp:10" in out
    assert "nu = -0.2 in FOAM" in out and "nu = 0.5 in GASKET" in out
    # the verdict counts the silenced finding apart, not as a note
    assert "1 error(s), 0 warning(s), 0 note(s), 1 suppressed" in out


HOSTILE = "<script>alert(1)</script>\"'&\u202eevil" + "X" * 400


def _hostile_deck(tmp_path):
    p = tmp_path / "hostile.inp"
    p.write_text(
        "*NODE\n1,0,0,0\n2,1,0,0\n3,1,1,0\n4,0,1,0\n5,0,0,1\n6,1,0,1\n7,1,1,1\n8,0,1,1\n"
        "*ELEMENT, TYPE=C3D8, ELSET=E1\n1,1,2,3,4,5,6,7,8\n"
        f"*MATERIAL, NAME={HOSTILE}\n*ELASTIC\n10.0, 0.4999\n*DENSITY\n1.1e-9\n"
        "*PLASTIC\n5.0, 0.0\n4.0, 0.1\n"
        f"*SOLID SECTION, ELSET=E1, MATERIAL={HOSTILE}\n*STEP\n*STATIC\n*END STEP\n", encoding="utf-8")
    return p


def test_hostile_names_are_escaped_and_figures_carry_no_deck_string(tmp_path):
    p = _hostile_deck(tmp_path)
    result = check_paths([str(p)], Config(), details=True)
    doc = html_of(result)
    tree_of(doc)                                   # still well-formed
    assert "<script" not in doc.lower()
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in doc
    assert "\u202e" not in doc and "\\u202e" in doc
    # a very long name is cut in headings and tables (with its length), and shown whole once
    assert f"... ({len(HOSTILE) + 5} characters)</h3>" in doc                # the RTL mark shows as \u202e
    assert "<code>&lt;script&gt;alert(1)" in doc
    assert not re.search(r"<(h[1-4]|td|strong)[^>]*>[^<]*X{300}", doc)
    assert re.search(r"\son[a-z]+=", doc) is None          # no event handler attribute anywhere
    assert re.search(r"(src|href)=\"(https?:|//|data:text)", doc) is None   # nothing loaded from outside
    for svg in re.findall(r"<svg.*?</svg>", doc, re.S):
        assert "alert" not in svg and "XXXX" not in svg and "hostile" not in svg


def test_html_well_formed_for_html5lib_too(samples_result):
    html5lib = pytest.importorskip("html5lib")
    parser = html5lib.HTMLParser(strict=True)
    parser.parse(html_of(samples_result))


def test_figures_present_or_said_to_be_skipped(samples_result, monkeypatch):
    doc = html_of(samples_result)
    if review_figures.available():
        # admissibility map per deck, hyperelastic curves, hardening curve, E/nu against temperature
        assert doc.count("<svg") >= 6
        assert "Admissibility map" in doc and "Nominal stress against stretch" in doc
        assert "Hardening curves" in doc and "against temperature" in doc
        ids = re.findall(r'\bid="([^"]+)"', doc)
        assert len(ids) == len(set(ids))              # figures do not share element ids
    monkeypatch.setattr(review_figures, "_MPL", False)
    doc = html_of(samples_result)
    assert "<svg" not in doc and "Figures skipped" in doc and "matplotlib is not installed" in doc


def test_print_stylesheet_breaks_pages_between_materials(samples_result):
    doc = html_of(samples_result)
    assert re.search(r"@media print \{[^@]*section\.material \{ break-before: page; \}", doc)
    n = sum(len(fr.materials) for fr in samples_result.files)
    assert doc.count('<section id="sec-d') and doc.count('class="material"') == n


# --------------------------------------------------------------------------- the command


def test_audit_command_writes_html_and_markdown(tmp_path, capsys):
    from linter.cli import main

    out = tmp_path / "review.html"
    assert main(["audit", str(SAMPLES), "-o", str(out)]) == 1
    doc = out.read_text(encoding="utf-8")
    assert doc.startswith("<!DOCTYPE html>")
    tree_of(doc)
    assert f"deckwarden audit {SAMPLES} -o {out}" in doc      # the command line, for the file
    assert main(["audit", str(PUMP), "--format", "markdown"]) == 0
    md = capsys.readouterr().out
    assert md.startswith("# Material review: 1 deck(s)") and "<svg" not in md
    alias = tmp_path / "alias.html"
    assert main(["check", str(PUMP), "--format", "audit", "-o", str(alias)]) == 0
    assert alias.read_text(encoding="utf-8").startswith("<!DOCTYPE html>")
    assert main(["check", str(PUMP), "--format", "audit"]) == 0
    assert capsys.readouterr().out.startswith("# Material review")


def test_audit_accepts_the_check_options(tmp_path):
    from linter.cli import main

    out = tmp_path / "r.html"
    assert main(["audit", str(BRACKET), "--units", "mm-tonne-s", "--ignore", "units", "-o", str(out)]) in (0, 1)
    doc = out.read_text(encoding="utf-8")
    assert "configuration: units" in doc and "mm-tonne-s" in doc and "(declared" in doc


def test_details_only_for_the_audit():
    plain = check_paths([str(PUMP)], Config())
    assert plain.files[0].details == {} and "details" not in plain.files[0].to_dict()
    assert plain.files[0].materials[0]["blocks"]           # constants as given go to JSON as well


def test_every_rule_has_a_remedy():
    from linter import registry
    from linter.reporters.review_findings import rule_texts

    texts = rule_texts()
    missing = [r.id for r in registry.all_rules() if not texts.get(r.id, ("", ""))[1]]
    assert missing == []


# --------------------------------------------------------------------------- corpus


@pytest.mark.corpus
@pytest.mark.parametrize("fmt", ["keyword", "bulk", "febio", "aster"])
def test_corpus_audit_renders(corpus_dir, fmt):
    folder = corpus_dir / fmt
    if not folder.is_dir():
        pytest.skip(f"no {fmt} corpus")
    from linter import parsers

    exts = tuple(e for name in parsers.names() for e in getattr(parsers.get(name), "EXTENSIONS", ()))
    decks = sorted(p for p in folder.rglob("*") if p.is_file() and p.suffix.lower() in exts)[:3]
    if not decks:
        pytest.skip(f"no {fmt} deck of a registered format yet")
    result = check_paths([str(p) for p in decks], Config(), details=True)
    doc = html_of(result)
    tree_of(doc)
    for fr in result.files:
        assert not any(f.rule.startswith("internal/") for f in fr.findings), fr.path
        assert fr.path in doc or fr.path.replace("&", "&amp;") in doc


def test_json_with_the_audit_facts_fits_the_schema(samples_result):
    import json
    import os

    jsonschema = pytest.importorskip("jsonschema")
    schema_path = os.path.join(os.path.dirname(get("json").__code__.co_filename), "..", "data", "report.schema.json")
    with open(schema_path, encoding="utf-8") as fh:
        schema = json.load(fh)
    buf = io.StringIO()
    get("json")(samples_result, buf, None)
    doc = json.loads(buf.getvalue())
    jsonschema.validate(doc, schema)
    assert all(f["details"]["files"][0]["sha256"] for f in doc["files"])
    assert doc["files"][0]["materials"][0]["blocks"][0]["rows"]


SUPPRESSED_DECK = """*NODE
1,0,0,0
2,1,0,0
3,1,1,0
4,0,1,0
5,0,0,1
6,1,0,1
7,1,1,1
8,0,1,1
*ELEMENT, TYPE=C3D8I, ELSET=E1
1,1,2,3,4,5,6,7,8
** deckwarden accept elastic/poisson-negative because auxetic foam, test report R-17
*MATERIAL, NAME=FOAM
*ELASTIC
35.0, -0.2
*DENSITY
5e-11
*SOLID SECTION, ELSET=E1, MATERIAL=FOAM
*STEP
*STATIC
*END STEP
"""


def test_a_comment_in_the_deck_shows_as_a_suppressed_finding(tmp_path, capsys):
    from linter.cli import main

    deck = tmp_path / "foam.inp"
    deck.write_text(SUPPRESSED_DECK, encoding="utf-8")
    out = tmp_path / "r.html"
    main(["audit", str(deck), "-o", str(out)])
    doc = out.read_text(encoding="utf-8")
    root = tree_of(doc)
    sup = next(e for e in root.iter() if _local(e.tag) == "table" and e.get("class") == "suppressed")
    cells = " ".join(sup.itertext())
    assert "elastic/poisson-negative" in cells and "auxetic foam, test report R-17" in cells
    assert f"{deck}:12 (next)" in cells
    assert "1 suppressed" in doc
    # a reviewer may ignore every comment: the finding is then an ordinary note
    main(["audit", str(deck), "--no-inline-suppressions", "-o", str(out)])
    doc = out.read_text(encoding="utf-8")
    assert "Suppressed findings (0)" in doc and "0 error(s), 0 warning(s), 1 note(s)" in doc
    assert "configuration: inline_suppressions" in doc and "false" in doc


def test_number_formatting_rules():
    # a constant as written keeps every digit a reader typed (0.49995 is not 0.5)
    assert given(0.49995) == "0.49995" and given(210000.0) == "210000" and given(7.85e-09) == "7.85e-09"
    assert given(None) == "(blank)" and given(float("nan")) == "nan"
    # a derived value: 6 significant digits, infinite and undefined spelled out
    assert derived(80769.23076923) == "80769.2" and derived(2.0e11 / 3) == "6.66667e+10"
    assert derived(float("inf")) == "infinite" and derived(float("nan")) == "n/a" and derived(None) == "n/a"
