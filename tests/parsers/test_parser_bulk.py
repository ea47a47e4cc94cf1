"""Tests of the bulk-data parser (linter.parsers.bulk): field formats, continuations, numbers,
INCLUDE, the MAT1 blank-field rules, the model mapping, and element counts against meshio."""
from __future__ import annotations

import math

import numpy as np
import pytest

from linter.parsers.includes import IncludePolicy
from linter.parsers import ParseOptions, bulk
from linter.parsers.bulk.fields import FieldError, real

HEAD = "SOL 101\nCEND\nBEGIN BULK\n"


def parse(path, **kw):
    return bulk.parse(str(path), ParseOptions(**kw))


def small(*fields: str) -> str:
    """One small-field line: each field right-padded to 8 columns."""
    return "".join(f.ljust(8) for f in fields).rstrip() + "\n"


def large(name: str, *fields: str, cont: str = "*C1") -> str:
    """One large-field entry of up to 8 data fields: two physical lines (8 + 4x16 + 8)."""
    f = list(fields) + [""] * (8 - len(fields))
    first = (name + "*").ljust(8) + "".join(x.rjust(16) for x in f[:4]) + cont.ljust(8)
    second = cont.ljust(8) + "".join(x.rjust(16) for x in f[4:8])
    return first + "\n" + second + "\n"


# --------------------------------------------------------------------------- numbers


@pytest.mark.parametrize("text,value", [
    # NASTRAN-95 User's Manual section 2.4.1.1: 7.0 = .7E1 = 0.7+1 = .70+1 = 70.-1
    ("7.0", 7.0), (".7E1", 7.0), ("0.7+1", 7.0), (".70+1", 7.0), ("70.-1", 7.0),
    # compact exponents as in MYSTRAN R8FLD.f90
    ("7.85-9", 7.85e-9), ("2.1+5", 2.1e5), ("1.+5", 1.0e5), (".3", 0.3), ("1.E3", 1000.0),
    ("1.D3", 1000.0), ("-.5-3", -0.5e-3), ("-7.85-9", -7.85e-9), ("+2.5", 2.5), ("1.5E-3", 1.5e-3),
])
def test_compact_reals(text, value):
    assert real(text) == pytest.approx(value, rel=1e-15)


def test_real_blank_and_junk():
    assert real("   ") is None
    with pytest.raises(FieldError):
        real("ABC")


# --------------------------------------------------------------------------- field formats


def _mat_grid_quad(model):
    mat = model.materials["7"]
    el = mat.first("elastic")
    rho = mat.first("density")
    blk = model.element_blocks[0]
    return (el.rows[0].values, el.options["given"], rho.rows[0].values, model.geometry.node_count,
            tuple(model.geometry.bbox_max), blk.type, blk.count, blk.elset, tuple(blk.conn.get()[0]))


def test_field_formats_equivalent(write_deck):
    # the same MAT1 / GRID / CQUAD4 in small, large and free field (NASTRAN-95 User's Manual 2.4.1.1-2.4.1.2; MYSTRAN User Manual, Bulk Data format)
    grids = [("1", "0.", "0.", "0."), ("2", "2.5", "0.", "0."), ("3", "2.5", "1.5", "0."), ("4", "0.", "1.5", "0.")]
    sm = HEAD + small("MAT1", "7", "2.1+5", "", ".3", "7.85-9") + small("PSHELL", "3", "7", "1.0", "7")
    sm += "".join(small("GRID", g, "", x, y, z) for g, x, y, z in grids) + small("CQUAD4", "10", "3", "1", "2", "3", "4")
    lg = HEAD + large("MAT1", "7", "2.1+5", "", ".3", "7.85-9") + large("PSHELL", "3", "7", "1.0", "7")
    lg += "".join(large("GRID", g, "", x, y, z, cont=f"*G{g}") for g, x, y, z in grids)
    lg += large("CQUAD4", "10", "3", "1", "2", "3", "4")
    fr = HEAD + "MAT1,7,2.1+5,,.3,7.85-9\nPSHELL,3,7,1.0,7\n"
    fr += "".join(f"GRID,{g},,{x},{y},{z}\n" for g, x, y, z in grids) + "CQUAD4,10,3,1,2,3,4\n"
    got = [_mat_grid_quad(parse(write_deck(f"f{i}.bdf", t + "ENDDATA\n"))) for i, t in enumerate((sm, lg, fr))]
    assert got[0] == got[1] == got[2]
    assert got[0][0] == (2.1e5, 0.3) and got[0][5:] == ("CQUAD4", 1, "PID 3", (1, 2, 3, 4))


