"""Keyword-deck (CalculiX dialect) parser: one test per syntax rule.

Facts about how ccx reads a deck come from the CalculiX User's Manual (CCX-UM, G. Dhondt)
and the ccx source files named beside each test (CCX-SRC); where the behaviour was
settled by running the solver, the test says "ccx 2.20 run".
"""
from __future__ import annotations

import os
import shutil
import subprocess

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from linter.parsers.includes import IncludePolicy
from linter.model import norm_key
from linter.parsers import ParseOptions
from linter.parsers.keyword import parser as K
from linter.parsers.keyword import mesh as keyword_mesh
from linter.parsers.keyword.lex import to_float
from linter.parsers.sources import SourceError
from decks import CUBE_NODES

CUBE = """*NODE, NSET=NALL
""" + CUBE_NODES + """*ELEMENT, TYPE=C3D8, ELSET=EALL
1,1,2,3,4,5,6,7,8
"""


def parse(path, **kw):
    return K.parse(str(path), ParseOptions(**kw))


@pytest.fixture
def deck(write_deck):
    def _deck(text, name="d.inp", **kw):
        return parse(write_deck(name, text), **kw)
    return _deck


def codes(model):
    return [i.code for i in model.issues]


def issue(model, code):
    found = [i for i in model.issues if i.code == code]
    assert found, f"no {code} issue in {codes(model)}"
    return found[0]


# --------------------------------------------------------------------------- lexical rules


def test_case_and_blank_insensitive_keywords_and_parameters(deck):
    # CCX-UM "Input deck format": blanks removed, case ignored
    m = deck(CUBE + "*material, name = Steel Grade A\n*elastic , type = Engineering Constants\n"
             "1,2,3,0.1,0.1,0.1,1,1,\n1\n*Solid  Section, Elset=eall, Material=steel grade a\n")
    mat = m.materials["STEELGRADEA"]
    assert mat.name == "Steel Grade A" and mat.key == norm_key("steel grade a")
    assert mat.blocks[0].form == "engineering"
    assert m.sections[0].kind == "solid" and m.sections[0].elset == "EALL"
    assert m.sections[0].materials[0].key == "STEELGRADEA"


def test_comments_and_blank_lines_are_not_data(deck):
    m = deck("** head\n*NODE\n1,0,0,0\n** c\n\n   \n2,1,0,0\n  ** indented\n3,0,1,0\n"
             "*ELEMENT, TYPE=T3D2\n** c\n1,1,2\n\n2,2,3\n")
    assert m.geometry.node_count == 3
    assert m.element_blocks[0].count == 2
    assert m.element_blocks[0].ids.get().tolist() == [1, 2]


def test_keyword_line_ending_in_comma_is_flagged_and_next_line_is_data(deck):
    # ccx does not join lines (CCX-SRC readinput.c, getnewline.f)
    m = deck(CUBE + "*MATERIAL, NAME=A\n*ELASTIC,\n210000., 0.3\n")
    iss = issue(m, "keyword-continuation")
    assert iss.loc.line == 13
    assert m.materials["A"].blocks[0].rows[0].values == (210000.0, 0.3)


def test_fortran_number_forms():
    # Fortran list/f-format reals (common practice); "2.1+5" settled by a ccx 2.20 run (read as 2.1e5)
    assert to_float("1.2D3") == 1200.0
    assert to_float("1.5d-3") == 0.0015
    assert to_float(".3") == 0.3
    assert to_float("2.E5") == 2e5
    assert to_float("-.5") == -0.5
    assert to_float("2.1+5") == 2.1e5
    assert to_float("abc") is None


@settings(max_examples=200, deadline=None)
@given(st.floats(allow_nan=False, allow_infinity=False, min_value=-1e300, max_value=1e300))
def test_fortran_d_exponent_round_trip(x):
    # Fortran D-exponent notation (common practice): 1.234560D+05 == 1.234560E+05
    text = f"{x:.12E}"
    assert to_float(text.replace("E", "D")) == float(text)
    assert to_float(text.replace("E", "d").replace("+", "")) == float(text)


def test_fortran_numbers_in_material_rows(deck):
    m = deck("*MATERIAL, NAME=A\n*ELASTIC\n2.1D5, .3, 2.E1\n*DENSITY\n7.85d-9\n")
    blk = m.materials["A"].first("elastic")
    assert blk.rows[0].values == (2.1e5, 0.3) and blk.rows[0].temperature == 20.0
    assert m.materials["A"].first("density").rows[0].values == (7.85e-9,)


def test_empty_field_reads_as_zero_and_is_reported(deck):
    # CCX-SRC splitline.f; confirmed with a ccx 2.20 run ("210000.,," gives nu = 0)
    m = deck("*MATERIAL, NAME=A\n*ELASTIC\n210000.,,\n")
    row = m.materials["A"].first("elastic").rows[0]
    assert row.values == (210000.0, 0.0) and row.blanks == (1,)
    iss = issue(m, "empty-field")
    assert iss.data["field"] == "nu" and iss.material == "A" and iss.loc.line == 3


def test_missing_trailing_value_is_padded_without_blank(deck):
    m = deck("*MATERIAL, NAME=A\n*ELASTIC\n210000.\n")
    row = m.materials["A"].first("elastic").rows[0]
    assert row.values == (210000.0, 0.0) and row.blanks == ()
    assert "empty-field" not in codes(m)


def test_number_longer_than_20_characters_is_truncated(deck):
    # ccx 2.20 run: E = 2.100000000000000000E+05 (24 chars) gave a displacement 1e5 times too large,
    # i.e. E read as 2.1 from the first 20 characters (f20.0; CCX-SRC elastics.f)
    m = deck("*MATERIAL, NAME=A\n*ELASTIC\n2.100000000000000000E+05, 0.3\n")
    iss = issue(m, "number-truncated")
    assert iss.data["read_as"] == pytest.approx(2.1)
    assert iss.data["written"] == "2.100000000000000000E+05" and iss.data["field"] == "E"
    assert m.materials["A"].first("elastic").rows[0].values[0] == pytest.approx(2.1)


