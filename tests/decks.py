"""Small deck pieces shared by the tests."""

#: the eight corner nodes of a unit cube (ids 1-8), as *NODE data lines: element connectivity
#: "1, 2, 3, 4, 5, 6, 7, 8" makes one 8-node hexahedron of them
CUBE_NODES = """1, 0., 0., 0.
2, 1., 0., 0.
3, 1., 1., 0.
4, 0., 1., 0.
5, 0., 0., 1.
6, 1., 0., 1.
7, 1., 1., 1.
8, 0., 1., 1.
"""

#: one 4-node tetrahedron (ids 1-4, element 1) in element set E1, as keyword lines: *NODE and *ELEMENT
TET_MESH = "*NODE\n1,0,0,0\n2,1,0,0\n3,0,1,0\n4,0,0,1\n*ELEMENT,TYPE=C3D4,ELSET=E1\n1,1,2,3,4\n"

#: a 10 x 10 square plate as bulk data lines: four GRIDs (ids 1-4) and one CQUAD4 (id 1, PID 1)
PLATE_QUAD_BULK = """GRID,1,,0.,0.,0.
GRID,2,,10.,0.,0.
GRID,3,,10.,10.,0.
GRID,4,,0.,10.,0.
CQUAD4,1,1,1,2,3,4
"""
