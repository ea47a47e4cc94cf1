"""hyper/* rules and the hyperelastic derivation, on neutral models built directly."""
from __future__ import annotations

import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from linter.config import Config
from linter.derived.hyper import derive_hyper
from linter.model import DeckModel, Loc, Material, PropertyBlock, Row
from linter.runner import run_rules
from decks import CUBE_NODES

P = "deck.inp"


def hblock(form, rows, kind="hyperelastic", temps=None, line=20):
    temps = temps or [None] * len(rows)
    return PropertyBlock(kind=kind, form=form, loc=Loc(P, line), card="*" + kind.upper(),
                         rows=[Row(tuple(float(x) for x in r), t, Loc(P, line + 1 + i))
                               for i, (r, t) in enumerate(zip(rows, temps))])


def model_with(*blocks, dialect="calculix", unit_system=None):
    m = DeckModel(path=P, format="keyword", dialect=dialect)
    m.materials["RUBBER"] = Material(name="Rubber", key="RUBBER", loc=Loc(P, 19), blocks=list(blocks))
    if unit_system:
        m.derived["unit_system"] = unit_system
    return m


def run(model):
    # only this family's derivation runs, so the unit system stays the one a test sets
    cfg = Config(select=["hyper"])
    derive_hyper(model, cfg)
    return run_rules(model, cfg)


def rules_of(found):
    return sorted(f.rule for f in found)


def test_good_rubber_is_clean_and_derived_shape():
    # MR C10 = 0.4, C01 = 0.1, D1 = 0.001: mu0 = 1, K0 = 2000, nu0 = 0.49975 (computed from the *HYPERELASTIC energies, CalculiX User's Manual)
    m = model_with(hblock("mooney-rivlin", [(0.4, 0.1, 0.001)]))
    assert run(m) == []
    h = m.materials["RUBBER"].derived["hyper"]
    assert h["model"] == "mooney-rivlin" and h["worst_row"] == 0 and h["D_defaulted"] is False
    assert h["mu0"] == pytest.approx(1.0) and h["K0"] == pytest.approx(2000.0)
    assert h["K0_over_mu0"] == pytest.approx(2000.0) and h["nu0"] == pytest.approx(0.49975, abs=1e-6)
    assert set(h["rows"][0]["stability"]) == {"UT", "ET", "PS"}


def test_worst_row_summary():
    m = model_with(hblock("neo-hooke", [(0.2, 0.01), (0.2, 0.001)], temps=[20.0, 80.0]))
    run(m)
    h = m.materials["RUBBER"].derived["hyper"]
    assert h["worst_row"] == 1 and h["K0_over_mu0"] == pytest.approx(5000)   # computed: 2/D1 over 2 C10


def test_negative_initial_shear_restates_instability():
    m = model_with(hblock("mooney-rivlin", [(-0.4, 0.1, 0.001)]))
    found = run(m)
    assert rules_of(found) == ["hyper/negative-initial-shear"]
    assert "mu0 = -0.6" in found[0].message and found[0].line == 20


def test_arruda_boyce_needs_positive_locking_stretch():
    found = run(model_with(hblock("arruda-boyce", [(0.27, 0.0, 0.001)])))
    assert rules_of(found) == ["hyper/negative-initial-shear"]
    assert "lambda_m = 0 is not positive" in found[0].message


def test_negative_bulk():
    found = run(model_with(hblock("neo-hooke", [(0.5, -0.001)])))
    assert rules_of(found) == ["hyper/negative-bulk"]
    assert "D1 = -0.001" in found[0].message and "K0 = -2000" in found[0].message


def test_compressibility_defaulted_calculix_only():
    # OGDEN N=1 mu1 = 3.488, alpha1 = 2.163, D1 = 0 (corpus beamog.inp values):
    # ccx uses D1 = 0.1/mu0, K0/mu0 = 20 (CalculiX User's Manual *HYPERELASTIC; ccx source hyperelastics.f)
    found = run(model_with(hblock("ogden-1", [(3.488, 2.163, 0.0)])))
    assert rules_of(found) == ["hyper/compressibility-defaulted"]
    f = found[0]
    assert f.severity == "warning" and "K0/mu0 = 20" in f.message and "nu0 = 0.4754" in f.message
    assert "D1 = 0.000573" in f.message             # 2/(1000 * 3.488) suggested
    # another dialect reads D = 0 as incompressible: not defaulted, not reported
    m = model_with(hblock("ogden-1", [(3.488, 2.163, 0.0)]), dialect="other")
    assert run(m) == []
    assert math.isinf(m.materials["RUBBER"].derived["hyper"]["K0"])