def test_long_number_that_reads_the_same_is_not_flagged(deck):
    m = deck("*MATERIAL, NAME=A\n*ELASTIC\n210000.0000000000000000, 0.3\n")
    assert "number-truncated" not in codes(m)


def test_cut_exponent_makes_the_field_unreadable(deck):
    # ccx 2.20 run: "2.10000000000000000E+05" (cut to "...E") gives "*ERROR reading *ELASTIC"
    m = deck("*MATERIAL, NAME=A\n*ELASTIC\n2.10000000000000000E+05, 0.3\n")
    assert issue(m, "number-truncated").data["read_as"] is None
    assert m.materials["A"].first("elastic").rows == []


def test_not_a_number_is_malformed_and_parsing_continues(deck):
    m = deck("*MATERIAL, NAME=A\n*ELASTIC\n210000., abc\n*DENSITY\n7.8e-9\n")
    iss = issue(m, "malformed-data")
    assert iss.loc.line == 3 and "abc" in iss.message
    assert m.materials["A"].first("elastic").rows == []
    assert m.materials["A"].first("density").rows[0].values == (7.8e-9,)


@pytest.mark.parametrize("value", ["1e400", "nan", "inf"])
def test_non_finite_values(deck, value):
    m = deck(f"*MATERIAL, NAME=A\n*ELASTIC\n{value}, 0.3\n")
    assert issue(m, "value-not-finite").loc.line == 3


def test_more_than_16_fields(deck):
    # CCX-SRC splitline.f: at most 16 entries per line
    m = deck("*MATERIAL, NAME=A\n*ELASTIC\n" + ",".join(["1"] * 17) + "\n")
    assert issue(m, "too-many-fields").data["fields"] == 17


# --------------------------------------------------------------------------- encodings and files


def test_utf8_bom(write_deck):
    m = parse(write_deck("b.inp", b"\xef\xbb\xbf*MATERIAL, NAME=A\n*DENSITY\n1.\n"))
    assert list(m.materials) == ["A"] and "encoding" not in codes(m)


def test_utf16_with_bom(write_deck):
    raw = "*MATERIAL, NAME=A\r\n*DENSITY\r\n1.\r\n".encode("utf-16")
    m = parse(write_deck("u.inp", raw))
    assert m.materials["A"].first("density").rows[0].values == (1.0,)
    assert issue(m, "encoding").data["encoding"].startswith("utf-16")


def test_latin1_material_name(write_deck):
    m = parse(write_deck("l.inp", "*MATERIAL, NAME=Stahl_wärmebeh\n*DENSITY\n1.\n".encode("latin-1")))
    assert "STAHL_WÄRMEBEH" in m.materials
    assert issue(m, "encoding").loc.line == 1


def test_crlf_and_mixed_line_ends_keep_line_numbers(write_deck):
    m = parse(write_deck("c.inp", b"** x\r\n*MATERIAL, NAME=A\r*ELASTIC\n210000.,,\r\n"))
    assert m.materials["A"].loc.line == 2
    assert issue(m, "empty-field").loc.line == 4
    assert m.extras["line_ends"][m.files[0]] == "mixed"


def test_binary_file_raises_source_error(write_deck):
    with pytest.raises(SourceError) as exc:
        parse(write_deck("x.inp", b"\x00\x01\x02*NODE\x00" * 50))
    assert exc.value.code == "binary-file"


def test_empty_file_and_comments_only(deck):
    assert issue(deck(""), "empty-file").loc.line == 1
    assert "empty-file" in codes(deck("** only a comment\n\n"))


def test_file_without_final_newline(deck):
    m = deck("*MATERIAL, NAME=A\n*ELASTIC\n1., 0.2")
    assert m.materials["A"].first("elastic").rows[0].values == (1.0, 0.2)


# --------------------------------------------------------------------------- includes


def test_relative_and_nested_includes(write_deck, tmp_path):
    write_deck("mat/a.inp", "*MATERIAL, NAME=A\n*INCLUDE, INPUT=mat/b.inp\n")
    write_deck("mat/b.inp", "** b\n*ELASTIC\n1.,,\n")
    top = write_deck("top.inp", CUBE + "*INCLUDE, INPUT=mat/a.inp\n")
    m = parse(top)
    a = os.path.join(str(tmp_path), "mat", "a.inp")
    b = os.path.join(str(tmp_path), "mat", "b.inp")
    assert m.files == [str(top), a, b]
    assert m.materials["A"].loc.path == a and m.materials["A"].loc.line == 1
    assert m.materials["A"].first("elastic").loc.path == b
    iss = issue(m, "empty-field")
    assert (iss.loc.path, iss.loc.line) == (b, 3)
    assert [i.status for i in m.includes] == ["ok", "ok"]
    assert K.includes_of(str(top), ParseOptions()) == [a, b]


def test_relative_top_path_gives_relative_include_paths(write_deck, tmp_path, monkeypatch):
    write_deck("dk/inc.inp", "*MATERIAL, NAME=A\n")
    write_deck("dk/top.inp", "*INCLUDE, INPUT=inc.inp\n")
    monkeypatch.chdir(tmp_path)
    m = parse("dk/top.inp")
    assert m.files == ["dk/top.inp", os.path.join("dk", "inc.inp")]
    assert m.materials["A"].loc.path == os.path.join("dk", "inc.inp")


def test_missing_include(deck):
    m = deck("*INCLUDE, INPUT=nothere.inp\n*MATERIAL, NAME=A\n")
    iss = issue(m, "missing-include")
    assert iss.data == {"include": "nothere.inp"} and iss.loc.line == 1
    assert m.includes[0].status == "missing" and "A" in m.materials