def test_tabs_separate_fields(write_deck):
    # MYSTRAN: a TAB separates fields like a comma (MYSTRAN source FFIELD.f90)
    m = parse(write_deck("t.bdf", HEAD + "MAT1\t7\t2.1+5\t\t.3\nENDDATA\n"))
    assert m.materials["7"].first("elastic").rows[0].values == (2.1e5, 0.3)


def test_comments_and_case(write_deck):
    m = parse(write_deck("c.bdf", HEAD + "$ whole-line comment\nmat1,7,2.1+5,,.3 $ trailing comment,9.,9.\n"
                         "ENDDATA\n"))
    assert m.materials["7"].first("elastic").rows[0].values == (2.1e5, 0.3)
    assert m.materials["7"].first("density") is None


# --------------------------------------------------------------------------- continuations


CHEXA_NODES = tuple(range(1, 21))


@pytest.mark.parametrize("form", ["explicit-small", "blank-field1", "free-plus", "free-comma", "large", "mixed"])
def test_continuation_forms(write_deck, form):
    n = [str(i) for i in CHEXA_NODES]
    if form == "explicit-small":
        card = small("CHEXA", "1", "5", *n[:6], "+A") + small("+A", *n[6:14], "+B") + small("+B", *n[14:])
    elif form == "blank-field1":
        card = small("CHEXA", "1", "5", *n[:6]) + small("", *n[6:14]) + small("", *n[14:])
    elif form == "free-plus":
        card = "CHEXA,1,5," + ",".join(n[:6]) + ",+A\n+A," + ",".join(n[6:14]) + ",+B\n+B," + ",".join(n[14:]) + "\n"
    elif form == "free-comma":
        card = "CHEXA,1,5," + ",".join(n[:6]) + "\n," + ",".join(n[6:14]) + "\n," + ",".join(n[14:]) + "\n"
    elif form == "large":
        f = ["1", "5"] + n
        card = ("CHEXA*".ljust(8) + "".join(x.rjust(16) for x in f[0:4]) + "*A".ljust(8) + "\n"
                + "*A".ljust(8) + "".join(x.rjust(16) for x in f[4:8]) + "*B".ljust(8) + "\n"
                + "*B".ljust(8) + "".join(x.rjust(16) for x in f[8:12]) + "*C".ljust(8) + "\n"
                + "*C".ljust(8) + "".join(x.rjust(16) for x in f[12:16]) + "*D".ljust(8) + "\n"
                + "*D".ljust(8) + "".join(x.rjust(16) for x in f[16:20]) + "*E".ljust(8) + "\n"
                + "*E".ljust(8) + "".join(x.rjust(16) for x in f[20:22]) + "\n")
    else:  # a small-field parent with a free-field continuation and a small one
        card = small("CHEXA", "1", "5", *n[:6], "+A") + "+A," + ",".join(n[6:14]) + ",+B\n" + small("+B", *n[14:])
    m = parse(write_deck("h.bdf", HEAD + "PSOLID,5,1\nMAT1,1,2.1+5,,.3\n" + card + "ENDDATA\n"))
    (blk,) = m.element_blocks
    assert (blk.type, blk.count, blk.elset, blk.type_as_written) == ("CHEXA20", 1, "PID 5", "CHEXA")
    assert tuple(blk.conn.get()[0]) == CHEXA_NODES and tuple(blk.ids.get()) == (1,)
    assert not [i for i in m.issues if i.code != "encoding"]


def test_linear_and_quadratic_by_node_count(write_deck):
    text = HEAD + "CTETRA,1,2,1,2,3,4\nCTETRA,2,2,1,2,3,4,5,6,+\n+,7,8,9,10\nCPENTA,3,2,1,2,3,4,5,6\n"
    text += "CTRIA3,4,,1,2,3\nCROD,5,9,1,2\n" + "ENDDATA\n"
    m = parse(write_deck("q.bdf", text))
    got = sorted((b.type, b.count, b.elset) for b in m.element_blocks)
    # blank PID defaults to the EID (MYSTRAN element tables)
    assert got == [("CPENTA6", 1, "PID 2"), ("CROD", 1, "PID 9"), ("CTETRA10", 1, "PID 2"),
                   ("CTETRA4", 1, "PID 2"), ("CTRIA3", 1, "PID 4")]
    assert m.element_sets["PID 2"].blocks and len(m.element_sets["PID 2"].blocks) == 3