@pytest.mark.parametrize("us,reported", [
    (None, True),                                                     # assumed to be in the deck's unit
    ({"name": "mm-tonne-s", "confidence": 0.9, "stress_scale_to_pa": 1e6}, True),    # 1 MPa: rubber
    ({"name": "m-kg-s", "confidence": 0.9, "stress_scale_to_pa": 1.0}, True),        # 1 Pa: soft gel
    ({"name": "gpa", "confidence": 0.9, "stress_scale_to_pa": 1e9}, False),          # 1 GPa: not rubber
    ({"name": "gpa", "confidence": 0.3, "stress_scale_to_pa": 1e9}, True),           # weak guess: not used
    ({"name": "gpa", "confidence": 0.0, "declared": True, "stress_scale_to_pa": 1e9}, False),
])
def test_too_compressible(us, reported):
    # neo-Hooke C10 = 0.5 (mu0 = 1), D1 = 0.2 -> K0 = 10, K0/mu0 = 10 < 20 (threshold K0/mu0 20 is our suggestion, common practice)
    found = run(model_with(hblock("neo-hooke", [(0.5, 0.2)]), unit_system=us))
    assert rules_of(found) == (["hyper/too-compressible"] if reported else [])
    if reported:
        assert found[0].severity == "note" and "K0/mu0 = 10" in found[0].message
        assert ("unit system unknown" in found[0].message) == (us is None or us["confidence"] < 0.5)


def test_unstable_outside_working_range_is_warning():
    # MR C10 = 0.5, C01 = -0.05: UT unstable at lambda >= 3.1623 and <= 0.1977 (computed on the Hill condition, arXiv:2511.13792);
    # ET 2.2489 and 0.5623 and PS 3.0465, 0.3282: all outside 0.5-2.0 except ET compression 0.5-0.5623
    found = run(model_with(hblock("mooney-rivlin", [(0.5, -0.05, 0.001)])))
    assert rules_of(found) == ["hyper/unstable"]
    f = found[0]
    assert f.severity == "error"         # equibiaxial 0.5-0.5623 lies inside the working range
    assert "uniaxial unstable at stretch 0.1-0.1977, 3.162-4" in f.message
    assert "criterion" in f.message and f.data["criterion"].startswith("Drucker/Hill")
    # Ogden 1972 fit with the paper constants read as D-convention ("convention mix-up"):
    # loses stability only far out (UT 12.3, ET 3.98), in the scan range only ET >= 3.9838 -> warning
    found = run(model_with(hblock("ogden-3", [(0.63, 1.3, 0.0012, 5.0, -0.01, -2.0, 0.001, 0.0, 0.0)])))
    f = [x for x in found if x.rule == "hyper/unstable"][0]
    assert f.severity == "warning" and "equibiaxial unstable at stretch 0.1-0.2849, 3.984-4" in f.message
    assert "uniaxial unstable" not in f.message        # UT onsets 0.063 and 12.3 lie outside 0.1-4
    modes = f.data["rows"][0]["modes"]
    assert modes["UT"]["unstable"] == [] and modes["ET"]["unstable"][1][0] == pytest.approx(3.9838, abs=1e-3)


def test_unstable_inside_working_range_is_error():
    # Ogden D-conv. mu = (0.8, -0.3), alpha = (1, 4): UT onset 1.4816 (computed on the Hill condition, arXiv:2511.13792)
    found = run(model_with(hblock("ogden-2", [(0.8, 1.0, -0.3, 4.0, 0.001, 0.0)])))
    f = [x for x in found if x.rule == "hyper/unstable"]
    assert len(f) == 1 and f[0].severity == "error" and "1.482" in f[0].message
    assert f[0].data["rows"][0]["in_working_range"] is True


def test_ogden_1972_fit_is_stable():
    # Ogden 1972 in the D-convention: stable everywhere
    mu = (0.40158, 1.3, 0.0029420, 5.0, 0.0098067, -2.0, 0.0005, 0.0, 0.0)
    m = model_with(hblock("ogden-3", [mu]))
    assert run(m) == []          # D2 = D3 = 0 are defaulted by ccx but do not change K0: not reported
    assert m.materials["RUBBER"].derived["hyper"]["D_defaulted"] is True


def test_hyperfoam_singular_poisson():
    found = run(model_with(hblock("hyperfoam-2", [(0.3, 2.0, 0.2, -1.0, 0.5, 0.1)], kind="hyperfoam")))
    assert rules_of(found) == ["hyper/foam-poisson-singular"]
    assert "nu1 = 0.5" in found[0].message
    ok = model_with(hblock("hyperfoam-1", [(0.5, 8.0, 0.25)], kind="hyperfoam"))
    assert run(ok) == []
    assert ok.materials["RUBBER"].derived["hyper"]["nu0"] == pytest.approx(0.25)   # K0 derived from the CalculiX User's Manual *HYPERFOAM energy


