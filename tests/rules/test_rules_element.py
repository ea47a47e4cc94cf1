"""element/volumetric-locking on neutral models built directly (tests/builders.py).

Grades and alternatives come from the catalogue, whose source is the CalculiX User's Manual
"Element Types" (C3D8 locks for "high values of Poisson's
coefficient or plastic behavior"; C3D20R "performs well for isochoric material behavior").
"""
from __future__ import annotations

import pytest

from builders import Deck

RULE = "element/volumetric-locking"


def _deck(mat_kwargs: dict, *types_counts, fmt="keyword", dialect="calculix"):
    d = Deck(fmt=fmt, dialect=dialect)
    d.material("M", **mat_kwargs)
    for etype, n in types_counts:
        d.elements(etype, n, elset="PART")
    d.section("solid", "PART", "M")
    return d


def test_near_incompressible_on_severe_elements_is_warning():
    d = _deck({"elastic": [(12.0, 0.49)]}, ("C3D8", 120), ("C3D4", 30))
    found = d.run(RULE)
    assert len(found) == 1
    f = found[0]
    assert f.severity == "warning"
    assert f.data["types"] == {"C3D8": {"count": 120, "grade": "severe"}, "C3D4": {"count": 30, "grade": "severe"}}
    assert "120 C3D8 elements" in f.message and "30 C3D4 elements" in f.message
    assert "C3D20R" in f.message and "C3D8I" in f.message
    assert f.data["alternatives"]["C3D8"] == ["C3D20R", "C3D8I", "C3D8R"]


def test_error_beyond_locking_error_nu():
    # element.locking_error_nu = 0.499 (K/G = 500) in thresholds.yaml
    d = _deck({"elastic": [(12.0, 0.4995)]}, ("C3D8", 10))
    assert d.run(RULE)[0].severity == "error"
    d = _deck({"elastic": [(12.0, 0.4985)]}, ("C3D8", 10))
    assert d.run(RULE)[0].severity == "warning"


def test_mild_grade_gives_note_and_none_grade_nothing():
    d = _deck({"elastic": [(12.0, 0.4995)]}, ("C3D20", 10))
    found = d.run(RULE)
    assert [f.severity for f in found] == ["note"]
    assert _deck({"elastic": [(12.0, 0.4995)]}, ("C3D20R", 10), ("C3D8I", 5)).run(RULE) == []


def test_ordinary_material_not_reported():
    assert _deck({"elastic": [(210000.0, 0.3)]}, ("C3D8", 10)).run(RULE) == []


def test_below_threshold_not_reported_and_threshold_configurable():
    d = _deck({"elastic": [(12.0, 0.47)]}, ("CPE4", 10))
    assert d.run(RULE) == []
    found = d.run(RULE, thresholds={"elastic": {"near_incompressible_nu": 0.46}})
    assert len(found) == 1 and "CPE8R" in found[0].message


def test_plastic_on_severe_elements_is_note():
    d = _deck({"elastic": [(210000.0, 0.3)], "plastic": [(250.0, 0.0), (300.0, 0.1)]}, ("CAX4", 10), ("CAX8", 4))
    found = d.run(RULE)
    assert len(found) == 1 and found[0].severity == "note"
    assert list(found[0].data["types"]) == ["CAX4"]  # mild-grade CAX8 not listed for plasticity
    assert found[0].data["cause"] == "plastic"
    assert "CAX8R" in found[0].message


def _run_only(model):
    """Run the locking rule alone on ``model`` as it is (no derivations: derived data set by the test)."""
    from linter import registry
    from linter.config import Config
    from linter.context import Context

    r = registry.get(RULE)
    ctx = Context(model, Config())
    ctx.rule = r
    return list(r.func(model, ctx))


def _hyper_deck(summary):
    d = Deck()
    m = d.material("M", hyper=("neo-hooke", [(0.5, 0.001)]))
    d.elements("C3D8", 3, elset="P")
    d.section("solid", "P", "M")
    m.derived["hyper"] = summary
    return d


