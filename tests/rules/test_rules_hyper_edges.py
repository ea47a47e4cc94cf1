"""hyper/unstable at its boundaries: the analytic shortcut must not hide a loss of stability, and an unstable
interval that only touches the working range is reported as outside it."""
from __future__ import annotations

from linter.config import Config
from linter.derived.hyper import derive_hyper
from linter.model import DeckModel, Loc, Material, PropertyBlock, Row
from linter.runner import run_rules

P = "deck.inp"


def _model(form, row):
    blk = PropertyBlock(kind="hyperelastic", form=form, loc=Loc(P, 20), card="*HYPERELASTIC",
                        rows=[Row(tuple(float(x) for x in row), None, Loc(P, 21))])
    m = DeckModel(path=P, format="keyword", dialect="calculix")
    m.materials["RUBBER"] = Material(name="Rubber", key="RUBBER", loc=Loc(P, 19), blocks=[blk])
    return m


def _unstable(model, **hyper_thresholds):
    cfg = Config.from_mapping({"select": ["hyper"], "thresholds": {"hyper": hyper_thresholds}}) \
        if hyper_thresholds else Config(select=["hyper"])
    derive_hyper(model, cfg)
    return [f for f in run_rules(model, cfg) if f.rule == "hyper/unstable"]


def test_mooney_rivlin_with_negative_c10_is_scanned_and_unstable_inside():
    # C10 = -0.1, C01 = 0.6 (mu0 = 1 > 0): the stability scan finds equibiaxial loss from stretch ~1.565
    # (Drucker/Hill criterion; the C10 >= 0 shortcut of arXiv:2511.13792 does not apply)
    found = _unstable(_model("mooney-rivlin", (-0.1, 0.6, 0.001)))
    assert len(found) == 1 and found[0].severity == "error"
    assert found[0].data["rows"][0]["in_working_range"] is True
    assert "equibiaxial unstable" in found[0].message


OGDEN = ("ogden-2", (0.8, 1.0, -0.3, 4.0, 0.001, 0.0))    # D-conv. mu = (0.8, -0.3), alpha = (1, 4)


def test_loss_touching_the_working_range_end_is_outside():
    # Ogden mu = (0.8, -0.3), alpha = (1, 4) is unstable in every mode from the scan start 0.1 (UT up to 0.52)
    # and up to the scan end 4.0 (UT from 1.4816, onset computed on the Hill condition, arXiv:2511.13792): a working range 4.0-5.0 or 0.05-0.1
    # shares only one point with those intervals, so nothing is lost inside it (common practice: open overlap)
    for wr in ([4.0, 5.0], [0.05, 0.1]):
        found = _unstable(_model(*OGDEN), working_range=wr)
        assert len(found) == 1 and found[0].severity == "warning", wr
        assert found[0].data["rows"][0]["in_working_range"] is False and "only outside" in found[0].message
    for wr in ([3.9, 5.0], [0.05, 0.11]):
        found = _unstable(_model(*OGDEN), working_range=wr)
        assert found[0].severity == "error" and found[0].data["rows"][0]["in_working_range"] is True, wr