def test_include_cycle(write_deck):
    write_deck("a.inp", "*INCLUDE, INPUT=b.inp\n")
    write_deck("b.inp", "*INCLUDE, INPUT=a.inp\n")
    m = parse(write_deck("a.inp", "*INCLUDE, INPUT=b.inp\n"))
    assert issue(m, "include-cycle").data["include"] == "a.inp"


def test_include_outside_root_is_refused(write_deck, tmp_path):
    write_deck("outside/secret.inp", "*MATERIAL, NAME=S\n")
    top = write_deck("proj/top.inp", "*INCLUDE, INPUT=../outside/secret.inp\n")
    m = parse(top, include=IncludePolicy(root=str(tmp_path / "proj")))
    assert issue(m, "include-refused").data["include"] == "../outside/secret.inp"
    assert "S" not in m.materials


def test_include_too_deep_and_directory(write_deck, tmp_path):
    for i in range(4):
        write_deck(f"n{i}.inp", f"*INCLUDE, INPUT=n{i + 1}.inp\n")
    write_deck("n4.inp", "*MATERIAL, NAME=DEEP\n")
    m = parse(tmp_path / "n0.inp", include=IncludePolicy(max_depth=2))
    assert "include-too-deep" in codes(m)
    (tmp_path / "adir").mkdir()
    m = parse(write_deck("d.inp", "*INCLUDE, INPUT=adir\n"))
    assert issue(m, "include-directory").data["include"] == "adir"


def test_unreadable_include(write_deck):
    write_deck("bin.inp", b"\x00\x00\x01" * 100)
    m = parse(write_deck("t.inp", "*INCLUDE, INPUT=bin.inp\n"))
    assert issue(m, "include-unreadable").data["include"] == "bin.inp"


def test_solver_cwd_is_the_include_base(write_deck, tmp_path):
    # CCX-SRC readinput.c: relative includes resolve against the working directory
    write_deck("run/m.inp", "*MATERIAL, NAME=FROMRUN\n")
    top = write_deck("deck/top.inp", "*INCLUDE, INPUT=m.inp\n")
    assert "missing-include" in codes(parse(top))
    m = parse(top, include=IncludePolicy(solver_cwd=str(tmp_path / "run")))
    assert "FROMRUN" in m.materials


# --------------------------------------------------------------------------- mesh


def test_elements_counts_types_lazy_ids_and_sets(deck):
    m = deck(CUBE + "*ELEMENT, TYPE=c3d8r, ELSET=E2\n2,1,2,3,4,5,6,7,8\n3,1,2,3,4,5,6,7,8\n")
    b0, b1 = m.element_blocks
    assert (b0.type, b0.count, b0.nodes, b0.elset) == ("C3D8", 1, 8, "EALL")
    assert (b1.type, b1.type_as_written, b1.count) == ("C3D8R", "c3d8r", 2)
    assert not b1.ids.loaded
    assert b1.ids.get().tolist() == [2, 3]
    assert b1.conn.get().shape == (2, 8) and b1.conn.get()[1, 7] == 8
    assert m.element_sets["E2"].blocks == [1]


def test_twenty_node_elements_span_two_lines(deck):
    nodes = "\n".join(f"{i},{i},0,0" for i in range(1, 41))
    els = ("1," + ",".join(str(i) for i in range(1, 16)) + "\n" + ",".join(str(i) for i in range(16, 21)) +
           "\n2," + ",".join(str(i) for i in range(21, 36)) + ",\n" + ",".join(str(i) for i in range(36, 41)) + "\n")
    m = deck("*NODE\n" + nodes + "\n*ELEMENT, TYPE=C3D20R\n" + els)
    b = m.element_blocks[0]
    assert b.count == 2 and b.conn.get()[1].tolist() == list(range(21, 41))


def test_ten_node_tets_continued_with_trailing_comma(deck):
    m = deck("*ELEMENT, TYPE=C3D10\n1,1,2,3,4,5,6,7,\n8,9,10\n2,1,2,3,4,5,6,7,8,9,10\n")
    assert m.element_blocks[0].count == 2
    assert m.element_blocks[0].ids.get().tolist() == [1, 2]


@pytest.mark.parametrize("etype", ["C3D8H", "C3D10M", "CPE4H"])
def test_unknown_element_type(deck, etype):
    # CCX-SRC elements.f: no hybrid or C3D10M-type elements in ccx
    m = deck(f"*ELEMENT, TYPE={etype}\n1,1,2,3,4\n")
    iss = issue(m, "unknown-element-type")
    assert iss.data["type"] == etype and iss.loc.line == 1


def test_elset_generate_nested_and_reopened(deck):
    m = deck(CUBE + "*ELSET, ELSET=G\n1, 5\n*ELSET, ELSET=R, GENERATE\n10, 20, 5\n1,3\n"
             "*ELSET, ELSET=N\nG, r, 7\n*ELSET, ELSET=g\n9\n")
    assert [a.tolist() for a in m.element_sets["R"].ids] == [[10, 15, 20], [1, 2, 3]]
    n = m.element_sets["N"]
    assert n.nested == ["G", "R"] and [a.tolist() for a in n.ids] == [[7]]
    g = m.element_sets["G"]
    assert [a.tolist() for a in g.ids] == [[1, 5], [9]]
    assert [loc.line for loc in g.defined_at] == [12, 19]
    iss = issue(m, "duplicate-set")
    assert iss.loc.line == 19 and iss.data["set"] == "G"


def test_elset_opened_by_element_card_then_elset_card_is_not_duplicate(deck):
    m = deck(CUBE + "*ELSET, ELSET=EALL\n1\n")
    assert "duplicate-set" not in codes(m)
    assert m.element_sets["EALL"].blocks == [0] and len(m.element_sets["EALL"].defined_at) == 2


