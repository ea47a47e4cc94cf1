"""hyper/* rules at their thresholds: mu0 = 0, D = 0, the |D1| < 1e-10 default, the elastomer limit and
K0/mu0 limit reached exactly, which unit system is trusted, and where the findings point."""
from __future__ import annotations

import pytest

from linter.config import Config
from linter.derived.hyper import derive_hyper
from linter.model import DeckModel, Loc, Material, PropertyBlock, Row
from linter.runner import run_rules

P = "deck.inp"
# thresholds.yaml: hyper.min_bulk_ratio 20, hyper.elastomer_mu0_mpa 100, hyper.unit_min_confidence 0.5


def _block(form, rows, line=20, kind="hyperelastic"):
    return PropertyBlock(kind=kind, form=form, loc=Loc(P, line), card="*" + kind.upper(),
                         rows=[Row(tuple(float(x) for x in r), None, Loc(P, line + 1 + i)) for i, r in enumerate(rows)])


def _model(*blocks, unit_system=None):
    m = DeckModel(path=P, format="keyword", dialect="calculix")
    m.materials["RUBBER"] = Material(name="Rubber", key="RUBBER", loc=Loc(P, 19), blocks=list(blocks))
    if unit_system is not None:
        m.derived["unit_system"] = unit_system
    return m


def _run(model, *select):
    cfg = Config(select=list(select) or ["hyper"])
    derive_hyper(model, cfg)
    return run_rules(model, cfg)


def _of(found, rid):
    return [f for f in found if f.rule == rid]


def test_zero_initial_shear_is_not_positive():
    # mu0 = 2 C10 = 0 for neo-Hooke (CalculiX manual 6.9.12 energy): the material has no shear stiffness
    found = _run(_model(_block("neo-hooke", [(0.0, 0.001)])))
    assert [f.rule for f in found] == ["hyper/negative-initial-shear"] and "mu0 = 0" in found[0].message
    # ... and the stability scan skips such rows instead of reporting them on their own
    assert _run(_model(_block("neo-hooke", [(0.0, 0.001)])), "hyper/unstable") == []


def test_zero_D_is_not_a_negative_bulk_modulus():
    # D1 = 0 is the incompressible limit that CalculiX replaces by its default, not a negative K0
    found = _run(_model(_block("mooney-rivlin", [(0.4, 0.1, 0.0)])))
    assert [f.rule for f in found] == ["hyper/compressibility-defaulted"]


def test_negative_D2_alone_is_a_negative_bulk_term():
    # reduced polynomial N = 2: (C10, C20, D1, D2); K0 = 2/D1 > 0 but D2 < 0 (CalculiX manual 6.9.12)
    found = _of(_run(_model(_block("reduced-polynomial-2", [(0.5, 0.01, 0.001, -0.002)]))), "hyper/negative-bulk")
    assert len(found) == 1 and "D2 = -0.002" in found[0].message and "D1 =" not in found[0].message


def test_defaulted_D1_threshold():
    # CalculiX replaces |D_i| < 1e-10 (ccx source, *HYPERELASTIC reading); only a defaulted D1 is reported
    def defaulted(d1):
        return _of(_run(_model(_block("reduced-polynomial-2", [(0.5, 0.01, d1, 0.0)]))),
                   "hyper/compressibility-defaulted")
    assert len(defaulted(0.0)) == 1
    assert defaulted(1e-10) == [] and defaulted(1.5e-10) == [] and defaulted(0.001) == []


def test_defaulted_message_quotes_D1_and_the_hint_of_the_first_row():
    found = _of(_run(_model(_block("reduced-polynomial-2", [(0.15, 0.0, 0.0, 0.5), (0.4, 0.0, 0.0, 0.5)]))),
                "hyper/compressibility-defaulted")
    msg = found[0].message
    # first row mu0 = 2 C10 = 0.3: D1 = 2/(1000 mu0) = 0.006667 gives K0/mu0 = 1000 (K0 = 2/D1)
    assert "D1 = 0 ->" in msg and "D1 = 0.00667)" in msg and "D1 = 0.5" not in msg


