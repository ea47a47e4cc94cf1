"""plastic/first-point-off-elastic-line, plastic/curve-slope-above-initial, plastic/tangent-modulus-too-high.

Sources: code_aster source bibfor/modelisa/rctrac.F90 (E = sigma_1/eps_1 of a TRACTION curve),
bibfor/modelisa/rcstoc_verif.F90 (messages MODELISA9_59/60/61: positive first point, slopes below the
initial one), code_aster/Messages/compor1.py COMPOR1_54 (ECRO_LINE: H strictly below E). Steel values:
EN 1993-1-1 3.2.6 (E = 210000 N/mm2, nu = 0.3); S355 yield 355 N/mm2 (EN 10025-2).
"""
from builders import Deck

RULES = ("plastic/first-point-off-elastic-line", "plastic/curve-slope-above-initial",
         "plastic/tangent-modulus-too-high")


def _deck(options, rows=()):
    d = Deck(fmt="aster", dialect="code_aster", path="s.comm")
    mat = d.material("S", elastic=[(210000.0, 0.3)])
    d.block(mat, "plastic", "iso", rows, card="TRACTION" if "curve" in options else "ECRO_LINE",
            options=options)
    d.elements("C3D8", 1, elset="ALL")
    d.section("solid", "ALL", "S")
    d.step("static")
    return d


def _curve(eps, sig):
    return {"HARDENING": "", "curve": (list(eps), list(sig)), "E": 210000.0}


def test_curve_on_the_elastic_line_is_clean():
    # first point 355/210000 on the elastic line, then a hardening slope of about 1000 MPa
    assert _deck(_curve([355 / 210000, 0.1], [355.0, 455.0])).run(*RULES) == []


def test_first_point_off_the_elastic_line_is_a_warning():
    found = _deck(_curve([0.0001, 0.1], [27.3, 300.0])).run(*RULES)
    assert [(f.rule, f.severity) for f in found] == [("plastic/first-point-off-elastic-line", "warning")]
    assert found[0].data["ratio"] == 273000.0


def test_first_point_at_zero_strain_is_an_error():
    found = _deck(_curve([0.0, 0.1], [355.0, 455.0])).run(*RULES)
    assert [(f.rule, f.severity) for f in found] == [("plastic/first-point-off-elastic-line", "error")]


def test_slope_above_the_initial_slope():
    # initial slope 210000; 0.002 -> 0.0021 adds 100 MPa: slope 1e6 > 210000 (MODELISA9_61)
    found = _deck(_curve([0.002, 0.0021, 0.05], [420.0, 520.0, 600.0])).run(*RULES)
    assert [f.rule for f in found] == ["plastic/curve-slope-above-initial"]
    assert found[0].data["segments"][0]["strain"] == 0.0021


def test_linear_hardening_slope_at_or_above_e():
    opts = {"HARDENING": "", "linear": True, "D_SIGM_EPSI": [(None, 210000.0)]}
    found = _deck(opts, rows=[(355.0, 0.0)]).run(*RULES)
    assert [(f.rule, f.severity) for f in found] == [("plastic/tangent-modulus-too-high", "error")]
    ok = {"HARDENING": "", "linear": True, "D_SIGM_EPSI": [(None, 2000.0)]}
    assert _deck(ok, rows=[(355.0, 0.0)]).run(*RULES) == []


def test_negative_linear_slope_is_softening():
    opts = {"HARDENING": "", "linear": True, "D_SIGM_EPSI": [(None, -100.0)]}
    found = _deck(opts, rows=[(355.0, 0.0)]).run(*RULES)
    assert [(f.rule, f.severity) for f in found] == [("plastic/tangent-modulus-too-high", "warning")]


def test_ecro_line_with_zero_yield_is_reported_by_the_table_rule():
    opts = {"HARDENING": "", "linear": True, "D_SIGM_EPSI": [(None, 2000.0)]}
    found = _deck(opts, rows=[(0.0, 0.0)]).run("plastic/zero-yield")
    assert [f.rule for f in found] == ["plastic/zero-yield"]
