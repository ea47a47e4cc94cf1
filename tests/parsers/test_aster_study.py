"""code_aster studies: one test per keyword the reader takes from a command file, run profile or mesh.

Sources: the solver's command catalogue (code_aster source, code_aster/Cata/Commands/<command>.py: keywords,
defaults and bounds) and its user documentation, U4.43.01 DEFI_MATERIAU, U4.41.01 AFFE_MODELE,
U4.43.03 AFFE_MATERIAU, U4.42.01 AFFE_CARA_ELEM, U4.21.01 LIRE_MAILLAGE, U3.01.00 the .mail mesh format,
U1.04.00 the run profile (.export) (document numbers from memory). Material values: EN 1993-1-1 3.2.6
(structural steel E = 210000 N/mm2, nu = 0.3, alpha = 12e-6 /K).
"""
from __future__ import annotations

import textwrap

import pytest

from linter.check import check_paths
from linter.config import Config
from linter.parsers import ParseOptions, aster

HEX_MAIL = """TITRE
 pv40 test block
FINSF
COOR_3D
 N1 0. 0. 0.
 N2 1. 0. 0.
 N3 1. 1. 0.
 N4 0. 1. 0.
 N5 0. 0. 1.
 N6 1. 0. 1.
 N7 1. 1. 1.
 N8 0. 1. 1.
FINSF
HEXA8
 M1 N1 N2 N3 N4 N5 N6 N7 N8
FINSF
QUAD4
 F1 N1 N2 N3 N4
FINSF
GROUP_MA
 BLOC M1
FINSF
GROUP_MA NOM=BASE
 F1
FINSF
FIN
"""

EXPORT = "P time_limit 60\nF comm s.comm D 1\nF mail s.mail D 20\n"


def study(tmp_path, comm: str, mail: str = HEX_MAIL, export: str | None = EXPORT):
    (tmp_path / "s.comm").write_text(textwrap.dedent(comm), encoding="utf-8")
    if mail is not None:
        (tmp_path / "s.mail").write_text(mail, encoding="utf-8")
    if export is not None:
        (tmp_path / "s.export").write_text(export, encoding="utf-8")
        top = tmp_path / "s.export"
    else:
        top = tmp_path / "s.comm"
    return aster.parse(str(top), ParseOptions())


HEAD = """\
DEBUT()
MA = LIRE_MAILLAGE(FORMAT='ASTER')
MO = AFFE_MODELE(MAILLAGE=MA, AFFE=_F(TOUT='OUI', PHENOMENE='MECANIQUE', MODELISATION='3D'))
"""


def test_elas_reads_e_nu_rho_alpha_and_names_the_variable(tmp_path):
    # U4.43.01 ELAS: E, NU, RHO, ALPHA; EN 1993-1-1 3.2.6 steel values
    m = study(tmp_path, HEAD + """\
STEEL = DEFI_MATERIAU(ELAS=_F(E=210000.,
                              NU=0.3,
                              RHO=7.85e-9, ALPHA=12e-6))
CM = AFFE_MATERIAU(MAILLAGE=MA, AFFE=_F(TOUT='OUI', MATER=STEEL))
RES = MECA_STATIQUE(MODELE=MO, CHAM_MATER=CM)
""")
    mat = m.materials["STEEL"]
    assert mat.name == "STEEL" and mat.loc.line == 4
    el = mat.first("elastic")
    assert el.rows[0].values == (210000.0, 0.3)
    assert el.rows[0].loc.line == 5          # the line of NU
    assert mat.first("density").rows[0].values == (7.85e-9,)
    assert mat.first("expansion").rows[0].values == (12e-6,)
    assert [p.kind for _s, p in m.procedures()] == ["static"]


def test_names_bound_earlier_and_arithmetic(tmp_path):
    m = study(tmp_path, HEAD + """\
YOUNG = 2.1E5
NU_ = 0.6 / 2
STEEL = DEFI_MATERIAU(ELAS=_F(E=YOUNG * 1.0, NU=NU_, RHO=-(-7.85e-9)))
""")
    assert m.materials["STEEL"].first("elastic").rows[0].values == pytest.approx((210000.0, 0.3))


