"""aniso/* rules on neutral models built directly (layouts of linter.model.BLOCK_LAYOUTS)."""
from __future__ import annotations

import importlib.util
import math
import re

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from linter.config import Config
from linter.derived.aniso import derive_aniso
from linter.model import DeckModel, Loc, Material, MaterialRef, PropertyBlock, Row, Section
from linter.runner import run_rules
from decks import CUBE_NODES

P = "deck.inp"
AS4_3D = (126.0, 11.0, 11.0, 0.28, 0.28, 0.4, 6.6, 6.6, 11.0 / 2.8)   # Soden, Hinton & Kaddour 1998 (nu23 = 0.4 from memory)


def block(kind, form, rows, line=10, card="*ELASTIC", temps=None, options=None):
    temps = temps or [None] * len(rows)
    return PropertyBlock(kind=kind, form=form, loc=Loc(P, line), card=card, options=dict(options or {}),
                         rows=[Row(tuple(float(x) for x in r), t, Loc(P, line + 1 + i))
                               for i, (r, t) in enumerate(zip(rows, temps))])


def model_with(*blocks, name="M", fmt="keyword", dialect="calculix", sections=()):
    m = DeckModel(path=P, format=fmt, dialect=dialect)
    m.materials[name.upper()] = Material(name=name, key=name.upper(), loc=Loc(P, 9), blocks=list(blocks))
    m.sections.extend(sections)
    return m


def run(model, family="aniso", **cfg):
    # only this family's derivation runs (others are tested by their owners)
    config = Config(select=[family], **cfg)
    derive_aniso(model, config)
    return run_rules(model, config)


def by_rule(found, rid):
    return [f for f in found if f.rule == rid]


def test_published_lamina_and_3d_sets_pass():
    # Tsai & Hahn 1980 / Soden, Hinton & Kaddour 1998 plies are admissible
    m = model_with(block("elastic", "engineering", [AS4_3D]),
                   block("elastic", "lamina", [(181.0, 10.3, 0.28, 7.17, math.nan, math.nan)], card="MAT8"),
                   block("elastic", "aniso", [(300000, 110000, 320000, 130000, 140000, 350000, 160000, 170000,
                                               180000, 390000, 200000, 210000, 220000, 230000, 440000, 250000,
                                               260000, 270000, 280000, 290000, 500000)]))
    found = run(m)
    assert found == []
    d = m.materials["M"].derived["aniso"]
    assert d[0]["rows"][0]["eig_min"] == pytest.approx(3.92857, rel=1e-5)      # computed (G23 = E2/(2(1+nu23)))
    assert d[0]["rows"][0]["determinant"] == pytest.approx(0.820836, rel=1e-5)
    assert d[2]["rows"][0]["eig_min"] == pytest.approx(75478.05, abs=0.01)     # computed eigenvalue of the corpus ANISO vector


def test_lamina_nu12_past_bound_is_reported_once():
    # T300/5208 (Tsai & Hahn 1980) with nu12 = 4.5 > sqrt(181/10.3) = 4.192
    m = model_with(block("elastic", "lamina", [(181.0, 10.3, 4.5, 7.17, math.nan, math.nan)], card="MAT8"),
                   fmt="bulk", dialect="mystran")
    found = run(m)
    assert [f.rule for f in found] == ["aniso/constant-bounds"]   # PD finding restates it and is dropped
    f = found[0]
    assert f.severity == "error" and f.line == 10 and f.path == P
    assert "nu12^2 * E2/E1 = 1.152 >= 1" in f.message and "sqrt(E1/E2) = 4.192" in f.message


def test_engineering_bounds_message_and_restatement():
    # E1 = 10, E2 = E3 = 100, nu12 = 0.5 > sqrt(E1/E2) (violates Lempriere 1968; computed)
    m = model_with(block("elastic", "engineering", [(10, 100, 100, 0.5, 0.0, 0.3, 5, 5, 5)]))
    found = run(m)
    assert [f.rule for f in found] == ["aniso/constant-bounds"]
    assert "nu12^2 * E2/E1 = 2.5 >= 1" in found[0].message


