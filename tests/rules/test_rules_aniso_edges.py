"""aniso/* bounds at their end points: a zero modulus, a Poisson bound reached exactly, the 2x2
transverse-shear part, and a condition number equal to the limit."""
from __future__ import annotations

import math

from linter.config import Config
from linter.derived.aniso import derive_aniso
from linter.model import DeckModel, Loc, Material, MaterialRef, PropertyBlock, Row, Section
from linter.rules.aniso import bound_failures
from linter.runner import run_rules

P = "deck.bdf"
# orthotropic stability (Lempriere 1968): E_i > 0, G_ij > 0 and nu_ij^2 E_j/E_i < 1


def test_modulus_bounds_at_zero():
    assert bound_failures({"moduli": {"E1": 0.0}}, "main") == ["E1 = 0 <= 0"]
    assert bound_failures({"moduli": {"E1": 0.5, "G12": 1e-9}}, "main") == []
    assert bound_failures({"moduli": {"E1": -0.5}}, "main") == ["E1 = -0.5 <= 0"]
    assert bound_failures({"moduli": {"E1": math.nan}}, "main") == ["E1 = nan <= 0"]
    # the 2x2 transverse-shear part of a shell material ignores the in-plane moduli
    assert bound_failures({"moduli": {"E1": 0.0}}, "transverse-shear") == []


def test_transverse_shear_moduli_blank_zero_positive():
    # MAT8 G1Z/G2Z: blank means rigid transverse shear, zero is an error (NASTRAN-95 User's Manual MAT8 remarks)
    assert bound_failures({"moduli": {"G1Z": math.nan, "G2Z": 0.5}}, "main") == []
    got = bound_failures({"moduli": {"G1Z": 0.0, "G2Z": 5.0}}, "main")
    assert len(got) == 1 and got[0].startswith("G1Z = 0 <= 0")


def test_poisson_bound_reached_exactly_fails():
    got = bound_failures({"moduli": {"E1": 1.0, "E2": 4.0}, "pairs": {"nu12^2*E2/E1": 1.0}}, "main")
    assert got == ["nu12^2 * E2/E1 = 1 >= 1 (|nu12| must be below sqrt(E1/E2) = 0.5)"]
    assert bound_failures({"moduli": {"E1": 1.0, "E2": 4.0}, "pairs": {"nu12^2*E2/E1": 0.9999}}, "main") == []
    got = bound_failures({"moduli": {"E1": 0.25, "E2": 0.5}, "pairs": {"nu12^2*E2/E1": 2.0}}, "main")
    assert got == ["nu12^2 * E2/E1 = 2 >= 1 (|nu12| must be below sqrt(E1/E2) = 0.7071)"]
    # the bound's value is quoted only when both moduli are positive
    for moduli in ({"E1": 1.0, "E2": 0.0}, {"E1": 0.0, "E2": 4.0}, {"E1": 1.0}, {"E2": 4.0}):
        got = bound_failures({"moduli": moduli, "pairs": {"nu12^2*E2/E1": 2.0}}, "main")
        assert got[-1].endswith("must be below sqrt(E1/E2))"), moduli
    assert bound_failures({"moduli": {}, "pairs": {"nu12^2*E2/E1": 2.0}}, "transverse-shear") == []


def _shell_model(vals, role, card="MAT8", form="lamina"):
    blk = PropertyBlock(kind="elastic", form=form, loc=Loc(P, 10), card=card,
                        rows=[Row(tuple(float(x) for x in vals), None, Loc(P, 11))])
    m = DeckModel(path=P, format="bulk", dialect="mystran")
    m.materials["M"] = Material(name="M", key="M", loc=Loc(P, 9), blocks=[blk])
    m.sections.append(Section(kind="shell", card="PSHELL", elset="PID 1", elset_name="PID 1", loc=Loc(P, 30),
                              materials=[MaterialRef(role=role, name="M", key="M", loc=Loc(P, 30))]))
    return m


def _run(model, limit=None):
    cfg = Config(select=["aniso"])
    if limit is not None:
        cfg.thresholds["aniso"]["condition_limit"] = limit
    derive_aniso(model, cfg)
    return run_rules(model, cfg)


def test_lamina_transverse_shear_is_not_checked_for_conditioning():
    # a ply with a tiny transverse shear modulus: its 2x2 part as MID3 is not conditioning-checked ...
    ply = (181.0, 10.3, 0.28, 7.17, 1e-9, 5.0)
    assert _run(_shell_model(ply, "transverse-shear")) == []
    # ... while the same ply as membrane material is, when its own stiffness spans the limit
    found = _run(_shell_model((181.0, 1e-9, 0.0, 7.17, math.nan, math.nan), "membrane"))
    assert [f.rule for f in found] == ["aniso/ill-conditioned"]
    assert "transverse-shear" not in found[0].message


def test_transverse_shear_wording():
    found = _run(_shell_model((181.0, 10.3, 0.28, 7.17, 0.0, 5.0), "transverse-shear"))
    assert "(as transverse-shear material: 2x2 part)" in found[0].message
    found = _run(_shell_model((181.0, 0.0, 0.28, 7.17, 5.0, 5.0), "membrane"))
    assert "transverse-shear" not in found[0].message


def test_condition_equal_to_the_limit_is_not_reported():
    ply = (181.0, 1e-6, 0.0, 7.17, math.nan, math.nan)
    m = _shell_model(ply, "membrane")
    found = _run(m)
    cond = found[0].data["rows"][0]["condition"]
    assert _run(_shell_model(ply, "membrane"), limit=cond) == []
    assert len(_run(_shell_model(ply, "membrane"), limit=cond * (1 - 1e-9))) == 1


def test_threshold_changes_stay_in_their_configuration():
    a = Config()
    a.thresholds["aniso"]["condition_limit"] = 1.0
    assert Config().thresholds["aniso"]["condition_limit"] != 1.0