def test_elas_fo_gives_one_row_per_temperature(tmp_path):
    # U4.43.01 ELAS_FO: functions of TEMP (DEFI_FONCTION VALE = x1, y1, x2, y2 ...); DEFI_CONSTANTE VALE
    m = study(tmp_path, HEAD + """\
EF = DEFI_FONCTION(NOM_PARA='TEMP', VALE=(20., 210000., 400., 180000.))
NUF = DEFI_CONSTANTE(VALE=0.3)
STEEL = DEFI_MATERIAU(ELAS_FO=_F(E=EF, NU=NUF))
""")
    el = m.materials["STEEL"].first("elastic")
    assert [(r.temperature, r.values) for r in el.rows] == [(20.0, (210000.0, 0.3)), (400.0, (180000.0, 0.3))]


def test_elas_orth_uses_l_t_n_as_1_2_3(tmp_path):
    # U4.43.01 ELAS_ORTH: E_L, E_T, E_N, NU_LT, NU_LN, NU_TN, G_LT, G_LN, G_TN
    m = study(tmp_path, HEAD + """\
PLY = DEFI_MATERIAU(ELAS_ORTH=_F(E_L=140000., E_T=10000., E_N=10000., NU_LT=0.3, NU_LN=0.3, NU_TN=0.45,
                                 G_LT=5000., G_LN=5000., G_TN=3500.))
""")
    blk = m.materials["PLY"].first("elastic")
    assert blk.form == "engineering"
    assert dict(zip(blk.layout, blk.rows[0].values)) == {
        "E1": 140000.0, "E2": 10000.0, "E3": 10000.0, "nu12": 0.3, "nu13": 0.3, "nu23": 0.45,
        "G12": 5000.0, "G13": 5000.0, "G23": 3500.0}


def test_elas_istr_is_transversely_isotropic(tmp_path):
    # U4.43.01 ELAS_ISTR: isotropic in the L-T plane, G_LT = E_L / (2 (1 + NU_LT))
    m = study(tmp_path, HEAD + """\
M = DEFI_MATERIAU(ELAS_ISTR=_F(E_L=10000., E_N=5000., NU_LT=0.25, NU_LN=0.2, G_LN=2000.))
""")
    v = dict(zip(m.materials["M"].first("elastic").layout, m.materials["M"].first("elastic").rows[0].values))
    assert v["E2"] == v["E1"] == 10000.0 and v["G12"] == pytest.approx(4000.0) and v["G23"] == 2000.0


def test_elas_hyper_maps_k_to_d1(tmp_path):
    # U4.43.01 ELAS_HYPER: C10, C01, C20, K (bulk modulus); D1 = 2/K (the polynomial convention of the model)
    m = study(tmp_path, HEAD + "R = DEFI_MATERIAU(ELAS_HYPER=_F(C10=0.5, C01=0.1, K=1000.))\n")
    blk = m.materials["R"].first("hyperelastic")
    assert blk.form == "polynomial-1" and blk.rows[0].values == pytest.approx((0.5, 0.1, 0.002))


def test_ther_gives_conductivity_and_volumetric_heat_capacity(tmp_path):
    # U4.43.01 THER: LAMBDA, RHO_CP (rho * c per unit volume)
    m = study(tmp_path, HEAD + "T = DEFI_MATERIAU(THER=_F(LAMBDA=45.e-3, RHO_CP=3.6e-3))\n")
    mat = m.materials["T"]
    assert mat.first("conductivity").rows[0].values == (0.045,)
    assert mat.first("specific_heat").form == "volumetric"


def test_ecro_line_is_a_one_point_table_with_its_slope(tmp_path):
    # U4.43.01 ECRO_LINE: D_SIGM_EPSI (slope after yield), SY (yield stress)
    m = study(tmp_path, HEAD + """\
S = DEFI_MATERIAU(ELAS=_F(E=210000., NU=0.3), ECRO_LINE=_F(D_SIGM_EPSI=2000., SY=355.))
""")
    blk = m.materials["S"].first("plastic")
    assert blk.rows[0].values == (355.0, 0.0)
    assert blk.options["D_SIGM_EPSI"] == [(None, 2000.0)]


