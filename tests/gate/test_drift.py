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
