"""model/* rules on neutral models built directly (tests/builders.py)."""
from __future__ import annotations

from builders import Deck
from decks import CUBE_NODES


def _clean() -> Deck:
    d = Deck()
    d.material("STEEL", elastic=[(210000.0, 0.3)], density=[(7.85e-9,)])
    d.elements("C3D20R", 10, elset="PART")
    d.section("solid", "PART", "STEEL")
    d.step("static")
    return d


def test_clean_deck_has_no_model_findings():
    found = [f for f in _clean().run() if f.rule.startswith("model/")]
    assert found == []


# ------------------------------------------------------------------------------------ undefined-material


def test_undefined_material():
    d = _clean()
    d.elements("C3D20R", 2, elset="LID")
    sec = d.section("solid", "LID", "STEEL-X")
    found = d.run("model/undefined-material")
    assert len(found) == 1 and found[0].severity == "error"
    assert found[0].line == sec.loc.line and "STEEL-X" in found[0].message


def test_undefined_material_restates_missing_include():
    d = _clean()
    d.include("materials/extra.inp")
    d.elements("C3D20R", 2, elset="LID")
    d.section("solid", "LID", "RUBBER")
    found = d.run("model/undefined-material")
    assert found[0].restates == (("include", "materials/extra.inp"),)
    # the parse/missing-include finding carries that defect, so the runner drops this one
    d.issue("missing-include", d.model.includes[0].loc, "include not found", include="materials/extra.inp")
    found = d.run("model/undefined-material", "parse/missing-include")
    assert [f.rule for f in found] == ["parse/missing-include"]


def test_material_names_compare_normalised():
    d = _clean()
    d.elements("C3D20R", 2, elset="LID")
    d.section("solid", "LID", "steel")
    assert d.run("model/undefined-material") == []


# ------------------------------------------------------------------------------------ duplicate-material


def test_duplicate_material_gives_both_locations():
    d = _clean()
    first = d.model.materials["STEEL"]
    dup = d.material("Steel", elastic=[(200000.0, 0.3)], duplicate=True)
    found = d.run("model/duplicate-material")
    assert len(found) == 1 and found[0].line == dup.loc.line
    assert f"deck.inp:{first.loc.line}" in found[0].message
    assert found[0].data == {"first": f"deck.inp:{first.loc.line}", "again": f"deck.inp:{dup.loc.line}"}


# ------------------------------------------------------------------------------------ sets


def test_undefined_and_empty_sets():
    d = _clean()
    d.section("solid", "NOWHERE", "STEEL")
    d.elset("HOLLOW")
    d.section("solid", "HOLLOW", "STEEL")
    found = d.run("model/undefined-set")
    assert sorted(f.data["state"] for f in found) == ["empty", "missing"]
    assert all(f.severity == "error" for f in found)


def test_set_of_explicit_ids_counts():
    d = _clean()
    d.elset("SOME", ids=[1, 2, 3])
    d.section("solid", "SOME", "STEEL")
    assert d.run("model/undefined-set") == []
    d.elset("GHOST", ids=[9999])
    d.section("solid", "GHOST", "STEEL")
    assert [f.data["set"] for f in d.run("model/undefined-set")] == ["GHOST"]


def test_bulk_property_without_elements_is_note():
    d = Deck(fmt="bulk", dialect="mystran", path="d.bdf")
    d.material("MID 1", elastic=[(1e7, 0.3)])
    d.section("shell", "PID 9", "MID 1", card="PSHELL")
    found = d.run("model/undefined-set")
    assert [f.severity for f in found] == ["note"]


# ------------------------------------------------------------------------------------ unassigned


def test_unassigned_elements_one_finding_per_block():
    d = _clean()
    blk = d.elements("C3D8", 7)
    d.elements("C3D8", 3)
    found = d.run("model/unassigned-elements")
    assert len(found) == 2
    assert found[0].line == blk.loc.line and found[0].data["count"] == 7
    assert "7 C3D8 elements" in found[0].message


def test_partly_assigned_block():
    d = Deck()
    d.material("STEEL", elastic=[(210000.0, 0.3)])
    d.elements("C3D8", 10, elset="ALL")
    d.model.element_sets.pop("ALL")
    d.elset("HALF", ids=[1, 2, 3, 4, 5])
    d.section("solid", "HALF", "STEEL")
    found = d.run("model/unassigned-elements")
    assert len(found) == 1 and found[0].data == {"type": "C3D8", "count": 5, "total": 10, "elset": "ALL"}


