"""The FEBio parser: versions, materials, mesh blocks, domains and analysis (invented models)."""
from __future__ import annotations

import numpy as np
import pytest

from febio_decks import MAT_NEO, feb, parse_text
from linter.parsers import detect
from linter.parsers.febio import scan as S
from linter.physics import aniso as A


def _block(model, name, kind, form=None):
    return next(b for b in model.materials[name].blocks if b.kind == kind and (form is None or b.form == form))


def test_sniff_and_detect():
    text = feb().encode()
    assert detect("x.feb", text[:65536]) == "febio"
    assert detect("x.feb", b'<?xml version="1.0"?>\n<febio_optimize version="2.0"/>') is None


def test_neo_hookean_model_with_lines(tmp_path):
    text = feb()
    m = parse_text(tmp_path, text)
    lines = text.splitlines()
    blk = _block(m, "Rubber", "elastic", "iso")
    assert blk.rows[0].values == (6.0, 0.45)
    assert lines[m.materials["Rubber"].loc.line - 1].strip().startswith('<material id="1"')
    # every line number points at the element it names, though the mesh blocks were cut out
    eb = m.element_blocks[0]
    assert lines[eb.loc.line - 1].strip().startswith('<Elements type="hex8"')
    assert lines[m.sections[0].loc.line - 1].strip().startswith("<SolidDomain")
    assert eb.count == 2 and eb.type == "HEX8" and eb.nodes == 8
    assert m.geometry.node_count == 12
    np.testing.assert_allclose(m.geometry.bbox_min, [0, 0, 0])
    np.testing.assert_allclose(m.geometry.bbox_max, [2, 1, 1])
    assert [p.kind for _s, p in m.procedures()] == ["static"]
    assert m.sections[0].elset == "Part1" and m.sections[0].materials[0].key == "Rubber"


def test_element_arrays_are_lazy_and_right(tmp_path):
    m = parse_text(tmp_path, feb(nx=3))
    eb = m.element_blocks[0]
    assert not eb.conn.loaded
    assert eb.ids.get().tolist() == [1, 2, 3]
    assert eb.conn.get()[1].tolist() == [5, 9, 11, 7, 6, 10, 12, 8]
    ids, xyz = m.geometry.nodes.get()
    assert ids.tolist() == list(range(1, 17)) and xyz.shape == (16, 3)


def test_element_lines_with_other_attributes_fall_back(tmp_path):
    elems = ('\t\t<Elements type="hex8" name="Part1">\n'
             '\t\t\t<elem id="1" extra="x">1,5,7,3,2,6,8,4</elem>\n'
             '\t\t\t<elem id="2">5,9,11,7,6,10,12,8</elem>\n\t\t</Elements>')
    m = parse_text(tmp_path, feb(elements=elems))
    assert m.element_blocks[0].conn.get().shape == (2, 8)


def test_mooney_rivlin_maps_c1_c2_k(tmp_path):
    # FEBio User's Manual 4.0, 4.1.2 Mooney-Rivlin: W = c1 (I1~ - 3) + c2 (I2~ - 3) + U(J), U = k/2 (ln J)^2;
    # with the neutral layout (C10, C01, D1): C10 = c1, C01 = c2, D1 = 2/k (K0 = k).
    mat = """<material id="1" name="Rubber" type="Mooney-Rivlin">
\t\t\t<c1>0.5</c1><c2>0.1</c2><k>1200</k>
\t\t</material>"""
    m = parse_text(tmp_path, feb(mat))
    hb = _block(m, "Rubber", "hyperelastic")
    assert hb.form == "mooney-rivlin" and hb.rows[0].values == pytest.approx((0.5, 0.1, 2 / 1200))
    pen = _block(m, "Rubber", "other", "uncoupled-bulk")
    assert pen.rows[0].values == pytest.approx((1200, 1.2))      # mu0 = 2 (c1 + c2)
    # the solver's default for an uncoupled material on hex8 is the three-field domain (FEBio source,
    # FEModelBuilder m_b3field_hex = true; FESolidDomainFactory)
    assert m.element_blocks[0].type == "HEX8/THREE-FIELD"


def test_three_field_off_and_explicit_formulations(tmp_path):
    mat = '<material id="1" name="Rubber" type="Mooney-Rivlin"><c1>1</c1><c2>0</c2><k>100</k></material>'
    m = parse_text(tmp_path, feb(mat, domains='<SolidDomain name="Part1" mat="Rubber" three_field="off"/>'))
    assert m.element_blocks[0].type == "HEX8"
    m = parse_text(tmp_path, feb(MAT_NEO, etype="tet4",
                                 domains='<SolidDomain name="Part1" mat="Rubber" type="ut4-solid"/>'))
    assert m.element_blocks[0].type == "TET4/UT4"
    m = parse_text(tmp_path, feb(MAT_NEO, etype="tet4"))
    assert m.element_blocks[0].type == "TET4"        # a coupled material: plain displacement domain


