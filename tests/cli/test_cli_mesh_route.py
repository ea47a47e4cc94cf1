"""The command line on the material-file route: a YAML model, a mesh with --materials, folder walks."""
from __future__ import annotations

import json
import shutil
from pathlib import Path

import pytest

from linter.cli import main

REPO = Path(__file__).resolve().parents[2]
SAMPLE = REPO / "sample_decks"


@pytest.fixture
def folder(tmp_path, monkeypatch):
    """The PV40 seal-housing sample, a configuration YAML, another YAML and a stray mesh; cwd is that folder."""
    pytest.importorskip("meshio")
    for name in ("pv40_seal_housing.yaml", "pv40_seal_housing.msh"):
        shutil.copy(SAMPLE / name, tmp_path / name)
    shutil.copy(SAMPLE / "pv40_seal_housing.msh", tmp_path / "spare.msh")
    (tmp_path / "deckwarden.yaml").write_text("fail_on: error\n")
    (tmp_path / "ci.yml").write_text("name: ci\non: [push]\n")
    monkeypatch.chdir(tmp_path)
    return tmp_path


def run_json(args, capsys):
    code = main(args + ["--format", "json"])
    return code, json.loads(capsys.readouterr().out)


def test_walking_a_folder_finds_only_material_files(folder, capsys):
    code, doc = run_json(["check", "."], capsys)
    assert [Path(f["path"]).name for f in doc["files"]] == ["pv40_seal_housing.yaml"]
    assert code == 0
    (f,) = doc["files"]
    # the sample's mesh, read by meshio: 430 + 168 quadratic tetrahedra (Gmsh physical groups casing, lip_seal)
    assert f["summary"]["element_types"] == {"TETRA10:FULL": 430, "TETRA10:HYBRID": 168}
    assert f["unit_system"]["name"] == "mm-tonne-s" and f["unit_system"]["declared"]


def test_mesh_with_materials_option(folder, capsys):
    text = (folder / "pv40_seal_housing.yaml").read_text().replace("formulation: hybrid", "formulation: full")
    (folder / "mats.yaml").write_text(text.replace("mesh: pv40_seal_housing.msh", "mesh: elsewhere.msh"))
    code, doc = run_json(["check", "spare.msh", "--materials", "mats.yaml"], capsys)
    (f,) = doc["files"]
    assert f["path"] == "spare.msh" and code == 0
    (lock,) = [x for x in doc["findings"] if x["rule"] == "element/volumetric-locking"]
    assert lock["path"] == "mats.yaml" and lock["line"] == 14   # the LIP_SEAL_EPDM key of the material file


def test_materials_option_refuses_folders_and_missing_files(folder, capsys):
    assert main(["check", ".", "--materials", "pv40_seal_housing.yaml"]) == 2
    assert main(["check", "spare.msh", "--materials", "nope.yaml"]) == 2
    assert "nope.yaml" in capsys.readouterr().err


def test_a_mesh_alone_is_not_a_deck(folder, capsys):
    code = main(["check", "spare.msh", "--format", "line"])
    assert code == 2
    assert "--materials" in capsys.readouterr().out


def test_sample_folder_still_exits_1(capsys):
    pytest.importorskip("meshio")
    code, doc = run_json(["check", str(SAMPLE)], capsys)
    assert code == 1
    assert any(f["path"].endswith("pv40_seal_housing.yaml") and f["format"] == "mesh" for f in doc["files"])


def test_jobs_2_gives_the_same_report(folder, capsys):
    shutil.copy(folder / "pv40_seal_housing.yaml", folder / "second.yaml")
    code1, one = run_json(["check", "."], capsys)
    code2, two = run_json(["check", ".", "--jobs", "2"], capsys)
    assert code1 == code2 == 0
    assert [f["summary"] for f in one["files"]] == [f["summary"] for f in two["files"]]
    assert len(two["files"]) == 2


def test_unreadable_mesh_given_with_materials(folder, capsys):
    (folder / "broken.msh").write_text("$MeshFormat\n4.1 0 8\n$EndMeshFormat\n$Nodes\nnot numbers\n")
    code, doc = run_json(["check", "broken.msh", "--materials", "pv40_seal_housing.yaml"], capsys)
    assert code == 2     # the check is incomplete
    rules = [f["rule"] for f in doc["findings"]]
    assert "parse/include-unreadable" in rules
    # nothing that only follows from the unread mesh is reported again
    assert not [r for r in rules if r.startswith("model/")], rules
