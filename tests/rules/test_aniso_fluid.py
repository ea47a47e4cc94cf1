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


def _row(normal, shear, temperature=None) -> str:
    """One *ELASTIC,TYPE=ORTHO row: six normal terms (D1111 D1122 D2222 D1133 D2233 D3333), three shear terms."""
    n = [normal] * 6 if not isinstance(normal, (list, tuple)) else list(normal)
    s = [shear] * 3 if not isinstance(shear, (list, tuple)) else list(shear)
    vals = [f"{v:.17g}" for v in n + s]
    tail = vals[8] + (f",{temperature:g}" if temperature is not None else "")
    return ",".join(vals[:8]) + ",\n" + tail + "\n"


def _severity(write_deck, row) -> str:
    f = _aniso(write_deck, "pv40_cavity.inp", row)
    assert len(f) == 1
    return f[0].severity


def test_fluid_shear_terms_zero_or_small_are_allowed(write_deck):
    # the acoustic analogy needs no shear stiffness: zero or any non-negative shear term keeps it a fluid
    assert _severity(write_deck, _row(1.41e5, 0.0)) == "warning"
    assert _severity(write_deck, _row(1.41e5, 0.5)) == "warning"


def test_negative_shear_or_negative_normal_terms_are_no_fluid(write_deck):
    assert _severity(write_deck, _row(1.41e5, [1.0, -0.5, 1.0])) == "error"
    # six equal negative normal terms: no fluid has a negative bulk modulus
    assert _severity(write_deck, _row(-0.5, 1.0)) == "error"
    # six zero normal terms: no stiffness at all, not a fluid's bulk modulus
    assert _severity(write_deck, _row(0.0, 1.0)) == "error"
    # a small positive bulk stiffness (air in MPa: 0.141) is still a fluid
    assert _severity(write_deck, _row(0.141, 0.0)) == "warning"


def test_equal_means_equal_to_round_off_relative_to_the_terms(write_deck):
    k = 1.41e5
    # a difference in the 13th digit is round-off of a printed value: still six equal terms
    assert _severity(write_deck, _row([k, k, k * (1 + 1e-12), k, k, k], 0.0)) == "warning"
    # the limit is 1e-9 of the largest term
    assert _severity(write_deck, _row([k, k, k * (1 - 0.9e-9), k, k, k], 0.0)) == "warning"
    assert _severity(write_deck, _row([k, k, k * (1 - 1.5e-9), k, k, k], 0.0)) == "error"
    # one part in a million is a typed difference: a singular solid, an error
    assert _severity(write_deck, _row([k, k, k * (1 + 1e-6), k, k, k], 0.0)) == "error"
    # the tolerance is relative: the same one part in a million with K in GPa (air: 1.41e-4 GPa)
    kg = 1.41e-4
    assert _severity(write_deck, _row([kg, kg, kg * (1 + 1e-6), kg, kg, kg], 0.0)) == "error"


def test_every_temperature_row_must_be_a_fluid(write_deck):
    # first row the fluid, second row a singular solid (D1122 > D1111): the block is no fluid
    rows = _row(1.41e5, 0.0, temperature=20.0) + _row([1e9, 2e9, 1e9, 0.0, 0.0, 1e9], 3e8, temperature=80.0)
    assert _severity(write_deck, rows) == "error"
    rows = _row(1.41e5, 0.0, temperature=20.0) + _row(1.38e5, 0.0, temperature=80.0)
    assert _severity(write_deck, rows) == "warning"