def test_traction_curve_becomes_plastic_strain_table(tmp_path):
    # U4.43.01 TRACTION: SIGM = f(EPSI) total strain; rctrac.F90 takes E = sigma_1/eps_1, p = eps - sigma/E
    m = study(tmp_path, HEAD + """\
CURVE = DEFI_FONCTION(NOM_PARA='EPSI', VALE=(0.002, 420., 0.012, 520.))
S = DEFI_MATERIAU(ELAS=_F(E=210000., NU=0.3), TRACTION=_F(SIGM=CURVE))
""")
    rows = m.materials["S"].first("plastic").rows
    assert rows[0].values == (420.0, 0.0)
    assert rows[1].values[1] == pytest.approx(0.012 - 520.0 / 210000.0)


def test_other_behaviours_are_listed_unchecked(tmp_path):
    m = study(tmp_path, HEAD + "S = DEFI_MATERIAU(ELAS=_F(E=1., NU=0.3), LEMAITRE=_F(N=11., UN_SUR_K=1e-3))\n")
    assert any(u.what == "DEFI_MATERIAU LEMAITRE" and u.material == "S" for u in m.unchecked)


def test_affe_modele_gives_formulation_per_cell_and_skips_faces(tmp_path):
    # U4.41.01 AFFE_MODELE: MODELISATION per group; faces of a 3D model carry loads only
    m = study(tmp_path, HEAD + """\
S = DEFI_MATERIAU(ELAS=_F(E=210000., NU=0.3))
CM = AFFE_MATERIAU(MAILLAGE=MA, AFFE=_F(GROUP_MA='BLOC', MATER=S))
""")
    assert [(b.type, b.count) for b in m.element_blocks] == [("3D/HEXA8", 1)]
    assert m.sections[0].elset_name == "BLOC" and m.sections[0].materials[0].key == "S"


def test_group_the_mesh_lacks_is_a_model_finding(tmp_path):
    m = study(tmp_path, HEAD + """\
S = DEFI_MATERIAU(ELAS=_F(E=210000., NU=0.3))
CM = AFFE_MATERIAU(MAILLAGE=MA, AFFE=_F(GROUP_MA='BLOK', MATER=S))
""")
    assert m.sections[0].elset == "BLOK" and "BLOK" not in m.element_sets


def test_mater_that_is_not_a_material(tmp_path):
    m = study(tmp_path, HEAD + """\
F = DEFI_CONSTANTE(VALE=1.)
CM = AFFE_MATERIAU(MAILLAGE=MA, AFFE=_F(TOUT='OUI', MATER=F))
""")
    ref = m.sections[0].materials[0]
    assert ref.name == "F" and ref.key not in m.materials


def test_pesanteur_and_modes_need_density(tmp_path):
    # AFFE_CHAR_MECA PESANTEUR=_F(GRAVITE, DIRECTION); CALC_MODES needs the mass matrix
    m = study(tmp_path, HEAD + """\
S = DEFI_MATERIAU(ELAS=_F(E=210000., NU=0.3))
CM = AFFE_MATERIAU(MAILLAGE=MA, AFFE=_F(TOUT='OUI', MATER=S))
G = AFFE_CHAR_MECA(MODELE=MO, PESANTEUR=_F(GRAVITE=9810., DIRECTION=(0., 0., -1.)))
R = MECA_STATIQUE(MODELE=MO, CHAM_MATER=CM, EXCIT=_F(CHARGE=G))
""")
    load = m.steps[0].loads[0]
    assert (load.kind, load.value, load.vector) == ("gravity", 9810.0, (0.0, 0.0, -1.0))


def test_comm_alone_uses_the_mesh_of_its_base_name(tmp_path):
    m = study(tmp_path, HEAD + "S = DEFI_MATERIAU(ELAS=_F(E=1., NU=0.3))\n", export=None)
    notes = [i for i in m.issues if i.code == "paired-mesh"]
    assert notes and "s.mail" in notes[0].message
    assert m.element_blocks


def test_export_names_a_missing_mesh(tmp_path):
    m = study(tmp_path, HEAD, mail=None)
    assert any(i.code == "missing-include" and "s.mail" in i.message for i in m.issues)


