"""plastic/* rules on neutral models built directly (keyword and bulk vocabularies)."""
import numpy as np
import pytest

from linter.physics import plastic as P
from builders import Deck
from linter.config import Config
from decks import CUBE_NODES, PLATE_QUAD_BULK

PLASTIC_RULES = ("plastic/first-strain-not-zero", "plastic/strain-not-increasing", "plastic/softening",
                 "plastic/total-strain-given", "plastic/zero-yield", "plastic/yield-vs-modulus")
STEEL = dict(elastic=[(210000.0, 0.3)], density=[(7.85e-9,)])

# 6061-T6 engineering curve (Dowling, Mechanical Behavior of Materials, Table P4.6, as reproduced on a public
# Q&A page; not checked against the book), E = 72464 MPa, converted with the standard engineering-to-true relations (common practice).
AL_S = np.array([268, 290, 298, 302, 305.0])
AL_E = np.array([0.384, 0.438, 0.493, 0.651, 0.992]) / 100
AL_MOD = 50 / 0.00069


def _deck(plastic, fmt="keyword", options=None, **props):
    d = Deck(fmt=fmt, dialect="calculix" if fmt == "keyword" else "mystran")
    mat = d.material("M1", **(props or STEEL))
    d.block(mat, "plastic", "iso", plastic, options=options if options is not None else {"HARDENING": "ISOTROPIC"})
    d.elements("C3D8", 4, elset="PART")
    d.section("solid", "PART", "M1")
    d.step("static")
    return d


def _rules(found):
    return sorted(f.rule for f in found)


def test_published_curve_converted_is_clean():
    st, ep = P.eng_to_plastic_table(AL_S, AL_E, AL_MOD)
    ep = ep - ep[0]  # common practice: the first point is the yield stress at eps_p = 0
    d = _deck(list(zip(st, ep)), elastic=[(AL_MOD, 0.33)], density=[(2.7e-9,)])
    assert d.run(*PLASTIC_RULES) == []


def test_published_curve_as_engineering_total_strain_is_flagged():
    # the same points used raw: total strain in the plastic column, first point not at zero
    d = _deck(list(zip(AL_S, AL_E)), elastic=[(AL_MOD, 0.33)], density=[(2.7e-9,)])
    found = d.run(*PLASTIC_RULES)
    assert "plastic/first-strain-not-zero" in _rules(found)
    total = [f for f in found if f.rule == "plastic/total-strain-given"]
    assert len(total) == 1 and total[0].data["reason"] == "elastic-strain"
    assert total[0].line == d.model.materials["M1"].find("plastic")[0].rows[0].loc.line


def test_first_strain_per_temperature_group():
    rows = [(300, 0, 20), (350, 0.05, 20), (250, 0.01, 200), (280, 0.05, 200)]
    found = _deck(rows).run("plastic/first-strain-not-zero")
    assert len(found) == 1 and found[0].data["temperature"] == 200.0
    assert found[0].severity == "error" and "0.01" in found[0].message
    assert _deck([(300, 0, 20), (350, 0.05, 20), (250, 0, 200)]).run("plastic/first-strain-not-zero") == []


def test_strain_not_increasing():
    found = _deck([(300, 0), (320, 0.02), (330, 0.02), (340, 0.01)]).run("plastic/strain-not-increasing")
    assert len(found) == 1 and len(found[0].data["points"]) == 2
    assert found[0].severity == "error"
    assert _deck([(300, 0), (320, 0.02), (330, 0.03)]).run("plastic/strain-not-increasing") == []


def test_softening_mentions_engineering_curves():
    found = _deck([(300, 0), (400, 0.05), (380, 0.1)]).run("plastic/softening")
    assert len(found) == 1 and found[0].severity == "warning"
    assert "engineering stress-strain curve" in found[0].message
    assert found[0].data["points"][0]["slope"] == pytest.approx(-400.0)
    assert _deck([(300, 0), (400, 0.05), (400, 0.1)]).run("plastic/softening") == []  # perfectly plastic end


def test_percent_strains():
    found = _deck([(300, 0), (350, 5.0), (400, 20.0)]).run("plastic/total-strain-given")
    assert len(found) == 1 and found[0].data["reason"] == "percent"
    assert _deck([(300, 0), (350, 0.05), (400, 0.2)]).run("plastic/total-strain-given") == []