def test_nodes_bounding_box_and_lazy_coordinates(deck):
    m = deck("*NODE\n1, 0., -2., 1.\n2, 3.D0, 4., 5.\n*NODE\n3, -1, 0, 9\n")
    g = m.geometry
    assert g.node_count == 3 and g.exact
    assert g.bbox_min.tolist() == [-1, -2, 1] and g.bbox_max.tolist() == [3, 4, 9]
    ids, xyz = g.nodes.get()
    assert ids.tolist() == [1, 2, 3] and xyz[1].tolist() == [3, 4, 5]


def test_large_node_card_uses_a_sample(deck, monkeypatch):
    from linter.parsers import sampling

    monkeypatch.setattr(sampling, "EXACT_NODES_LIMIT", 10)
    monkeypatch.setattr(sampling, "MIN_SAMPLE", 5)
    m = deck("*NODE\n" + "\n".join(f"{i},{i}.,0,{-i}" for i in range(1, 101)) + "\n")
    g = m.geometry
    assert g.node_count == 100 and not g.exact and "sample" in g.note
    assert g.bbox_min[0] >= 1 and g.bbox_max[0] <= 100 and g.bbox_max[0] > 50


def test_element_counts_match_meshio(deck, write_deck):
    # external reference: meshio's Abaqus-format reader (one cell block per *ELEMENT card)
    meshio = pytest.importorskip("meshio")
    hexa20 = "".join(f"{30 + i}," + ",".join(["1"] * 15) + ",\n" + ",".join(["2"] * 5) + "\n" for i in range(3))
    text = CUBE + ("*ELEMENT, TYPE=C3D8R, ELSET=B\n" + "".join(f"{i},1,2,3,4,5,6,7,8\n" for i in range(2, 9)) +
                   "** comment\n*ELEMENT, TYPE=C3D4\n20,1,2,3,4\n\n21,1,2,3,5\n"
                   "*ELEMENT, TYPE=C3D20R\n" + hexa20)
    path = write_deck("mesh.inp", text)
    ours = [b.count for b in parse(path).element_blocks]
    theirs = [len(c.data) for c in meshio.read(str(path), file_format="abaqus").cells]
    assert ours == theirs == [1, 7, 2, 3]


# --------------------------------------------------------------------------- materials


def test_elastic_iso_with_temperatures(deck):
    m = deck("*MATERIAL, NAME=A\n*ELASTIC, TYPE=ISO\n200000., 0.3, 20.\n180000., 0.31, 400.\n")
    blk = m.materials["A"].first("elastic")
    assert blk.form == "iso" and blk.layout == ("E", "nu")
    assert blk.column("E").tolist() == [200000.0, 180000.0]
    assert blk.temperatures().tolist() == [20.0, 400.0]
    assert [r.loc.line for r in blk.rows] == [3, 4]


def test_elastic_ortho_two_lines_per_row(deck):
    # CCX-UM *ELASTIC: ORTHO is 8 constants, then D2323 and T
    m = deck("*MATERIAL, NAME=O\n*ELASTIC, TYPE=ORTHOTROPIC\n1,2,3,4,5,6,7,8\n9,100.\n1,2,3,4,5,6,7,8\n9\n")
    blk = m.materials["O"].first("elastic")
    assert blk.form == "ortho" and blk.options["TYPE"] == "ORTHOTROPIC"
    assert blk.rows[0].values == tuple(float(i) for i in range(1, 10)) and blk.rows[0].temperature == 100.0
    assert blk.rows[1].temperature is None and blk.rows[0].loc.line == 3 and blk.rows[1].loc.line == 5


def test_elastic_aniso_three_lines_per_row(deck):
    # CCX-UM *ELASTIC: ANISO is 8 + 8 + 5 constants, T last
    m = deck("*MATERIAL, NAME=X\n*ELASTIC, TYPE=ANISO\n" + ",".join(map(str, range(1, 9))) + "\n" +
             ",".join(map(str, range(9, 17))) + "\n17,18,19,20,21,50.\n")
    blk = m.materials["X"].first("elastic")
    assert blk.form == "aniso" and len(blk.rows) == 1
    assert blk.rows[0].values == tuple(float(i) for i in range(1, 22)) and blk.rows[0].temperature == 50.0


def test_unknown_elastic_type_stays_iso(deck):
    # CCX-SRC elastics.f: no else branch, the type stays ISO
    m = deck("*MATERIAL, NAME=A\n*ELASTIC, TYPE=CUBIC\n1., 0.3\n")
    assert m.materials["A"].first("elastic").form == "iso"
    assert issue(m, "unknown-option").data["value"] == "CUBIC"


def test_file_ends_inside_multi_line_row(deck):
    m = deck("*MATERIAL, NAME=O\n*ELASTIC, TYPE=ORTHO\n1,2,3,4,5,6,7,8\n")
    assert issue(m, "truncated").loc.line == 3


def test_thermal_cards_and_expansion_zero(deck):
    m = deck("*MATERIAL, NAME=A\n*EXPANSION, TYPE=ORTHO, ZERO=20.\n1e-5,2e-5,3e-5\n*CONDUCTIVITY\n50.,20.\n"
             "*SPECIFIC HEAT\n460.\n*DENSITY\n7800.\n")
    mat = m.materials["A"]
    exp = mat.first("expansion")
    assert exp.form == "ortho" and exp.options["ZERO"] == 20.0 and exp.rows[0].values == (1e-5, 2e-5, 3e-5)
    assert mat.first("conductivity").rows[0].temperature == 20.0
    assert mat.first("specific_heat").rows[0].values == (460.0,)


def test_plastic_hardening_and_deformation_plasticity(deck):
    m = deck("*MATERIAL, NAME=A\n*ELASTIC\n1.,0.3\n*PLASTIC, HARDENING=KINEMATIC\n200.,0.\n300.,0.1\n"
             "*MATERIAL, NAME=B\n*ELASTIC\n1.,0.3\n*PLASTIC, HARDENING=SOFT\n200.,0.\n"
             "*MATERIAL, NAME=C\n*DEFORMATION PLASTICITY\n210000.,0.3,200.,5.,0.01,20.\n")
    pa = m.materials["A"].first("plastic")
    assert pa.options["HARDENING"] == "KINEMATIC" and pa.column("stress").tolist() == [200.0, 300.0]
    assert m.materials["B"].first("plastic").options["HARDENING"] == "ISOTROPIC"
    assert issue(m, "unknown-option").material == "B"
    dp = m.materials["C"].first("deformation_plasticity")
    assert dp.rows[0].values == (210000.0, 0.3, 200.0, 5.0, 0.01) and dp.rows[0].temperature == 20.0