def test_truncated_file(write_deck):
    m = parse(write_deck("tr.bdf", HEAD + "MAT1,1,2.1+5,,.3\nCHEXA,1,5,1,2,3,4,5,6,+A\n"))
    codes = {i.code for i in m.issues}
    assert "truncated" in codes and "no-bulk-section" in codes


# --------------------------------------------------------------------------- INCLUDE


def test_include_forms(write_deck, tmp_path):
    write_deck("sub/mats.bdf", "MAT1,3,7.+4,,.33\nINCLUDE 'deeper.bdf'\n")
    write_deck("sub/deeper.bdf", "MAT1,4,2.1+5,,.3\n")
    write_deck("long/folder/name/props.bdf", "PSHELL,1,3,2.\n")
    top = write_deck("top.bdf", HEAD + "INCLUDE 'sub/mats.bdf'\nINCLUDE 'long/folder/\nname/props.bdf'\n"
                     "INCLUDE 'nowhere.bdf'\nENDDATA\n")
    m = parse(top, include=IncludePolicy(root=str(tmp_path)))
    assert set(m.materials) == {"3", "4"}          # nested include, relative to the including file
    assert [s.elset for s in m.sections] == ["PID 1"]   # name continued over two lines inside the quotes
    assert [i.code for i in m.issues] == ["missing-include"]
    assert m.issues[0].loc.line == 7
    assert len(m.files) == 4
    assert sorted(p.split("/")[-1] for p in bulk.includes_of(str(top), ParseOptions(
        include=IncludePolicy(root=str(tmp_path))))) == ["deeper.bdf", "mats.bdf", "props.bdf"]


def test_include_cycle_and_refused(write_deck, tmp_path):
    write_deck("a.bdf", "MAT1,1,2.1+5,,.3\nINCLUDE 'b.bdf'\n")
    write_deck("b.bdf", "INCLUDE 'a.bdf'\n")
    top = write_deck("top.bdf", HEAD + "INCLUDE 'a.bdf'\nINCLUDE '../outside.bdf'\nENDDATA\n")
    (tmp_path.parent / "outside.bdf").write_text("MAT1,9,1.,,.3\n")
    m = parse(top, include=IncludePolicy(root=str(tmp_path)))
    codes = sorted(i.code for i in m.issues)
    assert codes == ["include-cycle", "include-refused"]
    assert set(m.materials) == {"1"}


def test_include_in_case_control(write_deck, tmp_path):
    write_deck("case.inc", "SUBCASE 1\n  TEMP(LOAD) = 5\n")
    top = write_deck("top.bdf", "SOL 101\nCEND\nINCLUDE 'case.inc'\nBEGIN BULK\nTEMP,5,1,80.\nENDDATA\n")
    m = parse(top, include=IncludePolicy(root=str(tmp_path)))
    (step,) = m.steps
    assert [(ld.kind, ld.value) for ld in step.loads] == [("temperature", 80.0)]


# --------------------------------------------------------------------------- MAT1 blank-field table


@pytest.mark.parametrize("fields,expect_e,expect_nu,given", [
    # NASTRAN-95 User's Manual MAT1 remarks and the MYSTRAN User Manual MAT1
    ("2.0+5,8.0+4,.3", 2.0e5, 0.3, ("E", "G", "NU")),        # all given: used as given
    ("2.6+5,,.3", 2.6e5, 0.3, ("E", "NU")),                  # G = E/(2(1+nu)) = 1e5
    (",1.0+5,.3", 2.6e5, 0.3, ("G", "NU")),                   # E = 2(1+nu)G
    ("2.6+5,1.0+5,", 2.6e5, 0.3, ("E", "G")),                 # nu = E/(2G) - 1
    ("2.0+5,,", 2.0e5, 0.0, ("E",)),                          # G = 0 and nu = 0
    (",8.0+4,", 0.0, 0.0, ("G",)),                            # E = 0 and nu = 0
])
def test_mat1_blank_field_rules(write_deck, fields, expect_e, expect_nu, given):
    m = parse(write_deck("m.bdf", HEAD + f"MAT1,1,{fields}\nENDDATA\n"))
    blk = m.materials["1"].first("elastic")
    e, nu = blk.rows[0].values
    assert e == pytest.approx(expect_e, rel=1e-12) and nu == pytest.approx(expect_nu, abs=1e-12)
    assert blk.options["given"] == given and blk.options["card"] == "MAT1"
    if given == ("E", "NU"):
        assert blk.options["G"] == pytest.approx(1.0e5)
    if given in (("E",), ("G",)):
        assert blk.options["G" if given == ("E",) else "E"] == 0.0
    assert not m.issues


