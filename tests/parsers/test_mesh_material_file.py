"""The material file (``deckwarden: 1``): property forms, lines of every value, bad input, JSON Schema."""
from __future__ import annotations

import json
import textwrap
from importlib import resources

import pytest
import yaml

from linter.parsers.includes import IncludePolicy
from linter.model import BLOCK_LAYOUTS, PROCEDURES
from linter.parsers import ParseOptions
from linter.parsers import mesh as mesh_parser

FULL = textwrap.dedent("""\
    deckwarden: 1
    units: mm-tonne-s
    title: PV40 pump, casing and seal
    materials:
      STEEL:
        elastic: {E: 210000, nu: 0.3}
        density: 7.85e-9
        expansion: {alpha: 1.2e-5, reference: 20}
      HOT:
        elastic:
          - {T: 20, E: 200000, nu: 0.3}
          - {T: 400, E: 170000, nu: 0.31}
        conductivity: {type: ortho, k11: 40, k22: 40, k33: 30}
        specific_heat: [{T: 20, c: 4.6e8}, {T: 400, c: 5.5e8}]
      SEAL:
        hyperelastic: {model: mooney-rivlin, C10: 0.5, C01: 0.1}
      FOAM:
        hyperfoam: {model: hyperfoam-1, mu1: 0.1, alpha1: 8, nu1: 0.1}
      LAMINA:
        elastic: {type: engineering, E1: 1.4e5, E2: 1.0e4, E3: 1.0e4, nu12: 0.3, nu13: 0.3, nu23: 0.45,
                  G12: 5000, G13: 5000, G23: 3500}
      PLATE:
        elastic: {E: 70000, nu: 0.33}
        plastic: [[250, 0.0], [300, 0.05, 20], {stress: 320, plastic_strain: 0.1}]
    regions:
      - cells: {physical: housing}
        material: STEEL
        formulation: full
      - {cells: {set: seal, dim: 3}, material: SEAL, formulation: hybrid, name: seal ring}
      - {cells: {cell_data: medit:ref, value: 3}, material: PLATE, section: shell}
      - {cells: {all: true}, material: HOT, orientation: radial}
    analysis:
      - kind: static
        gravity: [0, 0, -9810]
        temperature: {initial: 20, final: 120}
      - {kind: frequency, name: modes}
      - {kind: heat-transient, temperature: 300, nlgeom: false}
    """)


def parse_text(tmp_path, text: str, name: str = "model.yaml"):
    p = tmp_path / name
    p.write_text(text)
    opts = ParseOptions(dialect="meshio", include=IncludePolicy(root=None), display_path=str(p))
    return mesh_parser.parse(str(p), opts)


def line_of(text: str, needle: str) -> int:
    return next(i + 1 for i, line in enumerate(text.splitlines()) if needle in line)


def test_full_file_fills_the_neutral_model(tmp_path):
    m = parse_text(tmp_path, FULL)
    assert not m.issues, [i.message for i in m.issues]
    steel = m.materials["STEEL"]
    assert [(b.kind, b.form) for b in steel.blocks] == [("elastic", "iso"), ("density", "iso"), ("expansion", "iso")]
    assert steel.first("elastic").rows[0].values == (210000.0, 0.3)
    assert steel.first("expansion").options == {"ZERO": 20.0}
    assert steel.first("density").loc.line == line_of(FULL, "density: 7.85e-9")
    hot = m.materials["HOT"]
    assert hot.first("elastic").temperatures().tolist() == [20.0, 400.0]
    assert [r.loc.line for r in hot.first("elastic").rows] == [line_of(FULL, "T: 20, E"), line_of(FULL, "T: 400, E")]
    assert hot.first("conductivity").form == "ortho" and hot.first("conductivity").rows[0].values == (40, 40, 30)
    seal = m.materials["SEAL"].first("hyperelastic")
    assert seal.form == "mooney-rivlin" and seal.rows[0].values == (0.5, 0.1, 0.0) and seal.rows[0].blanks == (2,)
    assert m.materials["FOAM"].first("hyperfoam").form == "hyperfoam-1"
    lam = m.materials["LAMINA"].first("elastic")
    assert lam.form == "engineering" and dict(zip(lam.layout, lam.rows[0].values))["G23"] == 3500
    pl = m.materials["PLATE"].first("plastic")
    assert [r.values for r in pl.rows] == [(250, 0.0), (300, 0.05), (320, 0.1)]
    assert [r.temperature for r in pl.rows] == [None, 20, None]
    # analysis: procedure kinds of the neutral model, gravity, temperatures
    assert [p.kind for _s, p in m.procedures()] == ["static", "frequency", "heat-transient"]
    g = m.steps[0].loads[0]
    assert g.kind == "gravity" and g.value == 9810 and g.vector == (0, 0, -9810)
    assert g.loc.line == line_of(FULL, "gravity:")
    assert [ld.value for ld in m.initial_temperatures] == [20]
    assert [ld.value for ld in m.steps[0].loads if ld.kind == "temperature"] == [120]
    assert [ld.value for ld in m.steps[2].loads] == [300]
    assert m.steps[1].name == "modes"
    assert m.extras["declared_units"] == "mm-tonne-s"
    # no mesh named: regions are recorded as not checked, no section is made
    assert not m.sections and m.unchecked