def test_defaulted_hint_needs_positive_mu0():
    found = _run(_model(_block("neo-hooke", [(-0.2, 0.0)])), "hyper/compressibility-defaulted")
    assert len(found) == 1 and "for K0/mu0 = 1000" not in found[0].message


def test_finding_points_at_the_hyperelastic_block():
    dens = PropertyBlock(kind="density", form="iso", loc=Loc(P, 40), card="*DENSITY",
                         rows=[Row((1.1e-9,), None, Loc(P, 41))])
    found = _run(_model(_block("neo-hooke", [(0.0, 0.001)]), dens))
    assert found[0].line == 20


# ------------------------------------------------------------------------------------ too-compressible

def _soft(mu0, ratio, unit_system=None):
    c10, d1 = mu0 / 2.0, 2.0 / (ratio * mu0)        # mu0 = 2 C10, K0 = 2/D1 (CalculiX manual 6.9.12)
    return _of(_run(_model(_block("neo-hooke", [(c10, d1)]), unit_system=unit_system)), "hyper/too-compressible")


def test_bulk_ratio_limit_is_exclusive():
    assert len(_soft(1.0, 19.0)) == 1
    assert _soft(1.0, 20.0 * (1 + 1e-9)) == []


MPA = {"name": "mm-t-s-N (MPa)", "stress_scale_to_pa": 1e6, "declared": True}


def test_elastomer_limit_in_a_declared_unit_system():
    # limit = 100 MPa expressed in the deck's unit: 100 * 1e6 / 1e6 = 100 in an MPa deck
    assert len(_soft(100.0 * (1 - 5e-7), 10.0, MPA)) == 1
    assert _soft(100.0 * (1 + 5e-7), 10.0, MPA) == []
    assert _soft(100.0, 10.0, MPA) == []
    f = _soft(1.0, 10.0, MPA)[0]
    assert f.data["unit_note"] == "in the declared unit system mm-t-s-N (MPa)"
    # in an SI (Pa) deck the same limit is 1e8
    si = {"name": "SI", "stress_scale_to_pa": 1.0, "declared": True}
    assert len(_soft(9.9e7, 10.0, si)) == 1 and _soft(1.01e8, 10.0, si) == []


def test_unit_system_trusted_from_the_confidence_threshold():
    pa = {"name": "SI", "stress_scale_to_pa": 1.0, "declared": False}
    # confidence 0.5 reaches hyper.unit_min_confidence: the Pa limit 1e8 applies, so mu0 = 5e7 is an elastomer
    assert len(_soft(5e7, 10.0, dict(pa, confidence=0.5))) == 1
    # below it, or unknown, the MPa number 100 is compared with the deck's own unit
    assert _soft(5e7, 10.0, dict(pa, confidence=0.49)) == []
    assert _soft(5e7, 10.0, pa) == []
    nameless = _soft(1.0, 10.0, {"stress_scale_to_pa": 1e6, "declared": True})[0]
    assert nameless.data["unit_note"] == "in the declared unit system"


# ------------------------------------------------------------------------------------ unstable: wording

def test_unstable_message_names_both_ranges():
    # Ogden D-conv. mu = (0.8, -0.3), alpha = (1, 4): unstable inside 0.5-2 (UT onset 1.4816, computed on the Hill condition, arXiv:2511.13792)
    found = _run(_model(_block("ogden-2", [(0.8, 1.0, -0.3, 4.0, 0.001, 0.0)])), "hyper/unstable")
    assert "inside the working range 0.5-2 " in found[0].message and "scanned 0.1-4)" in found[0].message
    # MR C10 = 0.5, C01 = -0.05 over a working range 0.6-1.4: only outside (UT onsets 0.1977, 3.162)
    cfg = Config.from_mapping({"select": ["hyper/unstable"], "thresholds": {"hyper": {"working_range": [0.6, 1.4]}}})
    m = _model(_block("mooney-rivlin", [(0.5, -0.05, 0.001)]))
    derive_hyper(m, cfg)
    f = run_rules(m, cfg)[0]
    assert f.severity == "warning" and "only outside the working range 0.6-1.4 " in f.message