def test_ogden_maps_c_over_two(tmp_path):
    # FEBio User's Manual 4.0, Ogden: W = sum c_i/m_i^2 (l1~^m_i + l2~^m_i + l3~^m_i - 3) + U(J);
    # the neutral Ogden form is sum 2 mu_i/alpha_i^2 (...), so mu_i = c_i/2, alpha_i = m_i, and the
    # small-strain shear modulus is sum c_i/2 (expand l^m = exp(m e) to second order).
    mat = """<material id="1" name="Pad" type="Ogden">
\t\t\t<k>500</k><c1>0.4</c1><m1>2</m1><c2>0.2</c2><m2>-2</m2><c3>0</c3><m3>1</m3>
\t\t</material>"""
    m = parse_text(tmp_path, feb(mat, domains='<SolidDomain name="Part1" mat="Pad"/>'))
    hb = _block(m, "Pad", "hyperelastic")
    assert hb.form == "ogden-2"
    assert hb.rows[0].values == pytest.approx((0.2, 2.0, 0.1, -2.0, 2 / 500, 0.0))
    assert _block(m, "Pad", "other", "uncoupled-bulk").rows[0].values == pytest.approx((500, 0.3))


def test_ogden_unconstrained_bulk(tmp_path):
    # W = c_p/2 (J-1)^2 + sum c_i/m_i^2 (l1^m_i + l2^m_i + l3^m_i - 3 - m_i ln J): at small strain
    # lambda = c_p, mu = sum c_i/2, so K0 = c_p + 2 mu/3 (derived beside the mapping; from memory of the manual)
    mat = """<material id="1" name="Pad" type="Ogden unconstrained">
\t\t\t<cp>100</cp><c1>3</c1><m1>2</m1>
\t\t</material>"""
    m = parse_text(tmp_path, feb(mat, domains='<SolidDomain name="Part1" mat="Pad"/>'))
    vals = _block(m, "Pad", "hyperelastic").rows[0].values
    assert vals[:2] == pytest.approx((1.5, 2.0))
    assert 2 / vals[2] == pytest.approx(100 + 3 / 3)


def test_orthotropic_v31_becomes_nu13(tmp_path):
    # FEBio gives v31 (strain in 1 from stress in 3); the neutral layout holds nu13. Reciprocity of the
    # compliance (S13 = -nu13/E1 = -nu31/E3; Jones, Mechanics of Composite Materials, eq. 2.64) gives
    # nu13 = v31 E1/E3.
    mat = """<material id="1" name="Ply" type="orthotropic elastic">
\t\t\t<E1>100</E1><E2>10</E2><E3>20</E3><v12>0.3</v12><v23>0.25</v23><v31>0.05</v31>
\t\t\t<G12>5</G12><G23>4</G23><G31>6</G31>
\t\t</material>"""
    m = parse_text(tmp_path, feb(mat, domains='<SolidDomain name="Part1" mat="Ply"/>'))
    blk = _block(m, "Ply", "elastic", "engineering")
    e1, e2, e3, n12, n13, n23, g12, g13, g23 = blk.rows[0].values
    assert n13 == pytest.approx(0.05 * 100 / 20)
    assert (g12, g13, g23) == (5, 6, 4)
    s = A.compliance_engineering([blk.rows[0].values])[0]
    assert s[2, 0] == pytest.approx(-0.05 / 20)          # FEBio's S31 = -v31/E3
    assert s[0, 2] == pytest.approx(s[2, 0])


def test_mixtures_and_biphasic_components(tmp_path):
    mat = """<material id="1" name="Cart" type="biphasic">
\t\t\t<phi0>0.2</phi0>
\t\t\t<solid type="solid mixture">
\t\t\t\t<solid type="neo-Hookean"><density>1</density><E>0.5</E><v>0.1</v></solid>
\t\t\t\t<solid type="fiber-exp-pow"><alpha>0</alpha><beta>2</beta><ksi>5</ksi></solid>
\t\t\t</solid>
\t\t\t<permeability type="perm-const-iso"><perm>0.001</perm></permeability>
\t\t</material>"""
    m = parse_text(tmp_path, feb(mat, domains='<SolidDomain name="Part1" mat="Cart"/>'))
    mat_ = m.materials["Cart"]
    assert _block(m, "Cart", "elastic").rows[0].values == (0.5, 0.1)
    assert _block(m, "Cart", "density").rows[0].values == (1.0,)
    what = {u.what for u in m.unchecked if u.material == "Cart"}
    assert any("fiber-exp-pow" in w for w in what) and any("permeability" in w for w in what)
    assert mat_.has("user")      # a mechanical law the checks do not read