def test_mat1_e_and_g_blank_is_an_error(write_deck):
    m = parse(write_deck("m.bdf", HEAD + "MAT1,1,,,.3\nENDDATA\n"))
    assert [i.code for i in m.issues] == ["malformed-data"] and "E and G" in m.issues[0].message


def test_density_wtmass_expansion_and_duplicates(write_deck):
    text = HEAD + "PARAM,WTMASS,.002591\nMAT1,20,10.+6,,.3,.1,1.3-5,70.\nMAT4,20,200.,900.\nMAT1,20,1.,,.3\n"
    m = parse(write_deck("d.bdf", text + "ENDDATA\n"))
    mat = m.materials["20"]
    rho = mat.first("density")
    assert rho.rows[0].values[0] == pytest.approx(0.1 * 0.002591)     # mass density = RHO * WTMASS (N95 MAT1 rem. 7)
    assert rho.options["RHO"] == 0.1 and rho.options["WTMASS"] == 0.002591
    exp = mat.first("expansion")
    assert exp.rows[0].values == (1.3e-5,) and exp.options["TREF"] == 70.0
    assert mat.first("conductivity").rows[0].values == (200.0,) and mat.first("specific_heat").rows[0].values == (900.,)
    assert [d.name for d in m.duplicate_materials] == ["20"]   # MAT4 shares the MID legitimately, the 2nd MAT1 not


def test_anisotropic_cards(write_deck):
    text = HEAD + "MAT2,2,1.+5,3.+4,0.,1.+5,0.,3.5+4,2.7-9\n"
    text += "MAT8,8,1.4+5,1.0+4,.3,5.0+3,,,1.6-9\n"
    text += "MAT9,9,11.,12.,13.,14.,15.,16.,22.,+\n+,23.,24.,25.,26.,33.,34.,35.,36.,+\n"
    text += "+,44.,45.,46.,55.,56.,66.,7.8-9,1.-5\n"
    m = parse(write_deck("a.bdf", text + "ENDDATA\n"))
    assert m.materials["2"].first("elastic").rows[0].values == (1e5, 3e4, 0.0, 1e5, 0.0, 3.5e4)
    lam = m.materials["8"].first("elastic")
    assert lam.form == "lamina" and lam.rows[0].values[:4] == (1.4e5, 1.0e4, 0.3, 5.0e3)
    assert math.isnan(lam.rows[0].values[4]) and math.isnan(lam.rows[0].values[5])
    m9 = m.materials["9"].first("elastic")
    assert m9.form == "mat9" and m9.rows[0].values == (11., 12., 13., 14., 15., 16., 22., 23., 24., 25., 26., 33.,
                                                        34., 35., 36., 44., 45., 46., 55., 56., 66.)
    assert m.materials["9"].first("density").rows[0].values == (7.8e-9,)


def test_plasticity_from_mats1_tables1(write_deck):
    text = HEAD + "MAT1,1,2.0+5,,.3\nMATS1,1,10,PLASTIC,,1,1\nTABLES1,10,,,,,,,,+\n"
    text += "+,0.,0.,.001,200.,.011,300.,ENDT\n"
    m = parse(write_deck("p.bdf", text + "ENDDATA\n"))
    pl = m.materials["1"].first("plastic")
    assert pl.options["TYPE"] == "PLASTIC" and pl.options["x_axis_total_strain"] is True
    # plastic strain = total strain - stress/E: 0.001 - 200/2e5 = 0; 0.011 - 300/2e5 = 0.0095
    assert [r.values for r in pl.rows] == [pytest.approx((200.0, 0.0)), pytest.approx((300.0, 0.0095))]


def test_properties_and_roles(write_deck):
    text = HEAD + "PSHELL,1,1,2.,2,,3,,0.5,+\n+,,,4\nPCOMP,2,,,,,,,,+\n+,5,.1,0.,,,.1,45.,,+\n+,6,.2,90.\n"
    text += "PSOLID,3,1,0,2,,1\nPBAR,4,1,1.,1.,1.,1.,0.2\nPSHEAR,5,7,1.\nCONROD,9,1,2,1,1.\nCONROD,10,2,3,1,1.\n"
    m = parse(write_deck("r.bdf", text + "ENDDATA\n"))
    secs = {s.elset: s for s in m.sections}
    assert [(r.role, r.key) for r in secs["PID 1"].materials] == [
        ("membrane", "1"), ("bending", "2"), ("transverse-shear", "3"), ("coupling", "4")]
    assert [(r.role, r.key) for r in secs["PID 2"].materials] == [("ply", "5"), ("ply", "5"), ("ply", "6")]
    assert secs["PID 3"].kind == "solid" and secs["PID 3"].options["IN"] == "2"
    assert secs["PID 3"].options["ISOP"] == "1"
    assert (secs["PID 4"].kind, secs["PID 5"].kind, secs["CONROD MID 1"].kind) == ("beam", "shear", "rod")
    assert sorted((ms.kind, ms.target, ms.value) for ms in m.mass_sources) == [
        ("nonstructural-mass", "PID 1", 0.5), ("nonstructural-mass", "PID 4", 0.2)]
    (cblk,) = [b for b in m.element_blocks if b.type == "CONROD"]
    assert cblk.count == 2 and cblk.elset == "CONROD MID 1"


