"""Every rule family fires on a material-file model built to trigger it, at the line of the offending value.

Each case is a material file with the offending line marked ``# <-``; the mesh is two hexahedra
written by meshio (region 1 and 2 by the cell-data array ``region``).
"""
from __future__ import annotations

import textwrap
from pathlib import Path

import numpy as np
import pytest

meshio = pytest.importorskip("meshio")

from linter.check import check_file  # noqa: E402
from linter.config import Config  # noqa: E402
from linter.parsers.includes import IncludePolicy  # noqa: E402

HEAD = """\
deckwarden: 1
mesh: two.vtu
"""
REGIONS = """\
regions:
  - {cells: {cell_data: region, value: 1}, material: STEEL, formulation: reduced}
  - {cells: {cell_data: region, value: 2}, material: OTHER, formulation: reduced}
"""
STEEL = "  STEEL: {elastic: {E: 210000, nu: 0.3}, density: 7.85e-9}\n"

CASES = {
    "elastic/poisson-out-of-range": STEEL + "  OTHER:\n    elastic: {E: 1000, nu: 0.52}  # <-\n",
    "aniso/constant-bounds": STEEL + "  OTHER:\n    elastic: {type: engineering, E1: 1000, E2: 1000, E3: 1000, "
                                     "nu12: 1.5, nu13: 0.3, nu23: 0.3, G12: 400, G13: 400, G23: 400}  # <-\n",
    "hyper/negative-initial-shear": STEEL + "  OTHER:\n    hyperelastic: {model: neo-hooke, C10: -0.5, D1: 0.1}  # <-\n",
    "plastic/first-strain-not-zero": STEEL + "  OTHER:\n    elastic: {E: 70000, nu: 0.33}\n"
                                             "    plastic: [[250, 0.01], [300, 0.05]]  # <-\n",
    "property/nonpositive": STEEL + "  OTHER:\n    elastic: {E: 70000, nu: 0.33}\n    density: -2.7e-9  # <-\n",
    "units/gravity": STEEL + "  OTHER: {elastic: {E: 70000, nu: 0.33}, density: 2.7e-9}\n",
    "element/volumetric-locking": "  STEEL: {elastic: {E: 210000, nu: 0.3}}\n"
                                  "  OTHER:  # <-\n    elastic: {E: 10, nu: 0.499}\n",
    "model/undefined-material": STEEL + "  OTHER: {elastic: {E: 70000, nu: 0.33}}\n",
    "analysis/missing-density": STEEL + "  OTHER:  # <-\n    elastic: {E: 70000, nu: 0.33}\n",
    "parse/unknown-key": STEEL + "  OTHER:\n    elastic: {E: 70000, nu: 0.33}\n    densty: 2.7e-9  # <-\n",
}
TAILS = {
    "element/volumetric-locking": REGIONS.replace("material: OTHER, formulation: reduced", "material: OTHER, "
                                                  "formulation: full"),
    "model/undefined-material": REGIONS.replace("material: OTHER, formulation: reduced}",
                                                "material: OTHR, formulation: reduced}  # <-"),
    "analysis/missing-density": REGIONS + "analysis:\n  - {kind: frequency}\n",
    "units/gravity": REGIONS + "analysis:\n  - kind: static\n    gravity: [0, 0, -9.81]  # <-\n",
}


@pytest.fixture(scope="module")
def mesh_dir(tmp_path_factory) -> Path:
    d = tmp_path_factory.mktemp("two")
    pts = np.array([[x, y, z] for z in (0, 1) for y in (0, 1) for x in (0, 1, 2)], float)

    def n(x, y, z):
        return z * 6 + y * 3 + x

    hexes = np.array([[n(i, 0, 0), n(i + 1, 0, 0), n(i + 1, 1, 0), n(i, 1, 0),
                       n(i, 0, 1), n(i + 1, 0, 1), n(i + 1, 1, 1), n(i, 1, 1)] for i in (0, 1)])
    meshio.write(d / "two.vtu", meshio.Mesh(pts, [("hexahedron", hexes)], cell_data={"region": [np.array([1, 2])]}))
    return d


def run_case(folder: Path, name: str, text: str):
    path = folder / name
    path.write_text(text)
    lines = [i + 1 for i, line in enumerate(text.splitlines()) if "# <-" in line]
    report = check_file(str(path), "mesh", Config(), IncludePolicy())
    return report, lines


@pytest.mark.parametrize("rule_id", sorted(CASES))
def test_rule_family_fires_at_the_yaml_line(mesh_dir, rule_id):
    text = HEAD + "materials:\n" + CASES[rule_id] + TAILS.get(rule_id, REGIONS)
    report, (line,) = run_case(mesh_dir, rule_id.replace("/", "_") + ".yaml", text)
    got = [f for f in report.findings if f.rule == rule_id]
    assert got, (rule_id, [(f.rule, f.line, f.message) for f in report.findings])
    assert any(f.line == line and f.path.endswith(".yaml") for f in got), \
        [(f.rule, f.line, f.message) for f in got]
    assert not any(f.rule.startswith("internal/") for f in report.findings)


