"""Regenerates pv40_seal_housing.msh (Gmsh 4.1) with the gmsh Python package: the PV-40 bearing housing
ring (grey iron) around its EPDM lip-seal ring, in millimetres. Invented demonstration geometry.

    pip install gmsh && python sample_decks/pv40_seal_housing_mesh.py
"""
from pathlib import Path

import gmsh

gmsh.initialize(["-nopopup"])
gmsh.option.setNumber("General.Terminal", 0)
gmsh.model.add("pv40_seal_housing")
occ = gmsh.model.occ
outer = occ.addCylinder(0, 0, 0, 0, 0, 12, 40)
bore = occ.addCylinder(0, 0, 0, 0, 0, 12, 22)
casing, _ = occ.cut([(3, outer)], [(3, bore)])
seal_outer = occ.addCylinder(0, 0, 0, 0, 0, 12, 22)
seal_bore = occ.addCylinder(0, 0, 0, 0, 0, 12, 17)
seal, _ = occ.cut([(3, seal_outer)], [(3, seal_bore)])
occ.fragment(casing, seal)
occ.synchronize()
by_radius = sorted(gmsh.model.getEntities(3), key=lambda e: gmsh.model.occ.getBoundingBox(*e)[3])
gmsh.model.addPhysicalGroup(3, [by_radius[0][1]], 2, name="lip_seal")
gmsh.model.addPhysicalGroup(3, [by_radius[1][1]], 1, name="casing")
flange = [t for d, t in gmsh.model.getEntities(2) if abs(gmsh.model.occ.getCenterOfMass(d, t)[2]) < 1e-6]
gmsh.model.addPhysicalGroup(2, flange, 11, name="flange_face")
gmsh.option.setNumber("Mesh.MeshSizeMax", 10.0)
gmsh.option.setNumber("Mesh.ElementOrder", 2)
gmsh.model.mesh.generate(3)
gmsh.option.setNumber("Mesh.MshFileVersion", 4.1)
gmsh.write(str(Path(__file__).with_name("pv40_seal_housing.msh")))
gmsh.finalize()