@pytest.mark.parametrize("params,form,line", [
    ("", "polynomial-1", "1.,2.,0.01"),
    (", NEO HOOKE", "neo-hooke", "1.,0.01"),
    (", MOONEY-RIVLIN", "mooney-rivlin", "1.,2.,0.01"),
    (", POLYNOMIAL, N=2", "polynomial-2", "1,2,3,4,5,6,7"),
    (", REDUCED POLYNOMIAL, N=2", "reduced-polynomial-2", "1,2,3,4"),
    (", YEOH", "yeoh", "1,2,3,4,5,6"),
    (", OGDEN, N=2", "ogden-2", "1,2,3,4,5,6"),
    (", ARRUDA-BOYCE", "arruda-boyce", "1,2,3"),
    (", VAN DER WAALS", "van-der-waals", "1,2,3,4,5"),
])
def test_hyperelastic_models(deck, params, form, line):
    # CCX-UM *HYPERELASTIC; CCX-SRC hyperelastics.f: constant counts per model
    m = deck(f"*MATERIAL, NAME=R\n*HYPERELASTIC{params}\n{line}\n")
    blk = m.materials["R"].first("hyperelastic")
    assert blk.form == form
    assert len(blk.rows[0].values) == len(blk.layout) == line.count(",") + 1
    assert blk.rows[0].temperature is None and not m.issues


def test_hyperelastic_polynomial_3_spans_two_lines(deck):
    m = deck("*MATERIAL, NAME=R\n*HYPERELASTIC, POLYNOMIAL, N=3\n1,2,3,4,5,6,7,8\n9,10,11,12,23.\n")
    blk = m.materials["R"].first("hyperelastic")
    assert blk.form == "polynomial-3" and blk.rows[0].values[-1] == 12.0 and blk.rows[0].temperature == 23.0


def test_hyperelastic_n_before_model_name(deck):
    # CCX-SRC hyperelastics.f: N= before the model name is applied to the default model
    m = deck("*MATERIAL, NAME=R\n*HYPERELASTIC, N=2, OGDEN\n1,2,3\n")
    assert m.materials["R"].first("hyperelastic").form == "ogden-1"
    assert issue(m, "unknown-option").data["option"] == "N"


def test_hyperfoam(deck):
    # CCX-UM *HYPERFOAM: N=2 is mu1, alpha1, mu2, alpha2, nu1, nu2, T
    m = deck("*MATERIAL, NAME=F\n*HYPERFOAM, N=2\n1,2,3,4,0.1,0.2\n")
    blk = m.materials["F"].first("hyperfoam")
    assert blk.form == "hyperfoam-2" and blk.rows[0].values == (1, 2, 3, 4, 0.1, 0.2)


def test_unchecked_material_content(deck):
    m = deck("*MATERIAL, NAME=U\n*USER MATERIAL, CONSTANTS=2\n1.,2.\n*MATERIAL, NAME=C\n*ELASTIC\n1,.3\n"
             "*CREEP\n1e-10,3.,0.\n*FLUID CONSTANTS\n1.,2.\n")
    assert m.materials["U"].blocks[0].kind == "user"
    kinds = [b.kind for b in m.materials["C"].blocks]
    assert kinds == ["elastic", "creep", "other"]
    assert sorted((u.what, u.material) for u in m.unchecked) == [
        ("*CREEP", "C"), ("*FLUID CONSTANTS", "C"), ("*USER MATERIAL", "U")]


def test_duplicate_material_and_long_name(deck):
    long = "M" * 81
    m = deck(f"*MATERIAL, NAME=Steel\n*DENSITY\n1.\n*MATERIAL, NAME=STEEL\n*DENSITY\n2.\n*MATERIAL, NAME={long}\n")
    assert m.materials["STEEL"].first("density").rows[0].values == (1.0,)
    assert [d.loc.line for d in m.duplicate_materials] == [4]
    assert "too long" in issue(m, "malformed-data").message


def test_material_card_outside_material_block(deck):
    m = deck(CUBE + "*ELASTIC\n1.,0.3\n*MATERIAL, NAME=A\n*SOLID SECTION, ELSET=EALL, MATERIAL=A\n"
             "*DENSITY\n1.\n")
    assert [i.loc.line for i in m.issues if i.code == "misplaced-card"] == [12, 16]
    assert m.materials["A"].blocks == []


def test_material_card_without_data(deck):
    m = deck("*MATERIAL, NAME=A\n*ELASTIC\n*DENSITY\n1.\n")
    assert issue(m, "malformed-data").loc.line == 2


def test_material_after_first_step(deck):
    m = deck("*MATERIAL, NAME=A\n*STEP\n*STATIC\n*END STEP\n*MATERIAL, NAME=B\n*DENSITY\n1.\n")
    assert m.first_step.line == 2
    assert not m.materials["A"].after_step and m.materials["B"].after_step


# --------------------------------------------------------------------------- sections, steps, loads


