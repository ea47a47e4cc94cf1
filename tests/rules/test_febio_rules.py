"""The rule families on FEBio models (invented models; sources beside the outside values)."""
from __future__ import annotations

import pytest

from febio_decks import MAT_NEO, check_text, feb, rules_in
from linter.config import Config


def _found(report, rule):
    return [f for f in report.findings if f.rule == rule]


def mr(k, c1=1.0, c2=0.0, name="Rubber", kind="Mooney-Rivlin"):
    return f'<material id="1" name="{name}" type="{kind}"><c1>{c1}</c1><c2>{c2}</c2><k>{k}</k></material>'


# ------------------------------------------------------------------ hyper/penalty-bulk-modulus

def test_uncoupled_k_zero_is_an_error(tmp_path):
    f = _found(check_text(tmp_path, feb(mr(0))), "hyper/penalty-bulk-modulus")
    assert len(f) == 1 and f[0].severity == "error" and "k = 0" in f[0].message


def test_uncoupled_k_missing_takes_the_default_zero(tmp_path):
    text = feb('<material id="1" name="Rubber" type="Mooney-Rivlin"><c1>1</c1><c2>0</c2></material>')
    f = _found(check_text(tmp_path, text), "hyper/penalty-bulk-modulus")
    assert f and f[0].severity == "error" and "default" in f[0].message


def test_uncoupled_k_low_reports_equivalent_nu(tmp_path):
    # k/mu0 = 100 / 2 = 50: nu = (3*50 - 2)/(6*50 + 2) = 148/302 = 0.4901 (isotropic K-G relation; Mavko et al., Rock Physics Handbook)
    report = check_text(tmp_path, feb(mr(100)))
    f = _found(report, "hyper/penalty-bulk-modulus")
    assert len(f) == 1 and f[0].severity == "note"
    assert f[0].data["nu_equivalent"] == pytest.approx(148 / 302)
    assert "0.4901" in f[0].message


def test_uncoupled_k_far_too_high_is_ill_conditioned(tmp_path):
    f = _found(check_text(tmp_path, feb(mr(1e8))), "hyper/penalty-bulk-modulus")
    assert len(f) == 1 and f[0].severity == "warning" and "ill-conditioned" in f[0].message


def test_uncoupled_k_in_the_usual_band_is_quiet(tmp_path):
    # k/mu0 = 1000: nearly incompressible, as the solver's manual recommends for rubber-like solids
    report = check_text(tmp_path, feb(mr(2000)))
    assert not _found(report, "hyper/penalty-bulk-modulus")


def test_ratio_limits_come_from_thresholds(tmp_path):
    cfg = Config(thresholds={"hyper": {"uncoupled_ratio_min": 5.0}})
    assert not _found(check_text(tmp_path, feb(mr(20)), config=cfg), "hyper/penalty-bulk-modulus")


def test_low_ratio_and_too_compressible_are_one_finding(tmp_path):
    # k/mu0 = 5 on an elastomer-like material: hyper/too-compressible reports it, the penalty rule restates it
    report = check_text(tmp_path, feb(mr(10)))
    assert _found(report, "hyper/too-compressible")
    assert not _found(report, "hyper/penalty-bulk-modulus")


def test_fluid_bulk_modulus_not_positive(tmp_path):
    mats = MAT_NEO + '\n\t\t<material id="2" name="Oil" type="fluid"><density>1</density><k>-5</k></material>'
    f = _found(check_text(tmp_path, feb(mats)), "hyper/penalty-bulk-modulus")
    assert len(f) == 1 and f[0].material == "Oil" and f[0].severity == "error"


def test_uncoupled_wrapper_passes_its_k_down(tmp_path):
    mat = """<material id="1" name="Visco" type="uncoupled reactive viscoelastic">
\t\t\t<k>2000</k>
\t\t\t<elastic type="Mooney-Rivlin"><k>0</k><c1>1</c1><c2>0.5</c2></elastic>
\t\t</material>"""
    report = check_text(tmp_path, feb(mat, domains='<SolidDomain name="Part1" mat="Visco"/>'))
    assert not _found(report, "hyper/penalty-bulk-modulus")


# ------------------------------------------------------------------ hyper (Mooney-Rivlin, Ogden conventions)

def test_mooney_rivlin_negative_mu0(tmp_path):
    # FEBio User's Manual 4.0, 4.1.2 Mooney-Rivlin: mu = 2 (c1 + c2) must be positive
    f = _found(check_text(tmp_path, feb(mr(1000, c1=0.5, c2=-1.0))), "hyper/negative-initial-shear")
    assert f and "mu0 = -1" in f[0].message


def test_ogden_unstable_set(tmp_path):
    # one Ogden term with a negative modulus and positive exponent: mu0 = c1/2 < 0 (Ogden's stability
    # condition mu_i alpha_i > 0, Ogden 1972, Proc. R. Soc. A 326; FEBio User's Manual 4.0, Ogden)
    mat = '<material id="1" name="Pad" type="Ogden"><k>1000</k><c1>-0.4</c1><m1>2</m1></material>'
    report = check_text(tmp_path, feb(mat, domains='<SolidDomain name="Part1" mat="Pad"/>'))
    assert _found(report, "hyper/negative-initial-shear")