BAD = [
    # (text, issue code, the text on the line it must point at)
    ("deckwarden: 1\nmaterials:\n  A:\n    elastc: {E: 1, nu: 0.3}\n", "unknown-key", "elastc"),
    ("deckwarden: 1\nmaterials:\n  A:\n    elastic: {E: 1, nu: 0.3, Nu: 2}\n", "unknown-key", "Nu: 2"),
    ("deckwarden: 1\nmesh_file: a.msh\n", "unknown-key", "mesh_file"),
    ("deckwarden: 1\nmaterials:\n  A:\n    elastic: {E: stiff, nu: 0.3}\n", "malformed-data", "stiff"),
    ("deckwarden: 1\nmaterials:\n  A:\n    elastic: {E: '210000', nu: 0.3}\n", "malformed-data", "'210000'"),
    ("deckwarden: 1\nmaterials:\n  A:\n    elastic: {E: 1}\n", "malformed-data", "elastic: {E: 1}"),
    ("deckwarden: 1\nmaterials:\n  A:\n    elastic: 210000\n", "malformed-data", "elastic: 210000"),
    ("deckwarden: 1\nmaterials:\n  A:\n    elastic: {type: ortho2, E: 1}\n", "malformed-data", "ortho2"),
    ("deckwarden: 1\nmaterials:\n  A:\n    hyperelastic: {C10: 1}\n", "malformed-data", "hyperelastic"),
    ("deckwarden: 1\nmaterials:\n  A:\n    density: .nan\n", "value-not-finite", ".nan"),
    ("deckwarden: 1\nmaterials:\n  A:\n    plastic: [[250, 0, 20, 1]]\n", "malformed-data", "plastic"),
    ("deckwarden: 1\nmaterials: [A, B]\n", "malformed-data", "materials"),
    ("deckwarden: 1\nregions:\n  - material: A\n", "malformed-data", "material: A"),
    ("deckwarden: 1\nregions:\n  - {cells: {physical: a, set: b}, material: A}\n", "malformed-data", "physical"),
    ("deckwarden: 1\nregions:\n  - {cells: {all: true}, material: A, section: brick}\n", "malformed-data", "brick"),
    ("deckwarden: 1\nanalysis:\n  - kind: statics\n", "malformed-data", "statics"),
    ("deckwarden: 1\nanalysis:\n  - kind: static\n    gravity: [0, -9.81]\n", "malformed-data", "gravity"),
    ("deckwarden: 2\n", "malformed-data", "deckwarden: 2"),
    ("deckwarden: 1\nmaterials:\n  A: &x {density: 1}\n  B: *x\n", "malformed-data", "B: *x"),
    ("deckwarden: 1\nmaterials:\n  A: {density: [1\n", "malformed-data", None),
]