def test_springs_masses_gaps_need_no_section():
    # CalculiX User's Manual *SPRING, *DASHPOT, *MASS: springs, dashpots and masses take their properties from *SPRING/*DASHPOT/*MASS;
    # gap and DCOUP3D elements are exempt in calinput.f
    d = _clean()
    for t in ("SPRINGA", "SPRING1", "DASHPOTA", "MASS", "GAPUNI", "DCOUP3D"):
        d.elements(t, 2)
    assert d.run("model/unassigned-elements") == []


# ------------------------------------------------------------------------------------ unused, repeated


def test_unused_material_note():
    d = _clean()
    d.material("SPARE", elastic=[(70000.0, 0.33)])
    found = d.run("model/unused-material")
    assert [(f.material, f.severity) for f in found] == [("SPARE", "note")]


def test_property_repeated_warning():
    d = _clean()
    m = d.model.materials["STEEL"]
    again = d.block(m, "elastic", "iso", [(200000.0, 0.3)])
    found = d.run("model/property-repeated")
    assert len(found) == 1 and found[0].severity == "warning"
    assert found[0].data["kept"] == again.loc.line
    assert "last" in found[0].message


def test_different_kinds_are_not_repeats():
    d = _clean()
    m = d.model.materials["STEEL"]
    d.block(m, "expansion", "iso", [(1.2e-5,)])
    d.block(m, "conductivity", "iso", [(50.0,)])
    assert d.run("model/property-repeated") == []


# ------------------------------------------------------------------------------------ plastic, after-step, mechanical


def test_plastic_without_elastic():
    d = _clean()
    m = d.material("PL", plastic=[(250.0, 0.0)], hyper=("neo-hooke", [(0.5, 0.001)]))
    d.elements("C3D20R", 2, elset="P2")
    d.section("solid", "P2", "PL")
    found = d.run("model/plastic-without-elastic")
    assert len(found) == 1 and found[0].material == "PL" and found[0].severity == "error"
    assert found[0].line == m.find("plastic")[0].loc.line


def test_plastic_before_elastic_in_keyword_deck():
    d = _clean()
    m = d.material("PL")
    d.block(m, "plastic", "iso", [(250.0, 0.0)])
    d.block(m, "elastic", "iso", [(210000.0, 0.3)])
    found = d.run("model/plastic-without-elastic")
    assert len(found) == 1 and "before" in found[0].message
    d.model.format = "bulk"
    assert d.run("model/plastic-without-elastic") == []


def test_plastic_with_elastic_is_fine():
    d = _clean()
    d.block(d.model.materials["STEEL"], "plastic", "iso", [(250.0, 0.0), (300.0, 0.1)])
    assert d.run("model/plastic-without-elastic") == []


def test_material_after_step():
    d = _clean()
    d.material("LATE", elastic=[(1.0, 0.3)], after_step=True)
    found = d.run("model/material-after-step")
    assert [f.material for f in found] == ["LATE"]
    assert f"deck.inp:{d.model.first_step.line}" in found[0].message


def test_no_mechanical_behaviour_in_structural_step():
    d = _clean()
    d.material("THERMAL", conductivity=[(50.0,)], density=[(7.8e-9,)])
    d.elements("C3D20R", 2, elset="T")
    d.section("solid", "T", "THERMAL")
    found = d.run("model/no-mechanical-behaviour")
    assert len(found) == 1 and found[0].defect == ("no-mechanical", "THERMAL")
    # only-plastic material: reported once here, not again by plastic-without-elastic
    d.material("ONLYPL", plastic=[(250.0, 0.0)])
    d.elements("C3D20R", 2, elset="P")
    d.section("solid", "P", "ONLYPL")
    found = d.run("model/no-mechanical-behaviour", "model/plastic-without-elastic")
    assert sorted((f.rule, f.material) for f in found) == [
        ("model/no-mechanical-behaviour", "ONLYPL"), ("model/no-mechanical-behaviour", "THERMAL")]