def test_hyperelastic_ratio_grades():
    # the summary layout written by linter/derived/hyper.py: {"mu0", "K0", "K0_over_mu0"}
    assert _run_only(_hyper_deck({"mu0": 1.0, "K0": 5.0, "K0_over_mu0": 5.0}).model) == []
    found = _run_only(_hyper_deck({"mu0": 1.0, "K0": 50.0, "K0_over_mu0": 50.0}).model)
    assert len(found) == 1 and found[0].severity == "warning" and found[0].data["cause"] == "hyperelastic"
    # element.locking_error_ratio = 333 in thresholds.yaml
    found = _run_only(_hyper_deck({"mu0": 1.0, "K0": 2000.0, "K0_over_mu0": 2000.0}).model)
    assert found[0].severity == "error" and "K0/mu0 = 2000" in found[0].message


def test_hyperelastic_end_to_end_through_the_derivation():
    d = _hyper_deck(None)
    found = d.run(RULE)
    # the hyperelastic derivation is part of the built-in pack: a missing result is a failure, not a skip
    assert "hyper" in d.model.materials["M"].derived, "hyperelastic derivation gave no result"
    # neo-Hooke C10 = 0.5, D1 = 0.001: mu0 = 2 C10 = 1, K0 = 2/D1 = 2000 (mu0 and K0 from the *HYPERELASTIC energies of the CalculiX User's Manual), so K0/mu0 = 2000
    assert len(found) == 1 and found[0].severity == "error"
    assert found[0].data["K0_over_mu0"] == pytest.approx(2000.0, rel=1e-6)


def test_bulk_unknown_grade_at_most_warning():
    d = _deck({"elastic": [(1.0e4, 0.4999)]}, ("CHEXA8", 50), fmt="bulk", dialect="mystran")
    found = d.run(RULE)
    assert len(found) == 1
    assert found[0].severity == "warning"
    assert "integration options" in found[0].message and "ISOP" in found[0].message


def test_one_finding_per_material_over_several_sections():
    d = Deck()
    d.material("M", elastic=[(12.0, 0.49)])
    d.elements("C3D8", 5, elset="A")
    d.elements("CPE4", 6, elset="B")
    d.section("solid", "A", "M")
    d.section("solid", "B", "M")
    found = d.run(RULE)
    assert len(found) == 1
    assert set(found[0].data["types"]) == {"C3D8", "CPE4"}


def test_unused_material_not_reported():
    d = Deck()
    d.material("M", elastic=[(12.0, 0.49)])
    d.elements("C3D8", 5, elset="A")
    assert d.run(RULE) == []


def test_user_element_unknown_grade():
    d = _deck({"elastic": [(12.0, 0.4999)]}, ("U1", 4))
    found = d.run(RULE)
    assert len(found) == 1 and found[0].severity == "warning"
    assert "own formulation" in found[0].message and "PSOLID" not in found[0].message


def test_incompressible_hyperelastic_outside_calculix_is_the_worst_case():
    # CalculiX User's Manual *HYPERELASTIC: D = 0 means incompressible (K0 infinite); outside the CalculiX dialect nothing
    # substitutes a compressibility, so on fully integrated hexahedra this is the worst locking case
    from linter.model import DeckModel, ElementBlock, ElementSet, Loc, Material, MaterialRef, Section
    from linter.check import check_paths  # noqa: F401  (registry and derivations load with the driver)
    from linter.config import Config
    from linter.derived import derive_all
    from linter.runner import run_rules

    loc = Loc("m.inp", 1)
    m = DeckModel(path="m.inp", format="keyword", dialect="other-solver")
    mat = Material("RUBBER", "RUBBER", loc)
    from linter.model import PropertyBlock, Row

    mat.blocks.append(PropertyBlock("hyperelastic", "neo-hooke", [Row((0.5, 0.0), None, loc)], loc))
    m.materials["RUBBER"] = mat
    m.element_blocks.append(ElementBlock("C3D8", "C3D8", 10, loc, elset="E", nodes=8))
    m.element_sets["E"] = ElementSet("E", "E", loc, blocks=[0])
    m.sections.append(Section("solid", "*SOLID SECTION", "E", "E", [MaterialRef("solid", "RUBBER", "RUBBER", loc)], loc))
    derive_all(m, Config())
    found = [f for f in run_rules(m, Config(select=["element"])) if f.rule == "element/volumetric-locking"]
    assert len(found) == 1 and found[0].severity == "error" and "incompressible" in found[0].message