def test_determinant_condition_when_pairwise_bounds_hold():
    # AS4/3501-6 with nu23 = 0.99: pairwise bounds hold, condition 3 = -0.00734 (Lempriere 1968 condition 3, computed)
    v = list(AS4_3D)
    v[5] = 0.99
    m = model_with(block("elastic", "engineering", [v]))
    found = run(m)
    assert [f.rule for f in found] == ["aniso/not-positive-definite"]
    assert "-0.00734" in found[0].message and "nu23 nu32" in found[0].message
    # the stored eigenvalue is the stiffness's: C has a negative eigenvalue of -3433 (computed from the orthotropic compliance)
    assert m.materials["M"].derived["aniso"][0]["rows"][0]["eig_min"] == pytest.approx(-3433, rel=1e-3)


def test_non_positive_modulus():
    v = list(AS4_3D)
    v[7] = -6.6
    found = run(model_with(block("elastic", "engineering", [v])))
    assert [f.rule for f in found] == ["aniso/constant-bounds"]
    assert "G13 = -6.6 <= 0" in found[0].message


def test_temperature_rows_one_finding_listing_rows():
    ok = list(AS4_3D)
    bad = list(AS4_3D)
    bad[5] = 0.99
    m = model_with(block("elastic", "engineering", [ok, bad, bad], temps=[20.0, 100.0, 200.0]))
    found = run(m)
    assert len(found) == 1
    f = found[0]
    assert "T = 100 (line 12)" in f.message and "T = 200 (line 13)" in f.message and "T = 20 " not in f.message
    assert [r["temperature"] for r in f.data["rows"]] == [100.0, 200.0]


def test_aniso_and_mat9_not_pd_and_ill_conditioned():
    zero_shear = [1000, 300, 1000, 300, 300, 1000, 0, 0, 0, 200, 0, 0, 0, 0, 200, 0, 0, 0, 0, 0, 0]
    found = run(model_with(block("elastic", "aniso", [zero_shear])))
    assert [f.rule for f in found] == ["aniso/not-positive-definite"]
    assert "smallest eigenvalue 0" in found[0].message
    # MAT9 (x,y,z,xy,yz,zx row by row) of a tiny shear modulus: PD but badly conditioned
    g = [1e6, 3e5, 3e5, 0, 0, 0, 1e6, 3e5, 0, 0, 0, 1e6, 0, 0, 0, 2e5, 0, 0, 2e5, 0, 1e-4]
    found = run(model_with(block("elastic", "mat9", [g], card="MAT9"), fmt="bulk", dialect="mystran"))
    assert [f.rule for f in found] == ["aniso/ill-conditioned"]
    assert found[0].severity == "warning" and found[0].data["rows"][0]["condition"] > 1e8
    # a looser limit from the configuration silences it
    m = model_with(block("elastic", "mat9", [g], card="MAT9"), fmt="bulk", dialect="mystran")
    cfg = Config(select=["aniso"])
    cfg.thresholds["aniso"]["condition_limit"] = 1e12
    derive_aniso(m, cfg)
    assert run_rules(m, cfg) == []


def _shell(mat, role, card="PSHELL"):
    return Section(kind="shell", card=card, elset="PID 1", elset_name="PID 1", loc=Loc(P, 30),
                   materials=[MaterialRef(role=role, name=mat, key=mat.upper(), loc=Loc(P, 30))])


def test_mat2_transverse_shear_uses_2x2_part():
    vals = [(100.0, 30.0, 0.0, 80.0, 0.0, -5.0)]            # G33 < 0: not PD as a 3x3 ...
    m = model_with(block("elastic", "mat2", vals, card="MAT2"), fmt="bulk", dialect="mystran",
                   sections=[_shell("M", "transverse-shear")])
    assert run(m) == []                                     # ... but only the 2x2 part counts as MID3
    m = model_with(block("elastic", "mat2", vals, card="MAT2"), fmt="bulk", dialect="mystran",
                   sections=[_shell("M", "membrane")])
    assert [f.rule for f in run(m)] == ["aniso/not-positive-definite"]


