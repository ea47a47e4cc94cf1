"""property/* rules on neutral models built directly (tests/builders.py)."""
from __future__ import annotations

import pytest

from builders import Deck
from decks import CUBE_NODES


@pytest.mark.parametrize("kind", ["density", "conductivity", "specific_heat"])
@pytest.mark.parametrize("value", [0.0, -1.0])
def test_nonpositive_scalar_properties(kind, value):
    d = Deck()
    d.material("M", elastic=[(210000.0, 0.3)], **{kind: [(value,)]})
    found = d.run("property/nonpositive")
    assert len(found) == 1 and found[0].severity == "error" and found[0].data["kind"] == kind


def test_positive_properties_not_reported():
    d = Deck()
    d.material("M", elastic=[(210000.0, 0.3)], density=[(7.85e-9,)], conductivity=[(50.0,)],
               specific_heat=[(4.6e8,)])
    assert d.run("property/nonpositive") == []


def test_several_rows_one_finding():
    d = Deck()
    d.material("M", density=[(7.8e-9, 20.0), (0.0, 200.0), (-1.0, 400.0)])
    found = d.run("property/nonpositive")
    assert len(found) == 1
    assert [r["T"] for r in found[0].data["rows"]] == [200.0, 400.0]
    assert "T = 200" in found[0].message and "T = 400" in found[0].message


def test_orthotropic_conductivity_diagonal():
    d = Deck()
    m = d.material("M")
    d.block(m, "conductivity", "ortho", [(10.0, 0.0, 10.0)])
    found = d.run("property/nonpositive")
    assert len(found) == 1 and found[0].data["rows"][0]["values"] == {"k22": 0.0}
    d2 = Deck()
    m2 = d2.material("M")
    d2.block(m2, "conductivity", "aniso", [(10.0, 10.0, 10.0, -3.0, 0.0, 0.0)])
    assert d2.run("property/nonpositive") == []  # off-diagonal terms may be negative


def test_zero_density_from_empty_field_restates_parse_issue():
    d = Deck()
    m = d.material("M", elastic=[(210000.0, 0.3)])
    blk = d.block(m, "density", "iso", [(0.0,)], blanks=[(0,)])
    d.issue("empty-field", blk.rows[0].loc, "empty field read as 0")
    found = d.run("property/nonpositive", "parse/empty-field")
    assert [f.rule for f in found] == ["parse/empty-field"]
    # without the parse issue (or with its rule off) the zero density is reported here
    from linter.config import Config

    cfg = Config.from_mapping({"rules": {"parse/empty-field": "off"}})
    assert [f.rule for f in d.run("property/nonpositive", config=cfg)] == ["property/nonpositive"]


def test_bulk_blank_density_means_not_given():
    # NASTRAN-95 User's Manual MAT1; MYSTRAN User Manual MAT1: RHO defaults to 0 when blank (no mass), not an error
    d = Deck(fmt="bulk", dialect="mystran", path="d.bdf")
    m = d.material("MID 1", elastic=[(1e7, 0.3)])
    d.block(m, "density", "iso", [(0.0,)], blanks=[(0,)])
    assert d.run("property/nonpositive") == []
    # RHO = 0 written out is the same as the default: static decks carry it routinely
    d.block(m, "density", "iso", [(0.0,)])
    assert d.run("property/nonpositive") == []
    d.block(m, "density", "iso", [(-0.1,)])
    assert len(d.run("property/nonpositive")) == 1
    # conductivity has no such default (MAT4 K > 0, NASTRAN-95 User's Manual MAT4)
    d.block(m, "conductivity", "iso", [(0.0,)])
    assert len(d.run("property/nonpositive")) == 2


# ------------------------------------------------------------------------------------ temperature order


def test_temperature_order_decreasing_and_repeated():
    d = Deck()
    d.material("M", elastic=[(210000.0, 0.3, 20.0), (200000.0, 0.3, 200.0), (190000.0, 0.3, 100.0),
                             (180000.0, 0.3, 100.0)])
    found = d.run("property/temperature-order")
    assert len(found) == 1 and found[0].severity == "error"
    assert [r["problem"] for r in found[0].data["rows"]] == ["decreasing", "repeated"]
    assert "T = 100" in found[0].message and "after T = 200" in found[0].message


