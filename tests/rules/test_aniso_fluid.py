"""A fluid written as an orthotropic solid (the acoustic analogy of the CalculiX examples: six equal
normal D terms, the bulk modulus K of the fluid) is singular on purpose: a warning, not an error.

Air: K = rho c^2 = 1.2 x 343^2 = 1.41e5 Pa (speed of sound 343 m/s at 20 C, CRC Handbook; from memory).
"""
from __future__ import annotations

from linter.check import check_paths
from linter.config import Config

from decks import CUBE_NODES


def _deck(row: str) -> str:
    return ("*NODE\n" + CUBE_NODES + "*ELEMENT,TYPE=C3D8,ELSET=EALL\n1,1,2,3,4,5,6,7,8\n"
            "*MATERIAL,NAME=PV40_AIR\n*ELASTIC,TYPE=ORTHO\n" + row + "*DENSITY\n1.2\n"
            "*SOLID SECTION,ELSET=EALL,MATERIAL=PV40_AIR\n*STEP\n*FREQUENCY\n4\n*END STEP\n")


def _aniso(write_deck, name, row):
    r = check_paths([str(write_deck(name, _deck(row)))], Config(units="m-kg-s"))
    return [f for f in r.findings if f.rule == "aniso/not-positive-definite"]


def test_fluid_as_orthotropic_solid_is_a_warning(write_deck):
    f = _aniso(write_deck, "pv40_duct.inp", "1.41e5,1.41e5,1.41e5,1.41e5,1.41e5,1.41e5,1.0,1.0,\n1.0\n")
    assert len(f) == 1 and f[0].severity == "warning" and f[0].data["fluid_like"]
    assert "bulk stiffness of a fluid" in f[0].message


def test_other_singular_orthotropic_stiffness_stays_an_error(write_deck):
    # D1122 larger than D1111: not a fluid, and not positive definite
    f = _aniso(write_deck, "pv40_bad.inp", "1.0e9,2.0e9,1.0e9,0.,0.,1.0e9,3.0e8,3.0e8,\n3.0e8\n")
    assert len(f) == 1 and f[0].severity == "error" and "fluid_like" not in f[0].data