def test_clean_model_has_no_error(mesh_dir):
    text = HEAD + "materials:\n" + STEEL + "  OTHER: {elastic: {E: 70000, nu: 0.33}, density: 2.7e-9}\n" + REGIONS
    report, _ = run_case(mesh_dir, "clean.yaml", text)
    assert not [f for f in report.findings if f.severity == "error"], \
        [(f.rule, f.line, f.message) for f in report.findings]


def test_missing_formulation_on_a_nearly_incompressible_material(mesh_dir):
    text = (HEAD + "materials:\n" + STEEL + "  OTHER: {elastic: {E: 10, nu: 0.499}}\nregions:\n"
            "  - {cells: {cell_data: region, value: 1}, material: STEEL, formulation: reduced}\n"
            "  - {cells: {cell_data: region, value: 2}, material: OTHER}\n")
    report, _ = run_case(mesh_dir, "noform.yaml", text)
    (f,) = [f for f in report.findings if f.rule == "element/volumetric-locking"]
    assert "cannot decide" in f.message and f.data["regions_without_formulation"] == [8]


def test_selector_matching_no_cells_and_missing_mesh(mesh_dir):
    text = textwrap.dedent("""\
        deckwarden: 1
        mesh: two.vtu
        materials:
          STEEL: {elastic: {E: 210000, nu: 0.3}}
        regions:
          - material: STEEL
            cells: {cell_data: region, value: 7}
          - material: STEEL
            cells: {cell_data: regoin, value: 1}
        """)
    report, _ = run_case(mesh_dir, "nomatch.yaml", text)
    empty = {f.line: f.message for f in report.findings if f.rule == "model/undefined-set"}
    assert set(empty) == {7, 9}
    assert "no cell has that value" in empty[7] and "has no cell data of that name" in empty[9]
    report, _ = run_case(mesh_dir, "nomesh.yaml", text.replace("two.vtu", "gone.vtu"))
    (f,) = [f for f in report.findings if f.rule == "parse/missing-include"]
    assert f.line == 2 and "gone.vtu" in f.message
    # nothing that only follows from the missing mesh is reported again
    assert not [f for f in report.findings if f.rule.startswith("model/")], report.findings


def test_explicit_step_measures_the_cells(mesh_dir):
    # the two hexahedra of mesh_dir are unit cubes: their smallest edge is 1 by construction
    text = HEAD + "materials:\n" + STEEL + "  OTHER: {elastic: {E: 70000, nu: 0.33}, density: 2.7e-9}\n" + REGIONS \
        + "analysis:\n  - {kind: dynamic-explicit}\n"
    report, _ = run_case(mesh_dir, "explicit.yaml", text)
    got = {f.material: f.data for f in report.findings if f.rule == "analysis/explicit-time-step"}
    assert got["STEEL"]["length"] == pytest.approx(1.0) and not got["STEEL"]["length_estimated"]
    # dt = L / c_d, c_d = sqrt(M / rho), M = E (1 - nu) / ((1 + nu)(1 - 2 nu)) (Belytschko, Liu & Moran 2000
    # ch. 6): E 210000 MPa, nu 0.3, rho 7.85e-9 t/mm^3 give c_d = 6.0010e6 mm/s, dt = 1.666e-7 s for L = 1 mm
    M = 210000 * 0.7 / (1.3 * 0.4)
    assert got["STEEL"]["dt"] == pytest.approx(1.0 / (M / 7.85e-9) ** 0.5, rel=1e-6)


def test_declared_units_of_the_material_file(mesh_dir):
    text = HEAD.replace("deckwarden: 1\n", "deckwarden: 1\nunits: furlongs\n") + "materials:\n" + STEEL \
        + "  OTHER: {elastic: {E: 70000, nu: 0.33}, density: 2.7e-9}\n" + REGIONS
    report, _ = run_case(mesh_dir, "units.yaml", text)
    (f,) = [f for f in report.findings if f.rule == "units/undetermined"]
    assert f.severity == "error" and f.line == 2 and "furlongs" in f.message
    report, _ = run_case(mesh_dir, "units2.yaml", text.replace("furlongs", "m-kg-s"))
    assert report.unit_system["name"] == "m-kg-s" and report.unit_system["declared"]
    # a declared SI system makes the mm-tonne-s values implausible
    assert any(f.rule.startswith("units/") and f.severity in ("error", "warning") for f in report.findings)


def test_suppression_comment_in_the_material_file(mesh_dir, monkeypatch):
    from linter import suppressions

    scanned = []
    real = suppressions.scan_file
    monkeypatch.setattr(suppressions, "scan_file", lambda path, prefixes: scanned.append(path) or real(path, prefixes))
    text = (HEAD + "materials:\n" + STEEL + "  # deckwarden accept elastic/poisson-out-of-range because test data\n"
            "  OTHER:\n    elastic: {E: 1000, nu: 0.52}\n" + REGIONS)
    report, _ = run_case(mesh_dir, "accepted.yaml", text)
    (f,) = [f for f in report.findings if f.rule == "elastic/poisson-out-of-range"]
    assert f.suppression is not None and f.suppression["reason"] == "test data"
    assert scanned and all(p.endswith(".yaml") for p in scanned)   # the mesh is data: never scanned