def test_mat2_coupling_matrix_may_be_indefinite():
    # membrane-bending coupling (PSHELL MID4) of an unsymmetric laminate has negative terms (common practice:
    # the B matrix of classical lamination theory is not a stiffness and need not be positive definite)
    vals = [(-1.25e10, 0.0, 0.0, -1.25e10, 0.0, -6.25e9)]
    m = model_with(block("elastic", "mat2", vals, card="MAT2"), fmt="bulk", dialect="mystran",
                   sections=[_shell("M", "coupling")])
    assert run(m) == []
    assert m.materials["M"].derived["aniso"][0]["part"] == "coupling"


def test_mat8_transverse_shear_blank_is_rigid_zero_is_not():
    ply = (181.0, 10.3, 0.28, 7.17, math.nan, math.nan)
    m = model_with(block("elastic", "lamina", [ply], card="MAT8"), fmt="bulk", dialect="mystran",
                   sections=[_shell("M", "transverse-shear")])
    assert run(m) == []
    m = model_with(block("elastic", "lamina", [(181.0, 10.3, 0.28, 7.17, 0.0, 5.0)], card="MAT8"),
                   fmt="bulk", dialect="mystran", sections=[_shell("M", "transverse-shear")])
    found = run(m)
    assert [f.rule for f in found] == ["aniso/constant-bounds"] and "G1Z = 0 <= 0" in found[0].message


def _solid(mat, orientation=None, options=None):
    return Section(kind="solid", card="*SOLID SECTION", elset="EALL", elset_name="Eall", loc=Loc(P, 40),
                   materials=[MaterialRef(role="solid", name=mat, key=mat.upper(), loc=Loc(P, 40))],
                   orientation=orientation, options=dict(options or {}))


def test_missing_orientation():
    found = run(model_with(block("elastic", "engineering", [AS4_3D]), sections=[_solid("M")]))
    assert [f.rule for f in found] == ["aniso/missing-orientation"]
    assert found[0].severity == "note" and found[0].line == 40
    assert run(model_with(block("elastic", "engineering", [AS4_3D]), sections=[_solid("M", "OR1")])) == []
    # isotropic constants written as ORTHO need no orientation
    lam, mu = 121153.8, 80769.2
    iso = (lam + 2 * mu, lam, lam + 2 * mu, lam, lam, lam + 2 * mu, mu, mu, mu)
    assert run(model_with(block("elastic", "ortho", [iso]), sections=[_solid("M")])) == []
    # bulk PSOLID: blank CORDM is reported, an explicit CORDM (0 = basic included) is a choice
    g = [1e5, 3e4, 3e4, 0, 0, 0, 2e5, 3e4, 0, 0, 0, 1e5, 0, 0, 0, 4e4, 0, 0, 4e4, 0, 4e4]
    f = run(model_with(block("elastic", "mat9", [g]), fmt="bulk", dialect="mystran",
                       sections=[_solid("M", options={"CORDM": None})]))
    assert [x.rule for x in f] == ["aniso/missing-orientation"] and "CORDM is blank" in f[0].message
    f = run(model_with(block("elastic", "mat9", [g]), fmt="bulk", dialect="mystran",
                       sections=[_solid("M", options={"CORDM": ""})]))
    assert [x.rule for x in f] == ["aniso/missing-orientation"]
    assert run(model_with(block("elastic", "mat9", [g]), fmt="bulk", dialect="mystran",
                          sections=[_solid("M", options={"CORDM": 0})])) == []
    assert run(model_with(block("elastic", "mat9", [g]), fmt="bulk", dialect="mystran",
                          sections=[_solid("M", options={"CORDM": "0"})])) == []