def test_ogden_stable_set_is_quiet(tmp_path):
    # Treloar-like 3-term set (Ogden 1972: mu 0.63, 0.0012, -0.01 MPa; alpha 1.3, 5.0, -2.0), in FEBio's c_i = 2 mu_i
    mat = ('<material id="1" name="Pad" type="Ogden"><k>630</k><c1>1.26</c1><m1>1.3</m1><c2>0.0024</c2><m2>5</m2>'
           '<c3>-0.02</c3><m3>-2</m3></material>')
    report = check_text(tmp_path, feb(mat, domains='<SolidDomain name="Part1" mat="Pad"/>'))
    hyper = [f for f in report.findings if f.rule.startswith("hyper/")]
    # no error and no penalty finding; a loss of stability far outside the working range is a warning at most
    assert not [f for f in hyper if f.severity == "error" or f.rule == "hyper/penalty-bulk-modulus"]
    assert all(f.rule == "hyper/unstable" and "outside" in f.message for f in hyper)


# ------------------------------------------------------------------ elastic, aniso, element

def test_coupled_nu_half_is_an_error(tmp_path):
    mat = '<material id="1" name="Rubber" type="neo-Hookean"><E>6</E><v>0.5</v></material>'
    report = check_text(tmp_path, feb(mat))
    assert "elastic/poisson-out-of-range" in rules_in(report, "error")


def test_orthotropic_bounds_with_febio_ratios(tmp_path):
    # Lempriere (1968): |nu31| < sqrt(E3/E1); with E1 = 100, E3 = 1 a v31 of 0.5 breaks it
    # (nu13 = v31 E1/E3 = 50, nu13 nu31 = 25 > 1)
    bad = ('<material id="1" name="Ply" type="orthotropic elastic"><E1>100</E1><E2>10</E2><E3>1</E3>'
           '<v12>0.3</v12><v23>0.3</v23><v31>0.5</v31><G12>5</G12><G23>1</G23><G31>1</G31></material>')
    report = check_text(tmp_path, feb(bad, domains='<SolidDomain name="Part1" mat="Ply"/>'))
    assert "aniso/constant-bounds" in rules_in(report, "error")
    good = bad.replace("<v31>0.5</v31>", "<v31>0.003</v31>")
    report = check_text(tmp_path, feb(good, domains='<SolidDomain name="Part1" mat="Ply"/>'))
    assert not [f for f in report.findings if f.rule.startswith("aniso/") and f.severity == "error"]


def test_coupled_near_incompressible_on_tet4_locks(tmp_path):
    mat = '<material id="1" name="Rubber" type="neo-Hookean"><E>6</E><v>0.495</v></material>'
    report = check_text(tmp_path, feb(mat, etype="tet4"))
    f = _found(report, "element/volumetric-locking")
    assert f and "TET4" in f[0].message


def test_uncoupled_on_hex8_three_field_does_not_lock(tmp_path):
    # the solver's default three-field domain for uncoupled materials on hex8 (FEBio source, FEModelBuilder)
    assert not _found(check_text(tmp_path, feb(mr(5000))), "element/volumetric-locking")
    off = feb(mr(5000), domains='<SolidDomain name="Part1" mat="Rubber" three_field="off"/>')
    f = _found(check_text(tmp_path, off), "element/volumetric-locking")
    assert f and f[0].severity == "error"          # K0/mu0 = 2500 beyond element.locking_error_ratio


def test_rigid_body_gets_no_elastic_checks(tmp_path):
    mat = '<material id="1" name="Plate" type="rigid body"><density>7.8e-9</density><E>0</E><v>0.7</v></material>'
    report = check_text(tmp_path, feb(mat, domains='<SolidDomain name="Part1" mat="Plate"/>'))
    assert not [f for f in report.findings if f.rule.split("/")[0] in ("elastic", "model", "analysis", "element")]


# ------------------------------------------------------------------ model, analysis

def test_domain_naming_a_missing_material(tmp_path):
    text = feb(domains='<SolidDomain name="Part1" mat="Rubbr"/>')
    f = _found(check_text(tmp_path, text), "model/undefined-material")
    assert f and "Rubber" in f[0].message
    assert 'mat="Rubbr"' in text.splitlines()[f[0].line - 1]


def test_elements_without_a_domain(tmp_path):
    text = feb(domains='<SolidDomain name="Part1" mat="Rubber"/>').replace(
        "\t\t</Elements>", "\t\t</Elements>\n\t\t<Elements type=\"hex8\" name=\"Loose\">\n"
        "\t\t\t<elem id=\"9\">1,5,7,3,2,6,8,4</elem>\n\t\t</Elements>")
    f = _found(check_text(tmp_path, text), "model/unassigned-elements")
    assert len(f) == 1 and "Loose" in f[0].message


def test_dynamics_without_density(tmp_path):
    f = _found(check_text(tmp_path, feb(analysis="DYNAMIC")), "analysis/missing-density")
    assert f and f[0].material == "Rubber"
    mat = MAT_NEO.replace("<E>", "<density>1.1e-9</density>\n\t\t\t<E>")
    assert not _found(check_text(tmp_path, feb(mat, analysis="DYNAMIC")), "analysis/missing-density")


def test_gravity_needs_density(tmp_path):
    extra = '\t<Loads>\n\t\t<body_load type="const"><x>0</x><y>0</y><z>-9810</z></body_load>\n\t</Loads>'
    f = _found(check_text(tmp_path, feb(extra=extra)), "analysis/missing-density")
    assert f


def test_zero_density_is_a_massless_material(tmp_path):
    # FEBio reads density 0 as no mass; only an analysis that needs mass makes it a finding
    mat = MAT_NEO.replace("<E>", "<density>0</density>\n\t\t\t<E>")
    assert not _found(check_text(tmp_path, feb(mat)), "property/nonpositive")
    assert _found(check_text(tmp_path, feb(mat, analysis="DYNAMIC")), "analysis/missing-density")