def test_temperature_rows_listed():
    rows = [(0.5, 0.001), (-0.1, 0.001), (-0.2, 0.001)]
    found = run(model_with(hblock("neo-hooke", rows, temps=[0.0, 50.0, 100.0])))
    assert rules_of(found) == ["hyper/negative-initial-shear"]
    assert "T = 50 (line 22)" in found[0].message and "T = 100 (line 23)" in found[0].message
    assert len(found[0].data["rows"]) == 2


def test_van_der_waals_skipped():
    m = model_with(hblock("van-der-waals", [(0.5, 5.0, 0.1, 0.0, 0.001)]))
    assert run(m) == []
    assert "skipped" in m.materials["RUBBER"].derived["hyper"]["rows"][0]


def test_non_finite_and_short_rows_do_not_fail():
    m = model_with(hblock("mooney-rivlin", [(float("nan"), 0.1, 0.001), (0.4,)]))
    found = run(m)                      # derive_all asserted no internal failure
    rows = m.materials["RUBBER"].derived["hyper"]["rows"]
    assert "skipped" in rows[0] and rows[1]["mu0"] == pytest.approx(0.8)
    assert rules_of(found) == ["hyper/compressibility-defaulted"]   # the short row's D1 is read as 0


FORMS = ["neo-hooke", "mooney-rivlin", "polynomial-2", "polynomial-3", "reduced-polynomial-3", "yeoh", "ogden-1",
         "ogden-3", "arruda-boyce", "hyperfoam-2"]


@settings(max_examples=40, deadline=None)
@given(form=st.sampled_from(FORMS),
       vals=st.lists(st.floats(-1e3, 1e3, allow_nan=False) | st.sampled_from([0.0, 0.5, 1e-12, 60.0])
                     | st.floats(allow_nan=False, allow_infinity=False),
                     min_size=0, max_size=12))
def test_any_constants_give_findings_not_exceptions(form, vals):
    kind = "hyperfoam" if form.startswith("hyperfoam") else "hyperelastic"
    found = run(model_with(hblock(form, [vals], kind=kind)))
    assert all(f.rule.startswith("hyper/") for f in found)


# ---------------------------------------------------------------------------------------- end to end

MESH = """*NODE
""" + CUBE_NODES + """*ELEMENT,TYPE=C3D8,ELSET=EALL
1,1,2,3,4,5,6,7,8
"""


def test_end_to_end_keyword_deck(write_deck):
    pytest.importorskip("linter.parsers.keyword")
    from linter.check import check_paths

    # invented seal: MR with C01 < 0 (unstable on the Hill condition, arXiv:2511.13792; computed) and an Ogden N=1 with D1 = 0
    deck = write_deck("seal.inp", MESH + """*MATERIAL,NAME=SEAL
*HYPERELASTIC,MOONEY-RIVLIN
0.5,-0.05,0.001
*MATERIAL,NAME=PAD
*HYPERELASTIC,OGDEN,N=1
3.488,2.163,0.
*SOLID SECTION,ELSET=EALL,MATERIAL=SEAL
*STEP
*STATIC
*END STEP
""")
    res = check_paths([str(deck)], Config(select=["hyper"]))
    got = sorted((f.rule, f.line, f.material) for f in res.findings if not f.rule.startswith("internal/"))
    assert got == [("hyper/compressibility-defaulted", 16, "PAD"), ("hyper/unstable", 13, "SEAL")]   # card lines
    assert not [f for f in res.findings if f.rule.startswith("internal/") and "hyperelastic" in f.message]
    mats = {m["name"]: m for m in res.files[0].materials}
    assert mats["SEAL"]["derived"]["hyper"]["mu0"] == pytest.approx(0.9)


def test_corpus_hyper_decks(corpus_dir):
    pytest.importorskip("linter.parsers.keyword")
    from linter.check import check_paths

    files = [corpus_dir / "keyword" / n for n in ("beamog.inp", "beamhf.inp")]
    files = [str(p) for p in files if p.is_file()]
    if not files:
        pytest.skip("hyperelastic corpus decks not present")
    res = check_paths(files, Config(select=["hyper"]))
    assert not [f for f in res.findings if f.rule.startswith("internal/") and "hyper" in f.message]
    rules = {(f.path.rsplit("/", 1)[-1], f.rule) for f in res.findings}
    # beamog.inp: OGDEN N=1 mu1 = 3.488, D1 = 0 -> ccx default (CalculiX User's Manual *HYPERELASTIC) compressibility
    if any(p.endswith("beamog.inp") for p in files):
        assert ("beamog.inp", "hyper/compressibility-defaulted") in rules