def test_folder_walk_lints_the_export_once(tmp_path):
    study(tmp_path, HEAD + """\
S = DEFI_MATERIAU(ELAS=_F(E=210000., NU=0.5))
CM = AFFE_MATERIAU(MAILLAGE=MA, AFFE=_F(TOUT='OUI', MATER=S))
R = MECA_STATIQUE(MODELE=MO, CHAM_MATER=CM)
""")
    res = check_paths([str(tmp_path)], Config())
    assert [f.path.rsplit("/", 1)[-1] for f in res.files] == ["s.export"]
    nu = [f for f in res.files[0].findings if f.rule == "elastic/poisson-out-of-range"]
    # nu = 0.5 on a displacement 3D formulation: an error at the line of NU, naming the variable
    assert nu and nu[0].severity == "error" and nu[0].line == 4 and nu[0].path.endswith("s.comm")
    assert nu[0].material == "S"


def test_nu_half_on_mixed_formulation_is_a_note(tmp_path):
    # 3D_INCO_UPG cells: HEXA20 only (code_aster catalo/cataelem/Commons/phenomenons_modelisations.py)
    mail = HEX_MAIL.replace("HEXA8\n M1 N1 N2 N3 N4 N5 N6 N7 N8", "HEXA20\n M1 " + " ".join(["N1"] * 20))
    study(tmp_path, """\
MA = LIRE_MAILLAGE(FORMAT='ASTER')
MO = AFFE_MODELE(MAILLAGE=MA, AFFE=_F(TOUT='OUI', PHENOMENE='MECANIQUE', MODELISATION='3D_INCO_UPG'))
S = DEFI_MATERIAU(ELAS=_F(E=10., NU=0.5))
CM = AFFE_MATERIAU(MAILLAGE=MA, AFFE=_F(TOUT='OUI', MATER=S))
R = STAT_NON_LINE(MODELE=MO, CHAM_MATER=CM)
""", mail=mail)
    res = check_paths([str(tmp_path / "s.export")], Config())
    nu = [f for f in res.files[0].findings if f.rule == "elastic/poisson-out-of-range"]
    assert nu and nu[0].severity == "note"


def test_sample_study_reports_the_locking_pad():
    from pathlib import Path

    sample = Path(__file__).resolve().parents[2] / "sample_decks" / "pv40_bearing_pedestal.export"
    res = check_paths([str(sample)], Config())
    rep = res.files[0]
    assert [(f.rule, f.material, f.line) for f in rep.findings] == [("element/volumetric-locking", "EPDM", 21)]
    assert rep.summary["element_types"] == {"3D/HEXA8": 24}          # 16 cast + 8 pad cells; base faces left out
    assert sorted(m["name"] for m in rep.materials) == ["EPDM", "IRON"]


@pytest.mark.parametrize("behaviour, found", [("", True), (", ECRO_LINE=_F(D_SIGM_EPSI=2000., SY=355.)", False)])
def test_plasticity_relation_needs_hardening(tmp_path, behaviour, found):
    # STAT_NON_LINE COMPORTEMENT RELATION='VMIS_ISOT_LINE' reads ECRO_LINE (U4.51.11, from memory)
    study(tmp_path, HEAD + f"""\
S = DEFI_MATERIAU(ELAS=_F(E=210000., NU=0.3){behaviour})
CM = AFFE_MATERIAU(MAILLAGE=MA, AFFE=_F(TOUT='OUI', MATER=S))
R = STAT_NON_LINE(MODELE=MO, CHAM_MATER=CM, COMPORTEMENT=_F(RELATION='VMIS_ISOT_LINE', GROUP_MA='BLOC'))
""")
    res = check_paths([str(tmp_path / "s.export")], Config())
    hits = [f for f in res.files[0].findings if f.rule == "analysis/missing-hardening"]
    assert bool(hits) is found
    if found:
        assert hits[0].material == "S" and "VMIS_ISOT_LINE" in hits[0].message