def test_second_strain_equal_to_elastic_strain():
    # 350/210000 = 1.667e-3: a strain of 1.7e-3 is within 10 % (plastic.total_strain_rel_tol)
    found = _deck([(300, 0), (350, 1.7e-3), (400, 0.02)]).run("plastic/total-strain-given")
    assert len(found) == 1 and found[0].data["elastic_strain"] == pytest.approx(350 / 210000)
    assert _deck([(300, 0), (350, 3e-3), (400, 0.02)]).run("plastic/total-strain-given") == []
    tight = _deck([(300, 0), (350, 1.7e-3), (400, 0.02)])
    assert tight.run("plastic/total-strain-given", thresholds={"plastic": {"total_strain_rel_tol": 0.01}}) == []


def test_zero_yield_error_and_creep_warning():
    found = _deck([(0, 0), (100, 0.1)]).run("plastic/zero-yield")
    assert len(found) == 1 and found[0].severity == "error"
    d = _deck([(0.0, 0.0), (0.0, 10.0)])
    mat = d.model.materials["M1"]
    d.block(mat, "creep", "iso", [(1e-10, 5.0, 0.0)])
    found = d.run("plastic/zero-yield")
    assert len(found) == 1 and found[0].severity == "warning" and "creep" in found[0].message
    # the creep-only layout (zero stress up to a large strain) is not also read as percent strain
    assert d.run("plastic/total-strain-given") == []
    assert _deck([(1, 0), (100, 0.1)]).run("plastic/zero-yield") == []


def test_yield_vs_modulus_units_and_class():
    # yield stress in Pa with E in MPa: 2.5e8/210000 = 1190
    pa = _deck([(2.5e8, 0), (3e8, 0.1)])
    found = pa.run("plastic/yield-vs-modulus", config=Config(rules={"units/mismatch": "off"}))
    assert len(found) == 1 and found[0].data["material_class"] == "metal"
    assert found[0].data["yield_strain"] == pytest.approx(2.5e8 / 210000)
    # with the units rule on, it names the slip (with the value to write): one defect, one finding
    both = [f.rule for f in pa.run("plastic/yield-vs-modulus", "units/mismatch")]
    assert len(both) == 1
    # S355 steel (EN 1993-1-1 Table 3.1: f_y 355, E 210000, so 1.69e-3 computed) is inside the metal band
    assert _deck([(355, 0), (400, 0.1)]).run("plastic/yield-vs-modulus") == []
    # 0.03 is too much for a metal, fine for a polymer (PA66-like E = 3000, rho = 1.14e-9; Ashby, Materials and the Environment, PA data sheet)
    assert len(_deck([(6300, 0), (7000, 0.1)]).run("plastic/yield-vs-modulus")) == 1
    poly = _deck([(90, 0), (100, 0.1)], elastic=[(3000.0, 0.4)], density=[(1.14e-9,)])
    assert poly.run("plastic/yield-vs-modulus") == []
    # a zero yield stress is reported once (by zero-yield), not again here
    assert _deck([(0, 0), (300, 0.1)]).run("plastic/yield-vs-modulus") == []


def _mats1(points, e=210000.0):
    """Options and rows as the bulk parser gives them: raw TABLES1 points, rows converted with E."""
    opts = {"card": "MATS1", "TYPE": "PLASTIC", "TID": "5", "points": tuple(points), "x_axis_total_strain": True}
    rows = [(y, max(x - y / e, 0.0)) for x, y in points if (x, y) != (0.0, 0.0)]
    return rows, opts


def test_bulk_total_strain_table_is_checked_as_a_curve_from_the_origin():
    # Nastran MATS1/TABLES1 card definitions (NASTRAN-95 User's Manual MATS1, TABLES1; whether the table is
    # total strain differs between dialects, from memory): a TABLES1 stress-strain curve starts at the origin, the second point
    # is the initial yield point
    rows, opts = _mats1([(0.0, 0.0), (0.001, 210.0), (0.05, 300.0)])
    assert _deck(rows, fmt="bulk", options=opts).run(*PLASTIC_RULES) == []
    rows, opts = _mats1([(0.001, 210.0), (0.05, 300.0)])
    found = _deck(rows, fmt="bulk", options=opts).run(*PLASTIC_RULES)
    assert _rules(found) == ["plastic/first-strain-not-zero"]
    assert found[0].data["total_strain"] is True
    rows, opts = _mats1([(0.0, 0.0), (0.001, 0.0), (0.05, 300.0)])
    zero = _deck(rows, fmt="bulk", options=opts).run("plastic/zero-yield")
    assert len(zero) == 1 and zero[0].data["yield_stress"] == 0.0
    rows, opts = _mats1([(0.0, 0.0), (0.001, 210.0), (0.05, 300.0), (0.04, 310.0)])
    found = _deck(rows, fmt="bulk", options=opts).run(*PLASTIC_RULES)
    assert _rules(found) == ["plastic/strain-not-increasing"]
    # the x axis is declared total strain: it is not reported as looking like total strain
    rows, opts = _mats1([(0.0, 0.0), (0.001, 210.0), (0.05, 300.0)])
    assert _deck(rows, fmt="bulk", options=opts).run("plastic/total-strain-given") == []