def test_sections(deck):
    m = deck("*SOLID SECTION, ELSET=E1, MATERIAL=LATER, ORIENTATION=OR1\n"
             "*SHELL SECTION, ELSET=E2, COMPOSITE, OFFSET=0.5\n0.1,,PLY_A,OR1\n0.2,,PLY_B\n"
             "*SHELL SECTION, ELSET=E3, MATERIAL=S\n2.5\n"
             "*BEAM SECTION, ELSET=E4, MATERIAL=B, SECTION=RECT\n1.,2.\n0,0,-1\n"
             "*MEMBRANE SECTION, ELSET=E5, MATERIAL=MB\n0.3\n"
             "*ORIENTATION, NAME=OR1, SYSTEM=CYLINDRICAL\n0,0,0,0,0,1\n*MATERIAL, NAME=LATER\n")
    s = {x.elset: x for x in m.sections}
    assert s["E1"].kind == "solid" and s["E1"].orientation == "OR1" and s["E1"].materials[0].key == "LATER"
    assert s["E2"].kind == "composite-shell" and [(r.role, r.key, r.loc.line) for r in s["E2"].materials] == [
        ("ply", "PLY_A", 3), ("ply", "PLY_B", 4)]
    assert s["E2"].options["plies"][0] == {"thickness": 0.1, "material": "PLY_A", "orientation": "OR1"}
    assert s["E3"].options["thickness"] == 2.5 and s["E3"].materials[0].role == "shell"
    assert s["E4"].kind == "beam" and s["E4"].options["SECTION"] == "RECT"
    assert s["E5"].materials[0].role == "membrane"
    o = m.orientations["OR1"]
    assert o.system == "CYLINDRICAL" and o.values == (0, 0, 0, 0, 0, 1)
    assert not m.issues


def test_section_without_material(deck):
    m = deck("*SOLID SECTION, ELSET=E1\n")
    assert "MATERIAL" in issue(m, "malformed-data").message


@pytest.mark.parametrize("card,kind", [
    ("*STATIC", "static"), ("*BUCKLE", "buckle"), ("*FREQUENCY", "frequency"),
    ("*COMPLEX FREQUENCY", "complex-frequency"), ("*MODAL DYNAMIC", "modal-dynamic"),
    ("*STEADY STATE DYNAMICS", "steady-state-dynamics"), ("*DYNAMIC", "dynamic-implicit"),
    ("*DYNAMIC, EXPLICIT", "dynamic-explicit"), ("*HEAT TRANSFER", "heat-transient"),
    ("*HEAT TRANSFER, STEADY STATE", "heat-steady"),
    ("*COUPLED TEMPERATURE-DISPLACEMENT", "coupled-transient"),
    ("*COUPLED TEMPERATURE-DISPLACEMENT, STEADY STATE", "coupled-steady"),
    ("*UNCOUPLED TEMPERATURE-DISPLACEMENT", "uncoupled-transient"), ("*VISCO", "visco"),
    ("*SENSITIVITY", "other"),
])
def test_procedures(deck, card, kind):
    m = deck(f"*STEP, NLGEOM\n{card}\n*END STEP\n")
    step = m.steps[0]
    assert step.nlgeom and [p.kind for p in step.procedures] == [kind]
    assert step.procedures[0].card == card.split(",")[0]


def test_procedure_outside_step(deck):
    m = deck("*STATIC\n")
    assert issue(m, "misplaced-card").loc.line == 1 and m.steps == []


def test_loads_temperatures_masses_constants(deck):
    m = deck("*PHYSICAL CONSTANTS, ABSOLUTE ZERO=-273.15, STEFAN BOLTZMANN=5.669E-8\n"
             "*INITIAL CONDITIONS, TYPE=TEMPERATURE\nNALL, 20.\n5, 30.\n"
             "*MASS, ELSET=PM\n0.25\n"
             "*STEP\n*STATIC\n*DLOAD\nEall, GRAV, 9810., 0., 0., -1.\nRot, CENTRIF, 1.E4, 0,0,0, 0,0,1\n"
             "EALL, P1, 10.\n*TEMPERATURE\nNALL, 100.\n*END STEP\n*STEP, NLGEOM=NO\n*STATIC\n*END STEP\n")
    assert m.params["ABSOLUTE_ZERO"] == -273.15 and m.params["STEFAN_BOLTZMANN"] == 5.669e-8
    assert [(t.value, t.target) for t in m.initial_temperatures] == [(20.0, "NALL"), (30.0, "5")]
    assert [(s.kind, s.target, s.value) for s in m.mass_sources] == [("point-mass", "PM", 0.25)]
    loads = m.steps[0].loads
    g, c, t = loads
    assert (g.kind, g.value, g.target, g.vector) == ("gravity", 9810.0, "EALL", (0.0, 0.0, -1.0))
    assert (c.kind, c.value, c.target) == ("centrifugal", 1e4, "ROT") and c.vector == (0, 0, 0, 0, 0, 1)
    assert (t.kind, t.value, t.target, t.loc.line) == ("temperature", 100.0, "NALL", 14)
    assert not m.steps[1].nlgeom


def test_unknown_keywords_listed_once_with_count(deck):
    m = deck("*FOO BAR, X=1\n1,2\n*foobar\n*BOUNDARY\n1,1,3\n")
    unk = [u for u in m.unchecked if u.what == "*FOO BAR"]
    assert len(unk) == 1 and unk[0].loc.line == 1 and "2 cards" in unk[0].reason
    assert all("BOUNDARY" not in u.what for u in m.unchecked)


def test_data_before_first_keyword(deck):
    m = deck("** c\n1, 2, 3\n*NODE\n1,0,0,0\n")
    assert issue(m, "data-without-keyword").loc.line == 2


def test_never_raises_on_garbage_content(deck):
    m = deck("*ELEMENT\n,,,\n*ELSET\n*ELSET, ELSET=A, GENERATE\n1\nx,y\n5,1,0\n*NODE\nfoo\n*MATERIAL\n"
             "*HYPERELASTIC, OGDEN, N=7\n1,2\n*DLOAD\nE,GRAV\n*MASS\n*INCLUDE\n*SHELL SECTION, ELSET=S, COMPOSITE\n1\n")
    assert m.issues and all(i.loc.line >= 1 for i in m.issues)


# --------------------------------------------------------------------------- format detection