def test_uncoupled_mixture_uses_its_own_k(tmp_path):
    mat = """<material id="1" name="Lig" type="uncoupled solid mixture">
\t\t\t<k>300</k>
\t\t\t<solid type="Mooney-Rivlin"><k>0</k><c1>1</c1><c2>0.5</c2></solid>
\t\t</material>"""
    m = parse_text(tmp_path, feb(mat, domains='<SolidDomain name="Part1" mat="Lig"/>'))
    assert _block(m, "Lig", "other", "uncoupled-bulk").rows[0].values == pytest.approx((300, 3.0))
    assert _block(m, "Lig", "hyperelastic").rows[0].values[2] == pytest.approx(2 / 300)


def test_rigid_body_and_fluid(tmp_path):
    mats = """<material id="1" name="Rubber" type="neo-Hookean"><E>6</E><v>0.45</v></material>
\t\t<material id="2" name="Plate" type="rigid body"><density>7.8e-9</density><E>1</E><v>0</v></material>
\t\t<material id="3" name="Oil" type="fluid"><density>8.7e-10</density><k>1500</k></material>"""
    m = parse_text(tmp_path, feb(mats))
    assert not m.materials["Plate"].has("elastic") and m.materials["Plate"].has("density")
    assert m.materials["Plate"].has("user")
    # the unchecked law keeps the FEBio type as its form, so reports say what it is
    assert _block(m, "Plate", "user").form == "rigid body"
    assert _block(m, "Oil", "other", "fluid").rows[0].values == (1500.0,)


def test_parameters_by_load_curve_or_expression_are_unchecked(tmp_path):
    mat = """<material id="1" name="Rubber" type="neo-Hookean">
\t\t\t<E lc="1">6</E>
\t\t\t<v type="math">0.3+0.1*X</v>
\t\t</material>"""
    m = parse_text(tmp_path, feb(mat))
    assert not m.materials["Rubber"].has("elastic")
    lines = feb(mat).splitlines()
    got = {u.what: u.loc.line for u in m.unchecked}
    assert "<E lc" in lines[got["E"] - 1] and "<v type" in lines[got["v"] - 1]


@pytest.mark.parametrize("version", ["3.0", "2.5"])
def test_older_versions(tmp_path, version):
    if version == "2.5":
        # 2.5 keeps the mesh in <Geometry> and names the material by id on <Elements mat=...>
        elems = '\t\t<Elements type="hex8" mat="1" elset="Part1">\n' + feb().split('name="Part1">\n')[1].split(
            "\t\t</Elements>")[0] + "\t\t</Elements>"
        text = feb(version="2.5", elements=elems, domains="").replace("<Mesh>", "<Geometry>").replace(
            "</Mesh>", "</Geometry>").replace("\t<MeshDomains>\n\t\t\n\t</MeshDomains>\n", "")
    else:
        text = feb(version=version)
    m = parse_text(tmp_path, text)
    assert not m.issues
    assert m.sections and m.sections[0].materials[0].key == "Rubber"
    assert m.element_blocks[0].count == 2 and m.geometry.node_count == 12


def test_unsupported_version_is_one_clear_finding(tmp_path):
    m = parse_text(tmp_path, feb(version="1.2"))
    assert [i.code for i in m.issues] == ["unsupported-version"]
    assert "1.2" in m.issues[0].message and m.issues[0].loc.line == 2
    assert not m.materials


def test_domain_naming_a_missing_part_and_material(tmp_path):
    m = parse_text(tmp_path, feb(domains='<SolidDomain name="Part9" mat="Rubbr"/>'))
    assert m.sections[0].elset == "Part9" and m.sections[0].materials[0].key == "Rubbr"


def test_dynamic_steps_and_gravity(tmp_path):
    extra = """\t<Loads>
\t\t<body_load type="const"><x>0</x><y>0</y><z>-9810</z></body_load>
\t</Loads>
\t<Step>
\t\t<step id="1" name="Drop"><Control><analysis>DYNAMIC</analysis></Control></step>
\t</Step>"""
    m = parse_text(tmp_path, feb(extra=extra))
    assert [(s.name, s.procedures[0].kind) for s in m.steps] == [("model", "static"), ("Drop", "dynamic-implicit")]
    g = m.steps[0].loads[0]
    assert g.kind == "gravity" and g.value == pytest.approx(9810)


