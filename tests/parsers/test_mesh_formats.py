"""Meshes in the formats meshio writes, read back through the material-file route.

Reference: meshio itself. Every mesh here is written by ``meshio.write`` and the counts per region
that deckwarden reports are compared with the counts taken from ``meshio.read`` of the same file.
"""
from __future__ import annotations

import importlib.util
from pathlib import Path

import numpy as np
import pytest

meshio = pytest.importorskip("meshio")

from linter.parsers.includes import IncludePolicy  # noqa: E402
from linter.parsers import ParseOptions  # noqa: E402
from linter.parsers import mesh as mesh_parser  # noqa: E402
from linter.usage import element_types_of, unassigned  # noqa: E402

HAS_H5PY = importlib.util.find_spec("h5py") is not None


def block_mesh(nx: int = 4, ny: int = 3, nz: int = 2):
    """A structured block of hexahedra (region 1: x < nx/2, region 2: the rest), a layer of tetrahedra
    on top (region 3) and boundary quadrilaterals on x = 0 (region 9, a lower dimension)."""
    xs, ys, zs = np.arange(nx + 1.0), np.arange(ny + 1.0), np.arange(nz + 2.0)
    pts = np.array([[x, y, z] for z in zs for y in ys for x in xs])

    def n(i, j, k):
        return (k * (ny + 1) + j) * (nx + 1) + i

    hexes, hreg, tets = [], [], []
    for k in range(nz):
        for j in range(ny):
            for i in range(nx):
                hexes.append([n(i, j, k), n(i + 1, j, k), n(i + 1, j + 1, k), n(i, j + 1, k),
                              n(i, j, k + 1), n(i + 1, j, k + 1), n(i + 1, j + 1, k + 1), n(i, j + 1, k + 1)])
                hreg.append(1 if i < nx // 2 else 2)
    k = nz
    for j in range(ny):
        for i in range(nx):
            a, b, c, d = n(i, j, k), n(i + 1, j, k), n(i + 1, j + 1, k), n(i, j + 1, k)
            e = n(i, j, k + 1)
            tets += [[a, b, d, e], [b, c, d, e]]
    quads = [[n(0, j, k), n(0, j + 1, k), n(0, j + 1, k + 1), n(0, j, k + 1)] for k in range(nz) for j in range(ny)]
    cells = [("quad", np.array(quads)), ("hexahedron", np.array(hexes)), ("tetra", np.array(tets))]
    region = [np.full(len(quads), 9), np.array(hreg), np.full(len(tets), 3)]
    return meshio.Mesh(pts, cells, cell_data={"region": region},
                       field_data={"left": np.array([1, 3]), "right": np.array([2, 3]), "cap": np.array([3, 3]),
                                   "face": np.array([9, 2])})


def plain(m):
    """The mesh with only its region array (no Gmsh data)."""
    m.cell_data = {"region": m.cell_data["region"]}
    m.field_data, m.point_data = {}, {}
    return m


def gmsh_ready(m):
    """The mesh as Gmsh holds it: one entity per cell block and physical group (the hexahedra split by
    region), every entity named by some node's gmsh:dim_tags (meshio's 4.1 writer lists entities from
    them), and only the Gmsh cell data (meshio writes other cell data as $ElementData)."""
    quad, hexa, tet = (cb.data for cb in m.cells)
    hreg = np.asarray(m.cell_data["region"][1])
    cells = [("quad", quad), ("hexahedron", hexa[hreg == 1]), ("hexahedron", hexa[hreg == 2]), ("tetra", tet)]
    phys = [np.full(len(quad), 9), np.full(int((hreg == 1).sum()), 1), np.full(int((hreg == 2).sum()), 2),
            np.full(len(tet), 3)]
    ents = [(2, 1), (3, 1), (3, 2), (3, 3)]
    dim_tags = np.zeros((len(m.points), 2), dtype=int)
    for k in (2, 1, 3, 0):  # a node shared by entities belongs to the lowest dimension, as in Gmsh
        dim_tags[np.unique(cells[k][1])] = ents[k]
    return meshio.Mesh(m.points, cells, point_data={"gmsh:dim_tags": dim_tags},
                       cell_data={"gmsh:physical": phys,
                                  "gmsh:geometrical": [np.full(len(c), t) for (_d, t), (_n, c) in zip(ents, cells)]},
                       field_data=m.field_data)


def reference_counts(path: Path, fmt: str, key: str) -> dict:
    """{region value: {cell type: count}} from meshio's own reading of the file."""
    m = meshio.read(path, file_format=fmt)
    out: dict = {}
    for cb, values in zip(m.cells, m.cell_data[key]):
        for v in np.unique(values):
            out.setdefault(int(v), {})
            out[int(v)][cb.type] = out[int(v)].get(cb.type, 0) + int(np.sum(np.asarray(values).ravel() == v))
    return out


def parse(yaml_path: Path, **kw):
    opts = ParseOptions(dialect="meshio", include=IncludePolicy(root=None), max_file_size=kw.pop("max_size", 1 << 30),
                        display_path=str(yaml_path), **kw)
    return mesh_parser.parse(str(yaml_path), opts)


def material_file(folder: Path, mesh_name: str, selectors: dict) -> Path:
    lines = ["deckwarden: 1", f"mesh: {mesh_name}", "materials:", "  STEEL: {elastic: {E: 210000, nu: 0.3}}",
             "  SEAL: {elastic: {E: 10, nu: 0.49}}", "regions:"]
    for value, (sel, mat) in selectors.items():
        lines += [f"  - cells: {sel}", f"    material: {mat}", "    formulation: reduced"]
    p = folder / "model.yaml"
    p.write_text("\n".join(lines) + "\n")
    return p


def counts_by_region(model) -> dict:
    """{region number: {meshio cell type: count}} as deckwarden assigned them."""
    out: dict = {}
    for sec in model.sections:
        number = int(sec.elset.split()[-1])
        from linter.usage import resolve_set

        sel = resolve_set(model, sec.elset)
        for t, c in (sel.counts(model) if sel else {}).items():
            cell = t.partition(":")[0].lower()
            here = out.setdefault(number, {})
            here[cell] = here.get(cell, 0) + c
    return out


WRITERS = [
    ("gmsh22", "m.msh", {"file_format": "gmsh22", "binary": False}, "gmsh"),
    ("gmsh22-binary", "m.msh", {"file_format": "gmsh22", "binary": True}, "gmsh"),
    ("gmsh41", "m.msh", {"file_format": "gmsh", "binary": False}, "gmsh"),
    ("gmsh41-binary", "m.msh", {"file_format": "gmsh", "binary": True}, "gmsh"),
    ("vtu", "m.vtu", {"file_format": "vtu"}, "vtu"),
    ("vtk", "m.vtk", {"file_format": "vtk"}, "vtk"),
    # meshio's XDMF writer imports h5py even for XML data
    pytest.param("xdmf-xml", "m.xdmf", {"file_format": "xdmf", "data_format": "XML"}, "xdmf",
                 marks=pytest.mark.skipif(not HAS_H5PY, reason="h5py (extra 'mesh') not installed"), id="xdmf-xml"),
    pytest.param("xdmf-hdf", "m.xdmf", {"file_format": "xdmf", "data_format": "HDF"}, "xdmf",
                 marks=pytest.mark.skipif(not HAS_H5PY, reason="h5py (extra 'mesh') not installed"), id="xdmf-hdf"),
]


@pytest.mark.parametrize("label,name,kw,fmt", WRITERS, ids=[w[0] if isinstance(w, tuple) else w.values[0] for w in WRITERS])
def test_counts_per_region_match_meshio(tmp_path, label, name, kw, fmt):
    m = gmsh_ready(block_mesh()) if fmt == "gmsh" else plain(block_mesh())
    meshio.write(tmp_path / name, m, **kw)
    if fmt == "gmsh":
        selectors = {1: ("{physical: left}", "STEEL"), 2: ("{physical: right}", "STEEL"), 3: ("{physical: 3}", "SEAL")}
        key = "gmsh:physical"
    else:
        selectors = {v: (f"{{cell_data: region, value: {v}}}", "STEEL") for v in (1, 2, 3)}
        key = "region"
    model = parse(material_file(tmp_path, name, selectors))
    assert not model.issues, [i.message for i in model.issues]
    ref = reference_counts(tmp_path / name, fmt, key)   # meshio's own reading is the reference
    got = counts_by_region(model)
    assert got == {v: ref[v] for v in (1, 2, 3)}
    # the boundary quadrilaterals (region 9, dimension 2) are not elements of the 3D model
    assert "quad" not in {t.partition(":")[0].lower() for t in element_types_of(model, "STEEL")}
    assert unassigned(model) == {}
    assert model.extras["mesh"]["boundary_cells"] == {"quad": ref[9]["quad"]}
    assert model.geometry.node_count == len(meshio.read(tmp_path / name, file_format=fmt).points)
    np.testing.assert_allclose(model.geometry.bbox_max, [4, 3, 3])


@pytest.mark.skipif(not HAS_H5PY, reason="h5py (extra 'mesh') not installed")
def test_med_cell_tags_match_meshio(tmp_path):
    m = plain(block_mesh())
    # MED keeps families as integer cell tags (meshio writes cell_data["cell_tags"])
    m.cell_data = {"cell_tags": [np.asarray(-v) for v in m.cell_data["region"]]}
    m.field_data = {}
    meshio.write(tmp_path / "m.med", m)
    selectors = {v: (f"{{cell_data: cell_tags, value: {-v}}}", "STEEL") for v in (1, 2, 3)}
    model = parse(material_file(tmp_path, "m.med", selectors))
    assert not model.issues, [i.message for i in model.issues]
    ref = reference_counts(tmp_path / "m.med", "med", "cell_tags")   # meshio's reading of the MED file
    got = counts_by_region(model)
    assert got == {v: ref[-v] for v in (1, 2, 3)}


def test_unselected_volume_cells_are_unassigned_and_boundary_cells_are_not(tmp_path):
    meshio.write(tmp_path / "m.msh", gmsh_ready(block_mesh()), file_format="gmsh22", binary=False)
    model = parse(material_file(tmp_path, "m.msh", {1: ("{physical: left}", "STEEL")}))
    left = unassigned(model)
    types = {model.element_blocks[i].type: n for i, n in left.items()}
    assert types == {"HEXAHEDRON": 12, "TETRA": 24}     # block_mesh: 12 hexahedra right, 24 tetrahedra on top


def test_gmsh_physical_groups_from_the_gmsh_package(tmp_path):
    gmsh = pytest.importorskip("gmsh")
    gmsh.initialize(["-nopopup"])
    try:
        gmsh.option.setNumber("General.Terminal", 0)
        gmsh.model.add("pv40_bracket")
        a = gmsh.model.occ.addBox(0, 0, 0, 20, 10, 5)
        b = gmsh.model.occ.addBox(20, 0, 0, 10, 10, 5)
        gmsh.model.occ.fragment([(3, a)], [(3, b)])
        gmsh.model.occ.synchronize()
        vols = [t for _d, t in gmsh.model.getEntities(3)]
        gmsh.model.addPhysicalGroup(3, [vols[0]], 11, name="body")
        gmsh.model.addPhysicalGroup(3, [vols[1]], 12, name="lug")
        surfs = [t for _d, t in gmsh.model.getEntities(2)]
        gmsh.model.addPhysicalGroup(2, surfs[:2], 21, name="fixed")
        gmsh.option.setNumber("Mesh.MeshSizeMax", 3.0)
        gmsh.model.mesh.generate(3)
        gmsh.option.setNumber("Mesh.MshFileVersion", 4.1)
        gmsh.write(str(tmp_path / "bracket.msh"))
        # reference: gmsh's own element count per physical volume
        expected = {}
        for tag, name in ((11, "body"), (12, "lug")):
            n = 0
            for ent in gmsh.model.getEntitiesForPhysicalGroup(3, tag):
                types, tags, _ = gmsh.model.mesh.getElements(3, ent)
                n += sum(len(t) for t in tags)
            expected[name] = n
    finally:
        gmsh.finalize()
    (tmp_path / "model.yaml").write_text(
        "deckwarden: 1\nmesh: bracket.msh\nmaterials:\n  STEEL: {elastic: {E: 210000, nu: 0.3}}\n"
        "  BRONZE: {elastic: {E: 110000, nu: 0.34}}\nregions:\n"
        "  - {cells: {physical: body}, material: STEEL, formulation: hybrid}\n"
        "  - {cells: {physical: lug}, material: BRONZE, formulation: hybrid}\n")
    model = parse(tmp_path / "model.yaml")
    assert not model.issues, [i.message for i in model.issues]
    assert element_types_of(model, "STEEL") == {"TETRA:HYBRID": expected["body"]}
    assert element_types_of(model, "BRONZE") == {"TETRA:HYBRID": expected["lug"]}
    assert unassigned(model) == {}
    assert model.extras["mesh"]["boundary_cells"].get("triangle", 0) > 0


def test_missing_h5py_names_the_extra(tmp_path, monkeypatch):
    from linter.parsers.mesh import meshfile

    def no_h5py(_fmt):
        def reader(_path):
            raise ModuleNotFoundError("No module named 'h5py'", name="h5py")
        return reader

    meshio.write(tmp_path / "m.vtu", plain(block_mesh()))
    monkeypatch.setattr(meshfile, "_reader", no_h5py)
    model = parse(material_file(tmp_path, "m.vtu", {1: ("{all: true}", "STEEL")}))
    (iss,) = [i for i in model.issues if i.code == "include-unreadable"]
    assert "deckwarden[mesh]" in iss.message and "h5py" in iss.message
    assert iss.loc.line == 2   # the mesh: line of the material file


def test_size_limit_is_applied_before_meshio_opens_the_file(tmp_path, monkeypatch):
    from linter.parsers.mesh import meshfile

    meshio.write(tmp_path / "m.vtu", plain(block_mesh()))
    monkeypatch.setattr(meshfile, "_reader", lambda fmt: pytest.fail("meshio was called"))
    model = parse(material_file(tmp_path, "m.vtu", {1: ("{all: true}", "STEEL")}), max_size=100)
    (iss,) = [i for i in model.issues if i.code == "include-unreadable"]
    assert "size limit" in iss.message


def test_unreadable_mesh_is_a_finding_not_a_traceback(tmp_path, capsys):
    (tmp_path / "m.msh").write_text("$MeshFormat\n9.9 0 8\n$EndMeshFormat\ngarbage\n")
    model = parse(material_file(tmp_path, "m.msh", {1: ("{all: true}", "STEEL")}))
    (iss,) = [i for i in model.issues if i.code == "include-unreadable"]
    assert "meshio cannot read" in iss.message and iss.loc.line == 2
    out = capsys.readouterr()
    assert out.out == ""   # meshio's own printing is captured


def test_mesh_given_beside_the_material_file(tmp_path):
    meshio.write(tmp_path / "other.vtu", plain(block_mesh()))
    yaml_path = material_file(tmp_path, "not-there.vtu", {3: ("{cell_data: region, value: 3}", "SEAL")})
    opts = ParseOptions(dialect="meshio", include=IncludePolicy(root=None), display_path=str(tmp_path / "other.vtu"),
                        materials=str(yaml_path))
    model = mesh_parser.parse(str(tmp_path / "other.vtu"), opts)
    assert not model.issues
    assert element_types_of(model, "SEAL") == {"TETRA:REDUCED": 24}


def test_overlapping_regions_with_different_materials(tmp_path):
    meshio.write(tmp_path / "m.vtu", plain(block_mesh()))
    model = parse(material_file(tmp_path, "m.vtu", {0: ("{all: true}", "STEEL"),
                                                    1: ("{cell_data: region, value: 1}", "SEAL")}))
    (iss,) = [i for i in model.issues if i.code == "region-overlap"]
    assert iss.data["cells"] == 12 and iss.loc.line == 10    # block_mesh: 12 hexahedra in region 1
    # both regions count the shared cells; the last region gives them its formulation
    assert element_types_of(model, "SEAL") == {"HEXAHEDRON:REDUCED": 12}
    assert element_types_of(model, "STEEL") == {"HEXAHEDRON:REDUCED": 24, "TETRA:REDUCED": 24}


def test_more_than_eight_regions_on_one_block(tmp_path):
    m = plain(block_mesh())
    hexes = m.cells[1].data
    m.cell_data["region"][1] = np.arange(len(hexes)) % 10 + 100       # ten values over the 24 hexahedra
    meshio.write(tmp_path / "m.vtu", m)
    selectors = {v: (f"{{cell_data: region, value: {v}}}", "STEEL") for v in range(100, 110)}
    model = parse(material_file(tmp_path, "m.vtu", selectors))
    got = counts_by_region(model)
    # reference: numpy's count of each value in the array written
    expected = {i + 1: {"hexahedron": int(np.sum(np.arange(len(hexes)) % 10 == i))} for i in range(10)}
    assert got == expected


def test_section_kind_gives_the_family_of_surface_cells(tmp_path):
    pts = np.array([[0, 0, 0], [1, 0, 0], [1, 1, 0], [0, 1, 0]], float)
    meshio.write(tmp_path / "m.vtu", meshio.Mesh(pts, [("quad", np.array([[0, 1, 2, 3]]))]))
    (tmp_path / "model.yaml").write_text(
        "deckwarden: 1\nmesh: m.vtu\nmaterials:\n  A: {elastic: {E: 10, nu: 0.499}}\n"
        "regions:\n  - {cells: {all: true}, material: A, section: shell}\n")
    model = parse(tmp_path / "model.yaml")
    assert element_types_of(model, "A") == {"QUAD:SHELL": 1}
    assert model.sections[0].kind == "shell" and model.sections[0].materials[0].role == "shell"


@pytest.mark.skipif(not HAS_H5PY, reason="h5py (extra 'mesh') not installed")
def test_med_groups_by_name(tmp_path):
    m = plain(block_mesh())
    m.cell_data = {"cell_tags": [np.asarray(-v) for v in m.cell_data["region"]]}
    m.cell_tags = {-1: ["left", "metal"], -2: ["right", "metal"], -3: ["cap"], -9: ["face"]}
    meshio.write(tmp_path / "m.med", m)
    model = parse(material_file(tmp_path, "m.med", {1: ("{set: metal}", "STEEL"), 2: ("{set: cap}", "SEAL")}))
    assert not model.issues, [i.message for i in model.issues]
    # reference: meshio's reading of the MED file (families -> groups, family tag per cell)
    ref = meshio.read(tmp_path / "m.med")
    metal = [t for t, names in ref.cell_tags.items() if "metal" in names]
    n_metal = sum(int(np.isin(np.asarray(a).ravel(), metal).sum()) for a in ref.cell_data["cell_tags"])
    assert counts_by_region(model) == {1: {"hexahedron": n_metal}, 2: {"tetra": 24}}


def test_mesh_outside_the_include_root_is_refused(tmp_path, monkeypatch):
    from linter.parsers.mesh import meshfile

    inner = tmp_path / "model"
    inner.mkdir()
    meshio.write(tmp_path / "outside.vtu", plain(block_mesh()))
    yaml_path = material_file(inner, "../outside.vtu", {1: ("{all: true}", "STEEL")})
    monkeypatch.setattr(meshfile, "_reader", lambda fmt: pytest.fail("meshio was called"))
    opts = ParseOptions(dialect="meshio", include=IncludePolicy(root=str(inner)), display_path=str(yaml_path))
    model = mesh_parser.parse(str(yaml_path), opts)
    (iss,) = [i for i in model.issues if i.code == "include-refused"]
    assert iss.loc.line == 2 and "outside the include root" in iss.message