def test_sniff_scores():
    assert K.sniff(CUBE.encode()) >= 0.7
    assert K.sniff(b"** comment\n*HEADING\nmodel\n*MATERIAL, NAME=A\n") >= 0.5
    bulk = b"SOL 101\nCEND\nBEGIN BULK\nGRID,1,,0.,0.,0.\nMAT1,1,210000.,,0.3\nENDDATA\n"
    assert K.sniff(bulk) < 0.3
    assert K.sniff(b"") == 0.0


@pytest.mark.skipif(shutil.which("ccx") is None, reason="CalculiX (ccx) not installed")
def test_sniff_low_on_ccx_result_files(tmp_path):
    # the solver's own .dat/.frd output (ccx run on a one-element deck) must not look like an input deck
    deck_text = CUBE + ("*MATERIAL, NAME=M\n*ELASTIC\n210000., 0.3\n*SOLID SECTION, ELSET=EALL, MATERIAL=M\n"
                        "*BOUNDARY\n1,1,3\n4,1,1\n5,1,2\n8,1,1\n*STEP\n*STATIC\n*CLOAD\n2,1,1.\n"
                        "*NODE PRINT, NSET=NALL\nU\n*NODE FILE\nU\n*END STEP\n")
    (tmp_path / "job.inp").write_text(deck_text)
    subprocess.run(["ccx", "-i", "job"], cwd=tmp_path, capture_output=True, timeout=60)
    outs = [p for p in (tmp_path / "job.dat", tmp_path / "job.frd") if p.is_file()]
    assert outs, "ccx wrote no result file"
    for p in outs:
        assert K.sniff(p.read_bytes()[:65536]) < 0.3, p.name
    assert K.sniff(deck_text.encode()) >= 0.7


def test_module_contract():
    from linter.parsers import keyword as K     # the package declares the format's facts

    assert K.FORMAT == "keyword" and K.EXTENSIONS == (".inp",) and K.DEFAULT_DIALECT == "calculix"


def test_fields_after_the_last_node_are_not_read(deck):
    # ccx reads a fixed node count per type; the corpus's CalculiX test deck dloadlinI.inp writes
    # extra node numbers after the 8 of its C3D8I elements and the solver accepts it
    m = deck("*ELEMENT, TYPE=C3D8I\n1,1,2,3,4,5,6,7,8,9,10,\n2,11,12,13,14,15,16,17,18\n")
    b = m.element_blocks[0]
    assert b.count == 2 and b.ids.get().tolist() == [1, 2]
    assert b.conn.get().tolist() == [list(range(1, 9)), list(range(11, 19))]


def test_fluid_and_general_beam_sections_name_their_material(deck):
    # CCX-UM *FLUID SECTION, *BEAM GENERAL SECTION: both take ELSET= and MATERIAL=
    m = deck("*FLUID SECTION, ELSET=EF, TYPE=PIPE MANNING, MATERIAL=Water\n0.1, 0.2, 0.015\n"
             "*BEAM GENERAL SECTION, ELSET=EB, MATERIAL=ALUM, SECTION=PIPE\n0.05, 0.01\n")
    f, b = m.sections
    assert (f.kind, f.elset, f.materials[0].role, f.materials[0].key) == ("fluid", "EF", "fluid", "WATER")
    assert (b.kind, b.materials[0].key, b.options["SECTION"]) == ("beam", "ALUM", "PIPE")
    assert not m.issues


def test_unknown_hyperelastic_parameter_and_extra_values(deck):
    # CCX-SRC hyperelastics.f: an unknown model name is warned about, POLYNOMIAL N=1 used
    m = deck("*MATERIAL, NAME=R\n*HYPERELASTIC, GENT\n1.,2.,0.01\n*DENSITY\n1.,20.,99.\n")
    assert m.materials["R"].first("hyperelastic").form == "polynomial-1"
    assert issue(m, "unknown-option").data["option"] == "GENT"
    extra = issue(m, "malformed-data")
    assert extra.loc.line == 5 and extra.data["severity"] == "warning"
    assert m.materials["R"].first("density").rows[0].temperature == 20.0


def test_oversized_integers_in_sets_are_malformed_not_fatal(deck):
    # CCX-SRC noelsets.f: integers are read with (i10)
    m = deck("*ELSET, ELSET=E\n1111111111111111111111, 3\n*ELSET, ELSET=G, GENERATE\n1, 99999999999\n"
             "1, 900000000, 1\n")
    assert [i.loc.line for i in m.issues if i.code == "malformed-data"] == [2, 4, 5]
    assert [a.tolist() for a in m.element_sets["E"].ids] == [[3]]


def test_sniff_reads_utf16_and_bom_heads():
    text = CUBE + "*MATERIAL, NAME=A\n"
    assert K.sniff(text.encode("utf-16")) >= 0.7
    assert K.sniff(b"\xef\xbb\xbf" + text.encode()) >= 0.7


def test_included_data_lines_continue_the_card_before_the_include(write_deck):
    # ccx 2.20 run: "*NODE" followed by "*INCLUDE, INPUT=nodes" (a file of node lines only) reads those nodes
    write_deck("nodes.txt", "1,0,0,0\n2,1,0,0\n** c\n3,0,2,0\n")
    write_deck("els.txt", "1,1,2\n2,2,3\n")
    write_deck("rows.txt", "180000., 0.3, 400.\n")
    m = parse(write_deck("t.inp", "*NODE\n*INCLUDE, INPUT=nodes.txt\n*ELEMENT, TYPE=T3D2, ELSET=E\n"
                         "*INCLUDE, INPUT=els.txt\n*ELSET, ELSET=E\n*MATERIAL, NAME=A\n*ELASTIC\n210000., 0.3, 20.\n"
                         "*INCLUDE, INPUT=rows.txt\n"))
    assert m.geometry.node_count == 3 and m.geometry.bbox_max.tolist() == [1, 2, 0]
    assert sum(b.count for b in m.element_blocks) == 2
    blk = m.materials["A"].first("elastic")
    assert len(m.materials["A"].blocks) == 1 and blk.temperatures().tolist() == [20.0, 400.0]
    assert blk.rows[1].loc.path.endswith("rows.txt") and blk.rows[1].loc.line == 1
    assert "data-without-keyword" not in codes(m) and "duplicate-set" not in codes(m)