def test_case_control_loads_and_sol(write_deck):
    text = ("SOL 103\nCEND\nMETHOD = 1\nSUBCASE 1\n  LOAD = 7\n  TEMP(LOAD) = 3\n  TEMP(INIT) = 4\n"
            "BEGIN BULK\nGRAV,7,,9.81,0.,0.,-1.\nTEMP,3,1,100.,2,100.\nTEMPD,4,20.\nCONM2,1,1,,2.5\nENDDATA\n")
    m = parse(write_deck("s.bdf", text))
    assert m.params["SOL"] == "103"
    (step,) = m.steps
    assert step.name == "SUBCASE 1" and step.procedures[0].kind == "frequency"
    assert step.procedures[0].options["METHOD"] == "1"
    assert sorted((ld.kind, ld.value) for ld in step.loads) == [("gravity", 9.81), ("temperature", 100.0)]
    assert [ld.value for ld in m.initial_temperatures] == [20.0]
    assert [(ms.kind, ms.value) for ms in m.mass_sources] == [("point-mass", 2.5)]


@pytest.mark.parametrize("sol,kind", [("101", "static"), ("105", "buckle"), ("MODES", "frequency"),
                                      ("129", "dynamic-implicit"), ("153", "heat-steady"), ("3", "frequency")])
def test_sol_kinds(write_deck, sol, kind):
    # MYSTRAN User Manual, Executive Control (SOL numbers and names); NASTRAN-95 User's Manual EXEC.TXT, SOL card
    m = parse(write_deck("s.bdf", f"SOL {sol}\nCEND\nBEGIN BULK\nENDDATA\n"))
    assert m.steps[0].procedures[0].kind == kind


def test_coordinate_systems(write_deck):
    # CORD2R with origin (10,0,0), z along basic z, x along basic y: local (1,0,0) -> basic (10,1,0)
    # CORD2C (cylindrical, deg) in the basic system: (r=2, theta=90, z=0) -> (0,2,0)
    text = HEAD + "CORD2R,1,,10.,0.,0.,10.,0.,1.,+\n+,10.,1.,0.\nCORD2C,2,,0.,0.,0.,0.,0.,1.,+\n+,1.,0.,0.\n"
    text += "GRID,1,1,1.,0.,0.\nGRID,2,2,2.,90.,0.\nGRID,3,,0.,0.,-1.\n"
    m = parse(write_deck("c.bdf", text + "ENDDATA\n"))
    ids, xyz = m.geometry.nodes.get()
    got = dict(zip(ids.tolist(), map(tuple, np.round(xyz, 12))))
    assert got[1] == pytest.approx((10.0, 1.0, 0.0)) and got[2] == pytest.approx((0.0, 2.0, 0.0), abs=1e-12)
    assert m.geometry.exact and tuple(m.geometry.bbox_max) == pytest.approx((10.0, 2.0, 0.0))
    m2 = parse(write_deck("c2.bdf", HEAD + "GRID,1,5,1.,0.,0.\nENDDATA\n"))
    assert not m2.geometry.exact and "CP 5" in m2.geometry.note


def test_sniff():
    assert bulk.sniff(b"SOL 101\nCEND\nBEGIN BULK\nGRID,1,,0.,0.,0.\n") > 0.9
    assert bulk.sniff(b"GRID    1               0.      0.      0.\nCQUAD4  1       1       1       2\n"
                      b"MAT1    1       2.1+5           .3\n") >= 0.7
    # a CalculiX result .dat file (as ccx writes it) and a keyword deck score low
    ccx_dat = b"\n                        S T E P       1\n\n displacements (vx,vy,vz) for set NALL and time  " \
              b"0.1000000E+01\n\n         1  0.000000E+00  0.000000E+00  0.000000E+00\n"
    assert bulk.sniff(ccx_dat) < 0.3
    assert bulk.sniff(b"*HEADING\nx\n*NODE\n1,0.,0.,0.\n*MATERIAL,NAME=A\n") < 0.3