@pytest.mark.parametrize("text,code,needle", BAD)
def test_bad_input_is_an_issue_with_its_line(tmp_path, text, code, needle):
    m = parse_text(tmp_path, text)
    got = [i for i in m.issues if i.code == code]
    assert got, [(i.code, i.message) for i in m.issues]
    n_lines = text.count("\n")
    for iss in got:
        assert 1 <= iss.loc.line <= n_lines and iss.loc.path.endswith("model.yaml")
    if needle is not None:
        assert line_of(text, needle) in [i.loc.line for i in got], [(i.loc.line, i.message) for i in got]


def test_plain_exponent_numbers_are_numbers(tmp_path):
    # YAML 1.1 reads 2.1e5 (no sign in the exponent) as text; the material file reads it as a number
    m = parse_text(tmp_path, "deckwarden: 1\nmaterials:\n  A: {elastic: {E: 2.1e5, nu: 3e-1}}\n")
    assert not m.issues and m.materials["A"].first("elastic").rows[0].values == (210000.0, 0.3)


def test_duplicate_material_keeps_both_definitions(tmp_path):
    m = parse_text(tmp_path, "deckwarden: 1\nmaterials:\n  A: {density: 1}\n  A: {density: 2}\n")
    assert m.materials["A"].loc.line == 3 and [d.loc.line for d in m.duplicate_materials] == [4]


def test_sniff_only_claims_material_files():
    assert mesh_parser.sniff(b"# PV40\ndeckwarden: 1\nmaterials: {}\n") == 1.0
    assert mesh_parser.sniff(b"deckwarden: 2\n") > 0.3    # read, and told the version is not supported
    assert mesh_parser.sniff(b"fail_on: error\nrules: {}\n") == 0.0
    assert mesh_parser.sniff(b"name: ci\non: [push]\n") == 0.0
    assert mesh_parser.sniff(b"  deckwarden: 1\n") == 0.0   # not a top-level key


# ------------------------------------------------------------------------------ JSON Schema


@pytest.fixture(scope="module")
def validator():
    jsonschema = pytest.importorskip("jsonschema")
    schema = json.loads(resources.files("linter").joinpath("data/material-file.schema.json").read_text())
    jsonschema.Draft202012Validator.check_schema(schema)
    return jsonschema.Draft202012Validator(schema)


def test_schema_accepts_the_full_file_and_the_sample(validator):
    from pathlib import Path

    assert not list(validator.iter_errors(yaml.safe_load(FULL)))
    samples = sorted((Path(__file__).resolve().parents[2] / "sample_decks").glob("*.yaml"))
    docs = [yaml.safe_load(p.read_text()) for p in samples]
    docs = [d for d in docs if isinstance(d, dict) and d.get("deckwarden") == 1]
    assert docs, "no material file among the samples"
    for d in docs:
        assert not list(validator.iter_errors(d))


#: documents the schema cannot judge as the parser does: NaN (a number to JSON Schema), aliases and broken
#: YAML (refused before validation), a quoted number (JSON has no "quoted": the schema accepts numeric text)
SCHEMA_BLIND = (".nan", "&x", "[1\n", "'210000'")


@pytest.mark.parametrize("text,code,needle", [b for b in BAD if not any(x in b[0] for x in SCHEMA_BLIND)])
def test_schema_rejects_what_the_parser_reports(validator, text, code, needle):
    # the hand-written checks of the parser and the shipped schema agree on these documents
    doc = yaml.safe_load(text)
    assert list(validator.iter_errors(doc)), text


def test_schema_uses_the_neutral_model_names(validator):
    schema = validator.schema
    rows = schema["$defs"]["elastic_row"]["oneOf"]
    got = {r["title"]: set(r["properties"]) - {"type", "T"} for r in rows}
    for form in ("iso", "engineering", "ortho", "aniso"):
        assert got[f"elastic {form}"] == set(BLOCK_LAYOUTS[("elastic", form)])
    hyper = {r["properties"]["model"]["const"] for r in schema["$defs"]["hyperelastic_row"]["oneOf"]}
    assert hyper == {f for k, f in BLOCK_LAYOUTS if k == "hyperelastic"}
    assert set(schema["$defs"]["step"]["properties"]["kind"]["enum"]) == set(PROCEDURES)