def test_conductivity_not_positive_definite():
    m = model_with(block("conductivity", "aniso", [(10, 10, 10, 0, 0, 0), (10, 10, 10, 12, 0, 0)],
                         card="*CONDUCTIVITY", temps=[0.0, 100.0]),
                   block("conductivity", "ortho", [(5, 5, 5)], line=20, card="*CONDUCTIVITY"))
    found = run(m)
    assert [f.rule for f in found] == ["aniso/conductivity-not-positive-definite"]
    assert "T = 100 (line 12)" in found[0].message and found[0].data["rows"][0]["eig_min"] == pytest.approx(-2)


SIZES = {"ortho": 9, "engineering": 9, "aniso": 21, "mat9": 21, "mat2": 6, "lamina": 6}


@settings(max_examples=40, deadline=None)
@given(form=st.sampled_from(sorted(SIZES)), data=st.data())
def test_any_constants_give_findings_not_exceptions(form, data):
    n = data.draw(st.integers(0, SIZES[form]))
    vals = data.draw(st.lists(st.floats(-1e6, 1e6, allow_nan=False) | st.just(0.0)
                              | st.floats(allow_nan=False, allow_infinity=False), min_size=n, max_size=n))
    found = run(model_with(block("elastic", form, [vals]), sections=[_solid("M"), _shell("M", "transverse-shear")]))
    assert all(f.rule.startswith("aniso/") for f in found)


def test_short_row_is_skipped():
    m = model_with(block("elastic", "aniso", [(1000, 300, 1000)]))
    assert run(m) == []                 # incomplete rows are the parser's to report (parse/malformed-data)
    assert m.materials["M"].derived["aniso"][0]["rows"][0]["complete"] is False


# ---------------------------------------------------------------------------------------- end to end

MESH = """*NODE
""" + CUBE_NODES + """*ELEMENT,TYPE=C3D8,ELSET=EALL
1,1,2,3,4,5,6,7,8
"""


def _check(path, family):
    pytest.importorskip("linter.parsers.keyword")
    from linter.check import check_paths

    res = check_paths([str(path)], Config(select=[family]))
    assert not [f for f in res.findings if f.rule.startswith("internal/") and
                ("anisotropic" in f.message or f.data.get("failed_rule", "").startswith(family))]
    return [f for f in res.findings if not f.rule.startswith("internal/")]


def test_end_to_end_engineering_constants(write_deck):
    # invented ply: E1 = 10, E2 = E3 = 100 with nu12 = 0.5 > sqrt(E1/E2) (violates Lempriere 1968; computed)
    deck = write_deck("ply.inp", MESH + """*ORIENTATION,NAME=OR1
1,0,0,0,1,0
*MATERIAL,NAME=PLY
*ELASTIC,TYPE=ENGINEERING CONSTANTS
10.,100.,100.,0.5,0.0,0.3,5.,5.,
5.,20.
*MATERIAL,NAME=BLOCKY
*ELASTIC,TYPE=ORTHO
500000,157200,400000,157200,157200,300000,126200,126200,
126200,20.
*SOLID SECTION,ELSET=EALL,MATERIAL=PLY,ORIENTATION=OR1
*STEP
*STATIC
*END STEP
""")
    found = _check(deck, "aniso")
    assert [(f.rule, f.line) for f in found] == [("aniso/constant-bounds", 15)]   # the *ELASTIC line
    assert "T = 20 (line 16)" in found[0].message and "nu12^2 * E2/E1 = 2.5 >= 1" in found[0].message


def test_end_to_end_missing_orientation_and_aniso_order(write_deck, corpus_dir):
    deck = corpus_dir / "keyword" / "aniso.inp"
    if not deck.is_file():
        pytest.skip("aniso.inp not in the corpus")
    found = _check(deck, "aniso")
    # the corpus ANISO vector is positive definite (eigenvalues 75478.05 ... 1459906.35, computed with a symmetric eigensolver);
    # its solid section has no orientation
    assert [f.rule for f in found] == ["aniso/missing-orientation"]