def test_bulk_ratio_exactly_at_the_limit_is_not_reported():
    # K0/mu0 = 20 exactly (C10 = 0.5, D1 = 0.1: mu0 = 1, K0 = 2/D1 = 20) is not "below 20"
    assert _soft(1.0, 20.0) == []


def test_a_very_soft_gel_is_judged_by_its_ratio_not_by_the_size_of_K0():
    # mu0 = 0.01, K0 = 0.1 (K0/mu0 = 10): the ratio is below 20 although K0 itself is below 1
    f = _soft(0.01, 10.0)
    assert len(f) == 1 and f[0].data["rows"][0]["K0_over_mu0"] == pytest.approx(10.0)


def test_negative_bulk_modulus_is_reported_once_not_also_as_too_compressible():
    # neo-Hooke C10 = 0.5, D1 = -4: K0 = 2/D1 = -0.5 (CalculiX manual 6.9.12); K0/mu0 = -0.5 is below 20,
    # but a negative K0 is the negative-bulk defect, not a soft rubber
    found = _run(_model(_block("neo-hooke", [(0.5, -4.0)])))
    assert [f.rule for f in found] == ["hyper/negative-bulk"]
    assert found[0].data["rows"][0]["K0"] == pytest.approx(-0.5)


def test_zero_D2_is_not_listed_among_the_negative_D():
    # reduced polynomial N = 2 (C10, C20, D1, D2) with D1 < 0 and D2 = 0: only D1 is negative
    found = _of(_run(_model(_block("reduced-polynomial-2", [(0.5, 0.01, -0.002, 0.0)]))), "hyper/negative-bulk")
    assert len(found) == 1 and "D1 = -0.002" in found[0].message and "D2" not in found[0].message


def test_hyperfoam_with_a_small_negative_bulk_modulus():
    # hyperfoam N = 1 (mu1, alpha1, nu1) = (1, 2, -2): beta1 = nu1/(1 - 2 nu1) = -0.4 and
    # K0 = 2 mu1 (1/3 + beta1) = -0.1333 (CalculiX User's Manual *HYPERFOAM): negative although above -1
    found = _of(_run(_model(_block("hyperfoam-1", [(1.0, 2.0, -2.0)], kind="hyperfoam"))), "hyper/negative-bulk")
    assert len(found) == 1
    assert found[0].data["rows"][0]["K0"] == pytest.approx(2.0 * (1.0 / 3.0 - 0.4))


def test_unit_system_without_a_confidence_counts_as_confidence_zero():
    # with hyper.unit_min_confidence 0 every inferred unit system is trusted, also one that gives no confidence:
    # the SI limit 1e8 Pa then applies, so mu0 = 5e7 is an elastomer
    cfg = Config.from_mapping({"select": ["hyper/too-compressible"],
                               "thresholds": {"hyper": {"unit_min_confidence": 0.0}}})
    m = _model(_block("neo-hooke", [(2.5e7, 2.0 / (10.0 * 5e7))]),
               unit_system={"name": "SI", "stress_scale_to_pa": 1.0, "declared": False})
    derive_hyper(m, cfg)
    found = run_rules(m, cfg)
    assert len(found) == 1 and found[0].data["elastomer_mu0"] == pytest.approx(1e8)


def test_finding_points_at_the_file_that_holds_the_block():
    # a material opened in the main deck with its *HYPERELASTIC card in an included file: the finding names
    # the included file and the card's line, not the *MATERIAL line
    block = PropertyBlock(kind="hyperelastic", form="neo-hooke", loc=Loc("rubber.inc", 3), card="*HYPERELASTIC",
                          rows=[Row((0.0, 0.001), None, Loc("rubber.inc", 4))])
    found = _run(_model(block))
    assert [(f.rule, f.path, f.line) for f in found] == [("hyper/negative-initial-shear", "rubber.inc", 3)]


def test_unstable_message_names_the_criterion_the_scan_used():
    from linter.physics.hyper_stability import CRITERION

    found = _run(_model(_block("ogden-2", [(0.8, 1.0, -0.3, 4.0, 0.001, 0.0)])), "hyper/unstable")
    assert f"(criterion: {CRITERION}, scanned" in found[0].message and found[0].data["criterion"] == CRITERION