def test_med_mesh_groups_through_meshio(tmp_path):
    # LIRE_MAILLAGE FORMAT='MED' (the default format of the command, code_aster/Cata/Commands/lire_maillage.py);
    # the MED file is written and read back by meshio (reference library), groups as families of cell tags
    pytest.importorskip("h5py")
    import meshio
    import numpy as np

    pts = np.array([[0, 0, 0], [1, 0, 0], [1, 1, 0], [0, 1, 0], [0, 0, 1], [1, 0, 1], [1, 1, 1], [0, 1, 1],
                    [2, 0, 0], [2, 1, 0], [2, 0, 1], [2, 1, 1]], float)
    m = meshio.Mesh(pts, [("hexahedron", np.array([[0, 1, 2, 3, 4, 5, 6, 7], [1, 8, 9, 2, 5, 10, 11, 6]]))],
                    cell_data={"cell_tags": [np.array([-1, -2])]})
    m.cell_tags = {-1: ["STEEL"], -2: ["SEAL"]}
    meshio.write(tmp_path / "s.med", m, file_format="med")
    model = study(tmp_path, """\
MA = LIRE_MAILLAGE(FORMAT='MED')
MO = AFFE_MODELE(MAILLAGE=MA, AFFE=_F(TOUT='OUI', PHENOMENE='MECANIQUE', MODELISATION='3D'))
S = DEFI_MATERIAU(ELAS=_F(E=210000., NU=0.3))
R = DEFI_MATERIAU(ELAS=_F(E=6., NU=0.4995))
CM = AFFE_MATERIAU(MAILLAGE=MA, AFFE=(_F(GROUP_MA='STEEL', MATER=S), _F(GROUP_MA='SEAL', MATER=R)))
""", mail=None, export="F comm s.comm D 1\nF mmed s.med D 20\n")
    assert [(b.type, b.count) for b in model.element_blocks] == [("3D/HEXA8", 1), ("3D/HEXA8", 1)]
    assert sorted(s.elset_name for s in model.sections) == ["SEAL", "STEEL"]
    assert model.geometry.node_count == 12


def test_composite_layers_and_massless_part(tmp_path):
    # DEFI_COMPOSITE COUCHE=_F(MATER=...) gives the shell its layer materials (U4.42.03, from memory);
    # ELAS RHO = 0 is accepted by the DEFI_MATERIAU catalogue (no val_min): a part meant to carry no mass
    mail = HEX_MAIL.replace("HEXA8\n M1 N1 N2 N3 N4 N5 N6 N7 N8\nFINSF\n", "")
    study(tmp_path, """\
MA = LIRE_MAILLAGE(FORMAT='ASTER')
MO = AFFE_MODELE(MAILLAGE=MA, AFFE=_F(GROUP_MA='BASE', PHENOMENE='MECANIQUE', MODELISATION='DKT'))
PLY = DEFI_MATERIAU(ELAS=_F(E=70000., NU=0.33, RHO=0.))
LAM = DEFI_COMPOSITE(COUCHE=_F(EPAIS=1., MATER=PLY, ORIENTATION=0.))
CM = AFFE_MATERIAU(MAILLAGE=MA, AFFE=_F(GROUP_MA='BASE', MATER=LAM))
MODES = CALC_MODES(MATR_RIGI=ASSE_MATRICE(MATR_ELEM=CALC_MATR_ELEM(MODELE=MO, CHAM_MATER=CM, OPTION='RIGI_MECA')))
""", mail=mail)
    res = check_paths([str(tmp_path / "s.export")], Config())
    rules = {f.rule for f in res.files[0].findings if f.severity == "error"}
    assert rules == set()
    assert res.files[0].materials[0].get("used_by") == {"DKT/QUAD4": 1}


def test_rigid_plastic_relation_needs_no_elasticity(tmp_path):
    # NORTON_HOFF: rigid-viscoplastic limit analysis, reads ECRO_LINE SY only (from memory)
    study(tmp_path, HEAD + """\
CM = DEFI_MATERIAU(ECRO_LINE=_F(D_SIGM_EPSI=0., SY=10.))
CH = AFFE_MATERIAU(MAILLAGE=MA, AFFE=_F(TOUT='OUI', MATER=CM))
R = STAT_NON_LINE(MODELE=MO, CHAM_MATER=CH, COMPORTEMENT=_F(RELATION='NORTON_HOFF'))
""")
    res = check_paths([str(tmp_path / "s.export")], Config())
    assert not [f for f in res.files[0].findings if f.severity == "error"]
