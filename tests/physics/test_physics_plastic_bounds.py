"""Bounds of the hardening-table helpers (linter/physics/plastic.py): the closed class bands, the elastic-strain
tolerance, small stress drops, missing or unusable modulus and density, and the percent-strain limit."""
from __future__ import annotations

import numpy as np
import pytest

from builders import Deck
from linter.derived.units.infer import load_data
from linter.physics import plastic as P


def _class(E, rho=None):
    # the unit systems and class bands of linter/data/units.yaml, as rules/plastic.py uses them
    data = load_data()
    bands = {c: {q: data.band(c, q) for q in ("E", "rho")} for c in ("metal", "polymer")}
    return P.material_class(E, rho, data.scales("stress"), data.scales("density"), bands)


def test_class_bands_are_closed_intervals():
    # units.yaml metal band: E 1e10-4.5e11 Pa, rho 1500-22000 kg/m^3; an SI value exactly on an end is inside
    data = load_data()
    (e_lo, e_hi), (r_lo, r_hi) = data.band("metal", "E"), data.band("metal", "rho")
    assert _class(e_lo, 7850.0) == "metal" and _class(e_hi, 7850.0) == "metal"
    assert _class(2.1e11, r_lo) == "metal" and _class(2.1e11, r_hi) == "metal"
    # just outside the ends: no class fits in SI, and no other unit system gives a unique answer
    assert _class(e_hi * 1.001, 7850.0) != "metal"


def test_class_from_modulus_alone_when_the_density_is_unusable():
    # steel in SI, E = 2.1e11 Pa (EN 1993-1-1, 3.2.6): E alone fits only the metal band of the SI system;
    # a density that is missing, zero or negative carries no information and leaves that answer unchanged
    alone = _class(2.1e11)
    assert alone == "metal"
    assert _class(2.1e11, 0.0) == alone and _class(2.1e11, -0.5) == alone and _class(2.1e11, -7850.0) == alone


def test_class_needs_a_positive_finite_modulus():
    for E in (None, 0.0, -2.1e11, float("nan"), float("inf")):
        assert _class(E, 7850.0) == "unknown"
    # a modulus below 1 is fine when the unit is large: HDPE, E = 0.9 GPa, rho = 950 kg/m^3 (typical data sheet
    # values, from memory) in the mm-kg-ms system (GPa, kg/mm^3) is a polymer
    assert _class(0.9, 0.95e-6) == "polymer"


def test_a_small_stress_drop_is_softening():
    # stress in GPa (0.300 -> 0.2995): a drop smaller than one unit is still a drop
    assert P.softening([0.29, 0.30, 0.2995, 0.31]).tolist() == [2]
    assert P.softening([0.29, 0.30, 0.30, 0.31]).tolist() == []


def test_elastic_strain_match_tolerance_is_inclusive():
    # sigma/E = 1/2 = 0.5; rel_tol 0.5 allows |eps - 0.5| <= 0.25 (binary-exact numbers)
    m = P.elastic_strain_match([1.0, 1.0, 1.0], [0.75, 0.25, 0.76], 2.0, 0.5)
    assert m.tolist() == [True, True, False]


@pytest.mark.parametrize("rel_tol", [1.0, 2.0, 5.0])
def test_elastic_strain_match_needs_positive_strain_and_stress(rel_tol):
    # whatever the tolerance, a zero or negative strain, or a zero or negative stress, is not an elastic strain
    s = np.array([1.0, 1.0, 0.0, -1.0, 1.0])
    e = np.array([0.0, -0.5, 0.1, 0.1, 0.5])
    assert P.elastic_strain_match(s, e, 2.0, rel_tol).tolist() == [False, False, False, False, True]


def _plastic_deck(table):
    d = Deck()
    mat = d.material("M1", elastic=[(210000.0, 0.3)], density=[(7.85e-9,)])
    d.block(mat, "plastic", "iso", table, options={"HARDENING": "ISOTROPIC"})
    d.elements("C3D8", 4, elset="PART")
    d.section("solid", "PART", "M1")
    d.step("static")
    return d


def test_percent_strain_limit():
    # a largest plastic strain of 1.5 is a large but possible true strain (necking of a ductile metal, common
    # practice); 2.5 (250 %) in a metal table is far more likely a percentage (rules/plastic.py hint)
    assert _plastic_deck([(300, 0), (350, 0.5), (400, 1.5)]).run("plastic/total-strain-given") == []
    found = _plastic_deck([(300, 0), (350, 0.5), (400, 2.5)]).run("plastic/total-strain-given")
    assert len(found) == 1 and found[0].data["reason"] == "percent"