def test_johnson_cook_constants_are_not_a_table():
    d = _deck([(300, 500, 0.3, 1.0, 1800, 20)], options={"HARDENING": "JOHNSON COOK"})
    assert d.run(*PLASTIC_RULES) == []


def test_end_to_end_keyword_plastic(write_deck):
    from linter.check import check_paths

    deck = write_deck("pl.inp", """*NODE
""" + CUBE_NODES + """*ELEMENT, TYPE=C3D8, ELSET=PART
1, 1, 2, 3, 4, 5, 6, 7, 8
*MATERIAL, NAME=STEEL
*ELASTIC
210000., 0.3
*PLASTIC
250., 0.001, 20.
300., 0.05, 20.
280., 0.1, 20.
240., 0., 400.
260., 0.05, 400.
*SOLID SECTION, ELSET=PART, MATERIAL=STEEL
*STEP
*STATIC
*END STEP
""")
    found = [f for f in check_paths([str(deck)]).findings if f.rule.startswith("plastic/")]
    assert sorted((f.rule, f.line) for f in found) == [("plastic/first-strain-not-zero", 16),
                                                       ("plastic/softening", 18)]
    assert found[0].data["temperature"] == 20.0


def test_corpus_decks_have_no_plastic_errors(corpus_dir):
    # the corpus decks are solver test decks that run; the creep deck with *PLASTIC 0,0 / 0,10 gives a warning
    # (observed in a CalculiX test deck of the corpus)
    from linter.check import check_paths

    decks = sorted((corpus_dir / "keyword").glob("*.inp"))
    if not decks:
        pytest.skip("no keyword decks in the corpus")
    found = [f for f in check_paths([str(p) for p in decks]).findings if f.rule.startswith("plastic/")]
    assert [f for f in found if f.severity == "error"] == []
    assert any(f.rule == "plastic/zero-yield" and f.data["with_creep"] for f in found)


def test_end_to_end_bulk_mats1(write_deck):
    pytest.importorskip("linter.parsers.bulk")
    from linter.check import check_paths

    path = write_deck("pl.bdf", """SOL 106
CEND
BEGIN BULK
""" + PLATE_QUAD_BULK + """PSHELL,1,7,2.0,7
MAT1,7,200000.,,0.3,7.85e-9
MATS1,7,5,PLASTIC
TABLES1,5
,0.,0.,0.00125,250.,0.05,300.,0.1,280.
,ENDT
ENDDATA
""")
    found = [f for f in check_paths([str(path)]).findings if f.rule.startswith("plastic/")]
    assert [(f.rule, f.line) for f in found] == [("plastic/softening", 11)]   # the MATS1 line


def test_bulk_mats1_given_by_slope():
    # NASTRAN-95 User's Manual / Nastran-dialect quick references, MATS1: with H (work-hardening slope) and LIMIT1 (initial yield stress) and no table
    base = {"card": "MATS1", "TYPE": "PLASTIC"}
    clean = _deck([], fmt="bulk", options={**base, "H": 1000.0, "LIMIT1": 250.0})
    assert clean.run(*PLASTIC_RULES) == []
    soft = _deck([], fmt="bulk", options={**base, "H": -500.0, "LIMIT1": 250.0}).run(*PLASTIC_RULES)
    assert [f.rule for f in soft] == ["plastic/softening"] and soft[0].data["H"] == -500.0
    zero = _deck([], fmt="bulk", options={**base, "H": 1000.0, "LIMIT1": 0.0}).run(*PLASTIC_RULES)
    assert [f.rule for f in zero] == ["plastic/zero-yield"]
    pa = _deck([], fmt="bulk", options={**base, "H": 1000.0, "LIMIT1": 2.5e8}).run(
        *PLASTIC_RULES, config=Config(rules={"units/mismatch": "off"}))
    assert [f.rule for f in pa] == ["plastic/yield-vs-modulus"]
    nlelast = _deck([(0, 0), (100, 0.001)], fmt="bulk", options={**base, "TYPE": "NLELAST"})
    assert nlelast.run(*PLASTIC_RULES) == []