def test_no_mechanical_behaviour_not_in_heat_transfer():
    d = Deck()
    d.material("THERMAL", conductivity=[(50.0,)])
    d.elements("C3D8", 2, elset="T")
    d.section("solid", "T", "THERMAL")
    d.step("heat-steady")
    assert d.run("model/no-mechanical-behaviour") == []


def test_no_mechanical_behaviour_skips_heat_elements():
    d = _clean()
    d.material("THERMAL", conductivity=[(50.0,)])
    d.elements("DC3D8", 2, elset="T")
    d.section("solid", "T", "THERMAL")
    assert d.run("model/no-mechanical-behaviour") == []


# ------------------------------------------------------------------------------------ end to end (keyword parser)

DECK = """*NODE
""" + CUBE_NODES + """*ELEMENT, TYPE=C3D8I, ELSET=PART
1, 1, 2, 3, 4, 5, 6, 7, 8
*ELEMENT, TYPE=C3D8I, ELSET=LOOSE
2, 1, 2, 3, 4, 5, 6, 7, 8
*INCLUDE, INPUT=lib/missing.inp
*MATERIAL, NAME=STEEL
*ELASTIC
210000., 0.3
*MATERIAL, NAME=SPARE
*ELASTIC
70000., 0.33
*SOLID SECTION, ELSET=PART, MATERIAL=STEL
*STEP
*STATIC
*END STEP
"""


def test_end_to_end_model_graph(write_deck):
    from linter.check import check_paths

    p = write_deck("model.inp", DECK)
    findings = check_paths([str(p)]).files[0].findings
    rules = {f.rule: f for f in findings}
    # the undefined material, the unassigned block and the unused material may all follow from the
    # missing include (it could hold them): reported once, as the include problem
    assert "parse/missing-include" in rules
    assert not {"model/undefined-material", "model/unassigned-elements", "model/unused-material"} & set(rules)
    p2 = write_deck("model2.inp", DECK.replace("*INCLUDE, INPUT=lib/missing.inp\n", ""))
    rules2 = {f.rule: f for f in check_paths([str(p2)]).files[0].findings}
    assert rules2["model/undefined-material"].line == 20 and "did you mean STEEL" in rules2["model/undefined-material"].message
    assert rules2["model/unassigned-elements"].line == 12
    # SPARE is unused and not the near miss of the misspelt STEL, so it is still reported
    assert rules2["model/unused-material"].line == 17
    unused = [f.material for f in check_paths([str(p2)]).files[0].findings if f.rule == "model/unused-material"]
    assert unused == ["SPARE"]  # STEEL is left unused only by the misspelling, reported once


# ------------------------------------------------------------------------------------ corpus

#: rules whose findings mean "the solver stops reading": none may fire on decks that ccx runs
FATAL_IN_CCX = {"elastic/poisson-out-of-range", "elastic/modulus-nonpositive", "model/undefined-material",
                "model/undefined-set", "model/duplicate-material", "model/material-after-step",
                "model/plastic-without-elastic"}
MINE = ("elastic/", "element/", "model/", "property/")


def test_keyword_corpus_has_no_fatal_findings(corpus_dir):
    # the CalculiX test decks all run in ccx, so a reading-stage error from these rules would be false
    from linter.check import check_paths

    files = sorted((corpus_dir / "keyword").glob("*.inp"))
    if not files:
        import pytest

        pytest.skip("no keyword decks in the corpus")
    res = check_paths([str(f) for f in files])
    bad = [(r.path, f.rule, f.line) for r in res.files for f in r.findings if f.rule in FATAL_IN_CCX]
    failed = [(r.path, f.data.get("failed_rule")) for r in res.files for f in r.findings
              if f.rule.startswith("internal/") and str(f.data.get("failed_rule", "")).startswith(MINE)]
    assert bad == [] and failed == []


def test_no_mechanical_behaviour_ignores_thermal_references():
    d = Deck(fmt="bulk", dialect="nastran", path="d.bdf")
    d.material("MID 4", conductivity=[(50.0,)])
    d.elements("CQUAD4", 2, elset="PID 1")
    d.section("shell", "PID 1", "MID 4", role="thermal", card="PSHELL")
    d.step("static")
    assert d.run("model/no-mechanical-behaviour") == []
    d.section("shell", "PID 1", "MID 4", role="membrane", card="PSHELL")
    assert len(d.run("model/no-mechanical-behaviour")) == 1