def test_bad_values_become_issues(write_deck):
    m = parse(write_deck("b.bdf", HEAD + "MAT1,1,2.1+5,,ABC\nMAT1,2,1.+400,,.3\nCQUAD4,X,1,1,2,3,4\nENDDATA\n"))
    codes = sorted(i.code for i in m.issues)
    assert codes == ["malformed-data", "malformed-data", "value-not-finite"]
    assert all(i.loc.line >= 4 for i in m.issues)


def test_no_bulk_section_and_empty(write_deck):
    m = parse(write_deck("n.bdf", "SOL 101\nCEND\nTITLE = nothing\n"))
    assert [i.code for i in m.issues] == ["no-bulk-section"]
    m = parse(write_deck("frag.bdf", "MAT1,1,2.1+5,,.3\n"))
    assert [i.code for i in m.issues] == ["no-bulk-section"] and "1" in m.materials


def test_crlf_latin1(write_deck):
    m = parse(write_deck("l.bdf", (HEAD + "$ r\xe9sum\xe9\r\nMAT1,1,2.1+5,,.3\r\nENDDATA\r\n").encode("latin-1")))
    assert [i.code for i in m.issues] == ["encoding"] and "1" in m.materials


def test_counts_match_meshio(write_deck):
    """Element counts per type on a deck of our own agree with meshio.read (external reference).

    meshio maps CHEXA -> hexahedron, CTETRA -> tetra (10 nodes: tetra10), CQUAD4 -> quad, CTRIA3 -> triangle,
    CBAR -> line (it merges CBAR/CBEAM/CROD into "line").
    """
    meshio = pytest.importorskip("meshio")
    lines = [HEAD, "PSOLID,1,1\nPSHELL,2,1,1.\nPBAR,3,1,1.,1.,1.,1.\nMAT1,1,2.1+5,,.3\n"]
    for i in range(1, 31):
        lines.append(f"GRID,{i},,{float(i)},{float(i % 3)},{float(i % 5)}\n")
    eid = 1
    for k in range(5):
        lines.append(f"CHEXA,{eid},1,1,2,3,4,5,6,+\n+,7,8\n"); eid += 1
    for k in range(3):
        lines.append(f"CTETRA,{eid},1,1,2,3,4\n"); eid += 1
    for k in range(4):
        lines.append(f"CQUAD4,{eid},2,1,2,3,4\n"); eid += 1
    for k in range(6):
        lines.append(f"CTRIA3,{eid},2,1,2,3\n"); eid += 1
    for k in range(2):
        lines.append(f"CBAR,{eid},3,1,2,0.,0.,1.\n"); eid += 1
    p = write_deck("mix.bdf", "".join(lines) + "ENDDATA\n")
    mesh = meshio.read(str(p), file_format="nastran")
    ref = {c.type: len(c.data) for c in mesh.cells}
    ref_total: dict[str, int] = {}
    for k, v in ref.items():
        ref_total[k] = ref_total.get(k, 0) + v
    m = parse(p)
    ours: dict[str, int] = {}
    for b in m.element_blocks:
        ours[b.type] = ours.get(b.type, 0) + b.count
    mapping = {"CHEXA8": "hexahedron", "CTETRA4": "tetra", "CQUAD4": "quad", "CTRIA3": "triangle", "CBAR": "line"}
    assert {mapping[k]: v for k, v in ours.items()} == ref_total
    assert m.geometry.node_count == len(mesh.points)


def test_empty_and_comment_only(write_deck):
    for text in ("", "$ only a comment\n\n   \n"):
        m = parse(write_deck("e.bdf", text))
        assert [i.code for i in m.issues] == ["empty-file"]


def test_cr_line_ends_and_huge_ids(write_deck):
    p = write_deck("cr.bdf", (HEAD + "MAT1,1,2.1+5,,.3\nGRID*,1" + "1" * 40 + ",,1.,2.\n*,3.\nENDDATA\n")
                   .replace("\n", "\r").encode())
    assert bulk.sniff(p.read_bytes()) > 0.9
    m = parse(p)
    assert m.materials["1"].loc.line == 4 and m.geometry.node_count == 1