@pytest.mark.parametrize("kind", ["expansion", "conductivity", "specific_heat", "density"])
def test_temperature_order_other_kinds(kind):
    d = Deck()
    d.material("M", **{kind: [(1.0, 50.0), (2.0, 10.0)]})
    assert len(d.run("property/temperature-order")) == 1


def test_increasing_table_and_plastic_table_fine():
    d = Deck()
    # repeated temperatures on consecutive rows: the normal layout of a hardening table
    d.material("M", elastic=[(210000.0, 0.3, 20.0), (200000.0, 0.3, 200.0)],
               plastic=[(250.0, 0.0, 20.0), (300.0, 0.1, 20.0), (200.0, 0.0, 200.0)])
    assert d.run("property/temperature-order") == []


def test_missing_temperatures_read_as_zero_in_calculix():
    # "A missing temperature column is read as 0" (ccx source elastics.f)
    d = Deck()
    d.material("M", elastic=[(210000.0, 0.3), (200000.0, 0.3)])
    found = d.run("property/temperature-order")
    assert len(found) == 1 and "read as 0" in found[0].message


def test_temperature_order_warning_in_other_dialects():
    d = Deck(fmt="bulk", dialect="mystran", path="d.bdf")
    d.material("M", elastic=[(1e7, 0.3, 100.0), (1e7, 0.3, 50.0)])
    found = d.run("property/temperature-order")
    assert [f.severity for f in found] == ["warning"]
    d2 = Deck(fmt="bulk", dialect="mystran", path="d.bdf")
    d2.material("M", elastic=[(1e7, 0.3), (1e7, 0.3)])
    assert d2.run("property/temperature-order") == []


# ------------------------------------------------------------------------------------ end to end (keyword parser)

DECK = """*NODE
""" + CUBE_NODES + """*ELEMENT, TYPE=C3D8I, ELSET=PART
1, 1, 2, 3, 4, 5, 6, 7, 8
*MATERIAL, NAME=STEEL
*ELASTIC
210000., 0.3, 100.
200000., 0.3, 20.
*DENSITY
0.
*CONDUCTIVITY
, 20.
*SOLID SECTION, ELSET=PART, MATERIAL=STEEL
*STEP
*STATIC
*END STEP
"""


def test_end_to_end_property_rules(write_deck):
    # ccx 2.20 runs this deck without a message (checked here): it does not check the table order itself
    from linter.check import check_paths

    p = write_deck("prop.inp", DECK)
    found = [(f.rule, f.line) for f in check_paths([str(p)]).files[0].findings
             if f.rule.startswith(("property/", "parse/empty-field"))]
    # the empty conductivity field on line 19 is reported once, as parse/empty-field
    assert sorted(found) == [("parse/empty-field", 19), ("property/nonpositive", 17),
                             ("property/temperature-order", 15)]


# ------------------------------------------------------------------------------------ corpus

def test_bulk_corpus_no_false_property_errors(corpus_dir):
    # MYSTRAN's own test decks: static ones write RHO = 0 routinely; none should give an elastic/property
    # error (decks named *FATAL* are meant to fail and are left out), and no rule of ours may fail
    import importlib.util

    from linter.check import check_paths

    if importlib.util.find_spec("linter.parsers.bulk") is None:
        pytest.skip("the bulk parser is not there yet")
    files = sorted(p for p in (corpus_dir / "bulk").glob("*.DAT") if "FATAL" not in p.name)
    if not files:
        pytest.skip("no bulk decks in the corpus")
    res = check_paths([str(f) for f in files])
    bad = [(r.path, f.rule, f.line) for r in res.files for f in r.findings
           if f.rule.startswith(("elastic/", "property/")) and f.severity == "error"]
    failed = [(r.path, f.data.get("failed_rule")) for r in res.files for f in r.findings
              if f.rule == "internal/rule-failed"
              and str(f.data.get("failed_rule", "")).startswith(("elastic/", "element/", "model/", "property/"))]
    assert bad == [] and failed == []