def test_corpus_sweep_has_no_internal_failure_in_aniso(corpus_dir):
    pytest.importorskip("linter.parsers.keyword")
    from linter.check import check_paths

    files = sorted(str(p) for p in (corpus_dir / "keyword").glob("*.inp"))
    if importlib.util.find_spec("linter.parsers.bulk") is not None:
        cards = re.compile(rb"^(MAT2|MAT5|MAT8|MAT9)[ ,*]", re.M)
        files += sorted(str(p) for p in (corpus_dir / "bulk").glob("*.DAT") if cards.search(p.read_bytes()))
    res = check_paths(files, Config(select=["aniso"]))
    bad = [f for f in res.findings if f.rule.startswith("internal/") and
           ("anisotropic" in f.message or f.data.get("failed_rule", "").startswith("aniso/"))]
    assert bad == []


def test_end_to_end_bulk_deck(write_deck):
    pytest.importorskip("linter.parsers.bulk")
    # invented bracket: a PCOMP of a T300/5208-like ply in MPa (Tsai & Hahn 1980) whose nu12 is past
    # sqrt(E1/E2), a MAT2 used as transverse shear only (G33 ignored), a MAT9 solid with a blank CORDM
    deck = write_deck("bracket.bdf", """SOL 101
CEND
BEGIN BULK
GRID,1,,0.,0.,0.
GRID,2,,1.,0.,0.
GRID,3,,1.,1.,0.
GRID,4,,0.,1.,0.
GRID,5,,0.,0.,1.
GRID,6,,1.,0.,1.
GRID,7,,1.,1.,1.
GRID,8,,0.,1.,1.
CQUAD4,1,10,1,2,3,4
CQUAD4,2,20,1,2,3,4
CHEXA,3,30,1,2,3,4,5,6,+H1
+H1,7,8
PCOMP,10
,1,0.2,0.,,1,0.2,90.
MAT8,1,181000.,10300.,4.5,7170.
PSHELL,20,2,1.0,2,,3
MAT1,2,70000.,,0.3
MAT2,3,30000.,0.,-5.,30000.,0.,-1.
PSOLID,30,4
MAT9,4,1.+5,3.+4,3.+4,0.,0.,0.,2.+5,+M1
+M1,3.+4,0.,0.,0.,1.+5,0.,0.,0.,+M2
+M2,4.+4,0.,0.,4.+4,0.,4.+4
ENDDATA
""")
    found = _check(deck, "aniso")
    got = sorted((f.rule, f.line, f.material) for f in found)
    assert got == [("aniso/constant-bounds", 18, "1"), ("aniso/missing-orientation", 22, "4")], got   # MAT8, PSOLID lines
    assert "nu12^2 * E2/E1 = 1.152 >= 1" in found[[f.rule for f in found].index("aniso/constant-bounds")].message


def test_negative_orthotropic_conductivity_is_one_finding(write_deck):
    # common practice: a conductivity term <= 0 is one defect; property/nonpositive reports it, so the
    # positive-definiteness rule does not repeat it (one defect, one finding)
    from linter.check import check_paths

    deck = write_deck("k.inp", "*NODE\n" + CUBE_NODES + "*ELEMENT, TYPE=DC3D8, ELSET=E\n1, 1, 2, 3, 4, 5, 6, 7, 8\n"
                      "*MATERIAL, NAME=K\n*CONDUCTIVITY, TYPE=ORTHO\n50., -3., 50.\n"
                      "*SOLID SECTION, ELSET=E, MATERIAL=K\n")
    rules = [f.rule for f in check_paths([str(deck)]).files[0].findings]
    assert "property/nonpositive" in rules
    assert "aniso/conductivity-not-positive-definite" not in rules