def test_scan_keeps_line_numbers_and_counts():
    data = feb(nx=40).encode()
    sc = S.scan(data)
    assert sc.skeleton.count(b"\n") == data.count(b"\n")
    counts = {b.tag: b.count for b in sc.blocks}
    assert counts == {"Nodes": 164, "Elements": 40}
    assert b"<elem" not in sc.skeleton and b"<node " not in sc.skeleton


def test_mesh_tag_inside_a_comment_is_not_cut():
    data = feb().replace("<Mesh>", "<Mesh>\n<!-- <Nodes name=\"x\"> old </Nodes> -->").encode()
    sc = S.scan(data)
    assert [b.tag for b in sc.blocks] == ["Nodes", "Elements"]
    assert all(b.count for b in sc.blocks)


def test_nonfinite_parameter_is_an_issue(tmp_path):
    mat = '<material id="1" name="Rubber" type="neo-Hookean"><E>inf</E><v>0.3</v></material>'
    m = parse_text(tmp_path, feb(mat))
    assert [i.code for i in m.issues] == ["value-not-finite"]


def test_sample_model_is_found_and_clean():
    from pathlib import Path

    from febio_decks import check_path
    from linter.config import Config
    from linter.discovery import discover
    from linter.findings import RunResult

    samples = Path(__file__).resolve().parents[2] / "sample_decks"
    found = discover([str(samples)], RunResult(), Config())
    feb_files = [(Path(p).name, fmt) for p, fmt in found if p.endswith(".feb")]
    assert feb_files == [("pv40_coupling_insert.feb", "febio")]
    report = check_path(samples / "pv40_coupling_insert.feb")
    assert report.findings == []
    assert report.summary["elements"] == 64 and report.summary["materials"] == 3
    # the uncoupled insert on the solver's three-field hex8, the hubs as rigid bodies
    assert report.summary["element_types"] == {"HEX8/RIGID": 32, "HEX8/THREE-FIELD": 32}


def test_trans_iso_mooney_rivlin_reads_the_matrix(tmp_path):
    # FEBio User's Manual 4.0, trans iso Mooney-Rivlin: c1, c2 (matrix, as Mooney-Rivlin), c3..c5 and
    # lam_max (fibres), k (bulk modulus)
    mat = """<material id="1" name="Tendon" type="trans iso Mooney-Rivlin">
\t\t\t<k>100</k><c1>1</c1><c2>0.5</c2><c3>1</c3><c4>5</c4><c5>10</c5><lam_max>1.05</lam_max>
\t\t\t<fiber type="vector"><vector>1,0,0</vector></fiber>
\t\t</material>"""
    m = parse_text(tmp_path, feb(mat, domains='<SolidDomain name="Part1" mat="Tendon"/>'))
    assert _block(m, "Tendon", "hyperelastic").rows[0].values == pytest.approx((1, 0.5, 0.02))
    assert any("fibre" in u.what for u in m.unchecked)
    assert m.sections[0].orientation.startswith("fiber")


def test_veronda_westmann_initial_shear(tmp_path):
    # FEBio User's Manual 4.0, Veronda-Westmann: W = c1 (exp(c2 (I1~ - 3)) - 1) - c1 c2/2 (I2~ - 3) + U(J);
    # at small strain W1 = c1 c2, W2 = -c1 c2/2, so mu0 = 2 (W1 + W2) = c1 c2
    mat = '<material id="1" name="Skin" type="Veronda-Westmann"><k>300</k><c1>0.1</c1><c2>3</c2></material>'
    m = parse_text(tmp_path, feb(mat, domains='<SolidDomain name="Part1" mat="Skin"/>'))
    assert _block(m, "Skin", "other", "uncoupled-bulk").rows[0].values == pytest.approx((300, 0.3))
    assert not m.materials["Skin"].has("hyperelastic")


def test_every_element_shape_is_in_the_catalogue():
    from linter.catalogue import Catalogue
    from linter.parsers.febio.mesh import NODES

    cat = Catalogue.load()
    for shape, n in NODES.items():
        tech = cat.get(shape.upper(), "febio")
        assert tech is not None, shape
        assert tech.nodes == n, shape


def test_utf16_file_is_read(tmp_path):
    text = feb().replace('encoding="ISO-8859-1"', 'encoding="UTF-16"')
    m = parse_text(tmp_path, "\ufeff".encode("utf-16-le") + text.encode("utf-16-le"))
    assert not m.issues and "Rubber" in m.materials
