"""Noise on real decks: misspelt keywords, files that are no deck, missing mesh includes, a zero
expansion coefficient, modal steps on the modes of a heat-frequency step, a data line with a stray '*'.

How CalculiX reads these was settled with ccx 2.20 (``ccx -i JOB``): an unknown card is skipped with
"card image cannot be interpreted" together with its data lines, and later material cards still apply.
"""
from __future__ import annotations

import random

from linter.check import check_paths
from linter.config import Config
from linter.findings import exit_code

from decks import CUBE_NODES

HEAD = "*NODE\n" + CUBE_NODES + "*ELEMENT,TYPE=C3D8,ELSET=EALL\n1,1,2,3,4,5,6,7,8\n*NSET,NSET=NALL,GENERATE\n1,8,1\n"


def run(paths, **cfg):
    return check_paths([str(p) for p in paths], Config(**cfg))


def by_rule(result, rule):
    return [f for f in result.findings if f.rule == rule]


def test_misspelt_keywords_warn_with_the_closest(write_deck):
    # lines: 1-13 mesh; 14 *MATERIAL; 15 *ELASTIC; 17 *DENISTY; 19 *EXPANSOIN
    p = write_deck("pv40_impeller.inp", HEAD + "*MATERIAL,NAME=PV40_STEEL\n*ELASTIC\n210000.,0.3\n*DENISTY\n7.85e-9\n"
                   "*EXPANSOIN\n1.2e-5\n*DENSITY\n7.85e-9\n*SOLID SECTION,ELSET=EALL,MATERIAL=PV40_STEEL\n"
                   "*STEP\n*FREQUENCY\n10\n*END STEP\n")
    r = run([p], units="mm-tonne-s")
    found = {f.line: f for f in by_rule(r, "parse/unknown-keyword")}
    assert set(found) == {17, 19}, r.findings
    assert all(f.severity == "warning" for f in found.values())
    assert "did you mean *DENSITY?" in found[17].message and "did you mean *EXPANSION?" in found[19].message
    # the solver skips the bad card but the material stays open: the *DENSITY below still belongs to it
    assert not by_rule(r, "parse/misplaced-card") and not by_rule(r, "analysis/missing-density"), r.findings


def test_garbage_named_inp_is_not_a_deck(write_deck):
    rng = random.Random(7)
    chars = "abcdefghijklmnopqrstuvwxyz0123456789,.*;:=- \n"
    p = write_deck("pv40_dump.inp", "".join(rng.choice(chars) for _ in range(300_000)))
    assert sum(1 for ln in p.read_text().splitlines() if ln.startswith("*")) > 50   # many '*' lines
    r = run([p])
    assert [f.rule for f in r.findings] == ["parse/not-a-deck"], [f.rule for f in r.findings][:5]
    assert exit_code(r, "error") == 2


def test_missing_mesh_includes_one_finding_each_and_incomplete(write_deck):
    p = write_deck("pv40_weld.inp", "*INCLUDE, INPUT=pv40_all.msh\n*INCLUDE, INPUT=pv40_flange.nam\n"
                   "*BOUNDARY\n*INCLUDE, INPUT=pv40_sym.bou\n*MATERIAL, NAME=STEEL\n*ELASTIC\n210000,0.3\n"
                   "*EXPANSION\n12e-6\n*SOLID SECTION, ELSET=Eall, MATERIAL=STEEL\n"
                   "*INITIAL CONDITIONS, TYPE=TEMPERATURE\nNall, 0\n*STEP\n*STATIC\n*TEMPERATURE\nNseam,-1000\n"
                   "*END STEP\n")
    r = run([p], units="mm-tonne-s")
    fr = r.files[0]
    assert [(f.rule, f.line) for f in fr.findings] == [("parse/missing-include", 1), ("parse/missing-include", 2),
                                                        ("parse/missing-include", 4)], fr.findings
    first = fr.findings[0]
    assert "element/volumetric-locking" in first.message and first.data["checks_not_run"]
    assert fr.incomplete and exit_code(r, "error") == 2


def _thermal(expansion: str) -> str:
    return (HEAD + f"*MATERIAL,NAME=PV40_STEEL\n*ELASTIC\n210000.,0.3\n*DENSITY\n7.85e-9\n{expansion}"
            "*SOLID SECTION,ELSET=EALL,MATERIAL=PV40_STEEL\n*INITIAL CONDITIONS,TYPE=TEMPERATURE\nNALL,20.\n"
            "*BOUNDARY\n1,1,3\n*STEP\n*STATIC\n*TEMPERATURE\nNALL,120.\n*END STEP\n")


def test_zero_expansion_is_a_given_value(write_deck):
    r = run([write_deck("pv40_zero.inp", _thermal("*EXPANSION\n0.\n"))], units="mm-tonne-s")
    f = by_rule(r, "analysis/missing-expansion")
    assert len(f) == 1 and f[0].severity == "note" and f[0].line == 20      # the line of the value 0
    assert "coefficient of 0" in f[0].message
    r = run([write_deck("pv40_none.inp", _thermal(""))], units="mm-tonne-s")
    f = by_rule(r, "analysis/missing-expansion")
    assert len(f) == 1 and f[0].severity == "warning" and "no thermal expansion" in f[0].message


def test_modal_step_on_heat_frequency_modes_needs_no_stiffness(write_deck):
    # the acoustic analogy of the solver's test decks: a scalar field (conductivity, specific heat,
    # density only), eigenmodes from *HEAT TRANSFER, FREQUENCY, then steady-state dynamics on them
    deck = (HEAD + "*MATERIAL,NAME=AIR\n*CONDUCTIVITY\n1.\n*SPECIFIC HEAT\n8.65E-6\n*DENSITY\n1.\n"
            "*SOLID SECTION,ELSET=EALL,MATERIAL=AIR\n*STEP\n*HEAT TRANSFER,FREQUENCY\n4\n*END STEP\n"
            "*STEP\n*STEADY STATE DYNAMICS\n100.,200.,10\n*CFLUX\n1,11,1.\n*END STEP\n")
    r = run([write_deck("pv40_duct.inp", deck)])
    assert not by_rule(r, "model/no-mechanical-behaviour") and not by_rule(r, "analysis/missing-elastic")
    # the same steady-state dynamics after a structural *FREQUENCY step does need stiffness
    r = run([write_deck("pv40_duct2.inp", deck.replace("*HEAT TRANSFER,FREQUENCY", "*FREQUENCY"))])
    assert by_rule(r, "model/no-mechanical-behaviour")


def test_stray_star_data_line_reported_at_its_line(write_deck):
    # line 19 *SPECIFIC HEAT, line 20 the data written as '*5e8,0' (the solver skips it as a keyword)
    deck = (HEAD + "*MATERIAL,NAME=STEEL\n*ELASTIC\n210000,0.3\n*CONDUCTIVITY\n50.,0\n*SPECIFIC HEAT\n*5e8,0\n"
            "*SOLID SECTION,ELSET=EALL,MATERIAL=STEEL\n*STEP\n*STATIC\n*END STEP\n")
    assert deck.splitlines()[19] == "*5e8,0"
    r = run([write_deck("pv40_joint.inp", deck)], units="mm-tonne-s")
    f = by_rule(r, "parse/malformed-data")
    assert [x.line for x in f] == [20], r.findings
    assert "'*5e8,0'" in f[0].message and "*SPECIFIC HEAT (line 19)" in f[0].message
    assert not by_rule(r, "parse/unknown-keyword")