def test_blank_node_fields_counted_both_ways(write_deck):
    # the shortcut (no blank field possible) and the field-by-field count give the same types
    plain = HEAD + "CTETRA,1,2,1,2,3,4\nCTETRA,2,2,1,2,3,4,5,6,+\n+,7,8,9,10\nENDDATA\n"
    blanks = HEAD + "CTETRA,1,2,1,2,3,4,,\nCTETRA,2,2,1,2,3,4,5,,+\n+,7,8,9,10\nENDDATA\n"
    a = sorted((b.type, b.count) for b in parse(write_deck("a.bdf", plain)).element_blocks)
    b = sorted((b.type, b.count) for b in parse(write_deck("b.bdf", blanks)).element_blocks)
    assert a == b == [("CTETRA10", 1), ("CTETRA4", 1)]


def test_free_field_with_two_values_in_one_field(write_deck):
    # a missing comma puts two numbers in one free field (MYSTRAN FFIELD.f90: *ERROR 1002 past 16 characters)
    m = parse(write_deck("z.bdf", HEAD + "PSHELL,1,1,.04,2,1.0,3,1.0,,+P\n+P,2.0-2,2.0-2  4,\nENDDATA\n"))
    (iss,) = m.issues
    assert iss.code == "malformed-data" and "Z2" in iss.message and iss.loc.line == 4
    assert [r.role for r in m.sections[0].materials] == ["membrane", "bending", "transverse-shear"]


# --------------------------------------------------------------------------- runs of mesh cards (big decks)


def _strip_deck(n: int, odd: bool = False) -> str:
    """A strip of n CHEXA (2 PIDs), a few CTETRA/CQUAD4, free field; ``odd`` mixes in lines runs must not take."""
    out = [HEAD]
    nx = n + 1
    gid = 0
    for i in range(nx):
        for j in (0, 1):
            for k in (0, 1):
                gid += 1
                x = f"{i * 0.5}" if not (odd and gid == 1501) else "%.1f+0" % (i * 0.5)    # compact exponent
                out.append(f"GRID,{gid},,{x},{j * 2.0 - 1.0},{k * 3.0}\n")
                if odd and gid == 301:
                    out.append("$ a comment between nodes\n")
                if odd and gid == 2003:
                    out.append("GRID*   9999999                         7.0             1.0\n*       2.0\n")
    if odd:
        out.append("GRID,12a,,1.,2.,3.\n")
    for e in range(n):
        a = 4 * e + 1
        pid = 1 if e < n // 3 else 2
        out.append(f"CHEXA,{e + 1},{pid},{a},{a + 4},{a + 6},{a + 2},{a + 1},{a + 5},+\n+,{a + 7},{a + 3}\n")
        if odd and e == 700:
            out.append(small("CHEXA", str(n + 5), "2", "1", "5", "7", "3", "2", "6") + small("", "8", "4"))
        if odd and e == 1200:       # a trailing comma (a blank last field): read field by field
            out.append("CHEXA,%d,2,1,5,7,3,2,6,+\n+,8,4,\n" % (n + 9))
        if odd and e == 1500:       # a blank PID (the EID then)
            out.append("CHEXA,%d,,1,5,7,3,2,6,+\n+,8,4\n" % (n + 11))
        if odd and e == 900:
            out.append("CHEXA,%d,3,1,5,7,3,2,6,+\n+,8,4,9,10,11,12,13,14,+\n+,15,16,17,18,19,20,21,22\n" % (n + 7))
    for t in range(5):
        out.append(f"CTETRA,{n + 100 + t},3,1,2,3,4\nCQUAD4,{n + 200 + t},4,1,2,3,4\n")
    out.append("PSOLID,1,1\nPSOLID,2,1\nPSOLID,3,1\nPSHELL,4,1,1.\nMAT1,1,2.1+5,,.3,7.85-9\nENDDATA\n")
    return "".join(out)


def _summary(m) -> dict:
    """What the parser read, with ids/connectivity/nodes sorted by id and values (their order is not part of the model)."""
    g = m.geometry
    gid, xyz = g.nodes.get()
    o = np.lexsort((*xyz.T[::-1], gid))           # by id, then coordinates (ids may repeat)
    gid, xyz = gid[o], xyz[o]
    blocks = []
    for b in m.element_blocks:
        ids, conn = b.ids.get(), b.conn.get()
        o = np.lexsort((*conn.T[::-1], ids))
        blocks.append((b.type, b.type_as_written, b.count, b.loc.line, b.elset, b.nodes, ids[o].tolist(),
                       conn[o].tolist()))
    return {"issues": [(i.code, i.message, i.loc.line) for i in m.issues], "blocks": blocks,
            "sets": {k: (v.blocks, [x.line for x in v.defined_at]) for k, v in m.element_sets.items()},
            "geo": (g.node_count, g.bbox_min.tolist(), g.bbox_max.tolist(), g.exact, g.note),
            "nodes": (gid.tolist(), xyz.tolist()), "skipped": m.extras.get("skipped_cards")}