@pytest.mark.parametrize("extra", ["", "** a comment\n", "\n", "trailing"])
def test_large_blocks_parse_the_same_on_fast_and_careful_paths(deck, extra):
    n = 3000                                        # > 4 KiB of data: the numpy fast path is tried first
    lines = [f"{i}, {i}, {i + 1}" + ("," if extra == "trailing" and i % 7 == 0 else "") for i in range(1, n + 1)]
    if extra in ("** a comment\n", "\n"):
        lines.insert(n // 2, extra.rstrip("\n"))
    nodes = "\n".join(f"{i}, {i}.5, -{i}.0D0, 0" for i in range(1, n + 2))
    m = deck("*NODE\n" + nodes + "\n*ELEMENT, TYPE=T3D2\n" + "\n".join(lines) + "\n")
    b = m.element_blocks[0]
    assert b.count == n
    assert b.ids.get().tolist() == list(range(1, n + 1))
    assert b.conn.get()[-1].tolist() == [n, n + 1]
    ids, xyz = m.geometry.nodes.get()
    assert ids.size == n + 1 and xyz[-1].tolist() == [n + 1.5, -(n + 1.0), 0.0]
    assert m.geometry.bbox_min.tolist() == [1.5, -(n + 1.0), 0.0]


def test_gravity_direction_is_normalised(deck):
    # ccx 2.20 run: *DLOAD GRAV with direction (0,0,-2) gives the same displacements as (0,0,-1)
    m = deck("*STEP\n*STATIC\n*DLOAD\nEALL, GRAV, 9810., 0., 0., -2.\n*END STEP\n")
    g = m.steps[0].loads[0]
    assert g.value == 9810.0 and g.vector == (0.0, 0.0, -1.0)


def test_user_laws_need_no_data_lines(deck):
    # CCX-UM *CREEP (LAW=USER): the law comes from a user routine, no data line follows
    m = deck("*MATERIAL, NAME=A\n*ELASTIC\n1.,0.3\n*CREEP, LAW=USER\n*STEP\n*CRACK PROPAGATION\n*END STEP\n")
    assert "malformed-data" not in codes(m)
    assert m.materials["A"].first("creep").options["LAW"] == "USER"
    assert [p.kind for p in m.steps[0].procedures] == ["other"]


def test_orientation_by_distribution_name_and_incomplete_ortho_row(deck):
    m = deck("*ORIENTATION, NAME=OD\nMYDIST\n*MATERIAL, NAME=O\n*ELASTIC, TYPE=ORTHO\n1,2,3,4,5\n")
    assert m.orientations["OD"].values == ()
    # CCX-SRC elastics.f: 8 values are required on the first ORTHO line
    iss = issue(m, "malformed-data")
    assert iss.loc.line == 5 and iss.data["expected"] == 9 and iss.data["given"] == 5


def test_includes_of_first_line_and_case(write_deck, tmp_path):
    write_deck("x.inp", "*NODE\n1,0,0,0\n")
    write_deck("y.inp", "** y\n")
    top = write_deck("t.inp", "*include, input=x.inp\n*MATERIAL, NAME=A\n  * In Clude , INPUT=y.inp\n"
                     "*INCLUDE, INPUT=missing.inp\n")
    assert K.includes_of(str(top), ParseOptions()) == [str(tmp_path / "x.inp"), str(tmp_path / "y.inp")]
    assert [i.status for i in parse(top).includes] == ["ok", "ok", "missing"]


def test_without_the_element_catalogue_counts_still_work(deck, monkeypatch):
    monkeypatch.setattr(K, "_catalogue", False)        # as if linter.catalogue could not be loaded
    m = deck("*ELEMENT, TYPE=C3D20R\n1," + ",".join(["1"] * 15) + "\n" + ",".join(["2"] * 5) + "\n"
             "*ELEMENT, TYPE=C3D8H\n2,1,2,3,4,5,6,7,8\n")
    assert [(b.type, b.count, b.nodes) for b in m.element_blocks] == [("C3D20R", 1, 20), ("C3D8H", 1, 8)]
    assert "unknown-element-type" not in codes(m)


def test_format_detection_picks_keyword(write_deck):
    from linter import parsers

    p = write_deck("m.inp", CUBE)
    assert parsers.detect(str(p), p.read_bytes()) == "keyword"


def test_large_node_block_box_is_sampled_and_marked(write_deck):
    # above the exact limit the box comes from a sample: it must lie inside the true box (numpy min/max
    # of all coordinates as the reference), be marked inexact, and say how many lines it used
    import numpy as np

    from linter.parsers import sampling

    n = sampling.EXACT_NODES_LIMIT + 10_000
    rng = np.random.default_rng(7)
    xyz = np.round(rng.uniform(-50.0, 120.0, size=(n, 3)), 5)   # as written to the deck
    text = "*NODE\n" + "".join(f"{i + 1}, {x:.5f}, {y:.5f}, {z:.5f}\n" for i, (x, y, z) in enumerate(xyz))
    geo = parse(write_deck("big.inp", text)).geometry
    assert geo.node_count == n and not geo.exact and "sample" in geo.note
    assert np.all(geo.bbox_min >= xyz.min(axis=0) - 1e-9) and np.all(geo.bbox_max <= xyz.max(axis=0) + 1e-9)
    # a sample of a few per cent of 60k uniform points gets within a few per cent of the true extent
    assert np.all(geo.bbox_max - geo.bbox_min > 0.95 * (xyz.max(axis=0) - xyz.min(axis=0)))
    ids, coords = geo.nodes.get()
    assert ids.size == n and np.allclose(coords.max(axis=0), xyz.max(axis=0), atol=1e-5)
