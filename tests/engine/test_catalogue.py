"""The element-technology catalogue (linter/catalogue.py, linter/data/elements.yaml)."""
from __future__ import annotations

import pytest

from linter.catalogue import FAMILIES, GRADES, Catalogue, CatalogueError


@pytest.fixture(scope="module")
def cat() -> Catalogue:
    return Catalogue.load()


# Grades of volumetric locking as nu -> 0.5. Source: CalculiX User's Manual, "Element Types"
# (C3D8 "behave badly for isochoric material behavior", C3D20 "to a much lesser extent",
# C3D20R "performs well", C3D8I "much reduced"; ccx source elements.f, e_c3d.f for the expansion);
# the 2D elements behave like the 3D element they are expanded into (same source).
SEVERE = ["C3D8", "C3D4", "C3D6", "CPE4", "CPE3", "CAX4", "CAX3"]
MILD = ["C3D20", "CPE8", "CAX8"]
NONE = ["C3D8R", "C3D20R", "CPE4R", "CAX4R", "CPE8R", "CAX8R", "C3D8I",
        "CPS3", "CPS4", "CPS4R", "CPS6", "CPS8", "CPS8R",
        "S3", "S4", "S4R", "S6", "S8", "S8R", "M3D3", "M3D4", "M3D4R", "M3D6", "M3D8", "M3D8R",
        "B21", "B31", "B31R", "B32", "B32R", "T2D2", "T3D2", "T3D3"]


@pytest.mark.parametrize("name", SEVERE)
def test_severe_grades(cat, name):
    assert cat.get(name, "calculix").locking == "severe"


@pytest.mark.parametrize("name", MILD)
def test_mild_grades(cat, name):
    assert cat.get(name, "calculix").locking == "mild"


@pytest.mark.parametrize("name", NONE)
def test_no_locking_grades(cat, name):
    assert cat.get(name, "calculix").locking == "none"


def test_integration_and_order_of_key_types(cat):
    # integration schemes from CCX-UM "Element Types"
    assert cat.get("C3D4").integration == "one-point-full"
    assert cat.get("C3D8").integration == "full"
    assert cat.get("C3D8R").integration == "reduced"
    assert cat.get("C3D8I").integration == "incompatible-modes"
    assert cat.get("C3D20R").order == "quadratic" and cat.get("C3D20R").nodes == 20
    assert cat.get("CPE4").family == "plane-strain" and cat.get("CAX8R").family == "axisymmetric"
    assert cat.get("CPS4").family == "plane-stress"


def test_uncertain_entries_say_so(cat):
    # CalculiX User's Manual, Element Types: the manual is silent on C3D10/C3D15 with nearly incompressible material
    for name in ("C3D10", "C3D10T", "C3D15"):
        tech = cat.get(name, "calculix")
        assert "uncertain" in tech.note
    assert "from memory" in cat.get("C3D10").note


@pytest.mark.parametrize("name", ["C3D8H", "C3D20RH", "C3D10H", "C3D10M", "CPE4H"])
def test_hybrid_names_are_not_calculix_types(cat, name):
    # ccx refuses them: "is an unknown element type" (ccx source elements.f; confirmed by running ccx 2.20 on a one-element deck)
    assert cat.get(name, "calculix") is None
    assert not cat.known(name, "calculix")


def test_heat_twins_springs_masses_and_users(cat):
    for name in ("DC3D4", "DC3D8", "DC3D10", "DC3D20", "DS4", "DS8R", "DCAX4", "DCPS4"):
        assert cat.get(name, "calculix").family == "heat"
    for name in ("SPRING1", "SPRING2", "SPRINGA", "DASHPOTA", "GAPUNI", "DCOUP3D"):
        tech = cat.get(name, "calculix")
        assert tech.family == "spring-other" and not tech.takes_material
    assert cat.get("MASS", "calculix").family == "mass"
    assert cat.get("F3D8", "calculix").family == "fluid"
    assert cat.get("D", "calculix").family == "network"
    assert cat.get("U1", "calculix").family == "user"
    assert cat.get("US45", "calculix").type == "US45"


def test_lookup_is_case_and_blank_insensitive(cat):
    assert cat.get("c3d8r", "calculix").type == "C3D8R"
    assert cat.get(" C3D8R ").type == "C3D8R"


def test_bulk_types(cat):
    for name in ("CHEXA8", "CHEXA20", "CPENTA6", "CPENTA15", "CTETRA4", "CTETRA10", "CPYRAM5", "CPYRAM13"):
        for dialect in ("mystran", "nastran"):
            tech = cat.get(name, dialect)
            assert tech.family == "solid-3d" and tech.locking == "unknown"
            assert "ISOP" in tech.note and "shear" in tech.note
    for name in ("CQUAD4", "CQUAD8", "CQUADR", "CTRIA3", "CTRIA6", "CTRIAR"):
        assert cat.get(name, "mystran").family == "shell"
        assert cat.get(name, "mystran").locking == "none"
    # MYSTRAN's Kirchhoff plate variants (from memory; they appear in MYSTRAN's test decks)
    assert cat.get("CQUAD4K", "mystran").family == "shell" and cat.get("CTRIA3K", "mystran").locking == "none"
    assert cat.get("CBAR", "nastran").family == "beam" and cat.get("CBEAM", "nastran").family == "beam"
    assert cat.get("CROD", "mystran").family == "truss" and cat.get("CONROD", "mystran").family == "truss"
    assert cat.get("CSHEAR", "mystran").family == "shear-panel"
    # dialects do not mix
    assert cat.get("CHEXA8", "calculix") is None
    assert cat.get("C3D8", "mystran") is None


def test_alternatives(cat):
    assert cat.alternatives(cat.get("C3D8", "calculix")) == ["C3D20R", "C3D8I", "C3D8R"]
    assert set(cat.alternatives(cat.get("CPE4", "calculix"))) == {"CPE8R", "CPE4R"}
    assert set(cat.alternatives(cat.get("CAX8", "calculix"))) == {"CAX8R", "CAX4R"}
    # no non-locking bulk solid is known: the integration options decide
    assert cat.alternatives(cat.get("CHEXA8", "mystran")) == []
    # alternatives never include the type itself or a locking type
    for name in SEVERE + MILD:
        alts = cat.alternatives(cat.get(name, "calculix"))
        assert name not in alts
        assert all(cat.get(a, "calculix").locking == "none" for a in alts)


def test_every_entry_is_valid(cat):
    for name in cat.types():
        tech = cat.get(name)
        assert tech.family in FAMILIES and tech.locking in GRADES and tech.source


def test_bad_data_is_refused():
    with pytest.raises(CatalogueError):
        Catalogue.from_mapping({"calculix": [{"types": ["X1"], "family": "solid-3d", "nodes": 1,
                                              "order": "linear", "integration": "full", "locking": "terrible",
                                              "source": "s", "note": ""}]})
    with pytest.raises(CatalogueError):
        Catalogue.from_mapping({"calculix": [{"types": ["X1"], "family": "solid-3d", "nodes": 1,
                                              "order": "linear", "integration": "full", "locking": "none",
                                              "source": "", "note": ""}]})