@pytest.mark.parametrize("odd", [False, True])
@pytest.mark.parametrize("small_step", [256, 1 << 16])
def test_runs_read_the_same_as_the_line_table(write_deck, monkeypatch, odd, small_step):
    """Blocks read as runs of one card (small blocks here) give the same model as the line-by-line reader."""
    from linter.parsers.bulk import lines as bulk_lines, parser as bulk_parser, runs as bulk_runs

    p = write_deck("strip.bdf", _strip_deck(2000, odd))
    with monkeypatch.context() as mp:                       # no runs: everything through the line table
        mp.setattr(bulk_parser, "carve", lambda data, lo, line0, accept: ([(lo, len(data), line0)], []))
        ref = _summary(parse(p))
    calls = []
    real_summary = bulk_runs.element_summary
    monkeypatch.setattr(bulk_runs, "element_summary", lambda *a: calls.append(1) or real_summary(*a))
    monkeypatch.setattr(bulk_lines, "BLOCK", 4096)
    monkeypatch.setattr(bulk_lines, "SMALL", small_step)
    got = _summary(parse(p))
    assert len(calls) > 10                                  # element runs were taken
    assert got == ref
    if odd:   # the odd lines were read by the line table: the bad GRID id and the 3-line CHEXA20
        assert any(i[0] == "malformed-data" and "GRID id" in i[1] for i in got["issues"])
        assert ("CHEXA20", "CHEXA", 1) in [b[:3] for b in got["blocks"]]


def test_counts_per_type_and_pid_with_runs(write_deck, monkeypatch):
    """Counts per (type, PID) from run blocks are exact; totals agree with meshio.read (external reference)."""
    meshio = pytest.importorskip("meshio")
    from linter.parsers.bulk import lines as bulk_lines

    monkeypatch.setattr(bulk_lines, "BLOCK", 4096)
    n = 3000
    p = write_deck("strip.bdf", _strip_deck(n))
    m = parse(p)
    got = {(b.type, b.elset): b.count for b in m.element_blocks}
    # by construction of _strip_deck: the first n // 3 hexahedra have PID 1, the rest PID 2
    assert got == {("CHEXA8", "PID 1"): n // 3, ("CHEXA8", "PID 2"): n - n // 3, ("CTETRA4", "PID 3"): 5,
                   ("CQUAD4", "PID 4"): 5}
    first = {b.elset: b.loc.line for b in m.element_blocks}
    assert first["PID 1"] == 4 + 4 * (n + 1) and first["PID 2"] == first["PID 1"] + 2 * (n // 3)
    mesh = meshio.read(str(p), file_format="nastran")
    ref = {}
    for c in mesh.cells:
        ref[c.type] = ref.get(c.type, 0) + len(c.data)
    assert ref == {"hexahedron": n, "tetra": 5, "quad": 5}
    assert m.geometry.node_count == len(mesh.points) == 4 * (n + 1)


def test_sampled_bounding_box_is_marked_and_inside(write_deck, monkeypatch):
    """Above the exact limit the box comes from evenly spaced GRID lines: inexact, noted, inside the true box."""
    from linter.parsers import sampling
    from linter.parsers.bulk import lines as bulk_lines

    monkeypatch.setattr(bulk_lines, "BLOCK", 4096)
    monkeypatch.setattr(sampling, "EXACT_NODES_LIMIT", 1000)
    monkeypatch.setattr(sampling, "MIN_SAMPLE", 200)
    n = 3000
    m = parse(write_deck("strip.bdf", _strip_deck(n)))
    g = m.geometry
    assert g.node_count == 4 * (n + 1)
    assert not g.exact and "sampled" in g.note
    gid, xyz = g.nodes.get()                                  # all nodes, read on demand
    assert gid.size == g.node_count and np.array_equal(np.sort(gid), np.arange(1, g.node_count + 1))
    lo, hi = xyz.min(axis=0), xyz.max(axis=0)
    assert np.all(g.bbox_min >= lo) and np.all(g.bbox_max <= hi)
    # evenly spaced samples of a strip 0.5 * n long: the estimate misses at most a few percent of it
    assert g.bbox_max[0] - g.bbox_min[0] > 0.95 * (hi[0] - lo[0])
    assert np.allclose(g.bbox_min[1:], lo[1:]) and np.allclose(g.bbox_max[1:], hi[1:])
