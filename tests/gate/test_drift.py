"""model/material-drift: the same material with different constants across the decks of one run."""
from __future__ import annotations

import pytest

from linter.check import check_paths
from linter.config import Config

from decks import TET_MESH as MESH


def deck(e: str, name: str = "Shaft Steel") -> str:
    # structural steel E = 210000 N/mm2, nu = 0.3, rho = 7.85e-9 t/mm3 (EN 1993-1-1 3.2.6; mm-tonne-s)
    return (MESH + f"*MATERIAL,NAME={name}\n*ELASTIC\n{e},0.3\n*DENSITY\n7.85e-9\n"
            f"*SOLID SECTION,ELSET=E1,MATERIAL={name}\n*STEP\n*STATIC\n*END STEP\n")


def drift(tmp_path, *decks):
    for i, text in enumerate(decks):
        (tmp_path / f"d{i}.inp").write_text(text)
    cfg = Config.from_mapping({"units": "mm-tonne-s"})
    res = check_paths([str(tmp_path)], cfg)
    return [f for f in res.findings if f.rule == "model/material-drift"]


def test_two_decks_that_disagree(tmp_path):
    # 200000 against 210000 is 4.8 %, far above the 0.5 % tolerance of thresholds.yaml
    found = drift(tmp_path, deck("210000."), deck("210000."), deck("200000.", name="SHAFT_STEEL"))
    (f,) = found
    assert f.severity == "warning" and f.path.endswith("d2.inp") and f.line == 8
    assert f.data["differences"] == [{"property": "elastic", "column": "E", "row": 1, "value": 200000.0,
                                      "reference": 210000.0}]
    assert len(f.data["decks"]) == 3 and "d0.inp:8" in f.message


def test_two_decks_that_agree_within_tolerance(tmp_path):
    # 210100 against 210000 is 0.05 %: rounding, not drift
    assert drift(tmp_path, deck("210000."), deck("210100.")) == []


def test_other_names_units_and_switching_off(tmp_path):
    assert drift(tmp_path, deck("210000.", name="A"), deck("200000.", name="B")) == []
    for p in tmp_path.glob("*.inp"):
        p.unlink()
    (tmp_path / "d0.inp").write_text(deck("210000."))
    (tmp_path / "d1.inp").write_text(deck("200000."))
    cfg = Config.from_mapping({"units": "mm-tonne-s", "ignore": ["model/material-drift"]})
    assert not [f for f in check_paths([str(tmp_path)], cfg).findings if f.rule == "model/material-drift"]


def test_bulk_material_ids_are_not_names(tmp_path):
    from linter.drift import _key

    assert _key("1") is None and _key(" Shaft steel ") == "SHAFTSTEEL"


def test_tolerance_comes_from_thresholds(tmp_path):
    from linter.config import default_thresholds

    assert default_thresholds()["model"]["drift_rel_tol"] == pytest.approx(5e-3)


def _run(tmp_path, *decks):
    for i, text in enumerate(decks):
        (tmp_path / f"d{i}.inp").write_text(text)
    return check_paths([str(tmp_path)], Config.from_mapping({"units": "mm-tonne-s"}))


def _accepting(comment: str) -> str:
    """The drifting deck with a suppression comment just above its material card."""
    text = deck("200000.")
    return text.replace("*MATERIAL", comment + "\n*MATERIAL", 1)


@pytest.mark.parametrize("comment", [
    "** deckwarden accept model/material-drift because the retrofit keeps the 1998 value",
    "** deckwarden accept model for next because the retrofit keeps the 1998 value",
    "** deckwarden accept model/material-drift for material shaft steel because legacy",
    "** deckwarden accept model/material-drift for file",
])
def test_a_comment_at_the_drifting_deck_accepts_the_drift(tmp_path, comment):
    res = _run(tmp_path, deck("210000."), deck("210000."), _accepting(comment))
    (f,) = [f for f in res.findings if f.rule == "model/material-drift"]
    assert f.path.endswith("d2.inp") and f.suppression is not None
    assert f.suppression["line"] == 8 and f.suppression["path"].endswith("d2.inp")
    assert not [g for g in res.findings if g.rule == "parse/unused-suppression"]


def test_a_drift_comment_that_accepts_nothing_is_reported_after_the_run(tmp_path):
    # the deck with the comment agrees with the others: the comment is stale, in a single run or a run of three
    stale = _accepting("** deckwarden accept model/material-drift")
    res = _run(tmp_path, deck("210000."), deck("210000."), stale.replace("200000.", "210000."))
    (note,) = [f for f in res.findings if f.rule == "parse/unused-suppression"]
    assert note.path.endswith("d2.inp") and note.line == 8 and note.severity == "note"
    for name in ("d0.inp", "d1.inp"):
        (tmp_path / name).unlink()
    single = check_paths([str(tmp_path)], Config.from_mapping({"units": "mm-tonne-s"}))
    assert [f.rule for f in single.findings if f.rule == "parse/unused-suppression"] == ["parse/unused-suppression"]


def test_a_family_comment_that_accepts_a_deck_finding_is_not_stale(tmp_path):
    # "model" also names the per-deck model rules: a duplicate material in the deck uses the comment
    dup = deck("210000.").replace("*SOLID SECTION", "*MATERIAL,NAME=Shaft Steel\n*ELASTIC\n210000.,0.3\n*SOLID SECTION")
    text = "** deckwarden accept model for file\n" + dup
    res = _run(tmp_path, deck("210000."), text)
    assert not [f for f in res.findings if f.rule == "parse/unused-suppression"]
    assert [f for f in res.findings if f.rule.startswith("model/") and f.suppression is not None]


def test_no_inline_suppressions_leaves_the_drift_unaccepted(tmp_path):
    for i, text in enumerate((deck("210000."), _accepting("** deckwarden accept model/material-drift"))):
        (tmp_path / f"d{i}.inp").write_text(text)
    cfg = Config.from_mapping({"units": "mm-tonne-s"})
    cfg.inline_suppressions = False
    (f,) = [f for f in check_paths([str(tmp_path)], cfg).findings if f.rule == "model/material-drift"]
    assert f.suppression is None
